"""`tablecoach drills`: list the drill packs, show one, or check a pack file."""

from __future__ import annotations

import argparse
import json
from pathlib import Path
from typing import Any

from .options import add_common, whole


def _action_common(p: argparse.ArgumentParser) -> None:
    add_common(p)  # --data-dir may also follow the action
    p.add_argument("--json", action="store_true", help="print JSON instead of text")


def register(sub: Any) -> None:
    p = sub.add_parser(
        "drills",
        help="list, show or check drill packs",
        description="Drill packs: the built-in ones and your own TOML files (docs/drills.md).",
    )
    add_common(p)
    acts = p.add_subparsers(dest="action", metavar="ACTION")
    a = acts.add_parser("list", help="every pack, built-in and your own")
    _action_common(a)
    a = acts.add_parser("show", help="what one pack deals")
    a.add_argument("name", help="pack name, or a path to a .toml file")
    a.add_argument("--table", default="9ft", help="table for the sample setups (default 9ft)")
    a.add_argument(
        "--sample", type=whole(0, 1000), default=0, metavar="N", help="also deal N setups"
    )
    a.add_argument(
        "--seed", type=whole(0, 2**63 - 1), default=None, help="random seed for --sample"
    )
    _action_common(a)
    a = acts.add_parser("validate", help="check a pack file (line and field of any problem)")
    a.add_argument("file", help="the .toml file")
    _action_common(a)
    p.set_defaults(func=run, action=None, json=False)


def _user_dir() -> Path:
    from ..paths import user_drills_dir

    return user_drills_dir()


def run(args: argparse.Namespace) -> int:
    action = args.action or "list"
    if action == "list":
        return _list(args)
    if action == "show":
        return _show(args)
    return _validate(args)


def _list(args: argparse.Namespace) -> int:
    from ..core import drills

    errors: list[str] = []
    found = drills.all_drills(_user_dir(), errors)
    builtin = drills.builtin_dir()
    rows: list[dict[str, Any]] = []
    for name in sorted(found):
        d = found[name]
        own = d.source is not None and d.source.parent != builtin
        rows.append(
            {
                "name": name,
                "title": d.title,
                "count": d.count,
                "items": len(d.items),
                "source": "yours" if own else "built-in",
                "default": name == drills.DEFAULT_DRILL,
            }
        )
    if args.json:
        print(json.dumps({"drills": rows, "errors": errors}, indent=2))
        return 0
    width = max((len(r["name"]) for r in rows), default=4)
    for r in rows:
        mark = " (default)" if r["default"] else ""
        print(f"{r['name']:<{width}}  {r['title']}, {r['count']} setups [{r['source']}]{mark}")
    for e in errors:
        print(f"skipped a broken pack: {e}")
    return 0


def _show(args: argparse.Namespace) -> int:
    from ..core import drills

    d = drills.find_drill(args.name, _user_dir())
    data = drills.describe(d)
    sample: list[dict[str, Any]] = []
    if args.sample > 0:
        import numpy as np

        from ..core.table import builtin_table

        table = builtin_table(args.table)
        rng = np.random.default_rng(args.seed)
        for x in drills.deal(table, d, rng, count=args.sample):
            s = x.setup

            def dia(p: Any, table: Any = table) -> list[float] | None:
                return None if p is None else [round(v, 3) for v in table.to_diamonds(*p)]

            sample.append(
                {
                    "label": x.label,
                    "item": x.item,
                    "cue": dia(s.cue),
                    "object": dia(s.object),
                    "target_ball": dia(s.target_ball),
                    "pocket": s.pocket,
                    "speed": x.stroke.speed,
                    "aim": None
                    if x.aim is None
                    else {
                        "rail": x.aim.rail,
                        "reading": round(table.along_to_diamonds(x.aim.rail, x.aim.reading), 3),
                    },
                }
            )
        data["sample"] = sample
        data["sample_table"] = table.name
    if args.json:
        print(json.dumps(data, indent=2))
        return 0
    print(f"{d.title} ({d.name}), {d.count} setups a round")
    if d.description:
        print(d.description)
    if d.source:
        print(f"file: {d.source}")
    for k, item in enumerate(data["items"], start=1):
        f = item["family"]
        target = ", ".join(item["pockets"]) if item["pockets"] else "a ball"
        speeds = ", ".join(item["speed_names"])
        print(
            f"  {k}. {f['title']}: {f['travel']} ball off {', '.join(f['rails'])} to {target}; "
            f"speeds {speeds}; weight {item['weight']:g}"
        )
        for ball, rects in item["regions"].items():
            where = "; ".join(
                f"x {r['x'][0]:g}-{r['x'][1]:g}, y {r['y'][0]:g}-{r['y'][1]:g}" for r in rects
            )
            print(f"       {ball}: {where}")
    for shown in sample:
        ob = shown["object"] or shown["target_ball"]
        aim = f", aim {shown['aim']['rail']} {shown['aim']['reading']:.2f}" if shown["aim"] else ""
        print(f"  - {shown['label']}: cue {shown['cue']}, ball {ob}{aim}")
    return 0


def _validate(args: argparse.Namespace) -> int:
    import numpy as np

    from ..core import drills
    from ..core.drill_packs import load_drill
    from ..core.table import BUILTIN_TABLES

    d = load_drill(args.file)
    drills.check_pack(d, BUILTIN_TABLES.values(), np.random.default_rng(0))
    if args.json:
        print(
            json.dumps({"ok": True, "file": str(args.file), "name": d.name, "items": len(d.items)})
        )
        return 0
    print(
        f"{args.file}: ok: {d.title!r}, {len(d.items)} item(s), {d.count} setups a round; "
        f"every item deals a clean setup on {', '.join(BUILTIN_TABLES)}"
    )
    return 0
