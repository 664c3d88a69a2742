"""An order of a netlist's nodes and inputs found from its structure, not from its names.

The part search walks a design in the order its nodes and inputs are listed, and where two choices
cost the same it keeps the first.  So the same design written twice -- in BLIF and in Verilog, with
nets renamed, inputs or gates listed in another order -- could come out with different part counts.
:func:`canonical_order` lists both by a key computed from the structure alone:

* a *down* key per net, from its function and the down keys of its fan-ins (inputs and storage
  outputs are sources: an input's key says only that it is an input);
* an *up* key per net, from the down keys and up keys of the gates that read it, and which output
  it is (the refinement of Weisfeiler and Lehman, 1968, one pass each way);
* both passes again, each net starting from its last keys, while they tell more nets apart (at most
  :data:`ROUNDS` times).

A fan-in is told by its key and by what the gate's function does with it -- the number of rows
where the function is 1 with that input 1 and with it 0 (the first-order Chow parameters, Chow
1961) -- not by the pin it is wired to, so a gate whose inputs a file lists in another order (and
whose table is permuted to match) gets the same key.  :func:`fanin_order` lists a gate's fan-ins
by the same keys.

Nodes are listed by their keys and inputs likewise; only nets whose keys are equal -- nets the
structure cannot tell apart -- keep their order in the file.  Keys are hashed with
:mod:`hashlib` (Python's own string hash changes from run to run).

Examples
--------
>>> from mapper.netlist import Netlist
>>> from mapper.logic.function import Function
>>> n = Netlist("t")
>>> for i in ("b", "a"):
...     n.add_input(i)
>>> n.add_logic("y", ("a", "b"), Function.from_table(2, 0b0010))  # a and not b
>>> n.outputs.append("y")
>>> m = Netlist("t")
>>> for i in ("a", "b"):
...     m.add_input(i)
>>> m.add_logic("y", ("a", "b"), Function.from_table(2, 0b0010))
>>> m.outputs.append("y")
>>> canonical_order(n).inputs == canonical_order(m).inputs
True
"""
from __future__ import annotations

import hashlib

from ..netlist import Logic, Netlist, Storage
from .function import MAX_TABLE_INPUTS, var_mask

__all__ = ["canonical_order", "fanin_order", "pin_signature", "structural_keys"]


def _key(*parts) -> int:
    return int.from_bytes(hashlib.blake2b(repr(parts).encode(), digest_size=8).digest(), "big")


#: most rounds of the two passes (each round after the first runs only while it tells more apart)
ROUNDS = 4


def _function_key(func) -> tuple:
    """The function up to the order of its inputs: its width and number of rows that are 1."""
    if func.n <= MAX_TABLE_INPUTS:
        return (func.n, func.table().bit_count())
    cubes, phase = func.cover()
    return (func.n, phase, len(cubes))


def pin_signature(func, j: int) -> tuple:
    """What ``func`` does with its input ``j``, whatever pin it is on: the rows that are 1 with the
    input 1 and with it 0 (for a function too wide for a table, the pin itself)."""
    if func.n > MAX_TABLE_INPUTS:
        return ("pin", j)
    t = func.table()
    m = var_mask(func.n, j)
    return ((t & m).bit_count(), (t & ~m).bit_count())


def structural_keys(netlist: Netlist) -> dict:
    """net -> key from the structure alone (see the module docstring): equal for nets the structure
    cannot tell apart, and unchanged by renaming nets or listing gates, inputs or a gate's fan-ins
    in another order."""
    nodes = netlist.nodes
    order = netlist.topological_order()
    pins: dict = {}
    readers: dict = {}
    for name, node in nodes.items():
        if isinstance(node, (Logic, Storage)):
            for j, f in enumerate(node.fanins):
                sig = pin_signature(node.func, j) if isinstance(node, Logic) else ("pin", j)
                pins.setdefault(name, []).append((f, sig))
                readers.setdefault(f, []).append((name, sig))
    where = {name: k for k, name in enumerate(netlist.outputs)}
    key: dict = {}
    for name in order:
        node = nodes[name]
        if isinstance(node, Logic):
            key[name] = _key("l", _function_key(node.func))
        elif isinstance(node, Storage):
            key[name] = _key("s", node.kind, node.init)
        else:
            key[name] = _key("i")
    distinct = 0
    for _ in range(ROUNDS):
        # a storage element is a source of the order, so what it reads (and who reads an input
        # beside it) need not come first: across storage the last round's keys are used, so that
        # the order the file lists sources in does not matter
        down: dict = {}
        for name in order:
            fan = down if isinstance(nodes[name], Logic) else key
            down[name] = _key(key[name], sorted((fan.get(f, 0), sig) for f, sig in pins.get(name, ())))
        up: dict = {}
        for name in reversed(order):
            seen = sorted((down.get(r, 0), sig, up.get(r, 0) if isinstance(nodes[r], Logic) else key.get(r, 0))
                          for r, sig in readers.get(name, ()))
            up[name] = _key(where.get(name, -1), tuple(seen))
        key = {name: _key(down[name], up[name]) for name in order}
        now = len(set(key.values()))
        if now <= distinct:
            break
        distinct = now
    return key


def fanin_order(node, keys: dict, rank: dict | None = None) -> list:
    """The pins of ``node`` (a :class:`~mapper.netlist.Logic`) in the order of their nets' keys
    and what the function does with each (:func:`pin_signature`); pins alike by ``rank`` (net ->
    number, e.g. where the file lists the net), then in their own order."""
    rank = rank or {}
    return sorted(range(len(node.fanins)), key=lambda j: (keys.get(node.fanins[j], 0), pin_signature(node.func, j),
                                                           rank.get(node.fanins[j], -1), j))


def canonical_order(netlist: Netlist) -> Netlist:
    """A copy of ``netlist`` with the same nets, names and outputs, its nodes and inputs listed in
    the structural order of the module docstring (outputs keep their order: it is the port order)."""
    nodes = netlist.nodes
    key = structural_keys(netlist)
    position = {name: k for k, name in enumerate(nodes)}
    ranked = sorted(nodes, key=lambda n: (key.get(n, 0), position[n]))
    out = netlist.copy()
    out.nodes = {n: nodes[n] for n in ranked}
    first = {name: k for k, name in enumerate(netlist.inputs)}
    out.inputs = sorted(netlist.inputs, key=lambda n: (key.get(n, 0), first[n]))
    return out
