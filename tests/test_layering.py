"""The package layering, read from the source (ast) under the installed names.

- magcheck.fem2d and magcheck.analytic never import each other nor compare;
- magcheck.compare's layers import one way only, downwards (:data:`LAYERS`);
- no module imports itself back through a cycle;
- pyproject.toml installs every package folder.

A lazy import inside a function counts like a top-level one: a cycle or an
upward edge hidden behind a function-level import is still one of the design.
"""

from __future__ import annotations

import ast
import tomllib
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
PARTS = ("fem2d", "analytic", "compare")  # folders beside magcheck/, installed under it
# compare's layers, lowest first: a module may import its own layer and the
# layers below it, never one above.  "errors" is compare/errors.py (one
# exceptions module for the package), "" the package's __init__.
LAYERS = ("", "errors", "design", "models", "reading", "judge", "studies", "outputs", "front")


def _modules() -> dict[str, Path]:
    """Installed name -> source file, for magcheck and its three parts."""
    mods = {"magcheck": ROOT / "magcheck" / "__init__.py"}
    for part in PARTS:
        for p in (ROOT / part).rglob("*.py"):
            name = "magcheck." + ".".join(p.relative_to(ROOT).with_suffix("").parts)
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


def _part(mod: str) -> str:
    return mod.split(".")[1] if mod.count(".") else ""


def _layer(mod: str) -> int:
    """The compare layer's rank of a module of magcheck.compare."""
    parts = mod.split(".")
    return LAYERS.index(parts[2] if len(parts) > 2 else "")


def test_fem2d_and_analytic_stand_alone():
    bad = []
    for mod, deps in _graph().items():
        for d in deps:
            if _part(mod) in ("fem2d", "analytic") and _part(d) != _part(mod):
                bad.append(f"{mod} imports {d}")
    assert bad == []


def test_compare_is_in_layers_importing_downwards_only():
    folders = {p.name for p in (ROOT / "compare").iterdir()
               if p.is_dir() and (p / "__init__.py").exists()}
    files = {p.stem for p in (ROOT / "compare").glob("*.py")} - {"__init__"}
    # every sub-package and top-level module of compare is a known layer
    assert folders | files == set(LAYERS) - {""}
    bad = []
    for mod, deps in _graph().items():
        if _part(mod) != "compare":
            continue
        for d in deps:
            if _part(d) == "compare" and _layer(d) > _layer(mod):
                bad.append(f"{mod} ({LAYERS[_layer(mod)]}) imports {d} ({LAYERS[_layer(d)]})")
    assert bad == []


def test_the_package_root_imports_only_the_front():
    # magcheck/__init__ re-exports the API (lazily): it must not pull in
    # anything else, so that `import magcheck.fem2d` stays a field engine alone
    deps = _graph()["magcheck"]
    assert deps <= {"magcheck.compare.front.api"}


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
    # the walker must see the known edges, or the tests above prove nothing
    graph = _graph()
    c = "magcheck.compare."
    assert c + "design.keys" in graph[c + "reading.casefile"]
    assert c + "design.case" in graph[c + "reading.casefile"]
    assert c + "design.case" in graph[c + "studies.sweep"]
    assert c + "models.drive" in graph[c + "reading.casefile"]  # a relative import, lazy
    assert "magcheck.analytic.fringing" in graph[c + "judge.check"]  # an absolute one
    # the case model does not read files: the reader sits above it
    assert c + "reading.casefile" not in graph[c + "design.case"]
    assert c + "design.families" in graph[c + "design.case"]
    assert ("magcheck.fem2d.layout" in graph["magcheck.fem2d.mesher"]
            or "magcheck.fem2d.layout" in graph["magcheck.fem2d.mesh"])
    # and the layer test would see an upward edge
    assert _layer(c + "models.fe") > _layer(c + "design.case")


def test_pyproject_installs_every_package_folder():
    """pyproject.toml lists the packages explicitly (package-dir maps the
    three folders under magcheck): a folder left out would be missing from
    the installed distribution."""
    conf = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))["tool"]["setuptools"]
    want = {"magcheck"} | {
        "magcheck." + ".".join(p.parent.relative_to(ROOT).parts)
        for part in PARTS for p in (ROOT / part).rglob("__init__.py")}
    assert set(conf["packages"]) == want
    assert conf["package-dir"] == {"magcheck": "magcheck", **{f"magcheck.{p}": p for p in PARTS}}


def test_nothing_imports_the_parts_by_their_bare_folder_names():
    """``import fem2d`` or ``from compare.design...`` works in a checkout (the
    repository root is on sys.path) and nowhere else: installed, only
    ``magcheck.*`` exists, and in a checkout it would load a second copy of
    the module beside ``magcheck.*``'s.  The graph above ignores such names."""
    bare = set(PARTS)
    files = [p for folder in ("magcheck", *PARTS, "tests", "tools", "bench")
             for p in (ROOT / folder).rglob("*.py")]
    bad = []
    for path in files:
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if isinstance(node, ast.ImportFrom) and not node.level:
                names = [node.module or ""]
            elif isinstance(node, ast.Import):
                names = [a.name for a in node.names]
            else:
                continue
            bad += [f"{path.relative_to(ROOT)}:{node.lineno} imports {n}"
                    for n in names if n.split(".")[0] in bare]
    assert len(files) > 100  # the walk saw the tree
    assert bad == []
