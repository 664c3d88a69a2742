"""Timing, supply current and feedback loops of relay builds.

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

Supply
------
Worst case: every coil energized and every pull-down resistor at the rail
voltage.  Typical: each coil and each loaded net weighted by the fraction of
input patterns (and storage states, all equally likely) in which its net is
1, from a bit-parallel simulation of the build's logic
(:meth:`mapper.build.Build.to_netlist`).

Feedback loops
--------------
A loop is a strongly connected set of nets where a net's value depends on
the nets on its pole's NO and NC terminals and on its relay's coil net.
Every loop of a relay build must include a defined load on each of its nets
that feeds a coil; :func:`feedback_loops` lists the loops and the nets in
each that have none (a warning per such loop goes into the build's cautions).
"""
from __future__ import annotations

import logging
import random

import networkx as nx

__all__ = ["relay_timing", "relay_supply", "feedback_loops", "DIODE_RELEASE_FACTOR",
           "SUPPLY_PATTERNS"]

log = logging.getLogger(__name__)

#: release time with a plain diode across the coil, as a multiple of the catalog's (from memory)
DIODE_RELEASE_FACTOR = 3.0
#: random patterns simulated for the typical supply current
SUPPLY_PATTERNS = 4096


def _diode_nets(build) -> set:
    out = set()
    for s in build.support:
        pd = build.target.parts.get(s.part_id)
        text = f"{s.part_id} {pd.description if pd else ''}".lower()
        if "diode" in text:
            out.update(s.nets)
    return out


def _switch_times(build) -> dict:
    """part ref -> (typical, worst) seconds for one coil level of that relay."""
    diodes = _diode_nets(build)
    out = {}
    for p in build.parts:
        pd = build.target.parts[p.part_id]
        r = pd.relay
        release = r.release_time.value
        if build.coils.get(p.ref) in diodes:
            release *= DIODE_RELEASE_FACTOR
        worst = max(r.operate_time.value, release) + r.bounce_time.value
        typ_fig = pd.delay_typ.get("changeover") if pd.delay_typ else None
        typ = typ_fig.value if typ_fig is not None else r.operate_time.value
        out[p.ref] = (typ, worst)
    return out


def _storage_nets(build) -> tuple[set, set]:
    """(nets whose driving pole belongs to storage, storage output nets)."""
    driven, outs = set(), set()
    for lt in build.latches:
        driven |= {x for x in (lt.state, lt.hold, lt.master, lt.master_hold) if x}
        outs |= {lt.state, lt.net}
        if lt.inverted:
            driven.add(lt.net)
    return driven, outs


def relay_timing(build) -> dict:
    """Timing figures of a relay build (see the module docstring).

    Returns ``delay_s`` (worst arrival at an output or storage data/control
    net, worst figures), ``delay_typ_s``, ``levels`` (coil levels on the
    worst path), ``outputs`` (output -> ``[best_s, worst_s]``),
    ``critical_path`` (list of ``{"net", "part", "pole", "coil", "arrival_s"}``),
    ``per_level_s`` (the slowest relay's coil level), ``operate_s``,
    ``release_s`` (with the coil diode), ``bounce_s`` and ``clock_to_q_s``
    (storage: one coil level of the clock's relay, 0 without storage).
    """
    sw = _switch_times(build)
    stor_driven, stor_out = _storage_nets(build)
    drivers = {k.com: k for k in build.contacts if k.com not in stor_driven}
    worst, typ, best, lev, prev = {}, {}, {}, {}, {}
    # topological order over the poles (fan-ins first); storage outputs are sources
    deps = {}
    for net, k in drivers.items():
        deps[net] = [x for x in (k.no, k.nc, build.coils[k.part_ref]) if x in drivers]
    indeg = {n: len(d) for n, d in deps.items()}
    users: dict = {}
    for n, d in deps.items():
        for x in d:
            users.setdefault(x, []).append(n)
    ready = sorted(n for n, c in indeg.items() if c == 0)
    order = []
    while ready:
        n = ready.pop()
        order.append(n)
        for u in users.get(n, ()):
            indeg[u] -= 1
            if indeg[u] == 0:
                ready.append(u)

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
    clock_to_q = 0.0
    for lt in build.latches:
        for k in build.contacts:
            if k.com == lt.state:
                clock_to_q = max(clock_to_q, sw[k.part_ref][1])
    first = build.parts[0] if build.parts else None
    r = build.target.parts[first.part_id].relay if first else None
    diodes = _diode_nets(build)
    return {
        "delay_s": round(get(worst, end), 9) if end is not None else 0.0,
        "delay_typ_s": round(max((get(typ, n) for n in ends), default=0.0), 9),
        "levels": max((lev.get(n, 0) for n in ends), default=0),
        "outputs": {o: [round(get(best, build.output_nets.get(o, o)), 9),
                        round(get(worst, build.output_nets.get(o, o)), 9)] for o in build.outputs},
        "critical_path": path,
        "per_level_s": round(per_level, 9),
        "operate_s": r.operate_time.value if r else None,
        "release_s": (round(r.release_time.value * (DIODE_RELEASE_FACTOR
                                                     if first and build.coils.get(first.ref) in diodes
                                                     else 1.0), 9) if r else None),
        "bounce_s": r.bounce_time.value if r else None,
        "clock_to_q_s": round(clock_to_q, 9),
    }


def relay_supply(build, patterns: int = SUPPLY_PATTERNS, seed: int = 0) -> dict:
    """Supply figures of a relay build (see the module docstring).

    Returns ``supply_current_a`` (worst), ``supply_current_typ_a``,
    ``coil_current_a`` (every coil energized), ``coil_voltage_v``,
    ``input_coil_current_a`` (input net -> coil current it carries when on)
    and ``contact_overloads`` (``[net, amps, rating]`` where the coils fed
    from a relay-driven net draw more than its contacts are rated for).
    """
    from ..simulate import simulate

    volts = build.target.supply_voltage.value if build.target.supply_voltage is not None else None
    coil_i = {}
    for p in build.parts:
        r = build.target.parts[p.part_id].relay
        coil_i[p.ref] = r.coil_current.value
        if volts is None:
            volts = r.coil_voltage.value
    loads = []
    for s in build.support:
        pd = build.target.parts[s.part_id]
        res = pd.ratings.get("resistance")
        if res is not None and res.value > 0:
            net = s.nets[0] if s.nets[0] != "GND" else s.nets[-1]
            loads.append((net, volts / res.value))
    coil_total = sum(coil_i.values())
    worst = coil_total + sum(a for _, a in loads)

    # typical: how often each net is 1
    frac = {}
    if build.parts:
        n = build.to_netlist()
        rng = random.Random(seed)
        mask = (1 << patterns) - 1
        words = {i: rng.getrandbits(patterns) for i in n.inputs}
        state = {name: rng.getrandbits(patterns) for name in n.storage()}
        vals = simulate(n, words, mask, state)
        want = {build.coils[p.ref] for p in build.parts} | {net for net, _ in loads}
        for net in want:
            v = vals.get(net)
            if v is None:
                continue
            frac[net] = bin(v & mask).count("1") / patterns
    typ = sum(coil_i[p.ref] * frac.get(build.coils[p.ref], 0.5) for p in build.parts)
    typ += sum(a * frac.get(net, 0.5) for net, a in loads)

    inputs = set(build.inputs)
    per_net: dict = {}
    for p in build.parts:
        per_net[build.coils[p.ref]] = per_net.get(build.coils[p.ref], 0.0) + coil_i[p.ref]
    input_i = {net: round(a, 9) for net, a in per_net.items() if net in inputs}
    overloads = []
    driven = {k.com for k in build.contacts}
    for net, amps in per_net.items():
        if net not in driven:
            continue
        ratings = [build.target.parts[p.part_id].relay.contact_current for p in build.parts]
        limit = min((f.value for f in ratings if f is not None), default=None)
        if limit is not None and amps > limit:
            overloads.append([net, round(amps, 9), limit])
    return {
        "supply_current_a": round(worst, 9),
        "supply_current_typ_a": round(typ, 9),
        "coil_current_a": round(coil_total, 9),
        "coil_voltage_v": volts,
        "input_coil_current_a": input_i,
        "contact_overloads": overloads,
    }


def feedback_loops(build) -> list:
    """Loops through contacts and coils, each ``{"nets": [...], "unloaded": [...]}``.

    ``unloaded`` lists the loop's nets that feed a coil and have no defined
    load (a resistor from the net to ``GND``) -- a warning each.
    """
    g = nx.DiGraph()
    for k in build.contacts:
        coil = build.coils[k.part_ref]
        for x in (k.no, k.nc, coil):
            if x is not None and x not in ("VCC", "GND"):
                g.add_edge(x, k.com)
    loaded = set()
    for s in build.support:
        pd = build.target.parts[s.part_id]
        if pd.ratings.get("resistance") is not None and "GND" in s.nets:
            loaded.update(n for n in s.nets if n != "GND")
    coil_nets = set(build.coils.values())
    out = []
    for comp in nx.strongly_connected_components(g):
        if len(comp) < 2 and not any(g.has_edge(n, n) for n in comp):
            continue
        nets = sorted(comp)
        out.append({"nets": nets, "unloaded": [n for n in nets if n in coil_nets and n not in loaded]})
    out.sort(key=lambda d: d["nets"])
    return out
