"""Tests of the and-inverter graph (mapper/logic/aig.py).

Outside sources named beside each check:
* Boolean algebra identities x&0=0, x&1=x, x&x=x, x&~x=0, commutativity
  (common practice, any logic textbook);
* the ISCAS-85 benchmark c17 (Brglez and Fujiwara, ISCAS 1985), tests/data/c17.blif,
  against its six NAND equations typed in below;
* adders and multipliers made at test time by the ariths-gen generator
  library, against Python's integer arithmetic.
"""
from __future__ import annotations

import random

import pytest

import generated
from mapper.logic.aig import AIG, from_netlist
from mapper.logic.function import Function
from mapper.netlist import Netlist
from mapper.read.blif import read


def test_trivial_ands_fold_and_hashing_merges():
    # Boolean identities (common practice): x&0 = 0, x&1 = x, x&x = x, x&~x = 0, x&y = y&x
    g = AIG()
    a, b = g.add_input("a"), g.add_input("b")
    assert g.add_and(a, 0) == 0
    assert g.add_and(a, 1) == a
    assert g.add_and(a, a) == a
    assert g.add_and(a, a ^ 1) == 0
    x = g.add_and(a, b)
    assert g.add_and(b, a) == x
    assert g.num_ands == 1


def test_xor_and_mux_truth_tables():
    # XOR and 2:1 multiplexer truth tables (common practice), exhaustive over 3 inputs
    g = AIG()
    s, t, e = g.add_input("s"), g.add_input("t"), g.add_input("e")
    x = g.add_xor(t, e)
    m = g.add_mux(s, t, e)
    words = {"s": 0b11110000, "t": 0b11001100, "e": 0b10101010}
    vals = g.simulate(words, 0xFF)
    for k in range(8):
        sv, tv, ev = (k >> 2) & 1, (k >> 1) & 1, k & 1
        assert (g.lit_value(vals, x, 0xFF) >> k) & 1 == tv ^ ev
        assert (g.lit_value(vals, m, 0xFF) >> k) & 1 == (tv if sv else ev)


def test_c17_through_the_aig(data):
    # ISCAS-85 c17 (Brglez and Fujiwara 1985): N22 = NAND(N10, N16), N23 = NAND(N16, N19)
    # with N10 = NAND(N1,N3), N11 = NAND(N3,N6), N16 = NAND(N2,N11), N19 = NAND(N11,N7)
    n = read(data / "c17.blif")
    g, lits = from_netlist(n)
    assert g.num_ands == 6  # six NAND2 gates, one AND node each
    names = n.inputs
    words = {x: sum(((k >> j) & 1) << k for k in range(32)) for j, x in enumerate(names)}
    vals = g.simulate(words, (1 << 32) - 1)
    for k in range(32):
        v = {x: (k >> j) & 1 for j, x in enumerate(names)}

        def nand(p, q):
            return 1 - (p & q)
        n10, n11 = nand(v["N1"], v["N3"]), nand(v["N3"], v["N6"])
        n16, n19 = nand(v["N2"], n11), nand(n11, v["N7"])
        assert (g.lit_value(vals, lits["N22"], (1 << 32) - 1) >> k) & 1 == nand(n10, n16)
        assert (g.lit_value(vals, lits["N23"], (1 << 32) - 1) >> k) & 1 == nand(n16, n19)


@pytest.mark.parametrize("kind,width", [("rca", 8), ("ks", 8), ("arr", 6), ("wallace", 6)])
def test_generated_designs_through_the_aig(tmp_path, kind, width):
    # ariths-gen circuits against Python integer arithmetic, 3000 random operand pairs
    n = read(generated.make(kind, width, tmp_path))
    g, lits = from_netlist(n)
    rng = random.Random(width)
    pairs = [(rng.getrandbits(width), rng.getrandbits(width)) for _ in range(3000)]
    words, mask = generated.operand_words(width, pairs)
    vals = g.simulate(words, mask)
    out = {o: g.lit_value(vals, lits[o], mask) for o in n.outputs}
    op = (lambda x, y: x + y) if kind in generated.ADDERS else (lambda x, y: x * y)
    for k, (x, y) in enumerate(pairs):
        bits = {o: (w >> k) & 1 for o, w in out.items()}
        got = generated.bus_value(bits, f"{kind}{width}_out", len(n.outputs))
        assert got == op(x, y)


def test_deep_chain_needs_no_recursion():
    # 30,000 levels: every routine must be iterative (house rule); an XOR chain's
    # value is the parity of its inputs (common practice)
    n = Netlist("chain")
    n.add_input("x0")
    n.add_input("y")
    prev = "x0"
    xor = Function.from_table(2, 0b0110)
    for i in range(1, 30001):
        n.add_logic(f"x{i}", [prev, "y"], xor)
        prev = f"x{i}"
    n.add_output(prev)
    g, lits = from_netlist(n)
    assert max(g.levels()) >= 30000
    assert len(g.cone([lits[prev]])) == g.num_ands
    vals = g.simulate({"x0": 0b0011, "y": 0b0101}, 0b1111)
    # 30,000 XORs with y: y cancels out (an even count), so the output is x0
    assert g.lit_value(vals, lits[prev], 0b1111) == 0b0011


def test_shared_inputs_and_storage_make_a_miter():
    # two netlists over shared inputs and a shared storage output: equal logic
    # built twice lands on the same literal (structural hashing)
    def make():
        n = Netlist("t")
        n.add_input("a")
        n.add_input("b")
        n.add_storage("q", "d", "re", None, 0)
        n.add_logic("d", ["a", "q"], Function.from_table(2, 0b0110))
        n.add_logic("y", ["q", "b"], Function.from_table(2, 0b1000))
        n.add_output("y")
        return n
    g = AIG()
    ins = {"a": g.add_input("a"), "b": g.add_input("b")}
    st = {"q": 2 * g.add_latch("q", "re", 0).var}
    _, la = from_netlist(make(), g, inputs=ins, storage=st)
    _, lb = from_netlist(make(), g, inputs=ins, storage=st)
    assert la["y"] == lb["y"] and la["d"] == lb["d"]
    assert len(g.latches) == 1 and len(g.inputs) == 2
