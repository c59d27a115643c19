"""Zones of the table and make-rate posteriors per zone (the scheduler chooses from them).

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

from . import shots
from .records import Attempt, ShotRecord
from .store import Store, counts
from .store.query import AttemptQuery
from .table import BUILTIN_TABLES, TableSpec

COL_WIDTH, ROW_HEIGHT, ZONE_COLS, ZONE_ROWS = counts.GRID
"""The zone grid, defined beside the counts the store keeps by it (store/counts.py): ZONE_COLS
columns along the table of COL_WIDTH = 2 diamonds each (x 0-2, 2-4, 4-6, 6-8), ZONE_ROWS rows
across it of ROW_HEIGHT = 1 diamond each (y 0-1, 1-2, 2-3, 3-4)."""

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
    from . import strokes  # the physics it loads: not for readers of zones (the history)

    col, row = cell_of(*start_of(shot))
    return Zone(shot.family or "custom", col, row, strokes.speed_name(speed))


def zone_of_attempt(a: Attempt) -> Zone:
    """The zone of a logged attempt."""
    return zone_of(a.shot, a.speed)


def zone_counts(store: Store, query: AttemptQuery) -> dict[Zone, tuple[int, int]]:
    """(made, tried) per zone of the attempts ``query`` matches (the same cells and speed bands
    as ``zone_of``), without reading any attempt: what the scheduler starts from.

    A query of a player and/or a table (the practice session's) reads the counts the store
    keeps as attempts are logged and undone (store/counts.py): a few rows whatever the size
    of the history. Any other query is counted by one aggregate query over its attempts."""
    q = query
    if q.family is None and q.since is None and q.until is None and q.session is None:
        rows = store.kept_cell_counts(q.player, q.table)
    else:
        rows = store.cell_counts(
            query,
            (COL_WIDTH, ROW_HEIGHT, ZONE_COLS, ZONE_ROWS),
            shots.SPEED_BANDS,
            below=counts.BELOW,
            above=counts.ABOVE,
        )
    out: dict[Zone, tuple[int, int]] = {}
    for family, col, row, band, tried, made in rows:
        z = Zone(family, col, row, band)
        m, t = out.get(z, (0, 0))
        out[z] = (m + made, t + tried)
    return out


# ----- Beta posteriors ------------------------------------------------------------------------


def beta_quantile(a: float, b: float, q: float) -> float:
    """The q-quantile of Beta(a, b): scipy.special.betaincinv, the inverse of the regularised
    incomplete beta function (imported here only: nothing on the practice screen's start needs
    an interval)."""
    if not (0.0 < q < 1.0):
        raise ValueError(f"quantile {q} must lie strictly between 0 and 1")
    from scipy.special import betaincinv  # type: ignore[import-untyped]

    return float(betaincinv(a, b, q))


@dataclass(frozen=True, slots=True)
class ZoneStats:
    """What the coach knows about one zone.

    ``alpha``/``beta`` are the Beta posterior's parameters, ``mean`` its mean, ``low``/``high``
    (computed when asked) the central ``INTERVAL`` interval, ``family_rate`` the rate the prior
    was shrunk toward.
    ``bias`` is the mean landing error in diamonds (positive: long, the ball landed further
    along its path than the model said for the aim used; None when no landing could be
    compared), ``bias_n`` how many landings it averages.
    """

    made: int
    tried: int
    alpha: float
    beta: float
    mean: float
    family_rate: float
    bias: float | None = None
    bias_n: int = 0

    @property
    def low(self) -> float:
        """The lower end of the central INTERVAL interval of the posterior."""
        return beta_quantile(self.alpha, self.beta, (1.0 - INTERVAL) / 2.0)

    @property
    def high(self) -> float:
        """The upper end of the central INTERVAL interval of the posterior."""
        return beta_quantile(self.alpha, self.beta, (1.0 + INTERVAL) / 2.0)

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
    return ZoneStats(made, tried, a, b, a / (a + b), family_rate, bias, bias_n)


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
    against the landing the model predicts for the aim used (calibration.model.landing_errors), on
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
    from .calibration.model import landing_errors  # the landing model: loads the physics

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
