"""`tablecoach history`: streaks, make rates, weekly trends and landing bias, without the app."""

from __future__ import annotations

import argparse
import json
from dataclasses import dataclass
from datetime import date, datetime, time, timedelta, tzinfo
from typing import Any

from ..cli import add_common, whole


class HistoryError(ValueError):
    """A history filter is not valid; the message says what to type instead."""


@dataclass(frozen=True)
class Filters:
    """What to show: every field None means everything."""

    player: str | None = None
    table: str | None = None
    family: str | None = None
    since: date | None = None
    until: date | None = None
    session: int | None = None

    def describe(self) -> str:
        parts = []
        for name in ("player", "table", "family", "session"):
            v = getattr(self, name)
            if v is not None:
                parts.append(f"{name} {v}")
        if self.since:
            parts.append(f"from {self.since.isoformat()}")
        if self.until:
            parts.append(f"to {self.until.isoformat()}")
        return ", ".join(parts) if parts else "everything"


def parse_tz(name: str | None) -> tzinfo | None:
    """A time zone by IANA name (e.g. Europe/Lisbon); None or '' for the machine's own zone."""
    if not name:
        return None
    from zoneinfo import ZoneInfo, ZoneInfoNotFoundError  # noqa: PLC0415

    try:
        return ZoneInfo(name)
    except (ZoneInfoNotFoundError, ValueError):
        raise HistoryError(
            f"unknown time zone {name!r}: use an IANA name such as Europe/Lisbon or UTC"
        ) from None


def parse_day(text: str | None, what: str) -> date | None:
    """YYYY-MM-DD to a date, or a one-line HistoryError."""
    if not text:
        return None
    from ..core import validate  # noqa: PLC0415

    try:
        return validate.day(date.fromisoformat(text.strip()), what)
    except validate.InputError as exc:
        raise HistoryError(f"{exc}; give a date like 2026-11-30") from None
    except ValueError:
        raise HistoryError(f"{what} {validate.show(text)} must be a date like 2026-11-30") from None


def local_midnight(d: date, tz: tzinfo | None) -> datetime:
    """The first instant of a local day, as an aware datetime."""
    naive = datetime.combine(d, time(0, 0))
    return naive.replace(tzinfo=tz) if tz is not None else naive.astimezone()


def store_filters(f: Filters, tz: tzinfo | None) -> dict[str, Any]:
    """The filters as the store's keyword arguments; dates are whole local days (``until``
    included)."""
    if f.since and f.until and f.until < f.since:
        raise HistoryError(f"--until {f.until} is before --since {f.since}")
    return {
        "player": f.player,
        "table": f.table,
        "family": f.family,
        "since": local_midnight(f.since, tz) if f.since else None,
        "until": local_midnight(f.until + timedelta(days=1), tz) if f.until else None,
        "session": f.session,
    }


def query(store: Any, f: Filters, tz: tzinfo | None) -> list[Any]:
    """The attempts matching the filters; dates are whole local days (``until`` included)."""
    return list(store.attempts(**store_filters(f, tz)))


def query_columns(store: Any, f: Filters, tz: tzinfo | None) -> Any:
    """The same attempts as ``query``, as the store's columns of the fields the history reads
    (no Attempt objects: the fast path for big histories)."""
    from ..core.history import HISTORY_FIELDS  # noqa: PLC0415

    return store.columns(**store_filters(f, tz), fields=HISTORY_FIELDS)


def table_resolver(store: Any) -> Any:
    """table name -> TableSpec or None, built-in or stored, for the landing bias."""
    cache: dict[str, Any] = {}

    def look(name: str) -> Any:
        if name not in cache:
            try:
                cache[name] = store.get_table(name)
            except ValueError:
                cache[name] = None
        return cache[name]

    return look


def open_store(create: bool = False) -> Any:
    """The practice database, or None when there is none yet (and ``create`` is False)."""
    from ..core.store import Store  # noqa: PLC0415
    from ..paths import db_path  # noqa: PLC0415

    path = db_path()
    if not path.exists() and not create:
        return None
    return Store.open(path)


def add_filter_options(p: argparse.ArgumentParser) -> None:
    """Filters shared by `history` and `report`."""
    p.add_argument("--player", default=None, help="only this player")
    p.add_argument("--table", default=None, help="only this table")
    p.add_argument("--family", default=None, help="only this shot family")
    p.add_argument("--since", default=None, metavar="YYYY-MM-DD", help="from this local day")
    p.add_argument("--until", default=None, metavar="YYYY-MM-DD", help="to this local day")
    p.add_argument("--session", type=whole(1, 2**62), default=None, help="only this session number")
    p.add_argument(
        "--tz",
        default=None,
        help="time zone for days and weeks, e.g. Europe/Lisbon (default: this machine's)",
    )


def filters_from(args: argparse.Namespace) -> Filters:
    """The filters of the command-line options, checked."""
    f = Filters(
        player=args.player,
        table=args.table,
        family=args.family,
        since=parse_day(args.since, "--since"),
        until=parse_day(args.until, "--until"),
        session=args.session,
    )
    if f.since and f.until and f.until < f.since:
        raise HistoryError(f"--until {f.until} is before --since {f.since}")
    return f


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


def pct(r: Any) -> str:
    """'62% (55-69%)' or 'no attempts'."""
    if r.rate is None:
        return "no attempts"
    return f"{100 * r.rate:.0f}% ({100 * r.low:.0f}-{100 * r.high:.0f}%)"


SPARK = " .:-=+*#"


def spark(weeks: Any) -> str:
    """A week-by-week trend line in plain ASCII: one character a week, darker = more made,
    a space for a week without practice."""
    out = []
    for w in weeks:
        if w.rate.rate is None:
            out.append(" ")
        else:
            out.append(SPARK[1 + min(int(w.rate.rate * (len(SPARK) - 1)), len(SPARK) - 2)])
    return "".join(out)


def text_report(h: Any, f: Filters, tz: tzinfo | None, tz_name: str) -> str:
    """The history as plain text."""
    lines = [f"History: {f.describe()} (days and weeks in {tz_name})"]
    if h.rate.attempts == 0:
        if f.describe() == "everything":
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
        s = h.family_streaks[fam]
        lines.append(
            f"{fam:<20} {r.hits:>4}/{r.attempts:<4}  {pct(r):<18} {s.current:>2}/{s.best:<3}  "
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
                f"  {b.family:<20} {b.speed:<7} {b.mean:+.2f} +- {b.stderr:.2f} diamond "
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


def compute(args: argparse.Namespace) -> tuple[Any, Filters, Any]:
    """(History, filters, tz) for the command-line options."""
    from ..core import history  # noqa: PLC0415

    f = filters_from(args)
    tz = parse_tz(args.tz)
    store = open_store()
    if store is None:
        return history.summarize([], tz=tz), f, tz
    try:
        h = history.summarize(query_columns(store, f, tz), tz=tz, table_of=table_resolver(store))
    finally:
        store.close()
    return h, f, tz


def run(args: argparse.Namespace) -> int:
    from ..core import history  # noqa: PLC0415

    h, f, tz = compute(args)
    if args.json:
        out = history.history_dict(h)
        out["filters"] = {
            "player": f.player,
            "table": f.table,
            "family": f.family,
            "since": f.since.isoformat() if f.since else None,
            "until": f.until.isoformat() if f.until else None,
            "session": f.session,
            "tz": args.tz or "local",
        }
        print(json.dumps(out, indent=2))
        return 0
    print(text_report(h, f, tz, args.tz or "local time"))
    if args.map and h.rate.attempts:
        from ..render.heatmap import HeatMap, legend_text  # noqa: PLC0415

        print()
        print("make rate by where the travelling ball started:")
        print(HeatMap(history.grid_from_zones(h.zones, f.family), ascii_only=True).plain(100))
        print(legend_text())
    return 0
