"""Transparent latches that data can run through while their enables change.

A latch passes its data while it is open.  Two properties of a design make
that a problem no build can cure:

* **loop** -- a latch whose data depends, through logic and latches open at
  the same time, on its own output: while they are open the loop has no
  stable value (it oscillates or hangs on the delays);
* **opposite** -- a latch fed from another latch of the same enable open on
  the other level (a two-phase pair on one enable and its inverse): as the
  enable changes, one opens while the other closes, so the new data can run
  through both unless the closing one is faster by its hold time.  With gates
  the static timing decides (hold margins); relays move in any order, so a
  relay build of such a pair is never safe.

Enables are compared after following inverters and buffers back to their
source (``en`` and ``not en`` are one enable, opposite levels).  Flip-flops
cut every path: only latches (kinds ``ah``, ``al``) are looked at.

Examples
--------
>>> from mapper.netlist import Netlist
>>> from mapper.logic.function import Function
>>> n = Netlist("pair")
>>> for i in ("d", "en"):
...     n.add_input(i)
>>> n.add_storage("q1", "d", "ah", "en", 0)
>>> n.add_storage("q2", "q1", "al", "en", 0)
>>> n.add_output("q2")
>>> [(r["kind"], r["latches"]) for r in latch_races(n)]
[('opposite', ['q1', 'q2'])]
"""
from __future__ import annotations

import networkx as nx

from ..netlist import Logic, Netlist, Storage

__all__ = ["latch_races", "enable_source"]

_OPEN_HIGH = {"ah": 1, "al": 0}


def enable_source(netlist: Netlist, net: str) -> tuple[str, int]:
    """``(source net, inversions mod 2)`` of a control net, through one-input buffers and inverters."""
    inv = 0
    seen = set()
    while net not in seen:
        seen.add(net)
        node = netlist.nodes.get(net)
        if not isinstance(node, Logic) or len(node.fanins) != 1:
            break
        t = node.func.table()
        if t == 0b01:
            inv ^= 1
        elif t != 0b10:
            break
        net = node.fanins[0]
    return net, inv


def _latch_sources(netlist: Netlist, net: str, latches: set) -> set:
    """Latches whose outputs reach ``net`` through logic only."""
    out = set()
    seen = set()
    stack = [net]
    while stack:
        n = stack.pop()
        if n in seen:
            continue
        seen.add(n)
        if n in latches:
            out.add(n)
            continue
        node = netlist.nodes.get(n)
        if isinstance(node, Logic):
            stack.extend(node.fanins)
    return out


def latch_races(netlist: Netlist) -> list:
    """Latch loops and opposite-level latch pairs of ``netlist`` (see the module docstring).

    Returns dicts with ``kind`` (``"loop"`` or ``"opposite"``), ``latches``
    (names, sorted) and ``enable`` (the enable's source net).
    """
    storage = netlist.storage()
    latches = {n for n, s in storage.items() if s.kind in _OPEN_HIGH and s.control is not None}
    if not latches:
        return []
    level: dict = {}
    for n in latches:
        st: Storage = storage[n]
        src, inv = enable_source(netlist, st.control or "")
        level[n] = (src, _OPEN_HIGH[st.kind] ^ inv)   # open while `src` is at this level
    together = nx.DiGraph()
    together.add_nodes_from(latches)
    out = []
    pairs = set()
    for n in sorted(latches):
        for m in _latch_sources(netlist, storage[n].d, latches):
            if level[m] == level[n]:
                together.add_edge(m, n)
            elif level[m][0] == level[n][0] and (m, n) not in pairs:
                pairs.add((m, n))
                out.append({"kind": "opposite", "latches": sorted({m, n}), "enable": level[n][0],
                            "from": m, "to": n})
    for comp in nx.strongly_connected_components(together):
        if len(comp) > 1 or any(together.has_edge(n, n) for n in comp):
            names = sorted(comp)
            out.append({"kind": "loop", "latches": names, "enable": level[names[0]][0]})
    out.sort(key=lambda r: (r["kind"], r["latches"]))
    return out
