"""AttemptQuery: which attempts a read asks for (player, table, family, times, session)."""

from __future__ import annotations

from dataclasses import dataclass, replace
from datetime import UTC, date, datetime, time, timedelta, tzinfo
from typing import Any

from .. import validate
from .errors import StoreError
from .rows import iso_utc

FLOOR = f"{validate.YEAR_MIN:04d}-01-01T00:00:00.000000+00:00"
CEILING = f"{validate.YEAR_MAX + 1:04d}-01-01T00:00:00.000000+00:00"
"""Stored times read back lie in [FLOOR, CEILING) (``AttemptQuery.where``)."""


def local_midnight(d: date, tz: tzinfo | None) -> datetime:
    """The first instant of a local day in ``tz`` (None: the machine's zone), aware."""
    naive = datetime.combine(d, time(0, 0))
    return naive.replace(tzinfo=tz) if tz is not None else naive.astimezone()


@dataclass(frozen=True, slots=True)
class AttemptQuery:
    """Which attempts to read: each field None means any.

    ``since`` is inclusive and ``until`` exclusive; naive times are taken as UTC. Every read of
    attempts (``Store.attempts``, ``Store.count_attempts``, the columnar read) takes one.
    """

    player: str | None = None
    table: str | None = None
    family: str | None = None
    since: datetime | None = None
    until: datetime | None = None
    session: int | None = None

    def days(self, first: date | None, last: date | None, tz: tzinfo | None) -> AttemptQuery:
        """This query over whole local days ``first`` to ``last`` (both included) in ``tz``
        (None: the machine's zone); a None end is open."""
        if first is not None and last is not None and last < first:
            raise StoreError(f"the last day {last} is before the first day {first}")
        return replace(
            self,
            since=local_midnight(first, tz) if first is not None else None,
            until=local_midnight(last + timedelta(days=1), tz) if last is not None else None,
        )

    def where(self, floor: str | None = None) -> tuple[str, list[Any]]:
        """The SQL ``WHERE`` clause over the attempts table and its arguments; ``floor`` (a
        stored time) raises the lower bound on the time, so that a read resumed after a row
        (keyset paging) starts its index search there instead of stepping from the start."""
        where: list[str] = []
        args: list[Any] = []
        # A session is a few dozen attempts: with one asked for, the other terms get a unary +
        # (same values, SQLite's way to keep a term off an index) so that the planner, which
        # has no statistics, looks the session up rather than scanning a player's whole index.
        plus = "+" if self.session is not None else ""
        for col, val in (
            (plus + "player", self.player),
            (plus + "table_name", self.table),
            (plus + "family", self.family),
            ("session_id", self.session),
        ):
            if val is not None:
                where.append(f"{col} = ?")
                args.append(val)
        # Times outside the years every reader can place in any zone (validate.YEAR_MIN..MAX)
        # are refused on the way in; an older tablecoach may have stored some: they stay in the
        # file (and in backups) but are left out of what is read, so one cannot break history.
        since, until = self.since, self.until
        lo = iso_utc(since if since.tzinfo else since.replace(tzinfo=UTC)) if since else FLOOR
        hi = iso_utc(until if until.tzinfo else until.replace(tzinfo=UTC)) if until else CEILING
        where.append(f"{plus}at >= ?")
        args.append(max(lo, FLOOR, floor or FLOOR))
        where.append(f"{plus}at < ?")
        args.append(min(hi, CEILING))
        return " WHERE " + " AND ".join(where), args


EVERYTHING = AttemptQuery()
"""The query of every attempt."""
