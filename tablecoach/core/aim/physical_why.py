"""Why no reading scores under the physical model, in a player's words (docs/model.md step 6).

Every reading of the first pass is run to its end and sorted by what stopped it: it stops
short, drops in a pocket or rattles in its jaws, meets another ball, meets the target ball
before the rails, or leaves the order of the rails. Pace failures are StopsShort, so
aim.solve_playable can offer a firmer stroke.
"""

from __future__ import annotations

import numpy as np

from ..physics.params import BallModel
from ..shots import ShotError, StopsShort, Stroke
from ..table import RAILS, TableSpec
from .physical_batch import Problems, run
from .physical_solve import first_pass

_SHORT, _POCKET, _BALL, _TARGET_FIRST, _OFF, _PASSES = range(6)
_WHY = {
    _SHORT: "the lines that would reach the target stop short",
    _POCKET: "the lines that would reach the target drop in a pocket or rattle in its jaws",
    _BALL: "another ball stands in the way of the lines that would reach the target",
    _TARGET_FIRST: "the target ball stands in the way of the rails",
    _OFF: "the lines that would reach the target leave the order of the rails",
    _PASSES: "no line at this stroke and spin reaches the target",
}


def why_nothing_scores(m: BallModel, table: TableSpec, pr: Problems, stroke: Stroke) -> ShotError:
    """Why no reading along the first rail scores, in a player's words, with the nearest
    reading that comes close: every reading of the first pass is run to its end and sorted
    into what stopped it; the reason given is what stops the readings next to the nearest one
    on the side where it would come closer (StopsShort when that is pace)."""
    fam = pr.setups[0].family
    nf = len(fam.rails)
    unit = table.rail_unit(pr.rail)
    grid = first_pass(table, pr.rail)
    res, ln = run(m, table, pr, np.zeros(grid.size, dtype=np.int64), grid, stroke)
    v = f"{stroke.speed:.2f} m/s under the physical model"
    reach = ln.ok & (res.hits[:, 0] == RAILS.index(pr.rail))
    stopped = ~np.isnan(res.stop_pos[:, 0]) & (res.ball < 0) & (res.pocket < 0)
    stopped &= res.landing_rail < 0
    if not np.count_nonzero(reach):
        if np.count_nonzero(ln.ok & stopped):
            return StopsShort(
                f"no reading scores at {v}: the ball stops before the {pr.rail} rail; "
                "try a firmer stroke"
            )
        why = "no line reaches the first rail"
        if pr.bank and not np.count_nonzero(ln.ok):
            why = "the cue ball cannot send the object ball to that rail"
        return ShotError(f"no reading scores at {v}: {why}")
    kind = np.full(grid.size, _OFF)
    kind[res.order_ok & (res.ball < 0) & (res.pocket < 0)] = _PASSES
    kind[res.pocket >= 0] = _POCKET
    kind[res.ball > 0] = _BALL
    kind[(res.ball == 0) & (res.ball_walls < nf)] = _TARGET_FIRST
    kind[stopped] = _SHORT
    finite = reach & (kind == _PASSES) & np.isfinite(res.miss)
    if not np.count_nonzero(finite):
        counts = np.bincount(kind[reach], minlength=len(_WHY))
        k = int(np.argmax(counts))
        if k == _SHORT:
            return StopsShort(f"no reading scores at {v}: {_WHY[k]}; try a firmer stroke")
        return ShotError(f"no reading scores at {v}: {_WHY[k]}")
    j = int(np.flatnonzero(finite)[np.argmin(np.abs(res.miss[finite]))])
    # the neighbour on the side where the miss would shrink, or the one that is not a plain pass
    side = [i for i in (j - 1, j + 1) if 0 <= i < grid.size]
    closer = [i for i in side if not finite[i]]
    if len(closer) == 2:
        k = _SHORT if _SHORT in kind[closer] else int(kind[closer[0]])
    elif closer:
        k = int(kind[closer[0]])
    else:
        k = _PASSES
    miss = abs(float(res.miss[j])) / table.diamond
    near = (
        f"; nearest: {ln.reading[j] / unit:.2f} on the {pr.rail} rail sights passes "
        f"{miss:.2f} diamond from the target"
    )
    if k == _SHORT:
        return StopsShort(f"no reading scores at {v}: {_WHY[k]}; try a firmer stroke")
    return ShotError(f"no reading scores at {v}: {_WHY[k]}{near}")
