"""The censored terms and the loss, against scipy.stats (an independent reference)."""

from __future__ import annotations

import numpy as np
import pytest
from scipy import stats

from tablecoach.core.calibration import likelihood as lk


def test_censored_window_is_the_normal_interval_probability() -> None:
    # P(|m + e| < w) for e ~ N(0, sd): scipy.stats.norm.cdf; the residual squared is twice the
    # drop of the log-probability from its best (m = 0).
    w, sd = 0.03, 0.02
    m = np.array([-0.2, -0.05, -0.01, 0.0, 0.004, 0.03, 0.08, 0.5])
    # written with the upper tail (scipy.stats.norm.sf), exact far from the window too:
    # P = sf((|m| - w) / sd) - sf((|m| + w) / sd) by the normal's symmetry
    am = np.abs(m)
    p = stats.norm.sf((am - w) / sd) - stats.norm.sf((am + w) / sd)
    p0 = stats.norm.sf(-w / sd) - stats.norm.sf(w / sd)
    r = lk.censored_window(m, np.full(m.size, w), sd)
    ref = 2.0 * (np.log(p0) - np.log(p))
    assert r**2 == pytest.approx(ref, rel=1e-6, abs=1e-9)
    assert np.all(np.sign(r) == np.sign(m))
    # smooth through the middle of the window: odd, and small near 0
    assert lk.censored_window(np.array([1e-6]), np.array([w]), sd)[0] < 1e-3


def test_censored_above_is_the_normal_tail() -> None:
    x = np.array([-1.0, -0.3, 0.0, 0.2, 2.0])
    sd = 0.3
    r = lk.censored_above(x, sd)
    assert r**2 == pytest.approx(-2.0 * stats.norm.logcdf(x / sd), rel=1e-9)
    # far below, it grows like -x / sd (Mills ratio: -log Phi(-t) ~ t^2 / 2)
    assert lk.censored_above(np.array([-3.0]), 0.3)[0] == pytest.approx(10.0, rel=0.05)


def test_robust_loss_is_cauchy_on_data_and_squares_on_priors() -> None:
    # Cauchy rho(z) = c^2 log(1 + z / c^2) (Holland and Welsch 1977) and its derivatives,
    # checked by central differences; the prior rows keep rho(z) = z.
    z = np.array([0.0, 0.5, 4.0, 30.0, 2.0, 9.0])
    loss = lk.robust_loss(4)
    got = loss(z)
    c2 = lk.CAUCHY_C**2
    assert got[0, :4] == pytest.approx(c2 * np.log1p(z[:4] / c2))
    h = 1e-5
    num1 = (loss(z + h)[0] - loss(z - h)[0]) / (2 * h)
    num2 = (loss(z + h)[1] - loss(z - h)[1]) / (2 * h)
    assert got[1] == pytest.approx(num1, rel=1e-6)
    assert got[2] == pytest.approx(num2, rel=1e-5, abs=1e-9)
    assert list(got[:, 4:].ravel()) == [2.0, 9.0, 1.0, 1.0, 0.0, 0.0]
