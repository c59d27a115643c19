"""The cue-stick hit: initial velocity and spin from the speed and the tip offset.

A level cue strikes the ball with an impulse J along its line at the point of the ball's surface
offset ``a`` to the player's right and ``b`` above the centre (tips converted below). A rigid
impulse through that point gives v = J / m along the line and w = r x J / I with
r = a * right + b * z - c * d, c = sqrt(R^2 - a^2 - b^2) (standard rigid-body impulse, as in
Leckie and Greenspan 2006 for a level cue; no squirt, swerve or cue elevation is modelled).
With J = m v0 and I = 2/5 m R^2 this is w = (5 v0 / (2 R^2)) (b * (z x d) - a * z) in the
simulation frame (see motion.py for the frame and why "right" is a polar vector).

Check (J. D. Barrow, "Cushioning the blow", Plus Magazine, 2010): b = 2R/5, a hit at 7/10 of
the diameter above the cloth, gives zero contact slip, natural roll from the start.

Tips: one tip of offset is taken as half the ball's radius, R/2 (14.3 mm on a 57.15 mm ball,
about the width of a 13-14 mm cue tip). The usual miscue limit is about half the radius
(Alciatore, from memory), so one tip is also the largest offset allowed, as `tablecoach aim`
already enforces; natural roll is then 0.8 tips of follow. Both figures are from memory of
instructors' usage, not a published standard.
"""

from __future__ import annotations

import math

import numpy as np

from ..table import TableSpec
from .params import BallModel

TIP_FRACTION = 0.5
"""One tip of offset as a fraction of the ball radius (convention from memory, see above)."""

MAX_OFFSET_FRACTION = 0.5
"""Miscue limit: the tip offset from centre at most half the radius (Alciatore, from memory)."""


class StrokeError(ValueError):
    """The stroke cannot be played as given (for example, too far off centre)."""


def tip_offset(radius: float, tips: np.ndarray | float) -> np.ndarray | float:
    """Tips of english or follow to metres of offset from the ball's centre (1 tip = R/2)."""
    return tips * TIP_FRACTION * radius


def check_offset(table: TableSpec, english: float, follow: float) -> None:
    """StrokeError when the combined offset passes the miscue limit (half the radius)."""
    r = table.ball_radius
    off = math.hypot(tip_offset(r, english), tip_offset(r, follow))
    if off > MAX_OFFSET_FRACTION * r + 1e-12:
        lim = MAX_OFFSET_FRACTION / TIP_FRACTION
        raise StrokeError(
            f"{math.hypot(english, follow):.2g} tips off centre is past the miscue limit "
            f"(about {lim:g} tips, half the ball's radius): use less english or follow"
        )


def natural_roll_tips() -> float:
    """The follow (tips) that rolls at once: b = 2R/5 (Barrow 2010), i.e. 0.8 tips."""
    return 0.4 / TIP_FRACTION


def stick_hit(
    m: BallModel,
    direction: np.ndarray,
    speed: np.ndarray | float,
    english: np.ndarray | float = 0.0,
    follow: np.ndarray | float = 0.0,
) -> tuple[np.ndarray, np.ndarray]:
    """Initial velocity (n, 2) and spin (n, 3) for unit directions (n, 2) and the tip offsets.

    ``english`` positive to the player's right, ``follow`` positive above centre (draw
    negative), both in tips.
    """
    d = np.asarray(direction, dtype=float).reshape(-1, 2)
    n = d.shape[0]
    v0 = np.broadcast_to(np.asarray(speed, dtype=float), (n,))
    a = tip_offset(m.radius, np.broadcast_to(np.asarray(english, dtype=float), (n,)))
    b = tip_offset(m.radius, np.broadcast_to(np.asarray(follow, dtype=float), (n,)))
    v = d * v0[:, None]
    k = 2.5 * v0 / (m.radius * m.radius)
    w = np.empty((n, 3))
    # z x d = (-dy, dx, 0); right of travel = (-dy, dx) as a polar vector of the table.
    w[:, 0] = k * b * (-d[:, 1])
    w[:, 1] = k * b * d[:, 0]
    w[:, 2] = -k * a
    return v, w
