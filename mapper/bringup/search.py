"""Sequences for builds with storage: random walks, then a search over pairs of states per fault.

Every sequence starts at the start (:mod:`mapper.bringup.start`) and
changes one input per step, as a builder flips one switch at a time
(clock and enable inputs are picked more often).  Random walks are
simulated against every fault still undetected; a fault they miss is then
searched for on its own: breadth first over the pairs (good build's state,
faulty build's state) that one input change at a time can reach from the
start, until an output differs (the shortest such sequence) or every
reachable pair has been seen (the fault cannot be detected from the start:
it sits in logic that never matters there, or in storage the start leaves
unknown).  A search that outgrows its budget leaves the fault unresolved.
"""
from __future__ import annotations

import random

from .engine import Engine, Setting
from .generate import Outcome
from .start import Start, clock_inputs

__all__ = ["sequential", "MAX_PAIRS", "WALKS"]

#: random walks simulated together
WALKS = 32
#: rounds of random walks at most (fewer once a round finds nothing new)
MAX_ROUNDS = 16
#: pairs of states one fault's search may visit
MAX_PAIRS = 4000
#: pairs all searches of one build may visit
MAX_PAIRS_TOTAL = 200_000


def _walk(rng: random.Random, start: tuple, length: int, clocks: list) -> Setting:
    vec = list(start)
    steps = []
    n = len(vec)
    for _ in range(length):
        i = rng.choice(clocks) if clocks and rng.random() < 0.5 else rng.randrange(n)
        vec[i] ^= 1
        steps.append(tuple(vec))
    return Setting(tuple(steps))


def sequential(engine: Engine, faults: list, start: Start, seed: int = 0) -> Outcome:
    """Sequences detecting the faults of a build with storage (see the module docstring)."""
    out = Outcome()
    rng = random.Random(seed)
    n_storage = len(engine.b.latches) + len(engine.b.sequencers) if engine.relay else \
        len(engine.circ.flops) + len(engine.circ.latches) + len(engine.circ.groups)  # type: ignore[union-attr]
    length = min(48, 6 * n_storage + 2 * len(engine.inputs) + 4)
    clocks = clock_inputs(engine)
    left = list(range(len(faults)))
    walked = 0
    for _ in range(MAX_ROUNDS):
        if not left:
            break
        walks = [_walk(rng, start.vector, length, clocks) for _ in range(WALKS)]
        walked += len(walks)
        run = engine.run(walks, [faults[f] for f in left])
        keep: dict = {}
        still = []
        for k, f in enumerate(left):
            hit = run.detected(k)
            if hit:
                keep.setdefault(hit[0], []).append(f)
            else:
                still.append(f)
        for p, fs in keep.items():
            out.settings.append(walks[p])
            for f in fs:
                out.detects[f] = len(out.settings) - 1
        left = still
        if not keep:
            break
    out.methods.append(f"{walked} random sequences of {length} steps simulated against the faults still undetected "
                       f"({len(out.settings)} kept)")
    out.stats.update(random_sequences=walked, sequence_steps=length)
    if left:
        _pair_search(engine, faults, left, start, out)
    return out


def _pair_search(engine: Engine, faults: list, left: list, start: Start, out: Outcome) -> None:
    budget = MAX_PAIRS_TOTAL
    found = proved = unknown = 0
    while left:
        f = left.pop(0)
        if budget <= 0:
            out.unresolved.append(f)
            unknown += 1
            continue
        kind, steps, used = _search_one(engine, faults[f], start, min(MAX_PAIRS, budget))
        budget -= used
        if kind == "undetectable":
            out.undetectable.append(f)
            proved += 1
            continue
        if kind != "found":
            out.unresolved.append(f)
            unknown += 1
            continue
        found += 1
        s = Setting(tuple(steps))
        run = engine.run([s], [faults[g] for g in [f] + left])
        if not run.detected(0):
            from ..errors import InternalError
            raise InternalError(f"the sequence found for {faults[f].key} does not show it -- a bug in netfit")
        out.settings.append(s)
        p = len(out.settings) - 1
        out.detects[f] = p
        still = []
        for k, g in enumerate(left, 1):
            if run.detected(k):
                out.detects[g] = p
            else:
                still.append(g)
        left[:] = still
    out.methods.append(f"search over pairs of good and faulty states, one input change at a time: {found} "
                       f"sequence(s) found, {proved} fault(s) shown undetectable from the start"
                       + (f", {unknown} left unresolved within the search budget" if unknown else ""))
    out.stats.update(search_found=found, search_proved=proved, search_unknown=unknown)


def _bits(words: list, k: int) -> tuple:
    return tuple(w >> k & 1 for w in words)


def _pack(states: list) -> list:
    """Words with bit ``k`` of word ``j`` from item ``j`` of state ``k``."""
    if not states:
        return []
    out = [0] * len(states[0])
    for k, st in enumerate(states):
        for j, b in enumerate(st):
            if b:
                out[j] |= 1 << k
    return out


def _search_one(engine: Engine, fault, start: Start, budget: int) -> tuple:
    """``(kind, steps, pairs visited)`` of one fault's breadth-first search (see the module docstring)."""
    n = len(engine.inputs)
    m = engine.machine(2, [(fault, 2)])
    engine.start(m)
    words = m.state_words()
    first = (_bits(words, 0), _bits(words, 1))
    vec0 = tuple(m.inputs[i] & 1 for i in range(n))
    seen = {first: None}
    frontier = [(first, vec0)]
    parent: dict = {first: None}
    visited = 1
    while frontier:
        width = len(frontier) * n
        good = engine.machine(width)
        bad = engine.machine(width, [(fault, (1 << width) - 1)])
        gs, bs, vecs = [], [], []
        for (g, b), vec in frontier:
            for i in range(n):
                gs.append(g)
                bs.append(b)
                v = list(vec)
                v[i] ^= 1
                vecs.append(tuple(v))
        good.load_state_words(_pack(gs))
        bad.load_state_words(_pack(bs))
        inputs = _pack(vecs)
        good.apply(inputs)
        bad.apply(inputs)
        diff = 0
        for (gh, gl), (bh, bl) in zip(good.outputs(), bad.outputs()):
            diff |= (gh & bl) | (gl & bh)
        if diff:
            k = (diff & -diff).bit_length() - 1
            pair = frontier[k // n][0]
            steps = [vecs[k]]
            while parent[pair] is not None:
                pair, v = parent[pair]
                steps.append(v)
            return "found", steps[::-1], visited
        nxt = []
        gw, bw = good.state_words(), bad.state_words()
        for k in range(width):
            pair = (_bits(gw, k), _bits(bw, k))
            if pair in seen:
                continue
            seen[pair] = None
            parent[pair] = (frontier[k // n][0], vecs[k])
            nxt.append((pair, vecs[k]))
            visited += 1
            if visited > budget:
                return "unknown", None, visited
        frontier = nxt
    return "undetectable", None, visited
