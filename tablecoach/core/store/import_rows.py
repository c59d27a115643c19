"""An import record (one parsed JSON object) straight to the attempts row it becomes, checked.

``checked_row`` is the one way an import file's record reaches the store's rows: the row
(``rows.COLS`` order without the session) with its import identity last. Most records are
plain, and ``fast_row`` lays them flat with the same checks as ``attempt_json.
attempt_from_json`` and the store's write check ``rows.check_attempt``, without building an
Attempt; anything it is not sure of (a bad value, a version 1 record, a time not in UTC, an
int where a float is usual, a name with spaces around it...) goes the long way, through
``attempt_from_json`` and ``rows.to_row``, which gives the same row or the bad line's
message. tests/core/test_import_rows.py holds the two ways together on random and edge
records.

A row from here has passed every check ``rows.check_attempt`` makes (``attempt_from_json``
makes them all: validate.when_text, validate.name, validate.text and records.validate_attempt),
so ``importing.Staging.add_checked`` keeps it without checking again.
"""

from __future__ import annotations

from datetime import UTC, datetime
from typing import Any

from .. import validate
from ..attempt_json import attempt_from_json
from ..table import POCKETS, RAILS
from .rows import row_identity, to_row

_TOP = frozenset(
    ("v", "when", "player", "table", "shot", "speed", "english", "follow", "aim", "result",
     "landing", "note", "model", "drill", "zone", "miss_kind")
)  # fmt: skip
"""The keys of a version 2 record (attempt_json's list)."""
_SHOT = frozenset(("travel", "rails", "family", "target", "cue", "object"))
_RAILS = frozenset(RAILS)
_POCKETS = frozenset(POCKETS)
_LONG = frozenset(("left", "right"))
_TRAVEL = frozenset(("cue", "object"))
_fromiso = datetime.fromisoformat


def _num(v: Any) -> float:
    """A JSON number as the float the long way keeps (an int becomes its float); the caller
    checks the range (NaN and the infinities fail every range below)."""
    t = type(v)
    if t is float:
        return v  # type: ignore[no-any-return]
    if t is int:
        return float(v)
    raise ValueError


def _text(obj: dict[str, Any], key: str, default: str) -> str:
    """Free text as validate.text passes it unchanged (printable, short), else ValueError."""
    v = obj.get(key, default)
    if type(v) is not str or len(v) > validate.TEXT_MAX or not v.isprintable():
        raise ValueError
    return v


def _name(v: Any) -> str:
    """A name as validate.name keeps it (trimmed, 1 to NAME_MAX printable characters)."""
    if type(v) is not str:
        raise ValueError
    s = v.strip()
    if not s or len(s) > validate.NAME_MAX or not s.isprintable():
        raise ValueError
    return s


def _point(v: Any) -> tuple[float, float]:
    """An [x, y] position on the table in diamonds (x 0..8, y 0..4)."""
    if type(v) is not list or len(v) != 2:
        raise ValueError
    x, y = _num(v[0]), _num(v[1])
    if not (0.0 <= x <= 8.0 and 0.0 <= y <= 4.0):
        raise ValueError
    return x, y


def _on_rail(rail: Any, at: Any) -> float:
    """A point on a named rail (0..8 diamonds on the long rails, 0..4 on the short)."""
    if type(rail) is not str or rail not in _RAILS:
        raise ValueError
    v = _num(at)
    if not (0.0 <= v <= (8.0 if rail in _LONG else 4.0)):
        raise ValueError
    return v


def fast_row(obj: Any) -> tuple[Any, ...] | None:
    """The row of a plain, good version 2 record, or None when the long way must decide."""
    try:
        return _fast(obj)
    except (ValueError, TypeError, KeyError, OverflowError):
        return None


def _fast(obj: Any) -> tuple[Any, ...] | None:
    if type(obj) is not dict:
        return None
    v = obj.get("v")
    if type(v) is not int or v != 2 or not obj.keys() <= _TOP:
        return None
    when = obj["when"]
    if type(when) is not str or len(when) > 64:
        return None
    dt = _fromiso(when)
    if dt.tzinfo is not UTC or not (validate.YEAR_MIN <= dt.year <= validate.YEAR_MAX):
        return None
    shot = obj["shot"]
    if type(shot) is not dict or not shot.keys() <= _SHOT:
        return None
    rails = shot["rails"]
    if type(rails) is not list or not rails:
        return None
    for r in rails:
        if type(r) is not str or r not in _RAILS:
            return None
    target = shot["target"]
    if type(target) is not dict or len(target) != 1:
        return None
    pocket = target.get("pocket")
    if pocket is not None:
        if type(pocket) is not str or pocket not in _POCKETS:
            return None
        tx = ty = None
    else:
        tx, ty = _point(target["ball"])
    travel = shot["travel"]
    if type(travel) is not str or travel not in _TRAVEL:
        return None
    cx, cy = _point(shot["cue"])
    ob = shot.get("object")
    if ob is None:
        if travel == "object":
            return None
        ox = oy = None
    else:
        ox, oy = _point(ob)
    family = _text(shot, "family", "custom")
    speed = _num(obj["speed"])
    english = _num(obj.get("english", 0.0))
    follow = _num(obj.get("follow", 0.0))
    if not (0.0 < speed <= 13.0 and -1.5 <= english <= 1.5 and -1.5 <= follow <= 1.5):
        return None
    aim = obj["aim"]
    if type(aim) is not dict:
        return None
    aim_rail = aim["rail"]
    given = _on_rail(aim_rail, aim["given"])
    used = _on_rail(aim_rail, aim["used"])
    result = obj["result"]
    landing = obj["landing"]
    if landing is None:
        land_rail = land_at = None
    elif type(landing) is dict:
        land_rail = landing["rail"]
        land_at = _on_rail(land_rail, landing["at"])
    else:
        return None
    kind = obj.get("miss_kind")
    if result == "hit":
        if kind is not None:
            return None
    elif result == "miss":
        if kind is None and land_rail is not None:
            kind = "landed"  # implied, as Attempt.__post_init__ does
        if (kind == "landed") != (land_rail is not None) or kind not in ("short", "jaw", "landed"):
            return None
    else:
        return None
    row = (
        dt.isoformat(timespec="microseconds"),
        _name(obj["player"]),
        _name(obj["table"]),
        travel,
        ",".join(rails),
        family,
        pocket,
        tx,
        ty,
        cx,
        cy,
        ox,
        oy,
        speed,
        english,
        follow,
        aim_rail,
        given,
        used,
        result,
        land_rail,
        land_at,
        _text(obj, "note", ""),
        _text(obj, "model", "ideal"),
        _text(obj, "drill", ""),
        _text(obj, "zone", ""),
        kind,
    )
    return (*row, row_identity(row))


def slow_row(obj: Any, line_no: int) -> tuple[Any, ...]:
    """The row the long way: the Attempt read and checked (RecordError for a bad record)."""
    row = to_row(attempt_from_json(obj, line_no))[:-1]
    return (*row, row_identity(row))


def checked_row(obj: Any, line_no: int) -> tuple[Any, ...]:
    """The checked row of one record with its identity last, or the bad line's RecordError."""
    return fast_row(obj) or slow_row(obj, line_no)
