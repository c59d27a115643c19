"""Property-based fuzzing of every edge (issue 15): the command line, the import formats (JSONL,
CSV) and the TOML files (tables, drill packs).

The property is the project's rule for bad input: exit 0 or 2, a refusal is one line, never a
traceback; and ``import --skip-bad`` accounts for every line (added + already there + bad =
lines given). Inputs come from hypothesis (hypothesis.readthedocs.io), mutating good inputs with
values a parser meets in the wild: NaN and infinities (IEEE 754), integers beyond a double,
deep nesting, control characters, calendar edges (Python's datetime: years 1 to 9999).

The example counts are bounded (``FUZZ``: 60 a property) to keep CI short; no deadline, as a
run shares two cores with other work.
"""

from __future__ import annotations

import csv
import io
import json
import math
import os
from pathlib import Path
from typing import Any

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from tablecoach.core import attempt_json, formats

from .clihelp import cli

FUZZ = settings(
    # 60 a property in CI; TABLECOACH_FUZZ_EXAMPLES=1000 for a deeper run by hand
    max_examples=int(os.environ.get("TABLECOACH_FUZZ_EXAMPLES", "60")),
    deadline=None,
    suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow],
)


@pytest.fixture(autouse=True)
def _isolated(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setenv("TABLECOACH_DATA_DIR", str(tmp_path / "data"))
    monkeypatch.setenv("TABLECOACH_CONFIG_DIR", str(tmp_path / "config"))


def _follows_the_rule(code: int, err: str) -> None:
    assert "Traceback" not in err, err
    assert code in (0, 2), (code, err)
    if code == 2:
        lines = err.strip().splitlines()
        assert len(lines) >= 1 and lines[-1].startswith("tablecoach"), err
        assert all(len(line) < 1000 for line in lines), err


# ----- values a parser meets -----------------------------------------------------------------

NUMBER_TEXT = st.one_of(
    st.floats(allow_nan=True, allow_infinity=True).map(repr),
    st.integers(min_value=-(10**450), max_value=10**450).map(str),
    st.sampled_from(
        [
            "nan",
            "-nan",
            "inf",
            "-inf",
            "1e309",
            "-1e309",
            "0x10",
            "1_0",
            "",
            " ",
            "4.5",
            "0",
            "-0.0",
            "8",
            "1e-320",
            "9" * 5000,
            "٣",
            "½",
            "1,2",
            "nan,1",
            "3,1",
            "4,2",
            "1e6,2",
        ]
    ),  # fmt: skip
)
WEIRD_TEXT = st.one_of(
    st.text(max_size=30),
    st.sampled_from(
        [
            "a\x00b",
            "\x1b[2J",
            "p" * 41,
            "p" * 100_000,
            "Europe/Lisbon",
            "UTC",
            "../../etc/passwd",
            "9ft",
            "mixed",
            "0001-01-01",
            "9999-12-31",
            "2026-02-30",
            "1899-12-31",
            "2026-11-30",
        ]
    ),  # fmt: skip
)
VALUE = st.one_of(NUMBER_TEXT, WEIRD_TEXT)

NON_FINITE = st.sampled_from(["nan", "-nan", "NaN", "inf", "-inf", "Infinity", "1e309", "-1e309",
                              "9" * 400, "-" + "9" * 5000])  # fmt: skip
NUM = st.one_of(NON_FINITE, NON_FINITE, NUMBER_TEXT)  # non-finite values about half the time
POINT = st.tuples(NUM, NUM).map(",".join)
SPEED = st.one_of(
    NUM,
    NUM.map(lambda t: t + "L"),
    NUM.map(lambda t: t + " m/s"),
    st.sampled_from(["lag", "power"]),
)
DATE = st.one_of(
    st.dates().map(str), st.sampled_from(["0001-01-01", "9999-12-31", "1899-12-31"]), WEIRD_TEXT
)
OPTIONS = {
    "aim": {"--english": NUM, "--follow": NUM, "--speed": SPEED, "--cue": POINT, "--object": POINT,
            "--target-ball": POINT, "--table": WEIRD_TEXT, "--player": WEIRD_TEXT,
            "--pocket": WEIRD_TEXT, "--rails": WEIRD_TEXT, "--ref-start": POINT,
            "--ref-reading": NUM, "--ref-speed": SPEED, "--ref-english": NUM,
            "--ref-follow": NUM},
    "predict": {"--reading": NUM, "--english": NUM, "--follow": NUM, "--speed": SPEED,
                "--cue": POINT, "--object": POINT, "--table": WEIRD_TEXT},
    "history": {"--since": DATE, "--until": DATE, "--session": NUM, "--tz": WEIRD_TEXT,
                "--player": WEIRD_TEXT, "--table": WEIRD_TEXT},
    "report": {"--width": NUM, "--tz": WEIRD_TEXT, "--player": WEIRD_TEXT},
    "tables show": {},
    "drills show": {"--sample": NUM, "--seed": NUM, "--table": WEIRD_TEXT},
    "export": {"--player": WEIRD_TEXT, "--table": WEIRD_TEXT},
    "speeds": {"--table": WEIRD_TEXT, "--player": WEIRD_TEXT},
    "refs add": {"--start": POINT, "--reading": NUM, "--speed": SPEED, "--english": NUM,
                 "--target-ball": POINT, "--table": WEIRD_TEXT, "--player": WEIRD_TEXT,
                 "--note": WEIRD_TEXT, "--pocket": WEIRD_TEXT},
}  # fmt: skip
BASE = {
    "aim": ["--family", "cross-corner-bank", "--cue", "3,1", "--object", "4,2", "--model",
            "ideal", "--json"],
    "predict": ["--family", "cross-corner-bank", "--cue", "3,1", "--object", "4,2", "--model",
                "ideal", "--reading", "4.5", "--json"],
    "history": ["--json"],
    "speeds": ["--json"],
    "tables show": ["9ft", "--json"],
    "drills show": ["mixed", "--json"],
    "refs add": ["--family", "cross-corner-bank", "--start", "4,2", "--reading", "5.5",
                 "--player", "fuzz", "--json"],
}  # fmt: skip


@st.composite
def command_lines(draw: st.DrawFn, commands: tuple[str, ...]) -> list[str]:
    cmd = draw(st.sampled_from(commands))
    args = [*cmd.split(), *BASE.get(cmd, [])]
    if cmd == "report":
        args += ["--output", "/dev/null/never.svg"]  # never a real file: refused or not reached
    options = OPTIONS[cmd]
    if options:
        for name in draw(st.lists(st.sampled_from(sorted(options)), max_size=4)):
            args.append(f"{name}={draw(options[name])}")
    if cmd in ("tables show", "drills show") and draw(st.booleans()):
        args[2] = draw(WEIRD_TEXT)
    return args


def _no_nan(text: str) -> None:
    raise AssertionError(f"{text} in the output")


SHOT_COMMANDS = ("aim", "predict")
OTHER_COMMANDS = tuple(sorted(set(OPTIONS) - set(SHOT_COMMANDS)))


@FUZZ
@given(args=command_lines(SHOT_COMMANDS))
def test_fuzzed_shot_commands_exit_0_or_2_with_one_line(
    capsys: pytest.CaptureFixture[str], args: list[str]
) -> None:
    _command_line_property(capsys, args)


@FUZZ
@given(args=command_lines(OTHER_COMMANDS))
def test_fuzzed_other_commands_exit_0_or_2_with_one_line(
    capsys: pytest.CaptureFixture[str], args: list[str]
) -> None:
    _command_line_property(capsys, args)


def _command_line_property(capsys: pytest.CaptureFixture[str], args: list[str]) -> None:
    code, out, err = cli(capsys, *args)
    _follows_the_rule(code, err)
    if code == 2:
        assert len(err.strip().splitlines()) == 1, err
    if code == 0 and "--json" in args:
        json.loads(out, parse_constant=_no_nan)  # JSON has no NaN or Infinity (RFC 8259)


# ----- import: JSONL and CSV -----------------------------------------------------------------


def _good() -> dict[str, Any]:
    return {
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
        "note": "",
    }


JSON_LEAF = st.one_of(
    st.none(),
    st.booleans(),
    st.integers(min_value=-(10**1000), max_value=10**1000),
    st.floats(allow_nan=True, allow_infinity=True),
    WEIRD_TEXT,
    st.sampled_from(
        [
            "0001-01-01T00:00:00+01:00",
            "9999-12-31T23:59:59.999999Z",
            "9999-12-31T23:59:59-01:00",
            "1900-01-01T00:00:00+01:00",
            "2200-12-31T23:59:59-14:00",
            "2026-03-14T18:30:00",
        ]
    ),  # fmt: skip
)
JSON_VALUE = st.recursive(
    JSON_LEAF,
    lambda kids: (
        st.lists(kids, max_size=3) | st.dictionaries(st.text(max_size=6), kids, max_size=3)
    ),
    max_leaves=8,
)
PATHS = [
    ("when",), ("player",), ("table",), ("speed",), ("english",), ("follow",), ("result",),
    ("note",), ("v",), ("shot", "cue"), ("shot", "object"), ("shot", "rails"),
    ("shot", "target"), ("shot", "travel"), ("aim", "given"), ("aim", "used"), ("aim", "rail"),
    ("landing", "at"), ("landing", "rail"), ("shot",), ("aim",), ("landing",),
]  # fmt: skip
DEEP = st.integers(20, 6000).map(lambda n: "[" * n + "]" * n)


@st.composite
def jsonl_lines(draw: st.DrawFn) -> str:
    kind = draw(st.sampled_from(["mutate", "mutate", "mutate", "raw", "deep", "good"]))
    if kind == "raw":
        return draw(st.text(max_size=60)).replace("\n", " ").replace("\r", " ")
    if kind == "deep":
        return draw(DEEP)
    rec = _good()
    if kind == "mutate":
        for _ in range(draw(st.integers(1, 3))):
            path = draw(st.sampled_from(PATHS))
            node: Any = rec
            for key in path[:-1]:
                node = node.get(key) if isinstance(node, dict) else None
            if not isinstance(node, dict):  # an earlier change replaced the parent
                continue
            if draw(st.integers(0, 9)) == 0:
                node.pop(path[-1], None)
            else:
                node[path[-1]] = draw(JSON_VALUE)
    text = json.dumps(rec, ensure_ascii=draw(st.booleans()))
    return text.replace("\n", " ").replace("\r", " ").replace("\u2028", " ").replace("\u2029", " ")


def _import_accounts_for_every_line(
    tmp_path: Path, capsys: pytest.CaptureFixture[str], name: str, text: str, lines: int
) -> None:
    f = tmp_path / name
    f.write_text(text, encoding="utf-8")
    code, out, err = cli(capsys, "import", str(f), "--skip-bad", "--json")
    _follows_the_rule(code, err)
    assert code == 0, err  # --skip-bad never gives up on the whole file
    if code == 0:
        data = json.loads(out)
        assert data["added"] + data["duplicates"] + len(data["bad"]) == lines, (data, text[:300])
        physical = text.count("\n") + 1
        assert all(1 <= b[0] <= physical for b in data["bad"]), (data, physical)


@FUZZ
@given(lines=st.lists(jsonl_lines(), min_size=1, max_size=4))
def test_fuzzed_jsonl_imports_account_for_every_line(
    tmp_path: Path, capsys: pytest.CaptureFixture[str], lines: list[str]
) -> None:
    kept = [ln for ln in lines if ln.strip()]
    _import_accounts_for_every_line(
        tmp_path, capsys, "in.jsonl", "".join(ln + "\n" for ln in kept), len(kept)
    )


CELL = st.one_of(NUMBER_TEXT, WEIRD_TEXT, JSON_LEAF.map(str))


@st.composite
def csv_texts(draw: st.DrawFn) -> tuple[str, int]:
    a = attempt_json.attempt_from_json(_good())
    header = list(formats.CSV_COLUMNS)
    n = draw(st.integers(1, 3))
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(header)
    for _ in range(n):
        row = formats.attempt_to_row(a)
        for _ in range(draw(st.integers(1, 3))):
            row[draw(st.integers(0, len(row) - 1))] = draw(CELL).replace("\r", " ")
        if draw(st.integers(0, 9)) == 0:
            row = row[: draw(st.integers(0, len(row)))]
        w.writerow(row)
    return buf.getvalue(), n


@FUZZ
@given(data=csv_texts())
def test_fuzzed_csv_imports_account_for_every_line(
    tmp_path: Path, capsys: pytest.CaptureFixture[str], data: tuple[str, int]
) -> None:
    text, n = data
    rows = [r for r in csv.reader(io.StringIO(text))][1:]
    n = sum(1 for r in rows if any(c.strip() for c in r))
    _import_accounts_for_every_line(tmp_path, capsys, "in.csv", text, n)


# ----- TOML: tables and drill packs --------------------------------------------------------------


def _toml_value(v: Any) -> str:
    """A Python value as TOML (toml.io v1.0.0): strings through JSON's escapes (a subset of
    TOML's basic strings), nan and inf as TOML spells them, arrays and inline tables."""
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, float):
        if math.isnan(v):
            return "nan"
        if math.isinf(v):
            return "inf" if v > 0 else "-inf"
        return repr(v)
    if isinstance(v, int):
        return str(v)
    if isinstance(v, str):
        return json.dumps(v)
    if isinstance(v, list):
        return "[" + ", ".join(_toml_value(x) for x in v) + "]"
    if isinstance(v, dict):
        return "{" + ", ".join(f"{json.dumps(k)} = {_toml_value(x)}" for k, x in v.items()) + "}"
    return '""'


TOML_LEAF = st.one_of(
    st.booleans(),
    st.integers(min_value=-(10**450), max_value=10**450),
    st.floats(allow_nan=True, allow_infinity=True),
    WEIRD_TEXT,
    st.sampled_from(["9ft", "8ft", "7ft", "cross-corner-bank", "medium", "one-rail-kick"]),
)
TOML_VALUE = st.recursive(
    TOML_LEAF,
    lambda kids: (
        st.lists(kids, max_size=3)
        | st.dictionaries(
            st.sampled_from(
                [
                    "a",
                    "x",
                    "mu_slide",
                    "restitution",
                    "corner_mouth",
                    "family",
                    "regions",
                    "speeds",
                    "cue",
                    "object",
                ]
            ),
            kids,
            max_size=3,
        )
    ),  # fmt: skip
    max_leaves=8,
)
TABLE_KEYS = ["name", "description", "length", "width", "size", "base", "ball_diameter",
              "ball_mass", "pockets", "cloth", "cushion", "sight_setback", "other"]  # fmt: skip
PACK_KEYS = ["title", "description", "count", "item", "other"]


@st.composite
def toml_files(draw: st.DrawFn, keys: list[str]) -> str:
    if draw(st.integers(0, 5)) == 0:
        return draw(st.text(max_size=80))
    if draw(st.integers(0, 9)) == 0:
        return "x = " + draw(DEEP) + "\n"
    data = draw(st.dictionaries(st.sampled_from(keys), TOML_VALUE, max_size=5))
    if "item" in keys and draw(st.booleans()):
        data["item"] = [{"family": draw(TOML_VALUE)}, {"family": "cross-corner-bank"}]
    if "name" in keys and draw(st.booleans()):
        data["name"] = "fuzzed"
    return "".join(f"{k} = {_toml_value(v)}\n" for k, v in data.items())


@FUZZ
@given(text=toml_files(TABLE_KEYS))
def test_fuzzed_table_files_exit_0_or_2_with_one_line(
    tmp_path: Path, capsys: pytest.CaptureFixture[str], text: str
) -> None:
    f = tmp_path / "t.toml"
    f.write_text(text, encoding="utf-8", errors="surrogatepass")
    code, out, err = cli(capsys, "tables", "validate", str(f))
    _follows_the_rule(code, err)
    if code == 2:
        assert len(err.strip().splitlines()) == 1, err


@FUZZ
@given(text=toml_files(PACK_KEYS))
def test_fuzzed_drill_packs_exit_0_or_2_with_one_line(
    tmp_path: Path, capsys: pytest.CaptureFixture[str], text: str
) -> None:
    f = tmp_path / "pack.toml"
    f.write_text(text, encoding="utf-8", errors="surrogatepass")
    code, out, err = cli(capsys, "drills", "validate", str(f))
    _follows_the_rule(code, err)
    if code == 2:
        assert len(err.strip().splitlines()) == 1, err


# ----- backups -----------------------------------------------------------------------------------


@pytest.fixture(scope="module")
def small_backup(tmp_path_factory: pytest.TempPathFactory) -> list[str]:
    """The lines of a backup of a small store: two attempts, a table, a calibration, a session."""
    from tablecoach.core import backup
    from tablecoach.core.store import Store

    folder = tmp_path_factory.mktemp("small")
    with Store.open(folder / "s.sqlite3") as s:
        good = attempt_json.attempt_from_json(_good())
        s.import_attempts([good, attempt_json.attempt_from_json(dict(_good(), speed=3.0))])
        sid = s.start_session("ann", "9ft", "mixed")
        s.end_session(sid)
        s.save_calibration("9ft", "ann", {"mu_roll": 0.01}, 2)
        out = folder / "b.jsonl"
        backup.write_backup_file(s, out, None)
    return out.read_text(encoding="utf-8").splitlines(keepends=True)


_RESTORES = iter(range(10**9))


@FUZZ
@given(data=st.data())
def test_fuzzed_backups_restore_whole_or_not_at_all(
    tmp_path: Path, capsys: pytest.CaptureFixture[str], small_backup: list[str], data: Any
) -> None:
    lines = list(small_backup)
    for _ in range(data.draw(st.integers(1, 3))):
        k = data.draw(st.integers(0, len(lines) - 1))
        how = data.draw(st.sampled_from(["value", "drop", "raw", "deep"]))
        if how == "drop":
            del lines[k]
        elif how == "raw":
            lines[k] = data.draw(st.text(max_size=40)).replace("\n", " ") + "\n"
        elif how == "deep":
            lines[k] = data.draw(DEEP) + "\n"
        else:
            try:
                row = json.loads(lines[k])
            except (ValueError, RecursionError):  # an earlier change made it junk already
                continue
            if isinstance(row, list) and row:
                row[data.draw(st.integers(0, len(row) - 1))] = data.draw(JSON_VALUE)
            elif isinstance(row, dict) and row:
                row[data.draw(st.sampled_from(sorted(row)))] = data.draw(JSON_VALUE)
            lines[k] = json.dumps(row) + "\n"
        if not lines:
            break
    f = tmp_path / "b.jsonl"
    f.write_text("".join(lines), encoding="utf-8")
    target = tmp_path / f"new{next(_RESTORES)}"
    code, out, err = cli(capsys, "restore", str(f), "--data-dir", str(target))
    _follows_the_rule(code, err)
    if code == 2:
        assert len(err.strip().splitlines()) == 1, err
        assert not target.exists() or not any(target.iterdir())  # nothing left behind
