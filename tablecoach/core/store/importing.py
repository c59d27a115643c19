"""An import in two steps: each attempt is checked once and kept in a scratch database; when
the whole file is known, the new ones move into the store in one transaction.

The scratch database is a temporary file of its own (no journal, no syncing: it is thrown away
either way), so the store is neither opened nor touched while a file is read, memory stays
that of one batch whatever the file's size, and an import stopped half way, or refused for a
bad line, leaves the store as it was. Identity and duplicates are those of
``Attempts.import_attempts``: an attempt already stored, or met earlier in the file, is
skipped; imported attempts belong to no session.
"""

from __future__ import annotations

import os
import sqlite3
import tempfile
from collections.abc import Sequence
from pathlib import Path
from types import TracebackType
from typing import Any

from ..records import Attempt
from .attempts import Attempts
from .counts import in_bulk
from .errors import StoreError
from .rows import COL_NAMES, attempt_identity, check_attempt, to_row

FIELDS = COL_NAMES[:-1]
"""The attempts columns an import fills (all but the session)."""
MOVE_CACHE_KIB = -32_768
"""The store's page cache while the new attempts move in (negative: KiB, SQLite's way)."""


class Staging:
    """Checked attempts waiting in a scratch database (a context manager that deletes it)."""

    def __init__(self, folder: str | None = None) -> None:
        fd, name = tempfile.mkstemp(prefix="tablecoach-import-", suffix=".sqlite3", dir=folder)
        os.close(fd)
        self.path = Path(name)
        self.good = 0
        try:
            self._conn: sqlite3.Connection | None = sqlite3.connect(name, isolation_level=None)
            self._conn.execute("PRAGMA journal_mode = OFF")
            self._conn.execute("PRAGMA synchronous = OFF")
            self._conn.execute("PRAGMA locking_mode = EXCLUSIVE")
            cols = ", ".join(FIELDS)
            # no index while the file is read: rows go in at the end of the table, and the
            # index of identities is built once, sorted, before the move (random inserts into
            # it cost 13 of 75 CPU s at 1M)
            self._conn.execute(f"CREATE TABLE staged (seq INTEGER PRIMARY KEY, {cols}, ident TEXT)")
        except sqlite3.Error as exc:
            self.close()
            raise self._error(exc) from None
        marks = ", ".join("?" * (len(FIELDS) + 1))
        self._insert = f"INSERT INTO staged ({', '.join(FIELDS)}, ident) VALUES ({marks})"

    def _error(self, exc: sqlite3.Error) -> StoreError:
        return StoreError(
            f"the import's scratch file {self.path} could not be written ({exc}); "
            "free some disk space in the temporary folder and import again"
        )

    def add(self, items: Sequence[Attempt]) -> None:
        """Check attempts as the store does (``rows.check_attempt``) and keep them; an attempt
        met earlier in the file moves in once."""
        self.add_checked(
            [(*to_row(a)[:-1], attempt_identity(a)) for a in map(check_attempt, items)]
        )

    def add_checked(self, rows: Sequence[tuple[Any, ...]]) -> None:
        """Keep rows that have passed the store's write checks already, each with its identity
        last: ``import_rows.checked_row`` gives them (every check ``rows.check_attempt`` makes,
        tests/core/test_import_rows.py), so they are not checked again here. A repeat of an
        earlier row is kept too; the move skips it."""
        if self._conn is None:
            raise StoreError("this import is already closed")
        try:
            self._conn.execute("BEGIN")
            self._conn.executemany(self._insert, rows)
            self._conn.execute("COMMIT")
        except sqlite3.Error as exc:
            raise self._error(exc) from None
        self.good += len(rows)

    def move_into(self, store: Attempts) -> tuple[int, int]:
        """Add the kept attempts the store does not hold yet, in file order, in one
        transaction; returns (added, duplicates skipped)."""
        if self._conn is None:
            raise StoreError("this import is already closed")
        try:
            self._conn.execute("CREATE INDEX staged_ident ON staged (ident, seq)")
        except sqlite3.Error as exc:
            raise self._error(exc) from None
        self._conn.close()
        self._conn = None
        # new: not in the store, and the first of its identity in the file
        fresh = (
            "NOT EXISTS (SELECT 1 FROM main.attempts a WHERE a.ident = s.ident) AND NOT EXISTS "
            "(SELECT 1 FROM staging.staged t WHERE t.ident = s.ident AND t.seq < s.seq)"
        )
        cols = ", ".join(FIELDS)
        with store.reading() as c:
            c.execute("ATTACH DATABASE ? AS staging", (str(self.path),))
            # the store's nine indexes take the new rows in less time with room for their pages
            # (about a third less at 100k); the cache is given back afterwards
            cache = int(c.execute("PRAGMA main.cache_size").fetchone()[0])
            c.execute(f"PRAGMA main.cache_size = {MOVE_CACHE_KIB}")
        try:
            with store.transaction() as c:
                # a new player's "created" is the time of its first attempt added (file order)
                c.execute(
                    "INSERT OR IGNORE INTO main.players (name, created) SELECT player, at FROM "
                    f"(SELECT player, at, min(seq) FROM staging.staged s WHERE {fresh} "
                    "GROUP BY player)"
                )
                # the kept zone counts: one pass over the new rows for a big import
                with in_bulk(c, self.good):
                    cur = c.execute(
                        f"INSERT INTO main.attempts ({cols}, session_id, ident) "
                        f"SELECT {cols}, NULL, ident FROM staging.staged s WHERE {fresh} "
                        "ORDER BY seq"
                    )
                    added = max(int(cur.rowcount), 0)
        finally:
            with store.reading() as c:
                c.execute("DETACH DATABASE staging")
                c.execute(f"PRAGMA main.cache_size = {cache}")
        return added, self.good - added

    def close(self) -> None:
        """Throw the scratch database away."""
        if self._conn is not None:
            self._conn.close()
            self._conn = None
        self.path.unlink(missing_ok=True)

    def __enter__(self) -> Staging:
        return self

    def __exit__(
        self,
        kind: type[BaseException] | None,
        exc: BaseException | None,
        tb: TracebackType | None,
    ) -> None:
        self.close()
