"""The wiring faults of a build as wired, and which of them are the same fault.

Faults modelled (one at a time, on the build exactly as its wiring list
has it):

* **pins** -- every input pin of every used section of a chip stuck at 0 and
  at 1.  A missing or broken wire leaves the pin open, and what an open pin
  reads is the catalog's ``open-input`` of its part (high for LS, either
  level for HC, which is why both faults are kept); a pin tied to a rail is
  faulted only to the other level (stuck at its own rail it is no fault).
* **nets** -- every net driven by a section or an input, stuck at 0 and at
  1 (an output pin bent under its chip, a net touching a rail).
Not modelled: supply pins (a chip without supply is checked first, with a
meter, in the procedure), coil diodes, decoupling capacitors and pull-down
resistors (no effect on the levels), and the tied inputs of unused sections.

Equivalent faults -- faults no setting can tell apart because the faulty
builds compute the same thing -- are merged by the structural rules of
textbook practice (equivalence collapsing, e.g. Abramovici, Breuer and
Friedman, *Digital Systems Testing and Testable Design*, 1990): a net with a
single pin on it is one line with that pin; an input pin of a gate at its
controlling value is the gate's output stuck at the value it forces.
Relay builds and builds with storage are not modelled yet.
"""
from __future__ import annotations

from dataclasses import dataclass, field

from ..build import SUPPLY_NETS, Build
from ..errors import InternalError
from ..logic.function import var_mask

__all__ = ["Fault", "FaultList", "fault_list"]


@dataclass(frozen=True)
class Fault:
    """One fault: ``kind`` (``pin`` or ``net``) and ``value``, the level it is stuck at.

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

    @property
    def key(self) -> str:
        """A stable short name: ``U1-2/0`` (pin 2 of U1 stuck at 0), ``net N11/1``."""
        if self.kind == "pin":
            return f"{self.ref}-{self.pin}/{self.value}"
        return f"net {self.net}/{self.value}"

    @property
    def label(self) -> str:
        """The fault in plain words."""
        if self.kind == "pin":
            return f"{self.ref} pin {self.pin} ({self.name}, net {self.net}) stuck at {self.value}"
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
    if b.is_relay:
        raise InternalError("faults of relay builds are not modelled yet")
    faults, joins, left = _gate_faults(b)
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
    outputs = {b.output_nets.get(o, o) for o in b.outputs}
    for c in b.cells:
        cd = b.cell_def(c)
        pd = b.part_def(c.part_ref)
        levels = pd.open_input.levels if pd.open_input is not None else ()
        for name in cd.inputs:
            net = c.pins[name]
            number = b.pin_of(c, name)
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
            faults.append(Fault("net", v, net, open=common == {v}))
        if len(loads) == 1 and net not in outputs:
            c, name, number, _ = loads[0]
            for v in (0, 1):
                joins.append((f"net {net}/{v}", f"{c.part_ref}-{number}/{v}"))
    for c in b.cells:
        cd = b.cell_def(c)
        if cd.storage is not None:
            continue
        out = c.pins[cd.output]
        for _j, name, v, k in _controlling(cd.logic_function(), cd.inputs, c.pins):
            joins.append((f"{c.part_ref}-{b.pin_of(c, name)}/{v}", f"net {out}/{k}"))
    used = {(c.part_ref, b.pin_of(c, p)) for c in b.cells for p in c.pins}
    unused_ties = sum(1 for t in b.ties if (t.part_ref, t.pin) not in used)
    left = {"supply pins": sum(len(b.part_def(p.ref).supply_pins) for p in b.parts),
            "tied inputs of unused sections": unused_ties,
            "support parts": len(b.support)}
    return faults, joins, left


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
