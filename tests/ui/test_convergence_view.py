"""The convergence point on the practice screen without a reference line (issue 10, item 3):
when it lies off the table the drawing zooms out so the point and the aim line through it show,
never only an arrow at the edge."""

from __future__ import annotations

import pytest

from tablecoach.render.table_view import UNICODE
from tablecoach.ui.widgets.table_panel import TablePanel

from .test_practice import settle


def panel_text(app) -> str:
    """What the table panel shows, row by row (its lines as drawn on screen)."""
    panel = app.screen.query_one(TablePanel)
    return "\n".join(panel.render_line(y).text for y in range(panel.content_size.height))


def point_where_it_lies(app, rows: list[str], glyph: str, pocket: str) -> bool:
    """Whether ``glyph`` is drawn at the convergence point's place, in true proportion to the
    table's frame found on screen (its corner pockets): a diamond is as many rows as half its
    columns (the drawing's rule, render/table_view.py; common practice for terminal cells)."""
    table, conv = app.screen.session.table, app.screen.conv
    x, y = table.to_diamonds(*conv.point)
    frame = [i for i, r in enumerate(rows) if r.lstrip().startswith(pocket)]
    top, bottom = frame[0], frame[-1]
    left, right = rows[top].index(pocket), rows[top].rindex(pocket)
    cw, rh = (right - left - 2) / 8, (bottom - top - 2) / 4
    assert cw == 2 * rh  # the frame itself in true proportion
    col, row = left + 1 + x * cw, top + 1 + y * rh
    found = [(i, j) for i, r in enumerate(rows) for j, ch in enumerate(r) if ch == glyph]
    return any(abs(i - row) <= 1 and abs(j - col) <= 1 for i, j in found)


def off_table(app) -> bool:
    """Whether the shown convergence point lies outside the table's 8 x 4 diamonds."""
    table, conv = app.screen.session.table, app.screen.conv
    x, y = table.to_diamonds(*conv.point)
    return not (0 <= x <= 8 and 0 <= y <= 4)


@pytest.mark.parametrize("size", [(100, 30), (80, 24), (120, 40)])
async def test_an_off_table_point_is_drawn_without_a_reference(make_app, size):
    # the mixed pack deals banks and one-, two- and three-rail kicks, whose points lie 2 to 6
    # diamonds beyond the rails; five setups in a row, each with its point in the drawing
    app = make_app(drill="mixed")
    async with app.run_test(size=size) as pilot:
        seen = 0
        for _ in range(5):
            await settle(pilot)
            screen = app.screen
            assert screen.shift is None  # no reference line kept in this store
            if screen.conv is None:  # too few clean lines for a point: nothing to show
                await pilot.press("n")
                continue
            assert off_table(app)
            text = panel_text(app)
            assert point_where_it_lies(app, text.splitlines(), UNICODE.convergence, UNICODE.pocket)
            assert not any(a in text for a in UNICODE.arrows.values())
            assert UNICODE.extension in text  # the aim line drawn on toward the point
            seen += 1
            await pilot.press("n")
        assert seen >= 3


async def test_the_point_is_drawn_under_the_physical_model_in_ascii(make_app, monkeypatch):
    # ASCII: the point is "X" and the arrows are "X" too, so its cell is checked: the glyph
    # sits where the point lies, beyond the frame
    app = make_app(model="physical", ascii_only=True)
    async with app.run_test(size=(100, 30)) as pilot:
        await settle(pilot)
        assert app.screen.conv is not None and off_table(app)
        rows = [r for r in panel_text(app).splitlines() if "convergence" not in r]  # no legend
        assert point_where_it_lies(app, rows, "X", "@")
        assert all(ord(ch) < 128 for ch in "".join(rows))
