"""Balancing: AND trees rebuilt with the fewest levels.

Published method: the AIG balancing of A. Mishchenko, S. Chatterjee and
R. Brayton, "DAG-aware AIG rewriting", DAC 2006 (section 2, after the
tree-height reduction of algebraic expressions of J. Cortadella and
others): each *super-gate* -- a node with the uncomplemented, single-reader
AND nodes under it, up to the first complemented edge or shared node --
is an AND of its leaves; the leaves are joined two at a time, the two of
lowest level first (a Huffman-style merge), so the tree has the fewest
levels the leaves' arrival allows.  Structural hashing may find parts of
the new trees already built.  Balancing does not aim at fewer nodes; in a
script it gives the other passes other cuts to work on.
"""
from __future__ import annotations

import heapq

from ..aig import AIG
from .graph import Levels, cleanup, finish, frame, roots

__all__ = ["balance"]

#: leaves of one super-gate at most (wider ones keep their shape above that)
MAX_LEAVES = 64


def balance(aig: AIG) -> AIG:
    """The graph with every super-gate rebuilt as a balanced tree."""
    refs = aig.fanout_counts()
    f0, f1 = aig.f0, aig.f1
    # a node is the top of a super-gate when it is read complemented, read twice, or is a root
    top = bytearray(aig.num_vars)
    for r in roots(aig):
        top[r >> 1] = 1
    for v in range(1, aig.num_vars):
        if f0[v] < 0:
            continue
        for x in (f0[v], f1[v]):
            if x & 1 or refs[x >> 1] > 1:
                top[x >> 1] = 1
    # the super-gates, readers before what they read: a node where a wide one
    # stops at MAX_LEAVES becomes the top of a super-gate of its own
    leaves_of: dict = {}
    for v in range(aig.num_vars - 1, 0, -1):
        if f0[v] < 0 or not top[v]:
            continue
        leaves_of[v] = _leaves(aig, v, top)
        for x in leaves_of[v]:
            if f0[x >> 1] >= 0:
                top[x >> 1] = 1
    new, lit = frame(aig)
    lev = Levels(new)
    for v in range(1, aig.num_vars):
        if f0[v] < 0 or not top[v]:
            continue
        leaves = leaves_of[v]
        heap = []
        for i, x in enumerate(leaves):
            y = lit[x >> 1] ^ (x & 1)
            heap.append((lev.of(y), i, y))
        heapq.heapify(heap)
        count = len(heap)
        while len(heap) > 1:
            _, _, a = heapq.heappop(heap)
            _, _, b = heapq.heappop(heap)
            c = new.add_and(a, b)
            count += 1
            heapq.heappush(heap, (lev.of(c), count, c))
        lit[v] = heap[0][2]
    return cleanup(finish(aig, new, lit))


def _leaves(aig: AIG, v: int, top) -> list:
    """Literals of the leaves of the super-gate of ``v``."""
    out: list = []
    stack = [aig.f0[v], aig.f1[v]]
    f0 = aig.f0
    while stack:
        x = stack.pop()
        u = x >> 1
        if x & 1 or top[u] or f0[u] < 0 or len(out) + len(stack) >= MAX_LEAVES:
            out.append(x)
            continue
        stack.append(f0[u])
        stack.append(aig.f1[u])
    return out
