"""The command line: the parser and ``main``; one module a subcommand beside this one.

``tablecoach`` with no subcommand opens the practice app. Each subcommand module exposes
``register(subparsers) -> None`` (adds its parser, sets ``func``) and keeps heavy imports inside
its run function, so that a plain command starts fast; the options several share are in
``options``. Domain errors (ValueError subclasses) become one line on stderr and exit code 2,
never a traceback.
"""

from __future__ import annotations

import argparse
import errno
import importlib
import os
import sys
from collections.abc import Sequence
from typing import Any

from .. import __version__
from .options import add_common

COMMANDS = (
    "aim",
    "predict",
    "speeds",
    "refs",
    "tables",
    "drills",
    "importer",
    "exporter",
    "calibrate",
    "history",
    "report",
    "demo",
    "backup",
)
"""The subcommand modules (tablecoach/cli/NAME.py), in help order."""


class Parser(argparse.ArgumentParser):
    """argparse with a usage error on one line (which command, what is wrong, where to look),
    like every other refusal; exit code 2 as argparse's own."""

    def error(self, message: str) -> Any:  # argparse's signature says NoReturn
        first = message.splitlines()[0] if message else "bad arguments"
        if len(first) > 300:  # a huge value quoted back would bury the point
            first = first[:297] + "..."
        self.exit(2, f"{self.prog}: {first} (see '{self.prog} --help')\n")


def build_parser() -> argparse.ArgumentParser:
    parser = Parser(
        prog="tablecoach",
        description="A practice coach for bank and kick shots. With no command, opens the "
        "practice screen.",
    )
    parser.add_argument("--version", action="version", version=f"tablecoach {__version__}")
    add_common(parser, top=True)
    parser.add_argument("--table", default=None, help="table to practise on (practice screen)")
    parser.add_argument("--drill", default=None, help="drill pack to practise (practice screen)")
    parser.add_argument("--player", default=None, help="player name (practice screen)")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    for name in COMMANDS:
        importlib.import_module(f"tablecoach.cli.{name}").register(sub)
    return parser


def fail(message: str) -> int:
    """Print one clear line on stderr and return the usage-error exit code."""
    line = " ".join(message.split())  # a value with a line break in it still gives one line
    if len(line) > 600:
        line = line[:597] + "..."
    print(f"tablecoach: {line}", file=sys.stderr)
    return 2


def main(argv: Sequence[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    if args.data_dir:
        os.environ["TABLECOACH_DATA_DIR"] = args.data_dir
    try:
        if args.command is None:
            from ..ui.app import run_app  # lazy: only the practice screen needs textual

            return run_app(args)
        return int(args.func(args) or 0)
    except KeyboardInterrupt:
        return 130
    except BrokenPipeError:
        return 0
    except ValueError as exc:  # domain errors all subclass ValueError
        return fail(str(exc))
    except OSError as exc:
        return fail(os_error_line(exc))
    except RecursionError:
        return fail("the input is nested too deeply to read; check the file or arguments")
    except Exception as exc:  # a bug: still one line, the traceback only when asked for
        if os.environ.get("TABLECOACH_DEBUG"):
            raise
        print(
            f"tablecoach: internal error ({type(exc).__name__}: {str(exc)[:200]}); run again "
            "with TABLECOACH_DEBUG=1 to see where, and please report it",
            file=sys.stderr,
        )
        return 1


def os_error_line(exc: OSError) -> str:
    """An operating-system error as one line naming the cause and what to do."""
    name = getattr(exc, "filename", None)
    where = f" ({name})" if name else ""
    if exc.errno in (errno.ENOSPC, errno.EDQUOT):
        return f"the disk is full{where}: nothing was written; free some space and try again"
    if exc.errno in (errno.EACCES, errno.EPERM, errno.EROFS):
        return (
            f"permission denied{where}: check the file's and folder's permissions, or pick "
            "another place (--data-dir, --output)"
        )
    return f"{exc.strerror or exc}{where}"
