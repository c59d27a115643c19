"""The physical aim model: solve, predict and the convergence point under the event simulation.

Solving is a few vectorised passes of physics.simulate (aim/physical_solve.py) over readings of
the first rail, launched as aim/physical_batch.py describes; the aim's landing and contacts are
read off the refining rows (aim/physical_trace.py), and when nothing scores the player is told
why (aim/physical_why.py). Sources, simplifications and figures: docs/model.md.
"""

from __future__ import annotations

import math

import numpy as np

from ..geometry import Point, nearest_point_to_lines
from ..physics.params import CushionModel, model_of
from ..shots import Aim, Convergence, Setup, ShotError, StopsShort, Stroke, Trace
from ..table import TableSpec
from .ideal import trial_setups
from .physical_batch import bank_variable, check_stroke, launch, problems, run
from .physical_solve import MARGIN_CAP, Solved, solve_batch, window
from .physical_trace import read_off, trace_of
from .physical_why import why_nothing_scores

RIGID_LIMIT = 2.5
"""Speed square to a cushion (m/s) up to which the rigid-cushion impact model was shown to
hold (Mathavan, Jackson and Parkin 2010, abstract: "the limiting normal velocity under which
the rigid cushion assumption is valid is 2.5 m/s")."""


def rigid_note(vn: float) -> str:
    """The player's note for a cushion met faster than RIGID_LIMIT square to it."""
    return (
        f"a cushion is met at {vn:.1f} m/s square to it, past the {RIGID_LIMIT:g} m/s the "
        "cushion model is proven to: the aim is less certain there"
    )


def predict(
    table: TableSpec,
    setup: Setup,
    stroke: Stroke,
    reading: float,
    cushion: CushionModel = "stepped",
) -> Trace:
    """Where a reading (metres along the first rail's line of sights) takes the travelling ball
    under the physical model: the same meaning as ideal.trace."""
    check_stroke(table, stroke)
    m = model_of(table, cushion)
    pr = problems(table, [setup])
    s = bank_variable(m, table, pr, reading, stroke) if pr.bank else reading
    res, ln = run(m, table, pr, np.zeros(1, dtype=np.int64), np.array([s]), stroke, record=True)
    tr, _ = trace_of(m, table, pr, res, ln)
    return tr


def solve(table: TableSpec, setup: Setup, stroke: Stroke, cushion: CushionModel = "stepped") -> Aim:
    """The reading whose simulated path touches the family's rails in order and reaches the
    target, with the window of readings that still score (margin_minus/plus, metres).

    Raises ShotError with a plain reason when no reading near the ideal one scores.
    """
    check_stroke(table, stroke)
    m = model_of(table, cushion)
    pr = problems(table, [setup])
    sol = solve_batch(m, table, pr, stroke, margins=True, final=True)[0]
    rail = pr.rail
    pi1 = np.zeros(1, dtype=np.int64)
    if sol.reading is None and (sol.scores is None or not sol.scores.any()):
        raise why_nothing_scores(m, table, pr, stroke)
    fast = read_off(m, table, pr, sol) if sol.reading is not None else None
    edge_readings: np.ndarray | None = None
    if sol.reading is None:
        # readings score but the miss never changes sign (a target ball close to a rail hides
        # one side): aim at the middle of the scoring window nearest the mirror reading
        tr = Trace((), (), None, False, "no sign change", ())
        landing_fast = None
        ln = launch(m, table, pr, pi1, pr.centre[:1], stroke)
    elif fast is not None:
        tr, landing_fast = fast
        # the root and the two window ends in one launch (rows are independent)
        assert sol.lo is not None and sol.hi is not None
        ln = launch(
            m,
            table,
            pr,
            np.zeros(3, dtype=np.int64),
            np.array([sol.reading, sol.lo, sol.hi]),
            stroke,
        )
        edge_readings = ln.reading[1:]
    else:
        res, ln = run(m, table, pr, pi1, np.array([sol.reading]), stroke, record=True)
        tr, why = trace_of(m, table, pr, res, ln)
        landing_fast = None
    if not tr.scores:
        win = window(
            m, table, pr, stroke, sol, float(pr.centre[0]) if sol.reading is None else sol.reading
        )
        if win is None:
            err = StopsShort if "stops" in tr.outcome else ShotError
            raise err(f"no clean path under the physical model: the best line {tr.outcome}")
        mid = 0.5 * (win[0] + win[1])
        sol = Solved(mid, win[0], win[1], "window")
        res, ln = run(m, table, pr, pi1, np.array([mid]), stroke, record=True)
        tr, why = trace_of(m, table, pr, res, ln)
        landing_fast = None
        if not tr.scores:
            err = StopsShort if "stops" in why else ShotError
            raise err(f"no clean path under the physical model: the best line {why}")
    reading = float(ln.reading[0])
    assert sol.lo is not None and sol.hi is not None
    if pr.bank and edge_readings is None:
        lohi = np.array([sol.lo, sol.hi])
        edge_readings = launch(m, table, pr, np.zeros(2, dtype=np.int64), lohi, stroke).reading
    if pr.bank:
        assert edge_readings is not None
        lo_r, hi_r = float(edge_readings[0]), float(edge_readings[1])
    else:
        lo_r, hi_r = sol.lo, sol.hi
    unit = table.rail_unit(rail)
    minus = min(max(reading - lo_r, 0.0), MARGIN_CAP * unit)
    plus = min(max(hi_r - reading, 0.0), MARGIN_CAP * unit)
    target = setup.target_point(table)
    landing = landing_fast or tr.landing
    if landing is None:
        raise ShotError("no clean path under the physical model: the ball finds no landing")
    path = tr.path if setup.pocket is None else (*tr.path, target)
    ghost = cut = None
    notes: tuple[str, ...] = ()
    if pr.bank:
        ghost = (float(ln.ghost[0, 0]), float(ln.ghost[0, 1]))
        cut = float(ln.cut[0])
        if cut > math.radians(70):
            notes = (f"thin cut ({math.degrees(cut):.0f} degrees): hard to send the object true",)
    if stroke.speed > RIGID_LIMIT:  # only a stroke this fast can meet a cushion this fast
        if sol.res is not None and sol.rows is not None and sol.rows.size:
            vn = float(np.max(sol.res.rail_vn[sol.rows]))  # the rows round the root, recorded
        else:
            chk, _ = run(m, table, pr, pi1, np.array([sol.reading]), stroke)
            vn = float(chk.rail_vn[0])
        if vn > RIGID_LIMIT:
            notes = (*notes, rigid_note(vn))
    d = (float(ln.direction[0, 0]), float(ln.direction[0, 1]))
    return Aim(
        setup,
        "physical",
        rail,
        reading,
        d,
        tr.contacts[: len(setup.family.rails)],
        path,
        landing,
        target,
        minus,
        plus,
        ghost,
        cut,
        stroke,
        notes,
    )


def convergence(
    table: TableSpec,
    setup: Setup,
    starts: list[Point],
    stroke: Stroke,
    cushion: CushionModel = "stepped",
) -> Convergence:
    """The least-squares point nearest the physical aim lines from several start positions.

    All starts are solved in one batch (no margins). Starts without a clean path are dropped.
    For banks the cue ball is put behind each object position (ideal.trial_setups, as the ideal
    convergence does). The spread is the RMS distance of the lines from the point: not zero
    under this model.
    """
    check_stroke(table, stroke)
    m = model_of(table, cushion)
    trials = trial_setups(table, setup, starts)
    if len(trials) < 2:
        raise ShotError("too few start positions with a clean path to find a convergence point")
    pr = problems(table, trials)
    sols = solve_batch(m, table, pr, stroke, margins=False)
    keep = [p for p, sol in enumerate(sols) if sol.reading is not None]
    if len(keep) < 2:
        raise ShotError("too few start positions with a clean path to find a convergence point")
    pi = np.array(keep, dtype=np.int64)
    sv = np.array([sols[p].reading for p in keep], dtype=float)
    res, ln = run(m, table, pr, pi, sv, stroke)
    good = res.scores & ln.ok
    if good.sum() < 2:
        raise ShotError("too few start positions with a clean path to find a convergence point")
    pts = ln.r0[good]
    dirs = ln.direction[good]
    try:
        fit = nearest_point_to_lines(pts, dirs)
    except ValueError as exc:
        raise ShotError(str(exc)) from None
    return Convergence(
        fit.point,
        fit.spread,
        tuple((float(a), float(b)) for a, b in pts),
        tuple((float(a), float(b)) for a, b in dirs),
        "physical",
    )
