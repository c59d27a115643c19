"""The model's outcomes near a point, linear in the parameters: their slopes, the edges where
a slope says nothing, and Broyden's update of the slopes after a step."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .model import Outcomes, wrap

STEP = 0.05
"""Finite-difference step, in prior sd."""
EDGE = {"landing": 0.3, "reach": 1.0, "miss": 0.05}
"""Largest change of an outcome (diamonds; metres; metres) for one finite-difference step that
counts as a slope. A larger one has crossed an edge (a pocket mouth, a ball stopping short, a
landing on the next rail round): its slope there says nothing about the parameter, so it is
taken as zero."""


def step_changes(a: Outcomes, b: Outcomes, du: np.ndarray) -> dict[str, np.ndarray]:
    """The change of each outcome over a step of du (prior sd); nan where the outcome is
    missing at either end or changed by more than EDGE times the step's largest move (crossed
    an edge: a pocket, a stop, the next rail)."""
    scale = max(float(np.max(np.abs(du), initial=0.0)) / STEP, 1.0)
    out = {}
    for k in ("landing", "reach", "miss"):
        d = getattr(b, k) - getattr(a, k)
        if k == "landing":
            d = wrap(d)
        out[k] = np.where(np.isfinite(d) & (np.abs(d) <= EDGE[k] * scale), d, np.nan)
    return out


def slopes_of(a: Outcomes, b: Outcomes) -> dict[str, np.ndarray]:
    out = {}
    for k in ("landing", "reach", "miss"):
        d = getattr(b, k) - getattr(a, k)
        if k == "landing":
            d = wrap(d)
        out[k] = np.where(np.isfinite(d) & (np.abs(d) <= EDGE[k]), d, 0.0)
    return out


@dataclass(frozen=True, slots=True)
class Linear:
    """The model's outcomes near ``u``: ``base`` there and their slopes (n, parameters)."""

    u: np.ndarray
    base: Outcomes
    g_landing: np.ndarray
    g_reach: np.ndarray
    g_miss: np.ndarray
    fresh: bool = True
    """The table slopes were measured (finite differences) rather than Broyden-updated."""

    def at(self, u: np.ndarray) -> Outcomes:
        """The linearised outcomes at u (p,), or at each row of u (k, p): shape (k, n)."""
        du = u - self.u
        return Outcomes(
            self.base.landing + du @ self.g_landing.T,
            self.base.reach + du @ self.g_reach.T,
            self.base.miss + du @ self.g_miss.T,
        )


def broyden_update(
    g: dict[str, np.ndarray], prev: Linear, u: np.ndarray, base: Outcomes, tab: np.ndarray
) -> None:
    """Broyden's update of the table columns of the slopes ``g`` (speed columns already
    measured at u): take prev's table slopes and correct them, row by row, by the part of the
    change from prev.u to u that the new speed slopes and the old table slopes do not explain,
    spread along the whole step (its table part kept) (C. G. Broyden, "A class of methods for
    solving nonlinear simultaneous equations", Math. Comp. 19 (1965)). A row whose outcome
    jumped across an edge (slopes_of gives it no slope) keeps prev's table slopes."""
    du = u - prev.u
    dt = du[tab]
    nt = float(du @ du)  # the whole step: a step mostly of speeds corrects the table little
    for k, d in step_changes(prev.base, base, du).items():
        gk = g[k]
        old = getattr(prev, "g_" + k)
        gk[:, tab] = old[:, tab]
        if nt < 1e-12:
            continue
        ok = np.isfinite(d)
        pred = gk @ du  # speed columns new, table columns old
        r = np.where(ok, d - pred, 0.0)
        gk[:, tab] += np.outer(r, dt) / nt
