"""Progress for long commands: Rich, on stderr, only when stderr is a terminal (a bar for a
counted job, a spinner with the latest message for a calibration fit)."""

from __future__ import annotations

import sys
import time
from collections.abc import Callable, Iterable, Iterator
from contextlib import contextmanager
from typing import Any, TypeVar

T = TypeVar("T")

SHOW_FROM = 20_000
"""Items a job must count at least before a bar is worth drawing."""


def tracked(
    items: Iterable[T],
    total: int | None,
    what: str,
    done: Callable[[], int] | None = None,
    show_from: int = SHOW_FROM,
) -> Iterator[T]:
    """``items`` unchanged; with a terminal on stderr and a long job (``total`` at least
    ``show_from``), a Rich bar on stderr counts them off, or follows ``done()`` (e.g. bytes
    read of a file ``total`` bytes long). Pipes and files never see a bar."""
    if total is None or total < show_from or not sys.stderr.isatty():
        yield from items
        return
    from rich.console import Console
    from rich.progress import Progress

    with Progress(console=Console(stderr=True), transient=True) as bar:
        task = bar.add_task(what, total=total)
        count = 0
        for item in items:
            yield item
            count += 1
            if count % 1000 == 0:
                bar.update(task, completed=done() if done is not None else count)
        bar.update(task, completed=done() if done is not None else count)


@contextmanager
def status(after: float = 1.0) -> Iterator[Callable[[str], None] | None]:
    """A progress callback for a job without a count (a calibration fit): with a terminal on
    stderr, a Rich spinner on stderr showing the latest message once the job has run
    ``after`` seconds, cleared at the end; elsewhere None (pipes and files see nothing)."""
    if not sys.stderr.isatty():
        yield None
        return
    from rich.console import Console

    console = Console(stderr=True)
    t0 = time.perf_counter()
    shown: list[Any] = []

    def say(text: str) -> None:
        if time.perf_counter() - t0 < after:
            return
        if not shown:
            shown.append(console.status(text))
            shown[0].start()
        else:
            shown[0].update(text)

    try:
        yield say
    finally:
        if shown:
            shown[0].stop()


@contextmanager
def working(what: str, show: bool) -> Iterator[None]:
    """A Rich spinner on stderr saying ``what`` while the body runs, for a step that counts
    nothing off (only at a terminal, and when ``show``)."""
    if not show or not sys.stderr.isatty():
        yield
        return
    from rich.console import Console

    with Console(stderr=True).status(what):
        yield
