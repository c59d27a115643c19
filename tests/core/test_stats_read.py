"""Tests for the store's columnar read (Store.attempt_columns) and the history read from the
store as codes (core/stats/coded.py), against the slow way (Store.attempts, records.flatten,
stats.frame.frame_of and summarize over Attempts)."""

from __future__ import annotations

import sqlite3
from datetime import UTC, datetime, timedelta
from pathlib import Path
from zoneinfo import ZoneInfo

import numpy as np
import pytest

from tablecoach.core import demo
from tablecoach.core.records import FLAT_FIELDS, Attempt, ShotRecord, flatten, validate_attempt
from tablecoach.core.stats.coded import summarize_store
from tablecoach.core.stats.frame import frame_of
from tablecoach.core.stats.history import history_dict, summarize
from tablecoach.core.stats.stamps import parse_times
from tablecoach.core.store import Store
from tablecoach.core.store import attempts as store_attempts
from tablecoach.core.store.errors import StoreError
from tablecoach.core.store.query import EVERYTHING, AttemptQuery
from tablecoach.core.table import POCKETS, RAILS

T0 = datetime(2024, 2, 27, 22, 59, 58, 999999, tzinfo=UTC)  # spans a leap day and midnights
PLAYERS = ("ann", "bo", "cy")
TABLES = ("9ft", "8ft", "7ft")
FAMILIES = ("one-rail-kick", "cross-corner-bank", "custom", "")


def _pos(rng: np.random.Generator) -> tuple[float, float]:
    return (float(rng.uniform(0.0, 8.0)), float(rng.uniform(0.0, 4.0)))


def random_attempt(rng: np.random.Generator) -> Attempt:
    """Invented test data: every field drawn at random, positions absent where allowed."""
    travel = "object" if rng.random() < 0.4 else "cue"
    obj = _pos(rng) if travel == "object" or rng.random() < 0.3 else None
    k = int(rng.integers(1, 4))
    rails = tuple(str(r) for r in rng.choice(RAILS, size=k))
    by_pocket = rng.random() < 0.5
    aim_rail = str(rng.choice(RAILS))
    top = 8.0 if aim_rail in ("left", "right") else 4.0
    land_rail = str(rng.choice(RAILS))
    land_top = 8.0 if land_rail in ("left", "right") else 4.0
    when = T0 + timedelta(microseconds=int(rng.integers(0, 40 * 86400 * 10**6)))
    a = Attempt(
        when=when,
        player=str(rng.choice(PLAYERS)),
        table=str(rng.choice(TABLES)),
        shot=ShotRecord(
            travel,  # type: ignore[arg-type]
            rails,
            _pos(rng),
            obj,
            str(rng.choice(POCKETS)) if by_pocket else None,
            None if by_pocket else _pos(rng),
            str(rng.choice(FAMILIES)),
        ),
        speed=float(rng.uniform(0.1, 13.0)),
        english=float(rng.uniform(-1.5, 1.5)),
        follow=float(rng.uniform(-1.5, 1.5)),
        aim_rail=aim_rail,
        aim_given=float(rng.uniform(0.0, top)),
        aim_used=float(rng.uniform(0.0, top)),
        result="hit" if rng.random() < 0.45 else "miss",
        landing_rail=land_rail,
        landing_at=float(rng.uniform(0.0, land_top)),
        note=str(rng.choice(["", "kissed", "très près, ça"])),
        model=str(rng.choice(["ideal", "physical"])),
        drill=str(rng.choice(["", "pack-a"])),
        zone=str(rng.choice(["", "z1"])),
    )
    return validate_attempt(a)


@pytest.fixture(scope="module")
def filled(tmp_path_factory: pytest.TempPathFactory) -> Store:
    """A store of random attempts: logged into sessions, and imported (no session)."""
    rng = np.random.default_rng(20261201)
    path = Path(tmp_path_factory.mktemp("cols")) / "db.sqlite3"
    s = Store.open(path)
    for _ in range(6):
        who, where = str(rng.choice(PLAYERS)), str(rng.choice(TABLES))
        sid = s.start_session(who, where, "mixed")
        items = [random_attempt(rng) for _ in range(int(rng.integers(5, 40)))]
        s.log_many(
            [
                Attempt(**{**_fields(a), "session": sid, "player": who, "table": where})
                for a in items
            ]
        )
    s.import_attempts([random_attempt(rng) for _ in range(300)])
    # two attempts at the same instant: order then falls to the id
    twin = random_attempt(rng)
    s.log(twin)
    s.log(Attempt(**{**_fields(twin), "note": "twin"}))
    yield s
    s.close()


def _fields(a: Attempt) -> dict[str, object]:
    return {f: getattr(a, f) for f in Attempt.__dataclass_fields__ if f != "id"}


def _same(x: object, y: object) -> bool:
    if isinstance(x, float) and isinstance(y, float):
        return x == y  # exact: the store keeps floats as IEEE doubles
    return x == y and type(x) is type(y)


def stored_form(name: str, value: object) -> object:
    """A flattened field as the attempts table keeps it (store.rows.to_row)."""
    if name == "when":  # the instant; its text is iso_utc's but a hand-made row may differ
        return value
    if name == "rails":
        return ",".join(value)  # type: ignore[arg-type]
    return value


def assert_raw_columns_equal(s: Store, query: AttemptQuery, ref: list[Attempt]) -> None:
    """Store.attempt_columns holds exactly what flatten() gives for each reference attempt,
    in order, in the stored form."""
    cols = s.attempt_columns(query, FLAT_FIELDS)
    assert list(cols[-2]) == [a.id for a in ref]
    assert list(cols[-1]) == [a.session for a in ref]
    for k, name in enumerate(FLAT_FIELDS):
        want = [stored_form(name, flatten(a)[k]) for a in ref]
        got = list(cols[k]) if name != "when" else [datetime.fromisoformat(t) for t in cols[k]]
        assert len(got) == len(want)
        for i, (x, y) in enumerate(zip(want, got, strict=True)):
            assert _same(x, y), (i, name, x, y)


def filter_cases(s: Store) -> list[dict[str, object]]:
    sid = s.sessions()[2].id
    mid = T0 + timedelta(days=13, hours=5)
    return [
        {},
        {"player": "bo"},
        {"table": "8ft"},
        {"family": "cross-corner-bank"},
        {"family": ""},
        {"session": sid},
        {"since": mid},
        {"until": mid},
        {"since": mid, "until": mid + timedelta(days=9)},
        {"since": mid.replace(tzinfo=None)},  # naive: taken as UTC by both
        {"player": "ann", "table": "9ft", "family": "one-rail-kick", "since": T0},
        {"player": "nobody"},
    ]


def test_columns_equal_flattened_attempts_for_every_filter(filled: Store) -> None:
    # Reference: the slow path, Attempt objects from Store.attempts laid flat by records.flatten.
    for kw in filter_cases(filled):
        q = AttemptQuery(**kw)  # type: ignore[arg-type]
        assert_raw_columns_equal(filled, q, filled.attempts(q))
    assert filled.attempt_columns(AttemptQuery(player="nobody"), ["when"]) == [(), (), ()]


def test_random_data_has_absent_positions_and_both_orders(filled: Store) -> None:
    # The data must exercise what the test claims: absent object balls and target balls.
    names = ("object_x", "target_x", "pocket", "when")
    ox, tx, pocket, when, _ids, sessions = filled.attempt_columns(EVERYTHING, names)
    assert None in ox and any(v is not None for v in ox)
    assert None in tx and any(v is not None for v in tx)
    assert None in pocket
    assert None in sessions and any(v is not None for v in sessions)
    w = parse_times(when).astype(np.int64)
    assert (np.diff(w) == 0).any()  # the twins share a time; ids keep them in order
    assert (np.diff(w) >= 0).all()


def test_field_subset_reads_only_those(filled: Store) -> None:
    q = AttemptQuery(player="cy")
    cols = filled.attempt_columns(q, ("result", "when"))
    ref = filled.attempts(q)
    assert len(cols) == 4
    assert cols[0] == tuple(a.result for a in ref)
    assert list(cols[2]) == [a.id for a in ref]
    with pytest.raises(StoreError, match="unknown attempt field 'colour'"):
        filled.attempt_columns(EVERYTHING, ("colour",))


def test_time_parser_matches_fromisoformat() -> None:
    # Reference: datetime.fromisoformat (standard library) for the fixed-width UTC form, over
    # random instants 1970..2100 including leap days and the last microsecond of a day.
    rng = np.random.default_rng(7)
    epoch = datetime(1970, 1, 1, tzinfo=UTC)
    us = rng.integers(0, 130 * 365 * 86400 * 10**6, 2000).tolist()
    whens = [epoch + timedelta(microseconds=u) for u in us]
    whens += [datetime(2024, 2, 29, 23, 59, 59, 999999, tzinfo=UTC), epoch]
    texts = [w.isoformat(timespec="microseconds") for w in whens]
    got = parse_times(texts).tolist()
    assert got == [datetime.fromisoformat(t).replace(tzinfo=None) for t in texts]


def test_time_parser_falls_back_for_other_forms() -> None:
    # Texts not in the store's own form (an older writer, another offset) are still read right.
    texts = [
        "2026-03-14T18:30:00+00:00",
        "2026-03-14T19:30:00.250000+01:00",
        "2026-03-14T18:30:00.000001+00:00",
    ]
    want = [datetime.fromisoformat(t).astimezone(UTC).replace(tzinfo=None) for t in texts]
    assert parse_times(texts).tolist() == want


def test_odd_stored_time_is_read_as_attempts_reads_it(tmp_path: Path) -> None:
    # A row written without microseconds (by hand or another writer) must not break the read.
    rng = np.random.default_rng(3)
    path = tmp_path / "odd.sqlite3"
    with Store.open(path) as s:
        s.log_many([random_attempt(rng) for _ in range(5)])
    conn = sqlite3.connect(path)
    conn.execute("UPDATE attempts SET at = '2024-03-01T00:00:00+00:00' WHERE id = 2")
    conn.commit()
    conn.close()
    with Store.open(path) as s:
        assert_raw_columns_equal(s, EVERYTHING, s.attempts())
        assert summarize_store(s, tz=UTC) == summarize(s.attempts(), tz=UTC)


def test_summarize_columns_equals_summarize_attempts(filled: Store) -> None:
    # Reference: stats.history.summarize over Attempt objects (itself held to the one-concept
    # functions in test_history.py); the read as codes must give the identical History.
    for tz in (UTC, ZoneInfo("Europe/Lisbon")):
        for kw in filter_cases(filled):
            slow = summarize(
                filled.attempts(AttemptQuery(**kw)),  # type: ignore[arg-type]
                tz=tz,
                today=T0.date() + timedelta(days=30),
            )
            fast = summarize_store(
                filled,
                AttemptQuery(**kw),  # type: ignore[arg-type]
                tz=tz,
                today=T0.date() + timedelta(days=30),
            )
            assert fast == slow, kw
            assert history_dict(fast) == history_dict(slow)


def test_summarize_columns_with_a_custom_zone_key(filled: Store) -> None:
    def zone(a: Attempt) -> str:
        return a.table

    slow = summarize(filled.attempts(), tz=UTC, zone_fn=zone)
    fast = summarize(frame_of(filled.attempts()), tz=UTC, zone_fn=zone)
    assert fast == slow and set(fast.zones) == set(TABLES)


def test_demo_club_history_same_both_ways(tmp_path: Path) -> None:
    # The demo club (invented data) through write_club: sessions now start at their first
    # attempt, and both reads summarise alike, landing bias included.
    now = datetime(2026, 12, 1, 21, 30, tzinfo=UTC)
    club = demo.make_club(np.random.default_rng(5), now, weeks=2, tz=UTC)
    with Store.open(tmp_path / "demo.sqlite3") as s:
        written = demo.write_club(s, club)
        assert written == club.attempt_count == s.count_attempts()
        infos = s.sessions()
        assert [i.started for i in infos] == [x.attempts[0].when for x in club.sessions]
        look = {t.name: t for t in club.tables}.get
        slow = summarize(s.attempts(), tz=UTC, today=now.date(), table_of=look)
        fast = summarize_store(s, tz=UTC, today=now.date(), table_of=look)
        assert fast == slow and len(fast.bias) > 0


def test_start_session_started_time(tmp_path: Path) -> None:
    when = datetime(2025, 6, 1, 19, 0, 0, 5, tzinfo=UTC)
    with Store.open(tmp_path / "s.sqlite3") as s:
        sid = s.start_session("ann", "9ft", "mixed", started=when)
        later = s.start_session("ann", "9ft", "mixed")
        infos = {i.id: i for i in s.sessions()}
        assert infos[sid].started == when
        assert infos[later].started > when
        with pytest.raises(StoreError, match="time zone"):
            s.start_session("ann", "9ft", "mixed", started=datetime(2025, 6, 1))


def test_a_name_holding_a_control_character_is_read_as_it_is(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    # New names with control characters are refused (issue 15), but a store written before
    # that may hold them: the write-side check is lifted here to make such a store. The read
    # as codes compares whole names in SQL, so such a name is one player like any other.
    monkeypatch.setattr(store_attempts, "check_attempt", validate_attempt)
    rng = np.random.default_rng(11)
    with Store.open(tmp_path / "sep.sqlite3") as s:
        odd = Attempt(**{**_fields(random_attempt(rng)), "player": "a\x1fb", "drill": "x\x1f"})
        s.log_many([random_attempt(rng), odd, random_attempt(rng)])
        h = summarize_store(s, tz=UTC)
        assert "a\x1fb" in h.players and h == summarize(s.attempts(), tz=UTC)
        one = summarize_store(s, AttemptQuery(player="a\x1fb"), tz=UTC)
        assert one.players == ("a\x1fb",) and one.rate.attempts == 1


def plan(s: Store, **kw: object) -> str:
    where, args = AttemptQuery(**kw).where()  # type: ignore[arg-type]
    with s.reading() as c:
        rows = c.execute(
            f"EXPLAIN QUERY PLAN SELECT cue_x FROM attempts{where} ORDER BY at, id", args
        ).fetchall()
    return "; ".join(r[3] for r in rows)


def test_history_queries_use_an_index(filled: Store) -> None:
    # SQLite's own EXPLAIN QUERY PLAN (sqlite.org/eqp.html): every filter the history offers is
    # answered from an index, and the full read needs no sort of its own.
    t = T0 + timedelta(days=3)
    first = filled.sessions()[0]
    sid, who = first.id, first.player
    # (a search rather than a scan since reads keep to the years 1900 to 2200: issue 15)
    assert plan(filled) == "SEARCH attempts USING INDEX attempts_at (at>? AND at<?)"
    for kw, index in (
        ({"player": "ann"}, "attempts_player_at"),
        ({"table": "9ft"}, "attempts_table_at"),
        ({"family": "custom"}, "attempts_family_at"),
        ({"since": t, "until": t + timedelta(days=7)}, "attempts_at"),
        ({"player": "ann", "table": "9ft", "since": t}, "attempts_player_table_at"),
        ({"session": sid}, "attempts_session"),
        ({"player": who, "session": sid}, "attempts_session"),
        ({"player": who, "since": t, "session": sid}, "attempts_session"),
    ):
        p = plan(filled, **kw)
        assert f"USING INDEX {index}" in p, (kw, p)
        if "session" not in kw:
            assert "TEMP B-TREE" not in p, (kw, p)
    # and the session filter still returns the same attempts with the other terms present
    ref = filled.attempts(AttemptQuery(session=sid))
    assert len(ref) == first.attempts > 0
    assert filled.attempts(AttemptQuery(player=who, session=sid)) == ref
    assert filled.attempts(AttemptQuery(player=who + "x", session=sid)) == []
    assert_raw_columns_equal(filled, AttemptQuery(player=who, session=sid), ref)
