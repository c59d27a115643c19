"""The public fit: a table from its logged shots, and the calibrations it gives each player.

The fit itself (the MAP problem and scipy's least_squares) is solver.py; this module gathers
the evidence, runs it and says what came out: values, spreads, what the shots could not tell.
"""

from __future__ import annotations

import math
import time
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from .. import shots
from ..table import TableSpec
from . import likelihood as lk
from .evidence import HIT, JAW, LANDING, SHORT, gather
from .model import Outcomes, ideal_sign, wrap
from .params import TABLE_PARAMS, CalibrationError
from .solver import CORRELATED, N_T, Problem, Progress, Solution, solve
from .value import KEPT_BOUND, Calibration, Estimate, Shift

# ----- the public fit ----------------------------------------------------------------------------


@dataclass(frozen=True, slots=True)
class TableFit:
    """A table fitted from the shots of one or more players: each player's Calibration shares
    the table's parameters and carries their own strokes."""

    table: str
    calibrations: tuple[Calibration, ...]

    def only(self) -> Calibration:
        if len(self.calibrations) != 1:
            names = ", ".join(c.player for c in self.calibrations)
            raise CalibrationError(f"the shots are several players' ({names}): name one")
        return self.calibrations[0]

    def of(self, player: str) -> Calibration:
        for c in self.calibrations:
            if c.player == player:
                return c
        raise CalibrationError(f"no calibration for {player!r} on the {self.table} table")


def fit_table(
    table: TableSpec,
    attempts: Sequence[Any],
    prior_table: TableSpec | None = None,
    *,
    prior_speeds: dict[str, float] | None = None,
    progress: Progress | None = None,
    max_steps: int = 16,
    warm: Sequence[Calibration] = (),
) -> TableFit:
    """Fit the table's cloth and cushion from everyone's attempts and each player's strokes
    from their own (robust MAP, module docstring).

    ``table`` gives the geometry; ``prior_table`` (default ``table``) the cloth and cushion the
    priors are centred on; ``prior_speeds`` the m/s the stroke priors are centred on (default
    the book's, shots.SPEED_PRESETS). ``progress`` is told what the fit is doing. ``warm``:
    earlier calibrations of this table (the same model version), to start from instead of the
    grid of starts: the priors stay where they are, only the search begins nearer the answer.
    """
    t0 = time.perf_counter()
    prior_table = prior_table or table
    speeds0 = dict(shots.SPEED_PRESETS)
    speeds0.update(prior_speeds or {})
    ev = gather(table, attempts)
    if len(ev) < 3:
        raise CalibrationError(
            f"only {len(ev)} of {len(attempts)} attempts can be used for a calibration: "
            "log at least 3 shots with their results (the table check takes 5 to 10)"
        )
    if progress is not None:
        progress(f"fitting {len(ev)} attempts")
    prob = Problem(table, prior_table, ev, speeds0)
    sol = solve(prob, progress, max_steps, warm=_warm(prob, warm))
    return _result(prob, sol, prior_table, speeds0, len(attempts), time.perf_counter() - t0)


def _warm(prob: Problem, cals: Sequence[Calibration]) -> tuple[np.ndarray, float] | None:
    """(u, landing noise) of earlier calibrations of the table, or None without any."""
    if not cals:
        return None
    params = {e.name: e.value for e in cals[0].params if not e.kept}
    speeds = {f"{c.player}|{e.name}": e.value for c in cals for e in c.speeds}
    noise = cals[0].noise
    if not (math.isfinite(noise) and noise > 0.0):
        noise = lk.DEFAULT_NOISE
    return prob.warm_start(params, speeds), max(noise, lk.NOISE_FLOOR)


def fit(
    table: TableSpec,
    attempts: Sequence[Any],
    prior_table: TableSpec | None = None,
    *,
    prior_speeds: dict[str, float] | None = None,
    progress: Progress | None = None,
    max_steps: int = 16,
    warm: Sequence[Calibration] = (),
) -> Calibration:
    """fit_table for one player's attempts: that player's Calibration."""
    return fit_table(
        table,
        attempts,
        prior_table,
        prior_speeds=prior_speeds,
        progress=progress,
        max_steps=max_steps,
        warm=warm,
    ).only()


def _result(
    prob: Problem,
    sol: Solution,
    prior_table: TableSpec,
    speeds0: dict[str, float],
    given: int,
    seconds: float,
) -> TableFit:
    ev = prob.ev
    u = sol.u
    sd_u = np.sqrt(np.clip(np.diag(sol.cov), 0.0, None))
    theta = prob.theta(u)
    params = tuple(
        Estimate(
            n,
            float(theta[j]),
            float(prob.sd[j] * sd_u[j]),
            float(prob.centre[j]),
            float(prob.sd[j]),
            "" if sol.free[j] else KEPT_BOUND,
        )
        for j, n in enumerate(TABLE_PARAMS)
    )
    base = prob.prior_outcomes or prob.outcomes(np.zeros(prob.n_p))[0]
    fitted = sol.outcomes
    r0 = lk.landing_residuals(ev, base)
    r1 = lk.landing_residuals(ev, fitted)
    d1 = prob.residuals(fitted, u)[: 2 * len(ev)].reshape(-1, 2)
    outlier = np.max(np.abs(d1), axis=1) > 3.0
    notes = _unclear(prob, sol)
    cals = []
    for player in ev.players:
        ks = [k for k, (p, _) in enumerate(ev.strokes) if p == player]
        rows = np.isin(ev.stroke, ks)
        speeds = []
        for k in ks:
            j = N_T + k
            v = math.exp(theta[j])
            p = ev.strokes[k][1]
            sd_v = v * float(prob.sd[j] * sd_u[j])
            kept = "" if sol.free[j] else KEPT_BOUND
            speeds.append(Estimate(p, v, sd_v, speeds0[p], v * float(prob.sd[j]), kept))
        inl = rows & ~outlier
        cals.append(
            Calibration(
                table=prob.table.name,
                params=params,
                speeds=tuple(speeds),
                attempts=int(np.count_nonzero(rows)) if len(ev.players) > 1 else given,
                used=int(np.count_nonzero(rows)),
                outliers=int(np.count_nonzero(rows & outlier)),
                rms_before=lk.rms(r0[rows]),
                rms_after=lk.rms(r1[rows]),
                rms_before_inliers=lk.rms(r0[inl]),
                rms_after_inliers=lk.rms(r1[inl]),
                noise=prob.noise,
                shifts=_shifts(prob, base, fitted, rows),
                player=player,
                seconds=seconds,
                iterations=sol.iterations,
                landings=int(np.count_nonzero(rows & (ev.kind == LANDING))),
                hits=int(np.count_nonzero(rows & (ev.kind == HIT))),
                shorts=int(np.count_nonzero(rows & (ev.kind == SHORT))),
                jaws=int(np.count_nonzero(rows & (ev.kind == JAW))),
                players=len(ev.players),
                notes=notes,
            )
        )
    return TableFit(prob.table.name, tuple(cals))


def _unclear(prob: Problem, sol: Solution) -> tuple[str, ...]:
    """Pairs of parameters the shots cannot tell apart (posterior correlation beyond
    CORRELATED), as ``name|name`` keys for the report."""
    cov = sol.cov
    sd = np.sqrt(np.clip(np.diag(cov), 1e-300, None))
    corr = cov / np.outer(sd, sd)
    names = [*TABLE_PARAMS, *(f"speed.{pl}.{p}" for pl, p in prob.ev.strokes)]
    out = []
    for i in range(N_T):
        for j in range(i + 1, prob.n_p):
            if sol.free[i] and sol.free[j] and abs(corr[i, j]) > CORRELATED:
                out.append(f"{names[i]}|{names[j]}|{corr[i, j]:+.2f}")
    return tuple(out)


def _shifts(prob: Problem, base: Outcomes, fitted: Outcomes, rows: np.ndarray) -> tuple[Shift, ...]:
    """Median long/short of the calibrated against the prior prediction, per family and named
    stroke (the median, so that a shot whose modelled ball drops in a pocket does not set the
    figure); at most 60 shots a group."""
    ev = prob.ev
    groups: dict[tuple[str, str], list[float]] = {}
    for i in np.flatnonzero(rows):
        b, c = base.landing[i], fitted.landing[i]
        if not (math.isfinite(b) and math.isfinite(c)):
            continue
        key = (ev.family[i], ev.strokes[int(ev.stroke[i])][1])
        got = groups.setdefault(key, [])
        if len(got) >= 60:
            continue
        s = ideal_sign(prob.table, ev.setups[i], float(ev.reading[i]))
        got.append(s * float(wrap(np.array(c - b))))
    return tuple(
        Shift(f, p, float(np.median(v)), len(v))
        for (f, p), v in sorted(groups.items(), key=lambda kv: kv[0])
    )
