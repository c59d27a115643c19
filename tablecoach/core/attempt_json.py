"""One attempt as a JSON object and back: the record format's contract (docs/formats.md).

Numbers are written with Python's shortest round-tripping repr, and times as ISO-8601 UTC to
the microsecond, so writing and reading again gives back exactly the same attempt.
"""

from __future__ import annotations

from datetime import UTC, datetime
from typing import Any

from . import validate
from .records import SCHEMA_VERSION, Attempt, RecordError, ShotRecord, upgrade_v1, validate_attempt

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


class Line:
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
    ln = Line(line_no)
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
