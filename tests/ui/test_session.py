"""Plain tests of the practice screen's words and landing prompt (no screen)."""

from __future__ import annotations

import pytest

from tablecoach.core.records import RecordError
from tablecoach.core.store import Store
from tablecoach.core.table import BUILTIN_TABLES
from tablecoach.render import words as w
from tablecoach.ui.screens.landing import accepts, parse_landing, ruler

T9 = BUILTIN_TABLES["9ft"]


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


def test_ruler_marks_quarter_diamonds():
    lines = ruler("foot", 2.5, ascii_only=True).plain.splitlines()
    assert lines[1].strip() == "+---+---+---+---+"  # 4 diamonds, 4 characters a diamond
    assert lines[2].index("^") - lines[1].index("+") == 10  # 2.5 diamonds = 10 quarters


def test_the_stores_only_player_is_the_default(data_env):
    # With no --player and no remembered pick, the one player already in the store is used,
    # so reopening tablecoach continues that player's practice.
    from tablecoach import paths
    from tablecoach.ui.app import build_app

    with Store.open(paths.db_path()) as store:
        store.ensure_player("Mara")
    app = build_app(seed=1, model="ideal")
    try:
        assert app.practice is not None and app.practice.session.player == "Mara"
    finally:
        app.store.close()


def test_session_line_leaves_out_whole_parts_that_do_not_fit():
    from tablecoach.core.practice import Stats
    from tablecoach.ui.widgets.info import session_line

    now, before = Stats(3, 2, 1, 2), Stats(30, 12, 0, 4)
    full = session_line(now, before, "9ft", "kim").plain
    assert full.endswith("before: 30 shots, 12 hits")
    narrow = session_line(now, before, "9ft", "kim", 78).plain
    assert "before" not in narrow and narrow.startswith("kim on 9ft") and len(narrow) <= 78
    tiny = session_line(now, before, "9ft", "kim", 50).plain
    assert tiny.startswith("this session: 3 shots, 2 hits (67%), streak 1")
