"""Supply current of a build: chips by their quiescent and per-unit figures, relays by their coils.

Gate builds
-----------
Each chip draws its quiescent current, plus for every used section its
``per-unit`` current -- the catalogs give it for one section switching at
:data:`CATALOG_HZ` (1 MHz).  A CMOS section draws in proportion to how
often it switches (``I = C_pd · V · f``: common practice, generic 74HC
datasheets), so the figure is scaled to the rate asked for (``--clock``):
the worst case counts every used section switching at that rate, the
typical figure half of them.  Without a rate the catalog's 1 MHz is taken
and ``basis`` says so.  ``static_a`` is the current with nothing switching
(the quiescent figures alone; for TTL parts that is all of it).

Relay builds
------------
Worst case: every coil energized and every pull-down resistor at the rail
voltage.  Typical: each coil and each loaded net weighted by the fraction of
input patterns (and storage states, all equally likely) in which its net is
1, from a bit-parallel simulation of the build's logic
(:meth:`mapper.build.Build.to_netlist`).  Also: the coil current each input
carries when on, and nets whose contacts feed more coil current than they
are rated for.
"""
from __future__ import annotations

import random
from collections import Counter

from ..build import SUPPLY_NETS, Build
from ..simulate import simulate
from ..units import si
from .results import Supply

__all__ = ["supply_current", "gate_supply", "relay_supply", "SUPPLY_PATTERNS", "CATALOG_HZ"]

#: random patterns simulated for the typical supply current of a relay build
SUPPLY_PATTERNS = 4096
#: the switching rate the catalogs' per-unit currents are given at
CATALOG_HZ = 1e6


def supply_current(build: Build, clock_hz: float | None = None) -> Supply:
    """The supply figures of any build (:func:`relay_supply` or :func:`gate_supply`)."""
    return relay_supply(build) if build.is_relay else gate_supply(build, clock_hz)


def gate_supply(build: Build, clock_hz: float | None = None) -> Supply:
    """Quiescent current per chip plus its per-unit figure per used section, scaled to ``clock_hz``.

    See the module docstring; ``clock_hz`` ``None`` takes the catalogs' own
    rate (:data:`CATALOG_HZ`) and says so in ``basis``.
    """
    worst = typ = static = 0.0
    rate = clock_hz if clock_hz is not None else CATALOG_HZ
    scale = rate / CATALOG_HZ
    per_part = Counter(c.part_ref for c in build.cells)
    for p in build.parts:
        pd = build.target.parts[p.part_id]
        q = pd.current_quiescent.value if pd.current_quiescent is not None else 0.0
        u = pd.current_per_unit.value * scale if pd.current_per_unit is not None else 0.0
        used = per_part[p.ref]
        static += q
        worst += q + u * used
        typ += q + u * used / 2
    if clock_hz is None:
        basis = ("every used section switching at 1 MHz, the rate the catalogs' per-section figures are given "
                 "at (give the clock rate to scale it)")
    else:
        basis = f"every used section switching at {si(clock_hz, 'Hz')} (the clock rate given)"
    return Supply(round(worst, 9), round(typ, 9), basis=basis, static_a=round(static, 9), switching_hz=rate)


def _one_fractions(build: Build, nets: set, patterns: int, seed: int) -> dict:
    """net -> fraction of random input patterns and storage states in which it is 1."""
    n = build.to_netlist()
    rng = random.Random(seed)
    mask = (1 << patterns) - 1
    words = {i: rng.getrandbits(patterns) for i in n.inputs}
    state = {name: rng.getrandbits(patterns) for name in n.storage()}
    vals = simulate(n, words, mask, state)
    frac = {}
    for net in nets:
        v = vals.get(net)
        if v is not None:
            frac[net] = bin(v & mask).count("1") / patterns
    return frac


def relay_supply(build: Build, patterns: int = SUPPLY_PATTERNS, seed: int = 0) -> Supply:
    """Supply figures of a relay build (see the module docstring)."""
    volts = build.target.supply_voltage.value if build.target.supply_voltage is not None else None
    coil_i = {}
    for p in build.parts:
        r = build.target.parts[p.part_id].relay
        coil_i[p.ref] = r.coil_current.value
        if volts is None:
            volts = r.coil_voltage.value
    loads = []
    for s in build.support:
        res = build.target.parts[s.part_id].rating("resistance")
        if s.role == "pull-down" and res is not None and res > 0 and volts is not None:
            net = next(n for n in s.nets if n not in SUPPLY_NETS)
            loads.append((net, volts / res))
    coil_total = sum(coil_i.values())
    worst = coil_total + sum(a for _, a in loads)
    frac = {}
    if build.parts:
        frac = _one_fractions(build, {build.coils[p.ref] for p in build.parts} | {net for net, _ in loads},
                              patterns, seed)
    typ = sum(coil_i[p.ref] * frac.get(build.coils[p.ref], 0.5) for p in build.parts)
    typ += sum(a * frac.get(net, 0.5) for net, a in loads)
    inputs = set(build.inputs)
    per_net: dict = {}
    for p in build.parts:
        per_net[build.coils[p.ref]] = per_net.get(build.coils[p.ref], 0.0) + coil_i[p.ref]
    overloads = []
    driven = {k.com for k in build.contacts}
    ratings = [build.target.parts[p.part_id].relay.contact_current for p in build.parts]
    limit = min((f.value for f in ratings if f is not None), default=None)
    for net, amps in per_net.items():
        if net in driven and limit is not None and amps > limit:
            overloads.append([net, round(amps, 9), limit])
    return Supply(
        round(worst, 9), round(typ, 9),
        basis="every coil energized and every load resistor at the supply voltage",
        static_a=round(worst, 9),
        coil_current_a=round(coil_total, 9), coil_voltage_v=volts,
        input_coil_current_a={net: round(a, 9) for net, a in per_net.items() if net in inputs},
        contact_overloads=overloads)
