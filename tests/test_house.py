"""The house keeps its shape: import contracts, no import cycles, rooms of a livable size."""

from __future__ import annotations

import ast
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
PACKAGE = ROOT / "tablecoach"


def test_import_contracts_hold() -> None:
    # import-linter (the contracts in pyproject.toml): the core imports no rich, textual,
    # render, ui or cli; cli > ui > render > core; the core's own layers.
    exe = shutil.which("lint-imports") or str(Path(sys.executable).with_name("lint-imports"))
    if not Path(exe).exists():
        pytest.fail("lint-imports is not installed: pip install '.[test]'")
    out = subprocess.run([exe], cwd=ROOT, capture_output=True, text=True, timeout=120)
    assert out.returncode == 0, out.stdout[-3000:] + out.stderr[-2000:]
    assert "0 broken" in out.stdout


def _module_graph() -> dict[str, set[str]]:
    """tablecoach's modules and the tablecoach modules each imports (imports inside functions
    count), read with the standard library's ast."""
    mods: dict[str, Path] = {}
    for path in PACKAGE.rglob("*.py"):
        name = ".".join(path.relative_to(ROOT).with_suffix("").parts)
        mods[name.removesuffix(".__init__")] = path
    graph: dict[str, set[str]] = {m: set() for m in mods}
    for mod, path in mods.items():
        is_pkg = path.name == "__init__.py"
        base = mod if is_pkg else mod.rsplit(".", 1)[0]
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            targets: list[str] = []
            if isinstance(node, ast.Import):
                targets = [a.name for a in node.names]
            elif isinstance(node, ast.ImportFrom):
                if node.level:
                    parts = base.split(".")
                    root = ".".join(parts[: len(parts) - node.level + 1])
                    t = f"{root}.{node.module}" if node.module else root
                else:
                    t = node.module or ""
                targets = [t] + [f"{t}.{a.name}" for a in node.names]
            for t in targets:
                while t and t not in mods:
                    t = t.rsplit(".", 1)[0] if "." in t else ""
                if t and t != mod and not (is_pkg and t.startswith(mod + ".")):
                    graph[mod].add(t)
    return graph


def test_no_import_cycles() -> None:
    # Strongly connected components of the import graph (Tarjan's algorithm): every one is a
    # single module.
    graph = _module_graph()
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on: set[str] = set()
    cycles: list[list[str]] = []
    sys.setrecursionlimit(max(10000, sys.getrecursionlimit()))

    def visit(v: str) -> None:
        index[v] = low[v] = len(index)
        stack.append(v)
        on.add(v)
        for w in graph[v]:
            if w not in index:
                visit(w)
                low[v] = min(low[v], low[w])
            elif w in on:
                low[v] = min(low[v], index[w])
        if low[v] == index[v]:
            comp = []
            while True:
                w = stack.pop()
                on.discard(w)
                comp.append(w)
                if w == v:
                    break
            if len(comp) > 1:
                cycles.append(sorted(comp))

    for v in graph:
        if v not in index:
            visit(v)
    assert cycles == []


def test_no_module_over_500_lines() -> None:
    # The project's own rule (DEVELOPERS.md): one concept per module, none over ~500 lines.
    sizes = {
        str(p.relative_to(ROOT)): len(p.read_text(encoding="utf-8").splitlines())
        for p in PACKAGE.rglob("*.py")
    }
    assert {k: n for k, n in sizes.items() if n > 500} == {}
