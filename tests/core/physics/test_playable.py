"""solve_playable: a shot too soft to reach is offered at the next firmer preset, and works."""

import pytest

from tablecoach.core import aim as aims
from tablecoach.core import shots, strokes
from tablecoach.core.table import builtin_table

T = builtin_table("9ft")
m = T.to_metres


def test_too_soft_a_stroke_is_raised_to_a_preset_that_reaches():
    s = shots.make_setup(T, shots.preset("cross-corner-bank"), m(3, 1), object_ball=m(4, 2))
    slow = shots.Stroke(shots.SPEED_PRESETS["slow"])
    with pytest.raises(shots.ShotError, match="firmer"):
        aims.solve(T, s, slow, "physical")
    aim, note = aims.solve_playable(T, s, slow, "physical")
    assert aim.stroke.speed > slow.speed
    assert aim.stroke.speed in shots.SPEED_PRESETS.values()
    assert strokes.speed_name(aim.stroke.speed) in note and "stops short" in note
    # self-consistency: the offered reading at the offered speed scores
    assert aims.predict(T, s, aim.reading, aim.stroke, "physical").scores


def test_a_stroke_that_reaches_is_left_alone():
    s = shots.make_setup(T, shots.preset("one-rail-kick"), m(1, 1), target_ball=m(3, 1.5))
    stroke = shots.Stroke(shots.SPEED_PRESETS["medium"])
    aim, note = aims.solve_playable(T, s, stroke, "physical")
    assert note == "" and aim.stroke == stroke


def test_a_failure_that_is_not_pace_is_not_hidden():
    s = shots.make_setup(T, shots.preset("one-rail-kick"), m(3, 2), target_ball=m(5, 2))
    with pytest.raises(shots.ShotError, match="pocket mouth"):
        aims.solve_playable(T, s, shots.Stroke(), "ideal")
