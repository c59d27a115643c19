"""Drill packs as data: the pack model, and reading and checking a pack's TOML (docs/drills.md).

A pack names one or more items; each item is a shot family (a preset name or a structure),
rectangles in diamonds where each ball may be placed, the speeds to play, the target pockets
and a weight. Every problem in a file is one DrillError naming the file, the line and the field.
"""

from __future__ import annotations

import re
import tomllib
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from types import MappingProxyType
from typing import Any

from . import validate
from .placing import DEFAULT_GRID, GRIDS
from .shots import PRESETS, SPEED_PRESETS, Family, ShotError, make_family
from .strokes import parse_speed
from .table import POCKETS, TableError

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
