"""An import record straight to its attempts row (store/import_rows.py) against the long way
(attempt_json.attempt_from_json, then rows.to_row and the identity of the Attempt).

The reference for the identity is Python's own json.dumps and hashlib.sha256 over the record's
content laid flat (the store's definition before the row path existed): the hash an existing
store holds for every imported attempt must come out the same, byte for byte.
"""

from __future__ import annotations

import copy
import hashlib
import json
import os
from pathlib import Path
from typing import Any

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from tablecoach.core.attempt_json import attempt_from_json, attempt_to_json
from tablecoach.core.records import RecordError, flatten
from tablecoach.core.store import Store
from tablecoach.core.store.import_rows import checked_row, fast_row, slow_row
from tablecoach.core.store.importing import Staging
from tablecoach.core.store.rows import (
    attempt_identity,
    check_attempt,
    from_row,
    iso_utc,
    row_identity,
    to_row,
)

from .test_formats import random_attempts
from .test_store import make_attempt


def _reference_identity(a: Any) -> str:
    """The identity as the store first defined it: json.dumps (Python's json module) of the
    flat content, hashed by hashlib.sha256."""
    f = flatten(a)
    content = [iso_utc(f[0]), *f[1:4], list(f[4]), *f[5:]]
    text = json.dumps(content, separators=(",", ":"), ensure_ascii=False)
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


def _obj(a: Any) -> Any:
    """An attempt as a line of a file would give it back (through Python's json module)."""
    return json.loads(json.dumps(attempt_to_json(a), ensure_ascii=False))


def _outcome(obj: Any, fn: Any) -> tuple[str, Any]:
    try:
        return ("row", fn(obj, 7))
    except RecordError as exc:
        return ("bad", str(exc))


def _agrees(obj: Any) -> tuple[str, Any]:
    """The row path and the long way give the same row, or the same one-line error; a row
    the fast path lays out passes the store's own write check again."""
    fast = fast_row(copy.deepcopy(obj))
    slow = _outcome(copy.deepcopy(obj), slow_row)
    if fast is not None:
        assert slow == ("row", fast)
    got = _outcome(copy.deepcopy(obj), checked_row)
    assert got == slow
    if got[0] == "row":
        row = got[1]
        a = check_attempt(from_row((*row[:-1], None)))  # the write check Staging trusts
        assert row[-1] == _reference_identity(a)
    return got


def test_identity_is_the_same_bytes_hashed() -> None:
    for a in [*random_attempts(120, seed=5), *(make_attempt(i) for i in range(20))]:
        ref = _reference_identity(a)
        assert attempt_identity(a) == ref
        assert row_identity(to_row(a)) == ref


def test_random_records_take_the_fast_path_and_give_the_attempt_path_row() -> None:
    attempts = [*random_attempts(300, seed=11), *(make_attempt(i) for i in range(30))]
    fast = 0
    for a in attempts:
        obj = _obj(a)
        row = fast_row(obj)
        slow = slow_row(obj, 1)
        assert slow == (*to_row(a)[:-1], attempt_identity(a))
        if row is not None:
            fast += 1
            assert row == slow
            # bit for bit: the floats are the same doubles, not merely equal
            assert [v.hex() for v in row if isinstance(v, float)] == [
                v.hex() for v in slow if isinstance(v, float)
            ]
        elif a.note.isprintable() and a.player == a.player.strip():
            pytest.fail(f"a plain record went the long way: {obj}")
    assert fast > len(attempts) // 2


def _good_v2() -> dict[str, Any]:
    obj: dict[str, Any] = _obj(make_attempt(1))
    return obj


def _set(path: str, value: Any) -> Any:
    def change(obj: dict[str, Any]) -> None:
        *parents, last = path.split(".")
        node = obj
        for key in parents:
            node = node[key]
        if value is KeyError:
            node.pop(last, None)
        else:
            node[last] = value

    return change


EDGES = [
    ("english", 0), ("speed", 2), ("speed", True), ("speed", 0.0), ("speed", 13.0),
    ("speed", 13.000000000000002), ("speed", -0.0), ("english", 1.5), ("english", -1.5000001),
    ("follow", 10**400), ("follow", 1e308), ("english", KeyError), ("follow", KeyError),
    ("note", KeyError), ("model", KeyError), ("drill", KeyError), ("zone", KeyError),
    ("shot.family", KeyError), ("shot.family", None), ("note", "two\nlines"),
    ("note", "tab\there"), ("note", "bell\x07"), ("note", "x" * 2000), ("note", "x" * 2001),
    ("player", " ann "), ("player", ""), ("player", "p" * 40), ("player", "p" * 41),
    ("table", "9ft\x00"), ("player", 7), ("when", "2026-03-14T18:30:00+00:00"),
    ("when", "2026-03-14T18:30:00+02:00"), ("when", "2026-03-14T18:30:00Z"),
    ("when", "2026-03-14T18:30:00"), ("when", "1899-12-31T23:59:59Z"),
    ("when", "1900-01-01T00:30:00+01:00"), ("when", "2200-12-31T23:59:59Z"),
    ("when", "2201-01-01T00:00:00Z"), ("when", "2026-02-30T00:00:00Z"), ("when", 5),
    ("v", 1), ("v", 3), ("v", True), ("v", "2"), ("extra", 1), ("shot.extra", 1),
    ("aim.extra", 1), ("shot.rails", []), ("shot.rails", ["rightish"]),
    ("shot.rails", ["right", "foot", "left"]), ("shot.rails", "right"),
    ("shot.target", {"pocket": "foot-left", "ball": [1.0, 1.0]}),
    ("shot.target", {"ball": [1.0, 1.0]}), ("shot.target", {"ball": [8.5, 1.0]}),
    ("shot.target", {"pocket": None}), ("shot.target", {"pocket": "middle"}),
    ("shot.target", {}), ("shot.travel", "cue"), ("shot.travel", "both"),
    ("shot.object", None), ("shot.object", KeyError), ("shot.object", [8.0, 4.0]),
    ("shot.object", [8.0, 4.0000001]), ("shot.cue", [1, 2]), ("shot.cue", [1.0]),
    ("shot.cue", [float("nan"), 1.0]), ("aim.rail", "head"), ("aim.given", 4.0),
    ("aim.given", 8.0), ("aim.rail", "middle"), ("aim.used", -0.1), ("result", "miss"),
    ("result", "win"), ("landing", None), ("landing", {"rail": "foot"}),
    ("landing", {"rail": "foot", "at": 4.5}), ("landing", {"rail": "left", "at": 7.5}),
    ("landing", {"rail": "foot", "at": 1.0, "seen": True}), ("landing", []),
    ("landing", KeyError), ("miss_kind", "landed"), ("miss_kind", "short"), ("miss_kind", 3),
    ("miss_kind", None),
]  # fmt: skip


@pytest.mark.parametrize(("path", "value"), EDGES)
def test_edge_records_agree_with_the_attempt_path(path: str, value: Any) -> None:
    for result in ("hit", "miss"):
        obj = _good_v2()
        obj["result"] = result
        if result == "miss":
            obj["miss_kind"] = "landed"
        _set(path, value)(obj)
        _agrees(obj)


def test_misses_of_every_kind_agree() -> None:
    for kind in ("landed", "short", "jaw", None, "other"):
        for landing in (None, {"rail": "foot", "at": 1.0}):
            obj = _good_v2()
            obj["result"] = "miss"
            obj["landing"] = landing
            if kind is None:
                obj.pop("miss_kind", None)
            else:
                obj["miss_kind"] = kind
            _agrees(obj)


def test_a_version_1_record_still_reads() -> None:
    obj = _good_v2()
    obj["v"] = 1
    obj.pop("miss_kind", None)
    got = _agrees(obj)
    assert got[0] == "row" and fast_row(obj) is None  # the long way upgrades it


LEAF = st.one_of(
    st.none(),
    st.booleans(),
    st.integers(-(10**30), 10**30),
    st.floats(allow_nan=True, allow_infinity=True),
    st.floats(-1.0, 9.0),
    st.text(max_size=8),
    st.sampled_from(["hit", "miss", "right", "foot", "head-left", "short", "landed", "cue"]),
)
VALUE = st.recursive(
    LEAF, lambda kids: st.lists(kids, max_size=3) | st.dictionaries(st.text(max_size=6), kids),
    max_leaves=6,
)  # fmt: skip
PATHS = [
    "when", "player", "table", "speed", "english", "follow", "result", "note", "model", "v",
    "miss_kind", "shot.cue", "shot.object", "shot.rails", "shot.target", "shot.travel",
    "shot.family", "aim.given", "aim.used", "aim.rail", "landing", "shot", "aim",
]  # fmt: skip


@settings(max_examples=int(os.environ.get("TABLECOACH_FUZZ_EXAMPLES", "200")), deadline=None)
@given(
    seed=st.integers(0, 40),
    changes=st.lists(st.tuples(st.sampled_from(PATHS), VALUE), max_size=3),
)
def test_mutated_records_agree_with_the_attempt_path(
    seed: int, changes: list[tuple[str, Any]]
) -> None:
    obj = _obj(random_attempts(41, seed=3)[seed])
    for path, value in changes:
        try:
            _set(path, value)(obj)
        except (KeyError, TypeError):  # an earlier change replaced the parent
            continue
    _agrees(obj)


def test_checked_rows_kept_unchecked_move_in_like_attempts(tmp_path: Path) -> None:
    # the same file kept as checked rows and as Attempts (Staging.add checks them again):
    # the two stores hold the same rows, duplicates once, in file order
    attempts = random_attempts(60, seed=2)
    file = [*attempts, attempts[3], attempts[10]]
    stores = []
    for k, keep in enumerate(("rows", "attempts")):
        with Store.open(tmp_path / f"s{k}.sqlite3") as s:
            s.import_attempts(attempts[:5])  # already stored: skipped
            with Staging(str(tmp_path)) as staged:
                if keep == "rows":
                    staged.add_checked([checked_row(_obj(a), n) for n, a in enumerate(file)])
                else:
                    staged.add(file)
                assert staged.move_into(s) == (55, 7)  # 5 stored, 2 repeated in the file
            stores.append(sorted((a.id, a) for a in s.attempts()))
    assert stores[0] == stores[1]
    # ids in file order: the five stored first, then the file's new ones as they came
    assert [a for _, a in stores[0]] == [attempt_from_json(_obj(a)) for a in attempts]
