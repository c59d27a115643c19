"""Tests for core/history.py: streaks, days in a row, Wilson intervals, weeks, landing bias."""

from __future__ import annotations

import math
from datetime import UTC, date, datetime, timedelta
from zoneinfo import ZoneInfo

import numpy as np
import pytest
from scipy.stats import binomtest

from tablecoach.core.aim import ideal
from tablecoach.core.aim.sights import direction_of
from tablecoach.core.records import Attempt, ShotRecord
from tablecoach.core.shots import (
    SPEED_BANDS,
    SPEED_PRESETS,
    make_setup,
    preset,
)
from tablecoach.core.stats.bias import landing_bias, landing_offsets, speed_bands
from tablecoach.core.stats.frame import RAIL_NAMES, ordered
from tablecoach.core.stats.history import history_dict, summarize
from tablecoach.core.stats.rates import rates_by, wilson
from tablecoach.core.stats.sessions import session_list
from tablecoach.core.stats.streaks import Streak, day_streak, streak, streaks_by
from tablecoach.core.stats.tracer import ideal_landings
from tablecoach.core.stats.trends import local_date, local_days, weekly
from tablecoach.core.stats.zones import grid_rates, zone_codes
from tablecoach.core.table import builtin_table


def att(when, result="hit", family="one-rail-kick", session=1, player="ann", **kw):
    shot = kw.pop(
        "shot",
        ShotRecord("cue", ("right",), (2.0, 1.0), None, None, (6.0, 1.0), family),
    )
    base = dict(
        when=when,
        player=player,
        table="9ft",
        shot=shot,
        # a medium stroke as the app logs it: the book's m/s of 3 lengths of travel
        speed=SPEED_PRESETS["medium"],
        english=0.0,
        follow=0.0,
        aim_rail="right",
        aim_given=4.0,
        aim_used=4.0,
        result=result,
        landing_rail="left",
        landing_at=6.0,
        session=session,
    )
    base.update(kw)
    return Attempt(**base)


# ----- streaks against a brute-force reference ------------------------------------------


def brute_streak(seq):
    """Reference: try every window; the best is the longest all-hit window, the current the
    longest all-hit suffix."""
    n = len(seq)
    best = 0
    for i in range(n):
        for j in range(i, n + 1):
            if all(seq[i:j]):
                best = max(best, j - i)
    current = 0
    for k in range(n + 1):
        if all(seq[n - k :]):
            current = k
    return best, current


def test_streak_matches_brute_force_on_random_sequences():
    rng = np.random.default_rng(20261201)
    for _ in range(400):
        n = int(rng.integers(0, 40))
        p = float(rng.uniform(0.1, 0.95))
        seq = [bool(x) for x in rng.random(n) < p]
        best, current = brute_streak(seq)
        s = streak(seq)
        assert (s.best, s.current) == (best, current), seq


def test_streaks_by_group_match_brute_force():
    rng = np.random.default_rng(7)
    t0 = datetime(2026, 11, 2, 18, 0, tzinfo=UTC)
    items = []
    for i in range(300):
        fam = ["one-rail-kick", "two-rail-kick", "cross-side-bank"][int(rng.integers(0, 3))]
        res = "hit" if rng.random() < 0.6 else "miss"
        items.append(att(t0 + timedelta(minutes=i), res, fam, session=int(i // 50)))
    hist = summarize(items, tz=UTC, zone_fn=lambda a: a.shot.family)
    for fam, s in hist.family_streaks.items():
        seq = [a.result == "hit" for a in items if a.shot.family == fam]
        assert (s.best, s.current) == brute_streak(seq)
    for sess, s in hist.session_streaks.items():
        seq = [a.result == "hit" for a in items if a.session == sess]
        assert (s.best, s.current) == brute_streak(seq)
    overall = brute_streak([a.result == "hit" for a in items])
    assert (hist.streak.best, hist.streak.current) == overall
    assert hist.zone_streaks == hist.family_streaks


def test_streak_uses_time_order_not_input_order():
    t0 = datetime(2026, 11, 2, 18, 0, tzinfo=UTC)
    items = [att(t0 + timedelta(minutes=m), r) for m, r in [(3, "hit"), (1, "miss"), (2, "hit")]]
    assert summarize(items, tz=UTC).streak == Streak(current=2, best=2)


# ----- days in a row, time zones, midnight -------------------------------------------------


def test_day_streak_brute_force():
    rng = np.random.default_rng(3)
    for _ in range(200):
        days = {date(2026, 1, 1) + timedelta(days=int(d)) for d in rng.integers(0, 30, 12)}
        s = day_streak(days, today=date(2026, 1, 31))
        # reference: count runs by walking every day of the calendar
        best = run = 0
        d = date(2026, 1, 1)
        while d <= date(2026, 1, 31):
            run = run + 1 if d in days else 0
            best = max(best, run)
            d += timedelta(days=1)
        assert s.best == best
        # run ending today, or ending yesterday while today is not yet practised
        cur = 0
        d = date(2026, 1, 31) if date(2026, 1, 31) in days else date(2026, 1, 30)
        while d in days:
            cur += 1
            d -= timedelta(days=1)
        assert s.current == cur


def test_days_counted_in_the_players_zone_across_midnight():
    la = ZoneInfo("America/Los_Angeles")
    # 23:30 and 00:30 local on consecutive Los Angeles days: both fall on one UTC day (Dec 2).
    a = att(datetime(2026, 12, 1, 23, 30, tzinfo=la).astimezone(UTC))
    b = att(datetime(2026, 12, 2, 0, 30, tzinfo=la).astimezone(UTC))
    assert a.when.date() == b.when.date()
    in_la = summarize([a, b], tz=la, today=date(2026, 12, 2))
    in_utc = summarize([a, b], tz=UTC, today=date(2026, 12, 2))
    assert in_la.days == Streak(2, 2)
    assert in_utc.days == Streak(1, 1)


def test_days_in_tokyo_split_what_utc_keeps_together():
    tokyo = ZoneInfo("Asia/Tokyo")  # UTC+9, no daylight saving
    a = att(datetime(2026, 3, 10, 14, 0, tzinfo=UTC))  # 23:00 in Tokyo on the 10th
    b = att(datetime(2026, 3, 10, 15, 30, tzinfo=UTC))  # 00:30 in Tokyo on the 11th
    assert summarize([a, b], tz=tokyo, today=date(2026, 3, 11)).days == Streak(2, 2)
    assert summarize([a, b], tz=UTC, today=date(2026, 3, 10)).days == Streak(1, 1)


def test_days_over_daylight_saving_change():
    berlin = ZoneInfo("Europe/Berlin")  # clocks go forward on 2026-03-29 (EU rule, last Sunday)
    whens = [datetime(2026, 3, d, 23, 45, tzinfo=berlin).astimezone(UTC) for d in (28, 29, 30)]
    s = summarize([att(w) for w in whens], tz=berlin, today=date(2026, 3, 30)).days
    assert s == Streak(3, 3)


def test_current_day_streak_lapses_after_a_missed_day():
    days = [date(2026, 5, 1), date(2026, 5, 2)]
    assert day_streak(days, today=date(2026, 5, 3)).current == 2  # still alive
    assert day_streak(days, today=date(2026, 5, 4)) == Streak(0, 2)


def test_default_zone_is_the_machine_local_zone():
    when = datetime(2026, 7, 4, 12, 0, tzinfo=UTC)
    assert local_date(when) == when.astimezone().date()


# ----- Wilson score intervals against scipy ------------------------------------------------


@pytest.mark.parametrize("conf", [0.8, 0.9, 0.95, 0.99])
def test_wilson_matches_scipy(conf):
    # reference: scipy.stats.binomtest(k, n).proportion_ci(method="wilson")
    rng = np.random.default_rng(11)
    cases = [(0, 1), (1, 1), (0, 10), (10, 10), (3, 7), (50, 100), (1, 1000)]
    cases += [(int(k), int(n)) for n in rng.integers(1, 500, 30) for k in [rng.integers(0, n + 1)]]
    for k, n in cases:
        ci = binomtest(k, n).proportion_ci(confidence_level=conf, method="wilson")
        r = wilson(k, n, conf)
        assert r.low == pytest.approx(ci.low, abs=1e-12), (k, n)
        assert r.high == pytest.approx(ci.high, abs=1e-12), (k, n)
        assert r.rate == pytest.approx(k / n)


def test_wilson_without_attempts_and_bad_input():
    r = wilson(0, 0)
    assert (r.rate, r.low, r.high) == (None, 0.0, 1.0)
    with pytest.raises(ValueError):
        wilson(5, 3)


def test_rates_by_family_count_every_attempt():
    t0 = datetime(2026, 11, 2, 18, 0, tzinfo=UTC)
    items = [att(t0, "hit", "a"), att(t0, "miss", "a"), att(t0, "hit", "b")]
    rates = rates_by(items, lambda a: a.shot.family)
    assert (rates["a"].hits, rates["a"].attempts) == (1, 2)
    assert (rates["b"].hits, rates["b"].attempts) == (1, 1)


# ----- weekly trends -----------------------------------------------------------------------


def test_weeks_follow_iso_8601_and_fill_gaps():
    # ISO 8601: weeks start on Monday; 2026 starts on a Thursday, so it has a week 53.
    utc = UTC
    whens = [
        datetime(2026, 12, 28, 12, tzinfo=utc),  # Monday of 2026-W53
        datetime(2027, 1, 3, 12, tzinfo=utc),  # Sunday, still 2026-W53
        datetime(2027, 1, 20, 12, tzinfo=utc),  # 2027-W03
    ]
    weeks = weekly([att(w) for w in whens], tz=utc)
    assert [w.label for w in weeks] == ["2026-W53", "2027-W01", "2027-W02", "2027-W03"]
    assert [w.rate.attempts for w in weeks] == [2, 0, 0, 1]
    for w in weeks:  # stdlib isocalendar as the reference
        assert (w.year, w.week) == w.monday.isocalendar()[:2]
        assert w.monday.weekday() == 0


def test_week_of_a_sunday_night_depends_on_the_zone():
    ny = ZoneInfo("America/New_York")
    a = att(datetime(2026, 11, 30, 2, 0, tzinfo=UTC))  # Sunday 21:00 in New York, Monday UTC
    assert weekly([a], tz=ny)[0].label == "2026-W48"
    assert weekly([a], tz=UTC)[0].label == "2026-W49"


# ----- sessions ------------------------------------------------------------------------------


def test_session_list_counts_and_orders():
    t0 = datetime(2026, 11, 2, 18, 0, tzinfo=UTC)
    items = [att(t0 + timedelta(hours=5, minutes=i), "hit", session=2) for i in range(3)]
    items += [att(t0 + timedelta(minutes=i), "miss", session=1) for i in range(4)]
    sessions = session_list(ordered(items))
    assert [s.session for s in sessions] == [1, 2]
    assert [s.rate.attempts for s in sessions] == [4, 3]
    assert sessions[1].streak == Streak(3, 3)
    assert sessions[0].end - sessions[0].start == timedelta(minutes=3)


# ----- landing bias --------------------------------------------------------------------------


def test_ideal_landing_agrees_with_the_ideal_trace():
    # Reference: ideal.trace, the project's scalar ideal trace (equal-angle reflection).
    spec = builtin_table("9ft")
    rng = np.random.default_rng(5)
    for name in ("one-rail-kick", "two-rail-kick", "three-rail-kick"):
        fam = preset(name)
        starts, readings, refs = [], [], []
        while len(refs) < 25:
            cue = (float(rng.uniform(0.5, 7.5)), float(rng.uniform(0.5, 3.5)))
            tb = (float(rng.uniform(0.5, 7.5)), float(rng.uniform(0.5, 3.5)))
            try:
                setup = make_setup(spec, fam, spec.to_metres(*cue), spec.to_metres(*tb))
                aim = ideal.solve(spec, setup)
            except ValueError:
                continue
            reading = spec.along_to_diamonds(fam.rails[0], aim.reading)
            reading += float(rng.uniform(-0.3, 0.3))

            d = direction_of(
                spec, setup.start, fam.rails[0], spec.along_to_metres(fam.rails[0], reading)
            )
            tr = ideal.trace(spec, setup, d)
            # keep traces that meet only cushion (the vectorised walk ignores pocket openings)
            if tr.landing is None or len(tr.contacts) < len(fam.rails):
                continue
            if not spec.on_cushion(tr.landing.rail, tr.landing.at):
                continue
            starts.append(cue)
            readings.append(reading)
            refs.append((tr.landing.rail, spec.along_to_diamonds(tr.landing.rail, tr.landing.at)))
        code, at, _ = ideal_landings(
            spec, np.array(starts), fam.rails, fam.rails[0], np.array(readings)
        )
        for c, x, (rail, ref_at) in zip(code, at, refs, strict=True):
            assert RAIL_NAMES[c] == rail
            assert x == pytest.approx(ref_at, abs=1e-9)


def test_one_rail_reflection_by_hand_and_sign_of_long():
    # Equal angles about the reflection line (physics: ideal elastic reflection), worked by hand:
    # start (2, 2) diamonds on a 9-ft table, aim over the right rail's sight at x = 4.
    spec = builtin_table("9ft")
    d = spec.diamond
    r = spec.ball_radius
    sx, sy = 2 * d, 2 * d
    sight_y = spec.width + spec.sight_setback
    dx, dy = 4 * d - sx, sight_y - sy
    t = (spec.width - r - sy) / dy
    cx = sx + t * dx  # contact on the right rail's reflection line
    # after the rail the ball runs back across to the left reflection line y = r
    t2 = (spec.width - 2 * r) / dy
    land_x = (cx + t2 * dx) / d
    code, at, sense = ideal_landings(
        spec, np.array([[2.0, 2.0]]), ("right",), "right", np.array([4.0])
    )
    assert RAIL_NAMES[code[0]] == "left"
    assert at[0] == pytest.approx(land_x, abs=1e-12)
    assert sense[0] == 1.0  # moving toward the foot rail along the left rail: perimeter grows
    shot = ShotRecord("cue", ("right",), (2.0, 2.0), None, None, (7.0, 1.0), "one-rail-kick")
    t0 = datetime(2026, 11, 2, 18, 0, tzinfo=UTC)
    long_one = att(t0, "miss", shot=shot, landing_at=land_x + 0.5)
    short_one = att(t0, "miss", shot=shot, landing_at=land_x - 0.25)
    off = landing_offsets([long_one, short_one])
    assert off == pytest.approx([0.5, -0.25], abs=1e-9)
    bias = landing_bias([long_one, short_one])
    assert len(bias) == 1 and bias[0].speed == "medium"
    assert bias[0].mean == pytest.approx(0.125, abs=1e-9)
    assert (bias[0].long, bias[0].short) == (1, 1)


def test_bias_counts_only_observed_landings():
    # A hit logged without a landing and a miss that stopped short carry no landing (record
    # format version 2): they get no offset and leave the bias of the seen landings unchanged.
    # Same hand-worked reflection as above (law of reflection).
    spec = builtin_table("9ft")
    code, at, _ = ideal_landings(spec, np.array([[2.0, 2.0]]), ("right",), "right", np.array([4.0]))
    shot = ShotRecord("cue", ("right",), (2.0, 2.0), None, None, (7.0, 1.0), "one-rail-kick")
    t0 = datetime(2026, 11, 2, 18, 0, tzinfo=UTC)
    seen = att(t0, "miss", shot=shot, landing_at=float(at[0]) + 0.5)
    unseen_hit = att(t0, "hit", shot=shot, landing_rail=None, landing_at=None)
    short = att(t0, "miss", shot=shot, landing_rail=None, landing_at=None, miss_kind="short")
    off = landing_offsets([seen, unseen_hit, short])
    assert off[0] == pytest.approx(0.5, abs=1e-9)
    assert math.isnan(off[1]) and math.isnan(off[2])
    bias = landing_bias([seen, unseen_hit, short])
    assert len(bias) == 1 and bias[0].attempts == 1
    assert bias[0].mean == pytest.approx(0.5, abs=1e-9)


def test_unknown_table_has_no_offset():
    t0 = datetime(2026, 11, 2, 18, 0, tzinfo=UTC)
    off = landing_offsets([att(t0, table="garage")])
    assert math.isnan(off[0])


def test_history_dict_has_the_json_contract():
    t0 = datetime(2026, 11, 2, 18, 0, tzinfo=UTC)
    items = [att(t0 + timedelta(minutes=i), r) for i, r in enumerate(["hit", "hit", "miss", "hit"])]
    d = history_dict(summarize(items, tz=UTC, zone_fn=lambda a: "z1"))
    assert (d["attempts"], d["hits"]) == (4, 3)
    assert d["streaks"]["best"] == 2 and d["streaks"]["current"] == 1
    fam = d["families"]["one-rail-kick"]
    assert (fam["attempts"], fam["hits"], fam["streaks"]["best"]) == (4, 3, 2)
    assert d["zones"]["z1"]["attempts"] == 4


# ----- the columnar engine against the one-concept functions --------------------------------


@pytest.mark.parametrize(
    "zone",
    [None, "UTC", "Europe/Berlin", "America/New_York", "Australia/Lord_Howe", "Asia/Kathmandu"],
)
def test_local_days_match_local_date(zone):
    # Reference: datetime.astimezone with the IANA tz database (zoneinfo); Lord Howe shifts by
    # half an hour for daylight saving and Kathmandu sits at +05:45, to catch hour-bucket errors.
    tz = ZoneInfo(zone) if zone else None
    rng = np.random.default_rng(17)
    start = datetime(2026, 1, 1, tzinfo=UTC).timestamp()
    ts = np.sort(start + rng.uniform(0, 365 * 86400, 4000))
    days = local_days(ts, tz)
    for t, d in zip(ts, days, strict=True):
        when = datetime.fromtimestamp(float(t), UTC)
        assert date(1970, 1, 1) + timedelta(days=int(d)) == local_date(when, tz)


@pytest.mark.parametrize("zone", ["Europe/Berlin", "Australia/Lord_Howe", "Asia/Kathmandu"])
def test_local_days_in_the_machine_zone(zone, monkeypatch):
    # tz=None reads the machine's zone from the C library: set it (TZ and time.tzset, Unix)
    # to zones with daylight saving, a half-hour shift and +05:45; reference: datetime's own
    # astimezone() of each instant (local_date with tz None)
    import time as _time

    if not hasattr(_time, "tzset"):
        pytest.skip("time.tzset is Unix only")
    monkeypatch.setenv("TZ", zone)
    _time.tzset()
    try:
        rng = np.random.default_rng(23)
        start = datetime(2026, 1, 1, tzinfo=UTC).timestamp()
        ts = np.sort(start + rng.uniform(0, 365 * 86400, 3000))
        days = local_days(ts, None)
        for t, d in zip(ts, days, strict=True):
            when = datetime.fromtimestamp(float(t), UTC)
            assert date(1970, 1, 1) + timedelta(days=int(d)) == local_date(when, None)
        # the zone took effect: some local days are not the UTC ones
        assert bool((days != np.floor(ts / 86400).astype(np.int64)).any())
    finally:
        monkeypatch.undo()
        _time.tzset()


def test_speed_bands_match_speed_name():
    from tablecoach.core.strokes import speed_name

    edges = [v for band in SPEED_BANDS.values() for v in band]
    # inside every band, on and just below every edge, and outside them all (below 0.1 m/s,
    # above 13 m/s, not a number)
    speeds = np.array(
        edges
        + [0.05, 0.1, 0.3, 1.0, 2.2, 4.0, 5.0, 12.0, 14.0, math.nan]
        + list(SPEED_PRESETS.values())
        + [e - 1e-9 for e in edges]
    )
    got = list(speed_bands(speeds))
    assert got == [speed_name(float(s)) for s in speeds]
    assert set(got) == set(SPEED_PRESETS)  # every band is a named stroke, none other


SPEEDS = [0.05, *SPEED_PRESETS.values(), *(lo for lo, _ in SPEED_BANDS.values()), 14.0]
"""The named strokes' m/s, every band's lower edge, and speeds outside all bands."""


def random_attempts(n, seed):
    rng = np.random.default_rng(seed)
    fams = ["one-rail-kick", "two-rail-kick", "cross-corner-bank"]
    t0 = datetime(2026, 9, 1, 17, 0, tzinfo=UTC)
    out = []
    for _ in range(n):
        fam = fams[int(rng.integers(0, 3))]
        cue = (float(rng.uniform(0, 8)), float(rng.uniform(0, 4)))
        obj = (float(rng.uniform(0, 8)), float(rng.uniform(0, 4)))
        if fam == "cross-corner-bank":
            shot = ShotRecord("object", ("right",), cue, obj, "foot-left", None, fam)
        else:
            shot = ShotRecord("cue", ("right",), cue, None, None, obj, fam)
        out.append(
            att(
                t0 + timedelta(hours=float(rng.uniform(0, 24 * 60))),
                "hit" if rng.random() < 0.55 else "miss",
                fam,
                session=int(rng.integers(1, 30)) if rng.random() < 0.9 else None,
                player=["ann", "bo"][int(rng.integers(0, 2))],
                shot=shot,
                speed=float(rng.choice(SPEEDS)),
                landing_at=float(rng.uniform(0, 8)),
            )
        )
    return out


def test_zone_codes_match_the_coach():
    from tablecoach.core.coach import zone_of

    items = random_attempts(600, 1)
    zones, _ = zone_codes(items)
    assert zones == [zone_of(a.shot, a.speed) for a in items]


def test_summarize_matches_the_reference_functions():
    from tablecoach.core.coach import zone_of

    items = random_attempts(800, 2)
    tz = ZoneInfo("Europe/Berlin")
    hist = summarize(items, tz=tz, today=date(2026, 11, 1))
    ref = ordered(items)
    assert hist.sessions == tuple(session_list(ref))
    assert hist.weeks == tuple(weekly(ref, tz))
    assert hist.families == rates_by(ref, lambda a: a.shot.family)
    assert hist.zones == rates_by(ref, lambda a: zone_of(a.shot, a.speed))
    assert hist.zone_streaks == streaks_by(ref, lambda a: zone_of(a.shot, a.speed))
    days = {local_date(a.when, tz) for a in ref}
    assert hist.days == day_streak(days, date(2026, 11, 1))
    for fam, weeks in hist.family_weeks.items():
        assert weeks == tuple(weekly([a for a in ref if a.shot.family == fam], tz))
    grid = grid_rates(items, family="two-rail-kick")
    n = sum(r.attempts for r in grid.values())
    assert n == sum(a.shot.family == "two-rail-kick" for a in items)
