"""The physical aim's search: a grid over the first rail, the root of the signed miss, the window.

1. **Grid**: every reading along the first rail, a quarter diamond beyond each end, every
   ``GRID_STEP`` diamond (lean runs: a row stops at its first ball or off the rail order).
2. **Root**: the sign change of the signed miss (the target's closest approach after the
   family's rails) nearest the mirror reading.
3. **Refining pass**: points inside the root's bracket and inside each end of the scoring
   window; the root is the zero of the quadratic through three neighbouring samples.
docs/model.md, "Aim solving", gives the reasons and the figures.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..physics.params import BallModel
from ..physics.simulate import SimResult
from ..shots import Stroke
from ..table import RailName, TableSpec
from .physical_batch import Problems, run

GRID_STEP = 0.125
"""Spacing (rail diamonds) of the first pass, which covers every reading along the first rail
(a quarter diamond beyond each end), so a shot whose aim lies far from the mirror line is still
found; the sign change nearest the ideal reading is taken."""
REFINE = 15
"""Interior points per bracket in the refining pass."""
REFINE_EDGE = 47
"""Interior points per bracket of the scoring window's ends (about 1 mm of reading)."""
PASSES = 1
"""Refining passes after the grid (each narrows every bracket REFINE + 1 times)."""
MARGIN_CAP = 1.5
"""A scoring window wider than this many diamonds either way is reported as this (as the ideal
model does)."""


def first_pass(table: TableSpec, rail: RailName) -> np.ndarray:
    """The grid of the first pass: every ``GRID_STEP`` diamond along ``rail``'s sights, from a
    quarter diamond before its start to a quarter diamond past its end (metres)."""
    span = 8.0 if rail in ("left", "right") else 4.0
    return np.arange(-0.25, span + 0.25 + 1e-9, GRID_STEP) * table.rail_unit(rail)


@dataclass(frozen=True, slots=True)
class Solved:
    """One problem's search: the root (None when the miss never changes sign), the scoring
    window's ends, why it failed, the first pass, and the recorded refining rows."""

    reading: float | None  # solver variable (line of centres for banks)
    lo: float | None  # lowest scoring value found (None: not asked)
    hi: float | None
    reason: str
    grid: np.ndarray | None = None
    scores: np.ndarray | None = None
    res: SimResult | None = None  # the refining pass, recorded (single solves only)
    rows: np.ndarray | None = None  # its rows inside the root's bracket
    svals: np.ndarray | None = None  # and their solver values


def root_pair(s: np.ndarray, mv: np.ndarray, centre: float) -> int | None:
    """Index j of the sign change of mv between s[j] and s[j + 1] nearest the centre."""
    a, b = mv[:-1], mv[1:]
    ok = np.isfinite(a) & np.isfinite(b) & (a * b <= 0.0)
    if not ok.any():
        return None
    mid = 0.5 * (s[:-1] + s[1:])
    cand = np.flatnonzero(ok)
    return int(cand[np.argmin(np.abs(mid[cand] - centre))])


def _chord_zero(s0: float, s1: float, m0: float, m1: float) -> float:
    """The zero of the straight line through (s0, m0) and (s1, m1)."""
    if m0 == m1:
        return 0.5 * (s0 + s1)
    return s0 + (s1 - s0) * (m0 / (m0 - m1))


def quadratic_zero(ss: np.ndarray, mm: np.ndarray, j: int) -> float:
    """The zero, inside the bracket [ss[j], ss[j + 1]], of the quadratic through three
    neighbouring samples, or the chord's zero when no such quadratic has one there.

    The quadratic is taken on centred, scaled abscissae u = (s - s_mid) / span in Newton's form
    (divided differences), its real roots by the cancellation-free quadratic formula, all in
    Python floats (a few numpy calls would cost more than the arithmetic); the result agrees
    with numpy.polynomial's Vandermonde solve and polyroots (tests/core/physics/test_aim.py).
    """
    lin = _chord_zero(ss[j], ss[j + 1], mm[j], mm[j + 1])
    lo, hi = min(ss[j], ss[j + 1]), max(ss[j], ss[j + 1])
    for k in (j - 1, j):
        if k < 0 or k + 2 >= ss.size:
            continue
        x0, x1, x2 = float(ss[k]), float(ss[k + 1]), float(ss[k + 2])
        y0, y1, y2 = float(mm[k]), float(mm[k + 1]), float(mm[k + 2])
        if not (math.isfinite(y0) and math.isfinite(y1) and math.isfinite(y2)):
            continue
        h = x2 - x0
        u0, u2 = (x0 - x1) / h, (x2 - x1) / h
        if u0 == 0.0 or u2 == 0.0 or u2 == u0:
            continue
        d0, d2 = (y0 - y1) / u0, (y2 - y1) / u2
        a2 = (d2 - d0) / (u2 - u0)
        a1 = d0 - a2 * u0
        inside = [u * h + x1 for u in _real_roots(a2, a1, y1) if lo <= u * h + x1 <= hi]
        if inside:
            return min(inside, key=lambda z: abs(z - lin))
    return lin


def _real_roots(a2: float, a1: float, a0: float) -> list[float]:
    """The real roots of a2 u^2 + a1 u + a0 (cancellation-free form; degree drops where the
    leading coefficients are zero)."""
    if a2 == 0.0:
        return [-a0 / a1] if a1 != 0.0 else []
    disc = a1 * a1 - 4.0 * a2 * a0
    if disc < 0.0:
        return []
    q = -0.5 * (a1 + math.copysign(math.sqrt(disc), a1))
    if q == 0.0:
        return [0.0]
    return [q / a2, a0 / q]


def solve_batch(
    m: BallModel,
    table: TableSpec,
    pr: Problems,
    stroke: Stroke,
    margins: bool,
    final: bool = False,
) -> list[Solved]:
    """Solve every problem of a batch: the root reading and, if asked, the scoring window.

    With ``final`` the root's bracket rows of the refining pass run to their landings and are
    recorded, so the aim's landing, contacts and path can be read off them (no extra pass).
    """
    P = pr.start.shape[0]
    unit = table.rail_unit(pr.rail)
    offs = first_pass(table, pr.rail)
    GRID = offs.size
    grid = np.broadcast_to(offs, (P, GRID)).copy()
    pi = np.repeat(np.arange(P), GRID)
    res, _ = run(m, table, pr, pi, grid.ravel(), stroke, lean=True)
    mv = res.miss.reshape(P, GRID)
    sc = res.scores.reshape(P, GRID)
    # brackets: [root lo, root hi, m lo, m hi] and the window ends [bad, good] x 2
    root: list[list[float] | None] = []
    fine: list[tuple[np.ndarray, np.ndarray, int] | None] = []
    edges: list[list[list[float] | None]] = []
    cap = MARGIN_CAP * unit
    for p in range(P):
        j = root_pair(grid[p], mv[p], pr.centre[p])
        if j is None:
            root.append(None)
            fine.append(None)
            edges.append([None, None])
            continue
        root.append([grid[p, j], grid[p, j + 1], mv[p, j], mv[p, j + 1]])
        fine.append((grid[p], mv[p], j))
        est = _chord_zero(grid[p, j], grid[p, j + 1], mv[p, j], mv[p, j + 1])
        e: list[list[float] | None] = []
        # lower end: nearest non-scoring grid point at or below j
        k = j
        while k >= 0 and sc[p, k]:
            k -= 1
        if k < 0 or est - grid[p, k] > cap:
            e.append(None)
        else:
            good = grid[p, k + 1] if k + 1 <= j else est
            e.append([grid[p, k], good])
        k = j + 1
        while k < GRID and sc[p, k]:
            k += 1
        if k >= GRID or grid[p, k] - est > cap:
            e.append(None)
        else:
            good = grid[p, k - 1] if k - 1 >= j + 1 else est
            e.append([grid[p, k], good])
        edges.append(e)
    frac = np.arange(1, REFINE + 1) / (REFINE + 1)
    frac_edge = np.arange(1, REFINE_EDGE + 1) / (REFINE_EDGE + 1)
    last_res: SimResult | None = None
    bracket_rows: dict[int, tuple[np.ndarray, np.ndarray]] = {}
    for _ in range(PASSES):
        vals: list[np.ndarray] = []
        tags: list[tuple[int, int]] = []  # (problem, 0 root / 1 lower / 2 upper)
        for p in range(P):
            rb = root[p]
            if rb is None:
                continue
            vals.append(rb[0] + (rb[1] - rb[0]) * frac)
            tags.append((p, 0))
            if margins:
                for side in (1, 2):
                    eb = edges[p][side - 1]
                    if eb is not None:
                        vals.append(eb[0] + (eb[1] - eb[0]) * frac_edge)
                        tags.append((p, side))
        if not tags:
            break
        s_all = np.concatenate(vals)
        pi = np.concatenate(
            [np.full(v.size, t[0], dtype=np.int64) for v, t in zip(vals, tags, strict=True)]
        )
        lean = np.concatenate(
            [np.full(v.size, not (final and t[1] == 0)) for v, t in zip(vals, tags, strict=True)]
        )
        res, _ = run(m, table, pr, pi, s_all, stroke, record=final, lean=lean)
        last_res = res
        at = 0
        for row, (p, side) in enumerate(tags):
            k = vals[row].size
            if side == 0:
                bracket_rows[p] = (np.arange(at, at + k), vals[row])
            mvr, scr = res.miss[at : at + k], res.scores[at : at + k]
            at += k
            if side == 0:
                rb = root[p]
                assert rb is not None
                ss = np.concatenate(([rb[0]], vals[row], [rb[1]]))
                mm = np.concatenate(([rb[2]], mvr, [rb[3]]))
                j = root_pair(ss, mm, 0.5 * (rb[0] + rb[1]))
                if j is None:  # lost the sign change (a gap in valid paths): keep the old one
                    continue
                root[p] = [ss[j], ss[j + 1], mm[j], mm[j + 1]]
                fine[p] = (ss, mm, j)
            else:
                eb = edges[p][side - 1]
                assert eb is not None
                ss = np.concatenate(([eb[0]], vals[row], [eb[1]]))
                ok = np.concatenate(([False], scr, [True]))
                # first scoring point counting from the bad end
                first = int(np.argmax(ok))
                edges[p][side - 1] = [ss[first - 1], ss[first]]
    out: list[Solved] = []
    for p in range(P):
        rb = root[p]
        if rb is None:
            out.append(Solved(None, None, None, "no sign change", grid[p], sc[p]))
            continue
        fp = fine[p]
        assert fp is not None
        s_root = quadratic_zero(*fp)
        lo = hi = None
        if margins:
            e_lo, e_hi = edges[p]
            lo = s_root - cap if e_lo is None else e_lo[1]
            hi = s_root + cap if e_hi is None else e_hi[1]
        br = bracket_rows.get(p)
        out.append(
            Solved(
                s_root,
                lo,
                hi,
                "",
                grid[p],
                sc[p],
                last_res if final else None,
                br[0] if br else None,
                br[1] if br else None,
            )
        )
    return out


def window(
    m: BallModel, table: TableSpec, pr: Problems, stroke: Stroke, sol: Solved, near: float
) -> tuple[float, float] | None:
    """The scoring window of grid readings nearest ``near``, its ends refined (two passes).

    Used when the line through the target point itself does not score (a pocket met at an
    angle, where the clean window is off the mouth's middle).
    """
    assert sol.grid is not None and sol.scores is not None
    g, sc = sol.grid, sol.scores
    if not sc.any():
        return None
    idx = np.flatnonzero(sc)
    j = int(idx[np.argmin(np.abs(g[idx] - near))])
    lo = j
    while lo - 1 >= 0 and sc[lo - 1]:
        lo -= 1
    hi = j
    while hi + 1 < g.size and sc[hi + 1]:
        hi += 1
    ends = [
        [g[lo - 1] if lo > 0 else g[lo], g[lo]],
        [g[hi + 1] if hi + 1 < g.size else g[hi], g[hi]],
    ]
    frac = np.arange(1, REFINE + 1) / (REFINE + 1)
    for _ in range(PASSES + 1):
        vals = np.concatenate([e[0] + (e[1] - e[0]) * frac for e in ends])
        res, _ = run(m, table, pr, np.zeros(vals.size, dtype=np.int64), vals, stroke, lean=True)
        scr = res.scores.reshape(2, REFINE)
        for k in range(2):
            ss = np.concatenate(([ends[k][0]], vals[k * REFINE : (k + 1) * REFINE], [ends[k][1]]))
            ok = np.concatenate(([False], scr[k], [True]))
            first = int(np.argmax(ok))
            ends[k] = [ss[first - 1], ss[first]]
    return float(ends[0][1]), float(ends[1][1])


# ----- traces --------------------------------------------------------------------------------
