"""`tablecoach refs`: list, add or remove a player's reference lines (a trusted shot a family)."""

from __future__ import annotations

import argparse
import json
import sys
from typing import Any

from .options import add_common, number, parse_point, whole


def _action_common(p: argparse.ArgumentParser) -> None:
    add_common(p)
    p.add_argument("--table", default=None, help="table name (default 9ft)")
    p.add_argument("--player", default=None, help="whose lines (default: the only player)")
    p.add_argument("--json", action="store_true", help="print JSON instead of text")


def register(sub: Any) -> None:
    p = sub.add_parser(
        "refs",
        help="list, add or remove reference lines",
        description="Reference lines: a shot you trust per table and family (the travelling "
        "ball's start and the reading on the first rail). `tablecoach aim` and the practice "
        "card move them to a new position: shifted parallel, and turned about the "
        "convergence point.",
    )
    add_common(p)
    acts = p.add_subparsers(dest="action", metavar="ACTION")
    a = acts.add_parser("list", help="the reference lines kept")
    _action_common(a)
    a.add_argument("--family", default=None, help="only this family")
    a = acts.add_parser("add", help="keep a reference line")
    _action_common(a)
    a.add_argument("--family", default=None, help="a named family, e.g. cross-corner-bank")
    a.add_argument("--travel", choices=("cue", "object"), default=None, help="which ball travels")
    a.add_argument("--rails", default=None, help="rails in order, e.g. right,foot,left")
    a.add_argument("--pocket", default=None, help="target pocket, e.g. foot-left")
    a.add_argument("--target-ball", default=None, metavar="X,Y", help="a kick's target ball")
    a.add_argument(
        "--start",
        required=True,
        metavar="X,Y",
        help="the travelling ball's start in diamonds (object ball for banks, cue ball for kicks)",
    )
    a.add_argument(
        "--reading",
        required=True,
        type=number(-100.0, 100.0, "diamonds"),
        metavar="R",
        help="the reading on the first rail, in diamonds",
    )
    a.add_argument("--speed", default="medium", help="the stroke: a name, lengths such as 3L, m/s")
    a.add_argument("--english", type=number(-1.0, 1.0, "tips"), default=0.0, help="side, tips")
    a.add_argument("--follow", type=number(-1.0, 1.0, "tips"), default=0.0, help="follow, tips")
    a.add_argument("--note", default="", help="a few words of your own")
    a = acts.add_parser("remove", help="remove a reference line by its number")
    _action_common(a)
    a.add_argument("id", type=whole(1, 2**62), help="the number `refs list` shows")
    a = acts.add_parser(
        "drill", help="write the rotation drill around a reference line (a pack of your own)"
    )
    _action_common(a)
    a.add_argument("id", type=whole(1, 2**62), help="the number `refs list` shows")
    a.add_argument("--count", type=whole(1, 500), default=20, help="setups a round (20)")
    a = acts.add_parser("rates", help="make rates by distance from a reference line's start")
    _action_common(a)
    a.add_argument("id", type=whole(1, 2**62), help="the number `refs list` shows")
    p.set_defaults(func=run, action=None, json=False)


def ref_to_json(r: Any) -> dict[str, Any]:
    """One reference line as JSON (diamonds, m/s, tips)."""
    return {
        "id": r.id,
        "player": r.player,
        "table": r.table,
        "family": r.family,
        "travel": r.travel,
        "rails": list(r.rails),
        "pocket": r.pocket,
        "target_ball": None if r.target is None else {"x": r.target[0], "y": r.target[1]},
        "start": {"x": r.start[0], "y": r.start[1]},
        "reading": r.reading,
        "speed": r.speed,
        "english": r.english,
        "follow": r.follow,
        "note": r.note,
        "when": r.when,
    }


def _player(store: Any, name: str | None) -> str:
    from ..core.calibration.use import default_player
    from ..core.shots import ShotError

    who = default_player(store, name)
    if who is None and not store.players():
        import getpass

        try:
            who = getpass.getuser().strip() or "player"
        except (OSError, KeyError):
            who = "player"
    if who is None:
        raise ShotError("name the player: --player NAME (the store holds more than one)")
    return who


def _add(args: argparse.Namespace, store: Any) -> Any:
    from ..core import shots, strokes
    from ..core.aim.shift import reference_direction
    from ..core.store.refs import Reference
    from ..core.table import DEFAULT_TABLE
    from .options import family_from_args, resolve_table

    fam = family_from_args(args)
    table, _, _ = resolve_table(args.table, args.player)
    start = parse_point(args.start, "--start")
    target = parse_point(args.target_ball, "--target-ball")
    assert start is not None
    rail = fam.rails[0]
    reference_direction(
        table, rail, table.to_metres(*start), table.along_to_metres(rail, args.reading)
    )
    if target is not None:
        table.check_position(*table.to_metres(*target), "the target ball")
    if fam.travel == "cue" and fam.pocket is None and target is None:
        raise shots.ShotError("a kick at a ball needs its target: --target-ball X,Y")
    speed = strokes.parse_speed(args.speed, table)
    ref = Reference(
        player=_player(store, args.player),
        table=args.table or DEFAULT_TABLE,
        family=fam.name,
        travel=fam.travel,
        rails=tuple(fam.rails),
        start=start,
        reading=args.reading,
        speed=speed,
        pocket=args.pocket or fam.pocket,
        target=target,
        english=args.english,
        follow=args.follow,
        note=args.note,
    )
    ref_id = store.add_reference(ref)
    return next((r for r in store.references() if r.id == ref_id), ref)


def run(args: argparse.Namespace) -> int:
    from ..core.shots import rails_text
    from .options import open_store

    if args.action is None:
        print(
            "tablecoach refs: say list, add or remove (see 'tablecoach refs --help')",
            file=sys.stderr,
        )
        return 2
    store = open_store(create=args.action == "add")
    if store is None:
        refs: list[Any] = []
        if args.action != "list":
            raise ValueError(f"there is no reference line {args.id}: `tablecoach refs list`")
    else:
        with store:
            if args.action == "add":
                ref = _add(args, store)
                if args.json:
                    json.dump(ref_to_json(ref), sys.stdout, indent=2)
                    sys.stdout.write("\n")
                else:
                    print(f"kept reference line {ref.id}: {ref.family}, reading {ref.reading:g}")
                return 0
            if args.action in ("drill", "rates"):
                return _rotation(args, store)
            if args.action == "remove":
                if not store.remove_reference(args.id):
                    raise ValueError(
                        f"there is no reference line {args.id}: `tablecoach refs list` shows them"
                    )
                print(f"removed reference line {args.id}")
                return 0
            refs = store.references(args.player, args.table, args.family)
    if args.json:
        json.dump([ref_to_json(r) for r in refs], sys.stdout, indent=2)
        sys.stdout.write("\n")
        return 0
    if not refs:
        print("no reference lines yet: keep one with `tablecoach refs add` or `k` after a hit")
        return 0
    for r in refs:
        x, y = r.start
        print(
            f"{r.id:>4}  {r.player}, {r.table}: {r.family} ({rails_text(r.rails)}), "
            f"from {x:g},{y:g}, reading {r.reading:g}, {r.speed:.2f} m/s"
            + (f"  {r.note}" if r.note else "")
        )
    return 0


def _rotation(args: argparse.Namespace, store: Any) -> int:
    """`refs drill ID` writes the rotation pack; `refs rates ID` sums its attempts up."""
    from ..core import rotation
    from ..core.store.query import AttemptQuery
    from ..paths import ensure_dir, user_drills_dir
    from .options import resolve_table

    ref = next((r for r in store.references() if r.id == args.id), None)
    if ref is None:
        raise ValueError(f"there is no reference line {args.id}: `tablecoach refs list` shows them")
    if args.action == "drill":
        table, _, _ = resolve_table(ref.table, ref.player)
        text = rotation.pack_text(table, ref, args.count)
        rotation.rotation_drill(table, ref, args.count)  # checked like any pack
        path = ensure_dir(user_drills_dir()) / f"{rotation.pack_name(ref)}.toml"
        path.write_text(text, encoding="utf-8")
        name = rotation.pack_name(ref)
        if args.json:
            json.dump({"drill": name, "file": str(path)}, sys.stdout, indent=2)
            sys.stdout.write("\n")
        else:
            print(f"wrote {path}: practise it with `tablecoach --drill {name} --table {ref.table}`")
        return 0
    got = store.attempts(AttemptQuery(player=ref.player, table=ref.table))
    rates = rotation.rates_by_distance(ref, [a for a in got if a.drill == rotation.pack_name(ref)])
    if args.json:
        rows = [{"distance": r.distance, "attempts": r.attempts, "hits": r.hits} for r in rates]
        json.dump({"reference": args.id, "by_distance": rows}, sys.stdout, indent=2)
        sys.stdout.write("\n")
        return 0
    if not rates:
        print(f"no attempts of the rotation drill around line {args.id} yet")
    for r in rates:
        print(f"{r.distance:>5g} diamond away: {r.hits} of {r.attempts} made ({r.rate:.0%})")
    return 0
