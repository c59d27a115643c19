"""`tablecoach refs list|add|remove`: reference lines kept in the store, one-line refusals."""

from __future__ import annotations

import json

import pytest

from tests.clihelp import assert_refused, cli

ADD = ("refs", "add", "--family", "cross-corner-bank", "--start", "4,2", "--reading", "5.5")


@pytest.fixture(autouse=True)
def _data(tmp_path, monkeypatch):
    monkeypatch.setenv("TABLECOACH_DATA_DIR", str(tmp_path / "data"))
    monkeypatch.setenv("TABLECOACH_CONFIG_DIR", str(tmp_path / "config"))


def test_add_list_remove_round_trip(capsys):
    code, out, err = cli(capsys, "refs", "list")
    assert code == 0 and "no reference lines yet" in out, err
    code, out, err = cli(capsys, *ADD, "--player", "dee", "--note", "my house line", "--json")
    assert code == 0, err
    kept = json.loads(out)
    assert (kept["family"], kept["rails"], kept["pocket"]) == (
        "cross-corner-bank",
        ["right"],
        "foot-left",
    )
    assert kept["start"] == {"x": 4.0, "y": 2.0} and kept["reading"] == 5.5
    # with one player in the store, --player may be left out
    assert (
        cli(
            capsys,
            "refs",
            "add",
            "--family",
            "one-rail-kick",
            "--start",
            "2,1",
            "--reading",
            "3.8",
            "--target-ball",
            "5,1.5",
        )[0]
        == 0
    )
    code, out, _ = cli(capsys, "refs", "list", "--json")
    listed = json.loads(out)
    assert [r["family"] for r in listed] == ["cross-corner-bank", "one-rail-kick"]
    assert listed[1]["target_ball"] == {"x": 5.0, "y": 1.5} and listed[1]["player"] == "dee"
    code, out, _ = cli(capsys, "refs", "list")
    assert "my house line" in out and out.count("\n") == 2
    assert cli(capsys, "refs", "remove", str(kept["id"]))[0] == 0
    code, out, _ = cli(capsys, "refs", "list", "--json")
    assert [r["family"] for r in json.loads(out)] == ["one-rail-kick"]


@pytest.mark.parametrize(
    ("args", "words"),
    [
        (("--reading", "9.5"), ("foot rail first",)),
        (("--start", "9,2"), ("off the table",)),
        (("--start", "4,2", "--speed", "warp"), ("warp",)),
    ],
)
def test_bad_lines_are_refused_and_nothing_is_kept(capsys, args, words):
    base = list(ADD)
    for k in range(0, len(args), 2):
        i = base.index(args[k]) if args[k] in base else None
        if i is None:
            base += [args[k], args[k + 1]]
        else:
            base[i + 1] = args[k + 1]
    code, _, err = cli(capsys, *base, "--player", "dee")
    assert_refused(code, err, *words)
    code, out, _ = cli(capsys, "refs", "list", "--json")
    assert json.loads(out) == []


def test_removing_a_line_that_is_not_there_says_so(capsys):
    assert cli(capsys, *ADD, "--player", "dee")[0] == 0
    code, _, err = cli(capsys, "refs", "remove", "99")
    assert_refused(code, err, "no reference line 99")


def test_the_rotation_drill_is_written_as_a_pack_and_summed_up(capsys, tmp_path):
    code, out, err = cli(capsys, *ADD, "--player", "dee", "--json")
    assert code == 0, err
    ref_id = json.loads(out)["id"]
    code, out, err = cli(capsys, "refs", "drill", str(ref_id), "--json")
    assert code == 0, err
    name = json.loads(out)["drill"]
    assert (tmp_path / "config" / "drills" / f"{name}.toml").is_file()
    # the pack is one of the player's own now: the pack checker deals from it
    code, out, err = cli(capsys, "drills", "show", name, "--sample", "5", "--json")
    assert code == 0, err
    code, out, err = cli(capsys, "refs", "rates", str(ref_id), "--json")
    assert code == 0 and json.loads(out)["by_distance"] == [], err
    code, _, err = cli(capsys, "refs", "drill", "99")
    assert_refused(code, err, "no reference line 99")
