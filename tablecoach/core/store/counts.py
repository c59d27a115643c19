"""Zone counts kept by the store (schema version 5): tried and made per player, table, family,
zone cell and speed band, kept by SQLite triggers on the attempts table.

Every insert, delete or change of an attempt adds or takes back its one count inside the same
transaction, whoever writes it (logging, undo, import, restore, a migration), so the coach's
start reads a few hundred rows instead of aggregating every attempt of the player
(``Attempts.kept_cell_counts``; docs/coach.md). The counts are exactly what
``Attempts.cell_counts`` aggregates for a player and table: the same cells, bands and family
rule, and like every read of attempts they leave out times outside [query.FLOOR,
query.CEILING).

The cells and bands are written into the triggers' SQL. When the code's definition changes
(``GRID``, or ``shots.SPEED_BANDS``), the triggers in the file no longer match the ones this
code would write, and the first read puts in the new ones and counts everything again (one
write, so after the integrity check).
"""

from __future__ import annotations

import sqlite3
from collections.abc import Iterator, Mapping
from contextlib import contextmanager

from .query import CEILING, FLOOR

GRID: tuple[float, float, int, int] = (2.0, 1.0, 4, 4)
"""The zone cells (core/coach.py): column width and row height in diamonds, then the number
of columns and rows: 2-diamond strips along the table from the head rail by 1-diamond strips
across it from the left rail, 4 by 4."""

BELOW = "slow"
"""The band of a speed below every band of ``shots.SPEED_BANDS``."""
ABOVE = "power"
"""The band of a speed above them (or not a number)."""

COUNT_TABLE = "zone_counts"
TRIGGERS = ("zone_counts_add", "zone_counts_remove", "zone_counts_change")
"""The triggers that keep ``zone_counts``: after an insert, a delete, an update of attempts."""

KEY = ("player", "table_name", "family", "cell_col", "cell_row", "band")
"""The key of a count: whose, which table, and the zone (family, cell, speed band)."""

CHANGED = (
    "at",
    "player",
    "table_name",
    "family",
    "travel",
    "cue_x",
    "cue_y",
    "object_x",
    "object_y",
    "speed",
    "result",
)
"""The attempt columns a count depends on: an update of any of them moves the count."""

TABLE_SQL = f"""
CREATE TABLE {COUNT_TABLE} (
    player TEXT NOT NULL,
    table_name TEXT NOT NULL,
    family TEXT NOT NULL,
    cell_col INTEGER NOT NULL,
    cell_row INTEGER NOT NULL,
    band TEXT NOT NULL,
    tried INTEGER NOT NULL,
    made INTEGER NOT NULL,
    PRIMARY KEY ({", ".join(KEY)})
) WITHOUT ROWID"""
"""The counts, stored in key order (WITHOUT ROWID: one b-tree, and the same rows in the same
order however they came, by the triggers one at a time or by a GROUP BY)."""


def speed_bands() -> Mapping[str, tuple[float, float]]:
    """The named speed bands in m/s (``shots.SPEED_BANDS``), imported here only: the shot
    vocabulary loads numpy, which opening a store does not need."""
    from ..shots import SPEED_BANDS

    return SPEED_BANDS


def _literal(v: float) -> str:
    """A float as an SQL literal that SQLite reads back as the same double (the shortest
    repr round-trips; tests/core/test_store_counts.py checks each one SQLite parses)."""
    return repr(float(v))


def key_exprs(row: str, bands: Mapping[str, tuple[float, float]]) -> tuple[str, ...]:
    """SQL for the count key of an attempt: the columns of ``row`` (NEW, OLD, or "" for the
    attempts table itself) -> (player, table_name, family, column, row, band).

    The travelling ball's start is the object ball when it travels and is placed, else the
    cue ball; a cell is ``floor(x / width)`` clamped to the grid (x / width >= 0 truncates as
    floor does, a negative quotient clamps to 0 either way); the family is "custom" where none
    is stored; a band is the half-open [low, high) holding the speed.
    """
    p = f"{row}." if row else ""
    width, height, cols, rows = GRID
    placed = f"{p}travel = 'object' AND {p}object_x IS NOT NULL"
    x = f"CASE WHEN {placed} THEN {p}object_x ELSE {p}cue_x END"
    y = f"CASE WHEN {placed} THEN {p}object_y ELSE {p}cue_y END"
    col = f"MIN(MAX(CAST(({x}) / {_literal(width)} AS INTEGER), 0), {cols - 1})"
    cell_row = f"MIN(MAX(CAST(({y}) / {_literal(height)} AS INTEGER), 0), {rows - 1})"
    whens = " ".join(
        f"WHEN {p}speed >= {_literal(lo)} AND {p}speed < {_literal(hi)} THEN '{name}'"
        for name, (lo, hi) in bands.items()
    )
    lowest = min(lo for lo, _ in bands.values())
    band = f"CASE {whens} WHEN {p}speed < {_literal(lowest)} THEN '{BELOW}' ELSE '{ABOVE}' END"
    family = f"CASE WHEN {p}family = '' THEN 'custom' ELSE {p}family END"
    return (f"{p}player", f"{p}table_name", family, col, cell_row, band)


def _in_span(row: str) -> str:
    p = f"{row}." if row else ""
    return f"{p}at >= '{FLOOR}' AND {p}at < '{CEILING}'"


def _add(row: str, bands: Mapping[str, tuple[float, float]]) -> str:
    exprs = ", ".join(key_exprs(row, bands))
    return (
        f"INSERT INTO {COUNT_TABLE} ({', '.join(KEY)}, tried, made) "
        f"SELECT {exprs}, 1, {row}.result = 'hit' WHERE {_in_span(row)} "
        f"ON CONFLICT ({', '.join(KEY)}) DO UPDATE SET tried = tried + 1, "
        "made = made + excluded.made;"
    )


def _remove(row: str, bands: Mapping[str, tuple[float, float]]) -> list[str]:
    match = " AND ".join(f"{k} = {e}" for k, e in zip(KEY, key_exprs(row, bands), strict=True))
    return [
        f"UPDATE {COUNT_TABLE} SET tried = tried - 1, made = made - ({row}.result = 'hit') "
        f"WHERE {match} AND {_in_span(row)};",
        f"DELETE FROM {COUNT_TABLE} WHERE {match} AND tried <= 0;",
    ]


def trigger_sql(bands: Mapping[str, tuple[float, float]] | None = None) -> dict[str, str]:
    """The CREATE TRIGGER statements that keep the counts, by name (as SQLite stores them)."""
    b = speed_bands() if bands is None else bands
    add, change, remove = TRIGGERS[0], TRIGGERS[2], TRIGGERS[1]
    return {
        add: f"CREATE TRIGGER {add} AFTER INSERT ON attempts BEGIN {_add('NEW', b)} END",
        remove: (
            f"CREATE TRIGGER {remove} AFTER DELETE ON attempts BEGIN "
            f"{' '.join(_remove('OLD', b))} END"
        ),
        change: (
            f"CREATE TRIGGER {change} AFTER UPDATE OF {', '.join(CHANGED)} ON attempts BEGIN "
            f"{' '.join(_remove('OLD', b))} {_add('NEW', b)} END"
        ),
    }


BULK_FROM = 500
"""Attempts written at once from which ``in_bulk`` counts them in one pass (below: the trigger
for each, which is cheaper than taking the trigger out and putting it back)."""


def _count_select(bands: Mapping[str, tuple[float, float]], where: str) -> str:
    names = ("f", "c", "r", "b")
    exprs = key_exprs("", bands)
    select = ", ".join(
        [*exprs[:2], *(f"{e} AS {n}" for e, n in zip(exprs[2:], names, strict=True))]
    )
    return (
        f"INSERT INTO {COUNT_TABLE} ({', '.join(KEY)}, tried, made) "
        f"SELECT {select}, COUNT(*), SUM(result = 'hit') FROM attempts WHERE {where} "
        f"GROUP BY player, table_name, {', '.join(names)}"
    )


@contextmanager
def in_bulk(c: sqlite3.Connection, rows: int) -> Iterator[None]:
    """Count the attempts inserted inside this block in one pass at its end, not one trigger
    run each, when they are at least BULK_FROM ``rows``; inside the caller's write transaction.

    Any trigger on a table makes SQLite keep a statement journal for every insert into it,
    which triples the cost of an insert (tests and benchmarks/bench_scale.py: about 25 us a
    row without, 70 with). So the insert trigger is taken out for the block, the new rows
    (ids above the largest before it) are counted by one GROUP BY, and the same trigger is put
    back: on an error the caller's rollback puts it back too. Only inserts may happen inside.
    A file whose triggers are not this code's (``is_current``) keeps them, row by row.
    """
    if rows < BULK_FROM or not is_current(c):
        yield
        return
    top = int(c.execute("SELECT COALESCE(MAX(id), 0) FROM attempts").fetchone()[0])
    add = TRIGGERS[0]
    c.execute(f"DROP TRIGGER {add}")
    yield
    bands = speed_bands()
    upsert = (
        f" ON CONFLICT ({', '.join(KEY)}) DO UPDATE SET tried = tried + excluded.tried, "
        "made = made + excluded.made"
    )
    c.execute(_count_select(bands, f"id > ? AND {_in_span('')}") + upsert, (top,))
    c.execute(trigger_sql(bands)[add])


def install(c: sqlite3.Connection) -> None:
    """(Re)build the counts table and its triggers, and count every attempt once (one pass,
    one GROUP BY), inside the caller's write transaction."""
    bands = speed_bands()
    for name in TRIGGERS:
        c.execute(f"DROP TRIGGER IF EXISTS {name}")
    c.execute(f"DROP TABLE IF EXISTS {COUNT_TABLE}")
    c.execute(TABLE_SQL)
    c.execute(_count_select(bands, _in_span("")))
    for sql in trigger_sql(bands).values():
        c.execute(sql)


def is_current(c: sqlite3.Connection) -> bool:
    """Whether the file's counts table and triggers are the ones this code writes (same
    cells and bands)."""
    stored = dict(
        c.execute(
            "SELECT name, sql FROM sqlite_master WHERE name = ? OR "
            "(type = 'trigger' AND tbl_name = 'attempts')",
            (COUNT_TABLE,),
        ).fetchall()
    )
    want = {COUNT_TABLE: TABLE_SQL.strip(), **trigger_sql()}
    return all(stored.get(name) == sql for name, sql in want.items())
