"""Reading attempts in batches (Store.iter_attempts) and the newest few (latest_attempts):
the same attempts, in the same order, as the one-shot read Store.attempts."""

from __future__ import annotations

from dataclasses import replace
from datetime import UTC, datetime

import numpy as np
import pytest

from tablecoach.core import demo
from tablecoach.core.store import Store
from tablecoach.core.store.query import EVERYTHING, AttemptQuery

NOW = datetime(2026, 3, 2, 21, 0, tzinfo=UTC)


@pytest.fixture
def store(tmp_path):
    s = Store.open(tmp_path / "club.sqlite3")
    demo.write_club(s, demo.make_club(np.random.default_rng(9), NOW, weeks=2, tz=UTC))
    # attempts sharing one time: the paging must order them by id and lose none
    base = s.attempts()[5]
    s.import_attempts(
        [replace(base, id=None, session=None, note=f"same time {k}") for k in range(7)]
    )
    yield s
    s.close()


@pytest.mark.parametrize("batch", [1, 3, 7, 5000])
def test_batches_give_every_attempt_once_in_order(store, batch):
    whole = store.attempts()
    assert len(whole) > 50
    assert list(store.iter_attempts(EVERYTHING, batch=batch)) == whole


def test_batches_keep_the_query(store):
    first = store.attempts()[0]
    q = AttemptQuery(player=first.player, table=first.table)
    assert list(store.iter_attempts(q, batch=4)) == store.attempts(q)


def test_latest_landed_attempts_of_a_zone(store):
    whole = store.attempts()
    zone = whole[-1].zone
    want = [a for a in whole if a.zone == zone and a.landed][-5:]
    assert want
    assert store.latest_attempts(EVERYTHING, 5, zone=zone, landed=True) == want
    assert store.latest_attempts(EVERYTHING, 3) == whole[-3:]
