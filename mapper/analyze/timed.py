"""A build (or a design) as timed gates: each cell with its delay range, storage cut out.

:class:`TimedCircuit` is what the glitch finder (:mod:`mapper.analyze.glitch`)
simulates: the logic cells of a gate build with the catalog's typical and
maximum delays as each cell's range (:meth:`TimedCircuit.from_build`), or a
design's logic nodes with one range for all (:meth:`TimedCircuit.from_netlist`).
Storage outputs become free inputs, and the nets that reach a storage cell's
clock, enable, preset or clear input are watched: a glitch there can store a
wrong value.
"""
from __future__ import annotations

from dataclasses import dataclass, field

from ..build import SUPPLY_NETS, Build
from ..netlist import Logic, Netlist, Storage
from .timing import PartIndex, net_loads

__all__ = ["Gate", "TimedCircuit", "WATCH_ROLES"]

#: storage-cell input roles where a glitch is an error
WATCH_ROLES = ("clock", "enable", "preset", "clear")


@dataclass
class Gate:
    """One timed cell: ``out = table(ins)`` after a delay in ``[dmin, dmax]`` seconds.

    ``table`` is a truth table over ``ins`` (input 0 least significant).
    ``part``, ``cell``, ``slot``, ``in_pins`` (``(name, number)`` per input)
    and ``out_pin`` describe the cell for reports.
    """

    out: str
    ins: tuple
    table: int
    dmin: float
    dmax: float
    part: str | None = None
    cell: str | None = None
    slot: int | None = None
    in_pins: tuple = ()
    out_pin: tuple | None = None


@dataclass
class TimedCircuit:
    """A combinational circuit of timed gates (see :class:`Gate`).

    ``inputs`` are the free variables (primary inputs and storage outputs),
    ``outputs`` maps output names to nets, ``watch`` maps nets that reach a
    storage cell's clock/enable/preset/clear to descriptions of those pins,
    ``constants`` maps rail nets to 0/1.  ``clock_groups`` lists the
    edge-triggered storage of one clock net and edge as ``(q net, d net)``
    pairs: those bits change together on the edge (each to its data value).
    A storage cell's output is an input of its own (named ``Q^``, shown as
    ``Q`` through ``labels``) feeding a buffer gate with the cell's
    clock-to-output delay range, so bits that change on one edge still
    arrive at their own times.
    """

    name: str
    inputs: list
    gates: list
    outputs: dict
    watch: dict = field(default_factory=dict)
    constants: dict = field(default_factory=dict)
    clock_groups: list = field(default_factory=list)
    labels: dict = field(default_factory=dict)

    def label(self, net: str) -> str:
        """The name a builder knows a net by (a storage output's raw input is shown as the output)."""
        return self.labels.get(net, net)

    def cone(self, nets) -> TimedCircuit:
        """The circuit cut down to the fan-in of ``nets`` (no outputs; ``watch`` kept for those nets).

        The data nets of clock groups whose bits feed the cone come along,
        so bits that change together can be changed together in it.
        """
        driver = {g.out: g for g in self.gates}
        keep: dict = {}
        used_inputs: set = set()

        def pull(roots):
            stack = list(roots)
            while stack:
                n = stack.pop()
                g = driver.get(n)
                if g is None:
                    used_inputs.add(n)
                    continue
                if id(g) in keep:
                    continue
                keep[id(g)] = g
                stack.extend(g.ins)

        pull(nets)
        groups = []
        for grp in self.clock_groups:
            mine = [(q, d) for q, d in grp if q in used_inputs]
            if len(mine) >= 2:
                pull([d for _, d in mine])
                groups.append(mine)
        gates = [g for g in self.gates if id(g) in keep]
        inputs = [i for i in self.inputs if i in used_inputs]
        watch = {n: w for n, w in self.watch.items() if n in set(nets)}
        return TimedCircuit(self.name, inputs, gates, {}, watch, dict(self.constants), groups, dict(self.labels))

    @classmethod
    def from_build(cls, build: Build, min_fraction: float | None = None) -> TimedCircuit:
        """The logic cells of a gate build with their catalog delay ranges.

        ``min`` is the typical figure, or ``min_fraction`` times the maximum
        when given.  Storage outputs become inputs; an inverted storage
        output (``QN``) is a zero-delay inverter of ``Q``.
        """
        circ = cls(build.design, list(build.inputs), [], {o: build.output_nets.get(o, o) for o in build.outputs},
                   {}, {"VCC": 1, "GND": 0})
        groups: dict = {}
        ix = PartIndex(build)
        loads = net_loads(build, ix)
        taken = set(circ.inputs)
        circ._add_gate_storage(build, taken)
        # feedback loops kept as gates: cut where the design was (the cut net an input, as for the prover)
        cut = {g.q: g.d for g in build.storage_groups.values() if g.kind == "as"}
        shapes: dict = {}
        for c in build.cells:
            if c.group is not None:
                continue
            cd = build.cell_def(c)
            if cd.storage is not None:
                t, m = ix.cell_delay(c, loads.get(c.pins.get(cd.output), 0.0))
                raw = circ._add_storage_cell(c, cd, ix, taken, (t if min_fraction is None else min_fraction * m, m))
                if cd.storage in ("re", "fe") and raw and len(cd.inputs) > 1:
                    ctl = next((c.pins.get(p) for p in cd.inputs if cd.roles.get(p) == "clock"),
                               c.pins.get(cd.inputs[1]))
                    groups.setdefault((ctl, cd.storage), []).append((raw, c.pins.get(cd.inputs[0])))
                continue
            pins = c.pins
            t, m = ix.cell_delay(c, loads.get(pins.get(cd.output), 0.0))
            lo = t if min_fraction is None else min_fraction * m
            # pin numbers and truth table are the same for every cell in the same slot of the same part type
            key = (ix.part_id(c.part_ref), c.slot, c.cell)
            shape = shapes.get(key)
            if shape is None:
                shape = shapes[key] = (tuple((p, ix.pin_of(c, p)) for p in cd.inputs),
                                       (cd.output, ix.pin_of(c, cd.output)), cd.logic_function().table())
            circ.gates.append(Gate(
                cut.get(pins[cd.output], pins[cd.output]), tuple([pins[p] for p in cd.inputs]), shape[2],
                min(lo, m), m, c.part_ref, c.cell, c.slot, shape[0], shape[1]))
        for grp in build.storage_groups.values():
            if grp.kind in ("re", "fe") and grp.control:
                groups.setdefault((grp.control, grp.kind), []).append((grp.q, grp.d))
        circ.clock_groups = [g for g in groups.values() if len(g) >= 2 and all(d is not None for _, d in g)]
        return circ

    def _add_input(self, net: str, taken: set) -> None:
        if net not in taken:
            self.inputs.append(net)
            taken.add(net)

    def _add_gate_storage(self, build: Build, taken: set) -> None:
        """Storage made of gates: its loop is one storage element here, as for the prover."""
        members: dict = {}
        for c in build.cells:
            if c.group is not None:
                members.setdefault(c.group, []).append(c)
        for key, grp in build.storage_groups.items():
            self._add_input(grp.q, taken)
            if grp.control and grp.control not in SUPPLY_NETS:
                cells = members.get(key, [])
                self.watch.setdefault(grp.control, []).append({
                    "part": cells[0].part_ref if cells else None, "cell": grp.template, "section": None,
                    "pin": "control", "pin_number": None,
                    "role": "clock" if grp.kind in ("re", "fe") else "enable"})

    def _add_storage_cell(self, c, cd, ix: PartIndex, taken: set, delay=(0.0, 0.0)) -> str | None:
        """A storage cell: its output a buffer of a raw input, its inverted output an inverter, its control watched.

        Returns the raw input's name.
        """
        q = c.pins.get(cd.output)
        raw = None
        if q:
            raw = q + "^"
            while raw in taken:
                raw += "^"
            self._add_input(raw, taken)
            self.labels[raw] = q
            ctl = next((p for p in cd.inputs if cd.roles.get(p) in ("clock", "enable")),
                       cd.inputs[1] if len(cd.inputs) > 1 else None)
            # the change starts at the clock pin and leaves at Q after the clock-to-output delay
            self.gates.append(Gate(q, (raw,), 0b10, delay[0], delay[1], c.part_ref, c.cell, c.slot,
                                   ((ctl, ix.pin_of(c, ctl)),) if ctl else (), (cd.output, ix.pin_of(c, cd.output))))
        for extra in cd.extra_outputs:
            if c.pins.get(extra) and q:
                self.gates.append(Gate(c.pins[extra], (q,), 0b01, 0.0, 0.0, c.part_ref, c.cell, c.slot,
                                       ((cd.output, ix.pin_of(c, cd.output)),),
                                       (extra, ix.pin_of(c, extra))))
        for p in cd.inputs:
            role = cd.roles.get(p)
            if role is None and len(cd.inputs) > 1 and p == cd.inputs[1]:
                role = "clock"  # a storage cell's control input
            net = c.pins.get(p)
            if role in WATCH_ROLES and net and net not in SUPPLY_NETS:
                self.watch.setdefault(net, []).append({
                    "part": c.part_ref, "cell": c.cell, "section": c.slot, "pin": p,
                    "pin_number": ix.pin_of(c, p), "role": role})
        return raw

    @classmethod
    def from_netlist(cls, netlist: Netlist, dmin: float, dmax: float) -> TimedCircuit:
        """A design's logic nodes as gates, each with the delay range ``[dmin, dmax]``.

        Storage outputs become inputs and their controls are watched, as for
        builds.  Nodes wider than a truth table are refused (``ValueError``).
        """
        inputs = list(netlist.inputs)
        gates = []
        watch: dict = {}
        consts = {}
        groups: dict = {}
        for name, node in netlist.nodes.items():
            if isinstance(node, Storage):
                inputs.append(name)
                if node.kind in ("re", "fe") and node.control is not None:
                    groups.setdefault((node.control, node.kind), []).append((name, node.d))
                if node.control is not None:
                    watch.setdefault(node.control, []).append({
                        "part": None, "cell": f"storage {name}", "section": None, "pin": "control",
                        "pin_number": None, "role": "clock" if node.kind in ("re", "fe") else "enable"})
            elif isinstance(node, Logic):
                if not node.fanins:
                    consts[name] = node.func.constant_value()
                    continue
                gates.append(Gate(name, tuple(node.fanins), node.func.table(), dmin, dmax))
        return cls(netlist.name, inputs, gates, {o: o for o in netlist.outputs}, watch, consts,
                   [g for g in groups.values() if len(g) >= 2])
