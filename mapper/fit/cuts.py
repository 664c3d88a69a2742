"""k-feasible cuts of an AIG with their truth tables.

Published method: priority cuts -- A. Mishchenko, S. Cho, S. Chatterjee,
R. Brayton, "Combinational and sequential mapping with priority cuts",
ICCAD 2007.  Each AND node keeps only its ``C`` best cuts (by a cost the
caller supplies, evaluated while enumerating, so that cut computation and the
first mapping pass are one sweep), plus its trivial cut.

A cut is a tuple of leaf variables in increasing order and the truth table of
the node over those leaves (leaf ``j`` is table input ``j``; see
:mod:`mapper.logic.function`).  Tables are small integers (at most 16 bits
for ``k = 4``); merging two cuts expands each child table into the merged
leaf space through a cached lookup, so no per-minterm Python loop runs in the
hot path.

Examples
--------
>>> from mapper.logic.aig import AIG
>>> g = AIG(); a, b, c = (g.add_input(x) for x in "abc")
>>> f = g.add_and(g.add_and(a, b), c)
>>> cuts = enumerate_cuts(g, k=3, limit=4)
>>> ((1, 2, 3), 128) in cuts[f >> 1]   # the 3-leaf cut {a, b, c} computes AND3
True
"""
from __future__ import annotations

from ..logic.function import var_mask

__all__ = ["enumerate_cuts", "expand_table", "reduce_support"]

_EXPAND: dict = {}
_FULL = [(1 << (1 << n)) - 1 for n in range(17)]
_SUPPORT: dict = {}


def _support(n: int, table: int):
    """``None`` when ``table`` depends on all ``n`` inputs, else
    ``(kept positions, table over them)`` (memoized)."""
    key = (n, table)
    if key in _SUPPORT:
        return _SUPPORT[key]
    r = reduce_support(tuple(range(n)), table)
    r = None if len(r[0]) == n else r
    _SUPPORT[key] = r
    return r


def _positions(sub: tuple, leaves: tuple) -> tuple:
    """Where each leaf of ``sub`` sits in ``leaves``."""
    return tuple([leaves.index(x) for x in sub])


def _dominated(l: tuple, seen: dict) -> bool:
    """Whether ``seen`` holds ``l`` less one of its leaves."""
    if len(l) == 2:
        return (l[1],) in seen or (l[0],) in seen
    if len(l) == 3:
        return (l[1], l[2]) in seen or (l[0], l[2]) in seen or (l[0], l[1]) in seen
    for i in range(len(l)):
        if l[:i] + l[i + 1:] in seen:
            return True
    return False


def expand_table(table: int, positions: tuple, n: int) -> int:
    """Re-express a table over ``len(positions)`` inputs in an ``n``-input space.

    Input ``i`` of ``table`` becomes input ``positions[i]`` of the result.
    """
    key = (table, positions, n)
    r = _EXPAND.get(key)
    if r is None:
        r = 0
        for m in range(1 << n):
            idx = 0
            for i, p in enumerate(positions):
                if (m >> p) & 1:
                    idx |= 1 << i
            if (table >> idx) & 1:
                r |= 1 << m
        _EXPAND[key] = r
    return r


def reduce_support(leaves: tuple, table: int):
    """Drop leaves the table does not depend on; returns ``(leaves, table)``."""
    n = len(leaves)
    keep = []
    for j in range(n):
        m = var_mask(n, j)
        s = 1 << j
        if ((table & m) >> s) != (table & ~m & ((1 << (1 << n)) - 1)):
            keep.append(j)
    if len(keep) == n:
        return leaves, table
    # project onto kept inputs: read the table where dropped inputs are 0
    new = 0
    for m in range(1 << len(keep)):
        idx = 0
        for i, j in enumerate(keep):
            if (m >> i) & 1:
                idx |= 1 << j
        if (table >> idx) & 1:
            new |= 1 << m
    return tuple(leaves[j] for j in keep), new


def enumerate_cuts(aig, k: int = 4, limit: int = 8, cost=None, nodes=None, after=None, cuts=None,
                   boundary=frozenset(), choices=None):
    """Priority cuts of every AND node.

    Parameters
    ----------
    aig : AIG
    k : int
        Largest number of leaves.
    limit : int
        Cuts kept per node besides the trivial one.
    cost : callable or None
        ``cost(var, leaves, table) -> sortable`` ranking a cut (lower is
        better); called in topological order, so it may read mapping data of
        the leaves.  Default: fewer leaves first.
    nodes : sequence or None
        The variables to visit, in a topological order (fan-ins, and every
        choice of a node, before the node); default all, in increasing order.
    after : callable or None
        ``after(var)`` runs once the node's cuts are stored (the mapper
        matches the node there, so that ``cost`` of later nodes can read it).
    cuts : dict or None
        The dictionary to fill (lets ``after`` read it while it grows).
    boundary : set of int
        Variables no cut may reach through: their parents see only their
        trivial cut, so each stays a signal of its own in any cover (used
        to keep hazard-covering terms that a functional match would drop).
    choices : dict or None
        var -> literals of other nodes computing the same function
        (:mod:`mapper.fit.choices`); their cuts join the node's own, so a
        cover may use any of the structures.

    Returns
    -------
    dict
        var -> list of ``(leaves, table)``; the trivial cut ``((var,), 0b10)``
        comes last.  Inputs and latch outputs have only their trivial cut
        (when ``nodes`` is given, only the variables in it get an entry).
    """
    f0, f1 = aig.f0, aig.f1
    if cuts is None:
        cuts = {}
    trivial = {}
    it = range(1, aig.num_vars) if nodes is None else nodes
    if choices is None:
        choices = {}
    for v in it:
        triv = ((v,), 0b10)
        trivial[v] = triv
        if f0[v] < 0:
            cuts[v] = [triv]
            continue
        a, b = f0[v], f1[v]
        va, vb = a >> 1, b >> 1
        ca = [((va,), 0b10)] if va in boundary else (cuts.get(va) or [((va,), 0b10)])
        cb = [((vb,), 0b10)] if vb in boundary else (cuts.get(vb) or [((vb,), 0b10)])
        seen = {}
        ca_, cb_ = a & 1, b & 1
        for la, ta in ca:
            sa = set(la)
            for lb, tb in cb:
                if la == lb:
                    leaves = la
                else:
                    u = sa.union(lb)
                    if len(u) > k:
                        continue
                    leaves = tuple(sorted(u))
                n = len(leaves)
                full = _FULL[n]
                xa = ta if leaves == la else expand_table(ta, _positions(la, leaves), n)
                xb = tb if leaves == lb else expand_table(tb, _positions(lb, leaves), n)
                if ca_:
                    xa ^= full
                if cb_:
                    xb ^= full
                t = xa & xb
                red = _support(n, t)
                if red is not None:
                    keep, t = red
                    leaves = tuple(leaves[j] for j in keep)
                if leaves not in seen:
                    seen[leaves] = t
        for alt in choices.get(v, ()):
            # a choice's cuts, as cuts of this node (complemented when it is)
            for leaves, t in cuts[alt >> 1]:
                if len(leaves) == 1 and leaves[0] == alt >> 1:
                    continue
                if alt & 1:
                    t ^= _FULL[len(leaves)]
                if leaves not in seen:
                    seen[leaves] = t
        # remove dominated cuts: another cut's leaves are this one's less one
        # leaf (smaller subsets are not checked; that keeps a few redundant cuts)
        found = [(l, t) for l, t in seen.items() if len(l) < 2 or not _dominated(l, seen)]
        if cost is not None:
            found.sort(key=lambda lt: cost(v, lt[0], lt[1]))
        else:
            found.sort(key=lambda lt: len(lt[0]))
        if len(found) > limit:
            # beyond the priority cuts, the best cut whose leaves are all inputs: area flow
            # under-counts leaves shared by other cuts, which can push out the one cut
            # whose match (an exact chain over the inputs) is the whole cone's best
            extra = next((c for c in found[limit:] if all(f0[x] < 0 for x in c[0])), None)
            found = found[:limit]
            if extra is not None:
                found.append(extra)
        found.append(triv)
        cuts[v] = found
        if after is not None:
            after(v)
    return cuts
