"""Landing bias: how far logged landings fall from the ideal landing of the aim used."""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..records import Attempt
from ..shots import SPEED_BANDS
from ..table import BUILTIN_TABLES, TableSpec
from .frame import Frame, codes, frame_of
from .tracer import ideal_landings, perimeter_array


@dataclass(frozen=True, slots=True)
class LandingBias:
    """How far logged landings fall from the ideal landing of the aim actually used.

    ``mean`` and ``median`` in diamonds round the table, positive when the ball landed farther
    along its direction of travel than ideal reflection says ("long"), negative "short";
    ``stderr`` the standard error of the mean; ``long``/``short`` count attempts beyond a
    tenth of a diamond either way.
    """

    family: str
    speed: str
    attempts: int
    mean: float
    median: float
    stderr: float
    long: int
    short: int


def speed_bands(speed: np.ndarray) -> np.ndarray:
    """``strokes.speed_name`` of each speed, vectorised (same bands, same edges: below the
    slowest band counts as its stroke, above the hardest, or not a number, as the hardest)."""
    names = list(SPEED_BANDS)
    conds = [(speed >= lo) & (speed < hi) for lo, hi in SPEED_BANDS.values()]
    lowest = SPEED_BANDS[names[0]][0]
    return np.select(conds + [speed < lowest], names + [names[0]], names[-1])


def offsets_of(
    cols: Frame, table_of: Callable[[str], TableSpec | None] | None = None
) -> np.ndarray:
    """``landing_offsets`` over columns, in the columns' (time) order."""
    look = table_of or BUILTIN_TABLES.get
    out = np.full(len(cols), np.nan)
    specs: dict[str, TableSpec | None] = {}
    for g, (table, rails, aim_rail) in enumerate(cols.shapes):
        if not rails or aim_rail != rails[0]:
            continue
        if table not in specs:
            specs[table] = look(table)
        spec = specs[table]
        if spec is None:
            continue
        idx = np.flatnonzero(cols.shape == g)
        out[idx] = offsets_on(
            spec, cols.start[idx], len(rails), aim_rail, cols.aim_used[idx],
            cols.landing_rail[idx], cols.landing_at[idx],
        )  # fmt: skip
    return out


def offsets_on(
    spec: TableSpec,
    starts: np.ndarray,
    rails: int,
    aim_rail: str,
    aim_used: np.ndarray,
    landing_rail: np.ndarray,
    landing_at: np.ndarray,
) -> np.ndarray:
    """Signed landing offsets (diamonds, + long) of attempts on one table, all with ``rails``
    rails and the aim read on ``aim_rail`` (their first), each row on its own."""
    lc, at, sense = ideal_landings(spec, starts, ("",) * rails, aim_rail, aim_used)
    logged = perimeter_array(landing_rail, landing_at)
    diff = logged - perimeter_array(lc, at)
    diff = (diff + 12.0) % 24.0 - 12.0
    out: np.ndarray = diff * sense
    return out


def landing_offsets(
    attempts: Sequence[Attempt], table_of: Callable[[str], TableSpec | None] | None = None
) -> np.ndarray:
    """Signed landing offset (diamonds, + long) of each attempt, in the order given, from the
    ideal landing of its ``aim_used``; NaN where the table is unknown or the aim rail is not
    the family's first. The quantity of calibration.model.landing_error under the ideal model,
    vectorised per rail sequence (``ideal_landings``)."""
    cols = frame_of(attempts)
    out = np.full(len(cols), np.nan)
    out[cols.order] = offsets_of(cols, table_of)
    return out


def bias_of(cols: Frame, offsets: np.ndarray) -> list[LandingBias]:
    """``landing_bias`` over columns and their offsets."""
    if len(cols) == 0:
        return []
    band, bands = codes(speed_bands(cols.speed).tolist())
    return bias_by_codes(cols.family, cols.families, band, bands, offsets)


def bias_by_codes(
    family: np.ndarray,
    families: Sequence[str],
    band: np.ndarray,
    bands: Sequence[Any],
    offsets: np.ndarray,
) -> list[LandingBias]:
    """Landing bias by family and speed band from each attempt's family and band codes (which
    index the names) and its offset (NaN: none), attempts in time order."""
    if len(family) == 0:
        return []
    idx = np.flatnonzero(~np.isnan(offsets))
    key = (family * len(bands) + band)[idx]
    order = np.argsort(key, kind="stable")  # each group's offsets stay in time order
    sk, vals = key[order], offsets[idx[order]]
    cuts = np.flatnonzero(np.r_[True, sk[1:] != sk[:-1], True]) if len(sk) else np.zeros(1, int)
    out = []
    for a, b in zip(cuts[:-1].tolist(), cuts[1:].tolist(), strict=True):
        k = int(sk[a])
        v = vals[a:b]
        sd = float(v.std(ddof=1)) if len(v) > 1 else 0.0
        out.append(
            LandingBias(
                families[k // len(bands)],
                str(bands[k % len(bands)]),
                len(v),
                float(v.mean()),
                float(np.median(v)),
                sd / math.sqrt(len(v)),
                int((v > 0.1).sum()),
                int((v < -0.1).sum()),
            )
        )
    out.sort(key=lambda b: (-b.attempts, b.family, b.speed))
    return out


def landing_bias(
    attempts: Sequence[Attempt], table_of: Callable[[str], TableSpec | None] | None = None
) -> list[LandingBias]:
    """Landing bias by family and speed band (strokes.speed_name), largest groups first."""
    cols = frame_of(attempts)
    return bias_of(cols, offsets_of(cols, table_of))
