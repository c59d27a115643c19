"""`tablecoach calibrate`: fit a table's cloth and cushion and each player's strokes."""

from __future__ import annotations

import argparse
import json
import sys
from typing import Any

from .options import add_common
from .progress import status

PROGRESS_AFTER = 1.0
"""Seconds after which a running fit shows what it is doing (a spinner on stderr, at a
terminal only)."""


def register(sub: Any) -> None:
    p = sub.add_parser(
        "calibrate",
        help="fit and show a table's parameters from your logged shots",
        description="Fit the table's cloth and cushion from everyone's shots on it and each "
        "player's strokes from their own (or, with --player, from that player's shots alone), "
        "save the fit, and say what it means. Later aims on this table use it at once.",
    )
    add_common(p)
    p.add_argument("--table", required=True, help="the table the attempts were logged on")
    p.add_argument(
        "--player",
        default=None,
        help="fit from this player's attempts only (default: every player on the table)",
    )
    p.add_argument(
        "--model",
        choices=("physical",),
        default="physical",
        help="the model to fit (the ideal model has nothing to fit)",
    )
    p.add_argument("--no-save", action="store_true", help="show the fit without keeping it")
    p.add_argument("--json", action="store_true", help="print JSON instead of text")
    p.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    from ..core.calibration.params import CalibrationError
    from ..core.calibration.report import head, sentences, stroke_sentences, table_sentences
    from ..core.calibration.use import calibrate_from_store
    from ..core.store import Store
    from ..paths import db_path

    path = db_path()
    if not path.exists():
        raise CalibrationError(
            f"no practice database at {path} yet: log some attempts on the table first"
        )
    with Store.open(path) as store, status(PROGRESS_AFTER) as say:
        cals = calibrate_from_store(
            store, args.table, args.player, save=not args.no_save, progress=say
        )
        table = store.get_table(args.table)
    saved = not args.no_save
    if args.json:
        out: dict[str, Any] = cals[0].as_dict() if len(cals) == 1 else {}
        out["saved"] = saved
        out["sentences"] = sentences(cals[0], table) if len(cals) == 1 else []
        out["players"] = {c.player: {**c.as_dict(), "sentences": sentences(c, table)} for c in cals}
        json.dump(out, sys.stdout, indent=2, sort_keys=True)
        sys.stdout.write("\n")
        return 0
    first = cals[0]
    names = ", ".join(c.player for c in cals)
    print(
        f"{args.table} table, {names}: {first.status if len(cals) == 1 else 'calibrated'}"
        + ("" if saved else " (not saved)")
    )
    for c in cals:
        print(f"  {head(c)}")
    for line in table_sentences(first):
        print(f"  {line}")
    for c in cals:
        for line in stroke_sentences(c, table):
            print(f"  {line}")
    print(f"  (fit took {first.seconds:.1f} s, {first.iterations} steps)")
    return 0
