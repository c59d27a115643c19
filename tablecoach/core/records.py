"""Attempt records: one logged shot, as stored, exported and read back.

Records are the one core type kept in diamonds rather than metres: they are the logged
contract (docs/formats.md), and must read the same whatever table spec is loaded later.
Convert to metres through the table (``TableSpec.to_metres``) when a model needs them.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from datetime import UTC, datetime
from typing import Any, Literal

from .table import POCKETS, RAILS, TableError

Result = Literal["hit", "miss"]
MissKind = Literal["landed", "short", "jaw"]
SCHEMA_VERSION = 2
"""The record version written (docs/formats.md); version 1 records still read (upgrade_v1)."""

MISS_KINDS: tuple[str, ...] = ("landed", "short", "jaw")
"""How a miss ended: it crossed the landing rail (``landed``, with a landing), stopped before
the rail (``short``), or rattled out of the pocket jaws (``jaw``); the last two have no landing."""


class RecordError(ValueError):
    """An attempt record is malformed; the message names the field and what is allowed."""


@dataclass(frozen=True, slots=True)
class ShotRecord:
    """The shot of an attempt in the contract's terms (positions in diamonds).

    ``family`` is the preset name or "custom"; the structure (travel, rails, target) is kept
    in full so a record stands on its own.
    """

    travel: Literal["cue", "object"]
    rails: tuple[str, ...]
    cue: tuple[float, float]
    object: tuple[float, float] | None = None
    pocket: str | None = None
    target_ball: tuple[float, float] | None = None
    family: str = "custom"


@dataclass(frozen=True, slots=True)
class Attempt:
    """One logged attempt.

    ``when`` is timezone-aware UTC. ``aim_given`` is the reading the coach showed and
    ``aim_used`` the reading the player actually used (the same unless they said otherwise),
    both in diamonds along ``aim_rail``'s line of sights. ``landing_rail``/``landing_at`` is
    where the player saw the travelling ball cross the landing rail (diamonds), or both None
    when no landing was observed: a hit records one only when the player gave it, and a miss
    has none when it stopped short or rattled in the jaws (``miss_kind``; None on a hit).
    ``speed`` is m/s off the tip, ``english``/``follow`` in tips. ``id`` and ``session`` are
    the store's keys (None before saving). ``model`` names the aim model that gave the
    reading, ``drill`` the pack, ``zone`` the coach's zone label at the time.
    """

    when: datetime
    player: str
    table: str
    shot: ShotRecord
    speed: float
    english: float
    follow: float
    aim_rail: str
    aim_given: float
    aim_used: float
    result: Result
    landing_rail: str | None
    landing_at: float | None
    note: str = ""
    model: str = "ideal"
    drill: str = ""
    zone: str = ""
    miss_kind: MissKind | None = None
    session: int | None = None
    id: int | None = field(default=None, compare=False)

    def __post_init__(self) -> None:
        # a miss given with a landing and no kind is a "landed" miss (the kind is implied)
        if self.result == "miss" and self.miss_kind is None and self.landing_rail is not None:
            object.__setattr__(self, "miss_kind", "landed")

    @property
    def hit(self) -> bool:
        return self.result == "hit"

    @property
    def landed(self) -> bool:
        """Whether the record carries an observed landing (never the model's prediction)."""
        return self.landing_rail is not None and self.landing_at is not None


FLAT_FIELDS: tuple[str, ...] = (
    "when",
    "player",
    "table",
    "travel",
    "rails",
    "family",
    "pocket",
    "target_x",
    "target_y",
    "cue_x",
    "cue_y",
    "object_x",
    "object_y",
    "speed",
    "english",
    "follow",
    "aim_rail",
    "aim_given",
    "aim_used",
    "result",
    "landing_rail",
    "landing_at",
    "note",
    "model",
    "drill",
    "zone",
    "miss_kind",
)
"""The fields of an attempt laid flat, in the one order the store, CSV and identity share."""


def _opt(v: float | None) -> float | None:
    return None if v is None else float(v)


def flatten(a: Attempt) -> tuple[Any, ...]:
    """An attempt's content as values in FLAT_FIELDS order (id and session left out).

    ``when`` stays a datetime and ``rails`` a tuple; absent positions are None.
    """
    s = a.shot
    tb = s.target_ball or (None, None)
    ob = s.object or (None, None)
    return (
        a.when,
        a.player,
        a.table,
        s.travel,
        tuple(s.rails),
        s.family,
        s.pocket,
        _opt(tb[0]),
        _opt(tb[1]),
        float(s.cue[0]),
        float(s.cue[1]),
        _opt(ob[0]),
        _opt(ob[1]),
        float(a.speed),
        float(a.english),
        float(a.follow),
        a.aim_rail,
        float(a.aim_given),
        float(a.aim_used),
        a.result,
        a.landing_rail,
        _opt(a.landing_at),
        a.note,
        a.model,
        a.drill,
        a.zone,
        a.miss_kind,
    )


def utc_now() -> datetime:
    """The current time, timezone-aware UTC, to the microsecond."""
    return datetime.now(UTC)


def _finite(name: str, v: float) -> float:
    if isinstance(v, bool) or not isinstance(v, int | float) or not math.isfinite(v):
        raise RecordError(f"field {name!r} must be a finite number, got {v!r}")
    return float(v)


def _pos(name: str, p: tuple[float, float] | None, optional: bool = False) -> None:
    if p is None:
        if optional:
            return
        raise RecordError(f"field {name!r} is required")
    x, y = (_finite(name, p[0]), _finite(name, p[1]))
    if not (0.0 <= x <= 8.0 and 0.0 <= y <= 4.0):
        raise RecordError(
            f"field {name!r} = {x:g},{y:g} is off the table (x 0..8, y 0..4 diamonds)"
        )


def rail_length_diamonds(rail: str) -> float:
    """How many diamonds a rail spans: 8 on the long rails, 4 on head and foot."""
    return 8.0 if rail in ("left", "right") else 4.0


def check_rail_point(name: str, rail: str, at: float) -> None:
    """Raise RecordError unless ``at`` diamonds lies on ``rail`` (0..8 long, 0..4 short)."""
    if rail not in RAILS:
        raise RecordError(f"field {name!r}: rail {rail!r} is not one of {', '.join(RAILS)}")
    v = _finite(name, at)
    top = rail_length_diamonds(rail)
    if not (0.0 <= v <= top):
        raise RecordError(
            f"field {name!r} = {v:g} is off the {rail} rail: it runs 0 to {top:g} diamonds"
        )


def validate_attempt(a: Attempt) -> Attempt:
    """Check every field of an attempt; return it unchanged or raise RecordError."""
    if a.when.tzinfo is None:
        raise RecordError("field 'when' must carry a time zone (UTC)")
    if not a.player or not a.table:
        raise RecordError("fields 'player' and 'table' must not be empty")
    s = a.shot
    if s.travel not in ("cue", "object"):
        raise RecordError("field 'shot.travel' must be 'cue' or 'object'")
    if not s.rails:
        raise RecordError("field 'shot.rails' must list at least one rail")
    for r in s.rails:
        if r not in RAILS:
            raise RecordError(f"field 'shot.rails': {r!r} is not one of {', '.join(RAILS)}")
    _pos("shot.cue", s.cue)
    _pos("shot.object", s.object, optional=True)
    _pos("shot.target.ball", s.target_ball, optional=True)
    if (s.pocket is None) == (s.target_ball is None):
        raise RecordError("field 'shot.target' must be either a pocket or a ball")
    if s.pocket is not None and s.pocket not in POCKETS:
        raise RecordError(
            f"field 'shot.target.pocket': {s.pocket!r} is not one of {', '.join(POCKETS)}"
        )
    if s.travel == "object" and s.object is None:
        raise RecordError("field 'shot.object' is required when the object ball travels")
    _finite("speed", a.speed)
    if not (0.0 < a.speed <= 13.0):
        raise RecordError(f"field 'speed' = {a.speed:g} m/s is outside 0 to 13 m/s")
    for name in ("english", "follow"):
        v = _finite(name, getattr(a, name))
        if abs(v) > 1.5:
            raise RecordError(f"field {name!r} = {v:g} tips is beyond the miscue limit (1.5 tips)")
    check_rail_point("aim.given", a.aim_rail, a.aim_given)
    check_rail_point("aim.used", a.aim_rail, a.aim_used)
    if a.result not in ("hit", "miss"):
        raise RecordError("field 'result' must be 'hit' or 'miss'")
    if (a.landing_rail is None) != (a.landing_at is None):
        raise RecordError("field 'landing' needs both a rail and a point, or neither")
    if a.landing_rail is not None and a.landing_at is not None:
        check_rail_point("landing.at", a.landing_rail, a.landing_at)
    if a.result == "hit":
        if a.miss_kind is not None:
            raise RecordError("field 'miss_kind' is only for a miss; leave it out on a hit")
    elif a.miss_kind not in MISS_KINDS:
        raise RecordError(
            f"field 'miss_kind' = {a.miss_kind!r}: a miss is one of {', '.join(MISS_KINDS)}"
        )
    elif (a.miss_kind == "landed") != (a.landing_rail is not None):
        raise RecordError(
            "a miss with a landing has miss_kind 'landed'; a 'short' or 'jaw' miss has landing null"
        )
    return a


def upgrade_v1(a: Attempt) -> Attempt:
    """A version-1 record in version-2 terms.

    Version 1 put a landing on every attempt, and the app filled a hit's with the aim's
    predicted landing, not a seen one; version 2 keeps only what was observed. So a hit loses
    its landing (it can be recomputed from the setup, aim and speed kept in the record) and a
    miss keeps its landing as ``miss_kind`` "landed".
    """
    if a.result == "hit":
        return replace(a, landing_rail=None, landing_at=None, miss_kind=None)
    return replace(a, miss_kind="landed")


__all__ = [
    "Attempt",
    "FLAT_FIELDS",
    "MISS_KINDS",
    "MissKind",
    "RecordError",
    "SCHEMA_VERSION",
    "ShotRecord",
    "TableError",
    "check_rail_point",
    "flatten",
    "upgrade_v1",
    "utc_now",
    "validate_attempt",
]
