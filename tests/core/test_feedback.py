"""What the player's own landings say: the calibration offer, what changed, a zone's bias."""

from __future__ import annotations

from dataclasses import replace
from datetime import timedelta
from pathlib import Path
from types import SimpleNamespace

import pytest

from tablecoach.core import feedback, shots
from tablecoach.core.aim import ideal
from tablecoach.core.calibration.value import Estimate
from tablecoach.core.records import Attempt, utc_now
from tablecoach.core.store import Store
from tablecoach.core.store.query import AttemptQuery
from tablecoach.core.table import builtin_table

T9 = builtin_table("9ft")


def kick_attempt(long_by: float, result: str = "miss", zone: str = "z") -> Attempt:
    """A one-rail kick logged with the ideal aim, landing ``long_by`` diamonds past the
    ideal landing along the left rail (the law of reflection gives the landing; the ball runs
    toward the foot there, so further along is a larger x)."""
    setup = shots.make_setup(
        T9, shots.PRESETS["one-rail-kick"], T9.to_metres(1, 1), None, None, T9.to_metres(3, 1)
    )
    aim = ideal.solve(T9, setup)
    assert aim.landing.rail == "left"
    at = T9.along_to_diamonds("left", aim.landing.at) + long_by
    return Attempt(
        when=utc_now(),
        player="ann",
        table="9ft",
        shot=shots.record_of(T9, setup),
        speed=shots.SPEED_PRESETS["medium"],
        english=0.0,
        follow=0.0,
        aim_rail=aim.rail,
        aim_given=T9.along_to_diamonds(aim.rail, aim.reading),
        aim_used=T9.along_to_diamonds(aim.rail, aim.reading),
        result=result,  # type: ignore[arg-type]
        landing_rail="left",
        landing_at=at,
        zone=zone,
    )


def test_new_landings_count_only_seen_ones_since_the_last_calibration(tmp_path: Path) -> None:
    with Store.open(tmp_path / "db.sqlite3") as s:
        seen = kick_attempt(0.1)
        hit = replace(seen, result="hit", landing_rail=None, landing_at=None, miss_kind=None)
        short = replace(seen, landing_rail=None, landing_at=None, miss_kind="short")
        s.log_many([seen, hit, short, replace(seen, note="2")])
        assert feedback.new_landings(s, "9ft", "ann") == 2
        assert feedback.should_offer(s, "9ft", "ann") == 0
        s.save_calibration("9ft", "ann", {"k": 1}, 2)
        assert feedback.new_landings(s, "9ft", "ann") == 0
        later = replace(seen, when=utc_now() + timedelta(seconds=1))
        s.log_many([replace(later, note=str(i)) for i in range(feedback.OFFER_AFTER)])
        assert feedback.should_offer(s, "9ft", "ann") == feedback.OFFER_AFTER


def test_new_landings_are_counted_up_to_a_limit_through_the_landings_index(
    tmp_path: Path,
) -> None:
    # the count stops at its limit, and SQLite's own query plan (EXPLAIN QUERY PLAN,
    # sqlite.org/eqp.html) reads the partial index of landings, not the attempts
    import sqlite3

    with Store.open(tmp_path / "db.sqlite3") as s:
        seen = kick_attempt(0.1)
        hit = replace(seen, result="hit", landing_rail=None, landing_at=None, miss_kind=None)
        s.log_many([replace(seen if i % 3 else hit, note=str(i)) for i in range(60)])
        assert feedback.new_landings(s, "9ft", "ann") == 40
        assert feedback.new_landings(s, "9ft", "ann", at_most=25) == 25
        assert feedback.landings_words(40) == "40 new landings"
        assert feedback.landings_words(feedback.OFFER_COUNTS_TO) == "10000+ new landings"
        where, args = AttemptQuery(player="ann", table="9ft").where()
        where += " AND landing_rail IS NOT NULL AND landing_at IS NOT NULL"
        c = sqlite3.connect(tmp_path / "db.sqlite3")
        plan = c.execute(f"EXPLAIN QUERY PLAN SELECT 1 FROM attempts{where}", args).fetchall()
        c.close()
        assert "COVERING INDEX attempts_landed" in str(plan), plan


def test_zone_bias_against_the_ideal_landing() -> None:
    # three landings 0.25, 0.3 and 0.35 diamond long: mean 0.3 long (law of reflection gives
    # the model's landing; the offsets are added by hand)
    items = [kick_attempt(x) for x in (0.25, 0.3, 0.35)]
    unseen = replace(items[0], result="hit", landing_rail=None, landing_at=None, miss_kind=None)
    other = kick_attempt(-1.0, zone="elsewhere")
    got = feedback.zone_bias(T9, [*items, unseen, other], "z", model="ideal")
    assert got is not None
    bias, n = got
    assert n == 3 and bias == pytest.approx(0.3, abs=1e-6)
    assert feedback.bias_words(bias, n) == (
        "you land 0.3 long here (3 landings): aim to land 0.3 shorter"
    )
    assert feedback.zone_bias(T9, items[:2], "z", model="ideal") is None
    assert "where the model says" in feedback.bias_words(0.05, 4)
    assert feedback.bias_words(-0.5, 4).startswith("you land 0.5 short")


def test_what_changed_in_words() -> None:
    book = shots.SPEED_PRESETS
    name = next(iter(book))
    before = SimpleNamespace(rms_after_inliers=0.3, speed=lambda p: book[p])
    after = SimpleNamespace(
        rms_after_inliers=0.2,
        rms_before_inliers=0.4,
        speeds=(Estimate(name, book[name] * 1.2, 0.05, book[name]),),
    )
    lines = feedback.what_changed(before, after)
    assert lines[0] == "landings now predicted to 0.20 diamond (0.30 with the last calibration)"
    assert lines[1].startswith(f"your {name} is ") and "harder" in lines[1]
    first = feedback.what_changed(None, replace_speeds(after, book[name]))
    assert first == [
        "landings now predicted to 0.20 diamond (0.40 on the default table)",
        "your strokes are about as before",
    ]


def replace_speeds(cal: SimpleNamespace, value: float) -> SimpleNamespace:
    name = next(iter(shots.SPEED_PRESETS))
    return SimpleNamespace(**{**vars(cal), "speeds": (Estimate(name, value, 0.05, value),)})
