"""Make rates by zone drawn on the text table: a heat map that also reads in plain ASCII."""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from rich.console import Console, ConsoleOptions, RenderResult
from rich.segment import Segment
from rich.style import Style
from rich.text import Text

from .table_view import Picture, TableView

RAMP: tuple[tuple[float, str, str], ...] = (
    (0.2, ".", "rgb(150,40,40)"),
    (0.4, ":", "rgb(170,90,30)"),
    (0.6, "+", "rgb(160,140,30)"),
    (0.8, "*", "rgb(90,150,50)"),
    (1.01, "#", "rgb(30,150,80)"),
)
"""Bands of make rate: (upper bound, ASCII shade, background colour). Denser shade, more made."""


def band(rate: float) -> tuple[str, str]:
    """The (shade, colour) of a make rate."""
    for hi, ch, colour in RAMP:
        if rate < hi:
            return ch, colour
    return RAMP[-1][1], RAMP[-1][2]


def legend_text() -> str:
    """One line explaining the shades."""
    parts = []
    lo = 0
    for hi, ch, _ in RAMP:
        top = min(int(round(hi * 100)), 100)
        parts.append(f"{ch} {lo}-{top}%")
        lo = top
    return "shading: " + "  ".join(parts) + "  (blank: no attempts)"


class HeatMap:
    """A Rich renderable: the table (TableView proportions) with each zone of the coach's grid
    shaded by its make rate and labelled with it.

    ``cells`` maps (col, row) of the zone grid (``coach.ZONE_COLS`` x ``coach.ZONE_ROWS``,
    col along the table from the head rail, row across from the left rail) to a Rate.
    """

    def __init__(
        self,
        cells: Mapping[tuple[int, int], Any],
        ascii_only: bool = False,
        rows: int | None = None,
        max_height: int | None = None,
        grid: tuple[int, int] | None = None,
    ) -> None:
        self.cells = dict(cells)
        self.ascii_only = ascii_only
        self.rows = rows
        self.max_height = max_height
        if grid is None:
            from ..core.coach import ZONE_COLS, ZONE_ROWS

            grid = (ZONE_COLS, ZONE_ROWS)
        self.grid = grid

    def lines(self, width: int, height: int | None = None) -> list[Text]:
        view = TableView(Picture(), self.ascii_only, self.rows, self.max_height, margin=0.0)
        fitted, _ = view.fit(width, height if height is not None else self.max_height)
        rows = int(fitted)  # whole rows a diamond: this picture is never zoomed out
        cw = 2 * rows
        ncols, nrows = self.grid
        span_c = 8 * cw + 1  # cloth columns 0..8*cw
        span_r = 4 * rows + 1
        shading: dict[tuple[int, int], str] = {}
        colours: dict[tuple[int, int], str] = {}

        def bounds(i: int, n: int, span: int) -> tuple[int, int]:
            a = round(i * (span - 1) / n)
            b = round((i + 1) * (span - 1) / n) - (0 if i == n - 1 else 1)
            return a, b

        for (col, row), r in self.cells.items():
            if r.rate is None or not (0 <= col < ncols and 0 <= row < nrows):
                continue
            ch, colour = band(r.rate)
            c0, c1 = bounds(col, ncols, span_c)
            r0, r1 = bounds(row, nrows, span_r)
            for rr in range(r0, r1 + 1):
                for cc in range(c0, c1 + 1):
                    shading[(cc, rr)] = ch
                    colours[(cc, rr)] = colour
            pct = round(100 * r.rate)
            label = f"{pct}%" if (c1 - c0 + 1) >= len(f"{pct}%") + 2 else f"{pct}"
            count = f"n{r.attempts}"
            mid_r = (r0 + r1) // 2
            texts = [(mid_r, label)]
            if r1 > r0:
                texts = [(mid_r, label), (mid_r + 1, count)]
            for rr, t in texts:
                if len(t) > c1 - c0 + 1:
                    continue
                start = c0 + (c1 - c0 + 1 - len(t)) // 2
                for k, chr_ in enumerate(t):
                    shading[(start + k, rr)] = chr_
        view.rows = rows
        view.picture.shading = shading
        out = view.lines(width, height if height is not None else self.max_height)
        if not self.ascii_only:
            ox, oy = 4, 2  # TableView's origin for the table-only extent
            for (cc, rr), colour in colours.items():
                line = oy + rr
                col = ox + cc
                if line < len(out) and col < len(out[line].plain):
                    out[line].stylize(Style(bgcolor=colour, color="white", bold=True), col, col + 1)
        return out

    def __rich_console__(self, console: Console, options: ConsoleOptions) -> RenderResult:
        height = options.height if options.height is not None else self.max_height
        for line in self.lines(options.max_width, height):
            yield from line.render(console)
            yield Segment.line()

    def plain(self, width: int = 100, height: int | None = None) -> str:
        """The heat map as plain text, for tests and ASCII output."""
        return "\n".join(t.plain for t in self.lines(width, height))
