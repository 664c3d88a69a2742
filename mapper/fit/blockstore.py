"""Finding counters and registers among a design's flip-flops.

**Counters** are found through their next-state functions, not their
gates: flip-flops ``q0, q1, ...`` on one rising clock form a binary counter
enabled by ``e`` when each one's data is ``q_i ^ (e & q0 & ... & q_{i-1})``
(the textbook synchronous counter: a bit toggles when every lower bit is 1).
The finder reads ``e`` from the lowest bit (its data is ``q0 ^ e``, and
``e`` must be a design net or the high rail), then climbs bit by bit,
comparing signatures over random patterns of the inputs and flip-flop
states.  Each whole group of four bits becomes a 4-bit synchronous counter
chip, load and clear held idle, data inputs tied low; chips cascade as their
datasheets show them (the enable ``e`` on every chip's ENP, each chip's
ripple carry into the next one's ENT).  Bits left over stay flip-flops.

**Registers**: rising-edge flip-flops sharing a clock, three or more of
them, go into multi-flip-flop chips with a common clock and clear (an
octal, hex or quad D flip-flop chip, the smallest that holds them, eight a
chip while more are left), the clear held idle.

**Latches**: transparent latches sharing an enable net, three or more of
them, go into octal latch chips (eight a chip, the target's first carrier;
its output enable tied on).  The chip's latches are open while LE is high;
latches of the design open while their enable is low get the enable
through one inverter (the same one for every chip on that enable).  Spare
latches of the last chip have their inputs tied, as every spare section.

As with every block, each use is proved by SAT before it is kept
(:func:`mapper.fit.blockuse.prove_uses`): its registers' next values equal
the flip-flops' data for every input and state, and its clock pin is the
flip-flops' own clock.
"""
from __future__ import annotations

from ..netlist import Storage
from .blockuse import BlockUse, Signatures, rail_lit

__all__ = ["find_counters", "find_registers", "find_latches"]

#: the counter chip's registers, least significant first
_BITS = ("QA", "QB", "QC", "QD")
#: register chips: (cell, part, flip-flops a chip), the largest first
_REGISTER_PARTS = (("dff_r", "74HC273", 8), ("dff_r", "74HC174", 6), ("dff_rq", "74HC175", 4))


def _clocked(sigs: Signatures, taken: set) -> dict:
    """clock net -> rising-edge flip-flops on it (design order) not taken yet."""
    groups: dict = {}
    for q, st in sigs.design.storage().items():
        if st.kind == "re" and st.control is not None and q not in taken:
            groups.setdefault(st.control, []).append(q)
    return groups


def _chain(sigs: Signatures, qs: list) -> tuple | None:
    """``(enable literal, bits least significant first)`` of the longest counter among ``qs``, or ``None``."""
    sig = sigs.sig
    storage = sigs.design.storage()
    best = None
    for q0 in qs:
        e = sig[storage[q0].d] ^ sig[q0]
        lit = sigs.find(e)
        if lit is None or lit == ("GND", False) or lit[1]:
            continue
        bits, carry = [q0], e & sig[q0]
        left = [q for q in qs if q != q0]
        while left and carry:
            nxt = next((q for q in left if sig[storage[q].d] ^ sig[q] == carry), None)
            if nxt is None:
                break
            bits.append(nxt)
            left.remove(nxt)
            carry &= sig[nxt]
        if best is None or len(bits) > len(best[1]):
            best = (lit, bits)
    return best if best is not None and len(best[1]) >= 4 else None


def find_counters(sigs: Signatures, cells: dict, taken: set, serial) -> list:
    """4-bit synchronous counter uses for the design's counters (see the module docstring)."""
    cell = "count4s" if "count4s" in cells else "count4" if "count4" in cells else None
    if cell is None:
        return []
    storage = sigs.design.storage()
    uses = []
    for clock, qs in _clocked(sigs, taken).items():
        while True:
            found = _chain(sigs, [q for q in qs if q not in taken])
            if found is None:
                break
            enable, bits = found
            group = serial()
            prev = None
            for k in range(0, len(bits) - len(bits) % 4, 4):
                ins = {"CLK": (clock, False), "CLR_N": rail_lit(1), "LOAD_N": rail_lit(1), "ENP": enable,
                       "ENT": (f"{prev}.RCO", False) if prev else rail_lit(1)}
                ins.update({p: rail_lit(0) for p in ("A", "B", "C", "D")})
                name = serial()
                state = {r: (q, storage[q].init) for r, q in zip(_BITS, bits[k:k + 4])}
                last = k + 8 > len(bits)
                outs = {} if last else {"RCO": [(f"{name}.RCO", False)]}
                uses.append(BlockUse(cell, ins, outs, state, family="counter", name=name, group=group,
                                     chip=name, label=f"counter bits {k}-{k + 3} clocked by {clock}"))
                taken.update(state[r][0] for r in _BITS)
                prev = name
    return uses


def find_registers(sigs: Signatures, cells: dict, taken: set, serial) -> list:
    """Multi-flip-flop chip uses for flip-flops sharing a clock (see the module docstring)."""
    parts = [(c, p, n) for c, p, n in _REGISTER_PARTS if c in cells]
    if not parts:
        return []
    storage = sigs.design.storage()
    uses = []
    for clock, qs in _clocked(sigs, taken).items():
        while len(qs) >= 3:
            fits = [x for x in parts if x[2] >= len(qs)]
            cell, part, size = min(fits, key=lambda x: x[2]) if fits else max(parts, key=lambda x: x[2])
            chunk, qs = qs[:size], qs[size:]
            chip = serial()
            for q in chunk:
                st: Storage = storage[q]
                uses.append(BlockUse(cell, {"D": (st.d, False), "CLK": (clock, False), "CLR_N": rail_lit(1)},
                                     {}, {"Q": (q, st.init)}, family="register", name=serial(), part=part,
                                     chip=chip, label=f"flip-flop {q} in a {size}-bit register"))
                taken.add(q)
    return uses


#: the smallest group of latches on one enable worth an octal latch chip (a quad latch chip holds four
#: on two enables)
MIN_LATCHES = 3


def find_latches(sigs: Signatures, cells: dict, taken: set, serial) -> list:
    """Octal latch chip uses for transparent latches sharing an enable (see the module docstring)."""
    if "latch_q" not in cells:
        return []
    groups: dict = {}
    for q, st in sigs.design.storage().items():
        if st.kind in ("ah", "al") and st.control is not None and q not in taken:
            groups.setdefault((st.control, st.kind), []).append(q)
    storage = sigs.design.storage()
    uses = []
    for (enable, kind), qs in groups.items():
        if len(qs) < MIN_LATCHES:
            continue
        for k in range(0, len(qs), 8):
            chunk, chip = qs[k:k + 8], serial()
            for q in chunk:
                st: Storage = storage[q]
                uses.append(BlockUse("latch_q", {"D": (st.d, False), "LE": (enable, kind == "al")}, {},
                                     {"Q": (q, st.init)}, family="latch", name=serial(), chip=chip,
                                     label=f"latch {q} in an octal latch on {enable}"))
                taken.add(q)
    return uses
