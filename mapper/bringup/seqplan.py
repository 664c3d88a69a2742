"""The bring-up plan of a gate build with edge-triggered flip-flop chips: sequences of clocked steps.

Assumed, and said in every report: before each sequence the builder sets
every flip-flop chip to its start level with its preset or clear pin
(:func:`mapper.bringup.seqengine.start_state`); the power-on state is never
relied on.  Flip-flops built of gates have no such pins: their sequences
start from power-on, every net unknown, and only levels the steps make
known are expected (the solver does not unroll them: faults random
sequences miss are left unresolved).  Each step then is: set the inputs (clock inputs low), read the
outputs against the expected levels, give every clock input one pulse
(low, high, low).  Faults: every pin of every section (the flip-flops' data,
clock, preset and clear pins included) and every net (Q and Q-bar too),
stuck at 0 and at 1 (:mod:`mapper.bringup.faults`).  Sequences:
:mod:`mapper.bringup.sequences`.
"""
from __future__ import annotations

from ..build import Build
from ..errors import InternalError
from .faults import fault_list
from .plandata import PROBE_CANDIDATES, Plan, candidates, choose_probes
from .seqengine import SeqEngine, SeqRun
from .sequences import compact_sequences, flatten, sequential

__all__ = ["sequential_plan"]


def sequential_plan(b: Build, seed: int = 0, bound: int | None = None) -> Plan:
    """The plan of gate build ``b`` with flip-flops (see the module docstring)."""
    engine = SeqEngine(b)
    fl = fault_list(b)
    reps = fl.representatives
    out = sequential(engine, reps, seed=seed, bound=bound)
    sequences, run = compact_sequences(engine, reps, out)
    steps, expected, signature = flatten(sequences, run)
    detected = [k for k, s in enumerate(signature) if s]
    missing = set(out.detects) - set(detected)
    if missing:
        raise InternalError(f"compaction lost {len(missing)} detected fault class(es) -- a bug in netfit")
    settings = [tuple(sequences[p][t]) for p, t in steps]
    plan = Plan(b, fl, list(engine.inputs), list(b.outputs), settings, expected, [], signature, detected,
                sorted(out.undetectable), sorted(out.unresolved), out.methods, sequences=sequences,
                steps=steps, start=list(engine.start), clocks=list(engine.clock_inputs),
                beyond=sorted(out.stats["beyond"]), bound=out.stats["bound"])
    plan.probes = _probes(engine, reps, sequences, run, plan)
    return plan


def _probes(engine: SeqEngine, reps: list, sequences: list, run: SeqRun, plan: Plan) -> list:
    """Probe points per step: as for settings, with the suspects of a step its faults that read wrong there."""
    Q = len(plan.steps)
    if not Q:
        return []
    c = engine.circ
    outs = {n for _, n in c.outputs}
    cands = candidates(engine) + [f.q for f in c.flops if f.q not in outs][:PROBE_CANDIDATES]
    cands = list(dict.fromkeys(cands))
    suspects = [[k for k in range(len(reps)) if any(q == st for st, _ in plan.signature[k])] for q in range(Q)]
    sizes = [len(s) for s in suspects]
    counts = {n: [0] * Q for n in cands}
    P = len(sequences)
    pm = (1 << P) - 1
    engine.run(sequences, reps, nets=cands)
    levels = [[0] * len(cands) for _ in range(Q)]
    for lo, count, rep, per_step in engine.levels:
        for q, (p, t) in enumerate(plan.steps):
            mask = sum(1 << (P * (k - lo + 1) + p) for k in suspects[q] if lo <= k < lo + count)
            for i, n in enumerate(cands):
                h, l = per_step[t][n]
                gh, gl = h & pm, l & pm
                if lo == 0:
                    levels[q][i] = gh >> p & 1
                if mask:
                    counts[n][q] += (((gh * rep & l) | (gl * rep & h)) & mask).bit_count()
    return choose_probes(engine, cands, counts, sizes, levels)
