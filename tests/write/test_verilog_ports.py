"""Exported Verilog keeps the design's port names exactly, or refuses before any work.

Outside sources: published benchmark files whose port names are awkward for
Verilog (tests/data/published: the MCNC copy of ISCAS-85 c17 with names
such as ``1GAT(0)``, ISCAS-89 s208 with ``P.0``, MCNC dk27 with ``v4.3``),
read back by pyslang, an independent Verilog front end.
"""
from __future__ import annotations

import re
from pathlib import Path

import pyslang
import pytest

from mapper import flow
from mapper.read import read_design
from mapper.write.verilog import models_file

PUBLISHED = Path(__file__).parent.parent / "data" / "published"


def _slang_port_names(files) -> dict:
    """{port name: direction} as pyslang elaborates ``files`` (fails on any pyslang error)."""
    comp = pyslang.ast.Compilation()
    for f in files:
        comp.addSyntaxTree(pyslang.syntax.SyntaxTree.fromFile(str(f)))
    errors = [f"{d.code} at {d.location}" for d in comp.getAllDiagnostics() if d.isError()]
    assert not errors, errors
    tops = list(comp.getRoot().topInstances)
    assert len(tops) == 1
    return {p.name: ("input" if "In" in str(p.direction) else "output") for p in tops[0].body.portList}


def _design_ports(design) -> dict:
    ports = {}
    for direction, names in (("input", design.inputs), ("output", design.outputs)):
        for n in names:
            m = re.fullmatch(r"([A-Za-z_][A-Za-z0-9_$]*)\[(\d+)\]", n)
            ports[m.group(1) if m else n] = direction  # whole buses become one vector port of the base name
    return ports


@pytest.mark.parametrize("name", ["C17_mcnc.blif", "s208.blif", "dk27.blif"])
def test_converted_verilog_keeps_every_port_name(tmp_path, netfit, name):
    src = PUBLISHED / name
    out = tmp_path / "design.v"
    code, _, err = netfit("convert", src, out)
    assert code == 0, err
    design = read_design(src, quiet=True)
    assert _slang_port_names([out]) == _design_ports(design)   # source: pyslang's reading of the file


@pytest.mark.parametrize("name", ["C17_mcnc.blif", "dk27.blif"])
def test_built_verilog_keeps_every_port_name(tmp_path, name):
    src = PUBLISHED / name
    design = read_design(src, quiet=True)
    r = flow.fit(design, flow.load_target("gates-74"), effort=0)
    out = tmp_path / "out"
    flow.write_build(r, out)
    v = out / f"{flow._file_stem(r.build.design)}.v"
    assert _slang_port_names([v, models_file(v)]) == _design_ports(design)
    assert "(output) ->" not in v.read_text()   # nothing renamed


PASS_THROUGH = ".model pass\n.inputs a b V27_0\n.outputs y V27_0\n.names a b y\n11 1\n.end\n"


def test_output_that_is_an_input_is_refused_before_any_work(tmp_path, netfit):
    src = tmp_path / "pass.blif"
    src.write_text(PASS_THROUGH)
    code, _, err = netfit("build", src, "-t", "nand-only", "-o", tmp_path / "out")
    assert code == 2 and f"{src}:2:13: error: port 'V27_0' cannot be written in Verilog" in err
    assert "two ports of one name" in err and "Traceback" not in err
    assert not (tmp_path / "out").exists()          # nothing written
    code, _, err = netfit("convert", src, tmp_path / "pass.v")
    assert code == 2 and "port 'V27_0'" in err and not (tmp_path / "pass.v").exists()
    code, _, err = netfit("build", src, "-t", "nand-only")   # without files to write, the build is fine
    assert code == 0, err
    code, _, err = netfit("convert", src, tmp_path / "pass.json")  # JSON carries both ports; only Verilog refuses
    assert code == 0 and (tmp_path / "pass.json").exists(), err


def test_a_design_without_model_line_keeps_its_ports_in_verilog(tmp_path, netfit):
    # reported from outside: a BLIF without .model lost its ports on the way through Verilog
    src = Path(__file__).parent.parent / "read" / "blif" / "valid" / "no_model_line.blif"
    out = tmp_path / "nomodel.v"
    code, _, err = netfit("convert", src, out)
    assert code == 0, err
    design = read_design(src, quiet=True)
    assert design.inputs and design.outputs
    assert _slang_port_names([out]) == _design_ports(design)   # source: pyslang's reading of the file
