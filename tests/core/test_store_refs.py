"""Reference lines in the store: the version 3 -> 4 migration and the repository."""

from __future__ import annotations

import sqlite3
from dataclasses import replace
from pathlib import Path

import pytest

from tablecoach.core.store import Store
from tablecoach.core.store.errors import StoreError
from tablecoach.core.store.refs import Reference
from tablecoach.core.store.schema import SCHEMA_VERSION

from .test_store import make_attempt

REF = Reference(
    player="dee",
    table="9ft",
    family="cross-corner-bank",
    travel="object",
    rails=("right",),
    start=(4.0, 2.0),
    reading=5.5,
    speed=2.39,
    pocket="foot-left",
)


def _as_version_3(db: Path) -> None:
    """A version 3 file: version 4 differs only by the refs table and version 5 by the kept
    zone counts (their table, triggers and the landings index), so drop those and step the
    version back (sqlite3 directly, not the code under test)."""
    c = sqlite3.connect(db)
    c.execute("DROP TABLE refs")
    for trigger in ("zone_counts_add", "zone_counts_remove", "zone_counts_change"):
        c.execute(f"DROP TRIGGER {trigger}")
    c.execute("DROP TABLE zone_counts")
    c.execute("DROP INDEX attempts_zone_landed")
    c.execute("DROP INDEX attempts_landed")
    c.execute("PRAGMA user_version = 3")
    c.commit()
    c.close()


def test_migrates_version_3_and_keeps_every_attempt(tmp_path: Path) -> None:
    db = tmp_path / "d" / "tablecoach.sqlite3"
    with Store.open(db) as s:
        s.log(make_attempt(0))
        s.log(make_attempt(1))
        before = s.attempts()
    _as_version_3(db)
    c = sqlite3.connect(db)
    assert c.execute("PRAGMA user_version").fetchone()[0] == 3
    assert "refs" not in {r[0] for r in c.execute("SELECT name FROM sqlite_master")}
    c.close()
    with Store.open(db) as s:
        assert s.schema_version() == SCHEMA_VERSION == 5
        assert s.attempts() == before
        assert s.references() == []
        ref_id = s.add_reference(REF)
        (got,) = s.references("dee", "9ft")
    assert got == replace(REF, id=ref_id, when=got.when) and got.when
    c = sqlite3.connect(db)
    assert c.execute("PRAGMA integrity_check").fetchone()[0] == "ok"
    assert "refs_key" in {r[0] for r in c.execute("SELECT name FROM sqlite_master")}
    c.close()


def test_the_newest_line_of_a_family_shape_is_found_and_removed(tmp_path: Path) -> None:
    with Store.open(tmp_path / "s.sqlite3") as s:
        first = s.add_reference(REF)
        second = s.add_reference(replace(REF, reading=5.25, note="from my logged hits"))
        s.add_reference(replace(REF, player="eve", reading=6.0))
        found = s.reference_for("dee", "9ft", "object", ("right",), "foot-left")
        assert found is not None and found.id == second and found.reading == 5.25
        assert s.reference_for("dee", "8ft", "object", ("right",), "foot-left") is None
        assert s.reference_for("dee", "9ft", "cue", ("right",), None) is None
        assert s.remove_reference(second) and not s.remove_reference(second)
        again = s.reference_for("dee", "9ft", "object", ("right",), "foot-left")
        assert again is not None and again.id == first
        assert [r.player for r in s.references(family="cross-corner-bank")] == ["dee", "eve"]


@pytest.mark.parametrize(
    "bad",
    [
        {"reading": float("nan")},
        {"start": (4.0, float("inf"))},
        {"travel": "both"},
        {"player": ""},
        {"english": 3.0},
    ],
)
def test_a_bad_line_is_refused_in_one_line(tmp_path: Path, bad: dict[str, object]) -> None:
    with Store.open(tmp_path / "s.sqlite3") as s:
        with pytest.raises(StoreError) as err:
            s.add_reference(replace(REF, **bad))  # type: ignore[arg-type]
        assert "\n" not in str(err.value)
        assert s.references() == []


def test_the_same_line_kept_twice_is_kept_once(tmp_path: Path) -> None:
    # Seen in a terminal: `k` pressed twice after one hit kept two identical lines. The same
    # line (player, table, family, start, reading, stroke) is one reference; another reading
    # is another one.
    with Store.open(tmp_path / "tablecoach.sqlite3") as s:
        first = s.add_reference(REF)
        again = s.add_reference(REF)
        other = s.add_reference(replace(REF, reading=REF.reading + 0.25))
        assert again == first and other != first
        assert len(s.references()) == 2


def test_of_several_lines_the_one_played_most_like_the_stroke_is_picked(tmp_path: Path) -> None:
    # nearest speed by ratio first (in 5 % steps: speeds a step apart count as the same
    # stroke; common practice, no source), then nearest spin, then the newest
    from tablecoach.core.store.refs import closest_stroke

    with Store.open(tmp_path / "s.sqlite3") as s:
        slow = s.add_reference(replace(REF, speed=1.2, reading=5.0))
        medium = s.add_reference(replace(REF, speed=2.4, reading=5.25))
        medium_spin = s.add_reference(replace(REF, speed=2.41, reading=5.5, english=0.5))
        refs = s.references_for("dee", "9ft", "object", ("right",), "foot-left")
    assert [r.id for r in refs] == [medium_spin, medium, slow]  # newest first

    def pick(speed: float, english: float = 0.0) -> int | None:
        found = closest_stroke(refs, speed, english)
        return None if found is None else found.id

    assert pick(1.1) == slow and pick(1.6) == slow  # 1.6/1.2 is nearer than 2.4/1.6
    assert pick(2.4) == medium  # same speed, no spin: the centre-ball line
    assert pick(2.4, english=0.5) == medium_spin
    assert pick(2.45, english=0.25) == medium_spin  # equal spin gaps: the newest
    assert pick(4.0) == medium  # 2.4 and 2.41 a step from 4.0 alike: spin decides
    assert closest_stroke([], 2.0) is None
