"""Ball-cushion impact: Mathavan, Jackson and Parkin's impulse equations, integrated in steps.

Cushion frame: x along the cushion, y toward it (the outward normal of the table), z up, right
handed (x = y cross z); the ball arrives with vy > 0. theta is the contact angle above the
ball's equator (TableSpec.contact_angle), P the normal impulse at the cushion.

Model: S. Mathavan, M. R. Jackson, R. M. Parkin, "A theoretical analysis of billiard ball
dynamics under cushion impacts", Proc. IMechE Part C 224(9):1863-1873 (2010),
doi:10.1243/09544062JMES1964. Friction acts at the cushion contact (mu_w) and at the cloth
(mu_s) at once; the normal impulse is integrated in steps with the slip directions updated each
step; compression ends when the normal velocity reaches zero and the impact ends when the work
of the normal force totals Wc (1 + e^2), e being their energetic coefficient (abstract: "the
values of the coefficient of restitution and the sliding coefficient of friction are 0.98 and
0.14"; rigid cushion valid up to a normal speed of 2.5 m/s). The step equations were used
from memory and re-derived here from the impulse-momentum equations of a rigid sphere touching
the cushion at R (0, cos theta, sin theta) and the cloth at (0, 0, -R), with a cloth normal
impulse k P; the derivation gives the same expressions, sign for sign (a test checks it):

- slips: cushion sx = vx + wy R sin(theta) - wz R cos(theta), sy = -vy sin(theta) + wx R;
  cloth cx = vx - wy R, cy = vy + wx R; phi = atan2(sy, sx), phi_t = atan2(cy, cx);
  k = sin(theta) + mu_w sin(phi) cos(theta)
- per unit dP: dvx = -(mu_w cos(phi) + mu_s cos(phi_t) k) / M,
  dvy = -(cos(theta) - mu_w sin(theta) sin(phi) + mu_s sin(phi_t) k) / M,
  dwx = -(5 / (2 M R)) (mu_w sin(phi) + mu_s sin(phi_t) k),
  dwy = -(5 / (2 M R)) (mu_w cos(phi) sin(theta) - mu_s cos(phi_t) k),
  dwz = (5 / (2 M R)) mu_w cos(phi) cos(theta)
- work of the normal force dW = |vy| cos(theta) dP.

Two integrations of these equations:

- ``stepped_impact`` (the default, "stepped"): each phase (compression, restitution) is cut
  into ``segments`` pieces. Over a piece the slip directions are held at their values at its
  start, so every velocity is linear in P and the piece's end (vy = 0, or the work target) is
  found exactly; a contact whose slip would reverse inside the piece sticks (its friction is
  cut to what brings the slip to zero), and a contact with no slip takes the direction in which
  its slip would start. Four pieces per phase agree with the fine integration to within 0.7
  degree of settled rebound angle and 0.025 of speed over rolling, stun, drawn and spun
  arrivals at 10 to 80 degrees (tests/core/physics/test_cushion.py); it costs eight linear
  updates instead of hundreds of steps.
- ``fine_impact`` ("fine"): the paper's method with small midpoint steps (``fine_steps`` per
  M vy0 of impulse), the reference the stepped integration is tested against.

The model's mu_w, mu_s and e_cushion may be per-row arrays (params.BallModel), one value per
arriving ball.

Every equation is homogeneous of degree one in the velocities, so the outcome of an impact
scales with the arrival speed: a check over angles and spins at one speed holds at every speed.
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np

from .params import BallModel, per_row, rows_of


def impulse_rates(
    m: BallModel,
    st: np.ndarray,
    mu_w: np.ndarray | float,
    mu_s: np.ndarray | float,
) -> np.ndarray:
    """dX/dP (n, 5) for states X = (vx, vy, wx, wy, wz) in the cushion frame, slips live."""
    R = m.radius
    s, c = np.sin(m.theta), np.cos(m.theta)
    vx, vy, wx, wy, wz = st.T
    sx = vx + wy * R * s - wz * R * c
    sy = -vy * s + wx * R
    cx = vx - wy * R
    cy = vy + wx * R
    phi = np.arctan2(sy, sx)
    phit = np.arctan2(cy, cx)
    # no slip at a contact: no friction there in this fine integration
    mw: np.ndarray | float = np.where(np.hypot(sx, sy) > 1e-12, mu_w, 0.0)
    ms: np.ndarray | float = np.where(np.hypot(cx, cy) > 1e-12, mu_s, 0.0)
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


def fine_impact(
    m: BallModel, v: np.ndarray, w: np.ndarray, steps: int | None = None
) -> tuple[np.ndarray, np.ndarray]:
    """The paper's integration in small midpoint steps (the reference), cushion frame.

    ``v`` (n, 2) = (along, toward) with toward > 0, ``w`` (n, 3). Steps of dP = M vy0 / steps
    (``m.fine_steps`` by default); the ends of compression and restitution are placed by
    linear interpolation inside their step.
    """
    steps = steps or m.fine_steps
    st = np.concatenate((v, w), axis=1).astype(float)
    n = st.shape[0]
    if n == 0:
        return v.copy(), w.copy()
    c = np.cos(m.theta)
    dp = m.mass * np.maximum(st[:, 1], 1e-12) / steps
    work = np.zeros(n)
    wc = np.full(n, np.nan)  # work at the end of compression
    active = np.ones(n, dtype=bool)
    e2 = np.asarray(m.e_cushion, dtype=float) ** 2
    rows = per_row(m)
    for _ in range(50 * steps):
        if not np.count_nonzero(active):
            break
        idx = np.flatnonzero(active)
        x = st[idx]
        h = dp[idx][:, None]
        mi = rows_of(m, idx) if rows else m
        k1 = impulse_rates(m, x, mi.mu_w, mi.mu_s)
        k2 = impulse_rates(m, x + 0.5 * h * k1, mi.mu_w, mi.mu_s)
        nx = x + h * k2
        vy0, vy1 = x[:, 1], nx[:, 1]
        comp = np.isnan(wc[idx])
        cross = comp & (vy1 <= 0.0)
        f = np.where(cross, vy0 / np.where(cross, vy0 - vy1, 1.0), 1.0)
        dw = c * 0.5 * (np.abs(vy0) + np.abs(vy1)) * h[:, 0]
        dw_cross = c * 0.5 * h[:, 0] * (vy0 * f + (-vy1) * (1.0 - f))
        dw = np.where(cross, dw_cross, dw)
        w_before = work[idx]
        w_after = w_before + dw
        wc_new = np.where(cross, w_before + c * 0.5 * vy0 * f * h[:, 0], wc[idx])
        target = wc_new * (1.0 + (e2[idx] if e2.ndim else e2))
        done = ~np.isnan(wc_new) & (w_after >= target)
        g = np.where(done, (target - w_before) / np.where(dw > 0, dw, 1.0), 1.0)
        g = np.clip(g, 0.0, 1.0)
        st[idx] = x + (h * k2) * g[:, None]
        work[idx] = np.where(done, target, w_after)
        wc[idx] = wc_new
        active[idx[done]] = False
    return st[:, :2], st[:, 2:]


def _unit(
    x: np.ndarray, y: np.ndarray, tiny: np.ndarray | float = 1e-12
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Unit vector of (x, y) and its length; (1, 0) where the length is at most ``tiny``."""
    mag = np.sqrt(x * x + y * y)
    ok = mag > tiny
    d = np.where(ok, mag, 1.0)
    return np.where(ok, x / d, 1.0), np.where(ok, y / d, 0.0), mag


_SLIP_TOL = 1e-3
"""Slips below this fraction of the arrival speed start the stepped integration as no slip."""


@lru_cache(maxsize=16)
def _matrices(
    radius: float, theta: float, mass: float
) -> tuple[float, float, np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """sin and cos of theta and the matrices of ``_stepped_columns``: A, b, S, S A, S b
    (read-only; one set per ball and cushion geometry)."""
    R = radius
    s, c = float(np.sin(theta)), float(np.cos(theta))
    inv_m = 1.0 / mass
    kw = 2.5 / (mass * R)
    # dX/dP = A @ (f1, f2, f3, f4) + b  (the step equations in the module docstring)
    A = np.array(
        [
            [-inv_m, 0.0, -inv_m, 0.0],
            [0.0, inv_m * s, 0.0, -inv_m],
            [0.0, -kw, 0.0, -kw],
            [-kw * s, 0.0, kw, 0.0],
            [kw * c, 0.0, 0.0, 0.0],
        ]
    )
    b = np.array([0.0, -inv_m * c, 0.0, 0.0, 0.0])[:, None]
    # slips (cushion x, y; cloth x, y) = S @ X
    S = np.array(
        [
            [1.0, 0.0, 0.0, R * s, -R * c],
            [0.0, -s, R, 0.0, 0.0],
            [1.0, 0.0, 0.0, -R, 0.0],
            [0.0, 1.0, R, 0.0, 0.0],
        ]
    )
    out = (A, b, S, S @ A, S @ b)
    for arr in out:
        arr.flags.writeable = False
    return (s, c, *out)


def _stepped_columns(
    m: BallModel,
    vx: np.ndarray,
    vy: np.ndarray,
    wx: np.ndarray,
    wy: np.ndarray,
    wz: np.ndarray,
    segments: int,
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """stepped_impact on the state's columns (vx, vy, wx, wy, wz), cushion frame.

    The rates of the module's step equations are linear in four friction terms,
    f = (mu_w cos phi, mu_w sin phi, mu_s cos phi_t k, mu_s sin phi_t k) with
    k = sin theta + mu_w sin phi cos theta: dX/dP = A f + b, and the two slips are S X, so the
    integration works on (5, n) and (4, n) arrays with a few matrix products per piece (the two
    contacts side by side as (2, 2, n) where a step treats them alike).
    """
    s, c, A, b, S, SA, Sb = _matrices(m.radius, m.theta, m.mass)
    mu_w, mu_s = m.mu_w, m.mu_s
    e2 = m.e_cushion**2
    X = np.array([vx, vy, wx, wy, wz], dtype=float)
    n = X.shape[1]
    if n == 1:
        # numpy's matrix product takes another path for one column, whose last bits can differ
        # from those of a column of a larger product: a lone row runs as two copies, so a row
        # comes out of every batch the same (and per-row figures stay one per row)
        X2 = np.repeat(X, 2, axis=1)
        v1, v2, v3, v4, v5 = _stepped_columns(
            rows_of(m, np.zeros(2, dtype=np.intp)), X2[0], X2[1], X2[2], X2[3], X2[4], segments
        )
        return v1[:1], v2[:1], v3[:1], v4[:1], v5[:1]
    work = np.zeros(n)
    wc = work
    # a slip this small counts as none: held for a whole piece, its direction would be noise
    # (a piece changes the slips by about mu_w vy / segments)
    tiny = np.maximum(_SLIP_TOL * np.hypot(X[0], X[1]), 1e-12)
    # work arrays, reused by every piece (the same arithmetic as fresh arrays, fewer
    # allocations), and views of them made once
    f = np.empty((4, n))
    f_top, f_bot, f1 = f[:2], f[2:], f[1]
    kk = np.empty(n)
    sl = np.empty((4, n))
    sq = np.empty((4, n))
    sq_x, sq_y = sq[0::2], sq[1::2]
    mags = np.empty((2, n))  # slip speeds of the cushion and cloth contacts
    held = np.empty((2, n))
    d = np.empty((4, n))  # held slip directions (cushion x, y; cloth x, y)
    d_top, d_bot = d[:2], d[2:]
    sl3, held3, d3 = sl.reshape(2, 2, n), held[:, None, :], d.reshape(2, 2, n)
    zero = np.empty((2, n), dtype=bool)
    r = np.empty((5, n))  # dX/dP
    dvy = r[1]
    sr = np.empty((4, n))
    sr_x, sr_y = sr[0::2], sr[1::2]
    dsd = np.empty((2, n))
    chk = np.empty((2, n))
    over = np.empty((2, n), dtype=bool)
    span = np.empty(n)
    h = np.empty(n)
    fall = np.empty(n, dtype=bool)
    ndvy = np.empty(n)
    rh = np.empty((5, n))
    # |vy| at the ends of the pieces and the pieces' impulses (the work of a phase's pieces
    # is summed when it is needed: each piece at the end of compression, in turn, as before)
    vabs = np.empty((segments + 1, n))
    hs_ = np.empty((segments, n))
    dw = np.empty(n)
    X1 = X[1]
    half_c = c * 0.5

    def rates(mw: np.ndarray | float, ms: np.ndarray | float) -> None:
        """r = A f + b for the friction levels and held directions (f as the docstring)."""
        np.multiply(mw, d_top, out=f_top)
        np.multiply(f1, c, out=kk)  # k = sin theta + cos theta f2
        np.add(kk, s, out=kk)
        np.multiply(ms, d_bot, out=f_bot)
        np.multiply(f_bot, kk, out=f_bot)
        np.matmul(A, f, out=r)
        np.add(r, b, out=r)

    for phase in (0, 1):
        np.abs(X1, out=vabs[0])
        for j in range(segments):
            left = segments - j
            np.matmul(S, X, out=sl)  # (4, n): cushion slip x, y; cloth slip x, y
            np.multiply(sl, sl, out=sq)
            np.add(sq_x, sq_y, out=mags)
            np.sqrt(mags, out=mags)
            np.maximum(mags, tiny, out=held)
            np.divide(sl3, held3, out=d3)
            np.less_equal(mags, tiny, out=zero)
            if np.count_nonzero(zero):
                # a contact with no slip: its slip starts in the direction the other forces
                # drive it (friction there off), and its friction opposes that start
                z4 = np.repeat(zero, 2, axis=0)
                d[...] = np.where(z4, _UNIT_X, d)
                rates(np.where(zero[0], 0.0, mu_w), np.where(zero[1], 0.0, mu_s))
                r0 = SA @ f + Sb
                m0 = np.sqrt(r0[0::2] ** 2 + r0[1::2] ** 2)
                d0 = np.where(np.repeat(m0 > 0, 2, axis=0), r0, _UNIT_X)
                d0 = d0 / np.repeat(np.where(m0 > 0, m0, 1.0), 2, axis=0)
                d[...] = np.where(z4, d0, d)
            mw: np.ndarray | float = mu_w
            ms: np.ndarray | float = mu_s
            rates(mw, ms)
            need = np.maximum(wc * (1.0 + e2) - work, 0.0) / c if phase else None
            for _ in range(3):
                # (vy falls through compression and grows backward through restitution, so
                # the guarded branches below are for rows that do not, almost never seen)
                np.negative(dvy, out=ndvy)
                if phase == 0:
                    np.less(dvy, 0.0, out=fall)
                    if np.count_nonzero(fall) == n:
                        np.divide(X1, ndvy, out=span)
                    else:
                        span.fill(0.0)
                        np.divide(X1, ndvy, out=span, where=fall)
                else:
                    # work c |vy| dP over the piece: (-vy) p + (-dvy) p^2 / 2 = need / c
                    assert need is not None
                    a_ = -X1
                    disc = np.maximum(a_ * a_ + 2.0 * ndvy * need, 0.0)
                    np.greater(ndvy, 1e-300, out=fall)
                    if np.count_nonzero(fall) == n:
                        np.sqrt(disc, out=disc)
                        disc -= a_
                        np.divide(disc, ndvy, out=span)
                    else:
                        span[...] = np.where(
                            fall,
                            (np.sqrt(disc) - a_) / np.where(fall, ndvy, 1.0),
                            need / np.where(a_ > 0, a_, 1.0),
                        )
                np.maximum(span, 0.0, out=h)
                h /= left
                # slip rates along each contact's held direction: a contact whose slip would
                # reverse inside the piece sticks, its friction cut to stop the slip at zero
                np.matmul(S, r, out=sr)
                sr *= d
                np.add(sr_x, sr_y, out=dsd)  # (2, n): cushion, cloth
                # the slip would pass zero inside the piece (mags + dsd h < 0); its impulse
                # to zero is mags / -dsd
                np.multiply(dsd, h, out=chk)
                chk += mags
                np.less(chk, 0.0, out=over)
                if not np.count_nonzero(over):
                    break
                neg = dsd < 0
                pwt = np.where(neg, mags / np.where(neg, -dsd, 1.0), np.inf)
                stick = pwt < h
                if not np.count_nonzero(stick):
                    break
                hs = np.maximum(h, 1e-300)
                mw = np.where(stick[0], mu_w * pwt[0] / hs, mw)
                ms = np.where(stick[1], mu_s * pwt[1] / hs, ms)
                rates(mw, ms)
            np.multiply(r, h, out=rh)
            X += rh
            np.abs(X1, out=vabs[j + 1])
            if phase:
                # work c |vy| dP over the piece, by the trapezoid
                np.add(vabs[j + 1], vabs[j], out=dw)
                dw *= half_c
                dw *= h
                work += dw
            else:
                hs_[j] = h
        if phase == 0:
            # the compression pieces' work, summed piece after piece as it was done
            dws = vabs[1:] + vabs[:-1]
            dws *= half_c
            dws *= hs_
            work = np.add.reduce(dws, axis=0)
            np.minimum(X1, 0.0, out=X1)
            wc = work.copy()
    return X[0], X[1], X[2], X[3], X[4]


_UNIT_X = np.array([1.0, 0.0, 1.0, 0.0])[:, None]
"""The stand-in direction (1, 0) of both contacts, as a column of the (4, n) slip arrays."""


def stepped_impact(
    m: BallModel, v: np.ndarray, w: np.ndarray, segments: int | None = None
) -> tuple[np.ndarray, np.ndarray]:
    """The impact in ``segments`` held-direction pieces per phase (see module), cushion frame."""
    if v.shape[0] == 0:
        return v.copy(), w.copy()
    out = _stepped_columns(
        m, v[:, 0], v[:, 1], w[:, 0], w[:, 1], w[:, 2], segments or m.cushion_segments
    )
    return np.stack(out[:2], axis=1), np.stack(out[2:], axis=1)


def cushion_impact(m: BallModel, v: np.ndarray, w: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """The impact under the model's cushion setting (cushion frame in and out)."""
    if m.cushion == "fine":
        return fine_impact(m, v, w)
    return stepped_impact(m, v, w)


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
    if m.cushion == "fine" or v.shape[0] == 0:
        vo, wo = cushion_impact(
            m, np.stack((cvx, cvy), axis=1), np.stack((cwx, cwy, w[:, 2]), axis=1)
        )
        ovx, ovy, owx, owy, owz = vo[:, 0], vo[:, 1], wo[:, 0], wo[:, 1], wo[:, 2]
    else:
        ovx, ovy, owx, owy, owz = _stepped_columns(
            m, cvx, cvy, cwx, cwy, w[:, 2], m.cushion_segments
        )
    v2 = np.empty_like(v)
    w2 = np.empty_like(w)
    mnx = -nx
    v2[:, 0] = ny * ovx + nx * ovy
    v2[:, 1] = mnx * ovx + ny * ovy
    w2[:, 0] = ny * owx + nx * owy
    w2[:, 1] = mnx * owx + ny * owy
    w2[:, 2] = owz
    return v2, w2
