"""Writer for netfit's own JSON form of a netlist.

The layout (``"format": "netfit-netlist"``, ``"version": 1``; keys are only
ever added, never renamed)::

    {
      "format": "netfit-netlist", "version": 1,
      "name": "c17",
      "inputs": ["N1", ...], "outputs": ["N22", ...], "clocks": [],
      "nodes": [
        {"net": "N10", "fanins": ["N1", "N3"], "cover": ["11"], "phase": 0,
         "table": "0x7"},
        ...
      ],
      "storage": [
        {"net": "q", "d": "d", "kind": "re", "control": "clk", "init": 3}, ...
      ],
      "exdc": null
    }

``nodes`` lists every logic node (constants have no fan-ins) in definition
order.  ``cover`` is a list of cubes over the fan-ins (character ``j`` for
fan-in ``j``: ``1``, ``0`` or ``-``) and ``phase`` says whether the cubes
list the ON-set (1) or the OFF-set (0).  ``table`` is the truth table as a
hexadecimal string (bit ``m`` is the value where fan-in ``j`` has bit ``j``
of ``m``), given only for nodes of at most 16 fan-ins.  ``exdc`` is the
external don't-care network in the same layout, or null.

Only ``write_netlist`` lives here for now; a writer of mapped builds will
join it as ``write_build``.
"""
from __future__ import annotations

import json

from ..logic.function import MAX_TABLE_INPUTS
from ..netlist import Logic, Netlist, Storage
from . import atomic_write

__all__ = ["FORMAT", "VERSION", "netlist_dict", "write_netlist", "dumps"]

FORMAT = "netfit-netlist"
VERSION = 1


def netlist_dict(netlist: Netlist) -> dict:
    """The netlist as plain data (see the module docstring); JSON-serialisable."""
    nodes = []
    storage = []
    for name, node in netlist.nodes.items():
        if isinstance(node, Logic):
            cubes, phase = node.func.cover()
            entry = {"net": name, "fanins": list(node.fanins), "cover": list(cubes), "phase": phase}
            if node.func.n <= MAX_TABLE_INPUTS:
                entry["table"] = hex(node.func.table())
            nodes.append(entry)
        elif isinstance(node, Storage):
            storage.append({"net": name, "d": node.d, "kind": node.kind, "control": node.control,
                            "init": node.init})
    return {
        "format": FORMAT,
        "version": VERSION,
        "name": netlist.name,
        "inputs": list(netlist.inputs),
        "outputs": list(netlist.outputs),
        "clocks": list(netlist.clocks),
        "nodes": nodes,
        "storage": storage,
        "exdc": netlist_dict(netlist.exdc) if netlist.exdc is not None else None,
    }


def write_netlist(netlist: Netlist, path, protect=()) -> None:
    """Write ``netlist`` as JSON to ``path`` (atomically; never over a file in ``protect``)."""
    atomic_write(path, dumps(netlist_dict(netlist)), protect=protect)


def dumps(data: dict) -> str:
    """JSON text of ``data``: one top-level key per line and, in the lists
    ``nodes`` and ``storage``, one entry per line (readable and diffable, and
    several times faster than fully indented output on big netlists)."""
    parts = []
    for key, value in data.items():
        k = json.dumps(key)
        if key in ("nodes", "storage") and value:
            body = ",\n  ".join(json.dumps(e, ensure_ascii=False) for e in value)
            parts.append(f" {k}: [\n  {body}\n ]")
        else:
            parts.append(f" {k}: {json.dumps(value, ensure_ascii=False)}")
    return "{\n" + ",\n".join(parts) + "\n}\n"
