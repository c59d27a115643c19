"""Spin as players name it: running or reverse english at the first rail, follow and draw.

English is side spin in tips, positive to the player's right (records.Attempt); follow is top
spin in tips, negative for draw. Running english turns the ball along the rail the way it is
already going, so it comes off the rail longer and livelier; reverse english is the other side
(common practice, no source). Which side is running depends on the shot: english on the side
the ball turns toward off the rail is running.
"""

from __future__ import annotations

from collections.abc import Sequence

from .shots import Aim
from .table import OUTWARD_NORMALS, RAILS

SPIN_STEPS: tuple[tuple[str, float], ...] = (
    ("centre", 0.0),
    ("running", 1.0),
    ("reverse", 1.0),
    ("follow", 0.5),
    ("draw", 0.5),
)
"""What the spin key steps through: a centre hit, a tip of running and of reverse english, and
half a tip of follow and of draw (within the one tip of centre the packs allow)."""


def running_sign(rail: str, direction: Sequence[float]) -> float:
    """+1 when right english is running english for a ball heading ``direction`` (table frame)
    into ``rail``, -1 when left english is, 0 for a ball going straight into the rail.

    Seen from above with z up, a right-of-centre hit spins the ball counter-clockwise (the cue
    pushes the right side forward: torque r x F points up). At the cushion the contact point
    then moves along the rail with velocity w (z x n) R, n pointing from the ball into the rail;
    the english is running when that motion is against the ball's own slide along the rail (the
    ball rolls along the cushion like a wheel instead of scrubbing against it).
    """
    nx, ny = OUTWARD_NORMALS[RAILS.index(rail)]  # from the table into the rail
    vx, vy = float(direction[0]), float(direction[1])
    # right-handed frame with z up: X = table y (to the right), Y = table x (forward)
    n_x, n_y, v_x, v_y = ny, nx, vy, vx
    along = -n_y * v_x + n_x * v_y  # (z x n) . v
    if abs(along) < 1e-9:
        return 0.0
    return 1.0 if along < 0 else -1.0


def spin_for(step: int, aim: Aim | None) -> tuple[float, float]:
    """(english, follow) in tips for step ``step`` of SPIN_STEPS on this aim. Running and
    reverse are turned into a side with the aim's first rail and direction (for a bank, whose
    cue ball meets no rail first, and head-on shots: right, then left)."""
    kind, tips = SPIN_STEPS[step % len(SPIN_STEPS)]
    if kind == "centre":
        return 0.0, 0.0
    if kind in ("follow", "draw"):
        return 0.0, tips if kind == "follow" else -tips
    sign = 0.0
    if aim is not None and aim.setup.family.travel == "cue":
        sign = running_sign(aim.rail, aim.direction)
    if sign == 0.0:
        sign = 1.0
    return (sign * tips if kind == "running" else -sign * tips), 0.0


def english_kind(english: float, aim: Aim | None) -> str:
    """ "running", "reverse" or "" (no english, a bank, or a head-on shot)."""
    if not english or aim is None or aim.setup.family.travel != "cue":
        return ""
    sign = running_sign(aim.rail, aim.direction)
    if sign == 0.0:
        return ""
    return "running" if english * sign > 0 else "reverse"


__all__ = ["SPIN_STEPS", "english_kind", "running_sign", "spin_for"]
