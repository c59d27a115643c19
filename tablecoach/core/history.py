"""Practice history: streaks, make rates with Wilson intervals, weekly trends, landing bias.

Pure functions over :class:`~tablecoach.core.records.Attempt` lists; ``summarize`` also takes
the store's columns (``Store.columns``) without building Attempts. Attempts are taken in time
order (``when``, then ``id``); days and ISO weeks are counted in the player's local time zone
(a ``tz`` argument, default the machine's local zone, daylight saving included).
"""

from __future__ import annotations

import gc
import math
import operator
from collections.abc import Callable, Hashable, Iterable, Iterator, Mapping, Sequence
from contextlib import contextmanager
from dataclasses import dataclass, field
from datetime import UTC, date, datetime, timedelta, tzinfo
from itertools import chain, repeat
from statistics import NormalDist
from typing import Any

import numpy as np

from .records import FLAT_FIELDS, Attempt
from .shots import SPEED_BANDS
from .store import AttemptColumns
from .table import BUILTIN_TABLES, TableSpec

# ----- streaks -------------------------------------------------------------------------------


@dataclass(frozen=True, slots=True)
class Streak:
    """A run count: ``current`` is the run still going at the end, ``best`` the longest run."""

    current: int = 0
    best: int = 0


def streak(hits: Iterable[bool]) -> Streak:
    """Current and best run of consecutive hits in a time-ordered sequence of results."""
    best = run = 0
    for h in hits:
        if h:
            run += 1
            if run > best:
                best = run
        else:
            run = 0
    return Streak(run, best)


def ordered(attempts: Iterable[Attempt]) -> list[Attempt]:
    """Attempts in time order (``when``, then store id; unsaved attempts keep their order)."""
    items = list(attempts)
    return sorted(items, key=lambda a: (a.when, a.id if a.id is not None else -1))


def streaks_by(
    attempts: Sequence[Attempt], key: Callable[[Attempt], Hashable]
) -> dict[Any, Streak]:
    """Hit streaks within each group of ``key`` (attempts already in time order)."""
    groups: dict[Any, list[bool]] = {}
    for a in attempts:
        groups.setdefault(key(a), []).append(a.result == "hit")
    return {k: streak(v) for k, v in groups.items()}


def local_date(when: datetime, tz: tzinfo | None = None) -> date:
    """The calendar day of an aware instant in ``tz`` (None: the machine's local zone)."""
    return when.astimezone(tz).date()


def day_streak(days: Iterable[date], today: date | None = None) -> Streak:
    """Days practised in a row.

    ``best`` is the longest run of consecutive calendar days among ``days``. ``current`` is the
    run that ends on ``today`` or on the day before (a streak is still alive until a whole day
    passes without practice); 0 if the last day practised is older. With ``today`` None the
    last day practised is taken as today.
    """
    uniq = sorted(set(days))
    if not uniq:
        return Streak(0, 0)
    best = run = 1
    for prev, cur in zip(uniq, uniq[1:], strict=False):
        run = run + 1 if (cur - prev).days == 1 else 1
        best = max(best, run)
    last = uniq[-1]
    ref = last if today is None else today
    current = run if (ref - last).days in (0, 1) else 0
    return Streak(current, best)


# ----- rates --------------------------------------------------------------------------------


@dataclass(frozen=True, slots=True)
class Rate:
    """A make rate: ``hits`` of ``attempts``, with its Wilson score interval ``low``..``high``.

    ``rate`` is None when there are no attempts (the interval is then 0..1).
    """

    hits: int
    attempts: int
    rate: float | None
    low: float
    high: float
    confidence: float = 0.95


def wilson(hits: int, n: int, confidence: float = 0.95) -> Rate:
    """The make rate with its Wilson score interval (no continuity correction).

    E. B. Wilson (1927), "Probable inference, the law of succession, and statistical
    inference", J. Amer. Statist. Assoc. 22 (158), 209-212: with p = k/n and z the normal
    quantile for the confidence level, the bounds are
    (p + z^2/2n +- z sqrt(p(1-p)/n + z^2/4n^2)) / (1 + z^2/n).
    """
    if n < 0 or hits < 0 or hits > n:
        raise ValueError(f"a rate needs 0 <= hits <= attempts, got {hits} of {n}")
    if not (0.0 < confidence < 1.0):
        raise ValueError(f"confidence {confidence:g} must lie strictly between 0 and 1")
    if n == 0:
        return Rate(0, 0, None, 0.0, 1.0, confidence)
    z = NormalDist().inv_cdf(0.5 + confidence / 2.0)
    p = hits / n
    z2 = z * z
    denom = 1.0 + z2 / n
    centre = (p + z2 / (2.0 * n)) / denom
    half = z * math.sqrt(p * (1.0 - p) / n + z2 / (4.0 * n * n)) / denom
    low = 0.0 if hits == 0 else max(0.0, centre - half)
    high = 1.0 if hits == n else min(1.0, centre + half)
    return Rate(hits, n, p, low, high, confidence)


def rate_of(attempts: Iterable[Attempt], confidence: float = 0.95) -> Rate:
    """The make rate of a set of attempts."""
    n = k = 0
    for a in attempts:
        n += 1
        k += a.result == "hit"
    return wilson(k, n, confidence)


def rates_by(
    attempts: Iterable[Attempt], key: Callable[[Attempt], Hashable], confidence: float = 0.95
) -> dict[Any, Rate]:
    """Make rates for each group of ``key``."""
    counts: dict[Any, list[int]] = {}
    for a in attempts:
        c = counts.setdefault(key(a), [0, 0])
        c[0] += a.result == "hit"
        c[1] += 1
    return {k: wilson(h, n, confidence) for k, (h, n) in counts.items()}


# ----- weekly trends ------------------------------------------------------------------------


@dataclass(frozen=True, slots=True)
class WeekRate:
    """The make rate over one ISO week (Monday to Sunday in the player's zone)."""

    year: int
    week: int
    monday: date
    rate: Rate

    @property
    def label(self) -> str:
        """ISO 8601 week label, e.g. 2026-W48."""
        return f"{self.year}-W{self.week:02d}"


def weekly_from_days(
    days: Sequence[date], hits: Sequence[bool], confidence: float = 0.95
) -> list[WeekRate]:
    """Weekly rates from each attempt's local date and result; weeks with no practice between
    the first and the last appear with no attempts, so a trend line keeps its time axis."""
    if not days:
        return []
    counts: dict[date, list[int]] = {}
    for d, h in zip(days, hits, strict=True):
        monday = d - timedelta(days=d.weekday())
        c = counts.setdefault(monday, [0, 0])
        c[0] += bool(h)
        c[1] += 1
    first, last = min(counts), max(counts)
    out: list[WeekRate] = []
    m = first
    while m <= last:
        k, n = counts.get(m, (0, 0))
        iso = m.isocalendar()
        out.append(WeekRate(iso.year, iso.week, m, wilson(k, n, confidence)))
        m += timedelta(days=7)
    return out


def weekly(
    attempts: Sequence[Attempt], tz: tzinfo | None = None, confidence: float = 0.95
) -> list[WeekRate]:
    """Make rate by ISO week (ISO 8601 week numbering) in the player's time zone."""
    return weekly_from_days(
        [local_date(a.when, tz) for a in attempts],
        [a.result == "hit" for a in attempts],
        confidence,
    )


# ----- sessions -----------------------------------------------------------------------------


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


# ----- landing bias -------------------------------------------------------------------------


def perimeter_diamonds(rail: str, at: float) -> float:
    """A rail point (diamonds along its rail) as diamonds round the table, the same walk as
    ``shots.perimeter_position``: left 0-8, foot 8-12, right 12-20 back toward the head,
    head 20-24."""
    if rail == "left":
        return at
    if rail == "foot":
        return 8.0 + at
    if rail == "right":
        return 12.0 + (8.0 - at)
    return 20.0 + (4.0 - at)


_RAIL_CODE = {"head": 0, "foot": 1, "left": 2, "right": 3}
_RAIL_NAMES = ("head", "foot", "left", "right")


def ideal_landings(
    spec: TableSpec,
    starts: np.ndarray,
    rails: Sequence[str],
    aim_rail: str,
    readings: np.ndarray,
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Where the ideal ball lands for each aim reading, all of one rail sequence, vectorised.

    ``starts`` (n, 2) and ``readings`` (n,) in diamonds. The ball leaves its start toward the
    sight point (the reading on ``aim_rail``'s line of sights, 93.7 mm behind the nose, WPA) and
    reflects ideally about walls one ball radius inside the noses; the landing is the wall
    crossing after as many walls as the family has rails, the definition of
    ``ideal.trace`` (pocket openings are treated as cushion here). Returns the landing
    rail codes (index into head, foot, left, right), the landing points in diamonds along their
    rails, and the sense of travel round the perimeter (+1 or -1) at the landing.
    """
    n = len(readings)
    L, W, r = spec.length, spec.width, spec.ball_radius
    p = np.empty((n, 2))
    p[:, 0] = starts[:, 0] * spec.diamond
    p[:, 1] = starts[:, 1] * spec.diamond_across
    sight = np.empty((n, 2))
    if aim_rail in ("left", "right"):
        sight[:, 0] = readings * spec.diamond
        sight[:, 1] = spec.sight_line(aim_rail)  # type: ignore[arg-type]
    else:
        sight[:, 0] = spec.sight_line(aim_rail)  # type: ignore[arg-type]
        sight[:, 1] = readings * spec.diamond_across
    d = sight - p
    d /= np.maximum(np.hypot(d[:, 0], d[:, 1]), 1e-12)[:, None]
    xmin, xmax, ymin, ymax = r, L - r, r, W - r
    code = np.zeros(n, dtype=np.int64)
    along = np.zeros(n)
    with np.errstate(divide="ignore", invalid="ignore"):
        for _ in range(len(rails) + 1):
            tx = np.where(
                d[:, 0] > 1e-15,
                (xmax - p[:, 0]) / d[:, 0],
                np.where(d[:, 0] < -1e-15, (xmin - p[:, 0]) / d[:, 0], np.inf),
            )
            ty = np.where(
                d[:, 1] > 1e-15,
                (ymax - p[:, 1]) / d[:, 1],
                np.where(d[:, 1] < -1e-15, (ymin - p[:, 1]) / d[:, 1], np.inf),
            )
            use_x = tx <= ty
            t = np.maximum(np.where(use_x, tx, ty), 0.0)
            p = p + t[:, None] * d
            code = np.where(use_x, np.where(d[:, 0] > 0, 1, 0), np.where(d[:, 1] > 0, 3, 2))
            along = np.where(use_x, p[:, 1], p[:, 0])
            last_d = d.copy()
            d = np.where(use_x[:, None], d * np.array([-1.0, 1.0]), d * np.array([1.0, -1.0]))
    along_d = np.where(code >= 2, along / spec.diamond, along / spec.diamond_across)
    # sense round the perimeter: left +x, foot +y, right -x, head -y (perimeter_diamonds)
    tangent = np.select(
        [code == 2, code == 1, code == 3],
        [last_d[:, 0], last_d[:, 1], -last_d[:, 0]],
        -last_d[:, 1],
    )
    sense = np.where(tangent >= 0.0, 1.0, -1.0)
    return code, along_d, sense


def _perimeter_array(code: np.ndarray, at: np.ndarray) -> np.ndarray:
    return np.select(
        [code == 2, code == 1, code == 3],
        [at, 8.0 + at, 12.0 + (8.0 - at)],
        20.0 + (4.0 - at),
    )


@dataclass(frozen=True, slots=True)
class LandingBias:
    """How far logged landings fall from the ideal landing of the aim actually used.

    ``mean`` and ``median`` in diamonds round the table, positive when the ball landed farther
    along its direction of travel than ideal reflection says ("long"), negative "short";
    ``stderr`` the standard error of the mean; ``long``/``short`` count attempts beyond a
    tenth of a diamond either way.
    """

    family: str
    speed: str
    attempts: int
    mean: float
    median: float
    stderr: float
    long: int
    short: int


# ----- the columnar engine (fast path for large histories) ----------------------------------

_EPOCH = date(1970, 1, 1)


def _codes(values: Sequence[Hashable]) -> tuple[np.ndarray, tuple[Any, ...]]:
    """Integer codes for values, in order of first appearance, and the distinct values."""
    distinct = tuple(dict.fromkeys(values))
    index = {v: i for i, v in enumerate(distinct)}
    return np.fromiter(map(index.__getitem__, values), np.int64, len(values)), distinct


@dataclass(frozen=True, slots=True)
class Columns:
    """Attempts as numpy columns, in time order (``attempts`` in that order; ``order[i]`` is
    the position of ``attempts[i]`` in the input). Integer code arrays (``family``, ``session``,
    ``shape``, ``player``, ``table``) index the tuple beside them; ``start`` is the travelling
    ball's start in diamonds (object ball for banks). Built from the store's columns
    (``columns_of``), ``attempts`` is empty and ``us`` holds each time in microseconds."""

    attempts: tuple[Attempt, ...]
    order: np.ndarray
    ts: np.ndarray
    hit: np.ndarray
    family: np.ndarray
    families: tuple[str, ...]
    session: np.ndarray
    sessions: tuple[Any, ...]
    speed: np.ndarray
    start: np.ndarray
    shape: np.ndarray
    shapes: tuple[tuple[str, tuple[str, ...], str], ...]
    aim_used: np.ndarray
    landing_rail: np.ndarray
    landing_at: np.ndarray
    player: np.ndarray
    players: tuple[str, ...]
    table: np.ndarray
    tables: tuple[str, ...]
    us: np.ndarray | None = None

    def __len__(self) -> int:
        return len(self.ts)

    def when(self, i: int) -> datetime:
        """The time of attempt i (the Attempt's own ``when`` where there are Attempts)."""
        if self.attempts:
            return self.attempts[i].when
        assert self.us is not None
        return _UNIX_EPOCH + timedelta(microseconds=int(self.us[i]))


_UNIX_EPOCH = datetime(1970, 1, 1, tzinfo=UTC)

HISTORY_FIELDS: tuple[str, ...] = (
    "when", "player", "table", "travel", "rails", "family", "cue_x", "cue_y", "object_x",
    "object_y", "speed", "aim_rail", "aim_used", "result", "landing_rail", "landing_at",
)  # fmt: skip
"""The records.FLAT_FIELDS ``summarize`` reads from the store (``Store.columns(fields=...)``)."""


_GET = operator.attrgetter(
    "when", "result", "shot", "session", "speed", "table", "aim_rail", "aim_used",
    "landing_rail", "landing_at", "player", "id",
)  # fmt: skip
_GET_SHOT = operator.attrgetter("family", "travel", "rails", "cue", "object")


@contextmanager
def _quiet_gc() -> Iterator[None]:
    """Pause the cyclic garbage collector while building many small tuples at once (it would
    rescan every live attempt on each collection); restores the caller's setting."""
    was = gc.isenabled()
    gc.disable()
    try:
        yield
    finally:
        if was:
            gc.enable()


def columns(attempts: Iterable[Attempt]) -> Columns:
    """Put attempts in time order (``when``, then id) and lay them out as columns."""
    with _quiet_gc():
        return _columns(list(attempts))


def _columns(items: list[Attempt]) -> Columns:
    n = len(items)
    if n == 0:
        e = np.zeros(0)
        ei = np.zeros(0, np.int64)
        return Columns((), ei, e, np.zeros(0, bool), ei, (), ei, (), e, np.zeros((0, 2)),
                       ei, (), e, ei, e, ei, (), ei, (), np.zeros(0, np.int64))  # fmt: skip
    rows = list(map(_GET, items))
    (whens, results, shots_, sessions, speeds, tables, aim_rails, aim_used, lrails, lat,
     players, ids) = zip(*rows, strict=True)  # fmt: skip
    ts = np.fromiter(map(datetime.timestamp, whens), np.float64, n)
    order = np.arange(n)
    if n > 1 and not bool(np.all(np.diff(ts) >= 0.0)):
        idn = np.array([-1 if i is None else i for i in ids], dtype=np.int64)
        order = np.lexsort((idn, ts))
        ol = order.tolist()
        items = [items[i] for i in ol]
        ts = ts[order]

        def pick(col: tuple[Any, ...]) -> tuple[Any, ...]:
            return tuple(col[i] for i in ol)

        results, shots_, sessions, speeds, tables = map(
            pick, (results, shots_, sessions, speeds, tables)
        )
        aim_rails, aim_used, lrails, lat, players = map(
            pick, (aim_rails, aim_used, lrails, lat, players)
        )
    fams, travels, rails, cues, objects = zip(*map(_GET_SHOT, shots_), strict=True)
    hit = np.fromiter(map("hit".__eq__, results), np.bool_, n)
    fam, fam_names = _family_codes(fams)
    ses, sess = _codes(
        [
            s if s is not None else ("unsaved", p, t)
            for s, p, t in zip(sessions, players, tables, strict=True)
        ]
    )
    shape, shapes = _codes(list(zip(tables, rails, aim_rails, strict=True)))
    start = np.fromiter(chain.from_iterable(cues), np.float64, 2 * n).reshape(n, 2)
    banks = [
        i
        for i, (tr, ob) in enumerate(zip(travels, objects, strict=True))
        if tr == "object" and ob is not None
    ]
    if banks:
        start[banks] = np.array([objects[i] for i in banks], dtype=np.float64)
    land_code = np.fromiter(map(_RAIL_CODE.get, lrails, repeat(0, n)), np.int64, n)
    player, player_names = _codes(players)
    table, table_names = _codes(tables)
    return Columns(
        attempts=tuple(items),
        order=order,
        ts=ts,
        hit=hit,
        family=fam,
        families=fam_names,
        session=ses,
        sessions=sess,
        speed=np.fromiter(speeds, np.float64, n),
        start=start,
        shape=shape,
        shapes=shapes,
        aim_used=np.fromiter(aim_used, np.float64, n),
        landing_rail=land_code,
        # no observed landing (a hit without one, a short or jawed miss): NaN, no offset
        landing_at=np.fromiter((np.nan if v is None else v for v in lat), np.float64, n),
        player=player,
        players=player_names,
        table=table,
        tables=table_names,
    )


def _family_codes(fams: Sequence[str]) -> tuple[np.ndarray, tuple[str, ...]]:
    """Family codes, an empty family name counting as "custom"."""
    fam, fam_names = _codes(fams)
    fam_names = tuple(f or "custom" for f in fam_names)
    if len(set(fam_names)) != len(fam_names):  # "" and "custom" both present: merge them
        fam, fam_names = _codes([f or "custom" for f in fams])
    return fam, fam_names


def _coded(
    ac: AttemptColumns,
    name: str,
    codes: Callable[[Sequence[Any]], tuple[np.ndarray, tuple[Any, ...]]] = _codes,
) -> tuple[np.ndarray, tuple[Any, ...]]:
    """``codes`` of one text field of the store's columns, from its distinct key combinations
    when the store kept them (``AttemptColumns.key``: numbered by first appearance, so the codes
    come out as ``codes`` over the rows gives them), else from the field's tuple."""
    if ac.key is not None and name in ac.key_fields:
        j = ac.key_fields.index(name)
        per_combo, distinct = codes([c[j] for c in ac.key_values])
        return per_combo[ac.key], distinct
    values = getattr(ac, name)
    if len(values) == 0:
        return np.zeros(0, np.int64), ()
    return codes(values)


def _firsts(codes: np.ndarray) -> np.ndarray:
    """The row where each code 0.. first appears."""
    return np.unique(codes, return_index=True)[1]


def _first_codes(keys: np.ndarray) -> np.ndarray:
    """Integer keys recoded 0.. in order of first appearance (``_codes`` for int arrays)."""
    _, first, inv = np.unique(keys, return_index=True, return_inverse=True)
    rank = np.empty(len(first), np.int64)
    rank[np.argsort(first, kind="stable")] = np.arange(len(first))
    return rank[inv.reshape(-1)]


def columns_of(ac: AttemptColumns) -> Columns:
    """The store's columns (``Store.columns``, at least HISTORY_FIELDS read) laid out as the
    engine's Columns, equal to ``columns`` of the same attempts, without any Attempt."""
    missing = [f for f in HISTORY_FIELDS if getattr(ac, f) is None]
    if missing:
        raise ValueError(f"the history needs the attempt field {missing[0]!r} read too")
    with _quiet_gc():
        return _columns_of(ac)


def _columns_of(ac: AttemptColumns) -> Columns:
    n = len(ac)
    if n == 0:
        return _columns([])
    assert ac.when is not None and ac.result is not None and ac.speed is not None
    us = ac.when.astype(np.int64)
    if n > 1 and not bool(np.all(np.diff(us) >= 0)):
        ac = ac.take(np.lexsort((ac.id, us)))
        assert ac.when is not None and ac.result is not None and ac.speed is not None
        us = ac.when.astype(np.int64)
    result_code, results = _coded(ac, "result")
    hit = np.array([r == "hit" for r in results], bool)[result_code]
    fam, fam_names = _coded(ac, "family", _family_codes)
    player, player_names = _coded(ac, "player")
    table, table_names = _coded(ac, "table")
    # sessions keyed as in ``columns``: the store's id, or ("unsaved", player, table)
    ses_key = np.where(ac.session >= 0, ac.session, -1 - (player * len(table_names) + table))
    ses = _first_codes(ses_key)
    sess = tuple(
        s if s >= 0 else ("unsaved", player_names[player[i]], table_names[table[i]])
        for s, i in zip(ses_key[_firsts(ses)].tolist(), _firsts(ses).tolist(), strict=True)
    )
    rail_code, rail_seqs = _coded(ac, "rails")
    aim_code, aim_rails = _coded(ac, "aim_rail")
    nr, na = len(rail_seqs), len(aim_rails)
    shape = _first_codes((table * nr + rail_code) * na + aim_code)
    first = np.unique(shape, return_index=True)[1]
    shapes = tuple(
        (table_names[table[i]], rail_seqs[rail_code[i]], aim_rails[aim_code[i]])
        for i in first.tolist()
    )
    assert ac.cue_x is not None and ac.cue_y is not None
    start = np.column_stack((ac.cue_x, ac.cue_y)).astype(np.float64)
    travel_code, travels = _coded(ac, "travel")
    travel = np.array([t == "object" for t in travels], bool)[travel_code]
    assert ac.object_x is not None and ac.object_y is not None
    banks = travel & ~np.isnan(ac.object_x) & ~np.isnan(ac.object_y)
    start[banks, 0] = ac.object_x[banks]
    start[banks, 1] = ac.object_y[banks]
    lcode, lrails = _coded(ac, "landing_rail")
    land_code = np.array([_RAIL_CODE.get(r, 0) for r in lrails], np.int64)[lcode]
    return Columns(
        attempts=(),
        order=np.arange(n),
        ts=us / 1e6,
        hit=hit,
        family=fam,
        families=fam_names,
        session=ses,
        sessions=sess,
        speed=np.asarray(ac.speed, np.float64),
        start=start,
        shape=shape,
        shapes=shapes,
        aim_used=np.asarray(ac.aim_used, np.float64),
        landing_rail=land_code,
        landing_at=np.asarray(ac.landing_at, np.float64),
        player=player,
        players=player_names,
        table=table,
        tables=table_names,
        us=us,
    )


def offsets_of(
    cols: Columns, table_of: Callable[[str], TableSpec | None] | None = None
) -> np.ndarray:
    """``landing_offsets`` over columns, in the columns' (time) order."""
    look = table_of or BUILTIN_TABLES.get
    out = np.full(len(cols), np.nan)
    specs: dict[str, TableSpec | None] = {}
    for g, (table, rails, aim_rail) in enumerate(cols.shapes):
        if not rails or aim_rail != rails[0]:
            continue
        if table not in specs:
            specs[table] = look(table)
        spec = specs[table]
        if spec is None:
            continue
        idx = np.flatnonzero(cols.shape == g)
        lc, at, sense = ideal_landings(spec, cols.start[idx], rails, aim_rail, cols.aim_used[idx])
        logged = _perimeter_array(cols.landing_rail[idx], cols.landing_at[idx])
        diff = logged - _perimeter_array(lc, at)
        diff = (diff + 12.0) % 24.0 - 12.0
        out[idx] = diff * sense
    return out


def landing_offsets(
    attempts: Sequence[Attempt], table_of: Callable[[str], TableSpec | None] | None = None
) -> np.ndarray:
    """Signed landing offset (diamonds, + long) of each attempt, in the order given, from the
    ideal landing of its ``aim_used``; NaN where the table is unknown or the aim rail is not
    the family's first. The quantity of calibrate.landing_error under the ideal model,
    vectorised per rail sequence (``ideal_landings``)."""
    cols = columns(attempts)
    out = np.full(len(cols), np.nan)
    out[cols.order] = offsets_of(cols, table_of)
    return out


def bias_of(cols: Columns, offsets: np.ndarray) -> list[LandingBias]:
    """``landing_bias`` over columns and their offsets."""
    if len(cols) == 0:
        return []
    band, bands = _codes(_speed_bands(cols.speed).tolist())
    key = cols.family * len(bands) + band
    ok = ~np.isnan(offsets)
    out = []
    for k in np.unique(key[ok]).tolist():
        v = offsets[(key == k) & ok]
        sd = float(v.std(ddof=1)) if len(v) > 1 else 0.0
        out.append(
            LandingBias(
                cols.families[k // len(bands)],
                str(bands[k % len(bands)]),
                len(v),
                float(v.mean()),
                float(np.median(v)),
                sd / math.sqrt(len(v)),
                int((v > 0.1).sum()),
                int((v < -0.1).sum()),
            )
        )
    out.sort(key=lambda b: (-b.attempts, b.family, b.speed))
    return out


def landing_bias(
    attempts: Sequence[Attempt], table_of: Callable[[str], TableSpec | None] | None = None
) -> list[LandingBias]:
    """Landing bias by family and speed band (strokes.speed_name), largest groups first."""
    cols = columns(attempts)
    return bias_of(cols, offsets_of(cols, table_of))


def zone_codes_of(cols: Columns) -> tuple[np.ndarray, tuple[Any, ...]]:
    """Each attempt's coach zone (core/coach.py ``zone_of``) as an integer code, computed with
    the coach's own grid constants and ``cell_of`` rule, and the Zone of each code."""
    from . import coach  # noqa: PLC0415  (the coach owns the zone grid)

    n = len(cols)
    if n == 0:
        return np.zeros(0, np.int64), ()
    col = np.clip(np.floor(cols.start[:, 0] / coach.COL_WIDTH), 0, coach.ZONE_COLS - 1)
    row = np.clip(np.floor(cols.start[:, 1] / coach.ROW_HEIGHT), 0, coach.ZONE_ROWS - 1)
    band, bands = _codes(_speed_bands(cols.speed).tolist())
    nb = len(bands)
    raw = (
        (cols.family * coach.ZONE_COLS + col.astype(np.int64)) * coach.ZONE_ROWS
        + row.astype(np.int64)
    ) * nb + band
    uniq, inv = np.unique(raw, return_inverse=True)
    zones = []
    for r in uniq.tolist():
        b, r = r % nb, r // nb
        rw, r = r % coach.ZONE_ROWS, r // coach.ZONE_ROWS
        cl, f = r % coach.ZONE_COLS, r // coach.ZONE_COLS
        zones.append(coach.Zone(cols.families[f], cl, rw, str(bands[b])))
    return inv.reshape(-1).astype(np.int64), tuple(zones)


def zone_codes(items: Sequence[Attempt]) -> tuple[list[Any], tuple[Any, ...]]:
    """The coach Zone of each attempt, in the order given (vectorised ``coach.zone_of``)."""
    cols = columns(items)
    code, zones = zone_codes_of(cols)
    out: list[Any] = [None] * len(items)
    for i, c in zip(cols.order.tolist(), code.tolist(), strict=True):
        out[i] = zones[c]
    return out, zones


def group_streaks(codes: np.ndarray, hit: np.ndarray, groups: int) -> tuple[np.ndarray, np.ndarray]:
    """Current and best hit streak of each group code 0..groups-1 (time order kept within each
    group); the vectorised equal of ``streak`` applied group by group."""
    cur = np.zeros(groups, np.int64)
    best = np.zeros(groups, np.int64)
    n = len(codes)
    if n == 0:
        return cur, best
    order = np.argsort(codes, kind="stable")
    c = codes[order]
    h = hit[order]
    idx = np.arange(n)
    first = np.ones(n, bool)
    first[1:] = c[1:] != c[:-1]
    group_start = np.maximum.accumulate(np.where(first, idx, 0))
    last_miss = np.maximum.accumulate(np.where(~h, idx, -1))
    run = idx - np.maximum(last_miss, group_start - 1)
    starts = np.flatnonzero(first)
    ends = np.append(starts[1:], n) - 1
    present = c[starts]
    best[present] = np.maximum.reduceat(run, starts)
    cur[present] = run[ends]
    return cur, best


def group_rates(
    codes: np.ndarray, hit: np.ndarray, groups: int, confidence: float = 0.95
) -> list[Rate]:
    """The Wilson rate of each group code 0..groups-1."""
    n = np.bincount(codes, minlength=groups)
    k = np.bincount(codes, weights=hit.astype(np.float64), minlength=groups)
    return [wilson(int(k[g]), int(n[g]), confidence) for g in range(groups)]


def local_days(ts: np.ndarray, tz: tzinfo | None = None) -> np.ndarray:
    """Local calendar day of each UTC timestamp (days since 1970-01-01 in ``tz``).

    Offsets are looked up once per distinct UTC hour; an hour holding a change of offset (a
    daylight-saving switch off the hour) is resolved attempt by attempt, so the result equals
    ``local_date`` for every attempt.
    """
    if len(ts) == 0:
        return np.zeros(0, np.int64)
    hours = np.floor(ts / 3600.0).astype(np.int64)
    uniq, inv = np.unique(hours, return_inverse=True)

    def offset(t: float) -> float:
        d = datetime.fromtimestamp(t, tz) if tz is not None else datetime.fromtimestamp(t)
        if tz is None:
            d = d.astimezone()
        off = d.utcoffset()
        return off.total_seconds() if off is not None else 0.0

    lo = np.array([offset(float(h) * 3600.0) for h in uniq])
    hi = np.array([offset(float(h) * 3600.0 + 3599.999) for h in uniq])
    offs = lo[inv]
    mixed = np.flatnonzero(lo != hi)
    if len(mixed):
        for i in np.flatnonzero(np.isin(inv, mixed)):
            offs[i] = offset(float(ts[i]))
    return np.floor((ts + offs) / 86400.0).astype(np.int64)


def _day(d: int) -> date:
    return _EPOCH + timedelta(days=int(d))


def weeks_from_day_numbers(
    days: np.ndarray, hit: np.ndarray, confidence: float = 0.95
) -> list[WeekRate]:
    """Weekly rates from local day numbers (the vectorised ``weekly_from_days``)."""
    if len(days) == 0:
        return []
    monday = days - (days + 3) % 7  # 1970-01-01 was a Thursday (weekday 3, Monday = 0)
    first = int(monday.min())
    slot = (monday - first) // 7
    count = int(slot.max()) + 1
    rates = group_rates(slot, hit, count, confidence)
    out = []
    for i, r in enumerate(rates):
        m = _day(first + 7 * i)
        iso = m.isocalendar()
        out.append(WeekRate(iso.year, iso.week, m, r))
    return out


def _speed_bands(speed: np.ndarray) -> np.ndarray:
    """``strokes.speed_name`` of each speed, vectorised (same bands, same edges: below the
    slowest band counts as its stroke, above the hardest, or not a number, as the hardest)."""
    names = list(SPEED_BANDS)
    conds = [(speed >= lo) & (speed < hi) for lo, hi in SPEED_BANDS.values()]
    lowest = SPEED_BANDS[names[0]][0]
    return np.select(conds + [speed < lowest], names + [names[0]], names[-1])


def grid_from_zones(
    zones: Mapping[Any, Rate],
    family: str | None = None,
    speed: str | None = None,
    confidence: float = 0.95,
) -> dict[tuple[int, int], Rate]:
    """Pool zone rates into (col, row) cells of the coach's grid, for one family and speed
    band or all of them."""
    counts: dict[tuple[int, int], list[int]] = {}
    for z, r in zones.items():
        if family is not None and z.family != family:
            continue
        if speed is not None and z.speed != speed:
            continue
        c = counts.setdefault((z.col, z.row), [0, 0])
        c[0] += r.hits
        c[1] += r.attempts
    return {k: wilson(h, n, confidence) for k, (h, n) in counts.items()}


def grid_rates(
    attempts: Iterable[Attempt],
    family: str | None = None,
    speed: str | None = None,
    confidence: float = 0.95,
) -> dict[tuple[int, int], Rate]:
    """Make rates per (col, row) cell of the coach's zone grid, pooled over families and speed
    bands unless ``family``/``speed`` pick one."""
    cols = columns(attempts)
    code, zones = zone_codes_of(cols)
    rates = group_rates(code, cols.hit, len(zones), confidence)
    return grid_from_zones(dict(zip(zones, rates, strict=True)), family, speed, confidence)


# ----- the whole picture --------------------------------------------------------------------


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


def default_zone_fn() -> ZoneFn | None:
    """The coach's zones (core/coach.py ``zone_of``) keyed per attempt, if the coach exists."""
    try:
        from .coach import zone_of  # noqa: PLC0415  (optional: the coach may be absent)
    except ImportError:
        return None

    def key(a: Attempt) -> Hashable:
        return zone_of(a.shot, a.speed)

    return key


def _summarize(
    attempts: Iterable[Attempt] | AttemptColumns,
    tz: tzinfo | None = None,
    today: date | None = None,
    zone_fn: ZoneFn | None = None,
    table_of: Callable[[str], TableSpec | None] | None = None,
    confidence: float = 0.95,
    with_bias: bool = True,
) -> History:
    """The body of ``summarize`` (which runs it with the garbage collector paused)."""
    if isinstance(attempts, AttemptColumns) and zone_fn is None:
        cols = _columns_of(attempts)
    elif isinstance(attempts, AttemptColumns):  # a custom zone key needs Attempts: build them
        cols = _columns(attempts.to_attempts())
    else:
        cols = _columns(list(attempts))
    n = len(cols)
    hit = cols.hit
    if today is None:
        today = datetime.now(tz).date() if tz is not None else datetime.now().astimezone().date()
    days = local_days(cols.ts, tz)
    uniq_days = sorted({_day(d) for d in np.unique(days)})
    nf, ns = len(cols.families), len(cols.sessions)
    fam_rates = group_rates(cols.family, hit, nf, confidence)
    fam_cur, fam_best = group_streaks(cols.family, hit, nf)
    ses_rates = group_rates(cols.session, hit, ns, confidence)
    ses_cur, ses_best = group_streaks(cols.session, hit, ns)
    family_weeks = {}
    for g, f in enumerate(cols.families):
        sel = cols.family == g
        family_weeks[f] = tuple(weeks_from_day_numbers(days[sel], hit[sel], confidence))
    zones: dict[Any, Rate] = {}
    zone_streaks: dict[Any, Streak] = {}
    if zone_fn is not None:
        zcode, zkeys = _codes([zone_fn(a) for a in cols.attempts])
    else:
        try:
            zcode, zkeys = zone_codes_of(cols)
        except ImportError:
            zcode, zkeys = np.zeros(0, np.int64), ()
    if zkeys:
        nz = len(zkeys)
        zr = group_rates(zcode, hit, nz, confidence)
        zc, zb = group_streaks(zcode, hit, nz)
        zones = {z: zr[i] for i, z in enumerate(zkeys)}
        zone_streaks = {z: Streak(int(zc[i]), int(zb[i])) for i, z in enumerate(zkeys)}
    sessions = []
    if n:
        order = np.argsort(cols.session, kind="stable")
        sc = cols.session[order]
        firsts = order[np.flatnonzero(np.r_[True, sc[1:] != sc[:-1]])]
        lasts = order[np.flatnonzero(np.r_[sc[1:] != sc[:-1], True])]
        pair = cols.session * max(nf, 1) + cols.family
        _, first_of_pair = np.unique(pair, return_index=True)
        fams_of: dict[int, list[str]] = {}
        for i in np.sort(first_of_pair).tolist():
            fams_of.setdefault(int(cols.session[i]), []).append(cols.families[int(cols.family[i])])
        for i0, i1 in zip(firsts.tolist(), lasts.tolist(), strict=True):
            key = cols.sessions[int(cols.session[i0])]
            sessions.append(
                SessionSummary(
                    None if isinstance(key, tuple) else key,
                    cols.players[int(cols.player[i0])],
                    cols.tables[int(cols.table[i0])],
                    cols.when(i0),
                    cols.when(i1),
                    ses_rates[int(cols.session[i0])],
                    Streak(
                        int(ses_cur[int(cols.session[i0])]), int(ses_best[int(cols.session[i0])])
                    ),
                    tuple(fams_of[int(cols.session[i0])]),
                )
            )
        sessions.sort(key=lambda s: s.start)
    bias = tuple(bias_of(cols, offsets_of(cols, table_of))) if with_bias else ()
    overall = streak_of_array(hit)
    return History(
        rate=wilson(int(hit.sum()), len(hit), confidence),
        streak=overall,
        days=day_streak(uniq_days, today),
        families={f: fam_rates[g] for g, f in enumerate(cols.families)},
        family_streaks={
            f: Streak(int(fam_cur[g]), int(fam_best[g])) for g, f in enumerate(cols.families)
        },
        zones=zones,
        zone_streaks=zone_streaks,
        session_streaks={
            s: Streak(int(ses_cur[g]), int(ses_best[g])) for g, s in enumerate(cols.sessions)
        },
        weeks=tuple(weeks_from_day_numbers(days, hit, confidence)),
        family_weeks=family_weeks,
        sessions=tuple(sessions),
        bias=bias,
        first=cols.when(0) if n else None,
        last=cols.when(n - 1) if n else None,
        players=tuple(sorted(cols.players)),
        tables=tuple(sorted(cols.tables)),
    )


def summarize(
    attempts: Iterable[Attempt] | AttemptColumns,
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
    Works on numpy columns: the same numbers as the one-concept functions above (the tests
    hold them to each other), fast enough for a hundred thousand attempts. ``attempts`` may be
    the store's columns (``Store.columns``, at least HISTORY_FIELDS read): the same History as
    for the Attempts they hold, without building any.
    """
    if isinstance(attempts, AttemptColumns):
        missing = [f for f in HISTORY_FIELDS if getattr(attempts, f) is None]
        if zone_fn is not None:
            missing = [f for f in FLAT_FIELDS if getattr(attempts, f) is None]
        if missing:
            raise ValueError(f"the history needs the attempt field {missing[0]!r} read too")
    with _quiet_gc():
        return _summarize(attempts, tz, today, zone_fn, table_of, confidence, with_bias)


def streak_of_array(hit: np.ndarray) -> Streak:
    """``streak`` of a boolean array, vectorised."""
    cur, best = group_streaks(np.zeros(len(hit), np.int64), hit, 1)
    return Streak(int(cur[0]), int(best[0]))


# ----- plain data for --json ----------------------------------------------------------------


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


def zone_label(z: Any) -> str:
    """A zone key as text: the coach's Zone fields joined, or str() of anything else."""
    fields = getattr(z, "__dataclass_fields__", None)
    if fields:
        return ":".join(str(getattr(z, f)) for f in fields)
    return str(z)


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
            zone_label(z): {**rate_dict(r), "streaks": streak_dict(h.zone_streaks[z])}
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


__all__ = [
    "HISTORY_FIELDS",
    "History",
    "LandingBias",
    "Rate",
    "SessionSummary",
    "Streak",
    "WeekRate",
    "day_streak",
    "grid_rates",
    "history_dict",
    "ideal_landings",
    "landing_bias",
    "landing_offsets",
    "local_date",
    "ordered",
    "perimeter_diamonds",
    "rate_of",
    "rates_by",
    "session_list",
    "streak",
    "streaks_by",
    "summarize",
    "weekly",
    "weekly_from_days",
    "wilson",
]
