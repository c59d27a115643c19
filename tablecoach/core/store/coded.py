"""Attempts read as integer codes that SQLite works out itself, a page of rows as one text.

The history of a big store (issue 14) needs a few small facts of every attempt (hit or miss,
family, zone cell, speed band, session, player, table, time) and the exact numbers of only
those whose landing is read against the aim. Fetching every row as a Python tuple costs far
more than the facts themselves, so here SQLite turns each fact into a small integer and
concatenates a page of rows into one text (``group_concat``), which the caller reads with
numpy: no Python object per row. Times come the same way, as their stored text written one
after another (fixed width: stats.stamps.parse_rows).
"""

from __future__ import annotations

import sqlite3
from collections.abc import Iterator, Sequence
from dataclasses import dataclass
from itertools import chain
from typing import TYPE_CHECKING, Any

from .query import AttemptQuery

if TYPE_CHECKING:
    import numpy as np

PAGE_IDS = 131_072
"""Row ids a page covers (its texts: about 60 bytes a row)."""

START_X = (
    "CASE WHEN travel = 'object' AND object_x IS NOT NULL AND object_y IS NOT NULL "
    "THEN object_x ELSE cue_x END"
)
START_Y = START_X.replace("THEN object_x ELSE cue_x", "THEN object_y ELSE cue_y")
"""The travelling ball's start: the object ball when it travels and is placed, else the cue."""

FIRST_RAIL_AIMED = "(rails = aim_rail OR substr(rails, 1, length(aim_rail) + 1) = aim_rail || ',')"
"""The aim is read on the first rail of the shot's sequence."""


@dataclass(frozen=True, slots=True)
class CodePlan:
    """What to code. ``families``, ``players``, ``tables`` and ``rails`` list the values each
    code indexes (a value not listed codes as the list's length); ``cell`` is (column width,
    row height, columns, rows) of the zone grid in diamonds; ``bands`` the half-open speed
    ranges in order (a speed below them all codes 0, any other not inside one the last).
    ``sequences`` are rail sequences as stored (e.g. "right,foot") whose aim and rail count
    are looked up rather than worked out with string functions row by row: the common ones
    (same codes either way; the lookup is a few comparisons, the string functions cost about
    as much as reading the row)."""

    families: Sequence[str]
    players: Sequence[str]
    tables: Sequence[str]
    rails: Sequence[str]
    cell: tuple[float, float, int, int]
    bands: Sequence[tuple[float, float]]
    sequences: Sequence[str] = ()


@dataclass(frozen=True, slots=True)
class CodedPage:
    """One page: ``n`` rows; ``ints`` holds 4 integers a row, comma-separated (id, session id
    or -1, ``hit + 2 * (family + F * (band + B * (col + C * row)))``, ``player + P * (table +
    T * (landed + 2 * aimed + 4 * (aim_rail + R * (landing_rail + R * rails))))`` with F, P,
    T, R the sizes of the plan's lists of families, players, tables and rails (each one more,
    for "not listed"), B the number of bands and C the grid's columns; ``landed`` is 1 when
    the landing is known, ``aimed`` when the aim is read on the first rail of the shot,
    ``rails`` is the number of rails); ``times`` the stored times, joined with char(31)."""

    n: int
    ints: str
    times: str


def _case(column: str, values: Sequence[str], args: list[Any]) -> str:
    if not values:
        return "0"
    args.extend(values)
    whens = " ".join(f"WHEN ? THEN {i}" for i in range(len(values)))
    return f"(CASE {column} {whens} ELSE {len(values)} END)"


def _codes_sql(plan: CodePlan) -> tuple[str, list[Any]]:
    """The SQL of a page's texts and its arguments (ahead of the query's own)."""
    args: list[Any] = []
    width, height, cols, rows = plan.cell
    fam = _case("family", plan.families, args)
    f_n = len(plan.families) + 1
    band_parts = []
    for i, (lo, hi) in enumerate(plan.bands):
        band_parts.append(f"WHEN speed >= ? AND speed < ? THEN {i}")
        args += [float(lo), float(hi)]
    lowest = min(lo for lo, _ in plan.bands)
    args.append(float(lowest))
    band = f"(CASE {' '.join(band_parts)} WHEN speed < ? THEN 0 ELSE {len(plan.bands) - 1} END)"
    b_n = len(plan.bands)
    col = f"MIN(MAX(CAST(({START_X}) / ? AS INTEGER), 0), {int(cols) - 1})"
    row = f"MIN(MAX(CAST(({START_Y}) / ? AS INTEGER), 0), {int(rows) - 1})"
    args += [float(width), float(height)]
    code1 = (
        f"((result = 'hit') + 2 * ({fam} + {f_n} * ({band} + {b_n} * ({col} + {cols} * {row}))))"
    )
    player = _case("player", plan.players, args)
    table = _case("table_name", plan.tables, args)
    p_n, t_n, r_n = len(plan.players) + 1, len(plan.tables) + 1, len(plan.rails) + 1
    seq = _sequence_sql(plan.sequences, 4 * r_n * r_n, args)
    aim = _case("aim_rail", plan.rails, args)
    land = _case("landing_rail", plan.rails, args)
    code2 = (
        f"({player} + {p_n} * ({table} + {t_n} * ((landing_at IS NOT NULL) + {seq} + 4 * ("
        f"{aim} + {r_n} * {land}))))"
    )
    ints = f"id || ',' || ifnull(session_id, -1) || ',' || {code1} || ',' || {code2}"
    return f"count(*), group_concat({ints}, ','), group_concat(at, char(31))", args


def _sequence_sql(sequences: Sequence[str], unit: int, args: list[Any]) -> str:
    """SQL of ``2 * aimed + unit * rails`` (rails: the number of rails in the sequence), for
    the listed ``sequences`` by lookup, for any other by string functions. The aim is read on
    the first rail of a listed sequence exactly when ``aim_rail`` is the sequence itself or
    one of its prefixes up to a comma (what FIRST_RAIL_AIMED says of it)."""
    n_rails = "(length(rails) - length(replace(rails, ',', '')) + 1)"
    other = f"(2 * {FIRST_RAIL_AIMED} + {unit} * {n_rails})"
    if not sequences:
        return other
    whens = []
    for s in dict.fromkeys(sequences):
        parts = s.split(",")
        aims = [s, *(",".join(parts[:k]) for k in range(1, len(parts)))]
        args.append(s)
        args.extend(aims)
        marks = ", ".join("?" * len(aims))
        whens.append(f"WHEN ? THEN 2 * (aim_rail IN ({marks})) + {unit * len(parts)}")
    return f"(CASE rails {' '.join(whens)} ELSE {other} END)"


def stored_values(c: sqlite3.Connection, column: str) -> list[str]:
    """Every distinct stored value of ``family``, ``player`` or ``table_name`` in the store,
    found by stepping along the column's index from one value to the next (a few lookups a
    value, not a pass over the rows); a superset of what a query's attempts hold. ``c`` is the
    connection of a read transaction (``Store.snapshot``), as for the other readers here."""
    if column not in ("family", "player", "table_name"):
        raise ValueError(f"not a coded column: {column}")
    out: list[str] = []
    row = c.execute(f"SELECT {column} FROM attempts ORDER BY {column} LIMIT 1").fetchone()
    while row is not None:
        out.append(str(row[0]))
        row = c.execute(
            f"SELECT {column} FROM attempts WHERE {column} > ? ORDER BY {column} LIMIT 1",
            (row[0],),
        ).fetchone()
    return out


def _pages(c: sqlite3.Connection, query: AttemptQuery) -> tuple[str, range]:
    """How to read: the table hint and the id ranges. The whole store is read by ranges of
    row id (NOT INDEXED: the planner would otherwise walk the time index, one row lookup at a
    time); a query with a filter is read in one go by the planner's choice of index."""
    top = c.execute("SELECT max(id) FROM attempts").fetchone()[0]
    end = -1 if top is None else int(top) + 1
    if query == AttemptQuery():
        return " NOT INDEXED", range(0, end, PAGE_IDS)
    return "", range(0, end, max(end, 1))


def coded_pages(c: sqlite3.Connection, query: AttemptQuery, plan: CodePlan) -> Iterator[CodedPage]:
    """The attempts ``query`` matches, coded by ``plan``, a page of row ids at a time (rows in
    no particular order: the id comes with each)."""
    what, code_args = _codes_sql(plan)
    where, args = query.where()
    hint, pages = _pages(c, query)
    for lo in pages:
        n, ints, times = c.execute(
            f"SELECT {what} FROM attempts{hint}{where} AND id >= ? AND id < ?",
            (*code_args, *args, lo, lo + pages.step),
        ).fetchone()
        if n:
            yield CodedPage(int(n), str(ints), str(times))


def aimed_numbers(
    c: sqlite3.Connection, query: AttemptQuery, landed_ids: np.ndarray
) -> Iterator[np.ndarray]:
    """(start x, start y, aim used, landing at) of the attempts ``query`` matches whose landing
    is known, in order of id, a page of ids at a time, as float64 arrays of shape (n, 4).
    ``landed_ids`` are those attempts' ids in increasing order (from the coded read of the same
    read transaction): they tell each page's size, so that numpy fills its array straight from
    the cursor (``numpy.fromiter``), a float object at a time but no tuple or list of them.
    Exact floats: these are the only numbers not read as codes. A page with more or fewer
    rows than ``landed_ids`` says raises RuntimeError."""
    import numpy as np

    where, args = query.where()
    hint, pages = _pages(c, query)
    sql = (
        f"SELECT {START_X}, {START_Y}, aim_used, landing_at FROM attempts{hint}{where} "
        "AND landing_at IS NOT NULL AND id >= ? AND id < ? ORDER BY id"
    )
    for lo in pages:
        hi = lo + pages.step
        n = int(np.searchsorted(landed_ids, hi) - np.searchsorted(landed_ids, lo))
        if n == 0:
            continue
        cur = c.execute(sql, (*args, lo, hi))
        try:
            nums = np.fromiter(chain.from_iterable(cur), np.float64, count=4 * n)
        except (ValueError, TypeError) as e:
            raise RuntimeError("the coded read and the numbers read disagree") from e
        if cur.fetchone() is not None:
            raise RuntimeError("the coded read and the numbers read disagree")
        yield nums.reshape(n, 4)
