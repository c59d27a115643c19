"""Words and numbers a player reads at the table, for the command line and the app alike."""

from __future__ import annotations

import math
from typing import Any

from rich.console import Console
from rich.table import Table as RichTable
from rich.text import Text

from .table_view import Picture, TableView, legend_text, picture_for_aim


def fmt_d(v: float) -> str:
    """A diamond figure with two decimals (players place balls to about a quarter diamond)."""
    return f"{v:.2f}"


def place_text(table: Any, what: str, p: tuple[float, float]) -> str:
    """Where to put a ball, the way a player places it: diamonds from the head and left rails."""
    x, y = table.to_diamonds(*p)
    return f"{what}: {fmt_d(x)} up from the head rail, {fmt_d(y)} out from the left rail"


def rail_point_text(table: Any, rail: str, at_m: float) -> str:
    """'right rail at 5.96' from a rail and metres along it."""
    return f"{rail} rail at {fmt_d(table.along_to_diamonds(rail, at_m))}"


def describe_aim(table: Any, aim: Any, conv: Any = None) -> list[tuple[str, str]]:
    """(label, value) rows describing a solved aim: placement, aim, contacts, margin, speed."""
    from ..core.strokes import speed_name, travel_lengths

    s = aim.setup
    rows: list[tuple[str, str]] = [("shot", f"{s.family.title or s.family.name}")]
    rows.append(("place", place_text(table, "cue ball", s.cue)))
    if s.object is not None:
        rows.append(("", place_text(table, "object ball", s.object)))
    if s.target_ball is not None:
        rows.append(("", place_text(table, "target ball", s.target_ball)))
    if s.pocket:
        rows.append(("target", f"{s.pocket} pocket"))
    else:
        rows.append(("target", "contact the target ball"))
    unit = table.rail_unit(aim.rail)
    rows.append(
        ("aim", f"{fmt_d(aim.reading / unit)} on the {aim.rail} rail sights (over the diamonds)")
    )
    rows.append(("contacts", "; ".join(rail_point_text(table, c.rail, c.at) for c in aim.contacts)))
    rows.append(("lands", rail_point_text(table, aim.landing.rail, aim.landing.at)))
    rows.append(
        (
            "margin",
            f"-{fmt_d(aim.margin_minus / unit)} / +{fmt_d(aim.margin_plus / unit)} diamond "
            "on the reading",
        )
    )
    st = aim.stroke
    spin = []
    if st.follow:
        spin.append(f"{abs(st.follow):g} tip {'follow' if st.follow > 0 else 'draw'}")
    if st.english:
        spin.append(f"{abs(st.english):g} tip {'right' if st.english > 0 else 'left'} english")
    rows.append(
        (
            "speed",
            f"{speed_name(st.speed, table)}: {travel_lengths(table, st.speed):.1f} lengths of "
            f"travel, {st.speed:.2f} m/s; " + (", ".join(spin) if spin else "centre ball"),
        )
    )
    if aim.cut_angle is not None:
        rows.append(("cut", f"{math.degrees(aim.cut_angle):.0f} degrees on the object ball"))
    if conv is not None:
        cx, cy = table.to_diamonds(*conv.point)
        spread = conv.spread / table.diamond
        rule = (
            "the lines meet in one point"
            if spread < 0.01
            else f"lines pass within {spread:.2f} diamond of it (RMS)"
        )
        rows.append(("converge", f"x {fmt_d(cx)}, y {fmt_d(cy)}: {rule}"))
    for n in aim.notes:
        rows.append(("note", n))
    return rows


def aim_picture(table: Any, aim: Any, conv: Any = None) -> Picture:
    """The Picture for a solved aim."""
    return picture_for_aim(table, aim, conv)


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
        view = TableView(aim_picture(table, aim, conv), ascii_only=ascii_only)
        console.print(view, crop=False)
        console.print(legend_text(ascii_only))
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
