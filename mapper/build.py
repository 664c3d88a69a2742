"""The build: cells placed in slots of numbered parts, support parts and wiring.

A :class:`Build` is what fit/ makes and what analyze/ and write/ read; they
know nothing of how it was made.  It is data only: the analyses of a build
(timing, glitches, supply current, cautions, the proof) are separate results
(:mod:`mapper.analyze.results`).  Everything a writer needs is here, in the
analysis results, or derived from them:

* ``parts`` -- numbered logic parts (``U1``… chips, ``K1``… relays);
* ``cells`` -- one :class:`CellInstance` per used slot: the cell it performs
  and the net on each of its pins;
* ``contacts`` -- for relay builds, one :class:`ContactInstance` per used
  pole: the coil net that moves it and the nets on its common, normally-open
  and normally-closed terminals;
* ``support`` -- decoupling capacitors, coil diodes, pull-down resistors,
  each with its role;
* ``ties`` -- unused inputs of used slots, tied to a supply rail.

Nets are derived (:meth:`Build.nets`), never stored twice.  The build turns
back into logic with :meth:`Build.to_netlist`, which is what the prover checks
against the design (relay contacts through :mod:`mapper.relay_logic`).
"""
from __future__ import annotations

from collections import Counter
from dataclasses import dataclass, field

from .catalog.model import CellDef, PartDef, Target
from .errors import InternalError
from .logic.function import Function
from .netlist import Netlist
from .relay_logic import RelaySequencer, RelayStorage, contact_logic

__all__ = ["PartInstance", "CellInstance", "ContactInstance", "SupportInstance", "Tie", "Build", "GateStorage",
           "SUPPLY_NETS", "ref_key"]

#: names of the supply rails in every build
SUPPLY_NETS = ("VCC", "GND")


@dataclass
class PartInstance:
    """One logic part placed in the build (``ref`` is ``U3`` or ``K7``)."""

    ref: str
    part_id: str


@dataclass
class CellInstance:
    """One used slot: ``cell`` performed in slot ``slot`` of part ``part_ref``.

    ``pins`` maps every pin name of the cell (inputs and outputs) to a net;
    an input tied to a rail names ``VCC`` or ``GND``.  ``origin`` is the design
    net this cell's output implements, when there is one (a hint for the prover
    and for reports).  ``init`` is the initial value of a storage cell.
    """

    name: str
    cell: str
    part_ref: str
    slot: int
    pins: dict
    origin: str | None = None
    init: int = 3
    #: storage built from gates: the key of :attr:`Build.storage_groups` this cell belongs to
    group: str | None = None
    #: a block with registers inside (a counter, a shift register): register -> ``(net, init)``, the
    #: design's storage element it holds and its initial value (the net is on the register's output
    #: pin when that pin is wired)
    state: dict = field(default_factory=dict)


@dataclass
class ContactInstance:
    """One changeover pole of relay ``part_ref``, moved by the relay's coil.

    ``com``, ``no`` and ``nc`` are the nets on the common, normally-open and
    normally-closed terminals (``None`` when that terminal is unused).
    """

    part_ref: str
    pole: int
    com: str | None
    no: str | None
    nc: str | None


@dataclass
class SupportInstance:
    """A support part (``C1`` decoupling capacitor, ``D1`` coil diode, ``R1`` load).

    ``role`` is its part's role (:data:`mapper.catalog.SUPPORT_ROLES`);
    ``nets`` are the nets on its pins in pin order (a coil diode: anode,
    cathode).
    """

    ref: str
    part_id: str
    nets: tuple
    purpose: str
    role: str = ""


@dataclass
class GateStorage:
    """A latch or flip-flop built from gates: data, control and output nets.

    Kind ``as`` is a feedback loop of the design kept as gates: no cell of
    the build is tagged with it; the cell driving ``q`` computes the
    excitation, which the logic view names ``d`` (the loop cut again at
    ``q``, where the design was cut).
    """

    kind: str
    d: str
    control: str | None
    q: str
    init: int = 3
    template: str = ""


@dataclass
class Tie:
    """An unused input pin of a used part, tied to a rail."""

    part_ref: str
    pin: int
    rail: str
    reason: str = "unused input"


@dataclass
class Build:
    """The mapped result (see module docstring)."""

    design: str
    target: Target
    inputs: list
    outputs: list
    parts: list = field(default_factory=list)
    cells: list = field(default_factory=list)
    contacts: list = field(default_factory=list)
    #: relay builds: part ref -> coil net (the coil's other end is GND)
    coils: dict = field(default_factory=dict)
    support: list = field(default_factory=list)
    ties: list = field(default_factory=list)
    #: output port -> net that carries it (ports may be renamed internally)
    output_nets: dict = field(default_factory=dict)
    #: nets driven by the supply through contacts: relay builds' source rail
    rail: str = "VCC"
    #: how fit made the build, in words (methods, choices, what the part search tried)
    notes: list = field(default_factory=list)
    #: what fit counted while it worked (relay builds: windows, evaluations, seconds, re-amplification points)
    fit_stats: dict = field(default_factory=dict)
    #: relay builds: storage elements, turned into storage by :func:`mapper.relay_logic.contact_logic`
    latches: list[RelayStorage] = field(default_factory=list)
    #: relay builds: the sequencers that step each clock or enable net through its phases
    sequencers: list[RelaySequencer] = field(default_factory=list)
    #: gate builds: storage made of gates (a feedback loop of cells), group key ->
    #: :class:`GateStorage`; the prover sees each group as one storage element
    storage_groups: dict = field(default_factory=dict)

    @property
    def is_relay(self) -> bool:
        """Whether this is a relay build (contacts and coils rather than gate cells)."""
        return self.target.is_relay

    # -- derived views ----------------------------------------------------
    def part(self, ref: str) -> PartInstance:
        """The part numbered ``ref`` (``KeyError`` if none)."""
        # an index made on first use, made again when parts were added or renamed
        idx = self.__dict__.get("_part_index")
        p = idx.get(ref) if idx is not None else None
        if idx is None or p is None or p.ref != ref or len(idx) != len(self.parts):
            idx = self.__dict__["_part_index"] = {q.ref: q for q in self.parts}
            p = idx.get(ref)
            if p is None:
                raise KeyError(ref)
        return p

    def part_def(self, ref_or_id: str) -> PartDef:
        """The catalog definition of a placed part (by ref) or of a part id."""
        try:
            return self.target.parts[self.part(ref_or_id).part_id]
        except KeyError:
            return self.target.parts[ref_or_id]

    def cell_def(self, cell: CellInstance) -> CellDef:
        """The catalog definition of the cell a placed cell performs."""
        return self.target.cells[cell.cell]

    def part_counts(self) -> Counter:
        return Counter(p.part_id for p in self.parts)

    def cell_counts(self) -> Counter:
        return Counter(c.cell for c in self.cells)

    def support_counts(self) -> Counter:
        return Counter(s.part_id for s in self.support)

    def slots_available(self) -> int:
        return sum(self.target.parts[p.part_id].units() for p in self.parts)

    def slots_used(self) -> int:
        return len(self.cells) + len(self.contacts)

    def spare_slots(self) -> int:
        return self.slots_available() - self.slots_used()

    def pin_of(self, cell: CellInstance, pin: str) -> int | str:
        """Package pin (number, or terminal name) of ``pin`` of ``cell``."""
        pd = self.target.parts[self.part(cell.part_ref).part_id]
        for s in pd.slots:
            if s.index == cell.slot:
                if pin in s.pins:
                    return s.pins[pin]
                break
        if pin in pd.shared_pins:
            return pd.shared_pins[pin]
        raise InternalError(f"{cell.part_ref} slot {cell.slot} has no pin {pin}")

    def support_nets(self, role: str) -> set:
        """Nets (rails left out) that a support part of ``role`` is on (``"pull-down"``: the loaded nets)."""
        return {n for s in self.support if s.role == role for n in s.nets if n not in SUPPLY_NETS}

    def nets(self) -> dict:
        """net -> sorted list of ``(ref, pin)`` it joins (supply pins included)."""
        out: dict = {}

        def add(net, ref, pin):
            if net is not None:
                out.setdefault(net, set()).add((ref, pin))

        for c in self.cells:
            for pin, net in c.pins.items():
                add(net, c.part_ref, self.pin_of(c, pin))
        for k in self.contacts:
            add(k.com, k.part_ref, f"COM{k.pole}")
            add(k.no, k.part_ref, f"NO{k.pole}")
            add(k.nc, k.part_ref, f"NC{k.pole}")
        for ref, net in self.coils.items():
            add(net, ref, "COIL+")
            add("GND", ref, "COIL-")
        for p in self.parts:
            pd = self.target.parts[p.part_id]
            for rail, pin in pd.supply_pins.items():
                add(rail, p.ref, pin)
        for t in self.ties:
            add(t.rail, t.part_ref, t.pin)
        for s in self.support:
            for i, net in enumerate(s.nets, 1):
                add(net, s.ref, i)
        return {n: sorted(v, key=lambda rp: (ref_key(rp[0]), str(rp[1]))) for n, v in sorted(out.items())}

    # -- logic view -------------------------------------------------------
    def to_netlist(self) -> Netlist:
        """The build as logic, for the prover.

        Gate cells become logic nodes with their catalog functions; storage
        cells become storage elements.  Relay builds turn their contact
        networks back into logic with :func:`mapper.relay_logic.contact_logic`.
        """
        n = Netlist(f"{self.design}@{self.target.name}")
        for i in self.inputs:
            n.add_input(i)
        cells = self.target.cells
        # storage built from gates: one storage element per group.  The loop of
        # gates inside is a fixed textbook template, checked on its own by
        # tests/fit/test_storage.py with a settling simulation.
        for g in self.storage_groups.values():
            n.add_storage(g.q, g.d, g.kind, g.control, g.init)
        # feedback loops kept as gates: the cell driving the cut net is read as driving its excitation
        cut = {g.q: g.d for g in self.storage_groups.values() if g.kind == "as"}
        for c in self.cells:
            if c.group is not None:
                continue
            cd = cells[c.cell]
            if cd.block is not None:
                _block_logic(n, c, cd)
                continue
            if cd.storage is not None:
                d = c.pins[cd.inputs[0]]
                ctrl = c.pins.get(cd.inputs[1]) if len(cd.inputs) > 1 else None
                q = c.pins[cd.output]
                n.add_storage(q, d, cd.storage, ctrl or None, c.init)
                for extra in cd.extra_outputs:
                    if c.pins.get(extra):
                        n.add_logic(c.pins[extra], [q], Function.from_table(1, 0b01))
                continue
            fanins = [c.pins[p] for p in cd.inputs]
            out = c.pins[cd.output]
            n.add_logic(cut.get(out, out), fanins, cd.logic_function())
        if self.is_relay:
            contact_logic(self, n)
        for o in self.outputs:
            net = self.output_nets.get(o, o)
            if net != o:
                if o in n.nodes:
                    raise InternalError(f"output {o} is both a port and an internal net")
                n.add_logic(o, [net], Function.from_table(1, 0b10))
            n.add_output(o)
        used = {f for node in n.nodes.values() for f in node.fanins}
        for rail, value in (("VCC", 1), ("GND", 0)):
            if rail not in n.nodes and rail in used:
                n.add_constant(rail, value)
        return n

    def hints(self) -> dict:
        """design net -> build net believed equal (for the prover)."""
        h = {}
        cut = {g.q: g.d for g in self.storage_groups.values() if g.kind == "as"}
        for c in self.cells:
            if c.origin is not None:
                cd = self.target.cells[c.cell]
                out = c.pins[cd.output]
                h[c.origin] = cut.get(out, out)
        return h

    def cost(self) -> tuple[float, str]:
        """Price of every part and support part: ``(total, currency)``."""
        total = 0.0
        currency = ""
        for pid, count in list(self.part_counts().items()) + list(self.support_counts().items()):
            pd = self.target.parts[pid]
            if pd.price is not None:
                total += pd.price.value * count
                currency = currency or pd.currency
        return round(total, 4), currency


def _block_logic(n: Netlist, c: CellInstance, cd: CellDef) -> None:
    """A block cell as logic: a node per assignment, and per register a storage element fed by a node of
    its next value.  Signals no pin shows are named ``<cell>/<signal>``.  A register's clear must be held
    inactive: the logic has no way to empty storage at once (the matcher never wires it).  A register that
    holds no storage element is spare (the far end of a shift register used in part): it and what reads it
    are left out, and a wired output or a used register that reads it is an error."""
    blk = cd.block
    assert blk is not None
    net: dict = {p: c.pins.get(p) for p in cd.inputs}
    spare = {r.name for r in blk.registers if r.name not in c.state}
    for r in blk.registers:
        if r.name in spare:
            continue
        net[r.name] = c.state[r.name][0]
        if r.clear is not None:
            idle = "VCC" if r.clear in cd.active_low else "GND"
            if net.get(r.clear) != idle:
                raise InternalError(f"{c.name}: the clear {r.clear} of {cd.name} is not held at {idle}")
    missing = [p for p in cd.inputs if net.get(p) is None]
    if missing:
        raise InternalError(f"{c.name}: input {', '.join(missing)} of {cd.name} is not wired")
    for sig, expr in blk.assigns:
        out = c.pins.get(sig) if sig in cd.outputs else None
        if spare & set(expr.names):
            if out:
                raise InternalError(f"{c.name}: output {sig} of {cd.name} reads a spare register")
            spare.add(sig)
            continue
        net[sig] = out or f"{c.name}/{sig}"
        names = list(expr.names)
        n.add_logic(net[sig], [net[x] for x in names], Function.from_table(len(names), expr.table(names)))
    for r in blk.registers:
        if r.name in spare:
            continue
        names = list(r.next.names)
        if spare & set(names):
            raise InternalError(f"{c.name}: register {r.name} of {cd.name} reads a spare register")
        d = f"{c.name}/{r.name}.next"
        n.add_logic(d, [net[x] for x in names], Function.from_table(len(names), r.next.table(names)))
        n.add_storage(net[r.name], d, blk.kind or "re", net[r.clock], c.state[r.name][1])
        pin_net = c.pins.get(r.name)
        if pin_net is not None and pin_net != net[r.name]:
            n.add_logic(pin_net, [net[r.name]], Function.from_table(1, 0b10))


def ref_key(ref: str):
    """Sort key of a reference: ``U2`` before ``U10``, letters first."""
    head = ref.rstrip("0123456789")
    tail = ref[len(head):]
    return (head, int(tail) if tail else 0)
