"""A table's pockets and cushion stretches as numpy arrays, cached per table object."""

from __future__ import annotations

import numpy as np

from ..table import POCKETS, RAILS, TableSpec


def pocket_arrays(table: TableSpec) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Jaw points a and b and aim points of the pockets (POCKETS order), and which pockets
    open on each rail ((4, 6), RAILS order)."""
    ps = table.pockets()
    ja = np.array([ps[n].jaw_a for n in POCKETS])
    jb = np.array([ps[n].jaw_b for n in POCKETS])
    aim = np.array([ps[n].aim for n in POCKETS])
    member = np.array([[r in ps[n].rails for n in POCKETS] for r in RAILS])  # (4, 6)
    return ja, jb, aim, member


def segment_table(table: TableSpec) -> tuple[np.ndarray, np.ndarray]:
    """Cushion stretches of each rail as (4, 2) arrays of starts and ends (nan-padded)."""
    lo = np.full((4, 2), np.nan)
    hi = np.full((4, 2), np.nan)
    for code, name in enumerate(RAILS):
        for j, (a, b) in enumerate(table.cushion_segments(name)):
            lo[code, j], hi[code, j] = a, b
    return lo, hi


TableArrays = tuple[
    tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray], tuple[np.ndarray, np.ndarray]
]
_CACHE: list[tuple[TableSpec, TableArrays]] = []
"""Per-table constants of the last few tables, keyed by identity (hashing a spec is slow)."""
_CACHE_SIZE = 8


def table_arrays(table: TableSpec) -> TableArrays:
    """Pocket arrays and cushion stretches of a table, computed once per table object."""
    for t, val in _CACHE:
        if t is table:
            return val
    val = (pocket_arrays(table), segment_table(table))
    _CACHE.insert(0, (table, val))
    del _CACHE[_CACHE_SIZE:]
    return val


def on_cushion(
    seg: tuple[np.ndarray, np.ndarray], rail: np.ndarray, along: np.ndarray
) -> np.ndarray:
    """Whether each crossing (rail code, along-rail metres) meets cushion rather than a mouth."""
    lo, hi = seg
    al = along[:, None]
    out: np.ndarray = np.any((al >= lo[rail]) & (al <= hi[rail]), axis=1)
    return out
