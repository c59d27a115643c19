"""The model's outcomes of many logged shots at once, and landing errors against the model."""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, fields, replace
from typing import Any

import numpy as np

from .. import aim as aims
from .. import shots
from ..aim import ideal as ideal_aim
from ..aim import sights
from ..shots import RailPoint, Trace
from ..table import PERIMETER_BASE, PERIMETER_SENSE, RAILS, TableSpec
from .evidence import Evidence, gather


def perimeter_positions(table: TableSpec, codes: np.ndarray, at: np.ndarray) -> np.ndarray:
    """shots.perimeter_position over arrays: rail codes (RAILS order; <0 gives nan) and metres
    along each rail -> diamonds round the table (left 0-8, foot 8-12, right 12-20, head
    20-24)."""
    along = np.where(codes >= 2, at / table.diamond, at / table.diamond_across)
    k = np.maximum(codes, 0)
    walk = np.asarray(PERIMETER_BASE)[k] + np.asarray(PERIMETER_SENSE)[k] * along
    return np.asarray(np.where(codes >= 0, walk, np.nan), dtype=float)


def wrap(d: np.ndarray) -> np.ndarray:
    """Differences round the table (24 diamonds) taken the shortest way: -12 to 12."""
    return (d + 12.0) % 24.0 - 12.0


@dataclass(frozen=True, slots=True)
class Outcomes:
    """What the model has each logged shot do (arrays over the evidence's rows).

    ``landing`` the landing as a position round the table (diamonds): the first rail crossing
    after the family's rails, or, for a ball at rest after them, its last line of travel
    carried on to a wall; nan otherwise. ``reach`` (metres, signed) how far past or short of
    the landing rail the ball gets: past it, the roll left in the arrival speed (v^2 / (2 mu_r
    g)); short of it, minus the distance on to the next wall along its last line and a table
    width for each of the family's rails not yet touched; nan when the shot never launched.
    ``miss`` (metres, signed) the closest approach of the target point after the family's
    rails (nan when the ball never passed it in the family's order)."""

    landing: np.ndarray
    reach: np.ndarray
    miss: np.ndarray


class Runner:
    """Runs every logged shot of the evidence under one table's cloth and cushion and each
    row's own speed: one vectorised batch of the physical model per family
    (aim.physical_shots.run_shots), with the other balls off the table (a logged landing is the
    travelling ball's, as a player reads it practising)."""

    def __init__(self, table: TableSpec, ev: Evidence) -> None:
        from ..aim import physical_shots as pa  # heavy: only a fit needs it

        self._pa = pa
        self.table = table
        self.ev = ev
        self._batches: dict[tuple[int, int], Any] = {}
        self.runs = 0

    def _batch(self, g: int, copies: int) -> Any:
        key = (g, copies)
        b = self._batches.get(key)
        if b is None:
            if copies == 1:
                rows = self.ev.groups[g]
                setups = [self.ev.setups[i] for i in rows]
                b = self._pa.shot_batch(self.table, setups, balls=False)
            else:  # the one batch's arrays repeated, rather than built again copies times
                one = self._batch(g, 1)
                b = replace(
                    one,
                    **{
                        f.name: (
                            np.tile(v, (copies,) + (1,) * (v.ndim - 1))
                            if isinstance(v, np.ndarray)
                            else v * copies
                            if isinstance(v, tuple)
                            else v
                        )
                        for f in fields(one)
                        for v in (getattr(one, f.name),)
                    },
                )
            self._batches[key] = b
        return b

    def run(self, table: TableSpec, speeds: np.ndarray) -> list[Outcomes]:
        """Outcomes of every row for each set of per-row speeds (``speeds`` (k, n) or (n,)):
        k sets run together in one batch per family."""
        sp = np.atleast_2d(np.asarray(speeds, dtype=float))
        return self.run_sets([table] * sp.shape[0], sp)

    def run_sets(self, tables: Sequence[TableSpec], speeds: np.ndarray) -> list[Outcomes]:
        """Outcomes of every row under several parameter sets: set i is ``tables[i]``'s cloth
        and cushion with the per-row speeds ``speeds[i]`` (shape (k, n)).

        The one place that evaluates several tables' parameters. Tables that differ only in
        their cloth and cushion figures (what a fit moves) run together: one batch per family
        with the rows repeated once a set and each row given its set's figures (the physics
        batch takes them per row); other tables run one after another."""
        sp = np.atleast_2d(np.asarray(speeds, dtype=float))
        if len(tables) != sp.shape[0]:
            raise ValueError("run_sets: one table per set of speeds")
        if not tables:
            return []
        from ..physics.params import ROW_FIELDS, model_of

        models = [model_of(t) for t in tables]
        base = models[0]
        same_rest = all(
            replace(m, **{f: getattr(base, f) for f in ROW_FIELDS}) == base
            and replace(t, cloth=tables[0].cloth, cushion=tables[0].cushion) == tables[0]
            for m, t in zip(models, tables, strict=True)
        )
        if all(m == base for m in models):
            return self._run_one(tables[0], sp)
        if same_rest:
            figures = {
                f: np.array([getattr(m, f) for m in models], dtype=float) for f in ROW_FIELDS
            }
            mu_roll = np.array([t.cloth.mu_roll for t in tables], dtype=float)
            return self._run_one(tables[0], sp, figures, mu_roll)
        out: list[Outcomes | None] = [None] * len(tables)
        for i, t in enumerate(tables):
            out[i] = self._run_one(t, sp[i : i + 1])[0]
        return [o for o in out if o is not None]

    def _run_one(
        self,
        table: TableSpec,
        sp: np.ndarray,
        figures: dict[str, np.ndarray] | None = None,
        mu_roll: np.ndarray | None = None,
    ) -> list[Outcomes]:
        """k sets of per-row speeds ``sp`` (k, n) on ``table``; with ``figures`` (each ROW_FIELDS
        name -> k values) set i plays with its own cloth and cushion figures, and ``mu_roll``
        (k values) measures its roll past the landing rail."""
        from ..physics.params import model_of

        k, n = sp.shape
        land = np.full((k, n), np.nan)
        reach = np.full((k, n), np.nan)
        miss = np.full((k, n), np.nan)
        rolls = np.full(k, table.cloth.mu_roll) if mu_roll is None else mu_roll
        ev = self.ev
        for g, rows in enumerate(ev.groups):
            b = self._batch(g, k)
            nf = len(ev.setups[int(rows[0])].family.rails)
            rr = np.tile(rows, k)
            m = None
            if figures is not None:
                per: dict[str, Any] = {f: np.repeat(v, rows.size) for f, v in figures.items()}
                m = replace(model_of(table), **per)
            res, ok = self._pa.run_shots(
                table,
                b,
                ev.reading[rr],
                sp[:, rows].ravel(),
                ev.english[rr],
                ev.follow[rr],
                model=m,
            )
            g_acc = 9.80665 * np.repeat(rolls, rows.size)
            self.runs += 1
            code = res.landing_rail
            lp = perimeter_positions(table, code, res.landing_at)
            stopped = (code < 0) & np.isfinite(res.stop_pos[:, 0])
            rc = np.full(len(rr), np.nan)
            for j in np.flatnonzero(stopped):
                gap, cross = _to_wall(table, res.stop_pos[j], res.last_dir[j])
                rc[j] = -(gap + max(nf - int(res.walls[j]), 0) * table.width)
                if res.walls[j] >= nf and res.pocket[j] < 0 and cross is not None:
                    lp[j] = shots.perimeter_position(table, cross)
            landed = code >= 0
            rc = np.where(landed, res.end_speed**2 / (2.0 * g_acc), rc)
            rc = np.where(ok, rc, np.nan)
            lp = np.where(ok, lp, np.nan)
            ms = np.where(ok, res.miss, np.nan)
            land[:, rows] = lp.reshape(k, -1)
            reach[:, rows] = rc.reshape(k, -1)
            miss[:, rows] = ms.reshape(k, -1)
        return [Outcomes(land[i], reach[i], miss[i]) for i in range(k)]


def _to_wall(table: TableSpec, p: np.ndarray, d: np.ndarray) -> tuple[float, RailPoint | None]:
    """Distance from p along d to the first wall of the box one radius inside the noses, and
    the crossing there."""
    R = table.ball_radius
    best, rail, along = math.inf, None, 0.0
    for code, name in enumerate(RAILS):
        ax = 0 if code < 2 else 1
        wall = R if code % 2 == 0 else (table.length if ax == 0 else table.width) - R
        if abs(d[ax]) < 1e-15:
            continue
        t = (wall - p[ax]) / d[ax]
        if 0 <= t < best:
            best, rail, along = t, name, p[1 - ax] + t * d[1 - ax]
    if rail is None:
        return 0.0, None
    return float(best), RailPoint(rail, float(along))


# ----- long and short against the model ----------------------------------------------------------


def _contact_xy(table: TableSpec, p: RailPoint) -> tuple[float, float]:
    r = table.ball_radius
    if p.rail == "left":
        return (p.at, r)
    if p.rail == "right":
        return (p.at, table.width - r)
    if p.rail == "head":
        return (r, p.at)
    return (table.length - r, p.at)


def travel_sign(table: TableSpec, trace: Trace, start: tuple[float, float], n_rails: int) -> float:
    """+1 or -1: which way round the table (perimeter_position) the ball runs as it lands.

    Taken from the along-rail direction of the straight run onto the landing rail: from the
    family's last cushion contact (contact ``n_rails``; a trace that carries on past the
    landing has later contacts too), or the start if there was none. 0 for a perpendicular
    arrival.
    """
    land = trace.landing
    if land is None:
        return 0.0
    k = min(n_rails, len(trace.contacts))
    prev = _contact_xy(table, trace.contacts[k - 1]) if k > 0 else start
    axis = 0 if land.rail in ("left", "right") else 1
    along = land.at - prev[axis]
    if abs(along) < 1e-9:
        return 0.0
    s = 1.0 if along > 0 else -1.0
    return s * PERIMETER_SENSE[RAILS.index(land.rail)]


def ideal_sign(table: TableSpec, setup: shots.Setup, reading: float) -> float:
    """Which way round the table "long" is for this reading, from the ideal trace (the way the
    ball runs along its landing rail, which speed and spin do not turn round); 1 when unknown."""
    rail = setup.family.rails[0]
    ideal = ideal_aim.trace(table, setup, sights.direction_of(table, setup.start, rail, reading))
    return travel_sign(table, ideal, setup.start, len(setup.family.rails)) or 1.0


def model_landing(
    table: TableSpec,
    setup: shots.Setup,
    reading: float,
    stroke: shots.Stroke,
    model: str = "physical",
) -> RailPoint | None:
    """Where the model has the travelling ball cross the landing rail for this reading, with
    the other balls off the table (the landing a player logs), or, for a ball at rest after the
    family's rails, its last line of travel carried on to a wall. None when there is none."""
    if model != "physical":
        return aims.predict(table, setup, reading, stroke, model).landing
    from ..aim import physical_shots as pa  # heavy: loaded lazily

    b = pa.shot_batch(table, [setup], balls=False)
    one = np.ones(1)
    res, ok = pa.run_shots(
        table, b, reading * one, stroke.speed * one, stroke.english * one, stroke.follow * one
    )
    if not ok[0]:
        return None
    code = int(res.landing_rail[0])
    if code >= 0:
        return RailPoint(RAILS[code], float(res.landing_at[0]))
    after = res.walls[0] >= len(setup.family.rails) and res.pocket[0] < 0
    if after and np.all(np.isfinite(res.stop_pos[0])):
        return pa.wall_crossing(table, res.stop_pos[0], res.last_dir[0])
    return None


def landing_error(
    table: TableSpec, attempt: Any, model: str = "ideal", speed: float | None = None
) -> float | None:
    """Signed error of a logged landing against the model's, in diamonds round the table.

    The model's landing is for the aim the player used, at ``speed`` m/s (default the logged
    speed). Positive means long: the ball landed further along its path than the model
    predicts. None when the attempt carries no measured landing (a hit is not one: the app
    stored the model's own landing with it) or the model's ball never reaches a landing rail.
    """
    out = landing_errors(table, [attempt], model, speeds=None if speed is None else [speed])
    return out[0]


def landing_errors(
    table: TableSpec,
    attempts: Sequence[Any],
    model: str = "physical",
    calibration: Any = None,
    speeds: Sequence[float] | None = None,
) -> list[float | None]:
    """landing_error for many attempts at once (the physical model runs them in batches).

    With a calibration, each logged speed is taken as the player's calibrated speed of its
    named stroke (Calibration.actual_speed); ``table`` should then be the calibrated table.
    ``speeds`` gives the m/s of each attempt instead.
    """
    out: list[float | None] = [None] * len(attempts)
    ev = gather(table, attempts)
    rows = np.flatnonzero(np.isfinite(ev.observed))
    if rows.size == 0:
        return out
    sp = ev.logged.copy()
    if speeds is not None:
        sp = np.array([float(speeds[int(k)]) for k in ev.source], dtype=float)
    elif calibration is not None:
        sp = np.array([calibration.actual_speed(float(v)) for v in sp], dtype=float)
    if model == "physical":
        got = Runner(table, ev).run(table, sp)[0].landing
    else:
        got = np.full(len(ev), np.nan)
        for i in rows:
            st = shots.Stroke(float(sp[i]), float(ev.english[i]), float(ev.follow[i]))
            try:
                land = aims.predict(table, ev.setups[i], float(ev.reading[i]), st, model).landing
            except ValueError:
                land = None
            if land is not None:
                got[i] = shots.perimeter_position(table, land)
    for i in rows:
        if not math.isfinite(got[i]):
            continue
        d = float(wrap(np.array(ev.observed[i] - got[i])))
        s = ideal_sign(table, ev.setups[i], float(ev.reading[i]))
        out[int(ev.source[i])] = d * s
    return out
