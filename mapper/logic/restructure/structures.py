"""Small and-inverter structures for the functions of up to four inputs.

A *structure* is ``(ops, out)``: signal 0 is constant false, signals
``1 .. n`` are the leaves, signal ``n + 1 + k`` is ``AND(ops[k])``; each
operand and ``out`` is a literal ``2 * signal + complement``.  For each
function the shape of fewest nodes of these is kept:

* the minimum NAND2 chain of the shipped exact table
  (:mod:`mapper.logic.exact`; Kojevnikov, Kulikov and Yaroslavtsev, SAT
  2009), read as ANDs with complemented outputs (a NAND of a signal with
  itself is only a complement, which costs nothing in a graph);
* the factored form (:func:`mapper.logic.restructure.factor.factor_into`)
  of the function's or its complement's irredundant cover
  (:func:`mapper.logic.function.isop`);
* a split on one leaf (Shannon expansion, or an exclusive-OR with the leaf
  where the two cofactors are complements), the halves from this table.

:func:`apply` builds a structure into a graph; :func:`new_nodes` counts the
nodes that would be new without building anything (the count DAG-aware
rewriting weighs, Mishchenko, Chatterjee and Brayton, DAC 2006).

Examples
--------
>>> ops, out = structure(2, 0b0110)     # XOR2: three ANDs
>>> len(ops)
3
"""
from __future__ import annotations

from functools import lru_cache

from .. import exact
from ..aig import AIG
from ..function import isop
from .factor import factor_into
from .graph import cleanup

__all__ = ["structure", "apply", "new_nodes"]


def _from_chain(n: int, table: int) -> AIG | None:
    chain = exact.lookup(n, table, "nand")
    if chain is None:
        return None
    g = AIG()
    sig = [g.add_input(f"x{j}") for j in range(n)]
    for a, b in chain.gates:
        sig.append(sig[a] ^ 1 if a == b else g.add_and(sig[a], sig[b]) ^ 1)
    o = chain.outputs[0]
    out = 0 if o == exact.TIE_LOW else 1 if o == exact.TIE_HIGH else sig[o]
    g.add_output("y", out)
    return g


def _from_cover(n: int, table: int) -> AIG:
    full = (1 << (1 << n)) - 1
    best = None
    for phase, t in ((0, table), (1, ~table & full)):
        g = AIG()
        xs = [g.add_input(f"x{j}") for j in range(n)]
        cubes, _ = isop(t, t, n)
        sop = [frozenset(2 * j + (ch == "0") for j, ch in enumerate(c) if ch != "-") for c in cubes]
        g.add_output("y", factor_into(g, sop, lambda x, xs=xs: xs[x >> 1] ^ (x & 1)) ^ phase)
        g = cleanup(g)
        if best is None or g.num_ands < best.num_ands:
            best = g
    assert best is not None
    return best


def _drop(table: int, n: int, j: int, value: int) -> int:
    """The cofactor of ``table`` at leaf ``j`` = ``value``, as a table over the other ``n - 1`` leaves."""
    out = 0
    k = 0
    for m in range(1 << n):
        if (m >> j) & 1 != value:
            continue
        if (table >> m) & 1:
            out |= 1 << k
        k += 1
    return out


def _from_split(n: int, table: int) -> AIG | None:
    """The best split of ``table`` on one leaf (see the module docstring)."""
    best = None
    for j in range(n):
        f0, f1 = _drop(table, n, j, 0), _drop(table, n, j, 1)
        if f0 == f1:
            continue
        g = AIG()
        xs = [g.add_input(f"x{i}") for i in range(n)]
        rest = xs[:j] + xs[j + 1:]
        full = (1 << (1 << (n - 1))) - 1
        if f1 == ~f0 & full:
            out = g.add_xor(xs[j], apply(g, *structure(n - 1, f0), rest))
        else:
            out = g.add_mux(xs[j], apply(g, *structure(n - 1, f1), rest), apply(g, *structure(n - 1, f0), rest))
        g.add_output("y", out)
        g = cleanup(g)
        if best is None or g.num_ands < best.num_ands:
            best = g
    return best


@lru_cache(maxsize=1 << 17)
def structure(n: int, table: int) -> tuple[tuple, int]:
    """The structure of the fewest ANDs found for ``table`` over ``n <= 4`` leaves."""
    cands = [_from_cover(n, table)]
    chain = _from_chain(n, table)
    if chain is not None:
        cands.append(cleanup(chain))
    if n >= 2:
        split = _from_split(n, table)
        if split is not None:
            cands.append(split)
    g = min(cands, key=lambda x: x.num_ands)
    ops = tuple((g.f0[v], g.f1[v]) for v in range(n + 1, g.num_vars))
    return ops, g.outputs[0][1]


def apply(aig: AIG, ops, out: int, leaves) -> int:
    """Build the structure over the literals ``leaves``; returns its literal."""
    sig = [0, *leaves]
    for a, b in ops:
        sig.append(aig.add_and(sig[a >> 1] ^ (a & 1), sig[b >> 1] ^ (b & 1)))
    return sig[out >> 1] ^ (out & 1)


def new_nodes(aig: AIG, ops, leaves, dying=frozenset(), limit: int = 1 << 30) -> int:
    """How many ANDs :func:`apply` would add, counting a node found in
    ``dying`` (variables about to be freed) as new; stops counting past ``limit``."""
    sig: list = [0, *leaves]
    count = 0
    for a, b in ops:
        x, y = sig[a >> 1], sig[b >> 1]
        got = None
        if x is not None and y is not None:
            got = aig.find_and(x ^ (a & 1), y ^ (b & 1))
        if got is None or (got >> 1) in dying:
            count += 1
            if count > limit:
                return count
            sig.append(None if got is None else got)
        else:
            sig.append(got)
    return count
