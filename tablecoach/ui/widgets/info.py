"""The words beside the table: where to place the balls, the aim, speed, spin, margin and why."""

from __future__ import annotations

import math

from rich.console import Console, ConsoleOptions, Group, RenderableType, RenderResult
from rich.text import Text
from textual.widgets import Static

from tablecoach.core.shots import Aim, Convergence, Stroke
from tablecoach.core.table import TableSpec

from . import wording as w
from .session import Pick, Stats

POWER_CAUTION = (
    "power speed: keep the laptop and onlookers off the rail and out of the balls' way; "
    "follow the room's rules on power shots"
)


class Rows:
    """Labelled rows with the values wrapped under themselves (a light two-column grid)."""

    def __init__(self) -> None:
        self.rows: list[tuple[str, Text]] = []

    def add_row(self, label: str, value: str | Text) -> None:
        self.rows.append((label, value if isinstance(value, Text) else Text(value)))

    def __rich_console__(self, console: Console, options: ConsoleOptions) -> RenderResult:
        if not self.rows:
            return
        lw = max(len(label) for label, _ in self.rows) + 1
        width = max(options.max_width - lw, 10)
        for label, value in self.rows:
            for i, line in enumerate(value.wrap(console, width)):
                head = Text((label if i == 0 else "").ljust(lw), style="bold")
                head.append_text(line)
                yield head


def card(
    table: TableSpec,
    pick: Pick | None,
    stroke: Stroke,
    aim: Aim | None,
    conv: Convergence | None,
    error: str = "",
) -> RenderableType:
    """The setup card: what the shot is, where the balls go, the aim, speed, spin, margin."""
    if pick is None:
        if error:
            return Text(error, style="bold red")
        return Text("Dealing the next setup...", style="italic")
    setup = pick.setup
    if aim is not None:
        stroke = aim.stroke  # the solver may have asked for a firmer stroke
    title = Text(setup.family.title or setup.family.name, style="bold")
    title.append(f": {w.target_text(setup)}", style="")
    grid = Rows()
    for i, line in enumerate(w.placements(table, setup)):
        grid.add_row("Place" if i == 0 else "", line)
    if error:
        grid.add_row("Aim", Text(error, style="bold red"))
    elif aim is None:
        grid.add_row("Aim", Text("working out the aim...", style="italic"))
    else:
        grid.add_row("Aim", Text(w.aim_text(table, aim), style="bold"))
    grid.add_row("Speed", w.speed_text(table, stroke))
    grid.add_row("Spin", w.spin_text(stroke))
    if aim is not None and not error:
        grid.add_row("Margin", w.margin_text(table, aim))
        grid.add_row("Lands", f"{w.landing_text(table, aim.landing)} (predicted)")
        grid.add_row("Conv.", w.convergence_text(table, conv) if conv else "working it out...")
        if aim.cut_angle is not None:
            grid.add_row("Cut", f"{math.degrees(aim.cut_angle):.0f} degrees on the object ball")
        for note in aim.notes:
            grid.add_row("Note", note)
    if stroke.speed >= 3.2:
        grid.add_row("Care", Text(POWER_CAUTION, style="yellow"))
    return Group(title, grid)


def notes(
    table: TableSpec,
    pick: Pick | None,
    aim: Aim | None,
    status: str,
    pinned: str = "",
    model_note: str = "",
) -> RenderableType:
    """Why this setup, the model and the table's calibration: the lines under the table."""
    grid = Rows()
    if pick is not None:
        grid.add_row("Why", pick.why)
    if pinned:
        grid.add_row("Pinned", pinned)
    if aim is not None:
        grid.add_row("Model", w.model_text(aim.model))
    if model_note:
        grid.add_row("", Text(model_note, style="italic"))
    if status:
        grid.add_row("Table", f"{table.name}, {status}")
    return grid


def session_line(stats: Stats, earlier: Stats, table_name: str, player: str) -> Text:
    """Running count and streak of this session, and what was logged before it."""
    t = Text()
    t.append(f"{player} on {table_name}  ", style="bold")
    rate = f" ({100 * stats.hits / stats.shots:.0f}%)" if stats.shots else ""
    t.append(f"this session: {w.count(stats.shots, 'shot')}, {w.count(stats.hits, 'hit')}{rate}, ")
    t.append(f"streak {stats.streak}", style="bold")
    t.append(f" (best {stats.best})")
    if earlier.shots:
        before = f"{w.count(earlier.shots, 'shot')}, {w.count(earlier.hits, 'hit')}"
        t.append(f"   before: {before}", style="dim")
    return t


class InfoCard(Static):
    """The setup card widget."""


class NotesPanel(Static):
    """Why this setup, the model and the calibration, under the table."""


class SessionBar(Static):
    """The one-line running count."""


class MessageLine(Static):
    """One line of feedback: what was logged, or why a key was refused."""
