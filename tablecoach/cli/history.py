"""`tablecoach history`: streaks, make rates, weekly trends and landing bias, without the app."""

from __future__ import annotations

import argparse
import json
from datetime import date, tzinfo
from typing import TYPE_CHECKING, Any

from .options import add_common, add_filter_options, describe, open_store, parse_tz, query_from

if TYPE_CHECKING:
    from ..core.stats.history import History
    from ..core.store.query import AttemptQuery


def register(sub: Any) -> None:
    p = sub.add_parser(
        "history",
        help="streaks, make rates, weekly trends and landing bias",
        description="Show practice history: streaks (current and best), make rates with 95%% "
        "Wilson intervals by family and zone, ISO weeks in your time zone, sessions and "
        "where misses land.",
    )
    add_common(p)
    add_filter_options(p)
    p.add_argument(
        "--map", action="store_true", help="also draw make rates by zone on the table (ASCII)"
    )
    p.add_argument("--json", action="store_true", help="print JSON instead of text")
    p.set_defaults(func=run)


def text_report(h: History, said: str, tz: tzinfo | None, tz_name: str) -> str:
    """The history as plain text; ``said`` is the filters in words (``options.describe``)."""
    from ..render.rates import pct, spark
    from ..render.words import family_text

    lines = [f"History: {said} (days and weeks in {tz_name})"]
    if h.rate.attempts == 0:
        if said == "everything":
            lines.append("No attempts yet. Practise a few shots, or try 'tablecoach demo'.")
        else:
            lines.append("No attempts match these filters.")
        return "\n".join(lines)
    lines.append(
        f"{h.rate.hits} of {h.rate.attempts} made: {pct(h.rate)}; "
        f"{h.first:%Y-%m-%d} to {h.last:%Y-%m-%d}"
    )
    lines.append(
        f"streak: {h.streak.current} now, best {h.streak.best}; days in a row: "
        f"{h.days.current} now, best {h.days.best}"
    )
    lines.append("")
    lines.append(f"{'family':<20} {'made':>9}  {'rate (95% Wilson)':<18} streak  weeks")
    for fam, r in sorted(h.families.items(), key=lambda kv: -kv[1].attempts):
        fs = h.family_streaks[fam]
        lines.append(
            f"{family_text(fam):<20} {r.hits:>4}/{r.attempts:<4}  {pct(r):<18} "
            f"{fs.current:>2}/{fs.best:<3}  "
            f"|{spark(h.family_weeks[fam])}|"
        )
    lines.append("")
    lines.append(
        "weeks: "
        + ", ".join(
            f"{w.label} {'-' if w.rate.rate is None else f'{100 * w.rate.rate:.0f}%'}"
            for w in h.weeks[-8:]
        )
    )
    if h.bias:
        lines.append("")
        lines.append("landing against ideal reflection of the aim used (+ long, - short):")
        for b in h.bias[:8]:
            lines.append(
                f"  {family_text(b.family):<20} {b.speed:<7} "
                f"{b.mean:+.2f} +- {b.stderr:.2f} diamond "
                f"over {b.attempts} ({b.long} long, {b.short} short)"
            )
    lines.append("")
    lines.append("last sessions:")
    for s in h.sessions[-8:]:
        start = s.start.astimezone(tz)
        lines.append(
            f"  #{s.session if s.session is not None else '-':<4} {start:%Y-%m-%d %H:%M} "
            f"{s.player:<12} {s.table:<12} {s.rate.hits:>3}/{s.rate.attempts:<3} "
            f"best streak {s.streak.best}"
        )
    return "\n".join(lines)


def compute(args: argparse.Namespace) -> tuple[History, AttemptQuery, date | None, date | None]:
    """(History, query, first day, last day) for the command-line options."""
    from ..core.stats.coded import summarize_store
    from ..core.stats.history import summarize

    query, first, last = query_from(args)
    tz = parse_tz(args.tz)
    store = open_store()
    if store is None:
        return summarize([], tz=tz), query, first, last
    try:
        h = summarize_store(store, query, tz=tz, table_of=store.table_lookup())
    finally:
        store.close()
    return h, query, first, last


def run(args: argparse.Namespace) -> int:
    from ..core.stats.history import history_dict
    from ..core.stats.zones import grid_from_zones

    h, query, first, last = compute(args)
    tz = parse_tz(args.tz)
    if args.json:
        out = history_dict(h)
        out["filters"] = {
            "player": query.player,
            "table": query.table,
            "family": query.family,
            "since": first.isoformat() if first else None,
            "until": last.isoformat() if last else None,
            "session": query.session,
            "tz": args.tz or "local",
        }
        print(json.dumps(out, indent=2))
        return 0
    print(text_report(h, describe(query, first, last), tz, args.tz or "local time"))
    if args.map and h.rate.attempts:
        from ..render.heatmap import HeatMap, legend_text

        print()
        print("make rate by where the travelling ball started:")
        print(HeatMap(grid_from_zones(h.zones, query.family), ascii_only=True).plain(100))
        print(legend_text())
    return 0
