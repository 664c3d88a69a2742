"""The symbols of a build's schematic, and the logic level each one stands at.

One symbol per used section of a chip, per used pole and per coil of a
relay, per support part on a signal net (coil diodes stand under their
coil), and in the supply area one block per chip with its supply pins and
the tied inputs of its unused sections, and one per decoupling capacitor.
Names follow the wiring list: references as in the build (``U3``, ``K2``),
the section (``section 2``) or pole (``pole 1``), package pin numbers, and
the build's net names.
"""
from __future__ import annotations

import re

from ..build import SUPPLY_NETS, Build, ref_key
from .symbols import BLOCK_W, Symbol, SymPin, gate_kind

__all__ = ["logic_symbols", "supply_symbols", "set_levels", "pin_lookup"]

_STORAGE_WORD = {"re": "FF", "fe": "FF", "ah": "LATCH", "al": "LATCH"}


def pin_lookup(b: Build):
    """``f(cell, pin) -> package pin number`` with the parts' slots indexed once."""
    part_of = {p.ref: b.target.parts[p.part_id] for p in b.parts}
    cache: dict = {}

    def find(cell, pin):
        pd = part_of[cell.part_ref]
        slot = cache.get((pd.id, cell.slot))
        if slot is None:
            slot = cache[(pd.id, cell.slot)] = next((s for s in pd.slots if s.index == cell.slot), None)
        if slot is not None and pin in slot.pins:
            return slot.pins[pin]
        if pin in pd.shared_pins:
            return pd.shared_pins[pin]
        return b.pin_of(cell, pin)
    return find


def _cell_symbol(b: Build, c, pin_of, shapes: str) -> Symbol:
    cd = b.target.cells[c.cell]
    pid = b.part(c.part_ref).part_id
    shape = gate_kind(cd)

    def pin(p, side):
        num = pin_of(c, p)
        role = cd.roles.get(p, "")
        return SymPin(c.part_ref, str(num), str(num), p, c.pins.get(p), side,
                      negated=shape is None and p in cd.active_low, clock=role in ("clock",))

    west = [pin(p, "W") for p in cd.inputs]
    east = [pin(p, "E") for p in cd.outputs]
    if shape is not None:
        kind, neg = shape
        s = Symbol(("cell", c.part_ref, c.slot), kind, neg, c.part_ref, f"{c.part_ref} · {pid}",
                   f"section {c.slot}", west=west, east=east)
        if neg and east:
            east[0].negated = True
    else:
        word = _STORAGE_WORD.get(cd.storage or "", c.cell.upper())
        s = Symbol(("cell", c.part_ref, c.slot), "block", False, c.part_ref, f"{c.part_ref} · {pid}",
                   f"section {c.slot}", qualifier=word, west=west, east=east, width=BLOCK_W)
    s.layout()
    return s


def _relay_pin_numbers(pd) -> dict:
    return {name: num for num, name in pd.pin_names().items()}


def _contact_symbol(b: Build, k) -> Symbol:
    pd = b.part_def(k.part_ref)
    nums = _relay_pin_numbers(pd)
    west = [SymPin(k.part_ref, f"NC{k.pole}", str(nums.get(f"NC{k.pole}", "")), "NC", k.nc, "W"),
            SymPin(k.part_ref, f"NO{k.pole}", str(nums.get(f"NO{k.pole}", "")), "NO", k.no, "W")]
    east = [SymPin(k.part_ref, f"COM{k.pole}", str(nums.get(f"COM{k.pole}", "")), "COM", k.com, "E")]
    s = Symbol(("pole", k.part_ref, k.pole), "contact", False, k.part_ref, k.part_ref, f"pole {k.pole}",
               west=west, east=east)
    s.layout()
    return s


def _coil_symbol(b: Build, ref: str, net: str) -> Symbol:
    pd = b.part_def(ref)
    nums = _relay_pin_numbers(pd)
    s = Symbol(("coil", ref, 0), "coil", False, ref, f"{ref} · {pd.id}", "coil",
               west=[SymPin(ref, "COIL+", str(nums.get("COIL+", "")), "COIL+", net, "W")],
               east=[SymPin(ref, "COIL-", str(nums.get("COIL-", "")), "COIL-", "GND", "E")])
    s.layout()
    return s


_SUPPORT_KIND = {"coil-diode": "diode", "pull-down": "resistor", "decoupling": "capacitor"}


def _support_symbol(b: Build, sp) -> Symbol:
    """A support part: its signal pins on the west, its rail pins on the east."""
    pd = b.target.parts[sp.part_id]
    numbers = sorted(pd.pin_names()) or list(range(1, len(sp.nets) + 1))
    pins = []
    for i, net in enumerate(sp.nets, 1):
        num = numbers[i - 1] if i - 1 < len(numbers) else i
        pins.append(SymPin(sp.ref, str(i), str(num), str(num), net, "W"))
    signal = [p for p in pins if p.net not in SUPPLY_NETS]
    rails = [p for p in pins if p.net in SUPPLY_NETS]
    if signal:
        west, east = signal[:1], signal[1:] + rails
    else:
        west, east = rails[:1], rails[1:]
    kind = _SUPPORT_KIND.get(sp.role, "block")
    if len(west) != 1 or len(east) != 1:
        kind = "block"
    for p in east:
        p.side = "E"
    s = Symbol(("support", sp.ref, 0), kind, False, sp.ref, f"{sp.ref} · {pd.id}", sp.role or "support part",
               west=west, east=east, width=BLOCK_W if kind == "block" else 4)
    s.layout()
    return s


def _host_of(purpose: str, refs: set) -> str | None:
    for word in re.findall(r"[A-Z]+\d+", purpose):
        if word in refs:
            return word
    return None


def logic_symbols(b: Build, shapes: str = "distinctive") -> tuple[list, dict]:
    """Symbols of the logic area, and ``coil key -> [diode symbols]`` drawn under their coil."""
    pin_of = pin_lookup(b)
    out = [_cell_symbol(b, c, pin_of, shapes) for c in sorted(b.cells, key=lambda c: (ref_key(c.part_ref), c.slot))]
    out += [_contact_symbol(b, k) for k in sorted(b.contacts, key=lambda k: (ref_key(k.part_ref), k.pole))]
    coils = {ref: _coil_symbol(b, ref, net) for ref, net in sorted(b.coils.items(), key=lambda kv: ref_key(kv[0]))
             if net is not None}
    out += list(coils.values())
    under: dict = {}
    for sp in sorted(b.support, key=lambda s: ref_key(s.ref)):
        if all(n in SUPPLY_NETS for n in sp.nets if n is not None):
            continue  # drawn in the supply area
        sym = _support_symbol(b, sp)
        host = _host_of(sp.purpose, set(coils)) if sp.role == "coil-diode" else None
        if host is not None:
            under.setdefault(coils[host].key, []).append(sym)
        else:
            out.append(sym)
    return out, under


def supply_symbols(b: Build) -> list:
    """Per chip a block of its supply pins and tied inputs, and every support part on rails only."""
    out = []
    tied: dict = {}
    drawn = set()
    pin_of = pin_lookup(b)
    for c in b.cells:
        for p in c.pins:
            drawn.add((c.part_ref, pin_of(c, p)))
    for t in b.ties:
        if (t.part_ref, t.pin) not in drawn:
            tied.setdefault(t.part_ref, {})[t.pin] = t.rail
    for p in sorted(b.parts, key=lambda p: ref_key(p.ref)):
        pd = b.target.parts[p.part_id]
        if not pd.supply_pins and p.ref not in tied:
            continue
        east = [SymPin(p.ref, str(num), str(num), rail, rail, "E")
                for rail, num in sorted(pd.supply_pins.items(), key=lambda kv: SUPPLY_NETS.index(kv[0])
                                        if kv[0] in SUPPLY_NETS else 9)]
        east += [SymPin(p.ref, str(num), str(num), pd.pin_names().get(num, str(num)), rail, "E")
                 for num, rail in sorted(tied.get(p.ref, {}).items())]
        s = Symbol(("supply", p.ref, 0), "supply", False, p.ref, f"{p.ref} · {pd.id}",
                   "supply" + (", unused inputs" if p.ref in tied else ""), east=east, width=BLOCK_W)
        s.layout()
        out.append(s)
    for sp in sorted(b.support, key=lambda s: ref_key(s.ref)):
        if all(n in SUPPLY_NETS for n in sp.nets if n is not None):
            out.append(_support_symbol(b, sp))
    return out


def set_levels(symbols: list, inputs) -> None:
    """Logic level of each symbol: 1 + the level of what drives its west pins (Kahn's order, loops cut).

    A relay's poles stand after its coil.  Where a loop leaves no symbol
    ready (feedback through storage or a seal-in contact) the symbol with
    the fewest unplaced drivers is placed next.
    """
    driver: dict = {}
    for i, s in enumerate(symbols):
        for p in s.east:
            if p.net is not None and p.net not in SUPPLY_NETS:
                driver.setdefault(p.net, i)
    coil_of = {s.ref: i for i, s in enumerate(symbols) if s.kind == "coil"}
    deps: list = []
    for i, s in enumerate(symbols):
        d = {driver[p.net] for p in s.west if p.net in driver and driver[p.net] != i}
        if s.kind == "contact" and s.ref in coil_of:
            d.add(coil_of[s.ref])
        deps.append(d)
    users: dict = {}
    for i, d in enumerate(deps):
        for j in d:
            users.setdefault(j, []).append(i)
    remaining = [set(d) for d in deps]
    level: dict = {}
    ready = [i for i in range(len(symbols)) if not remaining[i]]
    ready.reverse()
    while len(level) < len(symbols):
        if not ready:
            left = [i for i in range(len(symbols)) if i not in level]
            cut = min(left, key=lambda i: (len(remaining[i]), i))
            remaining[cut] = set()
            ready.append(cut)
        i = ready.pop()
        if i in level:
            continue
        level[i] = 1 + max((level[j] for j in deps[i] if j in level), default=0)
        for u in users.get(i, ()):
            remaining[u].discard(i)
            if not remaining[u] and u not in level:
                ready.append(u)
    for i, lv in level.items():
        symbols[i].level = lv
