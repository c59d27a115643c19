"""Demo data: an invented club, its two tables and a few weeks of practice, from a seeded rng.

Everything here is made up for the demo (players, tables, habits, progress); none of it is
measured. ``make_club`` is pure (numpy Generator in, attempts out); ``write_club`` puts a club
into an empty store and refuses a store that already holds attempts.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from datetime import UTC, datetime, time, timedelta, tzinfo
from typing import TYPE_CHECKING

import numpy as np

from . import shots
from .aim import ideal
from .coach import zone_of
from .records import Attempt, validate_attempt
from .stats.frame import RAIL_NAMES
from .stats.tracer import ideal_landings
from .table import BUILTIN_TABLES, Cloth, Cushion, TableSpec

if TYPE_CHECKING:
    from .store import Store


class DemoError(ValueError):
    """The demo cannot be written where asked; the message says where it can."""


# ----- the invented club ----------------------------------------------------------------------

CLUB_NAME = "Harbour Lane Cue Club"

CLUB_TABLES: tuple[TableSpec, ...] = (
    replace(
        BUILTIN_TABLES["9ft"],
        name="harbour-9",
        description="Harbour Lane's match table: 9-ft, new cloth, lively cushions (invented)",
        cloth=Cloth(mu_slide=0.2, mu_roll=0.006, spin_decel=10.0),
        cushion=Cushion(restitution=0.99, friction=0.14),
    ),
    replace(
        BUILTIN_TABLES["7ft"],
        name="harbour-bar",
        description="Harbour Lane's bar-room 7-footer: worn cloth, dead cushions (invented)",
        cloth=Cloth(mu_slide=0.22, mu_roll=0.013, spin_decel=11.0),
        cushion=Cushion(restitution=0.90, friction=0.16),
    ),
)
"""Invented values, placed against the defaults (table.Cloth, table.Cushion): the match table's
new cloth rolls faster than the default 0.007 and its cushions are livelier than the energetic
0.98; the bar table's worn cloth rolls slower and its cushions are deader (0.90)."""


@dataclass(frozen=True, slots=True)
class DemoPlayer:
    """An invented player's habits.

    ``skill`` is the spread of their aim error as a multiple of the shot's margin at the start
    (1.0 makes about two in three), ``floor`` where it levels out, ``learn_weeks`` how fast it
    gets there; ``days`` the weekdays (0 = Monday) they come in, ``keen`` the chance they turn
    up on one of those days; ``families`` what they practise and ``table`` where.
    """

    name: str
    skill: float
    floor: float
    learn_weeks: float
    days: tuple[int, ...]
    keen: float
    families: tuple[str, ...]
    table: str
    shots_per_session: int = 30


CLUB_PLAYERS: tuple[DemoPlayer, ...] = (
    DemoPlayer(
        "Nadia",
        2.2,
        0.9,
        2.5,
        (0, 2, 3, 4, 5, 6),
        0.85,
        ("one-rail-kick", "two-rail-kick"),
        "harbour-9",
    ),
    DemoPlayer(
        "Teodor",
        1.3,
        0.8,
        6.0,
        (1, 3, 5),
        0.9,
        ("cross-corner-bank", "cross-side-bank", "two-rail-kick"),
        "harbour-9",
    ),
    DemoPlayer(
        "Ama",
        0.9,
        0.7,
        8.0,
        (0, 4),
        0.8,
        ("three-rail-kick", "long-rail-bank"),
        "harbour-bar",
    ),
    DemoPlayer(
        "Rafael",
        1.8,
        1.1,
        4.0,
        (2, 6),
        0.6,
        ("one-rail-kick", "cross-corner-bank"),
        "harbour-bar",
        20,
    ),
)

SPEED_CHOICES: tuple[str, ...] = ("slow", "medium", "medium", "fast")
"""Speeds the club plays, drawn with these weights (medium twice as often)."""

SPEED_LANDING_DRIFT: dict[str, float] = {"slow": -0.12, "medium": 0.0, "fast": 0.18}
"""Invented: diamonds the club's balls land long (+) or short (-) of ideal reflection by speed,
so the demo's landing-bias view has something to show. Not a measured effect."""

SPEED_AIM_DRIFT: dict[str, float] = {"slow": 0.25, "medium": 0.0, "fast": -0.35}
"""Invented: each player's habitual aim error by speed, in margins, fading as they learn."""


@dataclass(frozen=True, slots=True)
class DemoSession:
    """One invented session: who, where, which drill and its attempts (no store ids yet)."""

    player: str
    table: str
    drill: str
    attempts: tuple[Attempt, ...]


@dataclass(frozen=True, slots=True)
class Club:
    """The invented club: its tables, its players and their sessions in time order."""

    name: str
    tables: tuple[TableSpec, ...]
    players: tuple[DemoPlayer, ...]
    sessions: tuple[DemoSession, ...]

    @property
    def attempt_count(self) -> int:
        return sum(len(s.attempts) for s in self.sessions)


# ----- shots ------------------------------------------------------------------------------


def _diamonds(spec: TableSpec, rail: str, along_m: float) -> float:
    return spec.along_to_diamonds(rail, along_m)  # type: ignore[arg-type]


def _one_attempt(
    rng: np.random.Generator,
    spec: TableSpec,
    family: shots.Family,
    spread: float,
    when: datetime,
    player: str,
    drill: str,
) -> Attempt | None:
    """One invented attempt, or None when the drawn position has no clean ideal path."""
    cue = (float(rng.uniform(0.4, 7.6)), float(rng.uniform(0.3, 3.7)))
    other = (float(rng.uniform(0.4, 7.6)), float(rng.uniform(0.3, 3.7)))
    try:
        setup = shots.make_setup(spec, family, spec.to_metres(*cue), spec.to_metres(*other))
        aim = ideal.solve(spec, setup)
    except ValueError:
        return None
    rail = aim.rail
    top = 8.0 if rail in ("left", "right") else 4.0
    given = _diamonds(spec, rail, aim.reading)
    if not (0.0 <= given <= top):
        return None
    speed_band = SPEED_CHOICES[int(rng.integers(0, len(SPEED_CHOICES)))]
    speed = shots.SPEED_PRESETS[speed_band]
    margin = 0.5 * (aim.margin_minus + aim.margin_plus)
    drift = SPEED_AIM_DRIFT[speed_band] * spread * margin * 0.5
    error_m = float(rng.normal(drift, spread * margin))
    used_m = aim.reading + error_m
    used = _diamonds(spec, rail, used_m)
    if not (0.0 <= used <= top):
        return None
    hit = -aim.margin_minus <= error_m <= aim.margin_plus
    start = np.array([spec.to_diamonds(*setup.start)])
    code, at, sense = ideal_landings(spec, start, family.rails, rail, np.array([used]))
    land_rail = RAIL_NAMES[int(code[0])]
    land_top = 8.0 if land_rail in ("left", "right") else 4.0
    # the club's tables do not reflect ideally: a speed-dependent drift plus scatter (invented);
    # ``sense`` is the direction of travel round the perimeter, which runs with the rail's
    # coordinate on the left and foot rails and against it on the right and head rails
    along = 1.0 if land_rail in ("left", "foot") else -1.0
    shift = SPEED_LANDING_DRIFT[speed_band] + float(rng.normal(0.0, 0.08))
    land = float(at[0]) + along * float(sense[0]) * shift
    if not (0.0 <= land <= land_top):
        return None
    rec = shots.record_of(spec, setup)
    a = Attempt(
        when=when,
        player=player,
        table=spec.name,
        shot=rec,
        speed=speed,
        english=0.0,
        follow=0.0,
        aim_rail=rail,
        aim_given=round(given, 3),
        aim_used=round(used, 3),
        result="hit" if hit else "miss",
        landing_rail=land_rail,
        landing_at=round(land, 3),
        model="ideal",
        drill=drill,
        zone=zone_of(rec, speed).label,
    )
    return validate_attempt(a)


def _spread(p: DemoPlayer, weeks_in: float) -> float:
    """Invented learning curve: the aim spread decays from ``skill`` toward ``floor``."""
    return p.floor + (p.skill - p.floor) * math.exp(-weeks_in / p.learn_weeks)


def make_club(
    rng: np.random.Generator,
    now: datetime,
    weeks: int = 5,
    tz: tzinfo | None = None,
    players: tuple[DemoPlayer, ...] = CLUB_PLAYERS,
) -> Club:
    """Invent ``weeks`` weeks of the club's practice ending at ``now`` (an aware datetime).

    Sessions start on club evenings between 18:00 and 21:00 in ``tz`` (None: the machine's
    local zone); the keenest player also came in every day of the last few, so the history
    opens on a live day streak.
    """
    if now.tzinfo is None:
        raise DemoError("the demo needs an aware 'now' (with a time zone)")
    tables = {t.name: t for t in CLUB_TABLES}
    local_now = now.astimezone(tz)
    first_day = local_now.date() - timedelta(days=7 * weeks)
    sessions: list[DemoSession] = []
    for p_index, p in enumerate(players):
        spec = tables[p.table]
        fams = [shots.preset(f) for f in p.families]
        for day_i in range(7 * weeks + 1):
            day = first_day + timedelta(days=day_i)
            recent = (local_now.date() - day).days < 5 and p_index == 0
            if not recent and (day.weekday() not in p.days or rng.random() > p.keen):
                continue
            minutes = int(rng.integers(18 * 60, 21 * 60))
            start_local = datetime.combine(day, time(minutes // 60, minutes % 60))
            start = start_local.replace(tzinfo=tz) if tz is not None else start_local.astimezone()
            start = min(start.astimezone(UTC), now - timedelta(minutes=90))
            fam = fams[int(rng.integers(0, len(fams)))]
            drill = f"club-{fam.name}"
            spread = _spread(p, day_i / 7.0)
            items: list[Attempt] = []
            when = start
            tries = 0
            while len(items) < p.shots_per_session and tries < p.shots_per_session * 20:
                tries += 1
                a = _one_attempt(rng, spec, fam, spread, when, p.name, drill)
                if a is None:
                    continue
                items.append(a)
                when = when + timedelta(seconds=float(rng.uniform(40.0, 110.0)))
            if items:
                sessions.append(DemoSession(p.name, spec.name, drill, tuple(items)))
    sessions.sort(key=lambda s: s.attempts[0].when)
    return Club(CLUB_NAME, CLUB_TABLES, players, tuple(sessions))


# ----- writing into a store -----------------------------------------------------------------


def write_club(store: Store, club: Club) -> int:
    """Save the club's tables, sessions and attempts into ``store``; returns attempts written.

    Refuses (DemoError) when the store already holds any attempt, so real practice is never
    mixed with invented data.
    """
    held = store.count_attempts()
    if held:
        raise DemoError(
            f"{store.path} already holds {held} attempts; the demo only fills an empty data "
            "folder: run it with --data-dir pointing at a new folder"
        )
    for spec in club.tables:
        store.save_table(spec)
    written = 0
    for s in club.sessions:
        sid = store.start_session(s.player, s.table, s.drill, started=s.attempts[0].when)
        # one transaction per session rather than one commit per attempt
        written += len(store.log_many([replace(a, session=sid) for a in s.attempts]))
        store.end_session(sid)
    return written


__all__ = [
    "CLUB_NAME",
    "CLUB_PLAYERS",
    "CLUB_TABLES",
    "Club",
    "DemoError",
    "DemoPlayer",
    "DemoSession",
    "make_club",
    "write_club",
]
