"""A reference line moved to the setup on screen, drawn and said: parallel, turned, solved."""

from __future__ import annotations

from dataclasses import replace

from rich.text import Text

from tablecoach.core.aim.shift import ReferenceShift
from tablecoach.core.shots import Setup
from tablecoach.core.table import TableSpec

from .table_view import ASCII, STYLES, UNICODE, Picture
from .words import num


def with_shift(table: TableSpec, picture: Picture, shift: ReferenceShift) -> Picture:
    """The picture with the parallel and turned paths added, zoomed out to show the point."""

    def d(path: tuple[tuple[float, float], ...]) -> list[tuple[float, float]]:
        return [table.to_diamonds(*p) for p in path]

    return replace(
        picture,
        parallel=d(shift.parallel.trace.path),
        turned=d(shift.rotated.trace.path),
        convergence=table.to_diamonds(*shift.point),
        zoom_out=True,
    )


def shift_lines(
    table: TableSpec,
    setup: Setup,
    shift: ReferenceShift,
    ascii_only: bool = False,
    stroke_note: str = "",
) -> list[Text]:
    """Three short lines, each led by its glyph on the drawing: the reference slid parallel
    (and what it misses by), the line turned about the point, and the model's aim; then
    ``stroke_note`` (words.reference_stroke_text) when the reference was played at another
    stroke."""
    g = ASCII if ascii_only else UNICODE
    u = table.rail_unit(setup.family.rails[0])
    what = "pocket" if setup.pocket is not None else "ball"

    def miss(m: float | None) -> str:
        if m is None:
            return "the model cannot follow it"
        d = m / table.diamond
        return f"reaches the {what}" if d < 0.005 else f"misses the {what} by {num(d)} diamond"

    ref = num(shift.reference_reading / u)
    rows = [
        (g.parallel, "parallel", f"your {ref} line slid: {num(shift.parallel.reading / u)}, "
         f"{miss(shift.parallel.miss)}"),
        (g.turned, "turned", f"turned about {g.convergence}: {num(shift.rotated.reading / u)}"
         + ("" if shift.rotated.miss is None or shift.rotated.miss / table.diamond < 0.005
            else f", {miss(shift.rotated.miss)}")),
        (g.path, "path", f"the model says {num(shift.solved.reading / u)}"),
    ]  # fmt: skip
    out = []
    for ch, style, text in rows:
        t = Text(ch, STYLES[style])
        t.append(f" {text}")
        out.append(t)
    if stroke_note:
        out.append(Text(f"! {stroke_note}", style="italic"))
    return out
