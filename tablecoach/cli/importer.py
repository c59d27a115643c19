"""`tablecoach import FILE`: read a JSONL or CSV file once, checking every line and keeping the
good attempts aside; then add the new ones to the store in one transaction
(core/store/importing.py)."""

from __future__ import annotations

import argparse
import io
import json
import os
import shutil
import sys
import tempfile
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


BATCH = 10_000
"""Attempts checked and kept in the import's scratch database per write."""

SHOW_BYTES = 2_000_000
"""Files at least this long (about 5,000 attempts) get a progress bar at a terminal."""


class _Counted(io.RawIOBase):
    """A binary file that counts the bytes read from it (for the progress bar)."""

    def __init__(self, raw: IO[bytes]) -> None:
        self.raw = raw
        self.done = 0

    def readable(self) -> bool:
        return True

    def readinto(self, b: Any) -> int:
        data = self.raw.read(len(b))
        n = len(data)
        b[:n] = data
        self.done += n
        return n


def _open(name: str, spool: IO[bytes]) -> tuple[IO[bytes], int | None]:
    """The file (or standard input, spooled to ``spool``) as bytes, and its size if known."""
    if name != "-":
        fh = open(name, "rb")  # noqa: SIM115 (closed by the caller)
        return fh, os.fstat(fh.fileno()).st_size
    raw = getattr(sys.stdin, "buffer", None)
    if raw is not None:
        shutil.copyfileobj(raw, spool)
    else:  # a text stream without bytes underneath (tests hand one in)
        for chunk in iter(lambda: sys.stdin.read(1 << 16), ""):
            spool.write(chunk.encode("utf-8"))
    spool.seek(0)
    return spool, None


def _read(name: str, raw: IO[bytes], fmt: str | None) -> tuple[str, _Counted, IO[str]]:
    """The format (given, or guessed from the name and first line) and the text to parse."""
    try:
        first = raw.readline().decode("utf-8-sig").split("\n", 1)[0]
        raw.seek(0)
    except UnicodeDecodeError:
        raise ImportFileError(f"{name}: not UTF-8 text; export it again as UTF-8") from None
    except OSError as exc:
        raise ImportFileError(f"{name}: cannot read the file ({exc.strerror})") from None
    from ..core import formats

    counted = _Counted(raw)
    text = io.TextIOWrapper(io.BufferedReader(counted), encoding="utf-8-sig", newline="")
    return fmt or formats.guess_format(name, first), counted, text


def run(args: argparse.Namespace) -> int:
    from ..core import formats
    from ..core.store import Store
    from ..core.store.importing import Staging
    from ..paths import db_path
    from .progress import tracked, working

    where = "standard input" if args.file == "-" else args.file
    errors: list[formats.BadLine] = []
    with tempfile.TemporaryFile("w+b") as spool, Staging() as staged:
        try:
            raw, size = _open(args.file, spool)
        except OSError as exc:
            raise ImportFileError(f"{args.file}: cannot read the file ({exc.strerror})") from None
        with raw:
            fmt, counted, lines = _read(args.file, raw, args.format)
            # one pass: each good record is checked and kept aside, each bad line noted
            items = tracked(
                formats.iter_rows(lines, fmt), size, "importing",
                done=lambda: counted.done, show_from=SHOW_BYTES,
            )  # fmt: skip
            batch: list[tuple[Any, ...]] = []
            try:
                for item in items:
                    if type(item) is formats.BadLine:
                        errors.append(item)
                    else:
                        batch.append(item)
                        if len(batch) >= BATCH:
                            staged.add_checked(batch)
                            batch = []
                staged.add_checked(batch)
            except UnicodeDecodeError:
                raise ImportFileError(
                    f"{args.file}: not UTF-8 text; export it again as UTF-8"
                ) from None
            except OSError as exc:
                raise ImportFileError(
                    f"{args.file}: cannot read the file ({exc.strerror})"
                ) from None
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
        # the whole file is known: the new attempts go in at once (all or none)
        big = size is None or size >= SHOW_BYTES
        with Store.open(db_path()) as s, working("adding the attempts to the store", big):
            added, dups = staged.move_into(s)
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
