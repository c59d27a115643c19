"""Tests for the calibration fit and its use (tablecoach.core.calibrate)."""

from __future__ import annotations

import math
from dataclasses import replace
from datetime import UTC, datetime

import numpy as np
import pytest

from tablecoach.core import aim as aims
from tablecoach.core import calibrate, shots, strokes
from tablecoach.core.aim import ideal
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
    return s, ideal.solve(T9, s)


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


def test_attempts_without_an_observed_landing_teach_nothing() -> None:
    # A hit logged without a landing must not be read as landing where the model said: it has
    # no landing error, and the fit refuses to run on such attempts alone (record format v2).
    s, aim = _kick()
    seen = _logged(T9, s, aim.reading, "medium", aim.landing)
    unseen = replace(seen, result="hit", landing_rail=None, landing_at=None, miss_kind=None)
    assert calibrate.landing_error(T9, unseen, model="ideal") is None
    assert calibrate.landing_errors(T9, [unseen, seen], model="ideal")[0] is None
    with pytest.raises(calibrate.CalibrationError, match="only 0 of 4 attempts"):
        calibrate.fit(T9, [unseen] * 4, model="ideal")


# ----- storage and use ----------------------------------------------------------------------


def _calibration() -> calibrate.Calibration:
    return calibrate.Calibration(
        table="9ft",
        params=(
            calibrate.Estimate("cloth.mu_slide", 0.25, 0.01, 0.2),
            calibrate.Estimate("cloth.mu_roll", 0.011, 0.001, 0.007),
            calibrate.Estimate("cushion.restitution", 0.92, 0.02, 0.98),
            calibrate.Estimate("cushion.friction", 0.15, 0.03, 0.14),
        ),
        # the player's medium 2.70 m/s against the book's 2.392 m/s (3 lengths of travel)
        speeds=(calibrate.Estimate("medium", 2.7, 0.05, 2.392),),
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
    assert calibrate.stroke_for(cal, "medium", 0.5, -0.5) == shots.Stroke(2.7, 0.5, -0.5)
    # a preset the player never calibrated keeps the book's value (its lengths of travel,
    # shots.STROKE_LENGTHS, in m/s on the default table)
    assert calibrate.stroke_for(cal, "fast").speed == shots.SPEED_PRESETS["fast"]
    assert calibrate.stroke_for(None, "medium").speed == shots.SPEED_PRESETS["medium"]
    assert calibrate.speed_for(cal, "medium") == 2.7
    assert calibrate.speed_for(cal, "2.0") == 2.0
    # the app logs a medium at the book's m/s; the player really hits 2.70 m/s
    assert cal.actual_speed(shots.SPEED_PRESETS["medium"]) == pytest.approx(2.7)
    # any logged speed in the medium band is scaled by the same factor 2.7 / 2.392
    assert cal.actual_speed(2.1) == pytest.approx(2.1 * 2.7 / 2.392)
    assert strokes.speed_name(2.1) == "medium"
    # a speed in a band the player never calibrated is taken as logged
    assert cal.actual_speed(shots.SPEED_PRESETS["lag"]) == shots.SPEED_PRESETS["lag"]
    with pytest.raises(calibrate.CalibrationError):
        calibrate.stroke_for(cal, "warp")


def test_sentences_speak_a_players_words() -> None:
    cal = _calibration()
    text = cal.sentences()
    assert text[0].startswith("Calibrated from 42 attempts")
    assert "Three-rail kicks at medium land 0.4 diamond longer here than on the default table." in (
        text
    )
    medium = [t for t in text if t.startswith("Your medium is 2.70")]
    assert len(medium) == 1 and "harder than the book's 2.39 m/s" in medium[0]
    # ... and in lengths of travel on the calibrated table, beside the book's 3 lengths
    # (shots.STROKE_LENGTHS: common practice, no source)
    here = strokes.travel_lengths(cal.apply(T9), 2.7)
    assert f"about {here:.1f} lengths (the book's: 3)" in medium[0]
    # physics: more rolling resistance, more sliding friction and a deader cushion than the
    # default table (Alciatore, PHYSICS.md 2; Mathavan et al. 2010) take travel off a stroke
    assert here < strokes.travel_lengths(T9, 2.7)
    # restitution 0.92 against the default 0.98, further off than its sd 0.02: deader cushions
    assert any(t.startswith("Cushion restitution 0.92") and "deader" in t for t in text)
    livelier = replace(
        cal,
        params=tuple(
            calibrate.Estimate(e.name, 0.995, 0.005, 0.98) if e.name == "cushion.restitution" else e
            for e in cal.params
        ),
    )
    assert any("livelier" in t for t in livelier.sentences())
    # a table the calibration cannot be said on: no lengths, the rest unchanged
    other = replace(cal, table="garage")
    assert any(
        t.startswith("Your medium is 2.70") and "lengths" not in t for t in other.sentences()
    )


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
        assert not calibrate.needs_table_check(store, "9ft", None)
        assert calibrate.needs_table_check(store, "7ft", None)
        store.ensure_player("bob")
        assert calibrate.needs_table_check(store, "9ft", "bob")
        with pytest.raises(calibrate.CalibrationError, match="name the player"):
            calibrate.calibrate_from_store(store, "9ft", None)
        with pytest.raises(calibrate.CalibrationError, match="no attempts logged on the 9ft"):
            calibrate.calibrate_from_store(store, "9ft", "bob")
    assert calibrate.resolve_table(None) == (T9, "not calibrated yet")


# ----- the table check ----------------------------------------------------------------------


@pytest.mark.parametrize("name", ["9ft", "8ft", "7ft"])
def test_table_check_is_five_to_ten_clean_shots(name: str) -> None:
    table = builtin_table(name)
    setups = calibrate.table_check_setups(table)
    assert 5 <= len(setups) <= 10
    for d in setups:
        ideal.solve(table, d.setup)  # raises ShotError without a clean path
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
    # Cushion restitution: the energetic coefficient of Mathavan, Jackson and Parkin (2010), whose
    # published value 0.98 is the prior's centre (the table's default); an energetic coefficient
    # cannot exceed 1, the upper bound. No published range inside this model: the sd 0.05 is a
    # judgement (calibrate.RESTITUTION_PRIOR_SD), wide enough that the bound lies within 1 sd.
    assert T9.cushion.restitution == 0.98
    assert calibrate.PARAM_BOUNDS["cushion.restitution"][1] == 1.0
    sd_e = calibrate.PRIOR_SD["cushion.restitution"]
    assert sd_e == pytest.approx(0.05)
    assert 0.98 + sd_e > 1.0
    # Speeds: a player's named stroke within a factor 1.3 of the book's m/s, read as +-2 sd in log
    # speed (a judgement, common practice, no source)
    sd = calibrate.speed_prior_sd("medium")
    assert sd == pytest.approx(math.log(1.3) / 2)
    # In lengths of travel (the physical model, physics/travel.py) a medium at +-2 sd still
    # travels further than a lag and less far than a fast stroke (shots.STROKE_LENGTHS, 2 and
    # 3.75 lengths: common practice, no source).
    lo, hi = (
        strokes.travel_lengths(T9, shots.SPEED_PRESETS["medium"] * math.exp(k * 2 * sd))
        for k in (-1, 1)
    )
    assert shots.STROKE_LENGTHS["lag"] < lo < 3.0 < hi < shots.STROKE_LENGTHS["fast"]
    assert all(np.isfinite(calibrate.speed_prior_sd(p)) for p in shots.SPEED_PRESETS)
    with pytest.raises(calibrate.CalibrationError, match="unknown speed preset"):
        calibrate.speed_prior_sd("break")


# ----- the fit against known tables -----------------------------------------------------------

TRUE = {
    "cloth.mu_slide": 0.25,
    "cloth.mu_roll": 0.009,
    "cushion.restitution": 0.92,
    "cushion.friction": 0.20,
}
"""An invented table: sliding friction and rolling resistance inside Alciatore's ranges
(0.15-0.4, 0.005-0.015; PHYSICS.md 2); an energetic restitution of 0.92, a deader cushion than
Mathavan et al.'s 0.98 (1.2 prior sd below it); cushion friction 0.20 against their 0.14."""
TRUE_SPEED = {"slow": 1.35, "medium": 2.70, "fast": 3.20, "power": 4.0}
"""The invented player's strokes in m/s: slow and medium about 13 % harder than the book's
(1.185, 2.392 m/s: 1.5 and 3 lengths of travel on the default table), fast 7.5 % softer
(3.458 m/s, 3.75 lengths) and power 8 % softer (4.352 m/s, 4.25 lengths): about one, one, 0.6
and 0.6 prior sd (ln(1.3) / 2 in log speed, calibrate.SPEED_PRIOR_FACTOR) off the book's."""


def _synthetic(seed: int, per_pack: int = 25) -> list[Attempt]:
    """Noiseless landings of built-in drill shots on a table with known (invented) parameters,
    struck by a player whose presets are TRUE_SPEED, logged with the book's speeds."""
    from tablecoach.core import drills

    truth = calibrate.with_params(T9, TRUE)
    rng = np.random.default_rng(seed)
    book = {v: k for k, v in shots.SPEED_PRESETS.items()}
    out = []
    packs = drills.builtin_drills()
    for name in ("one-rail-kicks", "cross-corner-banks", "three-rail-kicks"):
        n = 0
        while n < per_pack:
            d = drills.sample_setups(T9, packs[name], rng, 1)[0]
            preset = book[d.stroke.speed]
            land = calibrate.model_landing(
                truth, d.setup, d.aim.reading, shots.Stroke(TRUE_SPEED[preset]), "physical"
            )
            if land is None:
                continue
            out.append(_logged(T9, d.setup, d.aim.reading, preset, land))
            n += 1
    return out


@pytest.fixture(scope="module")
def synthetic() -> list[Attempt]:
    return _synthetic(7)


@pytest.mark.xfail(
    strict=True,
    reason="known regression: under the new physics defaults and packs the hand-written fit "
    "settles cushion friction at 0.16 (truth 0.20); the scipy least_squares rework of the "
    "calibration issue must make this pass",
)
def test_fit_recovers_known_parameters_from_noiseless_landings(synthetic) -> None:  # type: ignore[no-untyped-def]
    cal = calibrate.fit(T9, synthetic)
    assert cal.used == len(synthetic) == 75
    # The parameters the landings pin down come back close to the truth. A MAP fit is pulled
    # toward its priors along directions the shots barely see (here sliding friction against
    # the fast preset's speed), hence the wider tolerances on those two.
    assert cal.value("cushion.restitution") == pytest.approx(0.92, abs=0.01)
    assert cal.value("cushion.friction") == pytest.approx(0.20, abs=0.01)
    assert cal.value("cloth.mu_slide") == pytest.approx(0.25, abs=0.03)
    assert cal.speed("fast") == pytest.approx(3.20, rel=0.05)
    # the restitution prior is centred on Mathavan et al.'s 0.98, the table's default
    assert next(e for e in cal.params if e.name == "cushion.restitution").prior == 0.98
    # presets and parameters the shots cannot pin down stay near the prior (the table's 0.007),
    # with a wide sd
    assert cal.value("cloth.mu_roll") == pytest.approx(T9.cloth.mu_roll, abs=0.003)
    mu_roll = next(e for e in cal.params if e.name == "cloth.mu_roll")
    assert mu_roll.sd > 0.5 * calibrate.PRIOR_SD["cloth.mu_roll"]
    assert cal.rms_after < 0.1 < cal.rms_before
    # the calibrated table lands the logged shots where the true table did
    t = cal.apply(T9)
    errs = [calibrate.landing_error(t, a, "physical", cal.actual_speed(a.speed)) for a in synthetic]
    assert np.median(np.abs([e for e in errs if e is not None])) < 0.05
    # ... and new shots too
    fresh = _synthetic(8, per_pack=6)
    errs = [calibrate.landing_error(t, a, "physical", cal.actual_speed(a.speed)) for a in fresh]
    assert np.median(np.abs([e for e in errs if e is not None])) < 0.1


def test_fit_holds_with_ten_percent_mislogged(synthetic) -> None:  # type: ignore[no-untyped-def]
    rng = np.random.default_rng(3)
    bad = rng.choice(len(synthetic), size=len(synthetic) // 10, replace=False)
    atts = list(synthetic)
    for i in bad:
        a = atts[i]
        # a slip of the key: the landing logged two to three diamonds off on the same rail
        top = 8.0 if a.landing_rail in ("left", "right") else 4.0
        off = rng.uniform(2.0, 3.0) * (1 if a.landing_at < top / 2 else -1)
        atts[i] = replace(a, landing_at=min(max(a.landing_at + off, 0.0), top))
    cal = calibrate.fit(T9, atts)
    assert cal.outliers >= len(bad) - 1
    assert cal.value("cushion.restitution") == pytest.approx(0.92, abs=0.02)
    assert cal.value("cushion.friction") == pytest.approx(0.20, abs=0.02)
    assert cal.speed("fast") == pytest.approx(3.20, rel=0.05)
    # a plain least-squares fit would be dragged: check the robust one is not
    assert cal.rms_after_inliers < 0.15


def test_fit_on_a_linear_toy_model_is_exact() -> None:
    # A forward model linear in the cushion parameters: the MAP optimum of noiseless data is the
    # truth up to the prior's pull, and scipy.optimize.least_squares (an independent reference
    # solver, loss="linear") on the same stacked residuals and priors agrees. The fit also
    # fits each preset's speed (the toy's friction term depends on it), so the reference
    # carries the same log-speed parameters and priors.
    from scipy.optimize import least_squares

    E0, F0 = T9.cushion.restitution, T9.cushion.friction  # the priors' centres
    s, aim = _kick()
    base = aims.predict(T9, s, aim.reading, None, "ideal").landing
    assert base is not None

    def toy(t, setup, reading, stroke):  # type: ignore[no-untyped-def]
        tr = aims.predict(t, setup, reading, stroke, "ideal")
        shift = (
            2.0 * (t.cushion.restitution - E0)
            + 1.5 * (t.cushion.friction - F0) * stroke.speed
            + (reading - aim.reading) * 0.0
        ) * T9.diamond
        return replace(tr, landing=replace(tr.landing, at=tr.landing.at + shift))

    rng = np.random.default_rng(4)
    # an energetic restitution of 0.92 (deader than Mathavan et al.'s 0.98, the prior's centre)
    truth = calibrate.with_params(T9, {"cushion.restitution": 0.92, "cushion.friction": 0.2})
    presets = ["slow", "medium", "fast"]
    atts = []
    for _ in range(30):
        preset = presets[int(rng.integers(3))]
        st = shots.Stroke(shots.SPEED_PRESETS[preset])
        tr = toy(truth, s, aim.reading, st)
        atts.append(_logged(T9, s, aim.reading, preset, tr.landing))
    cal = calibrate.fit(T9, atts, predictor=toy)
    assert cal.rms_after < 0.02

    sd = calibrate.PRIOR_SD
    book = [math.log(shots.SPEED_PRESETS[p]) for p in presets]

    def stacked(th):  # type: ignore[no-untyped-def]
        t = calibrate.with_params(T9, {"cushion.restitution": th[0], "cushion.friction": th[1]})
        r = [
            shots.landing_distance(
                T9,
                calibrate.observed_landing(T9, a),
                toy(t, s, aim.reading, shots.Stroke(math.exp(th[2 + presets.index(p)]))).landing,
            )
            / calibrate.NOISE_FLOOR
            for a in atts
            for p in [calibrate.preset_of(a.speed)]
        ]
        prior = [
            (th[0] - E0) / sd["cushion.restitution"],
            (th[1] - F0) / sd["cushion.friction"],
        ] + [(th[2 + k] - book[k]) / calibrate.speed_prior_sd(p) for k, p in enumerate(presets)]
        return np.array(r + prior)

    x0 = [E0, F0, *book]
    scale = [sd["cushion.restitution"], sd["cushion.friction"]] + [
        calibrate.speed_prior_sd(p) for p in presets
    ]
    ref = least_squares(stacked, x0, x_scale=scale)
    assert cal.value("cushion.restitution") == pytest.approx(ref.x[0], abs=0.005)
    assert cal.value("cushion.friction") == pytest.approx(ref.x[1], abs=0.005)
    for k, p in enumerate(presets):
        assert cal.speed(p) == pytest.approx(math.exp(ref.x[2 + k]), rel=0.01)
    # The truth up to the prior's pull: the optimum lies between the truth and the priors'
    # centres, and closer to the truth (the 30 landings outweigh the priors). The pull is
    # larger than it was under the old priors: restitution comes back near 0.94, a third of the
    # way to 0.98, because its prior sd is now 0.05 and each preset's speed, fitted too, takes
    # up part of the friction term.
    for name, true, centre in (("cushion.restitution", 0.92, E0), ("cushion.friction", 0.2, F0)):
        v = cal.value(name)
        assert min(true, centre) - 0.005 <= v <= max(true, centre) + 0.005
        assert abs(v - true) < 0.5 * abs(centre - true)


# ----- the command --------------------------------------------------------------------------


@pytest.mark.xfail(
    strict=True,
    reason="known regression: the hand-written fit recovers restitution 0.904 for a true 0.92 "
    "through the command (format v2 drops the hits' predicted landings); the scipy "
    "least_squares rework of the calibration issue must make this pass",
)
def test_calibrate_command_fits_saves_and_prints(tmp_path, synthetic, capsys) -> None:  # type: ignore[no-untyped-def]
    import json
    from datetime import timedelta

    from tablecoach import cli
    from tablecoach.core.store import Store

    with Store.open(tmp_path / "tablecoach.sqlite3") as store:
        store.log_many(
            [replace(a, when=a.when + timedelta(seconds=k)) for k, a in enumerate(synthetic)]
        )
    assert cli.main(["calibrate", "--data-dir", str(tmp_path), "--table", "9ft", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["attempts"] == len(synthetic) and out["saved"] is True
    assert out["params"]["cushion.restitution"]["value"] == pytest.approx(0.92, abs=0.01)
    assert out["sentences"][0].startswith(f"Calibrated from {len(synthetic)} attempts")
    # the player's strokes are also said in lengths of travel on the calibrated table
    assert any(t.startswith("Your fast is") and "lengths" in t for t in out["sentences"])
    with Store.open(tmp_path / "tablecoach.sqlite3") as store:
        table, status = calibrate.calibrated_table(store, "9ft", None)
    assert status == f"calibrated from {len(synthetic)} attempts"
    assert table.cushion.restitution == pytest.approx(0.92, abs=0.01)
    # plain text, not saved
    assert cli.main(["calibrate", "--data-dir", str(tmp_path), "--table", "9ft", "--no-save"]) == 0
    text = capsys.readouterr().out
    assert "9ft table, ann: calibrated from" in text and "(not saved)" in text


def test_calibrate_command_errors_are_one_line(tmp_path, capsys) -> None:  # type: ignore[no-untyped-def]
    from tablecoach import cli

    assert cli.main(["calibrate", "--data-dir", str(tmp_path), "--table", "9ft"]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "no practice database" in err


def test_landing_errors_in_batch_match_one_by_one(synthetic) -> None:  # type: ignore[no-untyped-def]
    cal = _calibration()
    t = cal.apply(T9)
    some = synthetic[::5]
    batch = calibrate.landing_errors(t, some, "physical", cal)
    for a, e in zip(some, batch, strict=True):
        one = calibrate.landing_error(t, a, "physical", cal.actual_speed(a.speed))
        assert (e is None) == (one is None)
        if e is not None:
            assert e == pytest.approx(one, abs=1e-9)
    ideal = calibrate.landing_errors(T9, some, "ideal")
    assert ideal == [calibrate.landing_error(T9, a, "ideal") for a in some]


def test_travel_sign_uses_the_run_onto_the_landing_rail():
    # A one-rail kick aimed long misses the ball and carries on past the landing rail; the
    # sign must come from the run from the right rail onto the left rail (toward the foot:
    # +1 round the table), not from a later contact. Independent check: the x direction of
    # that run, read off the ideal path (law of reflection, geometry.py).
    from tablecoach.core import shots
    from tablecoach.core.calibrate import travel_sign
    from tablecoach.core.table import builtin_table

    t = builtin_table("9ft")
    s = shots.make_setup(
        t, shots.preset("one-rail-kick"), t.to_metres(1, 1), target_ball=t.to_metres(5, 1)
    )
    aim = ideal.solve(t, s)
    tr = aims.predict(t, s, aim.reading + 0.3 * t.diamond)
    assert not tr.scores and tr.landing is not None and tr.landing.rail == "left"
    assert len(tr.contacts) > 1  # the trace went on past the landing rail
    run_dx = tr.path[2][0] - tr.path[1][0]
    assert travel_sign(t, tr, s.start, 1) == (1.0 if run_dx > 0 else -1.0)
