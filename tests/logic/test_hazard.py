"""The algebraic hazard check of two-level covers, held to published methods.

Sources:

* Huffman, "The design and use of hazard-free switching networks", JACM 4(1),
  1957: a sum of products has a static-1 hazard for a single-input change
  exactly where no one cube holds both input states; consensus terms cure it.
* Eichelberger, "Hazard detection in combinational and sequential switching
  circuits", IBM J. Res. Dev. 9(2), 1965: three-valued simulation -- the
  change A -> B can glitch iff f(A) = f(B) while the value with the changing
  inputs unknown is unknown.  Used here as the reference.
* The textbook example f = a·b' + b·c, which glitches when b changes with
  a = c = 1 and is cured by the consensus term a·c (common textbook example;
  from memory).
"""
from __future__ import annotations

import itertools
import random

import pytest

from mapper.logic.function import Function, isop, table_of_cover
from mapper.logic.hazard import (
    add_consensus,
    consensus,
    cover_hazards,
    design_hazards,
    hazard_free_cover,
    hazard_transitions,
    ternary_hazard,
    ternary_value,
)
from mapper.netlist import Netlist
from mapper.read import read_design
from mapper.verify import check_equivalence

TEXTBOOK = """\
# f = a b' + b c (common textbook example of a static-1 hazard; from memory)
.model hazard
.inputs a b c
.outputs f
.names a b c f
10- 1
-11 1
.end
"""


def _all_three_input_covers():
    """ISOP covers of every 3-input function and every set of up to three distinct cubes."""
    cubes = ["".join(t) for t in itertools.product("01-", repeat=3)]
    covers = []
    for f in range(1, 256):
        c, _ = isop(f, f, 3)
        covers.append(tuple(c))
    for k in (1, 2, 3):
        covers.extend(itertools.combinations(cubes, k))
    return list(dict.fromkeys(covers))


COVERS3 = _all_three_input_covers()


def _state(bits, n):
    return tuple((bits >> j) & 1 for j in range(n))


def _eichelberger_transitions(cubes, n):
    """Single-input changes (state with the variable at 0, variable) the three-valued method flags."""
    out = set()
    for s in range(1 << n):
        for j in range(n):
            if (s >> j) & 1:
                continue
            if ternary_hazard(cubes, 1, _state(s, n), _state(s | 1 << j, n)):
                out.add((s, j))
    return out


def test_textbook_hazard_and_its_consensus_term():
    # common textbook example (from memory): f = a·b' + b·c glitches when b changes with a = c = 1
    hz = cover_hazards(["10-", "-11"], 3)
    assert len(hz) == 1
    h = hz[0]
    assert h.variable == 1                   # b
    assert h.consensus == "1-1"              # a·c
    assert h.region == ("1-1",)              # a = c = 1
    assert set(h.terms) == {"10-", "-11"}
    # the states the algebra names are exactly those the three-valued method names (Eichelberger 1965)
    assert hazard_transitions(["10-", "-11"], 3) == _eichelberger_transitions(["10-", "-11"], 3) == {(0b101, 1)}
    cover, added = hazard_free_cover(["10-", "-11"], 3)
    assert added == ["1-1"]
    assert cover_hazards(cover, 3) == []
    assert _eichelberger_transitions(cover, 3) == set()


def test_consensus_definition():
    # Huffman 1957: the consensus of two cubes opposed in exactly one variable
    assert consensus("10-", "-11") == (1, "1-1")
    assert consensus("1-0", "0-0") == (0, "--0")
    assert consensus("10", "01") is None      # opposed in two variables
    assert consensus("1-", "-1") is None      # opposed in none


def test_ternary_values_follow_kleene_logic():
    # Eichelberger 1965: an AND with an unknown input and a 1 is unknown, with a 0 it is 0
    assert ternary_value(["11"], 1, (1, None)) is None
    assert ternary_value(["11"], 1, (0, None)) == 0
    assert ternary_value(["1-", "-1"], 1, (None, 1)) == 1
    assert ternary_value(["11"], 0, (0, None)) == 1      # OFF-set cover: a NAND


def test_algebra_agrees_with_eichelberger_on_every_three_input_cover():
    # Huffman's consensus check against Eichelberger's three-valued method, every single-input change
    # of every cover of 3 inputs of up to 3 cubes and of every function's irredundant cover
    hazardous = 0
    for cubes in COVERS3:
        alg = hazard_transitions(list(cubes), 3)
        assert alg == _eichelberger_transitions(list(cubes), 3), cubes
        hazardous += bool(alg)
    # the comparison is not vacuous: many covers have hazards, many do not
    assert 100 < hazardous < len(COVERS3) - 100


def test_hazard_free_cover_keeps_the_function_and_removes_every_hazard():
    # reference: Eichelberger's method on every single-input change; the function must not change
    rng = random.Random(5)
    cases = [(list(c), 3) for c in COVERS3]
    for _ in range(150):   # and irredundant covers of random 4- and 5-input functions
        n = rng.choice((4, 5))
        f = rng.getrandbits(1 << n)
        cubes, _ = isop(f, f, n)
        cases.append((cubes, n))
    for cubes, n in cases:
        cover, added = hazard_free_cover(cubes, n)
        assert table_of_cover(n, cover) == table_of_cover(n, cubes)
        assert set(cubes) | set(added) == set(cover)
        assert _eichelberger_transitions(cover, n) == set(), (cubes, cover)


def test_complete_sum_of_primes_needs_nothing_added():
    # published fact (Eichelberger 1965): the sum of all prime implicants is free of static hazards
    cubes = ["".join(t) for t in itertools.product("01-", repeat=3)]
    for f in range(1, 256):
        implicants = [c for c in cubes if table_of_cover(3, [c]) & ~f == 0]
        # prime: no other implicant contains it
        primes = [c for c in implicants
                  if not any(d != c and all(x == "-" or x == y for x, y in zip(d, c)) for d in implicants)]
        assert table_of_cover(3, primes) == f
        assert cover_hazards(primes, 3) == []
        assert hazard_free_cover(primes, 3)[1] == []


def test_wide_cover_uses_cube_arithmetic():
    # 20 inputs: no truth table; the textbook hazard on inputs 0..2 beside an unrelated wide cube
    n = 20
    p = "10" + "-" * 18
    q = "-11" + "-" * 17
    wide = "---" + "1" * 17
    hz = cover_hazards([p, q, wide], n)
    assert [(h.variable, h.consensus, h.exact) for h in hz] == [(1, "1-1" + "-" * 17, False)]
    cover, added = hazard_free_cover([p, q, wide], n)
    assert added == ["1-1" + "-" * 17]
    assert cover_hazards(cover, n) == []


def test_design_hazards_of_blif_covers(tmp_path):
    path = tmp_path / "hazard.blif"
    path.write_text(TEXTBOOK)
    d = read_design(path)
    rows = design_hazards(d)
    assert rows == [{"node": "f", "kind": "static-1", "input": "b", "when": [{"a": 1, "c": 1}],
                     "terms": [{"b": 1, "c": 1}, {"a": 1, "b": 0}],   # the cube with b = 1 first
                     "fix": {"a": 1, "c": 1}, "exact": True}]


def test_offset_cover_gives_static_0_hazards(tmp_path):
    # a BLIF cover of the OFF-set (phase 0) is an AND-OR-INVERT: its static-1 hazards are the node's
    # static-0 hazards (duality; Huffman 1957)
    path = tmp_path / "off.blif"
    path.write_text(".model off\n.inputs a b c\n.outputs g\n.names a b c g\n10- 0\n-11 0\n.end\n")
    rows = design_hazards(read_design(path))
    assert [(r["node"], r["kind"], r["input"], r["when"]) for r in rows] == [("g", "static-0", "b", [{"a": 1, "c": 1}])]


def test_add_consensus_rewrites_and_keeps_the_logic(tmp_path):
    path = tmp_path / "hazard.blif"
    path.write_text(TEXTBOOK)
    d = read_design(path)
    new, kept, report = add_consensus(d)
    # the same logic (proved by the SAT prover)
    assert check_equivalence(d, new).equivalent
    assert report["terms_added"] == 1 and report["nodes_split"] == 1
    assert report["nodes"][0]["added"] == [{"a": 1, "c": 1}]
    # trees of 2-input nodes: b' (an inverter node), three AND2 product terms, two OR2 nodes; the five
    # 2-input nodes are kept (an inverter is only a complemented edge to the mapper)
    assert "f" in kept and len(kept) == 5
    assert sum(1 for n in new.nodes.values() if getattr(n, "fanins", ()) and len(n.fanins) == 1) == 1
    assert all(k in new.nodes for k in kept)
    assert all(len(new.nodes[k].fanins) <= 2 for k in kept)
    assert new.nodes["f"].func.table() == 0b1110                # OR2 at the top
    # each node is a two-level cover of its own now: nothing left to fix anywhere
    assert design_hazards(new) == []
    assert new.inputs == d.inputs and new.outputs == d.outputs


def test_add_consensus_leaves_covers_without_adjacent_cubes_alone():
    # XOR has no two cubes opposed in one input, OR2 has none at all: nothing to add or split
    n = Netlist("x")
    for i in "ab":
        n.add_input(i)
    n.add_logic("x", ["a", "b"], Function.from_table(2, 0b0110))
    n.add_logic("o", ["a", "b"], Function.from_table(2, 0b1110))
    n.add_output("x")
    n.add_output("o")
    new, kept, report = add_consensus(n)
    assert kept == [] and report["nodes_split"] == 0
    assert new.nodes == n.nodes


@pytest.mark.parametrize("name", ["mux4", "full_adder", "cmp2"])
def test_add_consensus_on_textbook_designs(name, data):
    # the rewritten design proves equal to the design, and its covers have no hazards left
    d = read_design(data / "textbook" / f"{name}.blif")
    new, kept, report = add_consensus(d)
    assert check_equivalence(d, new).equivalent
    assert design_hazards(new) == []
    assert set(kept) <= set(new.nodes)


def test_collapse_removes_the_multiplexer_select_hazard(data):
    # the textbook 4:1 multiplexer built as decoded AND-OR (tests/data/textbook/mux4.blif) glitches when
    # a select changes while both data inputs it chooses between are 1 (common textbook example; from
    # memory).  Its per-node covers have no consensus pair; the hazard is in the multi-level structure.
    # Collapsing the cone to a two-level cover and adding consensus terms removes every static hazard,
    # as Eichelberger's three-valued test over the whole rewritten design confirms.
    from mapper.analyze.glitch import TimedCircuit, find_glitches
    d = read_design(data / "textbook" / "mux4.blif")
    assert design_hazards(d) == []
    before = find_glitches(TimedCircuit.from_netlist(d, 1.0, 3.0))
    assert any(h["kind"] == "static-1" and h["inputs_changed"] in (["s0"], ["s1"]) for h in before["hazards"])
    new, kept, report = add_consensus(d, collapse_inputs=8)
    assert [c["node"] for c in report["collapsed"]] == ["y"]
    assert report["collapsed"][0]["inputs"] == 6 and report["terms_added"] >= 4
    assert check_equivalence(d, new).equivalent
    after = find_glitches(TimedCircuit.from_netlist(new, 1.0, 3.0))
    assert [h for h in after["hazards"] if h["kind"].startswith("static")] == []
    assert after["transitions"]["exhaustive"]
