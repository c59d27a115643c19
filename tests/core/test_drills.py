"""Tests for drill packs: loading, error lines, and dealing clean, reproducible setups."""

from __future__ import annotations

import math
import textwrap
from pathlib import Path

import numpy as np
import pytest
from scipy.spatial.distance import pdist

from tablecoach.core import aim as aims
from tablecoach.core import drills
from tablecoach.core.drill_packs import DrillError, load_drill
from tablecoach.core.drills import deal, sample_setups
from tablecoach.core.shots import PRESETS
from tablecoach.core.table import BUILTIN_TABLES

REPO = Path(__file__).resolve().parents[2]
BUILTIN = sorted(drills.builtin_drills())


def test_builtin_packs_found_in_checkout() -> None:
    assert drills.builtin_dir() == REPO / "drills"
    expected = {
        "one-rail-kicks",
        "two-rail-kicks",
        "three-rail-kicks",
        "cross-corner-banks",
        "cross-side-banks",
        "mixed",
    }
    assert expected <= set(BUILTIN)
    assert drills.DEFAULT_DRILL in BUILTIN


def _reflects(path: tuple[tuple[float, float], ...], rails: tuple[str, ...]) -> None:
    """Law of reflection at each cushion contact (ideal mirror, angle in = angle out):
    the tangential component keeps its value, the normal one changes sign."""
    for k, rail in enumerate(rails, start=1):
        a, c, b = np.array(path[k - 1]), np.array(path[k]), np.array(path[k + 1])
        din = (c - a) / np.linalg.norm(c - a)
        dout = (b - c) / np.linalg.norm(b - c)
        n = 0 if rail in ("head", "foot") else 1  # the axis normal to the rail
        t = 1 - n
        assert din[t] == pytest.approx(dout[t], abs=1e-9)
        assert din[n] == pytest.approx(-dout[n], abs=1e-9)


@pytest.mark.parametrize("table", ["9ft", "8ft", "7ft"])
@pytest.mark.parametrize("name", BUILTIN)
def test_every_pack_deals_clean_setups(name: str, table: str) -> None:
    t = BUILTIN_TABLES[table]
    pack = drills.builtin_drills()[name]
    dealt = deal(t, pack, np.random.default_rng(11))
    assert len(dealt) == pack.count
    for d in dealt:
        s = d.setup
        item = pack.items[d.item]
        assert s.family == item.family
        balls = [p for p in (s.cue, s.object, s.target_ball) if p is not None]
        r = t.ball_radius
        for x, y in balls:  # every centre at least a radius inside the noses (WPA surface)
            assert r - 1e-9 <= x <= t.length - r + 1e-9 and r - 1e-9 <= y <= t.width - r + 1e-9
        # no two balls overlap: centres a diameter apart (scipy's pairwise distances)
        if len(balls) > 1:
            assert pdist(np.array(balls)).min() >= t.ball_diameter - 1e-9
        # each ball inside its region (diamonds)
        named = {"cue": s.cue, "object": s.object, "target": s.target_ball}
        for ball, rects in item.regions.items():
            xd, yd = t.to_diamonds(*named[ball])
            assert any(
                q.x0 - 1e-9 <= xd <= q.x1 + 1e-9 and q.y0 - 1e-9 <= yd <= q.y1 + 1e-9 for q in rects
            )
        # a clean ideal path exists and obeys the mirror law at each cushion
        aim = aims.solve(t, s, d.stroke, "ideal")
        _reflects(aim.path, s.family.rails)
        # a named stroke is a distance: its m/s is this table's (docs/model.md, strokes)
        on_table = [drills.item_speed(t, item, k) for k in range(len(item.speeds))]
        assert d.stroke.speed in on_table
        assert d.label.split(", ")[1] in item.names


def test_deal_is_deterministic_for_a_seed() -> None:
    t = BUILTIN_TABLES["9ft"]
    pack = drills.find_drill("mixed", None)
    a = deal(t, pack, np.random.default_rng(5))
    b = deal(t, pack, np.random.default_rng(5))
    c = deal(t, pack, np.random.default_rng(6))
    assert [(x.setup, x.stroke, x.item, x.label) for x in a] == [
        (x.setup, x.stroke, x.item, x.label) for x in b
    ]
    assert [x.setup for x in a] != [x.setup for x in c]


def test_interleaved_and_blocked_share_slots() -> None:
    t = BUILTIN_TABLES["8ft"]
    pack = drills.find_drill("mixed", None)
    mixed = [d.item for d in deal(t, pack, np.random.default_rng(1), count=40)]
    blocked = [d.item for d in deal(t, pack, np.random.default_rng(1), count=40, blocked=True)]
    assert blocked == sorted(blocked)
    assert sorted(mixed) == blocked
    # weights 2, 1.5, 1, 2, 1.5, 1 of 9 over 40 slots: largest remainders (Hamilton's method)
    weights = [i.weight for i in pack.items]
    quotas = [w / sum(weights) * 40 for w in weights]
    counts = [blocked.count(k) for k in range(len(weights))]
    assert sum(counts) == 40
    assert all(math.floor(q) <= c <= math.ceil(q) for q, c in zip(quotas, counts, strict=True))
    # interleaved: not one long block per item
    runs = 1 + sum(1 for a, b in zip(mixed, mixed[1:], strict=False) if a != b)
    assert runs > len(weights)


def test_sample_setups_gives_clean_candidates() -> None:
    t = BUILTIN_TABLES["7ft"]
    pack = drills.find_drill("cross-corner-banks", None)
    got = sample_setups(t, pack, np.random.default_rng(3), 12)
    assert len(got) == 12
    for d in got:
        assert aims.solve(t, d.setup, d.stroke, "ideal").reading == pytest.approx(d.aim.reading)


# ----- broken packs ---------------------------------------------------------------------------

GOOD = """\
title = "Test pack"
count = 5

[[item]]
family = "one-rail-kick"
speeds = ["slow"]
[item.regions]
cue = { x = [0.8, 2.2], y = [0.6, 2.6] }
target = { x = [2.6, 3.6], y = [0.6, 2.6] }

[[item]]
family = "cross-corner-bank"
speeds = ["medium"]
[item.regions]
object = { x = [5.0, 6.5], y = [2.0, 3.3] }
cue = { x = [3.0, 4.2], y = [1.2, 2.6] }
"""


def _write(tmp_path: Path, text: str, name: str = "pack.toml") -> Path:
    p = tmp_path / name
    p.write_text(textwrap.dedent(text), encoding="utf-8")
    return p


def test_good_pack_loads(tmp_path: Path) -> None:
    d = load_drill(_write(tmp_path, GOOD))
    assert d.name == "pack" and d.count == 5 and len(d.items) == 2
    assert d.items[1].family == PRESETS["cross-corner-bank"]
    assert d.items[1].pockets == ("foot-left",)


@pytest.mark.parametrize(
    ("old", "new", "line", "field"),
    [
        ("count = 5", "count = 0", 2, "count"),
        ("count = 5", 'count = 5\ncolour = "red"', 3, "colour"),
        ('speeds = ["slow"]', 'speeds = ["warp"]', 6, "item[0].speeds"),
        ('family = "cross-corner-bank"', 'family = "cross-corner-bonk"', 12, "item[1].family"),
        ("object = { x = [5.0, 6.5]", "object = { x = [5.0, 9.5]", 15, "item[1].regions.object"),
        ("target = { x", "blocker = { x", 9, "item[0].regions.blocker"),
        ('speeds = ["medium"]', 'speeds = ["medium"]\nweight = -1', 14, "item[1].weight"),
    ],
)
def test_broken_pack_names_file_line_and_field(
    tmp_path: Path, old: str, new: str, line: int, field: str
) -> None:
    assert old in GOOD
    p = _write(tmp_path, GOOD.replace(old, new, 1))
    with pytest.raises(DrillError) as info:
        load_drill(p)
    msg = str(info.value)
    assert msg.startswith(f"{p}, line {line}: field {field!r}"), msg
    assert "\n" not in msg


def test_toml_syntax_error_has_line(tmp_path: Path) -> None:
    p = _write(tmp_path, GOOD.replace('speeds = ["slow"]', 'speeds = ["slow"'))
    with pytest.raises(DrillError, match=rf"^{p}, line \d+: not valid TOML"):
        load_drill(p)


def test_region_without_clean_path(tmp_path: Path) -> None:
    # object ball level with the side pockets: the right-rail contact falls in the side-right
    # mouth, so a cross-side bank has no clean path (common practice, no source)
    text = (
        GOOD.replace('family = "cross-corner-bank"', 'family = "cross-side-bank"')
        .replace(
            "object = { x = [5.0, 6.5], y = [2.0, 3.3] }",
            "object = { x = [4.0, 4.0], y = [2.0, 2.0] }",
        )
        .replace(
            "cue = { x = [3.0, 4.2], y = [1.2, 2.6] }", "cue = { x = [4.0, 4.0], y = [1.0, 1.0] }"
        )
    )
    pack = load_drill(_write(tmp_path, text))
    with pytest.raises(DrillError, match="item 2 .*no clean path on the 9ft table"):
        deal(BUILTIN_TABLES["9ft"], pack, np.random.default_rng(0), blocked=True)


def test_region_too_close_to_cushion(tmp_path: Path) -> None:
    text = GOOD.replace(
        "cue = { x = [0.8, 2.2], y = [0.6, 2.6] }", "cue = { x = [1, 2], y = [0, 0.05] }"
    )
    pack = load_drill(_write(tmp_path, text))
    with pytest.raises(DrillError, match="closer to the cushions"):
        deal(BUILTIN_TABLES["9ft"], pack, np.random.default_rng(0))


def test_user_packs_and_lookup(tmp_path: Path) -> None:
    user = tmp_path / "drills"
    user.mkdir()
    _write(user, GOOD.replace("Test pack", "My mixed"), "mixed.toml")
    _write(user, "count = 'x'", "broken.toml")
    errors: list[str] = []
    found = drills.all_drills(user, errors)
    assert found["mixed"].title == "My mixed"  # the player's own wins
    assert "one-rail-kicks" in found
    assert len(errors) == 1 and "broken.toml" in errors[0]
    with pytest.raises(DrillError):
        drills.all_drills(user)
    assert drills.find_drill("mixed", user).title == "My mixed"
    assert drills.find_drill("mixed", None).title != "My mixed"
    with pytest.raises(DrillError, match="unknown drill pack 'nope': use one of .*one-rail-kicks"):
        drills.find_drill("nope", user)


def test_installed_layout_uses_packaged_packs(tmp_path: Path) -> None:
    """In a wheel, pyproject force-includes drills/ as tablecoach/_drills (hatch's
    force-include); a copy of the package laid out that way must find its packs there."""
    import shutil
    import subprocess
    import sys

    site = tmp_path / "site"
    shutil.copytree(REPO / "tablecoach", site / "tablecoach",
                    ignore=shutil.ignore_patterns("__pycache__"))  # fmt: skip
    shutil.copytree(REPO / "drills", site / "tablecoach" / "_drills")
    code = (
        "from tablecoach.core import drills as d; "
        "print(d.builtin_dir()); print(','.join(sorted(d.builtin_drills())))"
    )
    out = subprocess.run(
        [sys.executable, "-c", code],
        cwd=tmp_path,
        env={"PYTHONPATH": str(site), "PATH": ""},
        capture_output=True,
        text=True,
    )
    assert out.returncode == 0, out.stderr
    where, names = out.stdout.split()
    assert Path(where) == site / "tablecoach" / "_drills"
    assert names.split(",") == BUILTIN


def test_a_named_stroke_is_softer_on_a_shorter_table() -> None:
    # Lengths of travel (docs/model.md): three lengths of a 7-ft table are less distance than
    # three lengths of a 9-ft one, so "medium" there is a softer stroke; m/s given as a number
    # stays as written.
    pack = drills.builtin_drills()["mixed"]
    item = pack.items[0]
    k = item.names.index("medium")
    assert drills.item_speed(BUILTIN_TABLES["7ft"], item, k) < drills.item_speed(
        BUILTIN_TABLES["9ft"], item, k
    )
