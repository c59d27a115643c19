"""The options subcommands share: the data folder, numbers, a shot, and the history filters."""

from __future__ import annotations

import argparse
import math
from collections.abc import Callable
from datetime import date, tzinfo
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    from ..core.shots import Family, Setup, Stroke
    from ..core.store import Store
    from ..core.store.query import AttemptQuery
    from ..core.table import TableSpec

DEFAULT_MODEL = "physical"
"""The aim model `aim` and `predict` use unless --model says otherwise."""


class FilterError(ValueError):
    """A history filter is not valid; the message says what to type instead."""


# ----- every subcommand ------------------------------------------------------------------------


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


def number(lo: float = -math.inf, hi: float = math.inf, unit: str = "") -> Callable[[str], float]:
    """An argparse type: a finite number within ``lo`` to ``hi`` (NaN, infinities, numbers
    too long to be one and out-of-range values refused with the range)."""
    from ..core import validate

    def parse(text: str) -> float:
        try:
            return validate.number_text(text, "value", lo, hi, unit)
        except validate.InputError as exc:
            raise argparse.ArgumentTypeError(str(exc).removeprefix("field 'value' ")) from None

    parse.__name__ = "number"
    return parse


def whole(lo: int, hi: int) -> Callable[[str], int]:
    """An argparse type: a whole number from ``lo`` to ``hi``."""

    def parse(text: str) -> int:
        t = text.strip()
        try:
            if len(t) > 20:
                raise ValueError
            v = int(t)
        except ValueError:
            raise argparse.ArgumentTypeError(
                f"{text[:24]!r} is not a whole number from {lo} to {hi}"
            ) from None
        if not (lo <= v <= hi):
            raise argparse.ArgumentTypeError(f"{v} is outside {lo} to {hi}")
        return v

    parse.__name__ = "whole number"
    return parse


def open_store(create: bool = False) -> Store | None:
    """The practice database, or None when there is none yet (and ``create`` is False)."""
    from ..core.store import Store
    from ..paths import db_path

    path = db_path()
    if not path.exists() and not create:
        return None
    return Store.open(path)


# ----- a shot (aim, predict) ---------------------------------------------------------------------


def add_shot_options(p: argparse.ArgumentParser) -> None:
    """The shot options shared by `aim` and `predict`."""
    p.add_argument("--table", default=None, help="table name (default 9ft)")
    p.add_argument("--player", default=None, help="whose calibration to use")
    g = p.add_argument_group("shot")
    g.add_argument("--family", default=None, help="a named family, e.g. cross-corner-bank")
    g.add_argument("--travel", choices=("cue", "object"), default=None, help="which ball travels")
    g.add_argument("--rails", default=None, help="rails in order, e.g. right,foot,left")
    g.add_argument("--pocket", default=None, help="target pocket, e.g. foot-left")
    g.add_argument("--target-ball", default=None, metavar="X,Y", help="ball a kick must contact")
    g.add_argument("--cue", default=None, metavar="X,Y", help="cue ball in diamonds")
    g.add_argument("--object", default=None, metavar="X,Y", help="object ball in diamonds")
    s = p.add_argument_group("stroke")
    s.add_argument(
        "--speed",
        default="medium",
        help="a stroke (slow, lag, medium, fast, power: see `tablecoach speeds`), lengths of "
        "travel such as 3L, or m/s",
    )
    s.add_argument("--english", type=number(), default=0.0, help="side spin in tips (+ right)")
    s.add_argument("--follow", type=number(), default=0.0, help="tips above centre (- for draw)")
    p.add_argument(
        "--model", choices=("ideal", "physical"), default=DEFAULT_MODEL, help="aim model"
    )
    p.add_argument("--json", action="store_true", help="print JSON instead of text")


def parse_point(text: str | None, what: str) -> tuple[float, float] | None:
    """'X,Y' in diamonds to a pair of floats, or a one-line ValueError."""
    if text is None:
        return None
    from ..core import validate

    parts = text.replace(" ", "").split(",")
    try:
        if len(parts) != 2:
            raise ValueError
        x = validate.number_text(parts[0], what, -100.0, 100.0)  # make_setup: on the table
        y = validate.number_text(parts[1], what, -100.0, 100.0)
    except ValueError:
        raise ValueError(
            f"{what} {validate.show(text)} must be X,Y in finite diamonds, e.g. 2,1.5"
        ) from None
    return (x, y)


def resolve_table(name: str | None, player: str | None = None) -> tuple[TableSpec, Any, str]:
    """(table spec, calibration or None, status line) for a table name and player.

    A stored custom table or a calibration needs the practice database; with none yet, the
    built-in table, uncalibrated. With one player in the store, that player is the default.
    """
    from ..core.table import DEFAULT_TABLE, builtin_table
    from ..paths import db_path

    name = name or DEFAULT_TABLE
    path = db_path()
    if not path.exists():  # no practice yet: skip loading the store and calibration code
        return builtin_table(name), None, "not calibrated yet"
    from ..core.calibration.use import resolve
    from ..core.store import Store

    with Store.open(path) as store:
        r = resolve(store, name, player)
    return r.table, r.calibration, r.status


def family_from_args(args: argparse.Namespace) -> Family:
    """The shot family from --family, or --travel with --rails (either may refine a preset)."""
    from ..core import shots

    if args.family:
        fam = shots.preset(args.family)
        if args.travel or args.rails:
            fam = shots.make_family(
                args.travel or fam.travel,
                (args.rails or ",".join(fam.rails)).split(","),
                fam.pocket,
                name="custom",
            )
        return fam
    if args.travel and args.rails:
        return shots.make_family(args.travel, [r.strip() for r in args.rails.split(",")])
    raise shots.ShotError("name a shot: --family NAME, or --travel cue|object with --rails")


def setup_from_args(args: argparse.Namespace) -> tuple[TableSpec, Setup, Stroke, str]:
    """(table, setup, stroke, status) from the shared shot options."""
    from ..core import shots
    from ..core.shots import ShotError

    table, calibration, status = resolve_table(args.table, getattr(args, "player", None))
    fam = family_from_args(args)
    cue = parse_point(args.cue, "--cue")
    if cue is None:
        raise ShotError("the cue ball's position is needed: --cue X,Y (diamonds)")
    obj = parse_point(args.object, "--object")
    tb = parse_point(args.target_ball, "--target-ball")

    def met(p: tuple[float, float] | None) -> tuple[float, float] | None:
        return None if p is None else table.to_metres(*p)

    setup = shots.make_setup(table, fam, met(cue), met(obj), args.pocket, met(tb))  # type: ignore[arg-type]
    for name in ("english", "follow"):
        v = getattr(args, name)
        if abs(v) > 1.0:
            raise ShotError(f"--{name} {v:g} tips is more than a tip: it would miscue")
    # a preset name means this player's own "medium" etc. once the table is calibrated
    if calibration is None:
        from ..core import strokes  # the physics: loaded by the commands that take a shot

        speed = strokes.parse_speed(args.speed, table)
    else:
        from ..core.calibration.use import speed_for

        speed = speed_for(calibration, args.speed)
    stroke = shots.Stroke(speed, args.english, args.follow)
    return table, setup, stroke, status


# ----- the history filters (history, report) -----------------------------------------------------


def add_filter_options(p: argparse.ArgumentParser) -> None:
    """Filters shared by `history` and `report`."""
    p.add_argument("--player", default=None, help="only this player")
    p.add_argument("--table", default=None, help="only this table")
    p.add_argument("--family", default=None, help="only this shot family")
    p.add_argument("--since", default=None, metavar="YYYY-MM-DD", help="from this local day")
    p.add_argument("--until", default=None, metavar="YYYY-MM-DD", help="to this local day")
    p.add_argument("--session", type=whole(1, 2**62), default=None, help="only this session number")
    p.add_argument(
        "--tz",
        default=None,
        help="time zone for days and weeks, e.g. Europe/Lisbon (default: this machine's)",
    )


def parse_tz(name: str | None) -> tzinfo | None:
    """A time zone by IANA name (e.g. Europe/Lisbon); None or '' for the machine's own zone."""
    if not name:
        return None
    from zoneinfo import ZoneInfo, ZoneInfoNotFoundError

    try:
        return ZoneInfo(name)
    except (ZoneInfoNotFoundError, ValueError):
        raise FilterError(
            f"unknown time zone {name!r}: use an IANA name such as Europe/Lisbon or UTC"
        ) from None


def parse_day(text: str | None, what: str) -> date | None:
    """YYYY-MM-DD to a date, or a one-line FilterError."""
    if not text:
        return None
    from ..core import validate

    try:
        return validate.day(date.fromisoformat(text.strip()), what)
    except validate.InputError as exc:
        raise FilterError(f"{exc}; give a date like 2026-11-30") from None
    except ValueError:
        raise FilterError(f"{what} {validate.show(text)} must be a date like 2026-11-30") from None


def query_from(args: argparse.Namespace) -> tuple[AttemptQuery, date | None, date | None]:
    """The store query of the filter options (dates as whole local days in --tz, --until
    included), with the first and last day as given."""
    from ..core.store.query import AttemptQuery

    first = parse_day(args.since, "--since")
    last = parse_day(args.until, "--until")
    if first and last and last < first:
        raise FilterError(f"--until {last} is before --since {first}")
    query = AttemptQuery(
        player=args.player, table=args.table, family=args.family, session=args.session
    )
    return query.days(first, last, parse_tz(args.tz)), first, last


def describe(query: AttemptQuery, first: date | None, last: date | None) -> str:
    """The filters in words, e.g. 'player Ann, family cross-corner-bank, from 2026-11-01'."""
    parts = []
    for name in ("player", "table", "family", "session"):
        v = getattr(query, name)
        if v is not None:
            parts.append(f"{name} {v}")
    if first:
        parts.append(f"from {first.isoformat()}")
    if last:
        parts.append(f"to {last.isoformat()}")
    return ", ".join(parts) if parts else "everything"
