"""Expressions of pyslang's elaborated design, lowered to bits.

pyslang has already applied the standard's width rules: every expression
node carries its type after context propagation, and the operands of an
operation arrive converted (a ``Conversion`` node) to the width the
operation works at.  So each node here only turns its operands' bits into
its own: logic nodes for ``~ & | ^ ~^``, reductions, ``! && ||``, ``?:``,
``== !=``, ``< <= > >=`` and ``+ -`` (ripple-carry), wiring for
concatenation, replication, selects and shifts by a constant.  A node whose
operands are all constant is folded with Python integers (signed where the
standard says so), which is also how ``* / % **`` are read: between
constants only.  On nets they are outside the structural subset, as are
``=== !==`` and shifts by a net.  Literals with ``x``/``z`` digits, real
numbers, signed sized literals, strings, hierarchical names, system
functions that are not constant and bit-selects by a net are refused with
a message at the construct.

Expressions are walked with an explicit stack (no recursion over their
depth).  Bits are lists of slots of :class:`~.verilog_bits.BitStore`,
least significant first; slots 0 and 1 are the constants.
"""
from __future__ import annotations

from typing import TYPE_CHECKING, Any, NoReturn

import pyslang
from pyslang import ast

from .verilog_bits import HOLD, T_AND2, T_NAND2, T_NOR2, T_OR2, T_XNOR2, T_XOR2, BitStore
from .verilog_check import position

if TYPE_CHECKING:
    from .verilog_source import Report

__all__ = ["Ctx", "ExprLowerer", "Net", "Scope", "bits_int", "constant_bits", "fit_width", "int_bits"]

EK = ast.ExpressionKind
SK = ast.SymbolKind
BO = ast.BinaryOperator
UO = ast.UnaryOperator
_HEX = pyslang.LiteralBase.Hex
_BIN = pyslang.LiteralBase.Binary
_OUTSIDE = " is outside the structural subset"
_LEAF = ()

_BIT_OPS = {BO.BinaryAnd: T_AND2, BO.BinaryOr: T_OR2, BO.BinaryXor: T_XOR2, BO.BinaryXnor: T_XNOR2}
_REDUCE = {UO.BitwiseAnd: (T_AND2, None), UO.BitwiseNand: (T_AND2, T_NAND2), UO.BitwiseOr: (T_OR2, None),
           UO.BitwiseNor: (T_OR2, T_NOR2), UO.BitwiseXor: (T_XOR2, None), UO.BitwiseXnor: (T_XOR2, T_XNOR2)}
_OP_TEXT = {BO.Add: "+", BO.Subtract: "-", BO.Multiply: "*", BO.Divide: "/", BO.Mod: "%", BO.Power: "**",
            BO.LogicalShiftLeft: "<<", BO.LogicalShiftRight: ">>", BO.ArithmeticShiftLeft: "<<<",
            BO.ArithmeticShiftRight: ">>>", BO.CaseEquality: "===", BO.CaseInequality: "!==",
            BO.WildcardEquality: "==?", BO.WildcardInequality: "!=?", BO.LogicalImplication: "->",
            BO.LogicalEquivalence: "<->"}
_SHIFTS = (BO.LogicalShiftLeft, BO.LogicalShiftRight, BO.ArithmeticShiftLeft, BO.ArithmeticShiftRight)
_COMPARE = (BO.LessThan, BO.LessThanEqual, BO.GreaterThan, BO.GreaterThanEqual)


class Net:
    """A declared net or variable of one module instance."""

    __slots__ = ("at", "bits", "init", "is_reg", "lsb", "msb", "name", "sym")

    def __init__(self, name, bits, sym, is_reg, at, msb=None, lsb=None):
        self.name, self.bits, self.sym, self.is_reg, self.at = name, bits, sym, is_reg, at
        self.msb, self.lsb = msb, lsb
        self.init = None


class Scope:
    """One module instance: its nets by pyslang symbol."""

    __slots__ = ("body", "ctx", "declared", "inits", "items", "key", "module", "nets", "prefix", "r0")

    def __init__(self, prefix, body):
        self.prefix, self.body = prefix, body
        self.key = None  # set for instances below the top (see the lowerer's templates)
        self.r0 = (0, 0)  # the slots of its own nets
        self.declared: list = []  # their drivers when made (supply nets)
        self.module = body.definition.name
        self.nets: dict = {}
        self.items: list = []
        self.inits = None
        #: the context of its continuous assignments and gates (one, reused)
        self.ctx = Ctx(self, prefix)


class Ctx:
    """What an expression is read in: the instance, how reads of nets are
    seen (``reader``, inside a level-sensitive block), the values of loop
    variables (``consts``) and, inside a function, its local variables
    (``locals``: symbol -> keys into ``env``)."""

    __slots__ = ("at", "consts", "depth", "env", "func", "hint", "locals", "reader", "scope")

    def __init__(self, scope, hint, at=None, reader=None, consts=None):
        self.scope, self.hint, self.at, self.reader = scope, hint, at, reader
        self.consts = consts if consts is not None else {}
        self.locals = None
        self.env = None
        self.depth = 0
        self.func = None


def int_bits(v: int, width: int) -> list:
    """Bits (0/1 slots) of ``v`` in two's complement, least significant first."""
    v &= (1 << width) - 1
    return [(v >> k) & 1 for k in range(width)]


def bits_int(bits, signed=False) -> int:
    v = 0
    for k, b in enumerate(bits):
        if b:
            v |= 1 << k
    if signed and bits and bits[-1]:
        v -= 1 << len(bits)
    return v


def fit_width(bits, width, signed=False):
    """``bits`` cut or widened to ``width`` (with the sign bit when ``signed``, else zeros)."""
    n = len(bits)
    if n == width:
        return bits
    if n > width:
        return bits[:width]
    fill = bits[-1] if signed and n else 0
    return bits + [fill] * (width - n)


def _const(bits) -> bool:
    for b in bits:
        if b >= 2:
            return False
    return True


def constant_bits(sv, width):
    """Bits of a pyslang ``SVInt`` widened or cut to ``width``; ``None`` when it has x or z digits."""
    if sv.hasUnknown:
        return None
    text = sv.toString(_HEX, False)
    v = -int(text[1:], 16) if text.startswith("-") else int(text, 16)
    if width > sv.bitWidth and not sv.isSigned:
        v &= (1 << sv.bitWidth) - 1
    return int_bits(v, width)


class ExprLowerer:
    """Lowers expressions into a :class:`~.verilog_bits.BitStore` (``store``),
    recording problems in ``rep`` (a :class:`~.verilog_source.Report`)."""

    def __init__(self, rep: Report, store: BitStore):
        self.rep = rep
        self.store = store

    def fail(self, at: Any, msg: str) -> NoReturn:
        self.rep.fail(at, msg)

    # -- the walk ------------------------------------------------------------------
    def value(self, e, ctx) -> list:
        """Bits of expression ``e`` (as wide as its type)."""
        if ctx.reader is None:
            k = e.kind
            if k == EK.NamedValue:
                net = ctx.scope.nets.get(e.symbol)
                if net is not None:
                    return list(net.bits)
            elif k == EK.ElementSelect:
                bit = self._bit_of_net(e, ctx)
                if bit is not None:
                    return [bit]
        # post-order on an explicit stack: an expression is visited, a tuple
        # (node, children) combines the values its children left on ``vals``
        vals: list = []
        stack = [e]
        plain = ctx.reader is None
        nets = ctx.scope.nets
        while stack:
            x = stack.pop()
            if type(x) is tuple:
                x, n = x
                args = vals[len(vals) - n:]
                del vals[len(vals) - n:]
                vals.append(self._node(x, args, ctx))
                continue
            if plain:
                k = x.kind
                if k == EK.NamedValue:
                    net = nets.get(x.symbol)
                    if net is not None:
                        vals.append(list(net.bits))
                        continue
                elif k == EK.ElementSelect:
                    bit = self._bit_of_net(x, ctx)
                    if bit is not None:
                        vals.append([bit])
                        continue
            kids = self._kids(x, ctx)
            if kids is _LEAF:
                vals.append(self._leaf(x, ctx))
                continue
            stack.append((x, len(kids)))
            stack.extend(reversed(kids))
        return vals[0]

    def const_int(self, e, ctx, what) -> int:
        bits = self.value(e, ctx)
        if not _const(bits):
            self.fail(position(e), f"{what} must be a constant")
        return bits_int(bits, e.type.isSigned)

    def _net_base(self, e, ctx):
        v = e.value
        if v.kind == EK.NamedValue:
            return ctx.scope.nets.get(v.symbol)
        return None

    def _bit_of_net(self, e, ctx):
        """The slot of ``net[literal]`` read outside always blocks, else None (the
        common case of netlists, taken without the general walk)."""
        v, sel = e.value, e.selector
        if v.kind != EK.NamedValue or sel.kind != EK.IntegerLiteral:
            return None
        net = ctx.scope.nets.get(v.symbol)
        if net is None or net.msb is None:
            return None
        sv = sel.value
        if sv.hasUnknown:
            return None
        text = sv.toString(_HEX, False)
        i = -int(text[1:], 16) if text.startswith("-") else int(text, 16)
        p = i - net.lsb if net.msb >= net.lsb else net.lsb - i
        return net.bits[p] if 0 <= p < len(net.bits) else None

    def _kids(self, e, ctx):
        k = e.kind
        if k == EK.BinaryOp:
            return (e.left, e.right)
        if k == EK.Conversion or k == EK.UnaryOp:
            return (e.operand,)
        if k == EK.ElementSelect:
            return (e.selector,) if self._net_base(e, ctx) is not None else (e.value, e.selector)
        if k == EK.RangeSelect:
            return (e.left, e.right) if self._net_base(e, ctx) is not None else (e.value, e.left, e.right)
        if k == EK.ConditionalOp:
            conds = list(e.conditions)
            if len(conds) != 1 or conds[0].pattern is not None:
                self.fail(e.sourceRange.start, "a conditional with patterns" + _OUTSIDE)
            return (conds[0].expr, e.left, e.right)
        if k == EK.Concatenation:
            return tuple(e.operands)
        if k == EK.Replication:
            return (e.count, e.concat)
        if k == EK.Call and not e.isSystemCall:
            return tuple(e.arguments)
        return _LEAF

    # -- leaves ------------------------------------------------------------------
    def _leaf(self, e, ctx):
        k = e.kind
        if k == EK.NamedValue:
            return self._named(e, ctx)
        if k == EK.IntegerLiteral or k == EK.UnbasedUnsizedIntegerLiteral:
            if k == EK.IntegerLiteral and e.type.isSigned and not e.isDeclaredUnsized:
                self.fail(e.sourceRange.start, f"signed literal '{self.rep.text(e.sourceRange)}'" + _OUTSIDE
                          + " (netfit reads unsigned values only)")
            bits = constant_bits(e.value, e.type.bitWidth)
            if bits is None:
                self._unknown_digits(e)
            return bits
        if k == EK.RealLiteral:
            self.fail(e.sourceRange.start, f"real number '{self.rep.text(e.sourceRange)}'" + _OUTSIDE)
        if k == EK.StringLiteral:
            self.fail(e.sourceRange.start, "a string" + _OUTSIDE)
        if k == EK.HierarchicalValue:
            text = self.rep.text(e.sourceRange)
            head = text.split(".", 1)[0]
            f, off = self.rep.file_of(e.sourceRange.start)
            at = e.sourceRange.start
            if f is not None and "." in text:
                line, col = f.line_col(off + len(head.encode("utf-8")))
                at = (f.display, line, col)
            self.fail(at, f"a hierarchical name ('{head}.…')" + _OUTSIDE)
        if k == EK.Call:
            return self._system_call(e, ctx)
        if k == EK.Assignment:
            self.fail(position(e), "an assignment inside an expression" + _OUTSIDE)
        if k == EK.Invalid:
            self.fail(ctx.at, "this expression cannot be read")
        self.fail(e.sourceRange.start, f"this expression ({str(k).split('.')[-1]})" + _OUTSIDE)

    def _unknown_digits(self, e) -> NoReturn:
        text = self.rep.text(e.sourceRange)
        tail = text.split("'", 1)[-1]
        bad = next((c for c in tail[1:] if c in "xXzZ?"), "x").lower()
        self.fail(e.sourceRange.start, f"'{bad}' digit in '{text}': unknown (x) and high-impedance (z) "
                                       "values are outside the structural subset")

    def _named(self, e, ctx):
        sym = e.symbol
        net = ctx.scope.nets.get(sym)
        if net is not None:
            if ctx.reader is not None:
                return ctx.reader(net.bits, e, net.name)
            return list(net.bits)
        c = ctx.consts.get(sym)
        if c is not None:
            return list(c)
        if ctx.locals is not None:
            keys = ctx.locals.get(sym)
            if keys is not None:
                return self.read_locals(keys, e, sym.name, ctx)
        k = sym.kind
        if k == SK.Parameter or k == SK.EnumValue or k == SK.Specparam:
            bits = constant_bits(sym.value.value, e.type.bitWidth)
            if bits is None:
                self.fail(e.sourceRange.start, f"'{sym.name}' has x or z digits, which" + _OUTSIDE)
            return bits
        if k == SK.Variable and sym.type.isPredefinedInteger:
            self.fail(e.sourceRange.start, f"'{sym.name}' is an integer: it can only be read inside the "
                                           "'for' loop it controls")
        self.fail(e.sourceRange.start, f"'{sym.name}' cannot be read here")

    def read_locals(self, keys, e, name, ctx):
        out = []
        for key in keys:
            v = ctx.env.get(key, HOLD)
            if not isinstance(v, int) or v == HOLD:
                self.fail(e.sourceRange.start, f"'{name}' is read in function '{ctx.func}' before it is "
                                               "assigned on every path")
            out.append(v)
        return out

    def _system_call(self, e, ctx):
        # a constant system function ($clog2, $bits ...): pyslang evaluates it
        cv = e.eval(ast.EvalContext(ctx.scope.body))
        if cv:
            sv = cv.value
            if isinstance(sv, pyslang.SVInt):
                bits = constant_bits(sv, e.type.bitWidth)
                if bits is not None:
                    return bits
        self.fail(e.sourceRange.start, f"the system function '{e.subroutineName}'" + _OUTSIDE)

    # -- operations ------------------------------------------------------------------
    def _node(self, e, args, ctx):
        k = e.kind
        if k == EK.BinaryOp:
            return self._binary(e, args[0], args[1], ctx)
        if k == EK.Conversion:
            return fit_width(args[0], e.type.bitWidth, e.operand.type.isSigned)
        if k == EK.UnaryOp:
            return self._unary(e, args[0], ctx)
        if k == EK.ElementSelect or k == EK.RangeSelect:
            return self._select(e, args, ctx)
        if k == EK.ConditionalOp:
            c, t, f = args
            w = e.type.bitWidth
            t, f = fit_width(t, w), fit_width(f, w)
            st = self.store
            cb = st.tree(c, T_OR2, ctx.at, ctx.hint)
            if cb < 2:
                return list(t if cb else f)
            return [st.mux(cb, x, y, ctx.at, ctx.hint) for x, y in zip(t, f)]
        if k == EK.Concatenation:
            for op in e.operands:
                while op.kind == EK.Conversion:
                    op = op.operand
                if op.kind == EK.IntegerLiteral and op.isDeclaredUnsized:
                    self.fail(op.sourceRange.start, "an unsized number in a concatenation has no width; "
                                                    "give it one (for example 4'd3)")
            out = []
            for a in reversed(args):
                out.extend(a)
            return out
        if k == EK.Replication:
            count, inner = args
            if not _const(count):
                self.fail(position(e.count), "a replication count must be a constant")
            return inner * bits_int(count)
        if k == EK.Call:
            return self.call_function(e, args, ctx)
        self.fail(e.sourceRange.start, f"this expression ({str(k).split('.')[-1]})" + _OUTSIDE)

    def call_function(self, e, args, ctx):  # pragma: no cover - provided by the lowerer
        raise NotImplementedError

    def _unary(self, e, a, ctx):
        op = e.op
        w = e.type.bitWidth
        st = self.store
        if _const(a):
            return int_bits(_fold_unary(op, a, e.operand.type.isSigned, e, self), w)
        at, hint = ctx.at, ctx.hint
        if op == UO.BitwiseNot:
            return [st.inv(b, at, hint) for b in a]
        if op == UO.Plus:
            return a
        if op == UO.Minus:
            return st.subtract([0] * w, fit_width(a, w), at, hint)
        if op == UO.LogicalNot:
            return [st.tree(a, T_OR2, at, hint, T_NOR2)]
        red = _REDUCE.get(op)
        if red is not None:
            return [st.tree(a, red[0], at, hint, red[1])]
        self.fail(position(e), "an increment or decrement" + _OUTSIDE)

    def _binary(self, e, a, b, ctx):
        op = e.op
        w = e.type.bitWidth
        if _const(a) and _const(b):
            return int_bits(self._fold_binary(e, op, a, b, e.left.type.isSigned, e.right.type.isSigned), w)
        st = self.store
        at, hint = ctx.at, ctx.hint
        t = _BIT_OPS.get(op)
        if t is not None:
            if len(a) != w or len(b) != w:
                a, b = fit_width(a, w), fit_width(b, w)
            node = st.node
            return [node(2, t, [x, y], at, hint) for x, y in zip(a, b)]
        lt, rt = e.left.type, e.right.type
        if op == BO.Add:
            return st.add(fit_width(a, w), fit_width(b, w), at, hint)
        if op == BO.Subtract:
            return st.subtract(fit_width(a, w), fit_width(b, w), at, hint)
        if op in _EQUALITY:
            # netfit's nets carry 0 or 1 only (x and z digits are refused where they are written), so
            # '===' and '!==' mean '==' and '!=' here; netfit's relay models use them so that a
            # simulator leaves an armature released while its coil is unknown
            n = max(len(a), len(b))
            eq = [st.node(2, T_XNOR2, [x, y], at, hint) for x, y in zip(fit_width(a, n), fit_width(b, n))]
            return [st.tree(eq, T_AND2, at, hint, None if op in _EQUAL else T_NAND2)]
        if op in _COMPARE:
            n = max(len(a), len(b))
            signed = lt.isSigned and rt.isSigned
            a, b = fit_width(a, n, signed), fit_width(b, n, signed)
            if signed:  # flipping the sign bits turns a signed order into an unsigned one
                a = a[:-1] + [st.inv(a[-1], at, hint)]
                b = b[:-1] + [st.inv(b[-1], at, hint)]
            if op in (BO.GreaterThan, BO.LessThanEqual):
                a, b = b, a
            lt_bit = st.borrow(a, b, at, hint)
            return [lt_bit if op in (BO.LessThan, BO.GreaterThan) else st.inv(lt_bit, at, hint)]
        if op in (BO.LogicalAnd, BO.LogicalOr):
            x = st.tree(a, T_OR2, at, hint)
            y = st.tree(b, T_OR2, at, hint)
            return [st.node(2, T_AND2 if op == BO.LogicalAnd else T_OR2, [x, y], at, hint)]
        if op in _SHIFTS:
            if not _const(b):
                self.fail(position(e), f"a shift by a net ('{_OP_TEXT[op]}' needs a constant amount)" + _OUTSIDE)
            n = bits_int(b)
            a = fit_width(a, w, lt.isSigned)
            if op in (BO.LogicalShiftLeft, BO.ArithmeticShiftLeft):
                return ([0] * n + a)[:w] if n < w else [0] * w
            fill = a[-1] if op == BO.ArithmeticShiftRight and lt.isSigned else 0
            return (a[n:] + [fill] * w)[:w] if n < w else [fill] * w
        self.fail(position(e), f"operator '{_OP_TEXT.get(op, str(op))}' on nets" + _OUTSIDE)

    def _fold_binary(self, e, op, a, b, ls, rs):
        signed = ls and rs
        x, y = bits_int(a, signed), bits_int(b, signed)
        if op in _SHIFTS:
            n = bits_int(b)
            x = bits_int(a, ls)
            if op in (BO.LogicalShiftLeft, BO.ArithmeticShiftLeft):
                return x << n if n < 1 << 16 else 0
            if op == BO.LogicalShiftRight:
                return (x & ((1 << len(a)) - 1)) >> n
            return x >> n
        if op in (BO.Divide, BO.Mod) and y == 0:
            self.fail(position(e), "division by zero (the result would be x)")
        if op == BO.Power:
            if y < 0 or y > 4096:
                self.fail(position(e), "'**' gives no usable value here")
            return x ** y
        return _FOLD[op](x, y)

    def _select(self, e, args, ctx):
        net = self._net_base(e, ctx)
        if net is None:
            base, args = args[0], args[1:]
            name = _base_name(e.value)
        else:
            base, name = net.bits, net.name
        vt = e.value.type
        if not vt.isPackedArray:
            self.fail(e.sourceRange.start, f"'{name}' is a scalar; it has no bits to select")
        rng = vt.fixedRange
        msb, lsb = rng.left, rng.right
        desc = msb >= lsb
        if e.kind == EK.ElementSelect:
            if not _const(args[0]):
                self.fail(position(e.selector), f"a bit-select of '{name}' with an index that is not "
                                                "constant" + _OUTSIDE)
            i = bits_int(args[0], e.selector.type.isSigned)
            p = i - lsb if desc else lsb - i
            if not 0 <= p < len(base):
                self.fail(e.sourceRange.start, f"index {i} is outside '{name}[{msb}:{lsb}]'")
            bits = [base[p]]
        else:
            bits = self._part(e, base, args, name, msb, lsb)
        if net is not None and ctx.reader is not None:
            return ctx.reader(bits, e, name)
        return list(bits)

    def _part(self, e, base, args, name, msb, lsb):
        if not _const(args[0]) or not _const(args[1]):
            self.fail(e.sourceRange.start, f"a part-select of '{name}' whose bounds are not constant" + _OUTSIDE)
        a = bits_int(args[0], e.left.type.isSigned)
        b = bits_int(args[1], e.right.type.isSigned)
        desc = msb >= lsb
        sk = e.selectionKind
        if sk == ast.RangeSelectionKind.IndexedUp:
            left, right = (a + b - 1, a) if desc else (a, a + b - 1)
        elif sk == ast.RangeSelectionKind.IndexedDown:
            left, right = (a, a - b + 1) if desc else (a - b + 1, a)
        else:
            left, right = a, b
        if (left - right) * (msb - lsb) < 0:
            self.fail(e.sourceRange.start, f"part-select [{left}:{right}] runs the other way from "
                                           f"'{name}[{msb}:{lsb}]'")
        pl = left - lsb if desc else lsb - left
        pr = right - lsb if desc else lsb - right
        if not (0 <= pl < len(base) and 0 <= pr < len(base)):
            self.fail(e.sourceRange.start, f"part-select [{left}:{right}] is outside '{name}[{msb}:{lsb}]'")
        lo, hi = min(pl, pr), max(pl, pr)
        return base[lo:hi + 1]

    # -- assignment targets -------------------------------------------------------------
    def lvalue(self, e, ctx, procedural):
        """Keys an assignment to ``e`` sets, least significant first: slots of
        nets, or keys of a function's local variables.  Returns ``(keys,
        loop_symbol)``; ``loop_symbol`` is set (and ``keys`` empty) for an
        assignment to a ``for`` loop's variable."""
        pieces = []
        stack = [e]
        while stack:
            x = stack.pop()
            if x.kind == EK.Concatenation:
                stack.extend(x.operands)  # the last operand holds the low bits and is taken first
            else:
                pieces.append(x)
        out = []
        for x in pieces:
            base = x if x.kind == EK.NamedValue else x.value if x.kind in (EK.ElementSelect, EK.RangeSelect) else None
            if base is None or base.kind != EK.NamedValue:
                self.fail(x.sourceRange.start, "only a net, a bit, a part or a concatenation of them can be assigned")
            sym = base.symbol
            net = ctx.scope.nets.get(sym)
            if net is not None and ctx.func is not None:
                self.fail(x.sourceRange.start, f"function '{ctx.func}' assigns '{net.name}', which is not its "
                                               "own: a function with side effects" + _OUTSIDE)
            if net is not None:
                if procedural and not net.is_reg:
                    self.fail(x.sourceRange.start, f"'{net.name}' is a wire: an always block can only assign a reg")
                if not procedural and net.is_reg:
                    self.fail(x.sourceRange.start, f"a continuous assignment to the reg '{net.name}'" + _OUTSIDE)
                keys, name = net.bits, net.name
            elif ctx.locals is not None and sym in ctx.locals:
                keys, name = ctx.locals[sym], sym.name
            elif sym in ctx.consts or (sym.kind == SK.Variable and sym.type.isPredefinedInteger):
                if x is not base or len(pieces) > 1:
                    self.fail(x.sourceRange.start, f"'{sym.name}' is a loop variable: only the whole of it "
                                                   "can be assigned")
                return [], sym
            elif ctx.func is not None:
                self.fail(x.sourceRange.start, f"function '{ctx.func}' assigns '{sym.name}', which is not its "
                                               "own: a function with side effects" + _OUTSIDE)
            else:
                self.fail(x.sourceRange.start, f"'{sym.name}' cannot be assigned here")
            if x is not base:
                sel_ctx = Ctx(ctx.scope, ctx.hint, ctx.at, None, ctx.consts)
                sel_ctx.locals, sel_ctx.env, sel_ctx.func = ctx.locals, ctx.env, ctx.func
                if x.kind == EK.ElementSelect:
                    idx = [self.value(x.selector, sel_ctx)]
                else:
                    idx = [self.value(x.left, sel_ctx), self.value(x.right, sel_ctx)]
                keys = self._select_keys(x, keys, idx, name)
            out.extend(keys)
        return out, None

    def _select_keys(self, x, keys, idx, name):
        vt = x.value.type
        if not vt.isPackedArray:
            self.fail(x.sourceRange.start, f"'{name}' is a scalar; it has no bits to select")
        rng = vt.fixedRange
        msb, lsb = rng.left, rng.right
        if x.kind == EK.ElementSelect:
            if not _const(idx[0]):
                self.fail(position(x.selector), f"a bit-select of '{name}' with an index that is not "
                                                "constant" + _OUTSIDE)
            i = bits_int(idx[0], x.selector.type.isSigned)
            p = i - lsb if msb >= lsb else lsb - i
            if not 0 <= p < len(keys):
                self.fail(x.sourceRange.start, f"index {i} is outside '{name}[{msb}:{lsb}]'")
            return [keys[p]]
        return self._part(x, keys, idx, name, msb, lsb)


def _base_name(e):
    while e.kind in (EK.ElementSelect, EK.RangeSelect):
        e = e.value
    if e.kind == EK.NamedValue:
        return e.symbol.name
    return "the value"


def target_name(e):
    """The name an assignment target starts with (for naming the logic made for it)."""
    while e.kind == EK.Concatenation:
        e = e.operands[0]
    return _base_name(e)


def _fold_unary(op, a, signed, e, low):
    x = bits_int(a, signed)
    n = len(a)
    if op == UO.BitwiseNot:
        return ~x
    if op == UO.Plus:
        return x
    if op == UO.Minus:
        return -x
    if op == UO.LogicalNot:
        return int(x == 0)
    red = _REDUCE.get(op)
    if red is not None:
        u = x & ((1 << n) - 1)
        if red[0] == T_AND2:
            r = int(u == (1 << n) - 1)
        elif red[0] == T_OR2:
            r = int(u != 0)
        else:
            r = u.bit_count() & 1
        return r ^ 1 if red[1] is not None else r
    low.fail(position(e), "an increment or decrement" + _OUTSIDE)


def _div(a, b):
    q = abs(a) // abs(b)
    return q if (a >= 0) == (b >= 0) else -q


_EQUAL = (BO.Equality, BO.CaseEquality)
_EQUALITY = _EQUAL + (BO.Inequality, BO.CaseInequality)

_FOLD = {
    BO.Add: lambda a, b: a + b, BO.Subtract: lambda a, b: a - b, BO.Multiply: lambda a, b: a * b,
    BO.Divide: _div, BO.Mod: lambda a, b: a - b * _div(a, b),
    BO.BinaryAnd: lambda a, b: a & b, BO.BinaryOr: lambda a, b: a | b, BO.BinaryXor: lambda a, b: a ^ b,
    BO.BinaryXnor: lambda a, b: ~(a ^ b),
    BO.Equality: lambda a, b: int(a == b), BO.Inequality: lambda a, b: int(a != b),
    BO.CaseEquality: lambda a, b: int(a == b), BO.CaseInequality: lambda a, b: int(a != b),
    BO.WildcardEquality: lambda a, b: int(a == b), BO.WildcardInequality: lambda a, b: int(a != b),
    BO.LessThan: lambda a, b: int(a < b), BO.LessThanEqual: lambda a, b: int(a <= b),
    BO.GreaterThan: lambda a, b: int(a > b), BO.GreaterThanEqual: lambda a, b: int(a >= b),
    BO.LogicalAnd: lambda a, b: int(bool(a) and bool(b)), BO.LogicalOr: lambda a, b: int(bool(a) or bool(b)),
    BO.LogicalImplication: lambda a, b: int((not a) or bool(b)),
    BO.LogicalEquivalence: lambda a, b: int(bool(a) == bool(b)),
}
