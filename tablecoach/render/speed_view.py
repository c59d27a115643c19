"""The aim's reading at the next softer and firmer named strokes, drawn and said per rail."""

from __future__ import annotations

from dataclasses import replace

from rich.text import Text

from tablecoach.core.shots import Aim, Trace
from tablecoach.core.table import TableSpec

from .table_view import ASCII, STYLES, UNICODE, Picture
from .words import num


def with_speeds(table: TableSpec, picture: Picture, paths: list[tuple[str, str, Trace]]) -> Picture:
    """The picture with the softer and firmer paths of the same reading added
    (``paths``: core.aim.speed_neighbours)."""
    soft = [p for kind, _, p in paths if kind == "softer"]
    firm = [p for kind, _, p in paths if kind == "firmer"]

    def d(tr: list[Trace]) -> list[tuple[float, float]]:
        return [table.to_diamonds(*p) for p in tr[0].path] if tr else []

    return replace(picture, softer=d(soft), firmer=d(firm))


def _rails(table: TableSpec, trace: Trace) -> str:
    said = [f"{c.rail} {num(table.along_to_diamonds(c.rail, c.at))}" for c in trace.contacts]
    if trace.landing is not None:
        land = trace.landing
        said.append(f"lands {land.rail} {num(table.along_to_diamonds(land.rail, land.at))}")
    return ", ".join(said) if said else trace.outcome


def speed_lines(
    table: TableSpec,
    aim: Aim,
    paths: list[tuple[str, str, Trace]],
    ascii_only: bool = False,
) -> list[Text]:
    """One line a stroke, led by its glyph: where the same reading meets each rail and lands,
    the played stroke's own line between them. ``paths``: (softer|firmer, stroke name, trace)."""
    g = ASCII if ascii_only else UNICODE
    played = Trace(aim.path, (), aim.landing, True, "", aim.contacts)
    rows: list[tuple[str, str, str]] = []
    for kind, name, tr in paths:
        rows.append((getattr(g, kind), kind, f"{name}: {_rails(table, tr)}"))
    rows.insert(1 if rows and rows[0][1] == "softer" else 0,
                (g.path, "path", f"as played: {_rails(table, played)}"))  # fmt: skip
    out = []
    for ch, style, text in rows:
        t = Text(ch, STYLES[style])
        t.append(f" {text}")
        out.append(t)
    return out
