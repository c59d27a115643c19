"""Make rates by the coach's zones (core/coach.py), and pooled into its grid's cells."""

from __future__ import annotations

from collections.abc import Iterable, Mapping, Sequence
from typing import Any

import numpy as np

from .. import coach
from ..records import Attempt
from .bias import speed_bands
from .frame import Frame, codes, frame_of
from .rates import Rate, group_rates, wilson


def zone_codes_of(cols: Frame) -> tuple[np.ndarray, tuple[Any, ...]]:
    """Each attempt's coach zone (core/coach.py ``zone_of``) as an integer code, computed with
    the coach's own grid constants and ``cell_of`` rule, and the Zone of each code."""
    n = len(cols)
    if n == 0:
        return np.zeros(0, np.int64), ()
    col = np.clip(np.floor(cols.start[:, 0] / coach.COL_WIDTH), 0, coach.ZONE_COLS - 1)
    row = np.clip(np.floor(cols.start[:, 1] / coach.ROW_HEIGHT), 0, coach.ZONE_ROWS - 1)
    band, bands = codes(speed_bands(cols.speed).tolist())
    return zones_of_cells(
        cols.family, cols.families, col.astype(np.int64), row.astype(np.int64), band, bands
    )


def zones_of_cells(
    family: np.ndarray,
    families: Sequence[str],
    col: np.ndarray,
    row: np.ndarray,
    band: np.ndarray,
    bands: Sequence[Any],
) -> tuple[np.ndarray, tuple[Any, ...]]:
    """Zone codes (ordered by family code, column, row, band code) and the Zone of each, from
    each attempt's family code, grid cell and speed band code (the codes index the names)."""
    if len(family) == 0:
        return np.zeros(0, np.int64), ()
    nb = len(bands)
    raw = ((family * coach.ZONE_COLS + col) * coach.ZONE_ROWS + row) * nb + band
    # every distinct value starts some run of equal values: sort only the runs' first values
    uniq = np.unique(raw[np.flatnonzero(np.r_[True, raw[1:] != raw[:-1]])])
    inv = np.searchsorted(uniq, raw)
    zones = []
    for r in uniq.tolist():
        b, r = r % nb, r // nb
        rw, r = r % coach.ZONE_ROWS, r // coach.ZONE_ROWS
        cl, f = r % coach.ZONE_COLS, r // coach.ZONE_COLS
        zones.append(coach.Zone(families[f], cl, rw, str(bands[b])))
    return inv.reshape(-1).astype(np.int64), tuple(zones)


def zone_codes(items: Sequence[Attempt]) -> tuple[list[Any], tuple[Any, ...]]:
    """The coach Zone of each attempt, in the order given (vectorised ``coach.zone_of``)."""
    cols = frame_of(items)
    code, zones = zone_codes_of(cols)
    out: list[Any] = [None] * len(items)
    for i, c in zip(cols.order.tolist(), code.tolist(), strict=True):
        out[i] = zones[c]
    return out, zones


def grid_from_zones(
    zones: Mapping[Any, Rate],
    family: str | None = None,
    speed: str | None = None,
    confidence: float = 0.95,
) -> dict[tuple[int, int], Rate]:
    """Pool zone rates into (col, row) cells of the coach's grid, for one family and speed
    band or all of them."""
    counts: dict[tuple[int, int], list[int]] = {}
    for z, r in zones.items():
        if family is not None and z.family != family:
            continue
        if speed is not None and z.speed != speed:
            continue
        c = counts.setdefault((z.col, z.row), [0, 0])
        c[0] += r.hits
        c[1] += r.attempts
    return {k: wilson(h, n, confidence) for k, (h, n) in counts.items()}


def grid_rates(
    attempts: Iterable[Attempt],
    family: str | None = None,
    speed: str | None = None,
    confidence: float = 0.95,
) -> dict[tuple[int, int], Rate]:
    """Make rates per (col, row) cell of the coach's zone grid, pooled over families and speed
    bands unless ``family``/``speed`` pick one."""
    cols = frame_of(attempts)
    code, zones = zone_codes_of(cols)
    rates = group_rates(code, cols.hit, len(zones), confidence)
    return grid_from_zones(dict(zip(zones, rates, strict=True)), family, speed, confidence)


def zone_key(z: Any) -> str:
    """A zone key as text: the coach's Zone fields joined, or str() of anything else."""
    fields = getattr(z, "__dataclass_fields__", None)
    if fields:
        return ":".join(str(getattr(z, f)) for f in fields)
    return str(z)
