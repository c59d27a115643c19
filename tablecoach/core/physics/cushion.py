"""Ball-cushion impact: Mathavan, Jackson and Parkin's stepped model and a closed-form impulse.

Cushion frame: x along the cushion, y toward it (the outward normal of the table), z up, right
handed (x = y cross z); the ball arrives with vy > 0. theta is the contact angle above the
ball's equator (TableSpec.contact_angle), P the normal impulse at the cushion.

Mathavan model: S. Mathavan, M. R. Jackson, R. M. Parkin, "A theoretical analysis of billiard
ball dynamics under cushion impacts", Proc. IMechE Part C 224(9):1863-1873 (2010). The step
equations below are FROM MEMORY (the project's issue 3), not checked against the paper's text.
What was checked: each one was re-derived here from the impulse-momentum equations of a rigid
sphere touching the cushion at R (0, cos theta, sin theta) and the cloth at (0, 0, -R), with
Coulomb friction mu_w at the cushion, mu_s at the cloth and a cloth normal impulse k P; the
derivation gives the same expressions, sign for sign. Limiting cases checked in the tests:
no friction and theta = 0 give vy' = -e vy with everything else unchanged; no event adds
energy; a perpendicular rolling hit loses speed; english throws the rebound to its side.

- slips: cushion sx = vx + wy R sin(theta) - wz R cos(theta), sy = -vy sin(theta) + wx R;
  cloth cx = vx - wy R, cy = vy + wx R; phi = atan2(sy, sx), phi_t = atan2(cy, cx);
  k = sin(theta) + mu_w sin(phi) cos(theta)
- per step dP: dvx = -(mu_w cos(phi) + mu_s cos(phi_t) k) dP / M,
  dvy = -(cos(theta) - mu_w sin(theta) sin(phi) + mu_s sin(phi_t) k) dP / M,
  dwx = -(5 / (2 M R)) (mu_w sin(phi) + mu_s sin(phi_t) k) dP,
  dwy = -(5 / (2 M R)) (mu_w cos(phi) sin(theta) - mu_s cos(phi_t) k) dP,
  dwz = (5 / (2 M R)) mu_w cos(phi) cos(theta) dP
- work of the normal force dW = |vy| cos(theta) dP; compression ends at vy = 0 with work Wc;
  the impact ends when the work totals Wc (1 + e^2) (e is their energetic coefficient).

Here the steps are explicit midpoint (second-order) steps of dP = M vy0 / steps, the end of
compression and of restitution found by linear interpolation inside the last step.

Closed-form model ("impulse"): the same contact geometry with the slip directions frozen at
their values at first contact, after I. Han, "Dynamics in carom and three cushion billiards",
J. Mech. Sci. Tech. 19(4):976-984 (2005) (from memory: closed-form impulses at the contact
height with sliding and sticking cases). With frozen directions every velocity is linear in P,
so compression ends at Pc = -vy0 / (dvy/dP) and the energetic rule gives P = (1 + e) Pc. A
contact whose slip along its frozen direction would reverse before P sticks: its friction is
cut to the impulse that brings that slip to zero (two passes, for the coupling of the two
contacts). A simplification of Han's case analysis, documented in docs/model.md.
"""

from __future__ import annotations

import numpy as np

from .params import BallModel


def _rates(
    m: BallModel,
    st: np.ndarray,
    mu_w: np.ndarray | float,
    mu_s: np.ndarray | float,
    frozen: tuple[np.ndarray, np.ndarray] | None = None,
) -> np.ndarray:
    """dX/dP (n, 5) for states X = (vx, vy, wx, wy, wz) in the cushion frame."""
    R = m.radius
    s, c = np.sin(m.theta), np.cos(m.theta)
    vx, vy, wx, wy, wz = st.T
    if frozen is None:
        sx = vx + wy * R * s - wz * R * c
        sy = -vy * s + wx * R
        cx = vx - wy * R
        cy = vy + wx * R
        phi = np.arctan2(sy, sx)
        phit = np.arctan2(cy, cx)
        # no slip at a contact: no friction there (Coulomb friction at rest is not modelled)
        mw: np.ndarray | float = np.where(np.hypot(sx, sy) > 1e-12, mu_w, 0.0)
        ms: np.ndarray | float = np.where(np.hypot(cx, cy) > 1e-12, mu_s, 0.0)
    else:
        phi, phit = frozen
        mw, ms = mu_w, mu_s
    cp, sp = np.cos(phi), np.sin(phi)
    cpt, spt = np.cos(phit), np.sin(phit)
    k = s + mw * sp * c
    inv_m = 1.0 / m.mass
    kw = 2.5 / (m.mass * R)
    out = np.empty_like(st)
    out[:, 0] = -inv_m * (mw * cp + ms * cpt * k)
    out[:, 1] = -inv_m * (c - mw * s * sp + ms * spt * k)
    out[:, 2] = -kw * (mw * sp + ms * spt * k)
    out[:, 3] = -kw * (mw * cp * s - ms * cpt * k)
    out[:, 4] = kw * mw * cp * c
    return out


def mathavan_impact(m: BallModel, v: np.ndarray, w: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Stepped impulse integration (Mathavan et al. 2010) for states in the cushion frame.

    ``v`` (n, 2) = (along, toward) with toward > 0, ``w`` (n, 3). Returns the state after the
    impact. Steps: ``m.cushion_steps`` per M vy0 of impulse (midpoint rule).
    """
    st = np.concatenate((v, w), axis=1).astype(float)
    n = st.shape[0]
    if n == 0:
        return v.copy(), w.copy()
    c = np.cos(m.theta)
    dp = m.mass * np.maximum(st[:, 1], 1e-12) / m.cushion_steps
    work = np.zeros(n)
    wc = np.full(n, np.nan)  # work at the end of compression
    active = np.ones(n, dtype=bool)
    e2 = m.e_cushion**2
    for _ in range(50 * m.cushion_steps):
        if not np.count_nonzero(active):
            break
        idx = np.flatnonzero(active)
        x = st[idx]
        h = dp[idx][:, None]
        k1 = _rates(m, x, m.mu_w, m.mu_s)
        mid = x + 0.5 * h * k1
        k2 = _rates(m, mid, m.mu_w, m.mu_s)
        nx = x + h * k2
        vy0, vy1 = x[:, 1], nx[:, 1]
        comp = np.isnan(wc[idx])
        # end of compression inside this step: vy crosses zero
        cross = comp & (vy1 <= 0.0)
        f = np.where(cross, vy0 / np.where(cross, vy0 - vy1, 1.0), 1.0)
        dw = c * 0.5 * (np.abs(vy0) + np.abs(vy1)) * h[:, 0]
        # within a crossing step split the work into its two parts
        dw_cross = c * 0.5 * h[:, 0] * (vy0 * f + (-vy1) * (1.0 - f))
        dw = np.where(cross, dw_cross, dw)
        w_before = work[idx]
        w_after = w_before + dw
        wc_new = np.where(cross, w_before + c * 0.5 * vy0 * f * h[:, 0], wc[idx])
        target = wc_new * (1.0 + e2)
        done = ~np.isnan(wc_new) & (w_after >= target)
        g = np.where(done, (target - w_before) / np.where(dw > 0, dw, 1.0), 1.0)
        g = np.clip(g, 0.0, 1.0)
        st[idx] = x + (h * k2) * g[:, None]
        work[idx] = np.where(done, target, w_after)
        wc[idx] = wc_new
        active[idx[done]] = False
    return st[:, :2], st[:, 2:]


def impulse_impact(m: BallModel, v: np.ndarray, w: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Closed-form rigid impulse with Coulomb friction, slip directions frozen (see module)."""
    n = v.shape[0]
    if n == 0:
        return v.copy(), w.copy()
    out = _impulse_columns(m, v[:, 0], v[:, 1], w[:, 0], w[:, 1], w[:, 2])
    return np.stack(out[:2], axis=1), np.stack(out[2:], axis=1)


def _impulse_columns(
    m: BallModel,
    vx: np.ndarray,
    vy: np.ndarray,
    wx: np.ndarray,
    wy: np.ndarray,
    wz: np.ndarray,
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """impulse_impact on the state's columns (vx, vy, wx, wy, wz), cushion frame."""
    R = m.radius
    s, c = np.sin(m.theta), np.cos(m.theta)
    sx = vx + wy * R * s - wz * R * c
    sy = -vy * s + wx * R
    cx = vx - wy * R
    cy = vy + wx * R
    s_mag = np.sqrt(sx * sx + sy * sy)
    c_mag = np.sqrt(cx * cx + cy * cy)
    has_s = s_mag > 1e-12
    has_c = c_mag > 1e-12
    s_div = np.where(has_s, s_mag, 1.0)
    c_div = np.where(has_c, c_mag, 1.0)
    cp = np.where(has_s, sx / s_div, 1.0)
    sp = np.where(has_s, sy / s_div, 0.0)
    cpt = np.where(has_c, cx / c_div, 1.0)
    spt = np.where(has_c, cy / c_div, 0.0)
    mw = np.where(has_s, m.mu_w, 0.0)
    ms = np.where(has_c, m.mu_s, 0.0)
    inv_m = 1.0 / m.mass
    kw = 2.5 / (m.mass * R)
    e1 = 1.0 + m.e_cushion

    def rates(mw: np.ndarray, ms: np.ndarray) -> tuple[np.ndarray, ...]:
        msp = mw * sp
        mcp = mw * cp
        k = s + msp * c
        mscpt = ms * cpt * k
        msspt = ms * spt * k
        dvx = -inv_m * (mcp + mscpt)
        dvy = -inv_m * (c - mw * s * sp + msspt)
        dwx = -kw * (msp + msspt)
        dwy = -kw * (mcp * s - mscpt)
        dwz = kw * mw * cp * c
        return dvx, dvy, dwx, dwy, dwz

    def total(dvy: np.ndarray) -> np.ndarray:
        neg = dvy < 0
        return np.where(neg, e1 * vy / -np.where(neg, dvy, -1.0), 0.0)

    settled = False
    with np.errstate(divide="ignore", invalid="ignore"):
        for _ in range(2):
            dvx, dvy, dwx, dwy, dwz = rates(mw, ms)
            p_tot = total(dvy)
            # rate of each slip along its own (frozen) direction
            ds_w = (dvx + dwy * R * s - dwz * R * c) * cp + (-dvy * s + dwx * R) * sp
            ds_t = (dvx - dwy * R) * cpt + (dvy + dwx * R) * spt
            pw = np.where(ds_w < 0, s_mag / -ds_w, np.inf)
            pt = np.where(ds_t < 0, c_mag / -ds_t, np.inf)
            stick_w = pw < p_tot
            stick_t = pt < p_tot
            if not (np.count_nonzero(stick_w) or np.count_nonzero(stick_t)):
                # no contact sticks: the frictions stay as they are, and so would every
                # further pass, so these rates are the final ones
                settled = True
                break
            safe = np.maximum(p_tot, 1e-300)
            mw = np.where(stick_w, mw * pw / safe, mw)
            ms = np.where(stick_t, ms * pt / safe, ms)
    if settled:
        p = p_tot
    else:
        dvx, dvy, dwx, dwy, dwz = rates(mw, ms)
        p = total(dvy)
    return vx + dvx * p, vy + dvy * p, wx + dwx * p, wy + dwy * p, wz + dwz * p


def cushion_impact(m: BallModel, v: np.ndarray, w: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """The impact under the model's cushion setting (cushion frame in and out)."""
    if m.cushion == "mathavan":
        return mathavan_impact(m, v, w)
    return impulse_impact(m, v, w)


def rail_impact(
    m: BallModel, normal: np.ndarray, v: np.ndarray, w: np.ndarray
) -> tuple[np.ndarray, np.ndarray]:
    """An impact with the rails whose outward unit normals are ``normal`` (n, 2), table frame.

    The cushion frame has y = normal and x = normal x z = (ny, -nx); spin turns the same way
    (a rotation about z), wz is unchanged.
    """
    nx, ny = normal[:, 0], normal[:, 1]
    v0, v1, w0, w1 = v[:, 0], v[:, 1], w[:, 0], w[:, 1]
    # components along ex = (ny, -nx) and along the normal
    cvx, cvy = v0 * ny + v1 * -nx, v0 * nx + v1 * ny
    cwx, cwy = w0 * ny + w1 * -nx, w0 * nx + w1 * ny
    if m.cushion == "mathavan" or v.shape[0] == 0:
        vo, wo = cushion_impact(
            m, np.stack((cvx, cvy), axis=1), np.stack((cwx, cwy, w[:, 2]), axis=1)
        )
        ovx, ovy, owx, owy, owz = vo[:, 0], vo[:, 1], wo[:, 0], wo[:, 1], wo[:, 2]
    else:
        ovx, ovy, owx, owy, owz = _impulse_columns(m, cvx, cvy, cwx, cwy, w[:, 2])
    v2 = np.empty_like(v)
    w2 = np.empty_like(w)
    mnx = -nx
    v2[:, 0] = ny * ovx + nx * ovy
    v2[:, 1] = mnx * ovx + ny * ovy
    w2[:, 0] = ny * owx + nx * owy
    w2[:, 1] = mnx * owx + ny * owy
    w2[:, 2] = owz
    return v2, w2
