"""The rotation drill: setups dealt around a reference line's start, and make rates by distance.

A reference line (store/refs.py) gives the travelling ball's start. The drill deals that family
with the travelling ball a quarter to one diamond to either side of the start (along and across
the table), so each card shows the reference turned about the convergence point; its attempts
are then summed up by how far each start was from the reference.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

from .drill_packs import Drill, parse_drill
from .records import Attempt
from .shots import PRESETS
from .store.refs import Reference
from .strokes import speed_name
from .table import TableSpec

NEAR, FAR = 0.25, 1.0
"""The drill's starts lie from a quarter to one diamond from the reference start."""

EDGE = 0.25
"""Regions stop a quarter diamond inside the rails (a ball frozen to a rail is another shot)."""


def pack_name(ref: Reference) -> str:
    """The drill pack's name (its file stem) for one reference line."""
    return f"rotation-{ref.id}"


def _box(x0: float, x1: float, y0: float, y1: float) -> tuple[float, float, float, float] | None:
    x0, x1 = max(x0, EDGE), min(x1, 8.0 - EDGE)
    y0, y1 = max(y0, EDGE), min(y1, 4.0 - EDGE)
    return (x0, x1, y0, y1) if x0 <= x1 and y0 <= y1 else None


def ring(x: float, y: float) -> list[tuple[float, float, float, float]]:
    """Rectangles (x0, x1, y0, y1, diamonds) covering the square ring NEAR..FAR around (x, y),
    inside the table: left and right bands, then the bands above and below between them."""
    boxes = (
        _box(x - FAR, x - NEAR, y - FAR, y + FAR),
        _box(x + NEAR, x + FAR, y - FAR, y + FAR),
        _box(x - NEAR, x + NEAR, y - FAR, y - NEAR),
        _box(x - NEAR, x + NEAR, y + NEAR, y + FAR),
    )
    return [b for b in boxes if b is not None]


def _rects(boxes: Sequence[tuple[float, float, float, float]]) -> str:
    return (
        "["
        + ", ".join(f"{{ x = [{a:g}, {b:g}], y = [{c:g}, {d:g}] }}" for a, b, c, d in boxes)
        + "]"
    )


def pack_text(table: TableSpec, ref: Reference, count: int = 20) -> str:
    """The drill pack (TOML, docs/drills.md) for one reference line.

    For a bank the object ball is dealt in the ring and the cue ball in a box a diamond behind
    it, against the reference line's direction (the dealer keeps cuts under 40 degrees); for a
    kick the cue ball is dealt in the ring and the target ball stays where the reference had it.
    """
    sx, sy = ref.start
    bands = ring(sx, sy)
    if not bands:
        raise ValueError("the reference start leaves no room for the drill on this table")
    stroke = speed_name(ref.speed, table)
    lines = [
        f'title = "Rotation around your {ref.reading:g} line ({ref.family})"',
        'description = "The travelling ball a quarter to one diamond from your reference '
        'start: turn the line about the convergence point."',
        f"count = {int(count)}",
        "",
        "[[item]]",
    ]
    if ref.family in PRESETS:
        lines.append(f'family = "{ref.family}"')
    else:  # a family given by its structure (a pack's own name, or "custom")
        if ref.family != "custom":
            lines.append(f'family = "{ref.family}"')
        lines.append(f'travel = "{ref.travel}"')
        lines.append("rails = [" + ", ".join(f'"{r}"' for r in ref.rails) + "]")
    lines.append(f'speeds = ["{stroke}"]')
    if ref.travel == "object":
        if ref.pocket is not None:
            lines.append(f'pockets = ["{ref.pocket}"]')
        # the cue ball a diamond behind the object ball, against the line toward the rail
        rail = ref.rails[0]
        tx, ty = {
            "right": (ref.reading, 4.0),
            "left": (ref.reading, 0.0),
            "foot": (8.0, ref.reading),
            "head": (0.0, ref.reading),
        }[rail]
        dx, dy = tx - sx, ty - sy
        n = math.hypot(dx, dy) or 1.0
        cx, cy = sx - dx / n, sy - dy / n
        cue = _box(cx - 1.5, cx + 1.5, cy - 1.5, cy + 1.5)
        if cue is None:
            raise ValueError("no room behind the reference start for the cue ball")
        lines += ["[item.regions]", f"object = {_rects(bands)}", f"cue = {_rects([cue])}"]
    else:
        if ref.target is None:
            raise ValueError("a kick's reference needs its target ball")
        tx, ty = ref.target
        lines += [
            "[item.regions]",
            f"cue = {_rects(bands)}",
            f"target = {{ x = [{tx:g}, {tx:g}], y = [{ty:g}, {ty:g}] }}",
        ]
    return "\n".join(lines) + "\n"


def rotation_drill(table: TableSpec, ref: Reference, count: int = 20) -> Drill:
    """The pack of ``pack_text``, parsed and checked like any pack file."""
    return parse_drill(pack_text(table, ref, count), pack_name(ref))


@dataclass(frozen=True, slots=True)
class DistanceRate:
    """Attempts whose start lay ``distance`` diamonds (the larger offset, to the nearest
    quarter) from the reference start, and how many were hits."""

    distance: float
    attempts: int
    hits: int

    @property
    def rate(self) -> float:
        return self.hits / self.attempts if self.attempts else 0.0


def start_of(a: Attempt) -> tuple[float, float]:
    """The travelling ball's start of an attempt (diamonds): the object ball of a bank."""
    s = a.shot
    return s.object if s.travel == "object" and s.object is not None else s.cue


def rates_by_distance(ref: Reference, attempts: Sequence[Attempt]) -> list[DistanceRate]:
    """Make rates of the attempts of this reference's family shape, by the distance of each
    start from the reference start: the larger of its offsets along and across the table (the
    drill's square ring), rounded to the nearest quarter diamond."""
    counts: dict[float, list[int]] = {}
    for a in attempts:
        s = a.shot
        if (s.travel, s.rails, s.pocket) != (ref.travel, ref.rails, ref.pocket):
            continue
        x, y = start_of(a)
        d = round(max(abs(x - ref.start[0]), abs(y - ref.start[1])) * 4.0) / 4.0
        c = counts.setdefault(d, [0, 0])
        c[0] += 1
        c[1] += a.result == "hit"
    return [DistanceRate(d, n, h) for d, (n, h) in sorted(counts.items())]
