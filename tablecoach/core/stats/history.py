"""The whole history of a set of attempts (what the history screen and command show)."""

from __future__ import annotations

from collections.abc import Callable, Hashable, Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from datetime import date, datetime, tzinfo
from typing import Any

import numpy as np

from ..records import Attempt
from ..store.attempts import quiet_gc
from ..table import TableSpec
from .bias import LandingBias, bias_of, offsets_of
from .frame import Frame, codes, frame_of
from .rates import Rate, group_rates, wilson
from .sessions import CodedRows, SessionSummary, sessions_by_codes
from .streaks import Streak, day_streak, group_streaks, streak_of_array
from .trends import WeekRate, day_of, local_days, weeks_from_day_numbers
from .zones import zone_codes_of, zone_key


@dataclass(frozen=True, slots=True)
class History:
    """Everything the history view and ``tablecoach history`` show for a set of attempts."""

    rate: Rate
    streak: Streak
    days: Streak
    families: Mapping[str, Rate]
    family_streaks: Mapping[str, Streak]
    zones: Mapping[Any, Rate]
    zone_streaks: Mapping[Any, Streak]
    session_streaks: Mapping[Any, Streak]
    weeks: tuple[WeekRate, ...]
    family_weeks: Mapping[str, tuple[WeekRate, ...]]
    sessions: tuple[SessionSummary, ...]
    bias: tuple[LandingBias, ...]
    first: datetime | None = None
    last: datetime | None = None
    players: tuple[str, ...] = field(default=())
    tables: tuple[str, ...] = field(default=())


ZoneFn = Callable[[Attempt], Hashable]


def summarize(
    attempts: Iterable[Attempt] | Frame,
    tz: tzinfo | None = None,
    today: date | None = None,
    zone_fn: ZoneFn | None = None,
    table_of: Callable[[str], TableSpec | None] | None = None,
    confidence: float = 0.95,
    with_bias: bool = True,
) -> History:
    """The whole history of a set of attempts (one player's, usually).

    ``tz`` is the player's time zone for days and ISO weeks (None: the machine's local zone);
    ``today`` the local date the current day streak is judged against (None: now in ``tz``);
    ``zone_fn`` keys each attempt to its zone (None: the coach's zones, core/coach.py);
    ``table_of`` resolves table names for the landing bias (None: built-in tables only).
    Works on the columnar frame: the same numbers as the one-concept functions of the other
    stats modules (the tests hold them to each other), fast enough for a hundred thousand
    attempts. For a whole store, ``coded.summarize_store`` reads the same History without
    building any Attempt.
    """
    with quiet_gc():
        cols = attempts if isinstance(attempts, Frame) else frame_of(attempts)
        return _summarize(cols, tz, today, zone_fn, table_of, confidence, with_bias)


def _summarize(
    cols: Frame,
    tz: tzinfo | None,
    today: date | None,
    zone_fn: ZoneFn | None,
    table_of: Callable[[str], TableSpec | None] | None,
    confidence: float,
    with_bias: bool,
) -> History:
    """The body of ``summarize`` (which runs it with the garbage collector paused)."""
    if zone_fn is not None:
        zcode, zkeys = codes([zone_fn(a) for a in cols.attempts])
    else:
        zcode, zkeys = zone_codes_of(cols)
    bias = tuple(bias_of(cols, offsets_of(cols, table_of))) if with_bias else ()
    return history_of_codes(cols, cols.ts, zcode, zkeys, bias, tz, today, confidence)


def history_of_codes(
    cols: CodedRows,
    ts: np.ndarray,
    zcode: np.ndarray,
    zkeys: Sequence[Any],
    bias: tuple[LandingBias, ...],
    tz: tzinfo | None,
    today: date | None,
    confidence: float,
) -> History:
    """The History of coded rows in time order (``ts``: each one's UTC time in seconds), their
    zone codes (indexing ``zkeys``) and landing bias: what every reader of attempts ends in."""
    hit = cols.hit
    n = len(hit)
    if today is None:
        today = datetime.now(tz).date() if tz is not None else datetime.now().astimezone().date()
    days = local_days(ts, tz)
    uniq_days = sorted({day_of(d) for d in np.unique(days)})
    nf, ns = len(cols.families), len(cols.sessions)
    fam_rates = group_rates(cols.family, hit, nf, confidence)
    fam_cur, fam_best = group_streaks(cols.family, hit, nf)
    ses_rates = group_rates(cols.session, hit, ns, confidence)
    ses_cur, ses_best = group_streaks(cols.session, hit, ns)
    family_weeks = {}
    for g, f in enumerate(cols.families):
        sel = cols.family == g
        family_weeks[f] = tuple(weeks_from_day_numbers(days[sel], hit[sel], confidence))
    nz = len(zkeys)
    zr = group_rates(zcode, hit, nz, confidence)
    zc, zb = group_streaks(zcode, hit, nz)
    ses_streaks = [Streak(int(c), int(b)) for c, b in zip(ses_cur, ses_best, strict=True)]
    return History(
        rate=wilson(int(hit.sum()), n, confidence),
        streak=streak_of_array(hit),
        days=day_streak(uniq_days, today),
        families={f: fam_rates[g] for g, f in enumerate(cols.families)},
        family_streaks={
            f: Streak(int(fam_cur[g]), int(fam_best[g])) for g, f in enumerate(cols.families)
        },
        zones={z: zr[i] for i, z in enumerate(zkeys)},
        zone_streaks={z: Streak(int(zc[i]), int(zb[i])) for i, z in enumerate(zkeys)},
        session_streaks={s: ses_streaks[g] for g, s in enumerate(cols.sessions)},
        weeks=tuple(weeks_from_day_numbers(days, hit, confidence)),
        family_weeks=family_weeks,
        sessions=tuple(sessions_by_codes(cols, ses_rates, ses_streaks)),
        bias=bias,
        first=cols.when(0) if n else None,
        last=cols.when(n - 1) if n else None,
        players=tuple(sorted(set(cols.players))),
        tables=tuple(sorted(set(cols.tables))),
    )


def rate_dict(r: Rate) -> dict[str, Any]:
    return {
        "attempts": r.attempts,
        "hits": r.hits,
        "rate": r.rate,
        "low": r.low,
        "high": r.high,
        "confidence": r.confidence,
    }


def streak_dict(s: Streak) -> dict[str, int]:
    return {"current": s.current, "best": s.best}


def history_dict(h: History) -> dict[str, Any]:
    """The history as plain JSON-ready data (the ``tablecoach history --json`` contract)."""
    fams = {}
    for f, r in sorted(h.families.items()):
        fams[f] = {
            **rate_dict(r),
            "streaks": streak_dict(h.family_streaks.get(f, Streak())),
            "weeks": [
                {"week": w.label, "monday": w.monday.isoformat(), **rate_dict(w.rate)}
                for w in h.family_weeks.get(f, ())
            ],
        }
    return {
        **rate_dict(h.rate),
        "streaks": {**streak_dict(h.streak), "days": streak_dict(h.days)},
        "first": h.first.isoformat() if h.first else None,
        "last": h.last.isoformat() if h.last else None,
        "players": list(h.players),
        "tables": list(h.tables),
        "families": fams,
        "zones": {
            zone_key(z): {**rate_dict(r), "streaks": streak_dict(h.zone_streaks[z])}
            for z, r in h.zones.items()
        },
        "weeks": [
            {"week": w.label, "monday": w.monday.isoformat(), **rate_dict(w.rate)} for w in h.weeks
        ],
        "sessions": [
            {
                "session": s.session,
                "player": s.player,
                "table": s.table,
                "start": s.start.isoformat(),
                "end": s.end.isoformat(),
                "families": list(s.families),
                "streaks": streak_dict(s.streak),
                **rate_dict(s.rate),
            }
            for s in h.sessions
        ],
        "landing_bias": [
            {
                "family": b.family,
                "speed": b.speed,
                "attempts": b.attempts,
                "mean": b.mean,
                "median": b.median,
                "stderr": b.stderr,
                "long": b.long,
                "short": b.short,
            }
            for b in h.bias
        ],
    }
