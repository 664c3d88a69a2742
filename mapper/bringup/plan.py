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
from ..build import Build
from ..errors import InternalError, UsageError
from .engine import Engine, Run
from .faults import fault_list
from .generate import combinational, compact
from .plandata import PROBE_CANDIDATES, PROBES, Plan, candidates, choose_probes, place_of
from .seqplan import sequential_plan

__all__ = ["Plan", "make_plan", "place_of", "diagnose", "choose_probes", "candidates", "PROBES", "PROBE_CANDIDATES"]


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
