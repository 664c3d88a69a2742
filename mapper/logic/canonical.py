"""An order of a netlist's nodes and inputs found from its structure, not from its names.

The part search walks a design in the order its nodes and inputs are listed, and where two choices
cost the same it keeps the first.  So the same design written twice -- in BLIF and in Verilog, with
nets renamed, inputs or gates listed in another order -- could come out with different part counts.
:func:`canonical_order` lists both by a key computed from the structure alone:

* a *down* key per net, from its function and the down keys of its fan-ins (inputs and storage
  outputs are sources: an input's key says only that it is an input);
* an *up* key per net, from the down keys, pin positions and up keys of the gates that read it, and
  whether it is an output (the refinement of Weisfeiler and Lehman, 1968, one round each way).

Nodes are listed by ``(down, up)`` and inputs by their up key; only nets whose keys are equal --
nets the structure cannot tell apart -- keep their order in the file.  Keys are hashed with
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

__all__ = ["canonical_order"]


def _key(*parts) -> int:
    return int.from_bytes(hashlib.blake2b(repr(parts).encode(), digest_size=8).digest(), "big")


def _function_key(func) -> tuple:
    if func.n <= 12:
        return (func.n, func.table())
    cubes, phase = func.cover()
    return (func.n, phase, tuple(sorted(map(repr, cubes))))


def canonical_order(netlist: Netlist) -> Netlist:
    """A copy of ``netlist`` with the same nets, names and outputs, its nodes and inputs listed in
    the structural order of the module docstring (outputs keep their order: it is the port order)."""
    nodes = netlist.nodes
    order = netlist.topological_order()
    down: dict = {}
    for name in order:
        node = nodes[name]
        if isinstance(node, Logic):
            down[name] = _key("l", _function_key(node.func), tuple(down.get(f, 0) for f in node.fanins))
        elif isinstance(node, Storage):
            down[name] = _key("s", node.kind, node.init)
        else:
            down[name] = _key("i")
    readers: dict = {}
    for name, node in nodes.items():
        if isinstance(node, (Logic, Storage)):
            for pin, f in enumerate(node.fanins):
                readers.setdefault(f, []).append((name, pin))
    outputs = set(netlist.outputs)
    up: dict = {}
    for name in reversed(order):
        seen = sorted((down.get(r, 0), pin, up.get(r, 0)) for r, pin in readers.get(name, ()))
        up[name] = _key(name in outputs, tuple(seen))
    position = {name: k for k, name in enumerate(nodes)}
    ranked = sorted(nodes, key=lambda n: (down.get(n, 0), up.get(n, 0), position[n]))
    out = netlist.copy()
    out.nodes = {n: nodes[n] for n in ranked}
    first = {name: k for k, name in enumerate(netlist.inputs)}
    out.inputs = sorted(netlist.inputs, key=lambda n: (up.get(n, 0), first[n]))
    return out
