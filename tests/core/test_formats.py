"""Tests for the JSONL and CSV record formats: exact round trips and line-numbered errors."""

from __future__ import annotations

import csv
import io
import json
from dataclasses import replace
from datetime import UTC, datetime, timedelta
from pathlib import Path

import numpy as np
import pytest

from tablecoach.core import attempt_json, formats
from tablecoach.core.records import Attempt, RecordError, ShotRecord
from tablecoach.core.store import Store

from .test_store import make_attempt

DATA = Path(__file__).resolve().parents[1] / "data"


def random_attempts(n: int, seed: int) -> list[Attempt]:
    """Attempts with random full-precision doubles (numpy's generator) and awkward notes."""
    rng = np.random.default_rng(seed)
    notes = ["", "plain", 'quote " and, comma', "two\nlines", "tab\tünïcode ✓", " spaced "]
    out = []
    for i in range(n):
        a = make_attempt(i)
        shot = a.shot
        cue = (float(rng.uniform(0, 8)), float(rng.uniform(0, 4)))
        if shot.travel == "cue":
            shot = replace(shot, cue=cue, target_ball=(float(rng.uniform(0, 8)), 2.0))
        else:
            shot = replace(shot, cue=cue, object=(float(rng.uniform(0, 8)), float(rng.random())))
        out.append(
            replace(
                a,
                shot=shot,
                when=datetime(2026, 1, 1, tzinfo=UTC)
                + timedelta(microseconds=int(rng.integers(0, 10**13))),
                speed=float(rng.uniform(0.1, 13.0)),
                english=float(rng.uniform(-1.5, 1.5)),
                follow=float(rng.uniform(-1.5, 1.5)),
                aim_given=float(rng.uniform(0, 8)),
                aim_used=float(rng.uniform(0, 8)),
                landing_at=float(rng.uniform(0, 4)),
                note=notes[i % len(notes)],
            )
        )
        # version 2: a hit without a landing, and misses that stopped short or jawed
        if i % 7 == 3:
            out[-1] = replace(
                out[-1], result="hit", landing_rail=None, landing_at=None, miss_kind=None
            )
        elif i % 7 in (4, 5):
            kind = "short" if i % 7 == 4 else "jaw"
            out[-1] = replace(
                out[-1], result="miss", landing_rail=None, landing_at=None, miss_kind=kind
            )
    return out


def _same(a: Attempt, b: Attempt) -> None:
    assert a == replace(b, session=a.session)
    # bit-exact floats (float.hex is exact)
    for name in ("speed", "english", "follow", "aim_given", "aim_used", "landing_at"):
        if getattr(b, name) is None:  # no landing observed stays none
            assert getattr(a, name) is None
            continue
        assert getattr(a, name).hex() == getattr(b, name).hex()
    assert [c.hex() for c in a.shot.cue] == [c.hex() for c in b.shot.cue]


def test_jsonl_round_trip_exact() -> None:
    items = random_attempts(200, 1)
    buf = io.StringIO()
    assert formats.write_jsonl(items, buf) == 200
    lines = buf.getvalue().splitlines()
    assert len(lines) == 200
    # each line is one JSON object (the stdlib json parser as the reference reader)
    assert all(json.loads(x)["v"] == 2 for x in lines)
    back, errors = formats.read_jsonl(io.StringIO(buf.getvalue()))
    assert errors == []
    for a, b in zip(back, items, strict=True):
        _same(a, b)


def test_csv_round_trip_exact() -> None:
    items = random_attempts(200, 2)
    buf = io.StringIO(newline="")
    assert formats.write_csv(items, buf) == 200
    # the stdlib csv reader (RFC 4180 quoting) sees the documented header and one row each
    rows = list(csv.DictReader(io.StringIO(buf.getvalue(), newline="")))
    assert len(rows) == 200 and tuple(rows[0]) == formats.CSV_COLUMNS
    back, errors = formats.read_csv(io.StringIO(buf.getvalue(), newline=""))
    assert errors == []
    for a, b in zip(back, items, strict=True):
        _same(a, b)


def test_json_shape_matches_docs() -> None:
    a = make_attempt(1)
    obj = attempt_json.attempt_to_json(a)
    assert list(obj) == [
        "v",
        "when",
        "player",
        "table",
        "shot",
        "speed",
        "english",
        "follow",
        "aim",
        "result",
        "landing",
        "note",
        "model",
        "drill",
        "zone",
    ]  # fmt: skip (make_attempt(1) is a hit the player gave a landing for: no miss_kind)
    assert obj["when"] == "2026-03-14T18:30:07.123457Z"
    assert obj["shot"] == {
        "travel": "object",
        "rails": ["right"],
        "family": "cross-corner-bank",
        "target": {"pocket": "foot-left"},
        "cue": [2.25, 1.0],
        "object": [3.1, 1.9],
    }
    assert obj["aim"] == {"rail": "right", "given": a.aim_given, "used": 3.25}
    assert obj["landing"] == {"rail": "foot", "at": 2.0 / 7.0}
    kick = attempt_json.attempt_to_json(make_attempt(0))
    assert kick["shot"]["target"] == {"ball": [6.1, 2.9]} and kick["shot"]["object"] is None
    # a hit carries no miss_kind; a hit without a landing writes landing null
    hit = attempt_json.attempt_to_json(make_attempt(2, landing_rail=None, landing_at=None))
    assert hit["result"] == "hit" and hit["landing"] is None and "miss_kind" not in hit
    miss = attempt_json.attempt_to_json(make_attempt(5))
    assert list(miss)[-1] == "miss_kind" and miss["miss_kind"] == "landed"
    short = make_attempt(5, landing_rail=None, landing_at=None, miss_kind="short")
    obj = attempt_json.attempt_to_json(short)
    assert obj["landing"] is None and obj["miss_kind"] == "short"


def test_version_1_lines_upgrade() -> None:
    """A version-1 hit loses the landing the app had filled with the aim's prediction; a
    version-1 miss keeps its landing as a 'landed' miss (docs/formats.md, version 1)."""
    v1 = attempt_json.attempt_to_json(make_attempt(2))  # a hit with a landing
    v1["v"] = 1
    v1.pop("miss_kind", None)
    got = attempt_json.attempt_from_json(v1, 3)
    assert got.result == "hit" and got.landing_rail is None and got.landing_at is None
    assert got.miss_kind is None
    miss = attempt_json.attempt_to_json(make_attempt(5))
    miss["v"] = 1
    del miss["miss_kind"]
    got = attempt_json.attempt_from_json(miss, 4)
    assert (got.landing_rail, got.landing_at, got.miss_kind) == ("foot", 2.0 / 7.0, "landed")
    assert got.result == "miss"
    # version 1 had no miss_kind and always a landing
    miss["miss_kind"] = "short"
    with pytest.raises(RecordError, match="line 4: .*not part of version 1"):
        attempt_json.attempt_from_json(miss, 4)
    del miss["miss_kind"]
    miss["landing"] = None
    with pytest.raises(RecordError, match="line 4: field 'landing' must be an object"):
        attempt_json.attempt_from_json(miss, 4)


@pytest.mark.parametrize(
    ("change", "needle"),
    [
        # a short or jaw miss has no landing; a landed miss has one; a hit has no kind
        (lambda o: o.update(miss_kind="short"), "landing null"),
        (lambda o: o.update(landing=None), "landing null"),
        (lambda o: o.update(landing=None, miss_kind="early"), "'early': a miss is one of"),
        (lambda o: o.update(result="hit"), "only for a miss"),
        (lambda o: o.update(miss_kind=3), "'miss_kind' must be text"),
        (lambda o: o.pop("landing"), "'landing' is missing"),
        (lambda o: o.update(landing={"rail": "foot"}), "'landing.at' is missing"),
    ],
)
def test_version_2_landing_rules(change, needle) -> None:  # type: ignore[no-untyped-def]
    obj = attempt_json.attempt_to_json(make_attempt(5))  # a landed miss
    change(obj)
    with pytest.raises(RecordError) as info:
        attempt_json.attempt_from_json(obj, 5)
    assert str(info.value).startswith("line 5: ") and needle in str(info.value)


def test_reads_hand_written_example() -> None:
    """tests/data/attempts_v1.jsonl is written by hand from docs/formats.md."""
    with (DATA / "attempts_v1.jsonl").open(encoding="utf-8") as fh:
        got, errors = formats.read_jsonl(fh)
    assert errors == []
    assert len(got) == 3
    a, b, c = got
    assert a.shot == ShotRecord(
        "cue", ("right", "foot"), (2.5, 1.5), None, None, (6.0, 1.25), "two-rail-kick"
    )
    assert (a.aim_given, a.aim_used, a.result, a.landing_rail, a.landing_at) == (
        5.25, 5.5, "miss", "left", 6.75,
    )  # fmt: skip
    # 19:30:00.25 at +01:00 is 18:30:00.25 UTC (ISO 8601 offsets)
    assert b.when == datetime(2026, 3, 14, 18, 30, 0, 250000, tzinfo=UTC)
    assert (b.english, b.follow, b.note, b.model, b.drill) == (0.0, 0.0, "", "ideal", "")
    assert b.shot.pocket == "foot-left" and b.shot.object == (5.75, 2.5)
    assert c.speed == 2.0 and isinstance(c.speed, float) and c.model == "physical"


def test_bad_lines_reported_with_numbers() -> None:
    with (DATA / "attempts_bad.jsonl").open(encoding="utf-8") as fh:
        got, errors = formats.read_jsonl(fh)
    assert len(got) == 2
    assert [n for n, _ in errors] == [2, 3, 4]
    msgs = dict(errors)
    assert msgs[2].startswith("line 2: not valid JSON")
    assert msgs[3].startswith("line 3:") and "shot.cue" in msgs[3] and "off the table" in msgs[3]
    assert msgs[4].startswith("line 4:") and "result" in msgs[4]


@pytest.mark.parametrize(
    ("change", "needle"),
    [
        (lambda o: o.update(v=3), "newer"),
        (lambda o: o.update(v="1"), "field 'v'"),
        (lambda o: o.pop("speed"), "'speed' is missing"),
        (lambda o: o.update(when="2026-03-14 18:30"), "no time zone"),
        (lambda o: o.update(when="yesterday"), "not an ISO-8601 time"),
        (lambda o: o.update(colour="red"), "'colour' is not part"),
        (lambda o: o["shot"].update(target={"pocket": "middle"}), "shot.target.pocket"),
        (lambda o: o["shot"].update(cue=[1.0]), "'shot.cue' must be [x, y]"),
        (lambda o: o["aim"].update(given=float("nan")), "'aim.given' must be a finite"),
        (lambda o: o.update(speed=True), "'speed' must be a finite number"),
    ],
)
def test_attempt_from_json_errors(change, needle) -> None:  # type: ignore[no-untyped-def]
    obj = attempt_json.attempt_to_json(make_attempt(1))
    change(obj)
    with pytest.raises(RecordError) as info:
        attempt_json.attempt_from_json(obj, 7)
    assert str(info.value).startswith("line 7: ") and needle in str(info.value)


def test_csv_errors() -> None:
    buf = io.StringIO(newline="")
    formats.write_csv([make_attempt(0), make_attempt(1), make_attempt(2)], buf)
    lines = buf.getvalue().splitlines()
    lines[2] = lines[2].replace("3.25", "three", 1)
    lines[3] = lines[3] + ",extra"
    got, errors = formats.read_csv(io.StringIO("\n".join(lines) + "\n", newline=""))
    assert len(got) == 1
    assert [n for n, _ in errors] == [3, 4]
    assert "'aim_used' = 'three' is not a number" in errors[0][1]
    assert f"{len(formats.CSV_COLUMNS) + 1} cells" in errors[1][1]
    got, errors = formats.read_csv(io.StringIO("a,b\n1,2\n"))
    assert got == [] and errors[0][0] == 1 and "header" in errors[0][1]


def test_export_import_through_store(tmp_path: Path) -> None:
    """Export, then import into an empty data dir: the same attempts, in both formats."""
    items = random_attempts(60, 3)
    with Store.open(tmp_path / "a" / "db.sqlite3") as s:
        sid = s.start_session("ann", "9ft", "mixed")
        for a in items:
            s.log(replace(a, session=sid))
        original = s.attempts()
    for fmt in formats.FORMATS:
        buf = io.StringIO(newline="")
        formats.write_any(original, buf, fmt)
        read, errors = formats.read_any(io.StringIO(buf.getvalue(), newline=""), fmt)
        assert errors == []
        with Store.open(tmp_path / fmt / "db.sqlite3") as s2:
            assert s2.import_attempts(read) == (60, 0)
            assert s2.import_attempts(read) == (0, 60)
            again = s2.attempts()
        for a, b in zip(again, original, strict=True):
            _same(replace(a, session=None), replace(b, session=None))


def test_jsonl_line_of_a_stored_row_equals_the_attempt_path(tmp_path: Path) -> None:
    # Reference: json.dumps (standard library) of attempt_json.attempt_to_json of the Attempt
    # read back from the same row: export writes rows straight to text and must not differ.
    import sqlite3

    from tablecoach.core.store.rows import from_row

    from .test_stats_read import _fields, random_attempt

    rng = np.random.default_rng(31)
    items = [random_attempt(rng) for _ in range(300)]
    base = _fields(items[0])
    items += [
        Attempt(**{**base, "result": "hit", "landing_rail": None, "landing_at": None}),
        Attempt(**{**base, "result": "miss", "landing_rail": None, "landing_at": None,
                   "miss_kind": "short"}),
        Attempt(**{**base, "note": 'quote " back \\ slash \t tab, ü, 😀, new\nline'}),
        Attempt(**{**base, "speed": 1e-300, "english": -0.0, "follow": 1.5}),
    ]  # fmt: skip
    path = tmp_path / "rows.sqlite3"
    with Store.open(path) as s:
        s.import_attempts(items)
        s.log(items[5])  # one with a session
    conn = sqlite3.connect(path)  # and a time stored in another form (an older writer)
    conn.execute("UPDATE attempts SET at = '2024-03-01T01:30:00.250000+01:00' WHERE id = 3")
    conn.commit()
    conn.close()
    n = 0
    with Store.open(path) as s:
        for rows in s.attempt_row_pages(batch=50):
            for r in rows:
                want = json.dumps(
                    attempt_json.attempt_to_json(from_row(r, r[-1])),
                    ensure_ascii=False,
                    allow_nan=False,
                )
                assert formats.jsonl_line(r) == want
                n += 1
    assert n == len(items) + 1  # and the logged one (log adds even a repeat)
