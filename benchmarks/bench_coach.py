"""Benchmark: does the scheduler find a simulated player's weak zones? Prints the figures.

A simulated player practises one-rail kicks at medium speed. Of the 16 zones of the coach's grid
(4 x 4 cells of the cue ball's start), two are weak (30 % made) and fourteen strong (80 %). The
player is invented for this benchmark. Goal (issue 5): within 100 attempts at least 35 % go to
the weak zones, and both weak zones are among the three weakest the coach reports. The same
figures are printed for uniform random setups beside them.

Run: /work/venv/bin/python benchmarks/bench_coach.py [--seeds N] [--attempts N]
"""

from __future__ import annotations

import argparse
import time
from dataclasses import dataclass
from datetime import UTC, datetime
from typing import Any

import numpy as np

from tablecoach.core import scheduler, shots
from tablecoach.core.aim import ideal
from tablecoach.core.records import Attempt
from tablecoach.core.table import TableSpec, builtin_table

FAMILY = shots.PRESETS["one-rail-kick"]
WEAK = {(1, 1), (3, 2)}  # (col, row): x 2-4 y 1-2 and x 6-8 y 2-3
P_WEAK, P_STRONG = 0.30, 0.80


@dataclass(frozen=True, slots=True)
class Dealt:
    """Same fields as drills.Dealt (setup, stroke, item, label)."""

    setup: shots.Setup
    stroke: shots.Stroke
    item: str = "bench"
    label: str = ""


def sampler(table: TableSpec, drill: Any, rng: np.random.Generator, n: int) -> list[Dealt]:
    """One-rail kicks (right rail) from anywhere, a target ball anywhere; clean paths only."""
    out: list[Dealt] = []
    while len(out) < n:
        cue = table.to_metres(rng.uniform(0.2, 7.8), rng.uniform(0.2, 3.8))
        tb = table.to_metres(rng.uniform(0.2, 7.8), rng.uniform(0.2, 3.8))
        try:
            s = shots.make_setup(table, FAMILY, cue, None, None, tb)
            ideal.solve(table, s)
        except ValueError:
            continue
        out.append(Dealt(s, shots.Stroke(shots.SPEED_PRESETS["medium"])))
    return out


def attempt_of(table: TableSpec, dealt: Dealt, hit: bool) -> Attempt:
    rec = shots.record_of(table, dealt.setup)
    return Attempt(
        datetime(2026, 1, 1, tzinfo=UTC),
        "sim",
        table.name,
        rec,
        dealt.stroke.speed,
        0.0,
        0.0,
        "right",
        4.0,
        4.0,
        "hit" if hit else "miss",
        "left",
        4.0,
    )


def run(seed: int, n: int, uniform: bool) -> tuple[float, int, float]:
    """(share of attempts in weak zones, weak zones among the 3 weakest, seconds per choice)."""
    table = builtin_table("9ft")
    rng = np.random.default_rng(seed)
    player = np.random.default_rng(seed + 1000)
    sch = scheduler.Scheduler(table, None, [], rng, sampler=sampler)
    weak = 0
    t0 = time.perf_counter()
    for _ in range(n):
        if uniform:
            d = sampler(table, None, rng, 1)[0]
            z = sch.zone_of_dealt(d)
        else:
            ch = sch.next()
            d, z = ch.dealt, ch.zone
        p = P_WEAK if (z.col, z.row) in WEAK else P_STRONG
        weak += (z.col, z.row) in WEAK
        sch.record(attempt_of(table, d, bool(player.random() < p)))
    dt = (time.perf_counter() - t0) / n
    worst = {(z.col, z.row) for z, _ in sch.weakest(3)}
    return weak / n, len(worst & WEAK), dt


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--seeds", type=int, default=20)
    ap.add_argument("--attempts", type=int, default=100)
    args = ap.parse_args()
    print(f"simulated player: 2 weak zones at {P_WEAK:.0%}, 14 strong at {P_STRONG:.0%}")
    print(f"{args.attempts} attempts, {args.seeds} seeds; goal: >= 35 % weak, both in 3 weakest")
    for name, uniform in (("scheduler", False), ("uniform random", True)):
        shares, found, times = [], [], []
        for s in range(args.seeds):
            sh, f, dt = run(s, args.attempts, uniform)
            shares.append(sh)
            found.append(f)
            times.append(dt)
        sh = np.array(shares)
        fd = np.array(found)
        print(
            f"{name:>15}: weak share mean {sh.mean():.1%} (min {sh.min():.1%}, "
            f"seeds >= 35 %: {np.sum(sh >= 0.35)}/{len(sh)}); both weak in 3 weakest: "
            f"{np.sum(fd == 2)}/{len(fd)}; both goals: {np.sum((sh >= 0.35) & (fd == 2))}/"
            f"{len(sh)}; {np.mean(times) * 1e3:.1f} ms per choice"
        )


if __name__ == "__main__":
    main()
