"""The session summary shown on quit: attempts, hits, the current and the best streak."""

from __future__ import annotations

from rich.table import Table as RichTable
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.screen import ModalScreen
from textual.widgets import Footer, Static

from ..widgets.session import Stats


def summary_lines(stats: Stats, player: str, table: str, drill: str) -> list[tuple[str, str]]:
    """(label, value) rows of a session summary."""
    rate = f"{100 * stats.hits / stats.shots:.0f}%" if stats.shots else "-"
    return [
        ("player", player),
        ("table", table),
        ("drill pack", drill),
        ("attempts", str(stats.shots)),
        ("hits", f"{stats.hits} ({rate})"),
        ("misses", str(stats.misses)),
        ("current streak", str(stats.streak)),
        ("best streak", str(stats.best)),
    ]


def summary_text(stats: Stats) -> str:
    """The summary in one line, printed when the app closes."""
    return (
        f"session: {stats.shots} attempt{'' if stats.shots == 1 else 's'}, "
        f"{stats.hits} hit{'' if stats.hits == 1 else 's'}, "
        f"current streak {stats.streak}, best streak {stats.best}"
    )


class SummaryScreen(ModalScreen[bool]):
    """Dismisses with True to leave the app, False to keep practising."""

    BINDINGS = [
        Binding("q", "leave", "Quit"),
        Binding("enter", "leave", "Quit", show=False),
        Binding("escape", "stay", "Keep practising"),
    ]

    def __init__(self, stats: Stats, player: str, table: str, drill: str) -> None:
        super().__init__()
        self.rows = summary_lines(stats, player, table, drill)

    def compose(self) -> ComposeResult:
        grid = RichTable.grid(padding=(0, 2))
        grid.add_column(style="bold", no_wrap=True)
        grid.add_column()
        for label, value in self.rows:
            grid.add_row(label, value)
        with Vertical(id="summary-box"):
            yield Static("Session summary", id="summary-title")
            yield Static(grid, id="summary-grid")
            yield Static("q or Enter to quit, Escape to keep practising", id="summary-hint")
        yield Footer()

    def action_leave(self) -> None:
        self.dismiss(True)

    def action_stay(self) -> None:
        self.dismiss(False)
