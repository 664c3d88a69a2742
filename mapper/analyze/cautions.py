"""Cautions: what a builder must heed before wiring and powering a build.

Read off the build and its analyses, never made by the mapper: start-up
states of storage, supply current and fusing, mains on relay contacts (only
as local electrical codes and licensed practice allow), contacts that float
while they transfer, coil diodes, coil current through inputs and contacts,
and feedback loops without a defined load.
"""
from __future__ import annotations

from ..build import Build
from .results import Supply, Timing

__all__ = ["cautions", "gate_cautions", "relay_cautions"]


def cautions(build: Build, timing: Timing, supply: Supply, loops: list) -> list:
    """Every caution for ``build`` (relay or gate), in the order a builder meets them."""
    if build.is_relay:
        return relay_cautions(build, timing, supply, loops)
    return gate_cautions(build)


def gate_cautions(build: Build) -> list:
    """Storage that must start at a known value: chips and gate loops power up in an unknown state."""
    out = []
    for c in build.cells:
        cd = build.cell_def(c)
        if c.group is None and cd.storage is not None and c.init in (0, 1):
            out.append(f"{c.pins[cd.output]} must start at {c.init}: the part powers up in an unknown state; "
                       f"drive its {'clear' if c.init == 0 else 'preset'} input from a power-on reset if it matters")
    for g in build.storage_groups.values():
        if g.init in (0, 1):
            out.append(f"{g.q} must start at {g.init}: a {g.template} powers up in an unknown state; "
                       "force it with a power-on reset if it matters")
    return out


def relay_cautions(build: Build, timing: Timing, supply: Supply, loops: list) -> list:
    """Supply and fusing, mains, transfers, coil diodes, start-up states, coil currents, loops."""
    out = []
    volts = supply.coil_voltage_v
    n = len(build.parts)
    out.append(f"supply: {supply.current_a * 1000:.0f} mA at {volts:g} V with every coil energized "
               f"({n} relay{'s' if n != 1 else ''}); use a supply rated above that with margin, and fuse it")
    ratings = sorted({r.contact_rating for r in (build.part_def(p.ref).relay for p in build.parts) if r is not None})
    out.append("contacts switching mains voltage: only as local electrical codes and licensed practice allow; "
               f"these contacts are rated {', '.join(ratings) or 'as the catalog says'}")
    out.append("changeover contacts break before they make: relay-driven nets float during each transfer; "
               "the pull-down resistors of this build give them a defined load")
    if build.support_nets("coil-diode"):
        out.append("the diode across each coil lengthens its release time (figures in the timing assume "
                   "so); a zener in series with the diode restores most of it")
    per_level = timing.relay.per_level_s if timing.relay is not None else 0.0
    for lt in build.latches:
        if lt.inverted:
            start = ("must start at 1: its relay holds the complement, so with every relay released "
                     "at power-up it starts at 1")
        elif lt.design_init == 0:
            start = "powers up at 0 (its relay released), as the design starts"
        else:
            start = ("powers up at 0 (its relay released); the design leaves the start open: add a "
                     "power-on reset if another start matters")
        out.append(f"{lt.net}: {start}; hold the clock or enable in each state at least "
                   f"{per_level * 1000:.1f} ms so the hold contact closes")
    for net, amps in sorted(supply.input_coil_current_a.items()):
        out.append(f"input {net} carries {amps * 1000:.0f} mA of coil current when on")
    for net, amps, limit in supply.contact_overloads:
        out.append(f"net {net} feeds {amps * 1000:.0f} mA of coils through contacts rated "
                   f"{limit:g} A: split the load or use a heavier relay")
    for loop in loops:
        if loop["unloaded"]:
            out.append("warning: feedback loop through contacts without a defined load on "
                       + ", ".join(loop["unloaded"]) + " (loop: " + ", ".join(loop["nets"]) + "): it may chatter")
    return out
