"""Hit streaks (current and best), days practised in a row, and their vectorised forms."""

from __future__ import annotations

from collections.abc import Callable, Hashable, Iterable, Sequence
from dataclasses import dataclass
from datetime import date
from typing import Any

import numpy as np

from ..records import Attempt


@dataclass(frozen=True, slots=True)
class Streak:
    """A run count: ``current`` is the run still going at the end, ``best`` the longest run."""

    current: int = 0
    best: int = 0


def streak(hits: Iterable[bool]) -> Streak:
    """Current and best run of consecutive hits in a time-ordered sequence of results."""
    best = run = 0
    for h in hits:
        if h:
            run += 1
            if run > best:
                best = run
        else:
            run = 0
    return Streak(run, best)


def streaks_by(
    attempts: Sequence[Attempt], key: Callable[[Attempt], Hashable]
) -> dict[Any, Streak]:
    """Hit streaks within each group of ``key`` (attempts already in time order)."""
    groups: dict[Any, list[bool]] = {}
    for a in attempts:
        groups.setdefault(key(a), []).append(a.result == "hit")
    return {k: streak(v) for k, v in groups.items()}


def day_streak(days: Iterable[date], today: date | None = None) -> Streak:
    """Days practised in a row.

    ``best`` is the longest run of consecutive calendar days among ``days``. ``current`` is the
    run that ends on ``today`` or on the day before (a streak is still alive until a whole day
    passes without practice); 0 if the last day practised is older. With ``today`` None the
    last day practised is taken as today.
    """
    uniq = sorted(set(days))
    if not uniq:
        return Streak(0, 0)
    best = run = 1
    for prev, cur in zip(uniq, uniq[1:], strict=False):
        run = run + 1 if (cur - prev).days == 1 else 1
        best = max(best, run)
    last = uniq[-1]
    ref = last if today is None else today
    current = run if (ref - last).days in (0, 1) else 0
    return Streak(current, best)


def group_streaks(codes: np.ndarray, hit: np.ndarray, groups: int) -> tuple[np.ndarray, np.ndarray]:
    """Current and best hit streak of each group code 0..groups-1 (time order kept within each
    group); the vectorised equal of ``streak`` applied group by group."""
    cur = np.zeros(groups, np.int64)
    best = np.zeros(groups, np.int64)
    n = len(codes)
    if n == 0:
        return cur, best
    order = np.argsort(codes, kind="stable")
    c = codes[order]
    h = hit[order]
    idx = np.arange(n)
    first = np.ones(n, bool)
    first[1:] = c[1:] != c[:-1]
    group_start = np.maximum.accumulate(np.where(first, idx, 0))
    last_miss = np.maximum.accumulate(np.where(~h, idx, -1))
    run = idx - np.maximum(last_miss, group_start - 1)
    starts = np.flatnonzero(first)
    ends = np.append(starts[1:], n) - 1
    present = c[starts]
    best[present] = np.maximum.reduceat(run, starts)
    cur[present] = run[ends]
    return cur, best


def streak_of_array(hit: np.ndarray) -> Streak:
    """``streak`` of a boolean array, vectorised."""
    cur, best = group_streaks(np.zeros(len(hit), np.int64), hit, 1)
    return Streak(int(cur[0]), int(best[0]))
