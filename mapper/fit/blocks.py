"""Medium-scale chips in a build: find them in the design, map the rest, place them, keep what is fewer.

A target that lists block cells (4-bit adders, comparators, decoders,
multiplexers, counters, shift registers, registers of several flip-flops on
one clock) builds a design twice:

1. as any gate target does (the part search of :mod:`mapper.fit.fit`), and
2. with the blocks found in the design (:func:`find_uses`): each proved
   use takes the design nets it drives and the storage it holds out of the
   design; what is left (the *rest*) has the uses' outputs as inputs and the
   nets that feed the uses as outputs, and goes through the same part search;
   the uses are then placed in numbered parts (:func:`place`) -- slots that
   share a pin (a common select or clock) only with uses that share its net,
   unused inputs tied, three-state enables held on -- and wired to the
   rest's nets.

The build with fewer whole parts is returned (ties keep the gate build), so a
target with blocks never answers with more parts than without them.  Either
build is proved equal to the design by the caller, as every build is.
"""
from __future__ import annotations

import logging
from collections.abc import Callable
from dataclasses import replace
from itertools import count

import networkx as nx

from ..build import Build, CellInstance, PartInstance, Tie, ref_key
from ..catalog.model import Target
from ..errors import InternalError
from ..logic.function import Function
from ..netlist import Logic, Netlist, Storage
from .blockarith import find_adders, find_comparators
from .blockcount import find_counters
from .blockdec import find_decoders
from .blockmux import find_muxes
from .blockshift import find_shifts
from .blockstore import find_latches, find_registers
from .blockuse import RAILS, BlockUse, Signatures, prove_uses
from .support import add_support

__all__ = ["has_blocks", "find_uses", "carve", "place", "with_blocks"]

log = logging.getLogger(__name__)

_BUF = Function.from_table(1, 0b10)
_NOT = Function.from_table(1, 0b01)

#: finders in the order they claim nets: counters, then shift registers, before registers (their
#: flip-flops are also a register), comparisons before adders (a comparison's borrow chain is also a
#: chain of majority carries, which the adder finder would take as a poorer adder chip); decoders last
#: (an AND of a few nets, which is all a decoder output is, is also inside adders and comparators)
FINDERS: list = [find_counters, find_shifts, find_registers, find_latches, find_comparators, find_adders,
                 find_muxes, find_decoders]


_PLAIN: dict = {}


def without_blocks(target: Target) -> Target:
    """The target with its block cells left out (the same parts and name otherwise)."""
    key = (target.name, target.path, id(target))
    got = _PLAIN.get(key)
    if got is None or got[0] is not target:
        cells = {k: v for k, v in target.cells.items() if v.block is None}
        carriers = {k: v for k, v in target.carriers.items() if k in cells}
        got = _PLAIN[key] = (target, replace(target, cells=cells, carriers=carriers))
    return got[1]


def has_blocks(target: Target) -> bool:
    """Whether the target lists a block cell (several outputs, or registers inside) with a carrier."""
    return any(cd.block is not None and target.carriers.get(name) for name, cd in target.cells.items())


def find_uses(design: Netlist, target: Target) -> list:
    """Every proved use of the target's block cells in ``design`` (see the module docstring)."""
    cells = {name: cd for name, cd in target.cells.items() if target.carriers.get(name)}
    if not design.nodes:
        return []
    sigs = Signatures(design)
    taken: set = set()
    ids = count(1)

    def serial() -> str:
        return f"_blk{next(ids)}"

    uses: list = []
    for finder in FINDERS:
        uses.extend(finder(sigs, cells, taken, serial))
        taken |= _unneeded(design, uses, taken)
    # a use drives logic nets only (never an input or a storage element's own net)
    uses = [u for u in uses if all(isinstance(design.nodes.get(net), Logic) for lits in u.outputs.values()
                                   for net, _ in lits if net in design.nodes)]
    if not uses:
        return []
    proved = prove_uses(design, uses, cells)
    log.info("block uses: %d found, %d proved", len(uses), len(proved))
    return proved


def _unneeded(design: Netlist, uses: list, taken: set) -> set:
    """Logic nets nothing needs once ``uses`` drive what they took: no output, no storage element left to
    the gates and no use reads them (a counter's increment logic once the counter chip holds its bits)."""
    need = [o for o in design.outputs]
    need += [n for u in uses for n in u.input_nets()]
    for q, node in design.storage().items():
        if q not in taken:
            need += [node.d] + ([node.control] if node.control else [])
    live: set = set()
    while need:
        n = need.pop()
        if n in live:
            continue
        live.add(n)
        node = design.nodes.get(n)
        if isinstance(node, Logic) and n not in taken:
            need.extend(node.fanins)
    return {n for n, node in design.nodes.items() if isinstance(node, Logic) and n not in live}


# -- the rest of the design ---------------------------------------------------------------------------
class _Plan:
    """The rest of the design and how the uses' pins join it."""

    def __init__(self):
        self.pin: dict = {}        # (use index, pin) -> net the pin drives in the build
        self.inverted: dict = {}   # design net -> net of its complement (made in the rest)


def _output_nets(design: Netlist, uses: list, plan: _Plan, rest: Netlist, fresh) -> None:
    """Pseudo-inputs of the rest for every output pin and register; complements and copies as logic."""
    made: set = set()
    for k, u in enumerate(uses):
        for pin, lits in u.outputs.items():
            # a net an earlier pin drives already is left to it (two outputs never share a net)
            plain = [net for net, inv in lits if not inv and net not in made]
            net = plain[0] if plain else fresh(f"{u.name}.{pin}")
            plan.pin[(k, pin)] = net
            if net in design.nodes or not plain:
                rest.add_input(net)
                made.add(net)
            for other, inv in lits:
                if other == net or other in made:
                    continue  # (a net two pins both compute is driven from the first)
                if other not in design.nodes:
                    raise InternalError(f"block use {u.label}: link net {other} is bound twice")
                rest.add_logic(other, [net], _NOT if inv else _BUF)
                made.add(other)
        for reg, (net, _init) in u.state.items():
            if net not in made:
                rest.add_input(net)
                made.add(net)
            if reg in u.outputs:
                continue
            plan.pin[(k, reg)] = net


def carve(design: Netlist, uses: list) -> tuple[Netlist, _Plan]:
    """The rest of ``design`` once ``uses`` drive their nets (see the module docstring)."""
    plan = _Plan()
    rest = Netlist(design.name)
    for i in design.inputs:
        rest.add_input(i)
    taken = set(design.nodes) | {"VCC", "GND"}

    def fresh(base: str) -> str:
        name, k = base, 1
        while name in taken:
            k += 1
            name = f"{base}~{k}"
        taken.add(name)
        return name

    _output_nets(design, uses, plan, rest, fresh)
    covered = {n for u in uses for n in u.covered()}
    for name, node in design.nodes.items():
        if name in covered or name in rest.nodes:
            continue
        if isinstance(node, Logic):
            rest.add_logic(name, node.fanins, node.func)
        elif isinstance(node, Storage):
            rest.add_storage(name, node.d, node.kind, node.control, node.init)
    outs = list(design.outputs)
    for u in uses:
        for net, inv in u.inputs.values():
            if net in RAILS or net not in design.nodes:
                continue
            if inv:
                if net not in plan.inverted:
                    plan.inverted[net] = fresh(f"{net}~n")
                    rest.add_logic(plan.inverted[net], [net], _NOT)
                net = plan.inverted[net]
            outs.append(net)
    for o in dict.fromkeys(outs):
        rest.add_output(o)
    return rest, plan


def loops(design: Netlist, uses: list, plan: _Plan) -> list:
    """Indices of uses on a combinational loop through the rest and the uses' own input-to-output paths."""
    g = nx.DiGraph()
    for name, node in design.nodes.items():
        if isinstance(node, Logic):
            for f in node.fanins:
                g.add_edge(f, name)
    for k, u in enumerate(uses):
        hub = ("use", k)
        for net, _ in u.inputs.values():
            if net not in RAILS:
                g.add_edge(net, hub)
        for pin, lits in u.outputs.items():
            made = plan.pin[(k, pin)]
            g.add_edge(hub, made)
            for net, _ in lits:   # the copies and complements the rest makes of the pin's net
                if net != made:
                    g.add_edge(made, net)
    bad: set = set()
    for comp in nx.strongly_connected_components(g):
        if len(comp) > 1:
            bad.update(x[1] for x in comp if isinstance(x, tuple) and x[0] == "use")
    return sorted(bad)


# -- placing the uses ---------------------------------------------------------------------------------
def _pin_nets(u: BlockUse, k: int, cd, plan: _Plan, rb: Build) -> dict:
    pins: dict = {}
    for pin in cd.inputs:
        net, inv = u.inputs[pin]
        if net in RAILS:
            pins[pin] = net
        elif inv and net in plan.inverted:
            pins[pin] = rb.output_nets.get(plan.inverted[net], plan.inverted[net])
        else:
            pins[pin] = rb.output_nets.get(net, net)
    for pin in cd.outputs:
        if (k, pin) in plan.pin:
            pins[pin] = plan.pin[(k, pin)]
        elif pin in u.state:
            pins[pin] = u.state[pin][0]
    return pins


def _shared_key(pd, cd, slot_pins: dict, pins: dict) -> tuple:
    shared = set(pd.shared_pins.values())
    return tuple(sorted((p, pins.get(p)) for p, num in slot_pins.items() if num in shared and p in cd.inputs))


def place(rb: Build, design: Netlist, uses: list, plan: _Plan, target: Target) -> Build:
    """The build of the rest with the uses placed in numbered parts and wired to it (see the module docstring)."""
    b = rb
    first = len(b.parts)
    n = max((ref_key(p.ref)[1] for p in b.parts if p.ref.startswith("U")), default=0)
    open_parts: dict = {}   # (part id, cell, shared nets, chip) -> [(ref, free slot indices)]
    for k, u in enumerate(uses):
        cd = target.cells[u.cell]
        pid = u.part or target.carriers[u.cell][0]
        pd = target.parts[pid]
        slots = pd.slots_for(u.cell)
        pins = _pin_nets(u, k, cd, plan, rb)
        key = (pid, u.cell, _shared_key(pd, cd, slots[0].pins, pins), u.chip)
        room = open_parts.get(key)
        if not room or not room[1]:
            n += 1
            room = open_parts[key] = [f"U{n}", [s.index for s in slots]]
            b.parts.append(PartInstance(room[0], pid))
        ref, free = room
        slot = free.pop(0)
        init = next(iter(u.state.values()))[1] if u.state and cd.block is None else 3
        state = dict(u.state) if cd.block is not None else {}
        b.cells.append(CellInstance(f"{ref}_{slot}", u.cell, ref, slot, pins, None, init, state=state))
    _ties(b, target, {p.ref for p in b.parts[first:]})
    return b


def _ties(b: Build, target: Target, refs: set) -> None:
    """Unused inputs of unused slots of the block parts, and pins held at a rail, tied (as :mod:`pack` does)."""
    used = {(c.part_ref, c.slot) for c in b.cells}
    wired = {(c.part_ref, b.pin_of(c, pin)) for c in b.cells for pin in c.pins}
    tied = {(t.part_ref, t.pin) for t in b.ties}
    for p in b.parts:
        if p.ref not in refs:
            continue
        pd = target.parts[p.part_id]
        for name, rail in sorted(pd.held.items()):
            num = pd.shared_pins[name]
            if (p.ref, num) not in tied:
                b.ties.append(Tie(p.ref, num, rail, f"{name} held at {rail}: outputs always driven"))
                tied.add((p.ref, num))
        for s in pd.slots:
            if (p.ref, s.index) in used:
                continue
            ins = set(target.cell_of_slot(pd.id, s.index).inputs)
            for pin, num in sorted(s.pins.items(), key=lambda kv: kv[1]):
                if pin in ins and (p.ref, num) not in wired and (p.ref, num) not in tied:
                    tied.add((p.ref, num))
                    b.ties.append(Tie(p.ref, num, "GND", f"input of unused section {s.index}"))


# -- the two builds ------------------------------------------------------------------------------------
def with_blocks(design: Netlist, target: Target, search: Callable[[Netlist], Build]) -> Build:
    """The build of ``design`` with the fewest whole parts, with and without the target's blocks.

    When decoders were found beside other blocks, the blocks are also tried without the decoders (a
    decoder takes a few AND gates, which may pack better with the rest), and the fewer parts kept."""
    plain = search(design)
    plain.target = target
    uses = find_uses(design, target)
    if not uses:
        plain.notes.append("medium-scale chips: none of the target's blocks found in the design")
        return plain
    tries = [uses]
    others = [u for u in uses if u.family != "decoder"]
    if others and len(others) < len(uses):
        tries.append(others)
    best = None
    for these in tries:
        got = _block_build(design, these, target, search)
        if got is not None and (best is None or len(got[0].parts) < len(best[0].parts)):
            best = got
    if best is None:
        return plain
    built, what = best
    if len(built.parts) < len(plain.parts):
        built.notes.append(f"medium-scale chips: {what} ({len(built.parts)} parts; {len(plain.parts)} without them)")
        return built
    plain.notes.append(f"medium-scale chips tried ({what}): {len(built.parts)} parts against "
                       f"{len(plain.parts)} without them; kept the build without them")
    return plain


def _block_build(design: Netlist, uses: list, target: Target, search: Callable[[Netlist], Build]) -> tuple | None:
    """``(build, what it uses)`` of ``design`` with ``uses`` placed (those on a loop dropped), or ``None``
    when none is left."""
    rest, plan = carve(design, uses)
    bad = loops(design, uses, plan)
    while bad:
        uses = [u for k, u in enumerate(uses) if k != bad[-1]]
        rest, plan = carve(design, uses)
        bad = loops(design, uses, plan)
    if not uses:
        return None
    rb = search(rest)
    rb.target = target
    built = _finish(place(rb, design, uses, plan, target), design)
    families: dict = {}
    for u in uses:
        families[u.family] = families.get(u.family, 0) + 1
    what = ", ".join(f"{v} {k} section{'s' * (v != 1)}" for k, v in sorted(families.items()))
    return built, what


def _finish(b: Build, design: Netlist) -> Build:
    """The build's ports back to the design's, and its support parts counted again for every chip."""
    outs = b.output_nets
    b.inputs = list(design.inputs)
    b.outputs = list(design.outputs)
    b.output_nets = {o: outs.get(o, o) for o in design.outputs}
    b.support = []
    add_support(b)
    return b
