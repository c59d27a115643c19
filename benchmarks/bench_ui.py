"""Practice app speed: start-up to the first usable screen (goal under 1.0 s) and a key press to
the updated screen (goal under 50 ms).

Run: python benchmarks/bench_ui.py [--repeat 5] [--model ideal|physical]. Each start-up runs in
a fresh Python process (imports included) on a fresh data folder, headless at 100 x 30; "usable"
means the first setup is on the screen with its aim solved, so h logs a hit. Key presses are
timed from the press until a frame showing the result is written: h (log a hit and show the setup
dealt ahead), s (next speed: the aim is solved again in a worker), u (undo: the setup comes back
and its aim is solved again), right in the landing prompt (a quarter diamond). Prints figures;
asserts nothing, since the machines are shared and noisy.
"""

from __future__ import annotations

import argparse
import asyncio
import json
import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]

CHILD = r"""
import asyncio, json, sys, time
t0 = time.perf_counter()
sys.path.insert(0, {root!r})
from tablecoach.ui.app import build_app

async def main():
    app = build_app(player="bench", seed=1, model={model!r})
    t_built = time.perf_counter()
    async with app.run_test(size=(100, 30)) as pilot:
        while getattr(app.screen, "aim", None) is None:
            await asyncio.sleep(0.002)
        await pilot.pause()
        t_ready = time.perf_counter()
    print(json.dumps({{"built": t_built - t0, "ready": t_ready - t0}}))

asyncio.run(main())
"""


BARE = r"""
import asyncio, json, time
t0 = time.perf_counter()
from textual.app import App
from textual.widgets import Footer, Static

class Bare(App):
    def compose(self):
        yield Static("hello")
        yield Footer()

async def main():
    app = Bare()
    async with app.run_test(size=(100, 30)) as pilot:
        await pilot.pause()
        t1 = time.perf_counter()
    print(json.dumps({"ready": t1 - t0}))

asyncio.run(main())
"""


def bare_startup() -> float:
    """Wall time for a bare Textual app (a Static and a Footer): what this machine allows."""
    t0 = time.perf_counter()
    subprocess.run([sys.executable, "-c", BARE], capture_output=True, text=True, check=True)
    return time.perf_counter() - t0


def startup(model: str) -> dict[str, float]:
    """One start-up in a fresh process; wall time from spawn to the first usable screen."""
    with tempfile.TemporaryDirectory() as tmp:
        env = dict(os.environ, TABLECOACH_DATA_DIR=tmp, TABLECOACH_CONFIG_DIR=tmp + "/cfg")
        code = CHILD.format(root=str(ROOT), model=model)
        t0 = time.perf_counter()
        out = subprocess.run(
            [sys.executable, "-c", code], env=env, capture_output=True, text=True, check=True
        )
        wall = time.perf_counter() - t0
    got = json.loads(out.stdout.strip().splitlines()[-1])
    got["wall"] = wall
    return got


async def keys(model: str, repeat: int) -> dict[str, list[float]]:
    """Time key presses in one running app (headless, 100 x 30).

    A press is timed from the key being posted to the app until a frame showing its result has
    been written to the terminal driver (App._display). The setup dealt ahead and the
    convergence point are left to finish between presses, as they do while a player walks
    round the table.
    """
    sys.path.insert(0, str(ROOT))
    from tablecoach.ui.app import build_app

    times: dict[str, list[float]] = {"h": [], "s": [], "u": [], "right (landing prompt)": []}
    with tempfile.TemporaryDirectory() as tmp:
        os.environ["TABLECOACH_DATA_DIR"] = tmp
        os.environ["TABLECOACH_CONFIG_DIR"] = tmp + "/cfg"
        app = build_app(player="bench", seed=2, model=model)
        async with app.run_test(size=(100, 30)) as pilot:
            frames: list[tuple[float, object]] = []
            display = app._display  # noqa: SLF001  (a probe on Textual's display hook)
            probe = [lambda: None]

            def traced(screen, renderable) -> None:  # type: ignore[no-untyped-def]
                display(screen, renderable)
                frames.append((time.perf_counter(), probe[0]()))

            app._display = traced  # type: ignore[method-assign]  # noqa: SLF001

            async def settle() -> None:
                for _ in range(3):
                    await pilot.pause()
                    await app.workers.wait_for_complete()
                await pilot.pause()

            async def timed(key: str, shown) -> float:  # type: ignore[no-untyped-def]
                """Seconds from pressing ``key`` to the first frame for which shown() holds."""
                await settle()
                probe[0] = shown
                frames.clear()
                t0 = time.perf_counter()
                await pilot.press(key)
                while not any(ok for _, ok in frames):
                    await asyncio.sleep(0.0005)
                return next(t for t, ok in frames if ok) - t0

            await settle()
            screen = app.screen
            for _ in range(repeat):
                before = screen.session.pick
                times["h"].append(
                    await timed("h", lambda b=before: screen.session.pick not in (b, None))
                )
                speed = screen.session.stroke.speed
                times["s"].append(
                    await timed(
                        "s",
                        lambda v=speed: screen.aim is not None and screen.aim.stroke.speed != v,
                    )
                )
                shown = screen.session.pick
                times["u"].append(
                    await timed(
                        "u",
                        lambda p=shown: screen.session.pick is not p and screen.aim is not None,
                    )
                )
                await settle()
                await pilot.press("m")
                await pilot.pause()
                prompt = app.screen
                at = prompt.at
                times["right (landing prompt)"].append(
                    await timed("right", lambda p=prompt, a=at: p.at != a)
                )
                await pilot.press("escape")
        app.store.close()
    return times


def ms(xs: list[float]) -> str:
    return f"median {1000 * statistics.median(xs):.1f} ms, worst {1000 * max(xs):.1f} ms"


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--repeat", type=int, default=5)
    ap.add_argument("--model", default="ideal", choices=("ideal", "physical"))
    a = ap.parse_args()
    print(f"practice app, model {a.model}, headless 100 x 30, {a.repeat} runs each")
    runs = [startup(a.model) for _ in range(a.repeat)]
    walls = [r["wall"] for r in runs]
    built = [r["built"] for r in runs]
    print(
        f"start-up to first usable screen (fresh process, imports included): "
        f"median {statistics.median(walls):.3f} s, worst {max(walls):.3f} s (goal < 1.0 s)"
    )
    print(f"  of which imports + store + first session: median {statistics.median(built):.3f} s")
    bare = [bare_startup() for _ in range(a.repeat)]
    print(
        f"  for scale, a bare Textual app (Static + Footer) on this machine: "
        f"median {statistics.median(bare):.3f} s; load average {os.getloadavg()[0]:.2f} "
        f"on {os.cpu_count()} CPUs"
    )
    times = asyncio.run(keys(a.model, a.repeat))
    for key, xs in times.items():
        print(f"key {key!r} to updated screen: {ms(xs)} (goal < 50 ms)")


if __name__ == "__main__":
    main()
