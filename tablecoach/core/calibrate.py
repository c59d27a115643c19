"""Fit a table's cloth, cushion and the player's speed scale from logged landings."""

from __future__ import annotations

import math

from . import shots
from .records import Attempt
from .shots import RailPoint, Trace
from .table import TableSpec


class CalibrationError(ValueError):
    """A calibration cannot be made; the message says what to log or fix."""


def _contact_xy(table: TableSpec, p: RailPoint) -> tuple[float, float]:
    r = table.ball_radius
    if p.rail == "left":
        return (p.at, r)
    if p.rail == "right":
        return (p.at, table.width - r)
    if p.rail == "head":
        return (r, p.at)
    return (table.length - r, p.at)


def travel_sign(table: TableSpec, trace: Trace, start: tuple[float, float]) -> float:
    """+1 or -1: which way round the table (perimeter_position) the ball runs as it lands.

    Taken from the along-rail direction of the last straight run before the landing rail (from
    the last cushion contact, or the start if there was none). 0 for a perpendicular arrival.
    """
    land = trace.landing
    if land is None:
        return 0.0
    prev = _contact_xy(table, trace.contacts[-1]) if trace.contacts else start
    axis = 0 if land.rail in ("left", "right") else 1
    along = land.at - prev[axis]
    if abs(along) < 1e-9:
        return 0.0
    s = 1.0 if along > 0 else -1.0
    return s if land.rail in ("left", "foot") else -s


def predicted_trace(
    table: TableSpec,
    attempt: Attempt,
    model: str = "ideal",
    speed: float | None = None,
) -> Trace:
    """Where the model sends the ball of a logged attempt with the aim the player used.

    ``speed`` (m/s) replaces the logged speed when given (the player's calibrated speed).
    """
    setup = shots.setup_of(table, attempt.shot)
    rail = setup.family.rails[0]
    reading = table.along_to_metres(rail, attempt.aim_used)
    stroke = shots.Stroke(
        attempt.speed if speed is None else speed, attempt.english, attempt.follow
    )
    return shots.predict(table, setup, reading, stroke, model)


def observed_landing(table: TableSpec, attempt: Attempt) -> RailPoint:
    """The logged landing as a RailPoint in metres."""
    rail = attempt.landing_rail
    return RailPoint(rail, table.along_to_metres(rail, attempt.landing_at))  # type: ignore[arg-type]


def landing_error(
    table: TableSpec, attempt: Attempt, model: str = "ideal", speed: float | None = None
) -> float | None:
    """Signed error of the logged landing against the model's, in diamonds round the table.

    Positive means long: the ball landed further along its path than the model predicts for
    the aim used. None when the model's ball never reaches a landing rail.
    """
    tr = predicted_trace(table, attempt, model, speed)
    if tr.landing is None:
        return None
    d = shots.landing_distance(table, observed_landing(table, attempt), tr.landing)
    s = travel_sign(table, tr, shots.setup_of(table, attempt.shot).start)
    if s == 0.0:
        return d
    return d * s if math.isfinite(d) else None
