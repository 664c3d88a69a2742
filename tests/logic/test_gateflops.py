"""Latches and flip-flops of gates read back as declared storage (mapper/logic/gateflops.py).

Outside source: the textbook gate-level storage circuits (common practice of digital-design courses) --
the gated D latch of four NAND2 (s = NAND(D, EN), r = NAND(s, EN), Q = NAND(s, QN), QN = NAND(r, Q)),
its NOR2 dual, the master-slave D flip-flop of two such latches on opposite clock levels, the
cross-coupled NOR set-reset latch, and the three-inverter ring (an oscillator, no storage).
"""
from __future__ import annotations

import pytest

from mapper.logic.feedback import cut_loops
from mapper.logic.function import Function
from mapper.logic.gateflops import edge_form
from mapper.netlist import Logic, Netlist, Storage
from mapper.simulate import run_cycles

NAND = Function.from_table(2, 0b0111)
NOR = Function.from_table(2, 0b0001)
NOT = Function.from_table(1, 0b01)


def _nand_latch(n: Netlist, d: str, en: str, q: str) -> None:
    # the textbook gated D latch, transparent while en is 1
    n.add_logic(f"{q}.s", (d, en), NAND)
    n.add_logic(f"{q}.r", (f"{q}.s", en), NAND)
    n.add_logic(q, (f"{q}.s", f"{q}.qn"), NAND)
    n.add_logic(f"{q}.qn", (f"{q}.r", q), NAND)


def _nor_latch(n: Netlist, d: str, en: str, q: str) -> None:
    # the dual: complemented data and enable in, transparent while en is 1 (its complement 0)
    n.add_logic(f"{q}.dn", (d,), NOT)
    n.add_logic(f"{q}.en_n", (en,), NOT)
    n.add_logic(f"{q}.s", (f"{q}.dn", f"{q}.en_n"), NOR)
    n.add_logic(f"{q}.r", (f"{q}.s", f"{q}.en_n"), NOR)
    n.add_logic(f"{q}.a", (f"{q}.s", q), NOR)
    n.add_logic(q, (f"{q}.r", f"{q}.a"), NOR)


def _flip_flop(latch, edge: str, invert_data: bool = False) -> Netlist:
    """A master-slave D flip-flop q of data d on clock clk (rising: master open while clk is 0)."""
    n = Netlist("ff")
    for i in ("d", "clk"):
        n.add_input(i)
    n.add_output("q")
    n.add_logic("clk_n", ("clk",), NOT)
    master_en, slave_en = ("clk_n", "clk") if edge == "re" else ("clk", "clk_n")
    d = "d"
    if invert_data:
        n.add_logic("d_n", ("d",), NOT)
        d = "d_n"
    latch(n, d, master_en, "m")
    latch(n, "m", slave_en, "q")
    cut_loops(n)   # as the reader does
    return n


@pytest.mark.parametrize("edge", ["re", "fe"])
@pytest.mark.parametrize("latch", [_nand_latch, _nor_latch], ids=["nand", "nor"])
@pytest.mark.parametrize("invert", [False, True])
def test_master_slave_pair_is_one_flip_flop(latch, edge, invert):
    ef = edge_form(_flip_flop(latch, edge, invert), prefer=["q"])
    assert ef.netlist is not None, ef.why
    assert [(q, m) for q, m, _ in ef.flip_flops] == [("q", "m")] and ef.latches == []
    st = ef.netlist.storage()
    assert list(st) == ["q"] and st["q"].kind == edge and st["q"].control == "clk"
    # its data is d (or its complement, after an inverter in front of the master): the same cycle by cycle
    # as the textbook flip-flop declared directly
    ref = Netlist("ref")
    for i in ("d", "clk"):
        ref.add_input(i)
    ref.add_output("q")
    if invert:
        ref.add_logic("d_n", ("d",), NOT)
    ref.add_storage("q", "d_n" if invert else "d", edge, "clk", 0)
    seq = [{"d": 0b1100_1010, "clk": 0} for _ in range(3)] + [{"d": 0b0101_0110, "clk": 0} for _ in range(3)]
    assert run_cycles(ef.netlist, seq, 0xFF, init={"q": 0}) == run_cycles(ref, seq, 0xFF)
    assert _source(ef.netlist, st["q"].d) == "d"


def _source(n: Netlist, net: str) -> str:
    """The net ``net`` reads through buffers and inverters."""
    while isinstance(n.nodes.get(net), Logic) and len(n.nodes[net].fanins) == 1:
        net = n.nodes[net].fanins[0]
    return net


@pytest.mark.parametrize("latch", [_nand_latch, _nor_latch], ids=["nand", "nor"])
def test_lone_d_latch_is_a_latch_open_while_enabled(latch):
    n = Netlist("l")
    n.add_input("d")
    n.add_input("g")
    n.add_output("q")
    latch(n, "d", "g", "q")
    cut_loops(n)
    ef = edge_form(n, prefer=["q"])
    assert ef.flip_flops == [] and ef.latches == ["q"]
    st = ef.netlist.storage()["q"]
    assert (st.kind, st.control, _source(ef.netlist, st.d)) == ("ah", "g", "d")


def test_cross_coupled_nor_is_a_set_reset_latch():
    n = Netlist("sr")
    n.add_input("s")
    n.add_input("r")
    n.add_output("q")
    n.add_logic("q", ("r", "qn"), NOR)
    n.add_logic("qn", ("s", "q"), NOR)
    cut_loops(n)
    ef = edge_form(n, prefer=["q"])
    assert ef.netlist is not None and ef.flip_flops == [] and len(ef.latches) == 1
    st = ef.netlist.storage()[ef.latches[0]]
    assert isinstance(st, Storage) and st.kind in ("ah", "al")


def test_ring_of_three_inverters_is_no_storage():
    n = Netlist("ring")
    n.add_input("x")
    n.add_output("a")
    n.add_logic("a", ("c",), NOT)
    n.add_logic("b", ("a",), NOT)
    n.add_logic("c", ("b",), NOT)
    cut_loops(n)
    ef = edge_form(n)
    assert ef.netlist is None and "not a latch" in ef.why
