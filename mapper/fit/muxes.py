"""2:1 multiplexers of a design put into quad multiplexer parts (a 74HC157 holds four).

A cut-based match cannot use such a part: its four sections share one
select and one enable pin, so whether a multiplexer fits in a package
depends on the others in it (:mod:`mapper.fit.library` leaves the cell out
of the match table).  This module finds the multiplexers in the design's
and-inverter graph -- ``OR(AND(s, b), AND(NOT s, a))``, an AND of two
complemented ANDs whose fan-ins hold one signal in both phases, exclusive-ORs
left out -- groups them by their select signal, and for the groups of at
least :data:`MIN_GROUP` builds the rest of the logic around them: each
multiplexer output becomes a free input of the logic the mapper covers, and
its data and select signals become outputs of it.  The multiplexer cells are
then added, wired with the enable at its active level, and the packer puts
cells of one select into the same parts (:func:`mapper.fit.pack.pack`).

The result is one more candidate of the part search, packed and weighed
like every other, and proved equal to the design like every build.

Examples
--------
>>> from mapper.logic.function import Function
>>> mux_roles(Function.from_table(4, 0b11001010 | 0 << 8))   # Y = E_N ? 0 : (S ? B : A)
(0, 1, 2, 3, 0)
"""
from __future__ import annotations

from itertools import permutations

from ..logic.aig import AIG, from_netlist
from ..logic.minimize import min_cover
from ..logic.restructure.graph import frame, to_netlist
from .gates import CellUse, Mapping, cell_depth, map_logic

__all__ = ["mux_cell", "mux_roles", "mux_mappings", "mapped_with_muxes", "MIN_GROUP"]

#: multiplexers that share a select before they go into multiplexer parts
MIN_GROUP = 2


def mux_roles(func) -> tuple | None:
    """``(a, b, s, e, active)`` when ``func`` of four inputs is a 2:1
    multiplexer with an enable -- input ``s`` picks input ``a`` at 0 and
    ``b`` at 1 while input ``e`` is at ``active``, and the output is 0
    otherwise -- else ``None``."""
    if func is None or func.n != 4:
        return None
    t = func.table()
    for a, b, s, e in permutations(range(4)):
        for active in (0, 1):
            ok = True
            for m in range(16):
                bits = [(m >> j) & 1 for j in range(4)]
                want = 0 if bits[e] != active else (bits[b] if bits[s] else bits[a])
                if (t >> m) & 1 != want:
                    ok = False
                    break
            if ok:
                return a, b, s, e, active
    return None


def mux_cell(target, lib):
    """``(cell name, roles)`` of the target's multiplexer cell whose select and
    enable are pins its carrier shares between sections, or ``None``."""
    for name, cd in target.cells.items():
        if cd.storage is not None or name in lib.cells or not target.carriers.get(name):
            continue
        roles = mux_roles(cd.function)
        if roles is None:
            continue
        pd = target.parts[target.carriers[name][0]]
        shared = set(pd.shared_pins)
        a, b, s, e, _ = roles
        if cd.inputs[a] not in shared and cd.inputs[b] not in shared:
            return name, roles
    return None


def _find_muxes(aig: AIG) -> dict:
    """AND variable -> ``(select literal, data at 1, data at 0, 1)`` of each
    multiplexer (the 1: the variable computes its complement)."""
    f0, f1 = aig.f0, aig.f1
    out: dict = {}
    for v in range(1, aig.num_vars):
        x, y = f0[v], f1[v]
        if x < 0 or not (x & 1 and y & 1):
            continue
        xv, yv = x >> 1, y >> 1
        if not (aig.is_and(xv) and aig.is_and(yv)):
            continue
        xs, ys = (f0[xv], f1[xv]), (f0[yv], f1[yv])
        for i in (0, 1):
            for j in (0, 1):
                if xs[i] == ys[j] ^ 1:
                    s, d1, d0 = xs[i], xs[1 - i], ys[1 - j]
                    if d1 == d0 ^ 1:
                        continue   # an exclusive-OR
                    if s & 1:
                        s, d1, d0 = s ^ 1, d0, d1
                    out.setdefault(v, (s, d1, d0, 1))
    return out


def mux_mappings(design, libs: list, target) -> list:
    """``design`` with its multiplexers in the target's multiplexer parts (see
    the module docstring) and the rest of the logic mapped onto each of
    ``libs`` in turn: one :class:`Mapping` each (the logic around the
    multiplexers may pack best in one kind of gate); empty when the target
    has no such part or the design no group of :data:`MIN_GROUP`."""
    got = mux_cell(target, libs[0])
    if got is None:
        return []
    aig, _ = from_netlist(design, cover=min_cover)
    muxes = _find_muxes(aig)
    groups: dict = {}
    for v, (s, _, _, _) in muxes.items():
        groups.setdefault(s, []).append(v)
    chosen = {v for vs in groups.values() if len(vs) >= MIN_GROUP for v in vs}
    if not chosen:
        return []
    return mapped_with_muxes(design, aig, muxes, chosen, libs, got)


def mapped_with_muxes(design, aig: AIG, muxes: dict, chosen: set, libs: list, got) -> list:
    """``design`` (as the graph ``aig``) with each ``chosen`` variable built as
    the multiplexer ``muxes`` gives it (``(s, d1, d0, compl)``: the variable,
    complemented when ``compl``, is ``s ? d1 : d0``) in the cell ``got`` of
    :func:`mux_cell` names, the rest mapped onto each of ``libs``: one
    :class:`Mapping` per library."""
    cell, (ia, ib, isel, ien, active) = got
    cut, wires = _cut(aig, muxes, chosen, design)
    net = to_netlist(cut, design, prefix="_x")
    out = []
    for lib in libs:
        inner = map_logic(net, lib)
        outs = dict(inner.outputs)
        cells = list(inner.cells)
        for name, (pa, pb, ps) in wires.items():
            args = [""] * 4
            args[ia], args[ib], args[isel] = (x if x in ("GND", "VCC") else outs.pop(x) for x in (pa, pb, ps))
            args[ien] = "VCC" if active else "GND"
            cells.append(CellUse(cell, tuple(args), name))
        cells = _ordered(cells)
        outputs = {o: outs[o] for o in design.outputs}
        area = inner.area + len(wires) / 4
        out.append(Mapping(cells, outputs, inner.storage_nets, area, cell_depth(cells, design.inputs)))
    return out


#: the rail a constant literal of the graph is tied to
_RAILS = {0: "GND", 1: "VCC"}


def _cut(aig: AIG, muxes: dict, chosen: set, design) -> tuple[AIG, dict]:
    """The graph with each chosen multiplexer's output made a free input:
    ``(graph, {input name: (data-0 output, data-1 output, select output)})``
    (a constant data input is the rail's name, ``GND`` or ``VCC``)."""
    taken = set(design.nodes) | set(design.inputs) | set(design.outputs)
    new, lit = frame(aig)
    # a multiplexer that drives an output is named after it
    out_of: dict = {}
    for o, x in aig.outputs:
        if o not in design.inputs and o not in design.storage():
            out_of.setdefault(x, o)
    wires: dict = {}
    extra: list = []
    count = 0
    f0, f1 = aig.f0, aig.f1
    for v in range(1, aig.num_vars):
        if not aig.is_and(v):
            continue
        if v in chosen:
            s, d1, d0, compl = muxes[v]
            name = out_of.get(2 * v + compl, "")
            while not name:
                count += 1
                name = f"_mux{count}"
                if name in taken:
                    name = ""
            m = new.add_input(name)
            lit[v] = m ^ compl   # the AND node may compute the multiplexer's complement
            names = []
            for k, x in zip("abs", (d0, d1, s)):
                if x < 2:   # a constant data input: tied to a rail
                    names.append(_RAILS[x])
                    continue
                names.append(f"{name}_{k}")
                extra.append((names[-1], lit[x >> 1] ^ (x & 1)))
            wires[name] = tuple(names)
            continue
        a, b = f0[v], f1[v]
        lit[v] = new.add_and(lit[a >> 1] ^ (a & 1), lit[b >> 1] ^ (b & 1))
    for name, x in aig.outputs:
        new.add_output(name, lit[x >> 1] ^ (x & 1))
    for name, x in extra:
        new.add_output(name, x)
    for old, nl in zip(aig.latches, new.latches):
        nl.next = lit[old.next >> 1] ^ (old.next & 1)
        nl.control = None if old.control is None else lit[old.control >> 1] ^ (old.control & 1)
    return new, wires


def _ordered(cells: list) -> list:
    """``cells`` with every cell after the cells that drive its inputs (Kahn's order)."""
    by_out = {c.out: i for i, c in enumerate(cells)}
    need = [0] * len(cells)
    readers: dict = {}
    for i, c in enumerate(cells):
        for a in set(c.args):
            j = by_out.get(a)
            if j is not None:
                need[i] += 1
                readers.setdefault(j, []).append(i)
    ready = [i for i in range(len(cells)) if need[i] == 0]
    ready.reverse()
    out = []
    while ready:
        i = ready.pop()
        out.append(cells[i])
        for r in readers.get(i, ()):
            need[r] -= 1
            if need[r] == 0:
                ready.append(r)
    return out
