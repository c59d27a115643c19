"""The table picture on the practice screen: balls, path, aim and convergence point."""

from __future__ import annotations

from rich.console import RenderableType
from rich.text import Text
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


class TablePanel(Widget):
    """Draws the current setup with the renderer shared with the command line."""

    DEFAULT_CSS = """
    TablePanel { height: 1fr; }
    """

    def __init__(self, ascii_only: bool = False, id: str | None = None) -> None:  # noqa: A002
        super().__init__(id=id)
        self.ascii_only = ascii_only
        self._picture = Picture()
        self._note = ""

    def show(
        self,
        table: TableSpec,
        setup: Setup | None,
        aim: Aim | None,
        conv: Convergence | None,
        note: str = "",
    ) -> None:
        self._picture = picture_of(table, setup, aim, conv)
        self._note = note
        self.refresh()

    def render(self) -> RenderableType:
        from rich.console import Group

        height = max(self.content_size.height - 1, 4)
        view = TableView(self._picture, ascii_only=self.ascii_only, max_height=height)
        foot = Text(self._note, style="italic") if self._note else legend_text(self.ascii_only)
        return Group(view, foot)
