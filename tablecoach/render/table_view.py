"""The table in text: a Rich renderable with rails, diamonds, pockets, balls, path and aim.

Drawn in true proportion: a diamond is the same length along and across the table, and a
terminal cell is about twice as tall as it is wide, so a diamond is ``2 * rows`` columns wide and
``rows`` rows tall. The head rail is on the left of the picture and the foot rail on the right;
the left rail (y = 0) runs along the top, as seen by a player standing at the head rail.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Iterable, Sequence
from dataclasses import dataclass, field

from rich.console import Console, ConsoleOptions, RenderResult
from rich.segment import Segment
from rich.style import Style
from rich.text import Text

Point = tuple[float, float]  # diamonds


@dataclass(frozen=True)
class Glyphs:
    """The characters of one drawing style."""

    h: str
    v: str
    corner: str
    pocket: str
    sight: str
    path: str
    extension: str
    contact: str
    cue: str
    obj: str
    target: str
    convergence: str
    arrows: dict[str, str] = field(default_factory=dict)
    aim: dict[str, str] = field(default_factory=dict)
    parallel: str = "∥"  # a reference line slid parallel (render/shift_view.py)
    turned: str = "∘"  # the line turned about the convergence point
    softer: str = "╌"  # the same reading at the next softer named stroke
    firmer: str = "┅"  # and at the next firmer one


UNICODE = Glyphs(
    h="═",
    v="║",
    corner="╬",
    pocket="◙",
    sight="◆",
    path="•",
    extension="·",
    contact="✕",
    cue="○",
    obj="●",
    target="◉",
    convergence="✚",
    arrows={"up": "↑", "down": "↓", "left": "←", "right": "→"},
    aim={"left": "▼", "right": "▲", "head": "▶", "foot": "◀"},
)

ASCII = Glyphs(
    h="=",
    v="|",
    corner="+",
    pocket="@",
    sight="+",
    path="*",
    extension=".",
    contact="x",
    cue="C",
    obj="O",
    target="T",
    convergence="X",
    arrows={"up": "X", "down": "X", "left": "X", "right": "X"},  # at the edge toward it
    aim={"left": "v", "right": "^", "head": ">", "foot": "<"},
    parallel="'",
    turned="~",
    softer="-",
    firmer="#",
)

STYLES = {
    "cloth": Style(color="green"),
    "rail": Style(color="rgb(150,110,60)"),
    "sight": Style(color="white", bold=True),
    "number": Style(color="bright_black"),
    "pocket": Style(color="bright_black", bold=True),
    "path": Style(color="yellow", bold=True),
    "extension": Style(color="yellow", dim=True),
    "contact": Style(color="bright_yellow", bold=True),
    "cue": Style(color="bright_white", bold=True),
    "obj": Style(color="bright_red", bold=True),
    "target": Style(color="bright_magenta", bold=True),
    "convergence": Style(color="bright_cyan", bold=True),
    "aim": Style(color="bright_cyan", bold=True),
    "parallel": Style(color="bright_red"),
    "turned": Style(color="bright_cyan"),
    "softer": Style(color="bright_blue"),
    "firmer": Style(color="bright_magenta"),
    "heat": Style(),
}


@dataclass
class Picture:
    """What to draw, all in diamonds (contract coordinates)."""

    cue: Point | None = None
    obj: Point | None = None
    target_ball: Point | None = None
    pocket_target: str | None = None
    path: Sequence[Point] = ()
    contacts: Sequence[Point] = ()
    extension: Sequence[Point] = ()  # the aim line carried on toward the convergence point
    convergence: Point | None = None
    aim_rail: str | None = None
    aim_reading: float | None = None
    shading: dict[tuple[int, int], str] = field(default_factory=dict)  # cell -> char
    parallel: Sequence[Point] = ()  # a reference line slid parallel to this start, its path
    turned: Sequence[Point] = ()  # the line turned about the convergence point, its path
    zoom_out: bool = False  # draw smaller rather than leave the convergence point off
    softer: Sequence[Point] = ()  # the aim's reading at the next softer named stroke
    firmer: Sequence[Point] = ()  # and at the next firmer one


ZOOM_MARGIN = 12.0
"""How many diamonds beyond the rails a zoomed-out drawing reaches for the convergence point;
a point farther out (lines that are nearly parallel) gets an arrow at the edge."""


def _near(x: float) -> int:
    """The cell of a position (halves round up, the same way on every axis)."""
    return math.floor(x + 0.5)


POCKET_DIAMONDS: dict[str, Point] = {
    "head-left": (0.0, 0.0),
    "side-left": (4.0, 0.0),
    "foot-left": (8.0, 0.0),
    "head-right": (0.0, 4.0),
    "side-right": (4.0, 4.0),
    "foot-right": (8.0, 4.0),
}


class TableView:
    """A Rich renderable of one table picture.

    ``rows`` fixes the rows per diamond (columns are twice that); by default the largest scale
    that fits the width (and ``max_height`` if given) is used, from 1 to ``max_rows`` (4 unless
    given) rows a diamond.
    ``margin`` is how many diamonds beyond the rails may be drawn to show the convergence
    point; when it lies farther out, an arrow at the edge points to it.
    """

    def __init__(
        self,
        picture: Picture,
        ascii_only: bool = False,
        rows: int | None = None,
        max_height: int | None = None,
        margin: float = 5.0,
        max_rows: int = 4,
    ) -> None:
        self.picture = picture
        self.glyphs = ASCII if ascii_only else UNICODE
        self.rows = rows
        self.max_height = max_height
        self.margin = margin
        self.max_rows = max(1, int(max_rows))

    # ----- layout ------------------------------------------------------------------------
    def _extent(self) -> tuple[float, float, float, float]:
        """The region to draw in diamonds: (x0, x1, y0, y1), the table plus room for the
        convergence point when it is within the margin (``ZOOM_MARGIN`` when zoomed out)."""
        x0, x1, y0, y1 = 0.0, 8.0, 0.0, 4.0
        c = self.picture.convergence
        m = max(self.margin, ZOOM_MARGIN) if self.picture.zoom_out else self.margin
        if c is not None and -m <= c[0] <= 8 + m and -m <= c[1] <= 4 + m:
            x0, x1 = min(x0, c[0]), max(x1, c[0])
            y0, y1 = min(y0, c[1]), max(y1, c[1])
        return x0, x1, y0, y1

    @staticmethod
    def _canvas(rows: float, ext: tuple[float, float, float, float]) -> tuple[int, int, int, int]:
        """(ox, oy, W, H): the cell of the table's corner (0, 0) and the canvas size for this
        scale and extent: 3 label columns and a frame column left of the table, a label row
        and the frame above it, the same right and below; a point beyond them gets its cell
        and no more."""
        x0, x1, y0, y1 = ext
        cw = 2 * rows
        ox = max(4, math.ceil(-x0 * cw)) if x0 < 0 else 4
        oy = max(2, math.ceil(-y0 * rows)) if y0 < 0 else 2
        w = max(ox + math.ceil(8 * cw) + 5, ox + math.ceil(x1 * cw) + 1)
        h = max(oy + math.ceil(4 * rows) + 3, oy + math.ceil(y1 * rows) + 1)
        return ox, oy, w, h

    def _size(self, rows: float, ext: tuple[float, float, float, float]) -> tuple[int, int]:
        _, _, w, h = self._canvas(rows, ext)
        return w, h

    def _scales(self) -> list[float]:
        """Rows a diamond to try, largest first: whole numbers, and when zoomed out half steps
        too (a diamond 3, 5, ... columns wide), so the table stays as large as the point lets
        it; 1/2 row (a table 8 x 2 cells) only as the last resort before an arrow."""
        if not self.picture.zoom_out:
            return [float(r) for r in range(self.max_rows, 0, -1)]
        return [r / 2 for r in range(2 * self.max_rows, 0, -1)]

    def fit(
        self, width: int, height: int | None
    ) -> tuple[float, tuple[float, float, float, float]]:
        """Pick rows per diamond and the drawn extent for a space of width x height cells."""
        ext_full = self._extent()
        table_only = (0.0, 8.0, 0.0, 4.0)
        if self.rows:
            for ext in (ext_full, table_only):
                w, h = self._size(self.rows, ext)
                if w <= width and (height is None or h <= height):
                    return self.rows, ext
            return self.rows, table_only
        # zoomed out, the whole extent is tried at every scale before the table alone
        order = (ext_full, table_only) if not self.picture.zoom_out else (ext_full,)
        for rows in self._scales():
            for ext in order:
                w, h = self._size(rows, ext)
                if w <= width and (height is None or h <= height):
                    return rows, ext
        if self.picture.zoom_out:
            return self.fit_table_only(width, height)
        return 1, table_only

    def fit_table_only(
        self, width: int, height: int | None
    ) -> tuple[float, tuple[float, float, float, float]]:
        """The largest scale that fits the table alone (when not even the smallest scale
        fits the convergence point in)."""
        table_only = (0.0, 8.0, 0.0, 4.0)
        for rows in range(self.max_rows, 0, -1):
            w, h = self._size(rows, table_only)
            if w <= width and (height is None or h <= height):
                return rows, table_only
        return 1, table_only

    # ----- drawing -----------------------------------------------------------------------
    def lines(self, width: int, height: int | None = None) -> list[Text]:
        """The picture as lines of styled text fitting ``width`` (and ``height``)."""
        rows, ext = self.fit(width, height if height is not None else self.max_height)
        g = self.glyphs
        cw = 2 * rows
        ox, oy, W, H = self._canvas(rows, ext)
        W = min(W, width)
        grid: list[list[tuple[str, str]]] = [[(" ", "") for _ in range(W)] for _ in range(H)]

        def put(c: int, r: int, ch: str, style: str, over: bool = True) -> None:
            if 0 <= r < H and 0 <= c < W and (over or grid[r][c][0] == " "):
                grid[r][c] = (ch, style)

        def cell(p: Point) -> tuple[int, int]:
            return (_near(ox + p[0] * cw), _near(oy + p[1] * rows))

        left, right = ox - 1, ox + _near(8 * cw) + 1
        top, bottom = oy - 1, oy + _near(4 * rows) + 1
        # cloth and shading
        for r in range(top + 1, bottom):
            for c in range(left + 1, right):
                put(c, r, " ", "cloth")
        for (c, r), ch in self.picture.shading.items():
            put(ox + c, oy + r, ch, "heat")
        # rails with sights
        for c in range(left, right + 1):
            put(c, top, g.h, "rail")
            put(c, bottom, g.h, "rail")
        for r in range(top, bottom + 1):
            put(left, r, g.v, "rail")
            put(right, r, g.v, "rail")
        for k in range(9):
            c = ox + _near(k * cw)
            if k not in (0, 4, 8):  # no sight at a pocket
                put(c, top, g.sight, "sight")
                put(c, bottom, g.sight, "sight")
            label = str(k)
            put(c, top - 1, label, "number")
            put(c, bottom + 1, label, "number")
        for k in range(5):
            r = oy + _near(k * rows)
            if k not in (0, 4):
                put(left, r, g.sight, "sight")
                put(right, r, g.sight, "sight")
            put(left - 2, r, str(k), "number")
            put(right + 2, r, str(k), "number")
        for name, (px, py) in POCKET_DIAMONDS.items():
            c = left if px == 0 else right if px == 8 else ox + _near(4 * cw)
            r = top if py == 0 else bottom
            style = "target" if name == self.picture.pocket_target else "pocket"
            put(c, r, g.pocket, style)
        # extension toward the convergence point, then the path over it
        self._polyline(self.picture.extension, cell, put, g.extension, "extension", over=False)
        pic = self.picture
        self._polyline(pic.parallel, cell, put, g.parallel, "parallel", over=True, inside=True)
        self._polyline(pic.turned, cell, put, g.turned, "turned", over=True, inside=True)
        self._polyline(pic.softer, cell, put, g.softer, "softer", over=True, inside=True)
        self._polyline(pic.firmer, cell, put, g.firmer, "firmer", over=True, inside=True)
        self._polyline(self.picture.path, cell, put, g.path, "path", over=True, inside=True)
        for p in self.picture.contacts:
            c, r = cell(p)
            put(c, r, g.contact, "contact")
        # aim marker on the first rail's frame, at the reading
        if self.picture.aim_rail and self.picture.aim_reading is not None:
            rd = self.picture.aim_reading
            rail = self.picture.aim_rail
            if rail == "left":
                put(_near(ox + rd * cw), top - 1, g.aim["left"], "aim")
            elif rail == "right":
                put(_near(ox + rd * cw), bottom + 1, g.aim["right"], "aim")
            elif rail == "head":
                put(left - 1, _near(oy + rd * rows), g.aim["head"], "aim")
            else:
                put(right + 1, _near(oy + rd * rows), g.aim["foot"], "aim")
        # balls last
        balls: tuple[tuple[Point | None, str, str], ...] = (
            (self.picture.target_ball, g.target, "target"),
            (self.picture.obj, g.obj, "obj"),
            (self.picture.cue, g.cue, "cue"),
        )
        for ball, ch, style in balls:
            if ball is not None:
                c, r = cell(ball)
                put(c, r, ch, style)
        # convergence point or an arrow toward it
        cp = self.picture.convergence
        if cp is not None:
            c, r = cell(cp)
            if 0 <= c < W and 0 <= r < H:
                put(c, r, g.convergence, "convergence")
            else:
                cc, rr = min(max(c, 0), W - 1), min(max(r, 0), H - 1)
                for dc in (0, 1, -1, 2, -2):  # beside a number or marker, not over it
                    if 0 <= cc + dc < W and grid[rr][cc + dc][0] == " ":
                        cc += dc
                        break
                if r >= H:
                    arrow = g.arrows["down"]
                elif r < 0:
                    arrow = g.arrows["up"]
                elif c >= W:
                    arrow = g.arrows["right"]
                else:
                    arrow = g.arrows["left"]
                put(cc, rr, arrow, "convergence")
        out = []
        for row in grid:
            t = Text(no_wrap=True, overflow="crop")
            for ch, style in row:
                t.append(ch, STYLES.get(style) if style else None)
            t.rstrip()
            out.append(t)
        return out

    def _polyline(
        self,
        pts: Sequence[Point],
        cell: Callable[[Point], tuple[int, int]],
        put: Callable[..., None],
        ch: str,
        style: str,
        over: bool,
        inside: bool = False,
    ) -> None:
        for a, b in zip(pts, pts[1:], strict=False):
            ca, cb = cell(a), cell(b)
            n = max(abs(cb[0] - ca[0]), abs(cb[1] - ca[1]), 1) * 2
            for i in range(n + 1):
                t = i / n
                p = (a[0] + (b[0] - a[0]) * t, a[1] + (b[1] - a[1]) * t)
                if inside and not (-0.01 <= p[0] <= 8.01 and -0.01 <= p[1] <= 4.01):
                    continue
                c, r = cell(p)
                put(c, r, ch, style, over)

    def __rich_console__(self, console: Console, options: ConsoleOptions) -> RenderResult:
        height = options.height if options.height is not None else self.max_height
        lines = self.lines(options.max_width, height)
        for line in lines:
            yield from line.render(console)
            yield Segment.line()

    def plain(self, width: int = 100, height: int | None = None) -> str:
        """The picture as plain text (no styles), for tests and ASCII output."""
        return "\n".join(t.plain for t in self.lines(width, height))


def legend(
    ascii_only: bool = False, picture: Picture | None = None
) -> Iterable[tuple[str, str, str]]:
    """(glyph, style, meaning) for the symbols used; with ``picture``, only those it shows
    (a kick has no object ball, a bank no target ball), so a narrow key keeps the point."""
    g = ASCII if ascii_only else UNICODE
    p = picture
    entries = (
        (g.cue, "cue", "cue", p is None or p.cue is not None),
        (g.obj, "obj", "object", p is None or p.obj is not None),
        (g.target, "target", "target", p is None or p.target_ball is not None),
        (g.contact, "contact", "rail", p is None or bool(p.contacts)),
        (g.convergence, "convergence", "convergence", p is None or p.convergence is not None),
        (g.aim["left"] + g.aim["right"], "aim", "aim", p is None or p.aim_rail is not None),
    )
    return tuple((ch, style, meaning) for ch, style, meaning, shown in entries if shown)


def legend_text(
    ascii_only: bool = False, width: int | None = None, picture: Picture | None = None
) -> Text:
    """A one-line key to the symbols (of ``picture`` if given); with ``width``, only the
    entries that fit whole."""
    t = Text()
    for ch, style, meaning in legend(ascii_only, picture):
        if width is not None and t.cell_len + len(ch) + 1 + len(meaning) > width:
            break
        t.append(ch, STYLES[style])
        t.append(f" {meaning}  ")
    t.rstrip()
    return t


def picture_for_aim(table, aim, conv=None) -> Picture:  # type: ignore[no-untyped-def]
    """A Picture of a solved aim (core.shots.Aim) and its convergence (core.shots.Convergence)."""

    def d(p: Point) -> Point:
        x, y = table.to_diamonds(*p)
        return (float(x), float(y))

    s = aim.setup
    contacts = []
    for c in aim.contacts:
        unit = table.rail_unit(c.rail)
        along = c.at / unit
        r = table.ball_radius
        if c.rail == "left":
            contacts.append((along, r / table.diamond_across))
        elif c.rail == "right":
            contacts.append((along, 4 - r / table.diamond_across))
        elif c.rail == "head":
            contacts.append((r / table.diamond, along))
        else:
            contacts.append((8 - r / table.diamond, along))
    ext: list[Point] = []
    if conv is not None:
        ext = [d(s.start), d(conv.point)]
    return Picture(
        cue=d(s.cue),
        obj=d(s.object) if s.object is not None else None,
        target_ball=d(s.target_ball) if s.target_ball is not None else None,
        pocket_target=s.pocket,
        path=[d(p) for p in aim.path],
        contacts=contacts,
        extension=ext,
        convergence=d(conv.point) if conv is not None else None,
        aim_rail=aim.rail,
        aim_reading=table.along_to_diamonds(aim.rail, aim.reading),
    )
