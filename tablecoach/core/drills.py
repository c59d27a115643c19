"""Drill packs: read and check TOML packs, and deal random clean setups from them.

A pack (docs/drills.md) names one or more items; each item is a shot family (a preset name or a
structure), rectangles in diamonds where each ball may be placed, the speeds to play, the target
pockets and a weight. ``deal`` draws setups at random from those regions with an explicit
generator, keeping only setups the ideal model can solve with a clean path.
"""

from __future__ import annotations

import math
import re
import tomllib
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from importlib import resources
from pathlib import Path
from types import MappingProxyType
from typing import Any

import numpy as np

from . import validate
from .aim import ideal
from .placing import DEFAULT_GRID, GRIDS, snap, spans
from .shots import (
    PRESETS,
    SPEED_PRESETS,
    Aim,
    Family,
    Setup,
    ShotError,
    Stroke,
    make_family,
    make_setup,
)
from .strokes import parse_speed
from .table import POCKETS, TableError, TableSpec

DEFAULT_DRILL = "mixed"
"""The pack a first-time player practises."""

MAX_TRIES = 300
"""Random draws per setup before a region is declared to give no clean path."""

MAX_COUNT = 500
MAX_REPEAT = 10
"""At most this many shots in a row of one setup (``repeat`` in a pack)."""

_PACK_KEYS = {"title", "description", "count", "item", "grid", "repeat"}
_ITEM_KEYS = {
    "family",
    "travel",
    "rails",
    "pocket",
    "pockets",
    "title",
    "speeds",
    "english",
    "follow",
    "weight",
    "regions",
}
_BALLS = ("cue", "object", "target")


class DrillError(ValueError):
    """A drill pack is broken or cannot be dealt; the message names the file, line and field."""


@dataclass(frozen=True, slots=True)
class Rect:
    """A rectangle of allowed ball-centre positions, in diamonds (x along, y across)."""

    x0: float
    x1: float
    y0: float
    y1: float

    @property
    def area(self) -> float:
        return (self.x1 - self.x0) * (self.y1 - self.y0)


@dataclass(frozen=True, slots=True)
class DrillItem:
    """One kind of shot in a pack.

    ``regions`` maps a ball ("cue", "object" for banks, "target" for the ball a kick must
    contact) to the rectangles it may be placed in. ``pockets`` are the target pockets (a bank
    draws one at random; empty for kicks). ``speeds`` in m/s, ``names`` their labels (a preset
    name or "1.8 m/s"). ``weight`` is the item's share of the pack.
    """

    family: Family
    regions: Mapping[str, tuple[Rect, ...]]
    speeds: tuple[float, ...]
    pockets: tuple[str, ...] = ()
    weight: float = 1.0
    english: float = 0.0
    follow: float = 0.0
    names: tuple[str, ...] = ()

    def speed_label(self, k: int) -> str:
        return self.names[k] if k < len(self.names) else f"{self.speeds[k]:g} m/s"


@dataclass(frozen=True, slots=True)
class Drill:
    """A drill pack: ``name`` (the file's stem), a title and description, its items, how many
    setups a round deals (``count``) and the file it came from. ``grid`` is how finely dealt
    positions are placed (steps a diamond: 4 quarters, 8 eighths; placing.py) and ``repeat``
    how many times in a row each setup is shot (1: a new setup every shot)."""

    name: str
    title: str
    description: str
    items: tuple[DrillItem, ...]
    count: int
    source: Path | None = None
    grid: int = DEFAULT_GRID
    repeat: int = 1


@dataclass(frozen=True, slots=True)
class Dealt:
    """One dealt setup: the setup (metres), the stroke, the pack item it came from, a label
    such as "cross-corner bank, medium", and the ideal aim that proved its path clean."""

    setup: Setup
    stroke: Stroke
    item: int
    label: str
    aim: Aim | None = field(default=None, compare=False)


# ----- finding lines in the text ----------------------------------------------------------------

_ITEM_HEADER = re.compile(r"^\s*\[\[\s*item\s*\]\]")
_TOML_POS = re.compile(r"at line (\d+), column (\d+)")


def _line_of(text: str, path: Sequence[str | int]) -> int | None:
    """The 1-based line where a field is written: the key's line inside its [[item]] section
    (top-level keys before the first item), else the section's header line."""
    lines = text.splitlines()
    headers = [i for i, line in enumerate(lines) if _ITEM_HEADER.match(line)]
    start, end = 0, len(lines)
    rest = list(path)
    if rest and rest[0] == "item":
        rest = rest[1:]
        first = rest[0] if rest else None
        k = first if isinstance(first, int) else None
        if k is not None:
            rest = rest[1:]
        if k is not None and k < len(headers):
            start = headers[k]
            end = headers[k + 1] if k + 1 < len(headers) else len(lines)
        elif headers:
            return headers[0] + 1
    elif headers:
        end = headers[0]
    keys = [str(x) for x in rest if not isinstance(x, int)]
    for key in reversed(keys):
        pat = re.compile(rf'(^|[\s{{,.])"?{re.escape(key)}"?\s*=')
        for i in range(start, end):
            if pat.search(lines[i].split("#", 1)[0]):
                return i + 1
    if path and path[0] == "item" and start < len(lines) and _ITEM_HEADER.match(lines[start]):
        return start + 1
    return None


class _Ctx:
    """Error building for one file: every message carries the file, the line and the field."""

    def __init__(self, source: str, text: str) -> None:
        self.source = source
        self.text = text

    def fail(self, path: Sequence[str | int], msg: str) -> DrillError:
        name = ""
        for p in path:
            name += f"[{p}]" if isinstance(p, int) else (f".{p}" if name else str(p))
        line = _line_of(self.text, path)
        where = f"{self.source}, line {line}" if line else self.source
        return DrillError(f"{where}: field {name!r} {msg}")


# ----- parsing --------------------------------------------------------------------------------


def _num(ctx: _Ctx, path: list[str | int], v: Any) -> float:
    try:
        return validate.finite(v, "value")
    except validate.InputError:
        raise ctx.fail(path, f"must be a finite number, got {validate.show(v)}") from None


def _span(ctx: _Ctx, path: list[str | int], v: Any, top: float) -> tuple[float, float]:
    if not isinstance(v, list) or len(v) != 2:
        raise ctx.fail(path, f"must be a pair [low, high] in diamonds, got {v!r}")
    lo, hi = (_num(ctx, path, v[0]), _num(ctx, path, v[1]))
    if not (0.0 <= lo <= hi <= top):
        raise ctx.fail(path, f"= {v!r} must satisfy 0 <= low <= high <= {top:g} diamonds")
    return lo, hi


def _rects(ctx: _Ctx, path: list[str | int], v: Any) -> tuple[Rect, ...]:
    raw = [v] if isinstance(v, dict) else v
    if not isinstance(raw, list) or not raw:
        raise ctx.fail(path, "must be a rectangle { x = [lo, hi], y = [lo, hi] } or a list of them")
    out = []
    for r in raw:
        if not isinstance(r, dict) or set(r) != {"x", "y"}:
            raise ctx.fail(path, "must be a rectangle { x = [lo, hi], y = [lo, hi] } in diamonds")
        x0, x1 = _span(ctx, path, r["x"], 8.0)
        y0, y1 = _span(ctx, path, r["y"], 4.0)
        out.append(Rect(x0, x1, y0, y1))
    return tuple(out)


def _family(ctx: _Ctx, path: list[str | int], raw: dict[str, Any]) -> Family:
    fam = raw.get("family")
    structure = {k: raw[k] for k in ("travel", "rails") if k in raw}
    if fam is not None and not isinstance(fam, str):
        raise ctx.fail([*path, "family"], "must be a preset name")
    if fam is not None and not structure:
        if fam not in PRESETS:
            raise ctx.fail(
                [*path, "family"], f"= {fam!r} is not a preset; use one of {', '.join(PRESETS)}"
            )
        return PRESETS[fam]
    if "travel" not in structure or "rails" not in structure:
        raise ctx.fail(
            [*path, "family" if not structure else ("rails" if "travel" in raw else "travel")],
            "is missing: give a preset family, or both travel ('cue'/'object') and rails",
        )
    if fam in PRESETS:
        raise ctx.fail(
            [*path, "family"],
            f"= {fam!r} is a preset: leave out travel and rails, or name your family otherwise",
        )
    rails = structure["rails"]
    if not isinstance(rails, list) or not all(isinstance(r, str) for r in rails):
        raise ctx.fail([*path, "rails"], "must be a list of rail names")
    pocket = raw.get("pocket")
    title = raw.get("title", "")
    try:
        return make_family(
            str(structure["travel"]),
            rails,
            pocket if isinstance(pocket, str) else None,
            name=fam or "custom",
            title=title if isinstance(title, str) else "",
        )
    except (ShotError, TableError) as exc:
        key = "travel" if "travelling" in str(exc) else "rails"
        raise ctx.fail([*path, key], f"is wrong: {exc}") from None


def _item(ctx: _Ctx, k: int, raw: Any) -> DrillItem:
    path: list[str | int] = ["item", k]
    if not isinstance(raw, dict):
        raise ctx.fail(path, "must be a table of item fields")
    unknown = sorted(set(raw) - _ITEM_KEYS)
    if unknown:
        raise ctx.fail(
            [*path, unknown[0]], f"is not an item field; allowed: {', '.join(sorted(_ITEM_KEYS))}"
        )
    fam = _family(ctx, path, raw)
    # pockets
    pockets_raw = raw.get("pockets", [raw["pocket"]] if "pocket" in raw else [])
    if isinstance(pockets_raw, str):
        pockets_raw = [pockets_raw]
    pkey = "pockets" if "pockets" in raw else "pocket"
    if not isinstance(pockets_raw, list):
        raise ctx.fail([*path, pkey], "must be a list of pocket names")
    for p in pockets_raw:
        if p not in POCKETS:
            raise ctx.fail([*path, pkey], f"= {p!r} is not a pocket; use {', '.join(POCKETS)}")
    pockets = tuple(pockets_raw)
    if fam.travel == "object" and not pockets:
        if fam.pocket is None:
            raise ctx.fail([*path, "pockets"], "is missing: a bank needs a target pocket")
        pockets = (fam.pocket,)
    if fam.travel == "cue" and pockets:
        raise ctx.fail([*path, pkey], "must be left out for a kick: a kick's target is a ball")
    # regions
    regions_raw = raw.get("regions")
    if not isinstance(regions_raw, dict):
        raise ctx.fail([*path, "regions"], "is missing: give a rectangle for each ball")
    for ball in regions_raw:
        if ball not in _BALLS:
            raise ctx.fail([*path, "regions", ball], f"is not a ball; use {', '.join(_BALLS)}")
    needed = ("cue", "object") if fam.travel == "object" else ("cue", "target")
    for ball in needed:
        if ball not in regions_raw:
            raise ctx.fail([*path, "regions", ball], f"is missing: where may the {ball} ball go?")
    for ball in regions_raw:
        if ball not in needed:
            kind = "bank" if fam.travel == "object" else "kick"
            raise ctx.fail([*path, "regions", ball], f"is not used by a {kind}")
    regions = {b: _rects(ctx, [*path, "regions", b], regions_raw[b]) for b in needed}
    # speeds
    speeds_raw = raw.get("speeds", ["medium"])
    if not isinstance(speeds_raw, list) or not speeds_raw:
        raise ctx.fail([*path, "speeds"], "must be a list of speed names or m/s values")
    speeds, names = [], []
    for s in speeds_raw:
        if (
            isinstance(s, bool)
            or not isinstance(s, str | int | float)
            or (isinstance(s, int) and abs(s) > 1000)
            or (isinstance(s, str) and len(s) > validate.MAX_NUMBER_CHARS)
        ):
            raise ctx.fail(
                [*path, "speeds"],
                f"has {validate.show(s)}: use {', '.join(SPEED_PRESETS)}, lengths or m/s",
            )
        try:
            v = parse_speed(s)
        except ShotError as exc:
            raise ctx.fail([*path, "speeds"], f"has a bad speed: {exc}") from None
        speeds.append(v)
        key = s.strip().lower() if isinstance(s, str) else ""
        if key in SPEED_PRESETS:
            names.append(key)
        elif isinstance(s, str) and key.replace(" ", "").endswith(("l", "length", "lengths")):
            names.append(key.replace(" ", "").removesuffix("lengths").removesuffix("length"))
            names[-1] = names[-1].removesuffix("l") + "L"
        else:
            names.append(f"{v:g} m/s")
    weight = _num(ctx, [*path, "weight"], raw.get("weight", 1.0))
    if weight <= 0:
        raise ctx.fail([*path, "weight"], f"= {weight:g} must be above 0")
    spin = {}
    for key in ("english", "follow"):
        v = _num(ctx, [*path, key], raw.get(key, 0.0))
        if abs(v) > 1.0:
            raise ctx.fail([*path, key], f"= {v:g} tips: keep within 1 tip of centre")
        spin[key] = v
    return DrillItem(
        fam,
        MappingProxyType(regions),
        tuple(speeds),
        pockets,
        weight,
        spin["english"],
        spin["follow"],
        tuple(names),
    )


def _plain(text: str) -> bool:
    """No control characters but tab and newline (validate.text's rule)."""
    try:
        validate.text(text, "description")
    except validate.InputError:
        return False
    return True


def parse_drill(text: str, name: str, source: str = "<drill>", path: Path | None = None) -> Drill:
    """Parse and check a pack from its TOML text; any problem is one DrillError line."""
    ctx = _Ctx(source, text)
    try:
        data = validate.toml_text(text, source)
    except tomllib.TOMLDecodeError as exc:
        m = _TOML_POS.search(str(exc))
        where = f"{source}, line {m.group(1)}" if m else source
        raise DrillError(f"{where}: not valid TOML ({exc})") from None
    except validate.InputError as exc:
        raise DrillError(str(exc)) from None
    unknown = sorted(set(data) - _PACK_KEYS)
    if unknown:
        raise ctx.fail(
            [unknown[0]], f"is not a pack field; allowed: {', '.join(sorted(_PACK_KEYS))}"
        )
    title = data.get("title", name)
    if (
        not isinstance(title, str)
        or not title.strip()
        or len(title) > 200
        or not title.strip().isprintable()
    ):
        raise ctx.fail(["title"], "must be a non-empty line of printable text (at most 200)")
    desc = data.get("description", "")
    if not isinstance(desc, str) or len(desc) > validate.TEXT_MAX or not _plain(desc):
        raise ctx.fail(
            ["description"], "must be text (at most 2000 characters, no control characters)"
        )
    count = data.get("count", 20)
    if isinstance(count, bool) or not isinstance(count, int) or not (1 <= count <= MAX_COUNT):
        raise ctx.fail(["count"], f"= {count!r} must be a whole number from 1 to {MAX_COUNT}")
    items_raw = data.get("item")
    if not isinstance(items_raw, list) or not items_raw:
        raise ctx.fail(["item"], "is missing: a pack needs at least one [[item]]")
    items = tuple(_item(ctx, k, raw) for k, raw in enumerate(items_raw))
    grid = data.get("grid", DEFAULT_GRID)
    if isinstance(grid, bool) or grid not in GRIDS:
        raise ctx.fail(["grid"], f"= {grid!r}: use 4 (quarter diamonds) or 8 (eighths)")
    repeat = data.get("repeat", 1)
    if isinstance(repeat, bool) or not isinstance(repeat, int) or not 1 <= repeat <= MAX_REPEAT:
        raise ctx.fail(["repeat"], f"= {repeat!r} must be a whole number from 1 to {MAX_REPEAT}")
    return Drill(name, title.strip(), desc.strip(), items, count, path, grid, repeat)


def load_drill(path: str | Path) -> Drill:
    """Read a pack from a TOML file; its name is the file's stem."""
    p = Path(path)
    try:
        text = p.read_text(encoding="utf-8")
    except OSError as exc:
        raise DrillError(f"{p}: cannot read the drill file ({exc.strerror})") from None
    except UnicodeDecodeError:
        raise DrillError(f"{p}: not a text file (a drill pack is UTF-8 TOML)") from None
    return parse_drill(text, p.stem, str(p), p)


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
        stroke = Stroke(item.speeds[si], item.english, item.follow)
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


def names_of(drills: Iterable[Drill]) -> list[str]:
    return sorted(d.name for d in drills)


__all__ = [
    "DEFAULT_DRILL",
    "Dealt",
    "Drill",
    "DrillError",
    "DrillItem",
    "Rect",
    "all_drills",
    "builtin_dir",
    "builtin_drills",
    "check_pack",
    "deal",
    "describe",
    "find_drill",
    "label_of",
    "load_drill",
    "parse_drill",
    "sample_setups",
]
