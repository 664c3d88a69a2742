"""Exact NAND2 / NOR2 synthesis and the shipped table of minimum chains.

Outside checks used here:

* textbook minimum NAND2 / NOR2 counts (XOR 4, XNOR 5, 2:1 multiplexer 4,
  half adder 5, full adder 9, AND2 2, OR2 3, inverter 1) — from memory of
  standard digital-design texts;
* De Morgan's laws (any logic text) for the NAND/NOR duality;
* an exhaustive enumeration of every NAND2 network up to a few gates, written
  here without SAT, as an independent check of the minimum counts;
* refutations without any symmetry-breaking constraint (where "no chain of
  ``r`` gates" is plain);
* class counts: 80 and 3984 input-permutation classes of 3- and 4-input
  functions (OEIS A000612, from memory) and 14 and 222 NPN classes
  (OEIS A000370, as quoted in TRADE-FACTS.md).
"""
from __future__ import annotations

import itertools
import random

import pytest

from mapper.logic import exact as E
from mapper.logic.function import var_mask

A2, B2 = var_mask(2, 0), var_mask(2, 1)
A3, B3, C3 = var_mask(3, 0), var_mask(3, 1), var_mask(3, 2)
F2, F3 = 0xF, 0xFF

XOR2 = A2 ^ B2
XNOR2 = ~(A2 ^ B2) & F2
AND2 = A2 & B2
OR2 = A2 | B2
MUX = ((A3 & ~C3) | (B3 & C3)) & F3  # input 2 selects input 1 over input 0
SUM3 = A3 ^ B3 ^ C3
CARRY3 = (A3 & B3) | (A3 & C3) | (B3 & C3)


# -- helpers written independently of the module --------------------------------

def _inputs(n):
    return [sum(1 << m for m in range(1 << n) if (m >> j) & 1) for j in range(n)]


def _brute_min_nand(n, max_gates):
    """Minimum NAND2 count of every function reachable with ``max_gates``
    gates, by trying every network: a state is the set of gate functions
    built so far (order does not matter for what can be built next)."""
    full = (1 << (1 << n)) - 1
    ins = _inputs(n)
    best = {f: 0 for f in ins}
    level = {frozenset()}
    for k in range(1, max_gates + 1):
        nxt = set()
        for S in level:
            sig = ins + sorted(S)
            for a in range(len(sig)):
                for b in range(a, len(sig)):
                    g = full & ~(sig[a] & sig[b])
                    if g in S or g in ins:
                        continue  # a repeated signal never helps
                    best.setdefault(g, k)
                    nxt.add(S | {g})
        level = nxt
    return best


def _refuted_plain(n, tables, r):
    """No chain of ``r`` NAND2 gates computes ``tables``: SAT without any
    symmetry constraint (so no chain of fewer gates either: unused gates
    may be added)."""
    enc = E._Encoder(n, tables, r, symmetry=False)
    res, _ = E._solve(enc, None, E._SOLVER)
    return res is False


def _permute(t, n, perm):
    out = 0
    for m in range(1 << n):
        if (t >> m) & 1:
            out |= 1 << sum(((m >> j) & 1) << perm[j] for j in range(n))
    return out


def _negate_inputs(t, n, mask):
    return sum(1 << (m ^ mask) for m in range(1 << n) if (t >> m) & 1)


# -- the shipped table ----------------------------------------------------------

@pytest.mark.parametrize("n", [1, 2, 3])
def test_every_small_function_has_a_correct_chain(n):
    """Each of the 2**2**n functions: the NAND and the NOR chain compute it."""
    for t in range(1 << (1 << n)):
        for gate in ("nand", "nor"):
            ch = E.lookup(n, t, gate)
            assert ch is not None and ch.gate == gate and ch.n == n
            assert ch.tables() == (t,), (n, hex(t), gate)
            assert E.min_gates(n, t, gate) == ch.size


def test_textbook_minimum_counts_from_the_table():
    # from memory of standard digital-design texts
    assert E.min_gates(2, XOR2) == 4
    assert E.min_gates(2, XNOR2) == 5
    assert E.min_gates(3, MUX) == 4
    assert E.min_gates(2, AND2) == 2
    assert E.min_gates(2, OR2) == 3
    assert E.min_gates(1, 0b01) == 1  # inverter
    assert E.min_gates(1, 0b10) == 0  # the input itself
    assert E.min_gates(2, 0) == 0 and E.lookup(2, 0).outputs == (E.TIE_LOW,)  # a tie
    # NOR duals (De Morgan): OR2 2, AND2 3, XNOR 4, XOR 5, inverter 1
    assert E.min_gates(2, OR2, "nor") == 2
    assert E.min_gates(2, AND2, "nor") == 3
    assert E.min_gates(2, XNOR2, "nor") == 4
    assert E.min_gates(2, XOR2, "nor") == 5
    assert E.min_gates(1, 0b01, "nor") == 1


def test_textbook_minimum_counts_by_sat():
    # from memory of standard digital-design texts
    for n, t, want in [(2, XOR2, 4), (2, XNOR2, 5), (3, MUX, 4), (2, AND2, 2), (2, OR2, 3), (1, 0b01, 1)]:
        ch = E.synthesize(n, [t])
        assert ch is not None and ch.size == want and ch.tables() == (t,)
    ch = E.synthesize(2, [OR2], gate="nor")
    assert ch.size == 2 and ch.tables() == (OR2,) and ch.gate == "nor"
    ch = E.synthesize(2, [XNOR2], gate="nor")
    assert ch.size == 4 and ch.tables() == (XNOR2,)


def test_half_adder_and_full_adder_share_gates():
    # half adder 5 NAND2, full adder 9 NAND2: from memory of standard digital-design texts
    ha = E.synthesize(2, [XOR2, AND2])
    assert ha.size == 5 and ha.tables() == (XOR2, AND2)
    fa = E.synthesize(3, [SUM3, CARRY3])
    assert fa.size == 9 and fa.tables() == (SUM3, CARRY3)
    # the dual pair (sum is self-dual up to complement, carry is self-dual) in NOR2
    ha_nor = E.synthesize(2, [XOR2, AND2], gate="nor")
    assert ha_nor.tables() == (XOR2, AND2)
    assert ha_nor.size == E.synthesize(2, [E.dual_table(2, XOR2), E.dual_table(2, AND2)]).size


def test_minimality_refuted_without_symmetry_constraints():
    """One gate fewer than the claimed minimum: no chain at all."""
    for n, tables in [(2, [XOR2]), (2, [XNOR2]), (3, [MUX]), (2, [OR2]), (2, [XOR2, AND2]),
                      (3, [0xE8])]:
        size = E.synthesize(n, tables).size
        assert _refuted_plain(n, tables, size - 1), (n, tables)
        assert not _refuted_plain(n, tables, size)


def test_three_input_counts_against_exhaustive_enumeration():
    """Every function of at most 6 NAND2 gates, found by trying all networks,
    has exactly that count in the table; every other one has more."""
    brute = _brute_min_nand(3, 6)
    for t in range(256):
        got = E.min_gates(3, t)
        if t in (0, F3):
            assert got == 0
        elif t in brute:
            assert got == brute[t], hex(t)
        else:
            assert got > 6, hex(t)


def test_four_input_small_counts_against_exhaustive_enumeration():
    """4-input functions of at most 5 NAND2 gates, by trying all networks."""
    brute = _brute_min_nand(4, 5)
    for t, k in brute.items():
        if t not in (0, 0xFFFF):  # constants need a tie, no gate
            assert E.min_gates(4, t) == k, hex(t)
    rng = random.Random(5)
    for _ in range(300):
        t = rng.getrandbits(16)
        if t not in brute:
            assert E.lookup_entry(4, t)[2] > 5  # the table's proved lower bound


def test_enumeration_by_cost_finds_every_class_of_each_count():
    """enumerate_cost over 3 inputs, level by level, finds exactly the classes
    whose minimum is that level; the minima come from the exhaustive network
    search above (no SAT), up to 6 gates."""
    brute = _brute_min_nand(3, 6)
    cheaper = [0, F3] + _inputs(3)
    for r in range(1, 7):
        chains, complete, _ = E.enumerate_cost(3, r, list(cheaper))
        assert complete
        found = {E.perm_class_rep(ch.tables()[0], 3)[0] for ch in chains}
        want = {E.perm_class_rep(t, 3)[0] for t, k in brute.items() if k == r and t not in (0, F3)}
        assert found == want, r
        assert all(ch.size == r for ch in chains)
        cheaper += [t for t, k in brute.items() if k == r]


def test_four_input_sample_refuted_without_symmetry_constraints():
    """A random sample of 4-input classes the table calls proved, of 6 or 7
    gates: one gate fewer is refuted by the plain encoding with none of the
    symmetry constraints (so the proof does not rest on them)."""
    rng = random.Random(17)
    checked = 0
    while checked < 2:
        t = rng.getrandbits(16)
        ch, proved, _ = E.lookup_entry(4, t)
        if proved and 6 <= ch.size <= 7:
            assert _refuted_plain(4, [t], ch.size - 1), hex(t)
            checked += 1


def test_nor_table_is_the_dual_of_the_nand_table():
    for t in range(256):
        d = E.dual_table(3, t)
        assert E.dual_table(3, d) == t
        nand = E.lookup(3, d, "nand")
        nor = E.lookup(3, t, "nor")
        assert nor.gates == nand.gates and nor.tables() == (t,)
    # De Morgan: the dual of AND is OR, of XOR is XNOR
    assert E.dual_table(2, AND2) == OR2
    assert E.dual_table(2, XOR2) == XNOR2


def test_symmetry_constraints_keep_the_minimum():
    """With and without the symmetry constraints the same minimum comes out
    (a sample of 3-input functions; bench/bench_exact.py compares all 256
    against the enumeration, which uses the constraints too)."""
    for t in [0x69, 0x96, 0xE8, MUX, 0x01, 0x7F, 0x80, 0x1E, 0x17]:
        a = E.search(3, [t])
        b = E.search(3, [t], symmetry=False)
        assert a.proved and b.proved and a.chain.size == b.chain.size, hex(t)


# -- 4 inputs ------------------------------------------------------------------

def test_four_input_table_covers_every_class():
    rng = random.Random(11)
    info = E.table_info()
    assert info["classes_4"] == 3984
    for _ in range(400):
        t = rng.getrandbits(16)
        got = E.lookup_entry(4, t)
        assert got is not None, hex(t)
        ch, proved, lower = got
        assert ch.tables() == (t,)
        assert lower <= ch.size and (ch.size == lower) == proved
        nor = E.lookup(4, t, "nor")
        assert nor.tables() == (t,)


def test_four_input_lookup_follows_permutations():
    rng = random.Random(3)
    for _ in range(50):
        t = rng.getrandbits(16)
        base = E.lookup_entry(4, t)
        for p in itertools.permutations(range(4)):
            u = _permute(t, 4, p)
            other = E.lookup_entry(4, u)
            assert other[0].size == base[0].size and other[1] == base[1]
            assert other[0].tables() == (u,)


def test_four_input_proved_minimum_refuted_one_below():
    """For a few classes the table calls proved, one gate fewer is refuted
    afresh (with the symmetry constraints; small counts only, to stay fast)."""
    rng = random.Random(8)
    checked = 0
    for _ in range(2000):
        t = rng.getrandbits(16)
        ch, proved, _ = E.lookup_entry(4, t)
        if proved and 3 <= ch.size <= 7:
            enc = E._Encoder(4, [t], ch.size - 1)
            res, _ = E._solve(enc, None, E._SOLVER)
            assert res is False, hex(t)
            checked += 1
            if checked == 6:
                break
    assert checked == 6


# -- counting -------------------------------------------------------------------

def _count_classes(n, npn):
    full = (1 << (1 << n)) - 1
    seen = bytearray(1 << (1 << n))
    count = 0
    perms = list(itertools.permutations(range(n)))
    for t in range(1 << (1 << n)):
        if seen[t]:
            continue
        count += 1
        for p in perms:
            u = _permute(t, n, p)
            for mask in range(1 << n) if npn else (0,):
                v = _negate_inputs(u, n, mask)
                seen[v] = 1
                if npn:
                    seen[full & ~v] = 1
    return count


def test_class_counts():
    # OEIS A000612 (from memory): 80 and 3984 input-permutation classes
    assert _count_classes(3, npn=False) == 80
    # the module's own class representatives agree
    reps3 = {E.perm_class_rep(t, 3)[0] for t in range(256)}
    assert len(reps3) == 80
    for t in range(256):
        rep, p = E.perm_class_rep(t, 3)
        assert E.permute_table(rep, 3, p) == t
    # OEIS A000370 (quoted in TRADE-FACTS.md): 14 NPN classes of 3-input functions
    assert _count_classes(3, npn=True) == 14


@pytest.mark.slow
def test_class_counts_four_inputs():
    # OEIS A000612 (from memory): 3984; OEIS A000370: 222
    assert _count_classes(4, npn=False) == 3984
    assert _count_classes(4, npn=True) == 222


# -- the chain type ---------------------------------------------------------------

def test_chain_encoding_round_trip_and_checks():
    ch = E.synthesize(3, [SUM3, CARRY3])
    again = E.Chain.decode(3, ch.encode())
    assert again == ch
    with pytest.raises(ValueError):
        E.Chain(2, ((0, 2),), (2,))  # reads itself
    with pytest.raises(ValueError):
        E.Chain(2, ((0, 1),), (5,))  # no such signal
    tie = E.Chain(2, (), (E.TIE_HIGH, 1))
    assert tie.tables() == (F2, B2)
    assert E.lookup(5, 0x1234) is None  # wider than the table
