"""Weekly trends: make rates by ISO week in the player's zone, and local calendar days."""

from __future__ import annotations

import time
from collections.abc import Sequence
from dataclasses import dataclass
from datetime import date, datetime, timedelta, tzinfo

import numpy as np

from ..records import Attempt
from .rates import Rate, group_rates, wilson

EPOCH = date(1970, 1, 1)
"""Day 0 of the day numbers (``local_days``)."""


@dataclass(frozen=True, slots=True)
class WeekRate:
    """The make rate over one ISO week (Monday to Sunday in the player's zone)."""

    year: int
    week: int
    monday: date
    rate: Rate

    @property
    def label(self) -> str:
        """ISO 8601 week label, e.g. 2026-W48."""
        return f"{self.year}-W{self.week:02d}"


def local_date(when: datetime, tz: tzinfo | None = None) -> date:
    """The calendar day of an aware instant in ``tz`` (None: the machine's local zone)."""
    return when.astimezone(tz).date()


def weekly_from_days(
    days: Sequence[date], hits: Sequence[bool], confidence: float = 0.95
) -> list[WeekRate]:
    """Weekly rates from each attempt's local date and result; weeks with no practice between
    the first and the last appear with no attempts, so a trend line keeps its time axis."""
    if not days:
        return []
    counts: dict[date, list[int]] = {}
    for d, h in zip(days, hits, strict=True):
        monday = d - timedelta(days=d.weekday())
        c = counts.setdefault(monday, [0, 0])
        c[0] += bool(h)
        c[1] += 1
    first, last = min(counts), max(counts)
    out: list[WeekRate] = []
    m = first
    while m <= last:
        k, n = counts.get(m, (0, 0))
        iso = m.isocalendar()
        out.append(WeekRate(iso.year, iso.week, m, wilson(k, n, confidence)))
        m += timedelta(days=7)
    return out


def weekly(
    attempts: Sequence[Attempt], tz: tzinfo | None = None, confidence: float = 0.95
) -> list[WeekRate]:
    """Make rate by ISO week (ISO 8601 week numbering) in the player's time zone."""
    return weekly_from_days(
        [local_date(a.when, tz) for a in attempts],
        [a.result == "hit" for a in attempts],
        confidence,
    )


def local_days(ts: np.ndarray, tz: tzinfo | None = None) -> np.ndarray:
    """Local calendar day of each UTC timestamp (days since 1970-01-01 in ``tz``).

    Offsets are looked up once per distinct UTC hour; an hour holding a change of offset (a
    daylight-saving switch off the hour) is resolved attempt by attempt, so the result equals
    ``local_date`` for every attempt.
    """
    if len(ts) == 0:
        return np.zeros(0, np.int64)
    hours = np.floor(ts / 3600.0).astype(np.int64)
    # every distinct hour starts some run of equal hours: sort only the runs' first values
    uniq = np.unique(hours[np.flatnonzero(np.r_[True, hours[1:] != hours[:-1]])])
    inv = np.searchsorted(uniq, hours)

    def offset(t: float) -> float:
        if tz is None:
            # the machine's zone: what ``astimezone()`` of the instant asks the C library for
            return float(time.localtime(t).tm_gmtoff)
        off = datetime.fromtimestamp(t, tz).utcoffset()
        return off.total_seconds() if off is not None else 0.0

    lo = np.array([offset(float(h) * 3600.0) for h in uniq])
    hi = np.array([offset(float(h) * 3600.0 + 3599.999) for h in uniq])
    offs = lo[inv]
    mixed = np.flatnonzero(lo != hi)
    if len(mixed):
        for i in np.flatnonzero(np.isin(inv, mixed)):
            offs[i] = offset(float(ts[i]))
    day: np.ndarray = np.floor((ts + offs) / 86400.0)
    return day.astype(np.int64)


def day_of(d: int) -> date:
    return EPOCH + timedelta(days=int(d))


def weeks_from_day_numbers(
    days: np.ndarray, hit: np.ndarray, confidence: float = 0.95
) -> list[WeekRate]:
    """Weekly rates from local day numbers (the vectorised ``weekly_from_days``)."""
    if len(days) == 0:
        return []
    monday = days - (days + 3) % 7  # 1970-01-01 was a Thursday (weekday 3, Monday = 0)
    first = int(monday.min())
    slot = (monday - first) // 7
    count = int(slot.max()) + 1
    rates = group_rates(slot, hit, count, confidence)
    out = []
    for i, r in enumerate(rates):
        m = day_of(first + 7 * i)
        iso = m.isocalendar()
        out.append(WeekRate(iso.year, iso.week, m, r))
    return out
