"""Table specs, their rails and pockets, and the diamonds <-> metres mapping.

Coordinates (the project's contract, see docs/coordinates.md): stand at the head rail looking
toward the foot rail. The origin is the corner where the head rail's cushion nose meets the left
long rail's cushion nose. ``x`` runs along the long rails toward the foot rail (0 to 8 diamonds),
``y`` runs across toward the right long rail (0 to 4 diamonds). Positions are ball centres in
metres inside the core; diamonds appear only at the edges, through this module.

Equipment figures are from the WPA Equipment Specifications (world pool governing body), as
collected in the project's reference sheet; cloth and cushion defaults are the typical values
from D. Alciatore's physics resources and Mathavan, Jackson and Parkin (2010).
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field, replace
from functools import lru_cache
from types import MappingProxyType
from typing import Any, Literal

RailName = Literal["head", "foot", "left", "right"]
RAILS: tuple[RailName, ...] = ("head", "foot", "left", "right")
"""The rails in code order: a rail's code is its index here (head 0, foot 1, left 2, right 3)."""

OUTWARD_NORMALS: tuple[tuple[float, float], ...] = (
    (-1.0, 0.0),
    (1.0, 0.0),
    (0.0, -1.0),
    (0.0, 1.0),
)
"""Unit vector from the table out through each rail, in RAILS order (x to the foot, y to the
right)."""

PERIMETER_BASE: tuple[float, ...] = (24.0, 8.0, 0.0, 20.0)
PERIMETER_SENSE: tuple[float, ...] = (-1.0, 1.0, 1.0, -1.0)
"""The walk round the table in diamonds, in RAILS order: a point ``at`` diamonds along a rail
lies ``PERIMETER_BASE + PERIMETER_SENSE * at`` round it (left 0-8, foot 8-12, right 12-20
running back toward the head, head 20-24)."""
POCKETS: tuple[str, ...] = (
    "head-left",
    "side-left",
    "foot-left",
    "head-right",
    "side-right",
    "foot-right",
)

INCH = 0.0254
"""One inch in metres (exact, by definition)."""

G = 9.80665
"""Standard gravity in m/s^2 (CGPM 1901 conventional value)."""


class TableError(ValueError):
    """A table spec, a position or a rail name is not valid; the message says how to fix it."""


def axis_of(rail: str) -> int:
    """The coordinate a rail fixes: 0 (x) for head/foot, 1 (y) for left/right."""
    return 0 if rail in ("head", "foot") else 1


def perimeter_diamonds(rail: RailName, at: float) -> float:
    """A point ``at`` diamonds along ``rail`` as diamonds round the table (PERIMETER_BASE)."""
    code = RAILS.index(rail)
    return PERIMETER_BASE[code] + PERIMETER_SENSE[code] * at


@dataclass(frozen=True, slots=True)
class Cloth:
    """Ball-on-cloth parameters.

    Sliding friction 0.2 and spin deceleration about the vertical 10 rad/s^2 are the typical
    values in D. Alciatore, "pool and billiards physics resources" (Colorado State University;
    ranges 0.15-0.4 and 5-15); S. Mathavan et al. (Am. J. Phys. 2009) measured 0.18-0.24 on
    snooker cloth and Mathavan, Jackson and Parkin (2010) used 0.212. Rolling resistance 0.007
    sits inside Alciatore's published range 0.005-0.015, toward the fast end that worsted pool
    cloth plays at (common practice, no source); with it a lag, two lengths of travel, takes
    1.48 m/s, inside Alciatore's published medium band (docs/model.md). Calibration fits all
    three per table.
    """

    mu_slide: float = 0.2
    mu_roll: float = 0.007
    spin_decel: float = 10.0


@dataclass(frozen=True, slots=True)
class Cushion:
    """Ball-cushion parameters.

    ``restitution`` is the energetic coefficient of the Mathavan, Jackson and Parkin (2010)
    impact model, which also follows the ball's spin through the impact: 0.98 is the only value
    published inside that model (their fit to measured rebounds, snooker cushions). It is not
    the 0.6-0.9 "ball-rail restitution" of Alciatore's lists, which is an observed ratio of
    centre speeds before and after: an outcome the model reproduces (a perpendicular rolling hit
    keeps 0.62 of its speed once it rolls again, "loses about half", Alciatore's cushion
    efficiency page; docs/model.md). ``friction`` is the ball-cushion sliding friction
    (Mathavan et al.: 0.14). ``ball_ball_restitution`` and ``ball_ball_friction`` are
    Alciatore's typical 0.95 and 0.06. Calibration moves restitution and friction per table.
    """

    restitution: float = 0.98
    friction: float = 0.14
    ball_ball_restitution: float = 0.95
    ball_ball_friction: float = 0.06


@dataclass(frozen=True, slots=True)
class Pocket:
    """One pocket: its name, the two jaw points (where the cushion noses end) and an aim point.

    ``aim`` is the point a ball centre is sent toward: the middle of the mouth segment joining the
    two jaw points (for a corner, on the 45-degree line across the corner; for a side pocket, on
    the nose line at the middle of the table's length). A ball scores here when its centre line
    passes between the jaws with at least one ball radius of clearance from each jaw point.
    """

    name: str
    jaw_a: tuple[float, float]
    jaw_b: tuple[float, float]
    aim: tuple[float, float]
    rails: tuple[RailName, ...]


@dataclass(frozen=True, slots=True)
class TableSpec:
    """A pool table: playing surface, ball, sights, pockets, cloth and cushion. SI units.

    Built-in figures (WPA Equipment Specifications): 9-ft surface 100 x 50 in nose to nose,
    8-ft 92 x 46 in; the 7-ft 78 x 39 in surface has no WPA figure and is common practice.
    Ball 2 1/4 in (57.15 mm), 5.5-6 oz (156-170 g; 0.163 kg used). Cushion nose height 63.5 %
    of the ball diameter. Sights mark eighths of the length and quarters of the width, their
    centres 3 11/16 in (93.7 mm) behind the nose. Corner mouth 4.5-4.625 in, side 5-5.125 in
    (the smaller limit is used), facing angles 142 and 104 degrees.
    """

    name: str
    length: float
    width: float
    ball_diameter: float = 2.25 * INCH
    ball_mass: float = 0.163
    nose_height_ratio: float = 0.635
    sight_setback: float = (3 + 11 / 16) * INCH
    corner_mouth: float = 4.5 * INCH
    side_mouth: float = 5.0 * INCH
    corner_facing_deg: float = 142.0
    side_facing_deg: float = 104.0
    cloth: Cloth = field(default_factory=Cloth)
    cushion: Cushion = field(default_factory=Cushion)
    description: str = ""

    # ----- derived figures -------------------------------------------------------------------
    @property
    def ball_radius(self) -> float:
        """R = D / 2."""
        return self.ball_diameter / 2.0

    @property
    def diamond(self) -> float:
        """One diamond in metres: length / 8 (= width / 4 on a 2:1 table)."""
        return self.length / 8.0

    @property
    def diamond_across(self) -> float:
        """One diamond across the table: width / 4 (sights mark quarters of the width)."""
        return self.width / 4.0

    @property
    def nose_height(self) -> float:
        """Height of the cushion nose above the cloth, h = ratio * D (WPA: 63.5 %)."""
        return self.nose_height_ratio * self.ball_diameter

    @property
    def contact_angle(self) -> float:
        """Angle theta of the cushion contact above the ball's equator: sin(theta) = (h - R)/R.

        Mathavan, Jackson and Parkin (2010), geometry of the cushion contact.
        """
        r = self.ball_radius
        return math.asin((self.nose_height - r) / r)

    @property
    def corner_jaw(self) -> float:
        """Distance along each nose line from the corner to a corner jaw point.

        The mouth is measured point to point across the corner at 45 degrees, so each jaw sits
        mouth / sqrt(2) from the corner where the two nose lines meet.
        """
        return self.corner_mouth / math.sqrt(2.0)

    # ----- diamonds <-> metres (the one place that owns the mapping) -------------------------
    def to_metres(self, x_d: float, y_d: float) -> tuple[float, float]:
        """A point in diamonds to metres."""
        return (x_d * self.diamond, y_d * self.diamond_across)

    def to_diamonds(self, x_m: float, y_m: float) -> tuple[float, float]:
        """A point in metres to diamonds."""
        return (x_m / self.diamond, y_m / self.diamond_across)

    def rail_unit(self, rail: RailName) -> float:
        """Metres per diamond along a rail (long rails: length/8; short rails: width/4)."""
        return self.diamond if rail in ("left", "right") else self.diamond_across

    def along_to_diamonds(self, rail: RailName, along_m: float) -> float:
        """A coordinate along a rail (x on left/right, y on head/foot) to diamonds."""
        return along_m / self.rail_unit(rail)

    def along_to_metres(self, rail: RailName, along_d: float) -> float:
        """A coordinate along a rail in diamonds to metres."""
        return along_d * self.rail_unit(rail)

    def rail_span(self, rail: RailName) -> float:
        """Length of a rail's nose line in metres (long rails: length; short rails: width)."""
        return self.length if rail in ("left", "right") else self.width

    # ----- rails ----------------------------------------------------------------------------
    def nose_line(self, rail: RailName) -> float:
        """The constant coordinate of a rail's cushion nose (x for head/foot, y for left/right)."""
        return {"head": 0.0, "foot": self.length, "left": 0.0, "right": self.width}[_rail(rail)]

    def reflection_line(self, rail: RailName) -> float:
        """The line ball centres reflect about: one ball radius inside the nose."""
        r = self.ball_radius
        return {"head": r, "foot": self.length - r, "left": r, "right": self.width - r}[_rail(rail)]

    def sight_line(self, rail: RailName) -> float:
        """The line of sights: the sight set-back (93.7 mm) behind the nose."""
        s = self.sight_setback
        return {"head": -s, "foot": self.length + s, "left": -s, "right": self.width + s}[
            _rail(rail)
        ]

    def cushion_segments(self, rail: RailName) -> tuple[tuple[float, float], ...]:
        """The stretches of a rail's nose (along-rail metres) that are cushion, not pocket."""
        return cushion_stretches(self)[_rail(rail)]

    def on_cushion(self, rail: RailName, along: float) -> bool:
        """True when a ball touching this rail with its centre at ``along`` meets cushion."""
        stretches = cushion_stretches(self).get(rail) or cushion_stretches(self)[_rail(rail)]
        return on_stretches(stretches, along)

    def ball_box(self) -> tuple[float, float, float, float]:
        """(xmin, xmax, ymin, ymax): the box ball centres move in, one radius inside the noses."""
        r = self.ball_radius
        return (r, self.length - r, r, self.width - r)

    def pocket_at(self, rail: RailName, along: float) -> Pocket:
        """The pocket whose opening holds a crossing of the ball box at ``along`` on ``rail``."""
        axis = 1 - axis_of(rail)
        best, best_d = None, math.inf
        for p in self.pockets().values():
            if rail in p.rails:
                d = abs(p.aim[axis] - along)
                if d < best_d:
                    best, best_d = p, d
        assert best is not None
        return best

    # ----- pockets --------------------------------------------------------------------------
    def pockets(self) -> Mapping[str, Pocket]:
        """The six pockets, keyed by their contract names."""
        return _pockets(self)

    def pocket(self, name: str) -> Pocket:
        """One pocket by name, or a TableError naming the allowed names."""
        p = self.pockets().get(name)
        if p is None:
            raise TableError(f"unknown pocket {name!r}: use one of {', '.join(POCKETS)}")
        return p

    # ----- positions ------------------------------------------------------------------------
    def check_position(self, x_m: float, y_m: float, what: str = "ball") -> None:
        """Raise TableError unless a ball centre at (x, y) sits on the playing surface.

        A ball frozen to a cushion (centre exactly R inside the nose) is valid; a centre closer
        than R to a nose is not. A tolerance of 1e-9 m absorbs rounding of diamond input.
        """
        r = self.ball_radius
        eps = 1e-9
        if not (r - eps <= x_m <= self.length - r + eps and r - eps <= y_m <= self.width - r + eps):
            xd, yd = self.to_diamonds(x_m, y_m)
            lo_x, lo_y = self.to_diamonds(r, r)
            raise TableError(
                f"{what} at {xd:.3f},{yd:.3f} diamonds is off the table: a ball centre must be "
                f"within x {lo_x:.3f}..{8 - lo_x:.3f} and y {lo_y:.3f}..{4 - lo_y:.3f}"
            )

    def clamp_position(self, x_m: float, y_m: float) -> tuple[float, float]:
        """The nearest valid ball-centre position."""
        r = self.ball_radius
        return (min(max(x_m, r), self.length - r), min(max(y_m, r), self.width - r))

    def with_params(self, **changes: Any) -> TableSpec:
        """A copy with some fields replaced (cloth and cushion as whole dataclasses)."""
        return replace(self, **changes)


Stretches = Mapping[RailName, tuple[tuple[float, float], ...]]
_STRETCHES: dict[int, tuple[TableSpec, Stretches]] = {}


def on_stretches(stretches: tuple[tuple[float, float], ...], along: float) -> bool:
    """True when ``along`` lies on one of a rail's cushion stretches (a plain loop: hot path)."""
    for a, b in stretches:  # noqa: SIM110
        if a <= along <= b:
            return True
    return False


def cushion_stretches(table: TableSpec) -> Stretches:
    """Each rail's cushion stretches (along-rail metres between the pocket mouths), cached by
    the table object's identity (hashing a frozen spec costs more than the lookup saves)."""
    hit = _STRETCHES.get(id(table))
    if hit is not None and hit[0] is table:
        return hit[1]
    j = table.corner_jaw
    half = table.length / 2.0
    s = table.side_mouth / 2.0
    long = ((j, half - s), (half + s, table.length - j))
    short = ((j, table.width - j),)
    got: Stretches = MappingProxyType({"head": short, "foot": short, "left": long, "right": long})
    if len(_STRETCHES) > 32:
        _STRETCHES.clear()
    _STRETCHES[id(table)] = (table, got)
    return got


def _rail(rail: str) -> RailName:
    if rail not in RAILS:
        raise TableError(f"unknown rail {rail!r}: use one of {', '.join(RAILS)}")
    return rail


def check_rail(rail: str) -> RailName:
    """Return the rail name if it is one of head, foot, left, right; else a TableError."""
    return _rail(rail)


@lru_cache(maxsize=16)
def _pockets(t: TableSpec) -> Mapping[str, Pocket]:
    j = t.corner_jaw
    L, W = t.length, t.width
    half = L / 2.0
    s = t.side_mouth / 2.0
    out: dict[str, Pocket] = {}

    def corner(name: str, cx: float, cy: float, sx: float, sy: float) -> None:
        # (cx, cy) is the corner where the nose lines meet; (sx, sy) points into the table.
        a = (cx + sx * j, cy)
        b = (cx, cy + sy * j)
        aim = ((a[0] + b[0]) / 2.0, (a[1] + b[1]) / 2.0)
        x_rail: RailName = "head" if cx == 0.0 else "foot"
        y_rail: RailName = "left" if cy == 0.0 else "right"
        out[name] = Pocket(name, a, b, aim, (x_rail, y_rail))

    corner("head-left", 0.0, 0.0, 1.0, 1.0)
    corner("foot-left", L, 0.0, -1.0, 1.0)
    corner("head-right", 0.0, W, 1.0, -1.0)
    corner("foot-right", L, W, -1.0, -1.0)
    out["side-left"] = Pocket("side-left", (half - s, 0.0), (half + s, 0.0), (half, 0.0), ("left",))
    out["side-right"] = Pocket("side-right", (half - s, W), (half + s, W), (half, W), ("right",))
    return MappingProxyType({name: out[name] for name in POCKETS})


# ----- built-in tables ------------------------------------------------------------------------

BUILTIN_TABLES: dict[str, TableSpec] = {
    "9ft": TableSpec(
        "9ft",
        100 * INCH,
        50 * INCH,
        description="9-ft tournament table, 100 x 50 in playing surface (WPA)",
    ),
    "8ft": TableSpec(
        "8ft",
        92 * INCH,
        46 * INCH,
        description="8-ft table, 92 x 46 in playing surface (WPA)",
    ),
    "7ft": TableSpec(
        "7ft",
        78 * INCH,
        39 * INCH,
        description="7-ft bar table, 78 x 39 in playing surface (common practice, no WPA figure)",
    ),
}

DEFAULT_TABLE = "9ft"


def builtin_table(name: str) -> TableSpec:
    """A built-in table by name, or a TableError listing the names."""
    try:
        return BUILTIN_TABLES[name]
    except KeyError:
        raise TableError(
            f"unknown table {name!r}: built-in tables are {', '.join(BUILTIN_TABLES)}; "
            "add your own with 'tablecoach tables add FILE'"
        ) from None
