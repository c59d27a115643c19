"""Issue 15: every bad input gets one clear line, a damaged or full store is named for what it is,
and a backup brings everything back.

Outside references for the checks: the SQLite file format (sqlite.org/fileformat.html: page N
of the file starts at byte (N-1) * page size; the header's page size at offset 16) and its
PRAGMA quick_check / integrity_check (sqlite.org/pragma.html), SQLite's result codes
(sqlite.org/rescode.html: SQLITE_FULL, SQLITE_READONLY, SQLITE_CORRUPT), JSON (RFC 8259: no NaN
or Infinity, numbers of any length), IEEE 754 binary64 (largest finite value about 1.8e308),
Python's datetime (years 1 to 9999) and str.isprintable.
"""

from __future__ import annotations

import errno
import hashlib
import json
import os
import shutil
import signal
import sqlite3
import subprocess
import sys
import textwrap
from dataclasses import replace
from datetime import UTC, datetime, timedelta
from pathlib import Path

import pytest

from tablecoach.core.store import Store
from tablecoach.core.store import attempts as store_attempts
from tablecoach.core.store.errors import StoreError, sqlite_error
from tablecoach.core.store.schema import SCHEMA_VERSION

from .clihelp import assert_refused, cli

REPO = Path(__file__).resolve().parents[1]
SHOT = ["--family", "cross-corner-bank", "--cue", "3,1", "--object", "4,2", "--model", "ideal"]


@pytest.fixture(autouse=True)
def _isolated(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setenv("TABLECOACH_DATA_DIR", str(tmp_path / "data"))
    monkeypatch.setenv("TABLECOACH_CONFIG_DIR", str(tmp_path / "config"))


@pytest.fixture(scope="module")
def demo_store(tmp_path_factory: pytest.TempPathFactory) -> Path:
    """A real store, filled once by `tablecoach demo` (invented data, demo only)."""
    folder = tmp_path_factory.mktemp("demo")
    code = subprocess.run(
        [sys.executable, "-m", "tablecoach", "demo", "--data-dir", str(folder), "--seed", "7"],
        capture_output=True,
        text=True,
        cwd=REPO,
    )
    assert code.returncode == 0, code.stderr
    return folder / "tablecoach.sqlite3"


def _copy_store(src: Path, dst_dir: Path) -> Path:
    dst_dir.mkdir(parents=True, exist_ok=True)
    shutil.copy(src, dst_dir / src.name)
    return dst_dir / src.name


def _record(**changes: object) -> dict[str, object]:
    """One good version-1 attempt record (docs/formats.md), with fields replaced."""
    rec: dict[str, object] = {
        "v": 1,
        "when": "2026-03-14T18:30:00.000000Z",
        "player": "ann",
        "table": "9ft",
        "shot": {
            "travel": "object",
            "rails": ["right"],
            "family": "cross-corner-bank",
            "target": {"pocket": "foot-left"},
            "cue": [3.0, 1.0],
            "object": [4.0, 2.0],
        },
        "speed": 2.0,
        "english": 0.0,
        "follow": 0.0,
        "aim": {"rail": "right", "given": 5.0, "used": 5.0},
        "result": "hit",
        "landing": {"rail": "foot", "at": 1.0},
    }
    rec.update(changes)
    return rec


def _digest(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


# ----- 1. non-finite and out-of-range numbers on the command line -------------------------------


@pytest.mark.parametrize(
    "extra",
    [
        ["predict", "--reading=-inf"],
        ["predict", "--reading", "nan"],
        ["predict", "--reading", "inf"],
        ["predict", "--reading", "1e6"],  # far off any rail's 0..8 diamonds of sights
        ["predict", "--reading", "-0.5"],
        ["predict", "--reading", "1" * 400],  # beyond the largest IEEE 754 double
        ["aim", "--english", "nan"],
        ["aim", "--follow", "nan"],
        ["aim", "--follow", "-inf"],
        ["aim", "--english", "1e309"],  # overflows binary64 to inf
        ["aim", "--cue", "nan,1"],
        ["aim", "--object", "4,inf"],
        ["aim", "--speed", "nan"],
        ["history", "--session", "9" * 30],
        ["history", "--since", "0001-01-01"],
        ["history", "--until", "9999-12-31"],
        ["drills", "show", "mixed", "--sample", "10000000"],
    ],
)
def test_bad_numbers_on_the_command_line_are_one_line(
    capsys: pytest.CaptureFixture[str], extra: list[str]
) -> None:
    cmd, *rest = extra
    shot = SHOT if cmd in ("aim", "predict") else []
    if cmd == "aim":
        # a later option wins in argparse: the bad value replaces the good one
        args = [cmd, *shot, *rest]
    elif cmd == "predict":
        args = [cmd, *shot, *rest]
    else:
        args = extra
    code, out, err = cli(capsys, *args)
    assert_refused(code, err)


def test_a_reading_on_the_rail_still_runs(capsys: pytest.CaptureFixture[str]) -> None:
    # the bounds are the rail's own: 0 to 8 diamonds on a long rail (common practice, no source)
    code, out, err = cli(capsys, "predict", *SHOT, "--reading", "4.5")
    assert code == 0, err
    assert "nan" not in out


# ----- 2. table and drill files of the wrong shape ---------------------------------------------


@pytest.mark.parametrize(
    "body",
    [
        'name = "x"\nbase = ["9ft"]\n',
        'name = "x"\n[size]\n',
        'name = "x"\nbase = {a = 1}\n',
        'name = ["x"]\n',
        'name = "x"\nlength = "long"\n',
        'name = "x"\ncloth = 3\n',
        'name = "x"\npockets = [1, 2]\n',
        'name = "x"\n[cushion]\nrestitution = [0.9]\n',
        f'name = "x"\nlength = {"9" * 400}\n',
        'name = "x"\nlength = nan\n',
        'name = "x"\nlength = inf\n',
        'name = "x"\nlength = ' + "[" * 3000 + "]" * 3000 + "\n",
        'name = "a\\u0000b"\n',
        'name = "' + "n" * 41 + '"\n',
        'name = "x"\ndescription = "clear \\u001b[2J"\n',  # a terminal escape
    ],
)
def test_table_files_of_the_wrong_shape_are_one_line(
    tmp_path: Path, capsys: pytest.CaptureFixture[str], body: str
) -> None:
    f = tmp_path / "t.toml"
    f.write_text(body, encoding="utf-8")
    for action in ("validate", "add"):
        code, _, err = cli(capsys, "tables", action, str(f))
        assert_refused(code, err, str(f))
    assert not (tmp_path / "data").exists()  # refused before any store was made


@pytest.mark.parametrize(
    "item",
    [
        'family = "cross-corner-bank"\nspeeds = [' + "9" * 400 + "]\n",
        'family = "cross-corner-bank"\nweight = ' + "9" * 400 + "\n",
        'family = "cross-corner-bank"\nenglish = nan\n',
        'family = "cross-corner-bank"\nspeeds = ["' + "1" * 5000 + '"]\n',
        'family = ["cross-corner-bank"]\n',
        'family = "cross-corner-bank"\nregions = ' + "[" * 3000 + "]" * 3000 + "\n",
    ],
)
def test_drill_files_of_the_wrong_shape_are_one_line(
    tmp_path: Path, capsys: pytest.CaptureFixture[str], item: str
) -> None:
    f = tmp_path / "pack.toml"
    f.write_text('title = "t"\n[[item]]\n' + item, encoding="utf-8")
    code, _, err = cli(capsys, "drills", "validate", str(f))
    assert_refused(code, err, str(f))


# ----- 3, 4, 5: import lines: nesting, calendar edges, huge numbers, names, NaN -----------------


def _import(
    tmp_path: Path, capsys: pytest.CaptureFixture[str], lines: list[str], *flags: str
) -> tuple[int, str, str]:
    f = tmp_path / "in.jsonl"
    f.write_text("".join(line + "\n" for line in lines), encoding="utf-8")
    return cli(capsys, "import", str(f), *flags)


BAD_LINES = {
    "deep list": "[" * 5000 + "]" * 5000,
    "deep object": '{"a":' * 5000 + "1" + "}" * 5000,
    "deep inside a field": json.dumps(_record(note=None))[:-1].replace(
        '"note": null', '"note": ' + "[" * 3000 + "]" * 3000
    )
    + "}",
    "year 1 with an offset": json.dumps(_record(when="0001-01-01T00:00:00+01:00")),
    "year 9999 at the last instant": json.dumps(_record(when="9999-12-31T23:59:59.999999Z")),
    "year 9999 behind UTC": json.dumps(_record(when="9999-12-31T23:59:59-01:00")),
    "year 1899": json.dumps(_record(when="1899-12-31T23:59:59Z")),
    "year 2201": json.dumps(_record(when="2201-01-01T00:00:00Z")),
    "400-digit speed": json.dumps(_record()).replace('"speed": 2.0', '"speed": ' + "9" * 400),
    "5000-digit speed": json.dumps(_record()).replace('"speed": 2.0', '"speed": ' + "9" * 5000),
    "long float": json.dumps(_record()).replace('"speed": 2.0', '"speed": 2.' + "0" * 400),
    "1e400 landing": json.dumps(_record()).replace('"at": 1.0', '"at": 1e400'),
    "NaN speed": json.dumps(_record()).replace('"speed": 2.0', '"speed": NaN'),
    "Infinity english": json.dumps(_record()).replace('"english": 0.0', '"english": Infinity'),
    "NUL in the name": json.dumps(_record(player="a\x00b")),
    "100000-character name": json.dumps(_record(player="p" * 100_000)),
    "41-character name": json.dumps(_record(player="p" * 41)),
    "blank name": json.dumps(_record(player="   ")),
    "escape in the table": json.dumps(_record(table="9ft\x1b[2J")),
    "huge note": json.dumps(_record(note="n" * 100_000)),
    "list as a name": json.dumps(_record(player=["ann"])),
    "speed beyond 13 m/s": json.dumps(_record(speed=14.0)),
}


@pytest.mark.parametrize("what", sorted(BAD_LINES))
def test_each_bad_import_line_is_named_and_nothing_is_imported(
    tmp_path: Path, capsys: pytest.CaptureFixture[str], what: str
) -> None:
    good = json.dumps(_record())
    code, out, err = _import(tmp_path, capsys, [good, BAD_LINES[what], good])
    lines = err.strip().splitlines()
    assert code == 2 and "Traceback" not in err, err
    assert len(lines) == 2, err  # the bad line, then the verdict
    assert lines[0].startswith(f"{tmp_path / 'in.jsonl'}: line 2: "), lines[0]
    assert len(lines[0]) < 400
    assert "nothing imported" in lines[1]
    assert not (tmp_path / "data").exists()


def test_names_of_40_printable_characters_import(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    # the boundary of the 1-to-40 rule is inside it (issue 15); non-ASCII letters are printable
    lines = [json.dumps(_record(player="p" * 40)), json.dumps(_record(player="Zoë Ó"))]
    code, out, err = _import(tmp_path, capsys, lines)
    assert code == 0, err
    with Store.open(tmp_path / "data" / "tablecoach.sqlite3") as s:
        assert sorted(s.players()) == sorted(["p" * 40, "Zoë Ó"])


def test_skip_bad_skips_exactly_the_bad_lines(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    bad = sorted(BAD_LINES)
    lines, expect_bad = [], []
    for i, what in enumerate(bad):
        lines.append(json.dumps(_record(player=f"p{i}")))
        lines.append(BAD_LINES[what])
        expect_bad.append(2 * i + 2)
    code, out, err = _import(tmp_path, capsys, lines, "--skip-bad", "--json")
    assert code == 0, err
    data = json.loads(out)
    assert data["added"] == len(bad) and data["duplicates"] == 0
    assert [b[0] for b in data["bad"]] == expect_bad
    code, out, err = _import(tmp_path, capsys, lines, "--skip-bad")
    assert code == 0
    assert out.strip() == (
        f"added 0 attempts, {len(bad)} already there (skipped), {len(bad)} bad lines skipped"
    )


def test_csv_cells_get_the_same_checks(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    from tablecoach.core import attempt_json, formats
    from tablecoach.core.records import Attempt, ShotRecord

    a = attempt_json.attempt_from_json(_record())
    assert isinstance(a, Attempt) and isinstance(a.shot, ShotRecord)
    header = ",".join(formats.CSV_COLUMNS)
    row = formats.attempt_to_row(a)
    idx = {c: i for i, c in enumerate(formats.CSV_COLUMNS)}
    rows = []
    for col, value in (
        ("speed", "9" * 400),
        ("speed", "nan"),
        ("english", "inf"),
        ("when", "0001-01-01T00:00:00+01:00"),
        ("player", "a\x01b"),
        ("landing_at", "1" * 5000),
    ):
        r = list(row)
        r[idx[col]] = value
        rows.append(",".join(f'"{c}"' for c in r))
    f = tmp_path / "in.csv"
    f.write_text(header + "\n" + "\n".join(rows) + "\n", encoding="utf-8")
    code, out, err = cli(capsys, "import", str(f), "--skip-bad", "--json")
    assert code == 0, err
    assert [b[0] for b in json.loads(out)["bad"]] == [2, 3, 4, 5, 6, 7]


# ----- the poisoned store ------------------------------------------------------------------------


def test_a_store_holding_out_of_span_times_still_shows_history(
    tmp_path: Path, capsys: pytest.CaptureFixture[str], monkeypatch: pytest.MonkeyPatch
) -> None:
    # Such rows can no longer come in (the tests above); an older tablecoach could store them.
    # The write-side check is lifted to make that store, then history must still work.
    from datetime import datetime, timedelta, timezone

    from tablecoach.core import attempt_json
    from tablecoach.core.records import validate_attempt

    good = attempt_json.attempt_from_json(_record())
    strict = store_attempts.check_attempt
    monkeypatch.setattr(store_attempts, "check_attempt", validate_attempt)
    with Store.open(tmp_path / "data" / "tablecoach.sqlite3") as s:
        s.import_attempts(
            [
                good,
                replace(good, when=datetime(9999, 12, 31, 23, 59, 59, 999999, tzinfo=UTC)),
                replace(good, when=datetime(1, 1, 1, 0, 0, tzinfo=timezone(timedelta(hours=-1)))),
            ]
        )
    monkeypatch.setattr(store_attempts, "check_attempt", strict)
    for args in (
        ["history"],
        ["history", "--tz", "Europe/Lisbon"],
        ["history", "--json"],
        ["report", "-o", str(tmp_path / "r.svg")],
    ):
        code, out, err = cli(capsys, *args)
        assert code == 0, (args, err)
    code, out, err = cli(capsys, "history", "--json")
    assert json.loads(out)["attempts"] == 1


# ----- damaged, truncated and empty files --------------------------------------------------------


def _page_size(db: Path) -> int:
    size = int.from_bytes(db.read_bytes()[16:18], "big")  # fileformat.html 1.3.2
    return 65536 if size == 1 else size


def _damage(db: Path, how: str) -> None:
    data = bytearray(db.read_bytes())
    ps = _page_size(db)
    page = len(data) // ps // 3  # a page in the first third: tables and indexes live there
    start = (page - 1) * ps
    if how == "zero":
        data[start : start + ps] = bytes(ps)
    else:
        for i in range(start + 8, start + 40):
            data[i] ^= 0xFF
    db.write_bytes(bytes(data))


def _sqlite_says_damaged(db: Path) -> bool:
    """SQLite's own verdict, through a plain sqlite3 connection (sqlite.org/pragma.html)."""
    try:
        # immutable: read the file as it is, leaving no -wal or -shm beside it
        conn = sqlite3.connect(f"file:{db}?mode=ro&immutable=1", uri=True)
        try:
            rows = conn.execute("PRAGMA integrity_check").fetchall()
        finally:
            conn.close()
    except sqlite3.DatabaseError:
        return True
    return rows != [("ok",)]


@pytest.mark.parametrize("how", ["zero", "flip"])
def test_a_damaged_store_is_refused_and_left_byte_for_byte(
    tmp_path: Path,
    capsys: pytest.CaptureFixture[str],
    monkeypatch: pytest.MonkeyPatch,
    demo_store: Path,
    how: str,
) -> None:
    db = _copy_store(demo_store, tmp_path / "data")
    # the same commands on the healthy copy succeed: the refusals below are the damage's doing
    healthy = _copy_store(demo_store, tmp_path / "healthy")
    table_file = tmp_path / "mine.toml"
    table_file.write_text('name = "mine"\n', encoding="utf-8")
    good = tmp_path / "good.jsonl"
    good.write_text(json.dumps(_record()) + "\n", encoding="utf-8")
    writes = [
        ["import", str(good)],
        ["tables", "add", str(table_file)],
        ["calibrate", "--table", "harbour-9", "--player", "Nadia"],
    ]
    monkeypatch.setenv("TABLECOACH_DATA_DIR", str(healthy.parent))
    for args in writes:
        code, _, err = cli(capsys, *args)
        assert code == 0, (args, err)
    monkeypatch.setenv("TABLECOACH_DATA_DIR", str(db.parent))
    _damage(db, how)
    assert _sqlite_says_damaged(db)
    before = _digest(db)
    for args in writes:
        code, _, err = cli(capsys, *args)
        assert_refused(code, err, "damaged", str(db))
        assert "restore" in err
        assert sorted(p.name for p in db.parent.iterdir()) == [db.name], args
    # the practice app: it shows the first card while the integrity check runs beside it
    # (seconds on a big store), and the check's verdict ends it with the one line
    code, _, err = _practice_app(capsys, monkeypatch)
    assert_refused(code, err, "damaged", str(db))
    assert "restore" in err
    assert _digest(db) == before
    assert sorted(p.name for p in db.parent.iterdir()) == [db.name]


def _practice_app(
    capsys: pytest.CaptureFixture[str],
    monkeypatch: pytest.MonkeyPatch,
    keys: tuple[str, ...] = (),
    wait: float = 30.0,
) -> tuple[int, str, str]:
    """``tablecoach`` (the practice app) in-process without a terminal: Textual's headless
    run at 100 x 30, pressing ``keys`` once the first card is up; an app still running after
    ``wait`` seconds (not refused) is closed with q q (the summary, then leave)."""
    import asyncio
    import time

    from tablecoach.ui import app as app_mod

    real_run = app_mod.TableCoachApp.run

    async def pilot_of(pilot: object) -> None:
        app = pilot.app  # type: ignore[attr-defined]
        end = time.monotonic() + wait
        while getattr(app.screen, "aim", None) is None and time.monotonic() < end:
            await asyncio.sleep(0.01)
        if keys:
            await pilot.press(*keys)  # type: ignore[attr-defined]
        while time.monotonic() < end and not app.refused:
            await asyncio.sleep(0.01)
        if not app.refused:
            await pilot.press("q", "q")  # type: ignore[attr-defined]

    def headless(self: object, **_kw: object) -> object:
        return real_run(self, headless=True, size=(100, 30), auto_pilot=pilot_of)  # type: ignore[arg-type]

    monkeypatch.setattr(app_mod.TableCoachApp, "run", headless)
    return cli(capsys)


def test_the_first_card_does_not_wait_for_the_check_and_damage_still_ends_the_app(
    tmp_path: Path,
    capsys: pytest.CaptureFixture[str],
    monkeypatch: pytest.MonkeyPatch,
    demo_store: Path,
) -> None:
    # The check is held back (as a big store's takes seconds): the first card is shown and
    # solved meanwhile, nothing is written (the session's row waits for the check), and once
    # the check finds the damage the app ends with the one line; the file is left as it was.
    import threading

    from tablecoach.core.store.connection import Connection
    from tablecoach.ui.screens.practice import PracticeScreen

    db = _copy_store(demo_store, tmp_path / "data")
    _damage(db, "flip")
    assert _sqlite_says_damaged(db)
    before = _digest(db)
    release = threading.Event()
    seen: list[bool] = []
    real_check = Connection._quick_check

    def slow_check(self: Connection) -> object:
        release.wait(30)
        return real_check(self)

    real_mount = PracticeScreen._take_ahead

    def first_card(self: PracticeScreen) -> None:
        real_mount(self)
        seen.append(not release.is_set() and self.session.pick is not None)
        release.set()  # the card is up: let the check finish now

    monkeypatch.setattr(Connection, "_quick_check", slow_check)
    monkeypatch.setattr(PracticeScreen, "_take_ahead", first_card)
    monkeypatch.setenv("TABLECOACH_SEED", "3")
    code, _, err = _practice_app(capsys, monkeypatch)
    assert seen[:1] == [True]  # the first card came before the check's verdict
    assert_refused(code, err, "damaged", "integrity check", str(db))
    assert _digest(db) == before
    assert sorted(p.name for p in db.parent.iterdir()) == [db.name]


def test_a_healthy_store_logs_after_the_check_run_beside_the_first_card(
    tmp_path: Path,
    capsys: pytest.CaptureFixture[str],
    monkeypatch: pytest.MonkeyPatch,
    demo_store: Path,
) -> None:
    # the same start on a healthy copy: a hit is logged in a session whose row was written
    # once the check passed, and the app leaves with its summary
    db = _copy_store(demo_store, tmp_path / "data")
    monkeypatch.setenv("TABLECOACH_SEED", "3")
    with Store.open(db) as s:
        sessions = len(s.sessions())
    code, out, err = _practice_app(capsys, monkeypatch, keys=("h",), wait=3.0)
    assert code == 0, err
    assert "1 attempt, 1 hit" in out
    with Store.open(db) as s:
        infos = s.sessions()
        assert len(infos) == sessions + 1
        assert infos[-1].attempts == 1 and infos[-1].hits == 1 and infos[-1].ended is not None


def _killed_writer(db: Path) -> Path:
    """Leave a write-ahead log with 100 committed players beside ``db``, as a writer killed
    with SIGKILL before its checkpoint does; returns the log's path."""
    writer = textwrap.dedent(
        f"""
        import sqlite3, time
        c = sqlite3.connect({str(db)!r}, isolation_level=None)
        c.execute("PRAGMA journal_mode=WAL"); c.execute("PRAGMA wal_autocheckpoint=0")
        for i in range(100):
            c.execute("INSERT INTO players (name, created) VALUES (?, ?)",
                      (f"p{{i}}", "2026-01-01T00:00:00.000000+00:00"))
        print("written", flush=True)
        time.sleep(60)
        """
    )
    p = subprocess.Popen([sys.executable, "-c", writer], stdout=subprocess.PIPE, text=True)
    assert p.stdout is not None and p.stdout.readline().strip() == "written"
    os.kill(p.pid, signal.SIGKILL)
    p.wait()
    wal = db.with_name(db.name + "-wal")
    assert wal.exists() and wal.stat().st_size > 0
    return wal


def test_a_truncated_file_beside_a_killed_writers_wal_is_refused(
    tmp_path: Path, capsys: pytest.CaptureFixture[str], demo_store: Path
) -> None:
    db = _copy_store(demo_store, tmp_path / "data")
    wal = _killed_writer(db)
    os.truncate(db, db.stat().st_size // 2 // _page_size(db) * _page_size(db))
    before = (_digest(db), _digest(wal))
    table_file = tmp_path / "mine.toml"
    table_file.write_text('name = "mine"\n', encoding="utf-8")
    code, _, err = cli(capsys, "tables", "add", str(table_file))
    assert_refused(code, err, "damaged")
    assert (_digest(db), _digest(wal)) == before  # the log was not folded into the file


def test_reading_leaves_a_foreign_log_for_the_next_checked_writer(
    tmp_path: Path, capsys: pytest.CaptureFixture[str], demo_store: Path
) -> None:
    # A session that only reads never runs the check, so it does not fold a log it finds into
    # the file (a write); the next writer checks, then SQLite folds it in on closing.
    db = _copy_store(demo_store, tmp_path / "data")
    wal = _killed_writer(db)
    before = _digest(db)
    code, out, err = cli(capsys, "history", "--json")
    assert code == 0, err
    assert _digest(db) == before and wal.stat().st_size > 0
    table_file = tmp_path / "mine.toml"
    table_file.write_text('name = "mine"\n', encoding="utf-8")
    assert cli(capsys, "tables", "add", str(table_file))[0] == 0
    assert not wal.exists()
    with Store.open(db) as s:
        assert len(s.players()) == 4 + 100  # the demo's four and the killed writer's hundred


def test_an_empty_file_is_refused_not_made_a_store(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    db = tmp_path / "data" / "tablecoach.sqlite3"
    db.parent.mkdir()
    db.touch()
    good = tmp_path / "good.jsonl"
    good.write_text(json.dumps(_record()) + "\n", encoding="utf-8")
    for args in (["import", str(good)], ["history"], ["export"], ["demo"]):
        code, _, err = cli(capsys, *args)
        assert_refused(code, err, "empty file", "0 bytes")
    from tablecoach.ui.app import build_app

    with pytest.raises(StoreError, match="empty file"):
        build_app()
    assert db.stat().st_size == 0
    assert [p.name for p in db.parent.iterdir()] == [db.name]


def test_a_new_store_appears_whole(tmp_path: Path) -> None:
    # no half-made file is ever at the store's path: the schema is built aside and linked in
    db = tmp_path / "new" / "tablecoach.sqlite3"
    with Store.open(db) as s:
        assert s.schema_version() == SCHEMA_VERSION
    assert sorted(p.name for p in db.parent.iterdir()) == [db.name]
    assert not _sqlite_says_damaged(db)


# ----- a full disk, no permission ----------------------------------------------------------------


def test_a_full_disk_is_named_and_nothing_is_lost(
    tmp_path: Path, capsys: pytest.CaptureFixture[str], monkeypatch: pytest.MonkeyPatch
) -> None:
    # A real SQLITE_FULL: PRAGMA max_page_count caps the file (sqlite.org/pragma.html).
    from tablecoach.core import attempt_json

    db = tmp_path / "data" / "tablecoach.sqlite3"
    first = attempt_json.attempt_from_json(_record())
    with Store.open(db) as s:
        s.import_attempts([first])
    setup = Store._setup

    def capped(self: Store) -> None:
        setup(self)
        pages = self._conn.execute("PRAGMA page_count").fetchone()[0]
        self._conn.execute(f"PRAGMA max_page_count = {pages}")

    monkeypatch.setattr(Store, "_setup", capped)
    big = tmp_path / "big.jsonl"
    big.write_text(
        "".join(
            json.dumps(_record(note="n" * 1500, speed=1.0 + i / 1000)) + "\n" for i in range(300)
        ),
        encoding="utf-8",
    )
    code, _, err = cli(capsys, "import", str(big))
    assert_refused(code, err, "full", "free some space")
    assert "damaged" not in err and "restore" not in err
    monkeypatch.setattr(Store, "_setup", setup)
    with Store.open(db) as s:
        assert s.count_attempts() == 1
        assert s.attempts()[0] == replace(first, id=s.attempts()[0].id)
    assert not _sqlite_says_damaged(db)


@pytest.mark.parametrize(
    ("message", "code", "words"),
    [
        ("database or disk is full", "SQLITE_FULL", ("full", "free some space")),
        ("attempt to write a readonly database", "SQLITE_READONLY", ("permission",)),
        ("unable to open database file", "SQLITE_CANTOPEN", ("permission",)),
        ("disk I/O error", "SQLITE_IOERR_WRITE", ("input/output",)),
        ("database disk image is malformed", "SQLITE_CORRUPT", ("damaged", "restore")),
        ("database is locked", "SQLITE_BUSY", ("busy",)),
    ],
)
def test_sqlite_errors_are_named_for_what_they_are(
    message: str, code: str, words: tuple[str, ...]
) -> None:
    # by message alone (how an error raised by hand looks) and with SQLite's result code name
    plain = sqlite3.OperationalError(message)
    coded = sqlite3.OperationalError("something else")
    coded.sqlite_errorname = code  # type: ignore[attr-defined]
    for exc in (plain, coded):
        text = str(sqlite_error(Path("/x/db"), exc))
        for w in words:
            assert w in text, (exc, text)
        if "damaged" not in words:
            assert "damaged" not in text and "restore" not in text, text


def test_a_full_disk_through_a_connection_is_named(
    tmp_path: Path, capsys: pytest.CaptureFixture[str], monkeypatch: pytest.MonkeyPatch
) -> None:
    # SQLITE_FULL raised through the store's connection at commit (simulated)
    db = tmp_path / "data" / "tablecoach.sqlite3"
    Store.open(db).close()
    real_connect = sqlite3.connect

    class FullOnCommit(sqlite3.Connection):
        def execute(self, sql: str, *a: object) -> sqlite3.Cursor:  # type: ignore[override]
            if sql.strip().upper() == "COMMIT":
                raise sqlite3.OperationalError("database or disk is full")
            return super().execute(sql, *a)  # type: ignore[arg-type]

    def connect(*a: object, **kw: object) -> sqlite3.Connection:
        if kw.get("uri"):
            return real_connect(*a, **kw)  # type: ignore[arg-type]
        return real_connect(*a, factory=FullOnCommit, **kw)  # type: ignore[arg-type]

    monkeypatch.setattr(sqlite3, "connect", connect)
    f = tmp_path / "t.toml"
    f.write_text('name = "mine"\n', encoding="utf-8")
    code, _, err = cli(capsys, "tables", "add", str(f))
    assert_refused(code, err, "full")
    monkeypatch.setattr(sqlite3, "connect", real_connect)
    with Store.open(db) as s:
        assert s.tables() == {}


def test_permission_and_full_disk_on_files_are_named(
    tmp_path: Path, capsys: pytest.CaptureFixture[str], monkeypatch: pytest.MonkeyPatch
) -> None:
    # tests run as root, where chmod does not stop a write: the OS errors are raised by hand
    good = tmp_path / "good.jsonl"
    good.write_text(json.dumps(_record()) + "\n", encoding="utf-8")
    assert cli(capsys, "import", str(good))[0] == 0

    def full(fd: int) -> None:
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))

    real_fsync = os.fsync
    monkeypatch.setattr(os, "fsync", full)
    out = tmp_path / "out.jsonl"
    code, _, err = cli(capsys, "export", "-o", str(out))
    assert_refused(code, err, "disk is full", "free some space")
    assert not out.exists() and list(tmp_path.glob(".out.jsonl.*")) == []
    monkeypatch.setattr(os, "fsync", real_fsync)

    def denied(self: Path, *a: object, **kw: object) -> None:
        raise PermissionError(errno.EACCES, os.strerror(errno.EACCES), str(self))

    monkeypatch.setenv("TABLECOACH_DATA_DIR", str(tmp_path / "elsewhere" / "data"))
    monkeypatch.setattr(Path, "mkdir", denied)
    code, _, err = cli(capsys, "import", str(good))
    assert_refused(code, err, "cannot create the data folder", "--data-dir")


# ----- backup and restore ------------------------------------------------------------------------


def _table_rows(conn: sqlite3.Connection, name: str) -> list[tuple[object, ...]]:
    """A table's rows in rowid order; a WITHOUT ROWID table's (the kept zone counts) in the
    order SQLite stores them, its primary key's (sqlite.org/withoutrowid.html)."""
    try:
        return conn.execute(f"SELECT * FROM {name} ORDER BY rowid").fetchall()
    except sqlite3.OperationalError:  # no such column: rowid
        return conn.execute(f"SELECT * FROM {name}").fetchall()


def _rows(db: Path) -> dict[str, list[tuple[object, ...]]]:
    """Every row of every table, and the header numbers, read with plain sqlite3."""
    conn = sqlite3.connect(f"file:{db}?mode=ro", uri=True)
    try:
        names = [
            r[0]
            for r in conn.execute(
                "SELECT name FROM sqlite_master WHERE type = 'table' ORDER BY name"
            )
        ]
        out = {n: _table_rows(conn, n) for n in names}
        for pragma in ("user_version", "application_id"):
            out[pragma] = conn.execute(f"PRAGMA {pragma}").fetchall()
        out["schema"] = conn.execute(
            "SELECT type, name, sql FROM sqlite_master ORDER BY name"
        ).fetchall()
        return out
    finally:
        conn.close()


def test_backup_and_restore_reproduce_the_store_exactly(
    tmp_path: Path,
    capsys: pytest.CaptureFixture[str],
    monkeypatch: pytest.MonkeyPatch,
    demo_store: Path,
) -> None:
    old = _copy_store(demo_store, tmp_path / "old" / "data")
    monkeypatch.setenv("TABLECOACH_DATA_DIR", str(old.parent))
    monkeypatch.setenv("TABLECOACH_CONFIG_DIR", str(tmp_path / "old" / "config"))
    # a calibration, a table of one's own, a session and a drill pack of one's own
    assert cli(capsys, "calibrate", "--table", "harbour-9", "--player", "Nadia")[0] == 0
    (tmp_path / "mine.toml").write_text('name = "mine"\nsize = "8ft"\n', encoding="utf-8")
    assert cli(capsys, "tables", "add", str(tmp_path / "mine.toml"))[0] == 0
    packs = tmp_path / "old" / "config" / "drills"
    packs.mkdir(parents=True)
    shutil.copy(REPO / "drills" / "mixed.toml", packs / "my-own.toml")
    with Store.open(old) as s:
        sid = s.start_session("Zoë", "mine", "my-own")
        s.end_session(sid)
    # and a reference line of one's own (schema version 4)
    ref = ("refs", "add", "--family", "cross-corner-bank", "--start", "4,2", "--reading", "5.5")
    assert cli(capsys, *ref, "--player", "Zoë", "--table", "mine")[0] == 0
    backup = tmp_path / "everything.jsonl"
    code, out, err = cli(capsys, "backup", str(backup))
    assert code == 0, err
    counts = _rows(old)
    assert counts["calibrations"] and counts["tables"] and counts["sessions"] and counts["refs"]
    # the new laptop: another data folder and another config folder
    new = tmp_path / "new" / "data" / "tablecoach.sqlite3"
    monkeypatch.setenv("TABLECOACH_DATA_DIR", str(new.parent))
    monkeypatch.setenv("TABLECOACH_CONFIG_DIR", str(tmp_path / "new" / "config"))
    code, out, err = cli(capsys, "restore", str(backup), "--json")
    assert code == 0, err
    assert json.loads(out)["rows"]["attempts"] == len(counts["attempts"])
    assert _rows(new) == _rows(old)
    assert (tmp_path / "new" / "config" / "drills" / "my-own.toml").read_bytes() == (
        packs / "my-own.toml"
    ).read_bytes()
    # and what the demo club's export could not do: its own tables travel
    code, out, err = cli(capsys, "history", "--table", "harbour-9", "--json")
    assert code == 0 and json.loads(out)["attempts"] > 0, err
    code, out, err = cli(capsys, "aim", "--table", "mine", "--player", "Zoë", *SHOT)
    assert code == 0, err


def test_restore_refuses_a_bad_or_cut_backup_and_writes_nothing(
    tmp_path: Path,
    capsys: pytest.CaptureFixture[str],
    monkeypatch: pytest.MonkeyPatch,
    demo_store: Path,
) -> None:
    old = _copy_store(demo_store, tmp_path / "old")
    monkeypatch.setenv("TABLECOACH_DATA_DIR", str(old.parent))
    backup = tmp_path / "b.jsonl"
    assert cli(capsys, "backup", str(backup))[0] == 0
    lines = backup.read_text(encoding="utf-8").splitlines(keepends=True)
    at = next(i for i, line in enumerate(lines) if line.startswith('{"section":"attempts"'))
    row = json.loads(lines[at + 1])
    row[13] = 1e6  # the speed column: beyond 13 m/s
    variants = {
        "cut short": lines[:-1],
        "a bad row": [*lines[: at + 1], json.dumps(row) + "\n", *lines[at + 2 :]],
        "deep nesting": [*lines[: at + 1], "[" * 5000 + "]" * 5000 + "\n", *lines[at + 2 :]],
        "not a backup": [json.dumps(_record()) + "\n"],
        "empty": [],
    }
    monkeypatch.setenv("TABLECOACH_DATA_DIR", str(tmp_path / "new"))
    for what, body in variants.items():
        f = tmp_path / f"{what}.jsonl"
        f.write_text("".join(body), encoding="utf-8")
        code, _, err = cli(capsys, "restore", str(f))
        assert_refused(code, err, str(f))
        assert not (tmp_path / "new").exists() or not any((tmp_path / "new").iterdir()), what
    # into a store that already holds attempts: refused, the store unchanged
    monkeypatch.setenv("TABLECOACH_DATA_DIR", str(old.parent))
    before = _digest(old)
    code, _, err = cli(capsys, "restore", str(backup))
    assert_refused(code, err, "already holds", "--data-dir")
    assert _digest(old) == before


def test_windows_creating_the_same_new_store_at_once_all_log(tmp_path: Path) -> None:
    # Four processes open a store that does not exist yet at the same moment: one builds it,
    # the others use it (the hard link refuses a second), and every attempt logged is there.
    db = tmp_path / "race" / "tablecoach.sqlite3"
    go = tmp_path / "go"
    worker = textwrap.dedent(
        f"""
        import json, sys, time
        from pathlib import Path
        from tablecoach.core import attempt_json, formats
        from tablecoach.core.store import Store
        rec = json.loads(sys.argv[2])
        while not Path({str(go)!r}).exists():
            time.sleep(0.001)
        with Store.open({str(db)!r}) as s:
            for i in range(10):
                rec["speed"] = 1.0 + i / 100
                s.log(attempt_json.attempt_from_json(dict(rec, player="w" + sys.argv[1])))
        print("ok")
        """
    )
    procs = [
        subprocess.Popen(
            [sys.executable, "-c", worker, str(k), json.dumps(_record())],
            cwd=REPO,
            stdout=subprocess.PIPE,
            stderr=subprocess.PIPE,
            text=True,
        )
        for k in range(4)
    ]
    go.touch()
    results = [p.communicate(timeout=120) for p in procs]
    assert [p.returncode for p in procs] == [0, 0, 0, 0], results
    with Store.open(db) as s:
        assert s.count_attempts() == 40
        assert sorted(s.players()) == ["w0", "w1", "w2", "w3"]
    assert sorted(p.name for p in db.parent.iterdir() if not p.name.endswith(("-wal", "-shm"))) == [
        db.name
    ]


def _many(n: int, start: datetime | None = None) -> list[str]:
    """n distinct good records a second apart (invented data)."""
    t0 = start or datetime(2026, 3, 14, 18, 30, tzinfo=UTC)
    return [
        json.dumps(_record(when=(t0 + timedelta(seconds=i)).isoformat().replace("+00:00", "Z")))
        for i in range(n)
    ]


def test_a_bad_last_line_after_many_batches_leaves_the_store_as_it_was(
    tmp_path: Path, capsys: pytest.CaptureFixture[str], monkeypatch: pytest.MonkeyPatch
) -> None:
    # the file is read once; its good lines wait aside until the whole file is known
    from tablecoach.cli import importer

    monkeypatch.setattr(importer, "BATCH", 7)  # many batches before the bad line
    code, _, err = _import(tmp_path, capsys, _many(3))
    assert code == 0, err
    db = tmp_path / "data" / "tablecoach.sqlite3"
    before = db.read_bytes()
    code, _, err = _import(tmp_path, capsys, [*_many(50, datetime(2026, 4, 1, tzinfo=UTC)), "{"])
    assert code == 2 and "nothing imported" in err
    assert db.read_bytes() == before
    with Store.open(db) as s:
        assert s.count_attempts() == 3


def test_duplicates_in_the_file_and_in_the_store_are_skipped_once(
    tmp_path: Path, capsys: pytest.CaptureFixture[str], monkeypatch: pytest.MonkeyPatch
) -> None:
    from tablecoach.cli import importer

    monkeypatch.setattr(importer, "BATCH", 4)
    lines = _many(10)
    code, out, err = _import(tmp_path, capsys, [*lines, *lines[:3], "", *lines[8:]], "--json")
    assert code == 0, err
    assert json.loads(out)["added"] == 10 and json.loads(out)["duplicates"] == 5
    code, out, _ = _import(tmp_path, capsys, [*lines, *_many(2, datetime(2027, 1, 1, tzinfo=UTC))])
    assert code == 0 and "added 2 attempts, 10 already there" in out
    with Store.open(tmp_path / "data" / "tablecoach.sqlite3") as s:
        got = s.attempts()
        assert len(got) == 12 and all(a.session is None for a in got)
        # ids follow the file's order, and the player dates from the first attempt added
        assert [a.when for a in got] == sorted(a.when for a in got)
        assert [a.id for a in got] == sorted(a.id for a in got)
    conn = sqlite3.connect(tmp_path / "data" / "tablecoach.sqlite3")
    created = conn.execute("SELECT created FROM players WHERE name = 'ann'").fetchone()[0]
    conn.close()
    assert created == "2026-03-14T18:30:00.000000+00:00"


def test_json_line_reads_as_the_standard_parser_and_checks_long_numbers() -> None:
    # Reference: json.loads (standard library). Numbers are read by the C parser unless the
    # line holds a run of characters long enough to be an over-long number; either way the
    # values are json.loads's, and an over-long number is still named.
    from tablecoach.core import validate

    long_text = "7" * 60
    lines = [
        json.dumps(_record()),
        json.dumps(_record(note=long_text)),  # a long run inside a string: still read
        json.dumps(_record(speed=1e-300)),
        '{"a": [1, -2.5e10, 3], "b": {"c": null, "d": true}}',
    ]
    for line in lines:
        assert validate.json_line(line) == json.loads(line)
    with pytest.raises(validate.InputError, match="'speed': a number is 60 characters long"):
        validate.json_line(json.dumps(_record()).replace('"speed": 2.0', f'"speed": {long_text}'))
    with pytest.raises(validate.InputError, match="not a number JSON allows"):
        validate.json_line('{"a": NaN}')
    # the limit's edges (RFC 8259, section 6: a number is '-'? then a digit...): 40 characters
    # read, 41 are refused, whether the number starts with a digit or with '-'
    for text in ("1" * 40, "-" + "1" * 39, "1." + "2" * 38, "-1." + "2" * 37):
        assert validate.json_line(f'{{"speed": {text}}}') == json.loads(f'{{"speed": {text}}}')
    for text in ("1" * 41, "-" + "1" * 40, "1." + "2" * 39, "-1." + "2" * 35 + "e-5"):
        with pytest.raises(validate.InputError, match="a number is 41 characters long"):
            validate.json_line(f'{{"speed": {text}}}')
