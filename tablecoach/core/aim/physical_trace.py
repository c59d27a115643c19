"""The physical aim's traces: one simulated row in the shot vocabulary, and the read-off at a root.

A row's Trace has the ideal trace's meaning (aim/ideal.py). The read-off takes the aim's
landing and contacts from the recorded rows of the refining pass round the root, as the
quadratic through the three nearest (they are smooth in the reading), so a solve needs no
extra run (docs/model.md, "Aim solving", step 4).
"""

from __future__ import annotations

import math

import numpy as np

from ..geometry import box_exit
from ..physics.params import BallModel
from ..physics.simulate import SimResult, sample_path
from ..shots import RailPoint, Trace, rails_text
from ..table import POCKETS, RAILS, TableSpec
from .physical_batch import Launch, Problems
from .physical_solve import Solved


def extend(table: TableSpec, p: np.ndarray, d: np.ndarray) -> RailPoint | None:
    """Where the straight line from p along d leaves the ball box (the landing of a ball that
    came to rest after the family's rails, carried on as a player reads it)."""
    if not (np.all(np.isfinite(p)) and np.all(np.isfinite(d))):
        return None
    t, code = box_exit((float(p[0]), float(p[1])), (float(d[0]), float(d[1])), table.ball_box())
    if math.isinf(t):
        return None
    ax = 0 if code < 2 else 1
    return RailPoint(RAILS[code], float(p[1 - ax] + t * d[1 - ax]))


def trace_of(
    m: BallModel,
    table: TableSpec,
    pr: Problems,
    res: SimResult,
    ln: Launch | None,
    row: int = 0,
) -> tuple[Trace, str]:
    """The Trace of one simulated row (``ln`` None: the launch is known to be good)."""
    setup = pr.setups[0]
    fam = setup.family
    nf = len(fam.rails)
    if ln is not None and not ln.ok[row]:
        why = "the cue ball cannot send the object ball along this line"
        if ln.cut[row] < math.radians(89.0):
            why = "the cue ball stops before it reaches the object ball"
        start = (float(ln.r0[row, 0]), float(ln.r0[row, 1]))
        return Trace((start,), (), None, False, why, ()), why
    hits = [RAILS[c] for c in res.hits[row] if c >= 0]
    ats = [float(x) for x in res.hit_at[row][: len(hits)]]
    if res.ball[row] >= 0:
        nh = int(res.ball_walls[row])
    elif res.pocket[row] >= 0:
        nh = int(res.pocket_walls[row]) - 1
    else:
        nh = len(hits)
    rails_hit = tuple(hits[:nh])
    contacts = tuple(RailPoint(r, a) for r, a in zip(rails_hit, ats[:nh], strict=True))
    scores = bool(res.scores[row])
    rails_t = rails_text(rails_hit)
    if res.ball[row] >= 0:
        if res.ball[row] == 0 and scores:
            outcome = "contacts the target ball"
        elif res.ball[row] == 0:
            outcome = f"meets the target ball after {rails_t}, not after {rails_text(fam.rails)}"
        else:
            outcome = f"runs into another ball after {rails_t}"
    elif res.pocket[row] >= 0:
        name = POCKETS[int(res.pocket[row])]
        ordered = rails_hit == fam.rails
        if scores:
            outcome = f"drops in {name}"
        elif setup.pocket == name and ordered:
            outcome = f"hits a jaw of {name} and stays out"
        elif res.pocket_clean[row]:
            outcome = f"drops in {name} after {rails_t}"
        else:
            outcome = f"rattles in the jaws of {name} after {rails_t}"
    elif not np.isnan(res.stop_pos[row, 0]) and res.landing_rail[row] < 0:
        outcome = f"stops after {rails_t}, short of the target"
    else:
        outcome = f"touches {rails_t} and misses the target"
    landing = None
    if res.landing_rail[row] >= 0:
        landing = RailPoint(RAILS[int(res.landing_rail[row])], float(res.landing_at[row]))
    elif res.walls[row] >= nf and res.pocket[row] < 0:
        # it came to rest after the family's rails: carry its last line of travel on to a
        # wall (from where it met a ball, else from where it stopped), as a player reads it
        endp = res.ball_pos[row] if res.ball[row] >= 0 else res.stop_pos[row]
        if np.all(np.isfinite(endp)):
            landing = extend(table, endp, res.last_dir[row])
    path = tuple(sample_path(m, res, row)) if res.segments else ()
    return Trace(path, rails_hit, landing, scores, outcome, contacts), outcome


def _through(xs: np.ndarray, ys: np.ndarray, x: float) -> float:
    """The value at x of the polynomial through the points (xs, ys), in Lagrange's form on
    Python floats (the same polynomial as numpy.polynomial's Vandermonde solve, for the
    three points of the read-off; a few numpy calls would cost more than the arithmetic)."""
    px = [float(p) for p in xs]
    py = [float(q) for q in ys]
    total = 0.0
    for i, (xi, yi) in enumerate(zip(px, py, strict=True)):
        term = yi
        for m, xm in enumerate(px):
            if m != i:
                term *= (x - xm) / (xi - xm)
        total += term
    return total


def read_off(
    m: BallModel, table: TableSpec, pr: Problems, sol: Solved
) -> tuple[Trace, RailPoint] | None:
    """The trace at the root read off the recorded bracket rows of the refining pass.

    The three rows nearest the root must all score with the same rails and landing rail;
    the contacts and the landing are then the quadratic through them at the root (they are
    smooth in the reading), the path and outcome those of the nearest row. None when the
    rows do not agree (the caller then runs the root itself).
    """
    res, rows, sv = sol.res, sol.rows, sol.svals
    if res is None or rows is None or sv is None or sol.reading is None or rows.size < 3:
        return None
    near = np.argsort(np.abs(sv - sol.reading))[:3]
    rr = rows[near]
    nf = len(pr.setups[0].family.rails)
    if not bool(np.all(res.scores[rr])):
        return None
    if np.any(res.landing_rail[rr] != res.landing_rail[rr[0]]) or res.landing_rail[rr[0]] < 0:
        return None
    if np.any(res.hits[rr, :nf] != res.hits[rr[0], :nf]):
        return None
    xs = sv[near]
    best = int(rr[0])
    tr, _ = trace_of(m, table, pr, res, None, best)
    contacts = tuple(
        RailPoint(c.rail, _through(xs, res.hit_at[rr, k], sol.reading))
        for k, c in enumerate(tr.contacts[:nf])
    )
    landing = RailPoint(
        RAILS[int(res.landing_rail[best])],
        _through(xs, res.landing_at[rr], sol.reading),
    )
    tr = Trace(tr.path, tr.rails_hit, landing, True, tr.outcome, contacts + tr.contacts[nf:])
    return tr, landing
