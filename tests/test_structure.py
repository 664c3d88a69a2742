"""The house's one-way layout, read from the code itself.

The import graph is built from the source with :mod:`ast` (every import,
at module level or inside a function), so a lazy import cannot hide a
back-arrow.  The rules are the layout in DEVELOPERS.md: nothing downstream
reaches back upstream; writers and analyses know nothing of how a build was
made; the build knows nothing of fit/; no import circles.
"""
from __future__ import annotations

import ast
from pathlib import Path

import networkx as nx
import pytest

import mapper

ROOT = Path(mapper.__file__).parent


def _module_name(path: Path) -> str:
    rel = path.relative_to(ROOT.parent).with_suffix("")
    parts = list(rel.parts)
    if parts[-1] == "__init__":
        parts.pop()
    return ".".join(parts)


def _modules() -> dict:
    return {_module_name(p): p for p in sorted(ROOT.rglob("*.py"))}


def _imports(name: str, path: Path, known: set) -> set:
    """Modules of ``mapper`` that ``path`` imports, resolved to the deepest known module."""
    tree = ast.parse(path.read_text(encoding="utf-8"))
    package = name if path.name == "__init__.py" else name.rpartition(".")[0]
    # imports for type checkers only never run: they are no dependency at run time
    typing_only = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.If) and getattr(node.test, "id", None) == "TYPE_CHECKING":
            typing_only.update(id(n) for b in node.body for n in ast.walk(b))
    out = set()
    for node in ast.walk(tree):
        if id(node) in typing_only:
            continue
        targets = []
        if isinstance(node, ast.Import):
            targets = [a.name for a in node.names]
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = package.split(".")
                base = base[:len(base) - node.level + 1]
                mod = ".".join(base + ([node.module] if node.module else []))
            else:
                mod = node.module or ""
            # "from pkg import sub" imports module pkg.sub; "from mod import name" imports mod
            targets = [f"{mod}.{a.name}" if f"{mod}.{a.name}" in known else mod for a in node.names]
        for t in targets:
            while t and t not in known:
                t = t.rpartition(".")[0]
            if t and t != name:
                out.add(t)
    return out


@pytest.fixture(scope="module")
def graph():
    mods = _modules()
    g = nx.DiGraph()
    for name, path in mods.items():
        g.add_node(name)
        for t in _imports(name, path, set(mods)):
            g.add_edge(name, t)
    return g


def _under(name: str, package: str) -> bool:
    return name == package or name.startswith(package + ".")


def test_the_graph_is_read(graph):
    # the rules below mean something only if the graph has the known edges
    assert graph.has_edge("mapper.flow", "mapper.analyze")
    assert graph.has_edge("mapper.build", "mapper.relay_logic")
    assert graph.has_edge("mapper.fit.relay", "mapper.fit.contacts")


@pytest.mark.parametrize("package", ["mapper.write", "mapper.analyze", "mapper.catalog", "mapper.logic",
                                     "mapper.read", "mapper.bringup"])
def test_nothing_downstream_imports_fit(graph, package):
    bad = [(a, b) for a, b in graph.edges if _under(a, package) and _under(b, "mapper.fit")]
    assert not bad, bad


def test_build_imports_nothing_from_fit_analyze_or_write(graph):
    for mod in ("mapper.build", "mapper.relay_logic", "mapper.netlist"):
        bad = [b for b in graph.successors(mod)
               if any(_under(b, p) for p in ("mapper.fit", "mapper.analyze", "mapper.write", "mapper.flow"))]
        assert not bad, (mod, bad)


@pytest.mark.parametrize("package,forbidden", [
    ("mapper.logic", ("mapper.read", "mapper.write", "mapper.fit", "mapper.analyze", "mapper.catalog",
                      "mapper.flow", "mapper.cli", "mapper.build")),
    ("mapper.catalog", ("mapper.read", "mapper.write", "mapper.fit", "mapper.analyze", "mapper.flow",
                        "mapper.cli", "mapper.build")),
    ("mapper.read", ("mapper.write", "mapper.fit", "mapper.analyze", "mapper.flow", "mapper.cli")),
    ("mapper.analyze", ("mapper.write", "mapper.flow", "mapper.cli", "mapper.read")),
    ("mapper.write", ("mapper.flow", "mapper.cli", "mapper.read", "mapper.verify")),
    ("mapper.fit", ("mapper.write", "mapper.analyze", "mapper.flow", "mapper.cli", "mapper.read")),
    # bring-up reads a finished build, as the writers and analyses do
    ("mapper.bringup", ("mapper.fit", "mapper.write", "mapper.flow", "mapper.cli", "mapper.read")),
])
def test_layers_point_one_way(graph, package, forbidden):
    bad = [(a, b) for a, b in graph.edges if _under(a, package) and any(_under(b, f) for f in forbidden)]
    assert not bad, bad


def test_only_flow_and_cli_know_the_whole_line(graph):
    users_of_flow = sorted(a for a, b in graph.edges if b == "mapper.flow")
    assert users_of_flow == ["mapper.cli"], users_of_flow


def test_no_import_circles(graph):
    # a package's __init__ may gather its own modules; any other circle is a fault
    g = graph.copy()
    g.remove_edges_from([(a, b) for a, b in graph.edges if _under(b, a)])
    cycles = list(nx.simple_cycles(g))
    assert not cycles, cycles[:5]


def test_no_private_names_imported_across_modules():
    # a helper used elsewhere gets a public name (tests may reach inside; the package may not)
    bad = []
    for name, path in _modules().items():
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if isinstance(node, ast.ImportFrom) and (node.module or node.level):
                bad += [f"{name}: {a.name}" for a in node.names if a.name.startswith("_") and a.name != "__version__"]
    assert not bad, bad
