"""`tablecoach import FILE`: check every line of a JSONL or CSV file, then add its attempts."""

from __future__ import annotations

import argparse
import json
import sys
from typing import Any

from .options import add_common


class ImportFileError(ValueError):
    """An import file cannot be read or has bad lines; the message says what to do."""


def register(sub: Any) -> None:
    p = sub.add_parser(
        "import",
        help="add attempts from a JSONL or CSV file (docs/formats.md)",
        description="Check every line of FILE first and report each bad one; a file with bad "
        "lines imports nothing unless --skip-bad. Attempts already stored are skipped.",
    )
    add_common(p)
    p.add_argument("file", help="the file to read ('-' for standard input)")
    p.add_argument(
        "--format", choices=("jsonl", "csv"), default=None, help="default: from the file name"
    )
    p.add_argument("--skip-bad", action="store_true", help="import the good lines of a bad file")
    p.add_argument("--json", action="store_true", help="print JSON instead of text")
    p.set_defaults(func=run)


def _read(name: str, fmt: str | None) -> tuple[str, list[Any], list[tuple[int, str]]]:
    from ..core import formats

    try:
        if name == "-":
            text = sys.stdin.read()
        else:
            with open(name, encoding="utf-8-sig", newline="") as fh:
                text = fh.read()
    except UnicodeDecodeError:
        raise ImportFileError(f"{name}: not UTF-8 text; export it again as UTF-8") from None
    except OSError as exc:
        raise ImportFileError(f"{name}: cannot read the file ({exc.strerror})") from None
    import io

    first = text.split("\n", 1)[0]
    fmt = fmt or formats.guess_format(name, first)
    attempts, errors = formats.read_any(io.StringIO(text, newline=""), fmt)
    return fmt, attempts, errors


def run(args: argparse.Namespace) -> int:
    from ..core.store import Store
    from ..paths import db_path

    fmt, attempts, errors = _read(args.file, args.format)
    where = "standard input" if args.file == "-" else args.file
    if not args.json:
        for _, msg in errors:
            print(f"{where}: {msg}", file=sys.stderr)
    if errors and not args.skip_bad:
        if args.json:
            print(json.dumps({"added": 0, "duplicates": 0, "bad": [list(e) for e in errors]}))
        n = len(errors)
        raise ImportFileError(
            f"{where}: {n} bad line{'s' if n != 1 else ''}, nothing imported; fix "
            f"{'them' if n != 1 else 'it'} or use --skip-bad to import the good lines"
        )
    with Store.open(db_path()) as s:
        added, dups = s.import_attempts(attempts)
    if args.json:
        print(
            json.dumps(
                {
                    "added": added,
                    "duplicates": dups,
                    "bad": [list(e) for e in errors],
                    "format": fmt,
                }
            )
        )
        return 0
    text = f"added {added} attempt{'s' if added != 1 else ''}, {dups} already there (skipped)"
    if errors:
        text += f", {len(errors)} bad line{'s' if len(errors) != 1 else ''} skipped"
    print(text)
    return 0
