"""Pilot tests for every keyboard flow of the practice screen, against the real store."""

from __future__ import annotations

import io
from dataclasses import replace

import pytest
from rich.console import Console

from tablecoach import paths
from tablecoach.core import shots
from tablecoach.core.store import Store
from tablecoach.core.store.errors import StoreError
from tablecoach.core.store.query import AttemptQuery
from tablecoach.ui.screens.landing import LandingPrompt
from tablecoach.ui.screens.practice import PracticeScreen

SIZE = (100, 30)


async def settle(pilot) -> None:
    """Let the aim worker finish and its messages land."""
    await pilot.pause()
    await pilot.app.workers.wait_for_complete()
    await pilot.pause()
    await pilot.app.workers.wait_for_complete()
    await pilot.pause()


def text_of(app, selector: str) -> str:
    """The plain text a widget shows (its content rendered at a wide width)."""
    widget = app.screen.query_one(selector)
    console = Console(width=200, file=io.StringIO(), record=True)
    console.print(widget.content)
    return console.export_text()


def stored(app) -> list:
    return app.store.attempts(AttemptQuery(session=app.practice.session.id))


async def test_first_start_needs_no_setup(data_env):
    """A first-time player lands in a session on the 9ft table and the default pack."""
    from tablecoach.core import drills
    from tablecoach.ui.app import build_app, default_player

    app = build_app(seed=1, model="ideal")
    async with app.run_test(size=SIZE) as pilot:
        await settle(pilot)
        assert isinstance(app.screen, PracticeScreen)
        s = app.screen.session
        assert s.table.name == "9ft"
        assert s.player == default_player()
        assert app.drill_name == drills.DEFAULT_DRILL
        assert s.pick is not None and app.screen.aim is not None
        assert app.store.sessions()[0].id == s.id


async def test_hit_logs_the_shown_aim(make_app):
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(pilot)
        screen = app.screen
        aim = screen.aim
        table = screen.session.table
        screen_zone = screen.session.pick.zone
        await pilot.press("h")
        await settle(pilot)
        [a] = stored(app)
        assert a.result == "hit"
        # the record is the shown setup, in diamonds (core shots.record_of is the contract)
        assert a.shot == shots.record_of(table, aim.setup)
        reading = round(table.along_to_diamonds(aim.rail, aim.reading), 2)
        assert a.aim_given == a.aim_used == reading
        assert a.aim_rail == aim.rail
        # a hit records no landing of its own: the prediction is not an observation
        # (record format version 2, docs/formats.md)
        assert (a.landing_rail, a.landing_at, a.miss_kind) == (None, None, None)
        assert a.model == "ideal" and a.player == "tester" and a.table == "9ft"
        assert a.drill == "one-rail-kicks"
        # the zone is the coach's own label for this shot at this speed
        from tablecoach.core import coach

        assert a.zone == coach.zone_of(a.shot, a.speed).label
        assert a.zone == screen_zone.label
        assert a.session == screen.session.id
        assert "1 shot, 1 hit" in text_of(app, "#session")
        assert "streak 1" in text_of(app, "#session")
        # the next setup is dealt and solved
        assert screen.aim is not None and screen.aim is not aim


async def test_miss_with_arrow_keys(make_app):
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(pilot)
        predicted = app.screen.aim.landing.rail
        await pilot.press("m")
        await pilot.pause()
        prompt = app.screen
        assert isinstance(prompt, LandingPrompt)
        start = prompt.at
        await pilot.press("right", "right", "left")
        assert (
            abs(prompt.at - min(start + 0.25, 8.0 if predicted in ("left", "right") else 4.0))
            < 1e-9
        )
        await pilot.press("up")
        order = ("head", "left", "foot", "right")
        new_rail = order[(order.index(predicted) + 1) % 4]
        assert prompt.rail == new_rail
        expected = prompt.at
        await pilot.press("enter")
        await settle(pilot)
        [a] = stored(app)
        assert a.result == "miss"
        assert a.landing_rail == new_rail
        assert abs(a.landing_at - expected) < 1e-9
        assert "streak 0" in text_of(app, "#session")


async def test_hit_again_hit_miss_short(make_app):
    """The issue's check: h, r, h, m, s logs two hits of one setup and a short miss with no
    landing (record format version 2)."""
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(pilot)
        screen = app.screen
        first = screen.session.pick
        stroke = screen.session.stroke
        await pilot.press("h")
        await settle(pilot)
        assert "r shoots it again" in text_of(app, "#message")
        await pilot.press("r")
        await settle(pilot)
        assert "again" in text_of(app, "#message")
        assert screen.session.stroke == stroke
        assert screen.aim is not None and screen.session.pick.why.startswith("again")
        await pilot.press("h")
        await settle(pilot)
        await pilot.press("m")
        await pilot.pause()
        assert isinstance(app.screen, LandingPrompt)
        await pilot.press("s")
        await settle(pilot)
        a, b, c = stored(app)
        table = screen.session.table
        assert a.shot == b.shot == shots.record_of(table, first.setup)
        assert (a.speed, a.english, a.follow) == (b.speed, b.english, b.follow)
        assert [x.result for x in (a, b, c)] == ["hit", "hit", "miss"]
        assert c.shot != a.shot  # the miss was at the next dealt setup
        assert a.landing_rail is None and b.landing_rail is None
        assert (c.landing_rail, c.landing_at, c.miss_kind) == (None, None, "short")
        assert "stopped short" in text_of(app, "#message")


async def test_hit_with_a_landing_the_player_saw(make_app):
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(pilot)
        await pilot.press("H")
        await pilot.pause()
        prompt = app.screen
        assert isinstance(prompt, LandingPrompt) and prompt.hit
        await pilot.press("s")  # no "short" for a hit
        await pilot.pause()
        assert app.screen is prompt and "a hit reached its target" in prompt.error
        rail = prompt.rail
        await pilot.press("2", "enter")
        await settle(pilot)
        [a] = stored(app)
        assert (a.result, a.landing_rail, a.landing_at, a.miss_kind) == ("hit", rail, 2.0, None)


async def test_again_before_anything_is_logged(make_app):
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(pilot)
        before = app.screen.session.pick
        await pilot.press("r")
        await settle(pilot)
        assert app.screen.session.pick is before and stored(app) == []
        assert "nothing logged yet" in text_of(app, "#message")


async def test_miss_in_the_jaw_has_no_landing(make_app):
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(pilot)
        await pilot.press("m")
        await pilot.pause()
        await pilot.press("j")
        await settle(pilot)
        [a] = stored(app)
        assert (a.result, a.landing_rail, a.landing_at, a.miss_kind) == (
            "miss", None, None, "jaw",
        )  # fmt: skip
        assert "rattled in the jaw" in text_of(app, "#message")


async def test_enter_on_an_untouched_prompt_asks_first(make_app):
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(pilot)
        await pilot.press("m")
        await pilot.pause()
        prompt = app.screen
        rail, at = prompt.rail, prompt.at
        await pilot.press("enter")
        await pilot.pause()
        assert app.screen is prompt and stored(app) == []
        assert "Enter again" in text_of(app, "#landing-body")
        await pilot.press("enter")
        await settle(pilot)
        [a] = stored(app)
        assert (a.landing_rail, a.landing_at, a.miss_kind) == (rail, at, "landed")


async def test_typed_number_of_another_rail_moves_with_the_rail(make_app):
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(pilot)
        await pilot.press("m")
        await pilot.pause()
        prompt = app.screen
        # put the prompt on the head rail (0 to 4 diamonds) whatever it suggested
        while prompt.rail != "head":
            await pilot.press("up")
        await pilot.press("6", "enter")
        await pilot.pause()
        assert app.screen is prompt
        assert "past the end of the head rail" in prompt.error and "up/down" in prompt.error
        # up moves to the next rail round the table (a long one), and the 6 goes with it
        await pilot.press("up")
        await pilot.pause()
        assert prompt.rail == "left" and prompt.at == 6.0 and prompt.typed == ""
        # a bad typed value never blocks the arrows: it is dropped with a word
        await pilot.press("9", "right")
        await pilot.pause()
        assert prompt.typed == "" and prompt.at == 6.25 and "dropped" in prompt.error
        await pilot.press("enter")
        await settle(pilot)
        [a] = stored(app)
        assert (a.landing_rail, a.landing_at) == ("left", 6.25)


async def test_spin_key_cycles_and_is_logged(make_app):
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(pilot)
        screen = app.screen
        assert "centre ball" in text_of(app, "#card")
        await pilot.press("e")
        await settle(pilot)
        aim = screen.aim
        from tablecoach.core import spin

        # the first step is a tip of running english: its side comes from the shot's geometry
        side = spin.running_sign(aim.rail, aim.direction) or 1.0
        assert aim.stroke.english == side and aim.stroke.follow == 0.0
        card = text_of(app, "#card")
        assert "a tip of running english" in " ".join(card.split())
        await pilot.press("e", "e", "e")
        await settle(pilot)
        assert screen.aim.stroke.follow == -0.5
        assert "a half tip of draw" in " ".join(text_of(app, "#card").split())
        await pilot.press("h")
        await settle(pilot)
        [a] = stored(app)
        assert (a.english, a.follow) == (0.0, -0.5)


async def test_a_pack_deals_spin_and_the_card_names_it(make_app):
    app = make_app(drill="kicks-with-spin")
    async with app.run_test(size=SIZE) as pilot:
        await settle(pilot)
        seen = set()
        for _ in range(6):
            screen = app.screen
            aim = screen.aim
            st = aim.stroke
            card = " ".join(text_of(app, "#card").split())
            if st.english:
                from tablecoach.core import spin

                kind = spin.english_kind(st.english, aim)
                side = "right" if st.english > 0 else "left"
                assert f"a tip of {kind} english ({side})" in card
                seen.add(kind)
            elif st.follow:
                assert ("a half tip of follow" if st.follow > 0 else "a half tip of draw") in card
                seen.add("follow" if st.follow > 0 else "draw")
            await pilot.press("n")
            await settle(pilot)
        assert seen, "the pack dealt no spin in six setups"


async def test_card_shows_the_zones_landing_bias(make_app):
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(pilot)
        screen = app.screen
        # three misses at one setup, each given a landing on the predicted rail
        for _ in range(3):
            await pilot.press("m")
            await pilot.pause()
            prompt = app.screen
            await pilot.press("right", "enter")  # a quarter diamond past the mark
            await settle(pilot)
            await pilot.press("r")
            await settle(pilot)
        got = stored(app)
        assert len(got) == 3 and all(a.landed for a in got)
        from tablecoach.core import feedback

        want = feedback.zone_bias(screen.session.table, got, got[0].zone, "ideal")
        assert want is not None and want[1] == 3
        card = " ".join(text_of(app, "#card").split())
        assert feedback.bias_words(*want) in card, card
        assert prompt is not screen


async def test_large_reading_toggles(make_app):
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(pilot)
        assert "AIM" in text_of(app, "#card")
        await pilot.press("b")
        await pilot.pause()
        card = text_of(app, "#card")
        assert "AIM" not in card and "rail sights" in card and "┃" in card
        await pilot.press("b")
        await pilot.pause()
        assert "AIM" in text_of(app, "#card")


async def test_calibration_offer_after_30_new_landings(make_app):
    import numpy as np

    from ..core.test_feedback import kick_attempt

    app = make_app()
    # 29 observed landings already on this table (invented, scattered about the ideal landing
    # with numpy's generator), and hits without a landing, which do not count
    rng = np.random.default_rng(4)
    seen = [
        replace(kick_attempt(float(x)), player="tester", note=str(i))
        for i, x in enumerate(rng.normal(0.2, 0.1, 29))
    ]
    blind = replace(seen[0], result="hit", landing_rail=None, landing_at=None, miss_kind=None)
    app.store.log_many([*seen, replace(blind, note="h1"), replace(blind, note="h2")])
    async with app.run_test(size=SIZE) as pilot:
        await settle(pilot)
        await pilot.press("h")
        await settle(pilot)
        assert "c calibrates" not in text_of(app, "#message")
        await pilot.press("m", "right", "enter")
        await settle(pilot)
        assert "30 new landings: c calibrates" in text_of(app, "#message")
        assert "30 new landings: c calibrates" in text_of(app, "#notes")
        screen = app.screen
        await pilot.press("c")
        await settle(pilot)  # the fit runs in a worker thread (calibrate_offer.py)
        await pilot.pause()
        message = text_of(app, "#message")
        assert message.startswith("calibrated the 9ft table"), message
        notes = " ".join(text_of(app, "#notes").split())
        assert "calibrated from 33 attempts: landings now predicted to" in notes, notes  # 29+2+2
        assert screen.session.calibration is not None and not screen.calibrating
        assert screen.status.startswith("calibrated from")
        assert "c calibrates" not in notes
        # the new table is used for the aims from now on
        assert screen.session.table == screen.session.calibration.apply(app.store.get_table("9ft"))
        assert app.store.calibration("9ft", "tester") is not None


async def test_miss_typed_landing(make_app):
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(pilot)
        await pilot.press("m")
        await pilot.pause()
        rail = app.screen.rail
        await pilot.press("1", ".", "7", "5", "enter")
        await settle(pilot)
        [a] = stored(app)
        assert (a.result, a.landing_rail, a.landing_at) == ("miss", rail, 1.75)


async def test_bad_landing_is_refused_and_nothing_lost(make_app):
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(pilot)
        await pilot.press("h")
        await settle(pilot)
        assert len(stored(app)) == 1
        await pilot.press("m")
        await pilot.pause()
        prompt = app.screen
        rail = prompt.rail
        # off the rail: a short rail runs 0 to 4, a long rail 0 to 8 diamonds (the contract)
        await pilot.press("9", "enter")
        await pilot.pause()
        assert app.screen is prompt
        assert "off the" in prompt.error and rail in prompt.error
        assert "9 is off" in text_of(app, "#landing-body")
        assert len(stored(app)) == 1
        # not a number
        await pilot.press("backspace", ".", "enter")
        await pilot.pause()
        assert app.screen is prompt
        assert "not a number" in prompt.error
        # digits cannot pile up: a second point and a second whole digit are refused
        await pilot.press("backspace", "7", "2", "2", ".", "5", ".")
        await pilot.pause()
        assert prompt.typed == "7.5" and "not a landing" in prompt.error
        # a letter is refused with a word, and the typed number stays
        await pilot.press("x")
        await pilot.pause()
        assert prompt.typed == "7.5" and "'x' is not a landing" in prompt.error
        await pilot.press("backspace", "backspace", "backspace")
        # corrected, it saves
        await pilot.press("backspace", "2", "enter")
        await settle(pilot)
        got = stored(app)
        assert [a.result for a in got] == ["hit", "miss"]
        assert got[1].landing_at == 2.0


async def test_escape_cancels_a_miss(make_app):
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(pilot)
        before = app.screen.session.pick
        await pilot.press("m")
        await pilot.pause()
        await pilot.press("escape")
        await settle(pilot)
        assert stored(app) == []
        assert app.screen.session.pick is before
        assert "cancelled" in text_of(app, "#message")


async def test_undo_removes_the_last_attempt(make_app):
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(pilot)
        await pilot.press("h")
        await settle(pilot)
        second = app.screen.session.pick
        await pilot.press("m", "s")
        await settle(pilot)
        assert [a.result for a in stored(app)] == ["hit", "miss"]
        await pilot.press("u")
        await settle(pilot)
        assert [a.result for a in stored(app)] == ["hit"]
        # the undone setup is back on the table to be logged again
        table = app.screen.session.table
        back = app.screen.session.pick.setup
        assert shots.record_of(table, back) == shots.record_of(table, second.setup)
        assert "undone" in text_of(app, "#message")
        assert "1 shot, 1 hit" in text_of(app, "#session")
        await pilot.press("u", "u")
        await settle(pilot)
        assert stored(app) == []
        assert "nothing to undo" in text_of(app, "#message")


async def test_skip_deals_another_setup_without_logging(make_app):
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(pilot)
        first = app.screen.session.pick
        await pilot.press("n")
        await settle(pilot)
        assert app.screen.session.pick is not first
        assert app.screen.session.pick.setup != first.setup
        assert stored(app) == []
        assert app.screen.aim is not None


async def test_speed_key_cycles_and_resolves(make_app):
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(pilot)
        speed0 = app.screen.session.stroke.speed
        await pilot.press("s")
        await settle(pilot)
        speed1 = app.screen.session.stroke.speed
        assert speed1 != speed0
        assert speed1 in shots.SPEED_PRESETS.values()
        assert app.screen.aim.stroke.speed == speed1
        await pilot.press("h")
        await settle(pilot)
        assert stored(app)[0].speed == speed1


async def test_quit_and_reopen_shows_the_attempts(make_app):
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(pilot)
        await pilot.press("h")
        await settle(pilot)
        await pilot.press("m", "j")
        await settle(pilot)
        await pilot.press("q")
        await pilot.pause()
        summary = text_of(app, "#summary-grid")
        assert "attempts" in summary and "best streak" in summary
        # by family: made, rate, best streak and the landing bias (none seen: a hit without
        # a landing and a miss in the jaw)
        families = text_of(app, "#summary-families")
        assert "One-rail kick" in families and "1 of 2" in families and "50%" in families
        assert families.split("One-rail kick")[1].split()[3:6] == ["50%", "1", "-"]
        await pilot.press("q")
        await pilot.pause()
    assert app.return_code == 0
    assert app.summary == "session: 2 attempts, 1 hit, current streak 0, best streak 1"
    app.store.close()
    # the attempts are on disk, in a session that was closed
    with Store.open(paths.db_path()) as st:
        assert [a.result for a in st.attempts(AttemptQuery(player="tester"))] == ["hit", "miss"]
        assert st.sessions()[0].ended is not None
    again = make_app()
    async with again.run_test(size=SIZE) as pilot:
        await settle(pilot)
        line = text_of(again, "#session")
        assert "this session: 0 shots" in line
        assert "before: 2 shots, 1 hit" in line


async def test_escape_from_summary_keeps_practising(make_app):
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(pilot)
        await pilot.press("q")
        await pilot.pause()
        await pilot.press("escape")
        await pilot.pause()
        assert isinstance(app.screen, PracticeScreen)


async def test_help_opens_and_closes(make_app):
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(pilot)
        await pilot.press("question_mark")
        await pilot.pause()
        assert type(app.screen).__name__ == "HelpScreen"
        await pilot.press("escape")
        await pilot.pause()
        assert isinstance(app.screen, PracticeScreen)


@pytest.mark.parametrize("ascii_only", [False, True])
async def test_help_speaks_the_drawing_s_glyphs(make_app, ascii_only):
    # the help names each line by the glyph the table uses; in ASCII mode (TABLECOACH_ASCII or
    # the app's setting) every character of it is plain ASCII, as the drawing is
    from textual.widgets import Static

    from tablecoach.render.table_view import ASCII, UNICODE

    g = ASCII if ascii_only else UNICODE
    app = make_app(ascii_only=ascii_only)
    async with app.run_test(size=SIZE) as pilot:
        await settle(pilot)
        await pilot.press("question_mark")
        await pilot.pause()
        console = Console(width=200, file=io.StringIO(), record=True)
        for w in app.screen.query(Static):
            console.print(w.content)
        text = console.export_text()
        assert "convergence point" in text
        for glyph in (g.convergence, g.parallel, g.turned, g.path, g.softer, g.firmer):
            assert f"{glyph} " in text or f"({glyph})" in text, glyph
        if ascii_only:
            assert all(ord(ch) < 128 for ch in text), [ch for ch in text if ord(ch) >= 128]


async def test_theme_toggles_and_is_remembered(make_app):
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(pilot)
        assert app.theme == "textual-dark"
        await pilot.press("l")
        assert app.theme == "textual-light"
        await pilot.press("l")
        assert app.theme == "textual-dark"
        await pilot.press("l")
        assert app.theme == "textual-light"
    app.store.close()
    again = make_app()
    async with again.run_test(size=SIZE) as pilot:
        await settle(pilot)
        assert again.theme == "textual-light"


async def test_palette_lists_every_action(make_app):
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(pilot)
        titles = {c.title for c in app.get_system_commands(app.screen)}
        for want in (
            "Log a hit",
            "Log a miss",
            "Undo the last attempt",
            "Skip this setup",
            "Change speed",
            "Change table, pack or player",
            "Help",
            "Quit with a summary",
            "Dark or light",
        ):
            assert want in titles
        # the keys of a shot are in the footer; every key is in help (and the palette)
        shown = {k for k, ab in app.screen.active_bindings.items() if ab.binding.show}
        for key in ("h", "m", "r", "u", "n", "s", "e", "question_mark", "q"):
            assert key in shown
        from tablecoach.ui.screens.help import KEYS

        keys = {k for k, _ in KEYS}
        practice_keys = [b.key for b in type(app.screen).BINDINGS] + ["l"]
        for key in practice_keys:
            assert (key if key != "question_mark" else "?") in keys, key


async def test_setup_screen_changes_table(make_app):
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(pilot)
        old = app.screen.session.id
        await pilot.press("t")
        await pilot.pause()
        assert type(app.screen).__name__ == "SetupScreen"
        await pilot.press("down", "ctrl+s")  # 9ft -> 8ft (built-in order)
        await settle(pilot)
        s = app.screen.session
        assert s.table.name == "8ft" and s.id != old
        assert "new session: 8ft table" in text_of(app, "#message")
        ended = {i.id: i.ended for i in app.store.sessions()}
        assert ended[old] is not None


async def test_setup_screen_repeats_each_setup(make_app):
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(pilot)
        await pilot.press("t")
        await pilot.pause()
        await pilot.press("tab", "tab")  # tables -> packs -> shots per setup
        await pilot.press("down", "down")  # from "1: a new setup every shot" to "3 in a row"
        assert "3 shots a setup" in text_of(app, "#setup-picks")
        await pilot.press("ctrl+s")
        await settle(pilot)
        s = app.screen.session
        assert s.repeat == 3
        first = s.pick
        await pilot.press("h")
        await settle(pilot)
        assert "the same setup again (2 more times)" in text_of(app, "#message")
        await pilot.press("m", "s")
        await settle(pilot)
        assert "the same setup again (1 more time)" in text_of(app, "#message")
        await pilot.press("h")
        await settle(pilot)
        got = stored(app)
        table = s.table
        assert [a.shot for a in got] == [shots.record_of(table, first.setup)] * 3
        assert s.pick.why != "again: the setup you just logged"  # then a new one is dealt
        assert "r shoots it again" in text_of(app, "#message")


def test_damaged_database_is_one_line(data_env, capsys):
    """Garbage in the database file: exit code 2 and one line, never a traceback."""
    from types import SimpleNamespace

    from tablecoach.ui.app import build_app, run_app

    db = paths.db_path()
    db.parent.mkdir(parents=True, exist_ok=True)
    db.write_bytes(b"this is not a database" * 100)
    try:
        build_app(player="x")
    except StoreError as exc:
        assert "\n" not in str(exc)
    else:
        raise AssertionError("a damaged database must raise StoreError")
    code = run_app(SimpleNamespace(table=None, drill=None, player=None))
    err = capsys.readouterr().err
    assert code == 2
    assert err.startswith("tablecoach: ") and err.count("\n") == 1
    assert "Traceback" not in err


def test_unknown_table_is_one_line(data_env, capsys):
    from types import SimpleNamespace

    from tablecoach.ui.app import run_app

    code = run_app(SimpleNamespace(table="12ft", drill=None, player=None))
    err = capsys.readouterr().err
    assert code == 2 and "12ft" in err and err.count("\n") == 1


async def test_pin_keeps_the_zone(make_app):
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(pilot)
        screen = app.screen
        zone = screen.session.pick.zone
        await pilot.press("p")
        await settle(pilot)
        assert "pinned" in text_of(app, "#message")
        assert "Pinned" in text_of(app, "#notes")
        # the next setups come from the pinned zone (coach.zone_of is the coach's own rule)
        from tablecoach.core import coach

        for _ in range(3):
            await pilot.press("n")
            await settle(pilot)
            pick = screen.session.pick
            rec = shots.record_of(screen.session.table, pick.setup)
            assert coach.zone_of(rec, pick.stroke.speed) == zone
        await pilot.press("p")
        await settle(pilot)
        assert "unpinned" in text_of(app, "#message")
        assert "Pinned" not in text_of(app, "#notes")


async def test_v_opens_history_and_escape_returns(make_app):
    app = make_app()
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        await pilot.press("h")
        await settle(pilot)
        await pilot.press("v")
        await settle(pilot)
        assert type(app.screen).__name__ == "HistoryScreen"
        await pilot.press("escape")
        await settle(pilot)
        assert isinstance(app.screen, PracticeScreen)
        assert len(stored(app)) == 1


async def test_table_check_from_the_palette(make_app):
    """The palette's table check deals the table check's reference shots first."""
    from tablecoach.core.calibration.check import table_check_setups

    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(pilot)
        screen = app.screen
        assert "not calibrated" in text_of(app, "#notes")
        [cmd] = [c for c in app.get_system_commands(screen) if c.title == "Table check"]
        cmd.callback()
        await settle(pilot)
        ref = table_check_setups(screen.session.table)
        table = screen.session.table
        for k in range(2):
            pick = screen.session.pick
            assert f"reference shot {k + 1} of {len(ref)}" in pick.why
            assert shots.record_of(table, pick.setup) == shots.record_of(table, ref[k].setup)
            await pilot.press("h")
            await settle(pilot)
        assert [a.result for a in stored(app)] == ["hit", "hit"]


async def test_store_error_while_logging_is_one_line_and_keeps_the_setup(make_app):
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(pilot)
        pick = app.screen.session.pick
        real_log = app.store.log

        def broken(attempt):
            raise StoreError("the database is damaged (disk I/O error); restore it from a backup")

        app.store.log = broken
        await pilot.press("h")
        await settle(pilot)
        message = text_of(app, "#message")
        assert message.startswith("not saved: the database is damaged")
        assert app.screen.session.pick is pick  # the setup stays to be logged again
        app.store.log = real_log
        await pilot.press("h")
        await settle(pilot)
        assert [a.result for a in stored(app)] == ["hit"]


async def test_physical_model_by_default(make_app):
    """The physical aim is the default; a setup it cannot solve shows the
    ideal aim with a note, and the attempt records the model that gave the reading."""
    app = make_app(model=None)
    async with app.run_test(size=SIZE) as pilot:
        await settle(pilot)
        screen = app.screen
        assert screen.session.model == "physical"
        aim = screen.aim
        assert aim is not None
        if aim.model != screen.session.model:
            assert "finds no path" in text_of(app, "#notes")
        await pilot.press("h")
        await settle(pilot)
        [a] = stored(app)
        assert a.model == aim.model
