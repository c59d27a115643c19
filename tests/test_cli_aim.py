"""`tablecoach aim` end to end: JSON contract fields and one-line errors."""

import json
import re
import subprocess
import sys

import pytest

from tablecoach.cli import main
from tablecoach.core.geometry import unfold
from tablecoach.core.table import builtin_table


def run_cli(capsys, *args):
    code = main(list(args))
    out = capsys.readouterr()
    return code, out.out, out.err


def test_aim_json_has_the_contract_fields(capsys, tmp_path):
    code, out, err = run_cli(
        capsys,
        "aim",
        "--data-dir",
        str(tmp_path),
        "--family",
        "cross-corner-bank",
        "--cue",
        "3,1",
        "--object",
        "4,2",
        "--model",
        "ideal",
        "--json",
    )
    assert code == 0, err
    data = json.loads(out)
    for key in ("aim", "contacts", "landing", "target_point", "convergence", "margin"):
        assert key in data
    assert data["aim"]["rail"] == "right"
    assert data["contacts"][0]["rail"] == "right"
    assert set(data["landing"]) == {"rail", "at"}
    assert set(data["margin"]) == {"minus", "plus"}
    # the ideal convergence point is the pocket's image across the right rail (method of images)
    t = builtin_table("9ft")
    img = unfold(t.pocket("foot-left").aim, ("right",), (t.reflection_line("right"),)).image
    x, y = t.to_diamonds(*img)
    assert data["convergence"]["x"] == pytest.approx(x, abs=1e-3)
    assert data["convergence"]["y"] == pytest.approx(y, abs=1e-3)
    assert data["convergence"]["spread"] == pytest.approx(0.0, abs=1e-6)


def test_aim_with_structure_instead_of_a_family(capsys, tmp_path):
    code, out, err = run_cli(
        capsys,
        "aim",
        "--data-dir",
        str(tmp_path),
        "--travel",
        "cue",
        "--rails",
        "right,foot",
        "--cue",
        "1,1",
        "--target-ball",
        "3,1",
        "--model",
        "ideal",
        "--json",
    )
    assert code == 0, err
    data = json.loads(out)
    assert [c["rail"] for c in data["contacts"]] == ["right", "foot"]


@pytest.mark.parametrize(
    "args, words",
    [
        (["--family", "cross-corner-bank", "--cue", "3,1", "--object", "9,2"], "off the table"),
        (["--family", "cross-corner-bank", "--cue", "3,1", "--object", "3.05,1"], "overlap"),
        (
            ["--family", "cross-corner-bank", "--cue", "3,1", "--object", "4,2", "--pocket", "x"],
            "unknown pocket",
        ),
        (["--travel", "cue", "--rails", "top", "--cue", "1,1", "--target-ball", "3,1"], "rail"),
        (["--family", "nope", "--cue", "1,1"], "unknown family"),
        (["--family", "one-rail-kick", "--cue", "a,b", "--target-ball", "3,1"], "X,Y"),
    ],
)
def test_bad_input_is_one_line_and_exit_code_2(capsys, tmp_path, args, words):
    code, out, err = run_cli(capsys, "aim", "--data-dir", str(tmp_path), "--model", "ideal", *args)
    assert code == 2
    assert words in err
    assert err.count("\n") == 1 and "Traceback" not in err


def test_aim_text_output_in_ascii_from_a_subprocess(tmp_path):
    out = subprocess.run(
        [sys.executable, "-m", "tablecoach", "aim", "--data-dir", str(tmp_path)]
        + [
            "--family",
            "one-rail-kick",
            "--cue",
            "1,1",
            "--target-ball",
            "5,1",
            "--model",
            "ideal",
            "--ascii",
        ],
        capture_output=True,
        text=True,
        timeout=60,
    )
    assert out.returncode == 0, out.stderr
    # the aim row in the app's words (render/words.py aim_text): "sight R on the right rail"
    assert "aim" in out.stdout and re.search(r"sight [0-9.]+ on the right rail", out.stdout)
    assert "C" in out.stdout and "T" in out.stdout
    assert all(ord(ch) < 128 for line in out.stdout.splitlines()[:24] for ch in line)


def test_data_dir_before_the_command_name_is_kept(tmp_path, monkeypatch):
    # argparse: a subparser default must not overwrite the top-level --data-dir
    import os

    from tablecoach.cli import build_parser

    monkeypatch.delenv("TABLECOACH_DATA_DIR", raising=False)
    args = build_parser().parse_args(["--data-dir", str(tmp_path), "aim", "--cue", "1,1"])
    assert args.data_dir == str(tmp_path)
    args = build_parser().parse_args(["aim", "--data-dir", str(tmp_path), "--cue", "1,1"])
    assert args.data_dir == str(tmp_path)
    assert "TABLECOACH_DATA_DIR" not in os.environ


def test_aim_text_draws_a_far_point_where_it_lies(capsys, tmp_path):
    # a three-rail kick whose point (the JSON's) lies more than 5 diamonds past the foot rail
    # and 4 past the right rail: the diagram zooms out so the point's glyph is drawn where it
    # lies, in true proportion to the frame (a diamond 2k columns and k rows; common practice
    # for terminal cells, no source), not as an arrow at the edge
    code, out, err = run_cli(
        capsys, "aim", "--data-dir", str(tmp_path), "--family", "three-rail-kick", "--cue",
        "3,1.5", "--target-ball", "2,1", "--speed", "fast", "--model", "ideal",
    )  # fmt: skip
    assert code == 0, err
    lines = out.splitlines()
    top = next(i for i, line in enumerate(lines) if line.lstrip().startswith("\u25d9"))
    bottom = max(i for i, line in enumerate(lines) if line.lstrip().startswith("\u25d9"))
    left, right = lines[top].index("\u25d9"), lines[top].rindex("\u25d9")
    cw, rh = (right - left - 2) / 8, (bottom - top - 2) / 4
    assert cw == 2 * rh
    code, js, _ = run_cli(
        capsys, "aim", "--data-dir", str(tmp_path), "--family", "three-rail-kick", "--cue",
        "3,1.5", "--target-ball", "2,1", "--speed", "fast", "--model", "ideal", "--json",
    )  # fmt: skip
    conv = json.loads(js)["convergence"]
    assert conv["x"] > 8 + 5 and conv["y"] > 4 + 4  # beyond the old 5-diamond margin
    found = [(i, j) for i, line in enumerate(lines) for j, ch in enumerate(line) if ch == "\u271a"]
    row, col = top + 1 + conv["y"] * rh, left + 1 + conv["x"] * cw
    assert any(abs(i - row) <= 0.5 and abs(j - col) <= 0.5 for i, j in found), found
    assert not any(a in out for a in "\u2191\u2193\u2190\u2192")  # no arrow at the edge
