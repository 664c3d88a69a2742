"""Finding a short list of sequences that detects the faults of a gate build with flip-flops.

1. *Random sequences*: :data:`BATCH` random sequences of
   :func:`random_length` steps each are simulated against every fault still
   undetected (sequential fault simulation with fault dropping, textbook
   practice), while a batch still finds new faults.
2. *Time-frame expansion*: every fault left goes to
   :class:`mapper.bringup.unroll.SequenceSolver`, which finds a shortest
   sequence of at most ``bound`` steps, proves the fault undetectable, or
   says no sequence within the bound detects it.  Each sequence found is
   simulated against the faults still left.
3. *Compaction*: every sequence kept is simulated against every detected
   fault; a greedy cover picks sequences (most new faults first), any
   sequence whose faults the others detect is dropped (reverse order), and
   each sequence left is cut after the last step at which it is the first
   to show one of its faults (the steps after it add nothing).
"""
from __future__ import annotations

import random

from ..errors import UsageError
from .atpg import FOUND, UNDETECTABLE
from .generate import Outcome, choose_cover, covers_of, keep_first_hits, keep_solved
from .seqengine import SeqEngine, SeqRun
from .unroll import BEYOND, SequenceSolver

__all__ = ["sequential", "compact_sequences", "random_length", "default_bound", "BATCH"]

#: random sequences simulated together
BATCH = 32
#: random batches at most (the phase stops earlier once a batch finds nothing new)
MAX_BATCHES = 16


def default_bound(flops: int) -> int:
    """Clock steps the solver unrolls at most: enough to count a 4-bit counter through half its states
    and beyond, kept small so a bring-up stays a short list."""
    return min(24, 2 * flops + 8)


def random_length(flops: int) -> int:
    """Steps of each random sequence."""
    return min(64, 4 * flops + 8)


def sequential(engine: SeqEngine, faults: list, seed: int = 0, bound: int | None = None) -> Outcome:
    """Sequences for a gate build with flip-flops (see the module docstring).

    ``out.settings`` holds the sequences (lists of input tuples);
    ``out.unresolved`` the faults left by the solver's budget, and
    ``out.stats["beyond"]`` the faults no sequence within the bound detects.
    """
    out = Outcome()
    flops = len(engine.circ.flops) or len(engine.b.storage_groups)
    bound = default_bound(flops) if bound is None else bound
    length = random_length(flops)
    n = len(engine.inputs)
    rng = random.Random(seed)
    left = list(range(len(faults)))
    tried = 0
    for _ in range(MAX_BATCHES):
        if not left:
            break
        batch = [[tuple(rng.getrandbits(1) for _ in range(n)) for _ in range(length)]
                 for _ in range(BATCH if n else 1)]
        tried += len(batch)
        run = engine.run(batch, [faults[f] for f in left])
        if engine.loops and tried == len(batch) and all(v is None for seq in run.good for st in seq for v in st):
            raise UsageError("bring-up sequences for this build are not made yet: its storage is built of gates, "
                             "with no preset or clear, and no input sequence tried brings it to a known state "
                             "from power-on (the design has no reset input); build it with flip-flop chips "
                             "(gates-74) for a bring-up list")
        kept, left = keep_first_hits(run, left, batch, out)
        if not kept or not n:
            break
    out.methods.append(f"{tried} random sequence(s) of {length} clock steps simulated against the faults still "
                       f"undetected ({len(out.settings)} kept)")
    out.stats.update(random_sequences=tried, bound=0 if engine.loops else bound, beyond=[])
    if left and engine.loops:
        out.unresolved = left
        out.methods.append(f"{len(left)} fault(s) left unresolved: the solver does not unroll storage built of "
                           "gates yet")
    elif left:
        _unrolled(engine, faults, left, out, bound, rng)
    return out


def _unrolled(engine: SeqEngine, faults: list, left: list, out: Outcome, bound: int, rng: random.Random) -> None:
    solver = SequenceSolver(engine.circ, [v for v, _ in engine.start],
                            [engine.circ.index[x] for x in engine.inputs])
    found = proved = beyond = unknown = 0
    left.reverse()
    while left:
        f = left.pop()
        kind, seq = solver.test(engine.site(faults[f]), faults[f].value, bound)
        if kind == UNDETECTABLE:
            out.undetectable.append(f)
            proved += 1
            continue
        if kind == BEYOND:
            out.stats["beyond"].append(f)
            beyond += 1
            continue
        if kind != FOUND:
            out.unresolved.append(f)
            unknown += 1
            continue
        found += 1
        keep_solved(engine, faults, out, f, left, seq, "sequence")
    out.methods.append(
        f"time-frame expansion with satisfiability (iterative logic array, Bushnell and Agrawal 2000 ch. 8; "
        f"Larrabee 1992), up to {bound} clock steps: {found} sequence(s) found, {proved} fault(s) proved "
        f"undetectable, {beyond} not detected by any sequence of up to {bound} steps"
        + (f", {unknown} left unresolved within the solver's budget" if unknown else ""))
    out.stats.update(solver_found=found, solver_proved=proved, solver_beyond=beyond, solver_unknown=unknown)


def compact_sequences(engine: SeqEngine, faults: list, out: Outcome) -> tuple:
    """``(sequences, run)``: a short list cut from ``out.settings`` detecting every fault ``out`` detects.

    ``run`` is the simulation of the chosen sequences against every fault (no dropping), for the dictionary.
    """
    targets = sorted(out.detects)
    if not targets:
        return [], engine.run([], faults)
    run = engine.run(out.settings, [faults[f] for f in targets])
    covers = covers_of(run, targets)
    chosen = choose_cover(covers, targets, lambda q: len(out.settings[q]))
    # each fault is owed to the first chosen sequence that shows it; a sequence is cut after its last such step
    at = {f: k for k, f in enumerate(targets)}
    end = {p: 0 for p in chosen}
    for f in targets:
        p = next(q for q in chosen if f in covers[q])
        first = run.first(at[f], p)
        assert first is not None
        end[p] = max(end[p], first + 1)
    sequences = [list(out.settings[p][:end[p]]) for p in chosen]
    final = engine.run(sequences, faults)
    return sequences, final


def flatten(sequences: list, run: SeqRun) -> tuple:
    """``(steps, expected, signature)``: the steps in order as ``(sequence, step)``, the expected outputs of
    each, and per fault the set of ``(step index, output)`` it reads wrong at."""
    steps = [(p, t) for p, s in enumerate(sequences) for t in range(len(s))]
    where = {st: q for q, st in enumerate(steps)}
    expected = [tuple(run.good[p][t]) for p, t in steps]
    signature = [frozenset((where[(p, t)], o) for p, obs in enumerate(per) for t, o in obs) for per in run.fails]
    return steps, expected, signature
