"""The aim under the physical model: solve, predict and the convergence point, in batches.

A reading (metres along the first rail's line of sights) fixes the travelling ball's line. For a
kick it is the cue ball's stroke line. For a bank the solver's variable is the line of centres
(the ghost-ball aim); the object then leaves along that line turned by its throw
(collide.py), and the reading reported is that of the object's real launch line, as the
contract asks ("the ball's path before the first cushion").

Solving is a few vectorised passes of simulate.simulate: a grid of readings around the ideal
(mirror) reading, then two passes of seven points inside the bracket of the sign change of the
signed miss (the target's closest approach to the path after the family's rails) and inside
the brackets of the two ends of the scoring window, then one recorded run for the path. The
root is taken by linear interpolation inside the last bracket.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from .. import shots
from ..geometry import Point, axis_of, nearest_point_to_lines, unfold
from ..shots import Aim, Convergence, RailPoint, Setup, ShotError, StopsShort, Stroke, Trace
from ..table import POCKETS, RAILS, RailName, TableSpec
from .collide import strike
from .motion import SPINNING, dot2, evolve, prepare, settle
from .params import BallModel, CushionModel, model_of
from .roots import first_quadratic_root
from .simulate import SimResult, _evolve_moving, sample_path, simulate
from .stick import StrokeError, check_offset, stick_hit

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


GRID_STEP = 0.125
"""Spacing (rail diamonds) of the first pass, which covers every reading along the first rail
(a quarter diamond beyond each end), so a shot whose aim lies far from the mirror line is still
found; the sign change nearest the ideal reading is taken."""
REFINE = 15
"""Interior points per bracket in the refining pass."""
REFINE_EDGE = 47
"""Interior points per bracket of the scoring window's ends (about 1 mm of reading)."""
PASSES = 1
"""Refining passes after the grid (each narrows every bracket REFINE + 1 times)."""
MARGIN_CAP = 1.5
"""A scoring window wider than this many diamonds either way is reported as this (as shots)."""


@dataclass(frozen=True, slots=True)
class _Problems:
    """Per-setup arrays of a batch (index p)."""

    setups: tuple[Setup, ...]
    rail: RailName
    start: np.ndarray  # (P, 2)
    cue: np.ndarray  # (P, 2)
    target: np.ndarray  # (P, 2)
    balls: np.ndarray  # (P, K, 2)
    ball_from: np.ndarray  # (P, K)
    pocket: np.ndarray  # (P,)
    centre: np.ndarray  # (P,) ideal reading (or the rail's middle)
    bank: bool


def _problems(table: TableSpec, setups: Sequence[Setup]) -> _Problems:
    fam = setups[0].family
    rail = fam.rails[0]
    starts, cues, targets, balls, froms, pockets, centres = [], [], [], [], [], [], []
    kmax = 1 + max(len(s.obstacles()) for s in setups)
    for s in setups:
        starts.append(s.start)
        cues.append(s.cue)
        tp = s.target_point(table)
        targets.append(tp)
        row = [[math.nan, math.nan]] * kmax
        frm = [0] * kmax
        if s.target_ball is not None:
            row[0] = list(s.target_ball)
        for j, ob in enumerate(s.obstacles()):
            row[1 + j] = list(ob)
            frm[1 + j] = 1 if fam.travel == "object" else 0
        balls.append(row)
        froms.append(frm)
        pockets.append(POCKETS.index(s.pocket) if s.pocket is not None else -1)
        centres.append(_ideal_reading(table, s, tp))
    return _Problems(
        tuple(setups),
        rail,
        np.array(starts, dtype=float),
        np.array(cues, dtype=float),
        np.array(targets, dtype=float),
        np.array(balls, dtype=float).reshape(len(setups), kmax, 2),
        np.array(froms, dtype=np.int64),
        np.array(pockets, dtype=np.int64),
        np.array(centres, dtype=float),
        fam.travel == "object",
    )


def _ideal_reading(table: TableSpec, s: Setup, target: Point) -> float:
    """The mirror-model reading (unfolded image), or the middle of the rail if it has none."""
    rails = s.family.rails
    uf = unfold(target, rails, [table.reflection_line(r) for r in rails])
    d = (uf.image[0] - s.start[0], uf.image[1] - s.start[1])
    rd = shots.reading_of(table, s.start, d, rails[0]) if math.hypot(*d) > 1e-12 else None
    if rd is None:
        return 0.5 * table.rail_span(rails[0])
    return rd


def _sight_dirs(table: TableSpec, rail: str, start: np.ndarray, s: np.ndarray) -> np.ndarray:
    ax = axis_of(rail)
    pt = np.empty((s.shape[0], 2))
    pt[:, ax] = table.sight_line(rail)  # type: ignore[arg-type]
    pt[:, 1 - ax] = s
    d = pt - start
    return d / np.hypot(d[:, 0], d[:, 1])[:, None]


def _readings(table: TableSpec, rail: str, start: np.ndarray, d: np.ndarray) -> np.ndarray:
    ax = axis_of(rail)
    with np.errstate(divide="ignore", invalid="ignore"):
        t = (table.sight_line(rail) - start[:, ax]) / d[:, ax]  # type: ignore[arg-type]
        return np.where(t > 0, start[:, 1 - ax] + t * d[:, 1 - ax], np.nan)


def _advance(
    m: BallModel, v: np.ndarray, w: np.ndarray, dist: np.ndarray
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The state of balls on a straight stroke line after ``dist`` metres (cue ball to ghost).

    With a level cue the slip stays along the line, so the path is straight; the phases run
    in closed form until the distance is covered. Returns v, w and whether it got there.
    """
    v, w = v.copy(), w.copy()
    n = v.shape[0]
    sp = np.hypot(v[:, 0], v[:, 1])
    d = v / np.maximum(sp, 1e-300)[:, None]
    left = dist.astype(float).copy()
    reached = np.zeros(n, dtype=bool)
    going = sp > 0
    r = np.zeros((n, 2))
    for _ in range(4):
        if not np.count_nonzero(going):
            break
        ph, a, T = prepare(m, v, w)
        going &= ph > SPINNING
        along_v = dot2(v, d)
        along_a = dot2(a, d)
        t = first_quadratic_root(-0.5 * along_a, -along_v, left, T)
        hit = going & np.isfinite(t)
        tt = np.where(hit, t, np.where(np.isfinite(T), T, 0.0))
        tt = np.where(going, tt, 0.0)
        if np.count_nonzero(ph <= SPINNING):
            _, v2, w2 = evolve(m, r, v, w, ph, tt, a)
        else:  # every ball rolls or slides: the loop's own evolve, same arithmetic
            _, v2, w2 = _evolve_moving(m, r, v, w, ph, tt, a)
        moved = along_v * tt + 0.5 * along_a * tt * tt
        ended = going & ~hit
        if np.count_nonzero(ended):  # settle changes only the balls whose phase ended
            settle(m, v2, w2, ended, ph)
        v = np.where(going[:, None], v2, v)
        w = np.where(going[:, None], w2, w)
        left = np.where(going, left - moved, left)
        reached |= hit
        going &= ~hit
    return v, w, reached


@dataclass(frozen=True, slots=True)
class _Launch:
    r0: np.ndarray
    v0: np.ndarray
    w0: np.ndarray
    ok: np.ndarray
    reading: np.ndarray  # reading of the real launch line
    direction: np.ndarray
    ghost: np.ndarray
    cut: np.ndarray


def _launch(
    m: BallModel, table: TableSpec, pr: _Problems, pi: np.ndarray, s: np.ndarray, stroke: Stroke
) -> _Launch:
    start = pr.start[pi]
    d = _sight_dirs(table, pr.rail, start, s)
    n = s.shape[0]
    if not pr.bank:
        v, w = stick_hit(m, d, stroke.speed, stroke.english, stroke.follow)
        nan2 = np.full((n, 2), np.nan)
        return _Launch(start, v, w, np.ones(n, bool), s.copy(), d, nan2, np.full(n, np.nan))
    # bank: d is the line of centres; the cue ball travels straight to the ghost position
    ghost = start - 2.0 * m.radius * d
    u = ghost - pr.cue[pi]
    dist = np.hypot(u[:, 0], u[:, 1])
    ud = u / np.maximum(dist, 1e-300)[:, None]
    cut = np.arccos(np.clip(dot2(ud, d), -1.0, 1.0))
    vc, wc = stick_hit(m, ud, stroke.speed, stroke.english, stroke.follow)
    vc, wc, reached = _advance(m, vc, wc, dist)
    vo, wo = strike(m, vc, wc, d)
    ok = reached & (cut < math.radians(89.0)) & (dist > 1e-9)
    spo = np.hypot(vo[:, 0], vo[:, 1])
    ok &= spo > 1e-9
    dl = vo / np.maximum(spo, 1e-300)[:, None]
    rd = _readings(table, pr.rail, start, dl)
    return _Launch(start, vo, wo, ok, rd, dl, ghost, cut)


def _run(
    m: BallModel,
    table: TableSpec,
    pr: _Problems,
    pi: np.ndarray,
    s: np.ndarray,
    stroke: Stroke,
    record: bool = False,
    lean: bool | np.ndarray = False,
) -> tuple[SimResult, _Launch]:
    ln = _launch(m, table, pr, pi, s, stroke)
    v0 = np.where(ln.ok[:, None], ln.v0, 0.0)
    w0 = np.where(ln.ok[:, None], ln.w0, 0.0)
    res = simulate(
        m,
        table,
        pr.setups[0].family.rails,
        ln.r0,
        v0,
        w0,
        pr.balls[pi],
        pr.ball_from[pi],
        pr.target[pi],
        pr.pocket[pi],
        record=record,
        lean=lean,
    )
    bad = ~ln.ok
    res.miss[bad] = np.nan
    res.scores[bad] = False
    return res, ln


@dataclass(frozen=True, slots=True)
class _Solved:
    reading: float | None  # solver variable (line of centres for banks)
    lo: float | None  # lowest scoring value found (None: not asked)
    hi: float | None
    reason: str
    grid: np.ndarray | None = None
    scores: np.ndarray | None = None
    res: SimResult | None = None  # the refining pass, recorded (single solves only)
    rows: np.ndarray | None = None  # its rows inside the root's bracket
    svals: np.ndarray | None = None  # and their solver values


def _root_pair(s: np.ndarray, mv: np.ndarray, centre: float) -> int | None:
    """Index j of the sign change of mv between s[j] and s[j + 1] nearest the centre."""
    a, b = mv[:-1], mv[1:]
    ok = np.isfinite(a) & np.isfinite(b) & (a * b <= 0.0)
    if not ok.any():
        return None
    mid = 0.5 * (s[:-1] + s[1:])
    cand = np.flatnonzero(ok)
    return int(cand[np.argmin(np.abs(mid[cand] - centre))])


def _interp(s0: float, s1: float, m0: float, m1: float) -> float:
    if m0 == m1:
        return 0.5 * (s0 + s1)
    return s0 + (s1 - s0) * (m0 / (m0 - m1))


def _interp3(ss: np.ndarray, mm: np.ndarray, j: int) -> float:
    """The zero, inside the bracket [ss[j], ss[j + 1]], of the quadratic through three
    neighbouring samples (Lagrange form), or the chord's zero when no such quadratic fits."""
    lin = _interp(ss[j], ss[j + 1], mm[j], mm[j + 1])
    lo, hi = min(ss[j], ss[j + 1]), max(ss[j], ss[j + 1])
    for k in (j - 1, j):
        if k < 0 or k + 2 >= ss.size or not np.all(np.isfinite(mm[k : k + 3])):
            continue
        x0, x1, x2 = (float(x) - lin for x in ss[k : k + 3])
        y0, y1, y2 = (float(y) for y in mm[k : k + 3])
        d01, d02, d12 = x0 - x1, x0 - x2, x1 - x2
        # y(x) = A x^2 + B x + C through the three points
        A = y0 / (d01 * d02) - y1 / (d01 * d12) + y2 / (d02 * d12)
        B = (
            -y0 * (x1 + x2) / (d01 * d02)
            + y1 * (x0 + x2) / (d01 * d12)
            - y2 * (x0 + x1) / (d02 * d12)
        )
        C = y0 * x1 * x2 / (d01 * d02) - y1 * x0 * x2 / (d01 * d12) + y2 * x0 * x1 / (d02 * d12)
        if abs(A) < 1e-300:
            cands = [-C / B] if B != 0 else []
        else:
            disc = B * B - 4 * A * C
            if disc < 0:
                continue
            q = -0.5 * (B + math.copysign(math.sqrt(disc), B))
            cands = [q / A] + ([C / q] if q != 0 else [])
        inside = [c + lin for c in cands if lo <= c + lin <= hi]
        if inside:
            return min(inside, key=lambda c: abs(c - lin))
    return lin


def _solve(
    m: BallModel,
    table: TableSpec,
    pr: _Problems,
    stroke: Stroke,
    margins: bool,
    final: bool = False,
) -> list[_Solved]:
    """Solve every problem of a batch: the root reading and, if asked, the scoring window.

    With ``final`` the root's bracket rows of the refining pass run to their landings and are
    recorded, so the aim's landing, contacts and path can be read off them (no extra pass).
    """
    P = pr.start.shape[0]
    unit = table.rail_unit(pr.rail)
    span = 8.0 if pr.rail in ("left", "right") else 4.0
    offs = np.arange(-0.25, span + 0.25 + 1e-9, GRID_STEP) * unit
    GRID = offs.size
    grid = np.broadcast_to(offs, (P, GRID)).copy()
    pi = np.repeat(np.arange(P), GRID)
    res, _ = _run(m, table, pr, pi, grid.ravel(), stroke, lean=True)
    mv = res.miss.reshape(P, GRID)
    sc = res.scores.reshape(P, GRID)
    # brackets: [root lo, root hi, m lo, m hi] and the window ends [bad, good] x 2
    root: list[list[float] | None] = []
    fine: list[tuple[np.ndarray, np.ndarray, int] | None] = []
    edges: list[list[list[float] | None]] = []
    cap = MARGIN_CAP * unit
    for p in range(P):
        j = _root_pair(grid[p], mv[p], pr.centre[p])
        if j is None:
            root.append(None)
            fine.append(None)
            edges.append([None, None])
            continue
        root.append([grid[p, j], grid[p, j + 1], mv[p, j], mv[p, j + 1]])
        fine.append((grid[p], mv[p], j))
        est = _interp(grid[p, j], grid[p, j + 1], mv[p, j], mv[p, j + 1])
        e: list[list[float] | None] = []
        # lower end: nearest non-scoring grid point at or below j
        k = j
        while k >= 0 and sc[p, k]:
            k -= 1
        if k < 0 or est - grid[p, k] > cap:
            e.append(None)
        else:
            good = grid[p, k + 1] if k + 1 <= j else est
            e.append([grid[p, k], good])
        k = j + 1
        while k < GRID and sc[p, k]:
            k += 1
        if k >= GRID or grid[p, k] - est > cap:
            e.append(None)
        else:
            good = grid[p, k - 1] if k - 1 >= j + 1 else est
            e.append([grid[p, k], good])
        edges.append(e)
    frac = np.arange(1, REFINE + 1) / (REFINE + 1)
    frac_edge = np.arange(1, REFINE_EDGE + 1) / (REFINE_EDGE + 1)
    last_res: SimResult | None = None
    bracket_rows: dict[int, tuple[np.ndarray, np.ndarray]] = {}
    for _ in range(PASSES):
        vals: list[np.ndarray] = []
        tags: list[tuple[int, int]] = []  # (problem, 0 root / 1 lower / 2 upper)
        for p in range(P):
            rb = root[p]
            if rb is None:
                continue
            vals.append(rb[0] + (rb[1] - rb[0]) * frac)
            tags.append((p, 0))
            if margins:
                for side in (1, 2):
                    eb = edges[p][side - 1]
                    if eb is not None:
                        vals.append(eb[0] + (eb[1] - eb[0]) * frac_edge)
                        tags.append((p, side))
        if not tags:
            break
        s_all = np.concatenate(vals)
        pi = np.concatenate(
            [np.full(v.size, t[0], dtype=np.int64) for v, t in zip(vals, tags, strict=True)]
        )
        lean = np.concatenate(
            [np.full(v.size, not (final and t[1] == 0)) for v, t in zip(vals, tags, strict=True)]
        )
        res, _ = _run(m, table, pr, pi, s_all, stroke, record=final, lean=lean)
        last_res = res
        at = 0
        for row, (p, side) in enumerate(tags):
            k = vals[row].size
            if side == 0:
                bracket_rows[p] = (np.arange(at, at + k), vals[row])
            mvr, scr = res.miss[at : at + k], res.scores[at : at + k]
            at += k
            if side == 0:
                rb = root[p]
                assert rb is not None
                ss = np.concatenate(([rb[0]], vals[row], [rb[1]]))
                mm = np.concatenate(([rb[2]], mvr, [rb[3]]))
                j = _root_pair(ss, mm, 0.5 * (rb[0] + rb[1]))
                if j is None:  # lost the sign change (a gap in valid paths): keep the old one
                    continue
                root[p] = [ss[j], ss[j + 1], mm[j], mm[j + 1]]
                fine[p] = (ss, mm, j)
            else:
                eb = edges[p][side - 1]
                assert eb is not None
                ss = np.concatenate(([eb[0]], vals[row], [eb[1]]))
                ok = np.concatenate(([False], scr, [True]))
                # first scoring point counting from the bad end
                first = int(np.argmax(ok))
                edges[p][side - 1] = [ss[first - 1], ss[first]]
    out: list[_Solved] = []
    for p in range(P):
        rb = root[p]
        if rb is None:
            out.append(_Solved(None, None, None, "no sign change", grid[p], sc[p]))
            continue
        fp = fine[p]
        assert fp is not None
        s_root = _interp3(*fp)
        lo = hi = None
        if margins:
            e_lo, e_hi = edges[p]
            lo = s_root - cap if e_lo is None else e_lo[1]
            hi = s_root + cap if e_hi is None else e_hi[1]
        br = bracket_rows.get(p)
        out.append(
            _Solved(
                s_root,
                lo,
                hi,
                "",
                grid[p],
                sc[p],
                last_res if final else None,
                br[0] if br else None,
                br[1] if br else None,
            )
        )
    return out


def _window(
    m: BallModel, table: TableSpec, pr: _Problems, stroke: Stroke, sol: _Solved, near: float
) -> tuple[float, float] | None:
    """The scoring window of grid readings nearest ``near``, its ends refined (two passes).

    Used when the line through the target point itself does not score (a pocket met at an
    angle, where the clean window is off the mouth's middle).
    """
    assert sol.grid is not None and sol.scores is not None
    g, sc = sol.grid, sol.scores
    if not sc.any():
        return None
    idx = np.flatnonzero(sc)
    j = int(idx[np.argmin(np.abs(g[idx] - near))])
    lo = j
    while lo - 1 >= 0 and sc[lo - 1]:
        lo -= 1
    hi = j
    while hi + 1 < g.size and sc[hi + 1]:
        hi += 1
    ends = [
        [g[lo - 1] if lo > 0 else g[lo], g[lo]],
        [g[hi + 1] if hi + 1 < g.size else g[hi], g[hi]],
    ]
    frac = np.arange(1, REFINE + 1) / (REFINE + 1)
    for _ in range(PASSES + 1):
        vals = np.concatenate([e[0] + (e[1] - e[0]) * frac for e in ends])
        res, _ = _run(m, table, pr, np.zeros(vals.size, dtype=np.int64), vals, stroke, lean=True)
        scr = res.scores.reshape(2, REFINE)
        for k in range(2):
            ss = np.concatenate(([ends[k][0]], vals[k * REFINE : (k + 1) * REFINE], [ends[k][1]]))
            ok = np.concatenate(([False], scr[k], [True]))
            first = int(np.argmax(ok))
            ends[k] = [ss[first - 1], ss[first]]
    return float(ends[0][1]), float(ends[1][1])


# ----- traces --------------------------------------------------------------------------------


def _rails_text(rails: Sequence[str]) -> str:
    return shots._rails_text(rails)


def _extend(table: TableSpec, p: np.ndarray, d: np.ndarray) -> RailPoint | None:
    """The wall crossing of the straight line from p along d (landing fallback)."""
    R = table.ball_radius
    best, rail, along = math.inf, None, 0.0
    for code, name in enumerate(RAILS):
        ax = 0 if code < 2 else 1
        wall = R if code % 2 == 0 else (table.length if ax == 0 else table.width) - R
        if abs(d[ax]) < 1e-15:
            continue
        t = (wall - p[ax]) / d[ax]
        if 0 <= t < best:
            best, rail, along = t, name, p[1 - ax] + t * d[1 - ax]
    if rail is None:
        return None
    return RailPoint(rail, float(along))


def _trace_of(
    m: BallModel,
    table: TableSpec,
    pr: _Problems,
    res: SimResult,
    ln: _Launch | None,
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
    rails_t = _rails_text(rails_hit)
    if res.ball[row] >= 0:
        if res.ball[row] == 0 and scores:
            outcome = "contacts the target ball"
        elif res.ball[row] == 0:
            outcome = f"meets the target ball after {rails_t}, not after {_rails_text(fam.rails)}"
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
            landing = _extend(table, endp, res.last_dir[row])
    path = tuple(sample_path(m, res, row)) if res.segments else ()
    return Trace(path, rails_hit, landing, scores, outcome, contacts), outcome


def _lagrange(xs: np.ndarray, ys: np.ndarray, x: float) -> float:
    """The value at x of the polynomial through the points (xs, ys)."""
    total = 0.0
    for i in range(xs.size):
        term = float(ys[i])
        for j in range(xs.size):
            if j != i:
                term *= (x - xs[j]) / (xs[i] - xs[j])
        total += term
    return float(total)


def _read_off(
    m: BallModel, table: TableSpec, pr: _Problems, sol: _Solved
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
    tr, _ = _trace_of(m, table, pr, res, None, best)
    contacts = tuple(
        RailPoint(c.rail, _lagrange(xs, res.hit_at[rr, k], sol.reading))
        for k, c in enumerate(tr.contacts[:nf])
    )
    landing = RailPoint(
        RAILS[int(res.landing_rail[best])],
        _lagrange(xs, res.landing_at[rr], sol.reading),
    )
    tr = Trace(tr.path, tr.rails_hit, landing, True, tr.outcome, contacts + tr.contacts[nf:])
    return tr, landing


def _model(table: TableSpec, cushion: CushionModel) -> BallModel:
    return model_of(table, cushion)


def _check_stroke(table: TableSpec, stroke: Stroke) -> None:
    try:
        check_offset(table, stroke.english, stroke.follow)
    except StrokeError as exc:
        raise ShotError(str(exc)) from None
    if not (0.0 < stroke.speed <= 13.0):
        raise ShotError(f"speed {stroke.speed:g} m/s is outside 0.1 to 13 m/s")


def _bank_variable(
    m: BallModel, table: TableSpec, pr: _Problems, reading: float, stroke: Stroke
) -> float:
    """The line-of-centres reading whose thrown launch line has the given reading."""
    s = reading
    pi = np.zeros(1, dtype=np.int64)
    for _ in range(6):
        ln = _launch(m, table, pr, pi, np.array([s]), stroke)
        got = float(ln.reading[0])
        if not (ln.ok[0] and math.isfinite(got)):
            return reading
        if abs(got - reading) < 1e-9:
            break
        s += reading - got
    return s


# ----- public entry points -------------------------------------------------------------------


def predict_physical(
    table: TableSpec,
    setup: Setup,
    stroke: Stroke,
    reading: float,
    cushion: CushionModel = "stepped",
) -> Trace:
    """Where a reading (metres along the first rail's line of sights) takes the travelling ball
    under the physical model: the same meaning as shots.trace_ideal."""
    _check_stroke(table, stroke)
    m = _model(table, cushion)
    pr = _problems(table, [setup])
    s = _bank_variable(m, table, pr, reading, stroke) if pr.bank else reading
    res, ln = _run(m, table, pr, np.zeros(1, dtype=np.int64), np.array([s]), stroke, record=True)
    tr, _ = _trace_of(m, table, pr, res, ln)
    return tr


_SHORT, _POCKET, _BALL, _TARGET_FIRST, _OFF, _PASSES = range(6)
_WHY = {
    _SHORT: "the lines that would reach the target stop short",
    _POCKET: "the lines that would reach the target drop in a pocket or rattle in its jaws",
    _BALL: "another ball stands in the way of the lines that would reach the target",
    _TARGET_FIRST: "the target ball stands in the way of the rails",
    _OFF: "the lines that would reach the target leave the order of the rails",
    _PASSES: "no line at this stroke and spin reaches the target",
}


def _why_nothing_scores(m: BallModel, table: TableSpec, pr: _Problems, stroke: Stroke) -> ShotError:
    """Why no reading along the first rail scores, in a player's words, with the nearest
    reading that comes close: every reading of the first pass is run to its end and sorted
    into what stopped it; the reason given is what stops the readings next to the nearest one
    on the side where it would come closer (StopsShort when that is pace)."""
    fam = pr.setups[0].family
    nf = len(fam.rails)
    unit = table.rail_unit(pr.rail)
    span = 8.0 if pr.rail in ("left", "right") else 4.0
    grid = np.arange(-0.25, span + 0.25 + 1e-9, GRID_STEP) * unit
    res, ln = _run(m, table, pr, np.zeros(grid.size, dtype=np.int64), grid, stroke)
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


def solve_physical(
    table: TableSpec, setup: Setup, stroke: Stroke, cushion: CushionModel = "stepped"
) -> Aim:
    """The reading whose simulated path touches the family's rails in order and reaches the
    target, with the window of readings that still score (margin_minus/plus, metres).

    Raises ShotError with a plain reason when no reading near the ideal one scores.
    """
    _check_stroke(table, stroke)
    m = _model(table, cushion)
    pr = _problems(table, [setup])
    sol = _solve(m, table, pr, stroke, margins=True, final=True)[0]
    rail = pr.rail
    pi1 = np.zeros(1, dtype=np.int64)
    if sol.reading is None and (sol.scores is None or not sol.scores.any()):
        raise _why_nothing_scores(m, table, pr, stroke)
    fast = _read_off(m, table, pr, sol) if sol.reading is not None else None
    edge_readings: np.ndarray | None = None
    if sol.reading is None:
        # readings score but the miss never changes sign (a target ball close to a rail hides
        # one side): aim at the middle of the scoring window nearest the mirror reading
        tr = Trace((), (), None, False, "no sign change", ())
        landing_fast = None
        ln = _launch(m, table, pr, pi1, pr.centre[:1], stroke)
    elif fast is not None:
        tr, landing_fast = fast
        # the root and the two window ends in one launch (rows are independent)
        assert sol.lo is not None and sol.hi is not None
        ln = _launch(
            m,
            table,
            pr,
            np.zeros(3, dtype=np.int64),
            np.array([sol.reading, sol.lo, sol.hi]),
            stroke,
        )
        edge_readings = ln.reading[1:]
    else:
        res, ln = _run(m, table, pr, pi1, np.array([sol.reading]), stroke, record=True)
        tr, why = _trace_of(m, table, pr, res, ln)
        landing_fast = None
    if not tr.scores:
        win = _window(
            m, table, pr, stroke, sol, float(pr.centre[0]) if sol.reading is None else sol.reading
        )
        if win is None:
            err = StopsShort if "stops" in tr.outcome else ShotError
            raise err(f"no clean path under the physical model: the best line {tr.outcome}")
        mid = 0.5 * (win[0] + win[1])
        sol = _Solved(mid, win[0], win[1], "window")
        res, ln = _run(m, table, pr, pi1, np.array([mid]), stroke, record=True)
        tr, why = _trace_of(m, table, pr, res, ln)
        landing_fast = None
        if not tr.scores:
            err = StopsShort if "stops" in why else ShotError
            raise err(f"no clean path under the physical model: the best line {why}")
    reading = float(ln.reading[0])
    assert sol.lo is not None and sol.hi is not None
    if pr.bank and edge_readings is None:
        lohi = np.array([sol.lo, sol.hi])
        edge_readings = _launch(m, table, pr, np.zeros(2, dtype=np.int64), lohi, stroke).reading
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
            chk, _ = _run(m, table, pr, pi1, np.array([sol.reading]), stroke)
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


def convergence_physical(
    table: TableSpec,
    setup: Setup,
    starts: list[Point],
    stroke: Stroke,
    cushion: CushionModel = "stepped",
) -> Convergence:
    """The least-squares point nearest the physical aim lines from several start positions.

    All starts are solved in one batch (no margins). Starts without a clean path are dropped.
    For banks the cue ball is put behind each object position (shots._cue_behind, as the ideal
    convergence does). The spread is the RMS distance of the lines from the point: not zero
    under this model.
    """
    _check_stroke(table, stroke)
    m = _model(table, cushion)
    trials: list[Setup] = []
    for s in starts:
        t = shots._with_start(setup, s)
        if setup.family.travel == "object":
            t = shots._cue_behind(table, t)
        try:
            shots.make_setup(table, t.family, t.cue, t.object, t.pocket, t.target_ball)
        except ValueError:
            continue
        trials.append(t)
    if len(trials) < 2:
        raise ShotError("too few start positions with a clean path to find a convergence point")
    pr = _problems(table, trials)
    sols = _solve(m, table, pr, stroke, margins=False)
    keep = [p for p, sol in enumerate(sols) if sol.reading is not None]
    if len(keep) < 2:
        raise ShotError("too few start positions with a clean path to find a convergence point")
    pi = np.array(keep, dtype=np.int64)
    sv = np.array([sols[p].reading for p in keep], dtype=float)
    res, ln = _run(m, table, pr, pi, sv, stroke)
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


# ----- a public seam for logged shots in batches (calibration) -------------------------------

ShotBatch = _Problems
"""The per-setup arrays of many setups of one family (``shot_batch``)."""


@dataclass(frozen=True, slots=True)
class _Strokes:
    """One speed, english and follow per row (the launch takes arrays as well as numbers)."""

    speed: np.ndarray
    english: np.ndarray
    follow: np.ndarray


def shot_batch(table: TableSpec, setups: Sequence[Setup], balls: bool = True) -> ShotBatch:
    """Many setups of one family as arrays, for ``run_shots``. The arrays hold geometry only,
    so a batch serves every cloth and cushion value of a table of the same size. With
    ``balls`` False the still balls are taken off the table (the path, the landing and the
    closest approach of the target point are then those of the travelling ball alone)."""
    pr = _problems(table, setups)
    if not balls:
        pr = _Problems(
            pr.setups,
            pr.rail,
            pr.start,
            pr.cue,
            pr.target,
            np.full_like(pr.balls, np.nan),
            pr.ball_from,
            pr.pocket,
            pr.centre,
            pr.bank,
        )
    return pr


def run_shots(
    table: TableSpec,
    batch: ShotBatch,
    readings: np.ndarray,
    speed: np.ndarray,
    english: np.ndarray,
    follow: np.ndarray,
    cushion: CushionModel = "stepped",
) -> tuple[SimResult, np.ndarray]:
    """Every row of a batch struck at its reading (metres along the first rail's sights, the
    reported reading: for a bank, the object's thrown launch line, turned back into the line
    of centres as ``predict_physical`` does) with its own speed and spin. Returns the
    simulation and whether each row was launched (a bank whose cue ball stops before the
    object ball, or cannot send it along the line, is not)."""
    m = _model(table, cushion)
    n = len(batch.setups)
    pi = np.arange(n, dtype=np.int64)
    reading = np.asarray(readings, dtype=float)
    stroke = _Strokes(
        np.asarray(speed, dtype=float),
        np.asarray(english, dtype=float),
        np.asarray(follow, dtype=float),
    )
    sv = reading.copy()
    if batch.bank:
        for _ in range(6):
            ln = _launch(m, table, batch, pi, sv, stroke)  # type: ignore[arg-type]
            good = ln.ok & np.isfinite(ln.reading)
            step = np.where(good, reading - ln.reading, 0.0)
            sv = sv + step
            if float(np.max(np.abs(step), initial=0.0)) < 1e-9:
                break
    res, ln = _run(m, table, batch, pi, sv, stroke)  # type: ignore[arg-type]
    return res, ln.ok


def wall_crossing(table: TableSpec, p: np.ndarray, d: np.ndarray) -> RailPoint | None:
    """Where the straight line from ``p`` along ``d`` first crosses a wall of the box one
    radius inside the noses (how a ball at rest has its last line of travel read off)."""
    return _extend(table, p, d)
