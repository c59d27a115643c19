"""Readings and directions: where a line from a ball crosses a rail's line of sights, and back.

A reading is metres along the first rail's line of sights (93.7 mm behind the nose, WPA; the
contract in docs/coordinates.md). Scalar forms for one line, array forms for a batch.
"""

from __future__ import annotations

import numpy as np

from ..geometry import Point, unit
from ..table import RailName, TableSpec, axis_of


def reading_of(table: TableSpec, start: Point, direction: Point, rail: RailName) -> float | None:
    """Where the line from ``start`` along ``direction`` crosses ``rail``'s line of sights
    (metres along the rail), or None if it runs away from that rail."""
    ax = axis_of(rail)
    line = table.sight_line(rail)
    dd = direction[ax]
    if abs(dd) < 1e-15:
        return None
    t = (line - start[ax]) / dd
    if t <= 0.0:
        return None
    return start[1 - ax] + t * direction[1 - ax]


def direction_of(table: TableSpec, start: Point, rail: RailName, reading: float) -> Point:
    """The unit direction from ``start`` toward the sight point at ``reading`` on ``rail``."""
    ax = axis_of(rail)
    sight = [0.0, 0.0]
    sight[ax] = table.sight_line(rail)
    sight[1 - ax] = reading
    return unit((sight[0] - start[0], sight[1] - start[1]))


def directions(table: TableSpec, rail: RailName, start: np.ndarray, s: np.ndarray) -> np.ndarray:
    """``direction_of`` for (n, 2) starts and (n,) readings: (n, 2) unit directions."""
    ax = axis_of(rail)
    pt = np.empty((s.shape[0], 2))
    pt[:, ax] = table.sight_line(rail)
    pt[:, 1 - ax] = s
    d = pt - start
    out: np.ndarray = d / np.hypot(d[:, 0], d[:, 1])[:, None]
    return out


def readings(table: TableSpec, rail: RailName, start: np.ndarray, d: np.ndarray) -> np.ndarray:
    """``reading_of`` for (n, 2) starts and directions: (n,) readings, nan where none."""
    ax = axis_of(rail)
    with np.errstate(divide="ignore", invalid="ignore"):
        t = (table.sight_line(rail) - start[:, ax]) / d[:, ax]
        return np.where(t > 0, start[:, 1 - ax] + t * d[:, 1 - ax], np.nan)
