"""Multiplexer forms of nodes under don't-cares (mapper.logic.restructure.muxresub).

Outside sources:

* The textbook full adder (tests/data/textbook/full_adder.blif, common practice): its carry
  ``ab + cin (a XOR b)`` is ``(a XOR b) ? cin : a`` (where a and b differ the carry is the
  carry-in, where they agree it is either of them; common practice of adder texts).
* ariths-gen adders (independent generator): every form found is checked against truth tables
  of the whole design over all its inputs, computed here by plain simulation, not by the
  module's own tables or SAT.
"""
from __future__ import annotations

from pathlib import Path

import pytest

import generated
from mapper.logic.aig import from_netlist
from mapper.logic.function import var_mask
from mapper.logic.minimize import min_cover
from mapper.logic.restructure import muxresub
from mapper.logic.restructure.muxresub import mux_forms
from mapper.read import read_design

TEXTBOOK = Path(__file__).parents[2] / "data" / "textbook"


def _tables(aig):
    """Truth table of every variable over all inputs, by bit-parallel simulation."""
    n = len(aig.inputs)
    full = (1 << (1 << n)) - 1
    words = {aig.names[v]: var_mask(n, j) for j, v in enumerate(aig.inputs)}
    return aig.simulate(words, full), full, n


def _lit(tabs, lit, full):
    return full * (lit & 1) if lit < 2 else tabs[lit >> 1] ^ (full if lit & 1 else 0)


def test_full_adder_carry_is_a_multiplexer_of_the_propagate():
    d = read_design(TEXTBOOK / "full_adder.blif")
    aig, _ = from_netlist(d, cover=min_cover)
    tabs, full, n = _tables(aig)
    name = {aig.names[v]: v for v in aig.inputs}
    a, b, cin = (var_mask(n, list(aig.inputs).index(name[x])) for x in ("a", "b", "cin"))
    carry = dict(aig.outputs)["cout"]
    assert _lit(tabs, carry, full) == (a & b) | (a & cin) | (b & cin)   # the design is the textbook one
    forms = mux_forms(aig)[carry >> 1]
    found = False
    for s, d1, d0, compl in forms:
        sel, one, zero = _lit(tabs, s, full), _lit(tabs, d1, full), _lit(tabs, d0, full)
        if compl != carry & 1:
            continue   # a form of the carry's complement
        if sel == (a ^ b) ^ full:   # the select in the other phase: swap the data
            sel, one, zero = sel ^ full, zero, one
        found |= sel == a ^ b and one == cin and zero in (a, b)
    assert found


@pytest.mark.parametrize("kind, width", [("rca", 4), ("ks", 4), ("bk", 8)])
def test_every_form_holds_on_every_input(tmp_path, kind, width, monkeypatch):
    """Forms proved by SAT (the exhaustive path switched off) and by the module's tables
    both agree with truth tables of the design over all its inputs."""
    d = read_design(generated.make(kind, width, tmp_path))
    aig, _ = from_netlist(d, cover=min_cover)
    tabs, full, _ = _tables(aig)
    for exhaustive in (16, 0):
        monkeypatch.setattr(muxresub, "EXHAUSTIVE", exhaustive)
        forms = mux_forms(aig)
        true_muxes = 0
        for v, fs in forms.items():
            for s, d1, d0, compl in fs:
                sel = tabs[s >> 1]
                got = (_lit(tabs, d1, full) & sel) | (_lit(tabs, d0, full) & ~sel & full)
                assert got == tabs[v] ^ (full if compl else 0), (v, s, d1, d0, compl)
                true_muxes += d1 > 1 and d0 > 1
        # the carries (ripple) and group generates (prefix) are multiplexers of a propagate
        assert true_muxes >= width - 1
