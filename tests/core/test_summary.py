"""The session summary by family."""

from __future__ import annotations

from dataclasses import replace

import pytest

from tablecoach.core.summary import by_family, family_title

from .test_feedback import kick_attempt
from .test_store import make_attempt


def test_by_family_counts_streaks_and_bias() -> None:
    # a one-rail kick logged hit, hit, miss (0.3 long by the law of reflection), hit, and two
    # banks: a hit and a short miss with no landing
    k = kick_attempt(0.3)
    hit = replace(k, result="hit", landing_rail=None, landing_at=None, miss_kind=None)
    bank = make_attempt(1, landing_rail=None, landing_at=None)  # a cross-corner bank, hit
    short = replace(bank, result="miss", landing_rail=None, landing_at=None, miss_kind="short")
    lines = by_family([hit, hit, k, hit, bank, short])
    kick, banks = lines
    assert (kick.title, kick.made, kick.tried, kick.best) == ("One-rail kick", 3, 4, 2)
    assert kick.rate == 0.75
    assert kick.bias_n == 1 and kick.bias == pytest.approx(0.3, abs=1e-6)
    assert (banks.title, banks.made, banks.tried, banks.best) == ("Cross-corner bank", 1, 2, 1)
    assert banks.bias_n == 0 and banks.bias is None
    assert by_family([]) == []
    assert family_title("my-own") == "my-own"
