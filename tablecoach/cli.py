"""The command line: argparse, one module a subcommand in tablecoach/commands/.

``tablecoach`` with no subcommand opens the practice app. Each subcommand module exposes
``register(subparsers) -> None`` (adds its parser, sets ``func``) and keeps heavy imports inside
its run function, so that a plain command starts fast. Domain errors (ValueError subclasses)
become one line on stderr and exit code 2, never a traceback.
"""

from __future__ import annotations

import argparse
import importlib
import os
import sys
from collections.abc import Sequence

from . import __version__

# Subcommand modules in help order; a module that is not there yet is skipped.
COMMANDS = (
    "aim",
    "predict",
    "speeds",
    "tables",
    "drills",
    "importer",
    "exporter",
    "calibrate",
    "history",
    "report",
    "demo",
)


def add_common(p: argparse.ArgumentParser, top: bool = False) -> None:
    """Options every subcommand takes.

    On a subcommand the default is SUPPRESS, so a --data-dir given before the command name is
    not overwritten by the subparser's own default.
    """
    p.add_argument(
        "--data-dir",
        default=None if top else argparse.SUPPRESS,
        help="where the practice database lives (default: your user data folder; "
        "also the TABLECOACH_DATA_DIR environment variable)",
    )


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
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
        try:
            mod = importlib.import_module(f"tablecoach.commands.{name}")
        except ModuleNotFoundError as exc:
            if exc.name == f"tablecoach.commands.{name}":
                continue
            raise
        mod.register(sub)
    return parser


def fail(message: str) -> int:
    """Print one clear line on stderr and return the usage-error exit code."""
    print(f"tablecoach: {message}", file=sys.stderr)
    return 2


def main(argv: Sequence[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    if args.data_dir:
        os.environ["TABLECOACH_DATA_DIR"] = args.data_dir
    try:
        if args.command is None:
            from .ui.app import run_app  # lazy: only the practice screen needs textual

            return run_app(args)
        return int(args.func(args) or 0)
    except KeyboardInterrupt:
        return 130
    except BrokenPipeError:
        return 0
    except ValueError as exc:  # domain errors all subclass ValueError
        return fail(str(exc))
    except OSError as exc:
        name = getattr(exc, "filename", None)
        where = f" ({name})" if name else ""
        return fail(f"{exc.strerror or exc}{where}")
