"""Shot families, setups, strokes, the ideal aim, tracing, margins and the convergence point.

A family is one structure: which ball travels (``cue`` for kicks, ``object`` for banks), the
ordered rails it must touch, and the target (a pocket, or a ball to contact). Named families are
presets over that structure; drill files may define more.

The ideal model is pure reflection of ball centres about each rail's reflection line (one ball
radius inside the nose), solved by unfolding (see geometry.py). Physical models plug in through
``solve_aim(..., model="physical")`` (core/physics/aim.py).
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from typing import Literal

import numpy as np

from .geometry import (
    LineFit,
    Point,
    axis_of,
    fold_point,
    nearest_point_to_lines,
    point_line_distance,
    reflect_vector,
    unfold,
    unit,
)
from .records import ShotRecord
from .table import RAILS, Pocket, RailName, TableError, TableSpec, check_rail

Travel = Literal["cue", "object"]


class ShotError(ValueError):
    """A shot cannot be set up or has no clean path; the message says why, in a player's words."""


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
default cloth and cushion (``stroke_speed`` computes it for any table; a test keeps these in
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


def stroke_speed(table: TableSpec, lengths: float | str) -> float:
    """The cue-ball speed (m/s) of a stroke of ``lengths`` of travel (or a stroke name) on this
    table, by the physical model (physics/travel.py)."""
    from .physics.params import model_of  # noqa: PLC0415  (lazy: physics is heavy)
    from .physics.travel import speed_for_lengths  # noqa: PLC0415

    if isinstance(lengths, str):
        lengths = STROKE_LENGTHS[lengths]
    try:
        return speed_for_lengths(model_of(table), table, float(lengths))
    except ValueError as exc:
        raise ShotError(str(exc)) from None


def book_strokes(table: TableSpec) -> dict[str, float]:
    """Each named stroke's m/s on this table (the cached ``SPEED_PRESETS`` on the default)."""
    if table == _default_table():
        return dict(SPEED_PRESETS)
    return {n: stroke_speed(table, n) for n in STROKE_LENGTHS}


def travel_lengths(table: TableSpec, speed: float) -> float:
    """Lengths of travel, cushions counted, of a centre-ball stroke at ``speed`` m/s on this
    table (physics/travel.py)."""
    from .physics.params import model_of  # noqa: PLC0415  (lazy: physics is heavy)
    from .physics.travel import lengths_for_speed  # noqa: PLC0415

    return lengths_for_speed(model_of(table), table, speed)


def _lengths_text(text: str) -> float | None:
    """``3L``, ``3.5 L``, ``3 lengths`` -> 3.0; None when the text is not in lengths."""
    t = text.strip().lower().replace(" ", "")
    for suffix in ("lengths", "length", "l"):
        if t.endswith(suffix):
            try:
                return float(t.removesuffix(suffix))
            except ValueError:
                return None
    return None


def parse_speed(text: str | float, table: TableSpec | None = None) -> float:
    """A stroke name, lengths of travel (``3L``) or a number of m/s to m/s (0.1 to 13 m/s, the
    published break speed). Names and lengths are turned into m/s for ``table`` (the default
    9-ft table's figures when None)."""
    names = ", ".join(SPEED_PRESETS)
    if isinstance(text, int | float):
        v = float(text)
    else:
        key = text.strip().lower()
        if key in SPEED_PRESETS:
            return SPEED_PRESETS[key] if table is None else book_strokes(table)[key]
        lengths = _lengths_text(key)
        if lengths is not None:
            if not (math.isfinite(lengths) and 0.2 <= lengths <= 6.0):
                raise ShotError(f"speed {text!r}: give 0.2 to 6 table lengths of travel")
            return stroke_speed(table or _default_table(), lengths)
        try:
            v = float(key.removesuffix("m/s").strip())
        except ValueError:
            raise ShotError(
                f"speed {text!r} is not a stroke ({names}), lengths of travel such as 3L, "
                "or a number of m/s"
            ) from None
    if not (math.isfinite(v) and 0.1 <= v <= 13.0):
        raise ShotError(f"speed {v:g} m/s is outside 0.1 to 13 m/s")
    return v


def _default_table() -> TableSpec:
    from .table import DEFAULT_TABLE, builtin_table  # noqa: PLC0415

    return builtin_table(DEFAULT_TABLE)


def speed_name(speed: float, table: TableSpec | None = None) -> str:
    """The named stroke nearest this speed: by lengths of travel on ``table`` when given, else
    by the default table's bands (``SPEED_BANDS``)."""
    if table is not None:
        lengths = math.log(max(travel_lengths(table, speed), 1e-6))
        return min(STROKE_LENGTHS, key=lambda n: abs(math.log(STROKE_LENGTHS[n]) - lengths))
    for name, (lo, hi) in SPEED_BANDS.items():
        if lo <= speed < hi:
            return name
    return "slow" if speed < SPEED_BANDS["slow"][0] else "power"


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
    """A rail point as a distance (diamonds) round the table: left 0-8, foot 8-12, right
    12-20 (running back toward the head), head 20-24. Used to compare landings on any rails."""
    d = table.along_to_diamonds(p.rail, p.at)
    if p.rail == "left":
        return d
    if p.rail == "foot":
        return 8.0 + d
    if p.rail == "right":
        return 12.0 + (8.0 - d)
    return 20.0 + (4.0 - d)


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


# ----- the ideal trace ----------------------------------------------------------------------


def _box(table: TableSpec) -> tuple[float, float, float, float]:
    r = table.ball_radius
    return (r, table.length - r, r, table.width - r)


_Segs = dict[RailName, tuple[tuple[float, float], ...]]
_GEOM: dict[int, tuple[TableSpec, _Segs]] = {}


def _segments(table: TableSpec) -> _Segs:
    """Cushion stretches per rail, cached by table identity (hashing a spec is slow)."""
    hit = _GEOM.get(id(table))
    if hit is not None and hit[0] is table:
        return hit[1]
    segs = {r: table.cushion_segments(r) for r in RAILS}
    if len(_GEOM) > 32:
        _GEOM.clear()
    _GEOM[id(table)] = (table, segs)
    return segs


def _on_cushion(segs: tuple[tuple[float, float], ...], along: float) -> bool:
    """True when ``along`` lies on one of the cushion stretches (a plain loop: hot path)."""
    for a, b in segs:  # noqa: SIM110
        if a <= along <= b:
            return True
    return False


def _pocket_at(table: TableSpec, rail: RailName, along: float) -> Pocket:
    """The pocket whose opening holds a boundary crossing at ``along`` on ``rail``."""
    best = None
    best_d = math.inf
    for p in table.pockets().values():
        if rail not in p.rails:
            continue
        axis = 1 if rail in ("head", "foot") else 0
        d = abs(p.aim[axis] - along)
        if d < best_d:
            best, best_d = p, d
    assert best is not None
    return best


def clean_entry(pocket: Pocket, p: Point, d: Point, radius: float) -> bool:
    """True when a ball of this radius moving from p along unit d passes between the jaws
    with at least one radius of clearance from each jaw point (and is heading into the pocket)."""
    da = point_line_distance(pocket.jaw_a, p, d)
    db = point_line_distance(pocket.jaw_b, p, d)
    if da * db >= 0.0:
        return False
    if min(abs(da), abs(db)) < radius - 1e-12:
        return False
    mid = ((pocket.jaw_a[0] + pocket.jaw_b[0]) / 2.0, (pocket.jaw_a[1] + pocket.jaw_b[1]) / 2.0)
    return (mid[0] - p[0]) * d[0] + (mid[1] - p[1]) * d[1] > 0.0


def _ball_hit(p: Point, d: Point, c: Point, reach: float, t_max: float) -> float | None:
    """Smallest t in [0, t_max] with |p + t d - c| = reach (d unit), or None."""
    fx, fy = p[0] - c[0], p[1] - c[1]
    b = fx * d[0] + fy * d[1]
    cc = fx * fx + fy * fy - reach * reach
    disc = b * b - cc
    if disc < 0.0:
        return None
    t = -b - math.sqrt(disc)
    if t < -1e-12 or t > t_max:
        return None
    return max(t, 0.0)


def trace_ideal(table: TableSpec, setup: Setup, direction: Point) -> Trace:
    """Follow the travelling ball from its start along ``direction`` under ideal reflection.

    The ball centre moves in the box one radius inside the noses. At each wall it meets cushion
    (reflect) or a pocket opening (drops: clean if it clears both jaws, else rattles out). It
    stops at the first ball it meets (centre within one diameter). The landing is the first wall
    crossing after the family's rails, ignoring balls, as a player sees when practising the
    kick with the object ball taken off.
    """
    xmin, xmax, ymin, ymax = _box(table)
    rails = setup.family.rails
    n = len(rails)
    p = setup.start
    d = unit(direction)
    target_ball = setup.target_ball
    obstacles = setup.obstacles()
    reach = table.ball_diameter
    path: list[Point] = [p]
    hit: list[RailName] = []
    contacts: list[RailPoint] = []
    landing: RailPoint | None = None
    outcome = ""
    scores = False
    done = False  # the ball has met a ball or dropped; only the landing is still followed
    segs = _segments(table)
    for walls in range(1, n + 4):
        if d[0] > 1e-15:
            tx = (xmax - p[0]) / d[0]
        elif d[0] < -1e-15:
            tx = (xmin - p[0]) / d[0]
        else:
            tx = math.inf
        if d[1] > 1e-15:
            ty = (ymax - p[1]) / d[1]
        elif d[1] < -1e-15:
            ty = (ymin - p[1]) / d[1]
        else:
            ty = math.inf
        rail: RailName
        if tx <= ty:
            t = tx
            rail = "foot" if d[0] > 0 else "head"
        else:
            t = ty
            rail = "right" if d[1] > 0 else "left"
        t = max(t, 0.0)
        q = (p[0] + t * d[0], p[1] + t * d[1])
        if not done:
            first_t, first_what = math.inf, ""
            if target_ball is not None:
                tb = _ball_hit(p, d, target_ball, reach, t)
                if tb is not None:
                    first_t, first_what = tb, "target"
            if walls > 1 or setup.family.travel == "cue":
                for ob in obstacles:
                    to = _ball_hit(p, d, ob, reach, t)
                    if to is not None and to < first_t:
                        first_t, first_what = to, "obstacle"
            if first_what:
                done = True
                path.append((p[0] + first_t * d[0], p[1] + first_t * d[1]))
                if first_what == "target" and tuple(hit) == rails:
                    scores, outcome = True, "contacts the target ball"
                elif first_what == "target":
                    outcome = (
                        f"meets the target ball after {_rails_text(hit)}, "
                        f"not after {_rails_text(rails)}"
                    )
                else:
                    outcome = f"runs into another ball after {_rails_text(hit)}"
        along = q[1] if rail in ("head", "foot") else q[0]
        if walls == n + 1:
            landing = RailPoint(rail, along)
        if _on_cushion(segs[rail], along):
            if not done:
                path.append(q)
                hit.append(rail)
                contacts.append(RailPoint(rail, along))
            d = reflect_vector(d, rail)
            p = q
            if done and landing is not None:
                break
            continue
        # the ball reaches a pocket opening: it ends here, landing included
        pocket = _pocket_at(table, rail, along)
        if landing is None:
            landing = RailPoint(rail, along)
        if not done:
            path.append(q)
            clean = clean_entry(pocket, p, d, table.ball_radius)
            if setup.pocket == pocket.name and tuple(hit) == rails and clean:
                scores, outcome = True, f"drops in {pocket.name}"
            elif setup.pocket == pocket.name and tuple(hit) == rails:
                outcome = f"hits a jaw of {pocket.name} and stays out"
            elif clean:
                outcome = f"drops in {pocket.name} after {_rails_text(hit)}"
            else:
                outcome = f"rattles in the jaws of {pocket.name} after {_rails_text(hit)}"
        break
    if not outcome:
        outcome = f"touches {_rails_text(hit)} and misses the target"
    return Trace(tuple(path), tuple(hit), landing, scores, outcome, tuple(contacts))


def _rails_text(rails: Sequence[str]) -> str:
    if not rails:
        return "no rail"
    return "the " + ", ".join(rails) + (" rail" if len(rails) == 1 else " rails")


# ----- readings <-> directions ------------------------------------------------------------


def reading_of(table: TableSpec, start: Point, direction: Point, rail: RailName) -> float | None:
    """Where the line from ``start`` along ``direction`` crosses ``rail``'s line of sights
    (metres along the rail), or None if it runs away from that rail."""
    ax = axis_of(rail)
    line = table.sight_line(rail)
    dd = direction[ax]
    if abs(dd) < 1e-15:
        return None
    t = (line - start[ax]) / dd
    if t <= 0.0:
        return None
    return start[1 - ax] + t * direction[1 - ax]


def direction_of(table: TableSpec, start: Point, rail: RailName, reading: float) -> Point:
    """The unit direction from ``start`` toward the sight point at ``reading`` on ``rail``."""
    ax = axis_of(rail)
    sight = [0.0, 0.0]
    sight[ax] = table.sight_line(rail)
    sight[1 - ax] = reading
    return unit((sight[0] - start[0], sight[1] - start[1]))


# ----- the ideal aim ----------------------------------------------------------------------


def _ideal_direction(table: TableSpec, setup: Setup) -> tuple[Point, tuple[Point, ...]]:
    """Unfold the target across the family's rails: the aim direction and the contact points."""
    rails = setup.family.rails
    lines = [table.reflection_line(r) for r in rails]
    start = setup.start
    target = setup.target_point(table)
    uf = unfold(target, rails, lines)
    d = (uf.image[0] - start[0], uf.image[1] - start[1])
    if math.hypot(*d) < 1e-9:
        raise ShotError("the start and the target's image coincide: no aim line")
    d = unit(d)
    contacts: list[Point] = []
    for k, rail in enumerate(rails):
        ax = axis_of(rail)
        if abs(d[ax]) < 1e-15:
            raise ShotError(f"the path runs parallel to the {rail} rail and never reaches it")
        t = (uf.lines[k] - start[ax]) / d[ax]
        if t <= 1e-12:
            raise ShotError(f"the {rail} rail is behind the ball for this path")
        up = (start[0] + t * d[0], start[1] + t * d[1])
        contacts.append(fold_point(up, rails, lines, k))
    return d, tuple(contacts)


def _check_contacts(table: TableSpec, setup: Setup, contacts: Sequence[Point]) -> None:
    xmin, xmax, ymin, ymax = _box(table)
    eps = 1e-9
    for rail, c in zip(setup.family.rails, contacts, strict=True):
        along = c[1] if rail in ("head", "foot") else c[0]
        lo, hi = (ymin, ymax) if rail in ("head", "foot") else (xmin, xmax)
        if not (lo - eps <= along <= hi + eps):
            other = _rail_beyond(rail, along, lo)
            raise ShotError(
                f"no clean path: the ball would reach the {other} rail before the {rail} rail"
            )
        if not table.on_cushion(rail, along):
            pocket = _pocket_at(table, rail, along)
            raise ShotError(
                f"no clean path: the {rail}-rail contact falls in the {pocket.name} pocket mouth"
            )


def _rail_beyond(rail: str, along: float, lo: float) -> str:
    if rail in ("head", "foot"):
        return "left" if along < lo else "right"
    return "head" if along < lo else "foot"


def solve_ideal(
    table: TableSpec, setup: Setup, stroke: Stroke | None = None, margin: bool = True
) -> Aim:
    """The ideal (mirror) aim for a setup: reading, contacts, landing, margin.

    Raises ShotError with a plain reason when there is no clean path (a contact off its rail,
    in a pocket mouth, another ball in the way, a jaw in the way of the pocket). With
    ``margin=False`` (checking candidate setups) the margin search is skipped and both
    margins are 0.
    """
    stroke = stroke or Stroke()
    d, contacts = _ideal_direction(table, setup)
    _check_contacts(table, setup, contacts)
    first = setup.family.rails[0]
    start = setup.start
    reading = reading_of(table, start, d, first)
    if reading is None:
        raise ShotError(f"the {first} rail is behind the ball for this path")
    tr = trace_ideal(table, setup, d)
    if not tr.scores:
        raise ShotError(f"no clean path: the ideal line {tr.outcome}")
    assert tr.landing is not None
    minus = plus = 0.0
    if margin:
        minus, plus = _margin(
            table, setup, first, reading, lambda dd: trace_ideal(table, setup, dd)
        )
    ghost = cut = None
    if setup.family.travel == "object":
        ghost, cut = _ghost(table, setup, d)
    target = setup.target_point(table)
    rc = tuple(
        RailPoint(r, c[1] if r in ("head", "foot") else c[0])
        for r, c in zip(setup.family.rails, contacts, strict=True)
    )
    notes: tuple[str, ...] = ()
    if cut is not None and cut > math.radians(70):
        notes = (f"thin cut ({math.degrees(cut):.0f} degrees): hard to send the object ball true",)
    return Aim(
        setup,
        "ideal",
        first,
        reading,
        d,
        rc,
        (start, *contacts, target),
        tr.landing,
        target,
        minus,
        plus,
        ghost,
        cut,
        stroke,
        notes,
    )


def _ghost(table: TableSpec, setup: Setup, d: Point) -> tuple[Point, float]:
    """Ghost-ball position (cue centre at contact) and cut angle for sending the object along d."""
    assert setup.object is not None
    o = setup.object
    g = (o[0] - table.ball_diameter * d[0], o[1] - table.ball_diameter * d[1])
    cue = setup.cue
    v = (g[0] - cue[0], g[1] - cue[1])
    n = math.hypot(*v)
    if n < 1e-9:
        return g, 0.0
    cosc = (v[0] * d[0] + v[1] * d[1]) / n
    cut = math.acos(max(-1.0, min(1.0, cosc)))
    if cut >= math.radians(89.0):
        raise ShotError(
            f"no clean path: the cue ball cannot send the object ball that way "
            f"(a {math.degrees(cut):.0f}-degree cut); move the cue ball behind the object ball"
        )
    return g, cut


def _margin(
    table: TableSpec,
    setup: Setup,
    rail: RailName,
    reading: float,
    trace: Callable[[Point], Trace],
    tol: float = 4e-4,
) -> tuple[float, float]:
    """How far the reading may move either way and still score (metres along the sight line).

    Steps out by doubling from 3 mm until the trace stops scoring, then bisects to ``tol``
    (0.4 mm, about 0.001 diamond).
    A window wider than 1.5 diamonds is reported as 1.5 diamonds.
    """
    start = setup.start
    cap = 1.5 * table.rail_unit(rail)

    def ok(r: float) -> bool:
        try:
            dd = direction_of(table, start, rail, r)
        except ValueError:
            return False
        return bool(trace(dd).scores)

    out = []
    for sign in (-1.0, 1.0):
        good, step = 0.0, 0.003
        bad = None
        while step <= cap:
            if ok(reading + sign * step):
                good = step
                step *= 2.0
            else:
                bad = step
                break
        if bad is None:
            if ok(reading + sign * cap):
                out.append(cap)
                continue
            bad = cap
        while bad - good > tol:
            mid = 0.5 * (good + bad)
            if ok(reading + sign * mid):
                good = mid
            else:
                bad = mid
        out.append(good)
    return out[0], out[1]


# ----- models: one entry point -------------------------------------------------------------

MODELS = ("ideal", "physical")


def solve_aim(
    table: TableSpec, setup: Setup, stroke: Stroke | None = None, model: str = "ideal"
) -> Aim:
    """Solve the aim under the named model ('ideal' or 'physical')."""
    if model == "ideal":
        return solve_ideal(table, setup, stroke)
    if model == "physical":
        from .physics import aim as physical  # noqa: PLC0415  (lazy: keeps the ideal path light)

        return physical.solve_physical(table, setup, stroke or Stroke())
    raise ShotError(f"unknown model {model!r}: use one of {', '.join(MODELS)}")


class StopsShort(ShotError):
    """At this speed the travelling ball stops before it reaches the target."""


def solve_playable(
    table: TableSpec,
    setup: Setup,
    stroke: Stroke | None = None,
    model: str = "ideal",
    strokes: dict[str, float] | None = None,
) -> tuple[Aim, str]:
    """Solve at the asked speed; if the ball would stop short, at the softest firmer named
    stroke that makes it (``strokes``: name -> m/s, default this table's book strokes).

    Returns the aim (its ``stroke`` is the speed to play) and a note for the player, empty when
    the asked speed works. Raises the first error when the failure is not one of pace, or when
    no firmer stroke makes the shot either (saying what stops the firmer ones).
    """
    stroke = stroke or Stroke()
    try:
        return solve_aim(table, setup, stroke, model), ""
    except StopsShort as exc:
        first: ShotError = exc
    if strokes is None:
        strokes = book_strokes(table)
    later: ShotError | None = None
    for name, v in strokes.items():
        if v <= stroke.speed * 1.001:
            continue
        try:
            aim = solve_aim(table, setup, Stroke(v, stroke.english, stroke.follow), model)
        except ShotError as exc:
            if not isinstance(exc, StopsShort):
                later = later or exc
            continue
        note = f"at {speed_name(stroke.speed, table)} pace the ball stops short: play it {name}"
        if v > POWER_CAUTION:
            note += " (keep the line of the shot clear of people)"
        return aim, note
    if later is not None:
        raise ShotError(f"{first}; played firmer: {later}") from None
    raise first


POWER_CAUTION = 3.2
"""Cue-ball speed (m/s) from which the card adds a word of caution: the top of Alciatore's
published fast band ("typical shot speeds"); above it balls can leave the table."""


def predict(
    table: TableSpec,
    setup: Setup,
    reading: float,
    stroke: Stroke | None = None,
    model: str = "ideal",
) -> Trace:
    """Where a given reading (metres along the first rail's line of sights) takes the ball."""
    rail = setup.family.rails[0]
    d = direction_of(table, setup.start, rail, reading)
    if model == "ideal":
        return trace_ideal(table, setup, d)
    if model == "physical":
        from .physics import aim as physical  # noqa: PLC0415

        return physical.predict_physical(table, setup, stroke or Stroke(), reading)
    raise ShotError(f"unknown model {model!r}: use one of {', '.join(MODELS)}")


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


def neighbourhood(table: TableSpec, centre: Point, half: float = 0.5, n: int = 3) -> list[Point]:
    """An n x n grid of start positions within ``half`` diamonds of ``centre``, on the table."""
    out = []
    for i in range(n):
        for j in range(n):
            fx = -half + 2.0 * half * i / (n - 1) if n > 1 else 0.0
            fy = -half + 2.0 * half * j / (n - 1) if n > 1 else 0.0
            p = (centre[0] + fx * table.diamond, centre[1] + fy * table.diamond_across)
            out.append(table.clamp_position(*p))
    return out


def _with_start(setup: Setup, start: Point) -> Setup:
    if setup.family.travel == "object":
        return Setup(setup.family, setup.cue, start, setup.pocket, setup.target_ball)
    return Setup(setup.family, start, setup.object, setup.pocket, setup.target_ball)


def convergence(
    table: TableSpec,
    setup: Setup,
    starts: Sequence[Point] | None = None,
    stroke: Stroke | None = None,
    model: str = "ideal",
) -> Convergence:
    """The convergence point of the family of ``setup`` from a set of start positions.

    Each start is solved under the model (starts without a clean path are left out; for banks
    the cue ball is moved behind each object position, since only the object's path matters);
    the point is the least-squares nearest point to the solved aim lines (geometry.py). Under
    the ideal model every line passes through the target's unfolded image, so the spread is 0.
    """
    if starts is None:
        starts = neighbourhood(table, setup.start)
    if model == "physical":
        from .physics import aim as physical  # noqa: PLC0415

        return physical.convergence_physical(table, setup, list(starts), stroke or Stroke())
    pts: list[Point] = []
    dirs: list[Point] = []
    for s in starts:
        trial = _with_start(setup, s)
        if setup.family.travel == "object":
            trial = _cue_behind(table, trial)
        try:
            if model == "ideal":
                d, contacts = _ideal_direction(table, trial)
                _check_contacts(table, trial, contacts)
            else:
                d = solve_aim(table, trial, stroke, model).direction
        except (ShotError, TableError):
            continue
        pts.append(s)
        dirs.append(d)
    if len(pts) < 2:
        raise ShotError("too few start positions with a clean path to find a convergence point")
    fit: LineFit = nearest_point_to_lines(np.array(pts), np.array(dirs))
    return Convergence(fit.point, fit.spread, tuple(pts), tuple(dirs), model)


def _cue_behind(table: TableSpec, setup: Setup) -> Setup:
    """Move the cue ball straight behind the object ball (a full hit) for convergence work."""
    try:
        d, _ = _ideal_direction(table, setup)
    except ShotError:
        return setup
    assert setup.object is not None
    o = setup.object
    for k in (3.0, 2.0, 1.2):
        c = (o[0] - k * table.ball_diameter * d[0], o[1] - k * table.ball_diameter * d[1])
        c = table.clamp_position(*c)
        if math.hypot(c[0] - o[0], c[1] - o[1]) >= table.ball_diameter:
            return Setup(setup.family, c, o, setup.pocket, setup.target_ball)
    return setup


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


def compare_shift(
    table: TableSpec,
    reference: Setup,
    new: Setup,
    stroke: Stroke | None = None,
    model: str = "ideal",
) -> ShiftComparison:
    """Compare a parallel shift of the reference aim with a rotation about the convergence point.

    Misses are signed distances in diamonds round the table (perimeter_position) from the
    solved landing.
    """
    ref_aim = solve_aim(table, reference, stroke, model)
    new_aim = solve_aim(table, new, stroke, model)
    conv = convergence(table, reference, None, stroke, model)
    rail = reference.family.rails[0]
    start = new.start
    par = reading_of(table, start, ref_aim.direction, rail)
    rot_dir = unit((conv.point[0] - start[0], conv.point[1] - start[1]))
    rot = reading_of(table, start, rot_dir, rail)
    if par is None or rot is None:
        raise ShotError("the new position's lines do not reach the first rail")
    pl = predict(table, new, par, stroke, model).landing
    rl = predict(table, new, rot, stroke, model).landing
    sl = new_aim.landing
    pm = landing_distance(table, pl, sl) if pl else None
    rm = landing_distance(table, rl, sl) if rl else None
    return ShiftComparison(par, pl, rot, rl, new_aim.reading, sl, pm, rm)


def all_rails() -> tuple[RailName, ...]:
    """The four rail names in contract order."""
    return RAILS


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
