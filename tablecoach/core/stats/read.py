"""The frame read straight from the store: one SELECT of the fields the statistics use."""

from __future__ import annotations

from collections.abc import Callable, Sequence
from typing import Any

import numpy as np

from ..store.attempts import KEY_SEP, Attempts, quiet_gc
from ..store.query import EVERYTHING, AttemptQuery
from .frame import RAIL_CODE, Frame, codes, family_codes, frame_of
from .stamps import parse_times

JOINED_FIELDS: tuple[str, ...] = (
    "player", "table", "travel", "rails", "family", "aim_rail", "result",
)  # fmt: skip
"""Text fields with few distinct values (all NOT NULL) read as one joined text per row, so that
each distinct combination is split and coded once rather than once per row."""

PLAIN_FIELDS: tuple[str, ...] = (
    "when", "cue_x", "cue_y", "object_x", "object_y", "speed", "aim_used", "landing_rail",
    "landing_at",
)  # fmt: skip
"""The other records.FLAT_FIELDS the frame needs, read one column each."""

Coder = Callable[[Sequence[Any]], tuple[np.ndarray, tuple[Any, ...]]]


def split_keys(
    texts: Sequence[str], fields: Sequence[str]
) -> tuple[np.ndarray, tuple[tuple[Any, ...], ...]] | None:
    """Joined key texts as (code per row, distinct combinations in order of first appearance),
    rails as tuples; None when some value holds the separator (the split would be ambiguous)."""
    distinct = tuple(dict.fromkeys(texts))
    index = {t: i for i, t in enumerate(distinct)}
    combos = []
    rails_at = list(fields).index("rails") if "rails" in fields else -1
    for t in distinct:
        parts: list[Any] = t.split(KEY_SEP)
        if len(parts) != len(fields):
            return None
        if rails_at >= 0:
            parts[rails_at] = tuple(parts[rails_at].split(","))
        combos.append(tuple(parts))
    return np.fromiter(map(index.__getitem__, texts), np.int64, len(texts)), tuple(combos)


def first_codes(keys: np.ndarray) -> np.ndarray:
    """Integer keys recoded 0.. in order of first appearance (``codes`` for int arrays)."""
    _, first, inv = np.unique(keys, return_index=True, return_inverse=True)
    rank = np.empty(len(first), np.int64)
    rank[np.argsort(first, kind="stable")] = np.arange(len(first))
    return rank[inv.reshape(-1)]


def _floats(values: Sequence[Any]) -> np.ndarray:
    return np.array(values, np.float64).reshape(-1)  # None (absent position) becomes NaN


def read_frame(store: Attempts, query: AttemptQuery = EVERYTHING) -> Frame:
    """The frame of the attempts ``query`` matches, equal to ``frame_of(store.attempts(query))``
    but read as columns in one SELECT, without building any Attempt (the fast path for big
    histories). The frame's ``attempts`` is empty; ``us`` holds each time in microseconds."""
    with quiet_gc():  # many small objects alive at once: no use rescanning them meanwhile
        return _read_frame(store, query)


def _read_frame(store: Attempts, query: AttemptQuery) -> Frame:
    cols = store.attempt_columns(query, PLAIN_FIELDS, JOINED_FIELDS)
    key: np.ndarray | None = None
    combos: tuple[tuple[Any, ...], ...] = ()
    raw: dict[str, Any] = dict(zip(PLAIN_FIELDS, cols, strict=False))
    split = split_keys(cols[len(PLAIN_FIELDS)], JOINED_FIELDS)
    if split is None:  # a value holds the separator: read the fields one by one
        cols = store.attempt_columns(query, (*PLAIN_FIELDS, *JOINED_FIELDS))
        raw = dict(zip((*PLAIN_FIELDS, *JOINED_FIELDS), cols, strict=False))
        raw["rails"] = tuple(tuple(r.split(",")) for r in raw["rails"])
    else:
        key, combos = split
    ids = np.fromiter(cols[-2], np.int64, len(cols[-2]))
    n = len(ids)
    if n == 0:
        return frame_of([])
    us = parse_times(raw["when"]).astype(np.int64)
    sessions = np.fromiter((-1 if s is None else s for s in cols[-1]), np.int64, n)
    take: list[int] | None = None
    if n > 1 and not bool(np.all(np.diff(us) >= 0)):  # stored times out of text order
        order = np.lexsort((ids, us))
        take = order.tolist()
        us, sessions = us[order], sessions[order]
        key = None if key is None else key[order]
        raw = {k: tuple(v[i] for i in take) for k, v in raw.items()}

    def coded(name: str, coder: Coder = codes) -> tuple[np.ndarray, tuple[Any, ...]]:
        """``coder`` of one text field, from its distinct combinations when they were read
        joined (numbered by first appearance, so the codes equal ``coder`` over the rows)."""
        if key is not None:
            j = JOINED_FIELDS.index(name) if name in JOINED_FIELDS else -1
            if j >= 0:
                per_combo, distinct = coder([c[j] for c in combos])
                return per_combo[key], distinct
        return coder(raw[name])

    result_code, results = coded("result")
    hit = np.array([r == "hit" for r in results], bool)[result_code]
    fam, fam_names = coded("family", family_codes)
    player, player_names = coded("player")
    table, table_names = coded("table")
    # sessions keyed as in ``frame_of``: the store's id, or ("unsaved", player, table)
    ses_key = np.where(sessions >= 0, sessions, -1 - (player * len(table_names) + table))
    ses = first_codes(ses_key)
    firsts = np.unique(ses, return_index=True)[1]
    sess = tuple(
        s if s >= 0 else ("unsaved", player_names[player[i]], table_names[table[i]])
        for s, i in zip(ses_key[firsts].tolist(), firsts.tolist(), strict=True)
    )
    rail_code, rail_seqs = coded("rails")
    aim_code, aim_rails = coded("aim_rail")
    nr, na = len(rail_seqs), len(aim_rails)
    shape = first_codes((table * nr + rail_code) * na + aim_code)
    first = np.unique(shape, return_index=True)[1]
    shapes = tuple(
        (table_names[table[i]], rail_seqs[rail_code[i]], aim_rails[aim_code[i]])
        for i in first.tolist()
    )
    start = np.column_stack((_floats(raw["cue_x"]), _floats(raw["cue_y"])))
    travel_code, travels = coded("travel")
    travel = np.array([t == "object" for t in travels], bool)[travel_code]
    ox, oy = _floats(raw["object_x"]), _floats(raw["object_y"])
    banks = travel & ~np.isnan(ox) & ~np.isnan(oy)
    start[banks, 0] = ox[banks]
    start[banks, 1] = oy[banks]
    lcode, lrails = codes(raw["landing_rail"])
    land_code = np.array([RAIL_CODE.get(r, 0) for r in lrails], np.int64)[lcode]
    return Frame(
        attempts=(),
        order=np.arange(n),
        ts=us / 1e6,
        hit=hit,
        family=fam,
        families=fam_names,
        session=ses,
        sessions=sess,
        speed=_floats(raw["speed"]),
        start=start,
        shape=shape,
        shapes=shapes,
        aim_used=_floats(raw["aim_used"]),
        landing_rail=land_code,
        landing_at=_floats(raw["landing_at"]),
        player=player,
        players=player_names,
        table=table,
        tables=table_names,
        us=us,
    )
