"""Attempt records as JSONL (version 2; version 1 reads) and CSV, for export and import
(docs/formats.md).

Numbers are written with Python's shortest round-tripping repr, and times as ISO-8601 UTC to
the microsecond, so exporting and importing again gives back exactly the same attempts.
Reading never stops at the first bad line: each is reported with its line number.
"""

from __future__ import annotations

import csv
import json
from collections.abc import Iterable
from datetime import UTC, datetime
from typing import IO, Any

from . import validate
from .records import (
    FLAT_FIELDS,
    SCHEMA_VERSION,
    Attempt,
    RecordError,
    ShotRecord,
    flatten,
    upgrade_v1,
    validate_attempt,
)

FORMATS = ("jsonl", "csv")

CSV_COLUMNS: tuple[str, ...] = (
    "v",
    *({"pocket": "target_pocket"}.get(f, f) for f in FLAT_FIELDS),
)
"""CSV header, in order. ``rails`` joins rail names with ';'; empty cells are absent values."""

_OPTIONAL_CSV = {"note", "model", "drill", "zone", "english", "follow", "miss_kind"}
_TOP = {
    "v",
    "when",
    "player",
    "table",
    "shot",
    "speed",
    "english",
    "follow",
    "aim",
    "result",
    "landing",
    "note",
    "model",
    "drill",
    "zone",
    "miss_kind",
}
_SHOT = {"travel", "rails", "family", "target", "cue", "object"}


def when_text(when: datetime) -> str:
    """ISO-8601 UTC to the microsecond with a 'Z', e.g. 2026-03-14T18:30:00.123456Z."""
    return when.astimezone(UTC).isoformat(timespec="microseconds").replace("+00:00", "Z")


def _pt(p: tuple[float, float] | None) -> list[float] | None:
    return None if p is None else [float(p[0]), float(p[1])]


def attempt_to_json(a: Attempt) -> dict[str, Any]:
    """One attempt as the version-2 JSON object (id and session are the store's, not kept).

    ``landing`` is null unless a landing was observed; ``miss_kind`` is written on a miss only.
    """
    s = a.shot
    target: dict[str, Any] = (
        {"pocket": s.pocket} if s.pocket is not None else {"ball": _pt(s.target_ball)}
    )
    landing = (
        {"rail": a.landing_rail, "at": float(a.landing_at)}
        if a.landing_rail is not None and a.landing_at is not None
        else None
    )
    out: dict[str, Any] = {
        "v": SCHEMA_VERSION,
        "when": when_text(a.when),
        "player": a.player,
        "table": a.table,
        "shot": {
            "travel": s.travel,
            "rails": list(s.rails),
            "family": s.family,
            "target": target,
            "cue": _pt(s.cue),
            "object": _pt(s.object),
        },
        "speed": float(a.speed),
        "english": float(a.english),
        "follow": float(a.follow),
        "aim": {"rail": a.aim_rail, "given": float(a.aim_given), "used": float(a.aim_used)},
        "result": a.result,
        "landing": landing,
        "note": a.note,
        "model": a.model,
        "drill": a.drill,
        "zone": a.zone,
    }
    if a.result == "miss":
        out["miss_kind"] = a.miss_kind
    return out


# ----- reading one object -------------------------------------------------------------------


class _Line:
    def __init__(self, line_no: int) -> None:
        self.n = line_no

    def err(self, msg: str) -> RecordError:
        return RecordError(f"line {self.n}: {msg}")

    def get(self, obj: dict[str, Any], key: str, where: str = "") -> Any:
        if key not in obj:
            raise self.err(f"field {where + key!r} is missing")
        return obj[key]

    def text(
        self, obj: dict[str, Any], key: str, where: str = "", default: str | None = None
    ) -> str:
        if default is not None and key not in obj:
            return default
        v = self.get(obj, key, where)
        try:
            if key in ("player", "table") and not where:
                return validate.name(v, key)
            return validate.text(v, where + key)
        except validate.InputError as exc:
            raise self.err(str(exc)) from None

    def num(
        self, obj: dict[str, Any], key: str, where: str = "", default: float | None = None
    ) -> float:
        if default is not None and key not in obj:
            return default
        v = self.get(obj, key, where)
        try:
            return validate.finite(v, where + key)
        except validate.InputError as exc:
            raise self.err(str(exc)) from None

    def point(self, v: Any, name: str, optional: bool = False) -> tuple[float, float] | None:
        if v is None and optional:
            return None
        if not isinstance(v, list) or len(v) != 2:
            raise self.err(f"field {name!r} must be [x, y] in diamonds, got {validate.show(v)}")
        try:
            return (validate.finite(v[0], name), validate.finite(v[1], name))
        except validate.InputError as exc:
            raise self.err(f"{exc}; it must be [x, y] in diamonds") from None

    def table(self, obj: dict[str, Any], key: str) -> dict[str, Any]:
        v = self.get(obj, key)
        if not isinstance(v, dict):
            raise self.err(f"field {key!r} must be an object, got {v!r}")
        return v


def attempt_from_json(obj: Any, line_no: int = 1) -> Attempt:
    """Read one JSON object (version 2, or version 1 upgraded by ``records.upgrade_v1``) into a
    validated Attempt; errors name the line."""
    ln = _Line(line_no)
    if not isinstance(obj, dict):
        raise ln.err("each line must be one JSON object")
    v = obj.get("v")
    if v not in (1, SCHEMA_VERSION) or isinstance(v, bool):
        if isinstance(v, int) and not isinstance(v, bool) and v > SCHEMA_VERSION:
            raise ln.err(
                f"record version {v} is newer than this tablecoach reads "
                f"({SCHEMA_VERSION}); upgrade tablecoach to import it"
            )
        raise ln.err(f"field 'v' must be 1 or {SCHEMA_VERSION}, got {v!r}")
    unknown = sorted(set(obj) - _TOP - ({"miss_kind"} if v == 1 else set()))
    if v == 1 and "miss_kind" in obj:
        raise ln.err("field 'miss_kind' is not part of version 1 records (write v 2)")
    if unknown:
        raise ln.err(f"field {unknown[0]!r} is not part of the record format")
    try:
        when = validate.when_text(ln.get(obj, "when"))
    except validate.InputError as exc:
        raise ln.err(str(exc)) from None
    shot = ln.table(obj, "shot")
    unknown = sorted(set(shot) - _SHOT)
    if unknown:
        raise ln.err(f"field 'shot.{unknown[0]}' is not part of the record format")
    rails = ln.get(shot, "rails", "shot.")
    if not isinstance(rails, list) or not all(isinstance(r, str) for r in rails):
        raise ln.err(f"field 'shot.rails' must be a list of rail names, got {validate.show(rails)}")
    target = ln.get(shot, "target", "shot.")
    if not isinstance(target, dict) or len(target) != 1 or not ({"pocket", "ball"} & set(target)):
        raise ln.err('field \'shot.target\' must be {"pocket": name} or {"ball": [x, y]}')
    pocket = target.get("pocket")
    if pocket is not None and not isinstance(pocket, str):
        raise ln.err(
            f"field 'shot.target.pocket' must be a pocket name, got {validate.show(pocket)}"
        )
    ball = ln.point(target["ball"], "shot.target.ball") if "ball" in target else None
    travel: Any = ln.text(shot, "travel", "shot.")  # validate_attempt checks the value
    cue: Any = ln.point(ln.get(shot, "cue", "shot."), "shot.cue")
    rec = ShotRecord(
        travel,
        tuple(rails),
        cue,
        ln.point(shot.get("object"), "shot.object", optional=True),
        pocket,
        ball,
        ln.text(shot, "family", "shot.", default="custom"),
    )
    aim = ln.table(obj, "aim")
    result: Any = ln.text(obj, "result")
    if v == 1:
        landing: dict[str, Any] | None = ln.table(obj, "landing")
        miss_kind: Any = None
    else:
        raw = ln.get(obj, "landing")
        landing = None if raw is None else ln.table(obj, "landing")
        miss_kind = obj.get("miss_kind")
        if miss_kind is not None and not isinstance(miss_kind, str):
            raise ln.err(f"field 'miss_kind' must be text, got {miss_kind!r}")
    a = Attempt(
        when=when,
        player=ln.text(obj, "player"),
        table=ln.text(obj, "table"),
        shot=rec,
        speed=ln.num(obj, "speed"),
        english=ln.num(obj, "english", default=0.0),
        follow=ln.num(obj, "follow", default=0.0),
        aim_rail=ln.text(aim, "rail", "aim."),
        aim_given=ln.num(aim, "given", "aim."),
        aim_used=ln.num(aim, "used", "aim."),
        result=result,
        landing_rail=None if landing is None else ln.text(landing, "rail", "landing."),
        landing_at=None if landing is None else ln.num(landing, "at", "landing."),
        note=ln.text(obj, "note", default=""),
        model=ln.text(obj, "model", default="ideal"),
        drill=ln.text(obj, "drill", default=""),
        zone=ln.text(obj, "zone", default=""),
        miss_kind=miss_kind,
    )
    if v == 1:
        a = upgrade_v1(a)
    try:
        return validate_attempt(a)
    except RecordError as exc:
        raise ln.err(str(exc)) from None


# ----- JSONL ----------------------------------------------------------------------------------


def write_jsonl(attempts: Iterable[Attempt], fh: IO[str]) -> int:
    """Write one JSON object a line; returns how many were written."""
    n = 0
    for a in attempts:
        fh.write(json.dumps(attempt_to_json(a), ensure_ascii=False, allow_nan=False))
        fh.write("\n")
        n += 1
    return n


def read_jsonl(fh: IO[str]) -> tuple[list[Attempt], list[tuple[int, str]]]:
    """Read every line; returns (attempts, errors) where errors are (line number, message).

    Blank lines are skipped. A bad line does not stop the reading of the others.
    """
    out: list[Attempt] = []
    errors: list[tuple[int, str]] = []
    for n, line in enumerate(fh, start=1):
        if not line.strip():
            continue
        try:
            obj = validate.json_line(line.rstrip("\r\n"))
        except validate.InputError as exc:
            errors.append((n, f"line {n}: {exc}"))
            continue
        try:
            out.append(attempt_from_json(obj, n))
        except RecordError as exc:
            errors.append((n, str(exc)))
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


def _row_to_obj(row: dict[str, str], ln: _Line) -> dict[str, Any]:
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
    reader = csv.reader(fh)
    out: list[Attempt] = []
    errors: list[tuple[int, str]] = []
    try:
        header = next(reader)
    except StopIteration:
        return out, errors
    except csv.Error as exc:
        return out, [(1, f"line 1: not valid CSV ({exc})")]
    header = [h.strip() for h in header]
    missing = [c for c in CSV_COLUMNS if c not in header and c not in _OPTIONAL_CSV]
    unknown = [h for h in header if h not in CSV_COLUMNS]
    if missing or unknown:
        what = f"missing columns: {', '.join(missing)}" if missing else ""
        what += ("; " if what else "") + (
            f"unknown columns: {', '.join(unknown)}" if unknown else ""
        )
        return out, [(1, f"line 1: the header is not a tablecoach CSV header ({what})")]
    last = reader.line_num
    while True:
        start = last + 1
        try:
            cells = next(reader)
        except StopIteration:
            break
        except csv.Error as exc:
            errors.append((start, f"line {start}: not valid CSV ({exc})"))
            last = reader.line_num
            continue
        last = reader.line_num
        if not any(c.strip() for c in cells):
            continue
        ln = _Line(start)
        if len(cells) != len(header):
            errors.append(
                (start, f"line {start}: {len(cells)} cells, the header has {len(header)}")
            )
            continue
        try:
            out.append(
                attempt_from_json(_row_to_obj(dict(zip(header, cells, strict=True)), ln), start)
            )
        except RecordError as exc:
            errors.append((start, str(exc)))
    return out, errors


def read_any(fh: IO[str], fmt: str) -> tuple[list[Attempt], list[tuple[int, str]]]:
    """Read with the named format ('jsonl' or 'csv')."""
    if fmt == "csv":
        return read_csv(fh)
    if fmt == "jsonl":
        return read_jsonl(fh)
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
    "CSV_COLUMNS",
    "FORMATS",
    "attempt_from_json",
    "attempt_to_json",
    "attempt_to_row",
    "guess_format",
    "read_any",
    "read_csv",
    "read_jsonl",
    "when_text",
    "write_any",
    "write_csv",
    "write_jsonl",
]
