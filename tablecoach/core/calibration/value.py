"""The Calibration value: a table's fitted cloth and cushion and one player's strokes, and its
JSON."""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

from .. import shots
from ..table import TableSpec
from .params import MODEL_VERSION, PARAM_BOUNDS, STALE, CalibrationError, preset_of, with_params


class StaleCalibration(CalibrationError):
    """A stored calibration made under an older model (MODEL_VERSION): never applied."""


KEPT_BOUND = "bound"
KEPT_UNCLEAR = "unclear"


@dataclass(frozen=True, slots=True)
class Estimate:
    """One fitted value: ``value`` with its posterior standard deviation ``sd``, the ``prior``
    centre it was pulled toward and the prior's sd (``prior_sd``). ``kept`` says why the value
    is the prior's rather than the fit's: "bound" (the fit ran to the end of the parameter's
    range) or "unclear" (the shots cannot tell it from another parameter); "" when fitted."""

    name: str
    value: float
    sd: float
    prior: float
    prior_sd: float = math.nan
    kept: str = ""

    def as_dict(self) -> dict[str, Any]:
        out: dict[str, Any] = {"value": self.value, "sd": self.sd, "prior": self.prior}
        out["prior_sd"] = _num(self.prior_sd)
        if self.kept:
            out["kept"] = self.kept
        return out

    @property
    def narrowed(self) -> float:
        """Posterior sd over prior sd: near 0 the shots pinned it, near 1 they said nothing."""
        if not (math.isfinite(self.prior_sd) and self.prior_sd > 0):
            return math.nan
        return self.sd / self.prior_sd


@dataclass(frozen=True, slots=True)
class Shift:
    """How far a family at a named stroke lands from the default table's prediction, on the
    logged shots: ``long`` in diamonds (positive: the calibrated model has the ball land further
    along its path), the median over ``n`` attempts."""

    family: str
    preset: str
    long: float
    n: int


@dataclass(frozen=True, slots=True)
class Calibration:
    """A fitted calibration of one table for one player.

    ``params`` are the table's cloth and cushion parameters (fitted from every player's shots
    on the table, or this player's alone), ``speeds`` the player's m/s for each named stroke
    they logged. ``attempts`` is how many attempts were given, ``used`` how many the fit could
    read; ``landings``, ``hits``, ``shorts`` and ``jaws`` what those said; ``outliers`` how
    many the robust loss set aside. RMS figures are landing errors in diamonds round the table
    on the logged landings, before (the prior table, the book's speeds) and after, over all and
    over the inliers; ``noise`` the robust scale of the landing errors. ``players`` how many
    players' shots fitted the table; ``notes`` what the data could not tell, in words.
    ``version`` the model the numbers belong to (params.MODEL_VERSION).
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
    landings: int = 0
    hits: int = 0
    shorts: int = 0
    jaws: int = 0
    players: int = 1
    notes: tuple[str, ...] = field(default=())
    version: int = MODEL_VERSION

    # ----- reading values ----------------------------------------------------------------------
    def value(self, name: str) -> float:
        """A fitted table parameter by name (``cushion.restitution``) or a stroke's m/s."""
        for e in (*self.params, *self.speeds):
            if e.name == name:
                return e.value
        raise CalibrationError(f"the calibration has no value {name!r}")

    def estimate(self, name: str) -> Estimate:
        for e in (*self.params, *self.speeds):
            if e.name == name:
                return e
        raise CalibrationError(f"the calibration has no value {name!r}")

    def speed(self, preset: str) -> float:
        """What this player calls ``preset``, in m/s (the book's value if never calibrated)."""
        for e in self.speeds:
            if e.name == preset:
                return e.value
        return shots.SPEED_PRESETS[preset]

    def speed_map(self) -> dict[str, float]:
        """Named stroke -> m/s for this player, to use in place of shots.SPEED_PRESETS."""
        return {p: self.speed(p) for p in shots.SPEED_PRESETS}

    def actual_speed(self, logged: float) -> float:
        """The speed a logged m/s figure stands for: scaled as the player's stroke of that band."""
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
            "version": self.version,
            "table": self.table,
            "player": self.player,
            "model": self.model,
            "params": {e.name: e.as_dict() for e in self.params},
            "speeds": {e.name: e.as_dict() for e in self.speeds},
            "attempts": self.attempts,
            "used": self.used,
            "landings": self.landings,
            "hits": self.hits,
            "shorts": self.shorts,
            "jaws": self.jaws,
            "players": self.players,
            "outliers": self.outliers,
            "rms_before": _num(self.rms_before),
            "rms_after": _num(self.rms_after),
            "rms_before_inliers": _num(self.rms_before_inliers),
            "rms_after_inliers": _num(self.rms_after_inliers),
            "noise": _num(self.noise),
            "shifts": [[s.family, s.preset, s.long, s.n] for s in self.shifts],
            "notes": list(self.notes),
            "seconds": self.seconds,
            "iterations": self.iterations,
        }

    @classmethod
    def from_dict(cls, data: dict[str, Any], attempts: int | None = None) -> Calibration:
        """Rebuild a calibration from as_dict() output. A record of an older model is a
        StaleCalibration; a damaged one a CalibrationError (one line each)."""
        if not isinstance(data, dict):
            raise _damaged()
        if data.get("version") != MODEL_VERSION:
            raise StaleCalibration(STALE)
        try:
            return _from_dict(cls, data, attempts)
        except (KeyError, TypeError, ValueError, AttributeError):
            raise _damaged() from None


def _damaged() -> CalibrationError:
    return CalibrationError("the stored calibration is damaged; run 'tablecoach calibrate' again")


def _from_dict(cls: type[Calibration], data: dict[str, Any], attempts: int | None) -> Calibration:
    def est(sec: str) -> tuple[Estimate, ...]:
        out = []
        for k, v in dict(data.get(sec, {})).items():
            psd = v.get("prior_sd")
            out.append(
                Estimate(
                    str(k),
                    float(v["value"]),
                    float(v["sd"]),
                    float(v["prior"]),
                    math.nan if psd is None else float(psd),
                    str(v.get("kept", "")),
                )
            )
        return tuple(out)

    params = est("params")
    speeds = est("speeds")
    for e in params:
        lo, hi = PARAM_BOUNDS[e.name]
        if not (lo <= e.value <= hi):
            raise ValueError(e.name)
    for e in speeds:
        if e.name not in shots.SPEED_PRESETS or not (0.1 <= e.value <= 13.0):
            raise ValueError(e.name)
    shifts = tuple(Shift(str(f), str(p), float(v), int(n)) for f, p, v, n in data.get("shifts", []))

    def num(key: str) -> float:
        v = data.get(key)
        return math.nan if v is None else float(v)

    def count(key: str, default: int = 0) -> int:
        return int(data.get(key, default))

    return cls(
        table=str(data.get("table", "")),
        params=params,
        speeds=speeds,
        attempts=count("attempts") if attempts is None else int(attempts),
        used=count("used"),
        outliers=count("outliers"),
        rms_before=num("rms_before"),
        rms_after=num("rms_after"),
        rms_before_inliers=num("rms_before_inliers"),
        rms_after_inliers=num("rms_after_inliers"),
        noise=num("noise"),
        shifts=shifts,
        model=str(data.get("model", "physical")),
        player=str(data.get("player", "")),
        seconds=float(data.get("seconds", 0.0)),
        iterations=count("iterations"),
        landings=count("landings"),
        hits=count("hits"),
        shorts=count("shorts"),
        jaws=count("jaws"),
        players=count("players", 1),
        notes=tuple(str(s) for s in data.get("notes", [])),
        version=int(data["version"]),
    )


def _num(v: float) -> float | None:
    return float(v) if math.isfinite(v) else None
