"""One spelling of a design's small fan-out-free regions, whatever file it came from.

A BLIF file writes a node as a sum of products; the Verilog of the same design writes it as an
expression, which the reader turns into a tree of small gates.  The logic is equal, but the graphs
the part search maps are not, and the cover lands on different part counts.  :func:`collapse_regions`
takes both back to one netlist:

* buffers that are not outputs are taken out (a BLIF file writes ``x = y`` as a node, the Verilog
  reader as two names of one net);
* a *region* is a net and the logic that only it reads: a node joins the region of its reader when
  every gate that reads it lies in that one region and it is neither an output nor read by storage.
  Joining never stops another join, so the regions do not depend on the order the nodes are visited
  in (they are the maximal fan-out-free cones, with fan-out counted between regions, not between
  gates, so that a net read twice inside one expression still joins it);
* a region of at most ``limit`` inputs becomes one node whose function is the region's truth table
  (a sum of products and its expression tree both give the same table); a wider region keeps its
  gates as written;
* the inputs of every new node are listed in the structural order of :mod:`mapper.logic.canonical`
  (:func:`~mapper.logic.canonical.fanin_order`), so the table does not carry the order a file
  happened to list them in.

The result is meant for the graph the part search maps only; what a build is proved against stays
the design as read.  Where a region is wider than ``limit`` the two spellings can still differ: the
truth table of a wide region is too big to be a spelling of its own, and cutting it into narrower
pieces in a way both spellings agree on is not done here.

Examples
--------
>>> from mapper.netlist import Netlist
>>> from mapper.logic.function import Function
>>> n = Netlist("t")
>>> for i in ("a", "b", "c"):
...     n.add_input(i)
>>> n.add_logic("g", ("a", "b"), Function.from_table(2, 0b1000))   # a and b
>>> n.add_logic("y", ("g", "c"), Function.from_table(2, 0b1110))   # g or c
>>> n.add_output("y")
>>> m = collapse_regions(n)
>>> sorted(m.nodes["y"].fanins), "g" in m.nodes
(['a', 'b', 'c'], False)
"""
from __future__ import annotations

from dataclasses import replace

from ..netlist import Logic, Netlist, Storage
from .canonical import fanin_order, structural_keys
from .function import Function, var_mask
from .restructure.decompose import MAX_FREE

__all__ = ["collapse_regions", "rebuilt_regions", "regions", "LIMIT"]

#: inputs of the widest region made one node (its table has 2**LIMIT rows; the bi-decomposition
#: of :func:`rebuilt_regions` works on tables of this many inputs, as the restructuring's does)
LIMIT = MAX_FREE


def _without_buffers(netlist: Netlist) -> Netlist:
    """``netlist`` with its buffers that are not outputs gone, their readers reading what they
    copy: a BLIF file writes ``x = y`` as a node, a Verilog reader as two names of one net."""
    copy_of: dict = {}
    for name, node in netlist.nodes.items():
        if isinstance(node, Logic) and node.func.n == 1 and node.func.table() == 0b10 \
                and name not in netlist.outputs:
            copy_of[name] = node.fanins[0]
    if not copy_of:
        return netlist

    def source(net: str) -> str:
        seen = set()
        while net in copy_of and net not in seen:  # a chain of buffers, followed to its start
            seen.add(net)
            net = copy_of[net]
        return net

    out = netlist.copy()
    out.nodes = {}
    for name, node in netlist.nodes.items():
        if name in copy_of:
            continue
        if isinstance(node, Logic):
            node = Logic(tuple(source(f) for f in node.fanins), node.func)
        elif isinstance(node, Storage):
            node = replace(node, d=source(node.d), control=None if node.control is None else source(node.control))
        out.nodes[name] = node
    return out


def regions(netlist: Netlist) -> dict:
    """logic net -> the net whose region it belongs to (see the module docstring).

    One pass from the outputs back: when a node is visited, every node that reads it has its
    region already, so the pass reaches the fixed point of the joining rule at once."""
    nodes = netlist.nodes
    pinned = set(netlist.outputs)
    readers: dict = {}
    for name, node in nodes.items():
        if isinstance(node, Storage):
            pinned.update(node.fanins)
        elif isinstance(node, Logic):
            for f in node.fanins:
                readers.setdefault(f, []).append(name)
    region: dict = {}
    for name in reversed(netlist.topological_order()):
        if not isinstance(nodes[name], Logic):
            continue
        owners = {region[r] for r in readers.get(name, ())}
        region[name] = owners.pop() if len(owners) == 1 and name not in pinned else name
    return region


def _members(netlist: Netlist, region: dict) -> dict:
    """root -> its region's logic nets in topological order (the root last)."""
    out: dict = {}
    for name in netlist.topological_order():
        if name in region:
            out.setdefault(region[name], []).append(name)
    return out


def _leaves(netlist: Netlist, members: list) -> list:
    """The nets a region reads from outside itself, in the order first read."""
    inside = set(members)
    seen: dict = {}
    for name in members:
        for f in netlist.nodes[name].fanins:
            if f not in inside:
                seen.setdefault(f, None)
    return list(seen)


def _region_function(netlist: Netlist, members: list, leaves: list) -> tuple:
    """``(leaves, function)``: the truth table of a region's root (bit-parallel, members in
    order) over those of ``leaves`` it depends on -- ``(a & b) | (a & ~b)`` reads ``a`` only,
    as its sum of products ``a`` does."""
    for _ in range(2):
        n = len(leaves)
        mask = (1 << (1 << n)) - 1
        words = {leaf: var_mask(n, j) for j, leaf in enumerate(leaves)}
        for name in members:
            node = netlist.nodes[name]
            words[name] = node.func.eval_words([words.get(f, 0) for f in node.fanins], mask)
        table = words[members[-1]]
        used = [leaf for j, leaf in enumerate(leaves) if _depends(table, n, j)]
        if len(used) == n:
            break
        leaves = used  # once more over the leaves it reads (the others set to 0: they do not matter)
    return leaves, Function.from_table(len(leaves), table)


def _depends(table: int, n: int, j: int) -> bool:
    m = var_mask(n, j)
    return (table & m) >> (1 << j) != table & ~m & ((1 << (1 << n)) - 1)


def collapse_regions(netlist: Netlist, limit: int = LIMIT) -> Netlist:
    """A copy of ``netlist`` with each fan-out-free region of at most ``limit`` inputs made one
    node (see the module docstring).  Ports, storage and the nets of region roots keep their names;
    nets inside a collapsed region are gone.  The copy computes what ``netlist`` computes."""
    netlist = _without_buffers(netlist)
    region = regions(netlist)
    groups = _members(netlist, region)
    made: dict = {}
    for root, members in groups.items():
        leaves = _leaves(netlist, members)
        if len(leaves) <= limit:
            made[root] = _region_function(netlist, members, leaves)
    out = netlist.copy()
    out.nodes = {}
    for name, node in netlist.nodes.items():
        if name in made:
            leaves, func = made[name]
            out.nodes[name] = Logic(tuple(leaves), func)
        elif name in region and region[name] in made:
            continue  # inside a collapsed region
        else:
            out.nodes[name] = node
    return _ordered_fanins(out, set(made))


def _ordered_fanins(netlist: Netlist, made: set) -> Netlist:
    """``netlist`` with the fan-ins of the nodes in ``made`` listed by
    :func:`~mapper.logic.canonical.fanin_order`, their tables permuted to match."""
    keys = structural_keys(netlist)
    # nets alike go by where the file lists them (the inputs first), not by where a gate read them
    rank = {n: k for k, n in enumerate(list(netlist.inputs) + list(netlist.nodes))}
    for name in made:
        node = netlist.nodes[name]
        perm = fanin_order(node, keys, rank)
        if perm == list(range(len(perm))):
            continue
        table = _permuted(node.func.table(), perm)
        netlist.nodes[name] = Logic(tuple(node.fanins[j] for j in perm), Function.from_table(len(perm), table))
    return netlist


def _permuted(table: int, perm: list) -> int:
    """The table of the same function with its input ``perm[k]`` moved to position ``k``."""
    out = 0
    for row in range(1 << len(perm)):
        old = 0
        for k, j in enumerate(perm):
            if row >> k & 1:
                old |= 1 << j
        if table >> old & 1:
            out |= 1 << row
    return out


def rebuilt_regions(netlist: Netlist, limit: int = LIMIT, least: int = 3) -> Netlist:
    """``netlist`` after :func:`collapse_regions`, each node of three to ``limit`` inputs built
    again from its table as 2-input gates (:class:`~mapper.logic.restructure.decompose.Synth`:
    bi-decomposition into AND, OR and exclusive-OR where the table allows, so that an
    exclusive-OR a sum of products hides comes back).  A second spelling made from the
    collapsed one, so it too is the same whatever the file wrote."""
    from .aig import AIG
    from .restructure.decompose import Synth

    out = netlist.copy()
    out.nodes = {}
    taken = set(netlist.nodes) | set(netlist.inputs) | set(netlist.outputs)
    for name, node in netlist.nodes.items():
        if not isinstance(node, Logic) or not least <= node.func.n <= limit:
            out.nodes[name] = node
            continue
        g = AIG()
        leaves = [g.add_input(f) for f in node.fanins]
        lit = Synth(g, leaves, node.func.n).build(node.func.table())
        nets = {lv >> 1: f for lv, f in zip(leaves, node.fanins)}
        _gates_of(g, lit, name, nets, out.nodes, taken)
    return out


def _gates_of(g, lit: int, name: str, nets: dict, nodes: dict, taken: set) -> None:
    """The gates of ``lit`` in ``g`` added to ``nodes``, the last one named ``name`` (complements
    folded into each gate's table; ``nets``: variable -> net of the inputs)."""
    cone = [v for v in g.cone([lit]) if g.is_and(v)]
    for v in cone:
        a, b = g.f0[v], g.f1[v]
        last = v == lit >> 1
        net = name if last else _fresh(f"{name}_", taken)
        table = sum(1 << m for m in range(4) if ((m & 1) ^ (a & 1)) and (((m >> 1) & 1) ^ (b & 1)))
        if last and lit & 1:
            table ^= 0b1111
        nodes[net] = Logic((nets[a >> 1], nets[b >> 1]), Function.from_table(2, table))
        nets[v] = net
    if not cone or cone[-1] != lit >> 1:  # the function is an input, its complement, or a constant
        if lit >> 1 == 0:
            nodes[name] = Logic((), Function.constant(lit & 1))
        else:
            nodes[name] = Logic((nets[lit >> 1],), Function.from_table(1, 0b01 if lit & 1 else 0b10))


def _fresh(prefix: str, taken: set) -> str:
    """A new net name: ``prefix`` and the first free number (counted per region, so that the
    names do not depend on how many gates the file had)."""
    k = 0
    while f"{prefix}{k}" in taken:
        k += 1
    taken.add(f"{prefix}{k}")
    return f"{prefix}{k}"
