"""Choosing the next setup to practise: Thompson sampling over the coach's zones toward a band.

Each choice draws a make rate from every available zone's Beta posterior (coach.py; W. R.
Thompson 1933) and picks the zone with the most room to grow, breaking hard runs with shots
inside the target band and now and then trying new ground. See docs/coach.md.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from . import aim as aims
from . import shots
from .coach import Zone, ZoneStats, stats_for, zone_of, zone_of_attempt
from .drills import sample_setups
from .records import Attempt
from .strokes import speed_name
from .table import TableSpec

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

    The counts start from ``attempts`` plus ``counts`` ((made, tried) per zone, as
    coach.zone_counts gives them from the store without reading the attempts), then follow
    ``record`` and ``forget`` one attempt at a time.
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
        counts: Mapping[Zone, tuple[int, int]] | None = None,
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
        self._sampler: Sampler = sample_setups if sampler is None else sampler
        self._made: dict[Zone, int] = {}
        self._tried: dict[Zone, int] = {}
        self._fam_made: dict[str, int] = {}
        self._fam_tried: dict[str, int] = {}
        for z, (made, tried) in (counts or {}).items():
            self._add(z, made, tried)
        for a in attempts:
            self._count(a)
        self._pool: dict[Zone, list[Any]] = {}
        self._recent: list[Choice] = []
        self._pin_zone: Zone | None = None
        self._pin_family: str | None = None
        self._pin_left = 0
        self._refill()

    # ----- bookkeeping -------------------------------------------------------------------------
    def _add(self, z: Zone, made: int, tried: int) -> None:
        self._tried[z] = self._tried.get(z, 0) + tried
        self._made[z] = self._made.get(z, 0) + made
        if self._tried[z] <= 0:
            del self._tried[z]
            self._made.pop(z, None)
        f = z.family
        self._fam_tried[f] = self._fam_tried.get(f, 0) + tried
        self._fam_made[f] = self._fam_made.get(f, 0) + made
        if self._fam_tried[f] <= 0:
            del self._fam_tried[f]
            self._fam_made.pop(f, None)

    def _count(self, a: Attempt) -> None:
        self._add(zone_of_attempt(a), int(a.hit), 1)

    def record(self, attempt: Attempt) -> None:
        """Take a logged attempt into account for the next choices."""
        self._count(attempt)

    def forget(self, attempt: Attempt) -> None:
        """Take back an attempt recorded (or counted at the start) before: after an undo the
        counts are as if it had never been logged."""
        self._add(zone_of_attempt(attempt), -int(attempt.hit), -1)

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

    def band_words(self, band: str) -> str:
        """A zone's speed band as the player at this table reads it: its stroke name where the
        table's named stroke at the band's middle speed has that name (the default table),
        else its m/s range (on a dead table the zone filed as "fast" holds its medium)."""
        lo, hi = shots.SPEED_BANDS[band]
        if speed_name(math.sqrt(lo * hi), self.table) == band:
            return band
        first, *_, last = shots.SPEED_BANDS
        if band == first:
            return f"under {hi:.1f} m/s"
        if band == last:
            return f"over {lo:.1f} m/s"
        return f"{lo:.1f}-{hi:.1f} m/s"

    def _why(self, zone: Zone, st: ZoneStats, reason: str) -> str:
        lo, hi = self.band
        band = f"{lo * 100:.0f}-{hi * 100:.0f} %"
        where = f"{family_words(zone.family)} from {zone.short} at {self.band_words(zone.speed)}"
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
