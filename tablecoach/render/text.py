"""An aim printed for the command line: the diagram, then its rows in the shared words."""

from __future__ import annotations

import math
from typing import Any

from rich.console import Console
from rich.table import Table as RichTable
from rich.text import Text

from ..core.shots import Aim, Convergence
from ..core.table import TableSpec
from . import words
from .table_view import TableView, legend_text, picture_for_aim


def describe_aim(
    table: TableSpec, aim: Aim, conv: Convergence | None = None
) -> list[tuple[str, str]]:
    """(label, value) rows describing a solved aim in the app's words (render/words.py):
    placement, target, aim, contacts, landing, margin, speed and spin, convergence."""
    s = aim.setup
    rows: list[tuple[str, str]] = [("shot", f"{s.family.title or s.family.name}")]
    for i, line in enumerate(words.placements(table, s)):
        rows.append(("place" if i == 0 else "", line))
    rows.append(("target", words.target_text(s)))
    rows.append(("aim", words.aim_text(table, aim)))
    rows.append(("contacts", "; ".join(words.landing_text(table, c) for c in aim.contacts)))
    rows.append(("lands", words.landing_text(table, aim.landing)))
    rows.append(("margin", f"{words.margin_text(table, aim)} on the reading"))
    rows.append(
        ("speed", f"{words.speed_text(table, aim.stroke)}; {words.spin_text(aim.stroke, aim)}")
    )
    if aim.cut_angle is not None:
        rows.append(("cut", f"{math.degrees(aim.cut_angle):.0f} degrees on the object ball"))
    if conv is not None:
        rows.append(("converge", words.convergence_text(table, conv)))
    for n in aim.notes:
        rows.append(("note", n))
    return rows


def aim_report(
    table: Any,
    aim: Any,
    conv: Any,
    data: dict[str, Any],
    ascii_only: bool = False,
    diagram: bool = True,
    console: Console | None = None,
) -> None:
    """Print an aim for the command line: the diagram, then the numbers."""
    console = console or Console(highlight=False)
    if ascii_only or not _unicode_ok(console):
        ascii_only = True
    if diagram:
        picture = picture_for_aim(table, aim, conv)
        picture.zoom_out = conv is not None  # the point drawn where it lies, as on the card
        view = TableView(picture, ascii_only=ascii_only)
        console.print(view, crop=False)
        console.print(legend_text(ascii_only, picture=picture))
        console.print()
    grid = RichTable.grid(padding=(0, 2))
    grid.add_column(style="bold")
    grid.add_column()
    for label, value in describe_aim(table, aim, conv):
        grid.add_row(label, Text(value))
    console.print(grid)
    console.print(Text(f"{table.name} table, {aim.model} model, {data.get('calibration', '')}"))


def _unicode_ok(console: Console) -> bool:
    enc = (console.encoding or "").lower()
    return "utf" in enc
