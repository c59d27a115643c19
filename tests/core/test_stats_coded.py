"""The history read as SQLite's integer codes (core/stats/coded.py, core/store/coded.py) against
``summarize`` over the Attempts themselves (held to the one-concept functions in
test_history.py): the same History and the same JSON, on random stores. Until the read as codes
replaced it, the reference here was the frame read it replaced (stats/read.py, read_frame), and
the two agreed on every case below."""

from __future__ import annotations

import dataclasses
import json
import sqlite3
from datetime import UTC, datetime, timedelta
from pathlib import Path
from zoneinfo import ZoneInfo

import numpy as np
import pytest

from tablecoach.core import demo
from tablecoach.core.records import Attempt
from tablecoach.core.stats.coded import first_coded, summarize_store
from tablecoach.core.stats.history import History, history_dict, summarize
from tablecoach.core.store import Store, coded
from tablecoach.core.store.query import AttemptQuery
from tablecoach.core.table import BUILTIN_TABLES

from .test_stats_read import T0, _fields, filter_cases, random_attempt

ZONES = (UTC, ZoneInfo("Asia/Tokyo"), ZoneInfo("Asia/Kolkata"), ZoneInfo("Europe/Lisbon"))
"""Whole-hour offsets, a half-hour one (local midnight inside a UTC hour), daylight saving."""


def both(s: Store, q: AttemptQuery, tz: object, look: object = None) -> tuple[History, History]:
    today = T0.date() + timedelta(days=30)
    old = summarize(s.attempts(q), tz=tz, today=today, table_of=look)  # type: ignore[arg-type]
    new = summarize_store(s, q, tz=tz, today=today, table_of=look)  # type: ignore[arg-type]
    return old, new


def assert_same(old: History, new: History) -> None:
    assert new == old
    # the command's contract, character for character (key order included)
    assert json.dumps(history_dict(new)) == json.dumps(history_dict(old))


@pytest.fixture(scope="module")
def random_store(tmp_path_factory: pytest.TempPathFactory) -> Store:
    """Random attempts (invented test data, every field drawn): logged in sessions, imported
    without one, out of time order against their ids, two at one instant."""
    rng = np.random.default_rng(20261202)
    s = Store.open(Path(tmp_path_factory.mktemp("coded")) / "db.sqlite3")
    for _ in range(8):
        who, where = str(rng.choice(["ann", "bo", "cy"])), str(rng.choice(["9ft", "8ft", "7ft"]))
        sid = s.start_session(who, where, "mixed")
        items = [random_attempt(rng) for _ in range(int(rng.integers(5, 60)))]
        s.log_many(
            [
                Attempt(**{**_fields(a), "session": sid, "player": who, "table": where})
                for a in items
            ]
        )
    s.import_attempts([random_attempt(rng) for _ in range(700)])
    twin = random_attempt(rng)
    s.log(twin)
    s.log(Attempt(**{**_fields(twin), "note": "twin"}))
    yield s
    s.close()


def test_same_history_for_every_filter_and_zone(random_store: Store) -> None:
    for tz in ZONES:
        for kw in filter_cases(random_store):
            old, new = both(random_store, AttemptQuery(**kw), tz)  # type: ignore[arg-type]
            assert_same(old, new)


def test_same_history_over_pages_of_any_size(
    random_store: Store, monkeypatch: pytest.MonkeyPatch
) -> None:
    # the whole store is read by ranges of row id: page edges must not change anything
    for page in (1, 7, 100):
        monkeypatch.setattr(coded, "PAGE_IDS", page)
        old, new = both(random_store, AttemptQuery(), UTC)
        assert_same(old, new)


def test_landing_bias_with_an_unknown_table(random_store: Store) -> None:
    # a table the lookup does not know has no landing offsets, in both
    def look(name: str) -> object:
        return None if name == "8ft" else BUILTIN_TABLES.get(name)

    old, new = both(random_store, AttemptQuery(), UTC, look)
    assert_same(old, new)
    none_known = both(random_store, AttemptQuery(), UTC, lambda _name: None)
    assert_same(*none_known)
    assert none_known[1].bias == ()


def test_empty_and_missing(tmp_path: Path) -> None:
    with Store.open(tmp_path / "e.sqlite3") as s:
        old, new = both(s, AttemptQuery(), UTC)
        assert_same(old, new)
        assert new.rate.attempts == 0


def test_odd_stored_times_are_parsed_one_by_one(tmp_path: Path) -> None:
    # Rows written without microseconds or at another offset (by hand, or an older writer)
    rng = np.random.default_rng(4)
    path = tmp_path / "odd.sqlite3"
    with Store.open(path) as s:
        s.log_many([random_attempt(rng) for _ in range(40)])
    conn = sqlite3.connect(path)
    conn.execute("UPDATE attempts SET at = '2024-03-01T00:00:00+00:00' WHERE id = 2")
    conn.execute("UPDATE attempts SET at = '2024-03-01T01:30:00.250000+01:00' WHERE id = 5")
    conn.commit()
    conn.close()
    with Store.open(path) as s:
        for tz in ZONES:
            old, new = both(s, AttemptQuery(), tz)
            # the same instants; the Attempt read back keeps the stored "+01:00" where the store
            # reads hand out UTC (as the frame read did), so only History equality is asked
            assert new == old


def test_demo_club_same_json(tmp_path: Path) -> None:
    # The demo club (invented data, sessions and landing bias as the app writes them)
    now = datetime(2026, 12, 1, 21, 30, tzinfo=UTC)
    club = demo.make_club(np.random.default_rng(5), now, weeks=3, tz=UTC)
    with Store.open(tmp_path / "demo.sqlite3") as s:
        demo.write_club(s, club)
        look = s.table_lookup()
        for kw in ({}, {"player": club.sessions[0].player}):
            old = summarize(s.attempts(AttemptQuery(**kw)), tz=UTC, today=now.date(), table_of=look)
            new = summarize_store(s, AttemptQuery(**kw), tz=UTC, today=now.date(), table_of=look)
            assert_same(old, new)
            assert len(new.bias) > 0


def test_first_coded_matches_first_appearance() -> None:
    # Reference: dict.fromkeys (insertion order) over the same values
    rng = np.random.default_rng(1)
    keys = rng.integers(0, 9, 500)
    names = [f"n{k}" for k in range(9)]
    codes, order = first_coded(keys, names)
    want = list(dict.fromkeys(names[k] for k in keys.tolist()))
    assert list(order) == want
    assert [order[c] for c in codes.tolist()] == [names[k] for k in keys.tolist()]
    assert first_coded(np.zeros(0, np.int64), names)[1] == ()


def test_listed_rail_sequences_code_as_the_string_functions_do(tmp_path: Path) -> None:
    # Reference: the same read with no sequence listed, where SQLite's own substr, length and
    # replace work out every row's aim and rail count (FIRST_RAIL_AIMED); stored by hand:
    # an aim rail that is a prefix of the sequence up to a comma, one that is not a rail, an
    # empty one, a rail sequence no preset has
    rng = np.random.default_rng(9)
    path = tmp_path / "seq.sqlite3"
    with Store.open(path) as s:
        s.log_many([random_attempt(rng) for _ in range(60)])
    conn = sqlite3.connect(path)
    for i, (rails, aim) in enumerate(
        [
            ("right,foot,left", "right,foot"),
            ("right,foot,left", "right,foot,left"),
            ("right,foot", "right,"),
            ("right,foot", ""),
            ("foot,head,left", "foot"),
            ("right", "righ"),
            ("right,left", "left"),
        ]
    ):
        conn.execute(
            "UPDATE attempts SET rails = ?, aim_rail = ? WHERE id = ?", (rails, aim, i + 1)
        )
    conn.commit()
    conn.close()
    with Store.open(path) as s, s.snapshot() as c:
        base = coded.CodePlan(
            coded.stored_values(c, "family"), coded.stored_values(c, "player"),
            coded.stored_values(c, "table_name"), ("head", "foot", "left", "right"),
            (2.0, 1.0, 4, 4), ((0.0, 1.0), (1.0, 2.0), (2.0, 9.0)),
        )  # fmt: skip
        listed = dataclasses.replace(
            base, sequences=("right", "foot", "right,foot", "right,foot,left", "right,left")
        )
        want = list(coded.coded_pages(c, AttemptQuery(), base))
        got = list(coded.coded_pages(c, AttemptQuery(), listed))
    assert got == want
    assert want and want[0].n == 60
