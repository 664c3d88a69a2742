"""Finding a short list of settings that detects every detectable fault.

Settings drawn at random are simulated against every fault still undetected,
:data:`BATCH` at a time, while a batch still finds new faults (random-pattern
fault simulation with fault dropping, textbook practice).  Every fault left
is then handed to the solver (:mod:`mapper.bringup.atpg`, after Larrabee
1992), which finds a setting or proves the fault undetectable; each setting
it finds is simulated against the faults still left.

Relay builds have no solver yet: one with at most :data:`EXHAUSTIVE_INPUTS`
inputs is simulated under every input combination, which settles every
fault either way; on a wider one the faults random settings miss are left
unresolved, and the report says so.

Compaction
    Every setting kept is simulated against every detected fault, and the
    list is cut down by a greedy cover -- the setting that detects most of
    what is still uncovered first -- followed by dropping, from the last
    chosen back, any setting whose faults the others detect (reverse-order
    compaction, textbook practice).
"""
from __future__ import annotations

import logging
import random
from dataclasses import dataclass, field

from ..errors import InternalError
from .atpg import FOUND, UNDETECTABLE, SettingSolver
from .engine import Engine

__all__ = ["Outcome", "combinational", "compact", "keep_first_hits", "keep_solved", "covers_of", "choose_cover",
           "BATCH", "EXHAUSTIVE_INPUTS"]

log = logging.getLogger(__name__)

#: relay builds with at most this many inputs are simulated under every input combination
EXHAUSTIVE_INPUTS = 12
#: settings simulated together in the random phase
BATCH = 64
#: random batches at most (the phase stops earlier once a batch finds nothing new)
MAX_BATCHES = 64


@dataclass
class Outcome:
    """What test generation found.

    ``settings`` are the candidate settings (tuples of input levels); ``detects[f]`` the index of a
    setting that detects fault ``f``; ``undetectable`` the faults proved
    undetectable; ``unresolved`` the faults neither found nor proved;
    ``methods`` what ran, in plain words, with counts.
    """

    settings: list = field(default_factory=list)
    detects: dict = field(default_factory=dict)
    undetectable: list = field(default_factory=list)
    unresolved: list = field(default_factory=list)
    methods: list = field(default_factory=list)
    stats: dict = field(default_factory=dict)


def keep_first_hits(run, left: list, batch: list, out: Outcome) -> tuple:
    """``(kept, still)``: of the faults ``left`` (simulated by ``run`` in that order), keep the first
    setting of ``batch`` that detects each (one copy per setting) in ``out``; ``still`` the faults none
    detects, ``kept`` whether any was."""
    keep: dict = {}
    still = []
    for k, f in enumerate(left):
        hit = run.detected(k)
        if hit:
            keep.setdefault(hit[0], []).append(f)
        else:
            still.append(f)
    for p, fs in keep.items():
        out.settings.append(batch[p])
        for f in fs:
            out.detects[f] = len(out.settings) - 1
    return bool(keep), still


def keep_solved(engine, faults: list, out: Outcome, f: int, left: list, setting, what: str) -> None:
    """Keep the solver's ``setting`` (or sequence) for fault ``f`` in ``out``, after simulation shows it
    detects ``f``; faults of ``left`` it detects too are taken off ``left`` (in place)."""
    run = engine.run([setting], [faults[g] for g in [f] + left])
    if not run.detected(0):   # the solver's answer must show the fault in simulation too
        raise InternalError(f"the solver's {what} for {faults[f].key} does not show it in simulation "
                            "-- a bug in netfit")
    out.settings.append(setting)
    p = len(out.settings) - 1
    out.detects[f] = p
    still = []
    for k, g in enumerate(left, 1):
        if run.detected(k):
            out.detects[g] = p
        else:
            still.append(g)
    left[:] = still


def covers_of(run, targets: list) -> dict:
    """Setting index -> the faults of ``targets`` (simulated by ``run`` in that order) it detects."""
    covers: dict = {}
    for k, f in enumerate(targets):
        for p in run.detected(k):
            covers.setdefault(p, set()).add(f)
    return covers


def choose_cover(covers: dict, targets: list, cost) -> list:
    """Settings covering every fault of ``targets`` that ``covers`` covers: greedy (most new faults, then
    least ``cost(setting)``, then the earliest), then each dropped in reverse order that the others
    cover; in setting order."""
    uncovered = set(targets)
    chosen: list = []
    while uncovered:
        p = max(covers, key=lambda q: (len(covers[q] & uncovered), -cost(q), -q))
        gain = covers[p] & uncovered
        if not gain:
            break
        chosen.append(p)
        uncovered -= gain
    for p in list(reversed(chosen)):
        rest = set().union(*(covers[q] for q in chosen if q != p)) if len(chosen) > 1 else set()
        if covers[p] <= rest:
            chosen.remove(p)
    return sorted(chosen)


def _random_vector(rng: random.Random, n: int) -> tuple:
    return tuple(rng.getrandbits(1) for _ in range(n))


def combinational(engine: Engine, faults: list, seed: int = 0) -> Outcome:
    """Settings for a build without storage (see the module docstring)."""
    out = Outcome()
    n = len(engine.inputs)
    if engine.relay and n <= EXHAUSTIVE_INPUTS:
        return _every_combination(engine, faults)
    rng = random.Random(seed)
    left = list(range(len(faults)))
    tried = 0
    for _ in range(MAX_BATCHES):
        if not left:
            break
        batch = [_random_vector(rng, n) for _ in range(BATCH)]
        tried += len(batch)
        run = engine.run(batch, [faults[f] for f in left])
        kept, left = keep_first_hits(run, left, batch, out)
        if not kept:
            break
    out.methods.append(f"{tried} random settings simulated against the faults still undetected "
                       f"({len(out.settings)} kept)")
    out.stats.update(random_settings=tried)
    if left and engine.relay:
        out.unresolved = left
    elif left:
        _by_solver(engine, faults, left, out, rng)
    return out


def _every_combination(engine: Engine, faults: list) -> Outcome:
    """Every input combination against every fault: each fault detected or shown undetectable."""
    out = Outcome()
    n = len(engine.inputs)
    every = [tuple(p >> i & 1 for i in range(n)) for p in range(1 << n)]
    run = engine.run(every, faults)
    for f in range(len(faults)):
        hit = run.detected(f)
        if hit:
            out.detects[f] = hit[0]
        else:
            out.undetectable.append(f)
    out.settings = every
    out.methods.append(f"every one of the {len(every)} input combinations simulated against every fault")
    out.stats.update(combinations=len(every))
    return out


def _by_solver(engine: Engine, faults: list, left: list, out: Outcome, rng: random.Random) -> None:
    solver = SettingSolver(engine.circ)   # type: ignore[arg-type]
    try:
        _solve_all(engine, faults, left, out, rng, solver)
    finally:
        solver.close()


def _solve_all(engine: Engine, faults: list, left: list, out: Outcome, rng: random.Random,
               solver: SettingSolver) -> None:
    found = proved = unknown = 0
    n = len(engine.inputs)
    left.reverse()   # popped from the end: the first left first
    while left:
        f = left.pop()
        kind, vec = solver.test(engine.site(faults[f]), faults[f].value)
        if kind == UNDETECTABLE:
            out.undetectable.append(f)
            proved += 1
            continue
        if kind != FOUND:
            out.unresolved.append(f)
            unknown += 1
            continue
        found += 1
        keep_solved(engine, faults, out, f, left, tuple(vec.get(i, rng.getrandbits(1)) for i in range(n)), "setting")
    out.methods.append(f"satisfiability (after Larrabee 1992): {found} setting(s) found, {proved} fault(s) proved "
                       f"undetectable" + (f", {unknown} left unresolved within the solver's budget" if unknown else ""))
    out.stats.update(solver_found=found, solver_proved=proved, solver_unknown=unknown)


def compact(engine: Engine, faults: list, out: Outcome) -> tuple:
    """``(settings, run)``: a short list of ``out.settings`` detecting every fault ``out`` detects.

    ``run`` is the simulation of the chosen settings against every fault
    (no dropping), for the dictionary.
    """
    targets = sorted(out.detects)
    if not targets:
        return [], engine.run([], faults)
    run = engine.run(out.settings, [faults[f] for f in targets])
    covers = covers_of(run, targets)
    chosen = choose_cover(covers, targets, lambda q: 0)
    settings = [out.settings[p] for p in chosen]
    return settings, engine.run(settings, faults)
