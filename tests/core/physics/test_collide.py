"""Ball-ball contact: launch along the line of centres, restitution and throw."""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np

from tablecoach.core.physics.collide import ball_friction, strike, throw_angle
from tablecoach.core.physics.motion import energy
from tablecoach.core.physics.params import BallModel


def _line(cut_deg: float) -> np.ndarray:
    c = math.radians(cut_deg)
    return np.array([[math.cos(c), math.sin(c)]])


def test_without_friction_the_object_leaves_on_the_line_of_centres(model: BallModel) -> None:
    # Newton's rule for equal masses: object speed (1 + e)/2 v cos(cut) along the line of
    # centres (docs/model.md restitution; standard impact mechanics).
    m = replace(model, mu_ball=0.0)
    n = _line(30.0)
    vo, wo = strike(m, np.array([[1.2, 0.0]]), np.zeros((1, 3)), n)
    np.testing.assert_allclose(vo, n * (1 + m.e_ball) / 2 * 1.2 * math.cos(math.radians(30)))
    assert np.allclose(wo, 0.0)


def test_half_ball_stun_throw_is_a_few_degrees(model: BallModel) -> None:
    # Alciatore TP A.14 (docs/model.md): throw is largest for slow stun hits near half-ball, up
    # to about 4.8 degrees; it is toward the cue ball's sideways motion (cut-induced throw).
    n = _line(30.0)
    vo, _ = strike(model, np.array([[1.0, 0.0]]), np.zeros((1, 3)), n)
    th = math.degrees(throw_angle(vo, n)[0])
    assert -4.8 < th < -2.0


def test_throw_falls_with_speed(model: BallModel) -> None:
    # Alciatore TP A.14: mu(v) falls with slip speed, so a faster stun cut throws less.
    n = _line(30.0)
    slow = throw_angle(strike(model, np.array([[0.5, 0.0]]), np.zeros((1, 3)), n)[0], n)[0]
    fast = throw_angle(strike(model, np.array([[4.0, 0.0]]), np.zeros((1, 3)), n)[0], n)[0]
    assert abs(fast) < abs(slow)
    # the published fit itself at zero and large slip speed
    assert ball_friction(model, np.array([0.0]))[0] == np.float64(9.951e-3 + 0.108)
    assert abs(ball_friction(model, np.array([50.0]))[0] - 9.951e-3) < 1e-12


def test_contact_never_adds_energy(model: BallModel) -> None:
    rng = np.random.default_rng(2)
    k = 200
    v = np.stack((rng.uniform(0.2, 4, k), np.zeros(k)), axis=1)
    w = rng.normal(0, 60, (k, 3))
    cut = rng.uniform(-80, 80, k)
    n = np.stack((np.cos(np.radians(cut)), np.sin(np.radians(cut))), axis=1)
    vo, wo = strike(model, v, w, n)
    # the cue ball keeps at least zero energy, so the object's is below the cue's before
    assert np.all(energy(model, vo, wo) <= energy(model, v, w))
