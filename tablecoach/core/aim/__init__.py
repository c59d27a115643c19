"""Aim models behind one interface: solve, playable, predict, convergence, shift comparisons.

Two models, chosen by name (MODELS): ``"ideal"`` (mirror reflection, aim/ideal.py) and
``"physical"`` (the event simulation of core/physics, aim/physical.py, loaded on first use so
the ideal path stays light). Both return the shot vocabulary's Aim, Trace and Convergence.
"""

from __future__ import annotations

from collections.abc import Sequence

from ..geometry import Point, unit
from ..shots import (
    Aim,
    Convergence,
    Setup,
    ShiftComparison,
    ShotError,
    StopsShort,
    Stroke,
    Trace,
    landing_distance,
)
from ..strokes import book_strokes, speed_name
from ..table import TableSpec
from . import ideal
from .shift import ReferenceShift, shift_from_reference
from .sights import direction_of, reading_of

MODELS = ("ideal", "physical")

POWER_CAUTION = 3.2
"""Cue-ball speed (m/s) from which the card adds a word of caution: the top of Alciatore's
published fast band ("typical shot speeds"); above it balls can leave the table."""


def _unknown(model: str) -> ShotError:
    return ShotError(f"unknown model {model!r}: use one of {', '.join(MODELS)}")


def solve(
    table: TableSpec, setup: Setup, stroke: Stroke | None = None, model: str = "ideal"
) -> Aim:
    """Solve the aim under the named model ('ideal' or 'physical')."""
    if model == "ideal":
        return ideal.solve(table, setup, stroke)
    if model == "physical":
        from . import physical  # loaded on first use: keeps the ideal path light

        return physical.solve(table, setup, stroke or Stroke())
    raise _unknown(model)


def solve_playable(
    table: TableSpec,
    setup: Setup,
    stroke: Stroke | None = None,
    model: str = "ideal",
    strokes: dict[str, float] | None = None,
) -> tuple[Aim, str]:
    """Solve at the asked speed; if the ball would stop short, at the softest firmer named
    stroke that makes it (``strokes``: name -> m/s, default this table's book strokes).

    Returns the aim (its ``stroke`` is the speed to play) and a note for the player, empty when
    the asked speed works. Raises the first error when the failure is not one of pace, or when
    no firmer stroke makes the shot either (saying what stops the firmer ones).
    """
    stroke = stroke or Stroke()
    try:
        return solve(table, setup, stroke, model), ""
    except StopsShort as exc:
        first: ShotError = exc
    if strokes is None:
        strokes = book_strokes(table)
    later: ShotError | None = None
    for name, v in strokes.items():
        if v <= stroke.speed * 1.001:
            continue
        try:
            aim = solve(table, setup, Stroke(v, stroke.english, stroke.follow), model)
        except ShotError as exc:
            if not isinstance(exc, StopsShort):
                later = later or exc
            continue
        note = f"at {speed_name(stroke.speed, table)} pace the ball stops short: play it {name}"
        if v > POWER_CAUTION:
            note += " (keep the line of the shot clear of people)"
        return aim, note
    if later is not None:
        raise ShotError(f"{first}; played firmer: {later}") from None
    raise first


def predict(
    table: TableSpec,
    setup: Setup,
    reading: float,
    stroke: Stroke | None = None,
    model: str = "ideal",
) -> Trace:
    """Where a given reading (metres along the first rail's line of sights) takes the ball."""
    if model == "ideal":
        rail = setup.family.rails[0]
        return ideal.trace(table, setup, direction_of(table, setup.start, rail, reading))
    if model == "physical":
        from . import physical

        return physical.predict(table, setup, stroke or Stroke(), reading)
    raise _unknown(model)


def neighbourhood(table: TableSpec, centre: Point, half: float = 0.5, n: int = 3) -> list[Point]:
    """An n x n grid of start positions within ``half`` diamonds of ``centre``, on the table."""
    out = []
    for i in range(n):
        for j in range(n):
            fx = -half + 2.0 * half * i / (n - 1) if n > 1 else 0.0
            fy = -half + 2.0 * half * j / (n - 1) if n > 1 else 0.0
            p = (centre[0] + fx * table.diamond, centre[1] + fy * table.diamond_across)
            out.append(table.clamp_position(*p))
    return out


def convergence(
    table: TableSpec,
    setup: Setup,
    starts: Sequence[Point] | None = None,
    stroke: Stroke | None = None,
    model: str = "ideal",
) -> Convergence:
    """The convergence point of the family of ``setup`` from a set of start positions
    (default: ``neighbourhood`` of its start).

    Each start is solved under the model (starts without a clean path are left out; for banks
    the cue ball is moved behind each object position, since only the object's path matters);
    the point is the least-squares nearest point to the solved aim lines (geometry.py). Under
    the ideal model every line passes through the target's unfolded image, so the spread is 0.
    """
    if starts is None:
        starts = neighbourhood(table, setup.start)
    if model == "ideal":
        return ideal.convergence(table, setup, starts)
    if model == "physical":
        from . import physical

        return physical.convergence(table, setup, list(starts), stroke or Stroke())
    raise _unknown(model)


def compare_shift(
    table: TableSpec,
    reference: Setup,
    new: Setup,
    stroke: Stroke | None = None,
    model: str = "ideal",
) -> ShiftComparison:
    """Compare a parallel shift of the reference aim with a rotation about the convergence point.

    Misses are signed distances in diamonds round the table (shots.perimeter_position) from the
    solved landing.
    """
    ref_aim = solve(table, reference, stroke, model)
    new_aim = solve(table, new, stroke, model)
    conv = convergence(table, reference, None, stroke, model)
    rail = reference.family.rails[0]
    start = new.start
    par = reading_of(table, start, ref_aim.direction, rail)
    rot_dir = unit((conv.point[0] - start[0], conv.point[1] - start[1]))
    rot = reading_of(table, start, rot_dir, rail)
    if par is None or rot is None:
        raise ShotError("the new position's lines do not reach the first rail")
    pl = predict(table, new, par, stroke, model).landing
    rl = predict(table, new, rot, stroke, model).landing
    sl = new_aim.landing
    pm = landing_distance(table, pl, sl) if pl else None
    rm = landing_distance(table, rl, sl) if rl else None
    return ShiftComparison(par, pl, rot, rl, new_aim.reading, sl, pm, rm)


def shift(
    table: TableSpec,
    setup: Setup,
    ref_start: Point,
    ref_reading: float,
    solved: Aim,
    conv: Convergence,
    stroke: Stroke | None = None,
    model: str = "ideal",
) -> ReferenceShift:
    """A reference line (travelling ball's start, reading in metres on the first rail) moved
    to ``setup``: shifted parallel, turned about ``conv``'s point, and ``solved``, each traced
    under ``model`` with its closest approach to the target (aim/shift.py)."""
    return shift_from_reference(
        table,
        setup,
        ref_start,
        ref_reading,
        solved,
        conv.point,
        lambda r: predict(table, setup, r, stroke or solved.stroke, model),
    )


def speed_neighbours(
    table: TableSpec,
    aim: Aim,
    strokes: dict[str, float] | None = None,
) -> list[tuple[str, str, Trace]]:
    """The same reading played at the next softer and the next firmer named stroke (``strokes``:
    name -> m/s, default this table's book strokes), under the aim's model, as ("softer" or
    "firmer", stroke name, trace); a stroke the model cannot follow is left out."""
    if strokes is None:
        strokes = book_strokes(table)
    v = aim.stroke.speed
    softer = [(s, n) for n, s in strokes.items() if s < v * 0.999]
    firmer = [(s, n) for n, s in strokes.items() if s > v * 1.001]
    picks = [("softer", max(softer))] if softer else []
    picks += [("firmer", min(firmer))] if firmer else []
    out: list[tuple[str, str, Trace]] = []
    for kind, (speed, name) in picks:
        stroke = Stroke(speed, aim.stroke.english, aim.stroke.follow)
        try:
            tr = predict(table, aim.setup, aim.reading, stroke, aim.model)
        except ShotError:
            continue
        out.append((kind, name, tr))
    return out
