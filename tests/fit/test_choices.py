"""Structural choices: other shapes of adders and exclusive-ORs for the mapper.

Outside sources: ariths-gen (an independent generator of adders and
multipliers; its outputs are compared with Python integer arithmetic in
tests/fit/test_gates.py); textbook gate counts (from memory of standard
digital-design texts, marked where used).
"""
from __future__ import annotations

import random

import pytest

import generated
from mapper import flow
from mapper.fit.choices import structural_choices
from mapper.fit.fit import _library, fit_gates
from mapper.fit.gates import map_logic
from mapper.logic.aig import from_netlist
from mapper.read import read_design


def _full_adder_of_products(tmp_path):
    # a full adder whose three inputs are AND gates (one column of an array
    # multiplier, common practice)
    text = """.model fapp
.inputs a0 b0 a1 b1 a2 b2
.outputs s co
.names a0 b0 p
11 1
.names a1 b1 q
11 1
.names a2 b2 r
11 1
.names p q x
10 1
01 1
.names x r s
10 1
01 1
.names p q g
11 1
.names x r h
11 1
.names g h co
1- 1
-1 1
.end
"""
    path = tmp_path / "fapp.blif"
    path.write_text(text)
    return read_design(path)


@pytest.mark.parametrize("kind,width", [("rca", 4), ("arr", 4), ("dadda", 6), ("lt", 6)])
def test_choices_compute_the_same_function(tmp_path, kind, width):
    # every choice literal must equal its node on random input patterns;
    # designs from ariths-gen (independent generator)
    d = read_design(generated.make(kind, width, tmp_path))
    aig, _ = from_netlist(d)
    choices, order, groups, inner = structural_choices(aig)
    assert choices, "the generator's adders must be recognized"
    rng = random.Random(7)
    mask = (1 << 256) - 1
    words = {aig.names[v]: rng.getrandbits(256) for v in aig.inputs}
    vals = aig.simulate(words, mask)
    for v, alts in choices.items():
        for lit in alts:
            assert aig.lit_value(vals, lit, mask) == vals[v], (v, lit)
    # the order is topological, and each choice comes before its node
    pos = {v: i for i, v in enumerate(order)}
    for v in order:
        for f in (aig.f0[v] >> 1, aig.f1[v] >> 1):
            if aig.is_and(f):
                assert pos[f] < pos[v]
        for lit in choices.get(v, ()):
            assert pos[lit >> 1] < pos[v]


def test_full_adders_found_in_ripple_adder(tmp_path):
    # an n-bit ripple-carry adder from ariths-gen has n-1 full adders
    d = read_design(generated.make("rca", 8, tmp_path))
    aig, _ = from_netlist(d)
    _, _, groups, _ = structural_choices(aig)
    assert len(groups) == 7


def test_full_adder_of_products_shares_its_gates(tmp_path):
    # three NAND2 for the products, then the nine-NAND2 full adder (from
    # memory of standard digital-design texts) run on the complemented
    # products -- the full adder is self-dual -- and two output inverters:
    # 14 NAND2.  Without shared shapes the sum and carry are built apart.
    d = _full_adder_of_products(tmp_path)
    target = flow.load_target("nand-only")
    assert len(map_logic(d, _library(target)).cells) == 14
    assert len(map_logic(d, _library(target), choices=False).cells) > 14
    # the build keeps 4 parts (ties are broken by fewer levels, not cells)
    assert len(fit_gates(d, target).parts) == 4


_NAND_XOR = """.model xorxnor
.inputs a b
.outputs x y
.names a b n1
11 0
.names a n1 n2
11 0
.names b n1 n3
11 0
.names n2 n3 x
11 0
.names a na
0 1
.names {second} b m1
11 0
.names {second} m1 m2
11 0
.names b m1 m3
11 0
.names m2 m3 y
11 0
.end
"""


@pytest.mark.parametrize("target", ["nand-only", "nor-only", "gates-74"])
def test_two_drawn_exclusive_ors_do_not_loop(tmp_path, target):
    # x = a XOR b and y = a XNOR b, each drawn as the four-NAND exclusive-OR
    # (common practice); each original node is the other's shape, which once
    # made the choices loop.  Only new nodes may stand in for a node.
    path = tmp_path / "xx.blif"
    path.write_text(_NAND_XOR.format(second="na"))
    d = read_design(path)
    aig, _ = from_netlist(d)
    n_orig = aig.num_vars
    choices, order, _, _ = structural_choices(aig)
    assert all(lit >> 1 >= n_orig for alts in choices.values() for lit in alts)
    assert len(order) == len(set(order))
    b, a = flow.fit(d, flow.load_target(target))
    assert a.verified == "proved"
