"""Cushion impact models: limiting cases, energy, and the recalled step equations."""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pytest

from tablecoach.core.physics.cushion import fine_impact, impulse_rates, rail_impact, stepped_impact
from tablecoach.core.physics.motion import energy
from tablecoach.core.physics.params import BallModel

IMPACTS = {"fine": fine_impact, "stepped": stepped_impact}


def _rolling(v: np.ndarray, R: float) -> np.ndarray:
    return np.stack((-v[:, 1] / R, v[:, 0] / R, np.zeros(v.shape[0])), axis=1)


@pytest.mark.parametrize("name", list(IMPACTS))
def test_no_friction_at_the_equator_keeps_tangent_and_scales_normal_by_e(
    model: BallModel, name: str
) -> None:
    # Limiting case (docs/model.md): e = restitution, no friction, contact at the equator:
    # vy' = -e vy (the energetic and Newton coefficients agree when nothing else acts),
    # the tangential velocity and all spins unchanged.
    m = replace(model, mu_w=0.0, mu_s=0.0, theta=0.0, e_cushion=0.8)
    rng = np.random.default_rng(1)
    v = np.stack((rng.normal(0, 1, 50), rng.uniform(0.2, 3.0, 50)), axis=1)
    w = rng.normal(0, 50, (50, 3))
    v2, w2 = IMPACTS[name](m, v, w)
    tol = 1e-10 if name == "stepped" else 1e-6
    np.testing.assert_allclose(v2[:, 1], -0.8 * v[:, 1], rtol=tol, atol=tol)
    np.testing.assert_allclose(v2[:, 0], v[:, 0], atol=tol)
    np.testing.assert_allclose(w2, w, atol=tol)


@pytest.mark.parametrize("name", list(IMPACTS))
def test_ideal_limit_is_the_law_of_reflection(model: BallModel, name: str) -> None:
    # docs/model.md: e = 1, no friction, contact at the equator: angle in = angle out.
    m = replace(model.with_cushion(name), mu_w=0.0, mu_s=0.0, theta=0.0, e_cushion=1.0)
    normal = np.array([[0.0, 1.0], [1.0, 0.0], [-1.0, 0.0], [0.0, -1.0]])
    v = np.array([[0.6, 1.1], [0.9, -0.4], [-1.3, 0.5], [0.2, -2.0]])
    w = _rolling(v, m.radius)
    v2, _ = rail_impact(m, normal, v, w)
    want = v - 2.0 * np.sum(v * normal, axis=1)[:, None] * normal  # geometry.reflect_vector
    np.testing.assert_allclose(v2, want, atol=1e-6)


@pytest.mark.parametrize("name", list(IMPACTS))
def test_no_impact_adds_energy(model: BallModel, name: str) -> None:
    # Work-energy: restitution <= 1 and Coulomb friction can only take energy out.
    rng = np.random.default_rng(11)
    n = 300
    v = np.stack((rng.normal(0, 1.5, n), rng.uniform(0.05, 3.0, n)), axis=1)
    w = rng.normal(0, 80, (n, 3))
    v2, w2 = IMPACTS[name](model, v, w)
    e0, e1 = energy(model, v, w), energy(model, v2, w2)
    assert np.all(e1 <= e0 * (1 + 1e-6))
    assert np.all(v2[:, 1] < 0)  # every ball leaves the cushion


def test_recalled_step_equations_match_a_rigid_body_derivation(model: BallModel) -> None:
    # The step equations of Mathavan, Jackson and Parkin (2010) are used from memory; here
    # they are checked against an independent rigid-body derivation with numpy cross
    # products: unit normal impulse at the cushion contact R (0, cos t, sin t), Coulomb
    # friction opposing each contact's slip, cloth normal reaction k = sin t + mu_w sin(phi) cos t.
    m = model
    R, M, inertia = m.radius, m.mass, m.inertia
    th = m.theta
    rng = np.random.default_rng(5)
    st = np.concatenate((rng.normal(0, 1, (40, 2)), rng.normal(0, 40, (40, 3))), axis=1)
    got = impulse_rates(m, st, m.mu_w, m.mu_s)
    r_i = R * np.array([0.0, math.cos(th), math.sin(th)])
    r_c = np.array([0.0, 0.0, -R])
    n_i = -r_i / R  # pushes the ball away from the cushion
    for row, x in zip(got, st, strict=True):
        v = np.array([x[0], x[1], 0.0])
        w = x[2:]
        u_i = v + np.cross(w, r_i)
        u_i -= np.dot(u_i, n_i) * n_i  # slip in the cushion's tangent plane
        u_c = v + np.cross(w, r_c)
        u_c[2] = 0.0
        f_i = -m.mu_w * u_i / np.linalg.norm(u_i)
        k = -(n_i + f_i)[2]  # cloth reaction balances the downward push
        f_c = -m.mu_s * k * u_c / np.linalg.norm(u_c)
        f_c[2] = k
        force = n_i + f_i + f_c
        torque = np.cross(r_i, f_i) + np.cross(r_c, f_c)
        want = np.concatenate((force[:2] / M, torque / inertia))
        np.testing.assert_allclose(row, want, rtol=1e-9, atol=1e-9)


@pytest.mark.parametrize("name", list(IMPACTS))
def test_right_english_throws_a_straight_rebound_to_the_right(model: BallModel, name: str) -> None:
    # Common practice, no source: with right english a ball sent straight into the far (foot)
    # rail comes back off to the shooter's right (+y in the table frame).
    from tablecoach.core.physics.stick import stick_hit

    m = model.with_cushion(name)
    v, w = stick_hit(m, np.array([[1.0, 0.0]]), 1.5, english=0.75)
    v2, _ = rail_impact(m, np.array([[1.0, 0.0]]), v, w)
    assert v2[0, 0] < 0 and v2[0, 1] > 0.01
    v, w = stick_hit(m, np.array([[1.0, 0.0]]), 1.5, english=-0.75)
    v2, _ = rail_impact(m, np.array([[1.0, 0.0]]), v, w)
    assert v2[0, 1] < -0.01


@pytest.mark.parametrize("name", list(IMPACTS))
def test_running_english_widens_the_rebound_and_reverse_shortens_it(
    model: BallModel, name: str
) -> None:
    # Common practice, no source: a ball that rebounds to the shooter's left off a rail comes
    # off wider (more along the rail) with left (running) english and narrower with right
    # (reverse) english. Here: rolling at 45 degrees into the right rail, heading +x.
    from tablecoach.core.physics.stick import natural_roll_tips, stick_hit

    m = model.with_cushion(name)
    d = np.array([[math.sqrt(0.5), math.sqrt(0.5)]])
    normal = np.array([[0.0, 1.0]])
    out = []
    for e in (-0.5, 0.0, 0.5):
        v, w = stick_hit(m, d, 2.0, english=e, follow=natural_roll_tips())
        v2, _ = rail_impact(m, normal, v, w)
        out.append(math.degrees(math.atan2(v2[0, 0], -v2[0, 1])))
    assert out[0] > out[1] + 1.0 > out[2] + 1.0
