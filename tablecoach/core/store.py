"""The practice database: SQLite schema, migrations, players, tables, sessions and attempts.

One file (``paths.db_path()``), opened in WAL mode with a busy timeout so that two app windows
can log into it at once. Every write is one short ``BEGIN IMMEDIATE`` transaction; an attempt is
committed before ``log`` returns. A file that is not a tablecoach database, or is damaged, is
never written to: opening it raises a StoreError naming the file and what to do.
"""

from __future__ import annotations

import contextlib
import errno
import gc
import hashlib
import json
import math
import os
import sqlite3
import threading
import uuid
from collections.abc import Iterator, Sequence
from contextlib import contextmanager
from dataclasses import dataclass, replace
from datetime import UTC, datetime, timedelta
from pathlib import Path
from types import TracebackType
from typing import Any

import numpy as np

from . import validate
from .records import FLAT_FIELDS, Attempt, ShotRecord, flatten, utc_now, validate_attempt
from .table import BUILTIN_TABLES, TableError, TableSpec
from .table_files import table_from_mapping, table_to_mapping

SCHEMA_VERSION = 3
"""The schema this code writes (PRAGMA user_version). Version 1 is the first schema."""

APPLICATION_ID = 0x74636F61
"""PRAGMA application_id marking a tablecoach database ('tcoa' in ASCII)."""

BUSY_TIMEOUT_MS = 5000
"""How long a write waits for another window's transaction before giving up."""

_SQLITE_MAGIC = b"SQLite format 3\x00"
"""The first 16 bytes of every SQLite 3 database file (sqlite.org/fileformat.html, 1.3)."""

_IMPORT_CHUNK = 2000


class StoreError(ValueError):
    """The database cannot be used as asked; the message names the file and what to do."""


class DamagedStoreError(StoreError):
    """The file is damaged (SQLite says so, or fails the integrity check)."""


@dataclass(frozen=True, slots=True)
class SessionInfo:
    """One practice session with its attempt and hit counts."""

    id: int
    player: str
    table: str
    drill: str
    started: datetime
    ended: datetime | None
    attempts: int
    hits: int


# ----- schema -------------------------------------------------------------------------------

_SCHEMA_V1 = f"""
PRAGMA application_id = {APPLICATION_ID};
CREATE TABLE players (
    name TEXT PRIMARY KEY,
    created TEXT NOT NULL
);
CREATE TABLE tables (
    name TEXT PRIMARY KEY,
    spec TEXT NOT NULL,
    saved TEXT NOT NULL
);
CREATE TABLE sessions (
    id INTEGER PRIMARY KEY,
    player TEXT NOT NULL,
    table_name TEXT NOT NULL,
    drill TEXT NOT NULL DEFAULT '',
    started TEXT NOT NULL,
    ended TEXT
);
CREATE TABLE attempts (
    id INTEGER PRIMARY KEY,
    session_id INTEGER REFERENCES sessions(id),
    at TEXT NOT NULL,
    player TEXT NOT NULL,
    table_name TEXT NOT NULL,
    travel TEXT NOT NULL,
    rails TEXT NOT NULL,
    family TEXT NOT NULL,
    pocket TEXT,
    target_x REAL,
    target_y REAL,
    cue_x REAL NOT NULL,
    cue_y REAL NOT NULL,
    object_x REAL,
    object_y REAL,
    speed REAL NOT NULL,
    english REAL NOT NULL,
    follow REAL NOT NULL,
    aim_rail TEXT NOT NULL,
    aim_given REAL NOT NULL,
    aim_used REAL NOT NULL,
    result TEXT NOT NULL,
    landing_rail TEXT NOT NULL,
    landing_at REAL NOT NULL,
    note TEXT NOT NULL DEFAULT ''
);
CREATE INDEX attempts_session ON attempts(session_id);
"""
"""The first schema (version 1), kept verbatim: new databases are built from it and migrated."""

_V1_TABLES = {"players", "tables", "sessions", "attempts"}
_V2_TABLES = _V1_TABLES | {"calibrations"}


def _run_script(conn: sqlite3.Connection, script: str) -> None:
    """Run statements one by one inside the caller's transaction (``executescript`` would
    commit it first). The scripts here hold no semicolons inside literals."""
    for stmt in script.split(";"):
        if stmt.strip():
            conn.execute(stmt)


def _migrate_1_to_2(conn: sqlite3.Connection) -> None:
    """Version 2: model/drill/zone and an identity key on attempts, history indexes,
    calibrations, and which attempt created a player (so undo can remove it again)."""
    _run_script(
        conn,
        """
        ALTER TABLE attempts ADD COLUMN model TEXT NOT NULL DEFAULT 'ideal';
        ALTER TABLE attempts ADD COLUMN drill TEXT NOT NULL DEFAULT '';
        ALTER TABLE attempts ADD COLUMN zone TEXT NOT NULL DEFAULT '';
        ALTER TABLE attempts ADD COLUMN ident TEXT;
        ALTER TABLE players ADD COLUMN created_by INTEGER;
        CREATE TABLE calibrations (
            id INTEGER PRIMARY KEY,
            table_name TEXT NOT NULL,
            player TEXT NOT NULL,
            params TEXT NOT NULL,
            attempts INTEGER NOT NULL,
            at TEXT NOT NULL
        );
        """,
    )
    # the identities are set again by the step to version 3 (miss_kind enters them)
    v2_cols = ", ".join(c for c in _COL_NAMES if c != "miss_kind")
    rows = conn.execute(f"SELECT {v2_cols}, id FROM attempts").fetchall()
    conn.executemany(
        "UPDATE attempts SET ident = ? WHERE id = ?",
        ((attempt_identity(_from_row((*r[:26], None, r[26]))), r[-1]) for r in rows),
    )
    _run_script(conn, _HISTORY_INDEXES)
    _run_script(
        conn,
        """
        CREATE INDEX sessions_player ON sessions(player, table_name);
        CREATE INDEX calibrations_key ON calibrations(table_name, player, id);
        """,
    )


_HISTORY_INDEXES = """
        CREATE INDEX attempts_ident ON attempts(ident);
        CREATE INDEX attempts_at ON attempts(at, id);
        CREATE INDEX attempts_player_at ON attempts(player, at);
        CREATE INDEX attempts_table_at ON attempts(table_name, at);
        CREATE INDEX attempts_family_at ON attempts(family, at);
        CREATE INDEX attempts_player_table_at ON attempts(player, table_name, at);
"""
"""The attempts indexes of version 2 on (made again when version 3 rebuilds the table)."""


def _migrate_2_to_3(conn: sqlite3.Connection) -> None:
    """Version 3: what was seen apart from what was predicted (record format version 2).

    The landing columns may be NULL (no landing observed) and ``miss_kind`` says how a miss
    ended. SQLite cannot drop a NOT NULL in place, so the attempts table is copied into one
    of the new shape (same ids, sessions and values) and its indexes made again. Version 2
    filled a hit's landing with the aim's predicted one, so hits lose it (records.upgrade_v1:
    it can be recomputed from the setup, aim and speed); misses keep theirs as "landed".
    """
    _run_script(
        conn,
        """
        CREATE TABLE attempts_v3 (
            id INTEGER PRIMARY KEY,
            session_id INTEGER REFERENCES sessions(id),
            at TEXT NOT NULL,
            player TEXT NOT NULL,
            table_name TEXT NOT NULL,
            travel TEXT NOT NULL,
            rails TEXT NOT NULL,
            family TEXT NOT NULL,
            pocket TEXT,
            target_x REAL,
            target_y REAL,
            cue_x REAL NOT NULL,
            cue_y REAL NOT NULL,
            object_x REAL,
            object_y REAL,
            speed REAL NOT NULL,
            english REAL NOT NULL,
            follow REAL NOT NULL,
            aim_rail TEXT NOT NULL,
            aim_given REAL NOT NULL,
            aim_used REAL NOT NULL,
            result TEXT NOT NULL,
            landing_rail TEXT,
            landing_at REAL,
            note TEXT NOT NULL DEFAULT '',
            model TEXT NOT NULL DEFAULT 'ideal',
            drill TEXT NOT NULL DEFAULT '',
            zone TEXT NOT NULL DEFAULT '',
            ident TEXT,
            miss_kind TEXT
        );
        INSERT INTO attempts_v3
            SELECT id, session_id, at, player, table_name, travel, rails, family, pocket,
                target_x, target_y, cue_x, cue_y, object_x, object_y, speed, english, follow,
                aim_rail, aim_given, aim_used, result,
                CASE WHEN result = 'hit' THEN NULL ELSE landing_rail END,
                CASE WHEN result = 'hit' THEN NULL ELSE landing_at END,
                note, model, drill, zone, NULL,
                CASE WHEN result = 'hit' THEN NULL ELSE 'landed' END
            FROM attempts;
        DROP TABLE attempts;
        ALTER TABLE attempts_v3 RENAME TO attempts;
        CREATE INDEX attempts_session ON attempts(session_id);
        """,
    )
    rows = conn.execute(f"SELECT {_COLS}, id FROM attempts").fetchall()
    conn.executemany(
        "UPDATE attempts SET ident = ? WHERE id = ?",
        ((attempt_identity(_from_row(r)), r[-1]) for r in rows),
    )
    _run_script(conn, _HISTORY_INDEXES)


_MIGRATIONS = {1: _migrate_1_to_2, 2: _migrate_2_to_3}
"""from-version -> step; applying them in order takes any older file to SCHEMA_VERSION."""


# ----- rows <-> attempts ----------------------------------------------------------------------

_DB_NAMES = {"when": "at", "table": "table_name"}
"""Database column names that differ from the record field names (SQL keywords avoided)."""
_COL_NAMES = (*(_DB_NAMES.get(f, f) for f in FLAT_FIELDS), "session_id")
_COLS = ", ".join(_COL_NAMES)
_INSERT = f"INSERT INTO attempts ({_COLS}, ident) VALUES ({', '.join('?' * (len(_COL_NAMES) + 1))})"


def iso_utc(when: datetime) -> str:
    """A timezone-aware time as fixed-width ISO-8601 UTC with microseconds (sorts as text)."""
    if when.tzinfo is None:
        raise StoreError("times given to the store must carry a time zone (UTC)")
    return when.astimezone(UTC).isoformat(timespec="microseconds")


def _to_row(a: Attempt) -> tuple[Any, ...]:
    """An attempt as a row in ``_COLS`` order (the flat order of records.FLAT_FIELDS)."""
    f = flatten(a)
    return (iso_utc(f[0]), *f[1:4], ",".join(f[4]), *f[5:], a.session)


def _from_row(r: Sequence[Any], id_: int | None = None) -> Attempt:
    """A row selected as ``_COLS`` (plus id) back to an Attempt (the hot path of queries)."""
    shot = ShotRecord(
        r[3],
        tuple(r[4].split(",")),
        (r[9], r[10]),
        None if r[11] is None else (r[11], r[12]),
        r[6],
        None if r[7] is None else (r[7], r[8]),
        r[5],
    )
    return Attempt(
        _fromiso(r[0]),
        r[1],
        r[2],
        shot,
        r[13],
        r[14],
        r[15],
        r[16],
        r[17],
        r[18],
        r[19],
        r[20],
        r[21],
        r[22],
        r[23],
        r[24],
        r[25],
        r[26],
        r[27],
        id_,
    )


_fromiso = datetime.fromisoformat


# ----- attempts as columns ----------------------------------------------------------------------

_TEXT_FIELDS = frozenset(
    {"player", "table", "travel", "family", "pocket", "aim_rail", "result", "landing_rail",
     "note", "model", "drill", "zone", "miss_kind"}
)  # fmt: skip
_FIELD_COLUMN = dict(zip(FLAT_FIELDS, _COL_NAMES, strict=False))
"""records.FLAT_FIELDS name -> attempts column (the two share one order)."""

KEY_FIELDS: tuple[str, ...] = (
    "player", "table", "travel", "rails", "family", "aim_rail", "result",
    "model", "drill", "zone",
)  # fmt: skip
"""Text fields with few distinct values (all NOT NULL): ``Store.columns`` reads those asked for
as one joined text per row and keeps each distinct combination once (``AttemptColumns.key``)."""

_KEY_SEP = "\x1f"
"""Joins the key fields in SQL (ASCII unit separator, char(31)); when a value holds it, the
fields are read one by one instead."""

_FLOOR = f"{validate.YEAR_MIN:04d}-01-01T00:00:00.000000+00:00"
_CEILING = f"{validate.YEAR_MAX + 1:04d}-01-01T00:00:00.000000+00:00"
"""Stored times read back lie in [_FLOOR, _CEILING) (``Store._filters``)."""
_EPOCH_DAY = datetime(1970, 1, 1).toordinal()
_ISO_LEN = 32
"""Characters in a stored time, e.g. 2026-11-30T21:00:00.000000+00:00 (``iso_utc``)."""


@dataclass(frozen=True, slots=True)
class AttemptColumns:
    """Attempts as columns, entry i of every field being attempt i, in the store's order (time,
    then id). Fields are records.FLAT_FIELDS plus ``id`` and ``session``.

    ``when`` is numpy datetime64[us] (UTC); text fields are tuples of str (``pocket`` None where
    the target is a ball); ``rails`` a tuple of rail-name tuples; numbers float64 arrays, NaN
    where a position is absent; ``id`` int64; ``session`` int64 with -1 for no session. A field
    not asked for (``Store.columns(fields=...)``) is None.

    When ``key`` is not None, ``key[i]`` indexes ``key_values``: the distinct combinations of
    the ``key_fields`` (values in that order, rails as tuples), numbered in order of first
    appearance. They hold the same values as the per-field tuples, once per combination, so
    that grouping needs no pass over the rows.
    """

    when: np.ndarray | None
    player: tuple[str, ...] | None
    table: tuple[str, ...] | None
    travel: tuple[str, ...] | None
    rails: tuple[tuple[str, ...], ...] | None
    family: tuple[str, ...] | None
    pocket: tuple[str | None, ...] | None
    target_x: np.ndarray | None
    target_y: np.ndarray | None
    cue_x: np.ndarray | None
    cue_y: np.ndarray | None
    object_x: np.ndarray | None
    object_y: np.ndarray | None
    speed: np.ndarray | None
    english: np.ndarray | None
    follow: np.ndarray | None
    aim_rail: tuple[str, ...] | None
    aim_given: np.ndarray | None
    aim_used: np.ndarray | None
    result: tuple[str, ...] | None
    landing_rail: tuple[str | None, ...] | None
    landing_at: np.ndarray | None
    note: tuple[str, ...] | None
    model: tuple[str, ...] | None
    drill: tuple[str, ...] | None
    zone: tuple[str, ...] | None
    miss_kind: tuple[str | None, ...] | None
    id: np.ndarray
    session: np.ndarray
    key: np.ndarray | None = None
    key_values: tuple[tuple[Any, ...], ...] = ()
    key_fields: tuple[str, ...] = ()

    def __len__(self) -> int:
        return len(self.id)

    def take(self, index: np.ndarray) -> AttemptColumns:
        """The attempts at ``index`` (an integer array), in that order."""
        idx = np.asarray(index, np.int64)
        picked: dict[str, Any] = {}
        for name in (*FLAT_FIELDS, "id", "session"):  # the key is dropped: its order changes
            col = getattr(self, name)
            if col is None or isinstance(col, np.ndarray):
                picked[name] = None if col is None else col[idx]
            else:
                picked[name] = tuple(col[i] for i in idx.tolist())
        return AttemptColumns(**picked)

    def flat(self, i: int) -> tuple[Any, ...]:
        """Attempt i as ``records.flatten`` gives it (every field must have been read)."""
        out: list[Any] = []
        for name in FLAT_FIELDS:
            col = getattr(self, name)
            if col is None:
                raise StoreError(f"the field {name!r} was not read into these columns")
            v = col[i]
            if name == "when":
                v = _when_of(int(v.astype(np.int64)))
            elif isinstance(v, np.floating):
                v = None if math.isnan(v) else float(v)
            out.append(v)
        return tuple(out)

    def to_attempts(self) -> list[Attempt]:
        """The columns back as Attempt objects (the slow way; every field must be read)."""
        out = []
        for i in range(len(self)):
            f = self.flat(i)
            row = (iso_utc(f[0]), *f[1:4], ",".join(f[4]), *f[5:])
            sid = int(self.session[i])
            out.append(_from_row((*row, None if sid < 0 else sid), int(self.id[i])))
        return out


def _when_of(us: int) -> datetime:
    """Microseconds since 1970-01-01 UTC as an aware datetime (what ``_fromiso`` gives)."""
    return datetime(1970, 1, 1, tzinfo=UTC) + timedelta(microseconds=us)


def _parse_times(texts: Sequence[str]) -> np.ndarray:
    """Stored times (``iso_utc`` text) as datetime64[us], without a datetime per row.

    The fixed-width text is read as bytes and its digits combined with numpy; each distinct
    calendar day is turned into a day number once (``date.toordinal``). Any text not in the
    exact ``iso_utc`` form is parsed the slow way (``datetime.fromisoformat``) instead.
    """
    n = len(texts)
    if n == 0:
        return np.zeros(0, "datetime64[us]")
    joined = "".join(texts)
    raw = None
    if len(joined) == _ISO_LEN * n and joined.isascii():
        raw = np.frombuffer(joined.encode("ascii"), np.uint8).reshape(n, _ISO_LEN)
    if raw is not None and _iso_form_ok(raw):
        d = raw.astype(np.int64) - ord("0")

        def num(a: int, b: int) -> np.ndarray:
            v = np.zeros(n, np.int64)
            for k in range(a, b):
                v = v * 10 + d[:, k]
            return v

        ymd = num(0, 4) * 10000 + num(5, 7) * 100 + num(8, 10)
        days, inv = np.unique(ymd, return_inverse=True)
        try:
            ordinals = np.array(
                [datetime(y // 10000, y // 100 % 100, y % 100).toordinal() for y in days.tolist()],
                np.int64,
            )
        except ValueError:
            ordinals = None
        hh, mm, ss = num(11, 13), num(14, 16), num(17, 19)
        if ordinals is not None and (hh < 24).all() and (mm < 60).all() and (ss < 60).all():
            secs = (ordinals[inv.reshape(-1)] - _EPOCH_DAY) * 86400 + hh * 3600 + mm * 60 + ss
            return (secs * 1_000_000 + num(20, 26)).astype("datetime64[us]")
    one = timedelta(microseconds=1)
    epoch = datetime(1970, 1, 1, tzinfo=UTC)
    us = [(_fromiso(t).astimezone(UTC) - epoch) // one for t in texts]
    return np.array(us, np.int64).astype("datetime64[us]")


def _iso_form_ok(raw: np.ndarray) -> bool:
    """Every row is ``DDDD-DD-DDTDD:DD:DD.DDDDDD+00:00`` (D a digit)."""
    pattern = b"0000-00-00T00:00:00.000000+00:00"
    digit = np.frombuffer(pattern, np.uint8) == ord("0")
    digit[-5:] = False  # the +00:00 suffix is matched exactly below
    fixed = np.frombuffer(pattern, np.uint8)
    cells = raw[:, digit]
    if not ((cells >= ord("0")) & (cells <= ord("9"))).all():
        return False
    return bool((raw[:, ~digit] == fixed[~digit]).all())


def _rails_of(texts: Sequence[str]) -> tuple[tuple[str, ...], ...]:
    cache: dict[str, tuple[str, ...]] = {}
    for t in set(texts):
        cache[t] = tuple(t.split(","))
    return tuple(map(cache.__getitem__, texts))


def _split_keys(
    texts: Sequence[str], fields: tuple[str, ...]
) -> tuple[np.ndarray, tuple[tuple[Any, ...], ...]] | None:
    """Joined key texts as (code per row, distinct combinations in order of first appearance),
    rails as tuples; None when some value holds the separator (the split would be ambiguous)."""
    distinct = tuple(dict.fromkeys(texts))
    index = {t: i for i, t in enumerate(distinct)}
    combos = []
    rails_at = fields.index("rails") if "rails" in fields else -1
    for t in distinct:
        parts: list[Any] = t.split(_KEY_SEP)
        if len(parts) != len(fields):
            return None
        if rails_at >= 0:
            parts[rails_at] = tuple(parts[rails_at].split(","))
        combos.append(tuple(parts))
    return np.fromiter(map(index.__getitem__, texts), np.int64, len(texts)), tuple(combos)


def _column(name: str, values: Sequence[Any]) -> Any:
    """One selected column as AttemptColumns holds it."""
    if name == "when":
        return _parse_times(values)
    if name == "rails":
        return _rails_of(values)
    if name in _TEXT_FIELDS:
        return tuple(values)
    return np.array(values, np.float64).reshape(-1)  # None (absent position) becomes NaN


def attempt_identity(a: Attempt) -> str:
    """The identity of an attempt for import: a hash of its full content except id and session.

    Floats enter through repr (exact), times as UTC ISO-8601 to the microsecond, so two records
    are the same attempt exactly when every exported field is equal.
    """
    f = flatten(a)
    content = [iso_utc(f[0]), *f[1:4], list(f[4]), *f[5:]]
    text = json.dumps(content, separators=(",", ":"), ensure_ascii=False)
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


# ----- checking a file before SQLite touches it ------------------------------------------------


def _fix_hint(path: Path) -> str:
    return (
        f"it was left untouched; move or rename {path.name} (or use --data-dir for another "
        "folder) to start a new database"
    )


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
    if len(head) < 100 or not head.startswith(_SQLITE_MAGIC):
        what = "too short to be a database" if len(head) < 100 else "not an SQLite file"
        raise StoreError(f"{path} is not a tablecoach database ({what}); {_fix_hint(path)}")
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
            f"{_fix_hint(path)}, or restore it from a backup"
        )


def _check_attempt(a: Attempt) -> Attempt:
    """The record checks plus what the store itself needs: a time within the years every
    reader can place in any time zone, names of 1 to 40 printable characters, bounded text."""
    try:
        validate.when(a.when)
        validate.name(a.player, "player")
        validate.name(a.table, "table")
        for key in ("note", "model", "drill", "zone"):
            validate.text(getattr(a, key), key)
    except validate.InputError as exc:
        raise StoreError(str(exc)) from None
    return validate_attempt(a)


def sqlite_error(path: Path, exc: sqlite3.Error) -> StoreError:
    """An SQLite error on ``path`` as one line that names the cause and what to do.

    The cause comes from SQLite's result code (``sqlite_errorname``, Python 3.11+), else from
    its message: a full disk, a permission problem, a failing disk, a lock held by another
    window, or a damaged file. Only the last says to restore a backup.
    """
    code = str(getattr(exc, "sqlite_errorname", "") or "")
    msg = str(exc)
    low = msg.lower()
    if code == "SQLITE_FULL" or "disk is full" in low:
        return StoreError(
            f"the disk holding {path} is full: nothing more was written and what was saved "
            "before is safe; free some space and try again"
        )
    if code.startswith(("SQLITE_READONLY", "SQLITE_PERM", "SQLITE_CANTOPEN", "SQLITE_AUTH")) or any(
        w in low for w in ("readonly", "read-only", "permission", "unable to open")
    ):
        return StoreError(
            f"cannot write {path}: permission denied or a read-only place ({msg}); check the "
            "file's and folder's permissions, or use --data-dir for a folder you can write to"
        )
    if code.startswith(("SQLITE_BUSY", "SQLITE_LOCKED")) or "locked" in low or "busy" in low:
        return StoreError(
            f"the database {path} is busy (another tablecoach window is writing); "
            "try again in a moment"
        )
    if code.startswith("SQLITE_IOERR") or "disk i/o" in low:
        return StoreError(
            f"reading or writing {path} failed (a disk input/output error: {msg}); check that "
            "the disk is attached and healthy, then try again"
        )
    if code.startswith(("SQLITE_CORRUPT", "SQLITE_NOTADB")) or any(
        w in low for w in ("malformed", "not a database", "corrupt")
    ):
        return DamagedStoreError(
            f"the database {path} is damaged or not a tablecoach database ({msg}); "
            f"{_fix_hint(path)}, or restore it from a backup ('tablecoach restore FILE')"
        )
    return StoreError(f"the database {path} could not be used ({msg}); try again")


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
            fresh = Store(conn, tmp)
            fresh._checked = True  # nothing in it to check
            fresh._migrate()
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


# ----- the store ----------------------------------------------------------------------------


class Store:
    """A connection to the practice database. Use ``Store.open(path)``; safe across threads."""

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
    def open(cls, path: Path | str) -> Store:
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
                f"{p} is an SQLite database from another program, not tablecoach's; {_fix_hint(p)}"
            )
        if version > SCHEMA_VERSION:
            raise StoreError(
                f"the database {p} was written by a newer tablecoach (schema {version}, this "
                f"one reads up to {SCHEMA_VERSION}); upgrade tablecoach to use it"
            )
        expected = _V1_TABLES if version == 1 else _V2_TABLES
        missing = expected - names
        if version < 1 or missing:
            raise StoreError(
                f"the database {p} is damaged (schema {version}, missing tables: "
                f"{', '.join(sorted(missing)) or 'all'}); {_fix_hint(p)}, or restore a backup"
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

    def _migrate(self) -> None:
        """Create the schema or bring it up to date, in one transaction (re-checked inside it,
        so two windows opening an old file at once migrate it once)."""
        c = self._conn
        c.execute("BEGIN IMMEDIATE")
        try:
            app, version, names = self._inspect()
            self._check_kind(app, version, names)
            if version == 0:
                _run_script(c, _SCHEMA_V1)
                version = 1
            while version < SCHEMA_VERSION:
                _MIGRATIONS[version](c)
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
            f"{validate.show(first, 80)}); {_fix_hint(self.path)}, or restore it from a backup "
            "('tablecoach restore FILE')"
        )

    def schema_version(self) -> int:
        """The file's schema version (PRAGMA user_version)."""
        with self._read() as c:
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

    def __enter__(self) -> Store:
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
    def _write(self) -> Iterator[sqlite3.Connection]:
        """One short write transaction, committed on exit (rolled back on any error)."""
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
    def _read(self) -> Iterator[sqlite3.Connection]:
        with self._lock:
            try:
                yield self._conn
            except sqlite3.Error as exc:
                raise self._damaged(exc) from None

    @contextmanager
    def snapshot(self) -> Iterator[sqlite3.Connection]:
        """One read transaction: every SELECT inside sees the same moment (core/backup.py)."""
        with self._read() as c:
            c.execute("BEGIN")
            try:
                yield c
            finally:
                _rollback(c)

    @contextmanager
    def transaction(self) -> Iterator[sqlite3.Connection]:
        """One write transaction, after the integrity check, all or nothing (core/backup.py)."""
        with self._write() as c:
            yield c

    # ----- players ----------------------------------------------------------------------------
    @staticmethod
    def _check_name(what: str, name: str) -> str:
        try:
            return validate.name(name, what)
        except validate.InputError:
            raise StoreError(
                f"a {what} name must be 1 to 40 printable characters, got {validate.show(name)}"
            ) from None

    def players(self) -> list[str]:
        """Every player name, sorted."""
        with self._read() as c:
            return [r[0] for r in c.execute("SELECT name FROM players ORDER BY name")]

    def ensure_player(self, name: str) -> None:
        """Add a player if not there yet."""
        name = self._check_name("player", name)
        with self._write() as c:
            c.execute(
                "INSERT OR IGNORE INTO players (name, created) VALUES (?, ?)",
                (name, iso_utc(utc_now())),
            )

    # ----- sessions ---------------------------------------------------------------------------
    def start_session(
        self, player: str, table: str, drill: str, started: datetime | None = None
    ) -> int:
        """Open a session (adding the player if new); returns its id.

        ``started`` is when it began (aware; None: now), for sessions written after the fact.
        """
        player = self._check_name("player", player)
        table = self._check_name("table", table)
        when = iso_utc(started if started is not None else utc_now())
        with self._write() as c:
            c.execute("INSERT OR IGNORE INTO players (name, created) VALUES (?, ?)", (player, when))
            cur = c.execute(
                "INSERT INTO sessions (player, table_name, drill, started) VALUES (?, ?, ?, ?)",
                (player, table, drill or "", when),
            )
            return int(cur.lastrowid or 0)

    def end_session(self, session_id: int) -> None:
        """Mark a session ended (ending it twice keeps the first end time)."""
        with self._write() as c:
            found = c.execute("SELECT 1 FROM sessions WHERE id = ?", (session_id,)).fetchone()
            if found is None:
                raise StoreError(f"there is no session {session_id} in {self.path}")
            c.execute(
                "UPDATE sessions SET ended = ? WHERE id = ? AND ended IS NULL",
                (iso_utc(utc_now()), session_id),
            )

    def sessions(self, player: str | None = None, table: str | None = None) -> list[SessionInfo]:
        """Sessions, oldest first, with their attempt and hit counts."""
        where, args = [], []
        if player is not None:
            where.append("s.player = ?")
            args.append(player)
        if table is not None:
            where.append("s.table_name = ?")
            args.append(table)
        sql = (
            "SELECT s.id, s.player, s.table_name, s.drill, s.started, s.ended, "
            "COUNT(a.id), COALESCE(SUM(a.result = 'hit'), 0) "
            "FROM sessions s LEFT JOIN attempts a ON a.session_id = s.id"
            + (" WHERE " + " AND ".join(where) if where else "")
            + " GROUP BY s.id ORDER BY s.started, s.id"
        )
        with self._read() as c:
            rows = c.execute(sql, args).fetchall()
        return [
            SessionInfo(
                r[0],
                r[1],
                r[2],
                r[3],
                datetime.fromisoformat(r[4]),
                datetime.fromisoformat(r[5]) if r[5] else None,
                int(r[6]),
                int(r[7]),
            )
            for r in rows
        ]

    # ----- attempts ---------------------------------------------------------------------------
    def log(self, attempt: Attempt) -> Attempt:
        """Validate and save one attempt, committed before returning; returns it with its id."""
        return self.log_many([attempt])[0]

    def log_many(self, items: Sequence[Attempt]) -> list[Attempt]:
        """Validate and save several attempts in one transaction (all or none); returns them
        with their ids. Each is exactly as if logged alone (sessions kept, undo works)."""
        for a in items:
            _check_attempt(a)
        prepared = [(a, _to_row(a), attempt_identity(a)) for a in items]
        out: list[Attempt] = []
        insert = _INSERT
        with self._write() as c:
            known: set[int] = set()
            for a, row, ident in prepared:
                if a.session is not None and a.session not in known:
                    found = c.execute(
                        "SELECT 1 FROM sessions WHERE id = ?", (a.session,)
                    ).fetchone()
                    if found is None:
                        raise StoreError(f"there is no session {a.session} in {self.path}")
                    known.add(a.session)
                new_id = int(c.execute(insert, (*row, ident)).lastrowid or 0)
                c.execute(
                    "INSERT OR IGNORE INTO players (name, created, created_by) VALUES (?, ?, ?)",
                    (a.player, row[0], new_id),
                )
                out.append(replace(a, when=_fromiso(row[0]), id=new_id))
        return out

    def undo_last(self, session_id: int) -> Attempt | None:
        """Remove the latest attempt of a session and return it (None if it has none).

        The database is left as it was before that attempt was logged: a player the attempt
        itself added is removed with it.
        """
        with self._write() as c:
            r = c.execute(
                f"SELECT {_COLS}, id FROM attempts WHERE session_id = ? ORDER BY id DESC LIMIT 1",
                (session_id,),
            ).fetchone()
            if r is None:
                return None
            c.execute("DELETE FROM attempts WHERE id = ?", (r[-1],))
            c.execute("DELETE FROM players WHERE name = ? AND created_by = ?", (r[1], r[-1]))
        return _from_row(r, r[-1])

    @staticmethod
    def _filters(
        player: str | None,
        table: str | None,
        family: str | None,
        since: datetime | None,
        until: datetime | None,
        session: int | None,
    ) -> tuple[str, list[Any]]:
        where: list[str] = []
        args: list[Any] = []
        # A session is a few dozen attempts: with one asked for, the other terms get a unary +
        # (same values, SQLite's way to keep a term off an index) so that the planner, which
        # has no statistics, looks the session up rather than scanning a player's whole index.
        plus = "+" if session is not None else ""
        for col, val in (
            (plus + "player", player),
            (plus + "table_name", table),
            (plus + "family", family),
            ("session_id", session),
        ):
            if val is not None:
                where.append(f"{col} = ?")
                args.append(val)
        # Times outside the years every reader can place in any zone (validate.YEAR_MIN..MAX)
        # are refused on the way in; an older tablecoach may have stored some: they stay in the
        # file (and in backups) but are left out of what is read, so one cannot break history.
        lo = iso_utc(since if since.tzinfo else since.replace(tzinfo=UTC)) if since else _FLOOR
        hi = iso_utc(until if until.tzinfo else until.replace(tzinfo=UTC)) if until else _CEILING
        where.append(f"{plus}at >= ?")
        args.append(max(lo, _FLOOR))
        where.append(f"{plus}at < ?")
        args.append(min(hi, _CEILING))
        return (" WHERE " + " AND ".join(where) if where else ""), args

    def attempts(
        self,
        player: str | None = None,
        table: str | None = None,
        family: str | None = None,
        since: datetime | None = None,
        until: datetime | None = None,
        session: int | None = None,
    ) -> list[Attempt]:
        """Attempts matching every given filter, ordered by time then id.

        ``since`` is inclusive, ``until`` exclusive; naive times are taken as UTC.
        """
        where, args = self._filters(player, table, family, since, until, session)
        was = gc.isenabled()
        gc.disable()  # many small objects at once: no use rescanning them while they come
        try:
            with self._read() as c:
                rows = c.execute(
                    f"SELECT {_COLS}, id FROM attempts{where} ORDER BY at, id", args
                ).fetchall()
            return [_from_row(r, r[-1]) for r in rows]
        finally:
            if was:
                gc.enable()

    def columns(
        self,
        player: str | None = None,
        table: str | None = None,
        family: str | None = None,
        since: datetime | None = None,
        until: datetime | None = None,
        session: int | None = None,
        fields: Sequence[str] | None = None,
    ) -> AttemptColumns:
        """The attempts ``attempts`` would return (same filters, same order), as columns.

        One SELECT of only the columns asked for; no Attempt is built. ``fields`` names the
        records.FLAT_FIELDS to read (None: all of them); the others are None. ``id`` and
        ``session`` are always read.
        """
        names = tuple(FLAT_FIELDS) if fields is None else tuple(dict.fromkeys(fields))
        unknown = [f for f in names if f not in _FIELD_COLUMN]
        if unknown:
            raise StoreError(
                f"unknown attempt field {unknown[0]!r}: fields are {', '.join(FLAT_FIELDS)}"
            )
        where, args = self._filters(player, table, family, since, until, session)
        keyed = tuple(f for f in names if f in KEY_FIELDS)
        was = gc.isenabled()
        gc.disable()  # the rows are many small tuples: no use rescanning them while they come
        try:
            return self._read_columns(where, args, names, keyed if len(keyed) > 1 else ())
        finally:
            if was:
                gc.enable()

    def _read_columns(
        self, where: str, args: list[Any], names: tuple[str, ...], keyed: tuple[str, ...]
    ) -> AttemptColumns:
        """One SELECT of ``names`` (the ``keyed`` ones joined into one text) into columns."""
        plain = tuple(f for f in names if f not in keyed)
        exprs = [_FIELD_COLUMN[f] for f in plain]
        if keyed:
            exprs.append(" || char(31) || ".join(_FIELD_COLUMN[f] for f in keyed))
        select = ", ".join([*exprs, "id", "session_id"])
        with self._read() as c:
            rows = c.execute(
                f"SELECT {select} FROM attempts{where} ORDER BY at, id", args
            ).fetchall()
        n = len(rows)
        cols: list[Any] = list(zip(*rows, strict=True)) if n else [()] * (len(exprs) + 2)
        del rows
        key: Any = None
        combos: tuple[tuple[Any, ...], ...] = ()
        if keyed:
            split = _split_keys(cols[-3], keyed)
            if split is None:  # a value holds the separator: read the fields one by one
                return self._read_columns(where, args, names, ())
            key, combos = split
        values: dict[str, Any] = dict.fromkeys(FLAT_FIELDS)
        for name, col in zip(plain, cols, strict=False):
            values[name] = _column(name, col)
        codes = key.tolist() if key is not None else []
        for j, f in enumerate(keyed):
            per = tuple(c[j] for c in combos)
            values[f] = tuple(map(per.__getitem__, codes))
        ids = np.fromiter(cols[-2], np.int64, n)
        sessions = np.fromiter((-1 if s is None else s for s in cols[-1]), np.int64, n)
        return AttemptColumns(
            **values, id=ids, session=sessions, key=key, key_values=combos, key_fields=keyed
        )

    def count_attempts(
        self,
        player: str | None = None,
        table: str | None = None,
        family: str | None = None,
        since: datetime | None = None,
        until: datetime | None = None,
        session: int | None = None,
    ) -> int:
        """How many attempts match the filters (the same filters as ``attempts``)."""
        where, args = self._filters(player, table, family, since, until, session)
        with self._read() as c:
            return int(c.execute(f"SELECT COUNT(*) FROM attempts{where}", args).fetchone()[0])

    def import_attempts(self, items: Sequence[Attempt]) -> tuple[int, int]:
        """Add attempts from elsewhere; returns (added, duplicates skipped).

        An attempt whose full content (every field but id and session) is already stored, or
        appears earlier in ``items``, is skipped, so importing a file twice adds nothing. Imported
        attempts belong to no session. Work is committed in chunks of a few thousand, so a
        window logging meanwhile waits only briefly; an interrupted import can be run again.
        """
        checked = [_check_attempt(a) for a in items]
        added = dups = 0
        seen: set[str] = set()
        insert = _INSERT
        for start in range(0, len(checked), _IMPORT_CHUNK):
            # keys and rows are built before the write lock is taken, to keep it short
            chunk = checked[start : start + _IMPORT_CHUNK]
            prepared = [(attempt_identity(a), _to_row(a)[:-1]) for a in chunk]
            with self._write() as c:
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
                c.executemany(insert, rows)
                c.executemany(
                    "INSERT OR IGNORE INTO players (name, created) VALUES (?, ?)",
                    players.items(),
                )
                added += len(rows)
        return added, dups

    # ----- tables -----------------------------------------------------------------------------
    def save_table(self, spec: TableSpec) -> None:
        """Store (or replace) a custom table spec. Built-in names are reserved."""
        if spec.name in BUILTIN_TABLES:
            raise TableError(f"{spec.name!r} is a built-in table; give your table another name")
        data = json.dumps(table_to_mapping(spec), sort_keys=True)
        with self._write() as c:
            c.execute(
                "INSERT OR REPLACE INTO tables (name, spec, saved) VALUES (?, ?, ?)",
                (spec.name, data, iso_utc(utc_now())),
            )

    def tables(self) -> dict[str, TableSpec]:
        """The stored custom tables by name."""
        with self._read() as c:
            rows = c.execute("SELECT name, spec FROM tables ORDER BY name").fetchall()
        return {name: self._spec(name, text) for name, text in rows}

    def _spec(self, name: str, text: str) -> TableSpec:
        try:
            data = json.loads(text)
        except json.JSONDecodeError:
            raise StoreError(
                f"the stored table {name!r} in {self.path} is damaged; add it again with "
                "'tablecoach tables add FILE'"
            ) from None
        return table_from_mapping(data, f"{self.path} (table {name!r})")

    def get_table(self, name: str) -> TableSpec:
        """A built-in or stored table by name; unknown names get a TableError listing both."""
        if name in BUILTIN_TABLES:
            return BUILTIN_TABLES[name]
        with self._read() as c:
            r = c.execute("SELECT spec FROM tables WHERE name = ?", (name,)).fetchone()
            if r is None:
                stored = [x[0] for x in c.execute("SELECT name FROM tables ORDER BY name")]
        if r is not None:
            return self._spec(name, r[0])
        names = ", ".join([*BUILTIN_TABLES, *stored])
        raise TableError(
            f"unknown table {name!r}: known tables are {names}; "
            "add your own with 'tablecoach tables add FILE'"
        )

    # ----- calibrations -----------------------------------------------------------------------
    def save_calibration(
        self, table: str, player: str, params: dict[str, Any], attempts: int
    ) -> None:
        """Keep a fitted calibration (history is kept; the newest is the one in use)."""
        try:
            text = json.dumps(params, sort_keys=True, allow_nan=False)
        except (TypeError, ValueError) as exc:
            raise StoreError(f"calibration parameters must be plain JSON values ({exc})") from None
        with self._write() as c:
            c.execute(
                "INSERT INTO calibrations (table_name, player, params, attempts, at) "
                "VALUES (?, ?, ?, ?, ?)",
                (table, player, text, int(attempts), iso_utc(utc_now())),
            )

    def calibration(self, table: str, player: str) -> dict[str, Any] | None:
        """The newest calibration for a table and player: {"params", "attempts", "when"}."""
        with self._read() as c:
            r = c.execute(
                "SELECT params, attempts, at FROM calibrations WHERE table_name = ? AND player = ? "
                "ORDER BY id DESC LIMIT 1",
                (table, player),
            ).fetchone()
        if r is None:
            return None
        return {"params": json.loads(r[0]), "attempts": int(r[1]), "when": r[2]}

    def calibrations(self, table: str, player: str) -> list[dict[str, Any]]:
        """Every stored calibration for a table and player, oldest first."""
        with self._read() as c:
            rows = c.execute(
                "SELECT params, attempts, at FROM calibrations WHERE table_name = ? AND player = ? "
                "ORDER BY id",
                (table, player),
            ).fetchall()
        return [{"params": json.loads(p), "attempts": int(n), "when": w} for p, n, w in rows]


__all__ = [
    "SCHEMA_VERSION",
    "AttemptColumns",
    "KEY_FIELDS",
    "SessionInfo",
    "Store",
    "StoreError",
    "attempt_identity",
    "iso_utc",
]
