"""`tablecoach report`: a session or a period as an SVG or HTML page, with the table pictures."""

from __future__ import annotations

import argparse
import json
from pathlib import Path
from typing import Any

from .options import (
    FilterError,
    add_common,
    add_filter_options,
    describe,
    open_store,
    parse_tz,
    query_from,
)


def register(sub: Any) -> None:
    p = sub.add_parser(
        "report",
        help="write a session or a period as an SVG or HTML page",
        description="Write the history of one session (--session N) or a period (--since, "
        "--until) as a page: numbers, trends, and make rates by zone drawn on the table.",
    )
    add_common(p)
    add_filter_options(p)
    p.add_argument("--output", "-o", default=None, help="file to write (.svg or .html)")
    p.add_argument(
        "--format", choices=("svg", "html"), default=None, help="default: from --output, else html"
    )
    p.add_argument("--ascii", action="store_true", help="plain ASCII pictures")
    p.add_argument("--width", type=int, default=100, help="page width in characters (60-200)")
    p.add_argument("--json", action="store_true", help="print what was written as JSON")
    p.set_defaults(func=run)


def pick_format(output: str | None, fmt: str | None) -> str:
    """The page format: --format, else the output's suffix, else html."""
    if fmt:
        return fmt
    if output:
        suffix = Path(output).suffix.lower().lstrip(".")
        if suffix in ("svg", "html"):
            return suffix
        if suffix == "htm":
            return "html"
        raise FilterError(f"--output {output!r} must end in .svg or .html (or give --format)")
    return "html"


def render_report(console: Any, h: Any, title: str, tz: Any, items: Any, ascii_only: bool) -> None:
    """Print the report's parts onto a (recording) Rich console."""
    from rich.rule import Rule
    from rich.table import Table
    from rich.text import Text

    from ..core.stats.zones import grid_rates
    from ..render.heatmap import HeatMap, legend_text
    from ..render.rates import pct, spark

    console.print(Text(title, style="bold"))
    if h.rate.attempts == 0:
        console.print("No attempts match. Practise a few shots, or try 'tablecoach demo'.")
        return
    console.print(
        f"{h.rate.hits} of {h.rate.attempts} made: {pct(h.rate)} (95% Wilson interval). "
        f"Streak {h.streak.current} now, best {h.streak.best}; days in a row "
        f"{h.days.current} now, best {h.days.best}."
    )
    fam = Table(title="By family", expand=False)
    for col in ("family", "made", "rate (95% Wilson)", "streak now/best", "weeks"):
        fam.add_column(col)
    for f, r in sorted(h.families.items(), key=lambda kv: -kv[1].attempts):
        s = h.family_streaks[f]
        fam.add_row(
            f,
            f"{r.hits}/{r.attempts}",
            pct(r),
            f"{s.current}/{s.best}",
            f"|{spark(h.family_weeks[f])}|",
        )
    console.print(fam)
    console.print(Rule("Make rate by where the travelling ball started (all families)"))
    console.print(HeatMap(grid_rates(items), ascii_only=ascii_only))
    console.print(legend_text())
    for f in sorted(h.families) if len(h.families) > 1 else ():
        console.print(Rule(f"{f}"))
        console.print(HeatMap(grid_rates(items, family=f), ascii_only=ascii_only))
    if h.bias:
        bias = Table(title="Landing against ideal reflection of the aim used (+ long, - short)")
        for col in ("family", "speed", "attempts", "mean (diamonds)", "long", "short"):
            bias.add_column(col)
        for b in h.bias:
            bias.add_row(
                b.family,
                b.speed,
                str(b.attempts),
                f"{b.mean:+.2f} +- {b.stderr:.2f}",
                str(b.long),
                str(b.short),
            )
        console.print(bias)
    sess = Table(title="Sessions")
    for col in ("#", "started", "player", "table", "made", "best streak"):
        sess.add_column(col)
    for s in h.sessions:
        sess.add_row(
            str(s.session if s.session is not None else "-"),
            f"{s.start.astimezone(tz):%Y-%m-%d %H:%M}",
            s.player,
            s.table,
            f"{s.rate.hits}/{s.rate.attempts}",
            str(s.streak.best),
        )
    console.print(sess)


def run(args: argparse.Namespace) -> int:
    import io

    from rich.console import Console

    from ..core.stats.frame import ordered
    from ..core.stats.history import summarize

    fmt = pick_format(args.output, args.format)
    if not (60 <= args.width <= 200):
        raise FilterError(f"--width {args.width} must be between 60 and 200 characters")
    query, first, last = query_from(args)
    tz = parse_tz(args.tz)
    store = open_store()
    items: list[Any] = []
    if store is not None:
        try:
            items = store.attempts(query)
            h = summarize(items, tz=tz, table_of=store.table_lookup())
        finally:
            store.close()
    else:
        h = summarize([], tz=tz)
    if query.session is not None:
        title = f"tablecoach report: session {query.session}"
    else:
        title = f"tablecoach report: {describe(query, first, last)}"
    console = Console(
        record=True,
        width=args.width,
        file=io.StringIO(),
        force_terminal=True,
        color_system="truecolor",
    )
    render_report(console, h, title, tz, ordered(items), args.ascii)
    text = console.export_svg(title=title) if fmt == "svg" else console.export_html()
    out = Path(args.output) if args.output else Path(f"tablecoach-report.{fmt}")
    tmp = out.with_name(out.name + ".part")
    tmp.write_text(text, encoding="utf-8")
    tmp.replace(out)
    if args.json:
        print(json.dumps({"file": str(out), "format": fmt, "attempts": h.rate.attempts}))
    else:
        print(f"wrote {out} ({fmt}, {h.rate.attempts} attempts)")
    return 0
