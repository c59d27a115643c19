"""The physics code's fast paths against the plain formulas they replace."""

from __future__ import annotations

import math

import numpy as np

from tablecoach.core import shots
from tablecoach.core.aim import physical_batch
from tablecoach.core.physics.collide import strike
from tablecoach.core.physics.cushion import rail_impact, stepped_impact
from tablecoach.core.physics.motion import evolve
from tablecoach.core.physics.params import BallModel
from tablecoach.core.physics.roots import T_MIN, first_quadratic_root
from tablecoach.core.physics.simulate import sample_path, simulate
from tablecoach.core.physics.table_arrays import pocket_arrays, segment_table, table_arrays
from tablecoach.core.table import TableSpec, builtin_table


def test_table_constants_are_cached_per_table_object() -> None:
    # The cache is keyed by identity: each table gets its own pockets and cushion stretches,
    # the same as computing them afresh, whatever order the tables come in.
    tables = [builtin_table("9ft"), builtin_table("7ft"), builtin_table("9ft")]
    tables.append(tables[0].with_params(nose_height_ratio=0.6))
    for t in tables * 2:
        (ja, jb, paim, member), (lo, hi) = table_arrays(t)
        ja0, jb0, paim0, member0 = pocket_arrays(t)
        lo0, hi0 = segment_table(t)
        for got, want in ((ja, ja0), (jb, jb0), (paim, paim0), (member, member0)):
            np.testing.assert_array_equal(got, want)
        np.testing.assert_array_equal(lo, lo0)
        np.testing.assert_array_equal(hi, hi0)
    # and two sizes of table really do get different pocket positions
    assert not np.array_equal(table_arrays(tables[0])[0][2], table_arrays(tables[1])[0][2])


def test_strike_matches_the_cross_product_form(model: BallModel) -> None:
    # The contact written out component by component against numpy.cross (reference library):
    # slip u = v + w x (R n), object spin (-R n) x Jt / I.
    rng = np.random.default_rng(7)
    k = 200
    v = rng.normal(size=(k, 2))
    w = rng.normal(size=(k, 3)) * 40.0
    ang = rng.uniform(0.0, 2 * math.pi, k)
    n = np.stack((np.cos(ang), np.sin(ang)), axis=1)
    R = model.radius
    n3 = np.concatenate((n, np.zeros((k, 1))), axis=1)
    v3 = np.concatenate((v, np.zeros((k, 1))), axis=1)
    u = v3 + np.cross(w, R * n3)
    ut = u - np.sum(u * n3, axis=1)[:, None] * n3
    us = np.linalg.norm(ut, axis=1)
    jn = 0.5 * (1.0 + model.e_ball) * np.maximum(np.sum(v * n, axis=1), 0.0)
    mu = (model.mu_ball / 0.06) * (9.951e-3 + 0.108 * np.exp(-1.088 * us))
    jt = np.minimum(mu * jn, us / 7.0)
    jt3 = ut / us[:, None] * jt[:, None]
    want_v = jn[:, None] * n + jt3[:, :2]
    want_w = np.cross(-R * n3, jt3) * (model.mass / model.inertia)
    got_v, got_w = strike(model, v, w, n)
    np.testing.assert_allclose(got_v, want_v, rtol=1e-12, atol=1e-12)
    np.testing.assert_allclose(got_w, want_w, rtol=1e-12, atol=1e-9)


def test_rail_impact_turns_into_the_cushion_frame_and_back(model: BallModel) -> None:
    # The frame change written out against the dot products with x = normal x z, y = normal.
    rng = np.random.default_rng(11)
    normals = np.array([[-1.0, 0.0], [1.0, 0.0], [0.0, -1.0], [0.0, 1.0]])
    k = 40
    nrm = normals[rng.integers(0, 4, k)]
    v = rng.normal(size=(k, 2)) + 2.0 * nrm  # heading into the rail
    w = rng.normal(size=(k, 3)) * 30.0
    ex = np.stack((nrm[:, 1], -nrm[:, 0]), axis=1)
    vc = np.stack((np.sum(v * ex, axis=1), np.sum(v * nrm, axis=1)), axis=1)
    wc = np.stack((np.sum(w[:, :2] * ex, axis=1), np.sum(w[:, :2] * nrm, axis=1), w[:, 2]), axis=1)
    vo, wo = stepped_impact(model, vc, wc)
    want_v = ex * vo[:, :1] + nrm * vo[:, 1:2]
    want_w = np.concatenate((ex * wo[:, :1] + nrm * wo[:, 1:2], wo[:, 2:]), axis=1)
    got_v, got_w = rail_impact(model, nrm, v, w)
    np.testing.assert_allclose(got_v, want_v, rtol=1e-12, atol=1e-12)
    np.testing.assert_allclose(got_w, want_w, rtol=1e-12, atol=1e-9)


def test_first_quadratic_root_agrees_with_numpy_roots() -> None:
    # numpy.roots (reference library): the smallest root in (T_MIN, t_max] where the value
    # falls through zero (2 c2 t + c1 < 0).
    rng = np.random.default_rng(5)
    c = rng.normal(size=(500, 3))
    c[:50, 0] = 0.0  # linear rows
    t_max = rng.uniform(0.5, 3.0, 500)
    got = first_quadratic_root(c[:, 0], c[:, 1], c[:, 2], t_max)
    for i in range(500):
        want = math.inf
        for t in np.roots(c[i]):
            if abs(t.imag) > 1e-12:
                continue
            t = float(t.real)
            if T_MIN < t <= t_max[i] and 2 * c[i, 0] * t + c[i, 1] < 0:
                want = min(want, t)
        if math.isinf(want):
            assert math.isinf(got[i]), i
        else:
            assert abs(got[i] - want) < 1e-9 * max(1.0, want), i


def _setup(t: TableSpec) -> shots.Setup:
    return shots.make_setup(
        t, shots.preset("three-rail-kick"), t.to_metres(3, 3), None, None, t.to_metres(3, 1)
    )


def test_sampled_path_is_each_stretch_evolved_in_turn(table: TableSpec, model: BallModel) -> None:
    # The batched path against evolving every recorded stretch on its own (motion.evolve).
    s = _setup(table)
    pr = physical_batch.problems(table, [s])
    res, _ = physical_batch.run(
        model, table, pr, np.zeros(1, dtype=np.int64), pr.centre[:1], shots.Stroke(3.2), True
    )
    want: list[tuple[float, float]] = []
    for seg in res.segments:
        hit = np.flatnonzero(seg.live == 0)
        if hit.size == 0:
            continue
        j = int(hit[0])
        T = float(seg.dt[j])
        ts = np.linspace(0.0, T, 13) if T > 0 else np.zeros(1)
        for tt in ts:
            rr, _, _ = evolve(
                model,
                seg.r[j : j + 1],
                seg.v[j : j + 1],
                seg.w[j : j + 1],
                seg.phase[j : j + 1],
                np.array([tt]),
            )
            p = (float(rr[0, 0]), float(rr[0, 1]))
            if not want or max(abs(want[-1][0] - p[0]), abs(want[-1][1] - p[1])) > 1e-12:
                want.append(p)
    got = sample_path(model, res, 0, until_ball=False)
    assert len(got) == len(want) > 20
    np.testing.assert_allclose(np.array(got), np.array(want), atol=1e-12)


def test_batched_rows_move_each_row_as_if_alone(model: BallModel, table: TableSpec) -> None:
    # The rows of a batch are independent shots: running them together (each loop pass takes
    # every row to its next wall or ball, through a phase end on the way, so rows at different
    # stages share the pass and its cushion call) must give every row what it gets simulated on
    # its own, one row per call. Strokes of all directions and speeds, with english, two still
    # balls and a three-rail order, so rows meet cushions, balls and pockets at different
    # events.
    rng = np.random.default_rng(11)
    n = 40
    r0 = np.stack((rng.uniform(0.3, 1.0, n), rng.uniform(0.3, 0.9, n)), axis=1)
    ang = rng.uniform(0.0, 2 * math.pi, n)
    sp = rng.uniform(0.6, 4.0, n)
    v0 = np.stack((np.cos(ang), np.sin(ang)), axis=1) * sp[:, None]
    R = model.radius
    w0 = np.stack((-v0[:, 1] / R, v0[:, 0] / R, rng.uniform(-30.0, 30.0, n)), axis=1)
    balls = np.stack((rng.uniform(0.3, 2.2, (n, 2)), rng.uniform(0.3, 1.0, (n, 2))), axis=2)
    ball_from = np.ones((n, 2), dtype=np.int64)
    target = balls[:, 0].copy()
    pocket = np.full(n, -1, dtype=np.int64)
    rails = ("left", "foot", "right")
    lean = rng.uniform(size=n) < 0.5
    got = simulate(model, table, rails, r0, v0, w0, balls, ball_from, target, pocket, lean=lean)
    fields = ("walls", "hits", "hit_at", "ball", "ball_pos", "pocket", "landing_rail")
    fields += ("landing_at", "stop_pos", "miss", "scores", "end_speed", "rail_vn")
    for i in range(n):
        one = slice(i, i + 1)
        alone = simulate(
            model, table, rails, r0[one], v0[one], w0[one], balls[one], ball_from[one],
            target[one], pocket[one], lean=lean[one],
        )  # fmt: skip
        for f in fields:
            np.testing.assert_allclose(
                np.asarray(getattr(got, f)[i], dtype=float),
                np.asarray(getattr(alone, f)[0], dtype=float),
                rtol=1e-9,
                atol=1e-9,
                err_msg=f"row {i}, {f}",
            )


def test_root_read_off_matches_numpy_polynomial() -> None:
    # The solver's quadratic through three samples and the read-off's Lagrange value, on
    # Python floats, against numpy.polynomial (reference library): the Vandermonde system on
    # centred, scaled abscissae, polyroots and polyval.
    from numpy.polynomial import polynomial as P

    from tablecoach.core.aim.physical_solve import _chord_zero, quadratic_zero
    from tablecoach.core.aim.physical_trace import _through

    rng = np.random.default_rng(17)
    checked = 0
    for _ in range(400):
        ss = np.sort(rng.uniform(0.0, 2.0, 5))
        mm = rng.normal(size=5) * 0.05
        j = int(rng.integers(0, 4))
        lin = _chord_zero(ss[j], ss[j + 1], mm[j], mm[j + 1])
        lo, hi = min(ss[j], ss[j + 1]), max(ss[j], ss[j + 1])
        want = lin
        for k in (j - 1, j):
            if k < 0 or k + 2 >= ss.size:
                continue
            c, h = ss[k + 1], ss[k + 2] - ss[k]
            coef = np.linalg.solve(P.polyvander((ss[k : k + 3] - c) / h, 2), mm[k : k + 3])
            roots = P.polyroots(P.polytrim(coef))
            real = roots[np.isreal(roots)].real * h + c
            inside = real[(real >= lo) & (real <= hi)]
            if inside.size:
                want = float(inside[np.argmin(np.abs(inside - lin))])
                break
        got = quadratic_zero(ss, mm, j)
        assert abs(got - want) <= 1e-9 * (1.0 + abs(want)), (ss, mm, j)
        checked += want != lin
        xs, ys, x = ss[:3], mm[:3], float(rng.uniform(ss[0], ss[2]))
        cc, hh = float(np.mean(xs)), float(np.ptp(xs))
        ref = float(P.polyval((x - cc) / hh, np.linalg.solve(P.polyvander((xs - cc) / hh, 2), ys)))
        assert abs(_through(xs, ys, x) - ref) <= 1e-9 * (1.0 + abs(ref))
    assert checked > 50  # the quadratic, not only the chord, was compared


def test_phase_end_is_evolve_then_settle(model: BallModel) -> None:
    # The loop's end-of-phase state (phase_end, prepare_rolled) against the plain path:
    # motion.evolve to the phase's end, motion.settle, motion.prepare (the same arithmetic,
    # so equal to the last bit).
    from tablecoach.core.physics.motion import (
        ROLLING,
        SLIDING,
        phase_end,
        prepare,
        prepare_rolled,
        settle,
    )

    rng = np.random.default_rng(23)
    n = 300
    v = rng.normal(size=(n, 2)) * 2.0
    w = rng.normal(size=(n, 3)) * 40.0
    R = model.radius
    rolling = rng.uniform(size=n) < 0.4
    w[rolling, 0], w[rolling, 1] = -v[rolling, 1] / R, v[rolling, 0] / R
    r = rng.uniform(0.3, 1.0, (n, 2))
    ph, a, t_end = prepare(model, v, w)
    assert set(np.unique(ph)) == {ROLLING, SLIDING}
    want_r, want_v, want_w = evolve(model, r, v, w, ph, t_end, a)
    got_r, got_v, got_vn, got_w = phase_end(model, r, v, w, ph == SLIDING, t_end, a)
    np.testing.assert_array_equal(got_r, want_r)
    np.testing.assert_array_equal(got_v, want_v)
    settle(model, want_v, want_w, np.ones(n, dtype=bool), ph)
    np.testing.assert_array_equal(got_vn, want_v)
    np.testing.assert_array_equal(got_w, want_w)
    ph2, a2, t2 = prepare(model, want_v, want_w)
    moving, a3, t3 = prepare_rolled(model, got_vn)
    assert not np.any(ph2 == SLIDING)
    np.testing.assert_array_equal(moving, ph2 == ROLLING)
    np.testing.assert_array_equal(a3[moving], a2[moving])
    np.testing.assert_array_equal(t3[moving], t2[moving])
