"""Small designs split on one input into 2:1 multiplexers of a common select.

A quad multiplexer part (a 74HC157) has one select pin for its four
sections, so it pays where several outputs can be chosen by the same
signal.  Shannon's expansion ``f = x ? f|x=1 : f|x=0`` (C. E. Shannon, "The
synthesis of two-terminal switching circuits", Bell System Technical
Journal 28, 1949) gives every output that depends on an input ``x`` such a
form: the two cofactors are functions of the other inputs, often much
simpler, and the multiplexers of all the outputs share ``x``.  A textbook
4:1 multiplexer split on its high select becomes two multiplexers of the
low select (one part) and one of the high select (four NAND gates).

For each input ``x`` of a combinational design of at most
:data:`MAX_INPUTS` inputs whose outputs' smallest flat covers are not much
larger than the design (two literals per AND node of its graph, plus
eight; an adder's are exponential), this module writes the design again with the
outputs that depend on ``x`` split on it -- all of them, and only those
whose cofactors have fewer literals in their smallest covers than the
output itself -- and :func:`mapper.fit.muxes.mux_mappings` maps each form.
Every form is one more candidate of the part search, weighed like every
other and proved equal to the design like every build.
"""
from __future__ import annotations

from ..logic.aig import from_netlist
from ..logic.function import Function, var_mask
from ..logic.minimize import min_cover
from ..logic.restructure.graph import global_tables
from ..netlist import Netlist
from .muxes import mux_mappings

__all__ = ["split_designs", "split_mappings", "MAX_INPUTS"]

#: inputs at most of a design split (its outputs are flattened to tables and minimized)
MAX_INPUTS = 10
#: the multiplexer x ? a1 : a0 over fan-ins (x, a1, a0)
_MUX = Function.from_table(3, sum(1 << m for m in range(8) if (m >> 1 & 1 if m & 1 else m >> 2 & 1)))


def split_mappings(design, libs: list, target) -> list:
    """``[(label, Mapping)]`` of each of :func:`split_designs` with its
    multiplexers in the target's multiplexer parts and the rest mapped onto
    each of ``libs`` (none when the target has no such part)."""
    out = []
    for label, form in split_designs(design):
        out += [(label, m) for m in mux_mappings(form, libs, target)]
    return out


def split_designs(design) -> list:
    """``[(label, Netlist)]``: ``design`` written again split on each input
    (see the module docstring); empty for a design with storage, more than
    :data:`MAX_INPUTS` inputs, or a don't-care network."""
    if design.storage() or len(design.inputs) > MAX_INPUTS or design.exdc is not None:
        return []
    aig, _ = from_netlist(design, cover=min_cover)
    tabs = global_tables(aig)
    if tabs is None or aig.latches:
        return []
    n = len(aig.inputs)
    full = (1 << (1 << n)) - 1
    names = [aig.names[v] for v in aig.inputs]
    outs = {o: tabs[x >> 1] ^ (full if x & 1 else 0) for o, x in aig.outputs}
    if sum(_cost(n, t) for t in outs.values()) > 2 * aig.num_ands + 8:
        return []   # flat covers far larger than the design (adders): no split pays
    out = []
    seen: set = set()
    for j, x in enumerate(names):
        m = var_mask(n, j)
        dep = [o for o, t in outs.items() if o not in design.inputs and (t & m) >> (1 << j) != t & ~m & full]
        cheap = [o for o in dep if _cost(n, _cofactor(outs[o], n, j, 1)) + _cost(n, _cofactor(outs[o], n, j, 0))
                 < _cost(n, outs[o])]
        for which, split in (("every output", dep), ("outputs it simplifies", cheap)):
            if not split or (j, tuple(split)) in seen:
                continue
            seen.add((j, tuple(split)))
            out.append((f"split on {x} into multiplexers ({which})", _written(design, names, outs, j, split)))
    return out


def _cofactor(t: int, n: int, j: int, value: int) -> int:
    """The cofactor of table ``t`` at input ``j`` = ``value``, as a table over all ``n`` inputs."""
    m, s = var_mask(n, j), 1 << j
    if value:
        pos = t & m
        return pos | (pos >> s)
    neg = t & ~m & ((1 << (1 << n)) - 1)
    return neg | (neg << s)


def _cost(n: int, t: int) -> int:
    """Literals of the smallest cover found for table ``t``."""
    cubes, _ = min_cover(Function.from_table(n, t))
    return sum(len(c) - c.count("-") for c in cubes)


def _written(design, names: list, outs: dict, j: int, split: list) -> Netlist:
    """The design as one node per output (its table), the outputs in ``split``
    as a multiplexer on input ``j`` of their two cofactors."""
    n = len(names)
    taken = set(design.nodes) | set(design.inputs) | set(design.outputs)
    net = Netlist(design.name)
    for x in names:
        net.add_input(x)

    def fresh(base: str) -> str:
        k = 0
        while f"{base}_{k}" in taken:
            k += 1
        taken.add(f"{base}_{k}")
        return f"{base}_{k}"

    for o, t in outs.items():
        if o in design.inputs:
            pass
        elif o in split:
            hi, lo = fresh(f"{o}_x1"), fresh(f"{o}_x0")
            net.add_logic(hi, names, Function.from_table(n, _cofactor(t, n, j, 1)))
            net.add_logic(lo, names, Function.from_table(n, _cofactor(t, n, j, 0)))
            net.add_logic(o, [names[j], hi, lo], _MUX)
        else:
            net.add_logic(o, names, Function.from_table(n, t))
        net.add_output(o)
    return net
