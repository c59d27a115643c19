"""Command-line tests for `tablecoach history`, `report` and `demo`."""

from __future__ import annotations

import json
from datetime import datetime
from zoneinfo import ZoneInfo

import pytest

from tablecoach import cli
from tablecoach.core import shots
from tablecoach.core.records import Attempt, ShotRecord
from tablecoach.core.store import Store
from tablecoach.core.store.query import AttemptQuery


@pytest.fixture
def data_dir(tmp_path, monkeypatch):
    d = tmp_path / "data"
    monkeypatch.setenv("TABLECOACH_DATA_DIR", str(d))  # restored after each test
    return d


@pytest.fixture
def demo_dir(data_dir, capsys):
    assert cli.main(["demo", "--data-dir", str(data_dir), "--weeks", "1", "--seed", "3"]) == 0
    capsys.readouterr()
    return data_dir


def brute(seq):
    """Reference streaks: longest all-hit window and longest all-hit suffix, by trying all."""
    best = max(
        (j - i for i in range(len(seq) + 1) for j in range(i, len(seq) + 1) if all(seq[i:j])),
        default=0,
    )
    cur = max(k for k in range(len(seq) + 1) if all(seq[len(seq) - k :]))
    return best, cur


def stored(d, **filters):
    with Store.open(d / "tablecoach.sqlite3") as s:
        return s.attempts(AttemptQuery(**filters))


def test_history_json_counts_and_streaks(demo_dir, capsys):
    assert cli.main(["history", "--json", "--player", "Nadia"]) == 0
    out = json.loads(capsys.readouterr().out)
    items = stored(demo_dir, player="Nadia")
    assert out["attempts"] == len(items) > 0
    assert out["hits"] == sum(a.result == "hit" for a in items)
    best, cur = brute([a.result == "hit" for a in items])
    assert (out["streaks"]["best"], out["streaks"]["current"]) == (best, cur)
    for fam, f in out["families"].items():
        seq = [a.result == "hit" for a in items if a.shot.family == fam]
        assert f["attempts"] == len(seq) and f["hits"] == sum(seq)
        assert (f["streaks"]["best"], f["streaks"]["current"]) == brute(seq)
    assert out["filters"]["player"] == "Nadia"


def test_history_family_filter_and_text(demo_dir, capsys):
    assert cli.main(["history", "--family", "two-rail-kick"]) == 0
    text = capsys.readouterr().out
    assert "family two-rail-kick" in text
    n = len(stored(demo_dir, family="two-rail-kick"))
    assert f"of {n} made" in text
    assert "streak:" in text and "days in a row" in text


def test_history_text_says_families_in_words_and_json_keeps_names(demo_dir, capsys):
    # the text reads "Two-rail kick" (each preset's title); --json keeps the machine names
    assert cli.main(["history", "--json"]) == 0
    names = set(json.loads(capsys.readouterr().out)["families"])
    assert names and names <= set(shots.PRESETS)
    assert cli.main(["history"]) == 0
    text = capsys.readouterr().out
    for name in names:
        assert shots.PRESETS[name].title in text
        assert name not in text


def test_history_map_is_plain_ascii(demo_dir, capsys):
    assert cli.main(["history", "--player", "Ama", "--map"]) == 0
    text = capsys.readouterr().out
    assert "make rate by where the travelling ball started" in text
    assert text.isascii()  # the shading reads without colour or Unicode
    assert "%" in text.split("started:")[1]


def test_unknown_player_matches_nothing(demo_dir, capsys):
    assert cli.main(["history", "--player", "Nobody"]) == 0
    assert "No attempts match these filters" in capsys.readouterr().out


def test_demo_refuses_a_folder_with_attempts(demo_dir, capsys):
    before = len(stored(demo_dir))
    assert cli.main(["demo"]) == 2
    err = capsys.readouterr().err
    assert "already holds" in err and len(err.strip().splitlines()) == 1
    assert len(stored(demo_dir)) == before


def test_history_without_a_database_creates_nothing(data_dir, capsys):
    assert cli.main(["history"]) == 0
    assert "No attempts yet" in capsys.readouterr().out
    assert not data_dir.exists()


@pytest.mark.parametrize(
    "argv",
    [
        ["history", "--since", "yesterday"],
        ["history", "--tz", "Nowhere/Special"],
        ["history", "--since", "2026-12-02", "--until", "2026-12-01"],
        ["report", "--output", "page.pdf"],
    ],
)
def test_bad_input_is_one_line(data_dir, capsys, argv):
    assert cli.main(argv) == 2
    err = capsys.readouterr().err
    assert err.startswith("tablecoach: ") and len(err.strip().splitlines()) == 1


def test_days_filter_counts_whole_local_days(data_dir, capsys):
    la = ZoneInfo("America/Los_Angeles")
    shot = ShotRecord("cue", ("right",), (2.0, 1.0), None, None, (6.0, 1.0), "one-rail-kick")
    with Store.open(data_dir / "tablecoach.sqlite3") as s:
        sid = s.start_session("zed", "9ft", "")
        for when in (
            datetime(2026, 12, 1, 23, 30, tzinfo=la),
            datetime(2026, 12, 2, 0, 30, tzinfo=la),
        ):
            s.log(
                Attempt(
                    when,
                    "zed",
                    "9ft",
                    shot,
                    1.4,
                    0.0,
                    0.0,
                    "right",
                    4.0,
                    4.0,
                    "hit",
                    "left",
                    6.0,
                    session=sid,
                )
            )
    args = ["history", "--json", "--tz", "America/Los_Angeles"]
    assert cli.main([*args, "--until", "2026-12-01"]) == 0
    assert json.loads(capsys.readouterr().out)["attempts"] == 1
    assert cli.main([*args, "--since", "2026-12-02"]) == 0
    assert json.loads(capsys.readouterr().out)["attempts"] == 1
    # in UTC both fall on 2 December
    assert cli.main(["history", "--json", "--tz", "UTC", "--since", "2026-12-02"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["attempts"] == 2 and out["streaks"]["days"]["best"] == 1


def test_report_writes_svg_and_html(demo_dir, tmp_path, capsys):
    svg = tmp_path / "week.svg"
    assert cli.main(["report", "--player", "Nadia", "-o", str(svg)]) == 0
    text = svg.read_text(encoding="utf-8")
    assert text.lstrip().startswith("<svg")
    assert "tablecoach&#160;report" in text and "Nadia" in text  # Rich writes spaces as &#160;
    html = tmp_path / "one.html"
    sid = stored(demo_dir)[0].session
    assert cli.main(["report", "--session", str(sid), "-o", str(html), "--ascii"]) == 0
    page = html.read_text(encoding="utf-8")
    assert "<html" in page.lower() and f"session {sid}" in page
    assert "Make rate by where the travelling ball started" in page
    assert "wrote" in capsys.readouterr().out
