"""Coverage of the built-in packs: how many dealt setups the physical model can aim at the
stroke they are dealt with, and how long a solve takes (prints figures; asserts nothing).

Run from the repository root:  python benchmarks/bench_coverage.py [--n 200] [--seed 1]

For every item of every built-in pack, ``--n`` setups are dealt on the default 9-ft table
exactly as the practice screen deals them, and each is solved under the physical model at its
dealt stroke (``aims.solve``). Printed per item: the share that solve, and the reasons
for the rest; per family: the median and 95th-percentile solve time (wall clock), and the
median process CPU time (the machine is shared: wall clock grows with its load).
Goals (issue): at least 95 % at the dealt stroke for every item; a one-rail solve at most
5 ms median and a three-rail solve at most 8 ms median.
"""

from __future__ import annotations

import argparse
import collections
import statistics
import time

import numpy as np

from tablecoach.core import aim as aims
from tablecoach.core import drills, shots
from tablecoach.core.table import builtin_table


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__)
    ap.add_argument("--n", type=int, default=200, help="setups per pack item")
    ap.add_argument("--seed", type=int, default=1)
    args = ap.parse_args()
    table = builtin_table("9ft")
    times: dict[str, list[float]] = collections.defaultdict(list)
    cpu: dict[str, list[float]] = collections.defaultdict(list)
    worst = 1.0
    print(f"{'pack':20} {'item':>4} {'family':22} {'dealt at':14} {'solved':>7}  why not")
    for name, drill in sorted(drills.builtin_drills().items()):
        rng = np.random.default_rng(args.seed)
        for k, item in enumerate(drill.items):
            ok: collections.Counter[str] = collections.Counter()
            dealt_n: collections.Counter[str] = collections.Counter()
            why: dict[str, collections.Counter[str]] = collections.defaultdict(collections.Counter)
            for _ in range(args.n):
                dealt = drills.deal_item(table, drill, k, rng)
                stroke = dealt.label.rsplit(", ", 1)[-1]
                dealt_n[stroke] += 1
                t0, c0 = time.perf_counter(), time.process_time()
                try:
                    aims.solve(table, dealt.setup, dealt.stroke, "physical")
                    ok[stroke] += 1
                except shots.ShotError as exc:
                    why[stroke][type(exc).__name__] += 1
                times[item.family.name].append(time.perf_counter() - t0)
                cpu[item.family.name].append(time.process_time() - c0)
            for stroke, n in dealt_n.items():
                share = ok[stroke] / n
                worst = min(worst, share)
                reasons = ", ".join(f"{a} {b}" for a, b in why[stroke].most_common())
                print(
                    f"{name:20} {k + 1:>4} {item.family.name:22} {stroke:14} {share:7.1%}"
                    f"  {reasons}"
                )
    print(f"\nlowest share at the dealt stroke: {worst:.1%} (goal: at least 95 %)")
    print(f"\n{'family':24} {'solves':>6} {'median ms':>10} {'p95 ms':>8} {'median cpu ms':>14}")
    for fam, ts in sorted(times.items()):
        ms = sorted(1e3 * t for t in ts)
        p95 = ms[min(len(ms) - 1, int(0.95 * len(ms)))]
        c_ms = statistics.median(1e3 * t for t in cpu[fam])
        print(f"{fam:24} {len(ms):6d} {statistics.median(ms):10.1f} {p95:8.1f} {c_ms:14.1f}")


if __name__ == "__main__":
    main()
