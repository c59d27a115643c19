"""Physical solves on a fixed set of setups, saved and compared (prints figures; asserts nothing).

Run from the repository root:
    python benchmarks/compare_solves.py save before.json [--n 100]
    python benchmarks/compare_solves.py compare before.json [--n 100]

The set: the setups of bench_physics.py section 1 and ``--n`` setups dealt from the built-in
packs (seed 7, every item in turn), each solved at its dealt stroke. ``compare`` prints the
largest difference of the reading, the window ends, the landing and the contacts (diamonds),
how many solves are identical to the last bit, and any setup whose outcome (solved or the
error's kind) changed.
"""

from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path
from typing import Any

import numpy as np

from tablecoach.core import drills, shots
from tablecoach.core.aim import physical
from tablecoach.core.table import builtin_table

T = builtin_table("9ft")


def _setup(family: str, cue, obj=None, tb=None) -> shots.Setup:
    return shots.make_setup(
        T,
        shots.preset(family),
        T.to_metres(*cue),
        T.to_metres(*obj) if obj else None,
        None,
        T.to_metres(*tb) if tb else None,
    )


def cases(n: int) -> list[tuple[shots.Setup, shots.Stroke]]:
    book = shots.SPEED_PRESETS
    out = [
        (_setup("one-rail-kick", (2, 2.5), None, (6, 2.5)), shots.Stroke(book["medium"])),
        (_setup("one-rail-kick", (1.5, 2), None, (5.5, 3)), shots.Stroke(book["lag"])),
        (_setup("cross-side-bank", (2, 1.5), (3, 2.5)), shots.Stroke(book["medium"])),
        (_setup("three-rail-kick", (1.5, 2), None, (3.5, 1.5)), shots.Stroke(book["fast"])),
        (_setup("three-rail-kick", (2, 2.5), None, (3.5, 1.2)), shots.Stroke(book["fast"])),
        (_setup("three-rail-kick", (1.5, 2), None, (3.5, 1.5)), shots.Stroke(book["power"])),
    ]
    rng = np.random.default_rng(7)
    packs = sorted(drills.builtin_drills().items())
    i = 0
    while len(out) < 6 + n:
        _, drill = packs[i % len(packs)]
        k = (i // len(packs)) % len(drill.items)
        dealt = drills.deal_item(T, drill, k, rng)
        out.append((dealt.setup, dealt.stroke))
        i += 1
    return out


def solve_all(n: int) -> list[dict[str, Any]]:
    rows: list[dict[str, Any]] = []
    for setup, stroke in cases(n):
        try:
            a = physical.solve(T, setup, stroke)
        except shots.ShotError as exc:
            rows.append({"error": type(exc).__name__})
            continue
        unit = T.rail_unit(a.rail)
        rows.append(
            {
                "reading": a.reading / unit,
                "lo": a.margin_minus / unit,
                "hi": a.margin_plus / unit,
                "landing": [a.landing.rail, a.landing.at / T.rail_unit(a.landing.rail)],
                "contacts": [[c.rail, c.at / T.rail_unit(c.rail)] for c in a.contacts],
            }
        )
    return rows


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("mode", choices=("save", "compare"))
    ap.add_argument("file", type=Path)
    ap.add_argument("--n", type=int, default=100)
    args = ap.parse_args()
    rows = solve_all(args.n)
    if args.mode == "save":
        args.file.write_text(json.dumps(rows))
        print(f"saved {len(rows)} solves ({sum('error' in r for r in rows)} errors)")
        return
    old = json.loads(args.file.read_text())
    worst = {"reading": 0.0, "lo": 0.0, "hi": 0.0, "landing": 0.0, "contacts": 0.0}
    changed = 0
    identical = sum(a == b for a, b in zip(old, rows, strict=True))
    for i, (a, b) in enumerate(zip(old, rows, strict=True)):
        if ("error" in a) != ("error" in b) or a.get("error") != b.get("error"):
            changed += 1
            print(f"case {i}: {a.get('error', 'solved')} -> {b.get('error', 'solved')}")
            continue
        if "error" in a:
            continue
        for key in ("reading", "lo", "hi"):
            worst[key] = max(worst[key], abs(a[key] - b[key]))
        if a["landing"][0] != b["landing"][0]:
            print(f"case {i}: landing rail {a['landing'][0]} -> {b['landing'][0]}")
        else:
            worst["landing"] = max(worst["landing"], abs(a["landing"][1] - b["landing"][1]))
        if [c[0] for c in a["contacts"]] != [c[0] for c in b["contacts"]]:
            print(f"case {i}: contacts' rails changed")
        else:
            for c, d in zip(a["contacts"], b["contacts"], strict=True):
                worst["contacts"] = max(worst["contacts"], abs(c[1] - d[1]))
    print(
        f"{len(rows)} solves, {changed} outcomes changed, {identical} identical to the last bit; "
        "largest differences (diamonds):"
    )
    print("  " + ", ".join(f"{k} {v:.5f}" for k, v in worst.items()))
    print("  (exactly: " + ", ".join(f"{k} {v:.3g}" for k, v in worst.items()) + ")")


if __name__ == "__main__":
    sys.exit(main())
