"""The built wheel carries the catalogs and targets, and finds them through importlib.resources.

Builds a wheel from a copy of the sources (so the work tree gets no build/ or
egg-info), installs it without dependencies into a fresh virtual environment
that sees the project's installed dependencies through a ``.pth`` line (not
the editable install of netfit itself), and loads every built-in target there.
"""
from __future__ import annotations

import json
import shutil
import subprocess
import sys
import sysconfig
from pathlib import Path

import pytest

ROOT = Path(__file__).parent.parent

pytestmark = pytest.mark.slow

_PROBE = r"""
import importlib.resources, json, mapper
from mapper.catalog import builtin_targets, load_target
import pathlib
root = pathlib.Path(mapper.__file__).parent
packages = sorted(".".join(("mapper",) + p.parent.relative_to(root).parts) for p in root.rglob("__init__.py"))
out = {"mapper": mapper.__file__, "packages": packages, "targets": {}, "catalogs": sorted(
    p.name for p in importlib.resources.files("mapper.libraries").iterdir() if p.name.endswith((".xml", ".rng"))),
    "target_files": sorted(p.name for p in importlib.resources.files("mapper.targets").iterdir()
                           if p.name.endswith((".xml", ".rng")))}
for name, desc in builtin_targets():
    t = load_target(name)
    out["targets"][name] = {"parts": sorted(t.parts), "catalogs": t.catalogs}
print(json.dumps(out))
"""


def _run(cmd, **kw):
    res = subprocess.run([str(c) for c in cmd], capture_output=True, text=True, timeout=300, **kw)
    assert res.returncode == 0, f"{cmd}\n{res.stdout[-2000:]}\n{res.stderr[-3000:]}"
    return res


def test_wheel_ships_catalogs_and_targets(tmp_path):
    src = tmp_path / "src"
    src.mkdir()
    ignore = shutil.ignore_patterns("__pycache__", "*.pyc")
    for name in ("pyproject.toml", "README.md", "LICENSE"):
        if (ROOT / name).exists():
            shutil.copy2(ROOT / name, src / name)
    for d in ("mapper", "libraries", "targets"):
        shutil.copytree(ROOT / d, src / d, ignore=ignore)
    dist = tmp_path / "dist"
    _run([sys.executable, "-m", "build", "--wheel", "--outdir", dist, src])
    wheels = list(dist.glob("netfit-*.whl"))
    assert len(wheels) == 1

    venv = tmp_path / "venv"
    _run([sys.executable, "-m", "venv", "--without-pip", venv])
    py = venv / "bin" / "python"
    _run([sys.executable, "-m", "pip", "--python", py, "install", "--no-deps", "--no-index", wheels[0]])
    # dependencies (lxml, networkx, ...) from the project's environment, appended after the venv's own
    site = Path(_run([py, "-c", "import sysconfig; print(sysconfig.get_paths()['purelib'])"]).stdout.strip())
    (site / "zz_deps.pth").write_text(sysconfig.get_paths()["purelib"] + "\n")

    res = _run([py, "-I", "-c", _PROBE], cwd=tmp_path)
    info = json.loads(res.stdout)
    assert Path(info["mapper"]).is_relative_to(venv)  # the wheel's copy, not the work tree
    # every package of the source tree is in the wheel (a package left out of pyproject.toml is not)
    source = sorted(".".join(("mapper",) + p.parent.relative_to(ROOT / "mapper").parts)
                    for p in (ROOT / "mapper").rglob("__init__.py"))
    assert sorted(set(info["packages"]) - {"mapper.libraries", "mapper.targets"}) == source
    assert info["catalogs"] == ["74hc.xml", "74ls.xml", "catalog.rng", "relays.xml", "support.xml"]
    assert info["target_files"] == sorted(p.name for p in (ROOT / "targets").glob("*.xml")) + ["target.rng"]
    assert set(info["targets"]) == {p.stem for p in (ROOT / "targets").glob("*.xml")}
    for name, t in info["targets"].items():
        assert t["parts"], name
        assert all(Path(c).is_relative_to(venv) for c in t["catalogs"]), name

    # and the installed command
    res = _run([venv / "bin" / "netfit", "targets", "--json"], cwd=tmp_path)
    assert {r["name"] for r in json.loads(res.stdout)} == set(info["targets"])
