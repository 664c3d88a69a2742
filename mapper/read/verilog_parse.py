"""Parse the tokens of a structural Verilog file into a small syntax tree.

The parser knows the whole grammar of the structural subset (see
:mod:`mapper.read.verilog`) and enough of the rest of IEEE 1364-2005 to
recognise a construct outside the subset, report it at its first token as
``… is outside the structural subset``, skip it whole and go on, so that
one run reports every such construct.  A plain syntax error ends the
current module (the parser goes on with the next one), so that one mistake
does not bring a cascade of follow-up messages.

Expressions are parsed by precedence climbing; chains of the same
precedence and ``?:`` chains in the else position are parsed in loops, and
nesting in parentheses, concatenations and then-branches is limited to
:data:`MAX_NESTING` levels (an error beyond it), so deep input never
exhausts the Python stack.
"""
from __future__ import annotations

from ..errors import Diagnostic

__all__ = [
    "Expr", "Decl", "Param", "Assign", "Gate", "Inst", "Always", "Stmt", "Module",
    "parse", "GATES", "MAX_NESTING",
]

#: gate primitives of the subset
GATES = ("and", "or", "nand", "nor", "xor", "xnor", "not", "buf")
_OTHER_PRIMITIVES = {"bufif0", "bufif1", "notif0", "notif1", "nmos", "pmos", "cmos", "rnmos",
                     "rpmos", "rcmos", "tran", "tranif0", "tranif1", "rtran", "rtranif0",
                     "rtranif1", "pullup", "pulldown"}
_STRENGTHS = {"supply0", "strong0", "pull0", "weak0", "highz0",
              "supply1", "strong1", "pull1", "weak1", "highz1"}
MAX_NESTING = 100

# binary operator precedence (IEEE 1364-2005 table 5-4), higher binds tighter
_BINARY = {
    "**": 12,
    "*": 11, "/": 11, "%": 11,
    "+": 10, "-": 10,
    "<<": 9, ">>": 9, "<<<": 9, ">>>": 9,
    "<": 8, "<=": 8, ">": 8, ">=": 8,
    "==": 7, "!=": 7, "===": 7, "!==": 7,
    "&": 6,
    "^": 5, "~^": 5, "^~": 5,
    "|": 4,
    "&&": 3,
    "||": 2,
}
_UNARY = {"~", "!", "&", "~&", "|", "~|", "^", "~^", "^~", "+", "-"}

# the keyword that closes each bracketing keyword (for skipping whole constructs)
_CLOSERS = {
    "begin": "end", "fork": "join", "case": "endcase", "casex": "endcase", "casez": "endcase",
    "function": "endfunction", "task": "endtask", "generate": "endgenerate",
    "specify": "endspecify", "primitive": "endprimitive", "table": "endtable",
    "config": "endconfig",
}


class Expr:
    """An expression node: ``op`` names it (``id``, ``num``, ``sel``, ``part``,
    ``part+``, ``part-``, ``concat``, ``repl``, ``?:``, ``u~`` for unary
    operators, the operator text for binary ones ...), ``args`` are the
    operand nodes, ``val`` the name or literal value, ``at`` its position
    ``(file, line, col)``."""

    __slots__ = ("op", "args", "val", "at")

    def __init__(self, op, args, val, at):
        self.op = op
        self.args = args
        self.val = val
        self.at = at

    def __repr__(self):
        if self.args:
            return f"Expr({self.op!r}, {self.val!r}, {self.args!r})"
        return f"Expr({self.op!r}, {self.val!r})"


class Decl:
    """A declared name: ``kind`` is input/output/wire/reg/supply0/supply1;
    ``rng`` is ``(msb_expr, lsb_expr)`` or ``None``; ``init`` a net
    declaration assignment (wire) or an initial value (reg)."""

    __slots__ = ("kind", "is_reg", "rng", "name", "at", "init", "init_at")

    def __init__(self, kind, is_reg, rng, name, at, init=None, init_at=None):
        self.kind, self.is_reg, self.rng, self.name, self.at = kind, is_reg, rng, name, at
        self.init, self.init_at = init, init_at


class Param:
    __slots__ = ("name", "rng", "value", "local", "at")

    def __init__(self, name, rng, value, local, at):
        self.name, self.rng, self.value, self.local, self.at = name, rng, value, local, at


class Assign:
    __slots__ = ("lhs", "rhs", "at")

    def __init__(self, lhs, rhs, at):
        self.lhs, self.rhs, self.at = lhs, rhs, at


class Gate:
    """One gate primitive: ``kind`` (and, or, ...), optional instance
    ``name``, terminals (outputs first), position."""

    __slots__ = ("kind", "name", "terms", "at")

    def __init__(self, kind, name, terms, at):
        self.kind, self.name, self.terms, self.at = kind, name, terms, at


class Inst:
    """One module instance.  ``conns`` is a list of ``(port_name_or_None,
    expr_or_None, at)``: all named or all positional; ``params`` likewise
    for the ``#( )`` overrides."""

    __slots__ = ("module", "module_at", "name", "at", "params", "conns", "named")

    def __init__(self, module, module_at, name, at, params, conns, named):
        self.module, self.module_at, self.name, self.at = module, module_at, name, at
        self.params, self.conns, self.named = params, conns, named


class Stmt:
    """A statement inside ``always``: ``kind`` is ``block``, ``if``, ``nba``
    (``<=``), ``ba`` (``=``) or ``null``."""

    __slots__ = ("kind", "a", "b", "c", "at")

    def __init__(self, kind, a=None, b=None, c=None, at=None):
        self.kind, self.a, self.b, self.c, self.at = kind, a, b, c, at


class Always:
    """``edge`` is ``posedge``/``negedge`` (then ``clock`` is its expression)
    or ``None`` for a level-sensitive block (``sens`` is ``"*"`` or a list of
    expressions)."""

    __slots__ = ("at", "edge", "clock", "sens", "body")

    def __init__(self, at, edge, clock, sens, body):
        self.at, self.edge, self.clock, self.sens, self.body = at, edge, clock, sens, body


class Module:
    __slots__ = ("name", "at", "ports", "ansi", "decls", "params", "assigns", "gates", "insts",
                 "always", "nettype")

    def __init__(self, name, at, nettype):
        self.name, self.at, self.nettype = name, at, nettype
        self.ports = []          # (name, at) in header order
        self.ansi = False
        self.decls = []
        self.params = []
        self.assigns = []
        self.gates = []
        self.insts = []
        self.always = []


class _Syntax(Exception):
    """A syntax error already recorded; the caller resynchronises."""


class _Skipped(Exception):
    """A construct outside the subset was reported and skipped whole."""


class _Refused(_Syntax):
    """A construct outside the subset inside an expression was reported;
    the caller skips the whole item it is in."""


def _outside(what: str) -> str:
    return f"{what} is outside the structural subset"


class _Parser:
    def __init__(self, tokens, diags):
        # a few extra end tokens let peek(k) look ahead without bounds checks
        self.t = tokens
        if tokens[-1][0] != "eof" or len(tokens) < 5 or tokens[-5][0] != "eof":
            tokens.extend([tokens[-1]] * 4)
        self.i = 0
        self.diags = diags
        self.nettype = "wire"
        self.depth = 0
        self.delay_noted = False

    # -- token helpers ----------------------------------------------------
    def peek(self, k=0):
        return self.t[self.i + k]

    def kind(self, k=0):
        return self.t[self.i + k][0]

    def take(self):
        tok = self.t[self.i]
        if tok[0] != "eof":
            self.i += 1
        return tok

    @staticmethod
    def at(tok):
        return (tok[4], tok[2], tok[3])

    def error(self, tok, msg, severity="error"):
        self.diags.append(Diagnostic(msg, tok[4], tok[2], tok[3], severity))

    def syntax(self, tok, msg):
        self.error(tok, msg)
        raise _Syntax()

    def refuse(self, tok, what):
        self.error(tok, _outside(what))

    @staticmethod
    def describe(tok):
        k = tok[0]
        if k == "eof":
            return "end of file"
        if k == "id":
            return f"identifier '{tok[1]}'"
        if k == "num":
            return "a number"
        if k == "str":
            return "a string"
        if k == "sys":
            return f"'{tok[1]}'"
        return f"'{tok[1]}'"

    def expect(self, kind, what=None):
        tok = self.peek()
        if tok[0] != kind:
            self.syntax(tok, f"expected {what or repr(kind)}, found {self.describe(tok)}")
        return self.take()

    def ident(self, what="a name"):
        tok = self.peek()
        if tok[0] != "id":
            self.syntax(tok, f"expected {what}, found {self.describe(tok)}")
        return self.take()

    # -- skipping ---------------------------------------------------------
    def skip_to(self, closer):
        """Skip tokens through the keyword ``closer`` (nesting of the same
        opener counted); stops before ``endmodule`` when the closer is not
        ``endmodule`` itself."""
        openers = {k for k, v in _CLOSERS.items() if v == closer}
        depth = 0
        while True:
            k = self.kind()
            if k == "eof":
                return
            if k == "endmodule" and closer != "endmodule":
                return
            self.take()
            if k in openers:
                depth += 1
            elif k == closer:
                if depth == 0:
                    return
                depth -= 1

    def skip_parens(self):
        """Skip a balanced ``( ... )`` group if one starts here."""
        if self.kind() != "(":
            return
        depth = 0
        while True:
            k = self.kind()
            if k == "eof" or k == "endmodule":
                return
            self.take()
            if k == "(":
                depth += 1
            elif k == ")":
                depth -= 1
                if depth == 0:
                    return

    def skip_statement(self):
        """Skip one procedural statement, whatever it is.  Tail positions
        (else-parts, loop bodies) are followed in a loop; only then-parts
        recurse, as deep as the source nests them."""
        while True:
            k = self.kind()
            if k in ("eof", "endmodule"):
                return
            if k in _CLOSERS:
                self.take()
                self.skip_to(_CLOSERS[k])
                return
            if k == "if":
                self.take()
                self.skip_parens()
                self.skip_statement()
                if self.kind() == "else":
                    self.take()
                    continue
                return
            if k in ("for", "while", "repeat", "wait"):
                self.take()
                self.skip_parens()
                continue
            if k == "forever":
                self.take()
                continue
            if k in ("@", "#"):
                self.take()
                if self.kind() == "(":
                    self.skip_parens()
                else:
                    self.take()
                continue
            while self.kind() not in (";", "eof", "endmodule", "end"):
                self.take()
            if self.kind() == ";":
                self.take()
            return

    def skip_whole_item(self):
        """Skip the module item starting here (an always block whole)."""
        if self.kind() in ("always", "initial"):
            self.take()
            if self.kind() == "@":
                self.take()
                if self.kind() == "(":
                    self.skip_parens()
                else:
                    self.take()
            self.skip_statement()
        else:
            self.skip_item()

    def skip_item(self):
        """Skip to the end of a module item (after its ``;``)."""
        depth = 0
        while True:
            k = self.kind()
            if k in ("eof", "endmodule"):
                return
            self.take()
            if k in ("(", "[", "{"):
                depth += 1
            elif k in (")", "]", "}"):
                depth -= 1
            elif k == ";" and depth <= 0:
                return

    # -- file level -------------------------------------------------------
    def parse_file(self):
        modules = []
        while True:
            tok = self.peek()
            k = tok[0]
            if k == "eof":
                break
            if k == "`nettype":
                self.take()
                self.nettype = tok[1]
                continue
            if k in ("module", "macromodule"):
                mod = self.module()
                if mod is not None:
                    modules.append(mod)
                continue
            if k == "primitive":
                self.refuse(tok, "a user-defined primitive ('primitive')")
                self.take()
                self.skip_to("endprimitive")
                continue
            if k == "config":
                self.refuse(tok, "a configuration ('config')")
                self.take()
                self.skip_to("endconfig")
                continue
            if k in ("interface", "package", "program", "class", "typedef", "import"):
                self.refuse(tok, f"SystemVerilog '{tok[1]}'")
                self.take()
                ender = {"interface": "endinterface", "package": "endpackage",
                         "program": "endprogram", "class": "endclass"}.get(k)
                if ender:
                    while self.kind() not in (ender, "eof"):
                        self.take()
                    self.take()
                else:
                    self.skip_item()
                continue
            self.error(tok, f"expected 'module', found {self.describe(tok)}")
            # go on at the next module
            while self.kind() not in ("module", "macromodule", "eof"):
                self.take()
        return modules

    def module(self):
        self.take()
        try:
            name = self.ident("a module name")
        except _Syntax:
            self.skip_to("endmodule")
            return None
        mod = Module(name[1], self.at(name), self.nettype)
        try:
            if self.kind() == "#":
                self.take()
                self.header_params(mod)
            if self.kind() == "(":
                self.port_list(mod)
            self.expect(";", "';' after the module header")
        except _Syntax:
            self.skip_to("endmodule")
            return mod
        while True:
            k = self.kind()
            if k == "endmodule":
                self.take()
                return mod
            if k == "eof":
                self.error(self.peek(), f"module '{mod.name}' has no 'endmodule'")
                return mod
            start = self.i
            try:
                self.item(mod)
            except _Skipped:
                continue
            except _Refused:
                self.i = start
                self.skip_whole_item()
                continue
            except _Syntax:
                self.skip_to("endmodule")
                return mod

    # -- module header ----------------------------------------------------
    def header_params(self, mod):
        self.expect("(", "'(' after '#'")
        if self.kind() == ")":
            self.take()
            return
        local = False
        rng = None
        first = True
        while True:
            if self.kind() in ("parameter", "localparam"):
                local = self.take()[0] == "localparam"
                rng = self.param_type()
            elif first:
                rng = self.param_type()
            first = False
            name = self.ident("a parameter name")
            self.expect("=", "'=' and a value for the parameter")
            value = self.expr()
            mod.params.append(Param(name[1], rng, value, local, self.at(name)))
            if self.kind() == ",":
                self.take()
                continue
            self.expect(")", "',' or ')' in the parameter list")
            return

    def param_type(self):
        tok = self.peek()
        if tok[0] == "signed":
            self.refuse(tok, "'signed'")
            raise _Syntax()
        if tok[0] in ("real", "realtime", "time"):
            self.refuse(tok, f"a '{tok[0]}' parameter")
            raise _Syntax()
        if tok[0] == "integer":
            self.take()
            return None
        if tok[0] == "[":
            return self.range_()
        return None

    def port_list(self, mod):
        self.take()  # (
        if self.kind() == ")":
            self.take()
            return
        if self.kind() in ("input", "output", "inout"):
            mod.ansi = True
            self.ansi_ports(mod)
            return
        while True:
            tok = self.peek()
            if tok[0] == "id":
                self.take()
                if self.kind() == "[":
                    self.refuse(self.peek(), "a part of a port in a port list")
                    raise _Syntax()
                mod.ports.append((tok[1], self.at(tok)))
            elif tok[0] == ".":
                self.refuse(tok, "a named port expression ('.name(...)') in a module header")
                raise _Syntax()
            elif tok[0] == "{":
                self.refuse(tok, "a concatenated port in a module header")
                raise _Syntax()
            elif tok[0] == "," or tok[0] == ")":
                self.syntax(tok, f"expected a port name, found {self.describe(tok)}")
            else:
                self.syntax(tok, f"expected a port name, found {self.describe(tok)}")
            if self.kind() == ",":
                self.take()
                if self.kind() in ("input", "output", "inout"):
                    self.syntax(self.peek(), "a port list mixes plain names and declarations")
                continue
            self.expect(")", "',' or ')' in the port list")
            return

    def ansi_ports(self, mod):
        direction = None
        is_reg = False
        rng = None
        while True:
            tok = self.peek()
            if tok[0] in ("input", "output", "inout"):
                self.take()
                direction = tok[0]
                if direction == "inout":
                    self.refuse(tok, "'inout'")
                    raise _Syntax()
                is_reg, rng = self.net_type_and_range(direction)
            elif tok[0] != "id":
                self.syntax(tok, f"expected a port declaration, found {self.describe(tok)}")
            name = self.ident("a port name")
            init = init_at = None
            if self.kind() == "[":
                self.refuse(self.peek(), "an array port")
                raise _Syntax()
            if self.kind() == "=":
                eq = self.take()
                if not is_reg:
                    self.syntax(eq, "only an 'output reg' port can have an initial value")
                init, init_at = self.expr(), self.at(eq)
            mod.ports.append((name[1], self.at(name)))
            mod.decls.append(Decl(direction, is_reg, rng, name[1], self.at(name), init, init_at))
            if self.kind() == ",":
                self.take()
                continue
            self.expect(")", "',' or ')' in the port list")
            return

    def net_type_and_range(self, direction):
        """After input/output: optional wire/reg, signed (refused), range."""
        is_reg = False
        tok = self.peek()
        if tok[0] == "reg":
            if direction == "input":
                self.syntax(tok, "an input cannot be a 'reg'")
            self.take()
            is_reg = True
        elif tok[0] in ("wire", "uwire"):
            self.take()
        elif tok[0] in ("tri", "tri0", "tri1", "wand", "wor", "triand", "trior", "trireg",
                        "supply0", "supply1", "integer", "real", "time", "realtime", "logic",
                        "bit", "var", "int"):
            self.refuse(tok, f"a port of type '{tok[1]}'")
            raise _Syntax()
        tok = self.peek()
        if tok[0] == "signed":
            self.refuse(tok, "'signed'")
            raise _Syntax()
        if tok[0] == "unsigned":
            self.take()
        rng = self.range_() if self.kind() == "[" else None
        return is_reg, rng

    def range_(self):
        self.expect("[")
        msb = self.expr()
        self.expect(":", "':' in a range")
        lsb = self.expr()
        self.expect("]", "']' closing the range")
        return (msb, lsb)

    # -- module items -----------------------------------------------------
    def item(self, mod):
        tok = self.peek()
        k = tok[0]
        if k == "`nettype":
            self.take()
            self.nettype = tok[1]
            return
        if k == ";":
            self.take()
            return
        if k in ("input", "output", "inout"):
            return self.port_decl(mod)
        if k in ("wire", "reg", "uwire", "supply0", "supply1"):
            return self.net_decl(mod)
        if k in ("parameter", "localparam"):
            return self.param_decl(mod)
        if k == "assign":
            return self.cont_assign(mod)
        if k in GATES:
            return self.gates(mod)
        if k == "always":
            return self.always(mod)
        if k == "id":
            return self.instances(mod)
        # --- outside the subset: report and skip whole -------------------
        if k == "initial":
            self.refuse(tok, "an 'initial' block")
            self.take()
            self.skip_statement()
            raise _Skipped()
        if k in ("function", "task", "generate", "specify", "table"):
            what = {"function": "a function", "task": "a task", "generate": "a generate block",
                    "specify": "a specify block", "table": "a table"}[k]
            self.refuse(tok, f"{what} ('{k}')")
            self.take()
            self.skip_to(_CLOSERS[k])
            raise _Skipped()
        if k in ("for", "if", "case", "casex", "casez", "begin"):
            self.refuse(tok, f"a generate construct ('{k}' outside an always block)")
            self.skip_statement()
            raise _Skipped()
        if k in _OTHER_PRIMITIVES:
            self.refuse(tok, f"the switch-level or tristate primitive '{k}'")
            self.skip_item()
            raise _Skipped()
        if k in ("tri", "tri0", "tri1", "wand", "wor", "triand", "trior", "trireg"):
            self.refuse(tok, f"a '{k}' net")
            self.skip_item()
            raise _Skipped()
        if k in ("integer", "real", "realtime", "time", "event", "genvar", "specparam", "defparam"):
            what = {"integer": "an 'integer' variable", "real": "a 'real' variable",
                    "realtime": "a 'realtime' variable", "time": "a 'time' variable",
                    "event": "an 'event'", "genvar": "a 'genvar' (generate loops)",
                    "specparam": "a 'specparam'",
                    "defparam": "'defparam' (override parameters with #( ) on the instance)"}[k]
            self.refuse(tok, what)
            self.skip_item()
            raise _Skipped()
        if k in ("always_ff", "always_comb", "always_latch", "final", "logic", "bit", "int",
                 "typedef", "import", "assert", "assume", "cover", "property", "sequence",
                 "interface", "modport", "clocking", "byte", "shortint", "longint", "enum",
                 "struct", "union", "string", "var", "const", "let"):
            self.refuse(tok, f"SystemVerilog '{k}'")
            if k.startswith("always") or k == "final":
                self.take()
                self.skip_statement()
            else:
                self.skip_item()
            raise _Skipped()
        if k in ("module", "macromodule"):
            self.syntax(tok, "a module cannot be declared inside another; "
                             "is 'endmodule' missing before this line?")
        if k == "sys":
            self.refuse(tok, f"the system task '{tok[1]}'")
            self.skip_item()
            raise _Skipped()
        self.syntax(tok, f"expected a declaration, 'assign', a gate, an instance or 'always', "
                         f"found {self.describe(tok)}")

    def port_decl(self, mod):
        kw = self.take()
        direction = kw[0]
        if direction == "inout":
            self.refuse(kw, "'inout'")
            self.skip_item()
            raise _Skipped()
        if mod.ansi:
            self.syntax(kw, "this module declared its ports in the header already")
        is_reg, rng = self.net_type_and_range(direction)
        while True:
            name = self.ident("a port name")
            init = init_at = None
            if self.kind() == "=":
                eq = self.take()
                if not is_reg:
                    self.syntax(eq, "only an 'output reg' can have an initial value")
                init, init_at = self.expr(), self.at(eq)
            mod.decls.append(Decl(direction, is_reg, rng, name[1], self.at(name), init, init_at))
            if self.kind() == ",":
                self.take()
                continue
            self.expect(";", "',' or ';' after the port name")
            return

    def net_decl(self, mod):
        kw = self.take()
        kind = {"uwire": "wire"}.get(kw[0], kw[0])
        is_reg = kind == "reg"
        tok = self.peek()
        if tok[0] in ("scalared", "vectored"):
            self.take()
            tok = self.peek()
        if tok[0] == "signed":
            self.refuse(tok, "'signed'")
            self.skip_item()
            raise _Skipped()
        if tok[0] == "(":
            self.refuse(tok, "a drive strength")
            self.skip_item()
            raise _Skipped()
        rng = self.range_() if self.kind() == "[" else None
        if self.kind() == "#":
            self.delay()
        while True:
            name = self.ident("a net name")
            if self.kind() == "[":
                self.refuse(self.peek(), f"an array ('{name[1]}[...]' declares a memory)")
                self.skip_item()
                raise _Skipped()
            init = init_at = None
            if self.kind() == "=":
                eq = self.take()
                init, init_at = self.expr(), self.at(eq)
            mod.decls.append(Decl(kind, is_reg, rng, name[1], self.at(name), init, init_at))
            if self.kind() == ",":
                self.take()
                continue
            self.expect(";", "',' or ';' after the name")
            return

    def param_decl(self, mod):
        kw = self.take()
        local = kw[0] == "localparam"
        rng = self.param_type()
        while True:
            name = self.ident("a parameter name")
            self.expect("=", "'=' and a value for the parameter")
            value = self.expr()
            mod.params.append(Param(name[1], rng, value, local, self.at(name)))
            if self.kind() == ",":
                self.take()
                continue
            self.expect(";", "',' or ';' after the parameter")
            return

    def delay(self):
        """Skip a delay ``#n`` / ``#(a, b, c)``; delays are ignored (one note per file)."""
        hash_ = self.take()
        if not self.delay_noted:
            self.delay_noted = True
            self.error(hash_, "delays are ignored: netfit times a build from its parts' own "
                              "propagation delays", severity="warning")
        if self.kind() == "(":
            self.skip_parens()
        elif self.kind() in ("num", "id"):
            self.take()
        else:
            self.syntax(self.peek(), f"expected a delay value after '#', found {self.describe(self.peek())}")

    def cont_assign(self, mod):
        self.take()
        if self.kind() == "(":
            self.refuse(self.peek(), "a drive strength")
            self.skip_item()
            raise _Skipped()
        if self.kind() == "#":
            self.delay()
        while True:
            lhs = self.primary()
            eq = self.expect("=", "'=' in the assignment")
            rhs = self.expr()
            mod.assigns.append(Assign(lhs, rhs, self.at(eq)))
            if self.kind() == ",":
                self.take()
                continue
            self.expect(";", "';' after the assignment")
            return

    def gates(self, mod):
        kw = self.take()
        if self.kind() == "(" and self.kind(1) in _STRENGTHS:
            self.refuse(self.peek(), "a drive strength")
            self.skip_item()
            raise _Skipped()
        if self.kind() == "#":
            self.delay()
        while True:
            name = None
            at = self.at(kw)
            if self.kind() == "id":
                tok = self.take()
                name = tok[1]
                at = self.at(tok)
                if self.kind() == "[":
                    self.refuse(self.peek(), "an array of instances")
                    self.skip_item()
                    raise _Skipped()
            self.expect("(", "'(' and the gate's terminals")
            terms = []
            while True:
                if self.kind() in (",", ")"):
                    self.syntax(self.peek(), "a gate terminal cannot be left empty")
                terms.append(self.expr())
                if self.kind() == ",":
                    self.take()
                    continue
                self.expect(")", "',' or ')' in the terminal list")
                break
            mod.gates.append(Gate(kw[0], name, terms, at))
            if self.kind() == ",":
                self.take()
                continue
            self.expect(";", "';' after the gate")
            return

    def instances(self, mod):
        mtok = self.take()
        params = []
        if self.kind() == "#":
            self.take()
            if self.kind() != "(":
                # '#5' on a module instance is a delay, which modules do not take
                self.syntax(self.peek(), "expected '(' and parameter values after '#'")
            params = self.connections("parameter")
        while True:
            if self.kind() == "(":
                self.syntax(self.peek(), f"instance of '{mtok[1]}' needs a name")
            itok = self.ident(f"an instance name after '{mtok[1]}'")
            if self.kind() == "[":
                self.refuse(self.peek(), "an array of instances")
                self.skip_item()
                raise _Skipped()
            if self.kind() != "(":
                if self.kind() in (";", ",", "=") and mtok[1] in ("logic", "bit", "int", "integer"):
                    self.syntax(mtok, f"unknown declaration type '{mtok[1]}'")
                self.syntax(self.peek(), f"expected '(' and the connections of instance '{itok[1]}', "
                                         f"found {self.describe(self.peek())}")
            conns = self.connections("port")
            named = any(c[0] is not None for c in conns)
            mod.insts.append(Inst(mtok[1], self.at(mtok), itok[1], self.at(itok), params, conns, named))
            if self.kind() == ",":
                self.take()
                continue
            self.expect(";", "';' after the instance")
            return

    def connections(self, what):
        """``( ... )`` of named (``.p(e)``) or positional connections."""
        self.expect("(")
        out = []
        if self.kind() == ")":
            self.take()
            return out
        named = None
        while True:
            tok = self.peek()
            if tok[0] == ".":
                if named is False:
                    self.syntax(tok, f"named and positional {what} connections are mixed")
                named = True
                self.take()
                if self.kind() == "*":
                    self.refuse(self.peek(), "'.*' implicit connections (SystemVerilog)")
                    self.skip_item()
                    raise _Skipped()
                ptok = self.ident(f"a {what} name after '.'")
                if self.kind() != "(":
                    self.refuse(self.peek(), f"the short form '.{ptok[1]}' (SystemVerilog)")
                    self.skip_item()
                    raise _Skipped()
                self.take()
                e = None
                if self.kind() != ")":
                    e = self.expr()
                self.expect(")", f"')' closing the connection of '{ptok[1]}'")
                out.append((ptok[1], e, self.at(ptok)))
            else:
                if named is True:
                    self.syntax(tok, f"named and positional {what} connections are mixed")
                named = False
                if tok[0] in (",", ")"):
                    out.append((None, None, self.at(tok)))
                else:
                    out.append((None, self.expr(), self.at(tok)))
            if self.kind() == ",":
                self.take()
                continue
            self.expect(")", f"',' or ')' in the {what} connections")
            return out

    # -- always -----------------------------------------------------------
    def always(self, mod):
        kw = self.take()
        at = self.at(kw)
        if self.kind() != "@":
            self.refuse(kw, "an 'always' block without an event control '@(...)'")
            self.skip_statement()
            raise _Skipped()
        self.take()
        edge = None
        clock = None
        sens = None
        if self.kind() == "*":
            self.take()
            sens = "*"
        else:
            self.expect("(", "'(' and the events after '@'")
            if self.kind() == "*":
                self.take()
                sens = "*"
                self.expect(")", "')' closing '@(*'")
            else:
                events = []
                while True:
                    tok = self.peek()
                    ev_edge = None
                    if tok[0] in ("posedge", "negedge"):
                        ev_edge = self.take()
                    elif tok[0] == "edge":
                        self.refuse(tok, "'edge' (both edges)")
                        self.skip_statement_after_events()
                        raise _Skipped()
                    e = self.expr()
                    events.append((ev_edge, e))
                    if self.kind() in ("or", ","):
                        self.take()
                        continue
                    break
                self.expect(")", "')' closing the event list")
                edges = [ev for ev in events if ev[0] is not None]
                if edges:
                    if len(events) > 1:
                        second = events[1]
                        tok2 = second[0] if second[0] is not None else None
                        where = tok2 if tok2 is not None else None
                        if where is None:
                            self.error_at(second[1].at, _outside(
                                "an event list mixing edges and levels"))
                        else:
                            self.error(where, _outside(
                                "a second edge in one event list (an asynchronous set or reset)"))
                        self.skip_statement()
                        raise _Skipped()
                    edge = edges[0][0][0]
                    clock = edges[0][1]
                else:
                    sens = [e for _, e in events]
        body = self.statement()
        mod.always.append(Always(at, edge, clock, sens, body))

    def skip_statement_after_events(self):
        depth = 1
        while depth and self.kind() not in ("eof", "endmodule"):
            k = self.take()[0]
            if k == "(":
                depth += 1
            elif k == ")":
                depth -= 1
        self.skip_statement()

    def error_at(self, at, msg):
        self.diags.append(Diagnostic(msg, at[0], at[1], at[2]))

    def statement(self):
        """One statement of the subset; constructs outside it are reported
        and skipped (returning a null statement), syntax errors raise."""
        tok = self.peek()
        k = tok[0]
        if k == "begin":
            self.take()
            if self.kind() == ":":
                self.take()
                self.ident("a block name")
            stmts = []
            self.enter(tok)
            while self.kind() != "end":
                if self.kind() in ("eof", "endmodule"):
                    self.syntax(self.peek(), "'begin' without 'end'")
                if self.kind() in ("reg", "wire", "integer", "parameter", "localparam"):
                    self.refuse(self.peek(), "a declaration inside a block")
                    self.skip_item()
                    continue
                stmts.append(self.statement())
            self.take()
            self.depth -= 1
            return Stmt("block", stmts, at=self.at(tok))
        if k == "if":
            self.take()
            self.expect("(", "'(' after 'if'")
            cond = self.expr()
            self.expect(")", "')' closing the condition")
            self.enter(tok)
            then = self.statement()
            other = None
            if self.kind() == "else":
                self.take()
                other = self.statement()
            self.depth -= 1
            return Stmt("if", cond, then, other, at=self.at(tok))
        if k == ";":
            self.take()
            return Stmt("null", at=self.at(tok))
        refused = {
            "case": "a 'case' statement", "casex": "a 'casex' statement",
            "casez": "a 'casez' statement", "for": "a 'for' loop", "while": "a 'while' loop",
            "repeat": "a 'repeat' loop", "forever": "a 'forever' loop", "fork": "'fork'",
            "wait": "'wait'", "disable": "'disable'", "force": "'force'", "release": "'release'",
            "assign": "a procedural 'assign'", "deassign": "'deassign'",
            "@": "an event control inside an always block", "#": "a delay statement",
            "->": "an event trigger", "unique": "SystemVerilog 'unique'",
            "priority": "SystemVerilog 'priority'",
        }
        if k in refused:
            self.refuse(tok, refused[k])
            self.skip_statement()
            return Stmt("null", at=self.at(tok))
        if k == "sys":
            self.refuse(tok, f"the system task '{tok[1]}'")
            self.skip_statement()
            return Stmt("null", at=self.at(tok))
        if k == "id" and self.kind(1) == "(":
            self.refuse(tok, f"a task call ('{tok[1]}')")
            self.skip_statement()
            return Stmt("null", at=self.at(tok))
        if k in ("id", "{"):
            lhs = self.primary()
            op = self.peek()
            if op[0] not in ("<=", "="):
                self.syntax(op, f"expected '<=' or '=' in the assignment, found {self.describe(op)}")
            self.take()
            if self.kind() == "#":
                self.delay()
            elif self.kind() == "@":
                self.refuse(self.peek(), "an intra-assignment event control")
                self.skip_statement()
                return Stmt("null", at=self.at(tok))
            rhs = self.expr()
            self.expect(";", "';' after the assignment")
            return Stmt("nba" if op[0] == "<=" else "ba", lhs, rhs, at=self.at(op))
        self.syntax(tok, f"expected a statement, found {self.describe(tok)}")

    def enter(self, tok):
        self.depth += 1
        if self.depth > MAX_NESTING:
            self.syntax(tok, f"nested more than {MAX_NESTING} levels deep")

    # -- expressions ------------------------------------------------------
    def expr(self):
        """A full expression (``?:`` included)."""
        cond = self.binary(1)
        if self.kind() != "?":
            return cond
        # a ? b : c ? d : e ... parsed in a loop; nesting only in then-parts
        chain = []
        while self.kind() == "?":
            q = self.take()
            tok = self.peek()
            self.enter(tok)
            then = self.expr()
            self.depth -= 1
            self.expect(":", "':' in '? :'")
            chain.append((cond, then, self.at(q)))
            cond = self.binary(1)
        result = cond
        for c, t, at in reversed(chain):
            result = Expr("?:", [c, t, result], None, at)
        return result

    def binary(self, min_prec):
        left = self.unary()
        # operator stack for precedence climbing without recursion per level
        operands = [left]
        ops = []
        while True:
            tok = self.peek()
            prec = _BINARY.get(tok[0])
            if prec is None or prec < min_prec:
                break
            self.take()
            # every binary operator associates to the left (IEEE 1364-2005 5.1.2)
            while ops and _BINARY[ops[-1][0]] >= prec:
                op = ops.pop()
                r = operands.pop()
                l = operands.pop()
                operands.append(Expr(op[0], [l, r], None, op[1]))
            ops.append(("~^" if tok[0] == "^~" else tok[0], self.at(tok)))
            operands.append(self.unary())
        while ops:
            op = ops.pop()
            r = operands.pop()
            l = operands.pop()
            operands.append(Expr(op[0], [l, r], None, op[1]))
        return operands[0]

    def unary(self):
        prefix = []
        while self.kind() in _UNARY:
            tok = self.take()
            op = "~^" if tok[0] == "^~" else tok[0]
            prefix.append((op, self.at(tok)))
        e = self.primary()
        for op, at in reversed(prefix):
            e = Expr("u" + op, [e], None, at)
        return e

    def primary(self):
        tok = self.peek()
        k = tok[0]
        at = self.at(tok)
        if k == "num":
            self.take()
            return Expr("num", [], tok[1], at)
        if k == "id":
            self.take()
            name = tok[1]
            if self.kind() == ".":
                self.refuse(self.peek(), f"a hierarchical name ('{name}.…')")
                raise _Refused()
            if self.kind() == "(":
                self.refuse(tok, f"a function call ('{name}(…)')")
                raise _Refused()
            if self.kind() == "[":
                e = self.select(name, at)
                if self.kind() == "[":
                    self.refuse(self.peek(), "a second index (arrays)")
                    raise _Refused()
                return e
            return Expr("id", [], name, at)
        if k == "(":
            self.take()
            self.enter(tok)
            e = self.expr()
            self.depth -= 1
            if self.kind() == ":":
                self.refuse(self.peek(), "a min:typ:max expression")
                raise _Refused()
            self.expect(")", "')'")
            return e
        if k == "{":
            self.take()
            self.enter(tok)
            first = self.expr()
            if self.kind() == "{":
                # replication {n{...}}
                inner_tok = self.take()
                parts = [self.expr()]
                while self.kind() == ",":
                    self.take()
                    parts.append(self.expr())
                self.expect("}", "'}' closing the replicated part")
                self.expect("}", "'}' closing the replication")
                self.depth -= 1
                return Expr("repl", [first, Expr("concat", parts, None, self.at(inner_tok))], None, at)
            parts = [first]
            while self.kind() == ",":
                self.take()
                parts.append(self.expr())
            self.expect("}", "',' or '}' in the concatenation")
            self.depth -= 1
            return Expr("concat", parts, None, at)
        if k == "sys":
            self.refuse(tok, f"the system function '{tok[1]}'")
            raise _Refused()
        if k == "str":
            self.refuse(tok, "a string")
            raise _Refused()
        self.syntax(tok, f"expected an expression, found {self.describe(tok)}")

    def select(self, name, at):
        self.take()  # [
        first = self.expr()
        k = self.kind()
        if k == ":":
            self.take()
            second = self.expr()
            self.expect("]", "']'")
            return Expr("part", [first, second], name, at)
        if k in ("+:", "-:"):
            self.take()
            second = self.expr()
            self.expect("]", "']'")
            return Expr("part" + k[0], [first, second], name, at)
        self.expect("]", "']' or ':'")
        return Expr("sel", [first], name, at)


def parse(tokens, diags: list) -> list:
    """Modules of a token list (from :mod:`mapper.read.verilog_lex`).

    Problems go to ``diags`` (a list of :class:`~mapper.errors.Diagnostic`);
    modules that had a syntax error are still returned, as far as they got.
    """
    p = _Parser(tokens, diags)
    return p.parse_file()
