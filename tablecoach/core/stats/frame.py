"""The one columnar frame of attempts the statistics work on, built from Attempt objects."""

from __future__ import annotations

import operator
from collections.abc import Hashable, Iterable, Sequence
from dataclasses import dataclass
from datetime import datetime
from itertools import chain, repeat
from typing import Any

import numpy as np

from ..records import Attempt
from ..store.attempts import quiet_gc

RAIL_CODE = {"head": 0, "foot": 1, "left": 2, "right": 3}
"""Rail name -> the code the frame keeps (``Frame.landing_rail``, ``ideal_landings``)."""
RAIL_NAMES = tuple(RAIL_CODE)
"""Rail code -> name."""
_GET = operator.attrgetter(
    "when", "result", "shot", "session", "speed", "table", "aim_rail", "aim_used",
    "landing_rail", "landing_at", "player", "id",
)  # fmt: skip
_GET_SHOT = operator.attrgetter("family", "travel", "rails", "cue", "object")


def codes(values: Sequence[Hashable]) -> tuple[np.ndarray, tuple[Any, ...]]:
    """Integer codes for values, in order of first appearance, and the distinct values."""
    distinct = tuple(dict.fromkeys(values))
    index = {v: i for i, v in enumerate(distinct)}
    return np.fromiter(map(index.__getitem__, values), np.int64, len(values)), distinct


@dataclass(frozen=True, slots=True)
class Frame:
    """Attempts as numpy columns, in time order (``attempts`` in that order; ``order[i]`` is
    the position of ``attempts[i]`` in the input). Integer code arrays (``family``, ``session``,
    ``shape``, ``player``, ``table``) index the tuple beside them; ``start`` is the travelling
    ball's start in diamonds (object ball for banks). ``frame_of`` builds one from Attempts
    (the history of a whole store is read as codes instead: stats/coded.py)."""

    attempts: tuple[Attempt, ...]
    order: np.ndarray
    ts: np.ndarray
    hit: np.ndarray
    family: np.ndarray
    families: tuple[str, ...]
    session: np.ndarray
    sessions: tuple[Any, ...]
    speed: np.ndarray
    start: np.ndarray
    shape: np.ndarray
    shapes: tuple[tuple[str, tuple[str, ...], str], ...]
    aim_used: np.ndarray
    landing_rail: np.ndarray
    landing_at: np.ndarray
    player: np.ndarray
    players: tuple[str, ...]
    table: np.ndarray
    tables: tuple[str, ...]

    def __len__(self) -> int:
        return len(self.ts)

    def when(self, i: int) -> datetime:
        """The time of attempt i (the Attempt's own ``when``)."""
        return self.attempts[i].when


def ordered(attempts: Iterable[Attempt]) -> list[Attempt]:
    """Attempts in time order (``when``, then store id; unsaved attempts keep their order)."""
    items = list(attempts)
    return sorted(items, key=lambda a: (a.when, a.id if a.id is not None else -1))


def frame_of(attempts: Iterable[Attempt]) -> Frame:
    """Put attempts in time order (``when``, then id) and lay them out as columns."""
    with quiet_gc():
        return _frame(list(attempts))


def _frame(items: list[Attempt]) -> Frame:
    n = len(items)
    if n == 0:
        e = np.zeros(0)
        ei = np.zeros(0, np.int64)
        return Frame((), ei, e, np.zeros(0, bool), ei, (), ei, (), e, np.zeros((0, 2)),
                       ei, (), e, ei, e, ei, (), ei, ())  # fmt: skip
    rows = list(map(_GET, items))
    (whens, results, shots_, sessions, speeds, tables, aim_rails, aim_used, lrails, lat,
     players, ids) = zip(*rows, strict=True)  # fmt: skip
    ts = np.fromiter(map(datetime.timestamp, whens), np.float64, n)
    order = np.arange(n)
    if n > 1 and not bool(np.all(np.diff(ts) >= 0.0)):
        idn = np.array([-1 if i is None else i for i in ids], dtype=np.int64)
        order = np.lexsort((idn, ts))
        ol = order.tolist()
        items = [items[i] for i in ol]
        ts = ts[order]

        def pick(col: tuple[Any, ...]) -> tuple[Any, ...]:
            return tuple(col[i] for i in ol)

        results, shots_, sessions, speeds, tables = map(
            pick, (results, shots_, sessions, speeds, tables)
        )
        aim_rails, aim_used, lrails, lat, players = map(
            pick, (aim_rails, aim_used, lrails, lat, players)
        )
    fams, travels, rails, cues, objects = zip(*map(_GET_SHOT, shots_), strict=True)
    hit = np.fromiter(map("hit".__eq__, results), np.bool_, n)
    fam, fam_names = family_codes(fams)
    ses, sess = codes(
        [
            s if s is not None else ("unsaved", p, t)
            for s, p, t in zip(sessions, players, tables, strict=True)
        ]
    )
    shape, shapes = codes(list(zip(tables, rails, aim_rails, strict=True)))
    start = np.fromiter(chain.from_iterable(cues), np.float64, 2 * n).reshape(n, 2)
    banks = [
        i
        for i, (tr, ob) in enumerate(zip(travels, objects, strict=True))
        if tr == "object" and ob is not None
    ]
    if banks:
        start[banks] = np.array([objects[i] for i in banks], dtype=np.float64)
    land_code = np.fromiter(map(RAIL_CODE.get, lrails, repeat(0, n)), np.int64, n)
    player, player_names = codes(players)
    table, table_names = codes(tables)
    return Frame(
        attempts=tuple(items),
        order=order,
        ts=ts,
        hit=hit,
        family=fam,
        families=fam_names,
        session=ses,
        sessions=sess,
        speed=np.fromiter(speeds, np.float64, n),
        start=start,
        shape=shape,
        shapes=shapes,
        aim_used=np.fromiter(aim_used, np.float64, n),
        landing_rail=land_code,
        # no observed landing (a hit without one, a short or jawed miss): NaN, no offset
        landing_at=np.fromiter((np.nan if v is None else v for v in lat), np.float64, n),
        player=player,
        players=player_names,
        table=table,
        tables=table_names,
    )


def family_codes(fams: Sequence[str]) -> tuple[np.ndarray, tuple[str, ...]]:
    """Family codes, an empty family name counting as "custom"."""
    fam, fam_names = codes(fams)
    fam_names = tuple(f or "custom" for f in fam_names)
    if len(set(fam_names)) != len(fam_names):  # "" and "custom" both present: merge them
        fam, fam_names = codes([f or "custom" for f in fams])
    return fam, fam_names
