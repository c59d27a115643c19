"""What a player's own landings say during practice: a calibration worth offering, what a new
calibration changed, and the landing bias of a zone, in a player's words.

Only observed landings count (records.Attempt.landed): a hit logged without a landing, a miss
that stopped short or rattled in the jaw teach nothing here (record format version 2).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from datetime import datetime
from typing import Any

import numpy as np

from . import shots
from .records import Attempt
from .store import Store
from .store.query import AttemptQuery
from .table import TableSpec

OFFER_AFTER = 30
"""New observed landings on a table (since its last calibration) before the practice screen
offers to calibrate it again."""

RECENT_LANDINGS = 40
"""A zone's bias is taken over its latest landings at most: the player's habit now, and a
bounded amount of model work."""

MIN_BIAS_LANDINGS = 3
"""Landings in a zone before its bias is shown: fewer say more about luck than about a habit."""

SMALL_BIAS = 0.1
"""A zone's bias below this many diamonds is "on the model" (about what a player reads a landing
to: calibration.likelihood.NOISE_FLOOR is of this size)."""


OFFER_COUNTS_TO = 10_000
"""The offer counts new landings up to this many ("10000+" beyond): a bounded read at the first
logged shot, however long the history since the last calibration."""


def new_landings(store: Store, table: str, player: str, at_most: int = OFFER_COUNTS_TO) -> int:
    """Attempts with an observed landing by ``player`` on ``table`` logged since the newest
    calibration of that table for that player (all of them when there is none), counted up
    to ``at_most``."""
    rec = store.calibration(table, player)
    since = datetime.fromisoformat(rec["when"]) if rec else None
    query = AttemptQuery(player=player, table=table, since=since)
    return store.count_landed(query, at_most)


def should_offer(store: Store, table: str, player: str) -> int:
    """How many new landings there are (up to OFFER_COUNTS_TO) when a calibration is worth
    offering, else 0."""
    n = new_landings(store, table, player)
    return n if n >= OFFER_AFTER else 0


def landings_words(n: int) -> str:
    """``42 new landings``, or ``10000+ new landings`` at the counting limit."""
    return f"{n}{'+' if n >= OFFER_COUNTS_TO else ''} new landings"


def what_changed(before: Any, after: Any) -> list[str]:
    """What a new calibration changed, in a player's words, most useful first. ``before`` is
    the previous calibration.Calibration (None: the default table and the book's speeds)."""
    out: list[str] = []
    now = after.rms_after_inliers
    if math.isfinite(now):
        was = before.rms_after_inliers if before is not None else after.rms_before_inliers
        where = "with the last calibration" if before is not None else "on the default table"
        if math.isfinite(was):
            out.append(f"landings now predicted to {now:.2f} diamond ({was:.2f} {where})")
        else:
            out.append(f"landings now predicted to {now:.2f} diamond")
    for e in after.speeds:
        old = before.speed(e.name) if before is not None else shots.SPEED_PRESETS.get(e.name)
        if old is None or abs(e.value - old) < 0.02 * old:
            continue
        way = "harder" if e.value > old else "softer"
        src = "than at the last calibration" if before is not None else "than the book's"
        out.append(f"your {e.name} is {e.value:.2f} m/s, {way} {src} {old:.2f}")
    if len(out) <= 1:
        out.append("your strokes are about as before")
    return out


def zone_bias(
    table: TableSpec,
    attempts: Sequence[Attempt],
    zone: str,
    model: str = "ideal",
    calibration: Any = None,
) -> tuple[float, int] | None:
    """The mean landing error (diamonds round the table, + long) of the latest observed
    landings (RECENT_LANDINGS at most) logged in ``zone`` (the zone label stored with each
    attempt), against the model's landing for the aim used
    (calibration.model.landing_errors), and how many it averages. None with fewer than
    MIN_BIAS_LANDINGS."""
    from .calibration.model import landing_errors  # heavy: loaded lazily

    mine = [a for a in attempts if a.zone == zone and a.landed][-RECENT_LANDINGS:]
    if len(mine) < MIN_BIAS_LANDINGS:
        return None
    errs = [e for e in landing_errors(table, mine, model, calibration) if e is not None]
    if len(errs) < MIN_BIAS_LANDINGS:
        return None
    return float(np.mean(errs)), len(errs)


def bias_words(bias: float, n: int) -> str:
    """A zone's bias as advice: "you land 0.3 long here (6 landings): aim to land 0.3 shorter"."""
    if abs(bias) < SMALL_BIAS:
        return f"you land where the model says here ({n} landings)"
    way, fix = ("long", "shorter") if bias > 0 else ("short", "longer")
    return f"you land {abs(bias):.1f} {way} here ({n} landings): aim to land {abs(bias):.1f} {fix}"


__all__ = [
    "MIN_BIAS_LANDINGS",
    "OFFER_AFTER",
    "bias_words",
    "new_landings",
    "should_offer",
    "what_changed",
    "zone_bias",
]
