"""The fit's machinery: the chain-rule Jacobian, Broyden's update, several parameter sets in one
place, and fits on a sample of the rows (invented test data of tests/core/calibration)."""

from __future__ import annotations

import numpy as np
import pytest
from scipy.optimize import approx_fprime

from tablecoach.core.calibration import fit as cfit
from tablecoach.core.calibration import likelihood as lk
from tablecoach.core.calibration import linear, solver
from tablecoach.core.calibration.evidence import HIT, JAW, gather, sample_rows, subset
from tablecoach.core.calibration.model import Outcomes, Runner, model_landing, wrap
from tablecoach.core.calibration.params import with_params
from tablecoach.core.shots import Stroke, perimeter_position, setup_of

from .conftest import T9, TRUE, TRUE_SPEED, synthetic


@pytest.fixture(scope="module")
def few():  # type: ignore[no-untyped-def]
    """Invented data: 24 noiseless attempts, and one in three logged as a hit."""
    atts = synthetic(11, per_pack=8)
    from dataclasses import replace

    return [replace(a, result="hit") if k % 3 == 0 else a for k, a in enumerate(atts)]


def _problem(atts):  # type: ignore[no-untyped-def]
    from tablecoach.core import shots

    ev = gather(T9, atts)
    prob = solver.Problem(T9, T9, ev, dict(shots.SPEED_PRESETS))
    out0 = prob.outcomes(np.zeros(prob.n_p))[0]
    prob.anchor = out0.landing.copy()
    prob.noise = 0.2
    return prob


def test_chain_rule_jacobian_matches_finite_differences(few) -> None:  # type: ignore[no-untyped-def]
    # The linearised problem's residuals differentiated by the chain rule (one perturbed
    # evaluation of each row's own outcomes, times the outcomes' slopes) against scipy's
    # approx_fprime of the residual vector itself (scipy.optimize, an independent reference).
    prob = _problem(few)
    assert np.any((prob.ev.kind == HIT) | (prob.ev.kind == JAW))
    u0 = np.zeros(prob.n_p)
    base, up = prob.outcomes(u0, (0.0, linear.STEP))
    lin = prob.linearise(u0, np.ones(prob.n_p, dtype=bool), base, up)
    u = u0 + 0.3 * np.sin(np.arange(prob.n_p) + 1.0)  # a point off the linearisation point
    out = lin.at(u)
    d_pos, d_reach, by_miss = lk.residual_slopes(prob.ev, out, prob.noise, T9.diamond, prob.anchor)
    n = len(prob.ev)
    g_pos = np.where(by_miss[:, None], lin.g_miss, lin.g_landing)
    J = np.empty((2 * n, prob.n_p))
    J[0::2] = d_pos[:, None] * g_pos
    J[1::2] = d_reach[:, None] * lin.g_reach

    def f(x: np.ndarray) -> np.ndarray:
        return prob.residuals(lin.at(x), x)[: 2 * n]

    ref = approx_fprime(u, f, 1e-7)
    assert np.allclose(J, ref, rtol=1e-3, atol=1e-3)


def test_broyden_update_meets_the_secant_condition() -> None:
    # Broyden (Math. Comp. 19, 1965): the update adds r du^T / du^T du, r the part of the
    # change dy the slopes do not explain; after it the slopes reproduce dy along the step and
    # leave directions square to it alone. Here the speed columns are measured afresh, so only
    # the table columns take the update: exact secant for a step of the table alone, and for a
    # mixed step the table columns of Broyden's full update. Invented outcomes linear in u,
    # checked with numpy.
    rng = np.random.default_rng(5)
    n, p = 12, solver.N_T + 2
    true = rng.normal(size=(n, p)) * 0.05
    old = true + rng.normal(size=(n, p)) * 0.02
    u0 = np.zeros(p)
    tab = np.arange(solver.N_T)

    def outcomes(u: np.ndarray) -> Outcomes:
        y = true @ u
        return Outcomes(y, y + 1.0, y - 0.01)

    def update(u1: np.ndarray) -> dict[str, np.ndarray]:
        prev = linear.Linear(u0, outcomes(u0), old.copy(), old.copy(), old.copy())
        g = {k: np.zeros((n, p)) for k in ("landing", "reach", "miss")}
        for k in g:
            g[k][:, solver.N_T :] = true[:, solver.N_T :]  # speed columns measured afresh
        linear.broyden_update(g, prev, u1, outcomes(u1), tab)
        return g

    # a step of the table parameters alone: the secant condition holds
    u1 = np.zeros(p)
    u1[tab] = rng.normal(size=tab.size) * 0.3
    g = update(u1)
    du = u1 - u0
    for k in g:
        assert g[k] @ du == pytest.approx(true @ du, abs=1e-12)
        assert np.allclose(g[k][:, solver.N_T :], true[:, solver.N_T :])
        w = np.zeros(p)
        w[tab] = rng.normal(size=tab.size)
        w[tab] -= (w[tab] @ du[tab]) / (du[tab] @ du[tab]) * du[tab]
        assert g[k] @ w == pytest.approx(old @ w, abs=1e-12)
    # a mixed step: the table columns of the full update
    u1 = rng.normal(size=p) * 0.3
    du = u1 - u0
    start = old.copy()
    start[:, solver.N_T :] = true[:, solver.N_T :]
    full = start + np.outer(true @ du - start @ du, du) / (du @ du)
    for k, gk in update(u1).items():
        assert gk[:, tab] == pytest.approx(full[:, tab], abs=1e-12), k


def test_run_sets_gives_each_table_its_own_landings(few) -> None:  # type: ignore[no-untyped-def]
    # Several parameter sets in one call: each set lands every row where the model, one shot
    # at a time (model_landing), lands it on that set's table. A consistency check against
    # the project's own one-shot path (no outside source; invented test data).
    ev = gather(T9, few)
    other = with_params(T9, TRUE)
    run = Runner(T9, ev)
    sp = np.vstack((ev.logged, ev.logged * 1.1, ev.logged))
    outs = run.run_sets([T9, other, other], sp)
    for k in (0, 5, 13):
        for tbl, o, s in ((T9, outs[0], 1.0), (other, outs[1], 1.1), (other, outs[2], 1.0)):
            a = few[int(ev.source[k])]
            land = model_landing(
                tbl, setup_of(T9, a.shot), float(ev.reading[k]), Stroke(float(ev.logged[k]) * s)
            )
            got = o.landing[k]
            if land is None:
                continue
            assert float(wrap(np.array(got - perimeter_position(T9, land)))) == pytest.approx(
                0.0, abs=1e-9
            )


def test_sample_keeps_every_stratum_and_the_rows_themselves(noiseless) -> None:  # type: ignore[no-untyped-def]
    ev = gather(T9, noiseless)
    rows = sample_rows(ev, 20, np.random.default_rng(1))
    assert np.all(np.diff(rows) > 0)
    strata = {(ev.family[i], int(ev.stroke[i]), int(ev.kind[i])) for i in range(len(ev))}
    kept = {(ev.family[i], int(ev.stroke[i]), int(ev.kind[i])) for i in rows}
    assert kept == strata
    assert len(rows) <= 20 + len(strata)
    sub = subset(ev, rows)
    # the sub-evidence's arrays are the rows themselves (numpy fancy indexing)
    assert np.array_equal(sub.reading, ev.reading[rows])
    assert np.array_equal(sub.stroke, ev.stroke[rows])
    assert sub.strokes == ev.strokes
    assert sorted(np.concatenate(sub.groups).tolist()) == list(range(len(rows)))
    for g in sub.groups:
        assert len({sub.setups[int(i)].family for i in g}) == 1
    assert np.array_equal(sample_rows(ev, 10_000, np.random.default_rng(1)), np.arange(len(ev)))


def test_fit_on_a_sample_recovers_the_truth(noiseless, monkeypatch) -> None:  # type: ignore[no-untyped-def]
    # The invented table of conftest (TRUE, TRUE_SPEED), noiseless: a fit that runs on 45 of
    # the 75 attempts still finds the cushion and the fast stroke the landings pin down (wider
    # tolerances than the full fit's test), and reports on all 75.
    monkeypatch.setattr(solver, "SAMPLE_ROWS", 45)
    cal = cfit.fit(T9, noiseless)
    assert cal.used == 75
    assert cal.value("cushion.restitution") == pytest.approx(TRUE["cushion.restitution"], abs=0.02)
    assert cal.value("cushion.friction") == pytest.approx(TRUE["cushion.friction"], abs=0.02)
    assert cal.speed("fast") == pytest.approx(TRUE_SPEED["fast"], rel=0.06)
    assert cal.rms_after < 0.15 < cal.rms_before


def test_warm_start_from_an_earlier_fit_finds_the_same_table(noiseless) -> None:  # type: ignore[no-untyped-def]
    # Refitting the same noiseless shots (invented table of conftest) from the earlier fit
    # instead of the grid of starts: the same cushion within the tolerances of the cold fit's
    # own test, in no more steps.
    cold = cfit.fit(T9, noiseless)
    warm = cfit.fit(T9, noiseless, warm=[cold])
    assert warm.value("cushion.restitution") == pytest.approx(TRUE["cushion.restitution"], abs=0.01)
    assert warm.value("cushion.friction") == pytest.approx(TRUE["cushion.friction"], abs=0.01)
    assert warm.speed("fast") == pytest.approx(TRUE_SPEED["fast"], rel=0.05)
    assert warm.iterations <= cold.iterations


def test_a_stroke_at_the_end_of_its_range_goes_back_to_the_book_pace(few, noiseless) -> None:  # type: ignore[no-untyped-def]
    # Issue 12, item 3: a value that ends at its bound goes back to its prior, stays there,
    # and the report says so in words. A stroke at twice the book's pace (the fit's range) is
    # put back at the prior; the rest are refitted (invented test data of conftest).
    from dataclasses import replace

    from tablecoach.core.calibration.report import stroke_sentences
    from tablecoach.core.calibration.value import KEPT_BOUND

    prob = _problem(few)
    free = np.ones(prob.n_p, dtype=bool)
    u = np.zeros(prob.n_p)
    j = solver.N_T  # the first named stroke
    u[j] = prob.u_hi[j]
    base, up = prob.outcomes(u, (0.0, linear.STEP))
    lin = prob.linearise(u, free, base, up)
    u2, free2, _, _, _ = solver._pin_bounds(prob, u, free, lin, up, None, 2)
    assert not free2[j] and u2[j] == 0.0
    assert free2[:j].all() and free2[j + 1 :].all()
    # the words for such a stroke
    cal = cfit.fit(T9, noiseless)
    e = cal.speeds[0]
    kept = replace(cal, speeds=(replace(e, value=e.prior, kept=KEPT_BOUND), *cal.speeds[1:]))
    words = stroke_sentences(kept, T9)[0]
    assert "end of its range" in words and f"{e.prior:.2f} m/s" in words


def test_run_sets_plays_different_tables_in_one_batch_a_family(few) -> None:  # type: ignore[no-untyped-def]
    # Sets that differ in cloth and cushion run in one physics batch per family (per-row
    # figures) and give exactly what each set gives run alone: landing, reach (its own rolling
    # resistance) and miss. Internal consistency check (no outside source; invented test data).
    ev = gather(T9, few)
    other = with_params(T9, TRUE)
    together = Runner(T9, ev)
    sp = np.vstack((ev.logged, ev.logged * 1.1))
    outs = together.run_sets([T9, other], sp)
    assert together.runs == len(ev.groups)
    for tbl, o, s in ((T9, outs[0], 0), (other, outs[1], 1)):
        alone = Runner(T9, ev).run_sets([tbl], sp[s : s + 1])[0]
        for name in ("landing", "reach", "miss"):
            np.testing.assert_array_equal(getattr(o, name), getattr(alone, name), err_msg=name)
