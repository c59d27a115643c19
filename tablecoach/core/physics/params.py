"""The physical constants of one table, gathered from its TableSpec for the physics code."""

from __future__ import annotations

from dataclasses import dataclass, replace
from typing import Literal

from ..table import G, TableSpec

CushionModel = Literal["stepped", "fine"]
CUSHION_MODELS: tuple[CushionModel, ...] = ("stepped", "fine")


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
    """

    radius: float
    mass: float
    g: float
    mu_s: float
    mu_r: float
    spin_decel: float
    e_cushion: float
    mu_w: float
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
