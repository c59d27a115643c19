"""Strokes on a given table: named strokes and lengths of travel to m/s and back, by the physics.

The names and their lengths are vocabulary (shots.STROKE_LENGTHS); turning them into m/s for a
table runs the physical model's lengths of travel (physics/travel.py, docs/model.md).
"""

from __future__ import annotations

import math

from .physics.params import model_of
from .physics.travel import lengths_for_speed, speed_for_lengths
from .shots import SPEED_BANDS, SPEED_PRESETS, STROKE_LENGTHS, ShotError
from .table import DEFAULT_TABLE, TableSpec, builtin_table


def stroke_speed(table: TableSpec, lengths: float | str) -> float:
    """The cue-ball speed (m/s) of a stroke of ``lengths`` of travel (or a stroke name) on this
    table, by the physical model (physics/travel.py)."""
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
