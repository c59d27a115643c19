"""`tablecoach tables`: list the tables, show one, add a custom table, or check a table file."""

from __future__ import annotations

import argparse
import json
from typing import Any

from .options import add_common


def _action_common(p: argparse.ArgumentParser) -> None:
    add_common(p)  # --data-dir may also follow the action
    p.add_argument("--json", action="store_true", help="print JSON instead of text")


def register(sub: Any) -> None:
    p = sub.add_parser(
        "tables",
        help="list, show, add or check tables",
        description="Tables: the built-in 9ft, 8ft and 7ft, and custom tables from TOML files.",
    )
    add_common(p)
    acts = p.add_subparsers(dest="action", metavar="ACTION")
    a = acts.add_parser("list", help="built-in and custom tables")
    _action_common(a)
    a = acts.add_parser("show", help="one table's figures")
    a.add_argument("name")
    _action_common(a)
    a = acts.add_parser("add", help="check a TOML table file and store it as a custom table")
    a.add_argument("file")
    _action_common(a)
    a = acts.add_parser("validate", help="check a TOML table file without storing it")
    a.add_argument("file")
    _action_common(a)
    p.set_defaults(func=run, action=None, json=False)


def _custom() -> dict[str, Any]:
    """Stored custom tables; no database file is created just to list them."""
    from ..core.store import Store
    from ..paths import db_path

    path = db_path()
    if not path.exists():
        return {}
    with Store.open(path) as s:
        return s.tables()


def _figures(spec: Any, kind: str) -> dict[str, Any]:
    from ..core.table_files import table_to_mapping

    data = table_to_mapping(spec)
    data["kind"] = kind
    data["diamond_m"] = spec.diamond
    data["ball_radius_m"] = spec.ball_radius
    return data


def run(args: argparse.Namespace) -> int:
    from ..core.table import BUILTIN_TABLES, DEFAULT_TABLE, TableError
    from ..core.table_files import load_table_file

    action = args.action or "list"
    if action == "list":
        custom = _custom()
        rows = [
            {"name": n, "kind": "built-in", "description": t.description,
             "default": n == DEFAULT_TABLE}
            for n, t in BUILTIN_TABLES.items()
        ] + [
            {"name": n, "kind": "custom", "description": t.description, "default": False}
            for n, t in custom.items()
        ]  # fmt: skip
        if args.json:
            print(json.dumps({"tables": rows}, indent=2))
            return 0
        width = max(len(r["name"]) for r in rows)
        for r in rows:
            mark = " (default)" if r["default"] else ""
            print(f"{r['name']:<{width}}  [{r['kind']}] {r['description']}{mark}")
        return 0
    if action == "show":
        if args.name in BUILTIN_TABLES:
            spec, kind = BUILTIN_TABLES[args.name], "built-in"
        else:
            custom = _custom()
            if args.name not in custom:
                names = ", ".join([*BUILTIN_TABLES, *custom])
                raise TableError(
                    f"unknown table {args.name!r}: known tables are {names}; "
                    "add your own with 'tablecoach tables add FILE'"
                )
            spec, kind = custom[args.name], "custom"
        data = _figures(spec, kind)
        if args.json:
            print(json.dumps(data, indent=2))
            return 0
        _print_spec(data)
        return 0
    spec = load_table_file(args.file)
    if action == "validate":
        if args.json:
            print(json.dumps({"ok": True, "file": args.file, "table": _figures(spec, "custom")}))
        else:
            print(
                f"{args.file}: ok: table {spec.name!r}, {spec.length:.4f} x {spec.width:.4f} m "
                "playing surface"
            )
        return 0
    from ..core.store import Store
    from ..paths import db_path

    if spec.name in BUILTIN_TABLES:
        raise TableError(f"{args.file}: {spec.name!r} is a built-in table; give yours another name")
    with Store.open(db_path()) as s:
        replaced = spec.name in s.tables()
        s.save_table(spec)
    verb = "replaced" if replaced else "added"
    if args.json:
        print(json.dumps({"ok": True, verb: spec.name}))
    else:
        print(f"{verb} table {spec.name!r}; practise on it with --table {spec.name}")
    return 0


def _print_spec(d: dict[str, Any]) -> None:
    inch = 0.0254
    print(f"{d['name']} [{d['kind']}] {d['description']}".rstrip())
    print(
        f"  playing surface {d['length']:.4f} x {d['width']:.4f} m "
        f"({d['length'] / inch:.1f} x {d['width'] / inch:.1f} in); "
        f"1 diamond = {d['diamond_m'] * 1000:.1f} mm"
    )
    print(
        f"  ball {d['ball_diameter'] * 1000:.2f} mm, {d['ball_mass'] * 1000:.0f} g; "
        f"cushion nose at {d['nose_height_ratio'] * 100:.1f} % of the ball; "
        f"sights {d['sight_setback'] * 1000:.1f} mm behind the nose"
    )
    p = d["pockets"]
    print(
        f"  corner mouth {p['corner_mouth'] * 1000:.1f} mm, side mouth {p['side_mouth'] * 1000:.1f}"
        f" mm; facing {p['corner_facing_deg']:g} / {p['side_facing_deg']:g} degrees"
    )
    print("  cloth: " + ", ".join(f"{k} {v:g}" for k, v in d["cloth"].items()))
    print("  cushion: " + ", ".join(f"{k} {v:g}" for k, v in d["cushion"].items()))
