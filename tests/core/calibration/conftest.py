"""Shared helpers of the calibration tests: attempts as the app logs them, and an invented
table with a known truth."""

from __future__ import annotations

from dataclasses import dataclass
from datetime import UTC, datetime

import numpy as np
import pytest

from tablecoach.core import shots
from tablecoach.core.calibration.model import model_landing
from tablecoach.core.calibration.params import with_params
from tablecoach.core.drill_packs import parse_drill
from tablecoach.core.records import Attempt
from tablecoach.core.table import builtin_table

T9 = builtin_table("9ft")

TRUE = {
    "cloth.mu_slide": 0.25,
    "cloth.mu_roll": 0.009,
    "cushion.restitution": 0.92,
    "cushion.friction": 0.20,
}
"""An invented table: sliding friction and rolling resistance inside Alciatore's ranges
(0.15-0.4, 0.005-0.015; docs/model.md); an energetic restitution of 0.92, a deader cushion than
Mathavan et al.'s 0.98 (1.2 prior sd below it); cushion friction 0.20 against their 0.14."""
TRUE_SPEED = {"slow": 1.35, "medium": 2.70, "fast": 3.20, "power": 4.0}
"""The invented player's strokes in m/s: slow and medium about 13 % harder than the book's
(1.185, 2.392 m/s: 1.5 and 3 lengths of travel on the default table), fast 7.5 % softer
(3.458 m/s, 3.75 lengths) and power 8 % softer (4.352 m/s, 4.25 lengths): about one, one, 0.6
and 0.6 prior sd (ln(1.3) / 2 in log speed, params.SPEED_PRIOR_FACTOR) off the book's."""


@dataclass(frozen=True, slots=True)
class AttemptV2(Attempt):
    """An attempt of the shape attempt format version 2 adds (a miss may carry ``miss_kind``
    and no landing), for the evidence to read defensively before that format lands."""

    miss_kind: str | None = None


def logged(
    table,  # type: ignore[no-untyped-def]
    setup: shots.Setup,
    reading: float,
    preset: str,
    landing: shots.RailPoint | None,
    result: str = "miss",
    player: str = "ann",
    miss_kind: str | None = None,
) -> Attempt:
    """An attempt as the app logs it: diamonds, the stroke's book speed, the landing."""
    rail = setup.family.rails[0]
    aim = table.along_to_diamonds(rail, reading)
    if landing is None:
        land_rail, at = "", float("nan")
    else:
        land_rail = landing.rail
        top = 8.0 if landing.rail in ("left", "right") else 4.0
        at = min(max(table.along_to_diamonds(landing.rail, landing.at), 0.0), top)
    return AttemptV2(
        datetime(2026, 1, 1, tzinfo=UTC),
        player,
        table.name,
        shots.record_of(table, setup),
        shots.SPEED_PRESETS[preset],
        0.0,
        0.0,
        rail,
        aim,
        aim,
        result,  # type: ignore[arg-type]
        land_rail,
        at,
        miss_kind=miss_kind,
    )


THREE_RAIL_PACK = """
title = "Three-rail kicks (test data)"
count = 15

[[item]]
family = "three-rail-kick"
speeds = ["fast", "power"]
[item.regions]
cue = { x = [1.0, 3.0], y = [1.0, 3.0] }
target = { x = [3.0, 4.2], y = [1.0, 2.0] }
"""
"""Invented test data: three-rail kicks from the cue regions the built-in pack used when the
recovery figures in these tests were set."""


def synthetic(
    seed: int,
    per_pack: int = 25,
    truth_params: dict[str, float] | None = None,
    speeds: dict[str, float] | None = None,
    player: str = "ann",
) -> list[Attempt]:
    """Noiseless landings of built-in drill shots on a table with known (invented) parameters,
    struck by a player whose strokes are TRUE_SPEED, logged with the book's speeds."""
    from tablecoach.core import drills

    truth = with_params(T9, truth_params or TRUE)
    sp = speeds or TRUE_SPEED
    rng = np.random.default_rng(seed)
    book = {v: k for k, v in shots.SPEED_PRESETS.items()}
    out = []
    packs = dict(drills.builtin_drills())
    # the three-rail shots come from a pack of the test's own, so that tuning the built-in pack
    # does not change this data set
    packs["three-rail-kicks"] = parse_drill(THREE_RAIL_PACK, "three-rail-kicks")
    for name in ("one-rail-kicks", "cross-corner-banks", "three-rail-kicks"):
        n = 0
        while n < per_pack:
            d = drills.sample_setups(T9, packs[name], rng, 1)[0]
            preset = book[d.stroke.speed]
            land = model_landing(truth, d.setup, d.aim.reading, shots.Stroke(sp[preset]))
            if land is None:
                continue
            out.append(logged(T9, d.setup, d.aim.reading, preset, land, player=player))
            n += 1
    return out


@pytest.fixture(scope="session")
def noiseless() -> list[Attempt]:
    return synthetic(7)
