"""Benchmark: history over 100,000 attempts (goal < 0.5 s) and the history screen (goal < 1 s).

The screen and ``tablecoach history`` read the history from the store as SQLite's integer codes
(``stats.coded.summarize_store``); the Attempt-list figures are kept for comparison.

Run: python benchmarks/bench_history.py [--attempts N] [--repeat R]. Prints figures; asserts
nothing (the machines are shared and noisy, so goals are read, not enforced).
"""

from __future__ import annotations

import argparse
import asyncio
import statistics
import tempfile
import time
from dataclasses import replace
from datetime import UTC, datetime, timedelta
from pathlib import Path

import numpy as np

from tablecoach.core import demo
from tablecoach.core.stats.bias import offsets_of
from tablecoach.core.stats.coded import summarize_store
from tablecoach.core.stats.frame import frame_of
from tablecoach.core.stats.history import history_dict, summarize
from tablecoach.core.stats.zones import zone_codes_of
from tablecoach.core.store import Store
from tablecoach.core.store.query import AttemptQuery

NOW = datetime(2026, 11, 30, 21, 0, tzinfo=UTC)


def make_attempts(n: int) -> list:
    """n attempts: the demo club's four weeks, repeated further back in time as needed."""
    club = demo.make_club(np.random.default_rng(11), NOW, weeks=4, tz=UTC)
    base = [a for s in club.sessions for a in s.attempts]
    out = []
    k = 0
    while len(out) < n:
        shift = timedelta(weeks=4 * k)
        out.extend(replace(a, when=a.when - shift) for a in base)
        k += 1
    out = out[:n]
    out.sort(key=lambda a: a.when)
    return out


def timed(fn, repeat: int) -> list[float]:
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return times


def show(name: str, times: list[float], goal: float | None = None) -> None:
    med = statistics.median(times)
    g = f"  (goal < {goal:g} s: {'met' if med < goal else 'NOT met'})" if goal else ""
    print(f"{name:<44} median {med:7.3f} s   best {min(times):7.3f} s{g}")


async def open_screen(store: Store) -> tuple[float, float]:
    """Seconds from pushing the history screen to its first look (the session list) and to
    its full drawing with the data."""
    from textual.app import App

    from tablecoach.ui.screens.history import HistoryScreen

    class Bench(App[None]):
        pass

    app = Bench()
    async with app.run_test(size=(120, 40)) as pilot:
        t0 = time.perf_counter()
        screen = HistoryScreen(store, None, tz=UTC, today=NOW.date())
        await app.push_screen(screen)
        first = None
        status = screen.query_one("#history-status")
        while screen.loaded is None:
            await pilot.pause(0.02)
            if first is None and "sessions;" in str(status.render()):
                first = time.perf_counter() - t0
        await pilot.pause()
        full = time.perf_counter() - t0
        return (first if first is not None else full), full


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__)
    ap.add_argument("--attempts", type=int, default=100_000)
    ap.add_argument("--repeat", type=int, default=5)
    args = ap.parse_args()
    t0 = time.perf_counter()
    sum(range(10_000_000))
    print(
        f"machine reference: sum(range(10**7)) took {time.perf_counter() - t0:.3f} s "
        "(about 0.15 s on an unloaded desktop; scale the figures below by it)"
    )
    t0 = time.perf_counter()
    items = make_attempts(args.attempts)
    print(f"made {len(items)} attempts in {time.perf_counter() - t0:.1f} s")
    tables = {t.name: t for t in demo.CLUB_TABLES}.get
    r = args.repeat
    show(
        "summarize (everything, landing bias too)",
        timed(lambda: summarize(items, tz=UTC, today=NOW.date(), table_of=tables), r),
        0.5,
    )
    show(
        "summarize, local zone Europe/Lisbon",
        timed(lambda: summarize(items, tz=_lisbon(), today=NOW.date(), table_of=tables), r),
        0.5,
    )
    show("  columns (one pass over the attempts)", timed(lambda: frame_of(items), r))
    cols = frame_of(items)
    show("  zones (coach grid)", timed(lambda: zone_codes_of(cols), r))
    show("  landing offsets (ideal reflection)", timed(lambda: offsets_of(cols, tables), r))
    show(
        "  history_dict (the --json output)",
        timed(lambda: history_dict(summarize(items, tz=UTC, today=NOW.date())), 1),
    )
    with tempfile.TemporaryDirectory() as d:
        store = Store.open(Path(d) / "bench.sqlite3")
        try:
            for spec in demo.CLUB_TABLES:
                store.save_table(spec)
            t0 = time.perf_counter()
            added, _ = store.import_attempts(items)
            print(f"stored {added} attempts in {time.perf_counter() - t0:.1f} s (set-up)")
            show("store.attempts() of all (Attempt objects)", timed(store.attempts, 3))
            show(
                "summarize_store (the command's path), landing bias too",
                timed(
                    lambda: summarize_store(store, tz=UTC, today=NOW.date(), table_of=tables),
                    r,
                ),
                0.5,
            )
            player = items[0].player
            show(
                f"  the same for one player ({store.count_attempts(AttemptQuery(player=player))})",
                timed(
                    lambda: summarize_store(
                        store,
                        AttemptQuery(player=player),
                        tz=UTC,
                        today=NOW.date(),
                        table_of=tables,
                    ),
                    r,
                ),
                0.5,
            )
            runs = [asyncio.run(open_screen(store)) for _ in range(3)]
            show("history screen: first look (sessions)", [r[0] for r in runs], 1.0)
            show("history screen: full, all attempts shown", [r[1] for r in runs], 1.0)
        finally:
            store.close()


def _lisbon():
    from zoneinfo import ZoneInfo

    return ZoneInfo("Europe/Lisbon")


if __name__ == "__main__":
    main()
