"""Pilot and snapshot tests for the history screen: open, filter, pick a session, go back."""

from __future__ import annotations

import io
from datetime import UTC, datetime, timedelta

import numpy as np
import pytest
from rich.console import Console
from textual.app import App
from textual.widgets import DataTable

from tablecoach.core import demo, shots
from tablecoach.core.store import Store
from tablecoach.core.store.query import AttemptQuery
from tablecoach.ui.screens.history import DATE_RANGES, HistoryScreen

NOW = datetime(2026, 11, 30, 21, 0, tzinfo=UTC)
SIZE = (120, 40)


@pytest.fixture
def club_store(tmp_path):
    """A store holding two weeks of the invented club, made from a fixed seed and time."""
    store = Store.open(tmp_path / "club.sqlite3")
    demo.write_club(store, demo.make_club(np.random.default_rng(5), NOW, weeks=2, tz=UTC))
    yield store
    store.close()


class HistoryApp(App[None]):
    """A bare app that opens the history screen over an empty base screen."""

    def __init__(self, store: Store, player: str | None) -> None:
        super().__init__()
        self.store = store
        self.player = player

    def on_mount(self) -> None:
        self.theme = "textual-dark"
        self.push_screen(HistoryScreen(self.store, self.player, tz=UTC, today=NOW.date()))


async def settle(pilot) -> None:
    for _ in range(3):
        await pilot.pause()
        await pilot.app.workers.wait_for_complete()
    await pilot.pause()


def text_of(app, selector: str) -> str:
    widget = app.screen.query_one(selector)
    console = Console(width=200, file=io.StringIO(), record=True)
    console.print(widget.content)
    return console.export_text()


def shown(app) -> int:
    """The attempt count the status line reports."""
    text = text_of(app, "#history-status")
    return 0 if text.startswith("no attempts") else int(text.split()[0])


async def test_open_filter_and_go_back(club_store):
    app = HistoryApp(club_store, "Nadia")
    async with app.run_test(size=SIZE) as pilot:
        await settle(pilot)
        screen = app.screen
        assert isinstance(screen, HistoryScreen)
        assert shown(app) == club_store.count_attempts(AttemptQuery(player="Nadia")) > 0
        sessions = screen.query_one("#history-sessions", DataTable)
        assert sessions.row_count == len(club_store.sessions(player="Nadia"))
        assert "hits in a row" in text_of(app, "#history-streaks")
        assert "%" in text_of(app, "#history-map")

        await pilot.press("f")  # first family
        await settle(pilot)
        fam = screen.filters.family
        assert fam is not None
        assert shown(app) == club_store.count_attempts(AttemptQuery(player="Nadia", family=fam))
        # the player's words for the family (the preset's title), not its machine name
        title = shots.PRESETS[fam].title
        assert f"family: {title}" in text_of(app, "#history-filters")
        assert fam not in text_of(app, "#history-filters")
        streaks = text_of(app, "#history-streaks")
        assert title in streaks and fam not in streaks

        await pilot.press("d")  # last 7 days, counted in UTC up to the pinned today
        await settle(pilot)
        assert DATE_RANGES[screen.date_index][1] == 7
        since = datetime.combine(NOW.date() - timedelta(days=6), datetime.min.time(), UTC)
        expected = club_store.count_attempts(AttemptQuery(player="Nadia", family=fam, since=since))
        assert shown(app) == expected

        await pilot.press("left_square_bracket")  # the 7 days before those
        await settle(pilot)
        until = since
        since = until - timedelta(days=7)
        earlier = club_store.count_attempts(
            AttemptQuery(player="Nadia", family=fam, since=since, until=until)
        )
        assert shown(app) == earlier
        assert f"{since:%Y-%m-%d} to" in text_of(app, "#history-filters")
        await pilot.press("right_square_bracket")
        await settle(pilot)
        since = until
        assert shown(app) == expected

        players = sorted(club_store.players())
        after = players[players.index("Nadia") + 1 :]
        seen = []
        for _ in range(len(after) + 1):  # step through the later players, then everyone
            await pilot.press("p")
            await settle(pilot)
            who = screen.filters.player
            seen.append(who)
            assert shown(app) == club_store.count_attempts(
                AttemptQuery(player=who, family=fam, since=since)
            )
        assert seen == [*after, None]

        await pilot.press("r")
        await settle(pilot)
        assert shown(app) == club_store.count_attempts()

        await pilot.press("escape")
        await pilot.pause()
        assert not isinstance(app.screen, HistoryScreen)


async def test_enter_on_a_session_shows_it_alone(club_store):
    app = HistoryApp(club_store, "Teodor")
    async with app.run_test(size=SIZE) as pilot:
        await settle(pilot)
        screen = app.screen
        table = screen.query_one("#history-sessions", DataTable)
        table.focus()
        await pilot.press("down", "enter")
        await settle(pilot)
        sid = screen.filters.session
        assert sid is not None
        assert shown(app) == club_store.count_attempts(AttemptQuery(session=sid))
        await pilot.press("s")
        await settle(pilot)
        assert screen.filters.session is None


async def test_ascii_toggle_redraws_the_map(club_store):
    app = HistoryApp(club_store, "Nadia")
    async with app.run_test(size=SIZE) as pilot:
        await settle(pilot)
        assert "◆" in text_of(app, "#history-map")
        await pilot.press("a")
        await pilot.pause()
        text = text_of(app, "#history-map")
        assert "◆" not in text and "=" in text


async def test_a_player_without_attempts_sees_everyone(club_store):
    app = HistoryApp(club_store, "newcomer")
    async with app.run_test(size=SIZE) as pilot:
        await settle(pilot)
        assert app.screen.filters.player is None
        assert shown(app) == club_store.count_attempts()


async def test_reachable_from_the_practice_screen_and_back(make_app):
    from tablecoach.ui.screens.practice import PracticeScreen

    app = make_app()
    async with app.run_test(size=(100, 30)) as pilot:
        await settle(pilot)
        assert isinstance(app.screen, PracticeScreen)
        await pilot.press("v")
        await settle(pilot)
        assert isinstance(app.screen, HistoryScreen)
        assert app.screen.filters.player == "tester"
        await pilot.press("escape")
        await settle(pilot)
        assert isinstance(app.screen, PracticeScreen)


def test_snapshot(club_store, snap_compare):
    # size and theme pinned; the screen shows no clock, and 'today' is pinned
    async def ready(pilot) -> None:
        await settle(pilot)
        # draw everything afresh at the pinned size, so the picture does not depend on which
        # parts were drawn before the worker's answer arrived
        await pilot.resize_terminal(SIZE[0] - 1, SIZE[1])
        await settle(pilot)
        await pilot.resize_terminal(*SIZE)
        await settle(pilot)

    assert snap_compare(HistoryApp(club_store, "Nadia"), terminal_size=SIZE, run_before=ready)
