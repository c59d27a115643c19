"""`tablecoach import FILE`: check every line of a JSONL or CSV file, then add its attempts."""

from __future__ import annotations

import argparse
import io
import itertools
import json
import shutil
import sys
import tempfile
from collections.abc import Iterator
from typing import IO, Any

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


BATCH = 20_000
"""Attempts checked against the store and added per call (each a few short transactions)."""


def _open(name: str, spool: Any) -> IO[str]:
    """The file (or standard input, spooled to ``spool`` so it can be read twice) as text."""
    if name != "-":
        return open(name, encoding="utf-8-sig", newline="")
    raw = getattr(sys.stdin, "buffer", None)
    if raw is not None:
        shutil.copyfileobj(raw, spool)
    else:  # a text stream without bytes underneath (tests hand one in)
        for chunk in iter(lambda: sys.stdin.read(1 << 16), ""):
            spool.write(chunk.encode("utf-8"))
    spool.seek(0)
    return io.TextIOWrapper(spool, encoding="utf-8-sig", newline="")


def _check(fh: IO[str], name: str, fmt: str | None) -> tuple[str, int, list[tuple[int, str]]]:
    """First pass: the format, how many good records and every bad line (no attempt kept)."""
    from ..core import formats
    from ..core.records import Attempt

    try:
        first = fh.readline()
        fh.seek(0)
        fmt = fmt or formats.guess_format(name, first.split("\n", 1)[0])
        good = 0
        errors: list[tuple[int, str]] = []
        for item in formats.iter_any(fh, fmt):
            if isinstance(item, Attempt):
                good += 1
            else:
                errors.append(item)
    except UnicodeDecodeError:
        raise ImportFileError(f"{name}: not UTF-8 text; export it again as UTF-8") from None
    except OSError as exc:
        raise ImportFileError(f"{name}: cannot read the file ({exc.strerror})") from None
    return fmt, good, errors


def _good(fh: IO[str], fmt: str) -> Iterator[Any]:
    """Second pass: only the good records, as they are read."""
    from ..core import formats
    from ..core.records import Attempt

    fh.seek(0)
    for item in formats.iter_any(fh, fmt):
        if isinstance(item, Attempt):
            yield item


def run(args: argparse.Namespace) -> int:
    from ..core.store import Store
    from ..paths import db_path
    from .progress import tracked

    where = "standard input" if args.file == "-" else args.file
    with tempfile.TemporaryFile("w+b") as spool:
        try:
            fh = _open(args.file, spool)
        except OSError as exc:
            raise ImportFileError(f"{args.file}: cannot read the file ({exc.strerror})") from None
        with fh:
            fmt, good, errors = _check(fh, args.file, args.format)
            if not args.json:
                for _, msg in errors:
                    print(f"{where}: {msg}", file=sys.stderr)
            if errors and not args.skip_bad:
                if args.json:
                    print(
                        json.dumps({"added": 0, "duplicates": 0, "bad": [list(e) for e in errors]})
                    )
                n = len(errors)
                raise ImportFileError(
                    f"{where}: {n} bad line{'s' if n != 1 else ''}, nothing imported; fix "
                    f"{'them' if n != 1 else 'it'} or use --skip-bad to import the good lines"
                )
            added = dups = 0
            with Store.open(db_path()) as s:
                # a batch at a time: earlier batches are committed, so a repeat of one of their
                # attempts later in the file is found in the store and skipped as before
                items = tracked(_good(fh, fmt), good, "importing")
                for batch in iter(lambda: list(itertools.islice(items, BATCH)), []):
                    a, d = s.import_attempts(batch)
                    added += a
                    dups += d
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
