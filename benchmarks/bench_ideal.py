"""Benchmark: the ideal aim solve (goal under 1 ms) and the whole `tablecoach aim` command
(goal under 0.6 s). Prints medians; run with `python benchmarks/bench_ideal.py`."""

from __future__ import annotations

import statistics
import subprocess
import sys
import time

from tablecoach.core import aim as aims
from tablecoach.core import shots
from tablecoach.core.aim import ideal
from tablecoach.core.table import builtin_table


def median_ms(fn, n: int) -> float:
    times = []
    for _ in range(n):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return statistics.median(times) * 1e3


def main() -> None:
    t = builtin_table("9ft")
    m = t.to_metres
    cases = {
        "one-rail kick": shots.make_setup(
            t, shots.preset("one-rail-kick"), m(1, 1), target_ball=m(5, 1)
        ),
        "cross-corner bank": shots.make_setup(
            t, shots.preset("cross-corner-bank"), m(3, 1), object_ball=m(4, 2)
        ),
        "three-rail kick": shots.make_setup(
            t, shots.preset("three-rail-kick"), m(1, 1), target_ball=m(3, 1)
        ),
    }
    print("ideal aim solve, median of 500 (goal < 1 ms):")
    for name, s in cases.items():
        print(f"  {name:18s} {median_ms(lambda s=s: ideal.solve(t, s), 500):7.3f} ms")
    s = cases["cross-corner bank"]
    print(f"  convergence (9 starts) {median_ms(lambda: aims.convergence(t, s), 200):7.3f} ms")
    cmd = [sys.executable, "-m", "tablecoach", "aim", "--family", "cross-corner-bank"]
    cmd += ["--cue", "3,1", "--object", "4,2"]
    for model in ("ideal", "physical"):
        full = cmd + ["--model", model]
        runs = []
        for _ in range(7):
            t0 = time.perf_counter()
            subprocess.run(full, capture_output=True, check=True)
            runs.append(time.perf_counter() - t0)
        print(
            f"whole `tablecoach aim --model {model}` command, median of 7 (goal < 0.6 s): "
            f"{statistics.median(runs):.3f} s"
        )


if __name__ == "__main__":
    main()
