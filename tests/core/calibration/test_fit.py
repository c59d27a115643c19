"""The fit against tables whose truth is known (invented, noiseless or with mislogged shots)."""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest

from tablecoach.core.aim import ideal as ideal_aim
from tablecoach.core.calibration import fit as cfit
from tablecoach.core.calibration.model import landing_error
from tablecoach.core.calibration.params import PRIOR_SD

from .conftest import T9, logged, synthetic


@pytest.fixture(scope="module")
def fitted(noiseless):  # type: ignore[no-untyped-def]
    return cfit.fit(T9, noiseless)


def test_fit_recovers_known_parameters_from_noiseless_landings(noiseless, fitted) -> None:  # type: ignore[no-untyped-def]
    cal = fitted
    assert cal.used == len(noiseless) == 75
    # The parameters the landings pin down come back close to the truth. A MAP fit is pulled
    # toward its priors along directions the shots barely see (here sliding friction against
    # the fast stroke's speed), hence the wider tolerances on those two.
    assert cal.value("cushion.restitution") == pytest.approx(0.92, abs=0.01)
    assert cal.value("cushion.friction") == pytest.approx(0.20, abs=0.01)
    assert cal.value("cloth.mu_slide") == pytest.approx(0.25, abs=0.03)
    assert cal.speed("fast") == pytest.approx(3.20, rel=0.05)
    # the restitution prior is centred on Mathavan et al.'s 0.98, the table's default
    assert cal.estimate("cushion.restitution").prior == 0.98
    # presets and parameters the shots cannot pin down stay near the prior (the table's 0.007),
    # with a wide sd
    assert cal.value("cloth.mu_roll") == pytest.approx(T9.cloth.mu_roll, abs=0.003)
    assert cal.estimate("cloth.mu_roll").sd > 0.5 * PRIOR_SD["cloth.mu_roll"]
    assert cal.rms_after < 0.1 < cal.rms_before
    # the calibrated table lands the logged shots where the true table did
    t = cal.apply(T9)
    errs = [landing_error(t, a, "physical", cal.actual_speed(a.speed)) for a in noiseless]
    assert np.median(np.abs([e for e in errs if e is not None])) < 0.05
    # ... and new shots too
    fresh = synthetic(8, per_pack=6)
    errs = [landing_error(t, a, "physical", cal.actual_speed(a.speed)) for a in fresh]
    assert np.median(np.abs([e for e in errs if e is not None])) < 0.1


def test_fit_holds_with_ten_percent_mislogged(noiseless) -> None:  # type: ignore[no-untyped-def]
    rng = np.random.default_rng(3)
    bad = rng.choice(len(noiseless), size=len(noiseless) // 10, replace=False)
    atts = list(noiseless)
    for i in bad:
        a = atts[i]
        # a slip of the key: the landing logged two to three diamonds off on the same rail
        top = 8.0 if a.landing_rail in ("left", "right") else 4.0
        off = rng.uniform(2.0, 3.0) * (1 if a.landing_at < top / 2 else -1)
        atts[i] = replace(a, landing_at=min(max(a.landing_at + off, 0.0), top))
    cal = cfit.fit(T9, atts)
    assert cal.outliers >= len(bad) - 1
    assert cal.value("cushion.restitution") == pytest.approx(0.92, abs=0.02)
    assert cal.value("cushion.friction") == pytest.approx(0.20, abs=0.02)
    assert cal.speed("fast") == pytest.approx(3.20, rel=0.05)
    # a plain least-squares fit would be dragged: check the robust one is not
    assert cal.rms_after_inliers < 0.15


def test_too_few_attempts_is_a_clear_error() -> None:
    from tablecoach.core import shots
    from tablecoach.core.calibration.params import CalibrationError

    s = shots.make_setup(
        T9, shots.PRESETS["one-rail-kick"], T9.to_metres(1, 1), None, None, T9.to_metres(3, 1)
    )
    aim = ideal_aim.solve(T9, s)
    a = logged(T9, s, aim.reading, "medium", aim.landing)
    with pytest.raises(CalibrationError, match="at least 3"):
        cfit.fit(T9, [a, a])
