"""Custom tables in TOML files: read them, check them against published ranges, write them back."""

from __future__ import annotations

import tomllib
from dataclasses import replace
from pathlib import Path
from typing import Any

from . import validate
from .table import BUILTIN_TABLES, DEFAULT_TABLE, Cloth, Cushion, TableError, TableSpec

# Allowed ranges for validation of custom tables (published ranges from the reference sheet).
_RANGES: dict[str, tuple[float, float]] = {
    "length": (1.5, 3.0),
    "width": (0.75, 1.5),
    "ball_diameter": (0.050, 0.0620),
    "ball_mass": (0.140, 0.180),
    "nose_height_ratio": (0.60, 0.66),
    "sight_setback": (0.05, 0.12),
    "corner_mouth": (0.100, 0.135),
    "side_mouth": (0.115, 0.145),
    "corner_facing_deg": (130.0, 150.0),
    "side_facing_deg": (95.0, 115.0),
    "cloth.mu_slide": (0.15, 0.4),
    "cloth.mu_roll": (0.005, 0.015),
    "cloth.spin_decel": (5.0, 15.0),
    "cushion.restitution": (0.5, 1.0),
    "cushion.friction": (0.0, 0.4),
    "cushion.ball_ball_restitution": (0.9, 1.0),
    "cushion.ball_ball_friction": (0.0, 0.1),
}


_TOP_FIELDS = {
    "name",
    "description",
    "length",
    "width",
    "size",
    "ball_diameter",
    "ball_mass",
    "nose_height_ratio",
    "sight_setback",
    "corner_mouth",
    "side_mouth",
    "corner_facing_deg",
    "side_facing_deg",
    "pockets",
    "cloth",
    "cushion",
    "base",
}


def table_from_mapping(data: dict[str, Any], source: str = "<table>") -> TableSpec:
    """Build and validate a TableSpec from a parsed TOML mapping.

    Fields (SI units): ``name``; ``base`` (a built-in table to start from, default 9ft);
    ``length`` and ``width`` in metres, or ``size = "9ft"|"8ft"|"7ft"``; optional ``ball_diameter``,
    ``ball_mass``, ``nose_height_ratio``, ``sight_setback``; ``[pockets]`` with ``corner_mouth``,
    ``side_mouth``, ``corner_facing_deg``, ``side_facing_deg``; ``[cloth]`` with ``mu_slide``,
    ``mu_roll``, ``spin_decel``; ``[cushion]`` with ``restitution``, ``friction``,
    ``ball_ball_restitution``, ``ball_ball_friction``. Every number is checked against the
    published range; a wrong field gets a TableError naming the file, the field and the range.
    """

    def fail(fieldname: str, msg: str) -> TableError:
        return TableError(f"{source}: field {fieldname!r} {msg}")

    unknown = set(data) - _TOP_FIELDS
    if unknown:
        raise fail(
            sorted(unknown)[0], f"is not a table field; allowed: {', '.join(sorted(_TOP_FIELDS))}"
        )
    name = data.get("name")
    if not isinstance(name, str) or not name.strip() or len(name.strip()) > 40:
        raise fail("name", "must be a non-empty string of at most 40 characters")
    if not name.strip().isprintable():
        raise fail("name", "must be printable characters only (1 to 40)")
    base_name = data.get("base", data.get("size", DEFAULT_TABLE))
    if not isinstance(base_name, str) or base_name not in BUILTIN_TABLES:
        key = "base" if "base" in data else "size"
        raise fail(key, f"must be one of {', '.join(BUILTIN_TABLES)}")
    base = BUILTIN_TABLES[base_name]

    def num(key: str, value: Any) -> float:
        lo, hi = _RANGES[key]
        if isinstance(value, bool) or not isinstance(value, int | float):
            raise fail(key, f"must be a number, got {validate.show(value)}")
        try:
            v = validate.finite(value, key)
        except validate.InputError:
            raise fail(key, f"is {validate.show(value)}, allowed range {lo:g} to {hi:g}") from None
        if not (lo <= v <= hi):
            raise fail(key, f"is {v:g}, allowed range {lo:g} to {hi:g}")
        return v

    top: dict[str, Any] = {}
    for key in (
        "length",
        "width",
        "ball_diameter",
        "ball_mass",
        "nose_height_ratio",
        "sight_setback",
    ):
        if key in data:
            top[key] = num(key, data[key])
    pockets = data.get("pockets", {})
    if not isinstance(pockets, dict):
        raise fail("pockets", "must be a table of pocket figures")
    for key, value in pockets.items():
        if key not in ("corner_mouth", "side_mouth", "corner_facing_deg", "side_facing_deg"):
            raise fail(f"pockets.{key}", "is not a pocket field")
        top[key] = num(key, value)

    def section(sec: str, cls: type[Cloth] | type[Cushion], default: Cloth | Cushion) -> Any:
        raw = data.get(sec, {})
        if not isinstance(raw, dict):
            raise fail(sec, "must be a table")
        vals: dict[str, Any] = {}
        allowed = cls.__dataclass_fields__
        for key, value in raw.items():
            if key not in allowed:
                raise fail(f"{sec}.{key}", f"is not a {sec} field; allowed: {', '.join(allowed)}")
            vals[key] = num(f"{sec}.{key}", value)
        return replace(default, **vals)

    cloth = section("cloth", Cloth, base.cloth)
    cushion = section("cushion", Cushion, base.cushion)
    desc = data.get("description", "")
    try:
        validate.text(desc, "description")
    except validate.InputError:
        raise fail(
            "description",
            f"must be text of at most {validate.TEXT_MAX} characters, no control characters",
        ) from None
    spec = replace(base, name=name.strip(), cloth=cloth, cushion=cushion, description=desc, **top)
    ratio = spec.length / spec.width
    if not (1.9 <= ratio <= 2.1):
        raise fail(
            "width", f"gives a length/width ratio of {ratio:.3f}; pool tables are 2:1 (1.9 to 2.1)"
        )
    return spec


def load_table_file(path: str | Path) -> TableSpec:
    """Read a custom table from a TOML file; any problem is one TableError line."""
    p = Path(path)
    try:
        text = p.read_text(encoding="utf-8")
    except OSError as exc:
        raise TableError(f"{p}: cannot read the table file ({exc.strerror})") from None
    except UnicodeDecodeError:
        raise TableError(f"{p}: not a text file (a table file is UTF-8 TOML)") from None
    try:
        data = validate.toml_text(text, str(p))
    except tomllib.TOMLDecodeError as exc:
        raise TableError(f"{p}: not valid TOML ({exc})") from None
    except validate.InputError as exc:
        raise TableError(str(exc)) from None
    return table_from_mapping(data, str(p))


def table_to_mapping(spec: TableSpec) -> dict[str, Any]:
    """A TableSpec as a plain mapping (the inverse of table_from_mapping), for storage."""
    return {
        "name": spec.name,
        "description": spec.description,
        "length": spec.length,
        "width": spec.width,
        "ball_diameter": spec.ball_diameter,
        "ball_mass": spec.ball_mass,
        "nose_height_ratio": spec.nose_height_ratio,
        "sight_setback": spec.sight_setback,
        "pockets": {
            "corner_mouth": spec.corner_mouth,
            "side_mouth": spec.side_mouth,
            "corner_facing_deg": spec.corner_facing_deg,
            "side_facing_deg": spec.side_facing_deg,
        },
        "cloth": {k: getattr(spec.cloth, k) for k in Cloth.__dataclass_fields__},
        "cushion": {k: getattr(spec.cushion, k) for k in Cushion.__dataclass_fields__},
    }
