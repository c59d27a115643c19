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


PAGE_ROWS = 20_000
"""Rows read per page: the memory of one page of Python values, whatever the history's size."""

FLOAT_FIELDS = ("cue_x", "cue_y", "object_x", "object_y", "speed", "aim_used", "landing_at")
"""The PLAIN_FIELDS read as float columns (None: NaN)."""


def _read_paged(store: Attempts, query: AttemptQuery) -> dict[str, Any] | None:
    """The frame's columns read a page at a time, each page turned into arrays before the
    next is read (memory: the arrays plus one page); None when some joined text holds the
    separator (the caller then reads the fields one by one)."""
    index: dict[str, int] = {}
    parts: dict[str, list[np.ndarray]] = {
        k: [] for k in ("us", "ids", "sessions", "key", "land", *FLOAT_FIELDS)
    }
    at = {f: i for i, f in enumerate(PLAIN_FIELDS)}
    width = len(JOINED_FIELDS)
    for cols in store.attempt_column_pages(query, PLAIN_FIELDS, JOINED_FIELDS, PAGE_ROWS):
        m = len(cols[-1])
        texts = cols[len(PLAIN_FIELDS)]
        known = len(index)
        key = np.fromiter((index.setdefault(t, len(index)) for t in texts), np.int64, m)
        if any(t.count(KEY_SEP) != width - 1 for t in list(index)[known:]):
            return None
        parts["key"].append(key)
        parts["us"].append(parse_times(cols[at["when"]]).astype(np.int64))
        parts["ids"].append(np.fromiter(cols[-2], np.int64, m))
        parts["sessions"].append(
            np.fromiter((-1 if s is None else s for s in cols[-1]), np.int64, m)
        )
        lcode, lrails = codes(cols[at["landing_rail"]])
        parts["land"].append(np.array([RAIL_CODE.get(r, 0) for r in lrails], np.int64)[lcode])
        for f in FLOAT_FIELDS:
            parts[f].append(_floats(cols[at[f]]))
    out: dict[str, Any] = {
        k: (np.concatenate(v) if v else np.zeros(0, np.float64 if k in FLOAT_FIELDS else np.int64))
        for k, v in parts.items()
    }
    combos = []
    rails_at = JOINED_FIELDS.index("rails")
    for t in index:
        got: list[Any] = t.split(KEY_SEP)
        got[rails_at] = tuple(got[rails_at].split(","))
        combos.append(tuple(got))
    out["combos"] = tuple(combos)
    return out


def _read_frame(store: Attempts, query: AttemptQuery) -> Frame:
    paged = _read_paged(store, query)
    if paged is None:
        return _read_whole(store, query)
    n = len(paged["ids"])
    if n == 0:
        return frame_of([])
    us, ids, sessions, key = paged["us"], paged["ids"], paged["sessions"], paged["key"]
    combos: tuple[tuple[Any, ...], ...] = paged["combos"]
    fl = {f: paged[f] for f in FLOAT_FIELDS}
    land_code = paged["land"]
    if n > 1 and not bool(np.all(np.diff(us) >= 0)):  # stored times out of text order
        order = np.lexsort((ids, us))
        us, sessions, key, land_code = us[order], sessions[order], key[order], land_code[order]
        fl = {f: v[order] for f, v in fl.items()}

    def coded(name: str, coder: Coder = codes) -> tuple[np.ndarray, tuple[Any, ...]]:
        """``coder`` of one joined text field from its distinct combinations (numbered by
        first appearance, so the codes equal ``coder`` over the rows)."""
        j = JOINED_FIELDS.index(name)
        per_combo, distinct = coder([c[j] for c in combos])
        return per_combo[key], distinct

    return _assemble(coded, n, us, sessions, fl, land_code)


def _assemble(
    coded: Callable[..., tuple[np.ndarray, tuple[Any, ...]]],
    n: int,
    us: np.ndarray,
    sessions: np.ndarray,
    fl: dict[str, np.ndarray],
    land_code: np.ndarray,
) -> Frame:
    """The Frame from a reader's coded text fields (``coded``), its rows' times, sessions, float
    columns (FLOAT_FIELDS) and landing rail codes, in time order (both readers end here)."""
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
    start = np.column_stack((fl["cue_x"], fl["cue_y"]))
    travel_code, travels = coded("travel")
    travel = np.array([t == "object" for t in travels], bool)[travel_code]
    ox, oy = fl["object_x"], fl["object_y"]
    banks = travel & ~np.isnan(ox) & ~np.isnan(oy)
    start[banks, 0] = ox[banks]
    start[banks, 1] = oy[banks]
    return Frame(
        attempts=(),
        order=np.arange(n),
        ts=us / 1e6,
        hit=hit,
        family=fam,
        families=fam_names,
        session=ses,
        sessions=sess,
        speed=fl["speed"],
        start=start,
        shape=shape,
        shapes=shapes,
        aim_used=fl["aim_used"],
        landing_rail=land_code,
        landing_at=fl["landing_at"],
        player=player,
        players=player_names,
        table=table,
        tables=table_names,
        us=us,
    )


def _read_whole(store: Attempts, query: AttemptQuery) -> Frame:
    """The frame from one read of every field one by one (a joined text held the separator)."""
    cols = store.attempt_columns(query, (*PLAIN_FIELDS, *JOINED_FIELDS))
    key: np.ndarray | None = None
    combos: tuple[tuple[Any, ...], ...] = ()
    raw: dict[str, Any] = dict(zip((*PLAIN_FIELDS, *JOINED_FIELDS), cols, strict=False))
    raw["rails"] = tuple(tuple(r.split(",")) for r in raw["rails"])
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

    fl = {f: _floats(raw[f]) for f in FLOAT_FIELDS}
    lcode, lrails = codes(raw["landing_rail"])
    land_code = np.array([RAIL_CODE.get(r, 0) for r in lrails], np.int64)[lcode]
    return _assemble(coded, n, us, sessions, fl, land_code)
