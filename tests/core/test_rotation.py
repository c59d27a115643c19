"""The rotation drill: setups dealt a quarter to one diamond around a reference start, and
make rates by distance from it."""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest

from tablecoach.core import drills, rotation
from tablecoach.core.records import ShotRecord
from tablecoach.core.store.refs import Reference
from tablecoach.core.table import builtin_table

from .test_store import make_attempt

T = builtin_table("9ft")
BANK = Reference(
    "ana",
    "9ft",
    "cross-corner-bank",
    "object",
    ("right",),
    (5.5, 2.5),
    6.27,
    2.39,
    pocket="foot-left",
    id=1,
)
KICK = Reference(
    "ana", "9ft", "one-rail-kick", "cue", ("right",), (2.0, 1.0), 3.8, 2.39, target=(5.0, 1.5), id=2
)


# a family a pack named by its structure (the mixed pack's left-rail corner bank)
OWN = Reference(
    "ana",
    "9ft",
    "left-rail-corner-bank",
    "object",
    ("left",),
    (5.5, 1.5),
    6.0,
    2.39,
    pocket="foot-right",
    id=3,
)


@pytest.mark.parametrize("ref", [BANK, KICK, OWN], ids=["bank", "kick", "own-family"])
def test_dealt_starts_lie_a_quarter_to_one_diamond_either_side(ref: Reference) -> None:
    dealt = drills.deal(T, rotation.rotation_drill(T, ref, 60), np.random.default_rng(4))
    starts = np.array([T.to_diamonds(*d.setup.start) for d in dealt])
    off = starts - np.asarray(ref.start)
    cheb = np.max(np.abs(off), axis=1)  # numpy: the larger offset, along or across
    assert np.all(cheb >= 0.25 - 1e-9) and np.all(cheb <= 1.0 + 1e-9)
    # either side, along and across the table
    assert (off[:, 0] < 0).any() and (off[:, 0] > 0).any()
    assert (off[:, 1] < 0).any() and (off[:, 1] > 0).any()
    # every setup is the reference's family shape, and a kick keeps its target ball
    for d in dealt:
        assert (d.setup.family.travel, d.setup.family.rails) == (ref.travel, ref.rails)
        assert d.setup.pocket == ref.pocket
        if ref.target is not None:
            assert d.setup.target_ball is not None
            assert np.allclose(T.to_diamonds(*d.setup.target_ball), ref.target)


def test_rates_by_distance_match_a_numpy_count() -> None:
    rng = np.random.default_rng(11)
    offsets = rng.choice(np.arange(-4, 5) / 4.0, size=(80, 2))
    made = rng.random(80) < 0.6
    attempts = []
    for i, ((dx, dy), hit) in enumerate(zip(offsets, made, strict=True)):
        shot = ShotRecord(
            "cue", ("right",), (2.0 + dx, 1.0 + dy), None, None, (5.0, 1.5), "one-rail-kick"
        )
        attempts.append(replace(make_attempt(i), shot=shot, result="hit" if hit else "miss"))
    # another family shape is left out
    attempts.append(replace(make_attempt(1), result="hit"))
    got = rotation.rates_by_distance(KICK, attempts)
    dist = np.round(np.max(np.abs(offsets), axis=1) * 4) / 4
    want = [(d, int((dist == d).sum()), int(made[dist == d].sum())) for d in np.unique(dist)]
    assert [(r.distance, r.attempts, r.hits) for r in got] == want
    assert sum(r.attempts for r in got) == 80
