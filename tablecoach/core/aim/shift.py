"""A trusted reference line moved to a new position: shifted parallel, turned about the
convergence point, and the solved aim, each with how close its path comes to the target.

The reference is a line the player trusts: the travelling ball's start and the reading on the
family's first rail. ``parallel`` keeps that line's direction through the new start;
``rotated`` is the line from the new start through the convergence point; ``solved`` is the
model's aim. Each ``miss`` is the closest approach (metres) of that reading's path, after the
family's rails, to the target point (the pocket's aim point or the target ball's centre).
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass

from ..geometry import Point, box_exit, unit
from ..shots import Aim, RailPoint, Setup, ShotError, Trace
from ..table import RAILS, RailName, TableSpec, axis_of
from .sights import direction_of, reading_of


@dataclass(frozen=True, slots=True)
class ShiftLine:
    """One line from the new start: its reading (metres along the first rail's line of
    sights), where it went, and its closest approach to the target (metres; None when the
    model could not follow it)."""

    reading: float
    trace: Trace
    miss: float | None


@dataclass(frozen=True, slots=True)
class ReferenceShift:
    """The reference line (start, reading in metres) moved to a new setup three ways."""

    reference_start: Point
    reference_reading: float
    point: Point
    parallel: ShiftLine
    rotated: ShiftLine
    solved: ShiftLine


def rail_point(table: TableSpec, p: RailPoint) -> Point:
    """A rail point (on the rail's reflection line) as a point on the table, in metres."""
    line = table.reflection_line(p.rail)
    return (line, p.at) if axis_of(p.rail) == 0 else (p.at, line)


def reference_direction(
    table: TableSpec, rail: RailName, ref_start: Point, ref_reading: float
) -> Point:
    """The reference line's direction, checked: its start on the table and its first cushion
    ``rail`` (the family's first rail). Raises ShotError (one line) otherwise."""
    table.check_position(ref_start[0], ref_start[1], "the reference start (--ref-start)")
    d = direction_of(table, ref_start, rail, ref_reading)
    _, code = box_exit(ref_start, d, table.ball_box())
    if RAILS[code] != rail:
        unit_m = table.rail_unit(rail)
        raise ShotError(
            f"the reference reading {ref_reading / unit_m:.2f} from that start meets the "
            f"{RAILS[code]} rail first, not the {rail} rail this shot banks off first: "
            f"give a reading on the {rail} rail"
        )
    return d


def closest_approach(points: Sequence[Point], target: Point) -> float:
    """The least distance from ``target`` to the polyline through ``points`` (metres)."""
    if not points:
        return math.inf
    best = math.hypot(points[0][0] - target[0], points[0][1] - target[1])
    for a, b in zip(points, points[1:], strict=False):
        ex, ey = b[0] - a[0], b[1] - a[1]
        ll = ex * ex + ey * ey
        t = 0.0 if ll == 0.0 else ((target[0] - a[0]) * ex + (target[1] - a[1]) * ey) / ll
        t = min(1.0, max(0.0, t))
        best = min(best, math.hypot(a[0] + t * ex - target[0], a[1] + t * ey - target[1]))
    return best


def miss_of(table: TableSpec, setup: Setup, trace: Trace) -> float | None:
    """Closest approach (metres) of a trace's path after the family's rails to the target
    point; the path runs on to the landing (the rail crossing after the family's rails,
    balls ignored). None when the trace has no path."""
    if not trace.path:
        return None
    n = min(len(setup.family.rails), len(trace.contacts))
    if n == 0:
        tail = list(trace.path)
    else:
        c = rail_point(table, trace.contacts[n - 1])
        k = min(
            range(len(trace.path)),
            key=lambda i: math.hypot(trace.path[i][0] - c[0], trace.path[i][1] - c[1]),
        )
        tail = [c]
        box = table.ball_box()
        for q in trace.path[k + 1 :]:
            tail.append(q)
            away = math.hypot(q[0] - c[0], q[1] - c[1]) > 0.02
            if away and _on_edge(q, box):  # the next rail: the leg after the family's rails ends
                break
    if trace.landing is not None:
        tail.append(rail_point(table, trace.landing))
    return closest_approach(tail, setup.target_point(table))


def _on_edge(q: Point, box: tuple[float, float, float, float]) -> bool:
    """Whether a ball centre sits on the ball box's edge (within a millimetre): at a rail."""
    xmin, xmax, ymin, ymax = box
    return min(q[0] - xmin, xmax - q[0], q[1] - ymin, ymax - q[1]) < 1e-3


def shift_from_reference(
    table: TableSpec,
    setup: Setup,
    ref_start: Point,
    ref_reading: float,
    solved: Aim,
    point: Point,
    trace: Callable[[float], Trace],
) -> ReferenceShift:
    """The reference line (``ref_start``, ``ref_reading`` metres on the first rail) moved to
    ``setup``'s start: parallel, turned about ``point`` (the convergence point), and ``solved``
    (the aim of ``setup``); ``trace`` follows a reading under the chosen model (it may raise
    ShotError: that line's miss is then None)."""
    rail = setup.family.rails[0]
    ref_dir = reference_direction(table, rail, ref_start, ref_reading)
    start = setup.start
    par = reading_of(table, start, ref_dir, rail)
    to_point = (point[0] - start[0], point[1] - start[1])
    rot = reading_of(table, start, unit(to_point), rail) if any(to_point) else None
    if par is None:
        raise ShotError(f"the reference line moved to this start no longer reaches the {rail} rail")
    if rot is None:
        raise ShotError(f"the line through the convergence point does not reach the {rail} rail")

    def line(reading: float) -> ShiftLine:
        try:
            tr = trace(reading)
        except ShotError:
            return ShiftLine(reading, Trace((), (), None, False, "not followed", ()), None)
        return ShiftLine(reading, tr, miss_of(table, setup, tr))

    return ReferenceShift(ref_start, ref_reading, point, line(par), line(rot), line(solved.reading))
