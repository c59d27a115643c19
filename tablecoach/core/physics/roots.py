"""Batched polynomial roots for event times: the first root of a quadratic or a quartic."""

from __future__ import annotations

import numpy as np

T_MIN = 1e-10
"""Roots at or below this time (s) are the event just handled, not a new one."""


def first_quadratic_root(
    c2: np.ndarray, c1: np.ndarray, c0: np.ndarray, t_max: np.ndarray
) -> np.ndarray:
    """Smallest t in (T_MIN, t_max] with c2 t^2 + c1 t + c0 = 0 and the value falling through
    zero from above (2 c2 t + c1 < 0 at the root); inf where there is none. Any array shape.

    The sign rule picks the crossing into a wall when c0 > 0 is the distance left to it.
    Uses the cancellation-free form of the quadratic formula (q = -(b + sign(b) sqrt(D)) / 2).
    """
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        return quadratic_root_quiet(c2, c1, c0, t_max)


def quadratic_root_quiet(
    c2: np.ndarray, c1: np.ndarray, c0: np.ndarray, t_max: np.ndarray
) -> np.ndarray:
    """``first_quadratic_root`` for a caller that already silences numpy's division and
    invalid-value warnings (np.errstate costs as much as several array operations)."""
    lin = np.abs(c2) < 1e-14
    disc = c1 * c1 - 4.0 * c2 * c0
    sq = np.sqrt(np.maximum(disc, 0.0))
    q = -0.5 * (c1 + np.copysign(sq, c1))
    r1 = np.where(lin, -c0 / c1, q / c2)
    r2 = np.where(lin, np.inf, c0 / q)
    ok_disc = lin | (disc >= 0)
    d2 = 2.0 * c2
    g1 = ok_disc & (r1 > T_MIN) & (r1 <= t_max) & ((d2 * r1 + c1) < 0)
    g2 = ok_disc & (r2 > T_MIN) & (r2 <= t_max) & ((d2 * r2 + c1) < 0)
    # the smaller of the good roots (the same as taking them in turn)
    best = np.minimum(np.where(g1, r1, np.inf), np.where(g2, r2, np.inf))
    return np.asarray(best)


def first_quartic_root(coef: np.ndarray, t_max: np.ndarray) -> np.ndarray:
    """Smallest real t in (T_MIN, t_max] of the quartics coef[:, 0] t^4 + ... + coef[:, 4],
    taken where the polynomial falls through zero (balls closing in); inf where none.

    Rows whose leading coefficients vanish (no acceleration) fall back to the quadratic in the
    last three coefficients. The rest are solved together as eigenvalues of their companion
    matrices (numpy.linalg.eigvals on a stack), then polished by two Newton steps.
    """
    n = coef.shape[0]
    out = np.full(n, np.inf)
    if n == 0:
        return out
    scale = np.max(np.abs(coef[:, 2:]), axis=1) + 1e-300
    small = (np.abs(coef[:, 0]) < 1e-12 * scale) & (np.abs(coef[:, 1]) < 1e-12 * scale)
    if np.count_nonzero(small):
        out[small] = first_quadratic_root(
            coef[small, 2], coef[small, 3], coef[small, 4], t_max[small]
        )
    big = ~small
    if np.count_nonzero(big):
        c = coef[big] / coef[big, :1]
        k = c.shape[0]
        comp = np.zeros((k, 4, 4))
        comp[:, 0, :] = -c[:, 1:]
        comp[:, 1, 0] = comp[:, 2, 1] = comp[:, 3, 2] = 1.0
        ev = np.linalg.eigvals(comp)
        re = ev.real
        tol = 1e-6 * (1.0 + np.abs(re))
        real = np.abs(ev.imag) <= np.maximum(tol, 1e-7)
        t = re.copy()
        for _ in range(2):  # Newton polish on the original polynomial
            p = (((c[:, :1] * t + c[:, 1:2]) * t + c[:, 2:3]) * t + c[:, 3:4]) * t + c[:, 4:5]
            dp = ((4.0 * c[:, :1] * t + 3.0 * c[:, 1:2]) * t + 2.0 * c[:, 2:3]) * t + c[:, 3:4]
            with np.errstate(divide="ignore", invalid="ignore"):
                step = np.where(np.abs(dp) > 1e-300, p / dp, 0.0)
            t = t - np.where(np.abs(step) < 1e-3 * (1.0 + np.abs(t)), step, 0.0)
        dp = ((4.0 * c[:, :1] * t + 3.0 * c[:, 1:2]) * t + 2.0 * c[:, 2:3]) * t + c[:, 3:4]
        tm = t_max[big][:, None]
        sgn = np.sign(coef[big, :1])
        good = real & (t > T_MIN) & (t <= tm) & (dp * sgn <= 0.0)
        t = np.where(good, t, np.inf)
        out[big] = t.min(axis=1)
    return out
