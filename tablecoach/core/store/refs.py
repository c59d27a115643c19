"""The reference lines repository: each player's trusted shots per table and family."""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

from .. import validate
from ..records import Attempt, utc_now
from .connection import Connection
from .errors import StoreError
from .rows import check_name, iso_utc

_COLS = (
    "id, player, table_name, family, travel, rails, pocket, target_x, target_y, start_x, "
    "start_y, reading, speed, english, follow, note, at"
)


@dataclass(frozen=True, slots=True)
class Reference:
    """A reference line: the travelling ball's start (diamonds) and the reading on the
    family's first rail (diamonds) of a shot the player trusts, with the stroke (m/s, tips).
    The family is kept whole (name, travel, rails, pocket) and a kick's target ball too."""

    player: str
    table: str
    family: str
    travel: str
    rails: tuple[str, ...]
    start: tuple[float, float]
    reading: float
    speed: float
    pocket: str | None = None
    target: tuple[float, float] | None = None
    english: float = 0.0
    follow: float = 0.0
    note: str = ""
    id: int | None = None
    when: str = ""


def reference_of(attempt: Attempt) -> Reference:
    """A logged hit's line as a reference: the travelling ball's start and the reading used."""
    shot = attempt.shot
    start = shot.object if shot.travel == "object" and shot.object is not None else shot.cue
    return Reference(
        player=attempt.player,
        table=attempt.table,
        family=shot.family,
        travel=shot.travel,
        rails=shot.rails,
        start=start,
        reading=attempt.aim_used,
        speed=attempt.speed,
        pocket=shot.pocket,
        target=shot.target_ball,
        english=attempt.english,
        follow=attempt.follow,
        note="kept after a hit",
    )


SAME_SPEED = 0.05
"""Speeds within 5 % of each other count as the same stroke when references are compared
(common practice, no source: a player does not repeat a stroke closer than that)."""


def closest_stroke(
    refs: Sequence[Reference], speed: float, english: float = 0.0, follow: float = 0.0
) -> Reference | None:
    """The reference played most like this stroke: the nearest speed (by ratio, in steps of
    ``SAME_SPEED``, so speeds a step apart or less count as equal), then the nearest spin
    (tips of english and follow), then the newest (``refs`` newest first, as
    ``references_for`` gives them)."""

    def key(item: tuple[int, Reference]) -> tuple[int, float, int]:
        i, r = item
        gap = abs(math.log(max(r.speed, 1e-6) / max(speed, 1e-6)))
        spin = abs(r.english - english) + abs(r.follow - follow)
        return (math.floor(gap / math.log1p(SAME_SPEED)), round(spin, 6), i)

    return min(enumerate(refs), key=key)[1] if refs else None


def check_reference(ref: Reference) -> None:
    """The checks every stored reference passes (names, finite numbers, a known travel)."""
    try:
        validate.name(ref.player, "player")
        validate.name(ref.table, "table")
        validate.name(ref.family, "family")
        if ref.travel not in ("cue", "object") or not ref.rails:
            raise validate.InputError("a reference needs a travel (cue or object) and rails")
        for r in ref.rails:
            validate.name(r, "rails")
        for i, v in enumerate((*ref.start, *(ref.target or ()))):
            validate.finite(v, "start" if i < 2 else "target", -100.0, 100.0, "diamonds")
        validate.finite(ref.reading, "reading", -100.0, 100.0, "diamonds")
        validate.finite(ref.speed, "speed", 0.0, 20.0, "m/s")
        validate.finite(ref.english, "english", -1.0, 1.0, "tips")
        validate.finite(ref.follow, "follow", -1.0, 1.0, "tips")
        validate.text(ref.note, "note")
        if ref.pocket is not None:
            validate.name(ref.pocket, "pocket")
    except validate.InputError as exc:
        raise StoreError(f"a reference line cannot be kept: {exc}") from None


def reference_from_row(row: dict[str, Any]) -> Reference:
    """A reference from a mapping of the refs table's columns (a backup's row), checked."""
    rails = row.get("rails")
    if not isinstance(rails, str):
        raise StoreError("a reference line needs its rails as names joined by commas")
    tx, ty = row.get("target_x"), row.get("target_y")
    ref = Reference(
        player=row.get("player"),  # type: ignore[arg-type]
        table=row.get("table_name"),  # type: ignore[arg-type]
        family=row.get("family"),  # type: ignore[arg-type]
        travel=row.get("travel"),  # type: ignore[arg-type]
        rails=tuple(rails.split(",")),
        start=(row.get("start_x"), row.get("start_y")),  # type: ignore[arg-type]
        reading=row.get("reading"),  # type: ignore[arg-type]
        speed=row.get("speed"),  # type: ignore[arg-type]
        pocket=row.get("pocket"),
        target=None if tx is None and ty is None else (tx, ty),  # type: ignore[arg-type]
        english=row.get("english", 0.0),
        follow=row.get("follow", 0.0),
        note=row.get("note", ""),
    )
    check_reference(ref)
    return ref


def _of_row(r: tuple[object, ...]) -> Reference:
    target = None if r[7] is None else (float(r[7]), float(r[8]))  # type: ignore[arg-type]
    return Reference(
        player=str(r[1]),
        table=str(r[2]),
        family=str(r[3]),
        travel=str(r[4]),
        rails=tuple(str(r[5]).split(",")),
        pocket=None if r[6] is None else str(r[6]),
        target=target,
        start=(float(r[9]), float(r[10])),  # type: ignore[arg-type]
        reading=float(r[11]),  # type: ignore[arg-type]
        speed=float(r[12]),  # type: ignore[arg-type]
        english=float(r[13]),  # type: ignore[arg-type]
        follow=float(r[14]),  # type: ignore[arg-type]
        note=str(r[15]),
        id=int(r[0]),  # type: ignore[call-overload]
        when=str(r[16]),
    )


class Refs(Connection):
    """The refs table: add, list, find the newest for a family, remove."""

    def add_reference(self, ref: Reference) -> int:
        """Keep a reference line (and its player, if new); returns its id."""
        check_name("player", ref.player)
        check_reference(ref)
        tx, ty = ref.target if ref.target is not None else (None, None)
        with self.transaction() as c:
            c.execute(
                "INSERT OR IGNORE INTO players (name, created) VALUES (?, ?)",
                (ref.player, iso_utc(utc_now())),
            )
            same = c.execute(
                "SELECT id FROM refs WHERE player = ? AND table_name = ? AND family = ? "
                "AND rails = ? AND start_x = ? AND start_y = ? AND reading = ? AND speed = ? "
                "AND english = ? AND follow = ? AND pocket IS ?",
                (
                    ref.player,
                    ref.table,
                    ref.family,
                    ",".join(ref.rails),
                    ref.start[0],
                    ref.start[1],
                    ref.reading,
                    ref.speed,
                    ref.english,
                    ref.follow,
                    ref.pocket,
                ),
            ).fetchone()
            if same is not None:  # the same line kept again: one copy
                return int(same[0])
            cur = c.execute(
                f"INSERT INTO refs ({_COLS.removeprefix('id, ')}) "
                "VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)",
                (
                    ref.player,
                    ref.table,
                    ref.family,
                    ref.travel,
                    ",".join(ref.rails),
                    ref.pocket,
                    tx,
                    ty,
                    ref.start[0],
                    ref.start[1],
                    ref.reading,
                    ref.speed,
                    ref.english,
                    ref.follow,
                    ref.note,
                    iso_utc(utc_now()),
                ),
            )
            return int(cur.lastrowid or 0)

    def references(
        self, player: str | None = None, table: str | None = None, family: str | None = None
    ) -> list[Reference]:
        """Reference lines, oldest first, for a player, table and family (None: any)."""
        where, args = [], []
        for col, v in (("player", player), ("table_name", table), ("family", family)):
            if v is not None:
                where.append(f"{col} = ?")
                args.append(v)
        sql = f"SELECT {_COLS} FROM refs"
        if where:
            sql += " WHERE " + " AND ".join(where)
        with self.reading() as c:
            return [_of_row(r) for r in c.execute(sql + " ORDER BY id", args)]

    def reference_for(
        self, player: str, table: str, travel: str, rails: tuple[str, ...], pocket: str | None
    ) -> Reference | None:
        """The newest reference of this player on this table for a family of this shape
        (travel, rails, pocket), or None."""
        with self.reading() as c:
            r = c.execute(
                f"SELECT {_COLS} FROM refs WHERE player = ? AND table_name = ? AND travel = ? "
                "AND rails = ? AND pocket IS ? ORDER BY id DESC LIMIT 1",
                (player, table, travel, ",".join(rails), pocket),
            ).fetchone()
        return None if r is None else _of_row(r)

    def references_for(
        self, player: str, table: str, travel: str, rails: tuple[str, ...], pocket: str | None
    ) -> list[Reference]:
        """Every reference of this player on this table for a family of this shape, newest
        first (``closest_stroke`` picks the one played most like a given stroke)."""
        with self.reading() as c:
            rows = c.execute(
                f"SELECT {_COLS} FROM refs WHERE player = ? AND table_name = ? AND travel = ? "
                "AND rails = ? AND pocket IS ? ORDER BY id DESC",
                (player, table, travel, ",".join(rails), pocket),
            ).fetchall()
        return [_of_row(r) for r in rows]

    def remove_reference(self, ref_id: int) -> bool:
        """Remove one reference line by id; False when there was none."""
        with self.transaction() as c:
            return c.execute("DELETE FROM refs WHERE id = ?", (ref_id,)).rowcount > 0
