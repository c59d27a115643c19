"""The table check: a handful of reference shots that seed a new table's calibration."""

from __future__ import annotations

from typing import Any

from .. import aim as aims
from .. import shots
from ..table import TableSpec
from .params import CalibrationError

TABLE_CHECK: tuple[
    tuple[str, tuple[float, float], tuple[float, float] | None, tuple[float, float] | None, str],
    ...,
] = (
    ("one-rail-kick", (1.0, 1.0), None, (3.0, 1.0), "medium"),
    ("one-rail-kick", (1.0, 1.0), None, (3.0, 2.0), "fast"),
    ("two-rail-kick", (1.0, 1.0), None, (5.0, 1.0), "fast"),
    ("three-rail-kick", (2.0, 1.0), None, (4.0, 1.5), "fast"),
    ("three-rail-kick", (1.0, 2.0), None, (3.0, 1.0), "fast"),
    ("cross-corner-bank", (5.25, 2.0), (5.5, 2.5), None, "fast"),
    ("cross-side-bank", (5.0, 1.5), (5.0, 2.0), None, "fast"),
    ("long-rail-bank", (5.5, 2.0), (6.0, 2.0), None, "fast"),
)
"""Reference shots of the table check: (family, cue, object, target ball, preset), positions in
diamonds, on the quarter-diamond grid a player places by eye (placing.py). Checking a system on
each new table with a benchmark shot is common practice (no source); these cover one, two and
three rails and three banks at the speeds a player uses most, so that the first calibration
sees cushion, cloth and speed at once."""


def table_check_setups(table: TableSpec, model: str = "ideal") -> list[Any]:
    """The 5 to 10 reference shots that seed a new table's calibration, as drills.Dealt.

    Each has a clean path on ``table`` under ``model`` (aims.solve); shots that do not
    fit this table are left out, and a CalibrationError says so if fewer than 5 remain.
    """
    from ..drills import Dealt

    out: list[Any] = []
    for k, (fam, cue, obj, tb, preset) in enumerate(TABLE_CHECK):
        family = shots.PRESETS[fam]

        def met(p: tuple[float, float] | None) -> tuple[float, float] | None:
            return None if p is None else table.to_metres(*p)

        stroke = shots.Stroke(shots.SPEED_PRESETS[preset])
        try:
            setup = shots.make_setup(table, family, met(cue), met(obj), None, met(tb))  # type: ignore[arg-type]
            aim = aims.solve(table, setup, stroke, model)
        except ValueError:
            continue
        label = f"table check: {family.title.lower()}, {preset}"
        out.append(Dealt(setup, stroke, k, label, aim))
    if len(out) < 5:
        raise CalibrationError(
            f"only {len(out)} of the table check's reference shots fit the {table.name} table; "
            "log a few ordinary shots instead and run 'tablecoach calibrate'"
        )
    n = len(out)
    return [
        Dealt(d.setup, d.stroke, d.item, f"{d.label} ({i + 1} of {n})", d.aim)
        for i, d in enumerate(out)
    ]
