"""The ideal ball's landing for many aim readings at once (a vectorised ray walk round the walls).

The crossing of each wall is geometry.box_exits (the one ray-box exit of the core); the walk
round the perimeter is table.PERIMETER_BASE and PERIMETER_SENSE.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from ..geometry import box_exits
from ..table import PERIMETER_BASE, PERIMETER_SENSE, TableSpec


def ideal_landings(
    spec: TableSpec,
    starts: np.ndarray,
    rails: Sequence[str],
    aim_rail: str,
    readings: np.ndarray,
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Where the ideal ball lands for each aim reading, all of one rail sequence, vectorised.

    ``starts`` (n, 2) and ``readings`` (n,) in diamonds. The ball leaves its start toward the
    sight point (the reading on ``aim_rail``'s line of sights, 93.7 mm behind the nose, WPA) and
    reflects ideally about walls one ball radius inside the noses; the landing is the wall
    crossing after as many walls as the family has rails, the definition of
    ``ideal_aim.trace`` (pocket openings are treated as cushion here). Returns the landing
    rail codes (index into head, foot, left, right), the landing points in diamonds along their
    rails, and the sense of travel round the perimeter (+1 or -1) at the landing.
    """
    n = len(readings)
    p = np.empty((n, 2))
    p[:, 0] = starts[:, 0] * spec.diamond
    p[:, 1] = starts[:, 1] * spec.diamond_across
    sight = np.empty((n, 2))
    if aim_rail in ("left", "right"):
        sight[:, 0] = readings * spec.diamond
        sight[:, 1] = spec.sight_line(aim_rail)  # type: ignore[arg-type]
    else:
        sight[:, 0] = spec.sight_line(aim_rail)  # type: ignore[arg-type]
        sight[:, 1] = readings * spec.diamond_across
    d = sight - p
    d /= np.maximum(np.hypot(d[:, 0], d[:, 1]), 1e-12)[:, None]
    box = spec.ball_box()
    flip = np.array([[-1.0, 1.0], [1.0, -1.0]])
    code = np.zeros(n, dtype=np.int64)
    along = np.zeros(n)
    last_d = d
    for _ in range(len(rails) + 1):
        t, code = box_exits(p, d, box)
        p = p + t[:, None] * d
        along = np.where(code < 2, p[:, 1], p[:, 0])
        last_d = d
        d = d * flip[code >> 1]  # reflect: x sides flip dx, y sides flip dy
    along_d = np.where(code >= 2, along / spec.diamond, along / spec.diamond_across)
    # sense round the perimeter (table.PERIMETER_SENSE along the rail's own axis)
    axis_d = np.where(code < 2, last_d[:, 1], last_d[:, 0])
    sense = np.where(np.asarray(PERIMETER_SENSE)[code] * axis_d >= 0.0, 1.0, -1.0)
    return code, along_d, sense


def perimeter_array(code: np.ndarray, at: np.ndarray) -> np.ndarray:
    """Points ``at`` diamonds along rails ``code`` as diamonds round the table
    (table.PERIMETER_BASE and PERIMETER_SENSE, vectorised)."""
    base, sense = np.asarray(PERIMETER_BASE), np.asarray(PERIMETER_SENSE)
    return np.asarray(base[code] + sense[code] * at, dtype=float)
