"""`tablecoach aim`: one setup in; the aim reading, convergence point and a diagram out."""

from __future__ import annotations

import argparse
import json
import sys
from dataclasses import replace
from typing import Any

from ..cli import add_common, number

DEFAULT_MODEL = "physical"


def add_shot_options(p: argparse.ArgumentParser) -> None:
    """The shot options shared by `aim` and `predict`."""
    p.add_argument("--table", default=None, help="table name (default 9ft)")
    p.add_argument("--player", default=None, help="whose calibration to use")
    g = p.add_argument_group("shot")
    g.add_argument("--family", default=None, help="a named family, e.g. cross-corner-bank")
    g.add_argument("--travel", choices=("cue", "object"), default=None, help="which ball travels")
    g.add_argument("--rails", default=None, help="rails in order, e.g. right,foot,left")
    g.add_argument("--pocket", default=None, help="target pocket, e.g. foot-left")
    g.add_argument("--target-ball", default=None, metavar="X,Y", help="ball a kick must contact")
    g.add_argument("--cue", default=None, metavar="X,Y", help="cue ball in diamonds")
    g.add_argument("--object", default=None, metavar="X,Y", help="object ball in diamonds")
    s = p.add_argument_group("stroke")
    s.add_argument(
        "--speed",
        default="medium",
        help="a stroke (slow, lag, medium, fast, power: see `tablecoach speeds`), lengths of "
        "travel such as 3L, or m/s",
    )
    s.add_argument("--english", type=number(), default=0.0, help="side spin in tips (+ right)")
    s.add_argument("--follow", type=number(), default=0.0, help="tips above centre (- for draw)")
    p.add_argument(
        "--model", choices=("ideal", "physical"), default=DEFAULT_MODEL, help="aim model"
    )
    p.add_argument("--json", action="store_true", help="print JSON instead of text")


def register(sub: Any) -> None:
    p = sub.add_parser(
        "aim",
        help="solve one setup: aim reading, convergence point, diagram",
        description="Solve one bank or kick setup. Positions are ball centres in diamonds: "
        "x 0-8 from the head rail, y 0-4 from the left rail.",
    )
    add_common(p)
    add_shot_options(p)
    p.add_argument("--ascii", action="store_true", help="plain ASCII diagram")
    p.add_argument("--no-diagram", action="store_true", help="numbers only")
    p.set_defaults(func=run)


def parse_point(text: str | None, what: str) -> tuple[float, float] | None:
    """'X,Y' in diamonds to a pair of floats, or a one-line ValueError."""
    if text is None:
        return None
    from ..core import validate

    parts = text.replace(" ", "").split(",")
    try:
        if len(parts) != 2:
            raise ValueError
        x = validate.number_text(parts[0], what, -100.0, 100.0)  # make_setup: on the table
        y = validate.number_text(parts[1], what, -100.0, 100.0)
    except ValueError:
        raise ValueError(
            f"{what} {validate.show(text)} must be X,Y in finite diamonds, e.g. 2,1.5"
        ) from None
    return (x, y)


def resolve_table(name: str | None, player: str | None = None) -> tuple[Any, Any, str]:
    """(table spec, calibration or None, status line) for a table name and player.

    A stored custom table or a calibration needs the practice database; with none yet, the
    built-in table, uncalibrated. With one player in the store, that player is the default.
    """
    from ..core.table import DEFAULT_TABLE, builtin_table
    from ..paths import db_path

    name = name or DEFAULT_TABLE
    path = db_path()
    if not path.exists():  # no practice yet: skip loading the store and calibration code
        return builtin_table(name), None, "not calibrated yet"
    from ..core import calibrate
    from ..core.store import Store

    with Store.open(path) as store:
        r = calibrate.resolve(store, name, player)
    return r.table, r.calibration, r.status


def setup_from_args(args: argparse.Namespace) -> tuple[Any, Any, Any, str]:
    """(table, setup, stroke, status) from the shared shot options."""
    from ..core import shots, strokes
    from ..core.shots import ShotError

    table, calibration, status = resolve_table(args.table, getattr(args, "player", None))
    if args.family:
        fam = shots.preset(args.family)
        if args.travel or args.rails:
            fam = shots.make_family(
                args.travel or fam.travel,
                (args.rails or ",".join(fam.rails)).split(","),
                fam.pocket,
                name="custom",
            )
    elif args.travel and args.rails:
        fam = shots.make_family(args.travel, [r.strip() for r in args.rails.split(",")])
    else:
        raise ShotError("name a shot: --family NAME, or --travel cue|object with --rails")
    cue = parse_point(args.cue, "--cue")
    if cue is None:
        raise ShotError("the cue ball's position is needed: --cue X,Y (diamonds)")
    obj = parse_point(args.object, "--object")
    tb = parse_point(args.target_ball, "--target-ball")

    def met(p: tuple[float, float] | None) -> tuple[float, float] | None:
        return None if p is None else table.to_metres(*p)

    setup = shots.make_setup(table, fam, met(cue), met(obj), args.pocket, met(tb))  # type: ignore[arg-type]
    for name in ("english", "follow"):
        v = getattr(args, name)
        if abs(v) > 1.0:
            raise ShotError(f"--{name} {v:g} tips is more than a tip: it would miscue")
    # a preset name means this player's own "medium" etc. once the table is calibrated
    if calibration is None:
        speed = strokes.parse_speed(args.speed, table)
    else:
        from ..core.calibrate import speed_for

        speed = speed_for(calibration, args.speed)
    stroke = shots.Stroke(speed, args.english, args.follow)
    return table, setup, stroke, status


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
    from ..core import aim as aims
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
    if args.json:
        json.dump(data, sys.stdout, indent=2)
        sys.stdout.write("\n")
        return 0
    from ..render.text import aim_report

    aim_report(table, aim, conv, data, ascii_only=args.ascii, diagram=not args.no_diagram)
    return 0
