"""The bring-up plan of a build: faults, settings, what to check, and the diagnosis table.

:func:`make_plan` puts the steps together for a gate build without storage:

1. the faults of the build as wired, collapsed (:mod:`mapper.bringup.faults`);
2. settings that detect every detectable class (:mod:`mapper.bringup.generate`),
   compacted;
3. the expected level of every output under each setting, and up to
   :data:`PROBES` *probe points* per setting: driven nets whose level splits
   the suspects of that setting most evenly (each ranked on its own);
4. the fault dictionary: for every class, which (setting, output) reads
   wrong (its *signature*), reduced to the places a person checks -- a pin
   of a part (the wire into it) or a whole net (every wire of it).

Gate builds with edge-triggered flip-flop chips get *sequences* instead of
settings (:mod:`mapper.bringup.seqplan`): each starts from a state the
builder sets with the flip-flops' preset and clear pins, and each step is
"set the inputs, read the outputs, give one clock pulse".  Builds whose
flip-flops are built of gates start from power-on instead, in an unknown
state, and an expected level is ``None`` until the steps make it known.
The steps of all sequences are numbered in order, and everything above
(expected outputs, probe points, signatures, the diagnosis) is per step.
Latch chips, relay storage and medium-scale chips with registers are
refused with a plain message.
"""
from __future__ import annotations

from dataclasses import dataclass, field

from ..build import SUPPLY_NETS, Build
from ..errors import InternalError, UsageError
from .engine import Engine, Run
from .faults import Fault, FaultList, fault_list
from .generate import combinational, compact

__all__ = ["Plan", "make_plan", "place_of", "diagnose", "choose_probes", "candidates", "PROBES", "PROBE_CANDIDATES"]

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


def make_plan(b: Build, seed: int = 0, bound: int | None = None) -> Plan:
    """The bring-up plan of build ``b`` (:class:`UsageError` for builds it cannot make one for).

    ``bound`` caps the clock steps the solver unrolls for a sequential build
    (default :func:`mapper.bringup.sequences.default_bound`).
    """
    if b.latches or b.sequencers:
        raise UsageError("bring-up lists for relay builds with storage are not made yet: relay builds without "
                         "storage only")
    if any(getattr(b.cell_def(c).block, "registers", ()) for c in b.cells):
        raise UsageError("bring-up lists for builds with medium-scale chips that hold state (counters, shift "
                         "registers) are not made yet: build on a target without them (gates-74) for a bring-up "
                         "list")
    if b.storage_groups or any(b.cell_def(c).storage is not None for c in b.cells):
        from .seqplan import sequential_plan
        return sequential_plan(b, seed, bound)
    fl = fault_list(b)
    engine = Engine(b)
    reps = fl.representatives
    out = combinational(engine, reps, seed=seed)
    settings, run = compact(engine, reps, out)
    signature = [frozenset((p, o) for p, obs in enumerate(run.fails[k]) for o in obs) for k in range(len(reps))]
    detected = [k for k, s in enumerate(signature) if s]
    missing = set(out.detects) - set(detected)
    if missing:
        raise InternalError(f"compaction lost {len(missing)} detected fault class(es) -- a bug in netfit")
    plan = Plan(b, fl, list(b.inputs), list(b.outputs), settings, run.good, [], signature, detected,
                sorted(out.undetectable), sorted(out.unresolved), out.methods)
    plan.probes = _probes(engine, reps, settings, run)
    return plan


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


def _probes(engine: Engine, reps: list, settings: list, run: Run) -> list:
    """Up to :data:`PROBES` probe points per setting (see the module docstring)."""
    P = len(settings)
    if not P:
        return []
    cands = candidates(engine)
    counts = {n: [0] * P for n in cands}
    sizes = [0] * P
    level: dict = {}
    pm = (1 << P) - 1
    for lo, count, m, rep in engine.blocks(settings, reps):
        width = P * (count + 1)
        # suspects of setting p in this block: the machines of faults that read some output wrong under p
        bits = [["0"] * width for _ in range(P)]
        for k in range(count):
            for p, obs in enumerate(run.fails[lo + k]):
                if obs:
                    bits[p][width - 1 - (P * (k + 1) + p)] = "1"
                    sizes[p] += 1
        masks = [int("".join(row), 2) for row in bits]
        for n in cands:
            h, l = m.value(n)
            gh, gl = h & pm, l & pm
            if lo == 0:
                level[n] = gh
            diff = (gh * rep & l) | (gl * rep & h)
            row = counts[n]
            for p in range(P):
                if masks[p]:
                    row[p] += (diff & masks[p]).bit_count()
    return choose_probes(engine, cands, counts, sizes, [[level[n] >> p & 1 for n in cands] for p in range(P)])


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


def diagnose(plan: Plan, observed) -> list:
    """The places to check, best first, for the failing observations ``observed`` (``(setting, output)`` pairs).

    Classes whose signature equals ``observed`` come first (a full-response
    fault dictionary); when none does (more than one fault, or a fault
    outside the model) the classes are ranked by how many observations they
    explain less how many they predict wrongly.
    """
    seen = frozenset(observed)
    if not seen:
        return []
    exact = [k for k, s in enumerate(plan.signature) if s == seen]
    if exact:
        ranked = exact
    else:
        score = [(len(s & seen) - len(s ^ seen), k) for k, s in enumerate(plan.signature) if s & seen]
        ranked = [k for _, k in sorted(score, key=lambda t: (-t[0], t[1]))]
    return list(dict.fromkeys(place for k in ranked for place in plan.places(k)))
