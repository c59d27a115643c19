"""`tablecoach aim`: one setup in; the aim reading, convergence point and a diagram out."""

from __future__ import annotations

import argparse
import json
import sys
from dataclasses import replace
from typing import Any

from .options import add_common, add_shot_options, number, parse_point, setup_from_args


def register(sub: Any) -> None:
    p = sub.add_parser(
        "aim",
        help="solve one setup: aim reading, convergence point, diagram",
        description="Solve one bank or kick setup. Positions are ball centres in diamonds: "
        "x 0-8 from the head rail, y 0-4 from the left rail.",
    )
    add_common(p)
    add_shot_options(p)
    r = p.add_argument_group("reference line (a line you trust, moved to this position)")
    r.add_argument(
        "--ref-start",
        default=None,
        metavar="X,Y",
        help="the travelling ball's start of the reference shot in diamonds (object ball for "
        "banks, cue ball for kicks)",
    )
    r.add_argument(
        "--ref-reading",
        type=number(-100.0, 100.0, "diamonds"),
        default=None,
        metavar="R",
        help="the reference shot's reading on the first rail, in diamonds",
    )
    r.add_argument(
        "--ref-speed",
        default=None,
        metavar="STROKE",
        help="the stroke the reference shot was played at, as --speed takes it (default: this "
        "shot's); another stroke is said in words, since speed moves the point",
    )
    r.add_argument(
        "--ref-english", type=number(-1.0, 1.0, "tips"), default=None, help="its english, tips"
    )
    r.add_argument(
        "--ref-follow", type=number(-1.0, 1.0, "tips"), default=None, help="its follow, tips"
    )
    p.add_argument("--ascii", action="store_true", help="plain ASCII diagram")
    p.add_argument("--no-diagram", action="store_true", help="numbers only")
    p.set_defaults(func=run)


def aim_to_json(table: Any, aim: Any, conv: Any, status: str) -> dict[str, Any]:
    """The JSON shape of an aim (positions in diamonds, contract coordinates)."""
    from ..core.strokes import speed_name, travel_lengths

    def rp(p: Any) -> dict[str, Any]:
        return {"rail": p.rail, "at": round(table.along_to_diamonds(p.rail, p.at), 4)}

    tx, ty = table.to_diamonds(*aim.target_point)
    unit = table.rail_unit(aim.rail)
    out: dict[str, Any] = {
        "table": table.name,
        "model": aim.model,
        "calibration": status,
        "family": aim.setup.family.name,
        "travel": aim.setup.family.travel,
        "rails": list(aim.setup.family.rails),
        "aim": {"rail": aim.rail, "reading": round(aim.reading / unit, 4)},
        "contacts": [rp(c) for c in aim.contacts],
        "landing": rp(aim.landing),
        "target_point": {"x": round(tx, 4), "y": round(ty, 4)},
        "margin": {
            "minus": round(aim.margin_minus / unit, 4),
            "plus": round(aim.margin_plus / unit, 4),
        },
        "speed": {
            "m_per_s": aim.stroke.speed,
            "name": speed_name(aim.stroke.speed, table),
            "table_lengths": round(travel_lengths(table, aim.stroke.speed), 2),
        },
        "english": aim.stroke.english,
        "follow": aim.stroke.follow,
        "notes": list(aim.notes),
    }
    if conv is not None:
        cx, cy = table.to_diamonds(*conv.point)
        out["convergence"] = {
            "x": round(cx, 4),
            "y": round(cy, 4),
            "spread": round(conv.spread / table.diamond, 6),
            "lines": len(conv.starts),
        }
    else:
        out["convergence"] = None
    if aim.cut_angle is not None and aim.ghost is not None:
        gx, gy = table.to_diamonds(*aim.ghost)
        out["ghost_ball"] = {"x": round(gx, 4), "y": round(gy, 4)}
        out["cut_degrees"] = round(_deg(aim.cut_angle), 2)
    return out


def _deg(rad: float) -> float:
    import math

    return math.degrees(rad)


def run(args: argparse.Namespace) -> int:
    from ..core import aim as aims  # here, not at the top: every command's start loads this module
    from ..core import shots

    table, setup, stroke, status = setup_from_args(args)
    model = args.model
    aim, note = aims.solve_playable(table, setup, stroke, model)
    if note:
        aim = replace(aim, notes=(note, *aim.notes))
    try:
        conv = aims.convergence(table, setup, None, aim.stroke, model)
    except shots.ShotError:
        conv = None
    data = aim_to_json(table, aim, conv, status)
    moved = ref_stroke = None
    given = (args.ref_speed, args.ref_english, args.ref_follow)
    if args.ref_start is None and args.ref_reading is None and any(v is not None for v in given):
        raise shots.ShotError(
            "--ref-speed, --ref-english and --ref-follow describe a reference line: "
            "give it with --ref-start X,Y and --ref-reading R"
        )
    if args.ref_start is not None or args.ref_reading is not None:
        moved = _shift(args, table, setup, aim, conv)
        data["shift"] = shift_to_json(table, setup, moved)
        ref_stroke = _ref_stroke(args, table, aim.stroke)
        if ref_stroke is not None:
            data["reference_stroke"] = ref_stroke_json(table, ref_stroke, aim.stroke)
    if args.json:
        json.dump(data, sys.stdout, indent=2)
        sys.stdout.write("\n")
        return 0
    from ..render.text import aim_report

    aim_report(table, aim, conv, data, ascii_only=args.ascii, diagram=not args.no_diagram)
    if moved is not None:
        from ..render.words import reference_stroke_text, shift_text

        print(f"reference: {shift_text(table, setup, moved)}")
        if ref_stroke is not None and (
            said := reference_stroke_text(table, ref_stroke, aim.stroke)
        ):
            print(f"stroke: {said}")
    return 0


def _shift(args: argparse.Namespace, table: Any, setup: Any, aim: Any, conv: Any) -> Any:
    """The reference line of --ref-start/--ref-reading moved to this setup (core/aim/shift.py)."""
    from ..core import aim as aims
    from ..core.shots import ShotError

    if args.ref_start is None or args.ref_reading is None:
        raise ShotError("a reference line needs both --ref-start X,Y and --ref-reading R")
    start_d = parse_point(args.ref_start, "--ref-start")
    assert start_d is not None
    if conv is None:
        raise ShotError("no convergence point for this setup, so there is no line to turn about")
    rail = setup.family.rails[0]
    start = table.to_metres(*start_d)
    reading = table.along_to_metres(rail, args.ref_reading)
    return aims.shift(table, setup, start, reading, aim, conv, aim.stroke, args.model)


def _ref_stroke(args: argparse.Namespace, table: Any, stroke: Any) -> Any:
    """The reference shot's stroke from --ref-speed/--ref-english/--ref-follow (what is not
    given is this shot's), or None when none of them is given."""
    from ..core import shots, strokes

    if args.ref_speed is None and args.ref_english is None and args.ref_follow is None:
        return None
    speed = stroke.speed if args.ref_speed is None else strokes.parse_speed(args.ref_speed, table)
    english = stroke.english if args.ref_english is None else args.ref_english
    follow = stroke.follow if args.ref_follow is None else args.ref_follow
    return shots.Stroke(speed, english, follow)


def ref_stroke_json(table: Any, ref: Any, stroke: Any) -> dict[str, Any]:
    """``reference_stroke``, a sibling of ``shift``: the reference's stroke, whether it is this
    shot's (same named stroke and spin), and the words when it is not."""
    from ..core.strokes import speed_name
    from ..render.words import reference_stroke_text

    said = reference_stroke_text(table, ref, stroke)
    return {
        "speed": {"m_per_s": ref.speed, "name": speed_name(ref.speed, table)},
        "english": ref.english,
        "follow": ref.follow,
        "same_as_shot": not said,
        "note": said,
    }


def shift_to_json(table: Any, setup: Any, moved: Any) -> dict[str, Any]:
    """The contract's ``shift`` object: readings on the first rail and misses, in diamonds."""
    u = table.rail_unit(setup.family.rails[0])

    def line(x: Any) -> dict[str, Any]:
        miss = None if x.miss is None else round(x.miss / table.diamond, 4)
        return {"reading": round(x.reading / u, 4), "miss": miss}

    return {
        "parallel": line(moved.parallel),
        "rotated": line(moved.rotated),
        "solved": line(moved.solved),
    }
