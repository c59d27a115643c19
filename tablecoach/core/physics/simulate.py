"""Batch event simulation of one travelling ball among still balls, rails and pockets.

Leckie and Greenspan (2006) style: each ball moves in closed form (motion.py) from event to
event, and every event time is a polynomial root (roots.py): end of a phase (closed form),
cushion contact (a quadratic per wall), contact with a still ball (a quartic), pocket entry (a
wall crossing inside a pocket mouth). No time step is taken between events. All candidate
shots of a batch advance together: one loop pass moves every unfinished row to its own next
event, so a batch of hundreds of shots costs a few dozen numpy passes.

Conventions follow the ideal trace (aim/ideal.py): the ball centre moves in the box one radius
inside the cushion noses; a crossing of that box inside a pocket mouth is a pocket entry
(clean when the line of travel clears both jaw points by a radius); the first ball the row
meets ends its path, after which it runs on (balls ignored) to find its landing, the first
wall crossing after the family's rails.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ..table import OUTWARD_NORMALS, RAILS, TableSpec
from .approach import Stretch, closest_of, first_ball
from .cushion import rail_impact
from .motion import (
    ROLLING,
    SLIDING,
    evolve,
    evolve_sliding,
    phase_end,
    prepare_moving,
    prepare_rolled,
)
from .params import BallModel, check_rows, per_row, row_model, rows_of
from .roots import quadratic_root_quiet
from .table_arrays import on_cushion, table_arrays

_NORMALS = np.array(OUTWARD_NORMALS)
"""Outward normals of head, foot, left, right (table.RAILS order), as an array."""


@dataclass(slots=True)
class Segment:
    """One event-to-event stretch of every row (kept only when recording paths)."""

    r: np.ndarray
    v: np.ndarray
    w: np.ndarray
    phase: np.ndarray
    dt: np.ndarray
    live: np.ndarray


@dataclass(slots=True)
class SimResult:
    """What each row did (arrays over rows; -1 / nan where a thing did not happen).

    ``walls`` crossings made (cushions and the pocket mouth), ``hits`` (n, maxw) the rail codes
    (RAILS order) of each crossing and ``hit_at`` (n, maxw) the along-rail coordinate;
    ``ball``/``ball_walls``/``ball_pos`` the first still ball met, after how many crossings,
    and where the moving centre was; ``pocket``/``pocket_walls``/``pocket_clean`` the pocket
    entered (POCKETS index); ``landing_rail``/``landing_at`` the crossing after the family's
    rails; ``stop_pos`` where a row came to rest; ``miss`` the signed closest approach of the
    target point after the family's rails (left of travel positive); ``order_ok`` the family's
    rails were the first crossings, in order, all on cushion; ``scores`` the shot made it;
    ``end_speed`` the row's speed where it ended (at its landing crossing, a pocket mouth, a
    ball in lean mode, or 0 at rest).
    """

    walls: np.ndarray
    hits: np.ndarray
    hit_at: np.ndarray
    ball: np.ndarray
    ball_walls: np.ndarray
    ball_pos: np.ndarray
    pocket: np.ndarray
    pocket_walls: np.ndarray
    pocket_clean: np.ndarray
    pocket_pos: np.ndarray
    landing_rail: np.ndarray
    landing_at: np.ndarray
    stop_pos: np.ndarray
    last_dir: np.ndarray
    miss: np.ndarray
    order_ok: np.ndarray
    scores: np.ndarray
    events: int
    ball_event: np.ndarray = field(default_factory=lambda: np.zeros(0, dtype=np.int64))
    segments: list[Segment] = field(default_factory=list)
    rail_vn: np.ndarray = field(default_factory=lambda: np.zeros(0))
    end_speed: np.ndarray = field(default_factory=lambda: np.zeros(0))


def simulate(
    m: BallModel,
    table: TableSpec,
    rails: tuple[str, ...],
    r0: np.ndarray,
    v0: np.ndarray,
    w0: np.ndarray,
    balls: np.ndarray,
    ball_from: np.ndarray,
    target_point: np.ndarray,
    target_pocket: np.ndarray,
    record: bool = False,
    max_events: int = 200,
    lean: bool | np.ndarray = False,
) -> SimResult:
    """Run every row to its landing, a pocket, or rest.

    ``r0, v0, w0`` (n, 2), (n, 2), (n, 3) the travelling ball's start; ``balls`` (n, k, 2) still
    balls (nan rows absent; ball 0 is the target ball when the target is a ball); ``ball_from``
    (n, k) how many crossings the row must have made before a ball counts (the ideal trace
    ignores the cue ball on a bank until the object has left its first rail);
    ``target_point`` (n, 2) the point whose closest approach is ``miss``; ``target_pocket``
    (n,) POCKETS index or -1. With ``lean`` (aim solving; a flag or one per row) a row ends at
    its first ball or as soon as it leaves the family's rail order: its miss and score are
    known by then, its landing may be missing. ``events`` counts loop passes: each moves every
    row to its next wall or ball, through at most one phase end on the way, so the rows of a
    pass meet their cushions in one impact call per rail. The model's cloth and cushion figures
    may be per-row arrays of shape (n,) (params.BallModel): each row then runs as it would
    alone under its own figures.
    """
    n = r0.shape[0]
    rows_m = per_row(m)
    if rows_m:
        check_rows(m, n)
    mi = m
    nf = len(rails)
    maxw = nf + 1
    rail_codes = np.array([RAILS.index(x) for x in rails], dtype=np.int64)
    R = m.radius
    (ja, jb, paim, member), seg_tab = table_arrays(table)
    r = np.array(r0, dtype=float)
    v = np.array(v0, dtype=float)
    w = np.array(w0, dtype=float)
    k = balls.shape[1]
    walls = np.zeros(n, dtype=np.int64)
    hits = np.full((n, maxw), -1, dtype=np.int64)
    hit_at = np.full((n, maxw), np.nan)
    ball = np.full(n, -1, dtype=np.int64)
    ball_walls = np.full(n, -1, dtype=np.int64)
    ball_pos = np.full((n, 2), np.nan)
    ball_event = np.full(n, -1, dtype=np.int64)
    pocket = np.full(n, -1, dtype=np.int64)
    pocket_walls = np.full(n, -1, dtype=np.int64)
    pocket_clean = np.zeros(n, dtype=bool)
    pocket_pos = np.full((n, 2), np.nan)
    landing_rail = np.full(n, -1, dtype=np.int64)
    landing_at = np.full(n, np.nan)
    stop_pos = np.full((n, 2), np.nan)
    last_dir = np.zeros((n, 2))
    best = np.full(n, np.inf)
    rail_vn = np.zeros(n)
    miss = np.full(n, np.nan)
    at_rest = np.zeros(n, dtype=bool)
    live = np.ones(n, dtype=bool)
    lean_rows = np.broadcast_to(np.asarray(lean, dtype=bool), (n,))
    any_lean = bool(np.count_nonzero(lean_rows))
    segments: list[Segment] = []
    sgn = np.array([1.0, -1.0, 1.0, -1.0])
    ax4 = np.array([0, 0, 1, 1])
    wall4 = np.array(table.ball_box())  # the walls in RAILS order
    bvalid = ~np.isnan(balls[:, :, 0])
    events = 0
    sp0 = np.hypot(v[:, 0], v[:, 1])
    last_dir[sp0 > 0] = v[sp0 > 0] / sp0[sp0 > 0, None]
    ar = np.arange(2 * n)
    two_r = 2.0 * R
    # one np.errstate for the whole loop (the event roots divide by zero where a row has no
    # root); inside it the quiet forms of the root functions
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        while np.count_nonzero(live) and events < max_events:
            events += 1
            idx = np.flatnonzero(live)
            ri, vi, wi = r[idx], v[idx], w[idx]
            if rows_m:
                mi = rows_of(m, idx)
            sliding, moving, a, t_end = prepare_moving(mi, vi, wi)
            # balls at rest (or only spinning in place) leave the simulation
            if np.count_nonzero(moving) < idx.size:
                rest = ~moving
                stop_pos[idx[rest]] = ri[rest]
                live[idx[rest]] = False
                idx, ri, vi, wi = idx[moving], ri[moving], vi[moving], wi[moving]
                sliding, a, t_end = sliding[moving], a[moving], t_end[moving]
                if idx.size == 0:
                    break
                if rows_m:
                    mi = rows_of(m, idx)
            nr = idx.size
            # the second stretch: where the current phase ends, settled onto the next phase
            # (a slide ends rolling, a roll at rest), and that phase; events are sought in both
            # stretches at once (rows stacked), so a pass takes one loop pass per wall or ball
            # rather than two (each row still goes from event to event as before)
            fin = np.isfinite(t_end)
            two = bool(np.count_nonzero(sliding & fin))  # else every roll ends at rest
            if two:
                re, ve, ve2, we2 = phase_end(mi, ri, vi, wi, sliding, np.where(fin, t_end, 0.0), a)
                sp = np.hypot(ve[:, 0], ve[:, 1])
                mv_e = sp > 1e-12
                ve_dir = ve / np.where(mv_e, sp, 1.0)[:, None]
                mov2, a2, te2 = prepare_rolled(mi, ve2)
                sl2 = np.zeros(nr, dtype=bool)
                te2 = np.where(mov2 & fin, te2, 0.0)  # none: a zero-length stretch
                rs = np.concatenate((ri, re))
                vs = np.concatenate((vi, ve2))
                ws_ = np.concatenate((wi, we2))
                slides = np.concatenate((sliding, sl2))
                acc = np.concatenate((a, a2))
                tends = np.concatenate((t_end, te2))
                nb = 2 * nr
            else:
                rs, vs, acc, tends, nb = ri, vi, a, t_end, nr
            both = ar[:nb]
            # cushion (box) crossings: one quadratic per wall
            c2 = 0.5 * acc[:, ax4] * sgn
            c1 = vs[:, ax4] * sgn
            c0 = (rs[:, ax4] - wall4) * sgn
            t_wall = quadratic_root_quiet(c2, c1, c0, tends[:, None])
            wall_code = np.argmin(t_wall, axis=1)
            t_w = t_wall[both, wall_code]  # the first wall's time
            tw_end = np.minimum(tends, t_w)
            wl = walls[idx]
            wl2 = np.concatenate((wl, wl)) if two else wl
            # still balls: one quartic per ball
            t_b = np.full(nb, np.inf)
            b_id = np.full(nb, -1, dtype=np.int64)
            if k:
                idx2 = np.concatenate((idx, idx)) if two else idx
                act = bvalid[idx2] & (wl2[:, None] >= ball_from[idx2]) & (ball[idx2, None] < 0)
                if np.count_nonzero(act):
                    t_b, b_id = first_ball(balls[idx2], act, rs, vs, acc, tw_end, two_r)
            dt = np.minimum(tw_end, t_b)
            dt = np.where(np.isfinite(dt), dt, 0.0)
            # each stretch's event (dt is finite, so an infinite time is never the event)
            is_ball = (t_b <= dt) & (t_b < t_w)
            is_wall = (t_w <= dt) & ~is_ball
            # rows whose first stretch ends in its phase end go on into the second, or rest
            end1 = ~(is_ball[:nr] | is_wall[:nr]) & fin
            groups: list[Stretch] = []  # stretches whose closest approach is to be taken
            if two and np.count_nonzero(end1):
                use2 = end1 & mov2
                # the first stretch run to its end: direction, closest approach, path
                last_dir[idx[end1 & mv_e]] = ve_dir[end1 & mv_e]
                aft = end1 & (wl == nf)
                if np.count_nonzero(aft):  # its closest approach, taken with the next stretch's
                    ia = idx[aft]
                    groups.append(
                        (ia, ri[aft], vi[aft], a[aft], t_end[aft], target_point[ia],
                         ~sliding[aft], np.zeros(ia.size, dtype=bool))
                    )  # fmt: skip
                if record:
                    ph = np.where(sliding[end1], SLIDING, ROLLING).astype(np.int8)
                    segments.append(
                        Segment(ri[end1], vi[end1], wi[end1], ph, t_end[end1], idx[end1])
                    )
                rest2 = end1 & ~mov2
                if np.count_nonzero(rest2):
                    stop_pos[idx[rest2]] = re[rest2]
                    live[idx[rest2]] = False
                    r[idx[rest2]], v[idx[rest2]], w[idx[rest2]] = re[rest2], ve2[rest2], we2[rest2]
                pick = (both[:nr] + nr * use2)[~rest2]
                idx = idx[~rest2]
                ri, vi, wi, sliding, a = rs[pick], vs[pick], ws_[pick], slides[pick], acc[pick]
                t_end, t_w, wall_code, t_b = tends[pick], t_w[pick], wall_code[pick], t_b[pick]
                b_id, dt, is_ball, is_wall = b_id[pick], dt[pick], is_ball[pick], is_wall[pick]
                wl = wl[~rest2]
                if idx.size == 0:
                    closest_of(groups, best, miss, at_rest)
                    continue
                if rows_m:
                    mi = rows_of(m, idx)
            else:
                t_w, wall_code, t_b = t_w[:nr], wall_code[:nr], t_b[:nr]
                b_id, dt, is_ball, is_wall = b_id[:nr], dt[:nr], is_ball[:nr], is_wall[:nr]
            if record:
                ph = np.where(sliding, SLIDING, ROLLING).astype(np.int8)
                segments.append(Segment(ri.copy(), vi.copy(), wi.copy(), ph, dt.copy(), idx))
            r2, v2, w2 = evolve_sliding(mi, ri, vi, wi, sliding, dt, a)
            sp = np.hypot(v2[:, 0], v2[:, 1])
            mv = sp > 1e-12
            last_dir[idx[mv]] = v2[mv] / sp[mv, None]
            is_end = ~(is_ball | is_wall)
            # closest approach of the target point while after the family's rails
            after = wl == nf  # live rows have not entered a pocket
            if np.count_nonzero(after):
                if any_lean:  # a lean row stops at the ball: measure on to its next event
                    lb = is_ball & lean_rows[idx]
                    tc = np.where(lb, np.minimum(t_end, t_w), dt)
                    to_wall = is_wall | (lb & (t_w < t_end))
                else:
                    tc, to_wall = dt, is_wall
                to_rest = ~sliding & (t_end <= tc) & ~to_wall
                if np.count_nonzero(after) < after.size:
                    ia = idx[after]
                    groups.append(
                        (ia, ri[after], vi[after], a[after], tc[after], target_point[ia],
                         to_rest[after], to_wall[after])
                    )  # fmt: skip
                else:
                    groups.append((idx, ri, vi, a, tc, target_point[idx], to_rest, to_wall))
            closest_of(groups, best, miss, at_rest)
            # ball contact: note it, and run on through the ball (balls ignored from now)
            if np.count_nonzero(is_ball):
                bi = idx[is_ball]
                ball[bi] = b_id[is_ball]
                ball_walls[bi] = walls[bi]
                ball_pos[bi] = r2[is_ball]
                ball_event[bi] = len(segments) - 1 if record else events - 1
                if any_lean:
                    live[bi[lean_rows[bi]]] = False
            # phase ends
            if np.count_nonzero(is_end):
                # exactly onto the next phase (motion.settle): a slide ends rolling, a roll at rest
                sl = is_end & sliding
                w2[sl, 0] = -v2[sl, 1] / R
                w2[sl, 1] = v2[sl, 0] / R
                ro = is_end & ~sliding
                v2[ro] = 0.0
                w2[ro, :2] = 0.0
                if np.count_nonzero(ro):  # at rest: it leaves now (as the next pass would)
                    stop_pos[idx[ro]] = r2[ro]
                    live[idx[ro]] = False
            # wall crossings
            if np.count_nonzero(is_wall):
                wi_rows = np.flatnonzero(is_wall)
                rows = idx[wi_rows]
                code = wall_code[wi_rows]
                ax = code >> 1  # 0 for head and foot (x), 1 for left and right (y)
                r2[wi_rows, ax] = wall4[code]  # exactly on the wall
                along = r2[wi_rows, 1 - ax]
                cnt = walls[rows]
                slot = np.minimum(cnt, maxw - 1)
                hits[rows, slot] = code
                hit_at[rows, slot] = along
                walls[rows] = cnt + 1
                cush = on_cushion(seg_tab, code, along)
                keep = np.ones(rows.size, dtype=bool)
                if any_lean and nf:  # off the family's order: nothing more to learn from the row
                    off = (cnt < nf) & (code != rail_codes[np.minimum(cnt, nf - 1)])
                    off &= lean_rows[rows]
                    live[rows[off]] = False
                    keep = ~off
                land = (cnt + 1 == maxw) & (landing_rail[rows] < 0)
                landing_rail[rows[land]] = code[land]
                landing_at[rows[land]] = along[land]
                # pocket entries
                pk = ~cush & keep
                if np.count_nonzero(pk):
                    pr = rows[pk]
                    pc = code[pk]
                    al = along[pk]
                    pos = r2[wi_rows[pk]]
                    dist = np.abs(
                        np.where(pc[:, None] < 2, paim[None, :, 1], paim[None, :, 0]) - al[:, None]
                    )
                    dist = np.where(member[pc], dist, np.inf)
                    which = np.argmin(dist, axis=1)
                    d = v2[wi_rows[pk]]
                    d = d / np.maximum(np.hypot(d[:, 0], d[:, 1]), 1e-300)[:, None]
                    da = d[:, 0] * (ja[which, 1] - pos[:, 1]) - d[:, 1] * (ja[which, 0] - pos[:, 0])
                    db = d[:, 0] * (jb[which, 1] - pos[:, 1]) - d[:, 1] * (jb[which, 0] - pos[:, 0])
                    # the row crosses the box outward, so it is heading into the mouth
                    clean = (da * db < 0) & (np.minimum(np.abs(da), np.abs(db)) >= R - 1e-12)
                    pocket[pr] = which
                    pocket_walls[pr] = cnt[pk] + 1
                    pocket_clean[pr] = clean
                    pocket_pos[pr] = pos
                    nl = landing_rail[pr] < 0
                    landing_rail[pr[nl]] = pc[nl]
                    landing_at[pr[nl]] = al[nl]
                    live[pr] = False
                # cushion impacts for rows still going (the landing crossing ends a row)
                go = cush & ~land & keep
                live[rows[cush & land]] = False
                if np.count_nonzero(go):
                    gi = wi_rows[go]
                    nrm = _NORMALS[code[go]]
                    vin = v2[gi]
                    vn = vin[:, 0] * nrm[:, 0] + vin[:, 1] * nrm[:, 1]
                    rg = rows[go]
                    rail_vn[rg] = np.maximum(rail_vn[rg], vn)
                    nv, nw = rail_impact(rows_of(mi, gi) if rows_m else m, nrm, vin, w2[gi])
                    v2[gi], w2[gi] = nv, nw
            r[idx], v[idx], w[idx] = r2, v2, w2
    # order and scoring
    if nf:
        order_ok = (walls >= nf) & np.all(hits[:, :nf] == rail_codes[None, :], axis=1)
        on_c = np.ones(n, dtype=bool)
        on_c &= ~((pocket >= 0) & (pocket_walls <= nf))
        order_ok &= on_c
    else:
        order_ok = np.ones(n, dtype=bool)
    target_is_ball = ~np.isnan(balls[:, 0, 0]) if k else np.zeros(n, dtype=bool)
    sc_ball = target_is_ball & (ball == 0) & (ball_walls == nf) & order_ok
    sc_pocket = (
        (target_pocket >= 0)
        & (pocket == target_pocket)
        & (pocket_walls == nf + 1)
        & pocket_clean
        & order_ok
        & (ball < 0)
    )
    scores = sc_ball | sc_pocket
    # a row whose nearest approach is where it came to rest never passed the target: no miss
    miss = np.where(order_ok & ~(at_rest & (ball < 0)), miss, np.nan)
    return SimResult(
        walls,
        hits,
        hit_at,
        ball,
        ball_walls,
        ball_pos,
        pocket,
        pocket_walls,
        pocket_clean,
        pocket_pos,
        landing_rail,
        landing_at,
        stop_pos,
        last_dir,
        miss,
        order_ok,
        scores,
        events,
        ball_event,
        segments,
        rail_vn,
        np.hypot(v[:, 0], v[:, 1]),
    )


def sample_path(
    m: BallModel, res: SimResult, row: int, per_segment: int = 12, until_ball: bool = True
) -> list[tuple[float, float]]:
    """Points along one recorded row's curved path, from the start to where it ended.

    With ``until_ball`` the path stops where the row met its first ball (as the ideal trace).
    """
    m = row_model(m, row)
    steps = np.arange(per_segment + 1, dtype=float)
    last = int(res.ball_event[row]) if until_ball and res.ball[row] >= 0 else len(res.segments)
    rs, vs, ws, phs, tss = [], [], [], [], []
    for seg in res.segments[: last + 1]:
        hit = np.flatnonzero(seg.live == row)
        if hit.size == 0:
            continue
        j = int(hit[0])
        T = float(seg.dt[j])
        if T > 0:
            # np.linspace(0, T, per_segment + 1)'s arithmetic (i * step, the end exactly T)
            # without its wrapper's cost
            ts = steps * (T / per_segment)
            ts[-1] = T
        else:
            ts = np.zeros(1)
        rs.append(seg.r[j])
        vs.append(seg.v[j])
        ws.append(seg.w[j])
        phs.append(seg.phase[j])
        tss.append(ts)
    pts: list[tuple[float, float]] = []
    if tss:
        # every stretch of the row in one call (evolve works row by row)
        counts = [t.size for t in tss]
        rr, _, _ = evolve(
            m,
            np.repeat(np.array(rs), counts, axis=0),
            np.repeat(np.array(vs), counts, axis=0),
            np.repeat(np.array(ws), counts, axis=0),
            np.repeat(np.array(phs), counts),
            np.concatenate(tss),
        )
        pts = [(x, y) for x, y in rr.tolist()]
    # drop repeats
    out: list[tuple[float, float]] = []
    for p in pts:
        if not out or abs(out[-1][0] - p[0]) > 1e-12 or abs(out[-1][1] - p[1]) > 1e-12:
            out.append(p)
    return out
