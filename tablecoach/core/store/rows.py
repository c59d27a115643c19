"""Attempts as the attempts table's rows and back, their import identity, the write checks."""

from __future__ import annotations

import hashlib
import json
from collections.abc import Sequence
from datetime import UTC, datetime
from typing import Any

from .. import validate
from ..records import FLAT_FIELDS, Attempt, ShotRecord, flatten, validate_attempt
from .errors import StoreError

DB_NAMES = {"when": "at", "table": "table_name"}
"""Database column names that differ from the record field names (SQL keywords avoided)."""
COL_NAMES = (*(DB_NAMES.get(f, f) for f in FLAT_FIELDS), "session_id")
"""The attempts columns in records.FLAT_FIELDS order, then the session."""
COLS = ", ".join(COL_NAMES)
INSERT = f"INSERT INTO attempts ({COLS}, ident) VALUES ({', '.join('?' * (len(COL_NAMES) + 1))})"
FIELD_COLUMN = dict(zip(FLAT_FIELDS, COL_NAMES, strict=False))
"""records.FLAT_FIELDS name -> attempts column (the two share one order)."""

fromiso = datetime.fromisoformat
"""A stored time back to an aware datetime."""


def iso_utc(when: datetime) -> str:
    """A timezone-aware time as fixed-width ISO-8601 UTC with microseconds (sorts as text)."""
    if when.tzinfo is None:
        raise StoreError("times given to the store must carry a time zone (UTC)")
    return when.astimezone(UTC).isoformat(timespec="microseconds")


def to_row(a: Attempt) -> tuple[Any, ...]:
    """An attempt as a row in ``COLS`` order (the flat order of records.FLAT_FIELDS)."""
    f = flatten(a)
    return (iso_utc(f[0]), *f[1:4], ",".join(f[4]), *f[5:], a.session)


def from_row(r: Sequence[Any], id_: int | None = None) -> Attempt:
    """A row selected as ``COLS`` (plus id) back to an Attempt (the hot path of queries)."""
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
        fromiso(r[0]),
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


_ENCODE = json.JSONEncoder(separators=(",", ":"), ensure_ascii=False).encode
"""json.dumps(..., separators=(",", ":"), ensure_ascii=False), its encoder made once."""


def attempt_identity(a: Attempt) -> str:
    """The identity of an attempt for import: a hash of its full content except id and session.

    Floats enter through repr (exact), times as UTC ISO-8601 to the microsecond, so two records
    are the same attempt exactly when every exported field is equal.
    """
    f = flatten(a)
    return _hash([iso_utc(f[0]), *f[1:4], list(f[4]), *f[5:]])


def row_identity(row: Sequence[Any]) -> str:
    """``attempt_identity`` of a row laid out as ``to_row`` gives it (the session, if there,
    is left out): the same text hashed, the rails split again (no rail name holds a comma)."""
    return _hash([*row[:4], row[4].split(","), *row[5:27]])


def _hash(content: list[Any]) -> str:
    return hashlib.sha256(_ENCODE(content).encode("utf-8")).hexdigest()


def check_attempt(a: Attempt) -> Attempt:
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


def check_name(what: str, name: str) -> str:
    """A player or table name as the store keeps it, or a StoreError saying what a name is."""
    try:
        return validate.name(name, what)
    except validate.InputError:
        raise StoreError(
            f"a {what} name must be 1 to 40 printable characters, got {validate.show(name)}"
        ) from None
