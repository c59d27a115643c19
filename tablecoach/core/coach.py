"""Zones of the table, make-rate posteriors per zone, and choosing the next setup to practise.

A zone is a cell of the travelling ball's start position (the cue ball for kicks, the object ball
for banks) on a grid of 2 x 1 diamonds: ``ZONE_COLS`` = 4 columns along the table (x 0-2, 2-4,
4-6, 6-8 diamonds from the head rail) and ``ZONE_ROWS`` = 4 rows across it (y 0-1, ..., 3-4
diamonds from the left rail), 16 cells in all, for one family and one speed band (the named
strokes of ``strokes.speed_name``: slow, lag, medium, fast, power). See docs/coach.md.

Make rates are Beta-binomial posteriors (W. R. Thompson 1933 samples from them to trade
exploration against exploitation), each zone's prior centred on its family's own rate so that a
zone with few attempts is shrunk toward the family (empirical-Bayes partial pooling).
"""

from __future__ import annotations

import math
from collections.abc import Callable, Iterable, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from . import aim as aims
from . import shots, strokes
from .records import Attempt, ShotRecord
from .table import BUILTIN_TABLES, TableSpec

ZONE_COLS = 4
"""Columns of the zone grid along the table: 2 diamonds each (x 0-2, 2-4, 4-6, 6-8)."""
ZONE_ROWS = 4
"""Rows of the zone grid across the table: 1 diamond each (y 0-1, 1-2, 2-3, 3-4)."""
COL_WIDTH = 8.0 / ZONE_COLS
ROW_HEIGHT = 4.0 / ZONE_ROWS

PRIOR_STRENGTH = 2.0
"""Pseudo-attempts of the family's rate in each zone's prior (how hard zones are pooled)."""

INTERVAL = 0.80
"""Mass of the posterior interval reported for each zone (10th to 90th percentile)."""


@dataclass(frozen=True, slots=True)
class Zone:
    """A cell of the travelling ball's start, for one family and speed band.

    ``col`` 0..ZONE_COLS-1 counts 2-diamond strips from the head rail; ``row`` 0..ZONE_ROWS-1
    counts 1-diamond strips from the left rail; ``speed`` is a band name (slow, lag, medium, ...).
    """

    family: str
    col: int
    row: int
    speed: str

    @property
    def label(self) -> str:
        """A short stable label, e.g. ``cross-corner-bank x 4-6 y 1-2 medium``."""
        (x0, x1), (y0, y1) = zone_bounds(self)
        return f"{self.family} x {x0:g}-{x1:g} y {y0:g}-{y1:g} {self.speed}"

    @property
    def short(self) -> str:
        """The zone without its family, e.g. ``x 4-6, y 1-2``."""
        (x0, x1), (y0, y1) = zone_bounds(self)
        return f"x {x0:g}-{x1:g}, y {y0:g}-{y1:g}"

    def describe(self) -> str:
        """The zone in a player's words."""
        (x0, x1), (y0, y1) = zone_bounds(self)
        fam = shots.PRESETS.get(self.family)
        title = fam.title if fam is not None else self.family
        ball = "cue ball" if fam is not None and fam.travel == "cue" else "travelling ball"
        if fam is not None and fam.travel == "object":
            ball = "object ball"
        return (
            f"{title}s at {self.speed} speed with the {ball} {x0:g} to {x1:g} diamonds from "
            f"the head rail and {y0:g} to {y1:g} diamonds from the left rail"
        )


def zone_bounds(zone: Zone) -> tuple[tuple[float, float], tuple[float, float]]:
    """The zone's cell in diamonds: ((x0, x1), (y0, y1))."""
    x0 = zone.col * COL_WIDTH
    y0 = zone.row * ROW_HEIGHT
    return ((x0, x0 + COL_WIDTH), (y0, y0 + ROW_HEIGHT))


def cell_of(x_d: float, y_d: float) -> tuple[int, int]:
    """The (col, row) cell holding a point in diamonds (the far edges belong to the last cell)."""
    col = min(max(int(math.floor(x_d / COL_WIDTH)), 0), ZONE_COLS - 1)
    row = min(max(int(math.floor(y_d / ROW_HEIGHT)), 0), ZONE_ROWS - 1)
    return col, row


def start_of(shot: ShotRecord) -> tuple[float, float]:
    """The travelling ball's start in diamonds: the object ball for banks, else the cue ball."""
    if shot.travel == "object" and shot.object is not None:
        return shot.object
    return shot.cue


def zone_of(shot: ShotRecord, speed: float) -> Zone:
    """The zone of a shot (positions in diamonds) struck at ``speed`` m/s."""
    col, row = cell_of(*start_of(shot))
    return Zone(shot.family or "custom", col, row, strokes.speed_name(speed))


def zone_of_attempt(a: Attempt) -> Zone:
    """The zone of a logged attempt."""
    return zone_of(a.shot, a.speed)


# ----- Beta posteriors ------------------------------------------------------------------------


def beta_quantile(a: float, b: float, q: float, grid: int = 2001) -> float:
    """The q-quantile of Beta(a, b), by integrating the density on a fine grid.

    The density x^(a-1) (1-x)^(b-1) / B(a, b) is the standard Beta law; the grid uses the
    midpoints of ``grid`` equal cells, accurate to about 1e-3 for a, b >= 0.5 (checked against
    scipy.stats.beta in the tests).
    """
    if not (0.0 < q < 1.0):
        raise ValueError(f"quantile {q} must lie strictly between 0 and 1")
    x = (np.arange(grid) + 0.5) / grid
    logpdf = (a - 1.0) * np.log(x) + (b - 1.0) * np.log1p(-x)
    pdf = np.exp(logpdf - logpdf.max())
    cdf = np.cumsum(pdf)
    cdf /= cdf[-1]
    return float(np.interp(q, cdf, x))


@dataclass(frozen=True, slots=True)
class ZoneStats:
    """What the coach knows about one zone.

    ``alpha``/``beta`` are the Beta posterior's parameters, ``mean`` its mean, ``low``/``high``
    the central ``INTERVAL`` interval, ``family_rate`` the rate the prior was shrunk toward.
    ``bias`` is the mean landing error in diamonds (positive: long, the ball landed further
    along its path than the model said for the aim used; None when no landing could be
    compared), ``bias_n`` how many landings it averages.
    """

    made: int
    tried: int
    alpha: float
    beta: float
    mean: float
    low: float
    high: float
    family_rate: float
    bias: float | None = None
    bias_n: int = 0

    @property
    def record(self) -> str:
        """``3 of 9 made``."""
        return f"{self.made} of {self.tried} made"

    def sample(self, rng: np.random.Generator, sharpen: float = 1.0) -> float:
        """One draw of the make rate from the posterior (Thompson 1933).

        ``sharpen`` > 1 draws from Beta(k alpha, k beta) instead: the same mean, a narrower
        spread, so the choice leans more on what is known (a tempered posterior).
        """
        return float(rng.beta(sharpen * self.alpha, sharpen * self.beta))


def posterior(
    made: int, tried: int, family_rate: float, strength: float | None = None
) -> tuple[float, float]:
    """Beta posterior parameters for ``made`` of ``tried`` under a Beta prior of ``strength``
    (default PRIOR_STRENGTH) pseudo-attempts at ``family_rate`` (conjugate Beta-binomial
    update)."""
    strength = PRIOR_STRENGTH if strength is None else strength
    p = min(max(family_rate, 0.02), 0.98)
    return strength * p + made, strength * (1.0 - p) + (tried - made)


def family_rates(attempts: Iterable[Attempt]) -> dict[str, float]:
    """Each family's own make rate, a Beta(1, 1) posterior mean (Laplace's rule of succession)."""
    made: dict[str, int] = {}
    tried: dict[str, int] = {}
    for a in attempts:
        f = a.shot.family or "custom"
        tried[f] = tried.get(f, 0) + 1
        made[f] = made.get(f, 0) + int(a.hit)
    return {f: (made[f] + 1.0) / (tried[f] + 2.0) for f in tried}


def stats_for(
    made: int, tried: int, family_rate: float, bias: float | None = None, bias_n: int = 0
) -> ZoneStats:
    """A ZoneStats from counts, shrunk toward ``family_rate``."""
    a, b = posterior(made, tried, family_rate)
    lo = beta_quantile(a, b, (1.0 - INTERVAL) / 2.0)
    hi = beta_quantile(a, b, (1.0 + INTERVAL) / 2.0)
    return ZoneStats(made, tried, a, b, a / (a + b), lo, hi, family_rate, bias, bias_n)


LandingError = Callable[[Attempt], float | None]


def zone_stats(
    attempts: Sequence[Attempt],
    *,
    table: TableSpec | None = None,
    model: str = "ideal",
    landing_error: LandingError | None = None,
    calibration: Any = None,
) -> dict[Zone, ZoneStats]:
    """Made, tried, the shrunk posterior and the landing bias of every zone with attempts.

    The landing bias is the mean signed long/short error (diamonds) of the observed landing
    against the landing the model predicts for the aim used (calibrate.landing_errors), on
    ``table`` (with ``calibration``'s speeds if given), or else on each attempt's built-in
    table by name; attempts on a table it cannot find get no bias. ``landing_error`` replaces
    that with a function of one attempt.
    """
    rates = family_rates(attempts)
    if landing_error is not None:
        errors = [landing_error(a) for a in attempts]
    else:
        errors = _batch_errors(attempts, table, model, calibration)
    made: dict[Zone, int] = {}
    tried: dict[Zone, int] = {}
    errs: dict[Zone, list[float]] = {}
    for a, e in zip(attempts, errors, strict=True):
        z = zone_of_attempt(a)
        tried[z] = tried.get(z, 0) + 1
        made[z] = made.get(z, 0) + int(a.hit)
        if e is not None and math.isfinite(e):
            errs.setdefault(z, []).append(e)
    out: dict[Zone, ZoneStats] = {}
    for z in tried:
        es = errs.get(z, [])
        bias = float(np.mean(es)) if es else None
        out[z] = stats_for(made[z], tried[z], rates[z.family], bias, len(es))
    return out


def _batch_errors(
    attempts: Sequence[Attempt], table: TableSpec | None, model: str, calibration: Any
) -> list[float | None]:
    from .calibrate import landing_errors  # noqa: PLC0415  (calibrate imports this module)

    out: list[float | None] = [None] * len(attempts)
    by_table: dict[str, list[int]] = {}
    for k, a in enumerate(attempts):
        by_table.setdefault(a.table, []).append(k)
    for name, idx in by_table.items():
        t = table if table is not None else BUILTIN_TABLES.get(name)
        if t is None:
            continue
        try:
            errs = landing_errors(t, [attempts[k] for k in idx], model, calibration)
        except ValueError:
            continue
        for k, e in zip(idx, errs, strict=True):
            out[k] = e
    return out


# ----- the scheduler ----------------------------------------------------------------------------

Sampler = Callable[[TableSpec, Any, np.random.Generator, int], list[Any]]
"""Deals setups from a drill: (table, drill, rng, n) -> list of Dealt (drills.sample_setups)."""


@dataclass(frozen=True, slots=True)
class Choice:
    """The next setup to practise, its zone and one line saying why it was picked.

    ``reason`` is one of ``weak`` (below the target band), ``band`` (a shot inside the band,
    played between harder ones), ``strong`` (above the band), ``new`` (a zone never tried),
    ``pinned`` (the player pinned it); ``sample`` is the make rate drawn from the zone's
    posterior for this choice.
    """

    dealt: Any
    zone: Zone
    why: str
    reason: str = "weak"
    sample: float = math.nan


def family_words(family: str) -> str:
    """A family's title in lower case (``cross-corner bank``), or its name in words (a pack's
    own ``left-rail-corner-bank`` reads "left rail corner bank")."""
    fam = shots.PRESETS.get(family)
    return (fam.title if fam is not None else family.replace("-", " ")).lower()


def _sort_key(z: Zone) -> tuple[str, int, int, str]:
    return (z.family, z.col, z.row, z.speed)


class Scheduler:
    """Chooses the next setup by Thompson sampling toward a target success band.

    Each call to ``next`` draws a make rate from every available zone's posterior (Thompson
    1933) and picks:

    - with probability ``explore``, a zone of the drill never tried yet (so new ground is
      covered even when the posteriors look settled);
    - after ``run`` picks in a row below the band, a zone whose draw lies inside the target
      band (the least tried of them, to learn the most from it): practice near 85 % success is
      where learning is fastest (Wilson et al. 2019), and difficulty is kept matched to skill
      (challenge point, Guadagnoli and Lee 2004), so hard runs are broken by shots in band;
    - otherwise the zone whose draw is lowest, that is the most room to grow.

    Draws come from posteriors sharpened by ``sharpen`` (Beta(k a, k b), same mean, narrower):
    with 16 zones and few attempts each, plain draws spread the practice too thinly for the
    weak zones to get the attention they need (benchmarks/bench_coach.py shows the figures).

    The zone just played is never picked twice in a row when another is available
    (interleaved practice beats blocked practice: Shea and Morgan 1979). A pin restricts the
    choice to one zone or family for a number of setups. Every setup comes from the drill's
    sampler and has a clean path under ``model`` (checked with aims.solve before it is
    proposed). All randomness comes from ``rng``: a seed gives the same choices.
    """

    def __init__(
        self,
        table: TableSpec,
        drill: Any,
        attempts: Sequence[Attempt],
        rng: np.random.Generator,
        target_band: tuple[float, float] = (0.70, 0.85),
        *,
        model: str = "ideal",
        sampler: Sampler | None = None,
        pool_size: int = 96,
        explore: float = 0.05,
        run: int = 4,
        sharpen: float = 3.0,
    ) -> None:
        lo, hi = target_band
        if not (0.0 < lo < hi < 1.0):
            raise ValueError(f"target band {lo:g}-{hi:g} must satisfy 0 < low < high < 1")
        self.table = table
        self.drill = drill
        self.rng = rng
        self.band = (float(lo), float(hi))
        self.model = model
        self.explore = explore
        self.run = run
        self.sharpen = sharpen
        self.pool_size = pool_size
        if sampler is None:
            from .drills import sample_setups  # noqa: PLC0415  (drills is a sibling module)

            sampler = sample_setups
        self._sampler = sampler
        self._made: dict[Zone, int] = {}
        self._tried: dict[Zone, int] = {}
        self._fam_made: dict[str, int] = {}
        self._fam_tried: dict[str, int] = {}
        for a in attempts:
            self._count(a)
        self._pool: dict[Zone, list[Any]] = {}
        self._recent: list[Choice] = []
        self._pin_zone: Zone | None = None
        self._pin_family: str | None = None
        self._pin_left = 0
        self._refill()

    # ----- bookkeeping -------------------------------------------------------------------------
    def _count(self, a: Attempt) -> None:
        z = zone_of_attempt(a)
        self._tried[z] = self._tried.get(z, 0) + 1
        self._made[z] = self._made.get(z, 0) + int(a.hit)
        f = z.family
        self._fam_tried[f] = self._fam_tried.get(f, 0) + 1
        self._fam_made[f] = self._fam_made.get(f, 0) + int(a.hit)

    def record(self, attempt: Attempt) -> None:
        """Take a logged attempt into account for the next choices."""
        self._count(attempt)

    def zone_of_dealt(self, dealt: Any) -> Zone:
        """The zone of a dealt setup on this scheduler's table."""
        rec = shots.record_of(self.table, dealt.setup)
        return zone_of(rec, dealt.stroke.speed)

    def _refill(self) -> None:
        for d in self._sampler(self.table, self.drill, self.rng, self.pool_size):
            self._pool.setdefault(self.zone_of_dealt(d), []).append(d)

    def family_rate(self, family: str) -> float:
        """The family's own make rate, Beta(1, 1) posterior mean (rule of succession)."""
        return (self._fam_made.get(family, 0) + 1.0) / (self._fam_tried.get(family, 0) + 2.0)

    def stats(self, zone: Zone) -> ZoneStats:
        """The zone's posterior now (counts only; see zone_stats for landing bias)."""
        return stats_for(
            self._made.get(zone, 0), self._tried.get(zone, 0), self.family_rate(zone.family)
        )

    def all_stats(self) -> dict[Zone, ZoneStats]:
        """Every zone tried so far, with its posterior."""
        return {z: self.stats(z) for z in sorted(self._tried, key=_sort_key)}

    def weakest(self, n: int = 3) -> list[tuple[Zone, ZoneStats]]:
        """The ``n`` tried zones with the lowest posterior mean make rate, weakest first."""
        items = sorted(self.all_stats().items(), key=lambda kv: (kv[1].mean, _sort_key(kv[0])))
        return items[:n]

    # ----- pins --------------------------------------------------------------------------------
    def pin(self, zone: Zone | None = None, family: str | None = None, count: int = 10) -> None:
        """Keep the next ``count`` setups in one zone, or in one family."""
        if zone is None and family is None:
            raise ValueError("pin a zone or a family")
        if count < 1:
            raise ValueError("a pin lasts at least one setup")
        self._pin_zone, self._pin_family, self._pin_left = zone, family, int(count)

    def unpin(self) -> None:
        """Back to the coach's own choice."""
        self._pin_zone, self._pin_family, self._pin_left = None, None, 0

    @property
    def pinned(self) -> str | None:
        """What is pinned, in words, or None."""
        if self._pin_left <= 0:
            return None
        z = self._pin_zone
        if z is not None:  # in a player's words, not the stored label
            what = f"{family_words(z.family)} from {z.short} at {z.speed}"
        else:
            what = family_words(self._pin_family or "")
        return f"{what} for {self._pin_left} more"

    # ----- choosing ----------------------------------------------------------------------------
    def _candidates(self) -> list[Zone]:
        zones = list(self._pool)
        if self._pin_left > 0:
            if self._pin_zone is not None:
                zones = [z for z in zones if z == self._pin_zone]
            else:
                zones = [z for z in zones if z.family == self._pin_family]
        return sorted(zones, key=_sort_key)

    def _take(self, zone: Zone) -> Any | None:
        """A setup of this zone with a clean path, or None when the zone's pool runs dry."""
        for _round in range(4):
            ds = self._pool.get(zone, [])
            while ds:
                d = ds.pop(int(self.rng.integers(len(ds))))
                try:
                    aims.solve(self.table, d.setup, d.stroke, self.model)
                except ValueError:
                    continue
                return d
            self._refill()
        return None

    def next(self) -> Choice:
        """The next setup to practise, with the reason in one line."""
        for _attempt in range(len(self._pool) + 4):
            zones = self._candidates()
            if not zones:
                self._refill()
                zones = self._candidates()
            if not zones:
                if self._pin_left > 0:
                    self.unpin()
                    continue
                raise ValueError(
                    "the drill deals no setup with a clean path on this table; "
                    "try another drill or table"
                )
            zone, reason, p = self._pick(zones)
            dealt = self._take(zone)
            if dealt is None:
                self._pool.pop(zone, None)
                continue
            st = self.stats(zone)
            choice = Choice(dealt, zone, self._why(zone, st, reason), reason, p)
            self._recent.append(choice)
            del self._recent[:-8]
            if self._pin_left > 0:
                self._pin_left -= 1
            return choice
        raise ValueError("no setup with a clean path could be dealt; try another drill or table")

    def _pick(self, zones: list[Zone]) -> tuple[Zone, str, float]:
        lo, hi = self.band
        draws = {z: self.stats(z).sample(self.rng, self.sharpen) for z in zones}
        if self._pin_left > 0:
            z = min(zones, key=lambda z: draws[z])
            return z, "pinned", draws[z]
        last = self._recent[-1].zone if self._recent else None
        pick = [z for z in zones if z != last] or zones
        new = [z for z in pick if self._tried.get(z, 0) == 0]
        if new and self.rng.random() < self.explore:
            z = new[int(self.rng.integers(len(new)))]
            return z, "new", draws[z]
        recent = self._recent[-self.run :]
        if len(recent) == self.run and all(c.reason == "weak" for c in recent):
            band = [z for z in pick if lo <= draws[z] <= hi]
            if band:
                z = min(band, key=lambda z: (self._tried.get(z, 0), draws[z]))
                return z, "band", draws[z]
        z = min(pick, key=lambda z: draws[z])
        p = draws[z]
        return z, ("weak" if p < lo else "band" if p <= hi else "strong"), p

    def _why(self, zone: Zone, st: ZoneStats, reason: str) -> str:
        lo, hi = self.band
        band = f"{lo * 100:.0f}-{hi * 100:.0f} %"
        where = f"{family_words(zone.family)} from {zone.short} at {zone.speed}"
        if st.tried == 0:
            if reason == "pinned":
                return f"{where}: pinned, never tried here yet"
            return f"{where}: never tried here yet, worth a look"
        rec = st.record
        if reason == "pinned":
            return f"{where}: pinned, {rec}"
        if reason == "weak":
            return f"{where}: {rec}, below your {band} band; the most room to grow"
        if reason == "new":
            return f"{where}: {rec}, little tried yet"
        if reason == "strong":
            return f"{where}: {rec}, above your {band} band; keeping it sharp"
        return f"{where}: {rec}, a shot in your {band} band between harder ones"
