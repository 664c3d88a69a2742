"""Collapse a design of few free variables and build every function again.

The free variables are the primary inputs and the storage outputs; with at
most :data:`~mapper.logic.restructure.decompose.MAX_FREE` of them every
output, storage data and storage control function is a truth table over
them.  Outputs are built in order of fewer inputs first (what a small one
builds, a larger one may reuse), each by
:class:`~mapper.logic.restructure.decompose.Synth`, with the design's
external don't-cares (BLIF ``.exdc``) as don't-cares of the output they
name.  Storage inputs get no don't-cares.
"""
from __future__ import annotations

from ..aig import AIG, from_netlist
from .decompose import MAX_FREE, Synth
from .graph import frame, global_tables, roots

__all__ = ["collapsed_graph", "care_tables"]


def care_tables(design, aig: AIG) -> dict:
    """output name -> table (over ``aig``'s free variables) of where its value
    does not matter, from ``design.exdc``; empty when there is none, when
    the don't-care network reads a net that is no input of the design, or
    when there are too many free variables for tables."""
    dc_net = getattr(design, "exdc", None)
    if dc_net is None or any(i not in design.inputs for i in dc_net.inputs):
        return {}
    free = list(aig.inputs) + [latch.var for latch in aig.latches]
    if len(free) > 16:
        return {}
    g = AIG()
    shared = {aig.names[v]: g.add_input(aig.names[v]) for v in aig.inputs}
    st = {latch.name: 2 * g.add_latch(latch.name, latch.kind, latch.init).var for latch in aig.latches}
    _, lits = from_netlist(dc_net, g, inputs=shared, storage=st)
    tabs = global_tables(g)
    if tabs is None:
        return {}
    full = (1 << (1 << len(free))) - 1
    out = {}
    for o in dc_net.outputs:
        if o in design.outputs and o in lits:
            x = lits[o]
            t = tabs[x >> 1] ^ (full if x & 1 else 0)
            if t:
                out[o] = t
    return out


def collapsed_graph(design, aig: AIG, counters: bool = True, dont_cares: bool = True) -> AIG | None:
    """``aig`` (the graph of ``design``) collapsed and built again (see the
    module docstring); ``None`` with too many free variables."""
    tabs = global_tables(aig)
    n = len(aig.inputs) + len(aig.latches)
    if tabs is None or n > MAX_FREE:
        return None
    full = (1 << (1 << n)) - 1
    dcs = care_tables(design, aig) if dont_cares else {}
    new, lmap = frame(aig)
    free = [lmap[v] for v in aig.inputs] + [lmap[latch.var] for latch in aig.latches]
    synth = Synth(new, free, n, counters=counters)
    rs = roots(aig)
    names = [o for o, _ in aig.outputs] + [None] * (len(rs) - len(aig.outputs))
    want = []
    for r, name in zip(rs, names):
        on = tabs[r >> 1] ^ (full if r & 1 else 0)
        dc = dcs.get(name, 0) if name is not None else 0
        want.append((on & ~dc, dc))
    order = sorted(range(len(rs)), key=lambda i: (_inputs(want[i][0] | want[i][1], n) if want[i][1] else
                                                  _inputs(want[i][0], n), i))
    got: list = [None] * len(rs)
    for i in order:
        got[i] = synth.build(*want[i])
    it = iter(got)
    for name, _ in aig.outputs:
        new.add_output(name, next(it))
    for old, nl in zip(aig.latches, new.latches):
        nl.next = next(it)
        nl.control = None if old.control is None else next(it)
    return new


def _inputs(t: int, n: int) -> int:
    from .decompose import depends
    return sum(1 for j in range(n) if depends(t, n, j))


def off_care_differences(design, other) -> list:
    """Outputs of ``other`` (a netlist over ``design``'s ports and storage)
    that differ from ``design`` somewhere -- necessarily where the design's
    don't-care network is 1, when ``other`` was proved equal on the care
    set.  Empty when ``design`` has no don't-cares or too many free
    variables for tables (the restructuring then used none)."""
    if getattr(design, "exdc", None) is None:
        return []
    g = AIG()
    shared = {name: g.add_input(name) for name in design.inputs}
    st = {name: 2 * g.add_latch(name, s.kind, s.init).var for name, s in design.storage().items()}
    _, la = from_netlist(design, g, inputs=shared, storage=st)
    _, lb = from_netlist(other, g, inputs=shared, storage=st)
    tabs = global_tables(g)
    if tabs is None:
        return []
    n = len(g.inputs) + len(g.latches)
    full = (1 << (1 << n)) - 1

    def value(x):
        return tabs[x >> 1] ^ (full if x & 1 else 0)

    return [o for o in design.outputs if value(la[o]) != value(lb[o])]
