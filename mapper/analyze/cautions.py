"""Cautions: what a builder must heed before wiring and powering a build.

Read off the build and its analyses, never made by the mapper: start-up
states of storage, supply current and fusing, mains on relay contacts (only
as local electrical codes and licensed practice allow), contacts that float
while they transfer, coil diodes, coil current through inputs and contacts,
and feedback loops without a defined load.
"""
from __future__ import annotations

from ..build import Build
from ..units import si
from .results import Glitches, Supply, Timing

__all__ = ["cautions", "gate_cautions", "relay_cautions", "timing_cautions", "glitch_cautions"]

#: hold and pulse-width cautions listed at most (the count of all is given)
MAX_TIMING_CAUTIONS = 5


def cautions(build: Build, timing: Timing, supply: Supply, loops: list, wired=None,
             glitches: Glitches | None = None) -> list:
    """Every caution for ``build`` (relay or gate), in the order a builder meets them."""
    if build.is_relay:
        out = relay_cautions(build, timing, supply, loops, wired)
    else:
        out = gate_cautions(build)
    if glitches is not None:
        out += glitch_cautions(glitches)
    return out + timing_cautions(timing)


def glitch_cautions(glitches: Glitches) -> list:
    """One caution per net where a glitch can reach a clock, enable, preset or clear, with its causes."""
    groups: dict = {}
    for h in glitches.hazards:
        if h.get("error"):
            groups.setdefault(h["net"], []).append(h)
    out = []
    for net, hs in groups.items():
        widest = max(hs, key=lambda h: h["width_s"][1])
        pins = ", ".join(sorted({f"the {w['role']} of {w['part']}" + (f" (pin {w['pin_number']})"
                                                                     if w.get("pin_number") else "")
                                 for h in hs for w in h["reaches"]}))
        when = "; ".join(", ".join(f"{k}={v}" for k, v in c.items()) or "in any state" for c in widest["when"][:2])
        path = ""
        rp = [p for p in widest.get("racing_paths", []) if p.get("hops")]
        if rp:
            path = "; racing paths from " + " and ".join(
                f"{p['from']} through {len(p['hops'])} gate(s)" for p in rp[:2])
        more = f" (and {len(hs) - 1} more kind(s) of change)" if len(hs) > 1 else ""
        moved = widest["inputs_changed"]
        out.append(f"glitch on {net} reaches {pins}: a {widest['kind']} pulse up to "
                   f"{si(widest['width_s'][1], 's')} when {', '.join(moved)} change{'s' if len(moved) == 1 else ''} "
                   f"({when}){path}{more}; it can store a wrong bit. Build with --hazard-free, or drive it from "
                   "one input or one storage bit")
    return out


def timing_cautions(timing: Timing) -> list:
    """Clock rates that cannot work, hold margins and pulse widths missed (gate and relay builds)."""
    ck = timing.clock
    if ck is None:
        return []
    out = []
    if ck.period_min_s == float("inf"):
        out.append("latches open at the same time feed one another in a loop: no clock rate lets them settle")
        return out
    req = ck.requested_period_s
    if req is not None and req < ck.period_min_s * (1 - 1e-9):
        out.append(f"the clock asked for ({si(1 / req, 'Hz')}) is faster than this build can run: at most "
                   f"{si(ck.max_hz, 'Hz')} (a period of {si(ck.period_min_s, 's')}, set by the "
                   f"{ck.limited_by})")
    for v in ck.hold_violations[:MAX_TIMING_CAUTIONS]:
        src = v["from"]
        start = src.get("net", "?") + (f" ({src['part']})" if src.get("part") else "")
        out.append(f"hold margin missed: data from {start} can reach the data input {v['to']['net']} of "
                   f"{v['to']['part']} ({v['to']['cell']}) {si(-v['slack_s'], 's')} sooner than it allows after it "
                   f"captures (it needs the data held {si(v['hold_s'], 's')}): the bit can take the next value "
                   "early. Lengthen that path, or shorten the clock's path to the part")
    if len(ck.hold_violations) > MAX_TIMING_CAUTIONS:
        out.append(f"... {len(ck.hold_violations) - MAX_TIMING_CAUTIONS} more hold margins missed (netfit timing)")
    for p in ck.pulse_violations[:MAX_TIMING_CAUTIONS]:
        out.append(f"clock pulses too short for {p['part']} ({p['cell']}): each half period is "
                   f"{si(p['half_period_s'], 's')}, the part needs {si(p['pulse_s'], 's')}")
    return out


def _start_advice(has_input: bool, init: int) -> str:
    role = "clear" if init == 0 else "preset"
    if has_input:
        return f"drive its {role} input from a power-on reset if it matters"
    return f"it has no {role} input: load it before its value matters"


def gate_cautions(build: Build) -> list:
    """Storage that must start at a known value: chips and gate loops power up in an unknown state."""
    out = []
    for c in build.cells:
        cd = build.cell_def(c)
        if c.group is None and cd.storage is not None and c.init in (0, 1):
            role = "clear" if c.init == 0 else "preset"
            out.append(f"{c.pins[cd.output]} must start at {c.init}: the part powers up in an unknown state; "
                       + _start_advice(any(r == role for r in cd.roles.values()), c.init))
        elif cd.block is not None and c.state:   # a counter's or shift register's bits
            for reg, (net, init) in c.state.items():
                if init in (0, 1):
                    clear = cd.block.register(reg).clear is not None and init == 0
                    out.append(f"{net} must start at {init}: the part ({c.part_ref}) powers up in an unknown "
                               "state; " + _start_advice(clear, init))
    for g in build.storage_groups.values():
        if g.init in (0, 1):
            out.append(f"{g.q} must start at {g.init}: a {g.template} powers up in an unknown state; "
                       "force it with a power-on reset if it matters")
    return out


def relay_cautions(build: Build, timing: Timing, supply: Supply, loops: list, wired=None) -> list:
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
               "coils and the pull-down resistors of this build give them a defined load")
    if build.support_nets("coil-diode"):
        out.append("the diode across each coil lengthens its release time (figures in the timing assume "
                   "so); a zener in series with the diode restores most of it")
    for lt in build.latches:
        if lt.inverted:
            start = ("must start at 1: its relay holds the complement, so with every relay released "
                     "at power-up it starts at 1")
        elif lt.design_init == 0:
            start = "powers up at 0 (its relay released), as the design starts"
        else:
            start = ("powers up at 0 (its relay released); the design leaves the start open: add a "
                     "power-on reset if another start matters")
        out.append(f"{lt.net}: {start}")
    ck = timing.clock
    for seq in build.sequencers:
        what = "clock" if seq.edge else "enable"
        if ck is not None and ck.high_min_s is not None:
            out.append(f"the {what} {seq.control} is stepped through its phases by four relays in turn: keep it "
                       f"high at least {si(ck.high_min_s, 's')} and low at least {si(ck.low_min_s, 's')} so every "
                       "step lands (worst figures, coil diodes included)")
    if build.sequencers:
        out.append("storage coils are fed through steering diodes (a load path and a hold path each): fit each "
                   "diode with its cathode towards the coil, as the wiring list says")
    if wired is not None:
        for net, amps in sorted(wired.inputs_a.items()):
            if amps <= 0:
                continue   # an input no coil hangs on
            out.append(f"input {net} carries up to {amps * 1000:.0f} mA when on (coils it feeds through contacts "
                       f"included, over {wired.states} settled states): use a switch rated for it")
        for text in wired.over:
            out.append(f"warning: {text}")
    else:
        for net, amps in sorted(supply.input_coil_current_a.items()):
            out.append(f"input {net} carries {amps * 1000:.0f} mA of coil current when on")
    for net, amps, limit in supply.contact_overloads:
        out.append(f"net {net} feeds {amps * 1000:.0f} mA of coils through contacts rated "
                   f"{limit:g} A: split the load or use a heavier relay")
    storage = {lt.state for lt in build.latches}
    for seq in build.sequencers:
        storage |= seq.own_nets()
    for loop in loops:
        if not storage & set(loop["nets"]):
            out.append("warning: a feedback loop through contacts that is neither storage nor a sequencer: "
                       + ", ".join(loop["nets"][:8]) + ": it may chatter")
    return out
