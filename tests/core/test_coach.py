"""Tests for zones, zone posteriors and the scheduler (tablecoach.core.coach)."""

from __future__ import annotations

from datetime import UTC, datetime

import numpy as np
import pytest
from scipy import stats

from tablecoach.core import coach, shots
from tablecoach.core.records import Attempt, ShotRecord
from tablecoach.core.table import builtin_table

T9 = builtin_table("9ft")


def _attempt(family: str, start: tuple[float, float], hit: bool, speed: float = 1.4) -> Attempt:
    fam = shots.PRESETS[family]
    if fam.travel == "object":
        shot = ShotRecord("object", fam.rails, (1.0, 1.0), start, fam.pocket, None, family)
    else:
        shot = ShotRecord("cue", fam.rails, start, None, None, (6.0, 2.0), family)
    return Attempt(
        datetime(2026, 1, 1, tzinfo=UTC),
        "ann",
        "9ft",
        shot,
        speed,
        0.0,
        0.0,
        fam.rails[0],
        4.0,
        4.0,
        "hit" if hit else "miss",
        "left",
        5.0,
    )


def test_grid_has_sixteen_cells_covering_the_table() -> None:
    # The contract's table is 8 x 4 diamonds (DESIGN.md, coordinates).
    cells = {coach.cell_of(x + 0.5, y + 0.5) for x in range(8) for y in range(4)}
    assert len(cells) == coach.ZONE_COLS * coach.ZONE_ROWS == 16
    area = 0.0
    for col, row in cells:
        (x0, x1), (y0, y1) = coach.zone_bounds(coach.Zone("f", col, row, "medium"))
        area += (x1 - x0) * (y1 - y0)
    assert area == pytest.approx(32.0)


def test_far_edges_belong_to_the_last_cell() -> None:
    assert coach.cell_of(8.0, 4.0) == (coach.ZONE_COLS - 1, coach.ZONE_ROWS - 1)
    assert coach.cell_of(0.0, 0.0) == (0, 0)
    assert coach.cell_of(2.0, 1.0) == (1, 1)


def test_zone_of_uses_the_travelling_ball_and_speed_band() -> None:
    bank = ShotRecord("object", ("right",), (1.0, 0.5), (5.0, 1.5), "foot-left", None, "cbk")
    z = coach.zone_of(bank, 1.4)
    assert (z.col, z.row, z.speed) == (2, 1, "medium")
    assert z.label == "cbk x 4-6 y 1-2 medium"
    kick = ShotRecord("cue", ("right",), (1.0, 0.5), None, None, (6.0, 2.0), "k")
    # 2.55 m/s lies in Alciatore's "fast" band 1.9-3.2 m/s
    assert coach.zone_of(kick, 2.55) == coach.Zone("k", 0, 0, "fast")


def test_describe_is_in_a_players_words() -> None:
    z = coach.Zone("cross-corner-bank", 2, 1, "medium")
    text = z.describe()
    assert "Cross-corner bank" in text and "object ball" in text and "4 to 6" in text


def test_beta_quantile_matches_scipy() -> None:
    # Reference: scipy.stats.beta.ppf (general-purpose reference library).
    for a, b in ((1.0, 1.0), (3.4, 6.6), (10.0, 2.0), (0.8, 5.0)):
        for q in (0.1, 0.5, 0.9):
            assert coach.beta_quantile(a, b, q) == pytest.approx(stats.beta.ppf(q, a, b), abs=2e-3)


def test_zone_stats_shrink_toward_the_family_rate() -> None:
    atts = [_attempt("one-rail-kick", (1.0, 1.5), True) for _ in range(8)]
    atts += [_attempt("one-rail-kick", (1.0, 1.5), False) for _ in range(2)]
    atts += [_attempt("one-rail-kick", (5.0, 2.5), False)]
    st = coach.zone_stats(atts, landing_error=lambda a: None)
    lone = st[coach.Zone("one-rail-kick", 2, 2, "medium")]
    busy = st[coach.Zone("one-rail-kick", 0, 1, "medium")]
    fam = (8 + 1) / (11 + 2)  # Laplace's rule of succession for the family
    assert lone.family_rate == pytest.approx(fam)
    # Conjugate update: Beta(4 p, 4 (1 - p)) prior plus 0 of 1 made.
    assert lone.mean == pytest.approx(4 * fam / 5)
    assert lone.mean > 0.5  # one miss does not make a weak zone
    assert busy.record == "8 of 10 made"
    assert busy.low < busy.mean < busy.high
    assert stats.beta.ppf(0.1, busy.alpha, busy.beta) == pytest.approx(busy.low, abs=2e-3)


def test_zone_stats_landing_bias_is_the_mean_error() -> None:
    atts = [_attempt("one-rail-kick", (1.0, 1.5), True) for _ in range(3)]
    errs = iter([0.1, 0.2, 0.6])
    st = coach.zone_stats(atts, landing_error=lambda a: next(errs))
    z = st[coach.Zone("one-rail-kick", 0, 1, "medium")]
    assert z.bias == pytest.approx(0.3) and z.bias_n == 3


def test_sampling_is_deterministic_for_a_seed() -> None:
    s = coach.stats_for(3, 9, 0.6)
    a = [s.sample(np.random.default_rng(7)) for _ in range(3)]
    assert a[0] == a[1] == a[2]
