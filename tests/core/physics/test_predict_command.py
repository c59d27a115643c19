"""`tablecoach predict` end to end through cli.main."""

from __future__ import annotations

import json

import pytest

from tablecoach import cli
from tablecoach.core import shots, strokes
from tablecoach.core.aim import physical
from tablecoach.core.table import builtin_table


def test_predict_json_lands_and_scores_at_the_solved_reading(
    capsys: pytest.CaptureFixture[str], tmp_path
) -> None:
    # Self-consistency through the command line: the physical aim's own reading scores.
    t = builtin_table("9ft")
    s = shots.make_setup(
        t, shots.preset("one-rail-kick"), t.to_metres(2, 1), None, None, t.to_metres(5, 1.5)
    )
    a = physical.solve(t, s, shots.Stroke(strokes.parse_speed("medium")))
    reading = round(a.reading / t.diamond, 4)
    base = ["--data-dir", str(tmp_path), "predict", "--family", "one-rail-kick"]
    base += ["--cue", "2,1", "--target-ball", "5,1.5", "--speed", "medium"]
    assert cli.main([*base, "--reading", str(reading), "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["scores"] is True
    assert data["landing"]["rail"] == a.landing.rail
    assert abs(data["landing"]["at"] - t.along_to_diamonds(a.landing.rail, a.landing.at)) < 1e-2
    assert cli.main([*base, "--reading", str(reading + 1.0), "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["scores"] is False
    assert cli.main([*base, "--reading", str(reading)]) == 0
    out = capsys.readouterr().out
    assert "SCORES" in out and "lands on the" in out


def test_predict_bad_input_is_one_line(capsys: pytest.CaptureFixture[str], tmp_path) -> None:
    args = ["--data-dir", str(tmp_path), "predict", "--family", "nope", "--cue", "2,1"]
    assert cli.main([*args, "--reading", "3"]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "unknown family" in err
