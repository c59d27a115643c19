"""Aim solving, prediction and convergence under the physical model."""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pytest

from tablecoach.core import aim as aims
from tablecoach.core import shots, strokes
from tablecoach.core.aim import ideal as ideal_aim
from tablecoach.core.aim import physical, sights
from tablecoach.core.physics.params import model_of
from tablecoach.core.physics.simulate import simulate
from tablecoach.core.physics.stick import stick_hit
from tablecoach.core.table import Cloth, Cushion, TableSpec, builtin_table

# Positions in diamonds (cue, object or target ball) where the mirror aim has a clean path.
SETUPS = {
    "one-rail-kick": ((2.0, 1.0), None, (5.0, 1.5)),
    "two-rail-kick": ((5.0, 1.0), None, (6.0, 1.0)),
    "three-rail-kick": ((2.0, 3.0), None, (2.5, 1.5)),
    "three-rail-kick-b": ((3.0, 3.0), None, (3.0, 1.0)),
    "cross-corner-bank": ((5.0, 1.5), (6.5, 2.5), None),
    "cross-side-bank": ((2.0, 1.5), (3.0, 2.5), None),
    "long-rail-bank": ((5.0, 1.0), (6.0, 1.5), None),
    "two-rail-bank": ((5.0, 1.0), (6.0, 2.0), None),
}


def _with_restitution(e: float) -> TableSpec:
    t = builtin_table("9ft")
    return t.with_params(cushion=replace(t.cushion, restitution=e))


# Energetic restitutions from a deader cushion up to the default (Mathavan et al. 2010: 0.98),
# so the checks below do not hang on one tuning.
RESTITUTIONS = [0.85, 0.92, 0.98]


def _setup(t: TableSpec, name: str) -> shots.Setup:
    cue, obj, tb = SETUPS[name]
    return shots.make_setup(
        t,
        shots.preset(name.removesuffix("-b")),
        t.to_metres(*cue),
        t.to_metres(*obj) if obj else None,
        None,
        t.to_metres(*tb) if tb else None,
    )


def _ideal_table() -> TableSpec:
    # The ideal limit (docs/model.md): restitution 1, no cushion or cloth sliding friction,
    # no ball-ball friction, contact at the equator (nose at the ball's centre height).
    return builtin_table("9ft").with_params(
        cloth=Cloth(0.0, 0.01, 10.0),
        cushion=Cushion(1.0, 0.0, 0.95, 0.0),
        nose_height_ratio=0.5,
    )


@pytest.mark.parametrize("family", [k for k in SETUPS if not k.endswith("-b")])
def test_ideal_limit_reproduces_the_mirror_aim(family: str) -> None:
    # docs/model.md: with e = 1, no friction and contact at the equator the rebound is the
    # law of reflection, so the physical aim is the mirror aim of ideal_aim.solve.
    t = _ideal_table()
    assert t.contact_angle == 0.0
    s = _setup(t, family)
    st = shots.Stroke(1.4)
    ideal = ideal_aim.solve(t, s, st)
    phys = physical.solve(t, s, st)
    assert phys.model == "physical"
    assert abs(phys.reading - ideal.reading) < 1e-6
    assert phys.landing.rail == ideal.landing.rail
    assert abs(phys.landing.at - ideal.landing.at) < 1e-6
    for a, b in zip(phys.contacts, ideal.contacts, strict=True):
        assert a.rail == b.rail and abs(a.at - b.at) < 1e-6
    # the scoring window agrees to the bisection tolerances of the two solvers
    assert abs(phys.margin_minus - ideal.margin_minus) < 1e-3
    assert abs(phys.margin_plus - ideal.margin_plus) < 1e-3
    # and the forward trace of a reading off the aim lands where the mirror trace lands
    r = ideal.reading + 0.01
    tr_p = physical.predict(t, s, st, r)
    tr_i = ideal_aim.trace(t, s, sights.direction_of(t, s.start, s.family.rails[0], r))
    assert tr_p.scores == tr_i.scores and tr_p.landing is not None and tr_i.landing is not None
    assert tr_p.landing.rail == tr_i.landing.rail
    assert abs(tr_p.landing.at - tr_i.landing.at) < 1e-6


def test_ideal_limit_convergence_point_matches_the_mirror_one() -> None:
    # Under reflection every aim line passes through the target's unfolded image
    # (geometry.unfold), so the spread is zero and the point is that of aims.convergence.
    t = _ideal_table()
    s = _setup(t, "three-rail-kick")
    starts = aims.neighbourhood(t, s.start, 0.3, 3)
    st = shots.Stroke(1.4)
    ideal = aims.convergence(t, s, starts, st, "ideal")
    phys = physical.convergence(t, s, starts, st)
    assert phys.spread < 1e-6
    assert math.dist(phys.point, ideal.point) < 1e-4


@pytest.mark.parametrize("e", RESTITUTIONS)
@pytest.mark.parametrize(
    "family,speed",
    [("one-rail-kick", "medium"), ("three-rail-kick-b", "power"), ("cross-side-bank", "power")],
)
def test_predict_with_the_solved_reading_lands_on_the_target(
    family: str, speed: str, e: float
) -> None:
    # Self-consistency: the forward trace of the solved reading scores and lands where the aim
    # says; a reading past the scoring window does not score.
    t = _with_restitution(e)
    s = _setup(t, family)
    st = shots.Stroke(strokes.parse_speed(speed))
    a = physical.solve(t, s, st)
    tr = physical.predict(t, s, st, a.reading)
    assert tr.scores, tr.outcome
    assert tr.rails_hit == s.family.rails
    assert tr.landing is not None and tr.landing.rail == a.landing.rail
    assert abs(tr.landing.at - a.landing.at) < 1e-3
    assert a.margin_minus > 0 and a.margin_plus > 0
    past = physical.predict(t, s, st, a.reading + a.margin_plus + 0.02)
    assert not past.scores


@pytest.mark.parametrize("e", RESTITUTIONS)
def test_spin_and_speed_move_the_physical_aim_off_the_mirror(e: float) -> None:
    # Common practice (docs/model.md): past one rail, speed and spin decide where the ball goes;
    # on a real table the aim is not the mirror aim, and english moves it.
    t = _with_restitution(e)
    s = _setup(t, "three-rail-kick-b")
    ideal = ideal_aim.solve(t, s)
    plain = physical.solve(t, s, shots.Stroke(3.85))
    side = physical.solve(t, s, shots.Stroke(3.85, english=0.5))
    assert abs(plain.reading - ideal.reading) > 0.01
    assert abs(side.reading - plain.reading) > 0.005


def _rebound_angle(t: TableSpec, speed: float) -> float:
    """Angle from the perpendicular (degrees) of a centre-ball stroke 0.3 m from the right
    rail at 30 degrees, measured on the chord from the cushion contact to the far rail."""
    m = model_of(t)
    d = np.array([[math.sin(math.radians(30)), math.cos(math.radians(30))]])
    v, w = stick_hit(m, d, speed)
    r0 = np.array([[0.15, t.width - m.radius - 0.3]])
    res = simulate(
        m,
        t,
        ("right",),
        r0,
        v,
        w,
        np.full((1, 1, 2), np.nan),
        np.zeros((1, 1), dtype=np.int64),
        np.array([[2.0, 0.6]]),
        np.array([-1]),
    )
    assert res.hits[0, 0] == 3 and res.landing_rail[0] == 2  # right, then across to left
    dx = res.landing_at[0] - res.hit_at[0, 0]
    dy = t.width - 2 * m.radius
    return math.degrees(math.atan2(dx, dy))


@pytest.mark.parametrize("e", RESTITUTIONS)
def test_a_firm_ball_comes_off_more_perpendicular_than_a_slow_one(e: float) -> None:
    # Alciatore, "Fast Speed Banks" (common practice): a firm ball comes off a cushion at a
    # shorter, more perpendicular angle than a slow rolling ball.
    t = _with_restitution(e)
    slow = _rebound_angle(t, 2.0)
    firm = _rebound_angle(t, 4.0)
    assert firm < slow - 3.0


@pytest.mark.parametrize("e", RESTITUTIONS)
@pytest.mark.parametrize("cue,target", [((3.0, 3.0), (3.0, 1.0)), ((2.0, 2.0), (3.0, 2.0))])
def test_speed_effects_compound_with_every_rail(e: float, cue, target) -> None:
    # Common practice (docs/model.md): speed effects compound with every rail. The same
    # three-rail stroke at two speeds: its landing after three rails moves more than its
    # crossing after one rail.
    t = _with_restitution(e)
    s = shots.make_setup(
        t, shots.preset("three-rail-kick"), t.to_metres(*cue), None, None, t.to_metres(*target)
    )
    r = ideal_aim.solve(t, s).reading
    a = physical.predict(t, s, shots.Stroke(3.2), r)
    b = physical.predict(t, s, shots.Stroke(3.85), r)
    assert a.rails_hit[:3] == b.rails_hit[:3] == s.family.rails
    assert a.landing is not None and b.landing is not None
    after_one = abs(shots.landing_distance(t, a.contacts[1], b.contacts[1]))
    after_three = abs(shots.landing_distance(t, a.landing, b.landing))
    assert after_three > 1.5 * after_one > 0.0


def test_no_reading_scores_gives_a_plain_reason() -> None:
    # A slow ball cannot make a long bank: a ShotError with one line, not a traceback.
    t = builtin_table("9ft")
    s = _setup(t, "two-rail-bank")
    with pytest.raises(shots.ShotError, match="physical model"):
        physical.solve(t, s, shots.Stroke(0.5))


def test_miscue_limit_is_a_shot_error() -> None:
    t = builtin_table("9ft")
    s = _setup(t, "one-rail-kick")
    with pytest.raises(shots.ShotError, match="miscue"):
        physical.solve(t, s, shots.Stroke(1.4, english=1.0, follow=0.5))


def test_physical_convergence_has_a_spread_and_uses_the_shots_hook() -> None:
    # docs/model.md: under the physical model the aim lines nearly meet; the spread is not zero.
    t = builtin_table("9ft")
    s = _setup(t, "one-rail-kick")
    starts = aims.neighbourhood(t, s.start, 0.4, 3)
    conv = aims.convergence(t, s, starts, shots.Stroke(2.55), "physical")
    assert conv.model == "physical" and len(conv.starts) >= 5
    assert 0.0 < conv.spread < 0.05


def test_rotating_through_the_convergence_point_beats_a_parallel_shift() -> None:
    # Common practice, no source: shifting a trusted aim line parallel to a new
    # position is a common error; the line through the convergence point lands nearer.
    t = builtin_table("9ft")
    f = shots.preset("one-rail-kick")
    ref = shots.make_setup(t, f, t.to_metres(2, 1), None, None, t.to_metres(5, 1.5))
    new = shots.make_setup(t, f, t.to_metres(2.3, 1.2), None, None, t.to_metres(5, 1.5))
    c = aims.compare_shift(t, ref, new, shots.Stroke(2.55), "physical")
    assert c.parallel_miss is not None and c.rotated_miss is not None
    assert abs(c.rotated_miss) < abs(c.parallel_miss)
