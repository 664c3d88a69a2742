"""Quad multiplexer parts (74HC157) on gates-74: Shannon splits and multiplexer forms.

Outside sources:

* The textbook 4:1 multiplexer (tests/data/textbook/mux4.blif, common practice) is two 2:1
  stages: two multiplexers of the low select (one quad multiplexer part, one select pin for
  its four sections) and one of the high select, which is four NAND2 gates with the select's
  inverter made of a NAND (one quad NAND part): 2 parts.
* ariths-gen adders and multipliers (independent generator), simulated against Python
  integer arithmetic on every operand pair.
* The fair baseline of bench/baseline.py (issue 17): the better of the careful hand
  conversion and gate-for-gate plug-in.
"""
from __future__ import annotations

import sys
from pathlib import Path

import pytest

import generated
from mapper import flow
from mapper.fit import fit as fitmod
from mapper.fit.muxchoice import resub_mux_mappings
from mapper.fit.muxsplit import split_designs
from mapper.logic.function import var_mask
from mapper.read import read_design
from mapper.simulate import simulate

DATA = Path(__file__).parents[1] / "data"
TEXTBOOK = DATA / "textbook"


@pytest.fixture(scope="module")
def gates74():
    return flow.load_target("gates-74")


def _every_pattern(names):
    n = len(names)
    return {x: var_mask(n, j) for j, x in enumerate(names)}, (1 << (1 << n)) - 1


def test_mux4_is_one_multiplexer_part_and_one_nand_part(gates74):
    d = read_design(TEXTBOOK / "mux4.blif")
    b, a = flow.fit(d, gates74)
    assert a.verified == "proved"
    assert sorted(p.part_id for p in b.parts) == ["74HC00", "74HC157"]
    # y = d[2 s1 + s0] on every input (the textbook function, not the design's covers)
    words, mask = _every_pattern(list(d.inputs))
    got = simulate(b.to_netlist(), words, mask)["y"]
    for m in range(mask.bit_length()):
        bit = {x: (words[x] >> m) & 1 for x in words}
        want = bit[f"d{2 * bit['s1'] + bit['s0']}"]
        assert (got >> m) & 1 == want


@pytest.mark.parametrize("name", ["seg7", "cmp2", "mux4", "full_adder"])
def test_split_designs_compute_the_design(name):
    """Every split form (outputs as multiplexers of their cofactors) equals the design on
    every input (textbook circuits, common practice)."""
    d = read_design(TEXTBOOK / f"{name}.blif")
    forms = split_designs(d)
    assert forms   # every one of these depends on more than one input
    words, mask = _every_pattern(list(d.inputs))
    want = simulate(d, words, mask)
    for label, form in forms:
        got = simulate(form, words, mask)
        assert all(got[o] == want[o] for o in d.outputs), label


@pytest.mark.parametrize("kind, width", [("rca", 4), ("ks", 8), ("bk", 8), ("arr", 4)])
def test_multiplexer_forms_in_157_sections_compute_arithmetic(tmp_path, gates74, kind, width):
    """The candidates built from multiplexer forms (such as carries and group generates as
    multiplexers of a propagate, with ANDs and ORs of a select in spare sections) use 74HC157
    sections, and each build computes a + b or a * b on every operand pair.  (They are
    candidates: on these designs the part search keeps builds of fewer parts without them.)"""
    d = read_design(generated.make(kind, width, tmp_path))
    lib = fitmod._library(gates74)
    cands = resub_mux_mappings(d, [lib], gates74)
    assert cands
    pairs = [(x, y) for x in range(1 << width) for y in range(1 << width)]
    words, mask = generated.operand_words(width, pairs)
    for label, m in cands:
        b = fitmod._assemble(d, gates74, m, fitmod._storage_cells(gates74))
        assert b.cell_counts().get("mux2", 0) >= 2, label
        assert "74HC157" in {p.part_id for p in b.parts}
        vals = simulate(b.to_netlist(), words, mask)
        for k, (x, y) in enumerate(pairs):
            got = sum(((vals[o] >> k) & 1) << i for i, o in enumerate(d.outputs))
            assert got == (x * y if kind in generated.MULTIPLIERS else x + y), (label, x, y)


@pytest.mark.slow
@pytest.mark.parametrize("path", [("rca", 8), ("rca", 16), ("cla", 8), ("ks", 8), ("bk", 16),
                                  "seg7", "half_adder"], ids=str)
def test_quick_bench_never_more_parts_than_the_fair_baseline(tmp_path, gates74, path):
    """The quick set of bench/bench_fit.py on gates-74 (the ones
    tests/fit/test_gates.py does not run): never more parts than the fair baseline, proved."""
    sys.path.insert(0, str(Path(__file__).parents[2] / "bench"))
    from baseline import fair_baseline
    p = generated.make(*path, tmp_path) if isinstance(path, tuple) else TEXTBOOK / f"{path}.blif"
    d = read_design(p)
    b, a = flow.fit(d, gates74)
    assert a.verified == "proved"
    assert len(b.parts) <= fair_baseline(d, gates74)["best"]
