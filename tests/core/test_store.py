"""Tests for the practice database: round trips, undo, migration, damaged files, concurrency."""

from __future__ import annotations

import os
import signal
import sqlite3
import subprocess
import sys
import textwrap
import time
from dataclasses import replace
from datetime import UTC, datetime, timedelta
from pathlib import Path

import numpy as np
import pytest

from tablecoach.core.records import Attempt, RecordError, ShotRecord
from tablecoach.core.stats.coded import summarize_store
from tablecoach.core.stats.history import summarize
from tablecoach.core.store import Store
from tablecoach.core.store.errors import StoreError
from tablecoach.core.store.query import EVERYTHING, AttemptQuery
from tablecoach.core.store.rows import attempt_identity
from tablecoach.core.store.schema import SCHEMA_VERSION
from tablecoach.core.table import BUILTIN_TABLES, TableError
from tablecoach.core.table_files import table_from_mapping

REPO = Path(__file__).resolve().parents[2]

T0 = datetime(2026, 3, 14, 18, 30, 0, 123456, tzinfo=UTC)


def make_attempt(i: int = 0, **changes: object) -> Attempt:
    """An invented attempt (demo-style data) with awkward floats that must survive storage."""
    kick = i % 2 == 0
    shot = (
        ShotRecord(
            "cue", ("right", "foot"), (1.5 + i * 1e-3, 0.7), None, None, (6.1, 2.9), "two-rail-kick"
        )
        if kick
        else ShotRecord(
            "object", ("right",), (2.25, 1.0), (3.1, 1.9), "foot-left", None, "cross-corner-bank"
        )
    )
    a = Attempt(
        when=T0 + timedelta(seconds=7 * i, microseconds=i),
        player="ann" if i % 3 else "bo",
        table="9ft" if i % 4 else "8ft",
        shot=shot,
        speed=0.1 + 0.2 + i * 1e-9,  # 0.30000000000000004: not exactly representable in text
        english=-0.25,
        follow=1.0 / 3.0,
        aim_rail="right",
        aim_given=3.2 + 1e-12 * i,
        aim_used=3.25,
        result="hit" if i % 5 else "miss",
        landing_rail="foot",
        landing_at=2.0 / 7.0,
        note=f"note {i} ünï",
        model="ideal",
        drill="mixed",
        zone="z1",
    )
    return replace(a, **changes) if changes else a


@pytest.fixture
def db(tmp_path: Path) -> Path:
    return tmp_path / "data" / "tablecoach.sqlite3"


def dump(path: Path) -> list[str]:
    """Every row and schema statement of a database, via sqlite3's own iterdump."""
    c = sqlite3.connect(path)
    try:
        return list(c.iterdump()) + [
            str(c.execute("PRAGMA user_version").fetchone()[0]),
            str(c.execute("PRAGMA application_id").fetchone()[0]),
        ]
    finally:
        c.close()


# ----- basic round trips ----------------------------------------------------------------------


def test_creates_folder_lazily_and_schema_current(db: Path) -> None:
    assert not db.parent.exists()
    with Store.open(db) as s:
        assert s.schema_version() == SCHEMA_VERSION
    assert db.exists()
    # oracle: SQLite's own integrity check (sqlite.org/pragma.html#pragma_integrity_check)
    c = sqlite3.connect(db)
    assert c.execute("PRAGMA integrity_check").fetchone()[0] == "ok"
    assert c.execute("PRAGMA journal_mode").fetchone()[0] == "wal"
    c.close()


def test_log_returns_id_and_reads_back_exactly(db: Path) -> None:
    with Store.open(db) as s:
        sid = s.start_session("ann", "9ft", "mixed")
        items = [make_attempt(i, session=sid) for i in range(12)]
        saved = [s.log(a) for a in items]
        assert [a.id for a in saved] == list(range(1, 13))
        back = s.attempts()
    # oracle: IEEE-754 doubles stored as SQLite REAL are bit-exact (sqlite.org/datatype3.html)
    assert back == saved == items
    for a, b in zip(back, items, strict=True):
        assert a.speed.hex() == b.speed.hex()
        assert a.aim_given.hex() == b.aim_given.hex()
        assert a.when == b.when and a.when.utcoffset() == timedelta(0)
        assert a.session == sid


def test_log_rejects_bad_attempt_and_unknown_session(db: Path) -> None:
    with Store.open(db) as s:
        with pytest.raises(RecordError, match="speed"):
            s.log(make_attempt(1, speed=-1.0))
        with pytest.raises(StoreError, match="no session 99"):
            s.log(make_attempt(1, session=99))
        assert s.count_attempts() == 0


def test_filters_match_a_plain_python_filter(db: Path) -> None:
    items = [make_attempt(i) for i in range(40)]
    with Store.open(db) as s:
        sid = s.start_session("ann", "9ft", "mixed")
        items = [replace(a, session=sid if i % 2 else None) for i, a in enumerate(items)]
        for a in items:
            s.log(a)
        since, until = T0 + timedelta(seconds=50), T0 + timedelta(seconds=200)
        cases = [
            ({"player": "ann"}, lambda a: a.player == "ann"),
            ({"table": "8ft"}, lambda a: a.table == "8ft"),
            ({"family": "cross-corner-bank"}, lambda a: a.shot.family == "cross-corner-bank"),
            ({"since": since}, lambda a: a.when >= since),
            ({"until": until}, lambda a: a.when < until),
            (
                {"player": "bo", "since": since, "until": until},
                lambda a: a.player == "bo" and since <= a.when < until,
            ),
        ]
        for kw, pred in cases:
            expect = [a for a in items if pred(a)]
            got = s.attempts(AttemptQuery(**kw))
            assert got == expect, kw
            assert s.count_attempts(AttemptQuery(**kw)) == len(expect)
        assert len(s.attempts(AttemptQuery(session=sid))) == 20
        # naive times count as UTC
        assert s.count_attempts(AttemptQuery(since=since.replace(tzinfo=None))) == s.count_attempts(
            AttemptQuery(since=since)
        )


def test_attempts_ordered_by_time_then_id(db: Path) -> None:
    with Store.open(db) as s:
        late = s.log(make_attempt(1, when=T0 + timedelta(hours=1)))
        early = s.log(make_attempt(2, when=T0))
        tie = s.log(make_attempt(3, when=T0))
        assert [a.id for a in s.attempts()] == [early.id, tie.id, late.id]


def test_sessions_counts_and_end(db: Path) -> None:
    with Store.open(db) as s:
        a = s.start_session("ann", "9ft", "kicks")
        b = s.start_session("bo", "8ft", "banks")
        for i in range(1, 6):  # results: i % 5 == 0 is a miss -> 4 hits of 5
            s.log(make_attempt(i, session=a, player="ann", table="9ft"))
        s.end_session(a)
        infos = {x.id: x for x in s.sessions()}
        assert (infos[a].attempts, infos[a].hits) == (5, 4)
        assert infos[a].ended is not None and infos[b].ended is None
        assert [x.id for x in s.sessions(player="bo")] == [b]
        assert [x.id for x in s.sessions(table="9ft")] == [a]
        assert s.players() == ["ann", "bo"]
        with pytest.raises(StoreError, match="no session 42"):
            s.end_session(42)


# ----- undo -----------------------------------------------------------------------------------


def test_undo_restores_exact_state(db: Path) -> None:
    with Store.open(db) as s:
        sid = s.start_session("ann", "9ft", "mixed")
        s.log(make_attempt(1, session=sid))
        before = dump(db)
        # a new player, added by the attempt itself, must go again with the undo
        logged = s.log(make_attempt(2, session=sid, player="cy"))
        assert "cy" in s.players()
        undone = s.undo_last(sid)
        assert undone == logged and undone is not None and undone.id == logged.id
        assert dump(db) == before
        assert s.players() == ["ann"]


def test_undo_only_touches_its_session(db: Path) -> None:
    with Store.open(db) as s:
        a = s.start_session("ann", "9ft", "mixed")
        b = s.start_session("bo", "9ft", "mixed")
        first = s.log(make_attempt(1, session=a))
        s.log(make_attempt(2, session=b))
        assert s.undo_last(a) == first
        assert s.undo_last(a) is None
        assert s.count_attempts(AttemptQuery(session=b)) == 1


# ----- import identity ------------------------------------------------------------------------


def test_import_skips_duplicates(db: Path) -> None:
    items = [make_attempt(i) for i in range(10)]
    with Store.open(db) as s:
        sid = s.start_session("ann", "9ft", "mixed")
        s.log(replace(items[0], session=sid))
        added, dups = s.import_attempts(items + [items[3]])
        assert (added, dups) == (9, 2)
        assert s.import_attempts(items) == (0, 10)
        # a change in any one field is a different attempt
        assert s.import_attempts([replace(items[1], note="other")]) == (1, 0)
        assert s.import_attempts([replace(items[1], aim_used=np.nextafter(3.25, 4.0))]) == (1, 0)
        assert s.count_attempts() == 12


def test_identity_ignores_id_and_session_only() -> None:
    a = make_attempt(4)
    assert attempt_identity(a) == attempt_identity(replace(a, id=7, session=3))
    assert attempt_identity(a) != attempt_identity(replace(a, zone="z2"))
    # the same instant written in another zone is the same attempt
    other = a.when.astimezone(datetime.now().astimezone().tzinfo)
    assert attempt_identity(a) == attempt_identity(replace(a, when=other))


# ----- tables and calibrations ----------------------------------------------------------------


def test_tables_saved_and_found(db: Path) -> None:
    spec = table_from_mapping({"name": "club-7", "size": "7ft", "cloth": {"mu_roll": 0.012}})
    with Store.open(db) as s:
        s.save_table(spec)
        assert s.tables() == {"club-7": spec}
        assert s.get_table("club-7") == spec
        assert s.get_table("9ft") == BUILTIN_TABLES["9ft"]
        with pytest.raises(TableError, match="known tables are 9ft, 8ft, 7ft, club-7"):
            s.get_table("nope")
        with pytest.raises(TableError, match="built-in"):
            s.save_table(BUILTIN_TABLES["8ft"])


def test_calibration_history_newest_wins(db: Path) -> None:
    with Store.open(db) as s:
        assert s.calibration("9ft", "ann") is None
        s.save_calibration("9ft", "ann", {"restitution": 0.8}, 20)
        s.save_calibration("9ft", "ann", {"restitution": 0.83, "notes": ["x"]}, 45)
        s.save_calibration("8ft", "ann", {"restitution": 0.7}, 5)
        got = s.calibration("9ft", "ann")
        assert got is not None
        assert got["params"] == {"restitution": 0.83, "notes": ["x"]} and got["attempts"] == 45
        assert datetime.fromisoformat(got["when"]).tzinfo is not None
        assert len(s.calibrations("9ft", "ann")) == 2
        with pytest.raises(StoreError, match="JSON"):
            s.save_calibration("9ft", "ann", {"bad": object()}, 1)


# ----- migration from the first schema --------------------------------------------------------

# The first schema (version 1), written out by hand here so the test does not trust the code
# under test to build it.
V1_SQL = """
PRAGMA application_id = 1952673633;
CREATE TABLE players (name TEXT PRIMARY KEY, created TEXT NOT NULL);
CREATE TABLE tables (name TEXT PRIMARY KEY, spec TEXT NOT NULL, saved TEXT NOT NULL);
CREATE TABLE sessions (id INTEGER PRIMARY KEY, player TEXT NOT NULL, table_name TEXT NOT NULL,
  drill TEXT NOT NULL DEFAULT '', started TEXT NOT NULL, ended TEXT);
CREATE TABLE attempts (id INTEGER PRIMARY KEY, session_id INTEGER REFERENCES sessions(id),
  at TEXT NOT NULL, player TEXT NOT NULL, table_name TEXT NOT NULL, travel TEXT NOT NULL,
  rails TEXT NOT NULL, family TEXT NOT NULL, pocket TEXT, target_x REAL, target_y REAL,
  cue_x REAL NOT NULL, cue_y REAL NOT NULL, object_x REAL, object_y REAL, speed REAL NOT NULL,
  english REAL NOT NULL, follow REAL NOT NULL, aim_rail TEXT NOT NULL, aim_given REAL NOT NULL,
  aim_used REAL NOT NULL, result TEXT NOT NULL, landing_rail TEXT NOT NULL,
  landing_at REAL NOT NULL, note TEXT NOT NULL DEFAULT '');
CREATE INDEX attempts_session ON attempts(session_id);
INSERT INTO players VALUES ('dee', '2025-01-02T10:00:00.000000+00:00');
INSERT INTO sessions VALUES (1, 'dee', '9ft', 'kicks', '2025-01-02T10:00:00.000000+00:00',
  '2025-01-02T10:30:00.000000+00:00');
INSERT INTO attempts VALUES (1, 1, '2025-01-02T10:01:00.000000+00:00', 'dee', '9ft', 'cue',
  'right,foot', 'two-rail-kick', NULL, 6.0, 3.0, 1.5, 0.5, NULL, NULL, 1.4, 0.0, 0.5, 'right',
  3.5, 3.75, 'hit', 'foot', 1.25, 'first');
INSERT INTO attempts VALUES (2, 1, '2025-01-02T10:02:00.000000+00:00', 'dee', '9ft', 'object',
  'right', 'cross-corner-bank', 'foot-left', NULL, NULL, 2.0, 1.0, 3.0, 2.0, 0.67, 0.5, 0.0,
  'right', 4.25, 4.25, 'miss', 'left', 6.5, '');
PRAGMA user_version = 1;
"""


def build_v1(path: Path) -> None:
    path.parent.mkdir(parents=True, exist_ok=True)
    c = sqlite3.connect(path)
    c.executescript(V1_SQL)
    c.commit()
    c.close()


def test_migrates_first_schema(db: Path) -> None:
    build_v1(db)
    with Store.open(db) as s:
        assert s.schema_version() == SCHEMA_VERSION
        got = s.attempts()
        assert [a.id for a in got] == [1, 2]
        a, b = got
        assert a.shot == ShotRecord(
            "cue", ("right", "foot"), (1.5, 0.5), None, None, (6.0, 3.0), "two-rail-kick"
        )
        assert (a.aim_given, a.aim_used, a.note, a.model, a.drill, a.zone) == (
            3.5,
            3.75,
            "first",
            "ideal",
            "",
            "",
        )
        assert b.shot.pocket == "foot-left" and b.result == "miss" and b.session == 1
        # the hit's landing was the aim's prediction (record format version 2): gone; the
        # miss keeps the landing the player gave
        assert (a.landing_rail, a.landing_at, a.miss_kind) == (None, None, None)
        assert (b.landing_rail, b.landing_at, b.miss_kind) == ("left", 6.5, "landed")
        assert s.sessions()[0].attempts == 2
        # identity keys were filled in by the migration: importing the same attempts adds none
        assert s.import_attempts(got) == (0, 2)
        # and the new parts of the schema work
        s.save_calibration("9ft", "dee", {"k": 1}, 2)
        assert s.undo_last(1) == b
    c = sqlite3.connect(db)
    idx = {r[0] for r in c.execute("SELECT name FROM sqlite_master WHERE type = 'index'")}
    assert {"attempts_player_at", "attempts_table_at", "attempts_family_at", "attempts_at"} <= idx
    assert c.execute("PRAGMA integrity_check").fetchone()[0] == "ok"
    c.close()


# The schema version 2 attempts table and its extra statements, by hand (what the released
# version 2 code wrote), with one hit, one miss and a player the first attempt created.
V2_SQL = (
    V1_SQL.replace("PRAGMA user_version = 1;", "")
    + """
ALTER TABLE attempts ADD COLUMN model TEXT NOT NULL DEFAULT 'ideal';
ALTER TABLE attempts ADD COLUMN drill TEXT NOT NULL DEFAULT '';
ALTER TABLE attempts ADD COLUMN zone TEXT NOT NULL DEFAULT '';
ALTER TABLE attempts ADD COLUMN ident TEXT;
ALTER TABLE players ADD COLUMN created_by INTEGER;
CREATE TABLE calibrations (id INTEGER PRIMARY KEY, table_name TEXT NOT NULL,
  player TEXT NOT NULL, params TEXT NOT NULL, attempts INTEGER NOT NULL, at TEXT NOT NULL);
CREATE INDEX attempts_ident ON attempts(ident);
CREATE INDEX attempts_at ON attempts(at, id);
CREATE INDEX attempts_player_at ON attempts(player, at);
CREATE INDEX attempts_table_at ON attempts(table_name, at);
CREATE INDEX attempts_family_at ON attempts(family, at);
CREATE INDEX attempts_player_table_at ON attempts(player, table_name, at);
CREATE INDEX sessions_player ON sessions(player, table_name);
CREATE INDEX calibrations_key ON calibrations(table_name, player, id);
UPDATE attempts SET model = 'physical', drill = 'kicks', zone = 'b2', ident = 'old' || id;
INSERT INTO players VALUES ('eve', '2025-01-03T10:00:00.000000+00:00', 3);
INSERT INTO attempts VALUES (3, NULL, '2025-01-03T10:00:00.000000+00:00', 'eve', '8ft', 'cue',
  'left', 'one-rail-kick', NULL, 4.0, 1.0, 1.0, 1.0, NULL, NULL, 2.0, 0.0, 0.0, 'left',
  2.5, 2.5, 'miss', 'head', 3.0, 'n', 'ideal', '', '', 'old3');
INSERT INTO calibrations VALUES (1, '9ft', 'dee', '{"k": 1}', 2,
  '2025-01-02T11:00:00.000000+00:00');
PRAGMA user_version = 2;
"""
)


def test_migrates_version_2_in_place(db: Path) -> None:
    """The schema before record format 2: every row, id, session, player and calibration
    kept; hits lose the predicted landing version 2 stored, misses become 'landed'."""
    db.parent.mkdir(parents=True, exist_ok=True)
    c = sqlite3.connect(db)
    c.executescript(V2_SQL)
    c.commit()
    c.close()
    with Store.open(db) as s:
        assert s.schema_version() == SCHEMA_VERSION
        got = s.attempts()
        assert [a.id for a in got] == [1, 2, 3]
        a, b, e = got
        assert (a.result, a.landing_rail, a.landing_at, a.miss_kind) == ("hit", None, None, None)
        assert (b.landing_rail, b.landing_at, b.miss_kind) == ("left", 6.5, "landed")
        assert (e.landing_rail, e.landing_at, e.miss_kind) == ("head", 3.0, "landed")
        assert (a.model, a.drill, a.zone, a.session, e.session) == (
            "physical", "kicks", "b2", 1, None,
        )  # fmt: skip
        assert (a.aim_used, b.speed, e.note) == (3.75, 0.67, "n")
        assert s.calibration("9ft", "dee")["params"] == {"k": 1}  # type: ignore[index]
        # identities were made again from the new content: importing them adds nothing
        assert s.import_attempts(got) == (0, 3)
        # a short miss (no landing) can now be logged and read back
        short = replace(got[1], id=None, landing_rail=None, landing_at=None, miss_kind="short")
        back = s.log(short)
        assert s.attempts(AttemptQuery(session=1))[-1] == back and back.landing_rail is None
        names = ["landing_rail", "landing_at", "miss_kind", "result"]
        rail, at, kind, _result, _ids, _sessions = s.attempt_columns(EVERYTHING, names)
        # time order: the short miss has b's time and a later id
        assert rail == (None, "left", None, "head")
        assert at[0] is None and at[2] is None and kind[2] == "short"
        # the history read as codes equals the history of the attempts, no landing included
        assert summarize_store(s, tz=UTC) == summarize(s.attempts(), tz=UTC)
    c = sqlite3.connect(db)
    idx = {r[0] for r in c.execute("SELECT name FROM sqlite_master WHERE type = 'index'")}
    assert {"attempts_session", "attempts_ident", "attempts_at", "attempts_player_table_at"} <= idx
    assert c.execute("PRAGMA integrity_check").fetchone()[0] == "ok"
    assert c.execute("PRAGMA foreign_key_check").fetchall() == []
    assert c.execute("SELECT created_by FROM players WHERE name = 'eve'").fetchone() == (3,)
    c.close()


def test_history_queries_use_indexes(db: Path) -> None:
    Store.open(db).close()
    c = sqlite3.connect(db)
    # oracle: SQLite's query planner (sqlite.org/eqp.html) reports an index search, not a scan
    for where in ("player = 'a'", "table_name = 'a'", "family = 'a'", "at >= 'x'"):
        plan = " ".join(
            str(r[-1])
            for r in c.execute(f"EXPLAIN QUERY PLAN SELECT * FROM attempts WHERE {where}")
        )
        assert "USING INDEX" in plan, (where, plan)
    c.close()


# ----- damaged and foreign files --------------------------------------------------------------


def _assert_refused(path: Path, match: str) -> None:
    before = path.read_bytes()
    with pytest.raises(StoreError) as info:
        Store.open(path)
    msg = str(info.value)
    assert str(path) in msg and "\n" not in msg
    assert match in msg
    assert "move or rename" in msg  # says how to fix it
    assert path.read_bytes() == before  # the file is kept byte for byte
    assert not path.with_name(path.name + "-wal").exists()


def test_random_bytes_refused(db: Path) -> None:
    db.parent.mkdir(parents=True)
    db.write_bytes(np.random.default_rng(7).bytes(8192))
    _assert_refused(db, "not an SQLite file")


def test_random_bytes_after_sqlite_header_refused(db: Path) -> None:
    db.parent.mkdir(parents=True)
    rng = np.random.default_rng(8)
    # a real header start (sqlite.org/fileformat.html 1.3) followed by garbage
    db.write_bytes(b"SQLite format 3\x00" + b"\x10\x00" + rng.bytes(4096 - 18))
    _assert_refused(db, "")


def test_foreign_sqlite_refused(db: Path) -> None:
    db.parent.mkdir(parents=True)
    c = sqlite3.connect(db)
    c.execute("CREATE TABLE songs (title TEXT)")
    c.execute("INSERT INTO songs VALUES ('x')")
    c.commit()
    c.close()
    _assert_refused(db, "another program")


def test_newer_schema_refused(db: Path) -> None:
    Store.open(db).close()
    c = sqlite3.connect(db)
    c.execute("PRAGMA user_version = 99")
    c.commit()
    c.close()
    before = db.read_bytes()
    with pytest.raises(StoreError, match="newer tablecoach"):
        Store.open(db)
    assert db.read_bytes() == before


def test_truncated_file_refused(db: Path) -> None:
    with Store.open(db) as s:
        s.import_attempts([make_attempt(i) for i in range(300)])
    size = db.stat().st_size
    assert size > 8192 and not db.with_name(db.name + "-wal").exists()
    with db.open("r+b") as fh:
        fh.truncate(size // 2 + 100)
    _assert_refused(db, "truncated")


def test_truncated_on_page_boundary_refused(db: Path) -> None:
    with Store.open(db) as s:
        s.import_attempts([make_attempt(i) for i in range(300)])
    page = sqlite3.connect(db).execute("PRAGMA page_size").fetchone()[0]
    with db.open("r+b") as fh:
        fh.truncate(page * 2)
    _assert_refused(db, "truncated")


def test_empty_file_is_refused_and_left_empty(db: Path) -> None:
    # Issue 15: a 0-byte file is not taken as a new store (a new store is made whole in a
    # private file and linked into place, so an empty file is never one of ours).
    db.parent.mkdir(parents=True)
    db.touch()
    with pytest.raises(StoreError, match="empty file"):
        Store.open(db)
    assert db.stat().st_size == 0


# ----- two windows ----------------------------------------------------------------------------


def test_two_connections_interleaved(db: Path) -> None:
    one, two = Store.open(db), Store.open(db)
    try:
        s1 = one.start_session("ann", "9ft", "mixed")
        s2 = two.start_session("bo", "8ft", "mixed")
        ids = []
        for i in range(60):
            st, sid = (one, s1) if i % 2 == 0 else (two, s2)
            ids.append(st.log(make_attempt(i, session=sid)).id)
        assert len(set(ids)) == 60
        assert one.count_attempts() == two.count_attempts() == 60
        assert one.count_attempts(AttemptQuery(session=s2)) == 30
        assert two.undo_last(s2) is not None
        assert (
            one.count_attempts(AttemptQuery(session=s1)) == 30
            and one.count_attempts(AttemptQuery(session=s2)) == 29
        )
    finally:
        one.close()
        two.close()


LOGGER = textwrap.dedent(
    """
    import sys
    from datetime import UTC, datetime
    sys.path.insert(0, {repo!r})
    from tablecoach.core.records import Attempt, ShotRecord
    from tablecoach.core.store import Store
    s = Store.open(sys.argv[1])
    tag = int(sys.argv[2])
    n = int(sys.argv[3])
    sid = s.start_session("p%d" % tag, "9ft", "mixed")
    shot = ShotRecord("cue", ("right",), (2.0, 1.0), None, None, (6.0, 3.0), "one-rail-kick")
    print("ready", flush=True)
    for i in range(n):
        a = Attempt(datetime.now(UTC), "p%d" % tag, "9ft", shot, 1.4, 0.0, 0.0, "right",
                    3.0, 3.0, "hit", "foot", 2.0, note="w%d-%d" % (tag, i), session=sid)
        print(s.log(a).id, flush=True)
    """
)


def _logger_cmd(db: Path, tag: int, n: int) -> list[str]:
    script = LOGGER.format(repo=str(REPO))
    return [sys.executable, "-c", script, str(db), str(tag), str(n)]


def test_two_processes_at_once_lose_nothing(db: Path) -> None:
    Store.open(db).close()
    procs = [
        subprocess.Popen(_logger_cmd(db, t, 150), stdout=subprocess.PIPE, text=True) for t in (1, 2)
    ]
    outs = [p.communicate(timeout=60)[0] for p in procs]
    assert all(p.returncode == 0 for p in procs)
    ids = [int(x) for out in outs for x in out.split()[1:]]
    assert len(ids) == len(set(ids)) == 300
    with Store.open(db) as s:
        assert s.count_attempts() == 300
        assert {a.id for a in s.attempts()} == set(ids)
    c = sqlite3.connect(db)
    assert c.execute("PRAGMA integrity_check").fetchone()[0] == "ok"
    c.close()


def test_sigkill_loses_no_reported_attempt(db: Path) -> None:
    """Kill a logging process at random moments: every id it printed after log() returned must
    be in the database (SQLite's commit guarantee for WAL, sqlite.org/wal.html)."""
    rng = np.random.default_rng(2026)
    Store.open(db).close()
    reported: set[int] = set()
    rounds = 20
    for r in range(rounds):
        p = subprocess.Popen(_logger_cmd(db, r, 100000), stdout=subprocess.PIPE, text=True)
        assert p.stdout is not None
        assert p.stdout.readline().strip() == "ready"
        time.sleep(float(rng.uniform(0.0, 0.08)))
        os.kill(p.pid, signal.SIGKILL)
        out = p.stdout.read()
        p.wait()
        lines = out.split("\n")
        # only whole lines count: a torn last line was never fully reported
        reported.update(int(x) for x in lines[:-1] if x)
    assert len(reported) > rounds  # the kills did land while it was logging
    with Store.open(db) as s:
        stored = {a.id for a in s.attempts()}
    assert reported <= stored
    c = sqlite3.connect(db)
    assert c.execute("PRAGMA integrity_check").fetchone()[0] == "ok"
    c.close()


def test_log_many_is_one_all_or_nothing_transaction(db: Path) -> None:
    with Store.open(db) as s:
        sid = s.start_session("ann", "9ft", "mixed")
        saved = s.log_many([make_attempt(i, session=sid) for i in range(5)])
        assert [a.id for a in saved] == [1, 2, 3, 4, 5]
        assert s.attempts(AttemptQuery(session=sid)) == saved
        with pytest.raises(StoreError, match="no session 77"):
            s.log_many([make_attempt(9, session=sid), make_attempt(10, session=77)])
        assert s.count_attempts() == 5  # the good one of the failed batch was rolled back too
        assert s.undo_last(sid) == saved[-1]
