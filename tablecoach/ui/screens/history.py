"""The history screen: sessions, streaks, a heat map of make rates by zone, trends, filters."""

from __future__ import annotations

from dataclasses import dataclass, replace
from datetime import date, datetime, timedelta, tzinfo
from typing import Any

from rich.table import Table as RichTable
from rich.text import Text
from textual import work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.message import Message
from textual.screen import Screen
from textual.widgets import DataTable, Footer, Static
from textual.worker import Worker, get_current_worker

from tablecoach.core.stats.coded import summarize_store
from tablecoach.core.stats.history import History
from tablecoach.core.stats.rates import wilson
from tablecoach.core.stats.trends import WeekRate
from tablecoach.core.stats.zones import grid_from_zones
from tablecoach.core.store import Store
from tablecoach.core.store.query import AttemptQuery
from tablecoach.render.heatmap import HeatMap, legend_text
from tablecoach.render.rates import spark
from tablecoach.render.words import family_text

DATE_RANGES: tuple[tuple[str, int | None], ...] = (
    ("all time", None),
    ("last 7 days", 7),
    ("last 30 days", 30),
    ("last 12 weeks", 84),
)
"""Date filters the d key steps through: a label and how many local days back (today counts)."""


SESSION_COLUMNS = ("#", "started", "player", "table", "made", "rate", "best", "families")


class SessionsListed(Message):
    """The store's session list arrived (a fast first look, before the full history)."""

    def __init__(self, worker: Worker[None], sessions: list[Any]) -> None:
        super().__init__()
        self.worker = worker
        self.sessions = sessions


class HistoryLoaded(Message):
    """The history worker finished (``result`` set) or failed (``error`` set)."""

    def __init__(self, worker: Worker[None], result: Any = None, error: str = "") -> None:
        super().__init__()
        self.worker = worker
        self.result = result
        self.error = error


@dataclass(frozen=True)
class Loaded:
    """What one load found: the history, and the names it saw for the filter keys."""

    history: History
    players: tuple[str, ...]
    tables: tuple[str, ...]
    families: tuple[str, ...]


def _step(options: tuple[str | None, ...], current: str | None) -> str | None:
    """The option after ``current`` (None means all), wrapping round."""
    if current not in options:
        return options[0] if options else None
    return options[(options.index(current) + 1) % len(options)]


class HistoryScreen(Screen[None]):
    """Practice history for one player (or everyone), filtered from the keyboard.

    ``tz`` is the player's time zone for days and weeks (None: the machine's); ``today`` pins
    the date the day streak and date filters count from (None: today in ``tz``).
    """

    DEFAULT_CSS = """
    HistoryScreen { layout: vertical; overflow: hidden hidden; }
    #history-filters { height: 2; padding: 0 1; background: $boost; }
    #history-top { height: 17; }
    #history-streaks { width: 1fr; min-width: 30; padding: 0 1; overflow: hidden hidden; }
    #history-map-box { width: 50; height: 17; padding: 0 1; }
    #history-map { width: 48; height: 13; }
    #history-legend { width: 48; height: 4; color: $text-muted; }
    #history-trends { height: auto; max-height: 8; padding: 0 1; }
    #history-sessions { height: 1fr; min-height: 4; }
    #history-status { height: 1; padding: 0 1; color: $text-muted; }
    """

    BINDINGS = [
        Binding("escape", "back", "Back"),
        Binding("q", "back", "Back", show=False),
        Binding("p", "next_player", "Player"),
        Binding("t", "next_table", "Table"),
        Binding("f", "next_family", "Family"),
        Binding("d", "next_dates", "Dates"),
        Binding("left_square_bracket", "dates_back", "Earlier", show=False),
        Binding("right_square_bracket", "dates_forward", "Later", show=False),
        Binding("s", "clear_session", "All sessions", show=False),
        Binding("a", "toggle_ascii", "ASCII map"),
        Binding("r", "reset", "Reset"),
    ]

    def __init__(
        self,
        store: Store,
        player: str | None = None,
        tz: tzinfo | None = None,
        today: date | None = None,
        ascii_only: bool = False,
    ) -> None:
        super().__init__()
        self.store = store
        self.tz = tz
        self.today = today
        self.ascii_only = ascii_only
        self.filters = AttemptQuery(player=player)
        self.date_index = 0
        self.date_back = 0  # how many whole windows back from today the date filter is
        self.loaded: Loaded | None = None
        self.loaded_by: Worker[None] | None = None
        self.players: tuple[str, ...] = (player,) if player else ()
        self.tables: tuple[str, ...] = ()
        self.families: tuple[str, ...] = ()
        self.session_rows: list[int | None] = []

    # ----- layout -----------------------------------------------------------------------
    def compose(self) -> ComposeResult:
        yield Static(id="history-filters")
        with Horizontal(id="history-top"):
            yield Static(id="history-streaks")
            with Vertical(id="history-map-box"):
                yield Static(id="history-map")
                yield Static(id="history-legend")
        yield Static(id="history-trends")
        yield DataTable(id="history-sessions", cursor_type="row", zebra_stripes=True)
        yield Static("loading the history...", id="history-status")
        yield Footer()

    def on_mount(self) -> None:
        self._reset_sessions()
        player = self.filters.player
        if player is not None:
            try:
                mine = self.store.count_attempts(AttemptQuery(player=player))
                if not mine and self.store.count_attempts():
                    # a new player (or the demo club): show everyone rather than an empty page
                    self.filters = replace(self.filters, player=None)
                    self.notify(f"no attempts by {player} yet: showing everyone (p to pick)")
            except ValueError:
                pass
        self.reload()

    def _reset_sessions(self) -> DataTable[Any]:
        """Empty the session table, columns too, so their widths fit only the new rows."""
        table = self.query_one("#history-sessions", DataTable)
        table.clear(columns=True)
        table.add_columns(*SESSION_COLUMNS)
        self.session_rows = []
        return table

    # ----- loading ----------------------------------------------------------------------
    def local_today(self) -> date:
        if self.today is not None:
            return self.today
        if self.tz is not None:
            return datetime.now(self.tz).date()
        return datetime.now().astimezone().date()

    def date_window(self) -> tuple[date, date] | None:
        """The first and last local day of the date filter (None: all time)."""
        days = DATE_RANGES[self.date_index][1]
        if days is None:
            return None
        last = self.local_today() - timedelta(days=days * self.date_back)
        return last - timedelta(days=days - 1), last

    def current_query(self) -> AttemptQuery:
        """The filters with the date range applied (whole local days in the screen's zone)."""
        window = self.date_window()
        if window is None:
            return self.filters
        return self.filters.days(*window, self.tz)

    def dates_label(self) -> str:
        """The date filter in words: the preset, or the window it was stepped back to."""
        label, days = DATE_RANGES[self.date_index]
        if days is None or self.date_back == 0:
            return label
        window = self.date_window()
        assert window is not None
        return f"{window[0]:%Y-%m-%d} to {window[1]:%Y-%m-%d}"

    def reload(self) -> None:
        """Query and summarise in a worker thread; the screen stays live meanwhile."""
        self.query_one("#history-status", Static).update("loading the history...")
        self._show_filters()
        self._load(self.current_query())  # exclusive: cancels a load still running

    @work(thread=True, exclusive=True, group="history", exit_on_error=False)
    def _load(self, q: AttemptQuery) -> None:
        me: Worker[None] = get_current_worker()
        try:
            if q.family is None and q.since is None and q.session is None:
                # the store counts sessions in SQL: show them while the full history is built
                self.post_message(SessionsListed(me, self.store.sessions(q.player, q.table)))
            h = summarize_store(  # integer codes from SQLite, not Attempt objects
                self.store, q, tz=self.tz, today=self.local_today(),
                table_of=self.store.table_lookup(),
            )  # fmt: skip
            players = tuple(self.store.players())
            result = Loaded(h, players, h.tables, tuple(sorted(h.families)))
        except ValueError as exc:
            self.post_message(HistoryLoaded(me, error=str(exc)))
            return
        self.post_message(HistoryLoaded(me, result))

    def on_sessions_listed(self, message: SessionsListed) -> None:
        # a newer load cancelled this one, or this one's full history is already shown
        if message.worker.is_cancelled or self.loaded_by is message.worker:
            return
        table = self._reset_sessions()
        for s in reversed(message.sessions):  # start times follow with the attempts
            rate = f"{100 * s.hits / s.attempts:.0f}%" if s.attempts else "-"
            table.add_row(
                str(s.id), "...", s.player, s.table,
                f"{s.hits}/{s.attempts}", rate, "", s.drill,
            )  # fmt: skip
            self.session_rows.append(s.id)
        self.query_one("#history-status", Static).update(
            Text(f"{len(message.sessions)} sessions; working out streaks and rates...")
        )

    def on_history_loaded(self, message: HistoryLoaded) -> None:
        if message.worker.is_cancelled:
            return  # a newer filter is already loading
        status = self.query_one("#history-status", Static)
        if message.error:
            status.update(Text(message.error, style="bold red"))
            return
        res: Loaded = message.result
        self.loaded = res
        self.loaded_by = message.worker
        self.players = res.players
        if self.filters.table is None:
            self.tables = res.tables
        if self.filters.family is None:
            self.families = res.families
        self._show(res.history)
        n = res.history.rate.attempts
        shown = f"{n} attempt{'' if n == 1 else 's'} shown"
        status.update(Text(shown if n else "no attempts match these filters"))

    # ----- drawing ----------------------------------------------------------------------
    def _show_filters(self) -> None:
        f = self.filters
        parts = [
            f"[p] player: {f.player or 'everyone'}",
            f"[t] table: {f.table or 'all'}",
            f"[f] family: {family_text(f.family) if f.family else 'all'}",
            f"[d] dates: {self.dates_label()}",
        ]
        if f.session is not None:
            parts.append(f"[s] session {f.session} only")
        line2 = "[ and ] step the dates back and forward; Enter on a session shows it alone"
        self.query_one("#history-filters", Static).update(Text("   ".join(parts) + "\n" + line2))

    def _show(self, h: History) -> None:
        self._show_filters()
        self.query_one("#history-streaks", Static).update(self._streaks(h))
        cells = grid_from_zones(h.zones, self.filters.family)
        self.query_one("#history-map", Static).update(
            HeatMap(cells, ascii_only=self.ascii_only, rows=2)
        )
        self.query_one("#history-legend", Static).update(
            Text("make rate by where the travelling ball started\n" + legend_text())
        )
        self.query_one("#history-trends", Static).update(self._trends(h))
        table = self._reset_sessions()
        for s in reversed(h.sessions):
            start = s.start.astimezone(self.tz) if self.tz is not None else s.start.astimezone()
            table.add_row(
                "-" if s.session is None else str(s.session),
                f"{start:%Y-%m-%d %H:%M}",
                s.player,
                s.table,
                f"{s.rate.hits}/{s.rate.attempts}",
                "-" if s.rate.rate is None else f"{100 * s.rate.rate:.0f}%",
                str(s.streak.best),
                ", ".join(family_text(name) for name in s.families),
            )
            self.session_rows.append(s.session)

    def _streaks(self, h: History) -> RichTable:
        grid = RichTable.grid(padding=(0, 2))
        grid.add_column(style="bold", no_wrap=True)
        grid.add_column(justify="right")
        grid.add_column(justify="right")
        grid.add_row("streaks", "now", "best")
        grid.add_row("hits in a row", str(h.streak.current), str(h.streak.best))
        grid.add_row("days in a row", str(h.days.current), str(h.days.best))
        for f, s in sorted(h.family_streaks.items()):
            grid.add_row(f"  {family_text(f)}", str(s.current), str(s.best))
        if h.zone_streaks:
            z, s = max(h.zone_streaks.items(), key=lambda kv: (kv[1].best, str(kv[0])))
            grid.add_row("best zone run", "", str(s.best))
            fam = getattr(z, "family", None)
            said = family_text(fam) if isinstance(fam, str) else str(z)
            grid.add_row(Text(f"  {said}", style="dim"), "", "")
            where = f"{z.short}, {z.speed}" if hasattr(z, "short") else ""
            if where:
                grid.add_row(Text(f"  {where}", style="dim"), "", "")
        r = h.rate
        if r.rate is None:
            grid.add_row("made", "0/0", "-")
        else:  # the rate and its Wilson interval on rows of their own, to fit 100 columns
            grid.add_row("made", f"{r.hits}/{r.attempts}", f"{100 * r.rate:.0f}%")
            grid.add_row(
                Text("  likely range", style="dim"), "", f"{100 * r.low:.0f}-{100 * r.high:.0f}%"
            )
        return grid

    def _trends(self, h: History) -> RichTable:
        grid = RichTable.grid(padding=(0, 1))
        grid.add_column(style="bold", no_wrap=True)
        grid.add_column(no_wrap=True)
        grid.add_column(no_wrap=True)
        if not h.weeks:
            grid.add_row("weekly trend", "no weeks yet", "")
            return grid
        first, last = h.weeks[0].label, h.weeks[-1].label
        grid.add_row("weekly trend", f"|{spark(h.weeks)}|", f"{first} to {last}")
        for f, weeks in sorted(h.family_weeks.items()):
            pad = [w for w in h.weeks if w.monday < weeks[0].monday] if weeks else []
            empty = [WeekRate(w.year, w.week, w.monday, wilson(0, 0)) for w in pad]
            grid.add_row(f"  {family_text(f)}", f"|{spark(empty + list(weeks))}|", "")
        recent = ", ".join(
            f"{w.label[-3:]} {'-' if w.rate.rate is None else f'{100 * w.rate.rate:.0f}%'}"
            for w in h.weeks[-6:]
        )
        grid.add_row("last weeks", recent, "")
        return grid

    # ----- keys -------------------------------------------------------------------------
    def action_back(self) -> None:
        self.app.pop_screen()

    def action_next_player(self) -> None:
        self.filters = replace(
            self.filters, player=_step((None, *self.players), self.filters.player)
        )
        self.reload()

    def action_next_table(self) -> None:
        self.filters = replace(self.filters, table=_step((None, *self.tables), self.filters.table))
        self.reload()

    def action_next_family(self) -> None:
        fam = _step((None, *self.families), self.filters.family)
        self.filters = replace(self.filters, family=fam)
        self.reload()

    def action_next_dates(self) -> None:
        self.date_index = (self.date_index + 1) % len(DATE_RANGES)
        self.date_back = 0
        self.reload()

    def action_dates_back(self) -> None:
        if DATE_RANGES[self.date_index][1] is None:
            self.date_index = 1  # stepping needs a window: start from the first one
        else:
            self.date_back += 1
        self.reload()

    def action_dates_forward(self) -> None:
        if DATE_RANGES[self.date_index][1] is not None and self.date_back > 0:
            self.date_back -= 1
            self.reload()

    def action_clear_session(self) -> None:
        if self.filters.session is not None:
            self.filters = replace(self.filters, session=None)
            self.reload()

    def action_toggle_ascii(self) -> None:
        self.ascii_only = not self.ascii_only
        if self.loaded is not None:
            self._show(self.loaded.history)

    def action_reset(self) -> None:
        self.filters = AttemptQuery()
        self.date_index = 0
        self.date_back = 0
        self.reload()

    def on_data_table_row_selected(self, event: DataTable.RowSelected) -> None:
        i = event.cursor_row
        if 0 <= i < len(self.session_rows) and self.session_rows[i] is not None:
            self.filters = replace(self.filters, session=self.session_rows[i])
            self.reload()
