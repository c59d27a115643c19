"""Attempts as evidence: what a hit, a short, a jaw and a landing say, and what is ignored."""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pytest

from tablecoach.core import shots
from tablecoach.core.aim import ideal as ideal_aim
from tablecoach.core.calibration import evidence as evi
from tablecoach.core.calibration.fit import fit_table

from .conftest import T9, TRUE_SPEED, logged


def _kick() -> tuple[shots.Setup, shots.Aim]:
    s = shots.make_setup(
        T9, shots.PRESETS["one-rail-kick"], T9.to_metres(1, 1), None, None, T9.to_metres(3, 1)
    )
    return s, ideal_aim.solve(T9, s)


def test_each_attempt_says_what_it_is() -> None:
    s, aim = _kick()
    atts = [
        logged(T9, s, aim.reading, "medium", aim.landing),  # a measured landing
        logged(T9, s, aim.reading, "medium", aim.landing, result="hit"),  # landing ignored
        logged(T9, s, aim.reading, "medium", None, result="hit"),  # format v2: no landing
        logged(T9, s, aim.reading, "slow", None, miss_kind="short"),
        logged(T9, s, aim.reading, "medium", None),  # a miss that says nothing: left out
        logged(T9, s, aim.reading, "medium", None, miss_kind="jaw"),  # no pocket: left out
    ]
    ev = evi.gather(T9, atts)
    assert list(ev.kind) == [evi.LANDING, evi.HIT, evi.HIT, evi.SHORT]
    assert list(ev.source) == [0, 1, 2, 3]
    assert math.isfinite(ev.observed[0]) and np.all(np.isnan(ev.observed[1:]))
    assert ev.strokes == (("ann", "slow"), ("ann", "medium"))
    # a target ball is met when the centres pass within a ball's width (2 R): WPA ball 57.15 mm
    assert ev.window[0] == pytest.approx(0.05715)


def test_a_pocket_window_is_the_mouth_less_a_radius() -> None:
    s = shots.make_setup(
        T9, shots.PRESETS["cross-corner-bank"], T9.to_metres(5.28, 2.01), T9.to_metres(5.5, 2.5)
    )
    win, mouth = evi.target_window(T9, s)
    # WPA corner mouth 4.5 in (114.3 mm, table.py): accepted within half the mouth less a
    # radius, reached within half the mouth plus a radius
    assert win == pytest.approx(0.1143 / 2 - 0.028575, abs=1e-6)
    assert mouth == pytest.approx(0.1143 / 2 + 0.028575, abs=1e-6)


def test_a_hits_stored_landing_changes_nothing(noiseless) -> None:  # type: ignore[no-untyped-def]
    # The same shots logged as hits with two different stored landings (the app stored its
    # model's prediction there): the fit is the same to the last digit.
    atts = list(noiseless[:30])
    one = [replace(a, result="hit") if k % 3 == 0 else a for k, a in enumerate(atts)]
    two = [
        replace(a, result="hit", landing_at=min(a.landing_at + 1.0, 4.0)) if k % 3 == 0 else a
        for k, a in enumerate(atts)
    ]
    c1 = fit_table(T9, one, max_steps=2).only()
    c2 = fit_table(T9, two, max_steps=2).only()
    assert c1.hits == 10 and c1.landings == 20
    assert [e.value for e in c1.params] == [e.value for e in c2.params]


def test_the_table_is_shared_and_the_strokes_are_each_players(noiseless) -> None:  # type: ignore[no-untyped-def]
    from .conftest import synthetic

    # bob strikes 15 % softer than ann on the same (invented) table
    bob_speed = {k: 0.85 * v for k, v in TRUE_SPEED.items()}
    bob = synthetic(11, per_pack=10, speeds=bob_speed, player="bob")
    fitted = fit_table(T9, [*noiseless, *bob])
    ann_c, bob_c = fitted.of("ann"), fitted.of("bob")
    assert ann_c.params == bob_c.params and ann_c.players == bob_c.players == 2
    assert ann_c.used == len(noiseless) and bob_c.used == len(bob)
    # each player keeps their own strokes: pooled, every ratio would be 1. The landings of these
    # kicks and banks tell a stroke's pace only loosely (it trades off against the cloth), so
    # the check is on the average over the strokes both logged: bob clearly softer.
    both = [p for p in ("slow", "medium", "fast", "power") if p in {e.name for e in bob_c.speeds}]
    ratios = [bob_c.speed(p) / ann_c.speed(p) for p in both]
    assert len(both) >= 2 and float(np.mean(ratios)) < 0.95
    with pytest.raises(ValueError, match="several players"):
        fitted.only()


def test_a_hit_without_a_landing_has_no_landing_error() -> None:
    # Record format v2 (docs/formats.md): a hit logged without a landing must not be read as
    # landing where the model said; it has no landing error of its own.
    from tablecoach.core.calibration.model import landing_error

    s, aim = _kick()
    seen = logged(T9, s, aim.reading, "medium", aim.landing)
    unseen = replace(seen, result="hit", landing_rail=None, landing_at=None, miss_kind=None)
    assert landing_error(T9, unseen, model="ideal") is None
