"""Nodes computed again as 2:1 multiplexers of signals the graph already has.

Published method: resubstitution with don't-cares -- a node is expressed
through *divisors* (other signals of the network) where the replacement
holds for every input the network can see, satisfiability don't-cares
included (input combinations its divisors never take together).  See
A. Mishchenko, R. Brayton, J.-H. R. Jiang, S. Jang, "SAT-based logic
optimization and resynthesis", IWLS 2007, and A. Mishchenko, R. Brayton,
"Scalable logic synthesis using a simple circuit structure", IWLS 2006;
earlier, Boolean resubstitution in SIS (E. M. Sentovich et al., ERL memo
M92/41, 1992).  Here the only form tried is a multiplexer
``s ? d1 : d0`` whose select and data are divisors from the node's own
fan-in two levels deep (or constants, which makes an AND or OR of the
select a multiplexer too).

Such forms are not structural: a full adder's carry ``ab + (a XOR b) c``
equals ``(a XOR b) ? c : a`` only because ``a XOR b`` and ``a AND b`` are
never 1 together, and a prefix adder's group generate
``g_hi + p_hi g_lo`` equals ``p_hi ? g_lo : g_hi`` only because an
exclusive-OR propagate excludes the generate.  A cut mapper sees neither.

Every form returned is exact: checked on the truth tables of all free
variables when a graph has at most :data:`EXHAUSTIVE` of them, else
screened by random simulation and proved by SAT (``v != mux`` has no
solution over the node's whole fan-in cone).  Nothing here changes the
graph; :mod:`mapper.fit.muxes` decides which forms go into multiplexer
parts, and the build is proved equal to the design like every build.

Examples
--------
>>> from mapper.logic.aig import AIG
>>> g = AIG(); a, b, c = (g.add_input(x) for x in "abc")
>>> p = g.add_xor(a, b)
>>> co = g.add_or(g.add_and(a, b), g.add_and(p, c))
>>> g.add_output("co", co)
>>> forms = mux_forms(g)
>>> # the carry (the node's complement) is p ? c : a; p is a complemented literal here,
>>> # so its positive literal selects a at 1 and c at 0
>>> (p & ~1, a, c, 1) in forms[co >> 1] if p & 1 else (p, c, a, 1) in forms[co >> 1]
True
"""
from __future__ import annotations

import random

from .graph import global_tables

__all__ = ["mux_forms", "EXHAUSTIVE", "MAX_NODES"]

#: free variables at most for exhaustive truth tables (else simulation, then SAT)
EXHAUSTIVE = 14
#: AND nodes at most in a graph searched (the forms are one candidate of the part search)
MAX_NODES = 2_000
#: random patterns of the screening simulation
PATTERNS = 512


def mux_forms(aig) -> dict:
    """AND variable -> list of ``(s, d1, d0, compl)``: the variable's positive
    literal, complemented when ``compl`` is 1, equals ``s ? d1 : d0`` for
    every input.  ``s`` is a positive literal of another variable; ``d1`` and
    ``d0`` are literals (0 and 1 are the constants), not both constant and
    never equal.  Empty for a graph of more than :data:`MAX_NODES` ANDs."""
    if aig.num_ands > MAX_NODES:
        return {}
    sig, full = _signatures(aig)
    exact = len(aig.inputs) + len(aig.latches) <= EXHAUSTIVE
    prover = None if exact else _Prover(aig)
    out: dict = {}
    f0 = aig.f0
    try:
        for v in range(1, aig.num_vars):
            if f0[v] < 0:
                continue
            found = [form for form in _candidates(sig, full, v, _divisors(aig, v))
                     if prover is None or prover.holds(2 * v + form[3], *form[:3])]
            if found:
                out[v] = found
    finally:
        if prover is not None:
            prover.solver.delete()
    return out


def _candidates(sig: list, full: int, v: int, cands: list) -> list:
    """Forms of ``v`` over ``cands`` that agree on every signature bit: for
    each select, the data at 1 must agree with the node where the select is
    1, and the data at 0 where it is 0 (so each is looked for alone)."""
    out = []
    for s in sorted({x & ~1 for x in cands if x > 1}):
        ss = sig[s >> 1]
        ns = ~ss & full
        if any(sig[v] ^ ss == _sig(sig, d, full) for d in cands):
            continue   # the node is an exclusive-OR of the select: its data would be one signal in both phases
        for compl in (0, 1):
            t = sig[v] ^ (full if compl else 0)
            ones = [d for d in cands if d >> 1 != s >> 1 and _sig(sig, d, full) & ss == t & ss]
            zeros = [d for d in cands if d >> 1 != s >> 1 and _sig(sig, d, full) & ns == t & ns]
            out += [(s, d1, d0, compl) for d1 in ones for d0 in zeros if d1 != d0 and (d1 > 1 or d0 > 1)]
    return out


def _sig(sig: list, lit: int, full: int) -> int:
    return sig[lit >> 1] ^ (full if lit & 1 else 0)


def _signatures(aig) -> tuple[list, int]:
    """Truth tables of every variable (all free variables, when few) or
    random-simulation words; and the all-ones word."""
    n = len(aig.inputs) + len(aig.latches)
    tabs = global_tables(aig) if n <= EXHAUSTIVE else None
    if tabs is not None:
        return tabs, (1 << (1 << n)) - 1
    rng = random.Random(1)   # fixed: the same design meets the same forms
    full = (1 << PATTERNS) - 1
    words = {aig.names[v]: rng.getrandbits(PATTERNS) for v in aig.inputs}
    latch_words = {latch.name: rng.getrandbits(PATTERNS) for latch in aig.latches}
    return aig.simulate(words, full, latch_words), full


def _divisors(aig, v: int) -> list:
    """Literals a form of ``v`` may use: the constants, and its fan-ins and
    their fan-ins in both phases."""
    f0, f1 = aig.f0, aig.f1
    near = {f0[v] >> 1, f1[v] >> 1}
    for u in list(near):
        if f0[u] >= 0:
            near.update((f0[u] >> 1, f1[u] >> 1))
    near.discard(0)
    out = [0, 1]
    for u in sorted(near):
        out += [2 * u, 2 * u + 1]
    return out


class _Prover:
    """Incremental SAT over the whole graph: does a literal equal a multiplexer of three others?"""

    def __init__(self, aig):
        from pysat.solvers import Solver

        from ..cnf import AigCnf
        self.solver = Solver(name="glucose4")
        self.enc = AigCnf(aig, sink=self.solver)

    def holds(self, lit: int, s: int, d1: int, d0: int) -> bool:
        """True when ``lit == (s ? d1 : d0)`` for every input (no assignment tells them apart)."""
        lit_v, sv = self.enc.lit(lit), self.enc.lit(s)
        for sel, d in ((sv, d1), (-sv, d0)):
            if d < 2:   # a constant: lit must equal it where the select picks it
                if self.solver.solve(assumptions=[sel, lit_v if d == 0 else -lit_v]):
                    return False
                continue
            dv = self.enc.lit(d)
            for a, b in ((dv, -lit_v), (-dv, lit_v)):
                if self.solver.solve(assumptions=[sel, a, b]):
                    return False
        return True
