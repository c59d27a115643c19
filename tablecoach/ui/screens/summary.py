"""The session summary shown on quit: attempts, hits, the streaks, and each family's shots."""

from __future__ import annotations

from rich.table import Table as RichTable
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.screen import ModalScreen
from textual.widgets import Footer, Static

from tablecoach.core.practice import Stats
from tablecoach.core.summary import FamilyLine


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


def family_table(lines: list[FamilyLine]) -> RichTable:
    """Made, rate, best streak and landing bias of each family played."""
    t = RichTable(box=None, padding=(0, 1), show_edge=False)
    t.add_column("family", no_wrap=True)
    t.add_column("made", justify="right", no_wrap=True)
    t.add_column("rate", justify="right", no_wrap=True)
    t.add_column("best", justify="right", no_wrap=True)
    t.add_column("lands", no_wrap=True)
    for f in lines:
        if f.bias is None:
            lands = "-"
        else:
            way = "long" if f.bias > 0 else "short"
            lands = f"{abs(f.bias):.1f} {way} ({f.bias_n})"
        t.add_row(f.title, f"{f.made} of {f.tried}", f"{100 * f.rate:.0f}%", str(f.best), lands)
    return t


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

    def __init__(
        self,
        stats: Stats,
        player: str,
        table: str,
        drill: str,
        families: list[FamilyLine] | None = None,
    ) -> None:
        super().__init__()
        self.rows = summary_lines(stats, player, table, drill)
        self.families = families or []

    def compose(self) -> ComposeResult:
        grid = RichTable.grid(padding=(0, 2))
        grid.add_column(style="bold", no_wrap=True)
        grid.add_column()
        for label, value in self.rows:
            grid.add_row(label, value)
        with Vertical(id="summary-box"):
            yield Static("Session summary", id="summary-title")
            yield Static(grid, id="summary-grid")
            if self.families:
                yield Static(family_table(self.families), id="summary-families")
                yield Static(
                    "lands: mean landing against the mirror line of the aim used, "
                    "over (n) seen landings",
                    id="summary-note",
                )
            yield Static("q or Enter to quit, Escape to keep practising", id="summary-hint")
        yield Footer()

    def action_leave(self) -> None:
        self.dismiss(True)

    def action_stay(self) -> None:
        self.dismiss(False)
