"""The wiring list of a build: every pin of every part, and every net with the pins it joins.

:func:`wiring` gathers the plain data (also used by the JSON and HTML
writers); :func:`write_build` lays it out as ``wiring.txt`` through the
template ``wiring.txt.j2``.

A pin is written ``<ref>-<pin>``: ``U3-12`` for pin 12 of chip U3, ``C1-2``
for a support part, and for relays the terminal name, since relay pin
numbers vary between makers: ``K2-COIL+``, ``K2-COM1``, ``K2-NO1``,
``K2-NC1`` (common, normally-open and normally-closed terminal of pole 1).
The pin-by-pin table gives the catalog's number beside each terminal.

Every pin of every placed part is accounted for exactly once: on a signal
net, on a supply rail (supply pins, tie-offs of unused inputs), left open
(unused outputs and unused contact terminals), or not connected inside the
package.  A pin that the build puts on two different nets is a bug of ours
and raises :class:`~mapper.errors.InternalError` rather than print a short
circuit.
"""
from __future__ import annotations

import logging
import re
from dataclasses import dataclass

from .. import __version__
from ..analyze.results import Analysis
from ..build import SUPPLY_NETS, Build, ref_key
from ..errors import InternalError
from ..place import Plan, plan_for
from ..place.runs import ROLE_COLOUR, hole_name
from .files import atomic_write
from .layout import render

__all__ = ["PinUse", "wiring", "wiring_text", "write_build", "pin_label", "PinLookup", "board_data"]

log = logging.getLogger(__name__)

#: how a pin is used, as printed
USES = {
    "input": "input",
    "output": "output",
    "supply": "supply",
    "tie": "tied",
    "open": "open",
    "nc": "not connected",
    "coil": "coil",
    "contact": "contact",
    "support": "support",
}


@dataclass
class PinUse:
    """One package pin of a placed part and what is done with it."""

    ref: str
    number: int | None
    name: str
    label: str
    net: str | None
    use: str
    note: str = ""


def _natural(name: str):
    return [int(t) if t.isdigit() else t for t in re.split(r"(\d+)", name)]


def pin_label(ref: str, number, name: str, relay: bool) -> str:
    """``U3-12`` for chips and support parts; ``K2-NO1`` (terminal name) for relays."""
    return f"{ref}-{name}" if relay else f"{ref}-{number}"


class PinLookup:
    """Package pin of a cell pin, like :meth:`Build.pin_of` but with the parts indexed once
    (the writers ask for every pin of every cell)."""

    def __init__(self, b: Build):
        self.b = b
        self.part_of = {p.ref: b.target.parts[p.part_id] for p in b.parts}
        self.slots: dict = {}

    def __call__(self, cell, pin: str):
        pd = self.part_of[cell.part_ref]
        key = (pd.id, cell.slot)
        slot = self.slots.get(key)
        if slot is None:
            slot = self.slots[key] = next((s for s in pd.slots if s.index == cell.slot), None)
        if slot is not None and pin in slot.pins:
            return slot.pins[pin]
        if pin in pd.shared_pins:
            return pd.shared_pins[pin]
        return self.b.pin_of(cell, pin)  # raises the build's own error


class _Pins:
    """The pins of one part while they are being filled in; refuses two nets on one pin."""

    def __init__(self, ref: str, pd, relay: bool):
        self.ref, self.pd, self.relay = ref, pd, relay
        self.names = pd.pin_names()
        self.pins: dict = {}

    def set(self, number, net, use, note=""):
        name = "n/c" if use == "nc" else self.names.get(number, str(number))
        old = self.pins.get(number)
        if old is not None and old.use not in ("open",):
            if old.net != net:
                raise InternalError(
                    f"pin {pin_label(self.ref, number, name, self.relay)} ({name}) is put on two nets, "
                    f"{old.net} ({old.note or old.use}) and {net} ({note or use}) -- a bug in netfit")
            if use == "input" and old.use == "tie":
                old.use, old.note = use, note
            return
        self.pins[number] = PinUse(self.ref, number, name, pin_label(self.ref, number, name, self.relay),
                                   net, use, note)


def wiring(b: Build, analysis: Analysis) -> dict:
    """Plain data for the wiring list of ``b`` (see the module docstring).

    Returns a dict with ``parts`` (each with every package pin, in pin
    order), ``nets`` (rails first, then inputs in port order, internal nets,
    outputs in port order; each with ``drivers``, ``loads`` and ``others``
    as pin labels), ``ties``, ``open`` (unused outputs and contact
    terminals, with what to do) and ``not_connected``.
    """
    cells = b.target.cells
    by_ref: dict = {}
    parts_out = []
    pin_of = PinLookup(b)
    cells_of: dict = {}
    for c in b.cells:
        cells_of.setdefault(c.part_ref, []).append(c)
    ties_of: dict = {}
    for t in b.ties:
        ties_of.setdefault(t.part_ref, {})[t.pin] = t
    for p in sorted(b.parts, key=lambda p: ref_key(p.ref)):
        pd = b.target.parts[p.part_id]
        relay = pd.relay is not None
        pins = _Pins(p.ref, pd, relay)
        by_ref[p.ref] = pins
        for rail, num in pd.supply_pins.items():
            pins.set(num, rail, "supply", "supply")
        for num in pd.nc_pins:
            pins.set(num, None, "nc")
        if relay:
            _relay_pins(b, p.ref, pd, pins)
        else:
            _chip_pins(b, p.ref, pd, pins, cells, cells_of.get(p.ref, []), ties_of.get(p.ref, {}), pin_of)
        parts_out.append({"ref": p.ref, "part": pd.id, "description": pd.description,
                          "package": pd.package, "kind": "relay" if relay else "chip",
                          "pinout_source": pd.pinout_source, "pins": pins})
    for s in sorted(b.support, key=lambda s: ref_key(s.ref)):
        pd = b.target.parts[s.part_id]
        pins = _Pins(s.ref, pd, False)
        numbers = sorted(pd.pin_names()) or list(range(1, len(s.nets) + 1))
        for i, net in enumerate(s.nets):
            num = numbers[i] if i < len(numbers) else i + 1
            pins.set(num, net, "support")
        parts_out.append({"ref": s.ref, "part": pd.id, "description": pd.description, "package": pd.package,
                          "kind": "support", "purpose": s.purpose, "pinout_source": pd.pinout_source,
                          "pins": pins})
    for part in parts_out:
        pins = part["pins"]
        for num in range(1, pins.pd.pin_count + 1):
            if num not in pins.pins and pins.pd.kind != "support":
                log.warning("%s pin %d has no use in the build", part["ref"], num)
                pins.set(num, None, "open", "no use in this build")
        part["pins"] = [pins.pins[k] for k in sorted(pins.pins, key=lambda k: (isinstance(k, str), k))]

    nets = _nets(b, parts_out)
    ties = [pu for part in parts_out for pu in part["pins"] if pu.use == "tie"]
    opens = [pu for part in parts_out for pu in part["pins"] if pu.use == "open"]
    ncs = [pu for part in parts_out for pu in part["pins"] if pu.use == "nc"]
    unfed = [pu for part in parts_out for pu in part["pins"] if pu.use == "input" and pu.net is None]
    if unfed:
        raise InternalError("inputs left open in the build: " + ", ".join(pu.label for pu in unfed))
    return {"design": b.design, "target": b.target.name, "verified": analysis.verified, "version": __version__,
            "parts": parts_out, "nets": nets, "ties": ties, "open": opens, "not_connected": ncs,
            "rail": b.rail if b.is_relay else None}


def _chip_pins(b: Build, ref: str, pd, pins: _Pins, cells: dict, placed: list, ties: dict, pin_of) -> None:
    used = {c.slot: c for c in placed}
    # used slots first: a pin shared between slots (a common enable) belongs to the used one
    for s in sorted(pd.slots, key=lambda s: (s.index not in used, s.index)):
        c = used.get(s.index)
        if c is not None:
            cd = cells[c.cell]
            for pin in cd.pins:
                num = pin_of(c, pin)
                net = c.pins.get(pin)
                if pin in cd.inputs:
                    if net in SUPPLY_NETS:
                        pins.set(num, net, "input", f"{pin} of section {s.index}, held at {net}")
                    else:
                        pins.set(num, net, "input", f"{pin} of section {s.index}")
                elif net is None:
                    pins.set(num, None, "open", f"{pin} of section {s.index}, not used")
                else:
                    pins.set(num, net, "output", f"{pin} of section {s.index}")
            continue
        outs = _slot_outputs(b, pd, s)
        for pin, num in s.pins.items():
            if pin in outs:
                if num not in pins.pins:
                    pins.set(num, None, "open", f"output of unused section {s.index}")
                continue
            t = ties.get(num)
            if t is not None:
                pins.set(num, t.rail, "tie", t.reason)
            elif num not in pins.pins:
                raise InternalError(f"{ref} pin {num} ({pin} of unused section {s.index}) is an input "
                                    f"left open: the build has no tie-off for it")
    for num, t in ties.items():
        pins.set(num, t.rail, "tie", t.reason)


def _slot_outputs(b: Build, pd, s) -> set:
    """Output pins of slot ``s`` (its cell may be one the target does not use: the catalog has it)."""
    try:
        return set(b.target.cell_of_slot(pd.id, s.index).outputs)
    except KeyError as exc:
        raise InternalError(f"{pd.id} slot {s.index}: its outputs cannot be told ({exc})") from None


def _relay_pins(b: Build, ref: str, pd, pins: _Pins) -> None:
    names = {v: k for k, v in pd.pin_names().items()}
    coil = b.coils.get(ref)
    for name, num in pd.shared_pins.items():
        if name == "COIL+":
            if coil is None:
                pins.set(num, None, "open", "coil not used")
            else:
                pins.set(num, coil, "coil", "positive end")
        elif name == "COIL-":
            pins.set(num, "GND", "coil", "return")
    contacts = {k.pole: k for k in b.contacts if k.part_ref == ref}
    poles = {s.index for s in pd.slots}
    for k in contacts.values():
        if k.pole not in poles:
            raise InternalError(f"{ref} ({pd.id}) has no pole {k.pole}, but the build wires one -- a bug in netfit")
    for s in pd.slots:
        k = contacts.get(s.index)
        for term in ("COM", "NO", "NC"):
            num = s.pins.get(term)
            if num is None:
                num = names.get(f"{term}{s.index}")
            if num is None:
                continue
            net = {"COM": k.com, "NO": k.no, "NC": k.nc}[term] if k is not None else None
            what = {"COM": "common", "NO": "normally open", "NC": "normally closed"}[term]
            if net is None:
                why = "pole not used" if k is None else "not used"
                pins.set(num, None, "open", f"{what} terminal of pole {s.index}, {why}")
            else:
                pins.set(num, net, "contact", f"{what} terminal of pole {s.index}")


def _nets(b: Build, parts: list) -> list:
    joined: dict = {}
    for part in parts:
        for pu in part["pins"]:
            if pu.net is not None:
                joined.setdefault(pu.net, []).append(pu)
    inputs, outputs = list(b.inputs), list(b.outputs)
    out_of: dict = {}
    for o in outputs:
        out_of.setdefault(b.output_nets.get(o, o), []).append(o)
    order = [r for r in SUPPLY_NETS if r in joined]
    order += [i for i in inputs if i not in order]
    rest = sorted((n for n in joined if n not in order and n not in out_of), key=_natural)
    order += rest
    order += [n for n in out_of if n not in order]
    result = []
    for net in order:
        pus = sorted(joined.get(net, []), key=lambda pu: (ref_key(pu.ref), pu.number))
        drivers, loads, others = [], [], []
        for pu in pus:
            if pu.use == "output" or (pu.use == "contact" and pu.name.startswith("COM")):
                drivers.append(pu.label)
            elif pu.use in ("input", "coil", "contact", "tie"):
                loads.append(pu.label)
            else:
                others.append(pu.label)
        ports = []
        if net in inputs:
            ports.append(f"input {net}")
        for o in out_of.get(net, []):
            ports.append(f"output {o}")
        result.append({"net": net, "rail": net in SUPPLY_NETS, "ports": ports,
                       "is_input": net in inputs, "outputs": out_of.get(net, []),
                       "drivers": drivers, "loads": loads, "others": others,
                       "pins": [pu.label for pu in pus]})
    return result


def board_data(b: Build, plan: Plan) -> dict:
    """Plain data of the board, where each part goes, the numbered wires and their totals."""
    p, runs = plan.placement, plan.runs
    parts = []
    logic = {q.ref for q in b.parts}
    for ref in sorted(p.parts, key=lambda r: (r not in logic, ref_key(r))):
        pp = p.parts[ref]
        if pp.fp is not None:
            pin1 = pp.pins.get(1)
            where = f"pin 1 at {hole_name(p, pin1)}" + (", notch to the left" if pp.fp.notch else "")
        else:
            where = pp.note + " (" + ", ".join(f"leg {n} in {hole_name(p, xy)}" for n, xy in sorted(pp.pins.items())) \
                + ")"
        parts.append({"ref": ref, "part": pp.part_id, "package": pp.package, "where": where})
    wires = []
    for w in runs.wires:
        wires.append({"number": w.number, "net": w.net, "role": w.role, "colour": w.colour,
                      "from": w.a.label, "from_hole": hole_name(p, w.a.hole),
                      "to": w.b.label, "to_hole": hole_name(p, w.b.hole),
                      "length_mm": round(w.length_m * 1000), "length_m": w.length_m, "jumper": w.jumper})
    totals = runs.totals()
    return {"board": p.board.title, "board_key": p.board.key, "boards": p.boards, "method": p.method,
            "length_start": p.length_start, "length": p.length, "parts": parts, "wires": wires,
            "totals": totals, "chains": runs.chains, "colours": ROLE_COLOUR,
            "breadboard": p.board.is_breadboard, "own_strips": [f"{ref}-{leg}" for ref, leg in p.own_strips]}


def wiring_text(b: Build, analysis: Analysis, plan: Plan | None = None) -> str:
    """The wiring list of ``b`` as text (``wiring.txt``), its wires placed by ``plan`` (default: the default board)."""
    w = wiring(b, analysis)
    width = max([len(n["net"]) for n in w["nets"]] + [4])
    board = board_data(b, plan if plan is not None else plan_for(b))
    cols = {k: max([len(str(x[k])) for x in board["wires"]] + [len(k)]) for k in
            ("from", "from_hole", "to", "to_hole", "net")}
    return render("wiring.txt.j2", w=w, b=b, width=width, uses=USES, board=board, cols=cols)


def write_build(b: Build, analysis: Analysis, path, protect=(), plan: Plan | None = None, **options) -> list:
    """Write the wiring list of ``b`` to ``path`` (atomically)."""
    return [atomic_write(path, wiring_text(b, analysis, plan), protect=protect)]
