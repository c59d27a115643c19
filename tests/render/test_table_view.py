"""The text table: proportions, fitting, ASCII fallback and the convergence marker."""

import pytest

from tablecoach.core import aim as aims
from tablecoach.core import shots
from tablecoach.core.aim import ideal
from tablecoach.core.table import builtin_table
from tablecoach.render.table_view import ASCII, UNICODE, TableView, picture_for_aim

T = builtin_table("9ft")
m = T.to_metres


def _view(name="cross-corner-bank", ascii_only=False, **kw):
    fam = shots.preset(name)
    if fam.travel == "cue":
        s = shots.make_setup(T, fam, m(1, 1), target_ball=m(3, 1))
    else:
        s = shots.make_setup(T, fam, m(3, 1), object_ball=m(4, 2))
    aim = ideal.solve(T, s)
    conv = aims.convergence(T, s)
    return TableView(picture_for_aim(T, aim, conv), ascii_only=ascii_only, **kw)


def _frame(lines, pocket):
    rows = [i for i, line in enumerate(lines) if line.strip().startswith(pocket)]
    return rows[0], rows[-1]


@pytest.mark.parametrize("width,height", [(100, 30), (120, 40), (200, 60), (80, 24)])
def test_fits_the_terminal(width, height):
    lines = _view().plain(width, height).splitlines()
    assert len(lines) <= height
    assert max(len(line) for line in lines) <= width


def test_a_diamond_is_as_long_across_as_along():
    # True proportion: with cells about twice as tall as wide, a diamond spans 2k columns and
    # k rows, so the frame is 8 diamonds x 2k wide and 4 diamonds x k tall (common practice for
    # terminal cells, no source).
    for rows in (1, 2, 3, 4):
        v = _view(rows=rows)
        lines = v.plain(200, 80).splitlines()
        top, bottom = _frame(lines, UNICODE.pocket)
        left = lines[top].index(UNICODE.pocket)
        right = lines[top].rindex(UNICODE.pocket)
        assert bottom - top - 2 == 4 * rows
        assert right - left - 2 == 8 * 2 * rows


def test_ascii_mode_uses_only_ascii():
    text = _view(ascii_only=True).plain(100, 30)
    assert all(ord(ch) < 128 for ch in text)
    for ch in (ASCII.cue, ASCII.obj, ASCII.path):
        assert ch in text


def test_convergence_point_drawn_in_the_margin_when_it_fits():
    text = _view().plain(200, 80)
    assert UNICODE.convergence in text


def test_convergence_arrow_at_the_edge_when_it_does_not_fit():
    text = _view().plain(100, 24)
    assert UNICODE.convergence not in text
    assert any(a in text for a in UNICODE.arrows.values())


def test_aim_marker_and_diamond_numbers():
    text = _view().plain(120, 40)
    assert UNICODE.aim["right"] in text  # the cross-corner bank aims over the right rail
    for k in range(9):
        assert str(k) in text


@pytest.mark.parametrize("width,height", [(62, 19), (44, 13), (75, 29)])
def test_zoomed_out_the_point_is_drawn_where_it_lies(width, height):
    # the table panel's drawing sizes at 100x30, 80x24 and 120x40: zoomed out, the largest
    # scale (in half steps) that takes the point is used, and the point's glyph sits at its
    # place in true proportion to the frame (common practice for terminal cells, no source)
    from dataclasses import replace

    for name in ("cross-corner-bank", "three-rail-kick", "one-rail-kick"):
        v = _view(name)
        v.picture = replace(v.picture, zoom_out=True)
        x, y = v.picture.convergence
        assert not (0 <= x <= 8 and 0 <= y <= 4)  # off the table
        lines = v.plain(width, height).splitlines()
        assert len(lines) <= height and max(len(line) for line in lines) <= width
        top, bottom = _frame(lines, UNICODE.pocket)
        left, right = lines[top].index(UNICODE.pocket), lines[top].rindex(UNICODE.pocket)
        cw, rh = (right - left - 2) / 8, (bottom - top - 2) / 4
        assert cw == 2 * rh and rh >= 1
        found = [(i, j) for i, r in enumerate(lines) for j, ch in enumerate(r)
                 if ch == UNICODE.convergence]  # fmt: skip
        assert len(found) == 1, name
        (i, j) = found[0]
        assert abs(i - (top + 1 + y * rh)) <= 0.5 and abs(j - (left + 1 + x * cw)) <= 0.5, name
        assert not any(a in "\n".join(lines) for a in UNICODE.arrows.values())


def test_zoomed_out_a_half_step_scale_is_used_when_a_whole_one_leaves_the_point_off():
    # a three-rail kick's point 4.6 diamonds beyond the right rail (y 8.64): at 62 x 19 cells,
    # 2 rows a diamond need 2 + 18 + 1 = 21 rows with the point, 1.5 rows need 16; the frame
    # is then 24 x 6 cells inside
    from dataclasses import replace

    v = _view("three-rail-kick")
    v.picture = replace(v.picture, zoom_out=True)
    rows, _ = v.fit(62, 19)
    assert rows == 1.5
    lines = v.plain(62, 19).splitlines()
    top, bottom = _frame(lines, UNICODE.pocket)
    assert bottom - top - 2 == 6
    assert lines[top].rindex(UNICODE.pocket) - lines[top].index(UNICODE.pocket) - 2 == 24
