"""Feedback read as storage: loops of logic cut at a few nets (Huffman's model).

A netlist whose logic feeds back on itself (two cross-coupled NOR gates, a
gated D latch drawn as four NANDs) holds state without any declared storage
element.  Huffman's model of such circuits (D. A. Huffman, "The synthesis of
sequential switching circuits", J. Franklin Inst. 257, 1954) reads them by
cutting every loop at a *feedback net*: the value on the net is a *state
variable* ``y``, the logic that drives it computes its *excitation* ``Y`` from
the inputs and the state variables, and the circuit rests in a *stable state*
when ``Y = y`` for every cut net.  All the delay of a loop is taken to sit at
its cut.

:func:`cut_loops` does that to a netlist in place: each loop region (a
strongly connected set of logic nets) is cut at as few nets as it can be
(exactly, for regions of up to :data:`EXACT_REGION_NETS` nets; otherwise at
the targets of the back edges of a depth-first search, pruned), and each cut
net ``q`` becomes a storage element of kind ``as`` (asynchronous: it follows
its data) whose data is the excitation net ``q+`` -- the logic that drove
``q`` before.  Nothing else of the design changes, so the cut netlist is
loop-free and every later stage (mapping, proving, timing) reads it as
storage.  Writers close the loops again (:func:`closed_logic`).

:func:`regions` finds the feedback regions of a cut netlist again from its
``as`` elements; :func:`recut` moves the cuts of a netlist to other nets
(used by the prover to compare two designs cut at different nets);
What each region does -- its flow table, the inputs that make it
oscillate, races and essential hazards, and which textbook form it is --
is worked out in :mod:`mapper.logic.flowtable`.

Nothing here recurses over the depth of a netlist.
"""
from __future__ import annotations

import itertools
from dataclasses import dataclass, field

import networkx as nx

from ..netlist import INIT_UNKNOWN, Logic, Netlist, Storage
from ..order import topological_order

__all__ = ["Region", "EXACT_REGION_NETS", "loop_regions", "choose_cut", "cut_loops", "regions", "has_feedback",
           "excitation_name", "closed_logic", "recut", "uncut", "align_cuts"]

#: regions of at most this many nets get a cut of the fewest nets (tried up to :data:`EXACT_CUT` nets)
EXACT_REGION_NETS = 30
EXACT_CUT = 3
#: subsets tried by the exact search before it gives way to the depth-first cut
_EXACT_TRIES = 20_000


@dataclass
class Region:
    """One feedback region of a cut netlist.

    ``nets`` are the nets on its loops (cut nets and logic nets, in the
    netlist's order), ``cuts`` its state variables (storage of kind ``as``),
    ``excitation`` maps each cut net to its excitation net, and ``inputs``
    lists the nets outside the region that feed it directly.
    """

    nets: list
    cuts: list
    excitation: dict
    inputs: list = field(default_factory=list)
    #: False for an ``as`` element whose data does not depend on it (a plain delay, not a loop)
    loop: bool = True

    @property
    def name(self) -> str:
        return self.cuts[0]


# -- finding loops ------------------------------------------------------------------------
def loop_regions(netlist: Netlist) -> list:
    """Sets of logic nets that form loops (strongly connected, with a cycle), in netlist order.

    A topological sort finds the logic on or behind a loop first, so a
    design without loops costs one pass.
    """
    nodes = netlist.nodes
    _, left = topological_order(nodes, lambda n: nodes[n].fanins if isinstance(nodes[n], Logic) else None)
    if not left:
        return []
    on = set(left)
    g = nx.DiGraph()
    g.add_nodes_from(left)
    g.add_edges_from((f, n) for n in left for f in nodes[n].fanins if f in on)
    pos = {n: i for i, n in enumerate(nodes)}
    out = []
    for comp in nx.strongly_connected_components(g):
        if len(comp) > 1 or any(g.has_edge(n, n) for n in comp):
            out.append(sorted(comp, key=pos.__getitem__))
    out.sort(key=lambda c: pos[c[0]])
    return out


def _acyclic(nets: list, fanins, cut: set) -> bool:
    """Whether the logic of ``nets`` with the nets of ``cut`` removed has no loop."""
    keep = [n for n in nets if n not in cut]
    inside = set(keep)
    _, left = topological_order(keep, lambda n: [f for f in fanins(n) if f in inside])
    return not left


def _preference(netlist: Netlist, nets: list) -> list:
    """Nets in the order they are preferred as cut points: outputs (in port order), then in netlist order.

    A builder knows a latch by the output it named, so that is where its state is read.
    """
    outs = {o: i for i, o in enumerate(netlist.outputs)}
    pos = {n: i for i, n in enumerate(netlist.nodes)}
    return sorted(nets, key=lambda n: (0, outs[n]) if n in outs else (1, pos.get(n, 0)))


def _dfs_cut(nets: list, fanins, order: list) -> list:
    """Targets of the back edges of an iterative depth-first search: a cut that breaks every loop.

    Every cycle holds a back edge, whose target lies on the cycle.  The search
    starts from the most preferred nets, so those tend to be the targets.
    """
    inside = set(nets)
    users: dict = {n: [] for n in nets}
    for n in nets:
        for f in fanins(n):
            if f in inside:
                users[f].append(n)
    state: dict = {}  # 1 on the stack, 2 done
    cut: list = []
    cutset: set = set()
    for root in order:
        if root in state:
            continue
        state[root] = 1
        stack = [(root, iter(users[root]))]
        while stack:
            n, it = stack[-1]
            nxt = next(it, None)
            if nxt is None:
                state[n] = 2
                stack.pop()
                continue
            s = state.get(nxt)
            if s == 1:
                if nxt not in cutset:
                    cutset.add(nxt)
                    cut.append(nxt)
            elif s is None:
                state[nxt] = 1
                stack.append((nxt, iter(users[nxt])))
    return cut


def choose_cut(netlist: Netlist, nets: list) -> list:
    """The nets at which to cut the loop region ``nets`` (a list of logic nets).

    Small regions get a cut of the fewest nets (every subset of up to
    :data:`EXACT_CUT` nets tried, the preferred nets first: outputs, then the
    netlist's order); bigger ones the depth-first cut of :func:`_dfs_cut`,
    with nets that are not needed dropped again.
    """
    nodes = netlist.nodes

    def fanins(n):
        node = nodes[n]
        return node.fanins if isinstance(node, Logic) else ()

    order = _preference(netlist, nets)
    if len(nets) <= EXACT_REGION_NETS:
        tries = 0
        for k in range(1, EXACT_CUT + 1):
            for combo in itertools.combinations(order, k):
                tries += 1
                if tries > _EXACT_TRIES:
                    break
                if _acyclic(nets, fanins, set(combo)):
                    return list(combo)
    cut = _dfs_cut(nets, fanins, order)
    if len(cut) <= 64:  # drop cut nets the others make needless (least preferred first)
        rank = {n: i for i, n in enumerate(order)}
        for n in sorted(cut, key=rank.__getitem__, reverse=True):
            rest = set(cut) - {n}
            if _acyclic(nets, fanins, rest):
                cut.remove(n)
    return sorted(cut, key=lambda n: order.index(n))


def excitation_name(netlist: Netlist, net: str) -> str:
    """A new net name for the excitation of cut net ``net``: ``net+`` (``net+2`` ... when taken)."""
    name = f"{net}+"
    k = 2
    while name in netlist.nodes:
        name = f"{net}+{k}"
        k += 1
    return name


def _cut_at(netlist: Netlist, net: str) -> str:
    """Make logic net ``net`` a state variable: its logic moves to a new excitation net."""
    node = netlist.nodes[net]
    exc = excitation_name(netlist, net)
    netlist.nodes[exc] = node
    if net in netlist.origin:
        netlist.origin[exc] = netlist.origin[net]
    netlist.nodes[net] = Storage(exc, "as", None, INIT_UNKNOWN)
    return exc


def cut_loops(netlist: Netlist) -> list:
    """Cut every loop of ``netlist`` (in place); returns the cut nets' lists, one per region.

    Nets used but never driven are left for :meth:`Netlist.check` to report.
    """
    out = []
    for nets in loop_regions(netlist):
        cut = choose_cut(netlist, nets)
        for net in cut:
            _cut_at(netlist, net)
        out.append(cut)
    return out


# -- regions of a cut netlist -------------------------------------------------------------
def has_feedback(netlist: Netlist) -> bool:
    """Whether the netlist has asynchronous storage (kind ``as``): loops read as storage."""
    return any(isinstance(n, Storage) and n.kind == "as" for n in netlist.nodes.values())


def regions(netlist: Netlist) -> list:
    """The feedback regions of a cut netlist, one per set of ``as`` elements whose loops share nets.

    The loops are closed again in a graph (each ``as`` element's data feeds
    its output) and its strongly connected parts that hold an ``as``
    element are the regions.  An ``as`` element on no loop (a plain delay)
    is a region of its own.
    """
    nodes = netlist.nodes
    cuts = [n for n, node in nodes.items() if isinstance(node, Storage) and node.kind == "as"]
    if not cuts:
        return []
    g = nx.DiGraph()
    # only logic can close a loop with an ``as`` element: walk back from the cut nets' data
    seen: set = set()
    stack = [nodes[c].d for c in cuts]
    for c in cuts:
        g.add_edge(nodes[c].d, c)
    while stack:
        n = stack.pop()
        if n in seen:
            continue
        seen.add(n)
        node = nodes.get(n)
        if isinstance(node, Logic):
            for f in node.fanins:
                g.add_edge(f, n)
                stack.append(f)
        elif isinstance(node, Storage) and node.kind == "as":
            g.add_edge(node.d, n)
            stack.append(node.d)
    pos = {n: i for i, n in enumerate(nodes)}
    comp_of: dict = {}
    comps: list = []
    for comp in nx.strongly_connected_components(g):
        if any(c in comp for c in cuts):
            k = len(comps)
            comps.append(comp)
            for n in comp:
                comp_of[n] = k
    out = []
    for k, comp in enumerate(comps):
        nets = sorted(comp, key=lambda n: pos.get(n, 0))
        rc = [n for n in nets if n in set(cuts)]
        inputs: list = []
        for n in nets:
            node = nodes[n]
            fi = (node.d,) if isinstance(node, Storage) else node.fanins
            for f in fi:
                if comp_of.get(f) != k and f not in inputs:
                    inputs.append(f)
        out.append(Region(nets, rc, {c: nodes[c].d for c in rc}, inputs, len(nets) > 1 or g.has_edge(nets[0], nets[0])))
    out.sort(key=lambda r: pos[r.cuts[0]])
    return out


def closed_logic(netlist: Netlist) -> dict:
    """How a writer closes the loops again: cut net -> excitation net whose logic drives it directly.

    An excitation net read by nothing but its cut net is folded into it (the
    writer writes that logic driving the cut net); cut nets missing here are
    written as a plain copy of their data.
    """
    readers: dict = {}
    for node in netlist.nodes.values():
        for f in node.fanins:
            readers[f] = readers.get(f, 0) + 1
    outs = set(netlist.outputs)
    out = {}
    for name, node in netlist.nodes.items():
        if isinstance(node, Storage) and node.kind == "as":
            d = netlist.nodes.get(node.d)
            if isinstance(d, Logic) and readers.get(node.d) == 1 and node.d not in outs:
                out[name] = node.d
    return out


def uncut(netlist: Netlist) -> Netlist:
    """A copy with every loop closed again where its excitation is folded (see :func:`closed_logic`)."""
    n = netlist.copy()
    for q, exc in closed_logic(netlist).items():
        n.nodes[q] = n.nodes.pop(exc)
        n.origin.pop(exc, None)
    return n


def recut(netlist: Netlist, cuts) -> Netlist | None:
    """A copy of a cut netlist with its loops cut at the nets ``cuts`` instead, or ``None``.

    ``None`` when the loops cannot be closed again, when a net of ``cuts`` is
    not logic once they are, or when those nets leave a loop uncut.
    """
    closed = uncut(netlist)
    if has_feedback(closed):
        return None
    nodes = closed.nodes
    cuts = list(cuts)
    if any(not isinstance(nodes.get(c), Logic) for c in cuts):
        return None
    for c in cuts:
        _cut_at(closed, c)
    if loop_regions(closed):
        return None
    return closed



def align_cuts(a: Netlist, b: Netlist) -> tuple[Netlist, Netlist, list]:
    """Two cut netlists cut at the same nets where they were cut at different ones: ``(a, b, notes)``.

    When the ``as`` elements of ``a`` and ``b`` are named differently, ``b``
    is cut again at ``a``'s cut nets (:func:`recut`), or else ``a`` at
    ``b``'s; the notes say which.  When neither works the netlists come back
    as they were (the prover then finds the storage elements unmatched).
    """
    ca = [n for n, x in a.storage().items() if x.kind == "as"]
    cb = [n for n, x in b.storage().items() if x.kind == "as"]
    if set(ca) == set(cb) or not (ca or cb):
        return a, b, []
    other_a = [n for n in a.storage() if n not in ca]
    other_b = [n for n in b.storage() if n not in cb]
    if set(other_a) != set(other_b):
        return a, b, []
    nb = recut(b, ca) if ca else None
    if nb is not None:
        return a, nb, [f"B cuts its feedback loops at {', '.join(cb) or 'no net'} and A at {', '.join(ca)}: "
                       f"B was cut again at A's nets to compare them"]
    na = recut(a, cb) if cb else None
    if na is not None:
        return na, b, [f"A cuts its feedback loops at {', '.join(ca) or 'no net'} and B at {', '.join(cb)}: "
                       f"A was cut again at B's nets to compare them"]
    return a, b, [f"A cuts its feedback loops at {', '.join(ca) or 'no net'} and B at {', '.join(cb) or 'no net'}, "
                  "and neither set of nets cuts every loop of the other: no common state variables to compare"]
