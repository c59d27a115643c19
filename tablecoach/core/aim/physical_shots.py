"""Logged shots in batches under the physical model: one reading, speed and spin per row.

The seam calibration uses to run many logged attempts at once: the arrays of a batch hold
geometry only, so one batch serves every cloth and cushion value of a table of one size.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, replace

import numpy as np

from ..physics.params import BallModel, CushionModel, model_of
from ..physics.simulate import SimResult
from ..shots import RailPoint, Setup
from ..table import TableSpec
from .physical_batch import Problems, launch, problems, run
from .physical_trace import extend

ShotBatch = Problems
"""The per-setup arrays of many setups of one family (``shot_batch``)."""


@dataclass(frozen=True, slots=True)
class _Strokes:
    """One speed, english and follow per row (physical_batch.StrokeRows)."""

    speed: np.ndarray
    english: np.ndarray
    follow: np.ndarray


def shot_batch(table: TableSpec, setups: Sequence[Setup], balls: bool = True) -> ShotBatch:
    """Many setups of one family as arrays, for ``run_shots``. With ``balls`` False the still
    balls are taken off the table (the path, the landing and the closest approach of the
    target point are then those of the travelling ball alone)."""
    pr = problems(table, setups)
    if not balls:
        pr = replace(pr, balls=np.full_like(pr.balls, np.nan))
    return pr


def run_shots(
    table: TableSpec,
    batch: ShotBatch,
    readings: np.ndarray,
    speed: np.ndarray,
    english: np.ndarray,
    follow: np.ndarray,
    cushion: CushionModel = "stepped",
    model: BallModel | None = None,
) -> tuple[SimResult, np.ndarray]:
    """Every row of a batch struck at its reading (metres along the first rail's sights, the
    reported reading: for a bank, the object's thrown launch line, turned back into the line
    of centres as the physical predict does) with its own speed and spin. Returns the
    simulation and whether each row was launched (a bank whose cue ball stops before the
    object ball, or cannot send it along the line, is not). ``model`` replaces the table's
    own BallModel (calibration passes one with per-row cloth and cushion figures)."""
    m = model_of(table, cushion) if model is None else model
    n = len(batch.setups)
    pi = np.arange(n, dtype=np.int64)
    reading = np.asarray(readings, dtype=float)
    stroke = _Strokes(
        np.asarray(speed, dtype=float),
        np.asarray(english, dtype=float),
        np.asarray(follow, dtype=float),
    )
    sv = reading.copy()
    if batch.bank:
        for _ in range(6):
            ln = launch(m, table, batch, pi, sv, stroke)
            good = ln.ok & np.isfinite(ln.reading)
            step = np.where(good, reading - ln.reading, 0.0)
            sv = sv + step
            if float(np.max(np.abs(step), initial=0.0)) < 1e-9:
                break
    res, ln = run(m, table, batch, pi, sv, stroke)
    return res, ln.ok


def wall_crossing(table: TableSpec, p: np.ndarray, d: np.ndarray) -> RailPoint | None:
    """Where the straight line from ``p`` along ``d`` first crosses a wall of the box one
    radius inside the noses (how a ball at rest has its last line of travel read off)."""
    return extend(table, p, d)
