"""Tests for the calibration fit and its use (tablecoach.core.calibrate)."""

from __future__ import annotations

import math
from dataclasses import replace
from datetime import UTC, datetime

import numpy as np
import pytest

from tablecoach.core import calibrate, shots
from tablecoach.core.records import Attempt
from tablecoach.core.table import builtin_table

T9 = builtin_table("9ft")


def _logged(
    table, setup: shots.Setup, reading: float, preset: str, landing: shots.RailPoint
) -> Attempt:
    """An attempt as the app logs it: diamonds, the preset's book speed, the landing."""
    rail = setup.family.rails[0]
    at = table.along_to_diamonds(landing.rail, landing.at)
    top = 8.0 if landing.rail in ("left", "right") else 4.0
    aim = table.along_to_diamonds(rail, reading)
    return Attempt(
        datetime(2026, 1, 1, tzinfo=UTC),
        "ann",
        table.name,
        shots.record_of(table, setup),
        shots.SPEED_PRESETS[preset],
        0.0,
        0.0,
        rail,
        aim,
        aim,
        "miss",
        landing.rail,
        min(max(at, 0.0), top),
    )


# ----- landing errors -----------------------------------------------------------------------


def _kick() -> tuple[shots.Setup, shots.Aim]:
    s = shots.make_setup(
        T9, shots.PRESETS["one-rail-kick"], T9.to_metres(1, 1), None, None, T9.to_metres(3, 1)
    )
    return s, shots.solve_ideal(T9, s)


def test_landing_error_is_zero_on_the_models_own_landing() -> None:
    s, aim = _kick()
    a = _logged(T9, s, aim.reading, "medium", aim.landing)
    assert calibrate.landing_error(T9, a, model="ideal") == pytest.approx(0.0, abs=1e-5)


def test_landing_error_sign_is_long_along_the_path() -> None:
    # The kick runs from x = 1 off the right rail toward x = 3 on the left rail: landing at a
    # larger x is further along the path (long), by the law of reflection (ideal model).
    s, aim = _kick()
    assert aim.landing.rail == "left"
    further = replace(aim.landing, at=aim.landing.at + 0.25 * T9.diamond)
    short = replace(aim.landing, at=aim.landing.at - 0.25 * T9.diamond)
    assert calibrate.landing_error(T9, _logged(T9, s, aim.reading, "medium", further)) == (
        pytest.approx(0.25, abs=1e-5)
    )
    assert calibrate.landing_error(T9, _logged(T9, s, aim.reading, "medium", short)) == (
        pytest.approx(-0.25, abs=1e-5)
    )


# ----- storage and use ----------------------------------------------------------------------


def _calibration() -> calibrate.Calibration:
    return calibrate.Calibration(
        table="9ft",
        params=(
            calibrate.Estimate("cloth.mu_slide", 0.25, 0.01, 0.2),
            calibrate.Estimate("cloth.mu_roll", 0.011, 0.001, 0.01),
            calibrate.Estimate("cushion.restitution", 0.92, 0.02, 0.85),
            calibrate.Estimate("cushion.friction", 0.15, 0.03, 0.14),
        ),
        speeds=(calibrate.Estimate("medium", 1.7, 0.05, 1.4),),
        attempts=42,
        rms_before=0.6,
        rms_after=0.12,
        rms_before_inliers=0.5,
        rms_after_inliers=0.1,
        shifts=(calibrate.Shift("three-rail-kick", "medium", 0.4, 10),),
        player="ann",
    )


def test_as_dict_round_trips_through_json() -> None:
    import json

    cal = _calibration()
    back = calibrate.Calibration.from_dict(json.loads(json.dumps(cal.as_dict())))
    assert back == cal


def test_damaged_calibration_is_one_clear_error() -> None:
    d = _calibration().as_dict()
    d["params"]["cushion.restitution"]["value"] = 7.0
    with pytest.raises(calibrate.CalibrationError, match="calibrate"):
        calibrate.Calibration.from_dict(d)
    with pytest.raises(calibrate.CalibrationError):
        calibrate.Calibration.from_dict({"params": {"x": 1}})


def test_apply_and_strokes() -> None:
    cal = _calibration()
    t = cal.apply(T9)
    assert t.cushion.restitution == 0.92 and t.cloth.mu_slide == 0.25
    assert t.length == T9.length and t.cushion.ball_ball_friction == T9.cushion.ball_ball_friction
    assert calibrate.stroke_for(cal, "medium", 0.5, -0.5) == shots.Stroke(1.7, 0.5, -0.5)
    # a preset the player never calibrated keeps the book's value (Alciatore's band middle)
    assert calibrate.stroke_for(cal, "fast").speed == shots.SPEED_PRESETS["fast"]
    assert calibrate.stroke_for(None, "medium").speed == shots.SPEED_PRESETS["medium"]
    assert calibrate.speed_for(cal, "medium") == 1.7
    assert calibrate.speed_for(cal, "2.0") == 2.0
    assert cal.actual_speed(1.4) == pytest.approx(1.7)
    with pytest.raises(calibrate.CalibrationError):
        calibrate.stroke_for(cal, "warp")


def test_sentences_speak_a_players_words() -> None:
    text = _calibration().sentences()
    assert text[0].startswith("Calibrated from 42 attempts")
    assert "Three-rail kicks at medium land 0.4 diamond longer here than on the default table." in (
        text
    )
    assert any("Your medium is 1.70" in t and "harder" in t for t in text)
    assert any("livelier" in t for t in text)


def test_resolve_with_a_store(tmp_path) -> None:  # type: ignore[no-untyped-def]
    from tablecoach.core.store import Store

    with Store.open(tmp_path / "db.sqlite3") as store:
        table, status = calibrate.calibrated_table(store, "9ft", None)
        assert table == T9 and status.startswith("not calibrated yet")
        store.ensure_player("ann")
        table, status = calibrate.resolve_table("9ft", None, store)
        assert table == T9 and status == "not calibrated yet"
        cal = _calibration()
        store.save_calibration("9ft", "ann", cal.as_dict(), cal.attempts)
        table, status = calibrate.resolve_table("9ft", None, store)  # the only player
        assert status == "calibrated from 42 attempts"
        assert table.cushion.restitution == 0.92
        r = calibrate.resolve(store, "9ft", "bob")
        assert r.calibration is None and r.table == T9
    assert calibrate.resolve_table(None) == (T9, "not calibrated yet")


# ----- the table check ----------------------------------------------------------------------


@pytest.mark.parametrize("name", ["9ft", "8ft", "7ft"])
def test_table_check_is_five_to_ten_clean_shots(name: str) -> None:
    table = builtin_table(name)
    setups = calibrate.table_check_setups(table)
    assert 5 <= len(setups) <= 10
    for d in setups:
        shots.solve_ideal(table, d.setup)  # raises ShotError without a clean path
        assert d.label.startswith("table check: ")
    fams = {d.setup.family.name for d in setups}
    assert len(fams) >= 4
    assert len({d.stroke.speed for d in setups}) >= 2


def test_too_few_attempts_is_a_clear_error() -> None:
    s, aim = _kick()
    a = _logged(T9, s, aim.reading, "medium", aim.landing)
    with pytest.raises(calibrate.CalibrationError, match="at least 3"):
        calibrate.fit(T9, [a, a], model="ideal")


def test_prior_sd_reads_the_published_ranges() -> None:
    # Alciatore's ranges (PHYSICS.md 2): sliding 0.15-0.4, rolling 0.005-0.015, as +-2 sd.
    assert calibrate.PRIOR_SD["cloth.mu_slide"] == pytest.approx(0.0625)
    assert calibrate.PRIOR_SD["cloth.mu_roll"] == pytest.approx(0.0025)
    # medium band 0.89-1.9 m/s (Alciatore, typical shot speeds)
    assert calibrate.speed_prior_sd("medium") == pytest.approx(math.log(1.9 / 0.89) / 4)
    assert np.isfinite(calibrate.speed_prior_sd("power"))
