"""Batches for the physical aim: setups as arrays, launches (stick hit, ghost ball, throw), runs.

A reading (metres along the first rail's line of sights) fixes the travelling ball's line. For a
kick it is the cue ball's stroke line. For a bank it is the line of centres (the ghost-ball
aim): the cue ball runs straight to the ghost position (physics.motion.advance) and the object
leaves along that line turned by its throw (physics/collide.py), so the reading reported is
that of the object's real launch line, as the contract asks ("the ball's path before the first
cushion"). One ``run`` is one vectorised pass of physics.simulate over many readings.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Protocol

import numpy as np

from ..physics.collide import strike
from ..physics.motion import advance, dot2
from ..physics.params import BallModel
from ..physics.simulate import SimResult, simulate
from ..physics.stick import StrokeError, check_offset, stick_hit
from ..shots import Setup, ShotError, Stroke
from ..table import POCKETS, RailName, TableSpec
from .ideal import mirror_reading
from .sights import directions, readings


class StrokeRows(Protocol):
    """A stroke, or one speed, english and follow per row (numpy arrays)."""

    @property
    def speed(self) -> float | np.ndarray: ...

    @property
    def english(self) -> float | np.ndarray: ...

    @property
    def follow(self) -> float | np.ndarray: ...


@dataclass(frozen=True, slots=True)
class Problems:
    """Per-setup arrays of a batch of setups of one family (index p)."""

    setups: tuple[Setup, ...]
    rail: RailName
    start: np.ndarray  # (P, 2)
    cue: np.ndarray  # (P, 2)
    target: np.ndarray  # (P, 2)
    balls: np.ndarray  # (P, K, 2)
    ball_from: np.ndarray  # (P, K)
    pocket: np.ndarray  # (P,)
    centre: np.ndarray  # (P,) ideal reading (or the rail's middle)
    bank: bool


def problems(table: TableSpec, setups: Sequence[Setup]) -> Problems:
    """The arrays of a batch of setups of one family (the still balls, targets, pockets and
    the mirror reading each search is centred on)."""
    fam = setups[0].family
    rail = fam.rails[0]
    starts, cues, targets, balls, froms, pockets, centres = [], [], [], [], [], [], []
    kmax = 1 + max(len(s.obstacles()) for s in setups)
    for s in setups:
        starts.append(s.start)
        cues.append(s.cue)
        targets.append(s.target_point(table))
        row = [[math.nan, math.nan]] * kmax
        frm = [0] * kmax
        if s.target_ball is not None:
            row[0] = list(s.target_ball)
        for j, ob in enumerate(s.obstacles()):
            row[1 + j] = list(ob)
            frm[1 + j] = 1 if fam.travel == "object" else 0
        balls.append(row)
        froms.append(frm)
        pockets.append(POCKETS.index(s.pocket) if s.pocket is not None else -1)
        centres.append(mirror_reading(table, s))
    return Problems(
        tuple(setups),
        rail,
        np.array(starts, dtype=float),
        np.array(cues, dtype=float),
        np.array(targets, dtype=float),
        np.array(balls, dtype=float).reshape(len(setups), kmax, 2),
        np.array(froms, dtype=np.int64),
        np.array(pockets, dtype=np.int64),
        np.array(centres, dtype=float),
        fam.travel == "object",
    )


@dataclass(frozen=True, slots=True)
class Launch:
    """How each row's travelling ball sets off: position, velocity, spin, whether the launch
    works (a bank's cue ball reaches the ghost position), the reading of the real launch line,
    its direction, and for banks the ghost position and the cut angle."""

    r0: np.ndarray
    v0: np.ndarray
    w0: np.ndarray
    ok: np.ndarray
    reading: np.ndarray
    direction: np.ndarray
    ghost: np.ndarray
    cut: np.ndarray


def launch(
    m: BallModel, table: TableSpec, pr: Problems, pi: np.ndarray, s: np.ndarray, stroke: StrokeRows
) -> Launch:
    """The launches of rows (problem ``pi``, solver reading ``s``) at this stroke."""
    start = pr.start[pi]
    d = directions(table, pr.rail, start, s)
    n = s.shape[0]
    if not pr.bank:
        v, w = stick_hit(m, d, stroke.speed, stroke.english, stroke.follow)
        nan2 = np.full((n, 2), np.nan)
        return Launch(start, v, w, np.ones(n, bool), s.copy(), d, nan2, np.full(n, np.nan))
    # bank: d is the line of centres; the cue ball travels straight to the ghost position
    ghost = start - 2.0 * m.radius * d
    u = ghost - pr.cue[pi]
    dist = np.hypot(u[:, 0], u[:, 1])
    ud = u / np.maximum(dist, 1e-300)[:, None]
    cut = np.arccos(np.clip(dot2(ud, d), -1.0, 1.0))
    vc, wc = stick_hit(m, ud, stroke.speed, stroke.english, stroke.follow)
    vc, wc, reached = advance(m, vc, wc, dist)
    vo, wo = strike(m, vc, wc, d)
    ok = reached & (cut < math.radians(89.0)) & (dist > 1e-9)
    spo = np.hypot(vo[:, 0], vo[:, 1])
    ok &= spo > 1e-9
    dl = vo / np.maximum(spo, 1e-300)[:, None]
    rd = readings(table, pr.rail, start, dl)
    return Launch(start, vo, wo, ok, rd, dl, ghost, cut)


def run(
    m: BallModel,
    table: TableSpec,
    pr: Problems,
    pi: np.ndarray,
    s: np.ndarray,
    stroke: StrokeRows,
    record: bool = False,
    lean: bool | np.ndarray = False,
) -> tuple[SimResult, Launch]:
    """Launch and simulate rows; a row whose launch fails has no miss and does not score."""
    ln = launch(m, table, pr, pi, s, stroke)
    v0 = np.where(ln.ok[:, None], ln.v0, 0.0)
    w0 = np.where(ln.ok[:, None], ln.w0, 0.0)
    res = simulate(
        m,
        table,
        pr.setups[0].family.rails,
        ln.r0,
        v0,
        w0,
        pr.balls[pi],
        pr.ball_from[pi],
        pr.target[pi],
        pr.pocket[pi],
        record=record,
        lean=lean,
    )
    bad = ~ln.ok
    res.miss[bad] = np.nan
    res.scores[bad] = False
    return res, ln


def check_stroke(table: TableSpec, stroke: Stroke) -> None:
    """A ShotError unless the tip offset is inside the miscue limit and the speed is sane."""
    try:
        check_offset(table, stroke.english, stroke.follow)
    except StrokeError as exc:
        raise ShotError(str(exc)) from None
    if not (0.0 < stroke.speed <= 13.0):
        raise ShotError(f"speed {stroke.speed:g} m/s is outside 0.1 to 13 m/s")


def bank_variable(
    m: BallModel, table: TableSpec, pr: Problems, reading: float, stroke: Stroke
) -> float:
    """The line-of-centres reading whose thrown launch line has the given reading."""
    s = reading
    pi = np.zeros(1, dtype=np.int64)
    for _ in range(6):
        ln = launch(m, table, pr, pi, np.array([s]), stroke)
        got = float(ln.reading[0])
        if not (ln.ok[0] and math.isfinite(got)):
            return reading
        if abs(got - reading) < 1e-9:
            break
        s += reading - got
    return s
