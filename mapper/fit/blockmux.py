"""Finding 8-to-1 and 4-to-1 multiplexers inside a gate-level design.

A net ``y`` is a multiplexer of select nets ``s`` when each of its
cofactors -- ``y`` with the selects held at one of their values -- is a net
the design already has (Shannon's expansion: ``y = s'.y|s=0 + s.y|s=1``, C.
E. Shannon, 1949, applied to two or three selects at once).  The finder
holds each small set of nets in the near fan-in of ``y`` at every value in
the random patterns of the signatures (:class:`mapper.fit.blockuse.Signatures`),
looks the cofactors up by signature, and proposes an 8-to-1 multiplexer
chip where three selects give eight data nets, else a section of a dual
4-to-1 multiplexer chip where two selects give four.  Every proposal is
proved by SAT before it is kept (:func:`mapper.fit.blockuse.prove_uses`), so
a cofactor that only looked equal in the patterns costs nothing but time.

A proposal needs mostly real data nets (at most one data input on a rail):
an AND gate is a multiplexer with three data inputs held low, and a gate is
the better part for it.
"""
from __future__ import annotations

from itertools import combinations

from ..netlist import Logic
from .blockuse import BlockUse, Signatures, cone, equal_lits, rail_lit

__all__ = ["find_muxes"]

#: near fan-in searched for select nets: levels and nets
_SEL_DEPTH, _SEL_NETS = 3, 12


def _cofactors(sigs: Signatures, y: str, sels: tuple) -> list | None:
    """The literals of ``y`` with ``sels`` held at each value (``sels[0]`` the lowest select bit), in
    data-input order, or ``None`` when one is no net of the design (or only its complement)."""
    mask = sigs.mask
    out = []
    for k in range(1 << len(sels)):
        changes = {s: mask if (k >> j) & 1 else 0 for j, s in enumerate(sels)}
        lit = sigs.find(sigs.value(y, changes), avoid=(y, *sels))
        if lit is None or lit[1]:
            return None
        out.append(lit)
    return out


def _relevant(sigs: Signatures, y: str, near: list) -> list:
    """Nets of ``near`` that ``y`` depends on in the patterns (its two cofactors by the net differ)."""
    mask = sigs.mask
    return [s for s in near if sigs.value(y, {s: 0}) != sigs.value(y, {s: mask})]


def _one(sigs: Signatures, y: str, cells: dict) -> tuple | None:
    """``(cell, selects, data literals)`` of the widest multiplexer ``y`` is, or ``None``."""
    design = sigs.design
    near = [n for n in cone(design, y, _SEL_DEPTH, _SEL_NETS) if n in sigs.sig]
    sels = _relevant(sigs, y, near)
    for cell, width in (("mux8", 3), ("mux4", 2)):
        if cell not in cells or len(near) < (1 << width) + width - 2:
            continue
        for group in combinations(sels, width):
            data = _cofactors(sigs, y, group)
            if data is None:
                continue
            rails = sum(1 for net, _ in data if net in ("VCC", "GND"))
            if rails <= 1 and len({d[0] for d in data}) == len(data):
                return cell, group, data
    return None


def find_muxes(sigs: Signatures, cells: dict, taken: set, serial) -> list:
    """Multiplexer uses for the design's nets that choose among other nets (see the module docstring).

    Nets are tried from the outputs back, so the whole tree of a wide
    multiplexer goes into one chip rather than its branches into several.
    """
    if "mux4" not in cells and "mux8" not in cells:
        return []
    design = sigs.design
    order = [n for n in reversed(design.topological_order()) if isinstance(design.nodes.get(n), Logic)]
    uses = []
    inside: set = set()   # nets between a multiplexer found and its data and selects: its own branches
    for y in order:
        if y in taken or y in inside or len(design.nodes[y].fanins) < 2:
            continue
        found = _one(sigs, y, cells)
        if found is None:
            continue
        cell, sels, data = found
        ins = {f"I{k}": lit for k, lit in enumerate(data)}
        ins.update({f"S{j}": (s, False) for j, s in enumerate(sels)})
        ins["E_N"] = rail_lit(0)   # enabled (low) always
        outs = {"Y": equal_lits(sigs, (y, False), taken)}
        taken.update(net for net, _ in outs["Y"])
        inside.update(_between(design, y, {net for net, _ in ins.values()}))
        uses.append(BlockUse(cell, ins, outs, family="multiplexer", name=serial(),
                             label=f"{len(data)}-to-1 multiplexer driving {y}"))
    return uses


def _between(design, y: str, ends: set) -> set:
    """Logic nets in the fan-in of ``y`` above ``ends`` (the walk stops at them and at inputs)."""
    out: set = set()
    stack = list(design.nodes[y].fanins)
    while stack:
        n = stack.pop()
        if n in ends or n in out or not isinstance(design.nodes.get(n), Logic):
            continue
        out.add(n)
        stack.extend(design.nodes[n].fanins)
    return out
