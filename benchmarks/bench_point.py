"""The convergence point on the card: for setups dealt from every built-in pack and solved
under a model, whether the table panel's drawing shows the point's glyph at the drawing sizes
of a 100x30, 80x24 and 120x40 terminal, and at what scale the table is then drawn.

Run: python benchmarks/bench_point.py [--per-pack 12] [--seed 5] [--model physical]. The
drawing sizes are the table panel's (TablePanel.drawing_size) at each terminal size. Prints
figures; asserts nothing.
"""

from __future__ import annotations

import argparse
from dataclasses import replace

import numpy as np

from tablecoach.core import aim as aims
from tablecoach.core.drills import builtin_drills, sample_setups
from tablecoach.core.table import builtin_table
from tablecoach.render.table_view import UNICODE, TableView, picture_for_aim
from tablecoach.ui.widgets.table_panel import MAX_ROWS, draw

SIZES = {"100x30": (62, 19), "80x24": (44, 13), "120x40": (75, 29)}
"""Terminal size -> the table panel's drawing size (width, height) on the practice screen."""


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--per-pack", type=int, default=12)
    ap.add_argument("--seed", type=int, default=5)
    ap.add_argument("--model", default="physical", choices=("ideal", "physical"))
    args = ap.parse_args()
    table = builtin_table("9ft")
    rng = np.random.default_rng(args.seed)
    print(f"{args.model} model, {args.per_pack} setups a pack, seed {args.seed}, 9-ft table")
    print("pack: point drawn / setups with a point; rows a diamond (columns are twice that)")
    total = {k: [0, 0] for k in SIZES}
    for name, drill in builtin_drills().items():
        n = 0
        shown = dict.fromkeys(SIZES, 0)
        rows: dict[str, list[float]] = {k: [] for k in SIZES}
        for dealt in sample_setups(table, drill, rng, args.per_pack):
            try:
                aim, _ = aims.solve_playable(table, dealt.setup, dealt.stroke, args.model)
                conv = aims.convergence(table, dealt.setup, None, aim.stroke, args.model)
            except ValueError:
                continue
            n += 1
            picture = replace(picture_for_aim(table, aim, conv), zoom_out=True)
            for size, (w, h) in SIZES.items():
                text = "\n".join(line.plain for line in draw(picture, False, w, h))
                shown[size] += UNICODE.convergence in text
                view = TableView(picture, max_height=h, max_rows=MAX_ROWS)
                rows[size].append(view.fit(w, h)[0])
        said = []
        for size in SIZES:
            total[size][0] += shown[size]
            total[size][1] += n
            span = f"{min(rows[size]):g}-{max(rows[size]):g}" if rows[size] else "-"
            said.append(f"{size} {shown[size]}/{n} at {span}")
        print(f"  {name:<20} " + "; ".join(said))
    print("all packs: " + "; ".join(f"{k} {v[0]}/{v[1]}" for k, v in total.items()))


if __name__ == "__main__":
    main()
