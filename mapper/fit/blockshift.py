"""Finding shift registers among a design's flip-flops.

A **shift register** (serial in, parallel out) is a chain of rising-edge
flip-flops on one clock where each one's data is the one before it: ``q1``
takes ``q0``, ``q2`` takes ``q1`` ... (common practice).  The finder links
each flip-flop to the flip-flop on the same clock whose output its data
equals (by signature; the proof decides), follows the links into chains
(a ring -- the last stage fed back to the first -- is cut at its first
flip-flop in design order), and puts each chain of three or more on
8-bit shift register chips:

* **serial in, parallel out** (the '164): the first stage takes ``A & B``;
  where the first stage's data is the AND of two nets they go to ``A`` and
  ``B`` (the gate is saved), else ``A`` takes the data and ``B`` is tied
  high.  The clear is tied inactive (the design's flip-flops have none).
  A chain longer than eight goes on several chips, each chip's first stage
  fed from the last stage of the one before; the far stages of a chip not
  filled are spare.  Every stage's output (a *tap*) is wired from its pin.
* **with an output register** (the '595), only where the design has that
  structure: a second flip-flop beside each stage, all on one clock of
  their own, each taking its stage's value, and the stages read by nothing
  else (the chip shows only its output register and its last stage, on
  ``QH_S``).  The shift clock, serial input and output clock are wired; the
  clear is tied inactive.  A chain without that structure goes on '164s.

Each use is proved by SAT like every block (:func:`mapper.fit.blockuse.prove_uses`).
"""
from __future__ import annotations

from ..logic.function import Function
from ..netlist import Logic
from .blockuse import BlockUse, Signatures, rail_lit, rising_groups

__all__ = ["find_shifts", "chains"]

#: the stages of an 8-bit shift register chip, first first
STAGES = ("QA", "QB", "QC", "QD", "QE", "QF", "QG", "QH")
_SHIFT_STAGES = ("SA", "SB", "SC", "SD", "SE", "SF", "SG", "SH")
#: the shortest chain worth a chip (two flip-flops fit one dual flip-flop chip anyway)
MIN_CHAIN = 3
_AND2 = Function.from_table(2, 0b1000)



def chains(sigs: Signatures, qs: list) -> list:
    """Chains (lists of flip-flops, first stage first) among ``qs``, flip-flops on one clock, where each
    stage's data has the signature of the stage before; longest first."""
    storage = sigs.design.storage()
    by_sig = {sigs.sig[q]: q for q in qs}
    nxt: dict = {}
    has_prev: set = set()
    for q in qs:   # q takes the value of prev: the link prev -> q (the first taker of each prev kept)
        prev = by_sig.get(sigs.sig[storage[q].d])
        if prev is not None and prev != q and prev not in nxt:
            nxt[prev] = q
            has_prev.add(q)
    out: list = []
    seen: set = set()
    heads = [q for q in qs if q in nxt and q not in has_prev]
    heads += [q for q in qs if q in nxt and q in has_prev]   # rings: cut at the first left in design order
    for h in heads:
        if h in seen:
            continue
        chain = [h]
        seen.add(h)
        while chain[-1] in nxt and nxt[chain[-1]] not in seen:
            chain.append(nxt[chain[-1]])
            seen.add(chain[-1])
        out.append(chain)
    return sorted(out, key=len, reverse=True)


def _serial(sigs: Signatures, head: str) -> tuple:
    """``(A, B)`` literals of a '164 whose first stage is ``head``: the two nets of an AND2 feeding it, or
    its data and the high rail."""
    d = sigs.design.storage()[head].d
    node = sigs.design.nodes.get(d)
    if isinstance(node, Logic) and node.func == _AND2 and len(set(node.fanins)) == 2:
        return (node.fanins[0], False), (node.fanins[1], False)
    return (d, False), rail_lit(1)


def _output_register(sigs: Signatures, chain: list, taken: set) -> list | None:
    """The flip-flops of an output register beside ``chain`` (one per stage, all on one clock, each taking
    its stage's value), when every stage is read by its next stage and its output flip-flop only, no stage
    is a design output and the first stage's data is not a stage (no ring); else ``None``.  (The chip
    shows its stages only through the output register, and its eighth on ``QH_S``, kept for cascading.)"""
    design = sigs.design
    storage = design.storage()
    fan = sigs.fanout()
    if set(chain) & (set(design.outputs) | {storage[chain[0]].d}):
        return None
    regs = []
    for k, q in enumerate(chain):
        readers = [r for r in fan.get(q, ()) if r not in chain]
        if len(readers) != 1 or readers[0] in taken:
            return None
        r = readers[0]
        st = storage.get(r)
        if st is None or st.kind != "re" or st.control is None or st.d != q:
            return None
        if any(x != r and (k + 1 == len(chain) or x != chain[k + 1]) for x in fan.get(q, ())):
            return None
        regs.append(r)
    clocks = {storage[r].control for r in regs}
    return regs if len(clocks) == 1 else None


def _use_164(sigs, chunk: list, ser: tuple, clock: str, cell: str, serial, group: str) -> BlockUse:
    storage = sigs.design.storage()
    a, b = ser
    ins = {"A": a, "B": b, "CLK": (clock, False), "CLR_N": rail_lit(1)}
    state = {STAGES[k]: (q, storage[q].init) for k, q in enumerate(chunk)}
    name = serial()
    return BlockUse(cell, ins, {}, state, family="shift register", name=name, chip=name, group=group,
                    label=f"shift register {chunk[0]}..{chunk[-1]} clocked by {clock}")


def _use_595(sigs, chunk: list, regs: list, ser: tuple, clock: str, cell: str, serial, group: str,
             link: str | None, last: bool) -> BlockUse:
    """A '595 holding ``chunk`` and its output register ``regs``, serial input ``ser`` (a literal);
    ``link`` a net of the chip before's ``QH_S`` (or ``None``); the chip's own ``QH_S`` made a link net
    unless it is the ``last`` chip."""
    storage = sigs.design.storage()
    rclk = storage[regs[0]].control
    ins = {"SER": (link, False) if link else ser, "SRCLK": (clock, False), "RCLK": (rclk, False),
           "SRCLR_N": rail_lit(1)}
    state = {_SHIFT_STAGES[k]: (q, storage[q].init) for k, q in enumerate(chunk)}
    state.update({STAGES[k]: (r, storage[r].init) for k, r in enumerate(regs)})
    name = serial()
    outs = {} if last else {"QH_S": [(f"{name}.QH_S", False)]}
    return BlockUse(cell, ins, outs, state, family="shift register", name=name, chip=name, group=group,
                    label=f"shift register {chunk[0]}..{chunk[-1]} with output register, clocked by {clock}")


def find_shifts(sigs: Signatures, cells: dict, taken: set, serial) -> list:
    """8-bit shift register chip uses for the design's chains of flip-flops (see the module docstring)."""
    if "shift8" not in cells and "shift8o" not in cells:
        return []
    uses: list = []
    for clock, qs in rising_groups(sigs, taken).items():
        for chain in chains(sigs, [q for q in qs if q not in taken]):
            if len(chain) < MIN_CHAIN:
                continue
            uses.extend(_place_chain(sigs, cells, chain, clock, taken, serial))
    return uses


def _place_chain(sigs, cells: dict, chain: list, clock: str, taken: set, serial) -> list:
    """The uses of one chain: '595s where its output register is there (whole chips of eight stages but
    the last), else '164s, eight stages a chip; a last chip of fewer than :data:`MIN_CHAIN` stages is left
    to the flip-flops."""
    ser = _serial(sigs, chain[0])
    group = serial()
    regs = _output_register(sigs, chain, taken) if "shift8o" in cells else None
    uses: list = []
    if regs is not None:
        link = None
        for k in range(0, len(chain), 8):   # every chip but the last is full: its QH_S is its eighth stage
            last = k + 8 >= len(chain)
            head = (sigs.design.storage()[chain[0]].d, False)
            u = _use_595(sigs, chain[k:k + 8], regs[k:k + 8], head, clock, "shift8o", serial, group, link, last)
            link = None if last else f"{u.name}.QH_S"
            uses.append(u)
            taken.update(q for q, _ in u.state.values())
        return uses
    if "shift8" not in cells:
        return []
    for k in range(0, len(chain), 8):
        chunk = chain[k:k + 8]
        if len(chunk) < MIN_CHAIN:
            break
        first = ser if k == 0 else ((chain[k - 1], False), rail_lit(1))
        uses.append(_use_164(sigs, chunk, first, clock, "shift8", serial, group))
        taken.update(chunk)
    return uses
