"""Practice sessions summed up: when, who, which table, the rate, the streak, the families."""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from datetime import datetime
from typing import Any, Protocol

import numpy as np

from ..records import Attempt
from .frame import Frame
from .rates import Rate, rate_of
from .streaks import Streak, streak


@dataclass(frozen=True, slots=True)
class SessionSummary:
    """One practice session as the history shows it."""

    session: int | None
    player: str
    table: str
    start: datetime
    end: datetime
    rate: Rate
    streak: Streak
    families: tuple[str, ...]


def session_list(attempts: Sequence[Attempt], confidence: float = 0.95) -> list[SessionSummary]:
    """Sessions (by the store's session key) in order of their first attempt.

    Attempts without a session are grouped by player and table as one unsaved session.
    """
    groups: dict[Any, list[Attempt]] = {}
    for a in attempts:
        key = a.session if a.session is not None else ("unsaved", a.player, a.table)
        groups.setdefault(key, []).append(a)
    out = []
    for items in groups.values():
        first = items[0]
        fams = tuple(dict.fromkeys(a.shot.family for a in items))
        out.append(
            SessionSummary(
                first.session,
                first.player,
                first.table,
                items[0].when,
                items[-1].when,
                rate_of(items, confidence),
                streak(a.result == "hit" for a in items),
                fams,
            )
        )
    out.sort(key=lambda s: s.start)
    return out


def sessions_of(
    cols: Frame, rates: Sequence[Rate], streaks: Sequence[Streak]
) -> list[SessionSummary]:
    """``session_list`` over a frame, given each session code's rate and streak."""
    return sessions_by_codes(cols, rates, streaks)


def sessions_by_codes(
    cols: CodedRows, rates: Sequence[Rate], streaks: Sequence[Streak]
) -> list[SessionSummary]:
    """``session_list`` over coded rows in time order (a Frame is one), given each session
    code's rate and streak."""
    if not len(cols.session):
        return []
    nf = len(cols.families)
    order = np.argsort(cols.session, kind="stable")
    sc = cols.session[order]
    firsts = order[np.flatnonzero(np.r_[True, sc[1:] != sc[:-1]])]
    lasts = order[np.flatnonzero(np.r_[sc[1:] != sc[:-1], True])]
    pair = cols.session * max(nf, 1) + cols.family
    _, first_of_pair = np.unique(pair, return_index=True)
    fams_of: dict[int, list[str]] = {}
    for i in np.sort(first_of_pair).tolist():
        fams_of.setdefault(int(cols.session[i]), []).append(cols.families[int(cols.family[i])])
    out = []
    for i0, i1 in zip(firsts.tolist(), lasts.tolist(), strict=True):
        g = int(cols.session[i0])
        key = cols.sessions[g]
        out.append(
            SessionSummary(
                None if isinstance(key, tuple) else key,
                cols.players[int(cols.player[i0])],
                cols.tables[int(cols.table[i0])],
                cols.when(i0),
                cols.when(i1),
                rates[g],
                streaks[g],
                tuple(fams_of[g]),
            )
        )
    out.sort(key=lambda s: s.start)
    return out


class CodedRows(Protocol):
    """Attempts as integer codes in time order, each code array indexing the names beside it
    (stats.frame.Frame is one; so is stats.coded's read of the store)."""

    @property
    def hit(self) -> np.ndarray: ...
    @property
    def family(self) -> np.ndarray: ...
    @property
    def families(self) -> tuple[str, ...]: ...
    @property
    def session(self) -> np.ndarray: ...
    @property
    def sessions(self) -> tuple[Any, ...]: ...
    @property
    def player(self) -> np.ndarray: ...
    @property
    def players(self) -> tuple[str, ...]: ...
    @property
    def table(self) -> np.ndarray: ...
    @property
    def tables(self) -> tuple[str, ...]: ...
    def when(self, i: int) -> datetime: ...
