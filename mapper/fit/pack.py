"""Packing: mapped cells into slots of numbered parts, with whole parts as the objective.

Users pay for whole packages.  After mapping, the packer

1. counts the slots each cell type needs and the parts that carry them;
2. moves cells into spare slots of other part types where a slot of another
   cell, with inputs joined or tied to a rail, does the same function (an
   inverter in a spare NAND2 slot with both inputs joined, a NAND2 in a spare
   NAND3 slot with one input tied high); a move is made only when it empties
   a whole part;
3. numbers the parts (``U1``…) and fills their slots in topological order,
   so that neighbouring cells share packages and short wires;
4. ties every input of an unused slot of a used part to a rail (unused CMOS
   inputs must never float -- generic family datasheets) and adds the support
   parts the target's rules ask for (one decoupling capacitor per chip --
   common practice).
"""
from __future__ import annotations

import logging
from collections import Counter, defaultdict
from collections.abc import Iterable
from functools import lru_cache
from itertools import combinations_with_replacement, product

from ..build import Build, CellInstance, PartInstance, Tie
from ..catalog.model import Target
from ..errors import UsageError
from .library import symmetric_table
from .support import add_support

__all__ = ["embeddings", "pack"]

log = logging.getLogger(__name__)


def embeddings(target) -> dict:
    """cell -> list of ``(host cell, assignment)``: ways to do ``cell`` in a
    slot of ``host``.  ``assignment[i]`` says what feeds host input ``i``: an
    input index of ``cell``, ``"GND"`` or ``"VCC"``."""
    return _embeddings(id(target), _TargetKey(target))


class _TargetKey:
    def __init__(self, target):
        self.target = target

    def __hash__(self):
        return hash(self.target.name)

    def __eq__(self, other):
        return self.target is other.target


@lru_cache(maxsize=32)
def _embeddings(_tid, key):
    target = key.target
    logic = {n: c for n, c in target.cells.items() if c.storage is None and c.function is not None
             and target.carriers.get(n)}
    out = defaultdict(list)
    for name, cd in logic.items():
        a = cd.function.n
        want = cd.function.table()
        for host, hd in logic.items():
            if host == name:
                continue
            b = hd.function.n
            choices = list(range(a)) + ["GND", "VCC"]
            htab = hd.function.table()
            tries: Iterable
            if _symmetric(htab, b):
                tries = combinations_with_replacement(choices, b)
            elif len(choices) ** b <= 50_000:
                tries = product(choices, repeat=b)
            else:
                continue
            for assign in tries:
                if not all(i in assign for i in range(a)):
                    continue
                if _composed(htab, b, assign, a) == want:
                    out[name].append((host, assign))
                    break
    return dict(out)


def _symmetric(t: int, n: int) -> bool:
    return symmetric_table(t, n)


def _composed(htab: int, b: int, assign, a: int) -> int:
    t = 0
    for m in range(1 << a):
        idx = 0
        for i, src in enumerate(assign):
            bit = 1 if src == "VCC" else 0 if src == "GND" else (m >> src) & 1
            idx |= bit << i
        if (htab >> idx) & 1:
            t |= 1 << m
    return t


def _carrier(target, cell):
    ids = target.carriers.get(cell) or []
    if not ids:
        raise UsageError(f"target {target.name}: no part carries cell '{cell}'")
    pd = target.parts[ids[0]]
    return pd, len(pd.slots_for(cell))


def pack(design_name: str, target: Target, inputs, outputs, mapping, storage_uses) -> Build:
    """Place mapped cells and storage cells into parts; returns a :class:`Build`.

    ``storage_uses`` is a list of ``(cell name, pins dict, origin, init)`` for
    storage cells (already chosen by the caller).
    """
    uses = [(c.cell, c, None) for c in mapping.cells]  # (slot cell, CellUse, assignment)
    counts = Counter(u[0] for u in uses)
    for cell, _, _, _ in storage_uses:
        counts[cell] += 1
    emb = embeddings(target)
    # -- move cells into spare slots where that empties a whole part -------
    moved = True
    while moved:
        moved = False
        parts_of = {}
        for cell, k in counts.items():
            _, s = _carrier(target, cell)
            parts_of[cell] = -(-k // s)
        order = sorted((c for c in counts if counts[c]),
                       key=lambda c: counts[c] - _carrier(target, c)[1] * (parts_of[c] - 1))
        for cell in order:
            if any(u[0] == cell and u[2] is None and _is_storage(target, cell) for u in uses):
                continue
            _, s = _carrier(target, cell)
            last = counts[cell] - s * (parts_of[cell] - 1)
            hosts = []
            if _shares_inputs(target, cell):
                continue
            for host, assign in emb.get(cell, []):
                if host not in counts or not counts[host] or _shares_inputs(target, host):
                    continue
                _, hs = _carrier(target, host)
                spare = parts_of[host] * hs - counts[host]
                if spare > 0:
                    hosts.append((host, assign, spare))
            if sum(h[2] for h in hosts) < last:
                continue
            # move `last` cells of this type (the latest in order: fewest neighbours);
            # cells already moved stay where they are, so each move empties a
            # whole part and the loop ends
            idx = [i for i, u in enumerate(uses) if u[0] == cell and u[2] is None][::-1]
            if len(idx) < last:
                continue
            for host, assign, spare in hosts:
                while spare and last and idx:
                    i = idx.pop(0)
                    _, use, _ = uses[i]
                    uses[i] = (host, use, assign)
                    counts[cell] -= 1
                    counts[host] += 1
                    spare -= 1
                    last -= 1
            if not counts[cell]:
                del counts[cell]
            moved = True
            break

    build = Build(design=design_name, target=target, inputs=list(inputs), outputs=list(outputs))
    # -- number parts and fill slots -------------------------------------------
    free: dict = defaultdict(list)  # part id -> list of (ref, slot index) free, in order
    order_of_types = []
    for cell, _, _ in uses:
        if cell not in order_of_types:
            order_of_types.append(cell)
    for cell, _, _, _ in storage_uses:
        if cell not in order_of_types:
            order_of_types.append(cell)
    nref = [0]
    on_pin: dict = {}  # (part ref, pin number) -> net, for slots of parts with shared pins placed so far

    def new_part(pd, cell):
        nref[0] += 1
        ref = f"U{nref[0]}"
        build.parts.append(PartInstance(ref, pd.id))
        # every slot of the part able to do this cell
        for s in pd.slots:
            if s.cell == cell:
                free[(pd.id, cell)].append((ref, s.index))
        for s in pd.slots:
            if s.cell != cell:
                free[(pd.id, s.cell)].append((ref, s.index))

    def take(cell, pins=None):
        """The next free slot for ``cell``; with ``pins`` (cell pin -> net), the first whose pins shared
        with used slots (a common enable or clock) carry those nets already, else one of a new part."""
        pd, _ = _carrier(target, cell)
        lst = free[(pd.id, cell)]
        if pins is not None:
            at = next((i for i, (r, k) in enumerate(lst) if _fits(pd, k, pins, r, on_pin)), None)
            if at is None:
                new_part(pd, cell)
                at = next(i for i, (r, _) in enumerate(lst) if r == f"U{nref[0]}")
            ref, k = lst.pop(at)
            on_pin.update({(ref, num): pins[p] for p, num in _slot_pins(pd, k).items() if p in pins})
            return ref, k
        if not lst:
            new_part(pd, cell)
        return lst.pop(0)

    for cell, use, assign in uses:
        cd = target.cells[cell]
        pins = {}
        if assign is None:
            for pin, net in zip(cd.inputs, use.args):
                pins[pin] = net
        else:
            for pin, src in zip(cd.inputs, assign):
                pins[pin] = src if isinstance(src, str) else use.args[src]
        pins[cd.output] = use.out
        # sections that share a pin (the select of a quad multiplexer) go where it carries their net
        ref, slot = take(cell, pins if _carrier(target, cell)[0].shared_pins else None)
        build.cells.append(CellInstance(f"{ref}_{slot}", cell, ref, slot, pins, use.origin,
                                        group=use.group))
    for cell, pins, origin, init in storage_uses:
        ref, slot = take(cell, pins)
        build.cells.append(CellInstance(f"{ref}_{slot}", cell, ref, slot, dict(pins), origin, init))

    # -- tie unused inputs of used parts -----------------------------------------
    used_slots = {(c.part_ref, c.slot) for c in build.cells}
    wired = {(c.part_ref, build.pin_of(c, pin)) for c in build.cells for pin in c.pins}
    for p in build.parts:
        pd = target.parts[p.part_id]
        for s in pd.slots:
            if (p.ref, s.index) in used_slots:
                continue
            ins = set(target.cell_of_slot(pd.id, s.index).inputs)
            for pin, num in sorted(s.pins.items(), key=lambda kv: kv[1]):
                # a pin shared with a used slot (a common enable) is wired already
                if pin in ins and (p.ref, num) not in wired:
                    wired.add((p.ref, num))
                    build.ties.append(Tie(p.ref, num, "GND", f"input of unused section {s.index}"))
    build.output_nets = dict(mapping.outputs)
    add_support(build)
    return build


def _shares_inputs(target, cell) -> bool:
    """Whether ``cell``'s sections share an input pin with the other sections
    of their part (the select of a quad multiplexer): such a section can
    take a cell only where the part's other sections agree."""
    cd = target.cells.get(cell)
    ids = target.carriers.get(cell) or []
    return bool(cd is not None and ids and set(cd.inputs) & set(target.parts[ids[0]].shared_pins))


def _fits(pd, index: int, pins: dict, ref: str, on_pin: dict) -> bool:
    """Whether slot ``index`` of part ``ref`` can take ``pins`` (cell pin -> net): every pin number of the
    slot that a slot placed before used (a common enable or clock) carries the same net."""
    return all(on_pin.get((ref, num), pins[p]) == pins[p] for p, num in _slot_pins(pd, index).items() if p in pins)


def _slot_pins(pd, index: int) -> dict:
    """cell pin -> package pin of slot ``index``, the part's shared pins included."""
    slot = next(s for s in pd.slots if s.index == index)
    return {**pd.shared_pins, **slot.pins}


def _is_storage(target, cell) -> bool:
    cd = target.cells.get(cell)
    return cd is not None and cd.storage is not None
