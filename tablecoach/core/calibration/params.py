"""What a calibration fits: the table parameters, their priors and bounds, the stroke priors."""

from __future__ import annotations

import math
from dataclasses import replace

from .. import shots, strokes
from ..table import TableSpec


class CalibrationError(ValueError):
    """A calibration cannot be made or read; the message says what to log or fix."""


MODEL_VERSION = 2
"""The physics a calibration's numbers belong to. 1 (no field stored): cushion restitution as a
ratio of centre speeds (about 0.75-0.85) and strokes at fixed m/s. 2: Mathavan's energetic
restitution (default 0.98), rolling resistance 0.007, strokes named by lengths of travel. A
stored calibration of another version is stale: it is never applied."""

STALE = "calibrated under an older model: run calibrate again"
"""The one line shown for a stored calibration of an older MODEL_VERSION."""

TABLE_PARAMS: tuple[str, ...] = (
    "cloth.mu_slide",
    "cloth.mu_roll",
    "cushion.restitution",
    "cushion.friction",
)
"""The table parameters a calibration fits, as ``section.field`` of TableSpec."""

PARAM_BOUNDS: dict[str, tuple[float, float]] = {
    "cloth.mu_slide": (0.15, 0.4),
    "cloth.mu_roll": (0.005, 0.015),
    "cushion.restitution": (0.5, 1.0),
    "cushion.friction": (0.0, 0.4),
}
"""Hard bounds of each fitted parameter: the ranges table.py validates custom tables against
(cloth ranges from Alciatore's typical-parameter pages, docs/model.md); an energetic
restitution cannot exceed 1."""

RESTITUTION_PRIOR_SD = 0.05
"""Prior sd of the cushion's energetic restitution (a judgement: there is no published range
inside this model). The coefficient is the energetic one of Mathavan, Jackson and Parkin
(2010), whose only published value, their fit to measured snooker rebounds, is the default
0.98; it lies in (0, 1] and 1.0 is its bound. Alciatore's 0.6-0.9 "ball-rail restitution" is a
ratio of centre speeds, an outcome of the model rather than its coefficient (table.Cushion), so
it cannot serve as this prior's range. 0.05 lets a dead cushion sit two sd below the default
(0.88) and keeps the bound 0.4 sd above it."""

PRIOR_SD: dict[str, float] = {
    "cloth.mu_slide": (0.4 - 0.15) / 4.0,
    "cloth.mu_roll": (0.015 - 0.005) / 4.0,
    "cushion.restitution": RESTITUTION_PRIOR_SD,
    "cushion.friction": 0.4 / 4.0,
}
"""Prior standard deviations. Sliding friction 0.15-0.4 and rolling resistance 0.005-0.015
are Alciatore's published ranges (docs/model.md) read as +-2 sd; cushion restitution is
RESTITUTION_PRIOR_SD (a judgement, see there); cushion friction has no published range in the
reference sheet, so the validation range 0-0.4 around Mathavan et al.'s 0.14 is used (a wide,
weak prior)."""

PARAM_WORDS: dict[str, str] = {
    "cloth.mu_slide": "cloth sliding friction",
    "cloth.mu_roll": "cloth rolling resistance",
    "cushion.restitution": "cushion liveliness (restitution)",
    "cushion.friction": "cushion grip (friction)",
}
"""Each parameter as a player would name it."""

SPEED_PRIOR_FACTOR = 1.3
"""How far a player's named stroke plausibly lies from the book's m/s: within a factor 1.3
(about +-30 %) either way, read as +-2 sd in log speed. A judgement, common practice, no
source. Strokes are named by lengths of travel (shots.STROKE_LENGTHS); on the default table
(physics/travel.py) a factor 1.3 either side of the book's m/s spans 2.3 to 3.5 lengths for a
medium (3 lengths), 1.1 to 2.1 for a slow (1.5) and 3.7 to 5.1 for a power stroke (4.25)."""

LOG_SPEED_LIMIT = 0.7
"""A player's stroke may differ from the book's by a factor up to e^0.7 (about 2) either way:
the bound of the fit."""


def speed_prior_sd(preset: str) -> float:
    """Prior sd of log(the player's m/s for a named stroke / the book's m/s): SPEED_PRIOR_FACTOR
    read as +-2 sd, the same for every stroke (a judgement, see SPEED_PRIOR_FACTOR)."""
    if preset not in shots.SPEED_PRESETS:
        raise CalibrationError(
            f"unknown speed preset {preset!r}: use one of {', '.join(shots.SPEED_PRESETS)}"
        )
    return math.log(SPEED_PRIOR_FACTOR) / 2.0


def get_param(table: TableSpec, name: str) -> float:
    """A fitted parameter's value on a table (``cloth.mu_slide`` and so on)."""
    sec, key = name.split(".")
    return float(getattr(getattr(table, sec), key))


def with_params(table: TableSpec, values: dict[str, float]) -> TableSpec:
    """A copy of the table with some cloth/cushion parameters replaced."""
    cloth = {k.split(".")[1]: v for k, v in values.items() if k.startswith("cloth.")}
    cush = {k.split(".")[1]: v for k, v in values.items() if k.startswith("cushion.")}
    return table.with_params(
        cloth=replace(table.cloth, **cloth), cushion=replace(table.cushion, **cush)
    )


def preset_of(speed: float) -> str:
    """The named stroke a logged speed belongs to (strokes.speed_name: the band between the
    neighbouring presets; below the slowest counts as slow, above the hardest as power)."""
    return strokes.speed_name(speed)
