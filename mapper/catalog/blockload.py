"""Reading block cells and path delays from a catalog element (see :mod:`mapper.catalog.blockdef`).

Called by :mod:`mapper.catalog.catalogs` for a ``<cell>`` with ``<register>``
children or several assignments in its ``function``, and for the
``from``/``to`` delays of a part.  Faults go to the catalog's collector with
their line, like every other catalog fault.
"""
from __future__ import annotations

from ..logic.function import MAX_TABLE_INPUTS
from .blockdef import BlockDef, Register
from .expr import ExprError, parse_assignment, parse_expression
from .model import CellDef, PathDelay

__all__ = ["is_block", "block_from", "split_assignments"]


def is_block(el) -> bool:
    """Whether a ``<cell>`` element is a block: registers inside, or several assignments."""
    text = el.get("function") or ""
    return el.find("register") is not None or len(split_assignments(text)) > 1


def split_assignments(text: str) -> list:
    """The assignments of a block's ``function``: ``;``-separated, blanks dropped."""
    return [part for part in (p.strip() for p in text.split(";")) if part]


def _registers(el, c, name: str, inputs: list, roles: dict) -> list | None:
    regs: list = []
    ok = True
    for r in el.findall("register"):
        rname, clock, clear = r.get("name"), r.get("clock"), r.get("clear")
        if rname in inputs:
            c.err(r, f"cell {name}: register {rname} has the name of an input")
            ok = False
        if any(x.name == rname for x in regs):
            c.err(r, f"cell {name}: register {rname} is declared twice")
            ok = False
        if roles.get(clock) != "clock":
            c.err(r, f"cell {name}: register {rname} is clocked by {clock!r}, which is not an input with "
                     f"role=\"clock\"")
            ok = False
        if clear is not None and roles.get(clear) != "clear":
            c.err(r, f"cell {name}: register {rname} is cleared by {clear!r}, which is not an input with "
                     f"role=\"clear\"")
            ok = False
        try:
            nxt = parse_expression(r.get("next"))
        except ExprError as exc:
            c.err(r, f"cell {name}: register {rname}: bad next value {r.get('next')!r}: {exc.message} "
                     f"(column {exc.col})")
            ok = False
            continue
        regs.append(Register(rname, clock, nxt, clear))
    return regs if ok else None


def _assigns(el, c, name: str, text: str, inputs: list, regs: list) -> list | None:
    """``(name, Expression)`` of every assignment, each reading only what exists before it."""
    known = set(inputs) | {r.name for r in regs}
    out: list = []
    ok = True
    for part in split_assignments(text):
        try:
            a = parse_assignment(part)
        except ExprError as exc:
            c.err(el, f"cell {name}: bad assignment {part!r}: {exc.message} (column {exc.col} of it)")
            ok = False
            continue
        if a.output in known:
            what = "an input" if a.output in inputs else "a register" if any(
                r.name == a.output for r in regs) else "assigned before"
            c.err(el, f"cell {name}: {a.output!r} is {what}; a block assigns each signal once")
            ok = False
            continue
        for n in a.expression.names:
            if n not in known:
                c.err(el, f"cell {name}: {a.output} = ... reads {n!r}, which is no input, register or signal "
                          f"assigned before it")
                ok = False
        known.add(a.output)
        out.append((a.output, a.expression))
    return out if ok else None


def block_from(el, c, name: str, inputs: list, outputs: list, roles: dict, active_low: tuple,
               storage: str | None) -> CellDef | None:
    """The :class:`CellDef` of a block cell, or ``None`` with the faults in collector ``c``."""
    regs = _registers(el, c, name, inputs, roles)
    if regs is None:
        return None
    text = el.get("function") or ""
    assigns = _assigns(el, c, name, text, inputs, regs)
    if assigns is None:
        return None
    if regs and storage not in ("re", "fe"):
        c.err(el, f"cell {name}: a block with registers says when they take their value "
                  f"(storage=\"re\" for the rising clock edge, or \"fe\")")
        return None
    if not regs and storage is not None:
        c.err(el, f"cell {name}: storage=\"{storage}\" but the block has no <register>")
        return None
    signals = {n for n, _ in assigns}
    reg_names = {r.name for r in regs}
    missing = [o for o in outputs if o not in signals and o not in reg_names]
    if missing:
        c.err(el, f"cell {name}: output {', '.join(missing)} is neither assigned nor a register")
        return None
    for r in regs:
        for n in r.next.names:
            if n not in set(inputs) | reg_names | signals:
                c.err(el, f"cell {name}: register {r.name}'s next value reads {n!r}, which is no input, "
                          "register or signal")
                return None
    block = BlockDef(inputs=tuple(inputs), outputs=tuple(outputs), assigns=tuple(assigns), registers=tuple(regs),
                     kind=storage)
    used: set = set()
    for o in outputs:
        used.update(block.support(o))
    for r in regs:
        used.update(block.support(r.name, next_state=True))
        used.add(r.clock)
        if r.clear:
            used.add(r.clear)
    unused = [i for i in inputs if i not in used]
    if unused:
        c.err(el, f"cell {name}: input {', '.join(unused)} is used by no output or register")
        return None
    for what, nm, nxt in [("output", o, False) for o in outputs] + [("register", r.name, True) for r in regs]:
        width = len(block.support(nm, nxt))
        if width > MAX_TABLE_INPUTS:
            c.err(el, f"cell {name}: {what} {nm} depends on {width} inputs and registers; at most "
                      f"{MAX_TABLE_INPUTS}")
            return None
    return CellDef(name=name, inputs=tuple(inputs), output=outputs[0], function=None, expr=text.strip(),
                   storage=None, extra_outputs=tuple(outputs[1:]), roles=roles, active_low=active_low,
                   description=el.get("description") or "", block=block, symbol=el.get("symbol") or "")


def path_delay(d, c, pid: str, cell: CellDef, typ, mx) -> PathDelay | None:
    """A ``<delay from=... to=...>`` of a block cell, its pins checked against the cell."""
    frm = tuple((d.get("from") or "").split())
    to = tuple((d.get("to") or "").split())
    bad = [p for p in frm if p not in cell.inputs] + [p for p in to if p not in cell.outputs]
    if bad:
        c.err(d, f"part {pid}: delay of cell {cell.name} names pin {', '.join(bad)}, which the cell does not "
                 f"have in that direction (inputs: {', '.join(cell.inputs)}; outputs: {', '.join(cell.outputs)})")
        return None
    if not frm or not to:
        c.err(d, f"part {pid}: a path delay names both ends (from=\"...\" to=\"...\")")
        return None
    return PathDelay(frm, to, typ, mx)
