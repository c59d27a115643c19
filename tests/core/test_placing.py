"""Dealt positions a player can place: the quarter (or eighth) diamond grid, frozen balls, and
positions said the way players say them."""

from __future__ import annotations

from fractions import Fraction
from pathlib import Path

import numpy as np
import pytest

from tablecoach.core import placing
from tablecoach.core.drill_packs import DrillError, load_drill
from tablecoach.core.drills import builtin_drills, deal
from tablecoach.core.table import BUILTIN_TABLES

T9 = BUILTIN_TABLES["9ft"]


def _placeable(table, v: float, axis: int, grid: int) -> bool:
    """Reference: a multiple of 1/grid (exact rational test with the stdlib's Fraction) or a
    centre one ball radius inside a cushion nose (frozen; WPA ball 2.25 in, table spec)."""
    if (
        abs(Fraction(v).limit_denominator(64) * grid % 1) == 0
        and abs(float(Fraction(v).limit_denominator(64)) - v) < 1e-12
    ):
        return True
    m = placing.frozen_margins(table)[axis]
    top = 8.0 if axis == 0 else 4.0
    return abs(v - m) < 1e-9 or abs(v - (top - m)) < 1e-9


@pytest.mark.parametrize("name", ["mixed", "one-rail-kicks"])
def test_every_dealt_position_sits_on_the_quarter_grid(name: str) -> None:
    drill = builtin_drills()[name]
    assert drill.grid == 4
    for table in (BUILTIN_TABLES["9ft"], BUILTIN_TABLES["7ft"]):
        dealt = deal(table, drill, np.random.default_rng(3), count=30)
        seen = 0
        for d in dealt:
            for p in (d.setup.cue, d.setup.object, d.setup.target_ball):
                if p is None:
                    continue
                x, y = table.to_diamonds(*p)
                assert _placeable(table, x, 0, 4), (x, y)
                assert _placeable(table, y, 1, 4), (x, y)
                seen += 1
        assert seen >= 60


def test_eighths_and_frozen_balls(tmp_path: Path) -> None:
    # a region reaching the left rail: some target balls are dealt frozen to it
    text = """\
title = "Frozen"
count = 40
grid = 8

[[item]]
family = "one-rail-kick"
[item.regions]
cue = { x = [0.8, 2.2], y = [0.6, 2.6] }
target = { x = [2.6, 3.6], y = [0.0, 0.5] }
"""
    p = tmp_path / "frozen.toml"
    p.write_text(text, encoding="utf-8")
    drill = load_drill(p)
    assert drill.grid == 8
    dealt = deal(T9, drill, np.random.default_rng(5))
    ys = [T9.to_diamonds(*d.setup.target_ball)[1] for d in dealt if d.setup.target_ball]
    frozen = placing.frozen_margins(T9)[1]
    assert any(abs(y - frozen) < 1e-9 for y in ys)
    xs = [T9.to_diamonds(*d.setup.cue)[0] for d in dealt]
    assert all(_placeable(T9, x, 0, 8) for x in xs)
    # eighths are really used (not only quarters)
    assert any(abs((x * 8) % 2 - 1) < 1e-9 for x in xs)
    for bad, msg in (("grid = 8", "grid = 3"), ("grid = 8", "repeat = 0")):
        p.write_text(text.replace(bad, msg), encoding="utf-8")
        with pytest.raises(DrillError, match="line 3: field '(grid|repeat)'"):
            load_drill(p)


def test_fraction_words() -> None:
    # the way players say sights (common practice, no source); fractions checked with Fraction
    assert placing.fraction_text(1.75) == "1 3/4"
    assert placing.fraction_text(0.5) == "1/2"
    assert placing.fraction_text(3.0) == "3"
    assert placing.fraction_text(2.375) == "2 3/8"
    assert placing.fraction_text(1.49) == "1.49"
    for k in range(33):
        v = k / 8
        text = placing.fraction_text(v)
        parts = text.split(" ")
        total = sum(Fraction(q) for q in parts)
        assert total == Fraction(k, 8)


def test_words_say_frozen_and_the_nearer_rails() -> None:
    mx, my = placing.frozen_margins(T9)
    assert placing.words(T9, 6.25, 4.0 - my) == (
        "1 3/4 from the foot rail",
        "frozen to the right rail",
    )
    assert placing.words(T9, mx, 1.5) == ("frozen to the head rail", "1 1/2 from the left rail")
    # a grid value in a narrow span that holds none: the nearest placeable grid value
    span = placing.Span(1.3, 1.4, mx, 8.0 - mx)
    assert placing.snap(span, 4, np.random.default_rng(0)) == 1.25


def test_frozen_balls_survive_the_record_on_every_table() -> None:
    # a frozen ball read back from its record (6 decimals of a diamond) is still on the table
    from tablecoach.core import shots

    for table in BUILTIN_TABLES.values():
        mx, my = placing.frozen_margins(table)
        setup = shots.make_setup(
            table,
            shots.PRESETS["one-rail-kick"],
            table.to_metres(mx, 1.5),
            None,
            None,
            table.to_metres(4.0, 4.0 - my),
        )
        back = shots.setup_of(table, shots.record_of(table, setup))
        x, y = table.to_diamonds(*back.target_ball)
        assert placing.words(table, x, y)[1] == "frozen to the right rail"


def test_aim_shift_by_hand_for_a_one_rail_kick() -> None:
    # Mirror reflection worked by hand: a one-rail kick off the right rail from (x0, y0) to a
    # target at (xt, yt); reflection lines one radius inside the noses. The aim line crosses the
    # right rail's reflection line at x = x0 + (xt - x0) * d0 / (d0 + dt), d = distance to that
    # line; the sight line sits farther out, so the reading is the line extended to it.
    from tablecoach.core import shots

    t = T9
    fam = shots.PRESETS["one-rail-kick"]
    target = t.to_metres(3.5, 1.0)
    setup = shots.make_setup(t, fam, t.to_metres(1.5, 1.0), None, None, target)

    def reading(x0: float, y0: float) -> float:
        cx, cy = t.to_metres(x0, y0)
        tx, ty = target
        line = t.width - t.ball_radius
        d0, dt = line - cy, line - ty
        hit_x = cx + (tx - cx) * d0 / (d0 + dt)
        sight = t.width + t.sight_setback
        return (cx + (hit_x - cx) * (sight - cy) / d0) / t.diamond

    base = reading(1.5, 1.0)
    moved = [reading(1.75, 1.0), reading(1.25, 1.0), reading(1.5, 1.25), reading(1.5, 0.75)]
    want = max(abs(m - base) for m in moved)
    assert placing.aim_shift(t, setup) == pytest.approx(want, abs=1e-6)


def test_table_check_positions_sit_on_the_quarter_grid() -> None:
    from tablecoach.core.calibration.check import table_check_setups

    for table in BUILTIN_TABLES.values():
        for d in table_check_setups(table):
            for p in (d.setup.cue, d.setup.object, d.setup.target_ball):
                if p is not None:
                    x, y = table.to_diamonds(*p)
                    assert _placeable(table, x, 0, 4) and _placeable(table, y, 1, 4), (x, y)
