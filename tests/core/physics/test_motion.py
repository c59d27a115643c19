"""Ball phases, event times and the stick hit against published results."""

from __future__ import annotations

import numpy as np
import pytest

from tablecoach.core.physics.motion import (
    ROLLING,
    SLIDING,
    accel,
    energy,
    evolve,
    phase_duration,
    phase_of,
    settle,
    slip,
)
from tablecoach.core.physics.params import BallModel
from tablecoach.core.physics.roots import first_quartic_root
from tablecoach.core.physics.stick import natural_roll_tips, stick_hit


def _run_phase(m: BallModel, v: np.ndarray, w: np.ndarray, t: float):
    r = np.zeros((v.shape[0], 2))
    ph = phase_of(m, v, w)
    return evolve(m, r, v, w, ph, np.full(v.shape[0], t))


@pytest.mark.parametrize("v0", [0.5, 1.4, 3.0])
def test_stun_start_rolls_after_2v_over_7mug_at_five_sevenths(model: BallModel, v0: float) -> None:
    # docs/model.md (Alciatore TP 4.1, after Coriolis 1835): a stun start rolls after
    # t = 2 v0 / (7 mu_s g), at 5/7 v0, having slid d = 12 v0^2 / (49 mu_s g).
    m = model
    v = np.array([[v0, 0.0]])
    w = np.zeros((1, 3))
    ph = phase_of(m, v, w)
    assert ph[0] == SLIDING
    t = phase_duration(m, v, w, ph)[0]
    assert t == pytest.approx(2 * v0 / (7 * m.mu_s * m.g), rel=1e-12)
    r2, v2, w2 = evolve(m, np.zeros((1, 2)), v, w, ph, np.array([t]))
    assert v2[0, 0] == pytest.approx(5 / 7 * v0, rel=1e-12)
    assert r2[0, 0] == pytest.approx(12 * v0**2 / (49 * m.mu_s * m.g), rel=1e-12)
    assert np.hypot(*slip(m, v2, w2)[0]) == pytest.approx(0.0, abs=1e-12)


def test_rolling_stops_after_v2_over_2_mur_g(model: BallModel) -> None:
    # docs/model.md: rolling resistance a = -mu_r g; distance to stop v^2 / (2 mu_r g).
    m = model
    v = np.array([[0.0, 1.2]])
    w = np.array([[-1.2 / m.radius, 0.0, 0.0]])
    ph = phase_of(m, v, w)
    assert ph[0] == ROLLING
    t = phase_duration(m, v, w, ph)
    r2, v2, _ = evolve(m, np.zeros((1, 2)), v, w, ph, t)
    assert r2[0, 1] == pytest.approx(1.2**2 / (2 * m.mu_r * m.g), rel=1e-12)
    assert v2[0, 1] == pytest.approx(0.0, abs=1e-12)


def test_hit_at_seven_tenths_of_the_diameter_rolls_at_once(model: BallModel) -> None:
    # J. D. Barrow, "Cushioning the blow", Plus Magazine (2010): h = r + I/(m r) = 1.4 r.
    m = model
    d = np.array([[0.6, 0.8], [1.0, 0.0]])
    v, w = stick_hit(m, d, 2.0, 0.0, natural_roll_tips())
    assert np.max(np.abs(slip(m, v, w))) < 1e-12
    assert list(phase_of(m, v, w)) == [ROLLING, ROLLING]
    # a centre hit and a lower hit both slide, so the check above can fail
    v, w = stick_hit(m, d, 2.0, 0.0, np.array([0.0, 1.0]))
    assert list(phase_of(m, v, w)) == [SLIDING, SLIDING]


def test_draw_spins_backward_and_english_spins_about_the_vertical(model: BallModel) -> None:
    # Rigid impulse through the tip contact (stick.py): draw makes the contact slip exceed the
    # speed (backspin), english gives spin about the vertical only; common practice.
    m = model
    v, w = stick_hit(m, np.array([[1.0, 0.0]]), 1.0, 0.0, -1.0)
    assert slip(m, v, w)[0, 0] > 1.0
    v, w = stick_hit(m, np.array([[1.0, 0.0]]), 1.0, 1.0, 0.0)
    assert w[0, 0] == w[0, 1] == 0.0 and w[0, 2] != 0.0


def test_sliding_ball_with_side_spin_traces_a_parabola(model: BallModel) -> None:
    # G. Coriolis (1835): while sliding the friction force keeps one direction, so the path is
    # a parabola. A quadratic fits the sampled path to numerical precision; a line does not.
    m = model
    v = np.array([[1.5, 0.0]])
    w = np.array([[25.0, -10.0, 3.0]])  # slip not parallel to v
    ph = phase_of(m, v, w)
    T = phase_duration(m, v, w, ph)[0]
    ts = np.linspace(0.0, T, 40)
    n = ts.size
    r, _, _ = evolve(
        m, np.zeros((n, 2)), np.repeat(v, n, 0), np.repeat(w, n, 0), np.repeat(ph, n), ts
    )
    # the path as y(x) in the frame turned to the acceleration: fit x(t), y(t) with numpy
    for k in range(2):
        coef, res, *_ = np.polyfit(ts, r[:, k], 2, full=True)
        assert float(res[0] if res.size else 0.0) < 1e-24
    a = accel(m, v, w, ph)[0]
    u = a / np.hypot(*a)
    along = r @ u
    across = r @ np.array([-u[1], u[0]])
    coef, res, *_ = np.polyfit(across, along, 2, full=True)
    assert float(res[0]) < 1e-20
    _, res_line, *_ = np.polyfit(across, along, 1, full=True)
    assert float(res_line[0]) > 1e-6


def test_energy_never_rises_within_a_phase(model: BallModel) -> None:
    # Friction only removes energy (work-energy theorem); checked for random states.
    m = model
    rng = np.random.default_rng(7)
    v = rng.normal(0.0, 1.5, (200, 2))
    w = rng.normal(0.0, 60.0, (200, 3))
    ph = phase_of(m, v, w)
    T = phase_duration(m, v, w, ph)
    e_prev = energy(m, v, w)
    for frac in (0.25, 0.5, 0.75, 1.0):
        _, v2, w2 = evolve(m, np.zeros((200, 2)), v, w, ph, T * frac)
        if frac == 1.0:
            settle(m, v2, w2, np.ones(200, bool), ph)
        e1 = energy(m, v2, w2)
        assert np.all(e1 <= e_prev * (1 + 1e-12) + 1e-15)
        e_prev = e1


def test_quartic_event_roots_match_numpy_roots() -> None:
    # Reference library: numpy.roots on each polynomial; the first real root in (0, t_max]
    # where the polynomial falls through zero.
    rng = np.random.default_rng(3)
    coef = rng.normal(0.0, 1.0, (300, 5))
    coef[:, 0] = np.abs(coef[:, 0]) + 0.1
    t_max = np.full(300, 5.0)
    got = first_quartic_root(coef, t_max)
    for i in range(300):
        rts = np.roots(coef[i])
        der = np.polyder(coef[i])
        cand = [
            x.real
            for x in rts
            if abs(x.imag) < 1e-9 and 1e-10 < x.real <= 5.0 and np.polyval(der, x.real) <= 0
        ]
        want = min(cand) if cand else np.inf
        if np.isfinite(want):
            assert got[i] == pytest.approx(want, rel=1e-7, abs=1e-9)
        else:
            assert not np.isfinite(got[i])
