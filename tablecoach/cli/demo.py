"""`tablecoach demo`: fill a new data folder with an invented club's practice, to look around."""

from __future__ import annotations

import argparse
import json
from typing import Any

from .options import add_common, open_store, parse_tz, whole


def register(sub: Any) -> None:
    p = sub.add_parser(
        "demo",
        help="fill a new data folder with an invented club's practice",
        description="Fill an empty data folder with an invented club (players, two tables, a "
        "few weeks of practice) so the history view has something to show. It never writes "
        "into a folder that already holds attempts: use --data-dir to pick a new folder.",
    )
    add_common(p)
    p.add_argument(
        "--seed", type=whole(0, 2**63 - 1), default=2026, help="random seed (default 2026)"
    )
    p.add_argument("--weeks", type=int, default=5, help="weeks of practice to invent (1-26)")
    p.add_argument("--tz", default=None, help="the club's time zone (default: this machine's)")
    p.add_argument("--json", action="store_true", help="print JSON instead of text")
    p.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    import numpy as np

    from ..core import demo
    from ..core.records import utc_now

    if not (1 <= args.weeks <= 26):
        raise demo.DemoError(f"--weeks {args.weeks} must be between 1 and 26")
    tz = parse_tz(args.tz)
    store = open_store(create=True)
    assert store is not None  # create=True always opens one
    try:
        held = store.count_attempts()
        if held:
            raise demo.DemoError(
                f"{store.path} already holds {held} attempts; the demo only fills an empty "
                "data folder: run 'tablecoach demo --data-dir NEW_FOLDER'"
            )
        club = demo.make_club(np.random.default_rng(args.seed), utc_now(), args.weeks, tz)
        written = demo.write_club(store, club)
        path = store.path
    finally:
        store.close()
    players = [p.name for p in club.players]
    tables = [t.name for t in club.tables]
    if args.json:
        out = {
            "club": club.name,
            "database": str(path),
            "attempts": written,
            "sessions": len(club.sessions),
            "players": players,
            "tables": tables,
        }
        print(json.dumps(out, indent=2))
        return 0
    print(f"{club.name} (invented): {written} attempts in {len(club.sessions)} sessions")
    print(f"players: {', '.join(players)}; tables: {', '.join(tables)}")
    print(f"written to {path}")
    print("look at it with 'tablecoach history' or press v on the practice screen")
    return 0
