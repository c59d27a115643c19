"""Finding drill packs (built in and the player's own) and dealing clean setups from them.

``deal`` draws setups at random from a pack's regions with an explicit generator, keeping only
setups the ideal model can solve with a clean path (aim/ideal.py); positions sit on the grid a
player places balls by (placing.py).
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field
from importlib import resources
from pathlib import Path
from typing import Any

import numpy as np

from . import strokes
from .aim import ideal
from .drill_packs import Drill, DrillError, DrillItem, Rect, load_drill
from .placing import snap, spans
from .shots import STROKE_LENGTHS, Aim, Family, Setup, ShotError, Stroke, make_setup
from .table import TableError, TableSpec

DEFAULT_DRILL = "mixed"
"""The pack a first-time player practises."""

MAX_TRIES = 300
"""Random draws per setup before a region is declared to give no clean path."""


@dataclass(frozen=True, slots=True)
class Dealt:
    """One dealt setup: the setup (metres), the stroke, the pack item it came from, a label
    such as "cross-corner bank, medium", and the ideal aim that proved its path clean."""

    setup: Setup
    stroke: Stroke
    item: int
    label: str
    aim: Aim | None = field(default=None, compare=False)


# ----- finding packs --------------------------------------------------------------------------


def builtin_dir() -> Path:
    """Where the built-in packs are: tablecoach/_drills in an installed wheel, else the
    checkout's top-level drills/ folder."""
    try:
        installed = Path(str(resources.files("tablecoach") / "_drills"))
    except (ModuleNotFoundError, TypeError):
        installed = Path(__file__).resolve().parents[1] / "_drills"
    if installed.is_dir():
        return installed
    return Path(__file__).resolve().parents[2] / "drills"


def _load_dir(folder: Path, errors: list[str] | None) -> dict[str, Drill]:
    out: dict[str, Drill] = {}
    if not folder.is_dir():
        return out
    for f in sorted(folder.glob("*.toml")):
        try:
            d = load_drill(f)
        except DrillError as exc:
            if errors is None:
                raise
            errors.append(str(exc))
            continue
        out[d.name] = d
    return out


def builtin_drills() -> dict[str, Drill]:
    """The packs shipped with tablecoach, by name."""
    return _load_dir(builtin_dir(), None)


def all_drills(user_dir: Path | None, errors: list[str] | None = None) -> dict[str, Drill]:
    """Built-in packs and the player's own (in ``user_dir``; theirs win on a name clash).

    With an ``errors`` list, a broken file of the player's is reported there and skipped;
    without one it raises DrillError.
    """
    out = builtin_drills()
    if user_dir is not None:
        out.update(_load_dir(Path(user_dir), errors))
    return out


def find_drill(name: str, user_dir: Path | None) -> Drill:
    """A pack by name (the player's own first), or from a path to a .toml file."""
    if name.endswith(".toml") and Path(name).is_file():
        return load_drill(name)
    if user_dir is not None:
        mine = Path(user_dir) / f"{name}.toml"
        if mine.is_file():
            return load_drill(mine)
    found = builtin_dir() / f"{name}.toml"
    if found.is_file():
        return load_drill(found)
    names = sorted(all_drills(user_dir, errors=[]))
    raise DrillError(
        f"unknown drill pack {name!r}: use one of {', '.join(names)}, or a path to a .toml file"
    )


# ----- dealing --------------------------------------------------------------------------------


def _placeable(table: TableSpec, r: Rect) -> Rect | None:
    """The part of a rectangle where a ball centre fits on this table (check_position's box)."""
    mx, my = table.to_diamonds(table.ball_radius, table.ball_radius)
    x0, x1 = max(r.x0, mx), min(r.x1, 8.0 - mx)
    y0, y1 = max(r.y0, my), min(r.y1, 4.0 - my)
    if x0 > x1 or y0 > y1:
        return None
    return Rect(x0, x1, y0, y1)


def _point(
    table: TableSpec, rng: np.random.Generator, rects: Sequence[Rect], grid: int
) -> tuple[float, float]:
    """A point a player can place in a union of rectangles: a rectangle by area (a point-sized
    one counts), then a grid position or a frozen one in it, uniformly (placing.snap)."""
    areas = np.array([max(r.area, 1e-12) for r in rects])
    r = rects[int(rng.choice(len(rects), p=areas / areas.sum()))] if len(rects) > 1 else rects[0]
    sx, sy = spans(table, r.x0, r.x1, r.y0, r.y1)
    return (snap(sx, grid, rng), snap(sy, grid, rng))


def label_of(item: DrillItem, speed_index: int) -> str:
    """A short label: the family's title in lower case and the speed, e.g.
    "cross-corner bank, medium"."""
    title = item.family.title or item.family.name
    return f"{title[:1].lower()}{title[1:]}, {item.speed_label(speed_index)}"


def _where(drill: Drill) -> str:
    return str(drill.source) if drill.source is not None else f"drill {drill.name!r}"


MAX_BANK_CUT = math.radians(40.0)
"""Banks are dealt with at most a 40-degree cut on the object ball: a thinner cut loses most of
the cue ball's speed and turns the drill into a cut-shot drill (common practice, no source)."""


def _draw(
    table: TableSpec, drill: Drill, k: int, rng: np.random.Generator, tries: int = MAX_TRIES
) -> Dealt:
    """One clean setup for item k, by rejection sampling (at most ``tries`` draws)."""
    item = drill.items[k]
    regions: dict[str, list[Rect]] = {}
    for ball, rects in item.regions.items():
        ok = [q for q in (_placeable(table, r) for r in rects) if q is not None]
        if not ok:
            raise DrillError(
                f"{_where(drill)}: item {k + 1} ({item.family.name}): the {ball} region lies "
                f"closer to the cushions than a ball can be placed on the {table.name} table"
            )
        regions[ball] = ok
    for _ in range(tries):
        si = int(rng.integers(len(item.speeds)))
        pocket = item.pockets[int(rng.integers(len(item.pockets)))] if item.pockets else None
        pts = {b: table.to_metres(*_point(table, rng, rs, drill.grid)) for b, rs in regions.items()}
        stroke = Stroke(item_speed(table, item, si), item.english, item.follow)
        try:
            for b, p in pts.items():
                table.check_position(p[0], p[1], f"{b} ball")
            setup = make_setup(
                table, item.family, pts["cue"], pts.get("object"), pocket, pts.get("target")
            )
            aim = ideal.solve(table, setup, stroke, margin=False)  # a clean path is enough
        except (ShotError, TableError):
            continue
        if aim.cut_angle is not None and aim.cut_angle > MAX_BANK_CUT:
            continue
        return Dealt(setup, stroke, k, label_of(item, si), aim)
    raise DrillError(
        f"{_where(drill)}: item {k + 1} ({item.family.name}): the regions yield no clean path "
        f"on the {table.name} table in {tries} random tries; widen or move the regions"
    )


def _apportion(weights: Sequence[float], n: int) -> list[int]:
    """Split n slots in proportion to weights (largest remainders; ties to the earlier item)."""
    w = np.asarray(weights, dtype=float)
    quota = w / w.sum() * n
    base = np.floor(quota).astype(int)
    rest = n - int(base.sum())
    order = sorted(range(len(w)), key=lambda i: (-(quota[i] - base[i]), i))
    for i in order[:rest]:
        base[i] += 1
    return [int(x) for x in base]


def deal(
    table: TableSpec,
    drill: Drill,
    rng: np.random.Generator,
    count: int | None = None,
    blocked: bool = False,
) -> list[Dealt]:
    """Deal ``count`` (default the pack's count) clean setups from a pack.

    Items get slots in proportion to their weights. By default the order is shuffled
    (interleaved, or "random", practice), which gives better retention than practising one
    kind of shot in a block (Shea and Morgan 1979, J. Exp. Psychol.: Human Learning and
    Memory 5, 179-187; reference details from memory); ``blocked=True`` keeps each item's
    setups together, in pack order. The same generator state gives the same setups.
    """
    n = drill.count if count is None else int(count)
    if n < 0:
        raise DrillError(f"cannot deal {n} setups")
    slots = [
        k for k, c in enumerate(_apportion([i.weight for i in drill.items], n)) for _ in range(c)
    ]
    if not blocked:
        slots = [slots[i] for i in rng.permutation(len(slots))]
    return [_draw(table, drill, k, rng) for k in slots]


def item_speed(table: TableSpec, item: DrillItem, k: int) -> float:
    """The m/s of an item's k-th speed on ``table``: a named stroke or lengths of travel are a
    distance, so their m/s is this table's (strokes.book_strokes, strokes.stroke_speed); a
    number of m/s is taken as written."""
    label = item.speed_label(k)
    if label in STROKE_LENGTHS:
        return strokes.book_strokes(table)[label]
    if label.endswith("L"):
        return strokes.stroke_speed(table, float(label[:-1]))
    return item.speeds[k]


def deal_item(table: TableSpec, drill: Drill, k: int, rng: np.random.Generator) -> Dealt:
    """One clean setup of the pack's item ``k`` (as ``deal`` draws them)."""
    return _draw(table, drill, k, rng)


def sample_setups(table: TableSpec, drill: Drill, rng: np.random.Generator, n: int) -> list[Dealt]:
    """``n`` candidate setups for the coach to choose from: items drawn by weight, each clean."""
    w = np.array([i.weight for i in drill.items], dtype=float)
    if n <= 0:
        return []
    ks = rng.choice(len(drill.items), size=n, p=w / w.sum())
    return [_draw(table, drill, int(k), rng) for k in ks]


def check_pack(drill: Drill, tables: Iterable[TableSpec], rng: np.random.Generator) -> list[Dealt]:
    """Deal one setup of every item on every table, raising DrillError if one has no clean
    path; returns the setups dealt (used by ``tablecoach drills validate``)."""
    return [_draw(t, drill, k, rng) for t in tables for k in range(len(drill.items))]


def describe(drill: Drill) -> dict[str, Any]:
    """A pack as plain data (for --json output)."""

    def fam(f: Family) -> dict[str, Any]:
        return {"name": f.name, "travel": f.travel, "rails": list(f.rails), "title": f.title}

    return {
        "name": drill.name,
        "title": drill.title,
        "description": drill.description,
        "count": drill.count,
        "grid": drill.grid,
        "repeat": drill.repeat,
        "source": str(drill.source) if drill.source else None,
        "items": [
            {
                "family": fam(i.family),
                "pockets": list(i.pockets),
                "speeds": list(i.speeds),
                "speed_names": list(i.names),
                "english": i.english,
                "follow": i.follow,
                "weight": i.weight,
                "regions": {
                    b: [{"x": [r.x0, r.x1], "y": [r.y0, r.y1]} for r in rs]
                    for b, rs in i.regions.items()
                },
            }
            for i in drill.items
        ],
    }
