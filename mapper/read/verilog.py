"""Structural Verilog reader: the structural subset of IEEE 1364-2005 → :class:`~mapper.netlist.Netlist`.

What is read
------------
* Modules with ANSI (``module m(input [3:0] a, output y);``) and non-ANSI
  (``module m(a, y); input [3:0] a; …``) port lists; ``input``, ``output``,
  ``wire``, ``reg``, ``supply0``/``supply1`` (constant nets); scalars and
  vectors with either range direction.  Several modules per file: the top
  is the one no other instantiates, or the one named by ``top``; several
  candidates without ``top`` is an error.
* ``assign`` with ``~ & | ^ ~^ ^~ ! && ||``, the reduction operators, ``?:``,
  parentheses, concatenation and replication, bit-selects, constant
  part-selects (``[7:4]``, ``[i+:4]``, ``[i-:4]``), sized and unsized literals
  in b/o/d/h.  Beyond the minimum, netfit also reads ``== !=``, ``< <= > >=``,
  binary and unary ``+ -`` (built as ripple-carry logic, unsigned, modulo the
  expression's width), and shifts by a constant.  ``* / % **`` are read only
  between constants (in ranges, parameters, literals); on nets they are
  outside the subset, as are ``=== !==`` and shifts by a net.  Widths follow
  the standard's rules (context-determined operands are widened to the
  largest width of the expression and its target before the operation, so
  ``~`` of a 1-bit net assigned to 4 bits gives ``1110`` or ``1111``).
* Gate primitives ``and or nand nor xor xnor not buf``, with or without
  instance names, several outputs on ``buf``/``not``, several gates in one
  statement.  Delays (``#5``, ``#(1,2)``, also on ``assign`` and in
  ``q <= #1 d``) are **ignored with one warning per file**: a build is timed
  from its parts' own propagation delays.
* Module instances with named or positional connections.  An unconnected
  output is fine.  An **unconnected input is an error only if the instance
  reads it** (it would float; the message names the port and the instance);
  an unconnected input the instance never reads is accepted.  A port
  connected to an expression of another width is widened with zeros or cut,
  as the standard says, with a warning.  **Parameters are supported**:
  ``parameter``/``localparam`` in the header (``#(parameter N = 4)``) or the
  body, overridden per instance by ``#(8)`` or ``#(.N(8))``; ``defparam`` is
  refused.
* Storage: ``always @(posedge clk)`` / ``@(negedge clk)`` with non-blocking
  assignments of whole vectors, bits or part-selects under ``if``/``else``
  (any nesting) → storage kind ``re``/``fe``; a synchronous reset
  ``if (rst) q <= 0; else q <= d;`` is folded into the data logic, and a bit
  not assigned on some path keeps its value (its own output is fed back
  through a multiplexer).  ``always @*``, ``@(*)``, ``@(en or d)``,
  ``@(en, d)`` with ``if (en) q = d;`` → a latch of kind ``ah`` controlled by
  ``en`` (``al`` for ``if (!en)`` or ``if (~en)``); nested conditions give a
  latch whose enable is the logic of the paths that assign it.  A level-
  sensitive block that assigns a bit on every path is plain logic; paths
  whose conditions cannot hold do not count (an enable that is always true
  over the inputs of its conditions is folded away, and a bit assigned only
  under conditions that never hold stays a latch that never opens, with a
  warning).  Every
  net such a block reads must be in its event list (or the list is ``*``);
  reading a reg that the same block assigns, before it is assigned on all
  paths, is refused (it would be a loop through the block).  A ``reg``
  without an initial value gets initial value 3 (unknown); ``reg q = 1'b0;``
  gives 0.  Asynchronous set/reset (two edges in one event list), blocking
  assignments in a clocked block, ``case`` and loops are outside the subset.
* An SR latch built from two cross-coupled NOR (or NAND) gates is read as
  what it is, two gates in a loop; :meth:`Netlist.check` refuses it as a
  combinational loop and names the loop's nets.  netfit has no declared-
  storage form for it: write a latch with ``always @*`` instead.
* Comments, attributes ``(* … *)`` (skipped: they carry no logic),
  `` `timescale `` (skipped), `` `define `` without arguments / `` `undef `` /
  `` `ifdef `` / `` `ifndef `` / `` `elsif `` / `` `else `` / `` `endif ``
  (**evaluated**), `` `default_nettype wire|none ``, `` `include "file" ``
  (inside the design's folder unless ``allow_outside``).  Implicit nets are
  created where the standard creates them (a gate terminal, a port
  connection, the left side of ``assign``) unless `` `default_nettype none ``.

A net has one driver: a net driven twice (two gates, an instance output and
an ``assign`` …) is an error naming it and both lines; wired logic is
outside the subset.

Everything else — ``initial`` blocks, tasks, functions, loops, ``case``,
``generate``, ``inout``, tristate and switch primitives, ``x``/``z`` values,
``signed``, memories, hierarchical names, system tasks, ``assign`` to a reg
— gives ``file:line:col: error: … is outside the structural subset`` at the
construct's first token; the reader skips it and goes on, so one run lists
every such place (a plain syntax error ends only its module).  Errors are
reported in the order of the text, each once, at most 50.  Nothing is
dropped silently.

Names
-----
Bus bits are named ``name[i]`` with the declared index (so a design read
from Verilog and its BLIF twin match port by port); a scalar keeps its name;
bits of a vector are listed least significant first.  Hierarchy is
flattened: a net inside instance ``u1`` of instance ``top_adder`` is named
``top_adder/u1/name``.  Connected nets are one net, named after the top
port, else the net highest in the hierarchy; logic made for an operator
gets a name ``<target>$<k>``.  Each operator or primitive becomes one small
logic node (reductions become trees of two-input nodes); constants are
folded.

Parser choice, with numbers
---------------------------
The reader is our own (``verilog_lex`` → ``verilog_parse`` → this module),
not an existing front end walked for the subset.  Measured with
``bench/bench_verilog.py`` (CPU seconds, pyslang 12.1, on a shared 2-core
machine), for ariths-gen's 64×64 array multiplier (24 k gates; flat 2.3 MB,
hierarchical 1.4 MB) and a random 100 k-gate netlist of our own (4.4 MB,
its wires declared in one list):

=======================================  ==========  ==========  ==========
                                          arr64 flat  arr64 hier  random 100k
=======================================  ==========  ==========  ==========
pyslang: C++ parse to a syntax tree           0.04        0.04        0.10
pyslang: walk it, reading tokens+positions     0.42        0.50       38.8
ours: tokens and syntax tree                  0.66        0.72        2.5
ours: whole read to a flat Netlist            1.32        2.02        5.1
=======================================  ==========  ==========  ==========

Import: pyslang 0.044 s; ours 0.003 s beyond the Netlist module every
reader needs.  On ordinary files pyslang's parse plus the least walk any
reader built on it must do is about a third faster than our parse, but that
walk only collects tokens: mapping its few hundred syntax kinds onto the
subset, with a message of ours for each one outside it, comes on top; its
Python walk grows quadratically along one long comma-separated list (common
in tool-written netlists: 39 s for 100 k names against our 2.5 s); its
messages for malformed text are not ours; and it would make a compiled
package a run-time dependency.  So the parser is ours; pyslang stays a
test-only second opinion (every valid test file must be accepted by it, and
its constant evaluation is the oracle for expression semantics).
Positions: lines and columns are 1-based, a column counts characters (a tab
is one column), which is also what pyslang reports.
"""
from __future__ import annotations

import gc
import logging

from ..errors import Diagnostic, InputError
from ..logic.function import MAX_TABLE_INPUTS, Function, var_mask
from ..netlist import INIT_UNKNOWN, Netlist
from .verilog_lex import lex_file
from .verilog_parse import parse

__all__ = ["VerilogError", "read", "read_text"]

log = logging.getLogger(__name__)

#: errors reported at most (more are counted in a last line)
MAX_ERRORS = 50


class VerilogError(InputError):
    """A Verilog file that cannot be read: its diagnostics carry file, line, column."""


class _Fail(Exception):
    """An error was recorded; abandon the current statement."""


def _outside(what: str) -> str:
    return f"{what} is outside the structural subset"


# ---------------------------------------------------------------------------
# small truth tables
# ---------------------------------------------------------------------------
def _table(k: int, fn) -> int:
    """Truth table over ``k`` inputs of ``fn(bits_tuple) -> 0/1``."""
    t = 0
    for m in range(1 << k):
        if fn(tuple((m >> j) & 1 for j in range(k))):
            t |= 1 << m
    return t


_FUNCS: dict = {}


def _func(k: int, table: int) -> Function:
    f = _FUNCS.get((k, table))
    if f is None:
        f = _FUNCS[(k, table)] = Function.from_table(k, table)
    return f


T_INV = 0b01
T_AND2 = 0b1000
T_OR2 = 0b1110
T_XOR2 = 0b0110
T_XNOR2 = 0b1001
T_NAND2 = 0b0111
T_NOR2 = 0b0001
T_MUX = _table(3, lambda b: b[1] if b[0] else b[2])          # (c, t, e)
T_XOR3 = _table(3, lambda b: b[0] ^ b[1] ^ b[2])
T_MAJ = _table(3, lambda b: (b[0] + b[1] + b[2]) >= 2)
T_BORROW = _table(3, lambda b: ((1 - b[0]) + b[1] + b[2]) >= 2)  # borrow out of a - b - bin


def _gate_table(kind: str, n: int) -> int:
    full = (1 << (1 << n)) - 1
    if kind in ("and", "nand"):
        t = 1 << ((1 << n) - 1)
    elif kind in ("or", "nor"):
        t = full ^ 1
    else:  # xor, xnor
        t = _table(n, lambda b: sum(b) & 1)
    if kind in ("nand", "nor", "xnor"):
        t ^= full
    return t


# ---------------------------------------------------------------------------
# flattened design store
# ---------------------------------------------------------------------------
HOLD = -1  # "not assigned on this path" inside a level-sensitive block


class _Sym:
    """A declared net or reg of one module instance."""

    __slots__ = ("name", "kind", "is_reg", "msb", "lsb", "bits", "at", "init", "decl_kind")

    def __init__(self, name, kind, is_reg, msb, lsb, at):
        self.name, self.kind, self.is_reg, self.msb, self.lsb, self.at = name, kind, is_reg, msb, lsb, at
        self.bits = []
        self.init = None
        self.decl_kind = set()

    @property
    def width(self):
        return 1 if self.msb is None else abs(self.msb - self.lsb) + 1

    def pos(self, index):
        """Position (from the least significant bit) of declared index ``index``, or None."""
        if self.msb is None:
            return None
        p = index - self.lsb if self.msb >= self.lsb else self.lsb - index
        return p if 0 <= p < self.width else None


class _Scope:
    """One module instance being elaborated."""

    __slots__ = ("module", "prefix", "params", "syms", "parent", "inst_name", "inst_at", "hint",
                 "ports", "_inits", "ancestors")

    def __init__(self, module, prefix, parent, inst_name, inst_at):
        self.module, self.prefix, self.parent = module, prefix, parent
        self.inst_name, self.inst_at = inst_name, inst_at
        self.params: dict = {}
        self.syms: dict = {}
        self.hint = prefix + "n"
        self.ports: list = []
        self._inits = None
        #: module names from the top down to this one (to catch recursion)
        self.ancestors = (parent.ancestors if parent is not None else frozenset()) | {module.name}

    def chain(self):
        s, names = self, []
        while s is not None:
            names.append(s.module.name)
            s = s.parent
        return names


class _Elaborator:
    def __init__(self, modules, file, diags):
        self.file = file
        self.diags = diags
        self.errors = 0
        self.modules: dict = {}
        for m in modules:
            if m.name in self.modules:
                first = self.modules[m.name].at
                self.error(m.at, f"module '{m.name}' is declared twice (first at line {first[1]})")
                continue
            self.modules[m.name] = m
        self.order = modules
        # slots: 0 and 1 are the constants
        self.name = ["$const0", "$const1"]
        self.gen = [True, True]
        self.at = [None, None]
        self.drv = [("c", 0), ("c", 1)]
        self.drv_at = [None, None]
        self.user_names: dict = {}
        self.unconnected: dict = {}  # slot -> (inst_at, port, inst path)
        self.top_inputs: list = []
        self.top_outputs: list = []
        self.clock_slots: list = []
        self.templates: dict = {}

    # -- diagnostics ------------------------------------------------------
    def error(self, at, msg):
        self.errors += 1
        if at is None:
            self.diags.append(Diagnostic(msg, str(self.file)))
        else:
            self.diags.append(Diagnostic(msg, at[0], at[1], at[2]))

    def warn(self, at, msg):
        self.diags.append(Diagnostic(msg, at[0], at[1], at[2], severity="warning"))

    def fail(self, at, msg):
        self.error(at, msg)
        raise _Fail()

    # -- slots ------------------------------------------------------------
    def new_slot(self, name, at, gen):
        s = len(self.name)
        self.name.append(name)
        self.gen.append(gen)
        self.at.append(at)
        self.drv.append(None)
        self.drv_at.append(None)
        if not gen:
            prev = self.user_names.get(name)
            if prev is not None:
                self.error(at, f"the name '{name}' is given to two different nets "
                               f"(first at line {self.at[prev][1]})")
            else:
                self.user_names[name] = s
        return s

    def drive(self, slot, driver, at):
        """Give ``slot`` its one driver; a second one is an error."""
        old = self.drv[slot]
        if old is not None:
            name = self.name[slot]
            if old[0] == "i":
                self.fail(at, f"'{name}' is an input of the top module and cannot be driven inside it")
            if old[0] == "c" and slot < 2:
                raise AssertionError("constant slot driven")
            first = self.drv_at[slot]
            where = f" (first driven at line {first[1]})" if first else ""
            self.fail(at, f"net '{name}' has two drivers{where}")
        self.drv[slot] = driver
        self.drv_at[slot] = at

    # -- logic nodes ------------------------------------------------------
    def node(self, k, table, ops, at, hint):
        """A bit carrying ``table`` over the bits ``ops``; constants and
        repeated inputs are folded, so the result may be an existing bit."""
        fast = True
        seen = set()
        for b in ops:
            if b < 2 or b in seen:
                fast = False
                break
            seen.add(b)
        if not fast:
            k, table, ops = _simplify(k, table, ops)
            if k == 0:
                return table & 1
            if k == 1 and table == 0b10:
                return ops[0]
        s = self.new_slot(hint, at, True)
        self.drv[s] = ("l", tuple(ops), _func(k, table))
        self.drv_at[s] = at
        return s

    def inv(self, b, at, hint):
        return self.node(1, T_INV, [b], at, hint)

    def tree(self, bits, t2, at, hint, t_last=None):
        """Balanced tree of two-input nodes ``t2`` over ``bits`` (at least
        one); the root uses ``t_last`` (for an inverting reduction) — a
        single bit gets ``t_last`` as an inverter when given."""
        if len(bits) == 1:
            return bits[0] if t_last is None else self.inv(bits[0], at, hint)
        level = list(bits)
        while len(level) > 2:
            nxt = [self.node(2, t2, [level[i], level[i + 1]], at, hint) for i in range(0, len(level) - 1, 2)]
            if len(level) % 2:
                nxt.append(level[-1])
            level = nxt
        return self.node(2, t_last if t_last is not None else t2, level, at, hint)

    def mux(self, c, t, e, at, hint):
        if c < 2:
            return t if c else e
        if t == e:
            return t
        return self.node(3, T_MUX, [c, t, e], at, hint)

    # -- constants ----------------------------------------------------------
    def const_eval(self, scope, e):
        """Integer value of a constant expression (parameters and literals)."""
        order = _post_order(e)
        val: dict = {}
        for n in order:
            op = n.op
            if op == "num":
                val[n] = n.val[0]
            elif op == "id":
                p = scope.params.get(n.val)
                if p is None:
                    if n.val in scope.syms:
                        self.fail(n.at, f"'{n.val}' is a net, but a constant is needed here")
                    self.fail(n.at, f"'{n.val}' is not declared")
                val[n] = p[0]
            elif op in ("sel", "part", "part+", "part-"):
                p = scope.params.get(n.val)
                if p is None:
                    self.fail(n.at, f"'{n.val}' is not a parameter, but a constant is needed here")
                v = p[0] & ((1 << (p[1] or 32)) - 1)
                if op == "sel":
                    val[n] = (v >> val[n.args[0]]) & 1
                else:
                    a, b = val[n.args[0]], val[n.args[1]]
                    if op == "part+":
                        lo, w = a, b
                    elif op == "part-":
                        lo, w = a - b + 1, b
                    else:
                        lo, w = min(a, b), abs(a - b) + 1
                    val[n] = (v >> lo) & ((1 << w) - 1)
            elif op == "concat":
                v = 0
                for a in n.args:
                    w = self.self_width(scope, a)
                    v = (v << w) | (val[a] & ((1 << w) - 1))
                val[n] = v
            elif op == "repl":
                cnt = val[n.args[0]]
                inner = n.args[1]
                w = self.self_width(scope, inner)
                v = 0
                for _ in range(max(cnt, 0)):
                    v = (v << w) | (val[inner] & ((1 << w) - 1))
                val[n] = v
            elif op == "?:":
                val[n] = val[n.args[1]] if val[n.args[0]] else val[n.args[2]]
            elif op.startswith("u"):
                a = val[n.args[0]]
                u = op[1:]
                if u == "-":
                    val[n] = -a
                elif u == "+":
                    val[n] = a
                elif u == "~":
                    val[n] = ~a
                elif u == "!":
                    val[n] = int(a == 0)
                else:
                    w = self.self_width(scope, n.args[0])
                    a &= (1 << w) - 1
                    base = u.lstrip("~")
                    if base == "&":
                        r = int(a == (1 << w) - 1)
                    elif base == "|":
                        r = int(a != 0)
                    else:
                        r = bin(a).count("1") & 1
                    val[n] = r ^ 1 if u.startswith("~") else r
            else:
                a, b = val[n.args[0]], val[n.args[1]]
                try:
                    val[n] = _CONST_BINARY[op](a, b)
                except ZeroDivisionError:
                    self.fail(n.at, "division by zero in a constant expression")
                except (ValueError, OverflowError):
                    self.fail(n.at, f"'{op}' gives no usable value here")
        return val[e]

    def const_int(self, scope, e, what):
        v = self.const_eval(scope, e)
        if abs(v) > 1 << 24:
            self.fail(e.at, f"{what} {v} is too large")
        return v

    # -- widths -----------------------------------------------------------
    def lookup(self, scope, name, at):
        sym = scope.syms.get(name)
        if sym is None:
            if name in scope.params:
                return None
            self.fail(at, f"'{name}' is not declared")
        return sym

    def self_width(self, scope, e):
        order = _post_order(e)
        w: dict = {}
        self._widths(scope, order, w)
        return w[e]

    def _widths(self, scope, order, w):
        for n in order:
            op = n.op
            if op == "num":
                v, size = n.val
                w[n] = size if size is not None else max(32, v.bit_length())
            elif op == "id":
                sym = self.lookup(scope, n.val, n.at)
                if sym is None:
                    p = scope.params[n.val]
                    w[n] = p[1] if p[1] is not None else max(32, p[0].bit_length() + 1 if p[0] < 0 else p[0].bit_length())
                else:
                    w[n] = sym.width
            elif op == "sel":
                self.lookup(scope, n.val, n.at)
                w[n] = 1
            elif op == "part":
                self.lookup(scope, n.val, n.at)
                a = self.const_int(scope, n.args[0], "index")
                b = self.const_int(scope, n.args[1], "index")
                w[n] = abs(a - b) + 1
            elif op in ("part+", "part-"):
                self.lookup(scope, n.val, n.at)
                k = self.const_int(scope, n.args[1], "width")
                if k < 1:
                    self.fail(n.args[1].at, f"a part-select must be at least 1 bit wide, not {k}")
                w[n] = k
            elif op == "concat":
                for a in n.args:
                    if a.op == "num" and a.val[1] is None:
                        self.fail(a.at, "an unsized number in a concatenation has no width; "
                                        "give it one (for example 4'd3)")
                w[n] = sum(w[a] for a in n.args)
            elif op == "repl":
                cnt = self.const_int(scope, n.args[0], "replication count")
                if cnt < 1:
                    self.fail(n.args[0].at, f"replication count must be at least 1, not {cnt}")
                w[n] = cnt * w[n.args[1]]
            elif op == "?:":
                w[n] = max(w[n.args[1]], w[n.args[2]])
            elif op in ("u~", "u-", "u+"):
                w[n] = w[n.args[0]]
            elif op.startswith("u") or op in ("&&", "||", "==", "!=", "===", "!==", "<", "<=", ">", ">="):
                w[n] = 1
            elif op in ("<<", ">>", "<<<", ">>>", "**"):
                w[n] = w[n.args[0]]
            else:
                w[n] = max(w[n.args[0]], w[n.args[1]])
            if w[n] > 1 << 20:
                self.fail(n.at, f"expression {w[n]} bits wide is too wide")

    # -- lowering ---------------------------------------------------------
    def lower(self, scope, e, ctx=None, reader=None):
        """Bits (least significant first) of expression ``e``, ``ctx`` bits
        wide (default: its own width).  ``reader(slots, at)`` may map the
        slots read (used inside always blocks)."""
        op = e.op
        if op == "id" or (op == "sel" and e.args[0].op == "num"):
            # plain names and constant bit-selects: no width machinery needed
            sym = scope.syms.get(e.val)
            if sym is not None:
                bits = sym.bits if op == "id" else self.select(scope, sym, e)
                if reader is not None:
                    bits = reader(bits, e.at, sym)
                self.last_width = n = len(bits)
                if ctx is None or ctx == n:
                    return list(bits)
                if ctx > n:
                    return list(bits) + [0] * (ctx - n)
        order = _post_order(e)
        w: dict = {}
        self._widths(scope, order, w)
        self.last_width = w[e]
        if ctx is None or ctx < w[e]:
            ctx = max(w[e], ctx or 0)
        c: dict = {e: ctx}
        for n in reversed(order):
            op = n.op
            if not n.args:
                continue
            cn = c[n]
            if op in ("u~", "u-", "u+", "&", "|", "^", "~^", "+", "-", "*", "/", "%"):
                for a in n.args:
                    c[a] = cn
            elif op == "?:":
                c[n.args[0]] = w[n.args[0]]
                c[n.args[1]] = cn
                c[n.args[2]] = cn
            elif op in ("<<", ">>", "<<<", ">>>", "**"):
                c[n.args[0]] = cn
                c[n.args[1]] = w[n.args[1]]
            elif op in ("==", "!=", "===", "!==", "<", "<=", ">", ">="):
                m = max(w[n.args[0]], w[n.args[1]])
                c[n.args[0]] = m
                c[n.args[1]] = m
            else:
                for a in n.args:
                    c[a] = w[a]
        val: dict = {}
        hint = scope.hint
        for n in order:
            op = n.op
            cn = c[n]
            at = n.at
            if op == "num":
                bits = _int_bits(n.val[0], cn)
            elif op == "id":
                sym = scope.syms.get(n.val)
                if sym is None:
                    p = scope.params[n.val]
                    bits = _int_bits(p[0], min(cn, w[n]))
                else:
                    bits = sym.bits
                    if reader is not None:
                        bits = reader(bits, at, sym)
                    bits = list(bits)
            elif op in ("sel", "part", "part+", "part-"):
                sym = scope.syms.get(n.val)
                if sym is None:
                    p = scope.params[n.val]
                    bits = _int_bits(self.const_eval(scope, n), w[n])
                else:
                    bits = self.select(scope, sym, n)
                    if reader is not None:
                        bits = reader(bits, at, sym)
                    bits = list(bits)
            elif op == "concat":
                bits = []
                for a in reversed(n.args):
                    bits.extend(val[a])
            elif op == "repl":
                inner = val[n.args[1]]
                bits = inner * (w[n] // max(1, len(inner)))
            elif op == "u~":
                bits = [self.inv(b, at, hint) for b in val[n.args[0]]]
            elif op == "u+":
                bits = val[n.args[0]]
            elif op == "u-":
                bits = self.subtract([0] * cn, val[n.args[0]], at, hint)
            elif op == "u!":
                bits = [self.tree(val[n.args[0]], T_OR2, at, hint, T_NOR2)]
            elif op in ("u&", "u~&", "u|", "u~|", "u^", "u~^"):
                a = val[n.args[0]]
                t2, last = {"u&": (T_AND2, None), "u~&": (T_AND2, T_NAND2), "u|": (T_OR2, None),
                            "u~|": (T_OR2, T_NOR2), "u^": (T_XOR2, None),
                            "u~^": (T_XOR2, T_XNOR2)}[op]
                bits = [self.tree(a, t2, at, hint, last)]
            elif op in ("&", "|", "^", "~^"):
                t = {"&": T_AND2, "|": T_OR2, "^": T_XOR2, "~^": T_XNOR2}[op]
                bits = [self.node(2, t, [x, y], at, hint) for x, y in zip(val[n.args[0]], val[n.args[1]])]
            elif op in ("&&", "||"):
                x = self.tree(val[n.args[0]], T_OR2, at, hint)
                y = self.tree(val[n.args[1]], T_OR2, at, hint)
                bits = [self.node(2, T_AND2 if op == "&&" else T_OR2, [x, y], at, hint)]
            elif op in ("==", "!="):
                eq = [self.node(2, T_XNOR2, [x, y], at, hint) for x, y in zip(val[n.args[0]], val[n.args[1]])]
                bits = [self.tree(eq, T_AND2, at, hint, T_NAND2 if op == "!=" else None)]
            elif op in ("<", "<=", ">", ">="):
                a, b = val[n.args[0]], val[n.args[1]]
                if op in (">", "<="):
                    a, b = b, a
                lt = self.borrow(a, b, at, hint)  # a < b
                bits = [lt if op in ("<", ">") else self.inv(lt, at, hint)]
            elif op == "+":
                bits = self.add(val[n.args[0]], val[n.args[1]], at, hint)
            elif op == "-":
                bits = self.subtract(val[n.args[0]], val[n.args[1]], at, hint)
            elif op in ("<<", ">>", "<<<", ">>>"):
                amount = val[n.args[1]]
                if any(b >= 2 for b in amount):
                    self.fail(at, _outside(f"a shift by a net ('{op}' needs a constant amount)"))
                k = _bits_int(amount)
                a = val[n.args[0]]
                if op in ("<<", "<<<"):
                    bits = ([0] * k + a)[:cn] if k < cn else [0] * cn
                else:
                    bits = (a[k:] + [0] * cn)[:cn] if k < cn else [0] * cn
            elif op in ("*", "/", "%", "**"):
                a, b = val[n.args[0]], val[n.args[1]]
                if any(x >= 2 for x in a) or any(x >= 2 for x in b):
                    self.fail(at, _outside(f"operator '{op}' on nets"))
                x, y = _bits_int(a), _bits_int(b)
                if op in ("/", "%") and y == 0:
                    self.fail(at, "division by zero (the result would be x)")
                r = _CONST_BINARY[op](x, y)
                bits = _int_bits(r, cn)
            elif op in ("===", "!=="):
                self.fail(at, _outside(f"the case equality operator '{op}'"))
            elif op == "?:":
                cond = self.tree(val[n.args[0]], T_OR2, at, hint)
                bits = [self.mux(cond, x, y, at, hint) for x, y in zip(val[n.args[1]], val[n.args[2]])]
            else:
                self.fail(at, f"unexpected operator '{op}'")
            # extend (or cut) to the context width
            if len(bits) < cn:
                bits = bits + [0] * (cn - len(bits))
            elif len(bits) > cn:
                bits = bits[:cn]
            val[n] = bits
        return val[e]

    def add(self, a, b, at, hint, carry=0):
        out = []
        for x, y in zip(a, b):
            out.append(self.node(3, T_XOR3, [x, y, carry], at, hint))
            if len(out) < len(a):
                carry = self.node(3, T_MAJ, [x, y, carry], at, hint)
        return out

    def subtract(self, a, b, at, hint):
        out = []
        br = 0
        for x, y in zip(a, b):
            out.append(self.node(3, T_XOR3, [x, y, br], at, hint))
            if len(out) < len(a):
                br = self.node(3, T_BORROW, [x, y, br], at, hint)
        return out

    def borrow(self, a, b, at, hint):
        """1 where ``a < b`` (unsigned, same widths)."""
        br = 0
        for x, y in zip(a, b):
            br = self.node(3, T_BORROW, [x, y, br], at, hint)
        return br

    def select(self, scope, sym, n):
        """Bits of a bit- or part-select of ``sym`` (least significant first)."""
        op = n.op
        if sym.msb is None:
            self.fail(n.at, f"'{sym.name}' is a scalar; it has no bits to select")
        if op == "sel":
            idx_e = n.args[0]
            for leaf in _post_order(idx_e):
                if leaf.op != "num" and leaf.val in scope.syms:
                    self.fail(idx_e.at, _outside(f"a bit-select of '{sym.name}' with an index "
                                                 "that is not constant"))
            i = self.const_int(scope, idx_e, "index")
            p = sym.pos(i)
            if p is None:
                self.fail(n.at, f"index {i} is outside '{sym.name}[{sym.msb}:{sym.lsb}]'")
            return [sym.bits[p]]
        a = self.const_int(scope, n.args[0], "index")
        b = self.const_int(scope, n.args[1], "width" if op != "part" else "index")
        if op == "part+":
            left, right = (a + b - 1, a) if sym.msb >= sym.lsb else (a, a + b - 1)
        elif op == "part-":
            left, right = (a, a - b + 1) if sym.msb >= sym.lsb else (a - b + 1, a)
        else:
            left, right = a, b
        if (left - right) * (sym.msb - sym.lsb) < 0:
            self.fail(n.at, f"part-select [{left}:{right}] runs the other way from "
                            f"'{sym.name}[{sym.msb}:{sym.lsb}]'")
        pl, pr = sym.pos(left), sym.pos(right)
        if pl is None or pr is None:
            self.fail(n.at, f"part-select [{left}:{right}] is outside '{sym.name}[{sym.msb}:{sym.lsb}]'")
        lo, hi = min(pl, pr), max(pl, pr)
        return sym.bits[lo:hi + 1]

    def lvalue(self, scope, e, want_reg):
        """Slots (least significant first) an assignment to ``e`` drives."""
        parts = []
        stack = [e]
        out = []
        while stack:
            n = stack.pop()
            if n.op == "concat":
                stack.extend(n.args)  # last pushed = first arg, popped first... fix below
                continue
            parts.append(n)
        # concat {a, b}: b holds the low bits; the stack visits args last-first
        # for each nesting level, so 'parts' lists the pieces from low to high
        for n in parts:
            if n.op not in ("id", "sel", "part", "part+", "part-"):
                self.fail(n.at, "only a net, a bit, a part or a concatenation of them can be assigned")
            sym = scope.syms.get(n.val)
            if sym is None:
                if n.val in scope.params:
                    self.fail(n.at, f"'{n.val}' is a parameter and cannot be assigned")
                self.fail(n.at, f"'{n.val}' is not declared")
            if want_reg and not sym.is_reg:
                self.fail(n.at, f"'{sym.name}' is a {sym.kind if sym.kind != 'output' else 'wire'}: "
                                "an always block can only assign a reg")
            if not want_reg and sym.is_reg:
                self.fail(n.at, _outside(f"a continuous assignment to the reg '{sym.name}'"))
            bits = sym.bits if n.op == "id" else self.select(scope, sym, n)
            out.extend(bits)
        return out

    # -- scopes -----------------------------------------------------------
    def make_scope(self, module, prefix, parent, inst_name, inst_at, overrides, is_top):
        """A new instance of ``module``: its nets get slots named under ``prefix``."""
        key = (module.name, tuple(sorted(overrides.items())))
        tpl = self.templates.get(key)
        if tpl is None:
            tpl = self.templates[key] = self.template(module, overrides)
        scope = _Scope(module, prefix, parent, inst_name, inst_at)
        scope.params = tpl.params
        syms = scope.syms
        for t in tpl.syms.values():
            sym = _Sym(t.name, t.kind, t.is_reg, t.msb, t.lsb, t.at)
            sym.init = t.init
            syms[t.name] = sym
            base = prefix + sym.name
            if sym.msb is None:
                sym.bits = [self.new_slot(base, sym.at, False)]
            else:
                step = 1 if sym.msb >= sym.lsb else -1
                sym.bits = [self.new_slot(f"{base}[{i}]", sym.at, False)
                            for i in range(sym.lsb, sym.msb + step, step)]
            if sym.kind in ("supply0", "supply1"):
                v = 1 if sym.kind == "supply1" else 0
                for b in sym.bits:
                    self.drv[b] = ("a", v)
                    self.drv_at[b] = sym.at
            if is_top and sym.kind == "input":
                for b in sym.bits:
                    self.drv[b] = ("i",)
                    self.drv_at[b] = sym.at
        scope.ports = [syms[t.name] for t in tpl.ports]
        if is_top:
            for sym in scope.ports:
                if sym.kind == "input":
                    self.top_inputs.extend(sym.bits)
                else:
                    self.top_outputs.extend(sym.bits)
        return scope

    def template(self, module, overrides):
        """Parameters, declarations and ports of ``module`` with these
        overrides, evaluated once (errors in them are reported once)."""
        scope = _Scope(module, "", None, None, None)
        # parameters, in order, with the overrides applied to non-local ones
        for p in module.params:
            if p.name in scope.params:
                self.error(p.at, f"parameter '{p.name}' is declared twice")
                continue
            try:
                if not p.local and p.name in overrides:
                    value, width = overrides[p.name]
                else:
                    value = self.const_eval(scope, p.value)
                    width = self.self_width(scope, p.value)
                    if p.value.op == "num" and p.value.val[1] is None:
                        width = None
                if p.rng is not None:
                    msb = self.const_int(scope, p.rng[0], "range bound")
                    lsb = self.const_int(scope, p.rng[1], "range bound")
                    width = abs(msb - lsb) + 1
                    value &= (1 << width) - 1
            except _Fail:
                value, width = 0, None
            scope.params[p.name] = (value, width)
        # declarations: a port direction and a wire/reg declaration may pair up
        syms = scope.syms
        port_names = [n for n, _ in module.ports]
        for d in module.decls:
            if d.name in scope.params:
                self.error(d.at, f"'{d.name}' is already a parameter")
                continue
            try:
                msb = lsb = None
                if d.rng is not None:
                    msb = self.const_int(scope, d.rng[0], "range bound")
                    lsb = self.const_int(scope, d.rng[1], "range bound")
                    if abs(msb - lsb) >= 1 << 20:
                        self.fail(d.rng[0].at, f"range [{msb}:{lsb}] is too wide")
            except _Fail:
                continue
            old = syms.get(d.name)
            cat = "dir" if d.kind in ("input", "output") else "net"
            if old is None:
                sym = _Sym(d.name, d.kind, d.is_reg, msb, lsb, d.at)
                sym.decl_kind = {cat}
                syms[d.name] = sym
            else:
                if module.ansi or cat in old.decl_kind or "supply" in d.kind or "supply" in old.kind:
                    self.error(d.at, f"'{d.name}' is declared twice (first at line {old.at[1]})")
                    continue
                if (old.msb, old.lsb) != (msb, lsb):
                    self.error(d.at, f"'{d.name}' is declared with another range than at line {old.at[1]}")
                    continue
                old.decl_kind.add(cat)
                if cat == "dir":
                    old.kind = d.kind
                    old.at = d.at
                old.is_reg = old.is_reg or d.is_reg
            target = syms[d.name]
            if d.init is not None:
                target.init = (d.init, d.init_at, d.kind)
        # ports
        for name, at in module.ports:
            sym = syms.get(name)
            if sym is None or sym.kind not in ("input", "output"):
                self.error(at, f"port '{name}' has no input or output declaration")
                continue
            scope.ports.append(sym)
        for sym in syms.values():
            if sym.kind in ("input", "output") and sym.name not in port_names:
                self.error(sym.at, f"'{sym.name}' is declared {sym.kind} but is not in the port list")
                sym.kind = "wire"
            if sym.kind == "input" and sym.is_reg:
                self.error(sym.at, f"input '{sym.name}' cannot be a reg")
        # implicit nets
        self.implicit_nets(scope)
        return scope

    def implicit_nets(self, scope):
        module = scope.module
        uses = []
        for g in module.gates:
            uses.extend(t for t in g.terms if t.op == "id")
        for inst in module.insts:
            uses.extend(e for _, e, _ in inst.conns if e is not None and e.op == "id")
        for a in module.assigns:
            stack = [a.lhs]
            while stack:
                n = stack.pop()
                if n.op == "concat":
                    stack.extend(n.args)
                elif n.op == "id":
                    uses.append(n)
        for e in uses:
            name = e.val
            if name in scope.syms or name in scope.params:
                continue
            if module.nettype == "none":
                self.error(e.at, f"'{name}' is not declared (`default_nettype none)")
                scope.syms[name] = _Sym(name, "wire", False, None, None, e.at)
                continue
            scope.syms[name] = _Sym(name, "wire", False, None, None, e.at)

    # -- module body ----------------------------------------------------------
    def body(self, scope, stack):
        module = scope.module
        prefix = scope.prefix
        # initial values of regs, declaration assignments of wires
        for sym in scope.syms.values():
            if sym.init is None:
                continue
            e, at, kind = sym.init
            if sym.is_reg:
                try:
                    v = self.const_eval(scope, e)
                except _Fail:
                    continue
                sym.init = [(v >> k) & 1 for k in range(sym.width)]
            else:
                sym.init = None
                scope.hint = prefix + sym.name
                try:
                    bits = self.lower(scope, e, sym.width)
                    for s, b in zip(sym.bits, bits):
                        self.drive(s, ("a", b), at)
                except _Fail:
                    pass
        for a in module.assigns:
            try:
                self.cont_assign(scope, a)
            except _Fail:
                pass
        for g in module.gates:
            try:
                self.gate(scope, g)
            except _Fail:
                pass
        for blk in module.always:
            try:
                self.always(scope, blk)
            except _Fail:
                pass
        names: dict = {}
        twice = set()
        for item in list(module.gates) + list(module.insts):
            if item.name is None:
                continue
            first = names.setdefault(item.name, item.at)
            if first is not item.at:
                twice.add(id(item))
                self.error(item.at, f"instance name '{item.name}' is used twice in module "
                                    f"'{module.name}' (first at line {first[1]})")
        for inst in module.insts:
            if id(inst) in twice:
                continue
            try:
                child = self.instance(scope, inst)
            except _Fail:
                continue
            if child is not None:
                stack.append(child)

    def cont_assign(self, scope, a):
        first = a.lhs
        while first.op == "concat":
            first = first.args[0]
        scope.hint = scope.prefix + str(first.val)
        slots = self.lvalue(scope, a.lhs, False)
        bits = self.lower(scope, a.rhs, len(slots))
        for s, b in zip(slots, bits):
            self.drive(s, ("a", b), a.at)

    def gate(self, scope, g):
        kind = g.kind
        terms = g.terms
        if kind in ("not", "buf"):
            if len(terms) < 2:
                self.fail(g.at, f"a '{kind}' gate needs at least one output and one input")
            outs, ins = terms[:-1], terms[-1:]
        else:
            if len(terms) < 2:
                self.fail(g.at, f"an '{kind}' gate needs an output and at least one input")
            outs, ins = terms[:1], terms[1:]
        out_slots = []
        for t in outs:
            sl = self.lvalue(scope, t, False)
            if len(sl) != 1:
                self.fail(t.at, f"a gate terminal must be 1 bit wide; this one is {len(sl)} bits")
            out_slots.append(sl[0])
        first = outs[0]
        while first.op == "concat":
            first = first.args[0]
        scope.hint = scope.prefix + (g.name or str(first.val))
        in_bits = []
        for t in ins:
            bits = self.lower(scope, t)
            if len(bits) != 1:
                self.fail(t.at, f"a gate terminal must be 1 bit wide; this one is {len(bits)} bits")
            in_bits.append(bits[0])
        at = g.at
        if kind == "not":
            b = self.inv(in_bits[0], at, scope.hint)
        elif kind == "buf":
            b = in_bits[0]
            if b >= 2:
                # a buf primitive is a real gate: keep it as a buffer node
                b = self.new_slot(scope.hint, at, True)
                self.drv[b] = ("l", (in_bits[0],), _func(1, 0b10))
                self.drv_at[b] = at
        elif len(in_bits) <= MAX_TABLE_INPUTS:
            b = self.node(len(in_bits), _gate_table(kind, len(in_bits)), in_bits, at, scope.hint)
        else:
            base = {"and": "and", "nand": "and", "or": "or", "nor": "or", "xor": "xor", "xnor": "xor"}[kind]
            t2 = {"and": T_AND2, "or": T_OR2, "xor": T_XOR2}[base]
            last = {"nand": T_NAND2, "nor": T_NOR2, "xnor": T_XNOR2}.get(kind)
            b = self.tree(in_bits, t2, at, scope.hint, last)
        for s in out_slots:
            self.drive(s, ("a", b), at)

    # -- always blocks ------------------------------------------------------
    def always(self, scope, blk):
        assigned = []
        stack = [blk.body]
        while stack:
            st = stack.pop()
            if st is None:
                continue
            if st.kind == "block":
                stack.extend(st.a)
            elif st.kind == "if":
                stack.append(st.b)
                stack.append(st.c)
            elif st.kind in ("nba", "ba"):
                assigned.append(st)
        if not assigned:
            return
        if blk.edge is not None:
            self.clocked(scope, blk, assigned)
        else:
            self.level(scope, blk, assigned)

    def clocked(self, scope, blk, assigned):
        for st in assigned:
            if st.kind == "ba":
                self.fail(st.at, _outside("a blocking assignment '=' in a clocked block (use '<=')"))
        clk = blk.clock
        if clk.op not in ("id", "sel"):
            self.fail(clk.at, _outside("a clock that is an expression (gated clock)"))
        scope.hint = scope.prefix + str(clk.val)
        cbits = self.lower(scope, clk)
        if len(cbits) != 1:
            self.fail(clk.at, f"a clock must be 1 bit wide; '{clk.val}' is {len(cbits)} bits")
        if cbits[0] < 2:
            self.fail(clk.at, "the clock is a constant")
        env: dict = {}
        self.run_clocked(scope, blk.body, env)
        kind = "re" if blk.edge == "posedge" else "fe"
        if cbits[0] not in self.clock_slots:
            self.clock_slots.append(cbits[0])
        for slot, d in env.items():
            init = self.init_of(scope, slot)
            self.drive(slot, ("s", d, kind, cbits[0], init), blk.at)

    def init_of(self, scope, slot):
        """Initial value of a reg bit: 0/1 from ``reg q = …;``, else unknown (3)."""
        inits = scope._inits
        if inits is None:
            inits = {}
            for sym in scope.syms.values():
                if sym.is_reg and isinstance(sym.init, list):
                    inits.update(zip(sym.bits, sym.init))
            scope._inits = inits
        return inits.get(slot, INIT_UNKNOWN)

    def cond(self, scope, e, reader=None):
        """(bit, inverted) for an if condition: ``!x`` and ``~x`` of one bit
        give ``x`` inverted without making an inverter."""
        inverted = False
        while e.op in ("u!", "u~") and (e.op == "u!" or self.self_width(scope, e.args[0]) == 1):
            inverted = not inverted
            e = e.args[0]
        bits = self.lower(scope, e, reader=reader)
        b = self.tree(bits, T_OR2, e.at, scope.hint)
        if b < 2:
            return b ^ inverted, False
        return b, inverted

    def run_clocked(self, scope, st, env):
        if st is None or st.kind == "null":
            return
        if st.kind == "block":
            for s in st.a:
                self.run_clocked(scope, s, env)
            return
        if st.kind == "if":
            c, inv = self.cond(scope, st.a)
            if c < 2:
                self.run_clocked(scope, st.b if c else st.c, env)
                return
            env_t = dict(env)
            self.run_clocked(scope, st.b, env_t)
            env_e = dict(env)
            self.run_clocked(scope, st.c, env_e)
            if inv:
                env_t, env_e = env_e, env_t
            for slot in set(env_t) | set(env_e):
                t = env_t.get(slot, slot)
                e = env_e.get(slot, slot)
                env[slot] = self.mux(c, t, e, st.at, scope.hint)
            return
        slots = self.lvalue(scope, st.a, True)
        scope.hint = scope.prefix + _base_name(st.a)
        bits = self.lower(scope, st.b, len(slots))
        for s, b in zip(slots, bits):
            env[s] = b

    def level(self, scope, blk, assigned):
        # the slots this block assigns
        targets = set()
        for st in assigned:
            targets.update(self.lvalue(scope, st.a, True))
        allowed = None
        if blk.sens != "*":
            allowed = set()
            for e in blk.sens:
                if e.op not in ("id", "sel", "part", "part+", "part-"):
                    self.fail(e.at, _outside("an expression in an event list"))
                allowed.update(self.lower(scope, e))
        env: dict = {}
        blocking = {"on": True}

        def reader(bits, at, sym):
            out = []
            for s in bits:
                if s in targets:
                    v = env.get(s) if blocking["on"] else None
                    if v is None or not isinstance(v, int) or v == HOLD:
                        self.fail(at, f"'{sym.name}' is read in the always block that assigns it "
                                      "before it is assigned on every path; that is a loop through "
                                      "the block, " + _outside("which"))
                    out.append(v)
                    continue
                if allowed is not None and s not in allowed and s >= 2:
                    self.fail(at, f"'{sym.name}' is read in this always block but is missing from "
                                  "its event list (use @*)")
                out.append(s)
            return out

        self.run_level(scope, blk.body, env, reader, blocking)
        en_cache: dict = {}
        for slot in sorted(env):
            v = env[slot]
            if v == HOLD:
                continue
            if isinstance(v, int):
                self.drive(slot, ("a", v), blk.at)
                continue
            init = self.init_of(scope, slot)
            if v[2] == HOLD and _no_hold(v[1]):
                kind, ctrl, d = "ah", v[0], v[1]
            elif v[1] == HOLD and _no_hold(v[2]):
                kind, ctrl, d = "al", v[0], v[2]
            else:
                key = _shape(v)
                ctrl = en_cache.get(key)
                if ctrl is None:
                    ctrl = en_cache[key] = self.enable(v, blk.at, scope.hint)
                kind = "ah"
                d = self.latch_data(v, blk.at, scope.hint)
            if ctrl >= 2:
                ctrl = self.constant_cone(ctrl)
            if ctrl < 2:
                if ctrl == (1 if kind == "ah" else 0):  # open on every path: plain logic
                    self.drive(slot, ("a", d), blk.at)
                    continue
                # the conditions that assign it can never hold: a latch that never opens
                self.warn(blk.at, f"'{self.name[slot]}' is assigned only under conditions that "
                                  "never hold; it keeps its initial value")
            self.drive(slot, ("s", d, kind, ctrl, init), blk.at)

    def run_level(self, scope, st, env, reader, blocking):
        if st is None or st.kind == "null":
            return
        if st.kind == "block":
            for s in st.a:
                self.run_level(scope, s, env, reader, blocking)
            return
        if st.kind == "if":
            c, inv = self.cond(scope, st.a, reader)
            if c < 2:
                self.run_level(scope, st.b if c else st.c, env, reader, blocking)
                return
            env_t = dict(env)
            self.run_level(scope, st.b, env_t, reader, blocking)
            env_e = dict(env)
            self.run_level(scope, st.c, env_e, reader, blocking)
            if inv:
                env_t, env_e = env_e, env_t
            for slot in set(env_t) | set(env_e):
                t = env_t.get(slot, HOLD)
                e = env_e.get(slot, HOLD)
                if t == e:
                    env[slot] = t
                elif isinstance(t, int) and isinstance(e, int) and t != HOLD and e != HOLD:
                    env[slot] = self.mux(c, t, e, st.at, scope.hint)
                else:
                    env[slot] = (c, t, e)
            return
        blocking["on"] = st.kind == "ba"
        slots = self.lvalue(scope, st.a, True)
        scope.hint = scope.prefix + _base_name(st.a)
        bits = self.lower(scope, st.b, len(slots), reader=reader)
        for s, b in zip(slots, bits):
            env[s] = b

    def constant_cone(self, b, limit=MAX_TABLE_INPUTS):
        """``b`` itself, or 0/1 when the logic made for it here is constant over
        its leaves (nets with a name, inputs, storage); at most ``limit`` leaves."""
        inner, leaves, seen = [], [], {b}
        stack = [b]
        while stack:
            s = stack.pop()
            d = self.drv[s]
            if s >= 2 and self.gen[s] and d is not None and d[0] == "l":
                inner.append(s)
                for f in d[1]:
                    if f not in seen:
                        seen.add(f)
                        stack.append(f)
            else:
                leaves.append(s)
                if len(leaves) > limit:
                    return b
        # a node made here is always numbered after its fan-ins: slot order is topological
        order = sorted(inner)
        k = len(leaves)
        full = (1 << (1 << k)) - 1
        val = {s: (full if s == 1 else 0) if s < 2 else var_mask(k, j) for j, s in enumerate(leaves)}
        for s in order:
            d = self.drv[s]
            val[s] = d[2].eval_words([val[f] for f in d[1]], full)
        if val[b] == 0:
            return 0
        if val[b] == full:
            return 1
        return b

    def enable(self, v, at, hint):
        """Bit that is 1 where the tree ``v`` assigns (reaches a non-HOLD leaf)."""
        if not isinstance(v, tuple):
            return 0 if v == HOLD else 1
        c, t, e = v
        return self.mux(c, self.enable(t, at, hint), self.enable(e, at, hint), at, hint)

    def latch_data(self, v, at, hint):
        if not isinstance(v, tuple):
            return v
        c, t, e = v
        if t == HOLD:
            return self.latch_data(e, at, hint)
        if e == HOLD:
            return self.latch_data(t, at, hint)
        return self.mux(c, self.latch_data(t, at, hint), self.latch_data(e, at, hint), at, hint)

    # -- instances ------------------------------------------------------------
    def instance(self, scope, inst):
        mod = self.modules.get(inst.module)
        if mod is None:
            self.fail(inst.module_at, f"unknown module '{inst.module}'")
        if mod.name in scope.ancestors:
            chain = scope.chain()
            loop = " → ".join(reversed(chain)) + f" → {mod.name}"
            self.fail(inst.module_at, f"module '{mod.name}' instantiates itself ({loop})")
        # parameter overrides
        overrides = {}
        if inst.params:
            settable = [p.name for p in mod.params if not p.local]
            local = {p.name for p in mod.params if p.local}
            for k, (pname, e, at) in enumerate(inst.params):
                if pname is None:
                    if k >= len(settable):
                        self.fail(at, f"module '{mod.name}' has only {len(settable)} parameter(s) to set")
                    pname = settable[k]
                elif pname in local:
                    self.fail(at, f"'{pname}' is a localparam of '{mod.name}' and cannot be set")
                elif pname not in settable:
                    self.fail(at, f"module '{mod.name}' has no parameter '{pname}'")
                if e is None:
                    continue
                overrides[pname] = (self.const_eval(scope, e), None if (e.op == "num" and e.val[1] is None)
                                    else self.self_width(scope, e))
        prefix = f"{scope.prefix}{inst.name}/"
        child = self.make_scope(mod, prefix, scope, inst.name, inst.at, overrides, False)
        # connections
        ports = child.ports
        by_name = {s.name: s for s in ports}
        pairs = []
        if inst.named:
            seen = {}
            for pname, e, at in inst.conns:
                sym = by_name.get(pname)
                if sym is None:
                    self.error(at, f"module '{mod.name}' has no port '{pname}'")
                    continue
                if pname in seen:
                    self.error(at, f"port '{pname}' is connected twice")
                    continue
                seen[pname] = at
                pairs.append((sym, e, at))
            for sym in ports:
                if sym.name not in seen:
                    pairs.append((sym, None, inst.at))
        else:
            if len(inst.conns) > len(ports):
                extra = inst.conns[len(ports)]
                self.error(extra[2], f"module '{mod.name}' has {len(ports)} port(s); "
                                     f"instance '{inst.name}' connects {len(inst.conns)}")
            for k, sym in enumerate(ports):
                if k < len(inst.conns):
                    _, e, at = inst.conns[k]
                else:
                    e, at = None, inst.at
                pairs.append((sym, e, at))
        path = prefix[:-1]
        for sym, e, at in pairs:
            try:
                if e is None:
                    if sym.kind == "input":
                        for s in sym.bits:
                            self.unconnected[s] = (inst.at, sym.name, path)
                    continue
                if sym.kind == "input":
                    scope.hint = child.prefix + sym.name
                    bits = self.lower(scope, e, sym.width)[:sym.width]
                    if self.last_width != sym.width:
                        self.warn(e.at, f"port '{sym.name}' of '{inst.name}' is {sym.width} bit(s) wide "
                                        f"but is connected to {self.last_width} bit(s)")
                    for s, b in zip(sym.bits, bits):
                        self.drive(s, ("a", b), at)
                else:
                    if e.op not in ("id", "sel", "part", "part+", "part-", "concat"):
                        self.fail(e.at, f"output port '{sym.name}' of '{inst.name}' must be connected "
                                        "to a net, a bit, a part or a concatenation of them")
                    slots = self.lvalue(scope, e, False)
                    if len(slots) != sym.width:
                        self.warn(e.at, f"port '{sym.name}' of '{inst.name}' is {sym.width} bit(s) wide "
                                        f"but is connected to {len(slots)} bit(s)")
                    for k, s in enumerate(slots):
                        self.drive(s, ("a", sym.bits[k] if k < sym.width else 0), at)
            except _Fail:
                pass
        return child

    # -- the whole design -------------------------------------------------------
    def run(self, top):
        if not self.modules:
            self.error(None, "no module in this file")
            return None
        if top is not None:
            mod = self.modules.get(top)
            if mod is None:
                names = ", ".join(self.modules)
                self.error(None, f"no module named '{top}' (this file has: {names})")
                return None
        else:
            # a module that instantiates itself is still a candidate (the
            # recursion is reported where it happens)
            used = {i.module for m in self.modules.values() for i in m.insts if i.module != m.name}
            cands = [m for m in self.order if m.name not in used and self.modules.get(m.name) is m]
            if not cands:
                self.error(self.order[0].at, "every module is instantiated by another; "
                                             "choose the top with --top NAME")
                return None
            if len(cands) > 1:
                names = ", ".join(f"'{m.name}'" for m in cands)
                self.error(cands[1].at, f"several modules could be the top ({names}); "
                                        "choose one with --top NAME")
                return None
            mod = cands[0]
        top_scope = self.make_scope(mod, "", None, None, mod.at, {}, True)
        stack = [top_scope]
        while stack:
            scope = stack.pop()
            self.body(scope, stack)
            if self.errors >= MAX_ERRORS:
                break
        if self.errors:
            return None
        return self.finish(mod)

    def finish(self, mod):
        nslots = len(self.name)
        parent = list(range(nslots))

        def find(x):
            root = x
            while parent[root] != root:
                root = parent[root]
            while parent[x] != root:
                parent[x], x = root, parent[x]
            return root

        drv = self.drv
        for s in range(nslots):
            d = drv[s]
            if d is not None and d[0] == "a":
                a, b = find(s), find(d[1])
                if a != b:
                    # keep the lower slot as root (deterministic)
                    if a < b:
                        parent[b] = a
                    else:
                        parent[a] = b
        root_of = [find(s) for s in range(nslots)]
        # the real driver of each class
        real = {}
        for s in range(nslots):
            d = drv[s]
            if d is not None and d[0] != "a":
                real[root_of[s]] = s
        # references to each class (fan-ins and outputs), for sweeping
        refs = [0] * nslots

        def fanin_slots(s):
            d = drv[s]
            if d[0] == "l":
                return d[1]
            if d[0] == "s":
                return (d[1], d[3])
            return ()

        for r, s in real.items():
            for f in fanin_slots(s):
                refs[root_of[f]] += 1
        for s in self.top_outputs:
            refs[root_of[s]] += 1
        # classes that carry a user's name
        named = set()
        for s in range(2, nslots):
            if not self.gen[s]:
                named.add(root_of[s])
        dead = set()
        work = [r for r in real if refs[r] == 0 and r not in named and r >= 2]
        while work:
            r = work.pop()
            if r in dead:
                continue
            dead.add(r)
            for f in fanin_slots(real[r]):
                fr = root_of[f]
                refs[fr] -= 1
                if refs[fr] == 0 and fr in real and fr not in named and fr >= 2:
                    work.append(fr)
        # unconnected inputs that are read
        reported = set()
        for s, (at, port, path) in self.unconnected.items():
            r = root_of[s]
            if r not in real and refs[r] > 0 and (path, port) not in reported:
                reported.add((path, port))
                self.error(at, f"input '{port}' of instance '{path}' is not connected, but the "
                               "instance reads it; connect it (an open input floats) or tie it "
                               "to 1'b0 or 1'b1")
        if self.errors:
            return None
        # names: top input > first top output > user net highest in the hierarchy > generated
        best: dict = {}
        rank_top_in = {s: i for i, s in enumerate(self.top_inputs)}
        rank_top_out = {s: i for i, s in enumerate(self.top_outputs)}
        for s in range(2, nslots):
            r = root_of[s]
            if s in rank_top_in:
                key = (0, rank_top_in[s], 0)
            elif s in rank_top_out:
                key = (1, rank_top_out[s], 0)
            elif not self.gen[s]:
                key = (2, self.name[s].count("/"), s)
            else:
                key = (3, 0, s)
            cur = best.get(r)
            if cur is None or key < cur[0]:
                best[r] = (key, s)
        used_names = set(self.user_names)
        counters: dict = {}
        net_name = {}
        for r, (key, s) in best.items():
            if key[0] < 3:
                net_name[r] = self.name[s]
            else:
                hint = self.name[s]
                k = counters.get(hint, 0)
                while True:
                    k += 1
                    cand = f"{hint}${k}"
                    if cand not in used_names:
                        break
                counters[hint] = k
                used_names.add(cand)
                net_name[r] = cand
        nl = Netlist(mod.name)
        file_warnings = [d for d in self.diags if d.severity != "error"]
        nl.warnings.extend(file_warnings)
        for s in self.top_inputs:
            nl.add_input(self.name[s], where=self.at[s])
        needed_consts = set()
        for r in sorted(real):
            if r in dead:
                continue
            s = real[r]
            d = drv[s]
            if d[0] == "i":
                continue
            if r < 2:
                continue
            name = net_name[r]
            where = self.at[best[r][1]]
            if d[0] == "c":
                nl.add_constant(name, d[1], where=where)
            elif d[0] == "l":
                fr = [root_of[f] for f in d[1]]
                func = d[2]
                if any(r_ < 2 for r_ in fr) or len(set(fr)) < len(fr):
                    # a constant or a repeated net arrived through a port: fold it here
                    k, table, fr = _simplify(func.n, func.table(), fr)
                    func = _func(k, table)
                nl.add_logic(name, [net_name[r_] for r_ in fr], func, where=where)
            else:
                _, dbit, kind, ctrl, init = d
                nl.add_storage(name, self._fanin(dbit, root_of, net_name, needed_consts), kind,
                               self._fanin(ctrl, root_of, net_name, needed_consts), init, where=where)
        # outputs
        for s in self.top_outputs:
            name = self.name[s]
            r = root_of[s]
            if r < 2:
                if name not in nl.nodes:
                    nl.add_constant(name, r, where=self.at[s])
            elif net_name[r] != name and r in real:
                nl.add_logic(name, [net_name[r]], _func(1, 0b10), where=self.at[s])
            nl.add_output(name, where=self.at[s])
        for r in sorted(needed_consts):
            cname = _const_net(r)
            if cname not in nl.nodes:
                nl.add_constant(cname, r)
        # origins for nets that are used but never driven (check() reports them)
        for r, nm in net_name.items():
            if nm not in nl.origin:
                nl.origin[nm] = self.at[best[r][1]]
        nl.clocks = []
        for c in self.clock_slots:
            r = root_of[c]
            nm = net_name.get(r)
            if nm and nm not in nl.clocks:
                nl.clocks.append(nm)
        return nl

    def _fanin(self, b, root_of, net_name, needed):
        r = root_of[b]
        if r < 2:
            needed.add(r)
            return _const_net(r)
        return net_name[r]


def _const_net(v):
    return "$const1" if v else "$const0"


def _no_hold(v):
    return isinstance(v, int) and v != HOLD


def _shape(v):
    """Key of a mux tree's enable: its conditions and where it holds."""
    if not isinstance(v, tuple):
        return "H" if v == HOLD else "V"
    return (v[0], _shape(v[1]), _shape(v[2]))


def _base_name(e):
    while e.op == "concat":
        e = e.args[0]
    return str(e.val)


def _post_order(root):
    """Nodes of an expression tree, operands before operators (iterative)."""
    out = []
    stack = [(root, False)]
    while stack:
        n, done = stack.pop()
        if done or not n.args:
            out.append(n)
            continue
        stack.append((n, True))
        for a in reversed(n.args):
            stack.append((a, False))
    return out


def _int_bits(v: int, width: int) -> list:
    v &= (1 << width) - 1
    return [(v >> k) & 1 for k in range(width)]


def _bits_int(bits) -> int:
    v = 0
    for k, b in enumerate(bits):
        if b:
            v |= 1 << k
    return v


def _pow(a, b):
    if b < 0:
        raise ValueError
    if b > 4096:
        raise OverflowError
    return a ** b


_CONST_BINARY = {
    "+": lambda a, b: a + b, "-": lambda a, b: a - b, "*": lambda a, b: a * b,
    "/": lambda a, b: int(a / b) if b else (_ for _ in ()).throw(ZeroDivisionError()),
    "%": lambda a, b: a - b * int(a / b) if b else (_ for _ in ()).throw(ZeroDivisionError()),
    "**": _pow,
    "<<": lambda a, b: a << b if 0 <= b < 4096 else 0, ">>": lambda a, b: a >> b if b >= 0 else 0,
    "<<<": lambda a, b: a << b if 0 <= b < 4096 else 0, ">>>": lambda a, b: a >> b if b >= 0 else 0,
    "<": lambda a, b: int(a < b), "<=": lambda a, b: int(a <= b),
    ">": lambda a, b: int(a > b), ">=": lambda a, b: int(a >= b),
    "==": lambda a, b: int(a == b), "!=": lambda a, b: int(a != b),
    "===": lambda a, b: int(a == b), "!==": lambda a, b: int(a != b),
    "&": lambda a, b: a & b, "|": lambda a, b: a | b, "^": lambda a, b: a ^ b,
    "~^": lambda a, b: ~(a ^ b),
    "&&": lambda a, b: int(bool(a) and bool(b)), "||": lambda a, b: int(bool(a) or bool(b)),
}


def _simplify(k, table, ops):
    """Fold constant and repeated inputs out of a small function and drop
    the inputs it does not depend on.  Returns ``(k, table, ops)``."""
    uniq = []
    where = {}
    for b in ops:
        if b >= 2 and b not in where:
            where[b] = len(uniq)
            uniq.append(b)
    n = len(uniq)
    new = 0
    for m in range(1 << n):
        idx = 0
        for j, b in enumerate(ops):
            v = b if b < 2 else (m >> where[b]) & 1
            idx |= v << j
        if (table >> idx) & 1:
            new |= 1 << m
    j = 0
    while j < n:
        full = (1 << (1 << n)) - 1
        mask = var_mask(n, j)
        low = new & ~mask & full
        high = (new & mask) >> (1 << j)
        if low == high:
            # remove input j: keep the entries where it is 0, packed
            packed = 0
            out = 0
            for m in range(1 << n):
                if not (m >> j) & 1:
                    if (new >> m) & 1:
                        packed |= 1 << out
                    out += 1
            new = packed
            uniq.pop(j)
            n -= 1
        else:
            j += 1
    return n, new, uniq


def read_text(text: str, file: str = "<text>", top: str | None = None) -> Netlist:
    """Read Verilog from a string (for tests and tools); see :func:`read`."""
    from .verilog_lex import lex_text
    diags: list = []
    modules = parse(lex_text(text, file, diags), diags)
    return _elaborate(modules, diags, file, top)


def read(path, top: str | None = None, allow_outside: bool = False) -> Netlist:
    """Read a structural Verilog file into a :class:`~mapper.netlist.Netlist`.

    Parameters
    ----------
    path : str or Path
        The ``.v`` (or ``.sv``) file.
    top : str, optional
        Name of the top module; by default the one module no other one
        instantiates.
    allow_outside : bool
        Let `` `include `` read files outside the design's folder.

    Returns
    -------
    Netlist
        Flattened, with ports in declaration order and bus bits as
        ``name[i]``; every net has its ``origin`` (file, line, col).  The
        netlist is not checked (:func:`mapper.read.read_design` does that).

    Raises
    ------
    VerilogError
        With every problem found (up to 50), each at its file, line, column.
    """
    diags: list = []
    # the reader makes many small objects and no cycles: the cycle collector
    # would only rescan them over and over (it doubles the time on big files)
    was_enabled = gc.isenabled()
    gc.disable()
    try:
        try:
            tokens = lex_file(path, diags, allow_outside=allow_outside)
        except OSError as exc:
            raise VerilogError(Diagnostic(f"cannot read the file: {exc.strerror or exc}", str(path)))
        modules = parse(tokens, diags)
        del tokens  # the syntax tree keeps what it needs
        return _elaborate(modules, diags, str(path), top)
    finally:
        if was_enabled:
            gc.enable()


def _elaborate(modules, diags, file, top):
    if any(d.severity == "error" for d in diags):
        _raise(diags)
    el = _Elaborator(modules, file, diags)
    try:
        netlist = el.run(top)
    except RecursionError:  # pragma: no cover - guarded by the parser's nesting limit
        diags.append(Diagnostic("the design nests too deeply to read", file))
        netlist = None
    if netlist is None or any(d.severity == "error" for d in diags):
        _raise(diags)
    log.debug("%s: top '%s', %d inputs, %d outputs, %d nets", file, netlist.name,
              len(netlist.inputs), len(netlist.outputs), len(netlist.nodes))
    return netlist


def _raise(diags):
    # a module used several times would repeat its messages: keep each once
    errors = list(dict.fromkeys(d for d in diags if d.severity == "error"))
    # in the order of the text (instances are elaborated from a stack, not in text order)
    errors.sort(key=lambda d: (d.file or "", d.line or 0, d.col or 0))
    if len(errors) > MAX_ERRORS:
        extra = len(errors) - MAX_ERRORS
        errors = errors[:MAX_ERRORS] + [Diagnostic(f"… and {extra} more error(s)", errors[0].file)]
    raise VerilogError(errors)
