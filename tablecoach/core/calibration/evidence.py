"""Logged attempts as the evidence they are: a measured landing, or what a hit, a short or a
jaw says about the path (censored observations)."""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from .. import shots
from ..shots import RailPoint
from ..table import RAILS, TableSpec
from .params import preset_of

LANDING, HIT, SHORT, JAW = range(4)
KIND_NAMES = ("landing", "hit", "short", "jaw")
"""What an attempt says. LANDING: a miss whose landing the player logged (a measurement).
HIT: the path passed within the target's window (the pocket's acceptance, or a ball's width
for a target ball): whatever landing is stored with a hit is not used, because the app has
stored the model's own prediction there. SHORT: a miss that stopped before the landing rail.
JAW: a miss that reached the target pocket and stayed out."""


def logged_landing(table: TableSpec, attempt: Any) -> RailPoint | None:
    """The landing an attempt carries, in metres, or None (no landing, or not a usable one).

    Read defensively, so that records with ``landing: null`` (attempt format version 2) and
    records of today's shape both work."""
    rail = getattr(attempt, "landing_rail", None)
    at = getattr(attempt, "landing_at", None)
    if rail not in RAILS or at is None:
        return None
    try:
        at_f = float(at)
    except (TypeError, ValueError):
        return None
    if not math.isfinite(at_f):
        return None
    return RailPoint(rail, table.along_to_metres(rail, at_f))


def kind_of(attempt: Any, has_landing: bool) -> int | None:
    """The evidence kind of an attempt (LANDING, HIT, SHORT, JAW), or None when it says nothing
    the fit can use (a miss with neither a landing nor a kind)."""
    if getattr(attempt, "result", None) == "hit":
        return HIT
    kind = getattr(attempt, "miss_kind", None)
    if kind == "short":
        return SHORT
    if kind == "jaw":
        return JAW
    return LANDING if has_landing else None


def target_window(table: TableSpec, setup: shots.Setup) -> tuple[float, float]:
    """(hit, jaw) half-widths in metres of the target's window round the target point.

    A target ball is met when the centre passes within a ball's width (2 R) of its centre. A
    pocket accepts a centre line that clears both jaw points by a radius (table.Pocket), so
    its acceptance is half the mouth less a radius, and a ball reaches the jaws within half
    the mouth plus a radius (the mouth taken square to the path: a simplification)."""
    r = table.ball_radius
    if setup.pocket is None:
        return 2.0 * r, 2.0 * r
    p = table.pocket(setup.pocket)
    half = 0.5 * math.hypot(p.jaw_a[0] - p.jaw_b[0], p.jaw_a[1] - p.jaw_b[1])
    return max(half - r, 0.25 * r), half + r


@dataclass(frozen=True, slots=True)
class Evidence:
    """The usable attempts as arrays (row i is attempt ``source[i]`` of those given).

    ``reading`` metres along the first rail's sights (the aim used); ``logged`` the logged m/s;
    ``stroke`` the index into ``strokes`` ((player, named stroke) pairs) of each row;
    ``kind`` LANDING/HIT/SHORT/JAW; ``observed`` the logged landing as a position round the
    table (diamonds, shots.perimeter_position; nan without one); ``window`` and ``mouth`` the
    hit and jaw half-widths (metres); ``groups`` the rows of each family (one batch each)."""

    setups: tuple[shots.Setup, ...]
    reading: np.ndarray
    logged: np.ndarray
    english: np.ndarray
    follow: np.ndarray
    stroke: np.ndarray
    strokes: tuple[tuple[str, str], ...]
    kind: np.ndarray
    observed: np.ndarray
    landings: tuple[RailPoint | None, ...]
    window: np.ndarray
    mouth: np.ndarray
    family: tuple[str, ...]
    source: np.ndarray
    groups: tuple[np.ndarray, ...]
    given: int

    def __len__(self) -> int:
        return len(self.setups)

    def count(self, kind: int) -> int:
        return int(np.count_nonzero(self.kind == kind))

    @property
    def players(self) -> tuple[str, ...]:
        return tuple(sorted({p for p, _ in self.strokes}))


def gather(table: TableSpec, attempts: Sequence[Any]) -> Evidence:
    """The evidence of the attempts that can be used on ``table``: each must rebuild as a setup
    on this table with its aim on the family's first rail, and say something (a landing, a hit,
    a short or a jaw; a jaw only when the target is a pocket)."""
    setups: list[shots.Setup] = []
    cols: dict[str, list[float]] = {k: [] for k in ("rd", "sp", "en", "fo", "ob", "wi", "mo")}
    kinds: list[int] = []
    lands: list[RailPoint | None] = []
    fams: list[str] = []
    src: list[int] = []
    keys: list[tuple[str, str]] = []
    for k, a in enumerate(attempts):
        try:
            setup = shots.setup_of(table, a.shot)
            rail = setup.family.rails[0]
            if a.aim_rail != rail:
                continue
            reading = table.along_to_metres(rail, float(a.aim_used))
            speed = float(a.speed)
            land = logged_landing(table, a)
        except (ValueError, TypeError, AttributeError):
            continue
        kind = kind_of(a, land is not None)
        if kind is None or (kind == JAW and setup.pocket is None):
            continue
        if not (math.isfinite(reading) and math.isfinite(speed) and speed > 0.0):
            continue
        win, mouth = target_window(table, setup)
        setups.append(setup)
        cols["rd"].append(reading)
        cols["sp"].append(speed)
        cols["en"].append(float(a.english))
        cols["fo"].append(float(a.follow))
        use_land = land if kind == LANDING else None
        cols["ob"].append(
            shots.perimeter_position(table, use_land) if use_land is not None else math.nan
        )
        cols["wi"].append(win)
        cols["mo"].append(mouth)
        kinds.append(kind)
        lands.append(use_land)
        fams.append(a.shot.family or "custom")
        src.append(k)
        keys.append((str(a.player), preset_of(speed)))
    order = list(dict.fromkeys(sorted(set(keys), key=_stroke_order)))
    index = {key: i for i, key in enumerate(order)}
    by_family: dict[tuple[str, tuple[str, ...]], list[int]] = {}
    for i, s in enumerate(setups):
        by_family.setdefault((s.family.travel, s.family.rails), []).append(i)
    return Evidence(
        tuple(setups),
        np.array(cols["rd"], dtype=float),
        np.array(cols["sp"], dtype=float),
        np.array(cols["en"], dtype=float),
        np.array(cols["fo"], dtype=float),
        np.array([index[key] for key in keys], dtype=np.int64),
        tuple(order),
        np.array(kinds, dtype=np.int64),
        np.array(cols["ob"], dtype=float),
        tuple(lands),
        np.array(cols["wi"], dtype=float),
        np.array(cols["mo"], dtype=float),
        tuple(fams),
        np.array(src, dtype=np.int64),
        tuple(np.array(v, dtype=np.int64) for v in by_family.values()),
        len(attempts),
    )


def _stroke_order(key: tuple[str, str]) -> tuple[str, int]:
    return key[0], list(shots.SPEED_PRESETS).index(key[1])


def subset(ev: Evidence, rows: np.ndarray) -> Evidence:
    """The evidence of some of its rows (``rows`` sorted, indices into ``ev``): the same
    strokes (so stroke indices keep their meaning), the families regrouped."""
    rows = np.asarray(rows, dtype=np.int64)
    keep = set(rows.tolist())
    where = {int(i): k for k, i in enumerate(rows)}
    groups = tuple(
        np.array([where[int(i)] for i in g if int(i) in keep], dtype=np.int64) for g in ev.groups
    )
    return Evidence(
        tuple(ev.setups[int(i)] for i in rows),
        ev.reading[rows],
        ev.logged[rows],
        ev.english[rows],
        ev.follow[rows],
        ev.stroke[rows],
        ev.strokes,
        ev.kind[rows],
        ev.observed[rows],
        tuple(ev.landings[int(i)] for i in rows),
        ev.window[rows],
        ev.mouth[rows],
        tuple(ev.family[int(i)] for i in rows),
        ev.source[rows],
        tuple(g for g in groups if g.size),
        ev.given,
    )


def sample_rows(ev: Evidence, most: int, rng: np.random.Generator) -> np.ndarray:
    """At most about ``most`` rows, sorted, drawn without replacement within each (family,
    stroke, kind) stratum in proportion to its size, at least one from each (so every
    player's every named stroke and every family keeps its evidence)."""
    n = len(ev)
    if n <= most:
        return np.arange(n, dtype=np.int64)
    keys: dict[tuple[str, int, int], list[int]] = {}
    for i in range(n):
        keys.setdefault((ev.family[i], int(ev.stroke[i]), int(ev.kind[i])), []).append(i)
    share = most / n
    out: list[int] = []
    for members in keys.values():
        take = max(1, round(len(members) * share))
        out.extend(rng.choice(members, size=min(take, len(members)), replace=False).tolist())
    return np.array(sorted(out), dtype=np.int64)
