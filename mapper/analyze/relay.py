"""Timing and feedback loops of relay builds.

Timing
------
A contact passes a signal at once; a relay adds time only when its coil
changes.  The arrival time of a relay-driven net is therefore

    ``arrival(COM) = max(arrival(NO), arrival(NC), arrival(coil) + switch)``

over its driving pole, with inputs, the rail and storage outputs at time 0
(as the static timing of gate builds starts storage outputs at 0).  ``switch``
is one coil level: the longer of the relay's operate time and its release
time, plus the contact bounce time (the net is settled only after the
bounce).  A diode across the coil lengthens the release time: with a coil
diode fitted the catalog's release time (given without a diode) is
multiplied by :data:`DIODE_RELEASE_FACTOR` (from memory: a plain diode
across a small relay's coil lengthens its release time by roughly two to
four times; check the relay maker's application note).  Typical figures use
the catalog's typical changeover delay instead of ``switch``.  Everything
is iterative over a topological order of the poles.

Feedback loops
--------------
A loop is a strongly connected set of nets where a net's value depends on
the nets on its pole's NO and NC terminals, on its relay's coil net, and on
the anodes of the diodes feeding it.  :func:`feedback_loops` lists them;
storage elements are the only loops a build should have (every coil net is
held at 0 by its coil when nothing feeds it, so no loop floats).
"""
from __future__ import annotations

import logging

import networkx as nx

from ..build import SUPPLY_NETS, Build
from ..order import topological_order
from ..relay_logic import storage_nets
from .results import RelayFigures, Timing

__all__ = ["relay_timing", "feedback_loops", "switch_times", "coil_diode_nets", "DIODE_RELEASE_FACTOR"]

log = logging.getLogger(__name__)

#: release time with a plain diode across the coil, as a multiple of the catalog's (from memory)
DIODE_RELEASE_FACTOR = 3.0


def coil_diode_nets(build: Build) -> set:
    """Coil nets with a diode across them (support parts of role ``coil-diode``)."""
    return build.support_nets("coil-diode")


def switch_times(build: Build) -> dict:
    """part ref -> ``(typical, transfer, bounce)`` seconds for one coil level of that relay.

    ``transfer`` is the longer of the operate time and the release time (the
    latter lengthened by a coil diode); the net is settled only after the
    bounce as well.
    """
    diodes = coil_diode_nets(build)
    out = {}
    for p in build.parts:
        pd = build.target.parts[p.part_id]
        r = pd.relay
        if r is None:
            continue
        release = r.release_time.value
        if build.coils.get(p.ref) in diodes:
            release *= DIODE_RELEASE_FACTOR
        typ_fig = pd.delay_typ.get("changeover")
        typ = typ_fig.value if typ_fig is not None else r.operate_time.value
        out[p.ref] = (typ, max(r.operate_time.value, release), r.bounce_time.value)
    return out


def relay_timing(build: Build, period_s: float | None = None) -> Timing:
    """Timing figures of a relay build (see the module docstring).

    ``delay_s`` is the worst arrival at an output or storage data/control
    net (worst figures), ``levels`` the coil levels on the worst path,
    ``outputs`` output -> ``[best_s, worst_s]``, ``critical_path`` a list of
    ``{"net", "part", "pole", "coil", "arrival_s"}``; ``relay`` holds
    ``per_level_s`` (the slowest relay's coil level), ``operate_s``,
    ``release_s`` (with the coil diode), ``bounce_s`` and ``clock_to_q_s``
    (storage: the coil levels from a clock edge to the bit, 0 without storage).
    """
    sw = {ref: (t, w + b) for ref, (t, w, b) in switch_times(build).items()}
    stor_driven, _ = storage_nets(build)
    drivers = {k.com: k for k in build.contacts if k.com not in stor_driven and k.com not in SUPPLY_NETS}
    worst: dict = {}
    typ: dict = {}
    best: dict = {}
    lev: dict = {}
    prev: dict = {}
    # topological order over the poles (fan-ins first); storage outputs are sources
    order, _ = topological_order(sorted(drivers), lambda n: (drivers[n].no, drivers[n].nc,
                                                             build.coils[drivers[n].part_ref]))

    def get(d, n):
        return d.get(n, 0.0)

    for net in order:
        k = drivers[net]
        coil = build.coils[k.part_ref]
        t, w = sw[k.part_ref]
        cands = [(get(worst, coil) + w, coil, True)]
        for x in (k.no, k.nc):
            if x is not None:
                cands.append((get(worst, x), x, False))
        wv, src, through_coil = max(cands, key=lambda c: c[0])
        worst[net] = wv
        prev[net] = (src, k, through_coil)
        typ[net] = max([get(typ, coil) + t] + [get(typ, x) for x in (k.no, k.nc) if x is not None])
        best[net] = min([get(best, coil) + t] + [get(best, x) for x in (k.no, k.nc) if x is not None])
        lev[net] = max([lev.get(coil, 0) + 1] + [lev.get(x, 0) for x in (k.no, k.nc) if x is not None])
    ends = [build.output_nets.get(o, o) for o in build.outputs]
    for lt in build.latches:
        ends += [x for x in (lt.d, lt.control) if x]
    end = max(ends, key=lambda n: get(worst, n), default=None)
    path = []
    n = end
    while n in prev:
        src, k, through_coil = prev[n]
        path.append({"net": n, "part": k.part_ref, "pole": k.pole, "coil": build.coils[k.part_ref],
                     "arrival_s": round(worst[n], 9)})
        n = src
    path.reverse()
    per_level = max((w for _, w in sw.values()), default=0.0)
    # a clock edge reaches a bit through the control's relay, the sequencer's steps to the load bus
    # (X and Y for a flip-flop, Y for a latch) and the bit's own relay (see mapper.relay_logic)
    clock_to_q = max(((4 if lt.kind in ("re", "fe") else 3) * per_level for lt in build.latches), default=0.0)
    first = build.parts[0] if build.parts else None
    r = build.target.parts[first.part_id].relay if first else None
    diodes = coil_diode_nets(build)
    release = None
    if r is not None and first is not None:
        release = round(r.release_time.value * (DIODE_RELEASE_FACTOR if build.coils.get(first.ref) in diodes
                                                else 1.0), 9)
    return Timing(
        delay_s=round(get(worst, end), 9) if end is not None else 0.0,
        delay_typ_s=round(max((get(typ, n) for n in ends), default=0.0), 9),
        levels=max((lev.get(n, 0) for n in ends), default=0),
        outputs={o: [round(get(best, build.output_nets.get(o, o)), 9),
                     round(get(worst, build.output_nets.get(o, o)), 9)] for o in build.outputs},
        critical_path=path,
        relay=RelayFigures(per_level_s=round(per_level, 9), operate_s=r.operate_time.value if r else None,
                           release_s=release, bounce_s=r.bounce_time.value if r else None,
                           clock_to_q_s=round(clock_to_q, 9)),
    )


def feedback_loops(build: Build) -> list:
    """Loops through contacts, diodes and coils, each ``{"nets": [...]}`` (sorted).

    Every storage element is such a loop (a coil fed through its own
    contact); a loop elsewhere would be a fault of the build.
    """
    g = nx.DiGraph()
    for k in build.contacts:
        coil = build.coils[k.part_ref]
        for x in (k.no, k.nc, coil):
            if x is not None and x not in SUPPLY_NETS and k.com not in SUPPLY_NETS:
                g.add_edge(x, k.com)
    for s in build.support:
        if s.role == "steering":
            g.add_edge(s.nets[0], s.nets[1])
    out = []
    for comp in nx.strongly_connected_components(g):
        if len(comp) < 2 and not any(g.has_edge(n, n) for n in comp):
            continue
        out.append({"nets": sorted(comp)})
    out.sort(key=lambda d: d["nets"])
    return out
