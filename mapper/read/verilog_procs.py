"""``always`` blocks and functions, run symbolically into bits.

``always`` blocks are run symbolically.  A clocked block (one edge) keeps,
per bit of a reg, the value it takes at the edge (a bit not assigned on a
path keeps its value: its own output through a multiplexer) and becomes
storage ``re``/``fe``.  A level-sensitive block keeps per bit a tree of the
conditions under which it is assigned: assigned on every path it is logic,
else a latch (``ah``, or ``al`` when the only condition is inverted) whose
enable is the logic of the paths that assign it.  Reading a reg the block
assigns, before it is assigned on every path, is refused (a loop through
the block), as is reading a net missing from the event list.

Statements: ``begin``/``end``, ``if``/``else`` (chains of ``else if`` are
walked in a loop), ``case``, ``casez`` and ``casex`` (constant items: ``z``
digits, and in ``casex`` also ``x`` digits, match anything; the first item
that matches wins), ``for`` loops whose start, condition and steps are
constant (run at read time, at most :data:`MAX_LOOP` times, the loop
variable an ``integer``), and calls of functions without side effects
(inlined: their inputs bound to the arguments' bits, their body run like a
level-sensitive block over their own variables; a function that assigns
anything else, or reads a variable of its own before assigning it, is
refused).  ``while``, ``repeat``, ``forever``, tasks, system tasks, event
controls inside a block and ``fork`` are refused where they stand.
"""
from __future__ import annotations

import pyslang
from pyslang import ast

from ..netlist import INIT_UNKNOWN
from .verilog_bits import HOLD, T_OR2, shape
from .verilog_check import EDGE_NONE, loop_variables, position
from .verilog_expr import Ctx, ExprLowerer, fit_width, target_name

__all__ = ["MAX_LOOP", "MAX_LOOPS_TOTAL", "MAX_NESTING", "ProcLowerer"]

EK = ast.ExpressionKind
SK = ast.SymbolKind
ST = ast.StatementKind
TK = ast.TimingControlKind
_OUTSIDE = " is outside the structural subset"
_BIN = pyslang.LiteralBase.Binary
#: iterations of one ``for`` loop, at most
MAX_LOOP = 1 << 13
#: iterations of all ``for`` loops of a design, at most (nested loops multiply)
MAX_LOOPS_TOTAL = 1 << 16
#: statements nested in statements (and function calls), at most
MAX_NESTING = 100
_LOOP_MSG = ("is read in the always block that assigns it before it is assigned on every path; "
             "that is a loop through the block, which" + _OUTSIDE)
_STATEMENT_WORDS = {ST.WhileLoop: "a 'while' loop", ST.RepeatLoop: "a 'repeat' loop",
                    ST.ForeverLoop: "a 'forever' loop", ST.DoWhileLoop: "a 'do ... while' loop",
                    ST.ForeachLoop: "a 'foreach' loop", ST.Disable: "a 'disable' statement",
                    ST.Wait: "a 'wait' statement", ST.EventTrigger: "an event trigger '->'",
                    ST.ProceduralAssign: "an 'assign' inside a block", ST.Return: "a 'return' statement",
                    ST.ProceduralDeassign: "a 'deassign' statement", ST.Break: "a 'break' statement",
                    ST.Continue: "a 'continue' statement", ST.VariableDeclaration: "a declaration inside a block"}



class _Proc:
    """One always block or function body being run."""

    __slots__ = ("consts", "ctx", "env", "mode", "nonblocking", "reads")

    def __init__(self, mode, ctx):
        self.mode = mode  # "clocked", "level" or "function"
        self.ctx = ctx
        self.env: dict = {}
        self.consts = ctx.consts
        self.reads: list = []
        self.nonblocking = False
        ctx.env = self.env

    def swap(self, env, consts):
        """Run on other values (a branch); returns the previous ones."""
        old = (self.env, self.consts)
        self.env, self.consts = env, consts
        self.ctx.env, self.ctx.consts = env, consts
        return old


class ProcLowerer(ExprLowerer):
    """Lowers ``always`` blocks (and the functions they and expressions call)."""

    def __init__(self, rep, store):
        super().__init__(rep, store)
        self.delay_noted = False
        self.depth = 0
        self._key = -1
        self._loops: dict = {}
        self.iterations = 0
        #: edge lists read with their sets and resets tied off (such a subtree is never copied)
        self.tie_folds = 0

    def note_delay(self, at):
        if not self.delay_noted:
            self.delay_noted = True
            self.rep.warn(at, "delays are ignored: netfit times a build from its parts' own "
                              "propagation delays")

    # -- always blocks ---------------------------------------------------------------
    def always(self, scope, m, pre):
        body = m.body
        t, stmt = body.timing, body.stmt
        if t.kind == TK.SignalEvent and t.edge != EDGE_NONE:
            self.clocked(scope, m, pre, t, stmt)
        elif t.kind == TK.EventList and all(ev.edge != EDGE_NONE for ev in t.events):
            self.clocked(scope, m, pre, self._clock_of(scope, pre, m, list(t.events)), stmt)
        else:
            self.level(scope, m, pre, t, stmt)

    def _clock_of(self, scope, pre, m, events):
        """The clock event of an edge list whose other edges (asynchronous sets and resets) are tied
        off at this instance, as in netfit's own flip-flop models; a set or reset driven by a net, or
        tied at its active level, cannot be read as a clocked storage element."""
        clocks = []
        for ev in events:
            bits = [self._tied(b) for b in self.value(ev.expr, Ctx(scope, pre, m.location))]
            if len(bits) != 1 or bits[0] >= 2:
                clocks.append(ev)
            elif bits[0] != (1 if ev.edge == ast.EdgeKind.NegEdge else 0):
                self.fail(ev.sourceRange.start, "this asynchronous set or reset is tied at its active "
                                                "level: the storage never follows its clock")
        if len(clocks) != 1:
            at = (clocks[1] if clocks else events[0]).sourceRange.start
            self.fail(at, "a second edge in one event list (an asynchronous set or reset) driven by a "
                          "net" + _OUTSIDE + " (netfit reads one only when it is tied off)")
        self.tie_folds += 1
        return clocks[0]

    def _tied(self, b: int) -> int:
        """The constant a slot is joined to through assignments and port connections (a supply
        net), else the slot itself."""
        drv = self.store.drv
        for _ in range(10_000):  # a chain of joins, one per level of hierarchy or assignment
            if b < 2:
                return b
            d = drv[b]
            if d is None or d[0] != "a" or type(d[1]) is not int:
                return b
            b = d[1]
        return b

    def clocked(self, scope, m, pre, t, stmt):
        clk = t.expr
        ctx = Ctx(scope, pre + target_name(clk), m.location)
        cbits = self.value(clk, ctx)
        if len(cbits) != 1:
            self.fail(clk.sourceRange.start, f"a clock must be 1 bit wide; this one is {len(cbits)} bits")
        if cbits[0] < 2:
            self.fail(clk.sourceRange.start, "the clock is a constant")
        p = _Proc("clocked", ctx)
        self.statement(stmt, p)
        kind = "re" if t.edge == ast.EdgeKind.PosEdge else "fe"
        st = self.store
        if cbits[0] not in st.clock_slots:
            st.clock_slots.append(cbits[0])
        inits = _inits(scope)
        for slot, d in p.env.items():
            st.drive(slot, ("s", d, kind, cbits[0], inits.get(slot, INIT_UNKNOWN)), m.location)

    def level(self, scope, m, pre, t, stmt):
        allowed = None
        if t.kind != TK.ImplicitEvent:
            allowed = set()
            events = [t] if t.kind == TK.SignalEvent else list(t.events)
            for ev in events:
                allowed.update(self.value(ev.expr, Ctx(scope, pre, m.location)))
        ctx = Ctx(scope, pre, m.location)
        p = _Proc("level", ctx)
        ctx.reader = self._level_reader(p)
        self.statement(stmt, p)
        env = p.env
        for s, node, name in p.reads:
            if s in env:
                self.fail(position(node), f"'{name}' " + _LOOP_MSG)
            if allowed is not None and s not in allowed:
                self.fail(position(node), f"'{name}' is read in this always block but is missing from "
                                          "its event list (use @*)")
        self.level_storage(scope, m, env)

    def _level_reader(self, p):
        fail = self.fail

        def reader(bits, node, name):
            out = []
            env = p.env
            for s in bits:
                if s >= 2:
                    v = env.get(s)
                    if v is not None:
                        if p.nonblocking or not isinstance(v, int) or v == HOLD:
                            fail(position(node), f"'{name}' " + _LOOP_MSG)
                        out.append(v)
                        continue
                    p.reads.append((s, node, name))
                out.append(s)
            return out

        return reader

    def level_storage(self, scope, m, env):
        """Logic or latches for what a level-sensitive block assigns."""
        st = self.store
        at = m.location
        inits = _inits(scope)
        en_cache: dict = {}
        for slot in sorted(env):
            v = env[slot]
            if v == HOLD:
                continue
            if isinstance(v, int):
                st.drive(slot, ("a", v), at)
                continue
            if v[2] == HOLD and _no_hold(v[1]):
                kind, ctrl, d = "ah", v[0], v[1]
            elif v[1] == HOLD and _no_hold(v[2]):
                kind, ctrl, d = "al", v[0], v[2]
            else:
                hint = st.name[slot].split("[", 1)[0]
                key = shape(v)
                ctrl = en_cache.get(key)
                if ctrl is None:
                    ctrl = en_cache[key] = st.enable(v, at, hint)
                kind = "ah"
                d = st.latch_data(v, at, hint)
            if ctrl >= 2:
                ctrl = st.constant_cone(ctrl)
            if ctrl < 2:
                if ctrl == (1 if kind == "ah" else 0):  # open on every path: plain logic
                    st.drive(slot, ("a", d), at)
                    continue
                self.rep.warn(at, f"'{st.name[slot]}' is assigned only under conditions that never hold; "
                                  "it keeps its initial value")
            st.drive(slot, ("s", d, kind, ctrl, inits.get(slot, INIT_UNKNOWN)), at)

    # -- statements ---------------------------------------------------------------------
    def statement(self, st, p):
        self.depth += 1
        try:
            if self.depth > MAX_NESTING:
                self.fail(st.sourceRange.start, f"statements nest more than {MAX_NESTING} levels deep")
            k = st.kind
            if k == ST.List:
                for s in st.list:
                    self.statement(s, p)
            elif k == ST.Block:
                if st.blockKind != ast.StatementBlockKind.Sequential:
                    self.fail(st.sourceRange.start, "a 'fork' block" + _OUTSIDE)
                self.statement(st.body, p)
            elif k == ST.ExpressionStatement:
                self.expression_statement(st, p)
            elif k == ST.Conditional:
                self.conditional(st, p)
            elif k == ST.Case:
                self.case(st, p)
            elif k == ST.ForLoop:
                self.for_loop(st, p)
            elif k == ST.VariableDeclaration and p.mode == "function":
                init = st.symbol.initializer  # a function's own variable: set when it has a value
                if init is not None:
                    keys = p.ctx.locals.get(st.symbol)
                    if keys is None:
                        self.loop_assign(st.symbol, init, p)
                    else:
                        for key, b in zip(keys, fit_width(self.value(init, p.ctx), len(keys))):
                            p.env[key] = b
            elif k == ST.Timed:
                if st.timing.kind not in (TK.Delay, TK.Delay3):
                    self.fail(st.sourceRange.start, "an event control inside an always block" + _OUTSIDE)
                self.note_delay(st.sourceRange.start)
                self.statement(st.stmt, p)
            elif k != ST.Empty:
                self.fail(st.sourceRange.start, _STATEMENT_WORDS.get(k, f"this statement ({str(k).split('.')[-1]})")
                          + _OUTSIDE)
        finally:
            self.depth -= 1

    def expression_statement(self, st, p):
        e = st.expr
        k = e.kind
        if k == EK.Assignment:
            self.procedural_assign(e, p)
        elif k == EK.Call:
            if e.isSystemCall:
                self.fail(e.sourceRange.start, f"the system task '{e.subroutineName}'" + _OUTSIDE)
            self.fail(e.sourceRange.start, f"a call of the task or function '{e.subroutineName}' as a "
                                           "statement" + _OUTSIDE)
        elif k == EK.UnaryOp and e.operand.kind == EK.NamedValue and e.operand.symbol in p.consts:
            self.loop_step(e, p)
        else:
            self.fail(e.sourceRange.start, "this statement" + _OUTSIDE)

    def procedural_assign(self, e, p):
        ctx = p.ctx
        tc = e.timingControl
        if tc is not None:
            if tc.kind not in (TK.Delay, TK.Delay3):
                self.fail(tc.sourceRange.start, "an event control inside an assignment" + _OUTSIDE)
            self.note_delay(tc.sourceRange.start)
        nb = e.isNonBlocking
        if p.mode == "clocked" and not nb:
            left = e.left
            if not (left.kind == EK.NamedValue and (left.symbol in p.consts or left.symbol.type.isPredefinedInteger)):
                self.fail(_operator(e), "a blocking assignment '=' in a clocked block (use '<=')" + _OUTSIDE)
        if p.mode == "function" and nb:
            self.fail(_operator(e), "a non-blocking assignment '<=' in a function" + _OUTSIDE)
        keys, loop = self.lvalue(e.left, ctx, True)
        if loop is not None:
            self.loop_assign(loop, e.right, p)
            return
        if keys and keys[0] >= 2:  # logic made for it is named after the reg it sets
            ctx.hint = self.store.name[keys[0]].split("[", 1)[0]
        p.nonblocking = nb
        try:
            bits = fit_width(self.value(e.right, ctx), len(keys))
        finally:
            p.nonblocking = False
        env = p.env
        for key, b in zip(keys, bits):
            env[key] = b

    def cond(self, e, p):
        """(bit, inverted) of an ``if`` condition: ``!x`` and ``~x`` of one bit
        give ``x`` inverted without an inverter (so ``if (!en)`` makes a latch
        open while ``en`` is low)."""
        inverted = False
        UO = ast.UnaryOperator
        while e.kind == EK.UnaryOp and (e.op == UO.LogicalNot
                                        or (e.op == UO.BitwiseNot and e.operand.type.bitWidth == 1)):
            inverted = not inverted
            e = e.operand
            while e.kind == EK.Conversion:
                e = e.operand
        ctx = p.ctx
        b = self.store.tree(self.value(e, ctx), T_OR2, ctx.at, ctx.hint)
        if b < 2:
            return b ^ inverted, False
        return b, inverted

    def conditional(self, st, p):
        branches = []
        cur = st
        while True:
            conds = list(cur.conditions)
            if len(conds) != 1 or conds[0].pattern is not None:
                self.fail(cur.sourceRange.start, "a condition with patterns" + _OUTSIDE)
            c, inv = self.cond(conds[0].expr, p)
            branches.append((c, inv, cur.ifTrue))
            nxt = cur.ifFalse
            if nxt is not None and nxt.kind == ST.Conditional:
                cur = nxt
                continue
            self.chain(branches, nxt, p)
            return

    def case(self, st, p):
        CC = ast.CaseStatementCondition
        if st.condition == CC.Inside:
            self.fail(st.sourceRange.start, "'case ... inside'" + _OUTSIDE)
        ctx = p.ctx
        sel = self.value(st.expr, ctx)
        store = self.store
        branches = []
        for item in st.items:
            matches = [self.case_match(sel, ie, st.condition, ctx) for ie in item.expressions]
            branches.append((store.tree(matches, T_OR2, ctx.at, ctx.hint), False, item.stmt))
        self.chain(branches, st.defaultCase, p)

    def case_match(self, sel, ie, condition, ctx):
        """1 where the case expression's bits ``sel`` match item ``ie``."""
        store, at, hint = self.store, ctx.at, ctx.hint
        care = None
        if condition != ast.CaseStatementCondition.Normal:
            care = self.wildcard_item(ie, condition)
        if care is None:
            bits = self.value(ie, ctx)
            n = max(len(sel), len(bits))
            pairs = zip(fit_width(sel, n), fit_width(bits, n))
            eq = [store.node(2, 0b1001, [x, y], at, hint) for x, y in pairs]
        else:
            s = fit_width(sel, len(care))
            eq = [s[i] if c == "1" else store.inv(s[i], at, hint) for i, c in enumerate(care) if c in "01"]
        return store.tree(eq, 0b1000, at, hint) if eq else 1

    def wildcard_item(self, ie, condition):
        """Digits (least significant first: '0', '1', or '-' for any) of a
        constant ``casez``/``casex`` item; ``None`` when it is not a literal."""
        width = ie.type.bitWidth
        x = ie
        while x.kind == EK.Conversion:
            x = x.operand
        if x.kind not in (EK.IntegerLiteral, EK.UnbasedUnsizedIntegerLiteral):
            return None
        sv = x.value
        digits = sv.toString(_BIN, False).rjust(sv.bitWidth, "0")[-sv.bitWidth:]
        digits = digits.rjust(width, "0")[-width:][::-1]
        casex = condition == ast.CaseStatementCondition.WildcardXOrZ
        out = []
        for ch in digits:
            if ch in "zZ?" or (casex and ch in "xX"):
                out.append("-")
            elif ch in "xX":
                self.fail(x.sourceRange.start, f"an 'x' digit in a casez item ('{self.rep.text(x.sourceRange)}') "
                                               "never matches a 0/1 value; use casex or a z digit")
            else:
                out.append(ch)
        return out

    def chain(self, branches, default, p):
        """Run ``if (c1) s1 else if (c2) s2 ... else default``: each branch from
        the values before it, then the results merged from the last one up."""
        live = []
        for c, inv, stmt in branches:
            if c < 2:
                if c:
                    default = stmt
                    break
                continue
            live.append((c, inv, stmt))
        base_env, base_consts = p.env, p.consts
        acc_env, acc_consts = self.branch(default, p, base_env, base_consts)
        for c, inv, stmt in reversed(live):
            env_t, consts_t = self.branch(stmt, p, base_env, base_consts)
            acc_env = self.merge(c, inv, env_t, acc_env, p)
            acc_consts = {k: v for k, v in consts_t.items() if acc_consts.get(k) == v}
        base_env.clear()
        base_env.update(acc_env)
        base_consts.clear()
        base_consts.update(acc_consts)

    def branch(self, stmt, p, base_env, base_consts):
        env, consts = dict(base_env), dict(base_consts)
        if stmt is not None:
            old = p.swap(env, consts)
            try:
                self.statement(stmt, p)
            finally:
                p.swap(*old)
        return env, consts

    def merge(self, c, inv, env_t, env_e, p):
        if inv:
            env_t, env_e = env_e, env_t
        clocked = p.mode == "clocked"
        st, at, hint = self.store, p.ctx.at, p.ctx.hint
        out = {}
        keys = list(env_t)
        keys.extend(k for k in env_e if k not in env_t)
        for key in keys:
            if clocked:  # a bit not assigned keeps its value: the register's own output
                out[key] = st.mux(c, env_t.get(key, key), env_e.get(key, key), at, hint)
                continue
            t, e = env_t.get(key, HOLD), env_e.get(key, HOLD)
            t_int, e_int = isinstance(t, int), isinstance(e, int)
            if t is e or (t_int and e_int and t == e):
                out[key] = t
            elif t_int and e_int and t != HOLD and e != HOLD:
                out[key] = st.mux(c, t, e, at, hint)
            else:
                out[key] = (c, t, e)
        return out

    # -- for loops ----------------------------------------------------------------------
    def for_loop(self, st, p):
        ctx = p.ctx
        for v in st.loopVars:
            if v.initializer is None:
                self.fail(v.location, f"the loop variable '{v.name}' needs a start value")
            self.loop_assign(v, v.initializer, p)
        for e in st.initializers:
            if e.kind != EK.Assignment or e.left.kind != EK.NamedValue:
                self.fail(e.sourceRange.start, "a 'for' loop must start by setting its variable")
            _, loop = self.lvalue(e.left, ctx, True)
            if loop is None:
                self.fail(e.left.sourceRange.start, "a 'for' loop's variable must be an integer")
            self.loop_assign(loop, e.right, p)
        stop = st.stopExpr
        if stop is None:
            self.fail(st.sourceRange.start, "a 'for' loop without a condition" + _OUTSIDE)
        count = 0
        while True:
            bits = self.value(stop, p.ctx)
            if any(b >= 2 for b in bits):
                self.fail(position(stop), "a 'for' loop whose condition is not constant (it may read only "
                                          "constants and the loop's own variable)" + _OUTSIDE)
            if not any(bits):
                return
            count += 1
            if count > MAX_LOOP:
                self.fail(st.sourceRange.start, f"a 'for' loop that runs more than {MAX_LOOP} times" + _OUTSIDE)
            self.iterations += 1
            if self.iterations > MAX_LOOPS_TOTAL:
                self.fail(st.sourceRange.start, f"'for' loops that run more than {MAX_LOOPS_TOTAL} times in "
                                                "all" + _OUTSIDE)
            self.statement(st.body, p)
            for s in st.steps:
                if s.kind == EK.Assignment:
                    _, loop = self.lvalue(s.left, p.ctx, True)
                    if loop is None:
                        self.fail(s.sourceRange.start, "a 'for' loop's step must change its variable")
                    self.loop_assign(loop, s.right, p)
                else:
                    self.loop_step(s, p)

    def loop_assign(self, sym, e, p):
        bits = self.value(e, p.ctx)
        if any(b >= 2 for b in bits):
            self.fail(position(e), f"the loop variable '{sym.name}' can only take constant values")
        p.consts[sym] = fit_width(bits, sym.type.bitWidth, e.type.isSigned)

    def loop_step(self, e, p):
        UO = ast.UnaryOperator
        x = e.operand if e.kind == EK.UnaryOp else None
        if x is None or x.kind != EK.NamedValue or x.symbol not in p.consts or e.op not in (
                UO.Preincrement, UO.Postincrement, UO.Predecrement, UO.Postdecrement):
            self.fail(e.sourceRange.start, "a 'for' loop's step must change its variable")
        bits = p.consts[x.symbol]
        step = 1 if e.op in (UO.Preincrement, UO.Postincrement) else -1
        v = sum(b << k for k, b in enumerate(bits)) + step
        p.consts[x.symbol] = [(v >> k) & 1 for k in range(len(bits))]

    # -- functions ----------------------------------------------------------------------
    def call_function(self, e, args, ctx):
        sub = e.subroutine
        if sub.subroutineKind != ast.SubroutineKind.Function:
            self.fail(e.sourceRange.start, f"a call of the task '{sub.name}'" + _OUTSIDE)
        if ctx.depth >= 16:
            self.fail(e.sourceRange.start, f"calls of '{sub.name}' nest more than 16 deep")
        loops = self._loops.get(sub)
        if loops is None:
            loops = self._loops[sub] = loop_variables(sub.body)
        local: dict = {}
        symbols = list(sub.arguments) + [sub.returnValVar] + [v for v in sub if v.kind == SK.Variable]
        for v in symbols:
            if v in local or (v in loops and v.type.isPredefinedInteger):
                continue
            local[v] = [self._new_key() for _ in range(v.type.bitWidth)]
        fctx = Ctx(ctx.scope, ctx.hint, ctx.at, ctx.reader, {})
        fctx.locals, fctx.func, fctx.depth = local, sub.name, ctx.depth + 1
        p = _Proc("function", fctx)
        for formal, bits in zip(sub.arguments, args):
            keys = local[formal]
            for key, b in zip(keys, fit_width(bits, len(keys), formal.type.isSigned)):
                p.env[key] = b
        self.statement(sub.body, p)
        out = [p.env.get(key, HOLD) for key in local[sub.returnValVar]]
        if any(not isinstance(b, int) or b == HOLD for b in out):
            self.fail(e.sourceRange.start, f"function '{sub.name}' does not assign its result on every path")
        return fit_width(out, e.type.bitWidth)

    def _new_key(self):
        self._key -= 1
        return self._key


def _operator(e):
    syn = e.syntax
    op = getattr(syn, "operatorToken", None) if syn is not None else None
    return op.location if op is not None else e.sourceRange.start


def _no_hold(v):
    return isinstance(v, int) and v != HOLD


def _inits(scope):
    """Initial value of each reg bit with one (``reg q = 1'b0;``)."""
    if scope.inits is None:
        scope.inits = {}
        for net in scope.nets.values():
            if net.init is not None:
                scope.inits.update(zip(net.bits, net.init))
    return scope.inits
