"""Ball-ball contact: the struck ball's launch along the line of centres, with throw.

The cue ball (velocity v, spin w) meets a still object ball of the same mass along the unit
line of centres n. Normal impulse Jn = m (1 + e) / 2 (v . n) (equal masses, Newton's rule with
the ball-ball restitution e, Alciatore's typical 0.95). Friction at the contact opposes the
relative slip u_t (the tangential part of v + w x (R n), the object's contact point being at
rest); it is Coulomb friction with the speed-dependent coefficient fitted by Alciatore to
Marlow's data (TP A.14 / A.24; docs/model.md, "Ball-ball contact"):

    mu(u) = 9.951e-3 + 0.108 exp(-1.088 u),  u the slip speed in m/s,

scaled by the table's ball_ball_friction / 0.06 (0.06 being the typical value that fit gives at
about 0.9 m/s, so a table's parameter can move the level; the default leaves it as published).
The tangential impulse stops once the slip is gone: for two free solid balls the slip changes
by 7 Jt / m, so Jt = min(mu Jn, m |u_t| / 7). The throw is then atan(Jt / Jn) toward the slip;
a half-ball stun hit at 1 m/s gives about 4 degrees, inside Alciatore's "up to about 4.8
degrees". Simplifications: the vertical part of the friction impulse (from follow or draw)
changes the object's spin but its push into the cloth is dropped; the cue ball is not followed
after contact.
"""

from __future__ import annotations

import numpy as np

from .params import BallModel

MU_REFERENCE = 0.06
"""The typical ball-ball friction (Alciatore) that the published mu(u) fit corresponds to."""


def ball_friction(m: BallModel, slip_speed: np.ndarray) -> np.ndarray:
    """Alciatore's fit mu(u) = 9.951e-3 + 0.108 exp(-1.088 u), scaled by mu_ball / 0.06."""
    return (m.mu_ball / MU_REFERENCE) * (9.951e-3 + 0.108 * np.exp(-1.088 * slip_speed))


def strike(
    m: BallModel, v: np.ndarray, w: np.ndarray, n: np.ndarray
) -> tuple[np.ndarray, np.ndarray]:
    """The object ball's launch velocity (k, 2) and spin (k, 3) for cue states and lines n.

    ``n`` (k, 2) points from the cue ball's centre to the object ball's centre.
    """
    R = m.radius
    vn = np.sum(v * n, axis=1)
    jn = 0.5 * (1.0 + m.e_ball) * np.maximum(vn, 0.0)  # per unit mass
    nx, ny = n[:, 0], n[:, 1]
    w0, w1, w2 = w[:, 0], w[:, 1], w[:, 2]
    # u = v + w x (R n), written out (n and v lie in the cloth's plane)
    rnx, rny = R * nx, R * ny
    u0 = v[:, 0] + -(w2 * rny)
    u1 = v[:, 1] + w2 * rnx
    u2 = w0 * rny - w1 * rnx
    un = u0 * nx + u1 * ny
    ut0, ut1, ut2 = u0 - un * nx, u1 - un * ny, u2
    us = np.sqrt(ut0 * ut0 + ut1 * ut1 + ut2 * ut2)
    jt = np.minimum(ball_friction(m, us) * jn, us / 7.0)
    big = us > 1e-12
    with np.errstate(divide="ignore", invalid="ignore"):
        j0 = np.where(big, ut0 / us, 0.0) * jt
        j1 = np.where(big, ut1 / us, 0.0) * jt
        j2 = np.where(big, ut2 / us, 0.0) * jt
    v_obj = np.empty_like(v)
    v_obj[:, 0] = jn * nx + j0
    v_obj[:, 1] = jn * ny + j1
    # object spin from the friction impulse at its contact point -R n: (-R n) x Jt / I
    k = m.mass / m.inertia
    w_obj = np.empty((v.shape[0], 3))
    w_obj[:, 0] = (-rny * j2) * k
    w_obj[:, 1] = -(-rnx * j2) * k
    w_obj[:, 2] = (-rnx * j1 - -rny * j0) * k
    return v_obj, w_obj


def throw_angle(v_obj: np.ndarray, n: np.ndarray) -> np.ndarray:
    """Signed angle (rad) from the line of centres to the launch direction."""
    cross = n[:, 0] * v_obj[:, 1] - n[:, 1] * v_obj[:, 0]
    dot = np.sum(n * v_obj, axis=1)
    angle: np.ndarray = np.arctan2(cross, dot)
    return angle
