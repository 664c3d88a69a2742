"""pyslang's elaborated design → :class:`~mapper.netlist.Netlist`.

The instances the top reaches are visited with a work list; each gets slots
for its nets (named under its ``/``-joined instance path, generate blocks
included as path steps), then its continuous assignments, gate primitives,
``always`` blocks (:mod:`.verilog_procs`) and instances (whose ports join
the parent's nets) are lowered into the :class:`~.verilog_bits.BitStore`.

The first instance of a module with given parameter values is lowered with
everything below it, then kept as a template
(:meth:`~.verilog_bits.BitStore.record`): the other instances get fresh
slots named under their own path and the template's drivers, without
walking pyslang's objects again.
"""
from __future__ import annotations

from typing import Any

from pyslang import ast

from .verilog_bits import Fail
from .verilog_check import initial_assignments
from .verilog_expr import Ctx, Net, Scope, constant_bits, fit_width, target_name
from .verilog_procs import ProcLowerer

__all__ = ["lower"]

SK = ast.SymbolKind
EK = ast.ExpressionKind
# enumeration members compared with ``is`` in the loops that visit every declaration
_NET, _VARIABLE, _PORT, _INSTANCE = SK.Net, SK.Variable, SK.Port, SK.Instance
_ASSIGN, _GATE = SK.ContinuousAssign, SK.PrimitiveInstance
_PROCEDURE, _INITIAL = SK.ProceduralBlock, ast.ProceduralBlockKind.Initial
_GENERATE_BLOCK, _GENERATE_ARRAY = SK.GenerateBlock, SK.GenerateBlockArray
_ITEMS = (SK.ContinuousAssign, SK.PrimitiveInstance, SK.ProceduralBlock, SK.Instance)
_NAMED_VALUE, _ELEMENT_SELECT, _CONVERSION, _ASSIGNMENT = (EK.NamedValue, EK.ElementSelect, EK.Conversion,
                                                           EK.Assignment)
_IN = ast.ArgumentDirection.In


def lower(rep, store, top):
    """Lower the design under ``top`` into ``store``; errors go to ``rep``."""
    lw = _Lowerer(rep, store)
    try:
        lw.run(top)
    except RecursionError:
        rep.error(None, "the design nests too deeply to read")


class _Lowerer(ProcLowerer):
    def __init__(self, rep, store):
        super().__init__(rep, store)
        self._shapes: dict[Any, tuple[int, int] | tuple[None, None]] = {}  # type -> (msb, lsb) of a vector
        self._net_types: dict = {}
        self._templates: dict = {}

    # -- hierarchy -------------------------------------------------------------------
    def run(self, top):
        scope = self.make_scope(top.body, "")
        st = self.store
        for port in top.body.portList:
            net = scope.nets.get(port.internalSymbol)
            if net is None:
                continue
            if port.direction == ast.ArgumentDirection.In:
                st.top_inputs.extend(net.bits)
                for b in net.bits:
                    st.drv[b] = ("i",)
                    st.drv_at[b] = net.at
            else:
                st.top_outputs.extend(net.bits)
        # depth first, on an explicit stack: a new instance is finished (with all below it)
        # before its parent goes on, so that the parent's next instances of the same
        # module are copies of it
        todo: list = [scope]
        while todo:
            item = todo.pop()
            if type(item) is Scope:
                # the mark is taken once the whole subtree is done (it sits under the children)
                todo.append(("done", item, len(self.store.name), len(self.store.clock_slots),
                             self.rep.errors + self.tie_folds, list(self.store.drv[item.r0[0]:item.r0[1]])))
                self.body(item, todo, 0)
            elif item[0] == "resume":
                self.body(item[1], todo, item[2])
            else:
                self.subtree_done(*item[1:])
            if self.rep.errors >= 50:
                break

    def subtree_done(self, scope, r1_start, clocks_from, errors, connected):
        """The first instance of a module (with its parameters) is lowered with all
        below it: keep it as a template for the other instances."""
        # not kept when its subtree had errors, or read a set or reset as tied off: that depends on
        # how this very instance is connected (both counters only grow)
        if scope.key is None or scope.key in self._templates or self.rep.errors + self.tie_folds != errors:
            return
        ports = []
        for name, is_in, bits in _port_nets(scope):
            if bits is None:  # a port without a net (the check refuses those): lower each instance anew
                return
            ports.append((name, is_in, [b - scope.r0[0] for b in bits]))
        self._templates[scope.key] = self.store.record(scope.prefix, scope.r0, scope.declared, connected,
                                                       r1_start, clocks_from, ports)

    def key(self, body):
        """What makes two instances lower alike: the module and its parameters' values."""
        params = body.parameters
        return (body.definition, tuple(str(getattr(p, "value", p)) for p in params) if params else ())

    def make_scope(self, body, prefix):
        """A new instance: slots for its nets; its items listed (with the path
        prefix of the generate block each stands in)."""
        scope = Scope(prefix, body)
        r0 = len(self.store.name)
        port_inits: dict[ast.Symbol, ast.Expression] = {}  # ``output reg q = 1'b0``: the value sits on the port
        initials: list = []  # ``initial q = INIT;`` blocks: starting values, like ``reg q = INIT``
        items = scope.items
        stack = [(body, prefix)]
        while stack:
            sc, pre = stack.pop()
            for m in sc:
                k = m.kind
                if k is _NET:
                    self.declare(scope, m, pre, m.initializer or port_inits.get(m), True)
                elif k is _PROCEDURE and m.procedureKind == _INITIAL:
                    initials.append((m, pre))
                elif k in _ITEMS:
                    items.append((m, pre))
                elif k is _PORT:
                    if m.initializer is not None:
                        port_inits[m.internalSymbol] = m.initializer
                elif k is _VARIABLE:
                    t = m.type
                    if t.isPredefinedInteger or not t.isIntegral:
                        continue  # a loop variable (others are refused by the check)
                    self.declare(scope, m, pre, m.initializer or port_inits.get(m), False)
                elif k is _GENERATE_BLOCK:
                    if not m.isUninstantiated:
                        stack.append((m, f"{pre}{m.name or m.externalName}/"))
                elif k is _GENERATE_ARRAY:
                    for e in m.entries:
                        if not e.isUninstantiated:
                            stack.append((e, f"{pre}{m.name}[{e.arrayIndex}]/"))
        for m, pre in initials:
            for e in initial_assignments(m.body) or ():
                net = scope.nets.get(e.left.symbol)
                if net is not None:
                    items.append((("reg", net, e.right), pre))
        scope.r0 = (r0, len(self.store.name))
        scope.declared = list(self.store.drv[r0:])
        return scope

    def declare(self, scope, m, pre, init, is_net):
        t = m.type
        shape = self._shapes.get(t)
        if shape is None:  # types are shared between declarations: look each up once
            rng = t.fixedRange if t.isPackedArray else None
            shape = self._shapes[t] = (rng.left, rng.right) if rng is not None else (None, None)
        msb, lsb = shape
        name = pre + m.name
        at = m.location
        new_slot = self.store.new_slot
        if msb is not None and lsb is not None:  # (both are, or neither)
            step = 1 if msb >= lsb else -1
            bits = [new_slot(f"{name}[{i}]", at, False) for i in range(lsb, msb + step, step)]
        else:
            bits = [new_slot(name, at, False)]
        net = Net(name, bits, m, not is_net, at, msb, lsb)
        scope.nets[m] = net
        if is_net:
            nt = self._net_types.get(m.netType)
            if nt is None:
                nt = self._net_types[m.netType] = m.netType.name
            if nt == "wor":
                self.store.wired.update(bits)
            if nt == "supply0" or nt == "supply1":
                st = self.store
                for b in bits:
                    st.drv[b] = ("a", 1 if nt == "supply1" else 0)
                    st.drv_at[b] = at
            if init is not None:
                scope.items.append((("init", net, init), pre))
        elif init is not None:
            scope.items.append((("reg", net, init), pre))

    def body(self, scope, todo, start):
        """Lower the items of ``scope`` from number ``start`` on; stops after an
        instance that is not a copy (its work goes on ``todo``, then the rest of
        this body)."""
        items = scope.items
        if start == 0 and any(type(it[0]) is tuple and it[0][0] == "reg" for it in items):
            # initial values of regs first: the always blocks that assign them need them
            items.sort(key=lambda it: not (type(it[0]) is tuple and it[0][0] == "reg"))
        for i in range(start, len(items)):
            m, pre = items[i]
            try:
                if type(m) is tuple:
                    kind, net, e = m
                    self.initial_value(scope, kind, net, e, pre)
                    continue
                k = m.kind
                if k is _ASSIGN:
                    self.assign(scope, m, pre)
                elif k is _GATE:
                    self.gate(scope, m, pre)
                elif k is _INSTANCE:
                    child = self.instance(scope, m, pre)
                    if child is not None:
                        todo.append(("resume", scope, i + 1))
                        todo.append(child)
                        return
                else:
                    self.always(scope, m, pre)
            except Fail:
                pass

    def initial_value(self, scope, kind, net, e, pre):
        ctx = Ctx(scope, pre + net.sym.name, e.sourceRange.start)
        if (kind != "init" and e.kind == EK.NamedValue and e.symbol.kind == SK.Parameter
                and constant_bits(e.symbol.value.value, e.type.bitWidth) is None):
            return  # a storage model's starting value left at x (the models file's default): unknown
        bits = self.value(e, ctx)
        if kind == "init":  # a net declaration assignment: a continuous assignment
            for s, b in zip(net.bits, fit_width(bits, len(net.bits))):
                self.store.drive(s, ("a", b), e.sourceRange.start)
            return
        if any(b >= 2 for b in bits):
            self.fail(e.sourceRange.start, f"the initial value of '{net.name}' must be a constant")
        net.init = fit_width(bits, len(net.bits))

    def assign(self, scope, m, pre):
        e = m.assignment
        if e.kind != EK.Assignment:
            self.fail(m.location, "this assignment cannot be read")
        if m.delay is not None:
            self.note_delay(m.delay.sourceRange.start)
        left = e.left
        net = scope.nets.get(left.symbol) if left.kind == EK.NamedValue else None
        # the assignment stands for its position (its operator), found only for a message
        ctx = scope.ctx
        ctx.at = e
        if net is not None and not net.is_reg:
            keys = net.bits
            ctx.hint = net.name
        else:
            ctx.hint = pre + target_name(left)
            keys, _ = self.lvalue(left, ctx, False)
        bits = self.value(e.right, ctx)
        if len(bits) != len(keys):
            bits = fit_width(bits, len(keys))
        drive = self.store.drive
        for s, b in zip(keys, bits):
            drive(s, ("a", b), e)

    def gate(self, scope, m, pre):
        kind = m.primitiveType.name
        conns = m.portConnections
        at = m  # the gate stands for its position (its keyword), found only for a message
        if m.delay is not None:
            self.note_delay(m.delay.sourceRange.start)
        if len(conns) < 2:
            self.fail(at, f"a '{kind}' gate needs an output and at least one input")
        outs, ins = (conns[:-1], conns[-1:]) if kind in ("not", "buf") else (conns[:1], conns[1:])
        ctx = scope.ctx
        ctx.at = at
        name = m.name
        ctx.hint = pre + name if name else pre + target_name(outs[0].left)
        out_slots = []
        nets = scope.nets
        for c in outs:
            left = c.left
            net = nets.get(left.symbol) if left.kind == EK.NamedValue else None
            if net is not None and not net.is_reg:
                keys = net.bits
            else:
                keys, _ = self.lvalue(left, ctx, False)
            if len(keys) != 1:
                self.fail(left.sourceRange.start, f"a gate terminal must be 1 bit wide; this one is {len(keys)} bits")
            out_slots.append(keys[0])
        in_bits = []
        for c in ins:
            k = c.kind
            if k == EK.NamedValue:  # the common terminals first, without the general walk
                net = nets.get(c.symbol)
                if net is not None and len(net.bits) == 1:
                    in_bits.append(net.bits[0])
                    continue
            elif k == EK.ElementSelect:
                bit = self._bit_of_net(c, ctx)
                if bit is not None:
                    in_bits.append(bit)
                    continue
            while c.kind == EK.Conversion:
                c = c.operand
            bits = self.value(c, ctx)
            if len(bits) != 1:
                self.fail(c.sourceRange.start, f"a gate terminal must be 1 bit wide; this one is {len(bits)} bits")
            in_bits.append(bits[0])
        st = self.store
        if kind == "not":
            b = st.inv(in_bits[0], at, ctx.hint)
        elif kind == "buf":
            b = st.buffer(in_bits[0], at, ctx.hint)
        else:
            b = st.gate(kind, in_bits, at, ctx.hint)
        for s in out_slots:
            st.drive(s, ("a", b), at)

    def instance(self, scope, m, pre):
        """An instance joined to the parent's nets through its ports: a copy of the
        template of its module when there is one, else its new scope (returned:
        its items are still to lower)."""
        prefix = f"{pre}{m.name}/"
        key = self.key(m.body)
        tpl = self._templates.get(key)
        ports: list[PortNets]
        if tpl is not None:
            b0 = self.store.make_nets(tpl, prefix)
            ports = [(name, is_in, [b0 + i for i in idx]) for name, is_in, idx in tpl.ports]
            todo = None
        else:
            child = self.make_scope(m.body, prefix)
            child.key = key
            ports = [(name, is_in, bits) for name, is_in, bits in _port_nets(child)]
            todo = child
        conns = m.portConnections
        if len(conns) != len(ports) or any(pc.port.name != p[0] for pc, p in zip(conns, ports)):
            by_name: dict[str, PortNets] = {p[0]: p for p in ports}  # (never seen: connections follow the ports' order)
            ports = [by_name.get(pc.port.name, (pc.port.name, True, None)) for pc in conns]
        st = self.store
        ctx = scope.ctx
        for (name, is_in, bits), pc in zip(ports, conns):
            e = pc.expression
            if bits is None:
                continue
            try:
                if not is_in:
                    self.connect_output(ctx, m, prefix, name, e, bits)
                    continue
                if e is None:
                    for s in bits:
                        st.unconnected[s] = (m.location, name, prefix[:-1])
                    continue
                k = e.kind  # the common connections first, without the general walk
                if k is _NAMED_VALUE:
                    src = scope.nets.get(e.symbol)
                    got = src.bits if src is not None and len(src.bits) == len(bits) else None
                elif k is _ELEMENT_SELECT and len(bits) == 1:
                    bit = self._bit_of_net(e, ctx)
                    got = [bit] if bit is not None else None
                else:
                    got = None
                if got is None:
                    got = self.connect_input(ctx, m, prefix, name, e, bits)
                for s, b in zip(bits, got):
                    st.drive(s, ("a", b), e)
            except Fail:
                pass
        if tpl is not None:
            self.store.copy(tpl, prefix, b0)
        return todo

    def connect_input(self, ctx, m, prefix, port, e, bits):
        """Bits input ``port`` (its slots ``bits``) gets from the expression connected to it."""
        ctx.at, ctx.hint = e, prefix + port
        x = e
        while x.kind is _CONVERSION:
            x = x.operand
        if x.type.bitWidth != len(bits):
            self.rep.warn(e, f"port '{port}' of '{m.name}' is {len(bits)} bit(s) wide "
                             f"but is connected to {x.type.bitWidth} bit(s)")
        return fit_width(self.value(e, ctx), len(bits))

    def connect_output(self, ctx, m, prefix, port, e, bits):
        """Join the nets output ``port`` (its slots ``bits``) is connected to with it."""
        if e is None:
            return
        ctx.at, ctx.hint = e, prefix + port
        lhs = e.left if e.kind is _ASSIGNMENT else e
        keys, _ = self.lvalue(lhs, ctx, False)
        if len(keys) != len(bits):
            self.rep.warn(e, f"port '{port}' of '{m.name}' is {len(bits)} bit(s) wide "
                             f"but is connected to {len(keys)} bit(s)")
        drive = self.store.drive
        for k, s in enumerate(keys):
            drive(s, ("a", bits[k] if k < len(bits) else 0), e)


#: a port of an instance: its name, whether it is an input, its slots (None: it has no net)
PortNets = tuple[str, bool, list[int] | None]


def _port_nets(scope: Scope) -> list[PortNets]:
    """(name, is an input, slots) of each port of an instance, in order."""
    out = []
    nets = scope.nets
    for port in scope.body.portList:
        net = nets.get(port.internalSymbol)
        out.append((port.name, port.direction is _IN, net.bits if net is not None else None))
    return out
