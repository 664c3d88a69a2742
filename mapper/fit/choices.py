"""Structural choices for the mapper: other shapes of the same logic.

A cut-based mapper can only build what the subject graph's structure lets
its cuts see.  The standard AIG of an adder hides the one sharing that makes
the nine-NAND full adder (common practice of digital-design texts, from
memory): the carry's ``a AND b`` and the first exclusive-OR's inner NAND are
the same gate.  This module adds, beside the original nodes, alternative
structures computing the same functions, and records them as *choices*; the
mapper merges the cuts of every choice into the cuts of the original node,
so its cover may use either shape, node by node.

Published method: mapping with structural choices -- S. Chatterjee,
A. Mishchenko, R. Brayton, X. Wang, T. Kam, "Reducing structural bias in
technology mapping", ICCAD 2005 (IEEE TCAD 25(12), 2006).  The choices here
come from a small set of rewrites found by cut functions, not from
equivalence classes of several whole networks:

* every 2-input exclusive-OR whose inputs also feed an AND (in any phase)
  gets the four-NAND shape built around that AND;
* every full adder (an XOR3 node and a majority node over the same three
  cut leaves, any phases) gets the nine-NAND shape in both polarities (the
  full adder is self-dual, so complemented inputs give complemented sum and
  carry), with the latest-arriving leaf as carry-in.

Choices never change the function of any node; the mapped build is proved
equal to the design as every build is.

Examples
--------
>>> from mapper.logic.aig import AIG
>>> g = AIG(); a, b, c = (g.add_input(x) for x in "abc")
>>> s = g.add_xor(g.add_xor(a, b), c)
>>> co = g.add_or(g.add_and(a, b), g.add_and(g.add_xor(a, b), c))
>>> g.add_output("s", s); g.add_output("co", co)
>>> ch, order, groups, inner = structural_choices(g)
>>> sorted(len(v) for v in ch.values())[-1] >= 2   # both full-adder shapes
True
"""
from __future__ import annotations

import logging

from .cuts import enumerate_cuts

__all__ = ["structural_choices"]

log = logging.getLogger(__name__)

_XOR2 = {0b0110: 0, 0b1001: 1}
_XOR3 = {0x96: 0, 0x69: 1}


def _maj_tables() -> dict:
    """table -> (pa, pb, pc, po) for maj(x0^pa, x1^pb, x2^pc) ^ po."""
    out = {}
    for code in range(16):
        pa, pb, pc, po = code & 1, (code >> 1) & 1, (code >> 2) & 1, (code >> 3) & 1
        t = 0
        for m in range(8):
            x = ((m & 1) ^ pa, ((m >> 1) & 1) ^ pb, ((m >> 2) & 1) ^ pc)
            if (sum(x) >= 2) ^ po:
                t |= 1 << m
        out[t] = (pa, pb, pc, po)
    return out


_MAJ = _maj_tables()


def _fa9(aig, a, b, c):
    """The nine-node full adder over literals a, b, c: ``(sum, carry)``."""
    n1 = aig.add_and(a, b)
    x = aig.add_xor_shared(a, b)
    n5 = aig.add_and(x, c)
    s = aig.add_xor_shared(x, c)
    return s, aig.add_or(n1, n5)


def structural_choices(aig, boundary=frozenset(), k_limit: int = 6):
    """Add alternative structures to ``aig``; returns ``(choices, order, groups, inner)``.

    ``choices`` maps an AND variable to literals of other nodes that compute
    the same function as its positive literal; ``order`` is a topological
    order of all AND variables in which every choice comes before the node
    it stands for (so a cut enumeration in this order sees the choices'
    cuts when it reaches the node).  ``groups`` lists the full adders: for
    each, its options (one per polarity), each a list of ``(var, literal)``
    pairs that must switch together for the shape's sharing to pay.
    ``inner`` holds the new variables of those shapes: the mapper covers
    them node by node (no cut spans them), which is what keeps the shape.
    Nodes in ``boundary`` get no choices.  ``k_limit`` is the number of 3-input cuts per
    node searched for exclusive-ORs and majorities.
    """
    n_orig = aig.num_vars
    cuts = enumerate_cuts(aig, k=3, limit=k_limit)
    levels = aig.levels()
    xor2: dict = {}
    xor3: dict = {}
    maj: dict = {}
    for v in range(1, n_orig):
        if not aig.is_and(v) or v in boundary:
            continue
        for leaves, t in cuts[v]:
            n = len(leaves)
            if n == 2 and t in _XOR2:
                xor2.setdefault(leaves, []).append((v, _XOR2[t]))
            elif n == 3 and t in _XOR3:
                xor3.setdefault(leaves, []).append((v, _XOR3[t]))
            elif n == 3 and t in _MAJ:
                maj.setdefault(leaves, []).append((v, _MAJ[t]))
    del cuts
    choices: dict = {}

    def usable(v, lit):
        # only new nodes stand in for a node: two original nodes offered as
        # each other's choice would make a loop (found by a second reader)
        return lit >> 1 >= n_orig and aig.is_and(lit >> 1)

    def offer(v, lit):
        if usable(v, lit):
            alts = choices.setdefault(v, [])
            if lit not in alts:
                alts.append(lit)

    # an exclusive-OR inside a full adder gets its shapes from the adder's
    # (offering both confuses the cover: measured on ariths-gen multipliers)
    in_adder: set = set()
    for leaves in maj:
        if leaves in xor3:
            a, b, c = leaves
            in_adder.update(((a, b), (a, c), (b, c)))
    for (a, b), nodes in xor2.items():
        if (a, b) in in_adder:
            continue
        for pa in (0, 1):
            for pb in (0, 1):
                la, lb = 2 * a + pa, 2 * b + pb
                if not aig.has_and(la, lb):
                    continue
                x = aig.add_xor_shared(la, lb)  # = XOR(a, b) ^ pa ^ pb
                for v, pv in nodes:
                    offer(v, x ^ pa ^ pb ^ pv)
    groups = []
    inner: set = set()
    for leaves, carries in maj.items():
        sums = xor3.get(leaves)
        if not sums:
            continue
        for cv, (pa, pb, pc, po) in carries:
            lits = [2 * leaves[0] + pa, 2 * leaves[1] + pb, 2 * leaves[2] + pc]
            # the latest-arriving leaf is the carry-in
            j = max(range(3), key=lambda i: levels[leaves[i]])
            lits.append(lits.pop(j))
            par = pa ^ pb ^ pc
            options = []
            for pol in (0, 1):
                first = aig.num_vars
                s_, c_ = _fa9(aig, *(x ^ pol for x in lits))
                inner.update(range(first, aig.num_vars))
                option = [(cv, c_ ^ po ^ pol)] + [(sv, s_ ^ par ^ ps ^ pol) for sv, ps in sums]
                for v, lit in option:
                    offer(v, lit)
                options.append([(v, lit) for v, lit in option if usable(v, lit)])
            groups.append(options)
    order = _order(aig, choices)
    log.debug("structural choices: %d nodes with choices, %d full adders, %d new nodes",
              len(choices), len(groups), aig.num_vars - n_orig)
    return choices, order, groups, frozenset(inner)


def _order(aig, choices) -> list:
    """AND variables in a topological order where each choice precedes its node.

    A choice that would close a loop (its node lies in the choice's own
    fan-in) is dropped from ``choices``; fan-in edges alone never loop.
    """
    f0, f1 = aig.f0, aig.f1
    nv = aig.num_vars
    order = []
    state = bytearray(nv)  # 0 new, 1 on the current path, 2 placed
    for root in range(1, nv):
        if state[root] or f0[root] < 0:
            continue
        stack = [(root, False)]
        while stack:
            v, ready = stack.pop()
            if state[v] == 2:
                continue
            if f0[v] < 0:
                state[v] = 2
                continue
            if ready:
                state[v] = 2
                order.append(v)
                continue
            if state[v] == 1:
                continue  # pushed twice; its own visit is under way
            state[v] = 1
            stack.append((v, True))
            alts = choices.get(v)
            if alts:
                keep = [lit for lit in alts if state[lit >> 1] != 1]
                if len(keep) != len(alts):
                    log.debug("choice loop at node %d: dropped", v)
                    if keep:
                        choices[v] = keep
                    else:
                        del choices[v]
                    alts = keep
            for u in (f0[v] >> 1, f1[v] >> 1, *(lit >> 1 for lit in alts or ())):
                if state[u] != 2:
                    stack.append((u, False))
    return order
