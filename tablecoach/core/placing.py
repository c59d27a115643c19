"""Ball positions a player can place by eye: a grid of diamond fractions, or frozen to a cushion.

Players place balls by the sights: to a quarter diamond by eye, an eighth with care, or touching
a cushion ("frozen"). Dealt positions sit on such a grid (``snap``), and are said the way players
say them ("1 3/4 from the foot rail, frozen to the right rail": ``words``). Positions are
in diamonds here (x 0 at the head rail to 8, y 0 at the left rail to 4: docs/coordinates.md).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, replace
from fractions import Fraction

import numpy as np

from . import shots
from .aim import ideal
from .shots import Setup
from .table import TableSpec

GRIDS = (4, 8)
"""Allowed grids, in steps a diamond: quarters (the default, what a player places by eye) and
eighths (with care) (common practice, no source)."""

DEFAULT_GRID = 4

FROZEN_TOL = 1e-6
"""Diamonds within which a ball centre counts as frozen to a cushion (one radius off the nose)."""


@dataclass(frozen=True, slots=True)
class Span:
    """Allowed centre positions along one axis, in diamonds (lo..hi), and the frozen
    positions on that axis (a ball centre one radius inside each cushion nose)."""

    lo: float
    hi: float
    frozen_lo: float
    frozen_hi: float


def frozen_margins(table: TableSpec) -> tuple[float, float]:
    """How far (diamonds) a frozen ball's centre sits from the nose, along x and across y:
    one ball radius, rounded up to the 1e-6 diamond that records keep (shots.record_of), so a
    frozen ball read back from a record is still on the table."""
    mx, my = table.to_diamonds(table.ball_radius, table.ball_radius)
    return (math.ceil(mx * 1e6 - 1e-6) / 1e6, math.ceil(my * 1e6 - 1e-6) / 1e6)


def spans(table: TableSpec, x0: float, x1: float, y0: float, y1: float) -> tuple[Span, Span]:
    """The x and y spans of a rectangle of allowed positions on this table."""
    mx, my = frozen_margins(table)
    return Span(x0, x1, mx, 8.0 - mx), Span(y0, y1, my, 4.0 - my)


def grid_values(span: Span, grid: int) -> list[float]:
    """Every position a player can place within ``span``: the multiples of 1/grid diamond in
    it that a ball fits at, plus the frozen position where the span reaches a cushion."""
    step = 1.0 / grid
    k0 = int(np.ceil(max(span.lo, span.frozen_lo) / step - 1e-9))
    k1 = int(np.floor(min(span.hi, span.frozen_hi) / step + 1e-9))
    out = [k * step for k in range(k0, k1 + 1) if span.frozen_lo <= k * step <= span.frozen_hi]
    # a region reaching to within half a step of a cushion includes the frozen spot
    if span.lo <= span.frozen_lo + step / 2:
        out.insert(0, span.frozen_lo)
    if span.hi >= span.frozen_hi - step / 2:
        out.append(span.frozen_hi)
    return sorted(set(out))


def snap(span: Span, grid: int, rng: np.random.Generator) -> float:
    """A uniformly chosen placeable position in ``span`` (``grid_values``); a span too narrow to
    hold one gives the grid value nearest its middle that a ball fits at."""
    values = grid_values(span, grid)
    if values:
        return float(values[int(rng.integers(len(values)))])
    mid = 0.5 * (span.lo + span.hi)
    v = round(mid * grid) / grid
    return float(min(max(v, span.frozen_lo), span.frozen_hi))


def on_grid(v: float, span_frozen: Sequence[float], grid: int) -> bool:
    """True when ``v`` is a multiple of 1/grid diamond or one of the frozen positions."""
    if any(abs(v - f) <= FROZEN_TOL for f in span_frozen):
        return True
    return abs(v * grid - round(v * grid)) <= 1e-6


def fraction_text(v: float, grid: int = 8) -> str:
    """Diamonds as a player says them: 1.75 -> "1 3/4", 0.5 -> "1/2", 2 -> "2"; a value off
    the 1/grid grid is given to two decimals."""
    q = Fraction(round(v * grid), grid)
    if abs(float(q) - v) > 1e-6:
        return f"{v:.2f}".rstrip("0").rstrip(".")
    whole, rest = divmod(q, 1)
    if rest == 0:
        return str(int(whole))
    frac = f"{rest.numerator}/{rest.denominator}"
    return frac if whole == 0 else f"{int(whole)} {frac}"


def words(table: TableSpec, x: float, y: float) -> tuple[str, str]:
    """Where a ball centre at (x, y) diamonds goes, from the nearer end rail and the nearer
    long rail, ball centre to cushion nose: ("1 3/4 from the foot rail", "frozen to the right
    rail")."""
    mx, my = frozen_margins(table)
    if abs(x - mx) <= FROZEN_TOL:
        along = "frozen to the head rail"
    elif abs(x - (8.0 - mx)) <= FROZEN_TOL:
        along = "frozen to the foot rail"
    elif x <= 4.0:
        along = f"{fraction_text(x)} from the head rail"
    else:
        along = f"{fraction_text(8.0 - x)} from the foot rail"
    if abs(y - my) <= FROZEN_TOL:
        across = "frozen to the left rail"
    elif abs(y - (4.0 - my)) <= FROZEN_TOL:
        across = "frozen to the right rail"
    elif y <= 2.0:
        across = f"{fraction_text(y)} from the left rail"
    else:
        across = f"{fraction_text(4.0 - y)} from the right rail"
    return along, across


def aim_shift(table: TableSpec, setup: Setup, step: float = 0.25) -> float | None:
    """How far the ideal aim moves (diamonds along the first rail's sights) when the travelling
    ball sits ``step`` diamond off its spot: the largest change over the four directions along
    and across the table. None when no moved position has a clean ideal path.

    It sizes a placement error against the margin: when a quarter diamond of misplacement moves
    the aim more than the margin, the ball must be placed with care (ideal mirror model, the
    same geometry the dealing checks; spin and pace are left out).
    """
    rail = setup.family.rails[0]
    try:
        base = ideal.solve(table, setup, margin=False).reading
    except ValueError:
        return None
    sx, sy = table.to_diamonds(*setup.start)
    worst: float | None = None
    for dx, dy in ((step, 0.0), (-step, 0.0), (0.0, step), (0.0, -step)):
        moved = table.to_metres(sx + dx, sy + dy)
        try:
            if setup.family.travel == "object":
                s = replace(setup, object=moved)
            else:
                s = replace(setup, cue=moved)
            s = shots.make_setup(table, s.family, s.cue, s.object, s.pocket, s.target_ball)
            r = ideal.solve(table, s, margin=False).reading
        except ValueError:
            continue
        d = abs(table.along_to_diamonds(rail, r - base))
        worst = d if worst is None else max(worst, d)
    return worst


__all__ = [
    "aim_shift",
    "DEFAULT_GRID",
    "GRIDS",
    "Span",
    "fraction_text",
    "frozen_margins",
    "grid_values",
    "on_grid",
    "snap",
    "spans",
    "words",
]
