"""The whole history straight from the store at any size: SQLite codes each attempt as a few
integers (store/coded.py), numpy reads a page of them from one text, and only the attempts
whose landing is read against the aim bring their numbers one row at a time.

``summarize_store`` gives the same History as ``history.summarize`` over the Attempts
(tests/core/test_stats_coded.py holds them to each other on random stores); it is what
``tablecoach history`` and the history screen use.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass
from datetime import UTC, date, datetime, timedelta, tzinfo
from typing import Any

import numpy as np

from .. import coach
from ..shots import PRESETS, SPEED_BANDS
from ..store.attempts import Attempts, quiet_gc
from ..store.coded import CodePlan, aimed_numbers, coded_pages, stored_values
from ..store.errors import StoreError
from ..store.query import EVERYTHING, AttemptQuery
from ..table import BUILTIN_TABLES, TableSpec
from .bias import LandingBias, bias_by_codes, offsets_on
from .frame import RAIL_NAMES
from .history import History, history_of_codes
from .stamps import ISO_LEN, parse_rows, parse_times
from .zones import zones_of_cells

_EPOCH = datetime(1970, 1, 1, tzinfo=UTC)


@dataclass(frozen=True, slots=True)
class Coded:
    """Attempts as codes in time order (then id): each code array indexes the names beside
    it; ``band`` indexes ``bands`` (speed band names), ``aim`` RAIL_NAMES (4: another),
    ``land`` the landing rail (RAIL_NAMES; 0 for none), ``rails`` counts the shot's rails;
    ``landed`` marks a known landing, ``aimed`` an aim read on the first rail of the shot;
    ``us`` is each time in microseconds since 1970 (UTC)."""

    us: np.ndarray
    ids: np.ndarray
    hit: np.ndarray
    family: np.ndarray
    families: tuple[str, ...]
    band: np.ndarray
    bands: tuple[str, ...]
    col: np.ndarray
    row: np.ndarray
    session: np.ndarray
    sessions: tuple[Any, ...]
    player: np.ndarray
    players: tuple[str, ...]
    table: np.ndarray
    tables: tuple[str, ...]
    landed: np.ndarray
    aimed: np.ndarray
    aim: np.ndarray
    land: np.ndarray
    rails: np.ndarray

    def when(self, i: int) -> datetime:
        return _EPOCH + timedelta(microseconds=int(self.us[i]))


def first_order(keys: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Integer keys recoded 0.. in order of first appearance, and the distinct keys in that
    order. Only the first key of each run of equal keys is sorted (rows in time order come in
    runs: a session, a family practised for a while), then each key is looked up."""
    if len(keys) == 0:
        return np.zeros(0, np.int64), np.zeros(0, keys.dtype)
    starts = np.flatnonzero(np.r_[True, keys[1:] != keys[:-1]])
    uniq, first = np.unique(keys[starts], return_index=True)
    by_first = np.argsort(first, kind="stable")
    rank = np.empty(len(uniq), np.int32 if len(uniq) < 2**31 else np.int64)
    rank[by_first] = np.arange(len(uniq))
    return rank[np.searchsorted(uniq, keys)], uniq[by_first]


def first_coded(keys: np.ndarray, names: Sequence[Any]) -> tuple[np.ndarray, tuple[Any, ...]]:
    """Integer keys (indexing ``names``) recoded 0.. in order of first appearance, and the
    names in that order (frame.codes for rows already coded)."""
    codes, order = first_order(keys)
    return codes, tuple(names[int(k)] for k in order.tolist())


def _times(text: str, n: int) -> np.ndarray:
    """A page's stored times (joined with char(31)) as microseconds."""
    us = None
    if len(text) == (ISO_LEN + 1) * n - 1 and text.isascii():
        # each time then char(31): read in place as rows of ISO_LEN + 1 bytes, no split
        raw = np.frombuffer((text + "\x1f").encode("ascii"), np.uint8).reshape(n, ISO_LEN + 1)
        if bool((raw[:, ISO_LEN] == 31).all()):
            us = parse_rows(raw[:, :ISO_LEN])
    if us is None:  # some time not in the stored fixed form: parsed one by one
        texts = text.split("\x1f")
        if len(texts) != n:
            raise StoreError("a stored time holds a control character; restore from a backup")
        us = parse_times(texts).astype(np.int64)
    return us


def read_coded(c: Any, query: AttemptQuery) -> Coded | None:
    """The attempts ``query`` matches as Coded (None: none match), read in the read
    transaction of connection ``c``."""
    raw_fams = stored_values(c, "family")
    all_players = stored_values(c, "player")
    all_tables = stored_values(c, "table_name")
    band_names = tuple(SPEED_BANDS)
    plan = CodePlan(
        raw_fams, all_players, all_tables, RAIL_NAMES,
        (coach.COL_WIDTH, coach.ROW_HEIGHT, coach.ZONE_COLS, coach.ZONE_ROWS),
        tuple(SPEED_BANDS.values()),
        (*RAIL_NAMES, *(",".join(f.rails) for f in PRESETS.values())),
    )  # fmt: skip
    parts: dict[str, list[np.ndarray]] = {k: [] for k in ("ids", "sess", "c1", "c2", "us")}
    for page in coded_pages(c, query, plan):
        ints = np.fromstring(page.ints, np.int64, sep=",").reshape(page.n, 4)  # parsed in C
        for k, name in enumerate(("ids", "sess", "c1", "c2")):
            parts[name].append(ints[:, k].copy())
        del ints
        parts["us"].append(_times(page.times, page.n))
    if not parts["us"]:
        return None
    ids, sess_id, code1, code2, us = (
        np.concatenate(parts.pop(k)) for k in ("ids", "sess", "c1", "c2", "us")
    )
    d_us, d_id = np.diff(us), np.diff(ids)
    if not bool(np.all((d_us > 0) | ((d_us == 0) & (d_id > 0)))):
        order = np.lexsort((ids, us))
        ids, sess_id, code1, code2, us = (a[order] for a in (ids, sess_id, code1, code2, us))
    del d_us, d_id
    hit = (code1 & 1).astype(bool)
    rest = code1 >> 1
    nf = len(raw_fams) + 1
    fam_raw, rest = rest % nf, rest // nf
    nb = len(band_names)
    band_raw, rest = rest % nb, rest // nb
    col, row = rest % coach.ZONE_COLS, rest // coach.ZONE_COLS
    np_, nt, nr = len(all_players) + 1, len(all_tables) + 1, len(RAIL_NAMES) + 1
    player, rest = code2 % np_, code2 // np_
    table, rest = rest % nt, rest // nt
    landed, rest = (rest % 2).astype(bool), rest // 2
    aimed, rest = (rest % 2).astype(bool), rest // 2
    aim, rest = rest % nr, rest // nr
    land, rails = rest % nr, rest // nr
    land[land >= len(RAIL_NAMES)] = 0  # none, or not a rail: code 0, as in the frame
    del code1, code2, rest
    col, row, aim, land, rails = (a.astype(np.int32) for a in (col, row, aim, land, rails))
    # players and tables the query's attempts hold (the plan listed all the store's)
    player, players = first_coded(player, [*all_players, ""])
    table, tables = first_coded(table, [*all_tables, ""])
    # family names as the frame has them: "" counts as "custom" (frame.family_codes)
    names = [f or "custom" for f in raw_fams]
    merged = tuple(dict.fromkeys(names))
    to_merged = np.array([merged.index(f) for f in names] + [0], np.int64)
    family, families = first_coded(to_merged[fam_raw], merged)
    band, bands = first_coded(band_raw, band_names)
    # sessions keyed as frame_of does: the store's id, or ("unsaved", player, table)
    key = np.where(sess_id >= 0, sess_id, -1 - (player * len(tables) + table))
    session, keys = first_order(key)
    sessions = tuple(
        k
        if k >= 0
        else ("unsaved", players[(-1 - k) // len(tables)], tables[(-1 - k) % len(tables)])
        for k in keys.tolist()
    )
    return Coded(
        us, ids, hit, family, families, band, bands, col, row, session, sessions,
        player, players, table, tables, landed, aimed, aim, land, rails,
    )  # fmt: skip


def offsets_of_coded(
    c: Any, query: AttemptQuery, cols: Coded, table_of: Callable[[str], TableSpec | None]
) -> np.ndarray:
    """Each attempt's landing offset (NaN: none), as ``bias.offsets_of`` gives it, worked out
    a page of numbers at a time (each offset depends on its own attempt only)."""
    out = np.full(len(cols.us), np.nan)
    specs = [table_of(t) for t in cols.tables]
    if not any(spec is not None for spec in specs) or not cols.landed.any():
        return out
    ok = np.array([spec is not None for spec in specs], bool)
    landed = np.flatnonzero(cols.landed)
    landed = landed[np.argsort(cols.ids[landed], kind="stable")]  # numbers come by id
    done = 0
    for nums in aimed_numbers(c, query, cols.ids[landed]):
        pos = landed[done : done + len(nums)]
        done += len(nums)
        if len(pos) != len(nums):
            break
        keep = np.flatnonzero(cols.aimed[pos] & ok[cols.table[pos]])
        _offsets_into(out, pos[keep], nums[keep], cols, specs)
    if done != len(landed):
        raise RuntimeError("the coded read and the numbers read disagree")
    return out


def _offsets_into(
    out: np.ndarray,
    pos: np.ndarray,
    nums: np.ndarray,
    cols: Coded,
    specs: Sequence[TableSpec | None],
) -> None:
    """The offsets of the attempts at ``pos`` (their numbers in ``nums``) into ``out``, one
    table, aim rail and number of rails at a time."""
    if len(pos) == 0:
        return
    tab, aim, rails = cols.table[pos], cols.aim[pos], cols.rails[pos]
    shape = (tab.astype(np.int64) * (len(RAIL_NAMES) + 1) + aim) * (int(rails.max()) + 1) + rails
    for s in np.unique(shape).tolist():
        sel = np.flatnonzero(shape == s)
        i0 = int(pos[sel[0]])
        spec = specs[int(cols.table[i0])]
        a = int(cols.aim[i0])
        if spec is None or a >= len(RAIL_NAMES):
            continue
        rows = pos[sel]
        out[rows] = offsets_on(
            spec, nums[sel, 0:2], int(cols.rails[i0]), RAIL_NAMES[a], nums[sel, 2],
            cols.land[rows], nums[sel, 3],
        )  # fmt: skip


def summarize_store(
    store: Attempts,
    query: AttemptQuery = EVERYTHING,
    tz: tzinfo | None = None,
    today: date | None = None,
    table_of: Callable[[str], TableSpec | None] | None = None,
    confidence: float = 0.95,
    with_bias: bool = True,
) -> History:
    """The History of the attempts ``query`` matches (``history.summarize``'s arguments),
    read from the store as codes: memory a few dozen bytes an attempt, no Python object per
    attempt but for the numbers of those whose landing is read against the aim."""
    from .history import summarize

    with quiet_gc(), store.snapshot() as c:
        cols = read_coded(c, query)
        if cols is None:
            return summarize([], tz=tz, today=today, confidence=confidence)
        bias: tuple[LandingBias, ...] = ()
        if with_bias:
            offsets = offsets_of_coded(c, query, cols, table_of or BUILTIN_TABLES.get)
            bias = tuple(bias_by_codes(cols.family, cols.families, cols.band, cols.bands, offsets))
    zcode, zkeys = zones_of_cells(
        cols.family, cols.families, cols.col, cols.row, cols.band, cols.bands
    )
    return history_of_codes(cols, cols.us / 1e6, zcode, zkeys, bias, tz, today, confidence)
