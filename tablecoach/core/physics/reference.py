"""A fixed-step reference integrator of the same ball model, to check the event simulation.

Same forces as motion.py (cloth sliding friction, rolling resistance, spin decay) and the same
cushion impact (cushion.rail_impact), but integrated in small fixed time steps instead of closed
form between events. Within a step the acceleration is held (the forces are piecewise constant,
so the step is exact until a switch); the step in which the contact slip would reverse is split
at the switch (slip falls linearly within a step), a rolling ball stops where its speed would
reverse, and a wall crossing is placed by interpolation inside the step. Balls and the
scoring rules are left out: it follows one ball to its landing, for benchmark comparison only.
"""

from __future__ import annotations

import numpy as np

from ..table import TableSpec
from .cushion import rail_impact
from .params import BallModel

_NORMALS = np.array([[-1.0, 0.0], [1.0, 0.0], [0.0, -1.0], [0.0, 1.0]])


def integrate(
    m: BallModel,
    table: TableSpec,
    r0: np.ndarray,
    v0: np.ndarray,
    w0: np.ndarray,
    crossings: int,
    dt: float = 1e-4,
    t_max: float = 30.0,
) -> tuple[np.ndarray, np.ndarray]:
    """Landing (rail code in RAILS order, along-rail metres) at the given crossing count.

    Rows that stop or drop in a pocket first get code -1 and nan.
    """
    R = m.radius
    n = r0.shape[0]
    r, v, w = r0.astype(float).copy(), v0.astype(float).copy(), w0.astype(float).copy()
    lo = np.array([R, R])
    hi = np.array([table.length - R, table.width - R])
    count = np.zeros(n, dtype=np.int64)
    rail = np.full(n, -1, dtype=np.int64)
    along = np.full(n, np.nan)
    live = np.ones(n, dtype=bool)
    k = 2.5 / R
    g = m.g
    segs = {name: table.cushion_segments(name) for name in ("head", "foot", "left", "right")}
    names = ("head", "foot", "left", "right")
    t = 0.0
    while live.any() and t < t_max:
        t += dt
        i = np.flatnonzero(live)
        ri, vi, wi = r[i], v[i], w[i]
        ux = vi[:, 0] - R * wi[:, 1]
        uy = vi[:, 1] + R * wi[:, 0]
        us = np.hypot(ux, uy)
        vs = np.hypot(vi[:, 0], vi[:, 1])
        sliding = us > 1e-9
        rolling = ~sliding & (vs > 1e-9)
        if not (sliding | rolling).any():
            live[i] = False
            break
        # time of the slip switch inside this step (slip falls at 7/2 mu_s g)
        with np.errstate(divide="ignore", invalid="ignore"):
            t_sw = np.where(sliding, us / (3.5 * m.mu_s * g), np.inf) if m.mu_s > 0 else np.inf
            t_st = np.where(rolling, vs / (m.mu_r * g), np.inf) if m.mu_r > 0 else np.inf
        h1 = np.minimum(np.minimum(t_sw, t_st), dt)
        a = np.zeros_like(vi)
        with np.errstate(divide="ignore", invalid="ignore"):
            a[sliding] = -m.mu_s * g * np.stack((ux, uy), axis=1)[sliding] / us[sliding, None]
            a[rolling] = -m.mu_r * g * vi[rolling] / vs[rolling, None]
        r2 = ri + vi * h1[:, None] + 0.5 * a * (h1 * h1)[:, None]
        v2 = vi + a * h1[:, None]
        w2 = wi.copy()
        w2[sliding, 0] += k * a[sliding, 1] * h1[sliding]
        w2[sliding, 1] -= k * a[sliding, 0] * h1[sliding]
        w2[rolling, 0] = -v2[rolling, 1] / R
        w2[rolling, 1] = v2[rolling, 0] / R
        sw = sliding & (t_sw <= dt)  # became rolling inside the step
        w2[sw, 0] = -v2[sw, 1] / R
        w2[sw, 1] = v2[sw, 0] / R
        st = rolling & (t_st <= dt)
        v2[st] = 0.0
        w2[st, :2] = 0.0
        # rest of the step for rows that switched to rolling
        h2 = np.where(sw, dt - h1, 0.0)
        if sw.any():
            sp = np.hypot(v2[sw, 0], v2[sw, 1])
            ar = -m.mu_r * g * v2[sw] / np.maximum(sp, 1e-300)[:, None]
            hh = np.minimum(h2[sw], sp / (m.mu_r * g) if m.mu_r > 0 else h2[sw])
            r2[sw] += v2[sw] * hh[:, None] + 0.5 * ar * (hh * hh)[:, None]
            v2[sw] += ar * hh[:, None]
            w2[sw, 0] = -v2[sw, 1] / R
            w2[sw, 1] = v2[sw, 0] / R
        wz = wi[:, 2]
        w2[:, 2] = np.sign(wz) * np.maximum(np.abs(wz) - m.spin_decel * dt, 0.0)
        # wall crossings inside the step: back to the wall by linear interpolation
        for code in range(4):
            ax = 0 if code < 2 else 1
            wall = lo[ax] if code % 2 == 0 else hi[ax]
            out = (r2[:, ax] < wall) if code % 2 == 0 else (r2[:, ax] > wall)
            if not out.any():
                continue
            f = (wall - ri[out, ax]) / (r2[out, ax] - ri[out, ax])
            pos = ri[out] + (r2[out] - ri[out]) * f[:, None]
            pos[:, ax] = wall
            vel = vi[out] + (v2[out] - vi[out]) * f[:, None]
            rows = i[out]
            al = pos[:, 1 - ax]
            count[rows] += 1
            on = np.array([any(x <= q <= y for x, y in segs[names[code]]) for q in al])
            land = count[rows] == crossings
            rail[rows[land]] = code
            along[rows[land]] = al[land]
            live[rows[land | ~on]] = False
            nv, nw = rail_impact(m, np.tile(_NORMALS[code], (out.sum(), 1)), vel, w2[out])
            r2[out], v2[out], w2[out] = pos, nv, nw
        r[i], v[i], w[i] = r2, v2, w2
    return rail, along
