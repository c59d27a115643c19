"""Tests for zones, zone posteriors (tablecoach.core.coach) and the scheduler (core.scheduler)."""

from __future__ import annotations

import math
from datetime import UTC, datetime

import numpy as np
import pytest
from scipy import stats

from tablecoach.core import coach, scheduler, shots, strokes
from tablecoach.core.aim import ideal
from tablecoach.core.records import Attempt, ShotRecord
from tablecoach.core.table import builtin_table

T9 = builtin_table("9ft")
MEDIUM = shots.SPEED_PRESETS["medium"]
"""A medium stroke as the app deals and logs it: the book's m/s of 3 lengths of travel."""


def _attempt(family: str, start: tuple[float, float], hit: bool, speed: float = MEDIUM) -> Attempt:
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
    # The contract's table is 8 x 4 diamonds (docs/coordinates.md).
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
    z = coach.zone_of(bank, MEDIUM)
    assert (z.col, z.row, z.speed) == (2, 1, "medium")
    assert z.label == "cbk x 4-6 y 1-2 medium"
    kick = ShotRecord("cue", ("right",), (1.0, 0.5), None, None, (6.0, 2.0), "k")
    # A fast stroke is 3.75 lengths of travel (shots.STROKE_LENGTHS: common practice, no
    # source); its m/s on the default table comes from the physical model (strokes.stroke_speed).
    fast = strokes.stroke_speed(T9, "fast")
    assert coach.zone_of(kick, fast) == coach.Zone("k", 0, 0, "fast")
    # A band's edge is the geometric mean of its neighbours' speeds (shots.SPEED_BANDS): a
    # speed just above medium's and fast's geometric mean is fast, just below it medium.
    edge = math.sqrt(strokes.stroke_speed(T9, "medium") * fast)
    assert coach.zone_of(kick, 1.001 * edge).speed == "fast"
    assert coach.zone_of(kick, 0.999 * edge).speed == "medium"
    # 2.55 m/s, a fast stroke in Alciatore's published bands (1.9-3.2 m/s), travels about
    # 3.1 lengths here (physics/travel.py): nearer the 3 of a medium than the 3.75 of a fast.
    assert abs(strokes.travel_lengths(T9, 2.55) - 3.0) < abs(
        strokes.travel_lengths(T9, 2.55) - 3.75
    )
    assert coach.zone_of(kick, 2.55).speed == "medium"


def test_describe_is_in_a_players_words() -> None:
    z = coach.Zone("cross-corner-bank", 2, 1, "medium")
    text = z.describe()
    assert "Cross-corner bank" in text and "object ball" in text and "4 to 6" in text


def test_beta_quantile_matches_scipy() -> None:
    # Reference: scipy.stats.beta.ppf (general-purpose reference library).
    for a, b in ((1.0, 1.0), (3.4, 6.6), (10.0, 2.0), (0.8, 5.0)):
        for q in (0.1, 0.5, 0.9):
            assert coach.beta_quantile(a, b, q) == pytest.approx(stats.beta.ppf(q, a, b), abs=1e-9)


def test_zone_stats_shrink_toward_the_family_rate() -> None:
    atts = [_attempt("one-rail-kick", (1.0, 1.5), True) for _ in range(8)]
    atts += [_attempt("one-rail-kick", (1.0, 1.5), False) for _ in range(2)]
    atts += [_attempt("one-rail-kick", (5.0, 2.5), False)]
    st = coach.zone_stats(atts, landing_error=lambda a: None)
    lone = st[coach.Zone("one-rail-kick", 2, 2, "medium")]
    busy = st[coach.Zone("one-rail-kick", 0, 1, "medium")]
    fam = (8 + 1) / (11 + 2)  # Laplace's rule of succession for the family
    assert lone.family_rate == pytest.approx(fam)
    # Conjugate update: Beta(k p, k (1 - p)) prior plus 0 of 1 made.
    k = coach.PRIOR_STRENGTH
    assert lone.mean == pytest.approx(k * fam / (k + 1))
    # one miss does not make a weak zone: pooled above the unpooled Beta(1, 1) mean of 1/3
    assert lone.mean > 1.0 / 3.0
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


# ----- the scheduler ------------------------------------------------------------------------


class _Dealt:
    """Stand-in with drills.Dealt's fields (setup, stroke, item, label)."""

    def __init__(self, setup: shots.Setup, stroke: shots.Stroke) -> None:
        self.setup, self.stroke, self.item, self.label = setup, stroke, 0, "test"


KICK = shots.PRESETS["one-rail-kick"]


def _sampler(table, drill, rng, n):  # type: ignore[no-untyped-def]
    """Random one-rail kicks, a third of them with no clean path (not checked here)."""
    out = []
    while len(out) < n:
        cue = table.to_metres(rng.uniform(0.3, 7.7), rng.uniform(0.3, 3.7))
        tb = table.to_metres(rng.uniform(0.3, 7.7), rng.uniform(0.3, 3.7))
        try:
            s = shots.make_setup(table, KICK, cue, None, None, tb)
        except ValueError:
            continue
        out.append(_Dealt(s, shots.Stroke(MEDIUM)))
    return out


def _has_clean_path(d: _Dealt) -> bool:
    try:
        ideal.solve(T9, d.setup)
    except ValueError:
        return False
    return True


def _play(sch: scheduler.Scheduler, n: int, seed: int) -> list[scheduler.Choice]:
    player = np.random.default_rng(seed)
    out = []
    for _ in range(n):
        ch = sch.next()
        out.append(ch)
        rec = shots.record_of(T9, ch.dealt.setup)
        hit = bool(player.random() < (0.3 if ch.zone.col == 1 else 0.8))
        sch.record(
            Attempt(
                datetime(2026, 1, 1, tzinfo=UTC),
                "ann",
                "9ft",
                rec,
                MEDIUM,
                0.0,
                0.0,
                "right",
                4.0,
                4.0,
                "hit" if hit else "miss",
                "left",
                4.0,
            )
        )
    return out


def test_sampler_really_deals_setups_without_a_clean_path() -> None:
    # Guard for the next test: the stand-in sampler must include bad setups.
    dealt = _sampler(T9, None, np.random.default_rng(0), 60)
    assert any(not _has_clean_path(d) for d in dealt)


def test_scheduler_never_proposes_a_setup_without_a_clean_path() -> None:
    sch = scheduler.Scheduler(T9, None, [], np.random.default_rng(1), sampler=_sampler)
    for ch in _play(sch, 40, 2):
        assert _has_clean_path(ch.dealt)
        assert sch.zone_of_dealt(ch.dealt) == ch.zone
        assert ch.why.startswith("one-rail kick from x ")


def test_scheduler_is_deterministic_for_a_seed() -> None:
    runs = []
    for _ in range(2):
        sch = scheduler.Scheduler(T9, None, [], np.random.default_rng(5), sampler=_sampler)
        runs.append([(c.zone, c.why, c.dealt.setup) for c in _play(sch, 25, 9)])
    assert runs[0] == runs[1]
    sch = scheduler.Scheduler(T9, None, [], np.random.default_rng(6), sampler=_sampler)
    other = [(c.zone, c.why, c.dealt.setup) for c in _play(sch, 25, 9)]
    assert other != runs[0]


def test_scheduler_interleaves_and_explains() -> None:
    sch = scheduler.Scheduler(T9, None, [], np.random.default_rng(3), sampler=_sampler)
    picks = _play(sch, 30, 4)
    # never the same zone twice in a row (Shea and Morgan 1979, interleaved practice)
    assert all(a.zone != b.zone for a, b in zip(picks, picks[1:], strict=False))
    assert all(c.reason in ("weak", "band", "strong", "new") for c in picks)
    tried = [c for c in picks if "made" in c.why]
    assert tried and all(" of " in c.why for c in tried)


def test_scheduler_finds_the_weak_column() -> None:
    # Zones of column 1 (x 2-4) make 30 %, the rest 80 %; after 80 attempts the coach's
    # three weakest zones must be mostly theirs, and they get more than their uniform share.
    sch = scheduler.Scheduler(T9, None, [], np.random.default_rng(11), sampler=_sampler)
    picks = _play(sch, 80, 12)
    weakest = sch.weakest(3)
    assert len(weakest) == 3 and weakest[0][1].mean <= weakest[2][1].mean
    assert sum(z.col == 1 for z, _ in weakest) >= 2
    share = sum(c.zone.col == 1 for c in picks) / len(picks)
    assert share > 0.3  # 4 of 16 cells: 25 % under uniform dealing


def test_pin_a_zone_then_a_family() -> None:
    sch = scheduler.Scheduler(T9, None, [], np.random.default_rng(8), sampler=_sampler)
    first = sch.next()
    sch.pin(zone=first.zone, count=3)
    assert sch.pinned is not None and "3 more" in sch.pinned
    pinned = [sch.next() for _ in range(3)]
    assert all(c.zone == first.zone and c.reason == "pinned" for c in pinned)
    assert "pinned" in pinned[0].why
    assert sch.pinned is None  # the pin ran out
    sch.pin(family="one-rail-kick", count=2)
    assert all(sch.next().zone.family == "one-rail-kick" for _ in range(2))
    sch.pin(family="one-rail-kick", count=5)
    sch.unpin()
    assert sch.pinned is None
    with pytest.raises(ValueError):
        sch.pin()


def test_scheduler_rejects_a_bad_band() -> None:
    with pytest.raises(ValueError, match="target band"):
        scheduler.Scheduler(T9, None, [], np.random.default_rng(0), (0.9, 0.8), sampler=_sampler)


def test_scheduler_with_a_builtin_drill() -> None:
    from tablecoach.core import drills

    pack = drills.builtin_drills()["mixed"]
    sch = scheduler.Scheduler(T9, pack, [], np.random.default_rng(2))
    fams = {sch.next().zone.family for _ in range(12)}
    assert len(fams) >= 2
    assert fams <= {item.family.name for item in pack.items}


def test_zone_stats_default_bias_is_long_or_short_on_the_ideal_model() -> None:
    # A one-rail kick logged 0.25 diamond past the mirror landing (law of reflection) is long.
    # It is a miss: a hit's stored landing is the model's own prediction, no measurement, and
    # gives no bias (calibration.evidence).
    from dataclasses import replace

    s = shots.make_setup(T9, KICK, T9.to_metres(1, 1), None, None, T9.to_metres(3, 1))
    aim = ideal.solve(T9, s)
    at = T9.along_to_diamonds(aim.landing.rail, aim.landing.at)
    reading = T9.along_to_diamonds("right", aim.reading)
    base = _attempt("one-rail-kick", (1.0, 1.0), True)
    a = replace(
        base,
        shot=shots.record_of(T9, s),
        aim_given=reading,
        aim_used=reading,
        result="miss",
        landing_rail=aim.landing.rail,
        landing_at=at + 0.25,
    )
    st = coach.zone_stats([a, a])
    (z,) = st
    assert st[z].bias == pytest.approx(0.25, abs=1e-4) and st[z].bias_n == 2
    assert coach.zone_stats([replace(a, result="hit")])[z].bias is None


def test_why_names_a_zone_speed_band_as_the_player_at_this_table_reads_it() -> None:
    # Zones file attempts by m/s bands named after the default table's strokes. On the 9-ft
    # default a band keeps its stroke name; on a 7-ft table the band filed as "fast" holds
    # speeds that table calls power (strokes.speed_name by lengths of travel, its own check),
    # so the coach's Why line gives the band's m/s range instead of a name that would
    # contradict the card's stroke.
    t7 = builtin_table("7ft")
    on9 = scheduler.Scheduler(T9, None, [], np.random.default_rng(1), sampler=_sampler)
    on7 = scheduler.Scheduler(t7, None, [], np.random.default_rng(1), sampler=_sampler)
    lo, hi = shots.SPEED_BANDS["fast"]
    assert strokes.speed_name(math.sqrt(lo * hi), t7) != "fast"
    assert on9.band_words("fast") == "fast"
    assert on7.band_words("fast") == f"{lo:.1f}-{hi:.1f} m/s"
    assert on7.band_words("medium") == "medium"
