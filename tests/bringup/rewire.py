"""Faulty copies of a gate build made by moving wires, as a person would on the board (never a flag in the
fault model): the injected-fault checks of the bring-up tests run these copies through simulators that
know nothing of the bring-up's own."""
from __future__ import annotations

import copy

__all__ = ["rewired", "NoFault"]


class NoFault:
    """The fault of the good copy: nothing moved."""

    kind, value, net, ref, pin = "none", 0, "", "", ""


def rewired(b, f):
    """A copy of build ``b`` with fault ``f`` made by moving wires: a pin stuck (every section input on that
    pin: a pin the sections share is one place on the board) or a net stuck (every reader on the rail, the
    driver cut off)."""
    nb = copy.copy(b)
    nb.cells = [copy.copy(c) for c in b.cells]
    nb.output_nets = dict(b.output_nets)
    rail = "VCC" if f.value else "GND"
    for c in nb.cells:
        c.pins = dict(c.pins)
    if f.kind == "pin":
        for c in nb.cells:
            for n in b.cell_def(c).inputs:
                if c.part_ref == f.ref and b.pin_of(c, n) == f.pin:
                    c.pins[n] = rail
        return nb
    if f.kind == "net":
        for c in nb.cells:   # every reader's wire moved to the rail, the driver's output cut off
            cd = b.cell_def(c)
            for n in cd.inputs:
                if c.pins[n] == f.net:
                    c.pins[n] = rail
            for n in cd.outputs:
                if c.pins.get(n) == f.net:
                    c.pins[n] = f"{f.net}__cut"
        for o in b.outputs:
            if b.output_nets.get(o, o) == f.net:
                nb.output_nets[o] = rail
    return nb
