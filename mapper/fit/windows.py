"""Windows of an and-inverter graph for relay synthesis: cones cut at nets of many fan-outs.

A relay build's contact networks are made window by window
(:mod:`mapper.fit.relay`): each window is a set of AND nodes over at most a
given number of leaves (inputs, storage outputs, and nets where windows
meet), with the exact truth tables of its nodes over those leaves.  Every
walk here is iterative.
"""
from __future__ import annotations

from collections import Counter
from dataclasses import dataclass

from ..logic.function import var_mask

__all__ = ["Window", "windows", "gate_windows", "dfs_order", "window_tables", "lit_table", "cone"]


@dataclass
class Window:
    """One window: its leaves, the AND nodes inside, and the nodes whose nets are needed outside."""

    leaves: list          # AIG vars that are the window's leaves
    nodes: list           # AIG AND vars inside, in topological order
    targets: list         # AIG vars whose nets are needed outside (or are outputs)


def _fanins(g, v):
    return (g.f0[v] >> 1, g.f1[v] >> 1)


def cone(g, roots) -> list:
    """The AND variables ``roots`` depend on (themselves included), ascending."""
    seen = set()
    stack = list(roots)
    while stack:
        v = stack.pop()
        if v in seen or not g.is_and(v):
            continue
        seen.add(v)
        stack.extend(_fanins(g, v))
    return sorted(seen)


def _roots(g, order: list, need: list, sources: set, limit: int) -> tuple[set, dict]:
    """Window roots (needed nets, nets of many fan-outs, and cuts that keep leaves within ``limit``)
    and each node's leaves."""
    fan: Counter = Counter()
    for v in order:
        for f in _fanins(g, v):
            fan[f] += 1
    roots = set(need) | {v for v in order if fan[v] > 1}
    leafset: dict = {}

    def leaves_of(f):
        if f == 0:
            return set()
        if f in sources or f in roots:
            return {f}
        return leafset[f]

    for v in order:
        ls = set()
        for f in _fanins(g, v):
            ls |= leaves_of(f)
        if len(ls) > limit:
            for f in sorted(_fanins(g, v), key=lambda f: -len(leaves_of(f))):
                if len(ls) <= limit:
                    break
                if f != 0 and f not in sources and f not in roots:
                    roots.add(f)
                    ls = set()
                    for f2 in _fanins(g, v):
                        ls |= leaves_of(f2)
        leafset[v] = ls
    return roots, leafset


def _merge(g, order: list, roots: set, leafset: dict, sources: set, limit: int) -> list:
    """Fan-out-free cones of the roots, merged in order while their leaves fit: ``(nodes, roots, leaves)``."""
    merged_windows = []
    cur_nodes: list = []
    cur_roots: list = []
    cur_leaves: set = set()
    for r in (v for v in order if v in roots):
        nodes, st = [], [r]
        seen = set()
        while st:
            v = st.pop()
            if v in seen:
                continue
            seen.add(v)
            nodes.append(v)
            for f in _fanins(g, v):
                if f != 0 and f not in sources and f not in roots:
                    st.append(f)
        merged = (cur_leaves | leafset[r]) - set(cur_roots) - {r}
        if cur_roots and len(merged) <= limit:
            cur_nodes += nodes
            cur_roots.append(r)
            cur_leaves = merged
        else:
            if cur_roots:
                merged_windows.append((cur_nodes, cur_roots, cur_leaves))
            cur_nodes, cur_roots, cur_leaves = list(nodes), [r], set(leafset[r])
    if cur_roots:
        merged_windows.append((cur_nodes, cur_roots, cur_leaves))
    return merged_windows


def windows(g, need: list, limit: int) -> list:
    """Cut the AIG into windows of at most ``limit`` leaves (see the module docstring).

    ``need`` lists the AIG vars whose values are used outside the logic
    (outputs, storage data and control).  Iterative throughout.
    """
    order = cone(g, need)
    sources = set(g.inputs) | {latch.var for latch in g.latches}
    roots, leafset = _roots(g, order, need, sources, limit)
    merged = _merge(g, order, roots, leafset, sources, limit)
    used_later: dict = {}
    for i, (_, _, lvs) in enumerate(merged):
        for x in lvs:
            used_later.setdefault(x, set()).add(i)
    out = []
    needed = set(need)
    for i, (nodes, rts, lvs) in enumerate(merged):
        tg = [r for r in rts if r in needed or any(j != i for j in used_later.get(r, ()))]
        out.append(Window(sorted(lvs), sorted(set(nodes)), tg))
    return out


def gate_windows(g, design, litmap: dict, need: list, limit: int) -> list | None:
    """One window per gate of the design, over that gate's own inputs: the builder's gate-by-gate plan.

    Each design node whose value is an AND of the AIG becomes a window whose
    leaves are the AIG variables of its fan-ins and whose nodes are the
    AIG nodes between them (inverters are complemented edges, so an
    inverter node shares its fan-in's window).  The contact synthesis of
    such a window is the textbook relay gate (an AND2 one make contact
    passing the other input, an OR2 one changeover from the rail...), so
    this plan is never worse than building the design gate by gate.
    ``None`` when some gate has more than ``limit`` inputs, or a needed
    variable is no gate's output (the AIG merged it away).
    """
    from ..netlist import Logic

    sources = set(g.inputs) | {latch.var for latch in g.latches}
    roots: dict = {}
    for name in design.topological_order():
        node = design.nodes.get(name)
        if not isinstance(node, Logic) or name not in litmap:
            continue
        v = litmap[name] >> 1
        if not v or not g.is_and(v) or v in roots:
            continue
        leaves = {litmap[f] >> 1 for f in node.fanins if f in litmap} - {0}
        if len(leaves) > limit:
            return None
        roots[v] = leaves
    wins = []
    made: set = set()
    for v, leaves in sorted(roots.items()):
        nodes, stack, seen = [], [v], set()
        while stack:
            x = stack.pop()
            if x in seen:
                continue
            seen.add(x)
            if x in leaves or x in sources or not g.is_and(x):
                continue
            nodes.append(x)
            stack.extend(_fanins(g, x))
        if any(x not in leaves and x not in sources and x != 0 and not g.is_and(x) for x in seen):
            return None
        wins.append(Window(sorted(leaves), sorted(nodes), [v]))
        made.add(v)
    used = {x for w in wins for x in w.leaves if g.is_and(x)} | set(need)
    if not used <= made:
        return None
    needed = set(need)
    return [w for w in wins if w.targets[0] in used or w.targets[0] in needed]


def dfs_order(g, leaves: list, roots: list) -> list:
    """Leaf indices in the order a depth-first walk from ``roots`` meets them."""
    idx = {v: j for j, v in enumerate(leaves)}
    seen, out = set(), []
    for r in roots:
        stack = [r]
        while stack:
            v = stack.pop()
            if v in seen:
                continue
            seen.add(v)
            if v in idx:
                out.append(idx[v])
                continue
            if v and g.is_and(v):
                stack.append(g.f1[v] >> 1)
                stack.append(g.f0[v] >> 1)
    out += [j for j in range(len(leaves)) if j not in set(out)]
    return out


def window_tables(g, leaves: list, nodes: list, inverted=frozenset()) -> tuple[int, dict]:
    """Truth tables of ``nodes`` over ``leaves``; a leaf in ``inverted`` is the
    complement of its table variable (storage whose relay holds the complement)."""
    n = len(leaves)
    full = (1 << (1 << n)) - 1
    val = {0: 0}
    for j, v in enumerate(leaves):
        val[v] = var_mask(n, j) ^ (full if v in inverted else 0)
    for v in nodes:
        a, b = g.f0[v], g.f1[v]
        x = val[a >> 1] ^ (full if a & 1 else 0)
        y = val[b >> 1] ^ (full if b & 1 else 0)
        val[v] = x & y
    return full, val


def lit_table(val: dict, lit: int, full: int) -> int:
    """The table of literal ``lit`` (a complemented literal flips every bit)."""
    return val[lit >> 1] ^ (full if lit & 1 else 0)

