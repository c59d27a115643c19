"""Backup and restore: everything a player has, in one file, back again exactly.

A backup is UTF-8 JSON lines (docs/formats.md, "Backups"):

- line 1, the header: ``{"tablecoach_backup": 1, "schema": 2, "written": "...Z"}``;
- for each section, a section line ``{"section": NAME, "columns": [...], "rows": N}`` followed by
  N lines, each one row as a JSON array in the order of ``columns``;
- last, ``{"end": true, "sections": K, "rows": TOTAL}`` (a file cut short is refused).

The sections are the store's own tables, one each, every column, keys included
(``STORE_SECTIONS``), and the player's own drill packs (section ``drills``: file name and text).
Adding a table to the store later means adding its name to ``STORE_SECTIONS`` and a row check to
``_ROW_CHECKS``; a backup without that section restores with the table empty.

Restore goes only into an empty store, checks every line first (the same edge checks as
import: finite numbers, sane years, names, table specs, JSON) and then writes everything in one
transaction, so a bad or cut file changes nothing.
"""

from __future__ import annotations

import json
import os
import sqlite3
import tempfile
from collections.abc import Callable, Iterator
from dataclasses import dataclass, replace
from datetime import UTC, datetime
from pathlib import Path
from typing import IO, Any

from . import validate
from .store import Store
from .store.counts import in_bulk
from .store.errors import StoreError
from .store.query import FLOOR
from .store.rows import COL_NAMES, attempt_identity, check_attempt, from_row
from .store.schema import SCHEMA_VERSION
from .table_files import table_from_mapping

BACKUP_VERSION = 1
STORE_SECTIONS: tuple[str, ...] = (
    "players",
    "tables",
    "sessions",
    "attempts",
    "calibrations",
    "refs",
)
"""Store tables written to a backup, in an order that restores cleanly (sessions before the
attempts that name them)."""
DRILLS = "drills"
"""The section of the player's own drill packs: rows of [file name, TOML text]."""


class BackupError(ValueError):
    """A backup cannot be written or restored; the message names the file, line and field."""


@dataclass(frozen=True, slots=True)
class Summary:
    """What a backup holds or a restore wrote: rows per section."""

    rows: dict[str, int]

    @property
    def total(self) -> int:
        return sum(self.rows.values())

    def text(self) -> str:
        return ", ".join(f"{n} {name}" for name, n in self.rows.items())


# ----- writing ----------------------------------------------------------------------------------


def _columns(c: sqlite3.Connection, table: str) -> list[str]:
    return [r[1] for r in c.execute(f"PRAGMA table_info({table})")]


def write_backup(store: Store, fh: IO[str], drills_dir: Path | None) -> Summary:
    """Write every store section (one read transaction: one moment) and the drill packs."""
    counts: dict[str, int] = {}

    def line(obj: Any) -> None:
        fh.write(json.dumps(obj, ensure_ascii=False, allow_nan=False, separators=(",", ":")))
        fh.write("\n")

    line(
        {
            "tablecoach_backup": BACKUP_VERSION,
            "schema": SCHEMA_VERSION,
            "written": datetime.now(UTC).isoformat(timespec="seconds").replace("+00:00", "Z"),
        }
    )
    with store.snapshot() as c:
        for table in STORE_SECTIONS:
            cols = _columns(c, table)
            n = int(c.execute(f"SELECT COUNT(*) FROM {table}").fetchone()[0])
            line({"section": table, "columns": cols, "rows": n})
            cur = c.execute(f"SELECT {', '.join(cols)} FROM {table} ORDER BY rowid")
            for row in cur:
                line(list(row))
            counts[table] = n
    packs = sorted(drills_dir.glob("*.toml")) if drills_dir is not None else []
    packs = [p for p in packs if p.is_file()]
    line({"section": DRILLS, "columns": ["file", "text"], "rows": len(packs)})
    for p in packs:
        line([p.name, p.read_text(encoding="utf-8")])
    counts[DRILLS] = len(packs)
    line({"end": True, "sections": len(counts), "rows": sum(counts.values())})
    return Summary(counts)


def write_backup_file(store: Store, out: Path, drills_dir: Path | None) -> Summary:
    """``write_backup`` into ``out`` whole or not at all (a temporary file, then a rename)."""
    out.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{out.name}.", dir=out.parent)
    try:
        with os.fdopen(fd, "w", encoding="utf-8", newline="\n") as fh:
            summary = write_backup(store, fh, drills_dir)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, out)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    return summary


# ----- reading and checking ---------------------------------------------------------------------


@dataclass
class _Section:
    name: str
    columns: list[str]
    rows: list[list[Any]]


def _scalar(v: Any) -> bool:
    return v is None or isinstance(v, str | int | float) and not isinstance(v, bool)


def read_backup(lines: Iterator[str], source: str) -> dict[str, _Section]:
    """Parse and check a whole backup; any problem is one BackupError naming the line."""
    sections: dict[str, _Section] = {}
    current: _Section | None = None
    expected = 0
    n = 0
    ended = False

    def fail(msg: str) -> BackupError:
        return BackupError(f"{source}, line {n}: {msg}")

    for n, raw in enumerate(lines, start=1):
        if not raw.strip():
            continue
        if ended:
            raise fail("text after the end line: the file is not one backup")
        try:
            obj = validate.json_line(raw.rstrip("\r\n"))
        except validate.InputError as exc:
            raise fail(str(exc)) from None
        if n == 1:
            if not isinstance(obj, dict) or "tablecoach_backup" not in obj:
                raise fail("not a tablecoach backup (the first line names none)")
            if obj["tablecoach_backup"] != BACKUP_VERSION:
                raise fail(
                    f"backup version {validate.show(obj['tablecoach_backup'])}: this tablecoach "
                    f"reads version {BACKUP_VERSION}; use the tablecoach that wrote it"
                )
            schema = obj.get("schema")
            if not isinstance(schema, int) or isinstance(schema, bool) or schema > SCHEMA_VERSION:
                raise fail(
                    f"written by a newer tablecoach (schema {validate.show(schema)}, this one "
                    f"reads up to {SCHEMA_VERSION}); upgrade tablecoach to restore it"
                )
            continue
        if current is not None and len(current.rows) < expected:
            if not isinstance(obj, list) or len(obj) != len(current.columns):
                raise fail(
                    f"section {current.name!r}: a row must be a list of "
                    f"{len(current.columns)} values"
                )
            if not all(_scalar(v) for v in obj):
                raise fail(f"section {current.name!r}: row values must be text, numbers or null")
            current.rows.append(obj)
            continue
        if not isinstance(obj, dict):
            raise fail("expected a section line or the end line")
        if obj.get("end") is True:
            ended = True
            total = sum(len(s.rows) for s in sections.values())
            if obj.get("rows") != total:
                raise fail(
                    f"the end line counts {validate.show(obj.get('rows'))} rows, read {total}"
                )
            continue
        name, cols, rows = obj.get("section"), obj.get("columns"), obj.get("rows")
        if name not in (*STORE_SECTIONS, DRILLS) or name in sections:
            raise fail(f"section {validate.show(name)} is unknown or repeated")
        if not isinstance(cols, list) or not all(isinstance(c, str) for c in cols) or not cols:
            raise fail(f"section {name!r}: 'columns' must be a list of column names")
        if not isinstance(rows, int) or isinstance(rows, bool) or rows < 0:
            raise fail(f"section {name!r}: 'rows' must be a whole number")
        current = _Section(name, cols, [])
        sections[name] = current
        expected = rows
    if n == 0:
        raise BackupError(f"{source}: the file is empty, not a backup")
    if not ended:
        raise BackupError(
            f"{source}: the backup is cut short (no end line after line {n}); use a whole copy"
        )
    return sections


# ----- row checks (the same edges as import) ----------------------------------------------------


def _json_text(v: Any, what: str) -> Any:
    if not isinstance(v, str):
        raise validate.InputError(f"{what} must be JSON text")
    return validate.json_line(v)


def _check_player(row: dict[str, Any]) -> None:
    validate.name(row.get("name"), "name")
    validate.when_text(row.get("created"), "created")


def _check_table(row: dict[str, Any]) -> None:
    name = validate.name(row.get("name"), "name")
    data = _json_text(row.get("spec"), "spec")
    if not isinstance(data, dict):
        raise validate.InputError("field 'spec' must be a table spec object")
    spec = table_from_mapping(data, f"table {name!r}")
    if spec.name != name:
        raise validate.InputError(f"field 'spec' names {spec.name!r}, the row {name!r}")
    validate.when_text(row.get("saved"), "saved")


def _check_session(row: dict[str, Any]) -> None:
    _whole(row.get("id"), "id")
    validate.name(row.get("player"), "player")
    validate.name(row.get("table_name"), "table_name")
    validate.text(row.get("drill") or "", "drill", validate.NAME_MAX * 4)
    validate.when_text(row.get("started"), "started")
    if row.get("ended") is not None:
        validate.when_text(row.get("ended"), "ended")


def _check_attempt_row(row: dict[str, Any]) -> None:
    _whole(row.get("id"), "id")
    values = [row.get(c) for c in COL_NAMES]
    if values[4] is None or not isinstance(values[4], str):
        raise validate.InputError("field 'rails' must be rail names joined by commas")
    for i, col in enumerate(COL_NAMES):
        if col in ("at", "session_id") or values[i] is None:
            continue
        if isinstance(values[i], float | int):
            validate.finite(values[i], col)
    if not isinstance(values[0], str) or len(values[0]) != len(FLOOR):
        raise validate.InputError(f"field 'at' = {validate.show(values[0])} is not a stored time")
    try:
        attempt = from_row(values, row.get("id"))
    except (TypeError, ValueError, IndexError, AttributeError) as exc:
        raise validate.InputError(f"the row is not an attempt ({exc})") from None
    # A time outside the years read back (stored by an older tablecoach) is kept as it was, so
    # the restore is exact; the store leaves it out of reads. Everything else must pass.
    check_attempt(replace(attempt, when=datetime(2000, 1, 1, tzinfo=UTC)))
    ident = row.get("ident")
    if ident is not None and ident != attempt_identity(attempt):
        raise validate.InputError("field 'ident' does not match the attempt's content")


def _check_calibration(row: dict[str, Any]) -> None:
    _whole(row.get("id"), "id")
    validate.name(row.get("table_name"), "table_name")
    validate.name(row.get("player"), "player")
    if not isinstance(_json_text(row.get("params"), "params"), dict):
        raise validate.InputError("field 'params' must be a JSON object")
    _whole(row.get("attempts"), "attempts")
    validate.when_text(row.get("at"), "at")


def _check_ref(row: dict[str, Any]) -> None:
    from .store.refs import reference_from_row

    _whole(row.get("id"), "id")
    validate.when_text(row.get("at"), "at")
    try:
        reference_from_row(row)
    except StoreError as exc:
        raise validate.InputError(str(exc)) from None


def _check_drill(row: dict[str, Any]) -> None:
    from .drill_packs import parse_drill

    name = row.get("file")
    if (
        not isinstance(name, str)
        or not name.endswith(".toml")
        or Path(name).name != name
        or name.startswith(".")
    ):
        raise validate.InputError(f"field 'file' = {validate.show(name)} is not a pack file name")
    validate.name(name, "file")
    text = row.get("text")
    if not isinstance(text, str):
        raise validate.InputError("field 'text' must be the pack's TOML text")
    parse_drill(text, name.removesuffix(".toml"), name)


def _whole(v: Any, what: str) -> int:
    if isinstance(v, bool) or not isinstance(v, int) or not (0 <= v < 2**62):
        raise validate.InputError(f"field {what!r} must be a whole number, got {validate.show(v)}")
    return v


_ROW_CHECKS: dict[str, Callable[[dict[str, Any]], None]] = {
    "players": _check_player,
    "tables": _check_table,
    "sessions": _check_session,
    "attempts": _check_attempt_row,
    "calibrations": _check_calibration,
    "refs": _check_ref,
    DRILLS: _check_drill,
}


# ----- restoring --------------------------------------------------------------------------------


def restore(store: Store, lines: Iterator[str], source: str, drills_dir: Path | None) -> Summary:
    """Check a whole backup, then write it into an empty store in one transaction and the
    drill packs into ``drills_dir``. Raises BackupError (nothing written) on any problem."""
    sections = read_backup(lines, source)
    with store.snapshot() as c:
        held = {
            t: int(c.execute(f"SELECT COUNT(*) FROM {t}").fetchone()[0]) for t in STORE_SECTIONS
        }
        columns = {t: set(_columns(c, t)) for t in STORE_SECTIONS}
    if any(held.values()):
        what = ", ".join(f"{n} {t}" for t, n in held.items() if n)
        raise BackupError(
            f"{store.path} already holds {what}; restore only into a new data folder "
            "(tablecoach restore FILE --data-dir NEW_FOLDER)"
        )
    for name, sec in sections.items():
        if name != DRILLS:
            unknown = [col for col in sec.columns if col not in columns[name]]
            if unknown:
                raise BackupError(
                    f"{source}: section {name!r} has column {unknown[0]!r}, which this "
                    "tablecoach's store does not have"
                )
        check = _ROW_CHECKS[name]
        for k, row in enumerate(sec.rows):
            try:
                check(dict(zip(sec.columns, row, strict=True)))
            except ValueError as exc:  # InputError, TableError, DrillError, StoreError
                raise BackupError(f"{source}: section {name!r}, row {k + 1}: {exc}") from None
    packs = sections.get(DRILLS)
    to_write: list[tuple[Path, str]] = []
    if packs is not None and packs.rows:
        if drills_dir is None:
            raise BackupError(f"{source}: the backup holds drill packs but no folder was given")
        for file, text in packs.rows:
            target = drills_dir / file
            if target.exists() and target.read_text(encoding="utf-8") != text:
                raise BackupError(
                    f"{target} already exists and differs from the pack in {source}; move it "
                    "aside and restore again"
                )
            to_write.append((target, text))
    counts: dict[str, int] = {}
    try:
        attempts = sections.get("attempts")
        with store.transaction() as c, in_bulk(c, len(attempts.rows) if attempts else 0):
            for name in STORE_SECTIONS:
                part = sections.get(name)
                counts[name] = 0 if part is None else len(part.rows)
                if part is None or not part.rows:
                    continue
                marks = ", ".join("?" * len(part.columns))
                c.executemany(
                    f"INSERT INTO {name} ({', '.join(part.columns)}) VALUES ({marks})", part.rows
                )
            if "ident" not in (sections["attempts"].columns if "attempts" in sections else []):
                _fill_identities(c)
    except sqlite3.IntegrityError as exc:
        raise BackupError(f"{source}: the rows do not fit together ({exc})") from None
    for target, text in to_write:
        target.parent.mkdir(parents=True, exist_ok=True)
        fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", dir=target.parent)
        with os.fdopen(fd, "w", encoding="utf-8", newline="") as fh:
            fh.write(text)
        os.replace(tmp, target)
    counts[DRILLS] = len(to_write)
    return Summary(counts)


def _fill_identities(c: sqlite3.Connection) -> None:
    """Attempts from a backup written before identities existed get theirs computed."""
    cols = ", ".join(COL_NAMES)
    rows = c.execute(f"SELECT {cols}, id FROM attempts WHERE ident IS NULL").fetchall()
    c.executemany(
        "UPDATE attempts SET ident = ? WHERE id = ?",
        ((attempt_identity(from_row(r)), r[-1]) for r in rows),
    )


def restore_file(store: Store, path: Path, drills_dir: Path | None) -> Summary:
    """``restore`` from a file (UTF-8); a file that cannot be read is one BackupError."""
    try:
        with path.open(encoding="utf-8", newline="") as fh:
            return restore(store, iter(fh), str(path), drills_dir)
    except UnicodeDecodeError:
        raise BackupError(f"{path}: not UTF-8 text, so not a tablecoach backup") from None
    except OSError as exc:
        raise BackupError(f"{path}: cannot read the backup ({exc.strerror or exc})") from None


__all__ = [
    "BACKUP_VERSION",
    "BackupError",
    "DRILLS",
    "STORE_SECTIONS",
    "StoreError",
    "Summary",
    "read_backup",
    "restore",
    "restore_file",
    "write_backup",
    "write_backup_file",
]
