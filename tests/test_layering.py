"""The package layering: fem2d and analytic never import each other nor compare,
and no module imports itself back through a cycle.

The imports are read from the source (ast), so a lazy import inside a function
counts like a top-level one: a cycle hidden behind a function-level import is
still a cycle of the design.
"""

from __future__ import annotations

import ast
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
PACKAGES = ("fem2d", "analytic", "compare")


def _modules() -> dict[str, Path]:
    mods = {}
    for pkg in PACKAGES:
        for p in (ROOT / pkg).rglob("*.py"):
            name = ".".join(p.relative_to(ROOT).with_suffix("").parts)
            mods[name.removesuffix(".__init__")] = p
    return mods


def _imports(name: str, path: Path, mods: dict[str, Path]) -> set[str]:
    pkg = name if path.name == "__init__.py" else name.rsplit(".", 1)[0]
    out: set[str] = set()
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.ImportFrom):
            base = node.module or ""
            if node.level:
                parts = pkg.split(".")[: len(pkg.split(".")) - node.level + 1]
                base = ".".join(parts + ([base] if base else []))
            for alias in node.names:
                for cand in (f"{base}.{alias.name}", base):
                    if cand in mods:
                        out.add(cand)
                        break
        elif isinstance(node, ast.Import):
            out |= {a.name for a in node.names if a.name in mods}
    out.discard(name)
    # a package's __init__ is imported with any of its modules; not a dependency edge here
    return {d for d in out if not name.startswith(d + ".")}


def _graph() -> dict[str, set[str]]:
    mods = _modules()
    return {m: _imports(m, p, mods) for m, p in mods.items()}


def test_fem2d_and_analytic_stand_alone():
    bad = []
    for mod, deps in _graph().items():
        top = mod.split(".")[0]
        for d in deps:
            other = d.split(".")[0]
            if top in ("fem2d", "analytic") and other != top:
                bad.append(f"{mod} imports {d}")
    assert bad == []


def test_no_import_cycle():
    graph = _graph()
    cycles: list[list[str]] = []
    state: dict[str, int] = {}
    stack: list[str] = []

    def visit(v: str) -> None:
        state[v] = 1
        stack.append(v)
        for w in sorted(graph[v]):
            if state.get(w) == 1:
                cycles.append(stack[stack.index(w):] + [w])
            elif w not in state:
                visit(w)
        stack.pop()
        state[v] = 2

    for v in sorted(graph):
        if v not in state:
            visit(v)
    assert cycles == []


def test_the_graph_is_read():
    # the walker must see the known edges, or the two tests above prove nothing
    graph = _graph()
    assert "compare.keys" in graph["compare.casefile"]
    assert "compare.case" in graph["compare.casefile"]
    assert "compare.case" in graph["compare.sweep"]
    # the case model does not read files: the reader sits above it
    assert "compare.casefile" not in graph["compare.case"]
    assert "compare.families" in graph["compare.case"]
    assert "fem2d.layout" in graph["fem2d.mesher"] or "fem2d.layout" in graph["fem2d.mesh"]
