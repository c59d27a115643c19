"""Per-row cloth and cushion figures in one batch against separate runs with float figures.

The reference is the same event simulation run once per row with a model of plain floats;
rows must agree exactly (numpy.testing.assert_array_equal, reference library).
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest

from tablecoach.core import shots
from tablecoach.core.aim import physical_batch
from tablecoach.core.physics.params import ROW_FIELDS, BallModel, row_model
from tablecoach.core.physics.simulate import SimResult, sample_path, simulate
from tablecoach.core.physics.stick import stick_hit
from tablecoach.core.table import POCKETS, TableSpec

FIELDS = (
    "walls",
    "hits",
    "hit_at",
    "ball",
    "ball_walls",
    "ball_pos",
    "pocket",
    "pocket_walls",
    "pocket_clean",
    "pocket_pos",
    "landing_rail",
    "landing_at",
    "stop_pos",
    "last_dir",
    "miss",
    "order_ok",
    "scores",
    "rail_vn",
    "end_speed",
)

# three parameter sets inside the ranges table files accept (table_files.py) and cushion
# figures round the defaults (restitution and cushion friction of docs/model.md)
SETS = {
    "mu_s": (0.2, 0.15, 0.3),
    "mu_r": (0.007, 0.012, 0.005),
    "spin_decel": (10.0, 6.0, 14.0),
    "e_cushion": (0.98, 0.9, 0.85),
    "mu_w": (0.14, 0.1, 0.2),
}


def _shots(m: BallModel, n: int) -> tuple[np.ndarray, ...]:
    rng = np.random.default_rng(21)
    r0 = np.stack((rng.uniform(0.3, 2.2, n), rng.uniform(0.3, 0.95, n)), axis=1)
    ang = rng.uniform(0.0, 2 * np.pi, n)
    d = np.stack((np.cos(ang), np.sin(ang)), axis=1)
    v, w = stick_hit(
        m, d, rng.uniform(0.8, 4.0, n), rng.uniform(-0.5, 0.5, n), rng.uniform(-0.5, 0.5, n)
    )
    balls = np.full((n, 2, 2), np.nan)
    balls[:, 0] = np.stack((rng.uniform(0.3, 2.2, n), rng.uniform(0.3, 0.95, n)), axis=1)
    balls[::3, 1] = np.stack((rng.uniform(0.3, 2.2, n), rng.uniform(0.3, 0.95, n)), axis=1)[::3]
    ball_from = np.zeros((n, 2), dtype=np.int64)
    ball_from[:, 1] = 1
    target = balls[:, 0].copy()
    pocket = np.full(n, -1, dtype=np.int64)
    pocket[1::4] = POCKETS.index("foot-right")
    target[1::4] = np.nan
    balls[1::4, 0] = np.nan
    return r0, v, w, balls, ball_from, target, pocket


def _per_row(model: BallModel, n: int) -> BallModel:
    which = np.arange(n) % 3
    return replace(model, **{f: np.array(SETS[f])[which] for f in ROW_FIELDS})


def _row(res: SimResult, i: int) -> dict[str, np.ndarray]:
    return {f: getattr(res, f)[i] for f in FIELDS}


@pytest.mark.parametrize("cushion", ["stepped", "fine"])
def test_per_row_figures_give_each_row_its_own_run(
    model: BallModel, table: TableSpec, cushion: str
) -> None:
    n = 18 if cushion == "fine" else 36
    base = model.with_cushion(cushion)  # type: ignore[arg-type]
    mb = _per_row(base, n)
    r0, v, w, balls, ball_from, target, pocket = _shots(base, n)
    rails = ("right", "foot", "left")
    lean = np.arange(n) % 2 == 0
    res = simulate(mb, table, rails, r0, v, w, balls, ball_from, target, pocket, lean=lean)
    # the figures really differ between the sets: the same stroke ends elsewhere
    assert not np.array_equal(res.end_speed[0:3], res.end_speed[0:1].repeat(3))
    walls_seen = 0
    for i in range(n):
        ms = row_model(mb, i)
        assert all(isinstance(getattr(ms, f), float) for f in ROW_FIELDS)
        one = simulate(
            ms,
            table,
            rails,
            r0[i : i + 1],
            v[i : i + 1],
            w[i : i + 1],
            balls[i : i + 1],
            ball_from[i : i + 1],
            target[i : i + 1],
            pocket[i : i + 1],
            lean=bool(lean[i]),
        )
        got, want = _row(res, i), _row(one, 0)
        for f in FIELDS:
            np.testing.assert_array_equal(got[f], want[f], err_msg=f"row {i}, {f}")
        walls_seen += int(one.walls[0])
    assert walls_seen >= n  # cushions are met, so the cushion figures are exercised


def test_recorded_path_of_a_per_row_batch(model: BallModel, table: TableSpec) -> None:
    # sample_path of a row of a per-row batch against the same row run alone with floats
    n = 9
    mb = _per_row(model, n)
    r0, v, w, balls, ball_from, target, pocket = _shots(model, n)
    args = (balls, ball_from, target, pocket)
    res = simulate(mb, table, ("right", "foot"), r0, v, w, *args, record=True)
    for i in (0, 4, 8):
        one = simulate(
            row_model(mb, i),
            table,
            ("right", "foot"),
            r0[i : i + 1],
            v[i : i + 1],
            w[i : i + 1],
            *(x[i : i + 1] for x in args),
            record=True,
        )
        got = sample_path(mb, res, i, until_ball=False)
        want = sample_path(row_model(mb, i), one, 0, until_ball=False)
        np.testing.assert_array_equal(np.array(got), np.array(want))


def test_aim_rows_launch_and_run_per_row(model: BallModel, table: TableSpec) -> None:
    # A bank's launch (cue ball to the ghost position, then the contact) and its run with one
    # parameter set per row, against each set alone.
    s = shots.make_setup(
        table,
        shots.preset("cross-side-bank"),
        table.to_metres(2, 1.5),
        table.to_metres(3, 2.5),
    )
    pr = physical_batch.problems(table, [s])
    n = 6
    mb = _per_row(model, n)
    reading = np.full(n, pr.centre[0]) + np.repeat([0.0, 0.05], 3)
    stroke = shots.Stroke(2.4)
    res, ln = physical_batch.run(mb, table, pr, np.zeros(n, dtype=np.int64), reading, stroke)
    for i in range(n):
        one, ln1 = physical_batch.run(
            row_model(mb, i), table, pr, np.zeros(1, dtype=np.int64), reading[i : i + 1], stroke
        )
        np.testing.assert_array_equal(ln.v0[i], ln1.v0[0])
        for f in FIELDS:
            np.testing.assert_array_equal(getattr(res, f)[i], getattr(one, f)[0], err_msg=f)


def test_per_row_figures_of_the_wrong_length_are_refused(
    model: BallModel, table: TableSpec
) -> None:
    n = 4
    r0, v, w, balls, ball_from, target, pocket = _shots(model, n)
    bad = replace(model, mu_s=np.full(n + 1, 0.2))
    with pytest.raises(ValueError, match="one per row"):
        simulate(bad, table, ("right",), r0, v, w, balls, ball_from, target, pocket)
