"""The wiring faults of a build as wired, and which of them are the same fault.

Faults modelled (one at a time, on the build exactly as its wiring list
has it):

* **pins** -- every input pin of every used section of a chip stuck at 0 and
  at 1.  A missing or broken wire leaves the pin open, and what an open pin
  reads is the catalog's ``open-input`` of its part (high for LS, either
  level for HC, which is why both faults are kept); a pin tied to a rail is
  faulted only to the other level (stuck at its own rail it is no fault).
* **nets** -- every net driven by a section or an input, stuck at 0 and at
  1 (an output pin bent under its chip, a net touching a rail).  On relay
  builds "stuck at 0" is a net that nothing powers (every wire of it
  loose), "stuck at 1" a net joined to the supply -- which also feeds power
  backwards through the contacts it touches.
* **relays** -- a coil that is never energized (its wire missing: an open
  coil reads as released, says the catalog) or always energized, and each
  used contact of each pole that never closes (a terminal wire missing, a
  dirty contact) or never opens (welded).
Not modelled: supply pins (a chip without supply is checked first, with a
meter, in the procedure), coil diodes, decoupling capacitors and pull-down
resistors (no effect on the levels), and the tied inputs of unused sections.

Equivalent faults -- faults no setting can tell apart because the faulty
builds compute the same thing -- are merged by the structural rules of
textbook practice (equivalence collapsing, e.g. Abramovici, Breuer and
Friedman, *Digital Systems Testing and Testable Design*, 1990): a net with a
single pin on it is one line with that pin; an input pin of a gate at its
controlling value is the gate's output stuck at the value it forces.
On relay builds a relay fed by its own net alone is its coil, and a relay
with one used contact is that contact.

Edge-triggered flip-flop chips (gate builds): their data, clock, preset and
clear pins are pins as above, and their Q and Q-bar nets are nets as above.
A clock pin stuck at 0 and stuck at 1 are one fault -- the flip-flop never
sees an edge and keeps its start level -- and so are a clock net read by
clock pins only stuck at 0 and at 1.  Storage built of gates is gates:
its pins and nets are faulted as any others.  Latch chips and relay
storage are not modelled yet.
"""
from __future__ import annotations

from dataclasses import dataclass, field

from ..build import SUPPLY_NETS, Build
from ..errors import InternalError
from ..logic.function import var_mask

__all__ = ["Fault", "FaultList", "fault_list"]


@dataclass(frozen=True)
class Fault:
    """One fault: ``kind`` (``pin``, ``net``, ``coil``, ``contact``) and ``value``.

    ``value`` is the level a pin or net is stuck at; for a coil 0 never
    energized, 1 always; for a contact 0 never closes, 1 never opens.
    ``open`` says the fault is also what a missing wire does there (the
    catalog's open-input level of the part, or of every part on a net).
    """

    kind: str
    value: int
    net: str
    ref: str = ""
    pin: int | str = ""
    name: str = ""
    open: bool = False
    pole: int = 0
    side: str = ""

    @property
    def key(self) -> str:
        """A stable short name: ``U1-2/0`` (pin 2 of U1 stuck at 0), ``net N11/1``."""
        if self.kind == "pin":
            return f"{self.ref}-{self.pin}/{self.value}"
        if self.kind == "coil":
            return f"{self.ref} coil/{self.value}"
        if self.kind == "contact":
            return f"{self.ref}-{self.side}{self.pole}/{self.value}"
        return f"net {self.net}/{self.value}"

    @property
    def label(self) -> str:
        """The fault in plain words."""
        if self.kind == "pin":
            return f"{self.ref} pin {self.pin} ({self.name}, net {self.net}) stuck at {self.value}"
        if self.kind == "coil":
            return f"{self.ref} never operates (coil never energized)" if self.value == 0 else \
                f"{self.ref} always operated (coil always energized)"
        if self.kind == "contact":
            what = "never closes" if self.value == 0 else "never opens"
            return f"{self.ref} pole {self.pole} {self.side} contact {what}"
        return f"net {self.net} stuck at {self.value}"


@dataclass
class FaultList:
    """Every modelled fault, and its class of equivalent faults (the first of a class stands for it)."""

    faults: list
    classes: list = field(default_factory=list)     # lists of fault indices, the representative first
    rep_of: list = field(default_factory=list)      # fault index -> class index
    #: what was left out of the model and why, counted
    left_out: dict = field(default_factory=dict)

    @property
    def representatives(self) -> list:
        return [self.faults[c[0]] for c in self.classes]


class _Union:
    def __init__(self, n: int):
        self.p = list(range(n))

    def find(self, a: int) -> int:
        while self.p[a] != a:
            self.p[a] = self.p[self.p[a]]
            a = self.p[a]
        return a

    def join(self, a: int, b: int) -> None:
        a, b = self.find(a), self.find(b)
        if a != b:
            self.p[max(a, b)] = min(a, b)


def fault_list(b: Build) -> FaultList:
    """The modelled faults of ``b`` and their classes (see the module docstring)."""
    if b.latches or b.sequencers:
        raise InternalError("faults of relay builds with storage are not modelled yet")
    faults, joins, left = _relay_faults(b) if b.is_relay else _gate_faults(b)
    where = {f.key: i for i, f in enumerate(faults)}
    u = _Union(len(faults))
    for x, y in joins:
        # a rule may name a fault the list leaves out (a pin stuck at its own rail): nothing to join then
        if x in where and y in where:
            u.join(where[x], where[y])
    groups: dict = {}
    for i in range(len(faults)):
        groups.setdefault(u.find(i), []).append(i)
    classes = [groups[r] for r in sorted(groups)]
    rep_of = [0] * len(faults)
    for k, members in enumerate(classes):
        for i in members:
            rep_of[i] = k
    return FaultList(faults, classes, rep_of, left)


# -- gate builds --------------------------------------------------------------------------------------
def _gate_faults(b: Build) -> tuple:
    faults: list = []
    joins: list = []
    readers: dict = {}
    shared: set = set()
    outputs = {b.output_nets.get(o, o) for o in b.outputs}
    for c in b.cells:
        cd = b.cell_def(c)
        pd = b.part_def(c.part_ref)
        levels = pd.open_input.levels if pd.open_input is not None else ()
        for name in cd.inputs:
            net = c.pins[name]
            number = b.pin_of(c, name)
            if (c.part_ref, number) in shared:
                continue   # a pin the sections of a chip share (the selects of a '153): listed once
            shared.add((c.part_ref, number))
            for v in (0, 1):
                if net in SUPPLY_NETS and v == (1 if net == "VCC" else 0):
                    continue   # stuck at its own rail: no fault
                faults.append(Fault("pin", v, net, c.part_ref, number, name, open=v in levels))
            readers.setdefault(net, []).append((c, name, number, levels))
    driven = list(b.inputs) + [c.pins[p] for c in b.cells for p in b.cell_def(c).outputs if c.pins.get(p)]
    for net in dict.fromkeys(driven):
        if net in SUPPLY_NETS:
            continue
        loads = readers.get(net, [])
        common = set.intersection(*(set(x[3]) for x in loads)) if loads else set()
        for v in (0, 1):
            faults.append(Fault("net", v, net, open=v in common))
        if len(loads) == 1 and net not in outputs:
            c, name, number, _ = loads[0]
            for v in (0, 1):
                joins.append((f"net {net}/{v}", f"{c.part_ref}-{number}/{v}"))
    joins += _clock_joins(b, readers)
    for c in b.cells:
        cd = b.cell_def(c)
        if cd.storage is not None or cd.block is not None:
            continue   # a block of several outputs: its pins are not merged with one output
        out = c.pins[cd.output]
        for _j, name, v, k in _controlling(cd.logic_function(), cd.inputs, c.pins):
            joins.append((f"{c.part_ref}-{b.pin_of(c, name)}/{v}", f"net {out}/{k}"))
    used = {(c.part_ref, b.pin_of(c, p)) for c in b.cells for p in c.pins}
    unused_ties = sum(1 for t in b.ties if (t.part_ref, t.pin) not in used)
    left = {"supply pins": sum(len(b.part_def(p.ref).supply_pins) for p in b.parts),
            "tied inputs of unused sections": unused_ties,
            "support parts": len(b.support)}
    return faults, joins, left


def _clock_joins(b: Build, readers: dict) -> list:
    """A clock pin (or a net read by clock pins only) stuck at 0 is the same fault as stuck at 1: no edge."""
    joins = []
    clock_pins = set()
    for c in b.cells:
        cd = b.cell_def(c)
        for name in cd.inputs:
            if cd.storage == "re" and cd.roles.get(name) == "clock":
                number = b.pin_of(c, name)
                clock_pins.add((c.part_ref, name))
                joins.append((f"{c.part_ref}-{number}/0", f"{c.part_ref}-{number}/1"))
    for net, loads in readers.items():
        if loads and all((c.part_ref, name) in clock_pins for c, name, _, _ in loads):
            joins.append((f"net {net}/0", f"net {net}/1"))
    return joins


def _controlling(func, inputs, pins) -> list:
    """``(j, pin name, c, k)``: input ``j`` at value ``c`` forces the output to ``k`` (tied inputs at their rail)."""
    n = func.n
    if n > 16:
        return []
    t = func.table()
    full = (1 << (1 << n)) - 1
    fixed = full
    for j, name in enumerate(inputs):
        net = pins.get(name)
        if net == "VCC":
            fixed &= var_mask(n, j)
        elif net == "GND":
            fixed &= ~var_mask(n, j) & full
    out = []
    for j, name in enumerate(inputs):
        if pins.get(name) in SUPPLY_NETS:
            continue
        for c in (0, 1):
            sel = fixed & (var_mask(n, j) if c else ~var_mask(n, j) & full)
            if not sel:
                continue
            vals = t & sel
            if vals == 0:
                out.append((j, name, c, 0))
            elif vals == sel:
                out.append((j, name, c, 1))
    return out


# -- relay builds (without storage) ---------------------------------------------------------------------
def _relay_faults(b: Build) -> tuple:
    faults: list = []
    open_levels = {}
    for p in b.parts:
        pd = b.part_def(p.ref)
        open_levels[p.ref] = pd.open_input.levels if pd.open_input is not None else ()
    poles: dict = {}
    for k in b.contacts:
        poles.setdefault(k.part_ref, []).append(k)
    nets: dict = dict.fromkeys(b.inputs)
    for k in b.contacts:
        nets.update(dict.fromkeys(n for n in (k.com, k.no, k.nc) if n is not None))
    nets.update(dict.fromkeys(b.coils.values()))
    for net in nets:
        if net not in SUPPLY_NETS:
            faults += [Fault("net", v, net, open=v == 0) for v in (0, 1)]
    for p in b.parts:
        coil = b.coils.get(p.ref)
        if coil is None:
            continue
        faults += [Fault("coil", v, coil, p.ref, "COIL+", open=v in open_levels[p.ref]) for v in (0, 1)]
        for k in sorted(poles.get(p.ref, []), key=lambda k: k.pole):
            for side, other in (("NO", k.no), ("NC", k.nc)):
                if other is not None:
                    faults += [Fault("contact", v, k.com, p.ref, f"{side}{k.pole}", pole=k.pole, side=side,
                                     open=v == 0) for v in (0, 1)]
    left = {"coil diodes": sum(1 for s in b.support if s.role == "coil-diode"),
            "pull-down resistors": sum(1 for s in b.support if s.role == "pull-down")}
    return faults, _relay_joins(b, poles), left


def _relay_joins(b: Build, poles: dict) -> list:
    """The structural equivalences of relay faults (see the module docstring), as pairs of keys."""
    joins = []
    read: dict = {}
    for k in b.contacts:   # a net on any contact terminal carries power on: never merged with the coil
        for n in (k.com, k.no, k.nc):
            if n is not None:
                read[n] = read.get(n, 0) + 1
    outputs = {b.output_nets.get(o, o) for o in b.outputs}
    users: dict = {}
    for ref, n in b.coils.items():
        users.setdefault(n, []).append(ref)
    for net, refs in users.items():
        if len(refs) != 1 or read.get(net) or net in outputs:
            continue
        # a net that only feeds one coil: never powered is the coil never energized
        joins.append((f"net {net}/0", f"{refs[0]} coil/0"))
        if net in b.inputs:   # an input is a source: joined to the supply it feeds nothing backwards
            joins.append((f"net {net}/1", f"{refs[0]} coil/1"))
    for ref, ks in poles.items():
        if len(ks) != 1:
            continue
        k = ks[0]
        if k.nc is None and k.no is not None:   # the one make contact follows the coil
            joins += [(f"{ref}-NO{k.pole}/0", f"{ref} coil/0"), (f"{ref}-NO{k.pole}/1", f"{ref} coil/1")]
        elif k.no is None and k.nc is not None:   # the one break contact follows the coil inverted
            joins += [(f"{ref}-NC{k.pole}/0", f"{ref} coil/1"), (f"{ref}-NC{k.pole}/1", f"{ref} coil/0")]
    return joins
