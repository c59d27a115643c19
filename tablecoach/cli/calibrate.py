"""`tablecoach calibrate`: fit a table's cloth, cushion and the player's speeds from landings."""

from __future__ import annotations

import argparse
import json
import sys
from typing import Any

from .options import add_common


def register(sub: Any) -> None:
    p = sub.add_parser(
        "calibrate",
        help="fit and show a table's parameters from your logged landings",
        description="Fit the table's cloth and cushion and what you call each speed from the "
        "landings you logged on it, save the fit, and say what it means. Later aims on this "
        "table use it at once.",
    )
    add_common(p)
    p.add_argument("--table", required=True, help="the table the attempts were logged on")
    p.add_argument(
        "--player", default=None, help="whose attempts (default: the only player in the store)"
    )
    p.add_argument(
        "--model", choices=("physical", "ideal"), default="physical", help="the model to fit"
    )
    p.add_argument("--no-save", action="store_true", help="show the fit without keeping it")
    p.add_argument("--json", action="store_true", help="print JSON instead of text")
    p.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    from ..core import calibrate
    from ..core.store import Store
    from ..paths import db_path

    path = db_path()
    if not path.exists():
        raise calibrate.CalibrationError(
            f"no practice database at {path} yet: log some attempts on the table first"
        )
    with Store.open(path) as store:
        cal = calibrate.calibrate_from_store(
            store, args.table, args.player, model=args.model, save=not args.no_save
        )
        table = store.get_table(args.table)
    player = cal.player
    if args.json:
        out = cal.as_dict()
        out["saved"] = not args.no_save
        out["sentences"] = cal.sentences(table)
        json.dump(out, sys.stdout, indent=2, sort_keys=True)
        sys.stdout.write("\n")
        return 0
    print(
        f"{args.table} table, {player}: {cal.status}" + ("" if not args.no_save else " (not saved)")
    )
    for line in cal.sentences(table):
        print(f"  {line}")
    print(f"  (fit took {cal.seconds:.1f} s, {cal.iterations} steps, {cal.used} attempts used)")
    return 0
