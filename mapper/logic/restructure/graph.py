"""And-inverter graphs as the passes of :mod:`mapper.logic.restructure` use them.

Every pass here reads one :class:`~mapper.logic.aig.AIG` and writes a new
one over the same inputs and storage elements (same names, same order):
:func:`frame` starts the new graph and maps the free variables across,
:func:`finish` copies the outputs and the storage elements' data and
control literals, and :func:`cleanup` keeps only the nodes some root reads
(a pass may leave nodes it stopped using behind).  No function here
recurses over the depth of a graph.

:func:`to_netlist` turns a graph back into a :class:`~mapper.netlist.Netlist`
of 2-input nodes over the design's own port and storage names, which the
mapper reads like any design.
"""
from __future__ import annotations

from ..aig import AIG
from ..function import Function, var_mask

__all__ = ["frame", "finish", "cleanup", "roots", "mffc_size", "global_tables", "to_netlist",
           "Levels"]


def roots(aig: AIG) -> list:
    """Literals the graph must compute: outputs, then each storage element's data and control."""
    out = [lit for _, lit in aig.outputs]
    for latch in aig.latches:
        out.append(latch.next)
        if latch.control is not None:
            out.append(latch.control)
    return out


def frame(aig: AIG) -> tuple[AIG, list]:
    """A new empty graph with ``aig``'s inputs and storage elements, and the
    literal map old variable -> new literal (filled for the constant and the
    free variables, -1 elsewhere)."""
    new = AIG()
    lit = [-1] * aig.num_vars
    lit[0] = 0
    for v in aig.inputs:
        lit[v] = new.add_input(aig.names[v])
    for latch in aig.latches:
        lit[latch.var] = 2 * new.add_latch(latch.name, latch.kind, latch.init).var
    return new, lit


def finish(aig: AIG, new: AIG, lit: list) -> AIG:
    """Copy ``aig``'s outputs and storage literals into ``new`` through ``lit``."""
    def m(x):
        return lit[x >> 1] ^ (x & 1)

    for name, x in aig.outputs:
        new.add_output(name, m(x))
    for old, nl in zip(aig.latches, new.latches):
        nl.next = m(old.next)
        nl.control = None if old.control is None else m(old.control)
    return new


def cleanup(aig: AIG) -> AIG:
    """The same graph with only the AND nodes some root reads, renumbered in order."""
    need = set(aig.cone(roots(aig)))
    new, lit = frame(aig)
    f0, f1 = aig.f0, aig.f1
    for v in range(1, aig.num_vars):
        if v in need:
            a, b = f0[v], f1[v]
            lit[v] = new.add_and(lit[a >> 1] ^ (a & 1), lit[b >> 1] ^ (b & 1))
    return finish(aig, new, lit)


def mffc_size(aig: AIG, v: int, refs: list, leaves=()) -> tuple[int, list]:
    """Nodes that die with ``v`` (its maximum fan-out-free cone, stopped at
    ``leaves``): ``(count, the nodes)``.  ``refs`` (fan-out counts) is left as
    it was."""
    stop = set(leaves)
    dead = [v]
    stack = [v]
    touched = []
    f0, f1 = aig.f0, aig.f1
    while stack:
        u = stack.pop()
        for x in (f0[u] >> 1, f1[u] >> 1):
            if x in stop or f0[x] < 0:
                continue
            refs[x] -= 1
            touched.append(x)
            if refs[x] == 0:
                dead.append(x)
                stack.append(x)
    for x in touched:
        refs[x] += 1
    return len(dead), dead


def global_tables(aig: AIG) -> list | None:
    """Truth table of every variable over all free variables (inputs, then
    storage outputs; variable ``j`` is table input ``j``), or ``None`` when
    there are more than 16 of them."""
    free = list(aig.inputs) + [latch.var for latch in aig.latches]
    n = len(free)
    if n > 16:
        return None
    full = (1 << (1 << n)) - 1
    vals = [0] * aig.num_vars
    for j, v in enumerate(free):
        vals[v] = var_mask(n, j)
    f0, f1 = aig.f0, aig.f1
    for v in range(1, aig.num_vars):
        a = f0[v]
        if a < 0:
            continue
        b = f1[v]
        x = vals[a >> 1] ^ (full if a & 1 else 0)
        y = vals[b >> 1] ^ (full if b & 1 else 0)
        vals[v] = x & y
    return vals


class Levels:
    """Logic levels of a graph that grows: call :meth:`of` for any literal."""

    def __init__(self, aig: AIG):
        self.aig = aig
        self.lev: list = []

    def of(self, lit: int) -> int:
        aig, lev = self.aig, self.lev
        while len(lev) < aig.num_vars:
            v = len(lev)
            a = aig.f0[v]
            lev.append(0 if a < 0 else 1 + max(lev[a >> 1], lev[aig.f1[v] >> 1]))
        return lev[lit >> 1]


def _and_table(ca: int, cb: int) -> int:
    """Table of AND(a ^ ca, b ^ cb) over (a, b)."""
    return sum(1 << m for m in range(4) if ((m & 1) ^ ca) and (((m >> 1) & 1) ^ cb))


_AND_TABLES = {(ca, cb): Function.from_table(2, _and_table(ca, cb)) for ca in (0, 1) for cb in (0, 1)}
_NOT = Function.from_table(1, 0b01)
_BUF = Function.from_table(1, 0b10)


def to_netlist(aig: AIG, design, prefix: str = "_r"):
    """``aig`` as a :class:`~mapper.netlist.Netlist` with its inputs, storage
    elements and outputs (the names ``aig`` gives them), named after
    ``design``: one 2-input node per AND (complemented fan-ins folded into
    its function), an inverter where a complemented node is read, a buffer
    where an output is another net, constants where needed.  An AND node an
    output reads uncomplemented takes the output's name; other internal nets
    are named ``prefix`` + a number, clear of every name of ``design`` and
    ``aig``.  The design's don't-care network comes along."""
    from ...netlist import Netlist

    fixed = {aig.names[v] for v in aig.inputs} | {latch.name for latch in aig.latches}
    taken = set(design.nodes) | set(design.inputs) | set(design.outputs) | fixed | {o for o, _ in aig.outputs}
    n = Netlist(design.name)
    for v in aig.inputs:
        n.add_input(aig.names[v])
    pos: dict = {}   # var -> net of its positive literal
    neg: dict = {}   # var -> net of its complement
    for v in aig.inputs:
        pos[v] = aig.names[v]
    for latch in aig.latches:
        pos[latch.var] = latch.name
    named: dict = {}
    for o, lit in aig.outputs:
        if not lit & 1 and aig.is_and(lit >> 1) and o not in fixed:
            named.setdefault(lit >> 1, o)
    count = [0]

    def fresh() -> str:
        while True:
            count[0] += 1
            name = f"{prefix}{count[0]}"
            if name not in taken:
                taken.add(name)
                return name

    def net(lit: int) -> str:
        """A net computing ``lit`` (an inverter or a constant made on first use)."""
        v = lit >> 1
        table = neg if lit & 1 else pos
        got = table.get(v)
        if got is not None:
            return got
        out = fresh()
        if v == 0:
            n.add_constant(out, lit & 1)
        else:
            n.add_logic(out, [pos[v]], _NOT)
        table[v] = out
        return out

    need = set(aig.cone(roots(aig)))
    f0, f1 = aig.f0, aig.f1
    for v in range(1, aig.num_vars):
        if v not in need:
            continue
        a, b = f0[v], f1[v]
        name = named.get(v) or fresh()
        n.add_logic(name, [net(a & ~1), net(b & ~1)], _AND_TABLES[(a & 1, b & 1)])
        pos[v] = name
    for latch in aig.latches:
        d = net(latch.next)
        ctrl = None if latch.control is None else net(latch.control)
        n.add_storage(latch.name, d, latch.kind, ctrl, latch.init)
    for o, lit in aig.outputs:
        src = net(lit)
        if src != o:
            n.add_logic(o, [src], _BUF)
        n.add_output(o)
    n.exdc = design.exdc
    return n
