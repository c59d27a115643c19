"""The batch event simulation: energy, event accuracy and agreement with the ideal trace."""

from __future__ import annotations

import numpy as np
import pytest

from tablecoach.core.physics.motion import energy
from tablecoach.core.physics.params import BallModel
from tablecoach.core.physics.simulate import simulate
from tablecoach.core.physics.stick import stick_hit
from tablecoach.core.table import TableSpec


def _run(m, table, r0, v, w, balls=None, rails=("right", "foot", "left"), record=True):
    n = r0.shape[0]
    if balls is None:
        balls = np.full((n, 1, 2), np.nan)
    return simulate(
        m,
        table,
        rails,
        r0,
        v,
        w,
        balls,
        np.zeros(balls.shape[:2], dtype=np.int64),
        np.full((n, 2), 0.5),
        np.full(n, -1),
        record=record,
    )


@pytest.mark.parametrize("cushion", ["stepped", "fine"])
def test_no_event_ever_adds_energy(model: BallModel, table: TableSpec, cushion: str) -> None:
    # Work-energy theorem: cloth friction, cushion impacts (restitution <= 1, Coulomb friction)
    # only remove energy, so the energy at the start of each stretch never rises.
    m = model.with_cushion(cushion)  # type: ignore[arg-type]
    rng = np.random.default_rng(4)
    n = 60
    r0 = np.stack((rng.uniform(0.2, 2.3, n), rng.uniform(0.2, 1.0, n)), axis=1)
    ang = rng.uniform(0, 2 * np.pi, n)
    d = np.stack((np.cos(ang), np.sin(ang)), axis=1)
    v, w = stick_hit(m, d, rng.uniform(0.5, 4.0, n), rng.uniform(-1, 1, n) * 0.7, 0.0)
    res = _run(m, table, r0, v, w)
    seen: dict[int, float] = {}
    for seg in res.segments:
        e = energy(m, seg.v, seg.w)
        for row, val in zip(seg.live, e, strict=True):
            prev = seen.get(int(row))
            if prev is not None:
                assert val <= prev * (1 + 1e-9) + 1e-15
            seen[int(row)] = float(val)
    assert len(seen) == n


def test_ball_contact_is_met_at_one_diameter(model: BallModel, table: TableSpec) -> None:
    # The quartic event time: at contact the centres are exactly one diameter apart, for
    # curved (sliding, english and draw) approaches as well as straight ones.
    m = model
    n = 30
    r0 = np.tile([[0.4, 0.6]], (n, 1))
    target = np.array([1.4, 0.65])
    ang = np.linspace(-0.04, 0.1, n)
    d = np.stack((np.cos(ang), np.sin(ang)), axis=1)
    v, w = stick_hit(m, d, 1.5, 0.0, np.linspace(-1.0, 0.8, n))
    balls = np.tile(target, (n, 1, 1))
    res = _run(m, table, r0, v, w, balls=balls, rails=(), record=False)
    met = res.ball == 0
    assert met.sum() > 5
    gap = np.hypot(*(res.ball_pos[met] - target).T)
    np.testing.assert_allclose(gap, 2 * m.radius, atol=1e-9)


def test_walls_are_met_on_the_box_one_radius_inside_the_noses(
    model: BallModel, table: TableSpec
) -> None:
    # Contract (docs/coordinates.md): ball centres touch a cushion one radius inside the nose line.
    m = model
    v, w = stick_hit(m, np.array([[0.6, 0.8]]), 2.0)
    res = _run(m, table, np.array([[0.5, 0.3]]), v, w, rails=("right",))
    assert res.hits[0, 0] == 3  # right rail first
    ys = [float(seg.r[0, 1]) for seg in res.segments]
    assert max(ys) == pytest.approx(table.width - m.radius, abs=1e-12)
    assert all(y <= table.width - m.radius + 1e-12 for y in ys)


def test_event_landings_match_a_fixed_step_integration(model: BallModel, table: TableSpec) -> None:
    # Independent check of the closed-form phases and event times: a numerical integration of
    # the same forces by scipy.integrate.solve_ivp (general-purpose reference library), every
    # change of regime and every wall a terminal event (reference_integrator.py), lands within
    # a few millimetres.
    from .reference_integrator import integrate

    m = model
    r0 = np.array([[0.5, 0.4], [0.8, 0.6], [0.4, 0.8], [0.6, 0.3]])
    ang = np.array([0.9, 0.7, 1.1, 0.6])
    d = np.stack((np.cos(ang), np.sin(ang)), axis=1)
    v, w = stick_hit(m, d, np.array([2.0, 3.0, 2.5, 3.5]), np.array([0.3, -0.3, 0.0, 0.5]), 0.2)
    res = _run(m, table, r0, v, w, rails=("right", "foot"), record=False)
    rail, along = integrate(m, table, r0, v, w, 3, t_max=8.0)
    ok = (res.pocket < 0) & (res.landing_rail >= 0) & (rail >= 0)
    assert ok.sum() >= 2
    assert np.all(rail[ok] == res.landing_rail[ok])
    assert np.max(np.abs(along[ok] - res.landing_at[ok])) < 5e-3
