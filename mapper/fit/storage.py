"""Storage elements built from a target's gates when it has no storage parts.

Textbook templates (common practice of digital-design courses):

* the gated D latch from four NAND2: ``s = NAND(D, EN)``, ``r = NAND(s, EN)``,
  ``Q = NAND(s, QN)``, ``QN = NAND(r, Q)`` -- transparent while EN is 1,
  holding while EN is 0;
* a latch transparent while EN is 0: the same after an inverter on EN;
* the edge-triggered D flip-flop as master and slave latches: for a rising
  edge the master is transparent while the clock is 0 and the slave while it
  is 1 (one inverter on the clock, 9 NAND2 in all);
* NOR2 targets use the dual circuit: a network of NORs computes the dual of
  its NAND twin, so the NAND latch with every signal complemented -- inputs
  inverted, output taken from the other cross-coupled gate -- is a NOR
  latch (6 NOR2; 5 when the enable is active low).

The gates form a feedback loop, so the build records each template as a
:class:`~mapper.build.GateStorage` group that the prover treats as one
storage element; the templates themselves are checked gate by gate against
the textbook truth tables in ``tests/fit/test_storage.py``.
"""
from __future__ import annotations

from ..build import GateStorage
from ..errors import UsageError
from .gates import CellUse

__all__ = ["gate_storage", "storage_gate_cell"]


def storage_gate_cell(lib) -> tuple[str, str] | None:
    """``(cell name, "nand" | "nor")`` of a 2-input NAND or NOR the target may use."""
    for name, cd in sorted(lib.cells.items()):
        if cd.function.n == 2 and cd.function.table() == 0b0111:
            return name, "nand"
    for name, cd in sorted(lib.cells.items()):
        if cd.function.n == 2 and cd.function.table() == 0b0001:
            return name, "nor"
    return None


def _latch(cell, gate, d, en, q, active_high, tag, cells):
    """Append the cells of one latch driving net ``q``; returns nothing."""
    def g(a, b, out):
        cells.append(CellUse(cell, (a, b), out, None, tag))

    if gate == "nand":
        if not active_high:
            g(en, en, f"{q}/en_n")
            en = f"{q}/en_n"
        g(d, en, f"{q}/s")
        g(f"{q}/s", en, f"{q}/r")
        g(f"{q}/s", f"{q}/qn", q)
        g(f"{q}/r", q, f"{q}/qn")
    else:
        # dual of the NAND latch: complemented D and EN in, output from the
        # second cross-coupled gate
        g(d, d, f"{q}/d_n")
        if active_high:
            g(en, en, f"{q}/en_n")
            en_c = f"{q}/en_n"
        else:
            en_c = en
        g(f"{q}/d_n", en_c, f"{q}/s")
        g(f"{q}/s", en_c, f"{q}/r")
        g(f"{q}/s", q, f"{q}/a")
        g(f"{q}/r", f"{q}/a", q)


def gate_storage(lib, kind: str, d: str, control: str, q: str, init: int):
    """Cells and the group record of one storage element built from gates.

    Returns ``(cells, GateStorage)``; raises :class:`UsageError` when the target
    has neither NAND2 nor NOR2, or for asynchronous (``as``) storage.
    """
    found = storage_gate_cell(lib)
    if found is None:
        raise UsageError("the target has no storage parts and no NAND2 or NOR2 to build storage from")
    cell, gate = found
    cells: list = []
    tag = q
    if kind in ("ah", "al"):
        _latch(cell, gate, d, control, q, kind == "ah", tag, cells)
        template = f"D latch from {len(cells)} {gate.upper()}2"
    elif kind in ("re", "fe"):
        master = f"{q}/m"
        # rising edge: master open while the clock is low, slave while high
        _latch(cell, gate, d, control, master, kind == "fe", tag, cells)
        _latch(cell, gate, master, control, q, kind == "re", tag, cells)
        template = f"master-slave D flip-flop from {len(cells)} {gate.upper()}2"
    else:
        raise UsageError(f"storage kind '{kind}' (asynchronous) cannot be built from gates")
    return cells, GateStorage(kind, d, control, q, init, template)


def close_loops(lib, design, mapping):
    """Close the design's feedback loops (storage of kind ``as``) as gates: returns ``(mapping, groups)``.

    A loop read as storage (:mod:`mapper.logic.feedback`) was mapped as logic
    from its state variable ``q`` to its excitation; here the cell that makes
    the excitation is made to drive ``q`` itself, so the build keeps the loop
    of gates -- for a set-reset latch, the cross-coupled pair -- and the
    logic around it is what the mapper made.  Where the excitation is read by
    other cells too, or is not the output of a cell (the loop holds through
    no gate of its own, as in a ring of two inverters), two inverters carry
    it to ``q``.  Each loop is recorded as a :class:`~mapper.build.GateStorage`
    of kind ``as`` whose ``d`` names the excitation (the cell driving ``q`` is
    read as driving ``d`` by the prover and the timing, which cut the loop
    there again).
    """
    from dataclasses import replace as _replace
    loops = {net: node for net, node in design.storage().items() if node.kind == "as"}
    if not loops:
        return mapping, {}
    cells = list(mapping.cells)
    readers: dict = {}
    for c in cells:
        for a in c.args:
            readers[a] = readers.get(a, 0) + 1
    for net in mapping.outputs.values():
        readers[net] = readers.get(net, 0) + 1
    for d, ctrl in mapping.storage_nets.values():
        for x in (d, ctrl):
            if x is not None:
                readers[x] = readers.get(x, 0) + 1
    driver = {c.out: i for i, c in enumerate(cells)}
    taken = {c.out for c in cells} | set(design.inputs) | set(design.outputs) | set(design.storage())
    groups = {}
    for q, node in loops.items():
        d, _ = mapping.storage_nets[q]
        exc = f"{q}+"
        k = 2
        while exc in taken:
            exc = f"{q}+{k}"
            k += 1
        taken.add(exc)
        i = driver.get(d)
        if i is not None and readers.get(d) == 1 and d not in design.outputs:
            cells[i] = _replace(cells[i], out=q)
        else:
            inv = lib.inverter()
            if inv is None:
                raise UsageError("the target cannot make an inverter to close a feedback loop")
            (cell, args), = inv.gates
            mid = f"{q}/n"
            while mid in taken:
                mid += "_"
            taken.add(mid)
            cells.append(CellUse(cell, tuple(d for _ in args), mid, None))
            cells.append(CellUse(cell, tuple(mid for _ in args), q, None))
        groups[q] = GateStorage("as", exc, None, q, node.init, "feedback loop kept as gates")
    return type(mapping)(cells, mapping.outputs, mapping.storage_nets, mapping.area, mapping.depth), groups
