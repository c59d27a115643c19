"""Using calibrations: resolving a table for a player, the command, the table check."""

from __future__ import annotations

import json
import subprocess
import sys
from dataclasses import replace
from datetime import timedelta

import pytest

from tablecoach.core import aim as aims
from tablecoach.core import shots
from tablecoach.core.aim import ideal as ideal_aim
from tablecoach.core.calibration import use
from tablecoach.core.calibration.check import table_check_setups
from tablecoach.core.calibration.model import landing_error, landing_errors
from tablecoach.core.calibration.params import CalibrationError
from tablecoach.core.table import builtin_table

from .conftest import T9
from .test_value import calibration


def test_resolve_with_a_store(tmp_path) -> None:  # type: ignore[no-untyped-def]
    from tablecoach.core.store import Store

    with Store.open(tmp_path / "db.sqlite3") as store:
        table, status = use.calibrated_table(store, "9ft", None)
        assert table == T9 and status.startswith("not calibrated yet")
        store.ensure_player("ann")
        table, status = use.resolve_table("9ft", None, store)
        assert table == T9 and status == "not calibrated yet"
        cal = calibration()
        store.save_calibration("9ft", "ann", cal.as_dict(), cal.attempts)
        table, status = use.resolve_table("9ft", None, store)  # the only player
        assert status == "calibrated from 42 attempts"
        assert table.cushion.restitution == 0.92
        r = use.resolve(store, "9ft", "bob")
        assert r.calibration is None and r.table == T9
        assert not use.needs_table_check(store, "9ft", None)
        assert use.needs_table_check(store, "7ft", None)
        store.ensure_player("bob")
        assert use.needs_table_check(store, "9ft", "bob")
        with pytest.raises(CalibrationError, match="no attempts logged on the 9ft"):
            use.calibrate_from_store(store, "9ft", None)
        with pytest.raises(CalibrationError, match="bob has no attempts logged on the 9ft"):
            use.calibrate_from_store(store, "9ft", "bob")
    assert use.resolve_table(None) == (T9, "not calibrated yet")


def test_an_old_calibration_is_stale_not_applied(tmp_path) -> None:  # type: ignore[no-untyped-def]
    from tablecoach.core.store import Store

    old = calibration().as_dict()
    del old["version"]  # saved before the model's version was kept
    old["params"]["cushion.restitution"]["value"] = 0.78  # a centre-speed ratio
    with Store.open(tmp_path / "db.sqlite3") as store:
        store.save_calibration("9ft", "ann", old, 40)
        r = use.resolve(store, "9ft", "ann")
        assert r.calibration is None and r.table == T9
        assert r.status == "calibrated under an older model: run calibrate again"
        assert use.needs_table_check(store, "9ft", "ann")
        # a stale calibration is no place to start a new fit from either
        assert use._earlier(store, "9ft", ["ann"]) == []
        cal = calibration()
        store.save_calibration("9ft", "ann", cal.as_dict(), cal.attempts)
        got = use._earlier(store, "9ft", ["ann", "bob"])
        assert [c.player for c in got] == ["ann"]
        assert got[0].value("cushion.restitution") == cal.value("cushion.restitution")


def test_the_aim_command_shows_the_stale_line_and_loads_no_scipy(tmp_path) -> None:  # type: ignore[no-untyped-def]
    from tablecoach.core.store import Store

    old = calibration().as_dict()
    del old["version"]
    with Store.open(tmp_path / "tablecoach.sqlite3") as store:
        store.save_calibration("9ft", "ann", old, 40)
        store.ensure_player("ann")
    code = (
        "import sys, json; from tablecoach import cli; "
        "rc = cli.main(['aim', '--data-dir', sys.argv[1], '--family', 'one-rail-kick', "
        "'--cue', '1,1', '--target-ball', '3,1', '--json']); "
        "print('SCIPY' if any(m.startswith('scipy') for m in sys.modules) else 'NO-SCIPY')"
    )
    out = subprocess.run(
        [sys.executable, "-c", code, str(tmp_path)], capture_output=True, text=True, check=True
    ).stdout
    assert out.strip().endswith("NO-SCIPY")
    assert "calibrated under an older model: run calibrate again" in out


def test_landing_errors_in_batch_match_one_by_one(noiseless) -> None:  # type: ignore[no-untyped-def]
    cal = calibration()
    t = cal.apply(T9)
    some = noiseless[::5]
    batch = landing_errors(t, some, "physical", cal)
    for a, e in zip(some, batch, strict=True):
        one = landing_error(t, a, "physical", cal.actual_speed(a.speed))
        assert (e is None) == (one is None)
        if e is not None:
            assert e == pytest.approx(one, abs=1e-9)
    ideal = landing_errors(T9, some, "ideal")
    assert ideal == [landing_error(T9, a, "ideal") for a in some]
    # a hit carries no measured landing: the app stored the model's own there
    hit = replace(some[0], result="hit")
    assert landing_errors(t, [hit], "physical", cal) == [None]


def test_landing_error_sign_is_long_along_the_path() -> None:
    # The kick runs from x = 1 off the right rail toward x = 3 on the left rail: landing at a
    # larger x is further along the path (long), by the law of reflection (ideal model).
    from .conftest import logged

    s = shots.make_setup(
        T9, shots.PRESETS["one-rail-kick"], T9.to_metres(1, 1), None, None, T9.to_metres(3, 1)
    )
    aim = ideal_aim.solve(T9, s)
    assert aim.landing.rail == "left"
    same = logged(T9, s, aim.reading, "medium", aim.landing)
    assert landing_error(T9, same, model="ideal") == pytest.approx(0.0, abs=1e-5)
    for k in (0.25, -0.25):
        moved = replace(aim.landing, at=aim.landing.at + k * T9.diamond)
        a = logged(T9, s, aim.reading, "medium", moved)
        assert landing_error(T9, a, model="ideal") == pytest.approx(k, abs=1e-5)


def test_calibrate_command_fits_saves_and_prints(tmp_path, noiseless, capsys) -> None:  # type: ignore[no-untyped-def]
    from tablecoach import cli
    from tablecoach.core.store import Store

    with Store.open(tmp_path / "tablecoach.sqlite3") as store:
        store.log_many(
            [replace(a, when=a.when + timedelta(seconds=k)) for k, a in enumerate(noiseless)]
        )
    assert cli.main(["calibrate", "--data-dir", str(tmp_path), "--table", "9ft", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["attempts"] == len(noiseless) and out["saved"] is True
    assert out["params"]["cushion.restitution"]["value"] == pytest.approx(0.92, abs=0.01)
    assert out["sentences"][0].startswith(f"Calibrated from {len(noiseless)} attempts")
    # the player's strokes are said in lengths of travel on the calibrated table
    assert any(t.startswith("Your fast sends the ball") for t in out["sentences"])
    with Store.open(tmp_path / "tablecoach.sqlite3") as store:
        table, status = use.calibrated_table(store, "9ft", None)
    assert status == f"calibrated from {len(noiseless)} attempts"
    assert table.cushion.restitution == pytest.approx(0.92, abs=0.01)
    # again, now starting from the saved calibration: the same table
    assert cli.main(["calibrate", "--data-dir", str(tmp_path), "--table", "9ft", "--json"]) == 0
    again = json.loads(capsys.readouterr().out)
    assert again["params"]["cushion.restitution"]["value"] == pytest.approx(0.92, abs=0.01)
    # plain text, not saved
    assert cli.main(["calibrate", "--data-dir", str(tmp_path), "--table", "9ft", "--no-save"]) == 0
    text = capsys.readouterr().out
    assert "9ft table, ann: calibrated from" in text and "(not saved)" in text


def test_calibrate_command_errors_are_one_line(tmp_path, capsys) -> None:  # type: ignore[no-untyped-def]
    from tablecoach import cli

    assert cli.main(["calibrate", "--data-dir", str(tmp_path), "--table", "9ft"]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "no practice database" in err


@pytest.mark.parametrize("name", ["9ft", "8ft", "7ft"])
def test_table_check_is_five_to_ten_clean_shots(name: str) -> None:
    table = builtin_table(name)
    setups = table_check_setups(table)
    assert 5 <= len(setups) <= 10
    for d in setups:
        ideal_aim.solve(table, d.setup)  # raises ShotError without a clean path
        assert d.label.startswith("table check: ")
    fams = {d.setup.family.name for d in setups}
    assert len(fams) >= 4
    assert len({d.stroke.speed for d in setups}) >= 2


def test_travel_sign_uses_the_run_onto_the_landing_rail() -> None:
    # A one-rail kick aimed long misses the ball and carries on past the landing rail; the
    # sign must come from the run from the right rail onto the left rail (toward the foot:
    # +1 round the table), not from a later contact. Independent check: the x direction of
    # that run, read off the ideal path (law of reflection, geometry.py).
    from tablecoach.core.calibration.model import travel_sign

    s = shots.make_setup(
        T9, shots.preset("one-rail-kick"), T9.to_metres(1, 1), target_ball=T9.to_metres(5, 1)
    )
    aim = ideal_aim.solve(T9, s)
    tr = aims.predict(T9, s, aim.reading + 0.3 * T9.diamond)
    assert not tr.scores and tr.landing is not None and tr.landing.rail == "left"
    assert len(tr.contacts) > 1  # the trace went on past the landing rail
    run_dx = tr.path[2][0] - tr.path[1][0]
    assert travel_sign(T9, tr, s.start, 1) == (1.0 if run_dx > 0 else -1.0)
