"""Fit a table's cloth, cushion and the player's speed scale from logged landings."""

from __future__ import annotations

import math
import time
from collections.abc import Callable, Sequence
from dataclasses import dataclass, replace
from typing import Any

import numpy as np

from . import aim as aims
from . import shots, strokes
from .aim import ideal as ideal_aim
from .aim import sights
from .records import Attempt
from .shots import RailPoint, Trace
from .table import RAILS, TableSpec


class CalibrationError(ValueError):
    """A calibration cannot be made; the message says what to log or fix."""


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
    return s if land.rail in ("left", "foot") else -s


def model_landing(
    table: TableSpec,
    setup: shots.Setup,
    reading: float,
    stroke: shots.Stroke,
    model: str = "physical",
) -> RailPoint | None:
    """Where the model has the travelling ball cross the landing rail for this reading, with
    the other balls off the table (the landing a player logs: DESIGN.md, attempt records; the
    ideal trace's landing already ignores balls). None when the ball never gets there."""
    if model == "physical":
        shot = _Shot(setup, reading, stroke.speed, stroke.english, stroke.follow, "", None, "")  # type: ignore[arg-type]
        batch = _Batch([shot], [np.array([0])])
        try:
            return batch.landings(table, [0], {}, balls=False)[0]
        except (ImportError, AttributeError, TypeError, IndexError):
            pass  # the physics batch steps changed: fall back to the public trace
    return aims.predict(table, setup, reading, stroke, model).landing


def observed_landing(table: TableSpec, attempt: Attempt) -> RailPoint:
    """The logged landing as a RailPoint in metres. ValueError when the attempt carries no
    observed landing (a hit logged without one, a miss that stopped short or jawed): the
    model's own prediction is never used in its place."""
    rail, at = attempt.landing_rail, attempt.landing_at
    if rail is None or at is None:
        raise ValueError("this attempt has no observed landing")
    return RailPoint(rail, table.along_to_metres(rail, at))  # type: ignore[arg-type]


def landing_error(
    table: TableSpec, attempt: Attempt, model: str = "ideal", speed: float | None = None
) -> float | None:
    """Signed error of the logged landing against the model's, in diamonds round the table.

    The model's landing is for the aim the player used, at ``speed`` m/s (default the logged
    speed). Positive means long: the ball landed further along its path than the model
    predicts (which way is "along" comes from the ideal trace of the same reading). None when
    the model's ball never reaches a landing rail or no landing was observed.
    """
    if not attempt.landed:
        return None
    setup = shots.setup_of(table, attempt.shot)
    rail = setup.family.rails[0]
    reading = table.along_to_metres(rail, attempt.aim_used)
    stroke = shots.Stroke(
        attempt.speed if speed is None else speed, attempt.english, attempt.follow
    )
    land = model_landing(table, setup, reading, stroke, model)
    if land is None:
        return None
    d = shots.landing_distance(table, observed_landing(table, attempt), land)
    ideal = ideal_aim.trace(table, setup, sights.direction_of(table, setup.start, rail, reading))
    s = travel_sign(table, ideal, setup.start, len(setup.family.rails))
    return d if s == 0.0 else d * s


# ----- the parameters ----------------------------------------------------------------------------

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
(cloth ranges from Alciatore's typical-parameter pages, PHYSICS.md section 2)."""

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
are Alciatore's published ranges (PHYSICS.md 2) read as +-2 sd; cushion restitution is
RESTITUTION_PRIOR_SD (a judgement, see there); cushion friction has no published range in the
reference sheet, so the validation range 0-0.4 around Mathavan et al.'s 0.14 is used (a wide,
weak prior)."""

PARAM_WORDS: dict[str, str] = {
    "cloth.mu_slide": "cloth sliding friction",
    "cloth.mu_roll": "cloth rolling resistance",
    "cushion.restitution": "cushion restitution",
    "cushion.friction": "cushion friction",
}

SPEED_PRIOR_FACTOR = 1.3
"""How far a player's named stroke plausibly lies from the book's m/s: within a factor 1.3
(about +-30 %) either way, read as +-2 sd in log speed. A judgement, common practice, no
source. Strokes are named by lengths of travel (shots.STROKE_LENGTHS); on the default table
(physics/travel.py) a factor 1.3 either side of the book's m/s spans 2.3 to 3.5 lengths for a
medium (3 lengths), 1.1 to 2.1 for a slow (1.5) and 3.7 to 5.1 for a power stroke (4.25): about
half a length either way around a medium, reaching toward the neighbouring names."""


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


# ----- results -----------------------------------------------------------------------------------


@dataclass(frozen=True, slots=True)
class Estimate:
    """One fitted value: ``value`` with its standard deviation ``sd``, and the ``prior`` centre
    it was pulled toward (the default table's value, or the book's m/s for a speed)."""

    name: str
    value: float
    sd: float
    prior: float

    def as_dict(self) -> dict[str, float]:
        return {"value": self.value, "sd": self.sd, "prior": self.prior}


@dataclass(frozen=True, slots=True)
class Shift:
    """How far a family at a preset lands from the default table's prediction, on the logged
    shots: ``long`` in diamonds (positive: the calibrated model has the ball land further along
    its path), the median over ``n`` attempts."""

    family: str
    preset: str
    long: float
    n: int


@dataclass(frozen=True, slots=True)
class Calibration:
    """A fitted calibration of one table for one player.

    ``params`` are the table's cloth and cushion parameters, ``speeds`` the player's m/s for
    each preset they logged (``name`` = the preset). ``attempts`` is how many attempts were
    given, ``used`` how many the model could follow, ``outliers`` how many the robust loss set
    aside (a residual beyond 3 noise scales). RMS figures are landing errors in diamonds round
    the table, before (the prior table, the book's speeds) and after calibration, over all used
    attempts and over the inliers only. ``noise`` is the robust scale of the landing errors.
    """

    table: str
    params: tuple[Estimate, ...]
    speeds: tuple[Estimate, ...]
    attempts: int
    used: int = 0
    outliers: int = 0
    rms_before: float = math.nan
    rms_after: float = math.nan
    rms_before_inliers: float = math.nan
    rms_after_inliers: float = math.nan
    noise: float = math.nan
    shifts: tuple[Shift, ...] = ()
    model: str = "physical"
    player: str = ""
    seconds: float = 0.0
    iterations: int = 0

    # ----- reading values ----------------------------------------------------------------------
    def value(self, name: str) -> float:
        """A fitted table parameter by name (``cushion.restitution``) or a preset's m/s."""
        for e in (*self.params, *self.speeds):
            if e.name == name:
                return e.value
        raise CalibrationError(f"the calibration has no value {name!r}")

    def speed(self, preset: str) -> float:
        """What this player calls ``preset``, in m/s (the book's value if never calibrated)."""
        for e in self.speeds:
            if e.name == preset:
                return e.value
        return shots.SPEED_PRESETS[preset]

    def speed_map(self) -> dict[str, float]:
        """Preset -> m/s for this player, to use in place of shots.SPEED_PRESETS."""
        return {p: self.speed(p) for p in shots.SPEED_PRESETS}

    def actual_speed(self, logged: float) -> float:
        """The speed a logged m/s figure stands for: scaled as the player's preset of that band."""
        p = preset_of(logged)
        return logged * self.speed(p) / shots.SPEED_PRESETS[p]

    def apply(self, table: TableSpec) -> TableSpec:
        """The calibrated table: ``table`` with the fitted cloth and cushion parameters."""
        return with_params(table, {e.name: e.value for e in self.params})

    @property
    def status(self) -> str:
        """``calibrated from N attempts``."""
        return f"calibrated from {self.attempts} attempt{'s' if self.attempts != 1 else ''}"

    # ----- storage -----------------------------------------------------------------------------
    def as_dict(self) -> dict[str, Any]:
        """Plain JSON values for Store.save_calibration (read back with from_dict)."""
        return {
            "table": self.table,
            "player": self.player,
            "model": self.model,
            "params": {e.name: e.as_dict() for e in self.params},
            "speeds": {e.name: e.as_dict() for e in self.speeds},
            "attempts": self.attempts,
            "used": self.used,
            "outliers": self.outliers,
            "rms_before": _num(self.rms_before),
            "rms_after": _num(self.rms_after),
            "rms_before_inliers": _num(self.rms_before_inliers),
            "rms_after_inliers": _num(self.rms_after_inliers),
            "noise": _num(self.noise),
            "shifts": [[s.family, s.preset, s.long, s.n] for s in self.shifts],
            "seconds": self.seconds,
            "iterations": self.iterations,
        }

    @classmethod
    def from_dict(cls, data: dict[str, Any], attempts: int | None = None) -> Calibration:
        """Rebuild a calibration from as_dict() output; a damaged record is a CalibrationError."""
        try:

            def est(sec: str) -> tuple[Estimate, ...]:
                return tuple(
                    Estimate(str(k), float(v["value"]), float(v["sd"]), float(v["prior"]))
                    for k, v in dict(data.get(sec, {})).items()
                )

            params = est("params")
            speeds = est("speeds")
            for e in params:
                if e.name not in PARAM_BOUNDS:
                    raise KeyError(e.name)
                lo, hi = PARAM_BOUNDS[e.name]
                if not (lo <= e.value <= hi):
                    raise ValueError(e.name)
            for e in speeds:
                if e.name not in shots.SPEED_PRESETS or not (0.1 <= e.value <= 13.0):
                    raise ValueError(e.name)
            shifts = tuple(
                Shift(str(f), str(p), float(v), int(n)) for f, p, v, n in data.get("shifts", [])
            )

            def f(key: str) -> float:
                v = data.get(key)
                return math.nan if v is None else float(v)

            return cls(
                table=str(data.get("table", "")),
                params=params,
                speeds=speeds,
                attempts=int(data.get("attempts", 0) if attempts is None else attempts),
                used=int(data.get("used", 0)),
                outliers=int(data.get("outliers", 0)),
                rms_before=f("rms_before"),
                rms_after=f("rms_after"),
                rms_before_inliers=f("rms_before_inliers"),
                rms_after_inliers=f("rms_after_inliers"),
                noise=f("noise"),
                shifts=shifts,
                model=str(data.get("model", "physical")),
                player=str(data.get("player", "")),
                seconds=float(data.get("seconds", 0.0)),
                iterations=int(data.get("iterations", 0)),
            )
        except (KeyError, TypeError, ValueError, AttributeError):
            raise CalibrationError(
                "the stored calibration is damaged; run 'tablecoach calibrate' again"
            ) from None

    # ----- words -------------------------------------------------------------------------------
    def sentences(self, table: TableSpec | None = None) -> list[str]:
        """The calibration in a player's words, most useful first.

        ``table`` is the table as it is without this calibration (default: the built-in table of
        that name, if there is one); the player's speeds are also said in lengths of travel on
        the calibrated table (strokes.travel_lengths), beside the book's lengths of each name
        (shots.STROKE_LENGTHS)."""
        here = self._words_table(table)
        out: list[str] = []
        head = f"Calibrated from {self.attempts} attempt{'s' if self.attempts != 1 else ''}"
        if self.outliers:
            head += (
                f" ({self.outliers} far from the model, mislogged or near a pocket, "
                "count for little)"
            )
        if math.isfinite(self.rms_after) and math.isfinite(self.rms_before):
            head += (
                f": landings predicted to {self.rms_after_inliers:.2f} diamond RMS, "
                f"against {self.rms_before_inliers:.2f} on the default table"
            )
        out.append(head + ".")
        for s in sorted(self.shifts, key=lambda s: -abs(s.long)):
            fam = shots.PRESETS.get(s.family)
            title = (fam.title if fam else s.family).lower()
            if abs(s.long) < 0.05:
                out.append(f"{_cap(title)}s at {s.preset} land as on the default table.")
                continue
            way = "longer" if s.long > 0 else "shorter"
            out.append(
                f"{_cap(title)}s at {s.preset} land {abs(s.long):.1f} diamond {way} here "
                "than on the default table."
            )
        for e in self.speeds:
            book = shots.SPEED_PRESETS[e.name]
            travel = _travel_words(here, e.value, shots.STROKE_LENGTHS[e.name])
            if abs(e.value - book) < max(e.sd, 0.02 * book):
                out.append(
                    f"Your {e.name} is about the book's: {e.value:.2f} +- {e.sd:.2f} m/s "
                    f"(book {book:.2f}){travel}."
                )
                continue
            way = "harder" if e.value > book else "softer"
            out.append(
                f"Your {e.name} is {e.value:.2f} +- {e.sd:.2f} m/s, {way} than the book's "
                f"{book:.2f} m/s{travel}."
            )
        for e in self.params:
            words = PARAM_WORDS[e.name]
            if abs(e.value - e.prior) <= e.sd:
                out.append(f"{_cap(words)} {e.value:.3g} +- {e.sd:.2g}: as the default.")
                continue
            way = "higher" if e.value > e.prior else "lower"
            extra = ""
            if e.name == "cushion.restitution":
                extra = " (livelier cushions)" if way == "higher" else " (deader cushions)"
            out.append(
                f"{_cap(words)} {e.value:.3g} +- {e.sd:.2g}, {way} than the default "
                f"{e.prior:.3g}{extra}."
            )
        return out

    def _words_table(self, table: TableSpec | None) -> TableSpec | None:
        """The calibrated table to say lengths of travel on, or None when it is not known."""
        if table is None:
            from .table import builtin_table  # noqa: PLC0415

            try:
                table = builtin_table(self.table)
            except ValueError:
                return None
        try:
            return self.apply(table)
        except ValueError:
            return None


def _travel_words(table: TableSpec | None, speed: float, book_lengths: float) -> str:
    """``; on this table it travels about 3.4 lengths (the book's: 3)``, or "" without a table."""
    if table is None:
        return ""
    try:
        lengths = strokes.travel_lengths(table, speed)
    except ValueError:
        return ""
    if not math.isfinite(lengths):
        return ""
    return f"; on this table it travels about {lengths:.1f} lengths (the book's: {book_lengths:g})"


def _cap(s: str) -> str:
    return s[:1].upper() + s[1:]


def _num(v: float) -> float | None:
    return float(v) if math.isfinite(v) else None


# ----- the fit -----------------------------------------------------------------------------------

Predictor = Callable[[TableSpec, shots.Setup, float, shots.Stroke], Trace]
"""A forward model: (table, setup, reading in metres, stroke) -> Trace."""

CAUCHY_C = 2.3849
"""Cauchy loss tuning constant: 95 % asymptotic efficiency under Gaussian noise (Holland and
Welsch, "Robust regression using iteratively reweighted least-squares", 1977). Huber's loss with
a small corner (close to least absolute deviations) was tried as well and measured worse on
benchmarks/bench_calibrate.py (median three-rail landing error 0.58 against about 0.2
diamond)."""

MAD_TO_SD = 1.4826
"""Median absolute deviation to standard deviation for Gaussian noise (1 / Phi^-1(3/4))."""

NOISE_FLOOR = 0.1
"""Smallest landing-noise scale the fit assumes, in diamonds: a player reads a landing to about
a tenth of a diamond (common practice, no source), so smaller residuals are not told apart."""

NO_LANDING = 3.0
_DEBUG = False

JUMP = 0.3
"""A finite-difference change of a landing larger than this (diamonds) is an edge, not a slope."""
"""Residual, in diamonds, given to a shot whose modelled ball never reaches a landing rail."""

LOG_SPEED_LIMIT = 0.7
"""The player's preset may differ from the book's by a factor up to e^0.7 (about 2) either way."""


@dataclass(frozen=True, slots=True)
class _Shot:
    setup: shots.Setup
    reading: float
    logged: float
    english: float
    follow: float
    preset: str
    observed: RailPoint
    family: str


def _prepare(table: TableSpec, attempts: Sequence[Attempt]) -> list[_Shot]:
    out = []
    for a in attempts:
        if not a.landed:  # only observed landings teach the fit
            continue
        try:
            setup = shots.setup_of(table, a.shot)
            rail = setup.family.rails[0]
            if a.aim_rail != rail:
                continue
            reading = table.along_to_metres(rail, a.aim_used)
            obs = observed_landing(table, a)
        except ValueError:
            continue
        out.append(
            _Shot(
                setup,
                reading,
                a.speed,
                a.english,
                a.follow,
                preset_of(a.speed),
                obs,
                a.shot.family or "custom",
            )
        )
    return out


@dataclass(frozen=True, slots=True)
class _ArrayStroke:
    """A stroke with one speed, english and follow per row (the physics batch takes arrays)."""

    speed: np.ndarray
    english: np.ndarray
    follow: np.ndarray


class _Batch:
    """Landings of many shots in one vectorised pass of the physical model per family.

    aim/physical_batch.py simulates rows of one family together (its solver's own batch path); this
    runs the logged shots through the same steps predict_physical takes for one shot. At start
    every group's first shot is checked against predict_physical itself; if they disagree, or
    the batch steps are not there, ``make`` returns None and the fit predicts shot by shot.
    """

    def __init__(self, data: list[_Shot], groups: list[np.ndarray]) -> None:
        self.data = data
        self.groups = groups
        self.where = {int(i): (g, k) for g, rows in enumerate(groups) for k, i in enumerate(rows)}
        self._pr: dict[tuple[Any, ...], Any] = {}
        self.stops: dict[int, tuple[float, float]] = {}
        """Where the ball came to rest, for shots of the last run that stopped short."""

    @classmethod
    def make(cls, table: TableSpec, data: list[_Shot]) -> _Batch | None:
        keys: dict[tuple[str, tuple[str, ...]], list[int]] = {}
        for i, d in enumerate(data):
            keys.setdefault((d.setup.family.travel, d.setup.family.rails), []).append(i)
        b = cls(data, [np.array(v, dtype=int) for v in keys.values()])
        try:
            for rows in b.groups:
                i = int(rows[0])
                d = data[i]
                got = b.landings(table, [i], {d.preset: 1.0}, balls=True)[0]
                want = aims.predict(
                    table,
                    d.setup,
                    d.reading,
                    shots.Stroke(d.logged, d.english, d.follow),
                    "physical",
                ).landing
                if (got is None) != (want is None):
                    return None
                if (
                    got is not None
                    and want is not None
                    and (got.rail != want.rail or abs(got.at - want.at) > 1e-6)
                ):
                    return None
        except (ImportError, AttributeError, TypeError, IndexError, ValueError):
            return None
        return b

    def landings(
        self,
        table: TableSpec,
        rows: Sequence[int],
        scale: dict[str, float],
        balls: bool = False,
    ) -> list[RailPoint | None]:
        """Landings of the given shots; with ``balls`` False the other balls are taken off
        the table, so the landing is where the travelling ball really crosses the landing rail
        (the design's definition: as a player sees it practising with the object ball off)."""
        from .aim import physical_batch as pa  # noqa: PLC0415  (heavy; only the physical fit needs it)
        from .aim.physical_trace import extend  # noqa: PLC0415
        from .physics.params import model_of  # noqa: PLC0415

        m = model_of(table)
        by_group: dict[int, list[int]] = {}
        for i in rows:
            by_group.setdefault(self.where[int(i)][0], []).append(int(i))
        found: dict[int, RailPoint | None] = {}
        for _g, idx in by_group.items():
            ds = [self.data[i] for i in idx]
            key = (*idx, balls)
            pr = self._pr.get(key)
            if pr is None:  # the geometry of a batch does not change with cloth or cushion
                pr = pa.problems(table, [d.setup for d in ds])
                if not balls:
                    pr = replace(pr, balls=np.full_like(pr.balls, np.nan))
                self._pr[key] = pr
            pi = np.arange(len(ds), dtype=np.int64)
            reading = np.array([d.reading for d in ds])
            stroke = _ArrayStroke(
                np.array([d.logged * scale.get(d.preset, 1.0) for d in ds]),
                np.array([d.english for d in ds]),
                np.array([d.follow for d in ds]),
            )
            sv = reading.copy()
            if pr.bank:
                # the line-of-centres reading whose thrown launch line has the logged reading
                for _ in range(6):
                    ln = pa.launch(m, table, pr, pi, sv, stroke)
                    good = ln.ok & np.isfinite(ln.reading)
                    step = np.where(good, reading - ln.reading, 0.0)
                    sv = sv + step
                    if float(np.max(np.abs(step))) < 1e-9:
                        break
            res, ln = pa.run(m, table, pr, pi, sv, stroke)
            nf = len(ds[0].setup.family.rails)
            for k, i in enumerate(idx):
                code = int(res.landing_rail[k])
                found[i] = None
                self.stops.pop(i, None)
                if not bool(ln.ok[k]):
                    continue
                if code < 0 and res.pocket[k] < 0 and np.all(np.isfinite(res.stop_pos[k])):
                    self.stops[i] = (float(res.stop_pos[k, 0]), float(res.stop_pos[k, 1]))
                if code >= 0:
                    found[i] = RailPoint(RAILS[code], float(res.landing_at[k]))
                elif res.walls[k] >= nf and res.pocket[k] < 0:
                    # as predict_physical: a ball at rest (or on a ball) after the family's
                    # rails has its last line of travel carried on to a wall
                    endp = res.ball_pos[k] if res.ball[k] >= 0 else res.stop_pos[k]
                    if np.all(np.isfinite(endp)):
                        found[i] = extend(table, endp, res.last_dir[k])
        return [found[int(i)] for i in rows]


class _Problem:
    """The normalised MAP problem: u = (theta - prior) / prior_sd, residuals in diamonds."""

    def __init__(
        self,
        table: TableSpec,
        prior_table: TableSpec,
        data: list[_Shot],
        predictor: Predictor,
        prior_speeds: dict[str, float],
        batch: _Batch | None = None,
    ) -> None:
        self.table = table
        self.data = data
        self.predictor = predictor
        self.batch = batch
        self.signs: dict[int, float] = {}
        self.presets = sorted({d.preset for d in data}, key=list(shots.SPEED_PRESETS).index)
        self.names = [*TABLE_PARAMS, *(f"speed.{p}" for p in self.presets)]
        self.centre = np.array(
            [get_param(prior_table, n) for n in TABLE_PARAMS]
            + [math.log(prior_speeds[p]) for p in self.presets]
        )
        self.sd = np.array(
            [PRIOR_SD[n] for n in TABLE_PARAMS] + [speed_prior_sd(p) for p in self.presets]
        )
        lo = [PARAM_BOUNDS[n][0] for n in TABLE_PARAMS]
        hi = [PARAM_BOUNDS[n][1] for n in TABLE_PARAMS]
        for p in self.presets:
            book = math.log(shots.SPEED_PRESETS[p])
            lo.append(book - LOG_SPEED_LIMIT)
            hi.append(book + LOG_SPEED_LIMIT)
        self.u_lo = (np.array(lo) - self.centre) / self.sd
        self.u_hi = (np.array(hi) - self.centre) / self.sd
        self.members = [
            np.array([i for i, d in enumerate(data) if d.preset == p], dtype=int)
            for p in self.presets
        ]
        self.evaluations = 0

    def theta(self, u: np.ndarray) -> np.ndarray:
        return self.centre + self.sd * u

    def tables_and_speeds(self, u: np.ndarray) -> tuple[TableSpec, dict[str, float]]:
        th = self.theta(u)
        tab = with_params(self.table, dict(zip(TABLE_PARAMS, th[: len(TABLE_PARAMS)], strict=True)))
        sp = {
            p: math.exp(th[len(TABLE_PARAMS) + k]) / shots.SPEED_PRESETS[p]
            for k, p in enumerate(self.presets)
        }
        return tab, sp

    def landings(
        self, u: np.ndarray, idx: Sequence[int] | np.ndarray | None = None
    ) -> list[RailPoint | None]:
        """The modelled landing of each shot in ``idx`` (all by default) at parameters u."""
        tab, scale = self.tables_and_speeds(u)
        rows = list(range(len(self.data))) if idx is None else [int(i) for i in idx]
        self.evaluations += len(rows)
        if self.batch is not None:
            return self.batch.landings(tab, rows, scale)
        out: list[RailPoint | None] = []
        for i in rows:
            d = self.data[i]
            stroke = shots.Stroke(d.logged * scale[d.preset], d.english, d.follow)
            try:
                out.append(self.predictor(tab, d.setup, d.reading, stroke).landing)
            except ValueError:
                out.append(None)
        return out

    def residuals(self, u: np.ndarray, idx: Sequence[int] | np.ndarray | None = None) -> np.ndarray:
        rows = list(range(len(self.data))) if idx is None else [int(i) for i in idx]
        lands = self.landings(u, rows)
        r = np.empty(len(rows))
        for k, (i, land) in enumerate(zip(rows, lands, strict=True)):
            stop = self.batch.stops.get(i) if self.batch is not None else None
            if land is not None:
                r[k] = shots.landing_distance(self.table, self.data[i].observed, land)
            elif stop is not None:
                r[k] = self._short_by(i, stop)
            else:
                r[k] = NO_LANDING
        return r

    def _short_by(self, i: int, stop: tuple[float, float]) -> float:
        """The residual of a shot whose modelled ball stops before the landing rail: how far
        (diamonds) its rest point lies from the logged landing, counted the way the ball was
        going. It meets the landing residual where the ball just reaches the rail, so a speed
        that is too low still has a slope pointing up (a flat penalty would have none)."""
        d = self.data[i]
        obs = _contact_xy(self.table, d.observed)
        gap = math.hypot(
            (obs[0] - stop[0]) / self.table.diamond, (obs[1] - stop[1]) / self.table.diamond_across
        )
        sign = self.signs.get(i)
        if sign is None:
            rail = d.setup.family.rails[0]
            ideal = ideal_aim.trace(
                self.table, d.setup, sights.direction_of(self.table, d.setup.start, rail, d.reading)
            )
            sign = self.signs[i] = (
                travel_sign(self.table, ideal, d.setup.start, len(d.setup.family.rails)) or 1.0
            )
        return min(gap, NO_LANDING) * sign

    def jacobian(self, u: np.ndarray, r: np.ndarray, step: float = 0.05) -> np.ndarray:
        """Forward differences in u (steps of 0.05 prior sd); a speed only moves its own shots.

        A landing that moves more than JUMP diamonds for so small a step has crossed an edge
        (a pocket mouth, a ball stopping short, a landing on the next rail round): its slope
        there says nothing about the parameter, so that entry is set to zero.
        """
        n_t = len(TABLE_PARAMS)
        J = np.zeros((len(r), len(u)))
        for j in range(len(u)):
            h = step if u[j] + step <= self.u_hi[j] else -step
            up = u.copy()
            up[j] += h
            if j < n_t:
                diff = self.residuals(up) - r
                J[:, j] = np.where(np.abs(diff) > JUMP, 0.0, diff / h)
            else:
                idx = self.members[j - n_t]
                diff = self.residuals(up, idx) - r[idx]
                J[idx, j] = np.where(np.abs(diff) > JUMP, 0.0, diff / h)
        return J


def _best_start(
    prob: _Problem, u: np.ndarray, r: np.ndarray, scale: float
) -> tuple[np.ndarray, np.ndarray]:
    """The best of a small grid of starts: every preset speed together, and the cushion
    restitution, each at -1, 0 and +1 prior sd (the two trade off against each other in the
    rebound angle, and a local search from the prior alone can settle between them)."""
    n_t = len(TABLE_PARAMS)
    j_e = TABLE_PARAMS.index("cushion.restitution")

    def cost(rr: np.ndarray, uu: np.ndarray) -> float:
        return float(np.sum(_loss(rr / scale)) + 0.5 * uu @ uu)

    best = (cost(r, u), u, r)
    for ds in (-1.0, 0.0, 1.0):
        for de in (-1.0, 0.0, 1.0):
            if ds == 0.0 and de == 0.0:
                continue
            uu = u.copy()
            uu[n_t:] += ds
            uu[j_e] += de
            uu = np.clip(uu, prob.u_lo, prob.u_hi)
            rr = prob.residuals(uu)
            c = cost(rr, uu)
            if c < best[0]:
                best = (c, uu, rr)
    return best[1], best[2]


def _pattern_search(
    prob: _Problem, u: np.ndarray, r: np.ndarray, budget: int, first: float = 0.5
) -> tuple[np.ndarray, np.ndarray]:
    """Polish by compass search (R. Hooke and T. A. Jeeves, J. ACM 8, 1961): try each parameter
    a step up and down, keep what lowers the MAP objective, halve the step when a sweep gains
    nothing. Landings jump where a ball meets a pocket or another ball, so the objective is
    rough at small scales; a search that needs no slopes copes with that where Gauss-Newton
    stalls. A preset's speed only moves its own shots, so trying it costs only those runs.
    Stops at a step of 1/16 prior sd or when the run budget is spent."""
    n_t = len(TABLE_PARAMS)
    step = first
    while step >= 1.0 / 16.0 and prob.evaluations < budget:
        scale = _robust_scale(r)

        def cost(rr: np.ndarray, uu: np.ndarray, s: float = scale) -> float:
            return float(np.sum(_loss(rr / s)) + 0.5 * uu @ uu)

        c_now = cost(r, u)
        improved = False
        for j in range(len(u)):
            for sign in (1.0, -1.0):
                if prob.evaluations >= budget:
                    break
                uu = u.copy()
                uu[j] = min(max(uu[j] + sign * step, prob.u_lo[j]), prob.u_hi[j])
                if uu[j] == u[j]:
                    continue
                if j < n_t:
                    rr = prob.residuals(uu)
                else:
                    idx = prob.members[j - n_t]
                    rr = r.copy()
                    rr[idx] = prob.residuals(uu, idx)
                c = cost(rr, uu)
                if c < c_now:
                    u, r, c_now, improved = uu, rr, c, True
                    break
        if not improved:
            step /= 2.0
    return u, r


def _robust_scale(r: np.ndarray) -> float:
    """MAD scale of residuals about zero (the model should be unbiased), floored."""
    return max(float(np.median(np.abs(r))) * MAD_TO_SD, NOISE_FLOOR)


def _loss(t: np.ndarray) -> np.ndarray:
    """The Cauchy rho: c^2 / 2 log(1 + (t / c)^2)."""
    return 0.5 * CAUCHY_C**2 * np.log1p((t / CAUCHY_C) ** 2)


def _weights(t: np.ndarray) -> np.ndarray:
    """IRLS weights psi(t) / t of the Cauchy loss."""
    return 1.0 / (1.0 + (t / CAUCHY_C) ** 2)


def _rms(r: np.ndarray) -> float:
    return float(np.sqrt(np.mean(r * r))) if len(r) else math.nan


def fit(
    table: TableSpec,
    attempts: Sequence[Attempt],
    prior_table: TableSpec | None = None,
    *,
    model: str = "physical",
    predictor: Predictor | None = None,
    prior_speeds: dict[str, float] | None = None,
    player: str = "",
    max_iter: int = 12,
    max_evals: int = 60,
) -> Calibration:
    """Fit cloth, cushion and the player's preset speeds to logged landings (robust MAP).

    The objective is sum_i rho(r_i / s) + 1/2 sum_j ((theta_j - prior_j) / sd_j)^2, where r_i
    is the signed landing error (diamonds round the table) of attempt i with the aim the player
    used, rho the Cauchy loss (Holland and Welsch 1977) and s the robust noise scale (MAD of
    the residuals, re-estimated between rounds). Gaussian priors come from the published
    ranges where there are any and from stated judgements otherwise (PRIOR_SD,
    RESTITUTION_PRIOR_SD, SPEED_PRIOR_FACTOR); speeds are fitted in log m/s. The minimiser is
    Levenberg-Marquardt (K. Levenberg 1944, D. Marquardt 1963) on iteratively reweighted least
    squares, with a finite-difference Jacobian taken afresh after every accepted step, from the
    best of a small grid of starts. The search stops after ``max_iter`` steps or ``max_evals``
    model runs per attempt, whichever comes first, so a fit on a few hundred attempts takes
    seconds. Uncertainties are the square roots of the diagonal of the inverse Gauss-Newton
    Hessian of the MAP objective (a Laplace approximation).

    ``table`` gives the geometry the attempts were made on; ``prior_table`` (default
    ``table``) the cloth and cushion values the priors are centred on; ``prior_speeds`` the
    preset speeds they are centred on (default the book's, shots.SPEED_PRESETS).
    """
    t0 = time.perf_counter()
    prior_table = prior_table or table
    speeds0 = dict(shots.SPEED_PRESETS)
    speeds0.update(prior_speeds or {})
    custom = predictor is not None
    if predictor is None:

        def predictor(t: TableSpec, s: shots.Setup, r: float, st: shots.Stroke) -> Trace:
            return aims.predict(t, s, r, st, model)

    data = _prepare(table, attempts)
    if len(data) < 3:
        raise CalibrationError(
            f"only {len(data)} of {len(attempts)} attempts can be used for a calibration: "
            "log at least 3 shots with their landings (the table check takes 5 to 10)"
        )
    batch = None
    if model == "physical" and not custom:
        batch = _Batch.make(table, data)
    prob = _Problem(table, prior_table, data, predictor, speeds0, batch)
    n_p = len(prob.names)
    budget = max_evals * len(data)
    u = np.zeros(n_p)
    r = prob.residuals(u)
    r_before = r.copy()
    u, r = _best_start(prob, u, r, _robust_scale(r))
    lam = 0.1
    iterations = 0
    J = prob.jacobian(u, r)
    fresh = True
    while iterations < max_iter and prob.evaluations < budget:
        iterations += 1
        # IRLS: the noise scale and the Cauchy weights follow the current residuals
        scale = _robust_scale(r)

        def cost(rr: np.ndarray, uu: np.ndarray, s: float = scale) -> float:
            return float(np.sum(_loss(rr / s)) + 0.5 * uu @ uu)

        c_now = cost(r, u)
        w = _weights(r / scale)
        Jw = J * (np.sqrt(w) / scale)[:, None]
        A = Jw.T @ Jw + np.eye(n_p)
        g = J.T @ (w * r) / scale**2 + u
        accepted = False
        for _try in range(4):
            M = A + lam * np.diag(np.diag(A))
            u_new = np.clip(u - np.linalg.solve(M, g), prob.u_lo, prob.u_hi)
            r_new = prob.residuals(u_new)
            c_new = cost(r_new, u_new)
            if c_new < c_now:
                accepted = True
                break
            lam *= 4.0
        if not accepted:
            break
        du = u_new - u
        gain = c_now - c_new
        u, r = u_new, r_new
        lam = max(lam / 3.0, 1e-4)
        fresh = False
        if _DEBUG:
            print("it", iterations, c_new, scale, lam, prob.evaluations, np.round(prob.theta(u), 4))
        if float(np.max(np.abs(du))) < 1e-3 or gain < 1e-3 * max(c_now, 1.0):
            break
        if prob.evaluations >= budget:
            break
        J = prob.jacobian(u, r)
        fresh = True
    u2, r2 = _pattern_search(prob, u, r, budget)
    if not np.array_equal(u2, u):
        u, r, fresh = u2, r2, False
    scale = _robust_scale(r)
    # Laplace approximation at the optimum, with a fresh Jacobian.
    if not fresh:
        J = prob.jacobian(u, r)
    w = _weights(r / scale)
    Jw = J * (np.sqrt(w) / scale)[:, None]
    cov = np.linalg.inv(Jw.T @ Jw + np.eye(n_p))
    sd_u = np.sqrt(np.clip(np.diag(cov), 0.0, None))
    theta = prob.theta(u)
    n_t = len(TABLE_PARAMS)
    params = tuple(
        Estimate(n, float(theta[j]), float(prob.sd[j] * sd_u[j]), float(prob.centre[j]))
        for j, n in enumerate(TABLE_PARAMS)
    )
    speeds = []
    for k, p in enumerate(prob.presets):
        j = n_t + k
        v = math.exp(theta[j])
        speeds.append(Estimate(p, v, v * float(prob.sd[j] * sd_u[j]), speeds0[p]))
    inlier = np.abs(r / scale) <= 3.0
    cal = Calibration(
        table=table.name,
        params=params,
        speeds=tuple(speeds),
        attempts=len(attempts),
        used=len(data),
        outliers=int(np.sum(~inlier)),
        rms_before=_rms(r_before),
        rms_after=_rms(r),
        rms_before_inliers=_rms(r_before[inlier]),
        rms_after_inliers=_rms(r[inlier]),
        noise=scale,
        shifts=_shifts(prob, u),
        model=model,
        player=player,
        iterations=iterations,
    )
    return replace(cal, seconds=time.perf_counter() - t0)


def _shifts(prob: _Problem, u: np.ndarray) -> tuple[Shift, ...]:
    """Median long/short of the calibrated against the prior prediction, per family and preset
    (the median, so that a shot whose modelled ball drops in a pocket does not set the figure).

    Which way is long comes from the ideal trace of the same reading (the direction the ball
    runs along its landing rail, which speed and spin do not turn round)."""
    base = prob.landings(np.zeros_like(u))
    cal = prob.landings(u)
    groups: dict[tuple[str, str], list[float]] = {}
    for i, d in enumerate(prob.data):
        b, c = base[i], cal[i]
        if b is None or c is None:
            continue
        ideal = aims.predict(prob.table, d.setup, d.reading, None, "ideal")
        s = travel_sign(prob.table, ideal, d.setup.start, len(d.setup.family.rails)) or 1.0
        groups.setdefault((d.family, d.preset), []).append(
            s * shots.landing_distance(prob.table, c, b)
        )
    return tuple(
        Shift(f, p, float(np.median(v)), len(v))
        for (f, p), v in sorted(groups.items(), key=lambda kv: kv[0])
    )


# ----- using a calibration -----------------------------------------------------------------------


def stroke_for(
    calibration: Calibration | None, preset: str, english: float = 0.0, follow: float = 0.0
) -> shots.Stroke:
    """The stroke a player means by a preset: their calibrated m/s, or the book's without one."""
    if preset not in shots.SPEED_PRESETS:
        raise CalibrationError(
            f"unknown speed preset {preset!r}: use one of {', '.join(shots.SPEED_PRESETS)}"
        )
    speed = calibration.speed(preset) if calibration is not None else shots.SPEED_PRESETS[preset]
    return shots.Stroke(speed, english, follow)


def speed_for(calibration: Calibration | None, text: str | float) -> float:
    """A --speed value (a preset name or m/s) as the m/s the model should use: a preset name
    becomes the player's calibrated m/s; a number of m/s is taken as given."""
    if isinstance(text, str) and text.strip().lower() in shots.SPEED_PRESETS:
        return stroke_for(calibration, text.strip().lower()).speed
    return strokes.parse_speed(text)


NOT_CALIBRATED = "not calibrated yet"


def stored_calibration(store: Any, table_name: str, player: str | None) -> Calibration | None:
    """The newest stored calibration of a table for a player, or None."""
    if not player:
        return None
    rec = store.calibration(table_name, player)
    if rec is None:
        return None
    return Calibration.from_dict(rec["params"], int(rec["attempts"]))


def default_player(store: Any, player: str | None) -> str | None:
    """The player named, or the only player in the store, or None."""
    if player:
        return player
    names = store.players()
    return names[0] if len(names) == 1 else None


@dataclass(frozen=True, slots=True)
class Resolved:
    """The table to aim on: the spec (calibrated if possible), the calibration, the player it
    belongs to and a one-line status for the screen."""

    table: TableSpec
    calibration: Calibration | None
    player: str | None
    status: str


def resolve(store: Any, table_name: str, player: str | None = None) -> Resolved:
    """The table spec for ``table_name`` (built-in or stored) with the player's calibration
    applied, if there is one. With no player named and one player in the store, that player."""
    base = store.get_table(table_name)
    who = default_player(store, player)
    cal = stored_calibration(store, table_name, who)
    if cal is None:
        status = NOT_CALIBRATED if who else f"{NOT_CALIBRATED} (no player named)"
        return Resolved(base, None, who, status)
    return Resolved(cal.apply(base), cal, who, cal.status)


def calibrated_table(store: Any, table_name: str, player: str | None) -> tuple[TableSpec, str]:
    """The table with the player's calibration applied and a status line: "calibrated from N
    attempts" or "not calibrated yet"."""
    r = resolve(store, table_name, player)
    return r.table, r.status


def resolve_table(
    table_name: str | None, player: str | None = None, store: Any = None
) -> tuple[TableSpec, str]:
    """For the aim and predict commands: the table to use and its status line.

    ``store`` is an open Store (the command opens it from the data dir); with None, the
    built-in table and "not calibrated yet". The core stays free of file paths.
    """
    from .table import DEFAULT_TABLE, builtin_table  # noqa: PLC0415

    name = table_name or DEFAULT_TABLE
    if store is None:
        return builtin_table(name), NOT_CALIBRATED
    return calibrated_table(store, name, player)


# ----- the table check ---------------------------------------------------------------------------

TABLE_CHECK: tuple[
    tuple[str, tuple[float, float], tuple[float, float] | None, tuple[float, float] | None, str],
    ...,
] = (
    ("one-rail-kick", (1.0, 1.0), None, (3.0, 1.0), "medium"),
    ("one-rail-kick", (1.0, 1.0), None, (3.0, 2.0), "fast"),
    ("two-rail-kick", (1.0, 1.0), None, (5.0, 1.0), "fast"),
    ("three-rail-kick", (2.0, 1.0), None, (4.0, 1.5), "fast"),
    ("three-rail-kick", (1.0, 2.0), None, (3.0, 1.0), "fast"),
    ("cross-corner-bank", (5.25, 2.0), (5.5, 2.5), None, "fast"),
    ("cross-side-bank", (5.0, 1.5), (5.0, 2.0), None, "fast"),
    ("long-rail-bank", (5.5, 2.0), (6.0, 2.0), None, "fast"),
)
"""Reference shots of the table check: (family, cue, object, target ball, preset), positions in
diamonds, on the quarter-diamond grid a player places by eye (placing.py). Checking a system on
each new table with a benchmark shot is common practice (no source); these cover one, two and
three rails and three banks at the speeds a player uses most, so that the first calibration
sees cushion, cloth and speed at once."""


def table_check_setups(table: TableSpec, model: str = "ideal") -> list[Any]:
    """The 5 to 10 reference shots that seed a new table's calibration, as drills.Dealt.

    Each has a clean path on ``table`` under ``model`` (aims.solve); shots that do not
    fit this table are left out, and a CalibrationError says so if fewer than 5 remain.
    """
    from .drills import Dealt  # noqa: PLC0415  (drills imports the shot engine; keep it lazy)

    out: list[Any] = []
    for k, (fam, cue, obj, tb, preset) in enumerate(TABLE_CHECK):
        family = shots.PRESETS[fam]

        def met(p: tuple[float, float] | None) -> tuple[float, float] | None:
            return None if p is None else table.to_metres(*p)

        stroke = shots.Stroke(shots.SPEED_PRESETS[preset])
        try:
            setup = shots.make_setup(table, family, met(cue), met(obj), None, met(tb))  # type: ignore[arg-type]
            aim = aims.solve(table, setup, stroke, model)
        except ValueError:
            continue
        label = f"table check: {family.title.lower()}, {preset}"
        out.append(Dealt(setup, stroke, k, label, aim))
    if len(out) < 5:
        raise CalibrationError(
            f"only {len(out)} of the table check's reference shots fit the {table.name} table; "
            "log a few ordinary shots instead and run 'tablecoach calibrate'"
        )
    n = len(out)
    return [
        Dealt(d.setup, d.stroke, d.item, f"{d.label} ({i + 1} of {n})", d.aim)
        for i, d in enumerate(out)
    ]


def needs_table_check(store: Any, table_name: str, player: str | None) -> bool:
    """True when the app should offer the table check: no calibration of this table for this
    player yet (the player may skip it)."""
    who = default_player(store, player)
    return who is None or store.calibration(table_name, who) is None


def calibrate_from_store(
    store: Any, table_name: str, player: str | None, model: str = "physical", save: bool = True
) -> Calibration:
    """Fit a table for a player from the attempts in the store, and save the fit (for the
    command and for the app's worker after a table check). One-line CalibrationError when
    there is no player or no attempt to fit."""
    who = default_player(store, player)
    if who is None:
        names = store.players()
        if not names:
            raise CalibrationError("no attempts logged yet: practise first")
        raise CalibrationError(f"name the player: --player NAME (players: {', '.join(names)})")
    table = store.get_table(table_name)
    attempts = store.attempts(player=who, table=table_name)
    if not attempts:
        raise CalibrationError(
            f"{who} has no attempts logged on the {table_name} table yet; the table check in "
            "the practice screen takes 5 to 10 shots"
        )
    cal = fit(table, attempts, model=model, player=who)
    if save:
        store.save_calibration(table_name, who, cal.as_dict(), cal.attempts)
    return cal


def landing_errors(
    table: TableSpec,
    attempts: Sequence[Attempt],
    model: str = "physical",
    calibration: Calibration | None = None,
) -> list[float | None]:
    """landing_error for many attempts at once (the physical model runs them in batches).

    With a calibration, each logged speed is taken as the player's calibrated speed of its
    preset (Calibration.actual_speed); ``table`` should then be the calibrated table.
    """
    out: list[float | None] = [None] * len(attempts)
    keep: list[int] = []
    data: list[_Shot] = []
    for k, a in enumerate(attempts):
        got = _prepare(table, [a])
        if got:
            keep.append(k)
            data.append(got[0])
    if not data:
        return out
    scale = {p: 1.0 for p in shots.SPEED_PRESETS}
    if calibration is not None:
        scale = {p: calibration.speed(p) / shots.SPEED_PRESETS[p] for p in shots.SPEED_PRESETS}
    lands: list[RailPoint | None] | None = None
    if model == "physical":
        groups: dict[tuple[str, tuple[str, ...]], list[int]] = {}
        for i, d in enumerate(data):
            groups.setdefault((d.setup.family.travel, d.setup.family.rails), []).append(i)
        batch = _Batch(data, [np.array(v, dtype=int) for v in groups.values()])
        try:
            lands = batch.landings(table, list(range(len(data))), scale)
        except (ImportError, AttributeError, TypeError, IndexError):
            lands = None
    if lands is None:
        lands = []
        for d in data:
            st = shots.Stroke(d.logged * scale[d.preset], d.english, d.follow)
            try:
                lands.append(aims.predict(table, d.setup, d.reading, st, model).landing)
            except ValueError:
                lands.append(None)
    for k, d, land in zip(keep, data, lands, strict=True):
        if land is None:
            continue
        e = shots.landing_distance(table, d.observed, land)
        rail = d.setup.family.rails[0]
        ideal = ideal_aim.trace(
            table, d.setup, sights.direction_of(table, d.setup.start, rail, d.reading)
        )
        s = travel_sign(table, ideal, d.setup.start, len(d.setup.family.rails))
        out[k] = e if s == 0.0 else e * s
    return out
