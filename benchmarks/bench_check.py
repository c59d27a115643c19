"""The store's safety costs (issue 15): the integrity check and a backup and restore.

``Store.check`` runs SQLite's quick_check once per open store before its first write (the app
starts it on a background thread when it opens). This times it on stores of growing size, with
the cost of one log on a store whose check is done, and a backup and a restore of the largest.

Run: python benchmarks/bench_check.py [--sizes 10000,100000]. Prints medians; asserts nothing,
since the machines are shared and noisy.
"""

from __future__ import annotations

import argparse
import statistics
import sys
import tempfile
import time
from datetime import UTC, datetime
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

import numpy as np
from bench_store import invented

from tablecoach.core import backup
from tablecoach.core.store import Store


def _median(fn, repeat: int) -> float:  # type: ignore[no-untyped-def]
    times = []
    for _ in range(repeat):
        t = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t)
    return statistics.median(times)


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--sizes", default="10000,100000")
    ap.add_argument("--repeat", type=int, default=5)
    args = ap.parse_args()
    rng = np.random.default_rng(3)
    with tempfile.TemporaryDirectory() as tmp:
        for n in (int(x) for x in args.sizes.split(",")):
            db = Path(tmp) / f"s{n}.sqlite3"
            with Store.open(db) as s:
                s.import_attempts(invented(rng, n, datetime(2026, 1, 1, tzinfo=UTC)))
            size_mb = db.stat().st_size / 1e6

            def check(db: Path = db) -> None:
                with Store.open(db) as s:
                    s.check()

            secs = _median(check, args.repeat)
            print(f"{n:>8} attempts ({size_mb:.1f} MB): open + quick check {secs * 1000:.0f} ms")
            with Store.open(db) as s:
                s.check()
                extra = invented(rng, args.repeat, datetime(2027, 1, 1, tzinfo=UTC))
                one = iter(extra)
                log = _median(lambda s=s, one=one: s.log(next(one)), args.repeat)
            print(f"{'':>8} one log after the check: {log * 1000:.1f} ms")
        out = Path(tmp) / "backup.jsonl"
        with Store.open(db) as s:
            t = time.perf_counter()
            summary = backup.write_backup_file(s, out, None)
            wrote = time.perf_counter() - t
        fresh = Path(tmp) / "fresh" / "s.sqlite3"
        with Store.open(fresh) as s:
            t = time.perf_counter()
            backup.restore_file(s, out, None)
            back = time.perf_counter() - t
        print(
            f"backup of {summary.total} rows ({out.stat().st_size / 1e6:.1f} MB): "
            f"{wrote:.2f} s; restore: {back:.2f} s"
        )


if __name__ == "__main__":
    main()
