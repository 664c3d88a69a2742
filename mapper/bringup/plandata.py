"""The data of a bring-up plan, shared by the plans of builds with and without storage.

:class:`Plan` (what :func:`mapper.bringup.plan.make_plan` returns), the place a person checks for a fault
(:func:`place_of`), and the choice of probe points (:func:`candidates`, :func:`choose_probes`).
"""
from __future__ import annotations

from dataclasses import dataclass, field

from ..build import SUPPLY_NETS, Build
from .faults import Fault, FaultList

__all__ = ["Plan", "place_of", "candidates", "choose_probes", "PROBES", "PROBE_CANDIDATES"]

#: probe points offered per setting
PROBES = 3
#: nets scored as probe points at most (spread evenly over the nets by name)
PROBE_CANDIDATES = 200


@dataclass
class Plan:
    """A build's bring-up plan (see the module docstring).

    ``settings[p]`` is a tuple of input levels in ``inputs`` order;
    ``expected[p]`` the output levels in ``outputs`` order (``None``: not known yet, storage built of
    gates just after power-on); ``probes[p]`` a
    list of ``(net, ref, pin, level, splits)``: the net, the part pin that
    drives it, its expected level, and how many of the setting's suspects a
    wrong reading there points at.  ``signature[k]`` is the set of
    ``(setting, output index)`` at which class ``k`` reads wrong.
    """

    build: Build
    faults: FaultList
    inputs: list
    outputs: list
    settings: list
    expected: list
    probes: list
    signature: list
    detected: list
    undetectable: list
    unresolved: list
    methods: list = field(default_factory=list)
    #: sequential plans: the sequences (lists of input tuples); ``settings`` then holds every step in order
    sequences: list = field(default_factory=list)
    #: sequential plans: ``(sequence, step)`` of each entry of ``settings`` (both 0-based)
    steps: list = field(default_factory=list)
    #: sequential plans: ``(level, how the builder sets it)`` per flip-flop, before every sequence
    start: list = field(default_factory=list)
    #: sequential plans: the clock inputs, pulsed once after each step
    clocks: list = field(default_factory=list)
    #: sequential plans: classes no sequence of up to ``bound`` steps detects (not covered, not redundant)
    beyond: list = field(default_factory=list)
    bound: int = 0

    @property
    def sequential(self) -> bool:
        """Whether the plan is sequences of clocked steps."""
        return bool(self.clocks)

    @property
    def total(self) -> int:
        """Modelled faults before collapsing."""
        return len(self.faults.faults)

    @property
    def classes(self) -> int:
        """Classes of equivalent faults (what is left after collapsing)."""
        return len(self.faults.classes)

    @property
    def detectable(self) -> int:
        """Classes some setting can detect: every class not proved undetectable (sequential plans: and
        not shown undetectable within the bound of clock steps)."""
        return self.classes - len(self.undetectable) - len(self.beyond)

    def places(self, k: int) -> list:
        """The places to check for class ``k``: every pin or net of its faults, in plain words."""
        return list(dict.fromkeys(place_of(self.faults.faults[i]) for i in self.faults.classes[k]))

    def suspects(self, p: int, o: int) -> list:
        """Classes whose builds read output ``o`` wrong under setting ``p``."""
        return [k for k, sig in enumerate(self.signature) if (p, o) in sig]


def place_of(f: Fault) -> str:
    """Where a person looks for fault ``f``: ``U3 pin 5`` (the wire into that pin), ``net N11``,
    ``K2 coil`` or ``K2 contact NO1``."""
    if f.kind == "pin":
        return f"{f.ref} pin {f.pin}"
    if f.kind == "coil":
        return f"{f.ref} coil"
    if f.kind == "contact":
        return f"{f.ref} contact {f.side}{f.pole}"
    return f"net {f.net}"


def candidates(engine) -> list:
    """Net ids worth probing: driven inside the build, neither an input, an output nor a rail."""
    c = engine.circ
    outs = {n for _, n in c.outputs} | set(c.inputs)
    inside = range(len(c.nets)) if engine.relay else c.driver
    nets = sorted((c.nets[n], n) for n in inside if n not in outs and c.nets[n] not in SUPPLY_NETS)
    if len(nets) > PROBE_CANDIDATES:
        step = len(nets) / PROBE_CANDIDATES
        nets = [nets[int(i * step)] for i in range(PROBE_CANDIDATES)]
    return [n for _, n in nets]


def choose_probes(engine, cands: list, counts: dict, sizes: list, levels: list) -> list:
    """Up to :data:`PROBES` probe points per setting: the nets whose wrong reading splits its ``sizes[p]``
    suspects most evenly (``counts[n][p]`` of them read wrong at net ``n``; ``levels[p][i]`` is the good
    level of ``cands[i]``)."""
    c = engine.circ
    b = engine.b
    drivers: dict = {}
    for cell in b.cells:
        cd = b.cell_def(cell)
        drivers.setdefault(cell.pins[cd.output], (cell.part_ref, b.pin_of(cell, cd.output)))
    if engine.relay:   # a relay net has no one driver: the first contact terminal on it
        for net, pins in b.nets().items():
            for ref, pin in pins:
                if str(pin).startswith(("COM", "NO", "NC")):
                    drivers.setdefault(net, (ref, pin))
                    break
    at = {n: i for i, n in enumerate(cands)}
    out = []
    for p in range(len(sizes)):
        scored = sorted(((min(counts[n][p], sizes[p] - counts[n][p]), c.nets[n], n) for n in cands
                         if counts[n][p]), key=lambda t: (-t[0], t[1]))
        chosen = []
        for _, name, n in scored[:PROBES]:
            ref, pin = drivers.get(name, ("", ""))
            chosen.append((name, ref, pin, levels[p][at[n]], counts[n][p]))
        out.append(chosen)
    return out
