"""Running and reverse english named from the shot's geometry."""

from __future__ import annotations

import math

import numpy as np
import pytest

from tablecoach.core import shots, spin
from tablecoach.core.aim import ideal
from tablecoach.core.table import BUILTIN_TABLES

T9 = BUILTIN_TABLES["9ft"]


def turn_sign(rail: str, d: tuple[float, float]) -> float:
    """Reference: which way the ball turns off the rail, +1 to its right, -1 to its left, from
    the mirror reflection of its direction and the sign of the 2-D cross product (numpy's
    determinant) in a frame seen from above (x to the player's right = table y, forward =
    table x)."""
    into = {"right": (0.0, 1.0), "left": (0.0, -1.0), "foot": (1.0, 0.0), "head": (-1.0, 0.0)}
    n = np.array(into[rail])
    v = np.array(d, float)
    out = v - 2.0 * v.dot(n) * n  # law of reflection
    up = lambda a: np.array([a[1], a[0]])  # noqa: E731  (table -> up frame)
    a, b = up(v), up(out)
    z = float(np.linalg.det(np.array([a, b])))  # the 2-D cross product a x b
    return 0.0 if abs(z) < 1e-12 else (-1.0 if z > 0 else 1.0)  # counter-clockwise: left


_INTO = {"right": (0, 1), "left": (0, -1), "foot": (1, 0), "head": (-1, 0)}
_CASES = [
    (rail, angle)
    for rail in _INTO
    for angle in (20.0, 45.0, 70.0, 110.0, 160.0, 200.0, 250.0, 300.0, 340.0)
    if math.cos(math.radians(angle)) * _INTO[rail][0]
    + math.sin(math.radians(angle)) * _INTO[rail][1]
    > 0  # only directions that head into that rail
]


@pytest.mark.parametrize(("rail", "angle"), _CASES)
def test_running_side_is_the_side_the_ball_turns_to(rail: str, angle: float) -> None:
    # Rule of thumb (common practice, no source): english on the side the ball turns toward
    # off the rail is running english.
    d = (math.cos(math.radians(angle)), math.sin(math.radians(angle)))
    assert spin.running_sign(rail, d) == turn_sign(rail, d)


def test_worked_cases_and_head_on() -> None:
    # heading to the foot and right into the right rail, the ball comes off to its left
    assert spin.running_sign("right", (1.0, 1.0)) == -1.0
    # heading to the head and right, it comes off to its right
    assert spin.running_sign("right", (-1.0, 1.0)) == 1.0
    assert spin.running_sign("foot", (1.0, 0.0)) == 0.0


def test_spin_steps_on_a_kick() -> None:
    setup = shots.make_setup(
        T9,
        shots.PRESETS["one-rail-kick"],
        T9.to_metres(1.5, 1.0),
        None,
        None,
        T9.to_metres(3.5, 1.0),
    )
    aim = ideal.solve(T9, setup)
    side = spin.running_sign(aim.rail, aim.direction)
    assert side == -1.0  # toward the foot into the right rail: left english runs
    got = [spin.spin_for(k, aim) for k in range(len(spin.SPIN_STEPS))]
    assert got == [(0.0, 0.0), (-1.0, 0.0), (1.0, 0.0), (0.0, 0.5), (0.0, -0.5)]
    assert spin.english_kind(-1.0, aim) == "running"
    assert spin.english_kind(1.0, aim) == "reverse"
    assert spin.english_kind(0.0, aim) == ""
