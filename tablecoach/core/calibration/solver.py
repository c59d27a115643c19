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

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from .. import shots
from ..table import TableSpec
from . import likelihood as lk
from .evidence import Evidence
from .model import Outcomes, Runner, wrap
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

STEP = 0.05
"""Finite-difference step, in prior sd."""
COARSE_NOISE = 0.3
"""The landing noise (diamonds) the first descent assumes at least: the model's landings of
multi-rail shots jump by a few tenths of a diamond where a path meets a rail near a corner,
which makes the objective rough at a small noise scale; the fit goes down the smooth version
first, then at the measured noise (continuation)."""
CORRELATED = 0.9
"""Posterior correlation beyond which two parameters are reported as not told apart."""
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
        self.evaluations = 0

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
        """The evidence's residuals with the priors appended."""
        r = lk.residuals(self.ev, out, self.noise, self.table.diamond, self.anchor)
        return np.concatenate((r, u))

    def cost(self, out: Outcomes, u: np.ndarray) -> float:
        """The MAP objective: half the robust loss of the data plus half the priors' squares."""
        f = self.residuals(out, u)
        return 0.5 * float(np.sum(lk.robust_loss(f.size - self.n_p)(f * f)[0]))

    def linearise(self, u: np.ndarray, free: np.ndarray, base: Outcomes, up: Outcomes) -> Linear:
        """Outcomes near u, linear in u: forward differences of STEP prior sd (``up`` is the run
        with every speed a step up, which moves each shot by its own stroke's speed only), one
        run for each free table parameter."""
        n = len(self.ev)
        g = {k: np.zeros((n, self.n_p)) for k in ("landing", "reach", "miss")}
        cols = N_T + self.ev.stroke
        rows = np.arange(n)
        for k, d in _diffs(base, up).items():
            g[k][rows, cols] = d / STEP
        for j in range(N_T):
            if not free[j]:
                continue
            h = STEP if u[j] + STEP <= self.u_hi[j] else -STEP
            uu = u.copy()
            uu[j] += h
            for k, d in _diffs(base, self.outcomes(uu)[0]).items():
                g[k][:, j] = d / h
        return Linear(u.copy(), base, g["landing"], g["reach"], g["miss"])


EDGE = {"landing": 0.3, "reach": 1.0, "miss": 0.05}
"""Largest change of an outcome (diamonds; metres; metres) for one finite-difference step that
counts as a slope. A larger one has crossed an edge (a pocket mouth, a ball stopping short, a
landing on the next rail round): its slope there says nothing about the parameter, so it is
taken as zero."""


def _diffs(a: Outcomes, b: Outcomes) -> dict[str, np.ndarray]:
    out = {}
    for k in ("landing", "reach", "miss"):
        d = getattr(b, k) - getattr(a, k)
        if k == "landing":
            d = wrap(d)
        out[k] = np.where(np.isfinite(d) & (np.abs(d) <= EDGE[k]), d, 0.0)
    return out


@dataclass(frozen=True, slots=True)
class Linear:
    """The model's outcomes near ``u``: ``base`` there and their slopes (n, parameters)."""

    u: np.ndarray
    base: Outcomes
    g_landing: np.ndarray
    g_reach: np.ndarray
    g_miss: np.ndarray

    def at(self, u: np.ndarray) -> Outcomes:
        du = u - self.u
        return Outcomes(
            self.base.landing + self.g_landing @ du,
            self.base.reach + self.g_reach @ du,
            self.base.miss + self.g_miss @ du,
        )


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

    x = np.clip(u_c[free], lo, hi)
    kw: dict[str, Any] = {"bounds": (lo, hi), "x_scale": 1.0, "xtol": 1e-4, "ftol": 1e-6}
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


def _descend(
    prob: Problem,
    u: np.ndarray,
    free: np.ndarray,
    progress: Progress | None,
    max_steps: int,
    radius: float = 1.5,
) -> tuple[np.ndarray, Linear, int]:
    """Trust-region steps: linearise the model's outcomes at u, let least_squares find the
    optimum of the linearised problem within ``radius`` prior sd, run the model there, keep the
    step if the true objective fell (and widen the region), else shrink the region. Ends when a
    step moves less than 0.01 prior sd or gains less than 1e-4 of the objective."""
    base, up = prob.outcomes(u, (0.0, STEP))
    cost = prob.cost(base, u)
    lin = prob.linearise(u, free, base, up)
    steps = 0
    while steps < max_steps:
        steps += 1
        cand = _inner(prob, lin, free, radius)
        move = float(np.max(np.abs(cand - u))) if cand.size else 0.0
        if move < 0.01:
            break
        b2, up2 = prob.outcomes(cand, (0.0, STEP))
        c2 = prob.cost(b2, cand)
        if progress is not None:
            progress(
                f"fitting: step {steps}, objective {c2:.1f} (was {cost:.1f}), "
                f"move {move:.2f} of {radius:.2f} prior sd"
            )
        if c2 < cost:
            gain = cost - c2
            u, base, up, cost = cand, b2, up2, c2
            radius = min(max(radius, 2.0 * move), 4.0)
            lin = prob.linearise(u, free, base, up)
            if gain < 1e-4 * max(cost, 1.0):
                break
        else:
            radius = 0.25 * move
            if radius < 0.01:
                break
    return u, lin, steps


def _covariance(prob: Problem, lin: Linear, free: np.ndarray) -> np.ndarray:
    """Laplace approximation at the optimum: the inverse of J^T W J + I, J the slopes of the
    data residuals (through the linearised outcomes), W their Cauchy weights, I the priors;
    fixed parameters keep their prior sd (1)."""
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
    H = (J * w[:, None]).T @ J + np.eye(idx.size)
    cov = np.eye(prob.n_p)
    cov[np.ix_(idx, idx)] = np.linalg.inv(H)
    return cov


def solve(prob: Problem, progress: Progress | None = None, max_steps: int = 8) -> Solution:
    """Start, descend, re-measure the landing noise at the optimum and descend again from there
    if it changed; then put any table parameter that ran to its bound back at its prior (the
    report says so) and refit the rest."""
    free = np.ones(prob.n_p, dtype=bool)
    out0 = prob.outcomes(np.zeros(prob.n_p))[0]
    prob.anchor = out0.landing.copy()
    measured = lk.landing_noise(prob.ev, out0)
    prob.noise = max(measured, COARSE_NOISE)
    u = _start(prob, free)
    u, lin, total = _descend(prob, u, free, progress, max_steps)
    for _round in range(3):
        measured = lk.landing_noise(prob.ev, lin.base)
        if _round and abs(measured / prob.noise - 1.0) <= 0.15:
            break
        prob.noise = measured
        if progress is not None:
            progress(f"fitting: landing noise {measured:.2f} diamond, robust loss")
        u, lin, n = _descend(prob, u, free, progress, max_steps)
        total += n
    tol = 1e-3
    at_bound = free & ((u <= prob.u_lo + tol) | (u >= prob.u_hi - tol))
    at_bound[N_T:] = False
    if at_bound.any():
        free = free & ~at_bound
        u = np.where(at_bound, 0.0, u)
        if progress is not None:
            progress("fitting: a parameter ran to the end of its range; keeping its prior")
        u, lin, n = _descend(prob, u, free, progress, max_steps)
        total += n
    return Solution(u, _covariance(prob, lin, free), free, total)
