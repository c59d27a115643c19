"""The data commands end to end: export/import round trips, drills, tables, paths, bad files."""

from __future__ import annotations

import csv
import io
import json
import subprocess
import sys
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest

from tablecoach import paths
from tablecoach.cli import main
from tablecoach.core.store import Store

from .core.test_formats import random_attempts

REPO = Path(__file__).resolve().parents[1]
DATA = Path(__file__).resolve().parent / "data"


@pytest.fixture(autouse=True)
def _isolated(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setenv("TABLECOACH_DATA_DIR", str(tmp_path / "data"))
    monkeypatch.setenv("TABLECOACH_CONFIG_DIR", str(tmp_path / "config"))


def run_cli(capsys: pytest.CaptureFixture[str], *args: str) -> tuple[int, str, str]:
    code = main(list(args))
    out = capsys.readouterr()
    return code, out.out, out.err


def _strip(items: list) -> list:  # type: ignore[type-arg]
    return [replace(a, id=None, session=None) for a in items]


# ----- paths ----------------------------------------------------------------------------------


def test_paths_follow_the_environment(tmp_path: Path) -> None:
    assert paths.data_dir() == tmp_path / "data"
    assert paths.db_path() == tmp_path / "data" / "tablecoach.sqlite3"
    assert paths.db_path(tmp_path) == tmp_path / "tablecoach.sqlite3"
    assert paths.user_drills_dir() == tmp_path / "config" / "drills"
    assert paths.user_tables_dir() == tmp_path / "config" / "tables"
    assert not (tmp_path / "data").exists() and not (tmp_path / "config").exists()


def test_importing_paths_creates_nothing(tmp_path: Path) -> None:
    env = {"HOME": str(tmp_path), "XDG_DATA_HOME": str(tmp_path / "xd"), "PATH": ""}
    code = (
        "import tablecoach.paths as p; d = p.data_dir(); c = p.config_dir(); "
        "print(d.exists() or c.exists())"
    )
    out = subprocess.run(
        [sys.executable, "-c", code], cwd=REPO, env=env, capture_output=True, text=True
    )
    assert out.returncode == 0, out.stderr
    assert out.stdout.strip() == "False"
    assert list(tmp_path.iterdir()) == []


# ----- export then import -----------------------------------------------------------------------


def _fill(db: Path, n: int = 40) -> list:  # type: ignore[type-arg]
    with Store.open(db) as s:
        sid = s.start_session("ann", "9ft", "mixed")
        for a in random_attempts(n, 9):
            s.log(replace(a, session=sid))
        return s.attempts()


@pytest.mark.parametrize("fmt", ["jsonl", "csv"])
def test_export_then_import_into_empty_data_dir(
    capsys: pytest.CaptureFixture[str], tmp_path: Path, fmt: str
) -> None:
    original = _fill(paths.db_path())
    out_file = tmp_path / f"all.{fmt}"
    code, out, err = run_cli(capsys, "export", "--output", str(out_file))
    assert code == 0, err
    assert f"wrote 40 attempts to {out_file} ({fmt})" in err
    fresh = tmp_path / "fresh"
    code, out, err = run_cli(capsys, "import", str(out_file), "--data-dir", str(fresh))
    assert code == 0, err
    assert out.strip() == "added 40 attempts, 0 already there (skipped)"
    with Store.open(paths.db_path(fresh)) as s:
        again = s.attempts()
    assert _strip(again) == _strip(original)
    assert [a.speed.hex() for a in again] == [a.speed.hex() for a in original]
    code, out, err = run_cli(capsys, "import", str(out_file), "--data-dir", str(fresh))
    assert out.strip() == "added 0 attempts, 40 already there (skipped)"


def test_export_to_stdout_and_filters(capsys: pytest.CaptureFixture[str]) -> None:
    original = _fill(paths.db_path(), 12)
    code, out, _ = run_cli(capsys, "export")
    assert code == 0
    lines = out.splitlines()
    assert len(lines) == 12 and all(json.loads(x)["v"] == 2 for x in lines)
    code, out, _ = run_cli(capsys, "export", "--format", "csv", "--player", "bo")
    rows = list(csv.reader(io.StringIO(out, newline="")))  # notes may hold line breaks
    assert rows[0][:4] == ["v", "when", "player", "table"]
    assert len(rows) - 1 == sum(a.player == "bo" for a in original)


def test_export_with_no_database_is_empty(capsys: pytest.CaptureFixture[str]) -> None:
    code, out, _ = run_cli(capsys, "export")
    assert code == 0 and out == ""
    assert not paths.db_path().exists()


def test_import_reports_every_bad_line_and_imports_nothing(
    capsys: pytest.CaptureFixture[str],
) -> None:
    bad = DATA / "attempts_bad.jsonl"
    code, out, err = run_cli(capsys, "import", str(bad))
    assert code == 2
    lines = err.strip().splitlines()
    assert [ln.split(": ")[1] for ln in lines[:3]] == ["line 2", "line 3", "line 4"]
    assert "3 bad lines, nothing imported" in lines[-1] and "--skip-bad" in lines[-1]
    assert not paths.db_path().exists()  # nothing written at all
    code, out, err = run_cli(capsys, "import", str(bad), "--skip-bad")
    assert code == 0
    assert out.strip() == "added 2 attempts, 0 already there (skipped), 3 bad lines skipped"
    code, out, _ = run_cli(capsys, "import", str(bad), "--skip-bad", "--json")
    data = json.loads(out)
    assert (data["added"], data["duplicates"], [b[0] for b in data["bad"]]) == (0, 2, [2, 3, 4])


def test_import_missing_file_is_one_line(capsys: pytest.CaptureFixture[str], tmp_path) -> None:
    code, out, err = run_cli(capsys, "import", str(tmp_path / "nope.jsonl"))
    assert code == 2 and err.count("\n") == 1 and "cannot read the file" in err


def test_damaged_database_is_one_line_and_kept(
    capsys: pytest.CaptureFixture[str], tmp_path: Path
) -> None:
    db = paths.db_path()
    db.parent.mkdir(parents=True)
    junk = np.random.default_rng(1).bytes(4096)
    db.write_bytes(junk)
    for args in (["import", str(DATA / "attempts_v1.jsonl")], ["export"], ["tables", "list"]):
        code, out, err = run_cli(capsys, *args)
        assert code == 2, args
        assert err.count("\n") == 1 and str(db) in err and "Traceback" not in err
    assert db.read_bytes() == junk


# ----- drills -----------------------------------------------------------------------------------


def test_drills_list_show_validate(capsys: pytest.CaptureFixture[str]) -> None:
    code, out, _ = run_cli(capsys, "drills", "list", "--json")
    names = [d["name"] for d in json.loads(out)["drills"]]
    assert code == 0 and {"mixed", "one-rail-kicks", "cross-side-banks"} <= set(names)
    code, out, _ = run_cli(capsys, "drills", "show", "cross-corner-banks", "--sample", "3",
                           "--seed", "4", "--json")  # fmt: skip
    data = json.loads(out)
    assert code == 0 and data["name"] == "cross-corner-banks" and len(data["sample"]) == 3
    code, out, _ = run_cli(capsys, "drills", "validate", str(REPO / "drills" / "mixed.toml"))
    assert code == 0 and "ok" in out


def test_drills_validate_broken_file(capsys: pytest.CaptureFixture[str], tmp_path: Path) -> None:
    f = tmp_path / "mine.toml"
    f.write_text('title = "x"\n\n[[item]]\nfamily = "one-rail-kik"\n', encoding="utf-8")
    code, out, err = run_cli(capsys, "drills", "validate", str(f))
    assert code == 2
    assert err.strip() == (
        f"tablecoach: {f}, line 4: field 'item[0].family' = 'one-rail-kik' is not a preset; "
        "use one of " + ", ".join(__import__("tablecoach.core.shots").core.shots.PRESETS)
    )


def test_user_drills_dir_is_listed(capsys: pytest.CaptureFixture[str]) -> None:
    user = paths.user_drills_dir()
    user.mkdir(parents=True)
    (user / "mine.toml").write_text(
        (REPO / "drills" / "one-rail-kicks.toml").read_text(encoding="utf-8"), encoding="utf-8"
    )
    code, out, _ = run_cli(capsys, "drills", "list", "--json")
    rows = {d["name"]: d for d in json.loads(out)["drills"]}
    assert rows["mine"]["source"] == "yours" and rows["mixed"]["source"] == "built-in"


# ----- tables -----------------------------------------------------------------------------------

TABLE = 'name = "club-7"\nsize = "7ft"\ndescription = "the club table"\n[cloth]\nmu_roll = 0.012\n'


def test_tables_add_list_show(capsys: pytest.CaptureFixture[str], tmp_path: Path) -> None:
    f = tmp_path / "club.toml"
    f.write_text(TABLE, encoding="utf-8")
    code, out, _ = run_cli(capsys, "tables", "validate", str(f))
    assert code == 0 and "ok" in out and not paths.db_path().exists()
    code, out, _ = run_cli(capsys, "tables", "add", str(f))
    assert code == 0 and "added table 'club-7'" in out
    code, out, _ = run_cli(capsys, "tables", "list", "--json")
    kinds = {t["name"]: t["kind"] for t in json.loads(out)["tables"]}
    assert kinds == {"9ft": "built-in", "8ft": "built-in", "7ft": "built-in", "club-7": "custom"}
    code, out, _ = run_cli(capsys, "tables", "show", "club-7", "--json")
    data = json.loads(out)
    # 7-ft playing surface 78 x 39 in (common practice), 1 in = 0.0254 m exactly
    assert data["length"] == pytest.approx(78 * 0.0254) and data["cloth"]["mu_roll"] == 0.012
    code, out, _ = run_cli(capsys, "tables", "add", str(f))
    assert "replaced table 'club-7'" in out
    # the --data-dir given before the action is kept
    other = tmp_path / "other"
    code, out, _ = run_cli(capsys, "tables", "--data-dir", str(other), "add", str(f))
    assert code == 0 and paths.db_path(other).exists()


def test_tables_errors_are_one_line(capsys: pytest.CaptureFixture[str], tmp_path: Path) -> None:
    f = tmp_path / "bad.toml"
    f.write_text(TABLE.replace("0.012", "0.5"), encoding="utf-8")
    code, _, err = run_cli(capsys, "tables", "add", str(f))
    assert code == 2 and err.count("\n") == 1 and "cloth.mu_roll" in err
    g = tmp_path / "nine.toml"
    g.write_text('name = "9ft"\n', encoding="utf-8")
    code, _, err = run_cli(capsys, "tables", "add", str(g))
    assert code == 2 and "built-in" in err
    code, _, err = run_cli(capsys, "tables", "show", "nope")
    assert code == 2 and "known tables are 9ft, 8ft, 7ft" in err


def test_data_dir_before_the_command_is_used(
    capsys: pytest.CaptureFixture[str], tmp_path: Path
) -> None:
    other = tmp_path / "elsewhere"
    code, out, err = run_cli(
        capsys, "--data-dir", str(other), "import", str(DATA / "attempts_v1.jsonl")
    )
    assert code == 0, err
    assert paths.db_path(other).exists() and not (tmp_path / "data").exists()
    code, out, _ = run_cli(capsys, "--data-dir", str(other), "export")
    assert len(out.splitlines()) == 3


def test_import_in_small_batches_skips_repeats_across_batches(
    capsys: pytest.CaptureFixture[str], tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    # the import streams the file in batches; a line repeated several batches later is still
    # found (in the store, committed by an earlier batch) and skipped, as in one big read
    from tablecoach.cli import importer

    original = _fill(paths.db_path(), 12)
    out_file = tmp_path / "all.jsonl"
    assert run_cli(capsys, "export", "--output", str(out_file))[0] == 0
    lines = out_file.read_text(encoding="utf-8").splitlines()
    out_file.write_text("\n".join([*lines, lines[0], lines[3]]) + "\n", encoding="utf-8")
    monkeypatch.setattr(importer, "BATCH", 5)
    fresh = tmp_path / "fresh"
    code, out, err = run_cli(capsys, "import", str(out_file), "--data-dir", str(fresh))
    assert code == 0, err
    assert out.strip() == "added 12 attempts, 2 already there (skipped)"
    with Store.open(paths.db_path(fresh)) as s:
        assert _strip(s.attempts()) == _strip(original)
