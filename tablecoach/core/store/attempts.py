"""The attempts repository: log, undo, read (as Attempts or as columns), count and import."""

from __future__ import annotations

import gc
from collections.abc import Iterator, Mapping, Sequence
from contextlib import contextmanager
from dataclasses import replace
from typing import Any

from ..records import FLAT_FIELDS, Attempt
from . import counts
from .connection import Connection
from .counts import in_bulk
from .errors import StoreError
from .query import EVERYTHING, AttemptQuery
from .rows import (
    COLS,
    FIELD_COLUMN,
    INSERT,
    attempt_identity,
    check_attempt,
    from_row,
    fromiso,
    to_row,
)

IMPORT_CHUNK = 2000
"""Attempts an import writes per transaction."""

READ_BATCH = 5000
"""Attempts ``Attempts.iter_attempts`` reads per query."""


@contextmanager
def quiet_gc() -> Iterator[None]:
    """Pause the cyclic garbage collector while many small objects are built at once (it would
    rescan every live one on each collection); restores the caller's setting."""
    was = gc.isenabled()
    gc.disable()
    try:
        yield
    finally:
        if was:
            gc.enable()


class Attempts(Connection):
    """The attempts table: every attempt is committed before ``log`` returns."""

    _counts_current = False
    """The kept zone counts were found to be this code's (``kept_cell_counts``)."""

    def log(self, attempt: Attempt) -> Attempt:
        """Validate and save one attempt, committed before returning; returns it with its id."""
        return self.log_many([attempt])[0]

    def log_many(self, items: Sequence[Attempt]) -> list[Attempt]:
        """Validate and save several attempts in one transaction (all or none); returns them
        with their ids. Each is exactly as if logged alone (sessions kept, undo works)."""
        for a in items:
            check_attempt(a)
        prepared = [(a, to_row(a), attempt_identity(a)) for a in items]
        out: list[Attempt] = []
        with self.transaction() as c, in_bulk(c, len(prepared)):
            known: set[int] = set()
            for a, row, ident in prepared:
                if a.session is not None and a.session not in known:
                    found = c.execute(
                        "SELECT 1 FROM sessions WHERE id = ?", (a.session,)
                    ).fetchone()
                    if found is None:
                        raise StoreError(f"there is no session {a.session} in {self.path}")
                    known.add(a.session)
                new_id = int(c.execute(INSERT, (*row, ident)).lastrowid or 0)
                c.execute(
                    "INSERT OR IGNORE INTO players (name, created, created_by) VALUES (?, ?, ?)",
                    (a.player, row[0], new_id),
                )
                out.append(replace(a, when=fromiso(row[0]), id=new_id))
        return out

    def undo_last(self, session_id: int) -> Attempt | None:
        """Remove the latest attempt of a session and return it (None if it has none).

        The database is left as it was before that attempt was logged: a player the attempt
        itself added is removed with it.
        """
        with self.transaction() as c:
            r = c.execute(
                f"SELECT {COLS}, id FROM attempts WHERE session_id = ? ORDER BY id DESC LIMIT 1",
                (session_id,),
            ).fetchone()
            if r is None:
                return None
            c.execute("DELETE FROM attempts WHERE id = ?", (r[-1],))
            c.execute("DELETE FROM players WHERE name = ? AND created_by = ?", (r[1], r[-1]))
        return from_row(r, r[-1])

    def attempts(self, query: AttemptQuery = EVERYTHING) -> list[Attempt]:
        """The attempts ``query`` matches, ordered by time then id."""
        where, args = query.where()
        with quiet_gc(), self.reading() as c:
            rows = c.execute(f"SELECT {COLS}, id FROM attempts{where} ORDER BY at, id", args)
            return [from_row(r, r[-1]) for r in rows.fetchall()]

    def iter_attempts(
        self, query: AttemptQuery = EVERYTHING, batch: int = READ_BATCH
    ) -> Iterator[Attempt]:
        """The attempts ``query`` matches in the order of ``attempts``, read ``batch`` rows at a
        time (keyset paging on time then id): memory stays bounded whatever the size of the
        history, and no read holds the connection between batches."""
        for rows in self.attempt_row_pages(query, batch):
            with quiet_gc():
                items = [from_row(r, r[-1]) for r in rows]
            del rows
            yield from items

    def attempt_row_pages(
        self, query: AttemptQuery = EVERYTHING, batch: int = READ_BATCH
    ) -> Iterator[list[tuple[Any, ...]]]:
        """``iter_attempts`` as the stored rows (``rows.COLS`` then the id), a page at a time:
        for a writer that needs no Attempt (``formats.jsonl_line``)."""
        after: tuple[str, int] | None = None
        while True:
            # the time bound is raised to the last row's time: the index search starts there
            where, args = query.where(None if after is None else after[0])
            page = where if after is None else where + " AND (at, id) > (?, ?)"
            more = list(args) if after is None else [*args, *after]
            with self.reading() as c:
                rows = c.execute(
                    f"SELECT {COLS}, id FROM attempts{page} ORDER BY at, id LIMIT ?",
                    (*more, max(int(batch), 1)),
                ).fetchall()
            if not rows:
                return
            after = (rows[-1][0], rows[-1][-1])
            yield rows

    def latest_attempts(
        self, query: AttemptQuery, n: int, *, zone: str | None = None, landed: bool = False
    ) -> list[Attempt]:
        """The latest ``n`` attempts ``query`` matches, oldest first (time then id), only those
        stored with the zone label ``zone`` when given, only those with an observed landing when
        ``landed``: one bounded read, whatever the size of the history."""
        where, args = query.where()
        if zone is not None:
            where += " AND zone = ?"
            args.append(zone)
        if landed:
            where += " AND landing_rail IS NOT NULL AND landing_at IS NOT NULL"
        with self.reading() as c:
            rows = c.execute(
                f"SELECT {COLS}, id FROM attempts{where} ORDER BY at DESC, id DESC LIMIT ?",
                (*args, max(int(n), 0)),
            ).fetchall()
        return [from_row(r, r[-1]) for r in reversed(rows)]

    def cell_counts(
        self,
        query: AttemptQuery,
        cell: tuple[float, float, int, int],
        bands: Mapping[str, tuple[float, float]],
        below: str,
        above: str,
    ) -> list[tuple[str, int, int, str, int, int]]:
        """Tried and made per (family, column, row, speed band) of the attempts ``query``
        matches, counted by SQLite in one aggregate query: no Attempt is built, so the cost
        is one pass over the matching rows and the memory the number of groups.

        ``cell`` is (column width, row height, columns, rows) in diamonds: the travelling
        ball's start (the object ball when it travels and is placed, else the cue ball) falls
        in column ``floor(x / width)`` and row ``floor(y / height)``, clamped to the grid.
        ``bands`` names half-open speed ranges [low, high) in m/s; a speed below them all is
        ``below``, any other ``above``. The family is "custom" where none is stored. Rows are
        (family, column, row, band, tried, made).
        """
        width, height, cols, rows_n = cell
        x = "CASE WHEN travel = 'object' AND object_x IS NOT NULL THEN object_x ELSE cue_x END"
        y = "CASE WHEN travel = 'object' AND object_x IS NOT NULL THEN object_y ELSE cue_y END"
        # x / width >= 0 truncates as floor does; a negative quotient clamps to 0 either way
        col = f"MIN(MAX(CAST(({x}) / ? AS INTEGER), 0), ?)"
        row = f"MIN(MAX(CAST(({y}) / ? AS INTEGER), 0), ?)"
        whens = " ".join("WHEN speed >= ? AND speed < ? THEN ?" for _ in bands)
        lowest = min(lo for lo, _ in bands.values())
        band = f"CASE {whens} WHEN speed < ? THEN ? ELSE ? END"
        band_args: list[Any] = []
        for name, (lo, hi) in bands.items():
            band_args += [float(lo), float(hi), name]
        band_args += [float(lowest), below, above]
        where, args = query.where()
        sql = (
            f"SELECT CASE WHEN family = '' THEN 'custom' ELSE family END AS f, {col} AS c, "
            f"{row} AS r, {band} AS b, COUNT(*), SUM(result = 'hit') "
            f"FROM attempts{where} GROUP BY f, c, r, b"
        )
        params = [float(width), cols - 1, float(height), rows_n - 1, *band_args, *args]
        with self.reading() as c:
            return [
                (str(f), int(cc), int(r), str(b), int(n), int(m or 0))
                for f, cc, r, b, n, m in c.execute(sql, params)
            ]

    def kept_cell_counts(
        self, player: str | None = None, table: str | None = None
    ) -> list[tuple[str, int, int, str, int, int]]:
        """Tried and made per (family, column, row, speed band) of the attempts of ``player``
        on ``table`` (None: any), as ``cell_counts`` aggregates them for that query, read from
        the kept counts: a few rows per zone, whatever the size of the history. Rows are
        (family, column, row, band, tried, made)."""
        if not self._counts_current:
            with self.reading() as c:
                current = counts.is_current(c)
            if not current:  # the code's cells or bands changed: count again, once
                with self.transaction() as c:
                    if not counts.is_current(c):
                        counts.install(c)
            self._counts_current = True
        where: list[str] = []
        args: list[str] = []
        for col, val in (("player", player), ("table_name", table)):
            if val is not None:
                where.append(f"{col} = ?")
                args.append(val)
        sql = (
            "SELECT family, cell_col, cell_row, band, SUM(tried), SUM(made) "
            f"FROM {counts.COUNT_TABLE}"
            + (" WHERE " + " AND ".join(where) if where else "")
            + " GROUP BY family, cell_col, cell_row, band"
        )
        with self.reading() as c:
            return [
                (str(f), int(cc), int(r), str(b), int(n), int(m))
                for f, cc, r, b, n, m in c.execute(sql, args)
                if int(n) > 0
            ]

    def count_landed(self, query: AttemptQuery, at_most: int) -> int:
        """How many attempts ``query`` matches that carry an observed landing, counted up to
        ``at_most`` (through the landings index: bounded, whatever the size of the history)."""
        where, args = query.where()
        where += " AND landing_rail IS NOT NULL AND landing_at IS NOT NULL"
        with self.reading() as c:
            sql = f"SELECT COUNT(*) FROM (SELECT 1 FROM attempts{where} LIMIT ?)"
            return int(c.execute(sql, (*args, max(int(at_most), 0))).fetchone()[0])

    def count_attempts(self, query: AttemptQuery = EVERYTHING) -> int:
        """How many attempts ``query`` matches."""
        where, args = query.where()
        with self.reading() as c:
            return int(c.execute(f"SELECT COUNT(*) FROM attempts{where}", args).fetchone()[0])

    def attempt_columns(self, query: AttemptQuery, fields: Sequence[str]) -> list[tuple[Any, ...]]:
        """The attempts ``query`` matches (same order as ``attempts``) as columns of stored
        values, in one SELECT, without building any Attempt.

        One tuple per name in ``fields`` (records.FLAT_FIELDS names; times as stored text,
        rails as comma-joined text, absent numbers None); then the ids and the session ids (None
        where there is none).
        """
        unknown = [f for f in fields if f not in FIELD_COLUMN]
        if unknown:
            raise StoreError(
                f"unknown attempt field {unknown[0]!r}: fields are {', '.join(FLAT_FIELDS)}"
            )
        exprs = [FIELD_COLUMN[f] for f in fields]
        select = ", ".join([*exprs, "id", "session_id"])
        where, args = query.where()
        with quiet_gc():
            with self.reading() as c:
                rows = c.execute(
                    f"SELECT {select} FROM attempts{where} ORDER BY at, id", args
                ).fetchall()
            if not rows:
                return [()] * (len(exprs) + 2)
            return list(zip(*rows, strict=True))

    def import_attempts(self, items: Sequence[Attempt]) -> tuple[int, int]:
        """Add attempts from elsewhere; returns (added, duplicates skipped).

        An attempt whose full content (every field but id and session) is already stored, or
        appears earlier in ``items``, is skipped, so importing a file twice adds nothing. Imported
        attempts belong to no session. Work is committed in chunks of a few thousand, so a
        window logging meanwhile waits only briefly; an interrupted import can be run again.
        """
        checked = [check_attempt(a) for a in items]
        added = dups = 0
        seen: set[str] = set()
        for start in range(0, len(checked), IMPORT_CHUNK):
            # keys and rows are built before the write lock is taken, to keep it short
            chunk = checked[start : start + IMPORT_CHUNK]
            prepared = [(attempt_identity(a), to_row(a)[:-1]) for a in chunk]
            with self.transaction() as c, in_bulk(c, len(prepared)):
                idents = [k for k, _ in prepared]
                stored: set[str] = set()
                for q in range(0, len(idents), 500):
                    part = idents[q : q + 500]
                    marks = ", ".join("?" * len(part))
                    stored.update(
                        r[0]
                        for r in c.execute(
                            f"SELECT ident FROM attempts WHERE ident IN ({marks})", part
                        )
                    )
                rows = []
                players: dict[str, str] = {}
                for ident, row in prepared:
                    if ident in seen or ident in stored:
                        dups += 1
                        continue
                    seen.add(ident)
                    rows.append((*row, None, ident))
                    players.setdefault(row[1], row[0])
                c.executemany(INSERT, rows)
                c.executemany(
                    "INSERT OR IGNORE INTO players (name, created) VALUES (?, ?)",
                    players.items(),
                )
                added += len(rows)
        return added, dups
