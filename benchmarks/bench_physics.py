"""Speed and accuracy figures of the physical model (prints figures; asserts nothing).

Run from the repository root:  /work/venv/bin/python benchmarks/bench_physics.py [--quick]

1. median physical aim solve, one rail and three rails (goals: 5 ms and 8 ms), and beside
   them two-rail kicks and banks dealt from the built-in packs (no goal of their own);
2. a convergence point from nine start positions (goal: 150 ms);
3. the reference integration (scipy.integrate.solve_ivp with terminal events,
   tests/core/physics/reference_integrator.py) beside the event simulation on the same
   strokes: largest landing difference (goal: within 1 mm) and the speed ratio (goal: 20 times);
4. the default 9-ft model's three-rail arrivals against a corner-five style diamond system;
5. cushion outcomes of the default model (centre-speed ratios, settled rebound angles) and
   the stepped integration against the fine one.
Times are wall clock and process CPU; the machine is shared, so both are shown.
"""

from __future__ import annotations

import argparse
import math
import statistics
import sys
import time
from pathlib import Path

import numpy as np

from tablecoach.core import aim as aims
from tablecoach.core import drills, shots
from tablecoach.core.aim import physical
from tablecoach.core.physics.cushion import fine_impact, rail_impact, stepped_impact
from tablecoach.core.physics.params import model_of
from tablecoach.core.physics.simulate import simulate
from tablecoach.core.physics.stick import stick_hit
from tablecoach.core.table import builtin_table

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))  # the checkout, for tests/
from tests.core.physics.reference_integrator import integrate

T = builtin_table("9ft")


def _setup(family: str, cue, obj=None, tb=None) -> shots.Setup:
    return shots.make_setup(
        T,
        shots.preset(family),
        T.to_metres(*cue),
        T.to_metres(*obj) if obj else None,
        None,
        T.to_metres(*tb) if tb else None,
    )


def _timed(fn, reps: int) -> tuple[float, float, float, float]:
    """Median wall, median CPU, best wall and best CPU time of ``reps`` calls (seconds)."""
    wall, cpu = [], []
    for _ in range(reps):
        w0, c0 = time.perf_counter(), time.process_time()
        fn()
        wall.append(time.perf_counter() - w0)
        cpu.append(time.process_time() - c0)
    return statistics.median(wall), statistics.median(cpu), min(wall), min(cpu)


def bench_solve(reps: int) -> None:
    print("1. physical aim solve (stepped cushion), median over setups and repeats")
    book = shots.SPEED_PRESETS
    groups = {
        "one rail": [
            (_setup("one-rail-kick", (2, 2.5), None, (6, 2.5)), book["medium"]),
            (_setup("one-rail-kick", (1.5, 2), None, (5.5, 3)), book["lag"]),
            (_setup("cross-side-bank", (2, 1.5), (3, 2.5)), book["medium"]),
        ],
        "three rails": [
            (_setup("three-rail-kick", (1.5, 2), None, (3.5, 1.5)), book["fast"]),
            (_setup("three-rail-kick", (2, 2.5), None, (3.5, 1.2)), book["fast"]),
            (_setup("three-rail-kick", (1.5, 2), None, (3.5, 1.5)), book["power"]),
        ],
    }
    # no goal of their own; dealt from the built-in packs at their dealt strokes (seed 7)
    groups.update(_dealt({"two rails": ("two-rail-kick",), "banks": BANKS}, 3))
    goals = {"one rail": 5.0, "three rails": 8.0}
    for name, cases in groups.items():
        walls, cpus, mins, cmins = [], [], [], []
        for s, sp in cases:
            st = shots.Stroke(sp)
            physical.solve(T, s, st)  # warm
            w, c, mn, cmn = _timed(lambda s=s, st=st: physical.solve(T, s, st), reps)
            walls.append(w)
            cpus.append(c)
            mins.append(mn)
            cmins.append(cmn)
        print(
            f"   {name:12s} median {statistics.median(walls) * 1e3:6.1f} ms wall, "
            f"{statistics.median(cpus) * 1e3:6.1f} ms cpu; best {min(mins) * 1e3:6.1f} ms wall, "
            f"{min(cmins) * 1e3:6.1f} ms cpu"
            + (f" (goal {goals[name]:.0f} ms)" if name in goals else "")
        )
        per_case = ", ".join(f"{c * 1e3:.1f}" for c in cpus)
        print(f"   {'':12s} median cpu per setup: {per_case} ms")


BANKS = ("cross-corner-bank", "cross-side-bank")


def _dealt(
    want: dict[str, tuple[str, ...]], per_group: int
) -> dict[str, list[tuple[shots.Setup, float]]]:
    """The first ``per_group`` setups of the given families dealt from the built-in packs
    (seed 7, every pack item in turn), each with its dealt stroke's speed."""
    rng = np.random.default_rng(7)
    packs = sorted(drills.builtin_drills().items())
    out: dict[str, list[tuple[shots.Setup, float]]] = {name: [] for name in want}
    for i in range(2000):
        _, drill = packs[i % len(packs)]
        item = (i // len(packs)) % len(drill.items)
        dealt = drills.deal_item(T, drill, item, rng)
        for name, fams in want.items():
            if dealt.setup.family.name in fams and len(out[name]) < per_group:
                out[name].append((dealt.setup, dealt.stroke.speed))
        if all(len(v) >= per_group for v in out.values()):
            break
    return out


def bench_convergence(reps: int) -> None:
    s = _setup("one-rail-kick", (2, 1), None, (5, 1.5))
    starts = aims.neighbourhood(T, s.start, 0.4, 3)
    st = shots.Stroke(shots.SPEED_PRESETS["medium"])
    conv = physical.convergence(T, s, starts, st)
    w, c, mn, cmn = _timed(lambda: physical.convergence(T, s, starts, st), reps)
    cx, cy = T.to_diamonds(*conv.point)
    print(
        f"2. convergence from {len(starts)} starts ({len(conv.starts)} kept): "
        f"{w * 1e3:.1f} ms wall, {c * 1e3:.1f} ms cpu, best {mn * 1e3:.1f} ms wall, "
        f"{cmn * 1e3:.1f} ms cpu (goal 150 ms); "
        f"point {cx:.2f},{cy:.2f} diamonds, spread {conv.spread * 1e3:.1f} mm"
    )


def bench_reference(n: int) -> None:
    m = model_of(T)
    rng = np.random.default_rng(1)
    r0 = np.stack((rng.uniform(0.3, 1.0, n), rng.uniform(0.3, 0.9, n)), axis=1)
    ang = rng.uniform(0.5, 1.2, n)
    d = np.stack((np.cos(ang), np.sin(ang)), axis=1)
    v, w = stick_hit(
        m, d, rng.uniform(1.5, 4.0, n), rng.uniform(-0.5, 0.5, n), rng.uniform(-0.5, 0.5, n)
    )
    args = (np.full((n, 1, 2), np.nan), np.zeros((n, 1), dtype=np.int64))
    tail = (np.zeros((n, 2)), np.full(n, -1))

    def event():
        return simulate(m, T, ("right", "foot"), r0, v, w, *args, *tail)

    event()
    we, _, _, _ = _timed(event, 5)
    res = event()
    w0 = time.perf_counter()
    rail, along = integrate(m, T, r0, v, w, 3, t_max=8.0)
    wr = time.perf_counter() - w0
    ok = (rail >= 0) & (res.pocket < 0) & (res.landing_rail >= 0)
    same = ok & (rail == res.landing_rail)
    diff = np.abs(along[same] - res.landing_at[same])
    print(
        f"3. reference integration (solve_ivp, terminal events) vs event simulation, {n} strokes, "
        f"landing after two rails:"
    )
    print(
        f"   {same.sum()} of {ok.sum()} comparable landings on the same rail; largest difference "
        f"{diff.max() * 1e3:.3f} mm (goal 1 mm); event {we * 1e3:.1f} ms, reference "
        f"{wr * 1e3:.0f} ms: event simulation {wr / we:.0f} times faster (goal 20)"
    )


def bench_system() -> None:
    """Corner-five style three-rail system (Alciatore TP 7.2; Jewett, "Diamonds Redux",
    Billiards Digest 2010): cue-ball number = first-rail number + third-rail number.

    Numbering FROM MEMORY, uniform between diamonds: the path is right rail, foot rail, left
    rail. First-rail numbers run along the right rail from the foot-right corner (0) toward the
    head, one per diamond (number = 8 - x); third-rail numbers along the left rail from the
    foot-left corner (0) toward the head (number = 8 - x); cue-ball numbers are where the
    stroke line, run back, meets the left rail: 5 at the head-left corner, one less per diamond
    toward the foot (number = 5 - x). The system assumes running english and a firm stroke:
    here half a tip of running (left) english at the book "fast" stroke.
    """
    m = model_of(T)
    d_ = T.diamond
    rows = []
    for cue_no in (5.0, 4.5, 4.0, 3.5, 3.0):
        for first_no in (1.0, 1.5, 2.0, 2.5):
            third_sys = cue_no - first_no
            if third_sys < 0:
                continue
            origin = np.array([(5.0 - cue_no) * d_, 0.0])
            aim_pt = np.array([(8.0 - first_no) * d_, T.width])
            u = (aim_pt - origin) / np.linalg.norm(aim_pt - origin)
            start = origin + u * (0.6 * d_ / max(u[1], 1e-9))  # 0.6 diamond off the rail
            rows.append((cue_no, first_no, third_sys, start, u))
    n = len(rows)
    r0 = np.array([r[3] for r in rows])
    dirs = np.array([r[4] for r in rows])
    v, w = stick_hit(m, dirs, shots.SPEED_PRESETS["fast"], -0.5, 0.0)
    res = simulate(
        m,
        T,
        ("right", "foot", "left"),
        r0,
        v,
        w,
        np.full((n, 1, 2), np.nan),
        np.zeros((n, 1), dtype=np.int64),
        np.zeros((n, 2)),
        np.full(n, -1),
    )
    print("4. three-rail arrivals of the default 9-ft model vs a corner-five style system")
    print("   (numbering from memory; positive = model arrives nearer the head, diamonds)")
    errs = []
    for i, (cue_no, first_no, third_sys, _, _) in enumerate(rows):
        ok = list(res.hits[i, :3]) == [3, 1, 2]
        if not ok:
            print(f"   cue {cue_no:3.1f} first {first_no:3.1f}: path is not right-foot-left")
            continue
        third_model = 8.0 - res.hit_at[i, 2] / d_
        errs.append(third_model - third_sys)
        print(
            f"   cue {cue_no:3.1f} first {first_no:3.1f}: system third {third_sys:3.1f}, "
            f"model {third_model:4.2f}, difference {third_sys - third_model:+5.2f}"
        )
    if errs:
        e = np.array(errs)
        print(f"   mean difference {-e.mean():+.2f}, RMS {math.sqrt(np.mean(e**2)):.2f} diamonds")


def bench_cushion() -> None:
    m = model_of(T)
    R = m.radius
    print(f"5. cushion outcomes at the default energetic restitution {m.e_cushion:.2f}")

    def rolling(angle: float) -> tuple[np.ndarray, np.ndarray]:
        a = math.radians(angle)
        v = np.array([[math.sin(a), math.cos(a)]])
        return v, np.array([[-v[0, 1] / R, v[0, 0] / R, 0.0]])

    def settled(v: np.ndarray, w: np.ndarray) -> np.ndarray:
        return np.array(
            [5 / 7 * (v[0, 0] + 0.4 * R * w[0, 1]), 5 / 7 * (v[0, 1] - 0.4 * R * w[0, 0])]
        )

    v, w = rolling(0.0)
    v2, w2 = rail_impact(m, np.array([[0.0, 1.0]]), v, w)
    print(
        f"   perpendicular rolling hit: centre speed just after {abs(v2[0, 1]):.3f}, once rolling "
        f"again {np.hypot(*settled(v2, w2)):.3f} (Alciatore: loses about half at steep angles)"
    )
    for ang in (30.0, 45.0, 60.0):
        v, w = rolling(ang)
        v2, w2 = rail_impact(m, np.array([[0.0, 1.0]]), v, w)
        s_ = settled(v2, w2)
        out = math.degrees(math.atan2(abs(s_[0]), abs(s_[1])))
        print(f"   rolling in at {ang:.0f} deg settles at {out:.1f} deg, speed {np.hypot(*s_):.3f}")
    rng = np.random.default_rng(2)
    n = 400
    ang = rng.uniform(math.radians(10), math.radians(80), n)
    v = np.stack((np.sin(ang), np.cos(ang)), axis=1)
    w = rng.normal(0.0, 1.0 / R, (n, 3))
    fv, _ = fine_impact(m, v, w, 2000)
    sv, _ = stepped_impact(m, v, w)
    d = np.degrees(np.abs(np.arctan2(fv[:, 0], -fv[:, 1]) - np.arctan2(sv[:, 0], -sv[:, 1])))
    t_fine = _timed(lambda: fine_impact(m, v[:40], w[:40]), 3)[0]
    t_step = _timed(lambda: stepped_impact(m, v[:40], w[:40]), 15)[0]
    print(
        f"   stepped vs fine on {n} random arrivals: rebound direction within {d.max():.2f} deg "
        f"(median {np.median(d):.2f}); 40 impacts {t_step * 1e3:.2f} ms stepped, "
        f"{t_fine * 1e3:.1f} ms fine ({m.fine_steps} steps)"
    )


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true", help="fewer repeats, coarser reference")
    ap.add_argument("--solve-only", action="store_true", help="section 1 only")
    args = ap.parse_args()
    reps = 5 if args.quick else 15
    bench_solve(reps)
    if args.solve_only:
        return
    bench_convergence(reps)
    bench_reference(8 if args.quick else 16)
    bench_system()
    bench_cushion()


if __name__ == "__main__":
    main()
