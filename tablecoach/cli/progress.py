"""A progress bar for long commands: Rich, on stderr, only when stderr is a terminal."""

from __future__ import annotations

import sys
from collections.abc import Iterable, Iterator
from typing import TypeVar

T = TypeVar("T")

SHOW_FROM = 20_000
"""Items a job must count at least before a bar is worth drawing."""


def tracked(items: Iterable[T], total: int | None, what: str) -> Iterator[T]:
    """``items`` unchanged; with a terminal on stderr and a long job (``total`` at least
    SHOW_FROM), a Rich bar on stderr counts them off. Pipes and files never see a bar."""
    if total is None or total < SHOW_FROM or not sys.stderr.isatty():
        yield from items
        return
    from rich.console import Console
    from rich.progress import Progress

    with Progress(console=Console(stderr=True), transient=True) as bar:
        task = bar.add_task(what, total=total)
        done = 0
        for item in items:
            yield item
            done += 1
            if done % 1000 == 0:
                bar.update(task, completed=done)
        bar.update(task, completed=done)
