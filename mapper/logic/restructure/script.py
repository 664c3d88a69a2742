"""The script of restructuring passes, and the forms of a design it offers the mapper.

Starting points (each an and-inverter graph of the whole design):

* the design's own graph (each node from its smallest two-level cover);
* the algebraic form (:mod:`mapper.logic.restructure.factor`: common
  kernels and cubes extracted, every node factored), for designs with
  nodes of three inputs or more;
* the collapsed form (:mod:`mapper.logic.restructure.collapse`: every
  function built again from its truth table by bi-decomposition, counters
  of ones for symmetric functions, don't-cares used), and the same without
  counters, for designs of at most
  :data:`~mapper.logic.restructure.decompose.MAX_FREE` free variables.

Each starting point then runs the script :data:`PASSES` (rewriting,
resubstitution, balancing, rewriting with zero-gain moves, as in the
published scripts of Mishchenko, Chatterjee and Brayton, DAC 2006); the
graph of fewest ANDs seen is kept, and the script stops after
:data:`PATIENCE` passes in a row that found nothing smaller.  Fewer ANDs
do not always mean fewer parts (an exclusive-OR of three ANDs takes four
NAND2), so the *stop rule that counts* is the caller's: every form returned
here is mapped and packed, and one is kept only when it has fewer whole
parts than every build found without it (:mod:`mapper.fit.fit`).

Big designs get less: above :data:`MEDIUM` ANDs, only the design's graph
and the algebraic form with a short script; above :data:`BIG`, one rewriting
pass of the design's graph -- so that restructuring a ten-thousand-gate
design costs no more than mapping it once.
"""
from __future__ import annotations

import logging
import time
import weakref
from dataclasses import dataclass

from ..aig import AIG, from_netlist
from ..minimize import min_cover
from .balance import balance
from .collapse import care_tables, collapsed_graph
from .decompose import MAX_FREE
from .factor import factored_graph
from .graph import cleanup, to_netlist
from .resub import resub
from .rewrite import rewrite

__all__ = ["Form", "forms", "PASSES", "MEDIUM", "BIG"]

log = logging.getLogger(__name__)


def _rewrite_zero(aig: AIG) -> AIG:
    return rewrite(aig, zero=True)


#: the script: (name, pass), in order
PASSES = (("rewrite", rewrite), ("resubstitution", resub), ("balance", balance), ("rewrite", rewrite),
          ("resubstitution", resub), ("rewrite with zero-gain moves", _rewrite_zero), ("rewrite", rewrite),
          ("resubstitution", resub))
#: passes in a row without a smaller graph before the script stops
PATIENCE = 3
#: AND nodes above which the script is short and the collapsed forms are left out
MEDIUM = 3000
#: AND nodes above which only one rewriting pass of the design's graph is tried
BIG = 8000


@dataclass
class Form:
    """One restructured form of a design: a netlist over its ports and storage."""

    label: str
    netlist: object
    ands: int
    #: seconds spent making it
    seconds: float
    #: whether the design's don't-cares (``.exdc``) were used
    dont_cares: bool = False


_CACHE: dict = {}
#: designs whose forms are remembered at once
_CACHED = 2


def forms(design) -> list:
    """The restructured forms of ``design`` (see the module docstring), at
    most one per starting point and script, fewest ANDs first in each;
    remembered for the design object (the part searches of several targets
    share them)."""
    key = id(design)
    got = _CACHE.get(key)
    if got is not None and got[0]() is design and got[1] == len(design.nodes):
        return got[2]
    out = _forms(design)
    # a few designs at a time: the cache serves the targets of one run, and the part search
    # restructures two spellings of each design (mapper.logic.regions)
    while len(_CACHE) >= _CACHED:
        del _CACHE[next(iter(_CACHE))]
    _CACHE[key] = (weakref.ref(design), len(design.nodes), out)
    return out


def _forms(design) -> list:
    t0 = time.perf_counter()
    base, _ = from_netlist(design, cover=min_cover)
    base = cleanup(base)
    size = base.num_ands
    if size == 0:
        return []
    starts: list = []
    if size > BIG:
        starts.append(("rewritten", base, PASSES[:1], False))
    else:
        short = size > MEDIUM
        script = PASSES[:3] if short else PASSES
        starts.append(("rewritten", base, script, False))
        fac = factored_graph(design, base)
        if fac is not None:
            starts.append(("factored", cleanup(fac), script, False))
        if not short and len(base.inputs) + len(base.latches) <= MAX_FREE:
            dc = bool(care_tables(design, base))
            for counters, label in ((True, "decomposed"), (False, "decomposed without counters")):
                col = collapsed_graph(design, base, counters=counters)
                if col is not None:
                    starts.append((label, cleanup(col), script, dc))
    out: list = []
    seen: set = set()
    for label, start, script, dc in starts:
        t1 = time.perf_counter()
        best = run_script(start, script)
        secs = time.perf_counter() - t1
        for tag, g in ((label, start), (label + ", then the script", best)):
            if g is base:
                continue
            sig = _signature(g)
            if sig in seen:
                continue
            seen.add(sig)
            out.append(Form(tag, to_netlist(g, design), g.num_ands, secs, dc))
    log.info("restructuring: %d AND nodes; forms %s (%.1f s)", size,
             ", ".join(f"{f.label}: {f.ands}" for f in out), time.perf_counter() - t0)
    return out


def run_script(aig: AIG, script=PASSES) -> AIG:
    """``aig`` through the passes of ``script``; the graph of fewest ANDs seen
    (see :data:`PATIENCE`)."""
    best = aig
    idle = 0
    for _name, step in script:
        aig = step(aig)
        if aig.num_ands < best.num_ands:
            best, idle = aig, 0
        else:
            idle += 1
            if idle >= PATIENCE:
                break
    return best


def _signature(g: AIG) -> tuple:
    return (g.num_ands, tuple(g.f0), tuple(g.f1), tuple(lit for _, lit in g.outputs))
