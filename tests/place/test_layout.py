"""The placement package stands where DEVELOPERS.md puts it: after the fit, reading a Build only.

The imports are read from the source with :mod:`ast` (every import, lazy ones too), as
``tests/test_structure.py`` does for the rest of the house.
"""
from __future__ import annotations

import ast
from pathlib import Path

import mapper

PLACE = Path(mapper.__file__).parent / "place"
ALLOWED = {"mapper.build", "mapper.catalog", "mapper.errors", "mapper.place"}


def _imports(path: Path) -> set:
    out = set()
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.ImportFrom) and node.level:
            base = ["mapper", "place"][:3 - node.level]  # level 1: mapper.place, level 2: mapper
            out.add(".".join(base + ([node.module] if node.module else [])))
        elif isinstance(node, ast.ImportFrom) and (node.module or "").startswith("mapper"):
            out.add(node.module)
        elif isinstance(node, ast.Import):
            out.update(a.name for a in node.names if a.name.startswith("mapper"))
    return out


def test_place_imports_only_build_catalog_and_errors():
    seen = set()
    for path in sorted(PLACE.glob("*.py")):
        for mod in _imports(path):
            seen.add(mod)
            assert any(mod == a or mod.startswith(a + ".") for a in ALLOWED), (path.name, mod)
    assert "mapper.build" in seen  # the check reads real imports
