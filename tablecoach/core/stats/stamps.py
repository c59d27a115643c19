"""Stored times (fixed-width ISO-8601 UTC text) read as numpy datetime64 without a datetime each."""

from __future__ import annotations

from collections.abc import Sequence
from datetime import UTC, datetime, timedelta

import numpy as np

EPOCH_DAY = datetime(1970, 1, 1).toordinal()
ISO_LEN = 32
"""Characters in a stored time, e.g. 2026-11-30T21:00:00.000000+00:00 (store.rows.iso_utc)."""


def parse_times(texts: Sequence[str]) -> np.ndarray:
    """Stored times (``iso_utc`` text) as datetime64[us], without a datetime per row.

    The fixed-width text is read as bytes and its digits combined with numpy; each distinct
    calendar day is turned into a day number once (``date.toordinal``). Any text not in the
    exact ``iso_utc`` form is parsed the slow way (``datetime.fromisoformat``) instead.
    """
    n = len(texts)
    if n == 0:
        return np.zeros(0, "datetime64[us]")
    us = parse_joined("".join(texts), n)
    if us is not None:
        return us.astype("datetime64[us]")
    one = timedelta(microseconds=1)
    epoch = datetime(1970, 1, 1, tzinfo=UTC)
    slow = [(datetime.fromisoformat(t).astimezone(UTC) - epoch) // one for t in texts]
    return np.array(slow, np.int64).astype("datetime64[us]")


def parse_joined(joined: str, n: int) -> np.ndarray | None:
    """``n`` stored times written one after another (``iso_utc`` text, ISO_LEN characters each)
    as microseconds since 1970 (int64), or None when the text is not exactly that."""
    if n == 0:
        return np.zeros(0, np.int64)
    if len(joined) != ISO_LEN * n or not joined.isascii():
        return None
    return parse_rows(np.frombuffer(joined.encode("ascii"), np.uint8).reshape(n, ISO_LEN))


def parse_rows(raw: np.ndarray) -> np.ndarray | None:
    """Stored times as the rows of an (n, ISO_LEN) uint8 array of their ASCII text (any
    strides) as microseconds since 1970 (int64), or None when some row is not exactly that."""
    n = len(raw)
    if n == 0:
        return np.zeros(0, np.int64)
    if not iso_form_ok(raw):
        return None

    def num(a: int, b: int) -> np.ndarray:
        v = np.zeros(n, np.int64)
        for k in range(a, b):
            v = v * 10 + (raw[:, k] - ord("0"))
        return v

    ymd = num(0, 4) * 10000 + num(5, 7) * 100 + num(8, 10)
    days, inv = np.unique(ymd, return_inverse=True)
    try:
        ordinals = np.array(
            [datetime(y // 10000, y // 100 % 100, y % 100).toordinal() for y in days.tolist()],
            np.int64,
        )
    except ValueError:
        return None
    hh, mm, ss = num(11, 13), num(14, 16), num(17, 19)
    if not ((hh < 24).all() and (mm < 60).all() and (ss < 60).all()):
        return None
    secs = (ordinals[inv.reshape(-1)] - EPOCH_DAY) * 86400 + hh * 3600 + mm * 60 + ss
    us: np.ndarray = secs * 1_000_000 + num(20, 26)
    return us


def iso_form_ok(raw: np.ndarray) -> bool:
    """Every row is ``DDDD-DD-DDTDD:DD:DD.DDDDDD+00:00`` (D a digit)."""
    pattern = b"0000-00-00T00:00:00.000000+00:00"
    digit = np.frombuffer(pattern, np.uint8) == ord("0")
    digit[-5:] = False  # the +00:00 suffix is matched exactly below
    fixed = np.frombuffer(pattern, np.uint8)
    cells = raw[:, digit]
    if not ((cells >= ord("0")) & (cells <= ord("9"))).all():
        return False
    return bool((raw[:, ~digit] == fixed[~digit]).all())
