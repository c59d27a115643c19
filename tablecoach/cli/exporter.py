"""`tablecoach export`: write logged attempts as JSONL (default) or CSV (docs/formats.md)."""

from __future__ import annotations

import argparse
import os
import sys
import tempfile
from pathlib import Path
from typing import Any

from .options import add_common


def register(sub: Any) -> None:
    p = sub.add_parser(
        "export",
        help="write logged attempts as JSONL or CSV",
        description="Write attempts to standard output, or to --output FILE. Importing the "
        "file into an empty data folder gives back the same attempts.",
    )
    add_common(p)
    p.add_argument(
        "--format",
        choices=("jsonl", "csv"),
        default=None,
        help="default jsonl (csv when --output ends in .csv)",
    )
    p.add_argument("--output", "-o", default=None, metavar="FILE", help="default: stdout")
    p.add_argument("--player", default=None, help="only this player's attempts")
    p.add_argument("--table", default=None, help="only attempts on this table")
    p.add_argument("--family", default=None, help="only this shot family")
    p.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    from ..core.store import Store
    from ..paths import db_path

    fmt = args.format or ("csv" if (args.output or "").lower().endswith(".csv") else "jsonl")
    path = db_path()
    if not path.exists():  # nothing logged yet: an empty export, and no database created for it
        return _write(None, args, fmt)
    with Store.open(path) as s:
        return _write(s, args, fmt)


def _write(store: Any, args: argparse.Namespace, fmt: str) -> int:
    """Stream the attempts from ``store`` (None: none) in batches into the output."""
    from ..core import formats
    from ..core.store.query import AttemptQuery
    from .progress import tracked

    attempts: Any = []
    if store is not None:
        query = AttemptQuery(player=args.player, table=args.table, family=args.family)
        total = store.count_attempts(query) if sys.stderr.isatty() else None
        if fmt == "jsonl":  # straight from the stored rows, no Attempt built (jsonl_line)
            rows = (r for page in store.attempt_row_pages(query) for r in page)
            attempts = tracked(rows, total, "exporting")
        else:
            attempts = tracked(store.iter_attempts(query), total, "exporting")

    def write(fh: Any) -> int:
        if fmt == "jsonl" and store is not None:
            return formats.write_jsonl_rows(attempts, fh)
        return formats.write_any(attempts, fh, fmt)

    if args.output is None:
        write(sys.stdout)
        sys.stdout.flush()
        return 0
    out = Path(args.output)
    out.parent.mkdir(parents=True, exist_ok=True)
    # write beside the target, then rename: a failed export never leaves half a file behind
    fd, tmp = tempfile.mkstemp(prefix=f".{out.name}.", dir=out.parent)
    try:
        with os.fdopen(fd, "w", encoding="utf-8", newline="") as fh:
            n = write(fh)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, out)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    print(f"wrote {n} attempt{'s' if n != 1 else ''} to {out} ({fmt})", file=sys.stderr)
    return 0
