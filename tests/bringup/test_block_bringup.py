"""Bring-up lists of builds with medium-scale chips of logic ('283 adders, '85 comparators, '138 decoders,
'151/'153 multiplexers) on msi-74: faults on the chips' pins as wired.

Outside checks: the designs are the textbook circuits the fit tests use (common practice; written by
those tests' helpers) and an ariths-gen ripple-carry adder; injected faults are made on rewired copies of
each build, turned into logic by ``Build.to_netlist`` -- which reads each chip through the catalog's block
model -- and run by ``mapper.simulate``, never by the bring-up simulator (as in test_bringup.py): every
fault the plan calls detected must read wrong under its settings and be named by the diagnosis; every
fault it proves undetectable must read the same as the good copy under every input combination.
"""
from __future__ import annotations

import random

import pytest
from bringup.test_bringup import _check_injected  # the rewired-copy check of the gate builds
from fit.test_blocks import _mux_tree_blif
from fit.test_decoders import _decoder_blif

from generated import make
from mapper import flow
from mapper.bringup.plan import make_plan


def _decoder138() -> str:
    sel = ["a0", "a1", "a2"]
    names = [f"y{k}_n" for k in range(8)]
    return "\n".join([".model dec138", ".inputs a0 a1 a2 e1_n e2_n e3", ".outputs " + " ".join(names),
                      ".names e1_n e2_n e3 en", "001 1", *_decoder_blif(sel, ("en",), True, names), ".end", ""])


def _design(name: str, tmp_path) -> str:
    if name == "rca8":
        return str(make("rca", 8, tmp_path))   # ariths-gen ripple-carry adder
    if name == "cmp2":
        return "tests/data/textbook/cmp2.blif"
    path = tmp_path / f"{name}.blif"
    path.write_text({"dec138": _decoder138(), "mux8": _mux_tree_blif("tree", 3, 1, True),
                     "mux4x2": _mux_tree_blif("tree", 2, 2, True)}[name])
    return str(path)


@pytest.mark.parametrize("name,chip", [("rca8", "74HC283"), ("cmp2", "74HC85"), ("dec138", "74HC138"),
                                       ("mux8", "74HC151"), ("mux4x2", "74HC153")])
def test_injected_faults_on_block_builds(tmp_path, name, chip):
    r = flow.build(_design(name, tmp_path), "msi-74")
    assert r.build.part_counts()[chip] >= 1          # the chip under test is in the build
    plan = make_plan(r.build)
    assert not plan.unresolved and len(plan.detected) == plan.detectable > 0
    refs = {p.ref for p in r.build.parts if p.part_id == chip}
    on_chip = [f for f in plan.faults.faults if f.kind == "pin" and f.ref in refs]
    assert on_chip                                    # the chip's own pins are in the fault list
    assert _check_injected(r, random.Random(name), 40) >= 15
