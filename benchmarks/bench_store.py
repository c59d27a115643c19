"""Store speed: time to log one attempt (goal under 5 ms) and to query 100,000 attempts.

``attempts`` builds Attempt objects; ``summarize_store`` (core/stats/coded.py) reads the same
rows as integer codes and sums them up (the history's path).

Run: python benchmarks/bench_store.py [--n 100000]. Prints figures; asserts nothing, since the
machines are shared and noisy.
"""

from __future__ import annotations

import argparse
import statistics
import sys
import tempfile
import time
from dataclasses import replace
from datetime import UTC, datetime, timedelta
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

import numpy as np

from tablecoach.core.records import Attempt, ShotRecord
from tablecoach.core.stats.coded import summarize_store
from tablecoach.core.store import Store
from tablecoach.core.store.query import AttemptQuery as Q

FAMILIES = [
    ShotRecord("cue", ("right",), (1.5, 1.0), None, None, (3.0, 2.0), "one-rail-kick"),
    ShotRecord("cue", ("right", "foot"), (2.5, 2.0), None, None, (6.0, 1.0), "two-rail-kick"),
    ShotRecord("object", ("right",), (3.5, 2.0), (5.5, 2.5), "foot-left", None,
               "cross-corner-bank"),
    ShotRecord("object", ("right",), (2.5, 1.2), (3.2, 2.6), "side-left", None,
               "cross-side-bank"),
]  # fmt: skip


def invented(rng: np.random.Generator, n: int, start: datetime) -> list[Attempt]:
    """Invented practice data (benchmark only): 4 players, 3 tables, 4 families."""
    out = []
    for i in range(n):
        shot = FAMILIES[i % 4]
        out.append(
            Attempt(
                when=start + timedelta(seconds=20 * i),
                player=f"player{i % 4}",
                table=("9ft", "8ft", "7ft")[i % 3],
                shot=shot,
                speed=float(rng.uniform(0.5, 3.0)),
                english=0.0,
                follow=0.0,
                aim_rail="right",
                aim_given=float(rng.uniform(1, 7)),
                aim_used=float(rng.uniform(1, 7)),
                result="hit" if rng.random() < 0.4 else "miss",
                landing_rail="left",
                landing_at=float(rng.uniform(0, 8)),
                note="",
                drill="mixed",
            )
        )
    return out


def timed(fn, repeat: int = 3) -> tuple[float, object]:  # type: ignore[no-untyped-def]
    best, result = float("inf"), None
    for _ in range(repeat):
        t0 = time.perf_counter()
        result = fn()
        best = min(best, time.perf_counter() - t0)
    return best, result


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--n", type=int, default=100_000)
    ap.add_argument("--logs", type=int, default=300)
    args = ap.parse_args()
    rng = np.random.default_rng(1)
    start = datetime(2026, 1, 1, tzinfo=UTC)
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "bench.sqlite3"
        with Store.open(path) as s:
            sid = s.start_session("player0", "9ft", "mixed")
            items = invented(rng, args.logs, start)
            times = []
            for a in items:
                t0 = time.perf_counter()
                s.log(replace(a, session=sid))
                times.append(time.perf_counter() - t0)
            ms = [t * 1000 for t in times]
            print(
                f"log one attempt (committed, synchronous=FULL, {args.logs} logs): "
                f"median {statistics.median(ms):.2f} ms, "
                f"95th percentile {np.percentile(ms, 95):.2f} ms, max {max(ms):.2f} ms "
                "(goal under 5 ms)"
            )
            t0 = time.perf_counter()
            bulk = invented(rng, args.n - args.logs, start + timedelta(days=60))
            t_make = time.perf_counter() - t0
            t0 = time.perf_counter()
            added, _ = s.import_attempts(bulk)
            t_imp = time.perf_counter() - t0
            total = s.count_attempts()
            print(
                f"import {added} attempts: {t_imp:.2f} s ({t_imp / max(added, 1) * 1e6:.0f} us "
                f"each; building them took {t_make:.2f} s); database holds {total}"
            )
            since = start + timedelta(days=60, hours=100)
            cases = [
                ("count all", lambda: s.count_attempts()),
                ("count player", lambda: s.count_attempts(Q(player="player1"))),
                ("all attempts", lambda: s.attempts()),
                ("player", lambda: s.attempts(Q(player="player1"))),
                ("table", lambda: s.attempts(Q(table="8ft"))),
                ("family", lambda: s.attempts(Q(family="cross-corner-bank"))),
                ("player+since", lambda: s.attempts(Q(player="player2", since=since))),
                ("session", lambda: s.attempts(Q(session=sid))),
                ("player+session", lambda: s.attempts(Q(player="player0", session=sid))),
                ("sessions list", lambda: s.sessions()),
                ("history all", lambda: summarize_store(s).rate.attempts),
                ("history player", lambda: summarize_store(s, Q(player="player1")).rate.attempts),
            ]
            for name, fn in cases:
                t, res = timed(fn)
                n = res if isinstance(res, int) else len(res)  # type: ignore[arg-type]
                print(f"query {name:<14} over {total}: {t * 1000:8.1f} ms -> {n}")
        print(f"file size: {path.stat().st_size / 1e6:.1f} MB")


if __name__ == "__main__":
    main()
