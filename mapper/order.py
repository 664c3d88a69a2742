"""Topological order of a dependency graph, the one implementation every layer uses.

Kahn's algorithm with an explicit stack (A. B. Kahn, "Topological sorting of
large networks", CACM 5(11), 1962): no recursion, so graphs thousands of
levels deep are fine.  Items that sit on a cycle, or behind one, are
returned apart instead of raising, so each caller says what a loop means
for it.

Examples
--------
>>> deps = {"y": ["a", "t"], "t": ["a", "b"], "a": [], "b": []}
>>> topological_order(deps, deps.__getitem__)
(['b', 'a', 't', 'y'], [])
>>> topological_order(["p", "q"], {"p": ["q"], "q": ["p"]}.get)
([], ['p', 'q'])
"""
from __future__ import annotations

from collections.abc import Callable, Hashable, Iterable
from typing import TypeVar

__all__ = ["topological_order"]

K = TypeVar("K", bound=Hashable)


def topological_order(items: Iterable[K], deps: Callable[[K], Iterable[K] | None],
                      first_first: bool = False) -> tuple[list[K], list[K]]:
    """``(order, left)``: ``items`` with every item after the items it depends on.

    ``deps(item)`` gives what ``item`` depends on; anything not among
    ``items`` is ignored (inputs, rails), and ``None`` means nothing.  Ready
    items are taken from a stack: by default the last ready item in
    ``items`` order comes out first, with ``first_first`` the first.
    ``left`` lists, in ``items`` order, the items on or behind a cycle.
    """
    seq = list(items)
    known = set(seq)
    indeg: dict = {}
    users: dict = {}
    for item in seq:
        n = 0
        for d in deps(item) or ():
            if d in known:
                n += 1
                users.setdefault(d, []).append(item)
        indeg[item] = n
    ready = [item for item in seq if indeg[item] == 0]
    if first_first:
        ready.reverse()
    order = []
    while ready:
        item = ready.pop()
        order.append(item)
        for u in users.get(item, ()):
            indeg[u] -= 1
            if indeg[u] == 0:
                ready.append(u)
    if len(order) == len(seq):
        return order, []
    return order, [item for item in seq if indeg[item] > 0]
