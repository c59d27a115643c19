"""The physical constants of one table, gathered from its TableSpec for the physics code."""

from __future__ import annotations

from dataclasses import dataclass, replace
from typing import Any, Literal

import numpy as np

from ..table import G, TableSpec

CushionModel = Literal["stepped", "fine"]
CUSHION_MODELS: tuple[CushionModel, ...] = ("stepped", "fine")

RowParam = float | np.ndarray
"""A cloth or cushion figure: one float for every row, or an array with one value per row of a
batch (``simulate``'s rows; calibration runs several parameter sets in one call)."""
ROW_FIELDS = ("mu_s", "mu_r", "spin_decel", "e_cushion", "mu_w")
"""The BallModel fields that may be per-row arrays."""


@dataclass(frozen=True, slots=True)
class BallModel:
    """Ball, cloth and cushion figures in SI units, as the physics code uses them.

    ``radius`` and ``mass`` from the table's ball (WPA: 57.15 mm, 156-170 g); ``mu_s`` the
    ball-cloth sliding friction, ``mu_r`` the rolling resistance, ``spin_decel`` the decay of
    spin about the vertical in rad/s^2 (Alciatore's typical 0.2, 0.01, 10); ``e_cushion`` the
    energetic restitution and ``mu_w`` the ball-cushion friction of Mathavan, Jackson and Parkin
    (2010); ``theta`` the cushion contact angle above the equator (TableSpec.contact_angle);
    ``e_ball`` and ``mu_ball`` the ball-ball restitution and friction level (Alciatore 0.95,
    0.06); ``cushion`` which integration of their impact equations runs: "stepped"
    (``cushion_segments`` held-direction pieces per phase, the default) or "fine"
    (``fine_steps`` midpoint steps per M vy0 of impulse, the reference); see cushion.py.

    ``mu_s``, ``mu_r``, ``spin_decel``, ``e_cushion`` and ``mu_w`` may each be a float or an
    array of shape (n,) with one value per row of a batch (``per_row``, ``rows_of``): each row
    then moves exactly as it would alone under a model of floats. Such a model is neither
    hashable nor comparable; the physics functions take it, caches keyed by a model do not.
    """

    radius: float
    mass: float
    g: float
    mu_s: RowParam
    mu_r: RowParam
    spin_decel: RowParam
    e_cushion: RowParam
    mu_w: RowParam
    theta: float
    e_ball: float
    mu_ball: float
    cushion: CushionModel = "stepped"
    cushion_segments: int = 5
    fine_steps: int = 200

    @property
    def inertia(self) -> float:
        """Moment of inertia of a solid ball, I = 2/5 m R^2."""
        return 0.4 * self.mass * self.radius**2

    def with_cushion(self, cushion: CushionModel) -> BallModel:
        """A copy running the other cushion model."""
        if cushion not in CUSHION_MODELS:
            raise ValueError(f"unknown cushion model {cushion!r}: use {', '.join(CUSHION_MODELS)}")
        return replace(self, cushion=cushion)


def per_row(m: BallModel) -> bool:
    """Whether any of the model's ROW_FIELDS is an array (one value per row)."""
    return any(isinstance(getattr(m, f), np.ndarray) for f in ROW_FIELDS)


def check_rows(m: BallModel, n: int) -> None:
    """A ValueError unless every per-row field holds one finite value for each of ``n`` rows."""
    for f in ROW_FIELDS:
        val = getattr(m, f)
        if isinstance(val, np.ndarray) and (val.shape != (n,) or not np.all(np.isfinite(val))):
            raise ValueError(
                f"BallModel.{f} has shape {val.shape}: give a float or {n} finite values, "
                "one per row"
            )


def rows_of(m: BallModel, idx: np.ndarray) -> BallModel:
    """The model of rows ``idx`` (indices or a mask) of a batch: every per-row field indexed,
    float fields kept; ``m`` itself when no field is per row."""
    picked: dict[str, Any] = {
        f: getattr(m, f)[idx] for f in ROW_FIELDS if isinstance(getattr(m, f), np.ndarray)
    }
    return replace(m, **picked) if picked else m


def row_model(m: BallModel, row: int) -> BallModel:
    """The model of one row with every per-row field taken as that row's float."""
    picked: dict[str, Any] = {
        f: float(getattr(m, f)[row]) for f in ROW_FIELDS if isinstance(getattr(m, f), np.ndarray)
    }
    return replace(m, **picked) if picked else m


def model_of(table: TableSpec, cushion: CushionModel = "stepped") -> BallModel:
    """The BallModel of a table (standard gravity, CGPM 1901)."""
    return BallModel(
        radius=table.ball_radius,
        mass=table.ball_mass,
        g=G,
        mu_s=table.cloth.mu_slide,
        mu_r=table.cloth.mu_roll,
        spin_decel=table.cloth.spin_decel,
        e_cushion=table.cushion.restitution,
        mu_w=table.cushion.friction,
        theta=table.contact_angle,
        e_ball=table.cushion.ball_ball_restitution,
        mu_ball=table.cushion.ball_ball_friction,
        cushion=cushion,
    )
