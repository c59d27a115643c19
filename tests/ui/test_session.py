"""Plain tests of the practice session and its words (no screen), against the real store."""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest

from tablecoach.core import aim as aims
from tablecoach.core import drills, shots
from tablecoach.core.records import RecordError
from tablecoach.core.store import Store
from tablecoach.core.table import BUILTIN_TABLES
from tablecoach.ui.widgets import wording as w
from tablecoach.ui.widgets.landing import accepts, parse_landing, ruler
from tablecoach.ui.widgets.session import Session, stats_of

T9 = BUILTIN_TABLES["9ft"]


@pytest.fixture
def session(tmp_path):
    store = Store.open(tmp_path / "t.sqlite3")
    pack = drills.find_drill("one-rail-kicks", None)
    s = Session(store, T9, pack, "tester", np.random.default_rng(3), "ideal")
    yield s
    store.close()


def test_placement_measures_from_the_nearer_rails():
    # A ball 1.5 diamonds up from the head rail and 1 out from the left rail, and its mirror
    # image near the foot-right corner (positions by hand; measuring from the nearer rail is
    # common practice, no source).
    assert w.placement(T9, "cue ball", T9.to_metres(1.5, 1.0)) == (
        "cue ball: 1 1/2 from the head rail, 1 from the left rail"
    )
    assert w.placement(T9, "object ball", T9.to_metres(6.75, 3.5)) == (
        "object ball: 1 1/4 from the foot rail, 1/2 from the right rail"
    )


def test_landing_input_is_checked_against_the_rail_length():
    # long rails run 0 to 8 diamonds, short rails 0 to 4 (WPA: sights mark eighths of the
    # length and quarters of the width)
    assert parse_landing("left", "7.75") == 7.75
    assert parse_landing("foot", "4") == 4.0
    for rail, typed in (("foot", "4.25"), ("right", "8.5"), ("head", "-1")):
        with pytest.raises(RecordError, match="off the|past the end"):
            parse_landing(rail, typed)
    # a number that only fits a long rail says how to get there
    with pytest.raises(RecordError, match="past the end of the head rail.*up/down"):
        parse_landing("head", "6")
    with pytest.raises(RecordError, match="not a number"):
        parse_landing("left", "2..5")


def test_typed_landing_keeps_one_number():
    # the trial's "722.50.5": each key is checked against what is already typed
    typed = ""
    for ch in "722.50.5":
        if accepts(typed, ch):
            typed += ch
    # the second whole digits and the second point are refused; the rest is one number
    assert typed == "7.505"
    assert not accepts("7", "2") and not accepts("7.5", ".") and not accepts("7.125", "5")
    assert accepts("", ".") and accepts(".", "5") and not accepts("", "x")


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


def test_ruler_marks_quarter_diamonds():
    lines = ruler("foot", 2.5, ascii_only=True).plain.splitlines()
    assert lines[1].strip() == "+---+---+---+---+"  # 4 diamonds, 4 characters a diamond
    assert lines[2].index("^") - lines[1].index("+") == 10  # 2.5 diamonds = 10 quarters


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
    assert session.store.attempts(session=session.id)[0].aim_given == top


def test_next_speed_cycles_the_presets(session):
    session.deal()
    n = len(shots.SPEED_PRESETS)
    seen = [session.next_speed()[0] for _ in range(n)]
    assert sorted(seen) == sorted(shots.SPEED_PRESETS)
    assert session.stroke.speed == shots.SPEED_PRESETS[seen[-1]]
    # one more press comes back round to the first named stroke seen
    assert session.next_speed()[0] == seen[0]


def test_the_stores_only_player_is_the_default(data_env):
    # With no --player and no remembered pick, the one player already in the store is used,
    # so reopening tablecoach continues that player's practice.
    from tablecoach import paths
    from tablecoach.core.store import Store
    from tablecoach.ui.app import build_app

    with Store.open(paths.db_path()) as store:
        store.ensure_player("Mara")
    app = build_app(seed=1, model="ideal")
    try:
        assert app.practice is not None and app.practice.session.player == "Mara"
    finally:
        app.store.close()


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


def test_session_line_leaves_out_whole_parts_that_do_not_fit():
    from tablecoach.ui.widgets.info import session_line
    from tablecoach.ui.widgets.session import Stats

    now, before = Stats(3, 2, 1, 2), Stats(30, 12, 0, 4)
    full = session_line(now, before, "9ft", "kim").plain
    assert full.endswith("before: 30 shots, 12 hits")
    narrow = session_line(now, before, "9ft", "kim", 78).plain
    assert "before" not in narrow and narrow.startswith("kim on 9ft") and len(narrow) <= 78
    tiny = session_line(now, before, "9ft", "kim", 50).plain
    assert tiny.startswith("this session: 3 shots, 2 hits (67%), streak 1")
