"""Closed-form ball motion on the cloth: sliding, rolling, spinning and stopped phases.

After W. Leckie and M. Greenspan, "An event-based pool physics simulator", Advances in Computer
Games, LNCS 4250 (2006), with the phase equations of docs/model.md, "Ball on cloth" (Coriolis
1835; Alciatore's parameter ranges). Every function works on a batch: positions ``r`` (n, 2),
velocities ``v`` (n, 2), spins ``w`` (n, 3) (rad/s, z up from the cloth), SI units; the
model's cloth figures may be per-row arrays of shape (n,) (params.BallModel).

Frame: the table's x and y with z = x cross y taken as "up" (away from the cloth) and all cross
products by the usual formula. Mechanics is the same in a mirror image, so positions and
velocities come out right; only the player's "right" must be mapped by a polar vector (the
stick hit does that in stick.py).

Sliding: the contact slip u = v + w x (-R z) = (vx - R wy, vy + R wx) keeps its direction; the
cloth friction gives a = -mu_s g u/|u| and, from the torque r x F at the contact (0, 0, -R),
dw/dt = (5 / (2R)) (a_y, -a_x, 0) (written (5/(2R)) z x a, the sign would make the slip grow;
with the slip defined as above the torque gives a x z; the check is that the slip then shrinks
at 7/2 mu_s g, which the tests confirm). Sliding ends after 2|u0| / (7 mu_s g).
Rolling: a = -mu_r g v/|v|, in-plane spin locked to v (wx = -vy/R, wy = vx/R), stops after
|v| / (mu_r g). Spin about the vertical decays at ``spin_decel`` in every phase and ends the
spinning phase after |wz| / spin_decel.
"""

from __future__ import annotations

import numpy as np

from .params import BallModel, RowParam
from .roots import first_quadratic_root

STOPPED, SPINNING, ROLLING, SLIDING = 0, 1, 2, 3
PHASE_NAMES = ("stopped", "spinning", "rolling", "sliding")

EPS_V = 1e-9
"""Speeds (m/s) and slips below this count as zero."""
EPS_W = 1e-7
"""Spins (rad/s) below this count as zero."""


def dot2(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Row-wise dot product of two (n, 2) arrays (cheaper than np.sum for small batches)."""
    out: np.ndarray = a[:, 0] * b[:, 0] + a[:, 1] * b[:, 1]
    return out


def slip(m: BallModel, v: np.ndarray, w: np.ndarray) -> np.ndarray:
    """Velocity of the cloth contact point, u = v + w x (-R z) = (vx - R wy, vy + R wx)."""
    return np.stack((v[:, 0] - m.radius * w[:, 1], v[:, 1] + m.radius * w[:, 0]), axis=1)


def phase_of(m: BallModel, v: np.ndarray, w: np.ndarray) -> np.ndarray:
    """The phase code of each ball (STOPPED, SPINNING, ROLLING or SLIDING)."""
    u = np.hypot(*slip(m, v, w).T)
    sp = np.hypot(v[:, 0], v[:, 1])
    out = np.full(v.shape[0], STOPPED, dtype=np.int8)
    out[np.abs(w[:, 2]) > EPS_W] = SPINNING
    out[sp > EPS_V] = ROLLING
    out[u > EPS_V] = SLIDING
    return out


def accel(m: BallModel, v: np.ndarray, w: np.ndarray, phase: np.ndarray) -> np.ndarray:
    """The constant acceleration (n, 2) of each ball for the rest of its current phase."""
    a = np.zeros_like(v)
    sl = phase == SLIDING
    if sl.any():
        u = slip(m, v[sl], w[sl])
        a[sl] = _col(-_at(m.mu_s, sl) * m.g) * u / np.hypot(u[:, 0], u[:, 1])[:, None]
    ro = phase == ROLLING
    if ro.any():
        vv = v[ro]
        a[ro] = _col(-_at(m.mu_r, ro) * m.g) * vv / np.hypot(vv[:, 0], vv[:, 1])[:, None]
    return a


def _at(val: RowParam, sel: np.ndarray) -> RowParam:
    """A model figure for the rows ``sel``: a per-row array indexed, a float as it is."""
    return val[sel] if isinstance(val, np.ndarray) else val


def _col(val: RowParam) -> RowParam:
    """A per-row array as a column (to scale (n, 2) rows), a float as it is."""
    return val[:, None] if isinstance(val, np.ndarray) else val


def _over(num: np.ndarray, den: RowParam) -> np.ndarray:
    """num / den, inf where den is not positive (den a float or one value per row)."""
    if isinstance(den, np.ndarray):
        out: np.ndarray = np.divide(num, den, out=np.full_like(num, np.inf), where=den > 0)
        return out
    return num / den if den > 0 else np.full_like(num, np.inf)


def phase_duration(m: BallModel, v: np.ndarray, w: np.ndarray, phase: np.ndarray) -> np.ndarray:
    """Time to the end of each ball's current phase (inf when it never ends, e.g. mu = 0).

    Sliding 2|u|/(7 mu_s g), rolling |v|/(mu_r g), spinning |wz|/spin_decel (Leckie and
    Greenspan 2006; docs/model.md, "Ball on cloth").
    """
    out = np.full(v.shape[0], np.inf)
    sl = phase == SLIDING
    if sl.any():
        u = np.hypot(*slip(m, v[sl], w[sl]).T)
        out[sl] = _over(2.0 * u, 7.0 * _at(m.mu_s, sl) * m.g)
    ro = phase == ROLLING
    if ro.any():
        out[ro] = _over(np.hypot(v[ro, 0], v[ro, 1]), _at(m.mu_r, ro) * m.g)
    sp = phase == SPINNING
    if sp.any():
        out[sp] = _over(np.abs(w[sp, 2]), _at(m.spin_decel, sp))
    return out


def prepare(
    m: BallModel, v: np.ndarray, w: np.ndarray
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Phase, acceleration and phase duration of each ball in one pass (the slip computed once).

    The same results as phase_of, accel and phase_duration, for the simulation loop.
    """
    R = m.radius
    ux = v[:, 0] - R * w[:, 1]
    uy = v[:, 1] + R * w[:, 0]
    us = np.sqrt(ux * ux + uy * uy)
    vs = np.sqrt(v[:, 0] * v[:, 0] + v[:, 1] * v[:, 1])
    wz = np.abs(w[:, 2])
    sliding = us > EPS_V
    rolling = ~sliding & (vs > EPS_V)
    spinning = ~sliding & ~rolling & (wz > EPS_W)
    phase = np.where(sliding, SLIDING, np.where(rolling, ROLLING, np.where(spinning, SPINNING, 0)))
    # divisions by the slip and the speed only where they are used, so no warnings to silence
    # (np.errstate costs as much as several of these calls)
    ks = np.divide(-m.mu_s * m.g, us, out=np.zeros_like(us), where=sliding)
    kr = np.divide(-m.mu_r * m.g, vs, out=np.zeros_like(vs), where=rolling)
    a = np.empty_like(v)
    a[:, 0] = ks * ux + kr * v[:, 0]
    a[:, 1] = ks * uy + kr * v[:, 1]
    t_slide = _over(2.0 * us, 7.0 * m.mu_s * m.g)
    t_roll = _over(vs, m.mu_r * m.g)
    t_spin = _over(wz, m.spin_decel)
    t_end = np.where(
        sliding, t_slide, np.where(rolling, t_roll, np.where(spinning, t_spin, np.inf))
    )
    return phase.astype(np.int8), a, t_end


def prepare_moving(
    m: BallModel, v: np.ndarray, w: np.ndarray
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """``prepare`` for the simulation loop, which drops balls that stopped or only spin: which
    balls slide, which move (slide or roll), and the acceleration and phase duration of the
    moving ones (the same arithmetic as ``prepare``; the values of the others are not used)."""
    R = m.radius
    v0, v1 = v[:, 0], v[:, 1]
    ux = v0 - R * w[:, 1]
    uy = v1 + R * w[:, 0]
    us = np.sqrt(ux * ux + uy * uy)
    vs = np.sqrt(v0 * v0 + v1 * v1)
    sliding = us > EPS_V
    moving = vs > EPS_V
    rolling = moving & ~sliding
    moving |= sliding
    ks = np.divide(-m.mu_s * m.g, us, out=np.zeros_like(us), where=sliding)
    kr = np.divide(-m.mu_r * m.g, vs, out=np.zeros_like(vs), where=rolling)
    a = np.empty_like(v)
    a[:, 0] = ks * ux + kr * v0
    a[:, 1] = ks * uy + kr * v1
    t_end = np.where(sliding, _over(2.0 * us, 7.0 * m.mu_s * m.g), _over(vs, m.mu_r * m.g))
    return sliding, moving, a, t_end


def prepare_rolled(m: BallModel, v: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """``prepare_moving`` for balls just settled by ``phase_end``: none slides (a settled slide
    has its spin locked to v, so its slip is a rounding residue, some 1e-16 of the speed, far
    under EPS_V), so only the rolling branch is computed: which move, their acceleration and
    the time to rest (the same arithmetic as ``prepare``)."""
    v0, v1 = v[:, 0], v[:, 1]
    vs = np.sqrt(v0 * v0 + v1 * v1)
    moving = vs > EPS_V
    kr = np.divide(-m.mu_r * m.g, vs, out=np.zeros_like(vs), where=moving)
    a = np.empty_like(v)
    a[:, 0] = kr * v0
    a[:, 1] = kr * v1
    return moving, a, _over(vs, m.mu_r * m.g)


def phase_end(
    m: BallModel,
    r: np.ndarray,
    v: np.ndarray,
    w: np.ndarray,
    sl: np.ndarray,
    t: np.ndarray,
    a: np.ndarray,
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Where each ball's phase ends (``t`` its duration; ``sl`` which slide): position and
    velocity there, then velocity and spin settled onto the next phase (a slide ends rolling,
    a roll at rest) - ``evolve_sliding`` and ``settle`` without the in-plane spins that
    the settling replaces."""
    tt = t[:, None]
    r2 = r + (v + 0.5 * a * tt) * tt
    v2 = v + a * tt
    R = m.radius
    w2 = np.empty_like(w)
    w2[:, 0] = np.where(sl, -v2[:, 1] / R, 0.0)
    w2[:, 1] = np.where(sl, v2[:, 0] / R, 0.0)
    wz = w[:, 2]
    w2[:, 2] = np.sign(wz) * np.maximum(np.abs(wz) - m.spin_decel * t, 0.0)
    return r2, v2, np.where(sl[:, None], v2, 0.0), w2


def evolve(
    m: BallModel,
    r: np.ndarray,
    v: np.ndarray,
    w: np.ndarray,
    phase: np.ndarray,
    t: np.ndarray,
    a: np.ndarray | None = None,
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The state of each ball after time t (n,) within its current phase, in closed form.

    Position r + v t + a t^2 / 2, velocity v + a t (a from ``accel``); in-plane spin changes at
    (5/(2R)) (a_y, -a_x) while sliding and is locked to v while rolling; wz decays linearly to 0.
    """
    if a is None:
        a = accel(m, v, w, phase)
    tt = t[:, None]
    r2 = r + (v + 0.5 * a * tt) * tt
    v2 = v + a * tt
    k = 2.5 / m.radius
    moving = (phase >= ROLLING)[:, None]
    v2 = np.where(moving, v2, 0.0)
    w2 = np.empty_like(w)
    slide_w0 = w[:, 0] + k * a[:, 1] * t
    slide_w1 = w[:, 1] - k * a[:, 0] * t
    sl = phase == SLIDING
    ro = phase == ROLLING
    w2[:, 0] = np.where(sl, slide_w0, np.where(ro, -v2[:, 1] / m.radius, 0.0))
    w2[:, 1] = np.where(sl, slide_w1, np.where(ro, v2[:, 0] / m.radius, 0.0))
    wz = w[:, 2]
    w2[:, 2] = np.sign(wz) * np.maximum(np.abs(wz) - m.spin_decel * t, 0.0)
    return r2, v2, w2


def settle(
    m: BallModel, v: np.ndarray, w: np.ndarray, ended: np.ndarray, phase: np.ndarray
) -> None:
    """Snap the balls whose phase just ended exactly onto the next phase (in place).

    End of sliding: the slip is zero, so the in-plane spin is set to the rolling values; end of
    rolling: velocity and in-plane spin zero; end of spinning: wz zero.
    """
    sl = ended & (phase == SLIDING)
    w[sl, 0] = -v[sl, 1] / m.radius
    w[sl, 1] = v[sl, 0] / m.radius
    ro = ended & (phase == ROLLING)
    v[ro] = 0.0
    w[ro, :2] = 0.0
    sp = ended & (phase == SPINNING)
    w[sp] = 0.0
    v[sp] = 0.0


def energy(m: BallModel, v: np.ndarray, w: np.ndarray) -> np.ndarray:
    """Kinetic energy of each ball, m v^2 / 2 + I w^2 / 2 (J)."""
    out: np.ndarray = 0.5 * m.mass * np.sum(v * v, axis=1) + 0.5 * m.inertia * np.sum(w * w, axis=1)
    return out


def evolve_moving(
    m: BallModel,
    r: np.ndarray,
    v: np.ndarray,
    w: np.ndarray,
    phase: np.ndarray,
    t: np.ndarray,
    a: np.ndarray,
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """``evolve`` for rows that all roll or slide (simulate's loop has dropped the rest): the
    same arithmetic without the branches for stopped and spinning balls."""
    return evolve_sliding(m, r, v, w, phase == SLIDING, t, a)


def evolve_sliding(
    m: BallModel,
    r: np.ndarray,
    v: np.ndarray,
    w: np.ndarray,
    sl: np.ndarray,
    t: np.ndarray,
    a: np.ndarray,
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """``evolve_moving`` given which rows slide (the others roll)."""
    tt = t[:, None]
    r2 = r + (v + 0.5 * a * tt) * tt
    v2 = v + a * tt
    k = 2.5 / m.radius
    w2 = np.empty_like(w)
    w2[:, 0] = np.where(sl, w[:, 0] + k * a[:, 1] * t, -v2[:, 1] / m.radius)
    w2[:, 1] = np.where(sl, w[:, 1] - k * a[:, 0] * t, v2[:, 0] / m.radius)
    wz = w[:, 2]
    w2[:, 2] = np.sign(wz) * np.maximum(np.abs(wz) - m.spin_decel * t, 0.0)
    return r2, v2, w2


def advance(
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
            _, v2, w2 = evolve_moving(m, r, v, w, ph, tt, a)
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
