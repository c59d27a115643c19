"""The coach's zone counts from the store's aggregate query (coach.zone_counts) and undo by
subtraction (Scheduler.forget), checked against counting the attempts one by one in Python."""

from __future__ import annotations

from collections import Counter
from dataclasses import replace
from datetime import UTC, datetime

import numpy as np
import pytest

from tablecoach.core import aim as aims
from tablecoach.core import demo, drills, shots
from tablecoach.core.coach import zone_counts, zone_of_attempt
from tablecoach.core.practice import Session
from tablecoach.core.store import Store
from tablecoach.core.store.query import EVERYTHING, AttemptQuery

NOW = datetime(2026, 3, 2, 21, 0, tzinfo=UTC)


def by_hand(attempts):
    """(made, tried) per zone counted one attempt at a time with collections.Counter
    (standard library), the way the scheduler counted before."""
    tried = Counter(zone_of_attempt(a) for a in attempts)
    made = Counter(zone_of_attempt(a) for a in attempts if a.hit)
    return {z: (made[z], n) for z, n in tried.items()}


@pytest.fixture
def club_store(tmp_path):
    store = Store.open(tmp_path / "club.sqlite3")
    demo.write_club(store, demo.make_club(np.random.default_rng(7), NOW, weeks=3, tz=UTC))
    yield store
    store.close()


def test_sql_zone_counts_equal_counting_each_attempt(club_store):
    everything = club_store.attempts()
    assert len(everything) > 100
    assert zone_counts(club_store, EVERYTHING) == by_hand(everything)
    player = everything[0].player
    q = AttemptQuery(player=player, table=everything[0].table)
    assert zone_counts(club_store, q) == by_hand(club_store.attempts(q))


def test_band_edges_and_far_rails_fall_where_zone_of_puts_them(club_store):
    # a speed exactly on each band's lower edge, and starts on the far rails (8, 4 diamonds)
    base = club_store.attempts()[0]
    extra = []
    for k, (lo, _hi) in enumerate(shots.SPEED_BANDS.values()):
        shot = replace(base.shot, cue=(8.0, 4.0) if k % 2 else (0.0, 0.0))
        extra.append(replace(base, shot=shot, speed=lo, id=None, session=None, note=f"e{k}"))
    club_store.import_attempts(extra)
    assert zone_counts(club_store, EVERYTHING) == by_hand(club_store.attempts())


def test_undo_takes_exactly_one_attempt_off_the_coach(club_store):
    first = club_store.attempts()[0]
    spec = next(t for t in demo.CLUB_TABLES if t.name == first.table)
    pack = drills.find_drill("one-rail-kicks", None)
    s = Session(club_store, spec, pack, first.player, np.random.default_rng(3), "ideal")
    sch = s.dealer.scheduler
    before = {z: (st.made, st.tried) for z, st in sch.all_stats().items()}
    assert before  # the player's earlier attempts are counted
    pick = s.deal()
    s.log_hit(aims.solve(spec, pick.setup, pick.stroke, "ideal"))
    after_log = {z: (st.made, st.tried) for z, st in sch.all_stats().items()}
    assert after_log != before
    assert s.undo() is not None
    s.refresh_dealer()
    assert {z: (st.made, st.tried) for z, st in s.dealer.scheduler.all_stats().items()} == before
    # the earlier count on the session bar is the store's count of this player on this table
    q = AttemptQuery(player=first.player, table=spec.name)
    assert s.earlier_stats().shots == club_store.count_attempts(q) > 0
    assert s.earlier_stats().hits == sum(a.hit for a in club_store.attempts(q))


def test_bias_reads_the_store_only_for_zones_with_enough_attempts(club_store, monkeypatch):
    # the zone's bias equals feedback.zone_bias over every attempt (the old way), and a zone
    # with fewer attempts than a bias needs (feedback.MIN_BIAS_LANDINGS) is answered unread
    from tablecoach.core import feedback, shots
    from tablecoach.core.coach import zone_of
    from tablecoach.core.shots import Stroke

    whole = club_store.attempts()
    spec = next(t for t in demo.CLUB_TABLES if t.name == whole[0].table)
    mine = [a for a in whole if a.player == whole[0].player and a.table == spec.name]
    pack = drills.find_drill("one-rail-kicks", None)
    s = Session(club_store, spec, pack, whole[0].player, np.random.default_rng(3), "ideal")
    landed = Counter(zone_of_attempt(a) for a in mine if a.landed)
    checked = 0
    for zone, _n in landed.most_common(5):
        a = next(a for a in mine if zone_of_attempt(a) == zone)
        setup = shots.setup_of(spec, a.shot)
        stroke = Stroke(a.speed, a.english, a.follow)
        want = feedback.zone_bias(spec, mine, zone_of(a.shot, a.speed).label, "ideal")
        assert s.bias_text(setup, stroke) == ("" if want is None else feedback.bias_words(*want))
        checked += want is not None
    assert checked  # some zone has landings enough for a bias
    untried = replace(a.shot, cue=(7.5, 3.5), object=(7.8, 3.8))
    assert s.dealer.scheduler.stats(zone_of(untried, 0.1)).tried < feedback.MIN_BIAS_LANDINGS

    def no_read(*args, **kw):
        raise AssertionError("read the store for a zone without attempts")

    monkeypatch.setattr(club_store, "latest_attempts", no_read)
    assert s.bias_text(shots.setup_of(spec, untried), Stroke(0.1, 0.0, 0.0)) == ""
