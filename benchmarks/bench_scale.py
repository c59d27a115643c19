"""Scale: launch, keys, history, export and import against the size of the history (issue 14).

Stores of N attempts are the demo club's four weeks (core/demo.py) replicated further back in
time, four weeks a copy, written with ``Store.log_many`` in big transactions. Each store is built
ONCE into a cache folder (default: <tmp>/tablecoach-bench-scale; $TABLECOACH_BENCH_CACHE or
--cache) and reused by later runs; an empty store with the club's tables is the baseline ("0").

Every measurement runs in a fresh Python process (imports included) and reports its wall time
and its peak resident memory (resource.getrusage(RUSAGE_SELF).ru_maxrss of that process):

- launch: the practice app (headless, 100 x 30) for the club's first player on their table,
  from spawn to the first card on screen with its aim solved (so h logs a hit); also the
  process's CPU time by then (time.process_time: every thread, the integrity check's too,
  which runs beside the first card);
- keys, in one running app: the first h after the first card; u (undo the last hit: timed until
  its setup is back with its aim), h right after it, and a plain h (the next setup dealt ahead),
  each ``--repeat`` times; an h is timed from the press until the next setup is on the table
  (the store ends as it began: every h is undone); the median, its CPU time (every thread),
  and the fastest and slowest press;
- history: ``tablecoach history --json`` over the whole store;
- export: ``tablecoach export -o FILE`` (JSONL) of the whole store;
- import: ``tablecoach import FILE`` of that export into an empty data folder;
- parse-and-insert floor: the same file parsed line by line (json.loads) and inserted into an
  empty store's attempts table in one transaction with no checks, the zone counts counted in
  one pass (``FLOOR``), and the ratio of import to floor.

Times are wall time with the CPU time (user + system) of the process beside it: on a shared
machine the CPU time is the steadier figure.

Run: python benchmarks/bench_scale.py [--sizes 10000 100000] [--repeat 3]. Prints medians;
asserts nothing (the machines are shared and noisy: goals are read, not enforced).
"""

from __future__ import annotations

import argparse
import json
import os
import shutil
import statistics
import subprocess
import sys
import tempfile
import time
from dataclasses import replace
from datetime import UTC, datetime, timedelta
from pathlib import Path

ROOT = Path(os.environ.get("TABLECOACH_BENCH_ROOT") or Path(__file__).resolve().parents[1])
"""The checkout measured (TABLECOACH_BENCH_ROOT: another one, e.g. an unpacked older commit)."""
NOW = datetime(2026, 11, 30, 21, 0, tzinfo=UTC)
CACHE_VERSION = "2"
"""2: stores of schema 5 (kept zone counts); a cached store of an older schema would be
migrated by the first launch measured, so it is built again."""

LAUNCH = r"""
import asyncio, json, resource, sys, time
t0 = time.perf_counter()
sys.path.insert(0, {root!r})
from tablecoach.ui.app import build_app

async def main():
    app = build_app(table={table!r}, player={player!r}, seed=1, model="ideal")
    async with app.run_test(size=(100, 30)) as pilot:
        while getattr(app.screen, "aim", None) is None:
            await asyncio.sleep(0.002)
        t_ready = time.perf_counter()
        cpu = time.process_time()  # every thread of the process, the integrity check's too
        await pilot.pause()
    rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
    print(json.dumps({{"seconds": t_ready - t0, "cpu": cpu, "rss_kib": rss}}))

asyncio.run(main())
"""

KEYS = r"""
import asyncio, json, resource, sys, time
sys.path.insert(0, {root!r})
from tablecoach.ui.app import build_app

async def main():
    app = build_app(table={table!r}, player={player!r}, seed=2, model="ideal")
    got = {{"first h": [], "h": [], "u": [], "h after u": []}}
    cpu = {{k: [] for k in got}}
    async with app.run_test(size=(100, 30)) as pilot:
        async def settle():
            for _ in range(3):
                await pilot.pause()
                await app.workers.wait_for_complete()
            await pilot.pause()

        async def until(cond):
            while not cond():
                await asyncio.sleep(0.0005)

        async def timed(name, key, done):
            t0, c0 = time.perf_counter(), time.process_time()
            await pilot.press(key)
            await until(done)
            got[name].append(time.perf_counter() - t0)
            cpu[name].append(time.process_time() - c0)

        while getattr(app.screen, "aim", None) is None:
            await asyncio.sleep(0.002)
        screen = app.screen
        s = screen.session
        await settle()
        before = s.pick
        await timed("first h", "h", lambda: s.pick not in (before, None))
        await settle()
        for _ in range({repeat}):
            logged = len(s.logged)
            await timed("u", "u", lambda: len(s.logged) < logged and screen.aim is not None)
            before = s.pick
            await timed("h after u", "h", lambda: s.pick not in (before, None))
            await settle()
            before = s.pick
            await timed("h", "h", lambda: s.pick not in (before, None))
            await settle()
            await pilot.press("u")
            await settle()
        await pilot.press("u")
        await settle()
    rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
    print(json.dumps({{"times": got, "cpu": cpu, "rss_kib": rss}}))

asyncio.run(main())
"""

CLI = r"""
import json, resource, sys, time
t0 = time.perf_counter()
sys.path.insert(0, {root!r})
from tablecoach.cli import main
rc = main({argv!r})
t = time.perf_counter() - t0
r = resource.getrusage(resource.RUSAGE_SELF)
out = {{"seconds": t, "cpu": r.ru_utime + r.ru_stime, "rss_kib": r.ru_maxrss, "rc": rc}}
print(json.dumps(out), file=sys.stderr)
"""

FLOOR = r"""
import hashlib, json, resource, sys, time
t0 = time.perf_counter()
sys.path.insert(0, {root!r})
from tablecoach.core.store import Store
from tablecoach.core.store.rows import COLS
try:
    from tablecoach.core.store.counts import in_bulk
except ImportError:  # an older checkout (TABLECOACH_BENCH_ROOT) without kept counts
    from contextlib import nullcontext
    in_bulk = lambda c, rows: nullcontext()
from tablecoach.paths import db_path

# The floor an import is compared with: parse each JSONL line (json.loads), lay its fields
# flat in the store's column order, insert them all into a fresh store (same table, same
# indexes) in one transaction, the kept zone counts counted in one pass as every big write
# does (store.counts.in_bulk; row by row, the trigger's statement journal alone doubles the
# floor). No checks, no duplicate search, no scratch copy; the identity column gets a hash of
# the line so the rows are as wide as a real import's.
def flat(line):
    o = json.loads(line)
    sh, aim, land = o["shot"], o["aim"], o["landing"] or {{}}
    tgt = sh["target"]
    ball = tgt.get("ball") or (None, None)
    obj = sh["object"] or (None, None)
    return (
        o["when"].replace("Z", "+00:00"), o["player"], o["table"], sh["travel"],
        ",".join(sh["rails"]), sh["family"], tgt.get("pocket"), ball[0], ball[1],
        sh["cue"][0], sh["cue"][1], obj[0], obj[1], o["speed"], o["english"], o["follow"],
        aim["rail"], aim["given"], aim["used"], o["result"], land.get("rail"), land.get("at"),
        o["note"], o["model"], o["drill"], o["zone"], o.get("miss_kind"), None,
        hashlib.sha256(line.encode()).hexdigest(),
    )

marks = ", ".join("?" * (COLS.count(",") + 2))
sql = f"INSERT INTO attempts ({{COLS}}, ident) VALUES ({{marks}})"
with Store.open(db_path()) as s, open({path!r}, encoding="utf-8") as fh:
    with s.transaction() as c, in_bulk(c, 10**9):
        c.executemany(sql, map(flat, fh))
t = time.perf_counter() - t0
r = resource.getrusage(resource.RUSAGE_SELF)
out = {{"seconds": t, "cpu": r.ru_utime + r.ru_stime, "rss_kib": r.ru_maxrss, "rc": 0}}
print(json.dumps(out), file=sys.stderr)
"""


def club_player() -> tuple[str, str]:
    from tablecoach.core import demo

    p = demo.CLUB_PLAYERS[0]
    return p.name, p.table


def build_store(folder: Path, n: int) -> None:
    """The demo club replicated back in time to ``n`` attempts, in ``folder`` (built once)."""
    import numpy as np

    from tablecoach.core import demo
    from tablecoach.core.store import Store
    from tablecoach.paths import db_path

    ready = folder / f"ready-{CACHE_VERSION}"
    if ready.exists():
        return
    folder.mkdir(parents=True, exist_ok=True)
    db_path(folder).unlink(missing_ok=True)
    t0 = time.perf_counter()
    club = demo.make_club(np.random.default_rng(11), NOW, weeks=4, tz=UTC)
    base = sorted((a for s in club.sessions for a in s.attempts), key=lambda a: a.when)
    with Store.open(db_path(folder)) as store:
        for spec in club.tables:
            store.save_table(spec)
        copies = -(-n // len(base))
        extra = copies * len(base) - n  # left off the oldest copy
        pending: list = []
        for k in reversed(range(copies)):  # copy k lies 4k weeks back; oldest written first
            shift = timedelta(weeks=4 * k)
            copy = base[extra:] if k == copies - 1 else base
            pending.extend(replace(a, when=a.when - shift) for a in copy)
            if len(pending) >= 50_000 or k == 0:
                store.log_many(pending)  # one transaction per 50,000 attempts
                pending = []
    ready.write_text(f"{n} attempts, built in {time.perf_counter() - t0:.1f} s\n")
    print(f"  built {n} attempts in {time.perf_counter() - t0:.1f} s into {folder}", flush=True)


def run_child(code: str, data: Path) -> dict[str, float]:
    env = dict(os.environ, TABLECOACH_DATA_DIR=str(data), TABLECOACH_CONFIG_DIR=str(data / "cfg"))
    t0 = time.perf_counter()
    out = subprocess.run(
        [sys.executable, "-c", code], env=env, capture_output=True, text=True, check=False
    )
    wall = time.perf_counter() - t0
    if out.returncode != 0:
        raise SystemExit(f"child failed ({out.returncode}): {out.stderr.strip()[-800:]}")
    got: dict[str, float] = json.loads(out.stdout.strip().splitlines()[-1])
    got["wall"] = wall
    return got


def run_cli(argv: list[str], data: Path, code: str | None = None) -> dict[str, float]:
    env = dict(os.environ, TABLECOACH_DATA_DIR=str(data), TABLECOACH_CONFIG_DIR=str(data / "cfg"))
    code = code or CLI.format(root=str(ROOT), argv=argv)
    t0 = time.perf_counter()
    out = subprocess.run(
        [sys.executable, "-c", code],
        env=env,
        stdout=subprocess.DEVNULL,
        stderr=subprocess.PIPE,
        text=True,
        check=False,
    )
    wall = time.perf_counter() - t0
    last = out.stderr.strip().splitlines()[-1] if out.stderr.strip() else "{}"
    if out.returncode != 0:
        raise SystemExit(f"{argv[0]} failed ({out.returncode}): {out.stderr.strip()[-800:]}")
    got: dict[str, float] = json.loads(last)
    got["wall"] = wall
    return got


def med(values: list[float]) -> float:
    return statistics.median(values)


def figure(runs: list[dict[str, float]]) -> str:
    """Median wall time, median CPU time (user + system) and median peak memory of runs."""
    cpu = [r["cpu"] for r in runs if "cpu" in r]
    said = f"{med([r['seconds'] for r in runs]):.2f} s"
    if cpu:
        said += f" (CPU {med(cpu):.2f} s)"
    return f"{said}, {med([r['rss_kib'] for r in runs]) / 1024:.0f} MiB"


PATHS = ("launch", "keys", "history", "export", "import")
KEY_NAMES = ("first h", "h", "u", "h after u")


def measure(
    folder: Path, repeat: int, player: str, table: str, paths: tuple[str, ...] = PATHS
) -> dict[str, str]:
    row = dict.fromkeys(
        ("launch", *KEY_NAMES, "history --json", "export", "import", "parse-and-insert floor",
         "import / floor"),
        "-",
    )  # fmt: skip
    if "launch" in paths:
        row.update(_launch(folder, repeat, player, table))
    if "keys" in paths:
        keys = run_child(
            KEYS.format(root=str(ROOT), table=table, player=player, repeat=repeat), folder
        )
        for name in KEY_NAMES:
            t: list[float] = keys["times"][name]  # type: ignore[index]
            c: list[float] = keys["cpu"][name]  # type: ignore[index]
            row[name] = (
                f"{med(t) * 1000:.0f} ms (CPU {med(c) * 1000:.0f} ms; "
                f"{min(t) * 1000:.0f}-{max(t) * 1000:.0f})"
            )
    if "history" in paths:
        hist = [run_cli(["history", "--json"], folder) for _ in range(repeat)]
        row["history --json"] = figure(hist)
    if "export" in paths or "import" in paths:
        row.update(_export_import(folder, repeat, "import" in paths))
    return row


def _launch(folder: Path, repeat: int, player: str, table: str) -> dict[str, str]:
    row: dict[str, str] = {}
    launch = [
        run_child(LAUNCH.format(root=str(ROOT), table=table, player=player), folder)
        for _ in range(repeat)
    ]
    row["launch"] = (
        f"{med([r['seconds'] for r in launch]):.2f} s (CPU {med([r['cpu'] for r in launch]):.2f}"
        f" s), {med([r['rss_kib'] for r in launch]) / 1024:.0f} MiB"
    )
    return row


def _export_import(folder: Path, repeat: int, also_import: bool) -> dict[str, str]:
    row: dict[str, str] = {}
    with tempfile.TemporaryDirectory() as tmp:
        out = Path(tmp) / "all.jsonl"
        exp = [run_cli(["export", "-o", str(out)], folder) for _ in range(repeat)]
        row["export"] = figure(exp)
        if not also_import:
            return row
        imp, floor = [], []
        for k in range(repeat):
            fresh = Path(tmp) / f"fresh{k}"
            fresh.mkdir()
            imp.append(run_cli(["import", str(out)], fresh))
            shutil.rmtree(fresh)
            fresh.mkdir()
            floor.append(run_cli([], fresh, FLOOR.format(root=str(ROOT), path=str(out))))
            shutil.rmtree(fresh)
        row["import"] = figure(imp)
        row["parse-and-insert floor"] = figure(floor)
        ratio = med([r["seconds"] for r in imp]) / med([r["seconds"] for r in floor])
        cpu_ratio = med([r["cpu"] for r in imp]) / med([r["cpu"] for r in floor])
        row["import / floor"] = f"{ratio:.2f} (CPU {cpu_ratio:.2f})"
    return row


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sizes", type=int, nargs="+", default=[0, 10_000, 100_000])
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument(
        "--cache",
        type=Path,
        default=Path(
            os.environ.get("TABLECOACH_BENCH_CACHE")
            or Path(tempfile.gettempdir()) / "tablecoach-bench-scale"
        ),
        help="folder of the built stores (default: $TABLECOACH_BENCH_CACHE, else "
        "<tmp>/tablecoach-bench-scale)",
    )
    ap.add_argument("--paths", nargs="+", choices=PATHS, default=list(PATHS))
    args = ap.parse_args()
    sys.path.insert(0, str(ROOT))
    player, table = club_player()
    rows: dict[str, dict[str, str]] = {}
    for n in args.sizes:
        folder = args.cache / str(n)
        build_store(folder, n)
        print(f"measuring {n} attempts ({args.repeat} runs each)...", flush=True)
        rows[str(n)] = measure(folder, args.repeat, player, table, tuple(args.paths))
    paths = list(next(iter(rows.values())))
    print()
    print("| path | " + " | ".join(rows) + " |")
    print("|---|" + "---|" * len(rows))
    for p in paths:
        print(f"| {p} | " + " | ".join(rows[n][p] for n in rows) + " |")


if __name__ == "__main__":
    main()
