"""The shot vocabulary: families, strokes, setups, rail points, traces, aims and their errors.

A family is one structure: which ball travels (``cue`` for kicks, ``object`` for banks), the
ordered rails it must touch, and the target (a pocket, or a ball to contact). Named families are
presets over that structure; drill files may define more. Solving lives in ``core/aim/``; the
m/s of a named stroke on a given table in ``core/strokes.py``.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Literal

from .geometry import Point
from .records import ShotRecord
from .table import RailName, TableSpec, check_rail, perimeter_diamonds

Travel = Literal["cue", "object"]


class ShotError(ValueError):
    """A shot cannot be set up or has no clean path; the message says why, in a player's words."""


class StopsShort(ShotError):
    """At this speed the travelling ball stops before it reaches the target."""


# ----- families -----------------------------------------------------------------------------


@dataclass(frozen=True, slots=True)
class Family:
    """A family of shots: the travelling ball, its ordered rails, and the kind of target.

    ``pocket`` is the family's default target pocket (for banks); kicks target a ball.
    """

    name: str
    travel: Travel
    rails: tuple[RailName, ...]
    pocket: str | None = None
    title: str = ""

    @property
    def target_kind(self) -> Literal["pocket", "ball"]:
        return "pocket" if self.pocket is not None else "ball"


def make_family(
    travel: str,
    rails: Sequence[str],
    pocket: str | None = None,
    name: str = "custom",
    title: str = "",
) -> Family:
    """Validate and build a family from its parts (drill files and the command line use this)."""
    if travel not in ("cue", "object"):
        raise ShotError(f"travelling ball {travel!r} must be 'cue' (kick) or 'object' (bank)")
    checked = tuple(check_rail(r) for r in rails)
    if not checked:
        raise ShotError("a family needs at least one rail (for example --rails right)")
    if len(checked) > 5:
        raise ShotError(f"{len(checked)} rails is more than this coach models (at most 5)")
    for a, b in zip(checked, checked[1:], strict=False):
        if a == b:
            raise ShotError(
                f"rail {a!r} twice in a row: a ball cannot touch one rail twice in a row"
            )
    return Family(name, travel, checked, pocket, title or name)  # type: ignore[arg-type]


PRESETS: dict[str, Family] = {
    f.name: f
    for f in (
        Family("one-rail-kick", "cue", ("right",), None, "One-rail kick"),
        Family("two-rail-kick", "cue", ("right", "foot"), None, "Two-rail kick"),
        Family("three-rail-kick", "cue", ("right", "foot", "left"), None, "Three-rail kick"),
        Family("cross-corner-bank", "object", ("right",), "foot-left", "Cross-corner bank"),
        Family("cross-side-bank", "object", ("right",), "side-left", "Cross-side bank"),
        Family("long-rail-bank", "object", ("foot",), "head-right", "Long-rail bank"),
        Family("two-rail-bank", "object", ("right", "left"), "foot-right", "Two-rail bank"),
    )
}


def preset(name: str) -> Family:
    """A preset family by name, or a ShotError listing them."""
    try:
        return PRESETS[name]
    except KeyError:
        raise ShotError(
            f"unknown family {name!r}: use one of {', '.join(PRESETS)}, "
            "or give --travel and --rails"
        ) from None


# ----- strokes -----------------------------------------------------------------------------

STROKE_LENGTHS: dict[str, float] = {
    "slow": 1.5,
    "lag": 2.0,
    "medium": 3.0,
    "fast": 3.75,
    "power": 4.25,
}
"""Named strokes as players say them: table lengths of travel up and down the table, cushions
counted, of a centre-ball stroke (physics/travel.py). Common practice, no single source: a lag
is one length up and back (2 lengths); a relaxed, ordinary stroke travels about 3 lengths, which
is our ``medium``; ``slow`` just carries past the far rail; ``fast`` and ``power`` step up by
three quarters and half a length, because end cushions take more of a hard ball's speed
(docs/model.md argues the names and lengths)."""

SPEED_PRESETS: dict[str, float] = {
    "slow": 1.185,
    "lag": 1.483,
    "medium": 2.392,
    "fast": 3.458,
    "power": 4.352,
}
"""Cue-ball speed off the tip (m/s) of each named stroke on the default 9-ft table at the
default cloth and cushion (``strokes.stroke_speed`` computes it for any table; a test keeps these in
step with it). For reference, D. Alciatore's "typical shot speeds" bands: slow 0.45-0.89,
medium 0.89-1.9, fast 1.9-3.2, power 3.2-4.5 m/s: a lag falls in his medium band and an
ordinary 3-length stroke in his fast band."""


def _bands() -> dict[str, tuple[float, float]]:
    names = list(SPEED_PRESETS)
    speeds = [SPEED_PRESETS[n] for n in names]
    edges = [0.1] + [math.sqrt(a * b) for a, b in zip(speeds, speeds[1:], strict=False)] + [13.0]
    return {n: (edges[i], edges[i + 1]) for i, n in enumerate(names)}


SPEED_BANDS: dict[str, tuple[float, float]] = _bands()
"""The m/s range filed under each named stroke (edges at the geometric mean of neighbours) on
the default table: history and the coach group attempts by it."""


@dataclass(frozen=True, slots=True)
class Stroke:
    """How the cue ball is struck: speed off the tip (m/s), english and follow in tips.

    ``english`` is side spin, positive to the player's right; ``follow`` positive above centre,
    negative for draw. Tips of offset are converted to metres in the physics module.
    """

    speed: float = SPEED_PRESETS["medium"]
    english: float = 0.0
    follow: float = 0.0


# ----- setups ------------------------------------------------------------------------------


@dataclass(frozen=True, slots=True)
class Setup:
    """One position of a family on one table, in metres.

    ``cue`` is the cue ball; ``object`` the object ball (banks) or None; ``target_ball`` the
    ball a kick must contact (None for pocket targets); ``pocket`` the target pocket.
    """

    family: Family
    cue: Point
    object: Point | None = None
    pocket: str | None = None
    target_ball: Point | None = None

    @property
    def start(self) -> Point:
        """The travelling ball's starting centre."""
        if self.family.travel == "object":
            assert self.object is not None
            return self.object
        return self.cue

    def target_point(self, table: TableSpec) -> Point:
        """The point the travelling ball's centre is sent to: pocket aim point or ball centre."""
        if self.pocket is not None:
            return table.pocket(self.pocket).aim
        assert self.target_ball is not None
        return self.target_ball

    def obstacles(self) -> list[Point]:
        """Balls the travelling ball must not meet before its target."""
        if self.family.travel == "object":
            return [self.cue]
        return [b for b in (self.object,) if b is not None and b != self.target_ball]

    def with_start(self, start: Point) -> Setup:
        """The same setup with the travelling ball moved to ``start`` (not re-validated)."""
        if self.family.travel == "object":
            return Setup(self.family, self.cue, start, self.pocket, self.target_ball)
        return Setup(self.family, start, self.object, self.pocket, self.target_ball)


def make_setup(
    table: TableSpec,
    family: Family,
    cue: Point,
    object_ball: Point | None = None,
    pocket: str | None = None,
    target_ball: Point | None = None,
) -> Setup:
    """Validate a setup: balls on the table, not overlapping, a target that exists.

    For a kick without an explicit target ball, the object ball is the target. A bank with no
    pocket takes the family's default pocket.
    """
    if family.travel == "object" and object_ball is None:
        raise ShotError("a bank needs the object ball's position (--object X,Y)")
    if family.travel == "cue" and target_ball is None and pocket is None:
        if object_ball is None:
            raise ShotError("a kick needs a ball to contact (--target-ball X,Y)")
        target_ball, object_ball = object_ball, None
    if pocket is None and target_ball is None:
        pocket = family.pocket
    if pocket is None and target_ball is None:
        raise ShotError("the shot has no target: give --pocket NAME or --target-ball X,Y")
    if pocket is not None:
        table.pocket(pocket)
    balls: list[tuple[str, Point]] = [("cue ball", cue)]
    if object_ball is not None:
        balls.append(("object ball", object_ball))
    if target_ball is not None:
        balls.append(("target ball", target_ball))
    for what, p in balls:
        table.check_position(p[0], p[1], what)
    d2 = table.ball_diameter
    for i in range(len(balls)):
        for j in range(i + 1, len(balls)):
            (na, a), (nb, b) = balls[i], balls[j]
            if math.hypot(a[0] - b[0], a[1] - b[1]) < d2 - 1e-9:
                raise ShotError(f"the {na} and the {nb} overlap: place them at least a ball apart")
    return Setup(family, cue, object_ball, pocket, target_ball)


# ----- results -----------------------------------------------------------------------------


@dataclass(frozen=True, slots=True)
class RailPoint:
    """A point on a rail: the rail and the coordinate along it in metres (x on left/right,
    y on head/foot), of the ball centre's crossing of that rail's reflection line."""

    rail: RailName
    at: float


def perimeter_position(table: TableSpec, p: RailPoint) -> float:
    """A rail point as a distance (diamonds) round the table (table.perimeter_diamonds: left
    0-8, foot 8-12, right 12-20 running back toward the head, head 20-24). Used to compare
    landings on any rails."""
    return perimeter_diamonds(p.rail, table.along_to_diamonds(p.rail, p.at))


def landing_distance(table: TableSpec, a: RailPoint, b: RailPoint) -> float:
    """Signed distance in diamonds round the table from ``b`` to ``a`` (shortest way)."""
    diff = perimeter_position(table, a) - perimeter_position(table, b)
    return (diff + 12.0) % 24.0 - 12.0


@dataclass(frozen=True, slots=True)
class Trace:
    """A forward trace of one reading: what the travelling ball did.

    ``path`` runs from the start through each cushion contact to where the trace ended;
    ``rails_hit`` lists the cushions touched before the ball met a ball or dropped; ``landing``
    is the first rail crossing after the family's rails (ignoring balls), ``scores`` whether the
    family's rails were hit in order and then the target reached, ``outcome`` says why not.
    """

    path: tuple[Point, ...]
    rails_hit: tuple[RailName, ...]
    landing: RailPoint | None
    scores: bool
    outcome: str
    contacts: tuple[RailPoint, ...] = ()


@dataclass(frozen=True, slots=True)
class Aim:
    """A solved aim.

    ``reading`` is where the stick line (the travelling ball's path before its first cushion)
    crosses the line of sights of ``rail`` (93.7 mm behind the nose), in metres along the rail.
    ``contacts`` are the ball-centre cushion contacts in order, ``landing`` the rail crossing a
    hit logs, ``margin_minus``/``margin_plus`` how far (metres along the sight line) the reading
    may move down or up and still score. For a bank, ``ghost`` is where the cue ball's centre
    must be at contact and ``cut_angle`` the cut in radians.
    """

    setup: Setup
    model: str
    rail: RailName
    reading: float
    direction: Point
    contacts: tuple[RailPoint, ...]
    path: tuple[Point, ...]
    landing: RailPoint
    target_point: Point
    margin_minus: float
    margin_plus: float
    ghost: Point | None = None
    cut_angle: float | None = None
    stroke: Stroke = field(default_factory=Stroke)
    notes: tuple[str, ...] = ()


# ----- convergence -------------------------------------------------------------------------


@dataclass(frozen=True, slots=True)
class Convergence:
    """The least-squares point nearest the aim lines of one family, target and table.

    ``point`` in metres (usually off the table), ``spread`` the RMS distance of the lines from
    it, ``starts`` and ``directions`` the positions used and their solved aim directions.
    """

    point: Point
    spread: float
    starts: tuple[Point, ...]
    directions: tuple[Point, ...]
    model: str


# ----- parallel shift against rotation ------------------------------------------------------


@dataclass(frozen=True, slots=True)
class ShiftComparison:
    """Where three lines from a new position land: the reference line shifted parallel, the
    line rotated through the convergence point, and the solved aim. Readings in metres."""

    parallel_reading: float
    parallel_landing: RailPoint | None
    rotated_reading: float
    rotated_landing: RailPoint | None
    solved_reading: float
    solved_landing: RailPoint
    parallel_miss: float | None
    rotated_miss: float | None


def rails_text(rails: Sequence[str]) -> str:
    """Rails as a player says them: "no rail", "the right rail", "the right, foot rails"."""
    if not rails:
        return "no rail"
    return "the " + ", ".join(rails) + (" rail" if len(rails) == 1 else " rails")


# ----- records <-> setups (diamonds at the edge) --------------------------------------------


def record_of(table: TableSpec, setup: Setup) -> ShotRecord:
    """A setup as the diamonds-based ShotRecord that attempts store."""

    def dia(p: Point | None) -> tuple[float, float] | None:
        if p is None:
            return None
        x, y = table.to_diamonds(*p)
        return (round(x, 6), round(y, 6))

    cue = dia(setup.cue)
    assert cue is not None
    f = setup.family
    return ShotRecord(
        f.travel,
        tuple(f.rails),
        cue,
        dia(setup.object),
        setup.pocket,
        dia(setup.target_ball),
        f.name,
    )


def setup_of(table: TableSpec, rec: ShotRecord) -> Setup:
    """Rebuild a validated Setup on ``table`` from a stored ShotRecord."""
    fam = PRESETS.get(rec.family)
    if fam is None or fam.travel != rec.travel or fam.rails != tuple(rec.rails):
        fam = make_family(rec.travel, rec.rails, rec.pocket, name=rec.family or "custom")

    def met(p: tuple[float, float] | None) -> Point | None:
        return None if p is None else table.to_metres(*p)

    cue = met(rec.cue)
    assert cue is not None
    return make_setup(table, fam, cue, met(rec.object), rec.pocket, met(rec.target_ball))
