"""Speed as players say it: table lengths of travel, up and down the table, cushions counted.

A stroke is named by how far it sends the cue ball (common practice, no single source: a lag is
one length up and back, about two lengths of travel; D. Alciatore's "typical shot speeds" page
points to his TP B.6, cue-ball table lengths of travel "accounting for rail rebound and drag
losses"). Here the ball starts frozen to the middle of the head cushion, is struck at centre
ball straight up the table, and runs under the full model (sliding, rolling, every end-cushion
impact) until it stops; its travel is counted in lengths of the ball-centre span, nose to nose
less one ball diameter, so a ball that just comes back to touch the head cushion has travelled
exactly 2 lengths.
"""

from __future__ import annotations

import math

import numpy as np

from ..table import TableSpec
from .params import BallModel
from .simulate import simulate
from .stick import stick_hit

_MAX_ENDS = 12
"""End cushions followed; a stroke past this many lengths is not a practice stroke."""

_SPEED_GRID = np.geomspace(0.2, 8.0, 56)
"""Cue-ball speeds (m/s) simulated once per table to turn lengths into speeds."""


def span(table: TableSpec) -> float:
    """One length of travel in metres: the ball-centre span between the end cushions."""
    return table.length - 2.0 * table.ball_radius


def lengths_of_travel(m: BallModel, table: TableSpec, speeds: np.ndarray) -> np.ndarray:
    """Lengths of travel (see module) of centre-ball strokes at these cue-ball speeds (m/s)."""
    sp = np.atleast_1d(np.asarray(speeds, dtype=float))
    n = sp.size
    R = m.radius
    start = np.tile([R, 0.5 * table.width], (n, 1))
    d = np.tile([1.0, 0.0], (n, 1))
    v0, w0 = stick_hit(m, d, sp)
    rails = tuple("foot" if i % 2 == 0 else "head" for i in range(_MAX_ENDS))
    res = simulate(
        m,
        table,
        rails,
        start,
        v0,
        w0,
        np.full((n, 0, 2), np.nan),
        np.zeros((n, 0), dtype=np.int64),
        np.full((n, 2), np.nan),
        np.full(n, -1, dtype=np.int64),
        max_events=8 * _MAX_ENDS + 16,
    )
    ends = res.walls.astype(float)
    lo, hi = R, table.length - R
    last_wall = np.where(res.walls % 2 == 1, hi, lo)
    stop_x = res.stop_pos[:, 0]
    last = np.where(np.isnan(stop_x), 0.0, np.abs(stop_x - last_wall))
    return (ends * (hi - lo) + last) / (hi - lo)


def _curve(m: BallModel, table: TableSpec) -> tuple[np.ndarray, np.ndarray]:
    key = (m, table)
    got = _CURVES.get(key)
    if got is None:
        got = (_SPEED_GRID, lengths_of_travel(m, table, _SPEED_GRID))
        if len(_CURVES) > 16:
            _CURVES.clear()
        _CURVES[key] = got
    return got


_CURVES: dict[tuple[BallModel, TableSpec], tuple[np.ndarray, np.ndarray]] = {}


def speed_for_lengths(m: BallModel, table: TableSpec, lengths: float) -> float:
    """The cue-ball speed (m/s) whose centre-ball stroke travels ``lengths`` on this table.

    Travel grows monotonically with speed; the speed is interpolated on a geometric grid of
    simulated strokes (in log speed against log lengths, where the curve is nearly straight).
    """
    if not (math.isfinite(lengths) and lengths > 0):
        raise ValueError(f"lengths of travel must be a positive number, not {lengths!r}")
    sp, ln = _curve(m, table)
    ok = np.concatenate(([True], np.diff(ln) > 0))
    sp, ln = sp[ok], ln[ok]
    if lengths < ln[0] or lengths > ln[-1]:
        raise ValueError(
            f"{lengths:g} lengths of travel is outside what this table's model covers "
            f"({ln[0]:.2f} to {ln[-1]:.1f} lengths)"
        )
    return float(np.exp(np.interp(np.log(lengths), np.log(ln), np.log(sp))))


def lengths_for_speed(m: BallModel, table: TableSpec, speed: float) -> float:
    """Lengths of travel of a centre-ball stroke at ``speed`` m/s on this table."""
    sp, ln = _curve(m, table)
    if speed <= sp[0] or speed >= sp[-1]:
        return float(lengths_of_travel(m, table, np.array([speed]))[0])
    return float(np.exp(np.interp(np.log(speed), np.log(sp), np.log(np.maximum(ln, 1e-9)))))
