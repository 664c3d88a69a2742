"""Figures of the part search with restructuring, on published files and textbook circuits.

Outside sources:

* MCNC (LGSynth91) rd53 and rd73 as distributed (``tests/data/published``; their
  functions checked against the definition in ``tests/logic/restructure/test_passes.py``).
* rd84 is not among the files kept here: it is written below from its definition (the
  binary count of ones of 8 inputs, one row per minterm -- the MCNC description of the
  function, from memory).
* The counter-tree constructions the figures come from (common practice): rd53 as two full
  adders and a half adder (2 x 9 + 5 = 23 NAND2, 6 packages of four; on gates-74 one
  exclusive-OR, one AND and one OR package and at most one more), rd73 as four full adders,
  rd84 as four full adders and three half adders (51 NAND2, 13 packages).
* A 4-bit 2:1 multiplexer with one select is exactly one 74HC157 (its datasheet function:
  four sections, one select and one enable; common practice).

Every build here comes from :func:`mapper.flow.fit`, which proves it equal to the design as
read (the original covers, not a restructured form).
"""
from __future__ import annotations

from pathlib import Path

import pytest

from mapper import flow
from mapper.read import read_design

DATA = Path(__file__).parent.parent / "data"
PUBLISHED = DATA / "published"


def _rd84(tmp_path: Path) -> Path:
    n = 8
    lines = [".model rd84", ".inputs " + " ".join(f"x{i}" for i in range(n)),
             ".outputs " + " ".join(f"s{k}" for k in range(4))]
    for k in range(4):
        lines.append(".names " + " ".join(f"x{i}" for i in range(n)) + f" s{k}")
        for m in range(1 << n):
            if (bin(m).count("1") >> k) & 1:
                lines.append("".join(str((m >> i) & 1) for i in range(n)) + " 1")
    lines.append(".end")
    path = tmp_path / "rd84.blif"
    path.write_text("\n".join(lines) + "\n")
    return path


def _parts(path, target: str) -> int:
    r = flow.fit(read_design(path, quiet=True), flow.load_target(target))
    assert r.analysis.proof.status == "proved"
    return len(r.build.parts)


@pytest.mark.parametrize("name,target,most", [("rd53", "nand-only", 6), ("rd53", "gates-74", 4),
                                              ("rd73", "nand-only", 10)])
def test_counting_functions_as_counter_trees(name, target, most):
    assert _parts(PUBLISHED / f"{name}.blif", target) <= most


@pytest.mark.slow
def test_rd84_as_a_counter_tree(tmp_path):
    assert _parts(_rd84(tmp_path), "nand-only") <= 14


MUX = """\
# four 2:1 multiplexers with one select: y_i = s ? b_i : a_i (common practice)
.model mux2x4
.inputs s a0 a1 a2 a3 b0 b1 b2 b3
.outputs y0 y1 y2 y3
"""


def test_four_multiplexers_of_one_select_are_one_74hc157(tmp_path):
    path = tmp_path / "mux2x4.blif"
    path.write_text(MUX + "".join(f".names s a{i} b{i} y{i}\n01- 1\n1-1 1\n" for i in range(4)) + ".end\n")
    r = flow.fit(read_design(path, quiet=True), flow.load_target("gates-74"))
    assert r.analysis.proof.status == "proved"
    assert [p.part_id for p in r.build.parts] == ["74HC157"]


def test_multiplexers_of_two_selects_take_two_parts(tmp_path):
    # two selects: sections of one part share the select pin, so one part cannot hold both groups
    path = tmp_path / "mux2x2x2.blif"
    body = "".join(f".names s{i // 2} a{i} b{i} y{i}\n01- 1\n1-1 1\n" for i in range(4))
    path.write_text(".model m\n.inputs s0 s1 a0 a1 a2 a3 b0 b1 b2 b3\n.outputs y0 y1 y2 y3\n" + body + ".end\n")
    r = flow.fit(read_design(path, quiet=True), flow.load_target("gates-74"))
    assert r.analysis.proof.status == "proved"
    for part in r.build.parts:
        sels = {c.pins["S"] for c in r.build.cells if c.part_ref == part.ref and "S" in c.pins}
        assert len(sels) <= 1


@pytest.mark.parametrize("name", ["rd53", "xor5", "con1", "squar5"])
def test_gates_74_never_more_parts_than_one_cell_targets(name):
    design = read_design(PUBLISHED / f"{name}.blif", quiet=True)
    got = {t: len(flow.fit(design, flow.load_target(t)).build.parts) for t in ("nand-only", "nor-only", "gates-74")}
    assert got["gates-74"] <= min(got["nand-only"], got["nor-only"]), got


def test_external_dont_cares_are_used_and_the_proof_says_so():
    # BCD to 7 segments: codes 10-15 never occur (textbook, common practice); seg7_dc.blif says so in .exdc
    plain = read_design(DATA / "textbook" / "seg7.blif", quiet=True)
    free = read_design(DATA / "dontcare" / "seg7_dc.blif", quiet=True)
    target = flow.load_target("nand-only")
    a, b = flow.fit(plain, target), flow.fit(free, target)
    assert len(b.build.parts) < len(a.build.parts)
    assert any(".exdc" in n for n in b.analysis.proof.notes)
    assert any(n.startswith("don't-cares used") for n in b.build.notes)
