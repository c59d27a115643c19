"""The ideal ball's landing for many aim readings at once (a vectorised ray walk round the walls).

THE ONE COPY of the ray-to-wall crossing in the stats: to be replaced by the shared ray-box exit
of core/geometry.py when that lands.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from ..table import TableSpec


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
    L, W, r = spec.length, spec.width, spec.ball_radius
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
    xmin, xmax, ymin, ymax = r, L - r, r, W - r
    code = np.zeros(n, dtype=np.int64)
    along = np.zeros(n)
    with np.errstate(divide="ignore", invalid="ignore"):
        for _ in range(len(rails) + 1):
            tx = np.where(
                d[:, 0] > 1e-15,
                (xmax - p[:, 0]) / d[:, 0],
                np.where(d[:, 0] < -1e-15, (xmin - p[:, 0]) / d[:, 0], np.inf),
            )
            ty = np.where(
                d[:, 1] > 1e-15,
                (ymax - p[:, 1]) / d[:, 1],
                np.where(d[:, 1] < -1e-15, (ymin - p[:, 1]) / d[:, 1], np.inf),
            )
            use_x = tx <= ty
            t = np.maximum(np.where(use_x, tx, ty), 0.0)
            p = p + t[:, None] * d
            code = np.where(use_x, np.where(d[:, 0] > 0, 1, 0), np.where(d[:, 1] > 0, 3, 2))
            along = np.where(use_x, p[:, 1], p[:, 0])
            last_d = d.copy()
            d = np.where(use_x[:, None], d * np.array([-1.0, 1.0]), d * np.array([1.0, -1.0]))
    along_d = np.where(code >= 2, along / spec.diamond, along / spec.diamond_across)
    # sense round the perimeter: left +x, foot +y, right -x, head -y (perimeter_array)
    tangent = np.select(
        [code == 2, code == 1, code == 3],
        [last_d[:, 0], last_d[:, 1], -last_d[:, 0]],
        -last_d[:, 1],
    )
    sense = np.where(tangent >= 0.0, 1.0, -1.0)
    return code, along_d, sense


def perimeter_array(code: np.ndarray, at: np.ndarray) -> np.ndarray:
    return np.select(
        [code == 2, code == 1, code == 3],
        [at, 8.0 + at, 12.0 + (8.0 - at)],
        20.0 + (4.0 - at),
    )
