"""The store's schema: the first version verbatim and the steps that bring a file up to date."""

from __future__ import annotations

import sqlite3

from .rows import COL_NAMES, COLS, attempt_identity, from_row

SCHEMA_VERSION = 5
"""The schema this code writes (PRAGMA user_version). Version 1 is the first schema."""

APPLICATION_ID = 0x74636F61
"""PRAGMA application_id marking a tablecoach database ('tcoa' in ASCII)."""


SCHEMA_V1 = f"""
PRAGMA application_id = {APPLICATION_ID};
CREATE TABLE players (
    name TEXT PRIMARY KEY,
    created TEXT NOT NULL
);
CREATE TABLE tables (
    name TEXT PRIMARY KEY,
    spec TEXT NOT NULL,
    saved TEXT NOT NULL
);
CREATE TABLE sessions (
    id INTEGER PRIMARY KEY,
    player TEXT NOT NULL,
    table_name TEXT NOT NULL,
    drill TEXT NOT NULL DEFAULT '',
    started TEXT NOT NULL,
    ended TEXT
);
CREATE TABLE attempts (
    id INTEGER PRIMARY KEY,
    session_id INTEGER REFERENCES sessions(id),
    at TEXT NOT NULL,
    player TEXT NOT NULL,
    table_name TEXT NOT NULL,
    travel TEXT NOT NULL,
    rails TEXT NOT NULL,
    family TEXT NOT NULL,
    pocket TEXT,
    target_x REAL,
    target_y REAL,
    cue_x REAL NOT NULL,
    cue_y REAL NOT NULL,
    object_x REAL,
    object_y REAL,
    speed REAL NOT NULL,
    english REAL NOT NULL,
    follow REAL NOT NULL,
    aim_rail TEXT NOT NULL,
    aim_given REAL NOT NULL,
    aim_used REAL NOT NULL,
    result TEXT NOT NULL,
    landing_rail TEXT NOT NULL,
    landing_at REAL NOT NULL,
    note TEXT NOT NULL DEFAULT ''
);
CREATE INDEX attempts_session ON attempts(session_id);
"""
"""The first schema (version 1), kept verbatim: new databases are built from it and migrated."""

V1_TABLES = {"players", "tables", "sessions", "attempts"}
V2_TABLES = V1_TABLES | {"calibrations"}
V4_TABLES = V2_TABLES | {"refs"}
V5_TABLES = V4_TABLES | {"zone_counts"}


def run_script(conn: sqlite3.Connection, script: str) -> None:
    """Run statements one by one inside the caller's transaction (``executescript`` would
    commit it first). The scripts here hold no semicolons inside literals."""
    for stmt in script.split(";"):
        if stmt.strip():
            conn.execute(stmt)


def _migrate_1_to_2(conn: sqlite3.Connection) -> None:
    """Version 2: model/drill/zone and an identity key on attempts, history indexes,
    calibrations, and which attempt created a player (so undo can remove it again)."""
    run_script(
        conn,
        """
        ALTER TABLE attempts ADD COLUMN model TEXT NOT NULL DEFAULT 'ideal';
        ALTER TABLE attempts ADD COLUMN drill TEXT NOT NULL DEFAULT '';
        ALTER TABLE attempts ADD COLUMN zone TEXT NOT NULL DEFAULT '';
        ALTER TABLE attempts ADD COLUMN ident TEXT;
        ALTER TABLE players ADD COLUMN created_by INTEGER;
        CREATE TABLE calibrations (
            id INTEGER PRIMARY KEY,
            table_name TEXT NOT NULL,
            player TEXT NOT NULL,
            params TEXT NOT NULL,
            attempts INTEGER NOT NULL,
            at TEXT NOT NULL
        );
        """,
    )
    # the identities are set again by the step to version 3 (miss_kind enters them)
    v2_cols = ", ".join(c for c in COL_NAMES if c != "miss_kind")
    rows = conn.execute(f"SELECT {v2_cols}, id FROM attempts").fetchall()
    conn.executemany(
        "UPDATE attempts SET ident = ? WHERE id = ?",
        ((attempt_identity(from_row((*r[:26], None, r[26]))), r[-1]) for r in rows),
    )
    run_script(conn, _HISTORY_INDEXES)
    run_script(
        conn,
        """
        CREATE INDEX sessions_player ON sessions(player, table_name);
        CREATE INDEX calibrations_key ON calibrations(table_name, player, id);
        """,
    )


_HISTORY_INDEXES = """
        CREATE INDEX attempts_ident ON attempts(ident);
        CREATE INDEX attempts_at ON attempts(at, id);
        CREATE INDEX attempts_player_at ON attempts(player, at);
        CREATE INDEX attempts_table_at ON attempts(table_name, at);
        CREATE INDEX attempts_family_at ON attempts(family, at);
        CREATE INDEX attempts_player_table_at ON attempts(player, table_name, at);
"""
"""The attempts indexes of version 2 on (made again when version 3 rebuilds the table)."""


def _migrate_2_to_3(conn: sqlite3.Connection) -> None:
    """Version 3: what was seen apart from what was predicted (record format version 2).

    The landing columns may be NULL (no landing observed) and ``miss_kind`` says how a miss
    ended. SQLite cannot drop a NOT NULL in place, so the attempts table is copied into one
    of the new shape (same ids, sessions and values) and its indexes made again. Version 2
    filled a hit's landing with the aim's predicted one, so hits lose it (records.upgrade_v1:
    it can be recomputed from the setup, aim and speed); misses keep theirs as "landed".
    """
    run_script(
        conn,
        """
        CREATE TABLE attempts_v3 (
            id INTEGER PRIMARY KEY,
            session_id INTEGER REFERENCES sessions(id),
            at TEXT NOT NULL,
            player TEXT NOT NULL,
            table_name TEXT NOT NULL,
            travel TEXT NOT NULL,
            rails TEXT NOT NULL,
            family TEXT NOT NULL,
            pocket TEXT,
            target_x REAL,
            target_y REAL,
            cue_x REAL NOT NULL,
            cue_y REAL NOT NULL,
            object_x REAL,
            object_y REAL,
            speed REAL NOT NULL,
            english REAL NOT NULL,
            follow REAL NOT NULL,
            aim_rail TEXT NOT NULL,
            aim_given REAL NOT NULL,
            aim_used REAL NOT NULL,
            result TEXT NOT NULL,
            landing_rail TEXT,
            landing_at REAL,
            note TEXT NOT NULL DEFAULT '',
            model TEXT NOT NULL DEFAULT 'ideal',
            drill TEXT NOT NULL DEFAULT '',
            zone TEXT NOT NULL DEFAULT '',
            ident TEXT,
            miss_kind TEXT
        );
        INSERT INTO attempts_v3
            SELECT id, session_id, at, player, table_name, travel, rails, family, pocket,
                target_x, target_y, cue_x, cue_y, object_x, object_y, speed, english, follow,
                aim_rail, aim_given, aim_used, result,
                CASE WHEN result = 'hit' THEN NULL ELSE landing_rail END,
                CASE WHEN result = 'hit' THEN NULL ELSE landing_at END,
                note, model, drill, zone, NULL,
                CASE WHEN result = 'hit' THEN NULL ELSE 'landed' END
            FROM attempts;
        DROP TABLE attempts;
        ALTER TABLE attempts_v3 RENAME TO attempts;
        CREATE INDEX attempts_session ON attempts(session_id);
        """,
    )
    rows = conn.execute(f"SELECT {COLS}, id FROM attempts").fetchall()
    conn.executemany(
        "UPDATE attempts SET ident = ? WHERE id = ?",
        ((attempt_identity(from_row(r)), r[-1]) for r in rows),
    )
    run_script(conn, _HISTORY_INDEXES)


def _migrate_3_to_4(conn: sqlite3.Connection) -> None:
    """Version 4: reference lines, a player's trusted shots per table and family (store/refs.py).

    Positions and the reading in diamonds (as attempts keep them), the stroke in m/s."""
    run_script(
        conn,
        """
        CREATE TABLE refs (
            id INTEGER PRIMARY KEY,
            player TEXT NOT NULL,
            table_name TEXT NOT NULL,
            family TEXT NOT NULL,
            travel TEXT NOT NULL,
            rails TEXT NOT NULL,
            pocket TEXT,
            target_x REAL,
            target_y REAL,
            start_x REAL NOT NULL,
            start_y REAL NOT NULL,
            reading REAL NOT NULL,
            speed REAL NOT NULL,
            english REAL NOT NULL DEFAULT 0,
            follow REAL NOT NULL DEFAULT 0,
            note TEXT NOT NULL DEFAULT '',
            at TEXT NOT NULL
        );
        CREATE INDEX refs_key ON refs(player, table_name, family, id);
        """,
    )


def _migrate_4_to_5(conn: sqlite3.Connection) -> None:
    """Version 5: zone counts kept by triggers as attempts come and go (store/counts.py),
    filled in one pass over the attempts; and indexes of landings (the practice card's
    landing bias reads a zone's latest few: ``Attempts.latest_attempts``; the calibration
    offer counts those since the last calibration: ``Attempts.count_landed``)."""
    from . import counts  # the counts' bands come from the shot vocabulary (numpy): only here

    counts.install(conn)
    run_script(conn, LANDINGS_INDEXES)


LANDINGS_INDEXES = """
    CREATE INDEX IF NOT EXISTS attempts_zone_landed ON attempts(player, table_name, zone, at)
    WHERE landing_rail IS NOT NULL AND landing_at IS NOT NULL;
    CREATE INDEX IF NOT EXISTS attempts_landed
    ON attempts(player, table_name, at, landing_rail, landing_at)
    WHERE landing_rail IS NOT NULL AND landing_at IS NOT NULL;
"""
"""A player's landings on a table, by zone label and in all, latest last (partial: landed
attempts only): a zone's latest landings and the landings since a calibration are read from
them in a few steps, however many attempts without a landing lie between (the second holds
the landing columns, so a count reads the index alone)."""


MIGRATIONS = {1: _migrate_1_to_2, 2: _migrate_2_to_3, 3: _migrate_3_to_4, 4: _migrate_4_to_5}
"""from-version -> step; applying them in order takes any older file to SCHEMA_VERSION."""
