"""`tablecoach speeds`: each named stroke on a table, in lengths of travel and m/s."""

from __future__ import annotations

import argparse
import json
import sys
from typing import Any

from .options import add_common, resolve_table


def register(sub: Any) -> None:
    p = sub.add_parser(
        "speeds",
        help="each named stroke on a table: lengths of travel and m/s",
        description="Each named stroke is a distance: table lengths of travel up and down the "
        "table, cushions counted, of a centre-ball stroke (a lag is 2). Shown with the cue-ball "
        "speed that sends the ball that far on this table, and, once the table is calibrated "
        "for a player, what that player's own stroke of that name does.",
    )
    add_common(p)
    p.add_argument("--table", default=None, help="table name (default 9ft)")
    p.add_argument("--player", default=None, help="whose calibrated strokes to show")
    p.add_argument("--json", action="store_true", help="print JSON instead of text")
    p.set_defaults(func=run)


def speeds_table(table: Any, calibration: Any) -> list[dict[str, Any]]:
    """One row per named stroke: book lengths and m/s on ``table``, and the player's own."""
    from ..core import shots, strokes

    rows = []
    for name, lengths in shots.STROKE_LENGTHS.items():
        row: dict[str, Any] = {
            "name": name,
            "table_lengths": lengths,
            "m_per_s": round(strokes.stroke_speed(table, lengths), 3),
        }
        if calibration is not None:
            mine = calibration.speed(name)
            row["yours"] = {
                "m_per_s": round(mine, 3),
                "table_lengths": round(strokes.travel_lengths(table, mine), 2),
            }
        rows.append(row)
    return rows


def run(args: argparse.Namespace) -> int:
    table, calibration, status = resolve_table(args.table, args.player)
    rows = speeds_table(table, calibration)
    if args.json:
        json.dump(
            {"table": table.name, "calibration": status, "strokes": rows}, sys.stdout, indent=2
        )
        sys.stdout.write("\n")
        return 0
    print(f"Strokes on the {table.name} table ({status}); a length is one end rail to the other,")
    print("cushions counted, for a centre-ball stroke from the head rail: a lag is 2.")
    yours = calibration is not None
    head = f"{'stroke':8} {'lengths':>7} {'m/s':>6}"
    print(head + ("   your stroke: m/s, lengths" if yours else ""))
    for r in rows:
        line = f"{r['name']:8} {r['table_lengths']:7.2f} {r['m_per_s']:6.2f}"
        if yours:
            line += f"   {r['yours']['m_per_s']:.2f} m/s, {r['yours']['table_lengths']:.1f} lengths"
        print(line)
    if any(r["m_per_s"] > 3.2 for r in rows):
        print("Power strokes can send balls off the table: keep the line of the shot clear of")
        print("people, and play within what your venue allows.")
    return 0
