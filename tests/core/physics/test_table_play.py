"""The default model plays like a table: outcomes checked against published figures.

Each check names its source. The model's coefficients (energetic cushion restitution 0.98,
Mathavan, Jackson and Parkin 2010) are not what is checked: the outcomes a player sees are.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from tablecoach.core import aim as aims
from tablecoach.core import shots, strokes
from tablecoach.core.physics.collide import strike
from tablecoach.core.physics.cushion import fine_impact, rail_impact, stepped_impact
from tablecoach.core.physics.params import BallModel, model_of
from tablecoach.core.physics.travel import lengths_of_travel, speed_for_lengths
from tablecoach.core.table import builtin_table

T = builtin_table("9ft")
M = model_of(T)
R = M.radius


def _settled(v: np.ndarray, w: np.ndarray) -> np.ndarray:
    """Velocity once the ball rolls again (docs/model.md, natural roll after sliding):
    v = 5/7 (v0x + 2/5 R w0y, v0y - 2/5 R w0x)."""
    return np.stack(
        (5 / 7 * (v[:, 0] + 0.4 * R * w[:, 1]), 5 / 7 * (v[:, 1] - 0.4 * R * w[:, 0])), axis=1
    )


def _rolling_into_right_rail(angle_deg: float, speed: float = 1.0) -> tuple[np.ndarray, ...]:
    a = math.radians(angle_deg)
    v = np.array([[speed * math.sin(a), speed * math.cos(a)]])
    w = np.array([[-v[0, 1] / R, v[0, 0] / R, 0.0]])
    return v, w


# ----- lengths of travel -----------------------------------------------------------------


def test_a_lag_takes_a_stroke_in_the_published_medium_band() -> None:
    # D. Alciatore, "typical shot speeds" (billiards.colostate.edu FAQ): medium 0.89-1.9 m/s.
    # A lag is one length up and back, 2 lengths of travel (common practice, no source).
    v = speed_for_lengths(M, T, 2.0)
    assert 0.89 <= v <= 1.9


def test_an_ordinary_three_length_stroke_is_in_the_published_fast_band() -> None:
    # Alciatore, "typical shot speeds": fast 1.9-3.2 m/s; a relaxed ordinary stroke travels about
    # 3 lengths (common practice, no source).
    v = speed_for_lengths(M, T, 3.0)
    assert 1.9 <= v <= 3.2


def test_lengths_count_the_cushions() -> None:
    # Open cloth, no cushion (docs/model.md, after Coriolis): a stun start slides
    # 12 v^2 / (49 mu_s g) and rolls (5/7 v)^2 / (2 mu_r g). A stroke that stops before the far
    # cushion travels exactly that; one that reaches a cushion travels less than open cloth
    # would allow, because the cushion takes speed.
    def open_cloth(v: float) -> float:
        d = 12 * v * v / (49 * M.mu_s * M.g) + (5 / 7 * v) ** 2 / (2 * M.mu_r * M.g)
        return d / (T.length - 2 * R)

    short, long_ = 0.5, 2.4
    got = lengths_of_travel(M, T, np.array([short, long_]))
    assert got[0] == pytest.approx(open_cloth(short), rel=1e-6)
    assert got[1] < 0.8 * open_cloth(long_)


def test_named_strokes_match_their_lengths_on_the_default_table() -> None:
    # The book m/s of each named stroke is what the physics gives for its lengths (the
    # constants are a cache of that computation).
    for name, lengths in shots.STROKE_LENGTHS.items():
        assert shots.SPEED_PRESETS[name] == pytest.approx(
            speed_for_lengths(M, T, lengths), rel=5e-3
        )
        assert strokes.travel_lengths(T, shots.SPEED_PRESETS[name]) == pytest.approx(
            lengths, rel=1e-2
        )


def test_lengths_parse_and_follow_the_table() -> None:
    # A stroke named in lengths is m/s for the table it is played on: a deader cloth (higher
    # rolling resistance, inside Alciatore's 0.005-0.015) needs a harder stroke.
    from dataclasses import replace

    slow_cloth = T.with_params(cloth=replace(T.cloth, mu_roll=0.012))
    assert strokes.parse_speed("3L") == pytest.approx(speed_for_lengths(M, T, 3.0))
    assert strokes.parse_speed("3 lengths", slow_cloth) > strokes.parse_speed("3L", T)
    assert strokes.parse_speed("medium", slow_cloth) > strokes.parse_speed("medium")
    with pytest.raises(shots.ShotError):
        strokes.parse_speed("nanL")


# ----- the cushion ---------------------------------------------------------------------------


def test_a_perpendicular_rolling_hit_loses_about_half_its_speed() -> None:
    # Alciatore, "cushion efficiency" FAQ: at steep angles "the CB typically loses about half
    # of its speed". Measured once the ball rolls again; "about half" read as 0.45-0.65 kept.
    v, w = _rolling_into_right_rail(0.0)
    v2, w2 = rail_impact(M, np.array([[0.0, 1.0]]), v, w)
    kept = float(np.hypot(*_settled(v2, w2)[0]))
    assert 0.45 <= kept <= 0.65


@pytest.mark.parametrize("angle", [30.0, 45.0, 60.0])
def test_a_slow_rolling_ball_settles_a_little_wider_not_far_wider(angle: float) -> None:
    # Common practice (and docs/model.md, kick mirrors): a rolling ball comes off a cushion
    # somewhat wider than it came in (its topspin carries it along the rail), which is why the
    # mirror for a medium kick sits behind the groove; the old defaults (restitution 0.75 used
    # as the energetic coefficient) settled a 30-degree hit at 49 degrees. Here: wider, by
    # less than 10 degrees (a guard against that regression, no published figure; the
    # outside check is the kick-mirror test below).
    v, w = _rolling_into_right_rail(angle)
    v2, w2 = rail_impact(M, np.array([[0.0, 1.0]]), v, w)
    s = _settled(v2, w2)[0]
    out = math.degrees(math.atan2(abs(s[0]), abs(s[1])))
    assert angle < out < angle + 10.0


def _arrivals() -> tuple[np.ndarray, np.ndarray]:
    """Rolling, stun, drawn and spun arrivals from 10 to 80 degrees (speed 1 m/s: every
    impact equation is homogeneous in the velocities, so the check holds at any speed)."""
    vs, ws = [], []
    for ang in range(10, 81, 5):
        a = math.radians(ang)
        vx, vy = math.sin(a), math.cos(a)
        roll = (-vy / R, vx / R, 0.0)
        for w in (
            roll,
            (0.0, 0.0, 0.0),
            (vy / R, -vx / R, 0.0),
            (0.5 * vy / R, -0.5 * vx / R, 0.0),
            (roll[0], roll[1], 2.0 / R),
            (roll[0], roll[1], -1.5 / R),
        ):
            vs.append((vx, vy))
            ws.append(w)
    return np.array(vs), np.array(ws, dtype=float)


@pytest.mark.parametrize("mu_w", [0.1, 0.14])
@pytest.mark.parametrize("e", [0.8, 0.9, 0.98])
def test_stepped_cushion_agrees_with_the_fine_integration(e: float, mu_w: float) -> None:
    # The fast integration against the fine one (same equations, 2000 midpoint steps per
    # M vy0): within 2 degrees of settled angle and 0.03 of settled speed ratio (the issue's
    # bar for keeping a fast form), over calibration's range of restitution and friction.
    from dataclasses import replace

    m: BallModel = replace(M, e_cushion=e, mu_w=mu_w)
    v, w = _arrivals()
    fv, fw = fine_impact(m, v, w, 2000)
    sv, sw = stepped_impact(m, v, w)
    fs, ss = _settled(fv, fw), _settled(sv, sw)
    ang = np.degrees(np.arctan2(np.abs(ss[:, 0]), np.abs(ss[:, 1])))
    ang_ref = np.degrees(np.arctan2(np.abs(fs[:, 0]), np.abs(fs[:, 1])))
    assert np.max(np.abs(ang - ang_ref)) < 2.0
    assert np.max(np.abs(np.hypot(*ss.T) - np.hypot(*fs.T))) < 0.03


# ----- kicks against the trade's mirror ---------------------------------------------------------


@pytest.mark.parametrize(
    "cue,target",
    [((2.0, 2.5), (6.0, 2.5)), ((2.5, 3.0), (5.5, 2.0)), ((1.5, 2.0), (5.0, 3.0))],
)
@pytest.mark.parametrize("stroke", ["slow", "lag"])
def test_a_medium_one_rail_kick_aims_at_a_mirror_between_groove_and_sights(
    cue: tuple[float, float], target: tuple[float, float], stroke: str
) -> None:
    # Alciatore, kick-mirror FAQ (as quoted in docs/model.md), and J. Loy's kick pages: for
    # medium-speed (Alciatore's medium band, 0.89-1.9 m/s: our slow and lag strokes),
    # medium-distance one-rail kicks the mirror image taken about the cushion
    # works, with the mirror line between the groove (where ball centres run, R inside the
    # nose) and the line of sights. From the solved aim, the equivalent mirror line lies
    # delta beyond the groove, where x / tan(alpha) = a + b + 2 delta (a, b the balls' distances
    # from the groove, x their separation along it, alpha the aim from the perpendicular).
    s = shots.make_setup(
        T, shots.preset("one-rail-kick"), T.to_metres(*cue), None, None, T.to_metres(*target)
    )
    aim = aims.solve(T, s, shots.Stroke(shots.SPEED_PRESETS[stroke]), "physical")
    assert s.family.rails == ("right",) and s.target_ball is not None
    groove = T.width - R
    a, b = groove - s.cue[1], groove - s.target_ball[1]
    x = s.target_ball[0] - s.cue[0]
    tan_a = abs(aim.direction[0] / aim.direction[1])
    delta = (x / tan_a - a - b) / 2.0
    sights = R + T.sight_setback
    assert 0.0 <= delta <= sights


# ----- ball after ball -----------------------------------------------------------------------


def _open_cloth(v: np.ndarray, w: np.ndarray) -> np.ndarray:
    """Distance (m) a ball travels on open cloth from (v, w) (docs/model.md: sliding at
    mu_s g until natural roll, then rolling at mu_r g), along its final roll."""
    u = np.stack((v[:, 0] - R * w[:, 1], v[:, 1] + R * w[:, 0]), axis=1)
    t_slide = 2.0 * np.hypot(*u.T) / (7.0 * M.mu_s * M.g)
    vr = _settled(v, w)
    a = -M.mu_s * M.g * u / np.maximum(np.hypot(*u.T), 1e-300)[:, None]
    slide = np.hypot(*(v * t_slide[:, None] + 0.5 * a * t_slide[:, None] ** 2).T)
    return slide + np.hypot(*vr.T) ** 2 / (2.0 * M.mu_r * M.g)


def test_a_stun_hit_at_45_degrees_shares_the_speed_and_the_distance() -> None:
    # Alciatore FAQ "ball travel distance" (TP 3.2): with a stun shot at a 45 degree cut both
    # balls leave at about 70 % of the cue ball's speed and travel about half as far as the
    # cue ball would have alone. Cue ball after: momentum conservation (equal masses).
    v = np.array([[1.5, 0.0]])
    w = np.zeros((1, 3))
    n = np.array([[math.sqrt(0.5), math.sqrt(0.5)]])
    vo, wo = strike(M, v, w, n)
    vc = v - vo
    assert 0.65 <= np.hypot(*vo[0]) / 1.5 <= 0.75
    assert 0.65 <= np.hypot(*vc[0]) / 1.5 <= 0.75
    alone = _open_cloth(v, w)[0]
    assert 0.4 <= _open_cloth(vo, wo)[0] / alone <= 0.6
    assert 0.4 <= _open_cloth(vc, np.zeros((1, 3)))[0] / alone <= 0.6


def test_a_rolling_square_hit_sends_the_object_about_seven_times_as_far() -> None:
    # Alciatore FAQ "ball travel distance" (TP B.5): a rolling cue ball hitting an object ball
    # squarely sends it about 7 times as far as the cue ball goes afterwards, "can vary quite
    # a bit with ball and cloth conditions". By hand: with perfectly elastic balls the object
    # rolls at 5/7 v and the cue ball, keeping its topspin, at 2/7 v, a distance ratio of
    # 6.25 plus the object's sliding; restitution 0.95 (Alciatore's typical) lowers it to
    # about 5. Read here as 4.5 to 9. The friction impulse at the contact turns both balls the
    # same way ((-R n) x Jt on the object, (R n) x (-Jt) on the cue ball).
    v = np.array([[1.5, 0.0]])
    w = np.array([[0.0, 1.5 / R, 0.0]])
    n = np.array([[1.0, 0.0]])
    vo, wo = strike(M, v, w, n)
    vc, wc = v - vo, w + wo
    ratio = _open_cloth(vo, wo)[0] / _open_cloth(vc, wc)[0]
    assert 4.5 <= ratio <= 9.0
