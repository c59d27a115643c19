"""The zone counts the store keeps by triggers (schema version 5, store/counts.py), checked
against counting the attempts one at a time in Python (collections.Counter, standard library,
over coach.zone_of_attempt) and against SQLite's own aggregate of the attempts table, after
random logs, undos, imports, restores, changed rows and a migration from version 4."""

from __future__ import annotations

import io
import math
import sqlite3
from collections import Counter
from dataclasses import replace
from datetime import UTC, datetime, timedelta
from pathlib import Path

import numpy as np
import pytest

from tablecoach.core import backup, shots
from tablecoach.core.coach import Zone, zone_counts, zone_of_attempt
from tablecoach.core.records import Attempt, ShotRecord
from tablecoach.core.store import Store, counts
from tablecoach.core.store.query import EVERYTHING, AttemptQuery
from tablecoach.core.store.schema import SCHEMA_VERSION

T0 = datetime(2026, 5, 1, 19, 0, tzinfo=UTC)
PLAYERS = ("ann", "bo", "cy")
TABLES = ("9ft", "8ft")
FAMILIES = ("cross-corner-bank", "two-rail-kick", "")


def random_attempt(rng: np.random.Generator, k: int) -> Attempt:
    """An invented attempt (test data only) anywhere on the table, at any speed, with starts
    and speeds on the cell and band edges now and then."""
    bank = bool(rng.integers(2))
    edges = [lo for lo, _ in shots.SPEED_BANDS.values()]
    speed = float(rng.choice(edges)) if rng.random() < 0.2 else float(rng.uniform(0.05, 6.0))
    cell = rng.random() < 0.2
    x = float(rng.integers(0, 5) * 2.0) if cell else float(rng.uniform(0.0, 8.0))
    y = float(rng.integers(0, 5) * 1.0) if cell else float(rng.uniform(0.0, 4.0))
    family = str(rng.choice(FAMILIES))
    shot = (
        ShotRecord("object", ("right",), (1.0, 1.0), (x, y), "foot-left", None, family)
        if bank
        else ShotRecord("cue", ("right", "foot"), (x, y), None, None, (6.0, 3.0), family)
    )
    return Attempt(
        when=T0 + timedelta(seconds=k),
        player=str(rng.choice(PLAYERS)),
        table=str(rng.choice(TABLES)),
        shot=shot,
        speed=speed,
        english=0.0,
        follow=0.0,
        aim_rail="right",
        aim_given=3.0,
        aim_used=3.0,
        result="hit" if rng.random() < 0.6 else "miss",
        landing_rail="foot",
        landing_at=2.0,
        note=f"n{k}",
    )


def by_hand(attempts: list[Attempt]) -> dict[Zone, tuple[int, int]]:
    tried = Counter(zone_of_attempt(a) for a in attempts)
    made = Counter(zone_of_attempt(a) for a in attempts if a.hit)
    return {z: (made[z], n) for z, n in tried.items()}


def aggregated(store: Store, query: AttemptQuery) -> list[tuple[str, int, int, str, int, int]]:
    """SQLite's GROUP BY over the attempts (Attempts.cell_counts) for the same cells/bands."""
    return sorted(
        store.cell_counts(
            query, counts.GRID, shots.SPEED_BANDS, below=counts.BELOW, above=counts.ABOVE
        )
    )


def assert_kept_right(store: Store) -> None:
    """The kept counts for every player and table (and all together) equal the aggregate
    over the attempts and the count by hand."""
    everything = store.attempts()
    assert sorted(store.kept_cell_counts()) == aggregated(store, EVERYTHING)
    assert zone_counts(store, EVERYTHING) == by_hand(everything)
    for p in PLAYERS:
        for t in TABLES:
            q = AttemptQuery(player=p, table=t)
            assert sorted(store.kept_cell_counts(p, t)) == aggregated(store, q)
            mine = [a for a in everything if a.player == p and a.table == t]
            assert zone_counts(store, q) == by_hand(mine)


@pytest.mark.parametrize("bulk_from", [counts.BULK_FROM, 1])
def test_kept_counts_follow_random_logs_undos_and_imports(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, bulk_from: int
) -> None:
    # bulk_from 1: every write of several attempts counts them in one pass (counts.in_bulk)
    monkeypatch.setattr(counts, "BULK_FROM", bulk_from)
    rng = np.random.default_rng(20261202)
    with Store.open(tmp_path / "s.sqlite3") as store:
        sessions = [store.start_session(p, "9ft", "mixed") for p in PLAYERS]
        k = 0
        for _round in range(6):
            for _ in range(int(rng.integers(20, 60))):
                a = random_attempt(rng, k)
                k += 1
                sid = sessions[int(rng.integers(len(sessions)))]
                store.log(replace(a, session=sid))
            for _ in range(int(rng.integers(0, 15))):
                store.undo_last(sessions[int(rng.integers(len(sessions)))])
            batch = [random_attempt(rng, k + j) for j in range(int(rng.integers(10, 40)))]
            k += len(batch)
            store.import_attempts(batch + batch[:3])  # the repeats are skipped, not counted
            many = [random_attempt(rng, k + j) for j in range(int(rng.integers(1, 8)))]
            k += len(many)
            store.log_many([replace(a, session=sessions[0]) for a in many])
            assert_kept_right(store)
        assert store.count_attempts() > 200


def test_big_writes_count_in_one_pass_and_a_failed_one_counts_nothing(tmp_path: Path) -> None:
    # an import, a batch and a restore of more than counts.BULK_FROM attempts are counted
    # by one GROUP BY instead of the trigger; a batch that fails half-way (a session that does
    # not exist) is rolled back whole, its counts and the taken-out trigger with it
    rng = np.random.default_rng(3)
    n = counts.BULK_FROM + 50
    with Store.open(tmp_path / "a.sqlite3") as store:
        store.import_attempts([random_attempt(rng, k) for k in range(n)])
        store.log_many([random_attempt(rng, n + k) for k in range(n)])
        assert_kept_right(store)
        before = sorted(store.kept_cell_counts())
        bad = [random_attempt(rng, 2 * n + k) for k in range(n)]
        bad[-1] = replace(bad[-1], session=999)
        with pytest.raises(ValueError, match="no session 999"):
            store.log_many(bad)
        assert sorted(store.kept_cell_counts()) == before
        with store.reading() as c:
            assert counts.is_current(c)
        store.log(random_attempt(rng, 3 * n))  # the trigger is there: one row, counted
        assert_kept_right(store)
        text = io.StringIO()
        backup.write_backup(store, text, None)
        want = sorted(store.kept_cell_counts())
    with Store.open(tmp_path / "b.sqlite3") as fresh:
        backup.restore(fresh, iter(text.getvalue().splitlines()), "backup", None)
        assert sorted(fresh.kept_cell_counts()) == want
        assert_kept_right(fresh)


def test_counts_follow_changed_rows_and_skip_times_out_of_span(tmp_path: Path) -> None:
    # rows changed or added with plain SQL (another program, an older tablecoach) move their
    # counts too; a time outside the years every reader can place is left out, as reads do
    rng = np.random.default_rng(5)
    db = tmp_path / "s.sqlite3"
    with Store.open(db) as store:
        store.log_many([random_attempt(rng, k) for k in range(120)])
    c = sqlite3.connect(db)
    c.execute("UPDATE attempts SET speed = speed * 2.5, cue_x = 7.9 WHERE id % 3 = 0")
    c.execute("UPDATE attempts SET result = 'miss', player = 'cy' WHERE id % 5 = 0")
    c.execute("UPDATE attempts SET at = '1850-01-01T00:00:00.000000+00:00' WHERE id % 7 = 0")
    c.execute("DELETE FROM attempts WHERE id % 11 = 0")
    c.commit()
    stored = c.execute("SELECT COUNT(*) FROM attempts").fetchone()[0]
    c.close()
    with Store.open(db) as store:
        assert 0 < store.count_attempts() < stored  # some stored rows lie out of span
        assert_kept_right(store)


def test_restore_and_migration_from_version_4_count_everything(tmp_path: Path) -> None:
    rng = np.random.default_rng(9)
    db = tmp_path / "old" / "s.sqlite3"
    with Store.open(db) as store:
        sid = store.start_session("ann", "9ft", "mixed")
        store.log_many([replace(random_attempt(rng, k), session=sid) for k in range(300)])
        store.undo_last(sid)
        want = sorted(store.kept_cell_counts())
        text = io.StringIO()
        backup.write_backup(store, text, None)
    # restored into a new store: the triggers count the rows as the restore inserts them
    with Store.open(tmp_path / "new" / "s.sqlite3") as fresh:
        backup.restore(fresh, iter(text.getvalue().splitlines()), "backup", None)
        assert sorted(fresh.kept_cell_counts()) == want
        assert_kept_right(fresh)
    # the same file stepped back to version 4 (sqlite3 directly): opening migrates it, and
    # the migration counts every attempt in one pass
    c = sqlite3.connect(db)
    for name in counts.TRIGGERS:
        c.execute(f"DROP TRIGGER {name}")
    c.execute("DROP TABLE zone_counts")
    c.execute("DROP INDEX attempts_zone_landed")
    c.execute("DROP INDEX attempts_landed")
    c.execute("PRAGMA user_version = 4")
    c.commit()
    c.close()
    with Store.open(db) as store:
        assert store.schema_version() == SCHEMA_VERSION == 5
        assert sorted(store.kept_cell_counts()) == want
        assert_kept_right(store)


def test_counts_are_made_again_when_the_cells_or_bands_change(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    # a tablecoach whose bands differ finds the file's triggers are not its own and counts
    # everything again by its own bands, once, before the first read
    rng = np.random.default_rng(11)
    db = tmp_path / "s.sqlite3"
    with Store.open(db) as store:
        store.log_many([random_attempt(rng, k) for k in range(150)])
    halved = {n: (lo / 2, hi / 2) for n, (lo, hi) in shots.SPEED_BANDS.items()}
    monkeypatch.setattr(shots, "SPEED_BANDS", halved)
    with Store.open(db) as store:
        got = sorted(store.kept_cell_counts())
        assert got == aggregated(store, EVERYTHING)
        c = sqlite3.connect(db)
        assert counts.is_current(c)
        c.close()


def test_band_edges_written_into_the_triggers_are_the_same_doubles() -> None:
    # SQLite reads each literal back as the very double (IEEE 754 binary64) it was written
    # from, so a speed on a band's edge falls in the same band as ``zone_of`` puts it
    c = sqlite3.connect(":memory:")
    for lo, hi in shots.SPEED_BANDS.values():
        for v in (lo, hi, math.nextafter(lo, 0.0), math.nextafter(hi, 99.0)):
            lit = counts._literal(v)
            assert c.execute(f"SELECT {lit} = ?", (v,)).fetchone()[0] == 1, lit
    c.close()


@pytest.mark.parametrize("n", [40, counts.BULK_FROM + 30])
def test_a_file_import_through_the_scratch_database_keeps_the_counts(
    tmp_path: Path, n: int
) -> None:
    # tablecoach import moves a file's attempts in through store.importing.Staging: small
    # imports are counted by the trigger row by row, big ones in one pass (counts.in_bulk);
    # either way the kept counts equal SQLite's aggregate and the count by hand, and attempts
    # the store already holds are skipped and not counted again
    from tablecoach.core.store.importing import Staging

    rng = np.random.default_rng(n)
    items = [random_attempt(rng, k) for k in range(n)]
    with Store.open(tmp_path / "s.sqlite3") as store:
        store.import_attempts(items[:10])
        with Staging(str(tmp_path)) as staged:
            staged.add(items)
            added, skipped = staged.move_into(store)
        assert (added, skipped) == (n - 10, 10)
        assert store.count_attempts() == n
        assert_kept_right(store)
        with store.reading() as c:
            assert counts.is_current(c)
