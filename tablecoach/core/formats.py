"""Attempt records as JSONL (version 2; version 1 reads) and CSV files, for export and import.

Each line is one attempt as core/attempt_json.py writes it (docs/formats.md). Reading never
stops at the first bad line: each is reported with its line number.
"""

from __future__ import annotations

import csv
import json
import math
from collections.abc import Callable, Iterable, Iterator, Sequence
from datetime import datetime
from json.encoder import encode_basestring
from typing import IO, Any, NamedTuple, TypeVar

from . import validate
from .attempt_json import Line, attempt_from_json, attempt_to_json, when_text
from .records import (
    FLAT_FIELDS,
    SCHEMA_VERSION,
    Attempt,
    RecordError,
    flatten,
)
from .store.import_rows import checked_row

T = TypeVar("T")

FORMATS = ("jsonl", "csv")

CSV_COLUMNS: tuple[str, ...] = (
    "v",
    *({"pocket": "target_pocket"}.get(f, f) for f in FLAT_FIELDS),
)
"""CSV header, in order. ``rails`` joins rail names with ';'; empty cells are absent values."""

_OPTIONAL_CSV = {"note", "model", "drill", "zone", "english", "follow", "miss_kind"}
# ----- JSONL ----------------------------------------------------------------------------------


def write_jsonl(attempts: Iterable[Attempt], fh: IO[str]) -> int:
    """Write one JSON object a line; returns how many were written."""
    n = 0
    for a in attempts:
        fh.write(json.dumps(attempt_to_json(a), ensure_ascii=False, allow_nan=False))
        fh.write("\n")
        n += 1
    return n


_STR = encode_basestring  # the json module's own string text (ensure_ascii=False)
_NUM = float.__repr__  # the json module's own text of a finite float


def _num(v: Any) -> str:
    f = float(v)
    if not math.isfinite(f):
        raise ValueError(f"out of range float values are not JSON compliant: {f!r}")
    return _NUM(f)


def _pair(x: Any, y: Any) -> str:
    return f"[{_num(x)}, {_num(y)}]"


def jsonl_line(row: Sequence[Any]) -> str:
    """One stored row (store.rows.COLS order: records.FLAT_FIELDS, times as stored text, rails
    joined with commas) as its JSONL line, without building the Attempt: the same text as
    ``json.dumps(attempt_to_json(rows.from_row(row)), ensure_ascii=False, allow_nan=False)``
    (tests/core/test_formats.py holds the two together), at a fraction of the cost."""
    (at, player, table, travel, rails, family, pocket, tx, ty, cx, cy, ox, oy, speed, english,
     follow, aim_rail, given, used, result, land_rail, land_at, note, model, drill, zone,
     miss_kind) = row[:27]  # fmt: skip
    if len(at) == 32 and at.endswith("+00:00") and at[10] == "T":
        when = at[:-6] + "Z"  # the stored form is when_text's with "+00:00" for "Z"
    else:
        when = when_text(datetime.fromisoformat(at))
    target = (
        f'{{"pocket": {_STR(pocket)}}}'
        if pocket is not None
        else f'{{"ball": {"null" if tx is None else _pair(tx, ty)}}}'
    )
    obj = "null" if ox is None else _pair(ox, oy)
    landing = (
        f'{{"rail": {_STR(land_rail)}, "at": {_num(land_at)}}}'
        if land_rail is not None and land_at is not None
        else "null"
    )
    rail_list = ", ".join(map(_STR, rails.split(",")))
    kind = ""
    if result == "miss":
        kind = f', "miss_kind": {"null" if miss_kind is None else _STR(miss_kind)}'
    return (
        f'{{"v": {SCHEMA_VERSION}, "when": "{when}", "player": {_STR(player)}, '
        f'"table": {_STR(table)}, "shot": {{"travel": {_STR(travel)}, "rails": [{rail_list}], '
        f'"family": {_STR(family)}, "target": {target}, "cue": {_pair(cx, cy)}, '
        f'"object": {obj}}}, "speed": {_num(speed)}, "english": {_num(english)}, '
        f'"follow": {_num(follow)}, "aim": {{"rail": {_STR(aim_rail)}, "given": {_num(given)}, '
        f'"used": {_num(used)}}}, "result": {_STR(result)}, "landing": {landing}, '
        f'"note": {_STR(note)}, "model": {_STR(model)}, "drill": {_STR(drill)}, '
        f'"zone": {_STR(zone)}{kind}}}'
    )


def write_jsonl_rows(rows: Iterable[Sequence[Any]], fh: IO[str]) -> int:
    """``write_jsonl`` for stored rows (``jsonl_line``); returns how many were written."""
    n = 0
    for row in rows:
        fh.write(jsonl_line(row))
        fh.write("\n")
        n += 1
    return n


def read_jsonl(fh: IO[str]) -> tuple[list[Attempt], list[tuple[int, str]]]:
    """Read every line; returns (attempts, errors) where errors are (line number, message).

    Blank lines are skipped. A bad line does not stop the reading of the others.
    """
    return _collect(iter_jsonl(fh))


class BadLine(NamedTuple):
    """A bad line of an import file: its number and the one line saying what is wrong."""

    line: int
    message: str


def iter_jsonl(fh: IO[str]) -> Iterator[Attempt | BadLine]:
    """The lines one at a time as they are read: an Attempt, or (line number, message) for a
    bad line (blank lines are skipped); memory does not grow with the file."""
    return _jsonl(fh, attempt_from_json)


def _jsonl(fh: IO[str], make: Callable[[Any, int], T]) -> Iterator[T | BadLine]:
    for n, line in enumerate(fh, start=1):
        if not line.strip():
            continue
        try:
            obj = validate.json_line(line.rstrip("\r\n"))
        except validate.InputError as exc:
            yield BadLine(n, f"line {n}: {exc}")
            continue
        try:
            yield make(obj, n)
        except RecordError as exc:
            yield BadLine(n, str(exc))


def _collect(
    items: Iterable[Attempt | tuple[int, str]],
) -> tuple[list[Attempt], list[tuple[int, str]]]:
    out: list[Attempt] = []
    errors: list[tuple[int, str]] = []
    for item in items:
        if isinstance(item, Attempt):
            out.append(item)
        else:
            errors.append(item)
    return out, errors


# ----- CSV ----------------------------------------------------------------------------------


def _cell(v: float | None) -> str:
    return "" if v is None else repr(float(v))


def attempt_to_row(a: Attempt) -> list[str]:
    """One attempt as CSV cells in CSV_COLUMNS order (floats as repr, exact)."""
    f = flatten(a)
    cells = [_cell(v) if isinstance(v, float) or v is None else v for v in f[5:]]
    return [str(SCHEMA_VERSION), when_text(f[0]), *f[1:4], ";".join(f[4]), *cells]


def write_csv(attempts: Iterable[Attempt], fh: IO[str]) -> int:
    """Write a header and one row an attempt; returns how many were written."""
    w = csv.writer(fh, lineterminator="\n")
    w.writerow(CSV_COLUMNS)
    n = 0
    for a in attempts:
        w.writerow(attempt_to_row(a))
        n += 1
    return n


def _row_to_obj(row: dict[str, str], ln: Line) -> dict[str, Any]:
    def num(key: str) -> float | None:
        t = row.get(key, "").strip()
        if not t:
            return None
        try:
            return validate.number_text(t, key)
        except validate.InputError as exc:
            raise ln.err(f"column {str(exc).removeprefix('field ')}") from None

    def pair(kx: str, ky: str) -> list[float] | None:
        x, y = num(kx), num(ky)
        if x is None and y is None:
            return None
        if x is None or y is None:
            raise ln.err(f"columns {kx!r} and {ky!r} must both be given or both be empty")
        return [x, y]

    v_text = row.get("v", "").strip()
    try:
        v: Any = int(v_text)
    except ValueError:
        v = v_text
    target: dict[str, Any]
    if row.get("target_pocket", "").strip():
        if pair("target_x", "target_y") is not None:
            raise ln.err("give either 'target_pocket' or 'target_x'/'target_y', not both")
        target = {"pocket": row["target_pocket"].strip()}
    else:
        target = {"ball": pair("target_x", "target_y")}
    rails = [r.strip() for r in row.get("rails", "").split(";") if r.strip()]
    obj: dict[str, Any] = {
        "v": v,
        "when": row.get("when", ""),
        "player": row.get("player", ""),
        "table": row.get("table", ""),
        "shot": {
            "travel": row.get("travel", ""),
            "rails": rails,
            "family": row.get("family", "") or "custom",
            "target": target,
            "cue": pair("cue_x", "cue_y"),
            "object": pair("object_x", "object_y"),
        },
        "speed": num("speed"),
        "aim": {
            "rail": row.get("aim_rail", ""),
            "given": num("aim_given"),
            "used": num("aim_used"),
        },
        "result": row.get("result", ""),
    }
    land_rail = row.get("landing_rail", "").strip()
    land_at = num("landing_at")
    if v == 1 or land_rail or land_at is not None:
        obj["landing"] = {"rail": land_rail, "at": land_at}
    else:
        obj["landing"] = None
    kind = row.get("miss_kind", "").strip()
    if kind:
        obj["miss_kind"] = kind
    for key in ("english", "follow"):
        val = num(key)
        if val is not None:
            obj[key] = val
    for key in ("note", "model", "drill", "zone"):
        if row.get(key) is not None:
            obj[key] = row[key]
    return obj


def read_csv(fh: IO[str]) -> tuple[list[Attempt], list[tuple[int, str]]]:
    """Read a CSV export; returns (attempts, errors) like read_jsonl (line numbers count the
    header as line 1; a quoted note spanning lines reports the row's first line)."""
    return _collect(iter_csv(fh))


def iter_csv(fh: IO[str]) -> Iterator[Attempt | BadLine]:
    """The rows one at a time as they are read, like iter_jsonl (a bad header is one error)."""
    return _csv(fh, attempt_from_json)


def _csv(fh: IO[str], make: Callable[[Any, int], T]) -> Iterator[T | BadLine]:
    reader = csv.reader(fh)
    try:
        header = next(reader)
    except StopIteration:
        return
    except csv.Error as exc:
        yield BadLine(1, f"line 1: not valid CSV ({exc})")
        return
    header = [h.strip() for h in header]
    missing = [c for c in CSV_COLUMNS if c not in header and c not in _OPTIONAL_CSV]
    unknown = [h for h in header if h not in CSV_COLUMNS]
    if missing or unknown:
        what = f"missing columns: {', '.join(missing)}" if missing else ""
        what += ("; " if what else "") + (
            f"unknown columns: {', '.join(unknown)}" if unknown else ""
        )
        yield BadLine(1, f"line 1: the header is not a tablecoach CSV header ({what})")
        return
    last = reader.line_num
    while True:
        start = last + 1
        try:
            cells = next(reader)
        except StopIteration:
            break
        except csv.Error as exc:
            yield BadLine(start, f"line {start}: not valid CSV ({exc})")
            last = reader.line_num
            continue
        last = reader.line_num
        if not any(c.strip() for c in cells):
            continue
        ln = Line(start)
        if len(cells) != len(header):
            yield BadLine(start, f"line {start}: {len(cells)} cells, the header has {len(header)}")
            continue
        try:
            yield make(_row_to_obj(dict(zip(header, cells, strict=True)), ln), start)
        except RecordError as exc:
            yield BadLine(start, str(exc))


def read_any(fh: IO[str], fmt: str) -> tuple[list[Attempt], list[tuple[int, str]]]:
    """Read with the named format ('jsonl' or 'csv')."""
    if fmt == "csv":
        return read_csv(fh)
    if fmt == "jsonl":
        return read_jsonl(fh)
    raise RecordError(f"unknown format {fmt!r}: use one of {', '.join(FORMATS)}")


def iter_any(fh: IO[str], fmt: str) -> Iterator[Attempt | BadLine]:
    """Read with the named format one record at a time (iter_jsonl, iter_csv)."""
    if fmt == "csv":
        return iter_csv(fh)
    if fmt == "jsonl":
        return iter_jsonl(fh)
    raise RecordError(f"unknown format {fmt!r}: use one of {', '.join(FORMATS)}")


def iter_rows(fh: IO[str], fmt: str) -> Iterator[tuple[Any, ...] | BadLine]:
    """``iter_any`` for an import: each good record as its checked attempts row with its
    identity last (``store.import_rows.checked_row``: the same checks, no Attempt built for
    a plain record), each bad line as a BadLine with the same message."""
    if fmt == "csv":
        return _csv(fh, checked_row)
    if fmt == "jsonl":
        return _jsonl(fh, checked_row)
    raise RecordError(f"unknown format {fmt!r}: use one of {', '.join(FORMATS)}")


def write_any(attempts: Iterable[Attempt], fh: IO[str], fmt: str) -> int:
    """Write with the named format ('jsonl' or 'csv')."""
    if fmt == "csv":
        return write_csv(attempts, fh)
    if fmt == "jsonl":
        return write_jsonl(attempts, fh)
    raise RecordError(f"unknown format {fmt!r}: use one of {', '.join(FORMATS)}")


def guess_format(name: str, first_line: str = "") -> str:
    """'csv' for a .csv file or a line that starts like the CSV header, else 'jsonl'."""
    if name.lower().endswith(".csv"):
        return "csv"
    if first_line.lstrip().startswith("{") or name.lower().endswith((".jsonl", ".json")):
        return "jsonl"
    return "csv" if first_line.startswith("v,") else "jsonl"


__all__ = [
    "BadLine",
    "CSV_COLUMNS",
    "FORMATS",
    "attempt_to_row",
    "guess_format",
    "iter_rows",
    "jsonl_line",
    "read_any",
    "read_csv",
    "read_jsonl",
    "write_any",
    "write_csv",
    "write_jsonl",
    "write_jsonl_rows",
]
