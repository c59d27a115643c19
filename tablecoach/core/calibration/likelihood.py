"""The evidence against the model's outcomes: two residuals a shot, each with a slope.

Row i of the evidence gives two residuals, both in noise units (their squares are minus twice
the log-likelihood, up to a constant):

- position: a logged landing against the model's (diamonds round the table / the landing
  noise); for a hit, the censored term "the path passed within the target's window" on the
  model's closest approach of the target point; for a jaw the same with the pocket's mouth;
  nothing for a short miss;
- reach: the censored term "the ball got to the landing rail" (landings, and hits or jaws whose
  modelled ball stopped before the target) or "it stopped before it" (a short miss), on the
  model's signed reach (model.Outcomes).

A modelled ball that stops short or drops in a pocket keeps a slope: its landing is its last
line of travel carried to a wall or the pocket's mouth crossing, and its reach says how far
short it is.
"""

from __future__ import annotations

import math

import numpy as np

from .evidence import HIT, JAW, LANDING, SHORT, Evidence
from .model import Outcomes, wrap

NOISE_FLOOR = 0.15
"""Smallest landing-noise scale the fit assumes, in diamonds. A player reads a landing to about
a tenth of a diamond (common practice, no source), and the model's own landings are no finer:
on three-rail kicks they jump by 0.15 to 0.45 diamond for changes of a few hundredths of a
prior sd in the cloth or cushion (measured on the test table of tests/core/calibration, where
a path meets a rail near a corner), so residuals smaller than this are not told apart."""

DEFAULT_NOISE = 0.2
"""The landing noise (diamonds) assumed when there are too few logged landings to measure it
(fewer than MIN_FOR_NOISE): a judgement, about the scatter of a steady player's kicks."""

MIN_FOR_NOISE = 8

MAD_TO_SD = 1.4826
"""Median absolute deviation to standard deviation for Gaussian noise (1 / Phi^-1(3/4))."""

REACH_SD = 0.3
"""Noise of how far a ball gets (metres): about a diamond either way on a 9-ft table, the
scatter of a steady player's pace (a judgement, common practice, no source)."""

NO_OUTCOME = 3.0
"""Residual (noise units) of a shot the model cannot play at all (a bank whose cue ball never
reaches the object ball): the robust loss treats it as an outlier."""

CAUCHY_C = 2.3849
"""Cauchy loss tuning constant: 95 % asymptotic efficiency under Gaussian noise (Holland and
Welsch, "Robust regression using iteratively reweighted least-squares", 1977)."""


def censored_window(m: np.ndarray, w: np.ndarray, sd: np.ndarray | float) -> np.ndarray:
    """Signed residual of "the true miss lies within +-w", the model's miss being m and the
    player's scatter sd (all metres): P(m) = Phi((w - m)/sd) - Phi((-w - m)/sd) and the residual
    sign(m) sqrt(2 (log P(0) - log P(m))). Zero at m = 0, smooth through it, and growing like
    (|m| - w)/sd far outside the window."""
    from scipy.special import log_ndtr  # type: ignore[import-untyped]

    def logp(x: np.ndarray) -> np.ndarray:
        a = (w - x) / sd
        b = (-w - x) / sd
        la, lb = log_ndtr(a), log_ndtr(b)
        return np.asarray(la + np.log1p(-np.exp(np.minimum(lb - la, -1e-300))), dtype=float)

    am = np.abs(m)
    d = np.maximum(logp(np.zeros_like(am)) - logp(am), 0.0)
    return np.asarray(np.sign(m) * np.sqrt(2.0 * d), dtype=float)


def censored_above(x: np.ndarray, sd: float) -> np.ndarray:
    """Residual of "the true value is at least 0", the model's value being x with scatter sd:
    sqrt(-2 log Phi(x / sd)); near 0 far above, growing like -x/sd far below."""
    from scipy.special import log_ndtr

    return np.asarray(np.sqrt(np.maximum(-2.0 * log_ndtr(x / sd), 0.0)), dtype=float)


def landing_noise(ev: Evidence, out: Outcomes) -> float:
    """The robust scale (diamonds) of the landing residuals: 1.4826 x their median absolute
    value (the model should be unbiased), never below NOISE_FLOOR; DEFAULT_NOISE when fewer
    than MIN_FOR_NOISE landings can be compared."""
    r = landing_residuals(ev, out)
    r = r[np.isfinite(r)]
    if r.size < MIN_FOR_NOISE:
        return DEFAULT_NOISE
    return max(float(np.median(np.abs(r))) * MAD_TO_SD, NOISE_FLOOR)


def landing_residuals(ev: Evidence, out: Outcomes) -> np.ndarray:
    """Logged minus modelled landing (diamonds round the table) of every LANDING row; nan for
    other rows and where the model has no landing."""
    r = wrap(ev.observed - out.landing)
    return np.where(ev.kind == LANDING, r, np.nan)


def residuals(
    ev: Evidence, out: Outcomes, noise: float, diamond: float, anchor: np.ndarray
) -> np.ndarray:
    """The 2n residuals (position then reach, row by row) in noise units. Outcomes of shape
    (k, n) (k sets of the n rows) give residuals of shape (k, 2n).

    ``noise`` is the landing noise in diamonds and ``diamond`` a diamond in metres (the scatter
    at the target is taken as the landing noise there); ``anchor`` a landing (diamonds round
    the table) to pull a hit's path back toward when the model's path leaves the family's order
    and so has no closest approach (the model's landing at the prior; nan: none)."""
    kind = ev.kind
    pos = np.zeros(np.shape(out.reach))
    reach = np.zeros_like(pos)
    dead = ~np.isfinite(out.reach)
    # measured landings
    lr = wrap(ev.observed - out.landing) / noise
    is_l = kind == LANDING
    pos = np.where(is_l & np.isfinite(lr), lr, pos)
    # hits and jaws: within the window round the target point
    sd_m = noise * diamond
    win = np.where(kind == JAW, ev.mouth, ev.window)
    is_w = (kind == HIT) | (kind == JAW)
    has_m = np.isfinite(out.miss)
    cols = np.flatnonzero(is_w)  # the censored terms cost: only the rows that have them
    cw = np.zeros_like(pos)
    m_w = out.miss[..., cols]
    cw[..., cols] = censored_window(np.where(np.isfinite(m_w), m_w, 0.0), win[cols], sd_m)
    pos = np.where(is_w & has_m, cw, pos)
    ar = wrap(anchor - out.landing) / noise
    pos = np.where(is_w & ~has_m & np.isfinite(ar), ar, pos)
    # how far the ball gets
    rr = np.where(np.isfinite(out.reach), out.reach, 0.0)
    is_s = kind == SHORT
    up_c = np.flatnonzero(~is_s)
    dn_c = np.flatnonzero(is_s)
    up = np.zeros_like(pos)
    down = np.zeros_like(pos)
    up[..., up_c] = censored_above(rr[..., up_c], REACH_SD)
    down[..., dn_c] = censored_above(-rr[..., dn_c], REACH_SD)
    reach = np.where(is_l | (is_w & ~has_m), up, reach)
    reach = np.where(is_s, down, reach)
    pos = np.where(dead & (kind != SHORT), NO_OUTCOME, pos)
    reach = np.where(dead, NO_OUTCOME, reach)
    both = np.stack((pos, reach), axis=-1)
    return both.reshape(*both.shape[:-2], -1)


SLOPE_STEP = 1e-6
"""Step (diamonds; metres) of the forward differences in residual_slopes."""


def residual_slopes(
    ev: Evidence, out: Outcomes, noise: float, diamond: float, anchor: np.ndarray
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Each row's residuals against its own outcomes: (d position / d outcome, d reach / d
    reach, uses_miss). A row's position residual follows its closest approach of the target
    (``uses_miss``: a hit or jaw whose modelled path passes the target) or else its landing;
    its reach residual follows its reach. Every outcome moves by SLOPE_STEP at once in one
    evaluation (each residual sees only one of them)."""
    h = SLOPE_STEP
    r0 = residuals(ev, out, noise, diamond, anchor).reshape(-1, 2)
    moved = Outcomes(out.landing + h, out.reach + h, out.miss + h)
    r1 = residuals(ev, moved, noise, diamond, anchor).reshape(-1, 2)
    d = (r1 - r0) / h
    uses_miss = ((ev.kind == HIT) | (ev.kind == JAW)) & np.isfinite(out.miss)
    return d[:, 0], d[:, 1], uses_miss


def robust_loss(n_data: int):  # type: ignore[no-untyped-def]
    """A loss for scipy.optimize.least_squares: the Cauchy rho on the first ``n_data``
    residuals (a few mislogged shots are set aside rather than dragging the fit) and plain
    squares on the rest (the priors stay Gaussian). scipy passes z = f^2 and expects rho(z),
    rho'(z), rho''(z) stacked."""
    c2 = CAUCHY_C**2

    def loss(z: np.ndarray) -> np.ndarray:
        out = np.empty((3, z.size))
        zd = z[:n_data]
        t = 1.0 + zd / c2
        out[0, :n_data] = c2 * np.log1p(zd / c2)
        out[1, :n_data] = 1.0 / t
        out[2, :n_data] = -1.0 / (c2 * t * t)
        out[0, n_data:] = z[n_data:]
        out[1, n_data:] = 1.0
        out[2, n_data:] = 0.0
        return out

    return loss


def cauchy_weights(r: np.ndarray) -> np.ndarray:
    """rho'(r^2) of the Cauchy loss: each residual's weight at the optimum."""
    return np.asarray(1.0 / (1.0 + r * r / CAUCHY_C**2), dtype=float)


def rms(r: np.ndarray) -> float:
    r = r[np.isfinite(r)]
    return float(math.sqrt(np.mean(r * r))) if r.size else math.nan
