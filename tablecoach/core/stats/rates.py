"""Make rates with their Wilson score intervals, for a set of attempts or groups of them."""

from __future__ import annotations

import math
from collections.abc import Callable, Hashable, Iterable
from dataclasses import dataclass
from statistics import NormalDist
from typing import Any

import numpy as np

from ..records import Attempt


@dataclass(frozen=True, slots=True)
class Rate:
    """A make rate: ``hits`` of ``attempts``, with its Wilson score interval ``low``..``high``.

    ``rate`` is None when there are no attempts (the interval is then 0..1).
    """

    hits: int
    attempts: int
    rate: float | None
    low: float
    high: float
    confidence: float = 0.95


def wilson(hits: int, n: int, confidence: float = 0.95) -> Rate:
    """The make rate with its Wilson score interval (no continuity correction).

    E. B. Wilson (1927), "Probable inference, the law of succession, and statistical
    inference", J. Amer. Statist. Assoc. 22 (158), 209-212: with p = k/n and z the normal
    quantile for the confidence level, the bounds are
    (p + z^2/2n +- z sqrt(p(1-p)/n + z^2/4n^2)) / (1 + z^2/n).
    """
    if n < 0 or hits < 0 or hits > n:
        raise ValueError(f"a rate needs 0 <= hits <= attempts, got {hits} of {n}")
    if not (0.0 < confidence < 1.0):
        raise ValueError(f"confidence {confidence:g} must lie strictly between 0 and 1")
    if n == 0:
        return Rate(0, 0, None, 0.0, 1.0, confidence)
    z = NormalDist().inv_cdf(0.5 + confidence / 2.0)
    p = hits / n
    z2 = z * z
    denom = 1.0 + z2 / n
    centre = (p + z2 / (2.0 * n)) / denom
    half = z * math.sqrt(p * (1.0 - p) / n + z2 / (4.0 * n * n)) / denom
    low = 0.0 if hits == 0 else max(0.0, centre - half)
    high = 1.0 if hits == n else min(1.0, centre + half)
    return Rate(hits, n, p, low, high, confidence)


def rate_of(attempts: Iterable[Attempt], confidence: float = 0.95) -> Rate:
    """The make rate of a set of attempts."""
    n = k = 0
    for a in attempts:
        n += 1
        k += a.result == "hit"
    return wilson(k, n, confidence)


def rates_by(
    attempts: Iterable[Attempt], key: Callable[[Attempt], Hashable], confidence: float = 0.95
) -> dict[Any, Rate]:
    """Make rates for each group of ``key``."""
    counts: dict[Any, list[int]] = {}
    for a in attempts:
        c = counts.setdefault(key(a), [0, 0])
        c[0] += a.result == "hit"
        c[1] += 1
    return {k: wilson(h, n, confidence) for k, (h, n) in counts.items()}


def group_rates(
    codes: np.ndarray, hit: np.ndarray, groups: int, confidence: float = 0.95
) -> list[Rate]:
    """The Wilson rate of each group code 0..groups-1."""
    n = np.bincount(codes, minlength=groups)
    k = np.bincount(codes, weights=hit.astype(np.float64), minlength=groups)
    return [wilson(int(k[g]), int(n[g]), confidence) for g in range(groups)]
