"""A reference integration of the ball model by scipy.integrate.solve_ivp, to check the events.

The same forces as physics/motion.py, written as an ordinary differential equation and
integrated numerically (solve_ivp, RK45 at tight tolerances) instead of in closed form: cloth
sliding friction along the contact slip, rolling resistance, spin decay about the vertical
(Leckie and Greenspan 2006; Alciatore's parameter list). Every change of regime is a terminal
event of solve_ivp: the slip reaching zero (sliding -> rolling), the ball stopping, the
vertical spin reaching zero, and the ball centre reaching a wall of the box one radius inside
the noses, where the same cushion impact (physics.cushion.rail_impact) gives the rebound.
Balls and the scoring rules are left out: it follows one ball to its landing. Used by
tests/core/physics/test_simulate.py and benchmarks/bench_physics.py.
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np
from scipy.integrate import solve_ivp

from tablecoach.core.physics.cushion import rail_impact
from tablecoach.core.physics.params import BallModel
from tablecoach.core.table import OUTWARD_NORMALS, RAILS, TableSpec

Event = Callable[[float, np.ndarray], float]

_SPEED_EPS = 1e-9
"""Below this speed (m/s) a slip or a velocity counts as zero."""

MAX_STEP = 0.01
"""Longest step (s). solve_ivp looks for events at the ends of its steps, and the solution is
a quadratic in time, so an unbounded step can jump over a wall the ball reaches and leaves
again; in 10 ms a ball slows by at most 0.04 m/s (sliding friction 0.2 g)."""


def _slip(m: BallModel, y: np.ndarray) -> np.ndarray:
    """Contact-point slip velocity u = v + w x (-R z) (docs/model.md, "Ball on cloth")."""
    return np.array([y[2] - m.radius * y[5], y[3] + m.radius * y[4]])


def _rhs(
    m: BallModel, sliding: bool, slip_dir: np.ndarray, vel_dir: np.ndarray, spin_sign: float
) -> Callable[[float, np.ndarray], np.ndarray]:
    """The right-hand side for one regime (the force directions are fixed within it)."""
    k = 2.5 / m.radius

    def f(_t: float, y: np.ndarray) -> np.ndarray:
        if sliding:
            a = -m.mu_s * m.g * slip_dir
        elif np.hypot(y[2], y[3]) > 0.0:
            a = -m.mu_r * m.g * vel_dir
        else:
            a = np.zeros(2)
        dw = np.array([k * a[1], -k * a[0]]) if sliding else np.array([-a[1], a[0]]) / m.radius
        return np.array([y[2], y[3], a[0], a[1], dw[0], dw[1], -spin_sign * m.spin_decel])

    return f


def _terminal(fn: Event, direction: float = 0.0) -> Event:
    fn.terminal = True  # type: ignore[attr-defined]
    fn.direction = direction  # type: ignore[attr-defined]
    return fn


def _one(
    m: BallModel, table: TableSpec, y0: np.ndarray, crossings: int, t_max: float
) -> tuple[int, float]:
    box = table.ball_box()  # xmin, xmax, ymin, ymax in RAILS order
    y = y0.astype(float).copy()
    t = 0.0
    count = 0
    while t < t_max:
        u = _slip(m, y)
        us, vs = float(np.hypot(*u)), float(np.hypot(y[2], y[3]))
        sliding = us > _SPEED_EPS
        if not sliding and vs <= _SPEED_EPS:
            return -1, float("nan")  # at rest before the landing
        slip_dir = u / us if sliding else np.zeros(2)
        vel_dir = y[2:4] / vs if vs > 0 else np.zeros(2)
        if not sliding:  # rolling: the spin is locked to the velocity
            y[4], y[5] = -y[3] / m.radius, y[2] / m.radius
        spin_sign = float(np.sign(y[6]))
        events: list[Event] = []
        if sliding:
            events.append(_terminal(lambda _t, s, u0=slip_dir: float(_slip(m, s) @ u0), -1.0))
        else:
            events.append(_terminal(lambda _t, s, v0=vel_dir: float(s[2:4] @ v0), -1.0))
        events.append(_terminal(lambda _t, s, z=spin_sign: z * s[6] if z else 1.0, -1.0))
        for code in range(4):  # negative inside the box, rising through 0 at the wall
            ax, wall, o = code // 2, box[code], OUTWARD_NORMALS[code][code // 2]
            events.append(_terminal(lambda _t, s, ax=ax, wall=wall, o=o: o * (s[ax] - wall), 1.0))
        sol = solve_ivp(
            _rhs(m, sliding, slip_dir, vel_dir, spin_sign),
            (t, t_max),
            y,
            events=events,
            rtol=1e-10,
            atol=1e-12,
            max_step=MAX_STEP,
        )
        t, y = float(sol.t[-1]), sol.y[:, -1].copy()
        if sol.status != 1:  # t_max reached
            break
        hit = [k for k, te in enumerate(sol.t_events) if te.size]
        if 1 in hit:
            y[6] = 0.0
        walls = [k - 2 for k in hit if k >= 2]
        if not walls:
            continue
        code = walls[0]
        ax = code // 2
        y[ax] = box[code]
        rail = RAILS[code]
        along = float(y[1 - ax])
        count += 1
        if count == crossings:
            return code, along
        if not table.on_cushion(rail, along):
            return -1, float("nan")  # into a pocket first
        nrm = np.array([OUTWARD_NORMALS[code]])
        v2, w2 = rail_impact(m, nrm, y[None, 2:4], y[None, 4:7])
        y[2:4], y[4:7] = v2[0], w2[0]
    return -1, float("nan")


def integrate(
    m: BallModel,
    table: TableSpec,
    r0: np.ndarray,
    v0: np.ndarray,
    w0: np.ndarray,
    crossings: int,
    t_max: float = 30.0,
) -> tuple[np.ndarray, np.ndarray]:
    """Landing (rail code in RAILS order, along-rail metres) at the given crossing count, one
    row at a time. Rows that stop or drop in a pocket first get code -1 and nan."""
    rail = np.full(r0.shape[0], -1, dtype=np.int64)
    along = np.full(r0.shape[0], np.nan)
    for i in range(r0.shape[0]):
        y0 = np.concatenate((r0[i], v0[i], w0[i]))
        rail[i], along[i] = _one(m, table, y0, crossings, t_max)
    return rail, along
