"""Setups, path checks, readings and margins of the ideal aim engine."""

import pytest

from tablecoach.core import aim as aims
from tablecoach.core import shots, strokes
from tablecoach.core.aim import ideal
from tablecoach.core.table import TableError, builtin_table

T = builtin_table("9ft")
m = T.to_metres


def test_reading_is_over_the_sights_not_at_the_contact():
    # docs/model.md (WPA set-back 93.7 mm): the reading is where the stick line crosses
    # the line of sights, beyond the cushion contact; the two differ for an angled line.
    s = shots.make_setup(T, shots.preset("one-rail-kick"), m(1, 1), target_ball=m(5, 1))
    aim = ideal.solve(T, s)
    d = aim.direction
    # independent: extend the first segment by similar triangles from contact to the sights
    extra = (T.sight_line("right") - T.reflection_line("right")) * d[0] / d[1]
    assert aim.reading == pytest.approx(aim.contacts[0].at + extra, abs=1e-12)
    assert aim.reading != pytest.approx(aim.contacts[0].at, abs=1e-3)


def test_symmetric_one_rail_kick_hits_the_midpoint():
    # Mirror symmetry: equal distances from the rail -> contact halfway (common practice).
    s = shots.make_setup(T, shots.preset("one-rail-kick"), m(1, 2), target_ball=m(5, 2))
    aim = ideal.solve(T, s)
    assert T.along_to_diamonds("right", aim.contacts[0].at) == pytest.approx(3.0, abs=1e-9)


def test_path_into_a_pocket_mouth_is_refused():
    # A one-rail kick whose contact would be at the side pocket is not a clean path.
    s = shots.make_setup(T, shots.preset("one-rail-kick"), m(3, 2), target_ball=m(5, 2))
    with pytest.raises(shots.ShotError, match="side-right pocket mouth"):
        ideal.solve(T, s)


def test_other_ball_in_the_way_is_refused():
    fam = shots.make_family("cue", ["right"])
    s = shots.make_setup(T, fam, m(1, 2), object_ball=m(2.5, 3.4), target_ball=m(5, 2))
    with pytest.raises(shots.ShotError, match="another ball"):
        ideal.solve(T, s)


def test_overlapping_and_off_table_balls_are_refused():
    fam = shots.preset("cross-corner-bank")
    with pytest.raises(shots.ShotError, match="overlap"):
        shots.make_setup(T, fam, m(3, 1), object_ball=m(3.05, 1))
    with pytest.raises(TableError, match="off the table"):
        shots.make_setup(T, fam, m(3, 1), object_ball=m(3, 4.0))


def test_margin_is_a_window_that_scores_inside_and_not_outside():
    s = shots.make_setup(T, shots.preset("cross-corner-bank"), m(3, 1), object_ball=m(4, 2))
    aim = ideal.solve(T, s)
    assert aim.margin_minus > 0 and aim.margin_plus > 0
    for r, expect in (
        (aim.reading - 0.9 * aim.margin_minus, True),
        (aim.reading + 0.9 * aim.margin_plus, True),
        (aim.reading - aim.margin_minus - 0.002, False),
        (aim.reading + aim.margin_plus + 0.002, False),
    ):
        assert aims.predict(T, s, r).scores is expect


def test_corner_pocket_window_is_narrower_than_the_mouth_less_a_ball():
    # The ball centre has (mouth - diameter) of room at most (WPA mouth 4.5 in, ball 2.25 in);
    # for a straight-in shot the window at the pocket is exactly that (common practice).
    fam = shots.make_family("object", ["head"], "foot-right")
    s = shots.make_setup(T, fam, m(7.2, 0.2), object_ball=m(4, 2))
    aim = ideal.solve(T, s)
    width = aim.margin_minus + aim.margin_plus
    assert 0 < width < (T.corner_mouth - T.ball_diameter) * 3


def test_predict_with_the_solved_reading_scores_for_every_family():
    for name, fam in shots.PRESETS.items():
        if fam.travel == "cue":
            s = shots.make_setup(T, fam, m(1.5, 1.5), target_ball=m(3, 1))
        else:
            s = shots.make_setup(T, fam, m(2, 1), object_ball=m(3, 2))
        try:
            aim = ideal.solve(T, s)
        except shots.ShotError:
            continue
        tr = aims.predict(T, s, aim.reading)
        assert tr.scores, name
        assert tr.rails_hit == fam.rails


def test_records_round_trip_through_diamonds():
    s = shots.make_setup(T, shots.preset("two-rail-kick"), m(1.25, 3), target_ball=m(2.5, 0.75))
    rec = shots.record_of(T, s)
    assert rec.cue == (1.25, 3.0)
    assert shots.setup_of(T, rec) == s


def test_speed_presets_sit_in_their_own_bands():
    # Each named stroke's m/s falls in the band filed under its name (the bands' edges lie
    # between neighbouring strokes); lengths of travel are checked against Alciatore's
    # published m/s bands in tests/core/physics/test_table_play.py.
    for name, v in shots.SPEED_PRESETS.items():
        lo, hi = shots.SPEED_BANDS[name]
        assert lo <= v <= hi
        assert strokes.speed_name(v) == name
    assert strokes.parse_speed("fast") == shots.SPEED_PRESETS["fast"]
    assert strokes.parse_speed("1.2") == 1.2
    with pytest.raises(shots.ShotError):
        strokes.parse_speed("warp")
