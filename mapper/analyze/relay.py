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

Clock
-----
Relay storage is stepped by a sequencer of relays (:mod:`mapper.relay_logic`),
so its timing is a chain of operate and release times, each relay landing one
of its own times (bounce included) after its feed changes:
:func:`sequencer_steps` follows the chains of the sequencer's equations and
:func:`relay_clock` turns them into the shortest clock high and low times,
the shortest period (50 % duty cycle; the next state must also be settled in
the data relays and masters before the next active change), the input setup
and hold, and the clock to output.

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
from .results import ClockFigures, RelayFigures, Timing

__all__ = ["relay_timing", "relay_clock", "sequencer_steps", "coil_moves", "feedback_loops", "switch_times",
           "coil_diode_nets", "DIODE_RELEASE_FACTOR"]

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


def coil_moves(build: Build) -> dict:
    """coil net -> ``(operate, release)`` seconds for the relays on it to land, bounce included.

    Worst figures: the catalog's operate time, and its release time
    lengthened by a coil diode (:data:`DIODE_RELEASE_FACTOR`), each plus the
    bounce time; relays in parallel on one coil net count as their slowest.
    """
    diodes = coil_diode_nets(build)
    out: dict = {}
    for p in build.parts:
        r = build.target.parts[p.part_id].relay
        if r is None:
            continue
        coil = build.coils.get(p.ref)
        release = r.release_time.value * (DIODE_RELEASE_FACTOR if coil in diodes else 1.0)
        op, rel = r.operate_time.value + r.bounce_time.value, release + r.bounce_time.value
        old = out.get(coil, (0.0, 0.0))
        out[coil] = (max(old[0], op), max(old[1], rel))
    return out


def sequencer_steps(seq, moves: dict, master: str | None = None, state: str | None = None) -> dict:
    """The times of one sequencer's steps after its control changes, from its relays' own figures.

    ``moves`` is :func:`coil_moves`; ``master`` and ``state`` are the coil
    nets of a storage element it steps.  Returns (all in seconds after the
    control net changes): ``active_s`` and ``inactive_s`` -- how long each
    level of the control must last for every step to land (and the element's
    relays with them); ``clock_to_q_s`` -- when the element's coil net has
    its new value after the active change; ``load_cut_s`` -- when the load
    path of the first relay (master, or a latch's relay) breaks after the
    active change (data must hold until then).  The chains follow the
    equations of :mod:`mapper.relay_logic` step by step (each relay lands
    one operate or release time, bounce included, after its feed changes).
    """
    def op(net):
        return moves.get(net, (0.0, 0.0))[0]

    def rel(net):
        return moves.get(net, (0.0, 0.0))[1]

    ck_active = seq.kind in ("re", "ah")      # the control's relays operate on the active change
    a = op(seq.control) if ck_active else rel(seq.control)
    i = rel(seq.control) if ck_active else op(seq.control)
    first = master if master is not None else state
    m_op, m_rel = (op(first), rel(first)) if first else (0.0, 0.0)
    if seq.kind == "re":
        hm_on = a + op(seq.x)
        load = hm_on + op(seq.y)                      # LM breaks, LS makes (one changeover)
        hs_off = load + op(seq.z)
        active = hs_off + rel(seq.hs)                 # W's coil is on HS
        lm_on = i + rel(seq.z) + op(seq.hs) + rel(seq.y)
        hm_off = lm_on + rel(seq.x)
        inactive = max(hm_off, lm_on + m_op, hm_off + m_rel)
        return {"active_s": active, "inactive_s": inactive, "clock_to_q_s": hs_off, "load_cut_s": load}
    if seq.kind == "fe":
        # the mirror: T (z) <- CK + LM, V (y) <- HS (CK + W'), U (x) <- LM CK; W's coil on HM
        lm_on = i + op(seq.z) + op(seq.y)
        hm_off = lm_on + op(seq.x)
        inactive = max(hm_off + rel(seq.hm), lm_on + m_op, hm_off + m_rel)
        load = a + rel(seq.x) + op(seq.hm) + rel(seq.y)   # LM breaks, LS makes
        hs_off = load + rel(seq.z)
        return {"active_s": hs_off, "inactive_s": inactive, "clock_to_q_s": hs_off, "load_cut_s": load}
    # latches: X <- CK', Y <- CK + Y W', W's coil on HM; HM = X, LM = Y
    lm_on = a + op(seq.y)
    hm_off = a + rel(seq.x)
    active = max(lm_on + m_op, hm_off + rel(seq.hm), hm_off + m_rel)
    close = i + op(seq.x) + op(seq.hm) + rel(seq.y)
    return {"active_s": active, "inactive_s": close, "clock_to_q_s": max(lm_on, hm_off), "load_cut_s": close}


def relay_timing(build: Build, period_s: float | None = None) -> Timing:
    """Timing figures of a relay build (see the module docstring).

    ``delay_s`` is the worst arrival at an output or storage data/control
    net (worst figures), ``levels`` the coil levels on the worst path,
    ``outputs`` output -> ``[best_s, worst_s]``, ``critical_path`` a list of
    ``{"net", "part", "pole", "coil", "arrival_s"}`` from ``critical_start``
    (the input, storage bit or rail the path starts at); ``relay`` holds
    ``per_level_s`` (the slowest relay's coil level), ``operate_s``,
    ``release_s`` (with the coil diode), ``bounce_s`` and ``clock_to_q_s``;
    with storage, ``clock`` holds the clock figures (:func:`relay_clock`).
    ``period_s`` is the clock the builder means to run: it is checked
    against the shortest period.
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
        ends += [x for x in (lt.d, lt.control) if x and x not in SUPPLY_NETS]
    end = max(ends, key=lambda n: get(worst, n), default=None)
    path, start = _trace(build, prev, worst, end)
    per_level = max((w for _, w in sw.values()), default=0.0)
    first = build.parts[0] if build.parts else None
    r = build.target.parts[first.part_id].relay if first else None
    diodes = coil_diode_nets(build)
    release = None
    if r is not None and first is not None:
        release = round(r.release_time.value * (DIODE_RELEASE_FACTOR if build.coils.get(first.ref) in diodes
                                                else 1.0), 9)
    clock = relay_clock(build, worst, period_s) if build.latches else None
    return Timing(
        delay_s=round(get(worst, end), 9) if end is not None else 0.0,
        delay_typ_s=round(max((get(typ, n) for n in ends), default=0.0), 9),
        levels=max((lev.get(n, 0) for n in ends), default=0),
        outputs={o: [round(get(best, build.output_nets.get(o, o)), 9),
                     round(get(worst, build.output_nets.get(o, o)), 9)] for o in build.outputs},
        critical_path=path,
        critical_start=start,
        critical_end={"net": end} if end is not None else None,
        clock=clock,
        relay=RelayFigures(per_level_s=round(per_level, 9), operate_s=r.operate_time.value if r else None,
                           release_s=release, bounce_s=r.bounce_time.value if r else None,
                           clock_to_q_s=round(clock.clock_to_q_s, 9) if clock is not None else 0.0),
    )


def _trace(build: Build, prev: dict, worst: dict, end) -> tuple[list, dict | None]:
    """The worst path to ``end`` hop by hop, and where it starts (an input, a storage bit or the rail)."""
    path: list = []
    n = end
    while n in prev:
        src, k, _ = prev[n]
        path.append({"net": n, "part": k.part_ref, "pole": k.pole, "coil": build.coils[k.part_ref],
                     "arrival_s": round(worst[n], 9)})
        n = src
    path.reverse()
    if end is None:
        return path, None
    storage = {lt.state: lt for lt in build.latches}
    if n in build.inputs:
        start = {"net": n, "kind": "input"}
    elif n in storage:
        start = {"net": storage[n].net, "kind": "storage", "coil": n}
    elif n in SUPPLY_NETS:
        start = {"net": n, "kind": "rail"}
    else:
        start = {"net": n, "kind": "storage" if any(n in (lt.master, lt.state) for lt in build.latches)
                 else "net"}
    return path, start


def relay_clock(build: Build, worst: dict, period_s: float | None = None):
    """Clock figures of a relay build with storage (see :func:`sequencer_steps`).

    For every storage element, with a 50 % duty cycle: each half period at
    least the longer of the two control levels its sequencer needs; and the
    next state settled in time: the element's coil net changes
    ``clock_to_q`` after the active change, the data reaches the data
    relay's coil ``arrival`` later (the worst path from storage bits, its
    first relay included), the data relay and the master land -- all before
    the next active change.  Data from inputs must be settled, and their
    relays landed, before the active change (``input_setup_s``), and held
    until the load path breaks (``input_hold_s``).  Hold margins between
    storage bits are not figures here: one changeover cuts the master's load
    before the slave loads, so a bit can never race its neighbour.
    """

    moves = coil_moves(build)
    seqs = {(s.control, s.kind): s for s in build.sequencers}
    storage_coils = {lt.state for lt in build.latches}
    high = low = 0.0
    data_T = 0.0
    clock_to_q = 0.0
    input_setup = 0.0
    input_hold = 0.0
    worst_path = None
    for lt in build.latches:
        seq = seqs.get((lt.control, lt.kind))
        if seq is None:
            continue
        st = sequencer_steps(seq, moves, lt.master, lt.state)
        active_high = lt.kind in ("re", "ah")
        h, lo = (st["active_s"], st["inactive_s"]) if active_high else (st["inactive_s"], st["active_s"])
        high, low = max(high, h), max(low, lo)
        clock_to_q = max(clock_to_q, st["clock_to_q_s"])
        first = lt.master if lt.master is not None else lt.state
        landing = max(moves.get(lt.d, (0.0, 0.0))) if lt.d not in (None, "VCC") else 0.0
        landing += max(moves.get(first, (0.0, 0.0)))
        arr = worst.get(lt.d, 0.0) if lt.d not in (None, "VCC") else 0.0
        srcs = _sources(build, lt.d) if lt.d not in (None, "VCC") else set()
        if srcs & set(build.inputs):
            input_setup = max(input_setup, arr + landing)
        if srcs & storage_coils:
            need = st["clock_to_q_s"] + arr + landing
            if lt.kind in ("ah", "al"):
                need *= 2      # a latch closes half a period after it opens
            if need > data_T:
                data_T = need
                worst_path = {"to": {"net": lt.net, "data": lt.d}, "clock_to_q_s": st["clock_to_q_s"],
                              "arrival_s": arr, "landing_s": landing}
        input_hold = max(input_hold, st["load_cut_s"])
    period = max(2 * high, 2 * low, data_T)
    limited_by = "storage-to-storage path" if data_T >= 2 * max(high, low) else "relay steps of the clock"
    out_arr = max((worst.get(build.output_nets.get(o, o), 0.0) for o in build.outputs), default=0.0)
    notes = ["relay storage cannot race: one changeover contact cuts each master's load before its slave loads"]
    if any(lt.kind in ("ah", "al") for lt in build.latches):
        notes.append("latches: the data must have landed in the latch's relay before the enable closes; data "
                     "through open latches is counted in full each half period")
    return ClockFigures(
        period_min_s=period, max_hz=1.0 / period if period > 0 else None, path=worst_path,
        hold_slack_s=None, hold_path=None, input_setup_s=input_setup,
        clock_to_output_s=clock_to_q + out_arr, notes=notes, limited_by=limited_by,
        pulse_width_s=max(high, low), checked_period_s=period_s if period_s is not None else period,
        requested_period_s=period_s, high_min_s=high, low_min_s=low, input_hold_s=input_hold,
        clock_to_q_s=clock_to_q)


def _sources(build: Build, net) -> set:
    """Coil nets whose relays' contacts the network driving ``net`` passes through, and its data sources."""
    drivers = {k.com: k for k in build.contacts}
    seen: set = set()
    out: set = set()
    stack = [net]
    while stack:
        n = stack.pop()
        if n in seen or n is None:
            continue
        seen.add(n)
        k = drivers.get(n)
        if k is None:
            out.add(n)
            continue
        out.add(build.coils[k.part_ref])
        stack += [k.no, k.nc]
    return out


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
