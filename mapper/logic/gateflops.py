"""Storage built of gates read back as declared latches and edge-triggered flip-flops.

A build on a target without storage parts holds each bit in gates: a gated D
latch is a cross-coupled pair with two gating gates, and an edge-triggered
flip-flop is two such latches, master and slave, open on opposite levels of
one clock (common practice of digital-design textbooks; the templates netfit
builds are in ``mapper/fit/storage.py``).  Read back from an exported file,
all of that is feedback; cut where the reader first cut it, a counter's
flip-flop and the next-state logic through it form one region of several
state variables that nothing recognises.  :func:`edge_form` reads such a
netlist again as storage of the usual kinds, so it can be compared with a
design written with flip-flops:

1. **Cuts at the latches.**  The loops are closed again and cut one at a
   time on the *shortest* loop left (a breadth-first search from every net of
   a strongly connected part): the two gates of a cross-coupled pair form a
   loop of two gates (a few more nets with the port aliases of a read
   hierarchy), shorter than any loop through a master, its slave and the
   next-state logic, so each latch gets a cut of its own and the loops through
   several latches are broken by those cuts.  On each loop the net named as
   storage in the other design is preferred, then an output, then the
   plainest name.
2. **Each latch by its flow table.**  For a cut net ``q`` with excitation
   ``Y``, the nets on paths from ``q`` to ``Y`` are the latch's own; the
   excitation is tabulated over the nets that feed them, widened a level at a
   time (through gating gates and inverters) until the nets where it *loads*
   (``Y`` the same for ``q`` = 0 and 1) are one level of one net: the enable
   (Huffman's flow table of one state variable, as in
   :mod:`mapper.logic.flowtable`).  A loop that oscillates for some input is
   not a latch.  The value loaded is the data: one net (or its complement)
   where it is, else new logic over the tabulated nets.
3. **Master and slave.**  A latch whose data is another latch's output, on
   the same clock net at the opposite level, is the slave of a master-slave
   flip-flop: it becomes a flip-flop on the edge at which the slave opens
   (rising when the slave is open while the clock is high), with the master's
   data (complemented when the two latches together invert) and the slave's
   starting value; the master is dropped when nothing else reads it.

Nothing here recurses over the depth of a netlist.
"""
from __future__ import annotations

from collections import deque

import networkx as nx

from ..netlist import Input, Logic, Netlist, Storage
from .feedback import has_feedback, recut, uncut
from .flowtable import settle, tabulate
from .function import Function, isop, var_mask

__all__ = ["EdgeForm", "edge_form", "latch_cuts", "pair_through_nets", "settle_sequencers", "encode"]

#: the most nets a latch's excitation is tabulated over, and the levels it is widened by
MAX_LEAVES = 8
MAX_WIDEN = 4
#: the longest loop searched for when cutting at the latches (nets, port aliases included)
MAX_LOOP = 16
#: the most state variables and inputs of a clock sequencer tabulated for its settled states
MAX_SEQ_VARS = 12
MAX_SEQ_INPUTS = 2


class EdgeForm:
    """What :func:`edge_form` made: ``netlist`` (or ``None``), ``flip_flops`` (``(q, master, edge)``),
    ``latches``, ``sequencer`` (state variables read in their settled states) and ``why`` (the reason
    when it could not read every loop as a latch)."""

    def __init__(self, netlist, flip_flops=(), latches=(), why="", sequencer=()):
        self.netlist = netlist
        self.sequencer = list(sequencer)
        self.flip_flops = list(flip_flops)
        self.latches = list(latches)
        self.why = why


# -- 1. cuts at the latches --------------------------------------------------------------------
def _shortest_loop(users: dict, comp: set) -> list:
    """The nets of a shortest loop inside the strongly connected set ``comp`` (breadth-first from each
    net, at most :data:`MAX_LOOP` nets long)."""
    best: list = []
    for v in sorted(comp):
        parent = {v: None}
        queue = deque([(v, 0)])
        found = None
        while queue and found is None:
            n, d = queue.popleft()
            if d + 1 >= MAX_LOOP or (best and d + 1 >= len(best)):
                break
            for u in users.get(n, ()):
                if u not in comp:
                    continue
                if u == v:
                    found = n
                    break
                if u not in parent:
                    parent[u] = n
                    queue.append((u, d + 1))
        if found is not None:
            loop = []
            x = found
            while x is not None:
                loop.append(x)
                x = parent[x]
            if not best or len(loop) < len(best):
                best = loop
            if len(best) <= 2:
                break
    return best


def latch_cuts(closed: Netlist, prefer=()) -> list | None:
    """Nets at which to cut the loops of a netlist with its loops closed: one per shortest loop left,
    until none is left (``None`` when some loop is longer than :data:`MAX_LOOP` nets)."""
    nodes = closed.nodes
    prefer = set(prefer)
    outs = set(closed.outputs)
    pos = {n: i for i, n in enumerate(nodes)}

    def alias(n):
        node = nodes[n]
        return len(node.fanins) == 1 and node.func.table() == 0b10

    def rank(n):
        return (n not in prefer, n not in outs, alias(n), n.count("/") + n.count("$"), pos[n])

    g = nx.DiGraph()
    for n, node in nodes.items():
        if isinstance(node, Logic):
            g.add_edges_from((f, n) for f in node.fanins if isinstance(nodes.get(f), Logic))
    cuts: list = []
    while True:
        comps = [c for c in nx.strongly_connected_components(g) if len(c) > 1 or any(g.has_edge(n, n) for n in c)]
        if not comps:
            return cuts
        for comp in comps:
            users = {n: list(g.successors(n)) for n in comp}
            loop = _shortest_loop(users, comp)
            if not loop:
                return None
            on = set(loop)
            # a net read outside its loop is the latch's output (its state): a net read only inside
            # the loop would leave the latch's path from data to output as logic
            c = min(loop, key=lambda n: (not any(u not in on for u in g.successors(n)) and n not in outs, rank(n)))
            cuts.append(c)
            g.remove_edges_from(list(g.in_edges(c)))


# -- 1b. clock sequencers: loops with one settled state for each input ------------------------------
def _support(nodes: dict, root: str) -> set:
    """Inputs and storage outputs the logic of ``root`` reads (walked back through logic)."""
    seen: set = set()
    out: set = set()
    stack = [root]
    while stack:
        n = stack.pop()
        if n in seen:
            continue
        seen.add(n)
        node = nodes.get(n)
        if isinstance(node, Logic):
            stack.extend(node.fanins)
        else:
            out.add(n)
    return out


def _settled(netlist: Netlist, group: list, ins: list) -> dict | None:
    """``{state variable: truth table over ins}`` when the loops of ``group`` rest in exactly one state
    for each setting of ``ins``, and reach it from the one of every setting an input away; else None."""
    nodes = netlist.nodes
    m, k = len(ins), len(group)
    words = tabulate(netlist, [nodes[u].d for u in group], list(ins) + list(group))
    if words is None:
        return None
    exc = [words[nodes[u].d] for u in group]
    nexts = [[sum(((exc[j] >> (x | (y << m))) & 1) << j for j in range(k)) for x in range(1 << m)]
             for y in range(1 << k)]
    rest = []
    for x in range(1 << m):
        stable = [y for y in range(1 << k) if nexts[y][x] == y]
        if len(stable) != 1:
            return None
        rest.append(stable[0])
    for x in range(1 << m):
        if any(settle(nexts, x ^ (1 << j), rest[x]) != rest[x ^ (1 << j)] for j in range(m)):
            return None
    return {u: sum(((rest[x] >> j) & 1) << x for x in range(1 << m)) for j, u in enumerate(group)}


def settle_sequencers(netlist: Netlist, cuts: list) -> dict:
    """State variables of clock sequencers: ``{net: (inputs, truth table)}``.

    A group of loops that reads only primary inputs (at most :data:`MAX_SEQ_INPUTS`) and loops of such
    groups, and rests in exactly one state for each setting of those inputs -- reached from the rest
    of every setting an input away -- is a sequencer: in Huffman's fundamental mode its state
    variables are functions of the inputs once settled (a relay build steps its clock through such
    phases).  Loops that hold data (two rests for some input) are never in it.
    """
    nodes = netlist.nodes
    cset = set(cuts)
    sup = {c: _support(nodes, nodes[c].d) for c in cuts}
    g = nx.DiGraph()
    g.add_nodes_from(cuts)
    g.add_edges_from((s, c) for c in cuts for s in sup[c] if s in cset)
    cond = nx.condensation(g)
    seq: dict = {}
    for comp_id in nx.topological_sort(cond):
        comp = sorted(cond.nodes[comp_id]["members"])
        group = set(comp)
        stack = list(comp)
        while stack:  # with the sequencer loops it reads
            for s in sup[stack.pop()]:
                if s in cset and s not in group:
                    if s not in seq:
                        group = set()
                        break
                    group.add(s)
                    stack.append(s)
            if not group:
                break
        if not group or len(group) > MAX_SEQ_VARS:
            continue
        ins = sorted({s for u in group for s in sup[u] if s not in cset})
        if len(ins) > MAX_SEQ_INPUTS or any(not isinstance(nodes.get(i), Input) for i in ins):
            continue
        tables = _settled(netlist, sorted(group), ins)
        if tables is not None:
            for u in comp:
                seq[u] = (tuple(ins), tables[u])
    return seq


# -- 2. each latch by its flow table ------------------------------------------------------------
def _const(nodes: dict, n: str) -> int | None:
    """0 or 1 for a constant net, else None."""
    node = nodes.get(n)
    return node.func.constant_value() if isinstance(node, Logic) and not node.fanins else None


def _root(nodes: dict, n: str) -> tuple[str, int]:
    """``(net, inverted)``: ``n`` followed back through buffers and inverters (gates all of whose inputs
    but constants are one net, port aliases included)."""
    pol = 0
    for _ in range(64):
        node = nodes.get(n)
        if not isinstance(node, Logic) or not node.fanins:
            break
        resolved = []
        for f in node.fanins:
            while True:  # port aliases: one-input buffers
                fn = nodes.get(f)
                if isinstance(fn, Logic) and len(fn.fanins) == 1 and fn.func.table() == 0b10:
                    f = fn.fanins[0]
                else:
                    break
            resolved.append((f, _const(nodes, f)))
        ins = {f for f, c in resolved if c is None}
        if len(ins) != 1:
            break
        (x,) = ins
        v0, v1 = (node.func(*[v if c is None else c for _, c in resolved]) for v in (0, 1))
        if v0 == v1:
            break
        pol ^= v0
        n = x
    return n, pol


def _own_nets(nodes: dict, q: str, exc: str) -> set | None:
    """Logic nets on paths from ``q`` to its excitation ``exc`` (``exc`` included)."""
    back: set = set()
    stack = [exc]
    while stack:
        n = stack.pop()
        if n in back:
            continue
        node = nodes.get(n)
        if not isinstance(node, Logic):
            continue
        back.add(n)
        if len(back) > 400:
            return None
        stack.extend(node.fanins)
    own = {exc}
    changed = True
    while changed:  # nets of ``back`` that read q or an own net
        changed = False
        for n in back:
            if n not in own and any(f == q or f in own for f in nodes[n].fanins):
                own.add(n)
                changed = True
    return own


def _widen(nodes: dict, leaves: list) -> list:
    """The nets one level behind ``leaves`` (logic replaced by its inputs; inputs and storage stay)."""
    out: list = []
    for n in leaves:
        node = nodes.get(n)
        ins = node.fanins if isinstance(node, Logic) and node.fanins else (n,)
        for f in ins:
            if f not in out and _const(nodes, f) is None:
                out.append(f)
    return out


def _covered(nodes: dict, leaves: list) -> list:
    """``leaves`` without the logic nets computed from the others alone (a sequencer's settled phase next
    to the clock it is a function of): tabulated as variables they would be free where they are not."""
    leaves = list(leaves)
    while True:
        have = set(leaves)
        drop = [n for n in leaves if isinstance(nodes.get(n), Logic) and nodes[n].fanins
                and all(f in have or _const(nodes, f) is not None for f in nodes[n].fanins)]
        if not drop:
            return leaves
        leaves = [n for n in leaves if n != drop[0]]


def _literal(nodes: dict, leaves: list, t: int, care: int, m: int, skip=()) -> tuple[str, int] | None:
    """``(root net, level)`` of a leaf equal to ``t`` wherever ``care`` is 1, else None."""
    full = (1 << (1 << m)) - 1
    for j, leaf in enumerate(leaves):
        for p in (1, 0):
            lt = var_mask(m, j) if p else full ^ var_mask(m, j)
            if (lt ^ t) & care == 0:
                r, inv = _root(nodes, leaf)
                if r not in skip:
                    return r, p ^ inv
    return None


def _latch(netlist: Netlist, q: str) -> dict | None:
    """The latch that cut net ``q`` is: ``{"enable": (net, level) | (leaves, table), "data": ..., }`` or
    None when its loop oscillates for some input or its excitation cannot be tabulated."""
    nodes = netlist.nodes
    exc = nodes[q].d
    own = _own_nets(nodes, q, exc)
    if own is None:
        return None
    leaves: list = []
    for n in own:
        for f in nodes[n].fanins:
            if f not in own and f != q and f not in leaves and _const(nodes, f) is None:
                leaves.append(f)
    leaves.sort()
    found = None
    for _ in range(MAX_WIDEN + 1):
        leaves = _covered(nodes, leaves)
        m = len(leaves)
        if m > MAX_LEAVES:
            break
        words = tabulate(netlist, [exc], leaves + [q])
        if words is None:
            break
        half = 1 << m
        full = (1 << half) - 1
        y0, y1 = words[exc] & full, words[exc] >> half
        if y0 & ~y1 & full:
            return None  # Y = not q for some input: the loop oscillates there
        load = ~(y0 ^ y1) & full
        if load == 0:
            return None
        data = y0 & load
        found = (list(leaves), m, load, data)
        en = _literal(nodes, leaves, load, full, m)
        if en is not None:
            d = _literal(nodes, leaves, data, load, m, skip={en[0]})
            return {"enable": en, "data": d if d is not None else (list(leaves), m, data, load)}
        nxt = [f for f in _widen(nodes, leaves) if f != q]
        if nxt == leaves or any(f in own for f in nxt):
            break
        leaves = nxt
    if found is None:
        return None
    leaves, m, load, data = found
    return {"enable": (leaves, m, load, (1 << (1 << m)) - 1), "data": (leaves, m, data, load)}


def _net(out: Netlist, spec, name: str) -> tuple[str, int]:
    """``(net, level)`` for a latch's enable or data: a net itself, or a new logic net over leaves."""
    if isinstance(spec[0], str):
        return spec
    leaves, m, lower, care = spec
    full = (1 << (1 << m)) - 1
    cubes, _ = isop(lower & care, (lower & care) | (full & ~care), m)
    while name in out.nodes:
        name += "_"
    out.nodes[name] = Logic(tuple(leaves), Function.from_cover(m, cubes, 1))
    return name, 1


def _positive(out: Netlist, net: str, level: int, name: str) -> str:
    """``net`` itself at level 1, else a new inverter of it."""
    if level:
        return net
    while name in out.nodes:
        name += "_"
    out.nodes[name] = Logic((net,), Function.from_table(1, 0b01))
    return name


# -- 3. master and slave ---------------------------------------------------------------------------
def _declare(out: Netlist, latches: dict, prefer=()) -> list:
    """Replace each latch by a declared one (kind ``ah``/``al``) or, with its master, by a flip-flop;
    returns the flip-flops as ``(q, master, edge)``.

    Latches named in ``prefer``, then outputs, are tried as slaves first: in a ring of two latches (a
    flip-flop whose data is its own complement) either could be read as the slave, and the one whose
    output the design names is the flip-flop's output.
    """
    ctrl = {q: _net(out, lt["enable"], f"{q}.en") for q, lt in latches.items()}
    flops = []
    masters: set = set()
    slaves: set = set()
    prefer, outs = set(prefer), set(out.outputs)
    for q in sorted(latches, key=lambda n: (n not in prefer, n not in outs)):
        d = latches[q]["data"]
        c, p = ctrl[q]
        if (not isinstance(d[0], str) or d[0] not in latches or d[0] == q or d[0] in masters or d[0] in slaves
                or q in masters):
            continue
        mc, mp = ctrl[d[0]]
        md = latches[d[0]]["data"]
        if mc != c or mp == p or (isinstance(md[0], str) and md[0] == d[0]):
            continue
        masters.add(d[0])
        slaves.add(q)
        dn, dl = _net(out, md, f"{q}.d")
        dn = _positive(out, dn, dl ^ (1 - d[1]), f"{q}.d_n")
        init = out.nodes[q].init
        out.nodes[q] = Storage(dn, "re" if p else "fe", c, init)
        flops.append((q, d[0], "rising" if p else "falling"))
    flopped = {q for q, _, _ in flops}
    for q, lt in latches.items():
        if q in flopped:
            continue
        c, p = ctrl[q]
        dn, dl = _net(out, lt["data"], f"{q}.d")
        dn = _positive(out, dn, dl, f"{q}.d_n")
        out.nodes[q] = Storage(dn, "ah" if p else "al", c, out.nodes[q].init)
    _prune(out, masters)
    return flops


def _prune(out: Netlist, masters: set) -> None:
    """Drop logic, and master latches, that reach no output and no other storage element."""
    nodes = out.nodes
    roots = list(out.outputs) + [n for n, x in nodes.items() if isinstance(x, Storage) and n not in masters]
    live = set(roots)
    stack = list(roots)
    while stack:
        node = nodes.get(stack.pop())
        for f in node.fanins if node is not None else ():
            if f not in live:
                live.add(f)
                stack.append(f)
    for n in [k for k, x in nodes.items() if k not in live and isinstance(x, (Logic, Storage))]:
        del nodes[n]
        out.origin.pop(n, None)


def edge_form(netlist: Netlist, prefer=()) -> EdgeForm:
    """``netlist`` (cut, as read) with every feedback loop read as a latch and master-slave pairs as
    flip-flops (see the module docstring); the netlist is ``None`` when some loop is not a latch."""
    closed = uncut(netlist)
    if has_feedback(closed):
        return EdgeForm(None, why="its feedback loops could not be closed again")
    cuts = latch_cuts(closed, prefer)
    if cuts is None:
        return EdgeForm(None, why=f"a feedback loop is longer than {MAX_LOOP} nets")
    cut = recut(netlist, cuts)
    if cut is None:
        return EdgeForm(None, why="cutting each latch on its own left a loop uncut")
    seq = settle_sequencers(cut, cuts)
    for u, (ins, table) in seq.items():
        cut.nodes[u] = Logic(ins, Function.from_table(len(ins), table))
    latches = {}
    for q in [c for c in cuts if c not in seq]:
        lt = _latch(cut, q)
        if lt is None:
            return EdgeForm(None, why=f"the loop through '{q}' is not a latch (it oscillates for some input, "
                                      "or it has too many inputs to tabulate)")
        latches[q] = lt
    out = cut.copy()
    flops = _declare(out, latches, prefer)
    if has_feedback(out):
        return EdgeForm(None, why="some feedback is left once the latches are read")
    left = [q for q in cuts if isinstance(out.nodes.get(q), Storage) and out.nodes[q].kind in ("ah", "al")]
    return EdgeForm(out, flops, left, sequencer=sorted(seq))


def pair_through_nets(netlist: Netlist, names) -> tuple[Netlist, list]:
    """Storage elements of ``netlist`` renamed to the ``names`` (another design's storage) that it reads
    them by: ``(netlist, [(name, element, complemented)])``.

    Where ``netlist`` has no storage element called ``v`` but a net ``v`` that is a storage element
    ``s`` of no name in ``names`` through buffers or an inverter (a relay build holds a bit that must
    start at 1 as its complement, read from a break contact), the element is called ``v`` and ``s``
    becomes ``v`` or its complement: the same machine with that bit's encoding flipped, its data
    complemented and its starting value too.
    """
    nodes = netlist.nodes
    taken = set(names)
    mapping = {}
    for v in names:
        if isinstance(nodes.get(v), Storage) or not isinstance(nodes.get(v), Logic):
            continue
        s_, pol = _root(nodes, v)
        st = nodes.get(s_)
        if s_ == v or s_ in taken or not isinstance(st, Storage) or st.kind == "as":
            continue
        taken.add(s_)
        mapping[s_] = (v, pol)
    if not mapping:
        return netlist, []
    return encode(netlist, mapping), [(v, s_, bool(pol)) for s_, (v, pol) in mapping.items()]


def encode(netlist: Netlist, mapping: dict) -> Netlist:
    """A copy of ``netlist`` whose storage element ``s`` is called ``v`` for each ``s: (v, complemented)``
    of ``mapping``, holding the complement of its old value where ``complemented`` (its data and known
    starting value complemented too); net ``s`` becomes ``v`` or its complement, so the copy does the
    same as ``netlist``.  A net already called ``v`` is that element's old reading of it (a buffer or an
    inverter of ``s``, see :func:`pair_through_nets`) or is renamed out of the way first.
    """
    clash = {v: f"{v}.was" for s_, (v, _) in mapping.items() if v in netlist.nodes and _root(netlist.nodes, v)[0] != s_}
    for k, new in clash.items():
        while new in netlist.nodes:
            new += "_"
        clash[k] = new
    out = netlist.renamed(clash) if clash else netlist.copy()
    nodes = out.nodes
    for s_, (v, pol) in mapping.items():
        st = nodes[s_]
        d = _positive(out, st.d, 1 - pol, f"{v}.d_n")
        init = st.init ^ pol if st.init in (0, 1) else st.init
        nodes.pop(v, None)
        nodes[v] = Storage(d, st.kind, st.control, init)
        nodes[s_] = Logic((v,), Function.from_table(1, 0b01 if pol else 0b10))
    return out
