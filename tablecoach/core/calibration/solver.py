"""The MAP problem and its solver: scipy's least_squares on a linearised model, in trust-region
steps checked against the model itself.

The unknowns are the table's four parameters (shared by everyone who plays on it) and one
speed per player and named stroke, scaled by their prior sd (u = (theta - prior) / sd; speeds
in log m/s). The objective is half the Cauchy loss of the evidence's residuals
(likelihood.py) plus half the priors' squares u^2, so its minimum is the maximum a posteriori
fit. A run of the physical model costs the same for one shot as for hundreds, so the model is
linearised at the current point (a forward difference a table parameter, and one run for all
the speeds, each shot moving with its own stroke only); least_squares finds the optimum of the
linearised problem, robust loss, censored terms and bounds included, inside a trust region;
the model is run there, and the step is kept only if the true objective fell. scipy is
imported here only, when a fit runs.
"""

from __future__ import annotations

import copy
import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from .. import shots
from ..table import TableSpec
from . import likelihood as lk
from .evidence import Evidence, sample_rows, subset
from .linear import STEP, Linear, broyden_update, slopes_of
from .model import Outcomes, Runner
from .params import (
    LOG_SPEED_LIMIT,
    PARAM_BOUNDS,
    PRIOR_SD,
    TABLE_PARAMS,
    get_param,
    speed_prior_sd,
    with_params,
)

Progress = Callable[[str], None]

COARSE_NOISE = 0.3
"""The landing noise (diamonds) the first descent assumes at least: the model's landings of
multi-rail shots jump by a few tenths of a diamond where a path meets a rail near a corner,
which makes the objective rough at a small noise scale; the fit goes down the smooth version
first, then at the measured noise (continuation)."""
CORRELATED = 0.9
"""Posterior correlation beyond which two parameters are reported as not told apart."""
SAMPLE_ROWS = 1200
"""Rows the descents use at most (solve): beyond this the fit runs on a sample of the rows,
then runs the fitted model on all of them. Four table parameters and a speed a named stroke
are pinned long before 1,200 shots; the model's runs and the inner solves grow with the
rows."""
SAMPLE_SEED = 12
"""The sample is drawn the same way every time (a fit is repeatable)."""
N_T = len(TABLE_PARAMS)
"""The table parameters come first in u; the strokes follow."""


class Problem:
    """The normalised MAP problem over one table's evidence."""

    def __init__(
        self, table: TableSpec, prior_table: TableSpec, ev: Evidence, speeds0: dict[str, float]
    ) -> None:
        self.table = table
        self.ev = ev
        self.runner = Runner(table, ev)
        presets = [p for _, p in ev.strokes]
        self.centre = np.array(
            [get_param(prior_table, n) for n in TABLE_PARAMS]
            + [math.log(speeds0[p]) for p in presets]
        )
        self.sd = np.array(
            [PRIOR_SD[n] for n in TABLE_PARAMS] + [speed_prior_sd(p) for p in presets]
        )
        lo = [PARAM_BOUNDS[n][0] for n in TABLE_PARAMS]
        hi = [PARAM_BOUNDS[n][1] for n in TABLE_PARAMS]
        for p in presets:
            book = math.log(shots.SPEED_PRESETS[p])
            lo.append(book - LOG_SPEED_LIMIT)
            hi.append(book + LOG_SPEED_LIMIT)
        self.u_lo = (np.array(lo) - self.centre) / self.sd
        self.u_hi = (np.array(hi) - self.centre) / self.sd
        self.book = np.array([math.log(shots.SPEED_PRESETS[p]) for p in presets])
        self.n_p = len(self.centre)
        self.noise = lk.DEFAULT_NOISE
        self.anchor = np.full(len(ev), np.nan)
        self.prior_outcomes: Outcomes | None = None
        """The model's outcomes at the priors (u = 0), once run."""
        self.evaluations = 0

    def warm_start(self, params: dict[str, float], speeds: dict[str, float]) -> np.ndarray:
        """u of an earlier fit's values (table parameters by name; m/s by (player, named
        stroke) as ``player|stroke``); a value not given starts at its prior."""
        th = self.centre.copy()
        for j, name in enumerate(TABLE_PARAMS):
            if name in params:
                th[j] = params[name]
        for k, (player, preset) in enumerate(self.ev.strokes):
            v = speeds.get(f"{player}|{preset}")
            if v is not None and v > 0.0:
                th[N_T + k] = math.log(v)
        return np.asarray((th - self.centre) / self.sd, dtype=float)

    def on_rows(self, rows: np.ndarray) -> Problem:
        """The same problem (priors, bounds, strokes) over some of the evidence's rows."""
        sub = copy.copy(self)
        sub.ev = subset(self.ev, rows)
        sub.runner = Runner(self.table, sub.ev)
        sub.anchor = self.anchor[rows]
        sub.prior_outcomes = None
        return sub

    def theta(self, u: np.ndarray) -> np.ndarray:
        return np.asarray(self.centre + self.sd * u, dtype=float)

    def table_at(self, u: np.ndarray) -> TableSpec:
        th = self.theta(u)
        return with_params(self.table, dict(zip(TABLE_PARAMS, th[:N_T], strict=True)))

    def row_speeds(self, u: np.ndarray) -> np.ndarray:
        th = self.theta(u)
        factor = np.exp(th[N_T:] - self.book)
        return np.asarray(self.ev.logged * factor[self.ev.stroke], dtype=float)

    def outcomes(self, u: np.ndarray, speed_shifts: Sequence[float] = (0.0,)) -> list[Outcomes]:
        """The model's outcomes at u, once for each shift of every speed (prior sd), all in
        one batch per family (the table is the same for all of them)."""
        sets = []
        for s in speed_shifts:
            uu = u.copy()
            uu[N_T:] = uu[N_T:] + s
            sets.append(self.row_speeds(uu))
        self.evaluations += 1
        return self.runner.run(self.table_at(u), np.array(sets))

    def residuals(self, out: Outcomes, u: np.ndarray) -> np.ndarray:
        """The evidence's residuals with the priors appended (u of shape (k, p) with outcomes
        of shape (k, n): one row of residuals per set)."""
        r = lk.residuals(self.ev, out, self.noise, self.table.diamond, self.anchor)
        return np.concatenate((r, u), axis=-1)

    def cost(self, out: Outcomes, u: np.ndarray) -> float:
        """The MAP objective: half the robust loss of the data plus half the priors' squares."""
        f = self.residuals(out, u)
        return 0.5 * float(np.sum(lk.robust_loss(f.size - self.n_p)(f * f)[0]))

    def linearise(
        self,
        u: np.ndarray,
        free: np.ndarray,
        base: Outcomes,
        up: Outcomes,
        prev: Linear | None = None,
    ) -> Linear:
        """Outcomes near u, linear in u. The speed slopes are forward differences of STEP
        prior sd (``up`` is the run with every speed a step up, which moves each shot by its
        own stroke's speed only). The table slopes are forward differences too, one parameter
        set each (Runner.run_sets), or, given ``prev`` (the linearisation of the step before),
        its slopes updated by Broyden's rank-one rule to agree with the change the model made
        from there to here (no model runs)."""
        n = len(self.ev)
        g = {k: np.zeros((n, self.n_p)) for k in ("landing", "reach", "miss")}
        cols = N_T + self.ev.stroke
        rows = np.arange(n)
        for k, d in slopes_of(base, up).items():
            g[k][rows, cols] = d / STEP
        tab = np.flatnonzero(free[:N_T])
        if prev is not None:
            broyden_update(g, prev, u, base, tab)
        elif tab.size:
            hs, us = [], []
            for j in tab:
                h = STEP if u[j] + STEP <= self.u_hi[j] else -STEP
                uu = u.copy()
                uu[j] += h
                hs.append(h)
                us.append(uu)
            self.evaluations += 1
            outs = self.runner.run_sets(
                [self.table_at(uu) for uu in us], np.array([self.row_speeds(uu) for uu in us])
            )
            for j, h, o in zip(tab, hs, outs, strict=True):
                for k, d in slopes_of(base, o).items():
                    g[k][:, j] = d / h
        fresh = prev is None or tab.size == 0
        return Linear(u.copy(), base, g["landing"], g["reach"], g["miss"], fresh)


GAIN_ENOUGH = 0.1
"""A kept step that lowers the objective (minus the log-posterior) by less than this ends the
descent: a tenth of a unit of log-likelihood is far below what the data can tell apart (a
parameter's one-sd interval spans half a unit)."""

BROYDEN_TRUST = 0.5
"""A kept step whose true gain is at least this share of the gain the linearised model
promised keeps its slopes by Broyden's update; a worse one measures them again."""


def _inner(prob: Problem, lin: Linear, free: np.ndarray, radius: float) -> np.ndarray:
    """The MAP optimum of the linearised model inside the trust region (a box of ``radius``
    prior sd round the linearisation point, within the bounds), by scipy's least_squares:
    first with plain squares (one basin, from the linearisation point), then with the Cauchy
    loss from there."""
    from scipy.optimize import least_squares  # type: ignore[import-untyped]

    u_c = lin.u
    nd = 2 * len(prob.ev)
    lo = np.maximum(prob.u_lo, u_c - radius)[free]
    hi = np.minimum(prob.u_hi, u_c + radius)[free]

    def full(x: np.ndarray) -> np.ndarray:
        u = u_c.copy()
        u[free] = x
        return u

    def fun(x: np.ndarray) -> np.ndarray:
        u = full(x)
        return prob.residuals(lin.at(u), u)

    idx = np.flatnonzero(free)
    n = len(prob.ev)
    pos_g = {
        k: getattr(lin, "g_" + k)[:, idx] for k in ("landing", "miss", "reach")
    }  # slopes of the outcomes (n, free)
    eye = np.eye(prob.n_p)[:, idx]

    def jac(x: np.ndarray) -> np.ndarray:
        """The residuals' Jacobian by the chain rule: each row's two residuals depend on its
        own outcomes only (its landing or its closest approach, and its reach), so one
        perturbed evaluation gives every row's derivatives; times the outcomes' slopes."""
        u = full(x)
        out = lin.at(u)
        d_pos, d_reach, by_miss = lk.residual_slopes(
            prob.ev, out, prob.noise, prob.table.diamond, prob.anchor
        )
        g_pos = np.where(by_miss[:, None], pos_g["miss"], pos_g["landing"])
        J = np.empty((2 * n + prob.n_p, idx.size))
        J[0 : 2 * n : 2] = d_pos[:, None] * g_pos
        J[1 : 2 * n : 2] = d_reach[:, None] * pos_g["reach"]
        J[2 * n :] = eye
        return J

    x = np.clip(u_c[free], lo, hi)
    kw: dict[str, Any] = {
        "bounds": (lo, hi),
        "x_scale": 1.0,
        "xtol": 1e-4,
        "ftol": 1e-6,
        "jac": jac,
        "tr_solver": "lsmr",
    }
    x = least_squares(fun, x, loss="linear", **kw).x
    x = least_squares(fun, x, loss=lk.robust_loss(nd), **kw).x
    return full(x)


def _start(prob: Problem, free: np.ndarray) -> np.ndarray:
    """The best of a small grid of starts: the cushion restitution at -2, -1 and 0 prior sd and
    every speed at -1, 0 and +1 prior sd (the two trade off in the rebound angle, and a local
    search from the prior alone can settle between them). The speeds of one restitution share
    one batch."""
    best = (math.inf, np.zeros(prob.n_p))
    j_e = TABLE_PARAMS.index("cushion.restitution")
    shifts = (-1.0, 0.0, 1.0)
    for de in (0.0, -1.0, -2.0) if free[j_e] else (0.0,):
        u = np.zeros(prob.n_p)
        u[j_e] = max(de, prob.u_lo[j_e])
        for s, out in zip(shifts, prob.outcomes(u, shifts), strict=True):
            uu = u.copy()
            uu[N_T:] = np.clip(uu[N_T:] + s, prob.u_lo[N_T:], prob.u_hi[N_T:])
            c = prob.cost(out, uu)
            if c < best[0]:
                best = (c, uu)
    return best[1]


@dataclass(frozen=True, slots=True)
class Solution:
    u: np.ndarray
    cov: np.ndarray
    free: np.ndarray
    iterations: int
    outcomes: Outcomes
    """The model's outcomes at u."""


def _descend(
    prob: Problem,
    u: np.ndarray,
    free: np.ndarray,
    progress: Progress | None,
    max_steps: int,
    radius: float = 1.5,
    start: tuple[Linear, Outcomes] | None = None,
) -> tuple[np.ndarray, Linear, Outcomes, int]:
    """Trust-region steps: linearise the model's outcomes at u, let least_squares find the
    optimum of the linearised problem within ``radius`` prior sd, run the model there, keep the
    step if the true objective fell (and widen the region), else shrink the region. After a
    kept step the table slopes are Broyden-updated rather than measured again; a step refused
    on such slopes measures them before the region shrinks. Ends when a step moves less than
    0.01 prior sd or gains less than GAIN_ENOUGH (or 1e-4 of the objective). ``start`` is a
    linearisation at u and its speed-step run (from an earlier descent at the same u: the
    model's outcomes do not depend on the noise scale). Returns u, the linearisation there
    and its speed-step run."""
    if start is not None and np.array_equal(start[0].u, u):
        lin, up = start
        base = lin.base
    else:
        base, up = prob.outcomes(u, (0.0, STEP))
        lin = prob.linearise(u, free, base, up)
    cost = prob.cost(base, u)
    steps = 0
    while steps < max_steps:
        steps += 1
        cand = _inner(prob, lin, free, radius)
        move = float(np.max(np.abs(cand - u))) if cand.size else 0.0
        if move < 0.01:
            if lin.fresh:
                break
            lin = prob.linearise(u, free, base, up)
            continue
        b2, up2 = prob.outcomes(cand, (0.0, STEP))
        c2 = prob.cost(b2, cand)
        if progress is not None:
            progress(
                f"fitting: step {steps}, objective {c2:.1f} (was {cost:.1f}), "
                f"move {move:.2f} of {radius:.2f} prior sd"
            )
        if c2 < cost:
            gain = cost - c2
            promised = cost - prob.cost(lin.at(cand), cand)
            good = gain >= BROYDEN_TRUST * promised
            lin = prob.linearise(cand, free, b2, up2, prev=lin if good else None)
            u, base, up, cost = cand, b2, up2, c2
            radius = min(max(radius, 2.0 * move), 4.0)
            if gain < max(1e-4 * cost, GAIN_ENOUGH):
                if lin.fresh:
                    break
                lin = prob.linearise(u, free, base, up)
        elif not lin.fresh:
            lin = prob.linearise(u, free, base, up)
            radius = 0.5 * move
        else:
            radius = 0.25 * move
            if radius < 0.01:
                break
    return u, lin, up, steps


def _covariance(prob: Problem, lin: Linear, free: np.ndarray, scale: float = 1.0) -> np.ndarray:
    """Laplace approximation at the optimum: the inverse of scale J^T W J + I, J the slopes of
    the data residuals (through the linearised outcomes), W their Cauchy weights, I the priors;
    fixed parameters keep their prior sd (1). ``scale`` > 1 when the rows are a sample of
    scale times as many."""
    u = lin.u
    nd = 2 * len(prob.ev)
    f0 = prob.residuals(lin.at(u), u)[:nd]
    idx = np.flatnonzero(free)
    J = np.zeros((nd, idx.size))
    for c, j in enumerate(idx):
        uu = u.copy()
        uu[j] += 1e-3
        J[:, c] = (prob.residuals(lin.at(uu), uu)[:nd] - f0) / 1e-3
    w = lk.cauchy_weights(f0)
    H = scale * ((J * w[:, None]).T @ J) + np.eye(idx.size)
    cov = np.eye(prob.n_p)
    cov[np.ix_(idx, idx)] = np.linalg.inv(H)
    return cov


def solve(
    prob: Problem,
    progress: Progress | None = None,
    max_steps: int = 16,
    sample: int | None = None,
    warm: tuple[np.ndarray, float] | None = None,
) -> Solution:
    """The MAP fit. With more rows than ``sample`` (default SAMPLE_ROWS) it runs on a sample
    of them (evidence.sample_rows: every family, player, stroke and kind kept, in
    proportion); the outcomes the report uses are then run on every row, and the spreads are
    the sample's with its information scaled up to every row (rows / sample: the rows are
    drawn alike, so each adds about as much). ``warm`` (u, landing noise) starts from an
    earlier fit of the same table (Problem.warm_start) instead of the grid of starts and the
    coarse first descent."""
    most = SAMPLE_ROWS if sample is None else sample
    if len(prob.ev) <= most:
        return _solve_rows(prob, progress, max_steps, warm)
    rows = sample_rows(prob.ev, most, np.random.default_rng(SAMPLE_SEED))
    sub = prob.on_rows(rows)
    if progress is not None:
        progress(f"fitting a sample of {rows.size} of {len(prob.ev)} attempts")
    first = _solve_rows(sub, progress, max_steps, warm, scale=len(prob.ev) / rows.size)
    prob.noise = sub.noise
    if progress is not None:
        progress(f"fitting: the fitted model on every one of the {len(prob.ev)} attempts")
    out0, fitted = prob.runner.run_sets(
        [prob.table_at(np.zeros(prob.n_p)), prob.table_at(first.u)],
        np.array([prob.row_speeds(np.zeros(prob.n_p)), prob.row_speeds(first.u)]),
    )
    prob.prior_outcomes = out0
    prob.anchor = out0.landing.copy()
    return Solution(first.u, first.cov, first.free, first.iterations, fitted)


def _solve_rows(
    prob: Problem,
    progress: Progress | None,
    max_steps: int,
    warm: tuple[np.ndarray, float] | None = None,
    scale: float = 1.0,
) -> Solution:
    """Start (the grid, or ``warm``), descend, re-measure the landing noise at the optimum and
    descend again from there if it changed; then put any table parameter that ran to its
    bound back at its prior (the report says so) and refit the rest. The spreads come from
    slopes measured at the end."""
    free = np.ones(prob.n_p, dtype=bool)
    out0 = prob.outcomes(np.zeros(prob.n_p))[0]
    prob.prior_outcomes = out0
    prob.anchor = out0.landing.copy()
    if warm is None:
        prob.noise = max(lk.landing_noise(prob.ev, out0), COARSE_NOISE)
        u = _start(prob, free)
    else:
        u = np.clip(warm[0], prob.u_lo, prob.u_hi)
        prob.noise = warm[1]
    u, lin, up, total = _descend(prob, u, free, progress, max_steps)
    for _round in range(3):
        measured = lk.landing_noise(prob.ev, lin.base)
        if (_round or warm is not None) and abs(measured / prob.noise - 1.0) <= 0.15:
            break
        prob.noise = measured
        if progress is not None:
            progress(f"fitting: landing noise {measured:.2f} diamond, robust loss")
        u, lin, up, n = _descend(prob, u, free, progress, max_steps, start=(lin, up))
        total += n
    u, free, lin, up, n = _pin_bounds(prob, u, free, lin, up, progress, max_steps)
    total += n
    if not lin.fresh:
        lin = prob.linearise(u, free, lin.base, up)
    return Solution(u, _covariance(prob, lin, free, scale), free, total, lin.base)


def _pin_bounds(
    prob: Problem,
    u: np.ndarray,
    free: np.ndarray,
    lin: Linear,
    up: Outcomes,
    progress: Progress | None,
    max_steps: int,
) -> tuple[np.ndarray, np.ndarray, Linear, Outcomes, int]:
    """Any parameter at the end of its range (a table parameter at a bound of its published
    range, a stroke at half or twice the book's pace) goes back to its prior and stays there
    (the report says so); the rest are refitted from there. A stroke pushed that far says
    more about the shots, or about what the model cannot do on this table, than about the
    player."""
    tol = 1e-3
    total = 0
    for _round in range(3):
        at_bound = free & ((u <= prob.u_lo + tol) | (u >= prob.u_hi - tol))
        if not at_bound.any():
            break
        free = free & ~at_bound
        u = np.where(at_bound, 0.0, u)
        if progress is not None:
            progress("fitting: a parameter ran to the end of its range; keeping its prior")
        u, lin, up, n = _descend(prob, u, free, progress, max_steps)
        total += n
    return u, free, lin, up, total
