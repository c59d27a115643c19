"""Plain tests of the practice session (core/practice.py): no Textual, the real store."""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest

from tablecoach.core import aim as aims
from tablecoach.core import drills, shots
from tablecoach.core.practice import Session, stats_of
from tablecoach.core.store import Store
from tablecoach.core.store.query import AttemptQuery
from tablecoach.core.table import BUILTIN_TABLES

T9 = BUILTIN_TABLES["9ft"]


@pytest.fixture
def session(tmp_path):
    store = Store.open(tmp_path / "t.sqlite3")
    pack = drills.find_drill("one-rail-kicks", None)
    s = Session(store, T9, pack, "tester", np.random.default_rng(3), "ideal")
    yield s
    store.close()


def test_repeat_deals_the_setup_n_times_then_moves_on(session):
    session.repeat = 3
    pick = session.deal()
    aim = aims.solve(T9, pick.setup, pick.stroke, "ideal")
    session.log_hit(aim)
    assert session.repeats_left() == 2
    again = session.again()
    assert again is not None and again.setup.family == pick.setup.family
    assert shots.record_of(T9, again.setup) == shots.record_of(T9, pick.setup)
    assert session.stroke == pick.stroke
    session.log_miss(aims.solve(T9, again.setup, again.stroke, "ideal"), kind="short")
    assert session.repeats_left() == 1
    session.log_hit(aim)
    assert session.repeats_left() == 0
    # shuffled (the default) never repeats by itself
    session.repeat = 1
    assert session.repeats_left() == 0


def test_streaks_count_runs_of_hits():
    class A:
        def __init__(self, hit: bool) -> None:
            self.hit = hit

    st = stats_of([A(x) for x in (True, True, False, True, True, True, False, True)])
    assert (st.shots, st.hits, st.streak, st.best, st.misses) == (8, 6, 1, 3, 2)


def test_a_reading_beyond_the_sights_is_logged_at_the_rail_end(session):
    pick = session.deal()
    aim = aims.solve(T9, pick.setup, pick.stroke, "ideal")
    top = 8.0 if aim.rail in ("left", "right") else 4.0
    beyond = replace(aim, reading=(top + 0.2) * T9.rail_unit(aim.rail))
    a = session.log_hit(beyond)
    assert a.aim_given == a.aim_used == top
    assert "beyond the sights" in a.note
    assert session.store.attempts(AttemptQuery(session=session.id))[0].aim_given == top


def test_next_speed_cycles_the_presets(session):
    session.deal()
    n = len(shots.SPEED_PRESETS)
    seen = [session.next_speed()[0] for _ in range(n)]
    assert sorted(seen) == sorted(shots.SPEED_PRESETS)
    assert session.stroke.speed == shots.SPEED_PRESETS[seen[-1]]
    # one more press comes back round to the first named stroke seen
    assert session.next_speed()[0] == seen[0]


def test_a_packs_repeat_setting_reaches_the_session(tmp_path):
    from dataclasses import replace as dc_replace

    pack = dc_replace(drills.find_drill("one-rail-kicks", None), repeat=3)
    assert drills.find_drill("one-rail-kicks", None).repeat == 1  # shuffled by default
    with Store.open(tmp_path / "r.sqlite3") as store:
        s = Session(store, T9, pack, "tester", np.random.default_rng(3), "ideal")
        assert s.repeat == 3
        pick = s.deal()
        s.log_hit(aims.solve(T9, pick.setup, pick.stroke, "ideal"))
        assert s.repeats_left() == 2
