"""The structural subset, checked on pyslang's elaborated design.

pyslang accepts the whole language; netfit reads the part that maps onto
gates and storage.  This check walks the declarations of every module
instance the top reaches (and the design's top-level declarations) and
reports, at the construct's first token, what is outside that part:
``inout`` ports, ``tri``/``wand``/... nets, ``signed`` nets, memories,
``real`` variables, ``integer`` variables other than a ``for`` loop's,
``integer`` ports (even a loop's variable: a port is part of the design),
``initial`` blocks, SystemVerilog ``always_ff``/``always_comb``, an
``always`` without an event list, an event list with a second edge (an
asynchronous set or reset) or with a gated clock, tasks, functions with
output arguments, specify blocks, ``defparam``, arrays of instances,
switch-level and tristate primitives, user-defined primitives, a module
declared inside another, and a name declared twice in one scope.
Expressions and statements are checked where they are lowered
(:mod:`.verilog_lower`).  Every problem is reported, not only the first.
"""
from __future__ import annotations

import re
from typing import Any

from pyslang import ast, syntax

__all__ = ["EDGE_NONE", "GATES", "check", "position", "statements"]

SK = ast.SymbolKind
EK = ast.ExpressionKind
ST = ast.StatementKind
TK = ast.TimingControlKind

#: gate primitives of the subset
GATES = ("and", "or", "nand", "nor", "xor", "xnor", "not", "buf")
_NET_TYPES = ("wire", "supply0", "supply1", "uwire", "wor")  # 'wor': relay contacts wired in parallel
_FINE = {SK.Port, SK.Net, SK.Variable, SK.Parameter, SK.Genvar, SK.ContinuousAssign, SK.Instance,
         SK.Subroutine, SK.ProceduralBlock, SK.PrimitiveInstance, SK.GenerateBlock,
         SK.GenerateBlockArray, SK.EmptyMember, SK.TransparentMember}
_NAMED = (SK.Net, SK.Variable, SK.Instance, SK.PrimitiveInstance, SK.Parameter, SK.GenerateBlock,
          SK.GenerateBlockArray, SK.Subroutine, SK.InstanceArray)
#: the edge of a level-sensitive event (``@(a or b)``).  pyslang 12.1 has this member, but the
#: stubs it ships leave it out of ``EdgeKind`` (they list only the three edges), hence the ignore
EDGE_NONE = ast.EdgeKind.None_  # type: ignore[attr-defined]
_OUTSIDE = " is outside the structural subset"


def position(e):
    """Where to point at an expression: its operator for a binary one, else its start."""
    syn = e.syntax
    while syn is not None and syn.kind == syntax.SyntaxKind.ParenthesizedExpression:
        syn = syn.expression
    if syn is not None:
        op = getattr(syn, "operatorToken", None)
        if op is not None:
            return op.location
        return syn.sourceRange.start
    return e.sourceRange.start


def statements(root):
    """Every statement under ``root`` (itself included), without recursion."""
    stack = [root]
    while stack:
        s = stack.pop()
        if s is None:
            continue
        yield s
        k = s.kind
        if k == ST.List:
            stack.extend(reversed(list(s.list)))
        elif k == ST.Block:
            stack.append(s.body)
        elif k == ST.Timed:
            stack.append(s.stmt)
        elif k == ST.Conditional:
            stack.append(s.ifFalse)
            stack.append(s.ifTrue)
        elif k == ST.Case:
            stack.append(s.defaultCase)
            stack.extend(reversed([it.stmt for it in s.items]))
        elif k in (ST.ForLoop, ST.WhileLoop, ST.DoWhileLoop, ST.RepeatLoop, ST.ForeverLoop,
                   ST.ForeachLoop):
            stack.append(s.body)


def initial_assignments(body) -> list | None:
    """The assignments of an ``initial`` block that only gives regs starting values
    (``initial q = INIT;`` or a ``begin ... end`` of such lines, as netfit's own models write them),
    or None for any other block."""
    stmts = list(body.body.list) if body.kind == ST.Block and body.body.kind == ST.List else (
        [body.body] if body.kind == ST.Block else [body])
    out = []
    for s in stmts:
        if s.kind != ST.ExpressionStatement or s.expr.kind != EK.Assignment:
            return None
        e = s.expr
        if e.left.kind != EK.NamedValue or e.left.symbol.kind != SK.Variable:
            return None
        out.append(e)
    return out


def loop_variables(root) -> set:
    """Symbols that are the variable of a ``for`` loop under ``root``."""
    out = set()
    for s in statements(root):
        if s.kind == ST.ForLoop:
            out.update(s.loopVars)
            for e in s.initializers:
                if e.kind == EK.Assignment and e.left.kind == EK.NamedValue:
                    out.add(e.left.symbol)
    return out


def check(rep, comp, tree, top, twice=True) -> None:
    """Report everything outside the subset in the design under ``top``.
    ``twice``: look for names declared twice (pyslang flags them as redefinitions;
    without one the look is skipped, it costs a pass over every name)."""
    _design_level(rep, comp, tree)
    stack: list[tuple[Any, frozenset[str]]] = [(top, frozenset())]  # (instance, modules above it)
    seen: set = set()
    while stack:
        inst, above = stack.pop()
        body = inst.body
        module = body.definition.name
        if module in above:
            continue  # a module inside itself (pyslang reports it)
        params = body.parameters
        key = (body.definition, tuple(str(getattr(p, "value", p)) for p in params) if params else ())
        if key in seen:
            continue  # the same module with the same parameters: the same findings
        seen.add(key)
        above = above | {module}
        walk = _Walk(rep, module, twice)
        scopes = [inst.body]
        while scopes:
            walk.members(scopes.pop(), scopes)
        for v in walk.integers:
            if v in walk.port_vars:  # a port is part of the design, never a loop constant
                w = v.type.bitWidth
                rep.error(_decl_start(v), f"port '{v.name}' of type '{v.type}'" + _OUTSIDE
                          + f" (declare it as a vector: [{w - 1}:0] {v.name})")
            elif v not in walk.loops:
                rep.error(_decl_start(v), f"an '{v.type}' variable" + _OUTSIDE + " (except as a 'for' loop's variable)")
        stack.extend((c, above) for c in walk.instances)


class _Walk:
    """One instance's declarations (its body and generate blocks), in one pass."""

    def __init__(self, rep, module, twice):
        self.rep, self.module, self.twice = rep, module, twice
        self.instances: list = []
        self.integers: list = []  # checked at the end, against every for loop's variable
        self.loops: set = set()
        self.port_vars: set = set()  # the variables that ports stand for
        self.fine: set = set()  # (net type, type) pairs and primitives found inside the subset

    def members(self, scope, scopes) -> None:
        rep = self.rep
        first: dict = {}
        fine = self.fine
        for m in scope:
            k = m.kind
            if self.twice and k in _NAMED:
                name = m.name
                if name:
                    prev = first.setdefault(name, m)
                    if prev is not m:
                        _twice(rep, m, prev, self.module)
            if k == SK.Net:
                key = (m.netType, m.type)
                if key not in fine and _net(rep, m):
                    fine.add(key)
            elif k == SK.ContinuousAssign:
                continue
            elif k == SK.PrimitiveInstance:
                p = m.primitiveType
                if p not in fine and _primitive(rep, m, p):
                    fine.add(p)
            elif k == SK.Instance:
                self.instances.append(m)
            elif k == SK.GenerateBlock:
                if not m.isUninstantiated:
                    scopes.append(m)
            elif k == SK.GenerateBlockArray:
                scopes.extend(e for e in m.entries if not e.isUninstantiated)
            elif k == SK.Port:
                if m.internalSymbol is not None:
                    self.port_vars.add(m.internalSymbol)
                _port(rep, m)
            elif k == SK.Variable:
                if m.type.isPredefinedInteger:
                    self.integers.append(m)
                else:
                    _variable(rep, m)
            elif k == SK.ProceduralBlock:
                self.loops |= loop_variables(m.body)
                _procedure(rep, m)
            elif k == SK.Subroutine:
                if m.body is not None:
                    self.loops |= loop_variables(m.body)
                _subroutine(rep, m)
            else:
                _other(rep, m, k)


def _primitive(rep, m, p) -> bool:
    if p.name in GATES:
        return True
    what = ("a user-defined primitive" if p.kind == SK.Primitive and p.primitiveKind ==
            ast.PrimitiveSymbol.PrimitiveKind.UserDefined else "the switch-level or tristate primitive")
    rep.error(m.syntax.parent.sourceRange.start, f"{what} '{p.name}'" + _OUTSIDE)
    return False


def _other(rep, m, k) -> None:
    if k == SK.SpecifyBlock:
        rep.error(m.location, "a specify block ('specify')" + _OUTSIDE)
    elif k == SK.DefParam:
        rep.error(m.syntax.parent.sourceRange.start,
                  "'defparam' (override parameters with #( ) on the instance)" + _OUTSIDE)
    elif k == SK.InstanceArray:
        rep.error(m.location, f"an array of instances ('{m.name}[...]')" + _OUTSIDE)
    elif k not in _FINE:
        rep.error(m.location, f"this declaration ({str(k).split('.')[-1]})" + _OUTSIDE)


def _design_level(rep, comp, tree) -> None:
    root = tree.root
    members = root.members if root.kind == syntax.SyntaxKind.CompilationUnit else [root]
    for m in members:
        k = m.kind
        if k == syntax.SyntaxKind.UdpDeclaration:
            rep.error(m.sourceRange.start, "a user-defined primitive ('primitive')" + _OUTSIDE)
        elif k != syntax.SyntaxKind.ModuleDeclaration and k != syntax.SyntaxKind.EmptyMember:
            words = rep.text(m.sourceRange).split(None, 1)
            rep.error(m.sourceRange.start, f"'{words[0] if words else k}' at the top of a file" + _OUTSIDE)
    for d in comp.getDefinitions():
        syn = d.syntax
        if d.kind != SK.Definition or syn is None:
            continue
        if syn.parent is not None and syn.parent.kind == syntax.SyntaxKind.ModuleDeclaration:
            rep.error(syn.sourceRange.start, "a module cannot be declared inside another; "
                                             "is 'endmodule' missing before this line?")


def _twice(rep, m, prev, module) -> None:
    line = rep.line(prev.location)
    if m.kind in (SK.Instance, SK.PrimitiveInstance) and prev.kind in (SK.Instance, SK.PrimitiveInstance):
        rep.error(m.location, f"instance name '{m.name}' is used twice in module '{module}' "
                              f"(first at line {line})")
    else:
        rep.error(m.location, f"'{m.name}' is declared twice (first at line {line})")


def _decl_start(m):
    syn = m.syntax
    if syn is not None and syn.kind == syntax.SyntaxKind.Declarator and syn.parent is not None:
        return syn.parent.sourceRange.start
    return syn.sourceRange.start if syn is not None else m.location


def _port(rep, m) -> None:
    d = m.direction
    if d == ast.ArgumentDirection.In or d == ast.ArgumentDirection.Out:
        if m.internalSymbol is None:
            rep.error(m.location, "a port made of an expression" + _OUTSIDE)
        return
    word = "inout" if d == ast.ArgumentDirection.InOut else "ref"
    syn = m.syntax
    if syn is not None and syn.kind == syntax.SyntaxKind.PortReference and m.internalSymbol is not None:
        at = _decl_start(m.internalSymbol)
    else:
        at = _decl_start(m)
    rep.error(at, f"'{word}'" + _OUTSIDE)


def _signed_at(rep, m):
    """The ``signed`` keyword of a declaration, else its start."""
    syn = m.syntax
    decl = syn.parent if syn is not None and syn.parent is not None else syn
    if decl is not None:
        f, a = rep.file_of(decl.sourceRange.start)
        _, b = rep.file_of(decl.sourceRange.end)
        if f is not None:
            hit = re.compile(rb"\bsigned\b").search(f.data, a, b)
            if hit:
                line, col = f.line_col(hit.start())
                return (f.display, line, col)
    return _decl_start(m)


def _net(rep, m) -> bool:
    """Report a net outside the subset; True when it is inside."""
    nt = m.netType.name
    if nt not in _NET_TYPES:
        rep.error(m.location if m.isImplicit else _decl_start(m), f"a '{nt}' net" + _OUTSIDE)
        return False
    return _data_type(rep, m)


def _data_type(rep, m) -> bool:
    t = m.type
    if t.isUnpackedArray:
        syn = m.syntax
        dims = getattr(syn, "dimensions", None) if syn is not None else None
        at = dims[0].sourceRange.start if dims else m.location
        rep.error(at, f"an array ('{m.name}[...]' declares a memory)" + _OUTSIDE)
        return False
    if t.isSigned:
        rep.error(_signed_at(rep, m), "'signed'" + _OUTSIDE)
        return False
    if t.isPackedArray and t.arrayElementType is not None and t.arrayElementType.isPackedArray:
        rep.error(m.location, f"'{m.name}' has more than one packed dimension, which" + _OUTSIDE)
        return False
    return True


def _variable(rep, m) -> None:
    t = m.type
    if not t.isIntegral and not t.isUnpackedArray:
        rep.error(_decl_start(m), f"a '{t}' variable" + _OUTSIDE)
        return
    _data_type(rep, m)


def _subroutine(rep, m) -> None:
    if m.subroutineKind == ast.SubroutineKind.Task:
        rep.error(m.syntax.sourceRange.start, "a task ('task')" + _OUTSIDE)
        return
    for a in m.arguments:
        if a.direction != ast.ArgumentDirection.In:
            rep.error(a.location, f"a function argument that is not an input ('{a.name}')" + _OUTSIDE)
    for v in m:
        if v.kind == SK.Variable and not v.type.isIntegral:
            rep.error(_decl_start(v), f"a '{v.type}' variable" + _OUTSIDE)
        elif v.kind == SK.Variable and v.type.isUnpackedArray:
            rep.error(v.location, f"an array ('{v.name}[...]')" + _OUTSIDE)


def _procedure(rep, m) -> None:
    pk = m.procedureKind
    PK = ast.ProceduralBlockKind
    if pk == PK.Initial:
        if initial_assignments(m.body) is None:
            rep.error(m.location, "an 'initial' block that does more than give regs their starting values "
                           "('initial q = 1'b0;')" + _OUTSIDE)
        return
    if pk == PK.Final:
        rep.error(m.location, "a 'final' block" + _OUTSIDE)
        return
    if pk != PK.Always:
        word = {PK.AlwaysComb: "always_comb", PK.AlwaysFF: "always_ff", PK.AlwaysLatch: "always_latch"}[pk]
        rep.error(m.location, f"SystemVerilog '{word}'" + _OUTSIDE)
        return
    body = m.body
    if body.bad:
        return  # pyslang has reported what is wrong in it
    if body.kind != ST.Timed or body.timing.kind not in (TK.SignalEvent, TK.EventList, TK.ImplicitEvent):
        rep.error(m.location, "an 'always' block without an event control '@(...)'" + _OUTSIDE)
        return
    t = body.timing
    if t.kind == TK.ImplicitEvent:
        return
    events = [t] if t.kind == TK.SignalEvent else list(t.events)
    for ev in events:
        if ev.kind != TK.SignalEvent:
            rep.error(ev.sourceRange.start, "this event" + _OUTSIDE)
            return
        if ev.iffCondition is not None:
            rep.error(ev.sourceRange.start, "an 'iff' condition in an event list" + _OUTSIDE)
            return
        if ev.edge == ast.EdgeKind.BothEdges:
            rep.error(ev.sourceRange.start, "an 'edge' event (both edges)" + _OUTSIDE)
            return
    edges = [ev for ev in events if ev.edge != EDGE_NONE]
    if edges and len(edges) != len(events):
        level = next(ev for ev in events if ev.edge == EDGE_NONE)
        rep.error(level.sourceRange.start, "an event list that mixes an edge and a level" + _OUTSIDE)
        return
    # several edges (a clock and asynchronous sets or resets): read where all but one are tied
    # off at the instance (netfit's own flip-flop models); verilog_procs checks that
    for ev in events:
        e = ev.expr
        if ev.edge != EDGE_NONE:
            if e.kind not in (EK.NamedValue, EK.ElementSelect):
                rep.error(position(e), "a clock that is an expression (gated clock)" + _OUTSIDE)
        elif e.kind not in (EK.NamedValue, EK.ElementSelect, EK.RangeSelect):
            rep.error(position(e), "an expression in an event list" + _OUTSIDE)
