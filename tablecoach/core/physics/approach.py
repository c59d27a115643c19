"""Where a moving ball meets a still one, and how close it passes a point (batch, closed form).

A ball's centre follows r + v t + a t^2/2 between events (motion.py). Contact with a still
ball is a polynomial root (Leckie and Greenspan 2006); the closest approach of a target point
gives the signed miss the aim solver brackets (docs/model.md, "Batch simulation").
"""

from __future__ import annotations

import numpy as np

from .motion import dot2
from .roots import first_quadratic_root, first_quartic_root, quadratic_root_quiet


def ball_times(
    p: np.ndarray,
    v: np.ndarray,
    a: np.ndarray,
    t_max: np.ndarray,
    reach: float,
    quiet: bool = False,
) -> np.ndarray:
    """First time the centre r + v t + a t^2/2 comes within ``reach`` of a ball (p = r - c).

    A path whose acceleration is along its velocity is straight: the contact is where the
    line meets the circle of radius ``reach``, and its time a quadratic root. A curved path
    (sliding with the slip across the velocity) is the quartic |p + v t + a t^2/2|^2 = reach^2
    (Leckie and Greenspan 2006), solved in roots.py. With ``quiet`` the caller has silenced
    numpy's division warnings (np.errstate) already.
    """
    vx, vy, ax, ay = v[:, 0], v[:, 1], a[:, 0], a[:, 1]
    spd = np.sqrt(vx * vx + vy * vy)
    amag = np.sqrt(ax * ax + ay * ay)
    cross = np.abs(vx * ay - vy * ax)
    straight = cross <= 1e-12 * np.maximum(spd * amag, 1e-300)
    every = bool(straight.all())
    out = np.full(p.shape[0], np.inf)
    if every or np.count_nonzero(straight):
        # on columns, the whole batch at once when every path is straight
        if every:
            px, py, sx, sy, hx, hy, sp, tm = p[:, 0], p[:, 1], vx, vy, ax, ay, spd, t_max
        else:
            ps, vs, as_ = p[straight], v[straight], a[straight]
            px, py, sx, sy = ps[:, 0], ps[:, 1], vs[:, 0], vs[:, 1]
            hx, hy, sp, tm = as_[:, 0], as_[:, 1], spd[straight], t_max[straight]
        sp_div = np.maximum(sp, 1e-300)
        ux, uy = sx / sp_div, sy / sp_div
        b = px * ux + py * uy
        cc = (px * px + py * py) - reach * reach
        disc = b * b - cc
        s_hit = -b - np.sqrt(np.maximum(disc, 0.0))
        ok = (disc >= 0) & (s_hit >= 0) & (sp > 0)
        # distance along the line s(t) = |v| t + (a.u) t^2 / 2 reaching s_hit
        root = quadratic_root_quiet if quiet else first_quadratic_root
        t = root(-0.5 * (hx * ux + hy * uy), -sp, np.where(ok, s_hit, -1.0), tm)
        if every:
            return np.where(ok, t, np.inf)
        out[straight] = np.where(ok, t, np.inf)
    curved = ~straight
    if np.count_nonzero(curved):
        pc, vc, ac = p[curved], v[curved], a[curved]
        coef = np.stack(
            (
                0.25 * dot2(ac, ac),
                dot2(vc, ac),
                dot2(vc, vc) + dot2(pc, ac),
                2.0 * dot2(pc, vc),
                dot2(pc, pc) - reach * reach,
            ),
            axis=1,
        )
        out[curved] = first_quartic_root(coef, t_max[curved])
    return out


def first_ball(
    bb: np.ndarray,
    act: np.ndarray,
    r: np.ndarray,
    v: np.ndarray,
    a: np.ndarray,
    t_max: np.ndarray,
    reach: float,
) -> tuple[np.ndarray, np.ndarray]:
    """The first still ball each row meets within its stretch, and when: (time, ball index),
    inf and -1 where none. ``bb`` (n, k, 2) the balls, ``act`` (n, k) those that count; the
    caller silences numpy's division warnings (ball_times runs quiet).

    A prefilter drops a ball farther from the line of travel than the path can bend, or beyond
    the distance the row can cover in the stretch; ``ball_times`` solves the rest.
    """
    n, k = act.shape
    T = np.where(np.isfinite(t_max), t_max, 1e3)
    spd = np.hypot(v[:, 0], v[:, 1])
    amag = np.hypot(a[:, 0], a[:, 1])
    bend = 0.5 * amag * T * T
    span = spd * T + bend
    dx = bb[:, :, 0] - r[:, None, 0]
    dy = bb[:, :, 1] - r[:, None, 1]
    gap = np.hypot(dx, dy)
    spd_div = np.maximum(spd, 1e-300)
    ux = v[:, 0] / spd_div
    uy = v[:, 1] / spd_div
    perp = np.abs(ux[:, None] * dy - uy[:, None] * dx)
    act = act & (gap - reach <= span[:, None] + 1e-9) & (perp - reach <= bend[:, None] + 1e-9)
    t_b = np.full(n, np.inf)
    b_id = np.full(n, -1, dtype=np.int64)
    rows, cols = np.nonzero(act)
    if rows.size:
        tb = ball_times(r[rows] - bb[rows, cols], v[rows], a[rows], t_max[rows], reach, True)
        if k == 1:  # one ball: no choice to make between balls
            t_b[rows] = tb
            b_id = np.where(np.isfinite(t_b), 0, -1)
        else:
            tbm = np.full((n, k), np.inf)
            tbm[rows, cols] = tb
            b_id = np.argmin(tbm, axis=1)
            t_b = tbm[np.arange(n), b_id]
            b_id = np.where(np.isfinite(t_b), b_id, -1)
    return t_b, b_id


def closest(
    r: np.ndarray,
    v: np.ndarray,
    a: np.ndarray,
    dt: np.ndarray,
    c: np.ndarray,
    sel: np.ndarray,
    to_rest: np.ndarray,
    to_wall: np.ndarray,
    best: np.ndarray,
    miss: np.ndarray,
    at_rest: np.ndarray,
    idx: np.ndarray,
) -> None:
    """Update the closest approach of point c to the path r + v t + a t^2/2, t in [0, dt], for
    the rows ``sel`` (``nearest`` then ``keep_nearest``)."""
    if np.count_nonzero(sel) == sel.size:
        got = nearest(r, v, a, dt, c, to_rest, to_wall)
    else:
        got = nearest(r[sel], v[sel], a[sel], dt[sel], c[sel], to_rest[sel], to_wall[sel])
    keep_nearest(idx[sel], *got, best, miss, at_rest)


def nearest(
    rs: np.ndarray,
    vs: np.ndarray,
    as_: np.ndarray,
    T: np.ndarray,
    cs: np.ndarray,
    to_rest: np.ndarray,
    to_wall: np.ndarray,
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The closest approach of points cs to paths r + v t + a t^2/2, t in [0, T]: distance,
    side (+1 with the point left of travel) and whether it is where a row ``to_rest`` stops.

    Minimises |r(t) - c|^2 by Newton steps on (r(t) - c) . v(t) from the straight-line
    estimate, clipped to the interval. Each row's arithmetic is its own, so rows of several
    stretches can be stacked in one call.
    """
    # on columns (x and y apart): the same arithmetic as row-wise dot products, fewer calls
    px, py = rs[:, 0] - cs[:, 0], rs[:, 1] - cs[:, 1]
    vx, vy, ax, ay = vs[:, 0], vs[:, 1], as_[:, 0], as_[:, 1]
    hx, hy = 0.5 * ax, 0.5 * ay
    v2 = vx * vx + vy * vy
    # np.minimum(np.maximum(.)) is np.clip's arithmetic without its wrapper's cost
    t = np.minimum(np.maximum(-(px * vx + py * vy) / np.maximum(v2, 1e-300), 0.0), T)
    for _ in range(3):
        tt = t * t
        qx, qy = px + vx * t + hx * tt, py + vy * t + hy * tt
        ux, uy = vx + ax * t, vy + ay * t
        g = qx * ux + qy * uy
        dg = (ux * ux + uy * uy) + (qx * ax + qy * ay)
        t = np.minimum(np.maximum(t - g / np.where(np.abs(dg) > 1e-300, dg, 1.0), 0.0), T)
    tt = t * t
    qx, qy = px + vx * t + hx * tt, py + vy * t + hy * tt
    ux, uy = vx + ax * t, vy + ay * t
    dist = np.hypot(qx, qy)
    us = np.hypot(ux, uy)
    cross = ux * -qy - uy * -qx
    side = np.sign(cross)
    side = np.where((us > 1e-12) & (side != 0), side, 1.0)
    # a stretch that ends on a wall with the point still ahead (a pocket mouth beyond the
    # box): measure on the line of travel carried on past the wall
    ahead = to_wall & (t >= T * (1.0 - 1e-12)) & ((-qx * ux + -qy * uy) > 0)
    dist = np.where(ahead, np.abs(cross) / np.maximum(us, 1e-300), dist)
    return dist, side, to_rest & (t >= T * (1.0 - 1e-9))


def keep_nearest(
    rows: np.ndarray,
    dist: np.ndarray,
    side: np.ndarray,
    rest: np.ndarray,
    best: np.ndarray,
    miss: np.ndarray,
    at_rest: np.ndarray,
) -> None:
    """Keep each row's nearest approach so far (``rows`` distinct): best distance, signed miss,
    and whether it is where the row came to rest."""
    better = dist < best[rows]
    best[rows[better]] = dist[better]
    miss[rows[better]] = side[better] * dist[better]
    at_rest[rows[better]] = rest[better]


Stretch = tuple[
    np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray
]
"""Rows of one stretch for ``closest_of``: row ids, r, v, a, T, c, to_rest, to_wall."""


def closest_of(
    groups: list[Stretch], best: np.ndarray, miss: np.ndarray, at_rest: np.ndarray
) -> None:
    """``closest`` for stretches taken in turn (a row's earlier stretch first): their rows
    stacked into one ``nearest`` call, then kept group by group in order."""
    if not groups:
        return
    if len(groups) == 1:
        g = groups[0]
        keep_nearest(g[0], *nearest(*g[1:]), best, miss, at_rest)
        return
    got = nearest(*(np.concatenate([g[j] for g in groups]) for j in range(1, 8)))
    at = 0
    for g in groups:
        k = g[0].size
        part = (got[0][at : at + k], got[1][at : at + k], got[2][at : at + k])
        keep_nearest(g[0], *part, best, miss, at_rest)
        at += k
