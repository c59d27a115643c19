"""The table picture on the practice screen: balls, path, aim and convergence point."""

from __future__ import annotations

from dataclasses import replace

from rich.text import Text
from textual.strip import Strip
from textual.widget import Widget

from tablecoach.core.shots import Aim, Convergence, Setup
from tablecoach.core.table import TableSpec
from tablecoach.render.table_view import Picture, TableView, legend_text, picture_for_aim


def picture_of(
    table: TableSpec, setup: Setup | None, aim: Aim | None, conv: Convergence | None
) -> Picture:
    """The picture of a solved aim, or of the balls alone while the aim is being solved."""
    if aim is not None:
        return picture_for_aim(table, aim, conv)
    if setup is None:
        return Picture()

    def d(p: tuple[float, float] | None) -> tuple[float, float] | None:
        return None if p is None else table.to_diamonds(*p)

    return Picture(
        cue=d(setup.cue),
        obj=d(setup.object),
        target_ball=d(setup.target_ball),
        pocket_target=setup.pocket,
    )


MAX_ROWS = 6
"""The table grows with the terminal up to 6 rows (12 columns) a diamond."""


def draw(picture: Picture, ascii_only: bool, width: int, height: int) -> list[Text]:
    """The picture as lines for a panel of this size (safe to call in a worker thread).

    A card with a convergence point always shows it: the drawing zooms out (to the largest
    scale, in half steps, that takes the table and the point) rather than leave the point as
    an arrow at the edge; the aim line is drawn on to it."""
    if picture.convergence is not None and not picture.zoom_out:
        picture = replace(picture, zoom_out=True)
    view = TableView(picture, ascii_only=ascii_only, max_height=height, max_rows=MAX_ROWS)
    return view.lines(width, height)


class TablePanel(Widget):
    """Draws the current setup with the renderer shared with the command line.

    Drawing a picture takes a good part of a frame, so a setup dealt ahead can bring its
    lines drawn in the worker (``show(..., lines=)``); they are used when the size matches.
    """

    DEFAULT_CSS = """
    TablePanel { height: 1fr; }
    """

    def __init__(self, ascii_only: bool = False, id: str | None = None) -> None:
        super().__init__(id=id)
        self.ascii_only = ascii_only
        self._picture = Picture()
        self._note = ""
        self._lines: tuple[tuple[int, int], list[Text]] | None = None
        self._strips: tuple[tuple[int, int], list[Strip]] | None = None

    def drawing_size(self) -> tuple[int, int]:
        """The width and height the picture is drawn at (one line is kept for the legend)."""
        return (max(self.content_size.width, 20), max(self.content_size.height - 1, 4))

    def show(
        self,
        table: TableSpec,
        setup: Setup | None,
        aim: Aim | None,
        conv: Convergence | None,
        note: str = "",
        lines: tuple[tuple[int, int], list[Text]] | None = None,
        picture: Picture | None = None,
    ) -> None:
        self._picture = picture if picture is not None else picture_of(table, setup, aim, conv)
        self._note = note
        self._lines = lines
        self._strips = None
        self.refresh()

    def render_line(self, y: int) -> Strip:
        """One row of the picture (the line API: the drawn rows are kept as strips)."""
        width = self.content_size.width
        if self._strips is None or self._strips[0] != (width, self.content_size.height):
            self._strips = ((width, self.content_size.height), self._build(width))
        strips = self._strips[1]
        if y < len(strips):
            return strips[y]
        return Strip.blank(width)

    def _build(self, width: int) -> list[Strip]:
        size = self.drawing_size()
        if self._lines is not None and self._lines[0] == size:
            lines = self._lines[1]
        else:
            lines = draw(self._picture, self.ascii_only, *size)
            self._lines = (size, lines)
        if self._note:
            foot = Text(self._note, style="italic")
        else:
            foot = legend_text(self.ascii_only, width, self._picture)
        console = self.app.console
        out = []
        for line in [*lines, foot]:
            segments = list(line.render(console))
            out.append(Strip(segments).crop_extend(0, width, None))
        return out
