"""The gate mapper: fewest whole parts, every build proven equal to its design.

Outside sources: ariths-gen (an independent generator of adders, multipliers
and comparators, compared with Python integer arithmetic); the ISCAS-85 c17
benchmark (Brglez and Fujiwara, ISCAS 1985: 6 NAND2); textbook circuits
(tests/data/textbook, common practice); textbook gate counts (from memory of
standard digital-design texts, marked where used).
"""
from __future__ import annotations

import random
from pathlib import Path

import pytest

import generated
from mapper import flow
from mapper.fit.cuts import enumerate_cuts, expand_table, reduce_support
from mapper.fit.fit import fit_gates
from mapper.logic.aig import AIG
from mapper.logic.function import Function
from mapper.netlist import Netlist
from mapper.read import read_design
from mapper.simulate import simulate

DATA = Path(__file__).parent.parent / "data"
TEXTBOOK = DATA / "textbook"


@pytest.fixture(scope="module")
def gates74():
    return flow.load_target("gates-74")


@pytest.fixture(scope="module")
def nand_only():
    return flow.load_target("nand-only")


@pytest.fixture(scope="module")
def nor_only():
    return flow.load_target("nor-only")


def _exhaustive_equal(design, build):
    """Simulate design and build on every input pattern (small designs)."""
    n = len(design.inputs)
    mask = (1 << (1 << n)) - 1
    words = {name: _var(n, j) for j, name in enumerate(design.inputs)}
    a = simulate(design, words, mask)
    bn = build.to_netlist()
    b = simulate(bn, words, mask)
    return all(a[o] == b[o] for o in design.outputs)


def _var(n, j):
    from mapper.logic.function import var_mask
    return var_mask(n, j)


# -- cuts ---------------------------------------------------------------------
def test_cut_tables_match_simulation():
    """Every cut's table agrees with the node's value in a full simulation of
    the AIG over all input patterns (random AIGs; the simulator is the
    independent reference).  Cuts may drop leaves the function ignores, so
    the check reads the leaves' simulated values rather than forcing them."""
    rng = random.Random(7)
    full = (1 << 64) - 1
    for _ in range(20):
        g = AIG()
        lits = [g.add_input(f"i{j}") for j in range(6)]
        for _ in range(30):
            a, b = rng.sample(lits, 2)
            lits.append(g.add_and(a ^ rng.randint(0, 1), b ^ rng.randint(0, 1)))
        vals = g.simulate({f"i{j}": _var(6, j) for j in range(6)}, full)
        cuts = enumerate_cuts(g, k=4, limit=10)
        for v, cl in cuts.items():
            for leaves, table in cl:
                for m in range(64):
                    idx = sum(((vals[x] >> m) & 1) << j for j, x in enumerate(leaves))
                    assert (vals[v] >> m) & 1 == (table >> idx) & 1, (v, leaves)


def test_expand_and_reduce_support():
    # f = x0 over leaves (a, b): reducing drops b
    assert reduce_support((5, 9), 0b1010) == ((5,), 0b10)
    # x0 placed at position 1 of a 2-input space is x1: 0b1100
    assert expand_table(0b10, (1,), 2) == 0b1100


# -- small textbook results ------------------------------------------------------
def test_c17_stays_six_nand2_in_two_parts(nand_only):
    """ISCAS-85 c17 is 6 NAND2 (Brglez and Fujiwara 1985): 2 quad parts on nand-only."""
    d = read_design(DATA / "c17.blif")
    b, a = flow.fit(d, nand_only)
    assert a.verified == "proved"
    assert b.cell_counts() == {"nand2": 6}
    assert len(b.parts) == 2
    assert _exhaustive_equal(d, b)


def test_full_adder_two_parts_on_gates74(gates74):
    """A full adder fits one quad XOR2 and one quad NAND2 (common practice)."""
    d = read_design(TEXTBOOK / "full_adder.blif")
    b, a = flow.fit(d, gates74)
    assert a.verified == "proved"
    assert len(b.parts) == 2
    assert sorted(b.part_counts()) == ["74HC00", "74HC86"]
    assert _exhaustive_equal(d, b)


@pytest.mark.parametrize("name, nand2", [
    # textbook minima, from memory of standard digital-design texts
    ("full_adder", 9),
    ("half_adder", 5),
])
def test_textbook_nand2_minima(nand_only, name, nand2):
    d = read_design(TEXTBOOK / f"{name}.blif")
    b, a = flow.fit(d, nand_only)
    assert b.cell_counts()["nand2"] == nand2
    assert _exhaustive_equal(d, b)


def _single(name, n, table):
    d = Netlist(name)
    ins = [f"x{j}" for j in range(n)]
    for i in ins:
        d.add_input(i)
    d.add_logic("f", ins, Function.from_table(n, table))
    d.add_output("f")
    return d


@pytest.mark.parametrize("target, fn, n, table, count", [
    # textbook minima (from memory of standard digital-design texts)
    ("nand-only", "xor2", 2, 0b0110, 4),
    ("nand-only", "xnor2", 2, 0b1001, 5),
    ("nand-only", "and2", 2, 0b1000, 2),
    ("nand-only", "or2", 2, 0b1110, 3),
    ("nand-only", "mux2", 3, 0xCA, 4),      # x2 ? x1 : x0
    # by duality (a NOR network computes the dual of its NAND twin)
    ("nor-only", "xnor2", 2, 0b1001, 4),
    ("nor-only", "xor2", 2, 0b0110, 5),
    ("nor-only", "or2", 2, 0b1110, 2),
    ("nor-only", "and2", 2, 0b1000, 3),
])
def test_single_function_minima(target, fn, n, table, count):
    t = flow.load_target(target)
    d = _single(fn, n, table)
    b, a = flow.fit(d, t)
    assert len(b.cells) == count
    assert _exhaustive_equal(d, b)


def test_every_three_input_function_is_exact_on_nand_only(nand_only):
    """For every non-constant 3-input function the build has exactly the
    minimum NAND2 count of the exact-synthesis table (the table itself is
    checked against SAT in tests/logic/test_exact.py)."""
    from mapper.logic import exact

    for table in range(1, 255):
        d = _single(f"f{table}", 3, table)
        b = fit_gates(d, nand_only, effort=0)
        want = exact.min_gates(3, table, "nand")
        assert len(b.cells) == want, (hex(table), len(b.cells), want)


def test_four_input_functions_as_the_table_or_better(nand_only):
    """A random sample of 4-input functions, each alone: the cover has no
    more NAND2 than the shipped exact table's chain, and exactly as many
    where the table's chain is a proved minimum (the table is checked
    against SAT and an exhaustive search in tests/logic/test_exact.py)."""
    from mapper.fit.fit import _library
    from mapper.fit.gates import map_logic
    from mapper.logic import exact

    rng = random.Random(23)
    lib = _library(nand_only)
    for _ in range(60):
        table = rng.getrandbits(16)
        ch, proved, lower = exact.lookup_entry(4, table)
        got = len(map_logic(_single(f"f{table:x}", 4, table), lib).cells)
        assert lower <= got <= ch.size, (hex(table), got, ch.size)
        assert not proved or got == ch.size, hex(table)


# -- generated designs against arithmetic --------------------------------------------
@pytest.mark.parametrize("kind, width", [("rca", 4), ("ks", 4), ("arr", 3), ("lt", 4)])
@pytest.mark.parametrize("target", ["nand-only", "nor-only", "gates-74"])
def test_generated_builds_compute_arithmetic(tmp_path, kind, width, target):
    """ariths-gen circuits (independent generator): the build's outputs equal
    Python integer arithmetic on every operand pair."""
    d = read_design(generated.make(kind, width, tmp_path))
    b, a = flow.fit(d, flow.load_target(target))
    assert a.verified == "proved"
    bn = b.to_netlist()
    pairs = [(x, y) for x in range(1 << width) for y in range(1 << width)]
    words, mask = generated.operand_words(width, pairs)
    vals = simulate(bn, words, mask)
    name = f"{kind}{width}"
    for k, (x, y) in enumerate(pairs):
        if kind in generated.COMPARATORS:
            got = (vals[f"{name}_out"] >> k) & 1
            assert got == int(x < y)
            continue
        outs = [o for o in d.outputs]
        got = sum(((vals[o] >> k) & 1) << i for i, o in enumerate(outs))
        want = x * y if kind in generated.MULTIPLIERS else x + y
        assert got == want


@pytest.mark.parametrize("name, target, count", [
    # the careful hand conversion (mapper.fit.plain) against textbook NAND2 /
    # NOR2 counts, from memory of standard digital-design texts: the 9-NAND
    # full adder and 5-NAND half adder; c17 is itself 6 NAND2 (Brglez and
    # Fujiwara 1985); by De Morgan the NOR2 conversion of the dual design
    # costs the same, and a half adder in NOR2 is XNOR (4) + inverter + AND (3)
    ("full_adder", "nand-only", 9),
    ("half_adder", "nand-only", 5),
    ("c17", "nand-only", 6),
    ("half_adder", "nor-only", 8),
])
def test_hand_conversion_textbook_counts(name, target, count):
    from mapper.fit.fit import _complete_cells, _library
    from mapper.fit.plain import hand_mapping
    t = flow.load_target(target)
    d = read_design(DATA / "c17.blif" if name == "c17" else TEXTBOOK / f"{name}.blif")
    lib = _library(t)
    m = hand_mapping(d, lib, _complete_cells(lib)[0])
    assert len(m.cells) == count
    from mapper.fit.fit import mapping_netlist
    rng = random.Random(1)
    mask = (1 << 64) - 1
    words = {i: rng.getrandbits(64) for i in d.inputs}
    want, got = simulate(d, words, mask), simulate(mapping_netlist(d, m, t), words, mask)
    assert all(want[o] == got[o] for o in d.outputs)


def test_gate_for_gate_uses_the_chips_that_carry_the_gates(tmp_path, gates74):
    """ariths-gen's 4-bit ripple-carry adder (independent generator) is drawn
    with XOR, AND and OR gates (a half adder and three full adders: 7 XOR,
    7 AND, 3 OR); plugged in one gate a slot: two quad XOR, two quad AND and
    one quad OR (common practice)."""
    import sys
    sys.path.insert(0, str(Path(__file__).parents[2] / "bench"))
    from baseline import fair_baseline
    d = read_design(generated.make("rca", 4, tmp_path))
    assert fair_baseline(d, gates74)["plug"] == 5


@pytest.mark.parametrize("target", ["nand-only", "nor-only", "gates-74"])
def test_parts_never_worse_than_the_fair_baseline(tmp_path, target):
    """The part search never returns more whole parts than the better of the
    careful hand conversion and gate-for-gate plug-in (bench/baseline.py) on
    textbook circuits (common practice) and ariths-gen designs (independent
    generator); the build is proved equal to its design."""
    import sys
    sys.path.insert(0, str(Path(__file__).parents[2] / "bench"))
    from baseline import fair_baseline

    t = flow.load_target(target)
    for p in [TEXTBOOK / "full_adder.blif", TEXTBOOK / "mux4.blif", TEXTBOOK / "cmp2.blif",
              TEXTBOOK / "counter4.blif", DATA / "c17.blif", generated.make("rca", 4, tmp_path),
              generated.make("arr", 3, tmp_path)]:
        d = read_design(p)
        b, a = flow.fit(d, t)
        assert a.verified == "proved"
        assert len(b.parts) <= fair_baseline(d, t)["best"], p.name


def test_storage_onto_flip_flops(gates74, tmp_path):
    """The textbook 4-bit counter (tests/data/textbook/counter4.blif) on gates-74:
    four flip-flops in two dual D flip-flop parts, counting 0..15 and wrapping."""
    from mapper.simulate import run_cycles

    d = read_design(TEXTBOOK / "counter4.blif")
    b, a = flow.fit(d, gates74)
    assert b.part_counts().get("74HC74") == 2
    bn = b.to_netlist()
    seq = [{i: 0 for i in d.inputs} for _ in range(20)]
    got = run_cycles(bn, seq, 1, init={s: 0 for s in bn.storage()})
    ref = run_cycles(d, seq, 1, init={s: 0 for s in d.storage()})
    assert got == ref


def test_unused_inputs_are_tied(nand_only):
    """c17 uses 6 of 8 NAND2 slots: the two spare slots' inputs are tied
    (unused CMOS inputs must not float -- generic family datasheets)."""
    d = read_design(DATA / "c17.blif")
    b, a = flow.fit(d, nand_only)
    assert b.spare_slots() == 2
    assert len(b.ties) == 4
    assert {t.rail for t in b.ties} <= {"GND", "VCC"}


def test_one_decoupling_capacitor_per_chip(gates74):
    d = read_design(TEXTBOOK / "full_adder.blif")
    b, a = flow.fit(d, gates74)
    assert sum(b.support_counts().values()) == len(b.parts)


def test_build_cli_json(netfit):
    code, out, err = netfit("build", DATA / "c17.blif", "--target", "nand-only", "--json", as_json=True)
    assert code == 0, err
    for key in ("design", "target", "parts_total", "parts", "cells", "spare_sections", "support_parts",
                "delay_s", "cost", "currency", "verified"):
        assert key in out
    assert out["parts_total"] == 2 and out["verified"] == "proved"
    assert out["parts"] == {"74HC00": 2}


@pytest.mark.parametrize("target_name", ["nand-only", "nor-only"])
def test_dual_mapping_reads_back_with_rails_swapped(tmp_path, target_name):
    # the dual design mapped with the dual cell is the design's build once the
    # supply rails swap (the dual of constant 1 is 0; common practice of
    # switching algebra).  A constant output and ariths-gen's Wallace
    # multiplier (independent generator), which ties adder inputs to ground.
    from mapper.fit.fit import _dual_target, _library, _undual, dual_netlist, mapping_netlist
    from mapper.fit.gates import map_logic
    target = flow.load_target(target_name)
    const = tmp_path / "const.blif"
    const.write_text(".model k\n.inputs a b\n.outputs one f\n.names one\n1\n.names a b f\n11 1\n.end\n")
    for path in (const, generated.make("wallace", 6, tmp_path)):
        d = read_design(path)
        m = _undual(map_logic(dual_netlist(d), _library(_dual_target(target))))
        rng = random.Random(5)
        mask = (1 << 256) - 1
        words = {i: rng.getrandbits(256) for i in d.inputs}
        want = simulate(d, words, mask)
        got = simulate(mapping_netlist(d, m, target), words, mask)
        assert all(got[o] == want[o] for o in d.outputs), path.name
