"""Nets of a mapping named after the design's nets they equal.

The part search maps spellings of a design (:mod:`mapper.fit.spellings`) in which the nets inside a
small region are gone, so a mapped net that computes exactly what a design net computes would get a
made-up name.  :func:`design_names` gives it the design's name back, so that wiring lists, probe
points and reports speak of the nets the designer drew.  Nets are matched by simulation on random
values (inputs and storage outputs alike), then every match is checked on further random values;
a renaming never changes what the build computes, and the proof that follows compares it with the
design as usual.
"""
from __future__ import annotations

import random
from dataclasses import replace

from ..netlist import Logic, Netlist
from ..simulate import simulate
from .gates import Mapping

__all__ = ["design_names"]

#: random values per net (bits of the simulation words), and rounds of them
_BITS, _ROUNDS = 256, 2


def design_names(design: Netlist, mapping: Mapping, mapped: Netlist) -> Mapping:
    """``mapping`` with each cell output that equals an internal net of ``design`` (on every
    value tried) renamed to that net, when the name is free in the mapping.  ``mapped`` is the
    mapping as a netlist over the same ports and storage (:func:`mapper.fit.fit.mapping_netlist`)."""
    sources = list(design.inputs) + list(design.storage())
    mask = (1 << _BITS) - 1
    rng = random.Random(1)
    sigs: list = []
    for _ in range(_ROUNDS):
        words = {s: rng.getrandbits(_BITS) for s in sources}
        state = {s: words[s] for s in design.storage()}
        sigs.append((simulate(design, words, mask, state), simulate(mapped, words, mask, state)))
    used = {c.out for c in mapping.cells} | {a for c in mapping.cells for a in c.args}
    keep = set(design.inputs) | set(design.outputs) | set(design.storage()) | used
    by_value: dict = {}
    for name, node in design.nodes.items():
        if isinstance(node, Logic) and name not in keep:
            by_value.setdefault(tuple(d[name] for d, _ in sigs), name)
    rename: dict = {}
    for c in mapping.cells:
        name = by_value.get(tuple(m.get(c.out) for _, m in sigs))
        if name is not None and c.out not in design.nodes and name not in rename.values():
            rename[c.out] = name
    if not rename:
        return mapping

    def net(x):
        return rename.get(x, x)

    cells = [replace(c, args=tuple(net(a) for a in c.args), out=net(c.out)) for c in mapping.cells]
    return Mapping(cells, {o: net(n) for o, n in mapping.outputs.items()},
                   {k: (net(d), None if ctl is None else net(ctl)) for k, (d, ctl) in mapping.storage_nets.items()},
                   mapping.area, mapping.depth)
