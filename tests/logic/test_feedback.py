"""Feedback read as storage: loops cut at a few nets (Huffman's model), tabulated and recognised.

Outside sources, named beside each check:

* the state tables of the set-reset latch of two cross-coupled NOR gates and of
  two cross-coupled NAND gates, the gated D latch's transparency and hold, and
  the master-slave flip-flop built from two D latches (common practice: every
  introductory digital-design textbook);
* the ring oscillator: a ring of an odd number of inverters has no stable
  state, a ring of two holds a bit (common practice);
* networkx's cycle finder (an independent library) for "the cut breaks every loop".
"""
from __future__ import annotations

from pathlib import Path

import networkx as nx
import pytest

from mapper import flow
from mapper.errors import InputError
from mapper.logic.feedback import has_feedback, regions
from mapper.logic.flowtable import analyse
from mapper.netlist import Logic, Storage
from mapper.read import read_design

DATA = Path(__file__).parent.parent / "data" / "latches"
BLIF = Path(__file__).parent.parent / "read" / "blif"


def _ring(tmp_path, n: int) -> Path:
    names = [f"n{k}" for k in range(n - 1)] + ["y"]
    lines = [".model ring", ".outputs y"]
    for k in range(n):
        lines += [f".names {names[k - 1]} {names[k]}", "0 1"]
    p = tmp_path / f"ring{n}.blif"
    p.write_text("\n".join(lines + [".end", ""]))
    return p


def _table(rep) -> dict:
    """{(state, input combination as a tuple in source order): next state} of a one-variable region."""
    t = rep.table
    m = len(t["sources"])
    return {(y, tuple((x >> j) & 1 for j in range(m))): t["next"][y][x]
            for y in range(len(t["next"])) for x in range(1 << m)}


@pytest.mark.parametrize("n", [1, 3, 5])
def test_odd_ring_is_refused_naming_the_loop(tmp_path, n):
    # common practice: a ring of an odd number of inverters has no stable state (the ring oscillator)
    p = _ring(tmp_path, n)
    with pytest.raises(InputError) as exc:
        read_design(p)
    msg = exc.value.first.message
    assert "oscillates" in msg and f"a ring of {n} inverter" in msg
    nets = [f"n{k}" for k in range(n - 1)] + ["y"]
    assert all(net in msg for net in nets), msg


@pytest.mark.parametrize("n", [2, 4])
def test_even_ring_is_read_as_a_stored_bit(tmp_path, n):
    # common practice: two inverters in a ring hold whichever value they power up with (a storage cell)
    d = read_design(_ring(tmp_path, n))
    rep = analyse(d)
    assert [r.kind for r in rep.regions] == ["bit"]
    (r,) = rep.regions
    assert len(r.region.cuts) == 1
    # both states are stable: a bit that holds either value
    assert r.table["next"] == [[0], [1]]


def test_ring_of_two_in_the_valid_corpus():
    d = read_design(BLIF / "valid" / "ring2.blif")
    assert [s.kind for s in d.storage().values()] == ["as"]
    assert analyse(d).regions[0].kind == "bit"


def test_cut_breaks_every_loop():
    # networkx (independent): after the cut the logic graph has no cycle, and before it had one
    for name in ("nor_sr.v", "nand_sr.v", "dlatch.v", "msff.v"):
        d = read_design(DATA / name, quiet=True)
        g = nx.DiGraph()
        for net, node in d.nodes.items():
            if isinstance(node, Logic):
                g.add_edges_from((f, net) for f in node.fanins)
        assert nx.is_directed_acyclic_graph(g), name
        for net, node in d.storage().items():  # closing the cut again gives the loops back
            g.add_edge(node.d, net)
        assert not nx.is_directed_acyclic_graph(g), name


# textbook state tables (common practice), as next q for (q, inputs in the design's port order)
def _nor_next(q, s, r):
    # NOR latch: s sets, r resets, both 0 hold; both 1 force q (and qn) to 0
    return 0 if r else (1 if s else q)


def _nand_next(q, sn, rn):
    # NAND latch: active low; sn=0 sets, rn=0 resets, both 1 hold; both 0 force q (and qn) to 1
    return 1 if not sn else (0 if not rn else q)


def _dlatch_next(q, d, en):
    # gated D latch: transparent while en is 1 (q follows d), holds while en is 0
    return d if en else q


@pytest.mark.parametrize("name, ref, kind", [
    ("nor_sr.v", _nor_next, "sr-latch"),
    ("nor_sr.blif", _nor_next, "sr-latch"),
    ("nand_sr.v", _nand_next, "sr-latch"),
    ("dlatch.v", _dlatch_next, "d-latch"),
])
def test_flow_table_is_the_textbook_state_table(name, ref, kind):
    d = read_design(DATA / name, quiet=True)
    rep = analyse(d)
    (r,) = rep.regions
    assert r.kind == kind
    assert r.region.cuts == ["q"]
    assert r.table["sources"] == list(d.inputs)
    for (q, xs), nxt in _table(r).items():
        assert nxt == ref(q, *xs), (q, xs, nxt)
    assert r.oscillates == []


def test_nor_and_nand_latches_recognised_by_behaviour():
    nor = analyse(read_design(DATA / "nor_sr.v", quiet=True)).regions[0]
    assert nor.roles == {"set": "s", "set_level": 1, "reset": "r", "reset_level": 1, "both": 0}
    assert "cross-coupled NOR form" in nor.form
    assert nor.complement == "qn"
    nand = analyse(read_design(DATA / "nand_sr.v", quiet=True)).regions[0]
    assert nand.roles == {"set": "sn", "set_level": 0, "reset": "rn", "reset_level": 0, "both": 1}
    assert "cross-coupled NAND form" in nand.form


def test_sr_latch_released_from_both_active_is_a_race():
    # common practice: releasing set and reset together from both active leaves the latch in either state
    for name, frm in (("nor_sr.v", {"s": 1, "r": 1}), ("nand_sr.v", {"sn": 0, "rn": 0})):
        r = analyse(read_design(DATA / name, quiet=True)).regions[0]
        both = [x for x in r.races if x["from"] == frm and len(x["inputs_changed"]) == 2]
        assert both, r.races
        ends = {o["q"] for o in both[0]["outcomes"]}
        assert ends == {0, 1}


def _gated_sr_next(q, s, r, en):
    # gated set-reset latch: while en is 1 a NAND latch driven by s and r (active high), held while en is 0;
    # s and r both active while enabled drive q (and qn) to 1
    return (1 if s else (0 if r else q)) if en else q


def test_gated_sr_latch_state_table_and_roles():
    d = read_design(DATA / "gated_sr.v", quiet=True)
    (r,) = analyse(d).regions
    assert r.kind == "gated-sr-latch"
    assert r.roles == {"set": "s", "set_level": 1, "reset": "r", "reset_level": 1, "enable": "en",
                       "enable_level": 1, "both": 1}
    for (q, xs), nxt in _table(r).items():
        assert nxt == _gated_sr_next(q, *xs), (q, xs, nxt)


def test_gated_d_latch_roles():
    r = analyse(read_design(DATA / "dlatch.v", quiet=True)).regions[0]
    assert r.roles == {"data": "d", "enable": "en", "enable_level": 1, "data_level": 1}


def test_master_slave_flip_flop_recognised():
    # common practice: two D latches on opposite clock levels, the slave fed by the master, take d
    # at the edge that closes the master: here the master is open while clk is low, so the rising edge
    d = read_design(DATA / "msff.v", quiet=True)
    rep = analyse(d)
    assert rep.groups == [{"kind": "master-slave", "master": "m", "slave": "q", "clock": "clk", "edge": "rising",
                           "data": "d", "inverted": False}]
    by = rep.by_cut()
    assert by["m"].kind == by["q"].kind == "d-latch"
    assert by["m"].roles["enable_level"] == 0 and by["q"].roles["enable_level"] == 1


def test_oscillating_for_some_inputs_is_read_with_a_warning():
    # an AND gate and an inverter in a ring (q = not (a and q)): with a = 1 it is a ring of one inversion
    # and oscillates; with a = 0 q is 1 and the ring rests (common practice: the gated ring oscillator)
    d = read_design(BLIF / "valid" / "gated_ring.blif", quiet=True)
    (r,) = analyse(d).regions
    assert r.oscillates == [{"a": 1}]
    assert any("oscillates while a=1" in str(w) for w in d.warnings)


def test_inspect_shows_each_loop_and_its_flow_table(netfit):
    info = flow.inspect(DATA / "nand_sr.v")
    (loop,) = info["feedback"]
    assert loop["kind"] == "sr-latch" and loop["cut"] == ["q"]
    assert loop["flow_table"]["next"] == [[1, 0, 1, 0], [1, 0, 1, 1]]  # _nand_next, columns sn + 2 rn
    code, out, err = netfit("inspect", DATA / "dlatch.v")
    assert code == 0
    assert "cut at q (d-latch): D latch: follows d while en is high" in out
    assert "(0)" in out and "(1)" in out  # stable states marked


def test_no_loops_no_feedback():
    d = read_design(BLIF / "valid" / "spec_adder.blif", quiet=True)
    assert not has_feedback(d) and regions(d) == []
    assert not any(isinstance(n, Storage) and n.kind == "as" for n in d.nodes.values())


# -- verify: two designs with feedback ------------------------------------------------------------
def _write(tmp_path, name, text) -> Path:
    p = tmp_path / name
    p.write_text(text)
    return p


def test_verify_same_latch_cut_at_different_nets(tmp_path):
    # the same NOR latch with its outputs listed the other way round is cut at qn, not q: B is cut again
    # at A's net and the two are proved equal, with the flow tables compared as well
    from mapper.verify import check_equivalence
    b = _write(tmp_path, "b.v", "module sr_latch_nor(input s, input r, output qn, output q);\n"
               "  nor n2 (qn, s, q);\n  nor n1 (q, r, qn);\nendmodule\n")
    da, db = read_design(DATA / "nor_sr.v", quiet=True), read_design(b, quiet=True)
    assert [n for n in da.storage()] == ["q"] and [n for n in db.storage()] == ["qn"]
    res = check_equivalence(da, db)
    assert res.equivalent
    assert any("was cut again at A's nets" in n for n in res.notes)
    assert any("fundamental mode" in n for n in res.notes)
    assert any(n.startswith("flow tables of 1 feedback loop(s) compared") for n in res.notes)


def test_verify_tells_a_swapped_latch_apart(tmp_path):
    # set and reset swapped: s now resets q (textbook: the other output of the same latch)
    from mapper.verify import check_equivalence
    b = _write(tmp_path, "b.v", "module sr_latch_nor(input s, input r, output q, output qn);\n"
               "  nor n1 (q, s, qn);\n  nor n2 (qn, r, q);\nendmodule\n")
    res = check_equivalence(read_design(DATA / "nor_sr.v", quiet=True), read_design(b, quiet=True))
    assert not res.equivalent
    # the counterexample is the textbook one: from q = 0, s alone sets the NOR latch
    cex = res.counterexample
    assert cex["inputs"] == {"s": 1, "r": 0} and cex["state"] == {"q": 0}


@pytest.mark.parametrize("master, equal", [("al", True), ("ah", False)])
def test_verify_gate_flip_flop_against_declared_latches(tmp_path, master, equal):
    # common practice: the master-slave flip-flop is two D latches on opposite clock levels; declared as
    # BLIF latches (.latch ... al/ah) it is the same design only with the master open while clk is low
    from mapper.verify import check_equivalence
    b = _write(tmp_path, "ms.blif", f".model msff\n.inputs d clk\n.outputs q\n.latch d m {master} clk 3\n"
               ".latch m q ah clk 3\n.end\n")
    res = check_equivalence(read_design(DATA / "msff.v", quiet=True), read_design(b, quiet=True))
    assert res.equivalent is equal
    assert any("is a feedback loop in A and a latch" in n for n in res.notes)


def test_essential_hazard_of_the_master_slave_flip_flop():
    # Unger 1969: an essential hazard is where one change of an input leads to one state and three changes
    # of it to another.  Worked by hand from the textbook behaviour of the master-slave flip-flop (master
    # open while clk is low, slave while high; common practice): from q = m = 0 with d = 1, clk = 1, one fall
    # of clk opens the master (m = 1, q = 0); fall, rise, fall carries the 1 on into the slave (q = 1).
    rep = analyse(read_design(DATA / "msff.v", quiet=True))
    found = rep.by_cut()["q"].essential
    assert {"input": "clk", "inputs": {"d": 1, "clk": 1}, "state": {"q": 0, "m": 0},
            "once": {"q": 0, "m": 1}, "thrice": {"q": 1, "m": 1}} in found
    # a loop of one state variable has none: with two states only, the state the changed input settles in
    # is stable under it, so one change and three end alike (worked by hand)
    for name in ("nor_sr.v", "nand_sr.v", "dlatch.v"):
        assert analyse(read_design(DATA / name, quiet=True)).regions[0].essential == []


def test_quiz_example():
    # the demo in examples/quiz (invented): the draft's lamp, "free" and set gate make a ring of three
    # inversions while a button is held and clear is pressed (worked by hand: l1 = b1 and not l1)
    ex = Path(__file__).parent.parent.parent / "examples" / "quiz"
    draft = read_design(ex / "lockout_draft.v", quiet=True)
    (r,) = analyse(draft).regions
    assert {"b1": 1, "b2": 0, "b3": 0, "clear": 1} in r.oscillates
    assert all(c["clear"] == 1 for c in r.oscillates)
    fixed = read_design(ex / "lockout.v", quiet=True)
    (r,) = analyse(fixed).regions
    assert r.oscillates == [] and r.region.cuts == ["l1", "l2", "l3"]
    # two buttons pressed together: whichever gate wins lights its lamp (the tie a quiz host knows)
    ties = [x for x in r.races if sorted(x["inputs_changed"]) == ["b1", "b2"]]
    assert ties and len({(o["l1"], o["l2"]) for o in ties[0]["outcomes"]}) > 1
