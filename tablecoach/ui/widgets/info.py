"""The words beside the table: where to place the balls, the aim, speed, spin, margin and why."""

from __future__ import annotations

import math

from rich.console import Console, ConsoleOptions, Group, RenderableType, RenderResult
from rich.text import Text
from textual.widgets import Static

from tablecoach.core import placing
from tablecoach.core.aim import POWER_CAUTION as POWER_CAUTION_SPEED
from tablecoach.core.practice import Pick, Stats, shown_reading
from tablecoach.core.shots import Aim, Convergence, Stroke
from tablecoach.core.strokes import speed_name, travel_lengths
from tablecoach.core.table import TableSpec
from tablecoach.render import words as w

from .bigtype import big

POWER_CAUTION = (
    "a hard stroke: keep the laptop and onlookers off the rail and out of the balls' way; "
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


def headline(
    table: TableSpec,
    stroke: Stroke,
    aim: Aim | None,
    large: bool = False,
    ascii_only: bool = False,
) -> Text:
    """The reading and the stroke, first and biggest: what a player needs from the rail."""
    t = Text()
    if aim is None:
        return t
    reading = w.num(shown_reading(table, aim))
    if large:
        t.append_text(big(reading, ascii_only, style="bold"))
        t.append(f"\n{aim.rail} rail sights\n", style="bold")
    else:
        t.append("AIM ", style="bold")
        t.append(f" {reading} ", style="bold reverse")
        t.append(f" {aim.rail} rail sights\n", style="bold")
    t.append(f"{speed_name(stroke.speed, table).upper()} ", style="bold")
    t.append(f"{travel_lengths(table, stroke.speed):.1f} lengths of travel")
    t.append(f" {stroke.speed:.2f} m/s\n", style="dim")
    t.append(w.spin_text(stroke, aim), style="bold")
    return t


def card(
    table: TableSpec,
    pick: Pick | None,
    stroke: Stroke,
    aim: Aim | None,
    conv: Convergence | None,
    error: str = "",
    model_note: str = "",
    large: bool = False,
    ascii_only: bool = False,
    bias: str = "",
    extra: list[tuple[str, Text]] | None = None,
) -> RenderableType:
    """The setup card: a warning first when the model has one, the reading and stroke in
    large, then what the shot is, where the balls go, margin, landing and convergence.
    ``extra`` rows (label, line) go just under the reading: the reference line slid, turned
    and solved (which then stands for the convergence row), the speed paths."""
    if pick is None:
        if error:
            return Text(error, style="bold red")
        return Text("Dealing the next setup...", style="italic")
    setup = pick.setup
    if aim is not None:
        stroke = aim.stroke  # the solver may have asked for a firmer stroke
    parts: list[RenderableType] = []
    warnings = [model_note] if model_note else []
    if aim is not None:
        warnings += list(aim.notes)
    for note in warnings:
        parts.append(Text(f"! {note}", style="bold yellow"))
    if error:
        parts.append(Text(error, style="bold red"))
    elif aim is None:
        parts.append(Text("working out the aim...", style="italic"))
    else:
        parts.append(headline(table, stroke, aim, large, ascii_only))
        if extra:
            lines = Rows()
            for label, said in extra:
                lines.add_row(label, said)
            parts.append(lines)
    if stroke.speed >= POWER_CAUTION_SPEED:
        parts.append(Text(POWER_CAUTION, style="yellow"))
    title = Text(setup.family.title or setup.family.name, style="bold")
    title.append(f": {w.target_text(setup)}", style="")
    parts.append(Text(""))
    parts.append(title)
    grid = Rows()
    for i, line in enumerate(w.placements(table, setup)):
        grid.add_row("Place" if i == 0 else "", line)
    if aim is not None and not error:
        grid.add_row("Margin", w.margin_text(table, aim))
        hint = w.placement_text(table, aim, placing.aim_shift(table, setup))
        shift = any(label == "Line" for label, _ in extra or ())
        if hint and not shift:
            grid.add_row("", Text(hint, style="dim"))
        grid.add_row("Lands", f"{w.landing_text(table, aim.landing)} (predicted)")
        if bias:
            grid.add_row("You", Text(bias, style="bold"))
        if not shift:
            grid.add_row("Conv.", w.convergence_text(table, conv) if conv else "working it out...")
        if aim.cut_angle is not None:
            grid.add_row("Cut", f"{math.degrees(aim.cut_angle):.0f} degrees on the object ball")
        grid.add_row("Contact", w.contact_text(table, aim))
    parts.append(grid)
    return Group(*parts)


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
        grid.add_row("Why", why_text(pick, aim))
    if pinned:
        grid.add_row("Pinned", pinned)
    if aim is not None:
        grid.add_row("Model", w.model_text(aim.model))
    if model_note:
        grid.add_row("", Text(model_note, style="italic"))
    if status:
        grid.add_row("Table", f"{table.name}, {status}")
    return grid


def why_text(pick: Pick, aim: Aim | None) -> str:
    """Why the coach dealt this setup, and, when the stroke played is not the one dealt (the
    player changed it, or the model needs a firmer one), which stroke the attempt counts as."""
    dealt = speed_name(pick.stroke.speed)
    played = speed_name(aim.stroke.speed) if aim is not None else dealt
    if played == dealt:
        return pick.why
    return f"{pick.why}; dealt {dealt}, played {played}: it counts as a {played} shot"


def session_line(
    stats: Stats, earlier: Stats, table_name: str, player: str, width: int | None = None
) -> Text:
    """Running count and streak of this session, and what was logged before it; parts that
    do not fit ``width`` are left out whole (the earlier count first, then the player)."""
    rate = f" ({100 * stats.hits / stats.shots:.0f}%)" if stats.shots else ""
    parts: list[tuple[str, str]] = [
        (f"{player} on {table_name}  ", "bold"),
        (f"this session: {w.count(stats.shots, 'shot')}, {w.count(stats.hits, 'hit')}{rate}, ", ""),
        (f"streak {stats.streak}", "bold"),
        (f" (best {stats.best})", ""),
    ]
    if earlier.shots:
        before = f"{w.count(earlier.shots, 'shot')}, {w.count(earlier.hits, 'hit')}"
        parts.append((f"   before: {before}", "dim"))
    if width is not None and width > 0:
        if sum(len(p) for p, _ in parts) > width and earlier.shots:
            parts.pop()
        if sum(len(p) for p, _ in parts) > width:
            parts.pop(0)
    t = Text()
    for text, style in parts:
        t.append(text, style=style)
    return t


class InfoCard(Static):
    """The setup card widget."""


class NotesPanel(Static):
    """Why this setup, the model and the calibration, under the table."""


class SessionBar(Static):
    """The one-line running count."""


class MessageLine(Static):
    """One line of feedback: what was logged, or why a key was refused."""
