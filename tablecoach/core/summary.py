"""A practice session summed up by family: made, tried, rate, best streak and landing bias."""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass

import numpy as np

from . import shots
from .records import Attempt
from .stats.bias import landing_offsets
from .table import TableSpec


@dataclass(frozen=True, slots=True)
class FamilyLine:
    """One family's shots in a session. ``bias`` is the mean landing offset in diamonds round
    the table (+ long) against the mirror landing of the aim used, over the ``bias_n`` observed
    landings (stats.bias.landing_offsets); None when there is none."""

    family: str
    title: str
    made: int
    tried: int
    best: int
    bias: float | None
    bias_n: int

    @property
    def rate(self) -> float:
        return self.made / self.tried if self.tried else 0.0


def family_title(name: str) -> str:
    """A family's name as players read it ("Cross-corner bank"), its own name if custom."""
    fam = shots.PRESETS.get(name)
    return fam.title if fam is not None and fam.title else (name or "custom")


def by_family(
    attempts: Sequence[Attempt], table_of: Callable[[str], TableSpec | None] | None = None
) -> list[FamilyLine]:
    """The session's attempts (in logged order) summed up by family, most tried first."""
    offsets = landing_offsets(attempts, table_of) if attempts else np.array([])
    groups: dict[str, list[int]] = {}
    for i, a in enumerate(attempts):
        groups.setdefault(a.shot.family or "custom", []).append(i)
    out = []
    for fam, idx in groups.items():
        made = run = best = 0
        for i in idx:
            if attempts[i].hit:
                made += 1
                run += 1
                best = max(best, run)
            else:
                run = 0
        seen = offsets[idx] if len(offsets) else np.array([])
        seen = seen[~np.isnan(seen)]
        bias = float(seen.mean()) if len(seen) else None
        out.append(FamilyLine(fam, family_title(fam), made, len(idx), best, bias, len(seen)))
    out.sort(key=lambda f: (-f.tried, f.title))
    return out


__all__ = ["FamilyLine", "by_family", "family_title"]
