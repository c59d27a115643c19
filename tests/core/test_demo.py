"""Tests for core/demo.py: the invented club is deterministic, valid and safe to write."""

from __future__ import annotations

from datetime import UTC, datetime, timedelta
from zoneinfo import ZoneInfo

import numpy as np
import pytest

from tablecoach.core import demo
from tablecoach.core.records import validate_attempt
from tablecoach.core.stats.bias import landing_bias
from tablecoach.core.stats.history import summarize
from tablecoach.core.stats.rates import rate_of
from tablecoach.core.store import Store

NOW = datetime(2026, 12, 1, 21, 30, tzinfo=UTC)
LISBON = ZoneInfo("Europe/Lisbon")


@pytest.fixture(scope="module")
def club():
    return demo.make_club(np.random.default_rng(2026), NOW, weeks=5, tz=LISBON)


def all_attempts(club):
    return [a for s in club.sessions for a in s.attempts]


def test_same_seed_same_club(club):
    again = demo.make_club(np.random.default_rng(2026), NOW, weeks=5, tz=LISBON)
    assert all_attempts(again) == all_attempts(club)
    other = demo.make_club(np.random.default_rng(2027), NOW, weeks=5, tz=LISBON)
    assert all_attempts(other) != all_attempts(club)


def test_every_attempt_is_valid_and_in_the_window(club):
    items = all_attempts(club)
    assert len(items) > 500
    names = {t.name for t in club.tables}
    for a in items:
        validate_attempt(a)
        assert a.when.utcoffset() == timedelta(0)
        assert NOW - timedelta(weeks=5, days=1) <= a.when <= NOW
        assert a.table in names
    assert {a.player for a in items} == {p.name for p in club.players}
    assert len(names) == 2


def test_sessions_fall_on_club_evenings_in_local_time(club):
    for s in club.sessions:
        start = s.attempts[0].when.astimezone(LISBON)
        assert 18 <= start.hour < 21 or start <= NOW.astimezone(LISBON) - timedelta(minutes=89)


def test_players_improve_over_the_weeks(club):
    # The invented learning curves must show: the club makes more in its last two weeks.
    items = all_attempts(club)
    early = [a for a in items if a.when < NOW - timedelta(weeks=3)]
    late = [a for a in items if a.when >= NOW - timedelta(weeks=2)]
    r_early, r_late = rate_of(early), rate_of(late)
    assert r_early.rate is not None and r_late.rate is not None
    assert r_late.low > r_early.high  # Wilson intervals apart, not just noise


def test_landing_bias_reads_back_the_invented_drift(club):
    look = {t.name: t for t in club.tables}.get
    bias = landing_bias(all_attempts(club), table_of=look)
    by_speed: dict[str, list[float]] = {}
    for b in bias:
        by_speed.setdefault(b.speed, []).extend([b.mean] * b.attempts)
    for speed, drift in demo.SPEED_LANDING_DRIFT.items():
        assert np.mean(by_speed[speed]) == pytest.approx(drift, abs=0.04)


def test_keenest_player_has_a_live_day_streak(club):
    first = club.players[0].name
    mine = [a for a in all_attempts(club) if a.player == first]
    days = summarize(mine, tz=LISBON, today=NOW.astimezone(LISBON).date()).days
    assert days.current >= 5


def test_write_club_fills_an_empty_store_and_refuses_a_used_one(tmp_path, club):
    small = demo.make_club(np.random.default_rng(1), NOW, weeks=1, tz=LISBON)
    store = Store.open(tmp_path / "db.sqlite3")
    try:
        n = demo.write_club(store, small)
        assert n == small.attempt_count == store.count_attempts()
        assert set(store.tables()) == {t.name for t in demo.CLUB_TABLES}
        assert len(store.sessions()) == len(small.sessions)
        stored = store.attempts()
        made = [a for s in small.sessions for a in s.attempts]

        def key(a):
            return (a.when, a.player, a.result, a.landing_at)

        assert sorted(map(key, stored)) == sorted(map(key, made))
        with pytest.raises(demo.DemoError, match="already holds"):
            demo.write_club(store, club)
        assert store.count_attempts() == n  # nothing added, nothing lost
    finally:
        store.close()


def test_naive_now_is_refused():
    with pytest.raises(demo.DemoError):
        demo.make_club(np.random.default_rng(0), datetime(2026, 1, 1), weeks=1)
