"""Finding registers and latches among a design's storage elements (counters: :mod:`.blockcount`).

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
from .blockuse import BlockUse, Signatures, rail_lit, rising_groups

__all__ = ["find_registers", "find_latches"]

#: register chips: (cell, part, flip-flops a chip), the largest first
_REGISTER_PARTS = (("dff_r", "74HC273", 8), ("dff_r", "74HC174", 6), ("dff_rq", "74HC175", 4))



def find_registers(sigs: Signatures, cells: dict, taken: set, serial) -> list:
    """Multi-flip-flop chip uses for flip-flops sharing a clock (see the module docstring)."""
    parts = [(c, p, n) for c, p, n in _REGISTER_PARTS if c in cells]
    if not parts:
        return []
    storage = sigs.design.storage()
    uses = []
    for clock, qs in rising_groups(sigs, taken).items():
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
                st = storage[q]
                uses.append(BlockUse("latch_q", {"D": (st.d, False), "LE": (enable, kind == "al")}, {},
                                     {"Q": (q, st.init)}, family="latch", name=serial(), chip=chip,
                                     label=f"latch {q} in an octal latch on {enable}"))
                taken.add(q)
    return uses
