"""DAG-aware rewriting of an and-inverter graph with small structures of few nodes.

Published method: A. Mishchenko, S. Chatterjee and R. Brayton, "DAG-aware
AIG rewriting: a fresh look at combinational logic synthesis", DAC 2006.
For each AND node, in topological order, every 4-input cut (a set of at
most four nodes that separates the node from the inputs; enumerated
bottom-up and merged, as in Pan and Lin, FPGA 1998, and Cong, Wu and Ding,
FPGA 1999) gives the node's function over the cut; the node may be
replaced by the structure of fewest ANDs known for that function
(:mod:`mapper.logic.restructure.structures`).  A replacement is taken when
it *gains*: the nodes that die with the old cone (its maximum fan-out-free
cone above the cut) outnumber the nodes the structure adds, where a node
the graph already holds costs nothing -- that is what makes it DAG-aware.
With ``zero`` set, replacements that gain nothing are taken too (they
change the shape, which gives later passes other cuts to work with).

The graph is rebuilt as the sweep goes (each node's new literal is known
before its readers are visited), then swept of dead nodes.

Examples
--------
>>> from mapper.logic.aig import AIG
>>> g = AIG(); a, b, c = (g.add_input(x) for x in "abc")
>>> x = g.add_or(g.add_and(a, b), g.add_and(a, c))    # ab + ac: three ANDs
>>> g.add_output("y", x)
>>> rewrite(g).num_ands                                  # a(b + c): two
2
"""
from __future__ import annotations

from ..aig import AIG
from .graph import cleanup, finish, frame, mffc_size
from .structures import apply, new_nodes, structure

__all__ = ["rewrite", "enumerate_cuts"]

#: cuts kept per node besides its trivial cut
CUTS_PER_NODE = 8
_EXPAND: dict = {}


def _expand(table: int, sub: tuple, leaves: tuple) -> int:
    """``table`` over the leaves ``sub`` as a table over ``leaves`` (a superset)."""
    if sub == leaves:
        return table
    key = (table, sub, leaves)
    got = _EXPAND.get(key)
    if got is not None:
        return got
    pos = [leaves.index(x) for x in sub]
    out = 0
    for m in range(1 << len(leaves)):
        idx = 0
        for i, p in enumerate(pos):
            idx |= ((m >> p) & 1) << i
        if (table >> idx) & 1:
            out |= 1 << m
    if len(_EXPAND) < 1 << 18:
        _EXPAND[key] = out
    return out


def _shrink(leaves: tuple, table: int) -> tuple[tuple, int]:
    """Drop leaves the table does not depend on."""
    n = len(leaves)
    keep = []
    for j in range(n):
        s = 1 << j
        for m in range(1 << n):
            if not (m >> j) & 1 and ((table >> m) & 1) != ((table >> (m | s)) & 1):
                keep.append(j)
                break
    if len(keep) == n:
        return leaves, table
    sub = tuple(leaves[j] for j in keep)
    out = 0
    for k in range(1 << len(keep)):
        m = 0
        for i, j in enumerate(keep):
            m |= ((k >> i) & 1) << j
        if (table >> m) & 1:
            out |= 1 << k
    return sub, out


def enumerate_cuts(aig: AIG, k: int = 4, limit: int = CUTS_PER_NODE) -> list:
    """Per variable, its cuts of at most ``k`` leaves as ``(leaves, table)``,
    the trivial cut first; at most ``limit`` others, fewest leaves first."""
    nv = aig.num_vars
    cuts: list = [[] for _ in range(nv)]
    f0, f1 = aig.f0, aig.f1
    for v in range(1, nv):
        if f0[v] < 0:
            cuts[v] = [((v,), 0b10)]
            continue
        a, b = f0[v], f1[v]
        found: dict = {}
        for la, ta in cuts[a >> 1]:
            if a & 1:
                ta ^= (1 << (1 << len(la))) - 1
            for lb, tb in cuts[b >> 1]:
                if b & 1:
                    tb ^= (1 << (1 << len(lb))) - 1
                leaves = tuple(sorted(set(la) | set(lb)))
                if len(leaves) > k or leaves in found:
                    continue
                t = _expand(ta, la, leaves) & _expand(tb, lb, leaves)
                leaves, t = _shrink(leaves, t)
                found.setdefault(leaves, t)
        kept = sorted(found.items(), key=lambda kv: (len(kv[0]), kv[0]))[:limit]
        cuts[v] = [((v,), 0b10)] + kept
    return cuts


def rewrite(aig: AIG, zero: bool = False) -> AIG:
    """One sweep of DAG-aware rewriting (see the module docstring)."""
    cuts = enumerate_cuts(aig)
    refs = aig.fanout_counts()
    new, lit = frame(aig)
    dead = bytearray(aig.num_vars)
    f0, f1 = aig.f0, aig.f1
    for v in range(1, aig.num_vars):
        a = f0[v]
        if a < 0:
            continue
        b = f1[v]
        best = None
        for leaves, table in cuts[v][1:]:
            if any(dead[x] for x in leaves) or leaves == (v,):
                continue
            size, cone = mffc_size(aig, v, refs, leaves)
            ops, out = structure(len(leaves), table)
            dying = {lit[u] >> 1 for u in cone if u != v and lit[u] > 1}
            leaf_lits = [lit[x] for x in leaves]
            added = new_nodes(new, ops, leaf_lits, dying, size)
            gain = size - added
            if gain > 0 or (zero and gain == 0 and len(ops) != size):
                if best is None or gain > best[0]:
                    best = (gain, ops, out, leaf_lits, cone)
        if best is None:
            lit[v] = new.add_and(lit[a >> 1] ^ (a & 1), lit[b >> 1] ^ (b & 1))
            continue
        _, ops, out, leaf_lits, cone = best
        lit[v] = apply(new, ops, out, leaf_lits)
        for u in cone:
            if u != v:
                dead[u] = 1
                refs[u] = 0
    return cleanup(finish(aig, new, lit))
