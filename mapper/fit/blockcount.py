"""Finding binary counters among a design's flip-flops, with synchronous clear and parallel load.

Counters are found through their next-state functions, not their gates.
Flip-flops ``q0, q1, ...`` on one rising clock are the textbook synchronous
counter (common practice) when, at a clock edge,

* a **clear** net ``r`` at its active level empties every bit (the data of
  each is 0, whatever else holds),
* else a **load** net ``l`` at its active level loads every bit from a
  data net ``a_i`` (or a rail),
* else bit ``i`` toggles when the enable ``e`` and every lower bit are 1:
  its data is ``q_i ^ (e & q0 & ... & q_{i-1})``.

Clear and load may be absent.  The finder looks for them among the nets
shared by the fan-in of four or more of the clock's flip-flops (closest
first): a net is the clear when holding it at one level makes four or more
of the flip-flops' data 0 in every random pattern of the signatures, and the
load (with the clear idle) when holding it makes four or more of them equal
to another net.  With both idle it reads ``e`` from the lowest bit (its data
is ``q0 ^ e``; ``e`` must be a design net or the high rail) and climbs bit
by bit, comparing signatures.  Each whole group of four bits becomes a 4-bit
counter chip: the clear on its synchronous clear (a '163; a counter chip with
an asynchronous clear is used only when the design has no clear), the load
on its load input with the data on A-D, or both held idle and A-D tied low;
chips cascade as their datasheets show them (the enable ``e`` on every
chip's ENP, each chip's ripple carry into the next one's ENT).  Bits left
over stay flip-flops.  A modulo counter that clears itself at a count
(the clear a gate of its own bits) is found the same way.

As with every block, each use is proved by SAT before it is kept
(:func:`mapper.fit.blockuse.prove_uses`): its registers' next values equal
the flip-flops' data for every input and state, and its clock pin is the
flip-flops' own clock.  A guess the signatures make wrongly (a clear that
is not one) fails there and the counter is not used.
"""
from __future__ import annotations

from collections import Counter

from .blockuse import BlockUse, Signatures, cone, rail_lit, rising_groups

__all__ = ["find_counters"]

#: the counter chip's registers and data inputs, least significant first
_BITS = ("QA", "QB", "QC", "QD")
_DATA = ("A", "B", "C", "D")
#: flip-flops a clear or load must act on
_MIN_BITS = 4
#: how deep and how wide the search for a clear or load looks into each flip-flop's fan-in
_DEPTH, _WIDTH, _CANDIDATES = 4, 48, 64


class _Controls:
    """The clear and load of a group of flip-flops (each ``(net, active level)`` or ``None``) and the
    changes of the signatures that hold both idle."""

    def __init__(self, clear=None, load=None):
        self.clear, self.load = clear, load
        self.idle: dict = {}

    def hold(self, sigs: Signatures) -> None:
        self.idle = {c[0]: 0 if c[1] else sigs.mask for c in (self.clear, self.load) if c is not None}



def _candidates(sigs: Signatures, qs: list) -> list:
    """Nets in the fan-in of at least :data:`_MIN_BITS` of ``qs`` (not the flip-flops themselves), the
    most shared first, then closest to the first flip-flop's data."""
    storage = sigs.design.storage()
    seen: Counter = Counter()
    order: dict = {}
    for q in qs:
        for k, n in enumerate(cone(sigs.design, storage[q].d, _DEPTH, _WIDTH)):
            if n not in qs:
                seen[n] += 1
                order.setdefault(n, k)
    shared = [n for n, c in seen.items() if c >= _MIN_BITS]
    return sorted(shared, key=lambda n: (-seen[n], order[n]))[:_CANDIDATES]


def _acts(sigs: Signatures, qs: list, changes: dict, test) -> int:
    """How many of ``qs`` pass ``test(q, data signature under changes)`` (stops at :data:`_MIN_BITS`)."""
    storage = sigs.design.storage()
    hits = 0
    for q in qs:
        if test(q, sigs.value(storage[q].d, changes)):
            hits += 1
            if hits >= _MIN_BITS:
                break
    return hits


def _data_lit(sigs: Signatures, value: int, qs: list) -> tuple | None:
    """A literal of signature ``value`` to load from: a rail, or a net that reads none of the flip-flops
    ``qs`` (a net of the counting logic, or a flip-flop's complement, is no data input)."""
    lit = sigs.find(value, avoid=qs)
    if lit is None or lit[0] in ("VCC", "GND"):
        return lit
    near = cone(sigs.design, lit[0], 2 * _DEPTH, 4 * _WIDTH)
    return None if set(near) & set(qs) else lit


def _controls(sigs: Signatures, qs: list, clear_ok: bool) -> _Controls:
    """The clear and load of the flip-flops ``qs`` of one clock, where the signatures show them."""
    found = _Controls()
    cands = _candidates(sigs, qs) if len(qs) >= _MIN_BITS else []
    mask = sigs.mask
    for net in cands if clear_ok else ():
        level = next((v for v in (1, 0) if _acts(sigs, qs, {net: mask if v else 0},
                                                 lambda q, w: w == 0) >= _MIN_BITS), None)
        if level is not None:
            found.clear = (net, level)
            break
    base = {found.clear[0]: 0 if found.clear[1] else mask} if found.clear else {}

    def loads(q, w):   # the net held changes what the flip-flop takes, to a value another net has
        d = sigs.design.storage()[q].d
        return w != (sigs.value(d, base) if base else sigs.sig[d]) and _data_lit(sigs, w, qs) is not None
    for net in cands:
        if found.clear and net == found.clear[0]:
            continue
        level = next((v for v in (1, 0) if _acts(sigs, qs, base | {net: mask if v else 0}, loads) >= _MIN_BITS),
                     None)
        if level is not None:
            found.load = (net, level)
            break
    found.hold(sigs)
    return found


def _chain(sigs: Signatures, qs: list, ctl: _Controls) -> tuple | None:
    """``(enable literal, bits least significant first)`` of the longest counter among ``qs`` with the
    clear and load idle, or ``None``."""
    sig = sigs.sig
    storage = sigs.design.storage()

    def data(q):
        return sigs.value(storage[q].d, ctl.idle) if ctl.idle else sig[storage[q].d]
    best = None
    for q0 in qs:
        e = data(q0) ^ sig[q0]
        lit = sigs.find(e)
        if lit is None or lit == ("GND", False) or lit[1]:
            continue
        bits, carry = [q0], e & sig[q0]
        left = [q for q in qs if q != q0]
        while left and carry:
            nxt = next((q for q in left if data(q) ^ sig[q] == carry), None)
            if nxt is None:
                break
            bits.append(nxt)
            left.remove(nxt)
            carry &= sig[nxt]
        if best is None or len(bits) > len(best[1]):
            best = (lit, bits)
    return best if best is not None and len(best[1]) >= 4 else None


def _pins(sigs: Signatures, ctl: _Controls, bits: list, group: list) -> dict:
    """The clear, load and data pins of one chip holding ``bits``, flip-flops of the clock's ``group``."""
    storage = sigs.design.storage()
    ins = {"CLR_N": rail_lit(1), "LOAD_N": rail_lit(1)}
    ins.update({p: rail_lit(0) for p in _DATA})
    if ctl.clear:   # active low pins: a control active high goes in through its complement
        ins["CLR_N"] = (ctl.clear[0], bool(ctl.clear[1]))
    if ctl.load:
        ins["LOAD_N"] = (ctl.load[0], bool(ctl.load[1]))
        held = dict(ctl.idle)
        held[ctl.load[0]] = sigs.mask if ctl.load[1] else 0
        for p, q in zip(_DATA, bits):
            lit = _data_lit(sigs, sigs.value(storage[q].d, held), group)
            if lit is not None:
                ins[p] = lit
    return ins


def find_counters(sigs: Signatures, cells: dict, taken: set, serial) -> list:
    """4-bit synchronous counter uses for the design's counters (see the module docstring)."""
    cell = "count4s" if "count4s" in cells else "count4" if "count4" in cells else None
    if cell is None:
        return []
    storage = sigs.design.storage()
    uses = []
    for clock, qs in rising_groups(sigs, taken).items():
        ctl = _controls(sigs, qs, clear_ok=cell == "count4s")
        plain = _Controls()
        while True:
            left = [q for q in qs if q not in taken]
            found = _chain(sigs, left, ctl) if ctl.idle else None
            use_ctl = ctl
            if found is None:
                found, use_ctl = _chain(sigs, left, plain), plain
            if found is None:
                break
            enable, bits = found
            group = serial()
            prev = None
            for k in range(0, len(bits) - len(bits) % 4, 4):
                ins = _pins(sigs, use_ctl, bits[k:k + 4], qs)
                ins.update({"CLK": (clock, False), "ENP": enable,
                            "ENT": (f"{prev}.RCO", False) if prev else rail_lit(1)})
                name = serial()
                state = {r: (q, storage[q].init) for r, q in zip(_BITS, bits[k:k + 4])}
                last = k + 8 > len(bits)
                outs = {} if last else {"RCO": [(f"{name}.RCO", False)]}
                uses.append(BlockUse(cell, ins, outs, state, family="counter", name=name, group=group,
                                     chip=name, label=f"counter bits {k}-{k + 3} clocked by {clock}"))
                taken.update(state[r][0] for r in _BITS)
                prev = name
    return uses
