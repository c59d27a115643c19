"""The store's connection: checking a file before SQLite opens it, creating, opening and
migrating it, the integrity check, closing, and the read and write transactions."""

from __future__ import annotations

import contextlib
import errno
import os
import sqlite3
import threading
import uuid
from collections.abc import Iterator
from contextlib import contextmanager
from pathlib import Path
from types import TracebackType
from typing import Self

from .. import validate
from .errors import DamagedStoreError, StoreError, fix_hint, sqlite_error
from .schema import (
    APPLICATION_ID,
    MIGRATIONS,
    SCHEMA_V1,
    SCHEMA_VERSION,
    V1_TABLES,
    V2_TABLES,
    V4_TABLES,
    V5_TABLES,
    run_script,
)

BUSY_TIMEOUT_MS = 5000
"""How long a write waits for another window's transaction before giving up."""

SQLITE_MAGIC = b"SQLite format 3\x00"
"""The first 16 bytes of every SQLite 3 database file (sqlite.org/fileformat.html, 1.3)."""


def _precheck(path: Path) -> None:
    """Refuse a file that is not an SQLite database or is shorter than its header says.

    Header layout from the SQLite file format (sqlite.org/fileformat.html, 1.3): magic string
    at 0, page size at 16 (1 means 65536), change counter at 24, page count at 28, valid when
    the 'version-valid-for' number at 92 equals the change counter.
    """
    if not path.exists():
        return
    if path.is_dir():
        raise StoreError(f"{path} is a folder, not a database file; remove it or pick another")
    size = path.stat().st_size
    if size == 0:
        raise StoreError(
            f"the database {path} is an empty file (0 bytes), not a practice store; it was left "
            f"untouched: restore your backup ('tablecoach restore FILE'), or remove {path.name} "
            "to start a new store"
        )
    with path.open("rb") as fh:
        head = fh.read(100)
    if len(head) < 100 or not head.startswith(SQLITE_MAGIC):
        what = "too short to be a database" if len(head) < 100 else "not an SQLite file"
        raise StoreError(f"{path} is not a tablecoach database ({what}); {fix_hint(path)}")
    page = int.from_bytes(head[16:18], "big")
    page = 65536 if page == 1 else page
    pages = int.from_bytes(head[28:32], "big")
    counter_ok = head[24:28] == head[92:96]
    wal = path.with_name(path.name + "-wal")
    if wal.exists():
        return  # another window may be mid-checkpoint; SQLite itself will judge the file
    if page < 512 or size % page != 0 or (counter_ok and pages and size < pages * page):
        raise StoreError(
            f"the database {path} is damaged (the file is truncated: {size} bytes); "
            f"{fix_hint(path)}, or restore it from a backup"
        )


def _rollback(c: sqlite3.Connection) -> None:
    """Roll back if a transaction is still open: after SQLITE_FULL, an I/O error or an
    interrupt SQLite may have rolled it back already (sqlite.org/lang_transaction.html)."""
    if c.in_transaction:
        with contextlib.suppress(sqlite3.Error):
            c.execute("ROLLBACK")


def _create(path: Path) -> None:
    """Make a new, empty store at ``path`` whole or not at all.

    The schema is built in a private file beside it, then hard-linked into place, which fails
    if another window made one first (theirs is kept). So a file at ``path`` is never a
    half-made store, and an empty file there is never one of ours.
    """
    tmp = path.with_name(f".{path.name}.new-{os.getpid()}-{uuid.uuid4().hex[:8]}")
    try:
        conn = sqlite3.connect(str(tmp), isolation_level=None)
        try:
            Connection(conn, tmp).build_schema()
        finally:
            conn.close()
        with tmp.open("rb") as fh:
            os.fsync(fh.fileno())
        try:
            os.link(tmp, path)
        except FileExistsError:
            pass  # another window created it meanwhile: use theirs
        except OSError:  # no hard links here (some network or FAT disks)
            if not path.exists():
                os.replace(tmp, path)
    except sqlite3.Error as exc:
        raise sqlite_error(path, exc) from None
    except OSError as exc:
        if exc.errno in (errno.ENOSPC, errno.EDQUOT):
            raise sqlite_error(path, sqlite3.OperationalError("database or disk is full")) from None
        raise StoreError(
            f"cannot create the database {path} ({exc.strerror or exc}); use --data-dir to pick "
            "a folder you can write to"
        ) from None
    finally:
        tmp.unlink(missing_ok=True)
        for extra in ("-journal", "-wal", "-shm"):
            tmp.with_name(tmp.name + extra).unlink(missing_ok=True)


class Connection:
    """A connection to the practice database: opening, the integrity check, transactions.

    ``Store`` (the repositories over it) is what callers open: ``Store.open(path)``; safe
    across threads.
    """

    def __init__(self, conn: sqlite3.Connection, path: Path) -> None:
        self._conn = conn
        self.path = path
        self._lock = threading.RLock()
        self._check_lock = threading.Lock()
        self._checked: StoreError | bool = False  # True: passed; an error: failed
        self._checker: threading.Thread | None = None
        self._broken = False  # damage seen: close without folding the WAL into the file
        self._had_wal = path.with_name(path.name + "-wal").exists()

    # ----- opening and closing ---------------------------------------------------------------
    @classmethod
    def open(cls, path: Path | str) -> Self:
        """Open the database at ``path``, creating it or migrating an older schema.

        A file that is not a tablecoach database, is damaged or comes from a newer version
        raises StoreError and is not modified.
        """
        path = Path(path)
        _precheck(path)
        if not path.exists():
            try:
                path.parent.mkdir(parents=True, exist_ok=True)
            except OSError as exc:
                raise StoreError(
                    f"cannot create the data folder {path.parent} ({exc.strerror}); "
                    "use --data-dir to pick a folder you can write to"
                ) from None
            _create(path)
        try:
            conn = sqlite3.connect(
                str(path),
                timeout=BUSY_TIMEOUT_MS / 1000.0,
                isolation_level=None,
                check_same_thread=False,
            )
        except sqlite3.Error as exc:
            raise StoreError(f"cannot open the database {path} ({exc})") from None
        store = cls(conn, path)
        try:
            store._setup()
        except sqlite3.DatabaseError as exc:
            err = store._damaged(exc)
            store.close()
            raise err from None
        except BaseException:
            store.close()
            raise
        return store

    def _damaged(self, exc: sqlite3.Error) -> StoreError:
        err = sqlite_error(self.path, exc)
        if isinstance(err, DamagedStoreError):
            self._broken = True
        return err

    def _inspect(self) -> tuple[int, int, set[str]]:
        c = self._conn
        app = c.execute("PRAGMA application_id").fetchone()[0]
        version = c.execute("PRAGMA user_version").fetchone()[0]
        names = {
            r[0]
            for r in c.execute(
                "SELECT name FROM sqlite_master WHERE type = 'table' AND name NOT LIKE 'sqlite_%'"
            )
        }
        return app, version, names

    def _check_kind(self, app: int, version: int, names: set[str]) -> None:
        p = self.path
        if not names and version == 0:
            return  # a new, empty file
        if app != APPLICATION_ID:
            raise StoreError(
                f"{p} is an SQLite database from another program, not tablecoach's; {fix_hint(p)}"
            )
        if version > SCHEMA_VERSION:
            raise StoreError(
                f"the database {p} was written by a newer tablecoach (schema {version}, this "
                f"one reads up to {SCHEMA_VERSION}); upgrade tablecoach to use it"
            )
        expected = {1: V1_TABLES, 2: V2_TABLES, 3: V2_TABLES, 4: V4_TABLES}.get(version, V5_TABLES)
        missing = expected - names
        if version < 1 or missing:
            raise StoreError(
                f"the database {p} is damaged (schema {version}, missing tables: "
                f"{', '.join(sorted(missing)) or 'all'}); {fix_hint(p)}, or restore a backup"
            )

    def _setup(self) -> None:
        c = self._conn
        c.execute(f"PRAGMA busy_timeout = {BUSY_TIMEOUT_MS}")
        self._check_kind(*self._inspect())
        if str(c.execute("PRAGMA journal_mode").fetchone()[0]).lower() != "wal":
            self.check()  # switching to WAL writes the header: never into a damaged file
        c.execute("PRAGMA journal_mode = WAL")
        # FULL: a committed attempt survives a power cut too, not only a crash of the program.
        c.execute("PRAGMA synchronous = FULL")
        c.execute("PRAGMA foreign_keys = ON")
        if self._inspect()[1] < SCHEMA_VERSION:
            self.check()  # a migration writes: never into a damaged file
            self._migrate()

    def build_schema(self) -> None:
        """Build the schema in a brand-new file (nothing in it to check first)."""
        self._checked = True
        self._migrate()

    def _migrate(self) -> None:
        """Create the schema or bring it up to date, in one transaction (re-checked inside it,
        so two windows opening an old file at once migrate it once)."""
        c = self._conn
        c.execute("BEGIN IMMEDIATE")
        try:
            app, version, names = self._inspect()
            self._check_kind(app, version, names)
            if version == 0:
                run_script(c, SCHEMA_V1)
                version = 1
            while version < SCHEMA_VERSION:
                MIGRATIONS[version](c)
                version += 1
                c.execute(f"PRAGMA user_version = {version}")
        except BaseException:
            _rollback(c)
            raise
        c.execute("COMMIT")

    # ----- the integrity check ------------------------------------------------------------------
    def check(self) -> None:
        """Raise StoreError if the file fails SQLite's quick integrity check.

        Run once per open store (the result is kept), before the first write: every write
        calls it, so nothing is ever written into a damaged file. It reads the file through a
        connection of its own, so reads on this one go on meanwhile (``start_check``).
        """
        with self._check_lock:
            if self._checked is False:
                self._checked = self._quick_check()
            result = self._checked
        if isinstance(result, StoreError):
            self._broken = True
            raise DamagedStoreError(str(result))

    def start_check(self) -> None:
        """Begin ``check`` on a background thread (the app calls this on opening, so that the
        first write rarely waits and the screen is drawn meanwhile)."""
        if self._checker is None and self._checked is False:
            self._checker = threading.Thread(
                target=self._check_quietly, name="tablecoach-store-check", daemon=True
            )
            self._checker.start()

    def _check_quietly(self) -> None:
        with contextlib.suppress(StoreError):  # kept in self._checked: the first write raises it
            self.check()

    def _quick_check(self) -> StoreError | bool:
        """PRAGMA quick_check on a read-only connection of its own: True if "ok"."""
        uri = self.path.resolve().as_uri() + "?mode=ro"
        try:
            conn = sqlite3.connect(uri, uri=True, timeout=BUSY_TIMEOUT_MS / 1000.0)
        except sqlite3.Error as exc:
            return sqlite_error(self.path, exc)
        try:
            rows = conn.execute("PRAGMA quick_check(1)").fetchall()
        except sqlite3.Error as exc:
            return sqlite_error(self.path, exc)
        finally:
            conn.close()
        if rows == [("ok",)]:
            return True
        said = [ln for r in rows for ln in str(r[0]).splitlines() if not ln.startswith("***")]
        first = said[0] if said else "no answer"
        return DamagedStoreError(
            f"the database {self.path} is damaged (SQLite's integrity check: "
            f"{validate.show(first, 80)}); {fix_hint(self.path)}, or restore it from a backup "
            "('tablecoach restore FILE')"
        )

    def schema_version(self) -> int:
        """The file's schema version (PRAGMA user_version)."""
        with self.reading() as c:
            return int(c.execute("PRAGMA user_version").fetchone()[0])

    def close(self) -> None:
        """Close the connection (everything is already committed).

        SQLite folds the write-ahead log into the file when its last connection closes. That is
        a write, so it is left to a store that passed the check: on a damaged file, or when a
        session that only read (and so never ran the check) finds a log left by someone else
        (a killed writer), a read-only connection is held open meanwhile and SQLite leaves the
        log beside the file as it was, for the next writer, which checks first.
        """
        with self._lock:
            wal = self.path.with_name(self.path.name + "-wal")
            try:
                foreign_log = self._checked is not True and wal.stat().st_size > 0
            except OSError:
                foreign_log = False
            if not self._broken and not foreign_log:
                self._conn.close()
                return
            guard = None
            with contextlib.suppress(sqlite3.Error):
                guard = sqlite3.connect(self.path.resolve().as_uri() + "?mode=ro", uri=True)
                guard.execute("PRAGMA user_version").fetchone()
            self._conn.close()
            if guard is not None:
                guard.close()
            with contextlib.suppress(OSError):
                if self._broken and not self._had_wal and wal.stat().st_size == 0:  # ours: tidy
                    wal.unlink()
                    self.path.with_name(self.path.name + "-shm").unlink()

    def __enter__(self) -> Self:
        return self

    def __exit__(
        self,
        exc_type: type[BaseException] | None,
        exc: BaseException | None,
        tb: TracebackType | None,
    ) -> None:
        self.close()

    # ----- transactions -----------------------------------------------------------------------
    @contextmanager
    def transaction(self) -> Iterator[sqlite3.Connection]:
        """One short write transaction after the integrity check, committed on exit, rolled
        back on any error (all or nothing)."""
        self.check()
        with self._lock:
            c = self._conn
            try:
                c.execute("BEGIN IMMEDIATE")
            except sqlite3.Error as exc:
                raise self._damaged(exc) from None
            try:
                yield c
            except sqlite3.Error as exc:
                _rollback(c)
                raise self._damaged(exc) from None
            except BaseException:
                _rollback(c)
                raise
            try:
                c.execute("COMMIT")
            except sqlite3.Error as exc:
                _rollback(c)
                raise self._damaged(exc) from None

    @contextmanager
    def reading(self) -> Iterator[sqlite3.Connection]:
        """The connection for reads (one at a time); SQLite's errors become StoreErrors."""
        with self._lock:
            try:
                yield self._conn
            except sqlite3.Error as exc:
                raise self._damaged(exc) from None

    @contextmanager
    def snapshot(self) -> Iterator[sqlite3.Connection]:
        """One read transaction: every SELECT inside sees the same moment (core/backup.py)."""
        with self.reading() as c:
            c.execute("BEGIN")
            try:
                yield c
            finally:
                _rollback(c)
