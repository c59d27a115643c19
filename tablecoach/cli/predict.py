"""`tablecoach predict`: where a given sight reading takes the ball, and whether it scores."""

from __future__ import annotations

import argparse
import json
import sys
from typing import Any

from .options import add_common, add_shot_options, number, setup_from_args


def register(sub: Any) -> None:
    p = sub.add_parser(
        "predict",
        help="where a given aim reading lands and whether it scores",
        description="Trace one reading for a bank or kick setup. Positions are ball centres in "
        "diamonds: x 0-8 from the head rail, y 0-4 from the left rail. The reading is in "
        "diamonds along the first rail's line of sights.",
    )
    add_common(p)
    add_shot_options(p)
    p.add_argument(
        "--reading",
        required=True,
        type=number(),
        metavar="R",
        help="aim reading in diamonds on the first rail's line of sights",
    )
    p.set_defaults(func=run)


def trace_to_json(table: Any, setup: Any, trace: Any, reading: float, model: str) -> dict[str, Any]:
    """The JSON shape of a prediction (positions in diamonds)."""

    def rp(p: Any) -> dict[str, Any]:
        return {"rail": p.rail, "at": round(table.along_to_diamonds(p.rail, p.at), 4)}

    fam = setup.family
    return {
        "table": table.name,
        "model": model,
        "family": fam.name,
        "travel": fam.travel,
        "rails": list(fam.rails),
        "aim": {"rail": fam.rails[0], "reading": reading},
        "rails_hit": list(trace.rails_hit),
        "contacts": [rp(c) for c in trace.contacts],
        "landing": rp(trace.landing) if trace.landing is not None else None,
        "scores": bool(trace.scores),
        "outcome": trace.outcome,
    }


def _text(data: dict[str, Any], speed: float) -> str:
    landing = data["landing"]
    where = (
        f"lands on the {landing['rail']} rail at {landing['at']:.2f} diamonds"
        if landing
        else "does not reach a rail after the shot's rails"
    )
    verdict = "SCORES" if data["scores"] else "misses"
    lines = [
        f"{data['family']} on {data['table']} ({data['model']} model, {speed:.2f} m/s), "
        f"reading {data['aim']['reading']:g} on the {data['aim']['rail']} rail:",
        f"  {verdict}: the ball {data['outcome']}",
        f"  {where}",
    ]
    if data["contacts"]:
        lines.append(
            "  cushion contacts: "
            + ", ".join(f"{c['rail']} {c['at']:.2f}" for c in data["contacts"])
        )
    return "\n".join(lines)


def run(args: argparse.Namespace) -> int:
    from ..core import aim as aims
    from ..core import shots, strokes
    from ..core.records import rail_length_diamonds

    table, setup, stroke, _status = setup_from_args(args)
    model = args.model
    rail = setup.family.rails[0]
    top = rail_length_diamonds(rail)
    if not (0.0 <= args.reading <= top):
        raise shots.ShotError(
            f"--reading {args.reading:g} is off the {rail} rail's sights: use 0 to {top:g} diamonds"
        )
    reading_m = table.along_to_metres(rail, args.reading)
    trace = aims.predict(table, setup, reading_m, stroke, model)
    data = trace_to_json(table, setup, trace, args.reading, model)
    data["speed"] = {"m_per_s": stroke.speed, "name": strokes.speed_name(stroke.speed)}
    data["english"] = stroke.english
    data["follow"] = stroke.follow
    if args.json:
        json.dump(data, sys.stdout, indent=2)
        sys.stdout.write("\n")
        return 0
    print(_text(data, stroke.speed))
    return 0
