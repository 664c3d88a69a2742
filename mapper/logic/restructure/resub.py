"""Resubstitution: a node computed again from signals the graph already has.

Published method: the resubstitution of A. Mishchenko and R. Brayton,
"Scalable logic synthesis using a simple circuit structure", IWLS 2006 (and
earlier, Boolean resubstitution in SIS: E. M. Sentovich et al., ERL memo
M92/41, 1992).  For each AND node, in topological order: if some other
signal (a *divisor*: a node not in the node's own fan-out-free cone, built
before it) computes the same function or its complement, the node is
replaced by it and its whole fan-out-free cone dies (0-resubstitution); if
an AND or OR of two divisors does, it is replaced by one new node
(1-resubstitution), when the cone that dies is larger than that.

Functions are compared as truth tables: over all free variables when a
design has at most 16 of them, else over a *window* -- a cut of at most
:data:`WINDOW` leaves grown from the node's fan-ins toward the inputs,
always expanding the leaf that adds the fewest new leaves (a
reconvergence-driven cut, Mishchenko and Brayton, 2006) -- with the
divisors taken inside the window.  Either way an equality of tables is an
equality of functions, so every replacement is exact.
"""
from __future__ import annotations

from ..aig import AIG
from ..function import var_mask
from .graph import cleanup, finish, frame, global_tables, mffc_size

__all__ = ["resub", "WINDOW"]

#: leaves of a window at most
WINDOW = 8
#: divisors weighed per node at most (the latest before it)
MAX_DIVISORS = 150


def resub(aig: AIG) -> AIG:
    """One sweep of resubstitution (see the module docstring)."""
    tabs = global_tables(aig)
    n = len(aig.inputs) + len(aig.latches)
    full = (1 << (1 << n)) - 1 if tabs is not None else 0
    refs = aig.fanout_counts()
    new, lit = frame(aig)
    dead = bytearray(aig.num_vars)
    free = list(aig.inputs) + [latch.var for latch in aig.latches]
    live: list = []
    f0, f1 = aig.f0, aig.f1
    for v in range(1, aig.num_vars):
        a = f0[v]
        if a < 0:
            continue
        b = f1[v]
        size, cone = mffc_size(aig, v, refs)
        got = None
        if size >= 1:
            if tabs is not None:
                divs = free + [u for u in live[-MAX_DIVISORS:] if not dead[u]]
                got = _find(tabs[v], divs, tabs, full, set(cone), size)
            else:
                got = _window_find(aig, v, set(cone), size, dead)
        if got is None:
            lit[v] = new.add_and(lit[a >> 1] ^ (a & 1), lit[b >> 1] ^ (b & 1))
            live.append(v)
            continue
        kind, x, y, c = got
        if kind == 0:
            lit[v] = lit[x >> 1] ^ (x & 1)
        else:
            lx, ly = lit[x >> 1] ^ (x & 1), lit[y >> 1] ^ (y & 1)
            lit[v] = new.add_and(lx, ly) ^ c
        live.append(v)
        for u in cone:
            if u != v:
                dead[u] = 1
                refs[u] = 0
    return cleanup(finish(aig, new, lit))


def _find(t: int, divs: list, tabs, full: int, cone: set, size: int):
    """``(0, lit, None, 0)`` for a divisor literal equal to ``t``; ``(1, x, y,
    c)`` for ``AND(x, y) ^ c`` equal to it (only when ``size`` > 1); ``None``."""
    nt = t ^ full
    inside: list = []   # literals whose function contains t:  t <= d
    under: list = []    # literals whose function t contains:  d <= t
    for u in divs:
        if u in cone:
            continue
        d = tabs[u]
        if d == t:
            return 0, 2 * u, None, 0
        if d == nt:
            return 0, 2 * u + 1, None, 0
        if size < 2:
            continue
        nd = d ^ full
        if not t & nd:
            inside.append((2 * u, d))
        elif not t & d:
            inside.append((2 * u + 1, nd))
        if not d & nt:
            under.append((2 * u, d))
        elif not nd & nt:
            under.append((2 * u + 1, nd))
    if size < 2:
        return None
    # t = x & y with both containing t
    for i in range(len(inside)):
        xl, xd = inside[i]
        for j in range(i + 1, len(inside)):
            yl, yd = inside[j]
            if xd & yd == t:
                return 1, xl, yl, 0
    # t = x | y = ~(~x & ~y) with both inside t
    for i in range(len(under)):
        xl, xd = under[i]
        for j in range(i + 1, len(under)):
            yl, yd = under[j]
            if xd | yd == t:
                return 1, xl ^ 1, yl ^ 1, 1
    return None


def _window_find(aig: AIG, v: int, cone: set, size: int, dead):
    """:func:`_find` over the window of ``v`` (see the module docstring)."""
    leaves = _window(aig, v)
    if leaves is None:
        return None
    k = len(leaves)
    full = (1 << (1 << k)) - 1
    tabs: dict = {x: var_mask(k, j) for j, x in enumerate(leaves)}
    inner = _inside(aig, v, set(leaves))
    f0, f1 = aig.f0, aig.f1
    for u in inner:
        a, b = f0[u], f1[u]
        tabs[u] = (tabs[a >> 1] ^ (full if a & 1 else 0)) & (tabs[b >> 1] ^ (full if b & 1 else 0))
    divs = [x for x in leaves if not dead[x]] + [u for u in inner if u != v and not dead[u]]
    return _find(tabs[v], divs, tabs, full, cone, size)


def _window(aig: AIG, v: int):
    """Leaves of a reconvergence-driven cut of ``v`` (at most :data:`WINDOW`), in order."""
    f0, f1 = aig.f0, aig.f1
    leaves = {f0[v] >> 1, f1[v] >> 1}
    if 0 in leaves:
        return None
    while True:
        best = None
        for x in leaves:
            if f0[x] < 0:
                continue
            grow = {f0[x] >> 1, f1[x] >> 1} - leaves
            cost = len(grow) - 1
            if best is None or cost < best[0]:
                best = (cost, x, grow)
        if best is None or len(leaves) + best[0] > WINDOW or 0 in best[2]:
            break
        leaves.remove(best[1])
        leaves |= best[2]
    return sorted(leaves)


def _inside(aig: AIG, v: int, leaves: set) -> list:
    """AND nodes between ``leaves`` and ``v`` (``v`` included), in order."""
    seen: set = set()
    stack = [v]
    f0, f1 = aig.f0, aig.f1
    while stack:
        u = stack.pop()
        if u in seen or u in leaves or f0[u] < 0:
            continue
        seen.add(u)
        stack.append(f0[u] >> 1)
        stack.append(f1[u] >> 1)
    return sorted(seen)
