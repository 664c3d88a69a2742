"""Hazard-free builds: tree-shaped matches keep hazard-free covers hazard-free.

Outside sources: a sum of products holding every consensus term of opposed
cubes has no static-1 hazard for a single-input change (D. A. Huffman, "The
design and use of hazard-free switching networks", JACM 4(1), 1957), and
rewriting it by associativity and De Morgan's laws keeps it so (S. H. Unger,
"Asynchronous Sequential Switching Circuits", Wiley 1969 -- from memory).
The glitch finder (mapper.analyze.glitch) is the judge of the built network.
"""
from __future__ import annotations

import random

import pytest

from mapper import flow
from mapper.fit.gates import _is_tree
from mapper.fit.library import Impl
from mapper.logic.function import Function
from mapper.netlist import Netlist


def _single_node(n, table):
    d = Netlist("f")
    names = [f"x{j}" for j in range(n)]
    for x in names:
        d.add_input(x)
    d.add_logic("f", names, Function.from_table(n, table))
    d.add_output("f")
    return d


def test_tree_test_on_known_networks():
    # x' + y built as NAND(x, NAND(x, y)) uses x twice: not a tree (common practice)
    assert not _is_tree(Impl(0.5, 2, (("nand2", (0, 1)), ("nand2", (0, 2))), 3), 2)
    # an inverter from a NAND2 takes one signal on both inputs: still a tree
    assert _is_tree(Impl(0.5, 2, (("nand2", (0, 0)), ("nand2", (2, 1))), 3), 2)
    # the four-NAND exclusive-OR reuses its first gate: not a tree
    xor = Impl(1.0, 3, (("nand2", (0, 1)), ("nand2", (0, 2)), ("nand2", (1, 2)), ("nand2", (3, 4))), 5)
    assert not _is_tree(xor, 2)


@pytest.mark.parametrize("target", ["nand-only", "gates-74"])
def test_hazard_free_builds_keep_no_static_hazard(target):
    # nand-only is the case tree-shaped matches decide (minimum NAND2 chains
    # reuse signals); gates-74 has AND/OR cells and holds either way
    rng = random.Random(3)
    t = flow.load_target(target)
    for _ in range(12):
        n = rng.choice([3, 4])
        d = _single_node(n, rng.getrandbits(1 << n))
        b, a = flow.fit_hazard_free(d, t)
        assert a.verified == "proved"
        static = [h for h in a.glitches.hazards if h["kind"].startswith("static")]
        assert static == [], (target, d.nodes["f"].func.table(), static)
