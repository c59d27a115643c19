"""The ideal (mirror) aim model: the forward trace, the unfolded aim, its margin, convergence.

Pure reflection of ball centres about each rail's reflection line (one ball radius inside the
nose), solved by unfolding (geometry.py). It is exactly right only for a slow ball off one rail
(docs/model.md); the physical model (aim/physical.py) starts its search from its reading.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence

import numpy as np

from ..geometry import (
    LineFit,
    Point,
    box_exit,
    fold_point,
    nearest_point_to_lines,
    point_line_distance,
    reflect_vector,
    unfold,
    unit,
)
from ..shots import (
    Aim,
    Convergence,
    RailPoint,
    Setup,
    ShotError,
    Stroke,
    Trace,
    make_setup,
    rails_text,
)
from ..table import (
    RAILS,
    Pocket,
    RailName,
    TableError,
    TableSpec,
    axis_of,
    cushion_stretches,
    on_stretches,
)
from .sights import direction_of, reading_of

# ----- the trace ------------------------------------------------------------------------------


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


def trace(table: TableSpec, setup: Setup, direction: Point) -> Trace:
    """Follow the travelling ball from its start along ``direction`` under ideal reflection.

    The ball centre moves in the box one radius inside the noses. At each wall it meets cushion
    (reflect) or a pocket opening (drops: clean if it clears both jaws, else rattles out). It
    stops at the first ball it meets (centre within one diameter). The landing is the first wall
    crossing after the family's rails, ignoring balls, as a player sees when practising the
    kick with the object ball taken off.
    """
    box = table.ball_box()
    stretches = cushion_stretches(table)
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
    for walls in range(1, n + 4):
        t, code = box_exit(p, d, box)
        rail = RAILS[code]
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
                        f"meets the target ball after {rails_text(hit)}, "
                        f"not after {rails_text(rails)}"
                    )
                else:
                    outcome = f"runs into another ball after {rails_text(hit)}"
        along = q[1] if rail in ("head", "foot") else q[0]
        if walls == n + 1:
            landing = RailPoint(rail, along)
        if on_stretches(stretches[rail], along):
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
        pocket = table.pocket_at(rail, along)
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
                outcome = f"drops in {pocket.name} after {rails_text(hit)}"
            else:
                outcome = f"rattles in the jaws of {pocket.name} after {rails_text(hit)}"
        break
    if not outcome:
        outcome = f"touches {rails_text(hit)} and misses the target"
    return Trace(tuple(path), tuple(hit), landing, scores, outcome, tuple(contacts))


# ----- the aim --------------------------------------------------------------------------------


def unfolded_direction(table: TableSpec, setup: Setup) -> tuple[Point, tuple[Point, ...]]:
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


def check_contacts(table: TableSpec, setup: Setup, contacts: Sequence[Point]) -> None:
    xmin, xmax, ymin, ymax = table.ball_box()
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
            pocket = table.pocket_at(rail, along)
            raise ShotError(
                f"no clean path: the {rail}-rail contact falls in the {pocket.name} pocket mouth"
            )


def _rail_beyond(rail: str, along: float, lo: float) -> str:
    if rail in ("head", "foot"):
        return "left" if along < lo else "right"
    return "head" if along < lo else "foot"


def solve(table: TableSpec, setup: Setup, stroke: Stroke | None = None, margin: bool = True) -> Aim:
    """The ideal (mirror) aim for a setup: reading, contacts, landing, margin.

    Raises ShotError with a plain reason when there is no clean path (a contact off its rail,
    in a pocket mouth, another ball in the way, a jaw in the way of the pocket). With
    ``margin=False`` (checking candidate setups) the margin search is skipped and both
    margins are 0.
    """
    stroke = stroke or Stroke()
    d, contacts = unfolded_direction(table, setup)
    check_contacts(table, setup, contacts)
    first = setup.family.rails[0]
    start = setup.start
    reading = reading_of(table, start, d, first)
    if reading is None:
        raise ShotError(f"the {first} rail is behind the ball for this path")
    tr = trace(table, setup, d)
    if not tr.scores:
        raise ShotError(f"no clean path: the ideal line {tr.outcome}")
    assert tr.landing is not None
    minus = plus = 0.0
    if margin:
        minus, plus = margins(table, setup, first, reading, lambda dd: trace(table, setup, dd))
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


def margins(
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


# ----- convergence ---------------------------------------------------------------------------


def mirror_reading(table: TableSpec, setup: Setup) -> float:
    """The reading toward the target's unfolded image, or the middle of the first rail when
    there is none (where the physical search is centred)."""
    rails = setup.family.rails
    target = setup.target_point(table)
    uf = unfold(target, rails, [table.reflection_line(r) for r in rails])
    d = (uf.image[0] - setup.start[0], uf.image[1] - setup.start[1])
    rd = reading_of(table, setup.start, d, rails[0]) if math.hypot(*d) > 1e-12 else None
    if rd is None:
        return 0.5 * table.rail_span(rails[0])
    return rd


def cue_behind(table: TableSpec, setup: Setup) -> Setup:
    """Move the cue ball straight behind the object ball (a full hit) for convergence work."""
    try:
        d, _ = unfolded_direction(table, setup)
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


def trial_setups(table: TableSpec, setup: Setup, starts: Sequence[Point]) -> list[Setup]:
    """The setup with its travelling ball at each start (for a bank, the cue ball put behind
    each object position, since only the object's path matters), valid ones only."""
    out: list[Setup] = []
    for s in starts:
        t = setup.with_start(s)
        if setup.family.travel == "object":
            t = cue_behind(table, t)
        try:
            make_setup(table, t.family, t.cue, t.object, t.pocket, t.target_ball)
        except ValueError:
            continue
        out.append(t)
    return out


def convergence(table: TableSpec, setup: Setup, starts: Sequence[Point]) -> Convergence:
    """The point nearest the ideal aim lines from ``starts`` (geometry.nearest_point_to_lines).

    Every line passes through the target's unfolded image, so the spread is 0; starts without
    a clean path are left out.
    """
    pts: list[Point] = []
    dirs: list[Point] = []
    for s in starts:
        trial = setup.with_start(s)
        if setup.family.travel == "object":
            trial = cue_behind(table, trial)
        try:
            d, contacts = unfolded_direction(table, trial)
            check_contacts(table, trial, contacts)
        except (ShotError, TableError):
            continue
        pts.append(s)
        dirs.append(d)
    if len(pts) < 2:
        raise ShotError("too few start positions with a clean path to find a convergence point")
    fit: LineFit = nearest_point_to_lines(np.array(pts), np.array(dirs))
    return Convergence(fit.point, fit.spread, tuple(pts), tuple(dirs), "ideal")
