"""Cell functions written in Verilog expression syntax, turned into truth tables.

A catalog states what a cell does as a continuous-assignment style line over
the cell's named pins, for example ``Y = ~(A & B)`` or
``Y = E_N ? 1'b0 : (S ? B : A)``.  This module reads such text and gives the
:class:`~mapper.logic.function.Function` of the right-hand side over an
ordered list of input names.

Accepted (a small subset of the Verilog expression grammar, IEEE 1364):

* names: letters, digits, ``_`` and ``$``, not starting with a digit or ``$``;
* constants ``1'b0`` and ``1'b1`` (also ``1'B0``, ``1'B1``); a bare ``0`` or ``1`` is
  refused, since Verilog makes it 32 bits wide and ``~``, ``!`` and ``&&`` then act differently;
* unary ``~`` and ``!`` (the same on one-bit values);
* binary ``&``, ``^``, ``~^``, ``^~`` (XNOR), ``|``, and also ``&&``, ``||``;
* the conditional ``c ? a : b`` and parentheses.

Binding, tightest first, as in Verilog: unary, ``&``, ``^ ~^ ^~``, ``|``,
``&&``, ``||``, ``?:`` (the conditional groups to the right).  Parsing and
evaluation use explicit stacks, so nesting depth is limited by nothing but
memory.

Examples
--------
>>> f = expr_function("Y = ~(A & B)", ["A", "B"])
>>> [f(a, b) for b in (0, 1) for a in (0, 1)]
[1, 1, 1, 0]
>>> mux = expr_function("S ? B : A", ["A", "B", "S"])
>>> mux(0, 1, 1), mux(0, 1, 0)
(1, 0)
>>> parse_assignment("Y = A ^~ B").output
'Y'
>>> try:
...     parse_expression("A & (B | C")
... except ExprError as e:
...     print(e.col, e.message)
11 expected ')' to close '(' at column 5
"""
from __future__ import annotations

import logging
import re
from collections.abc import Sequence
from dataclasses import dataclass

from ..logic.function import MAX_TABLE_INPUTS, Function, var_mask

__all__ = [
    "ExprError",
    "Expression",
    "Assignment",
    "parse_expression",
    "parse_assignment",
    "expr_function",
]

log = logging.getLogger(__name__)


class ExprError(ValueError):
    """A malformed expression; ``col`` is the 1-based column within the text."""

    def __init__(self, message: str, col: int):
        self.message = message
        self.col = col
        super().__init__(f"column {col}: {message}")


# binary operators: token -> (precedence, name); higher binds tighter
_BINARY = {
    "&": (6, "and"),
    "^": (5, "xor"),
    "~^": (5, "xnor"),
    "^~": (5, "xnor"),
    "|": (4, "or"),
    "&&": (3, "and"),
    "||": (2, "or"),
}
_TERNARY_PREC = 1
_UNARY_PREC = 10

_TOKEN = re.compile(
    r"\s*(?:"
    r"(?P<num>(?:[0-9][0-9_]*)?'[sS]?[bBoOdDhH][0-9a-zA-Z_?]*|[0-9][0-9_]*)"
    r"|(?P<name>[A-Za-z_][A-Za-z0-9_$]*)"
    r"|(?P<op>~\^|\^~|&&|\|\||~&|~\||[~!&|^?:()=])"
    r")"
)


@dataclass(frozen=True)
class _Tok:
    kind: str  # "const", "name", "op", "end"
    text: str
    col: int  # 1-based


def _tokens(text: str) -> list[_Tok]:
    out: list[_Tok] = []
    pos = 0
    n = len(text)
    while True:
        while pos < n and text[pos].isspace():
            pos += 1
        if pos >= n:
            out.append(_Tok("end", "", n + 1))
            return out
        m = _TOKEN.match(text, pos)
        if not m or m.end() == pos:
            raise ExprError(f"unexpected character {text[pos]!r}", pos + 1)
        kind = m.lastgroup or ""
        tok = m.group(kind)
        col = m.start(kind) + 1
        if kind == "num":
            # Verilog reads letters, digits and '?' after 1'b as part of the number ("1'b0?A" is one
            # token); a bare 0 or 1 is 32 bits wide, which changes what ~, && and ! do around it.
            if tok.lower() not in ("1'b0", "1'b1"):
                raise ExprError(f"only the one-bit constants 1'b0 and 1'b1 are allowed, not {tok!r}", col)
            kind = "const"
        if kind == "op" and tok in ("~&", "~|"):
            raise ExprError(f"reduction operator {tok!r} is not allowed in a cell function "
                            f"(write ~(A & B) instead)", col)
        out.append(_Tok(kind, tok, col))
        pos = m.end()


@dataclass(frozen=True)
class Expression:
    """A parsed expression in postfix form.

    ``postfix`` holds items ``("name", text)``, ``("const", 0|1)``,
    ``("not",)``, ``(op,)`` for binary ``and``/``or``/``xor``/``xnor`` and
    ``("mux",)`` for the conditional (operands: condition, then, else).
    """

    text: str
    postfix: tuple
    names: tuple  # names used, in order of first appearance

    def table(self, inputs: Sequence[str]) -> int:
        """Truth table over ``inputs`` (input 0 least significant)."""
        n = len(inputs)
        if n > MAX_TABLE_INPUTS:
            raise ValueError(f"a cell of {n} inputs is too wide for a truth table")
        full = (1 << (1 << n)) - 1
        return self.evaluate({name: var_mask(n, j) for j, name in enumerate(inputs)}, full)

    def evaluate(self, values: dict, mask: int) -> int:
        """Bit-parallel value: ``values[name]`` holds many values of each name, one per bit of ``mask``."""
        stack: list[int] = []
        for item in self.postfix:
            op = item[0]
            if op == "name":
                stack.append(values[item[1]])
            elif op == "const":
                stack.append(mask if item[1] else 0)
            elif op == "not":
                stack.append(~stack.pop() & mask)
            elif op == "mux":
                e, t, c = stack.pop(), stack.pop(), stack.pop()
                stack.append((c & t) | (~c & e & mask))
            else:
                b, a = stack.pop(), stack.pop()
                if op == "and":
                    stack.append(a & b)
                elif op == "or":
                    stack.append(a | b)
                elif op == "xor":
                    stack.append(a ^ b)
                else:  # xnor
                    stack.append(~(a ^ b) & mask)
        assert len(stack) == 1, "postfix form is balanced by construction"
        return stack[0]


@dataclass(frozen=True)
class Assignment:
    """``output = expression``."""

    output: str
    expression: Expression
    output_col: int


def _parse(toks: list[_Tok], start: int, text: str, stop: tuple = ("end",)) -> tuple[Expression, int]:
    """Shunting-yard over ``toks[start:]``; returns the expression and the index of the end token."""
    out: list[tuple] = []
    names: list[str] = []
    # operator stack entries: (kind, precedence, name, col); kind in "unary", "binary", "(", "?", "?:"
    ops: list[tuple] = []
    expect_operand = True
    i = start

    def reduce_while(prec: int, right_assoc_prec: int | None = None):
        # pop operators binding at least as tight as `prec` (strictly tighter for right-assoc)
        while ops:
            kind, p, name, col = ops[-1]
            if kind in ("(", "?"):
                return
            if p > prec or (p == prec and right_assoc_prec is None):
                ops.pop()
                out.append((name,))
            else:
                return

    while True:
        t = toks[i]
        if expect_operand:
            if t.kind == "name":
                out.append(("name", t.text))
                if t.text not in names:
                    names.append(t.text)
                expect_operand = False
            elif t.kind == "const":
                out.append(("const", int(t.text[-1])))
                expect_operand = False
            elif t.kind == "op" and t.text in ("~", "!"):
                ops.append(("unary", _UNARY_PREC, "not", t.col))
            elif t.kind == "op" and t.text == "(":
                ops.append(("(", 0, "(", t.col))
            elif t.kind == "end":
                raise ExprError("expression ends where an operand was expected", t.col)
            else:
                raise ExprError(f"expected a name, a constant, '~', '!' or '(' but found {t.text!r}", t.col)
            i += 1
            continue
        # expecting an operator (or the end)
        if t.kind == "op" and t.text in _BINARY:
            prec, name = _BINARY[t.text]
            reduce_while(prec)
            ops.append(("binary", prec, name, t.col))
            expect_operand = True
        elif t.kind == "op" and t.text == "?":
            reduce_while(_TERNARY_PREC, right_assoc_prec=_TERNARY_PREC)
            ops.append(("?", _TERNARY_PREC, "?", t.col))
            expect_operand = True
        elif t.kind == "op" and t.text == ":":
            # close the innermost '?' that has no ':' yet
            while ops and ops[-1][0] not in ("?", "("):
                out.append((ops.pop()[2],))
            if not ops or ops[-1][0] != "?":
                raise ExprError("':' without a matching '?'", t.col)
            q = ops.pop()
            ops.append(("?:", _TERNARY_PREC, "mux", q[3]))
            expect_operand = True
        elif t.kind == "op" and t.text == ")":
            while ops and ops[-1][0] not in ("(", "?"):
                out.append((ops.pop()[2],))
            if not ops:
                raise ExprError("')' without a matching '('", t.col)
            if ops[-1][0] == "?":
                raise ExprError(f"'?' at column {ops[-1][3]} has no ':'", t.col)
            ops.pop()
        elif t.kind == "end" or (t.kind == "op" and t.text in stop):
            while ops:
                kind, _, name, col = ops.pop()
                if kind == "(":
                    raise ExprError(f"expected ')' to close '(' at column {col}", t.col)
                if kind == "?":
                    raise ExprError(f"'?' at column {col} has no ':'", t.col)
                out.append((name,))
            if t.kind != "end":
                raise ExprError(f"unexpected {t.text!r}", t.col)
            return Expression(text, tuple(out), tuple(names)), i
        else:
            what = t.text if t.kind != "end" else "end"
            raise ExprError(f"expected an operator or the end but found {what!r}", t.col)
        i += 1


def parse_expression(text: str) -> Expression:
    """Parse a right-hand side; :class:`ExprError` with a column on any fault."""
    toks = _tokens(text)
    for t in toks:
        if t.kind == "op" and t.text == "=":
            raise ExprError("'=' inside an expression", t.col)
    expr, _ = _parse(toks, 0, text)
    return expr


def parse_assignment(text: str) -> Assignment:
    """Parse ``OUT = expression`` (the ``assign`` keyword and a final ``;`` may be given)."""
    body = text.rstrip()
    if body.endswith(";"):
        body = body[:-1]
    toks = _tokens(body)
    i = 0
    if toks[0].kind == "name" and toks[0].text == "assign":
        i = 1
    if toks[i].kind != "name":
        raise ExprError("expected the output pin name before '='", toks[i].col)
    if not (toks[i + 1].kind == "op" and toks[i + 1].text == "="):
        raise ExprError(f"expected '=' after output {toks[i].text!r}", toks[i + 1].col)
    for t in toks[i + 2:]:
        if t.kind == "op" and t.text == "=":
            raise ExprError("a second '='", t.col)
    expr, _ = _parse(toks, i + 2, body)
    return Assignment(toks[i].text, expr, toks[i].col)


def expr_function(text: str, inputs: Sequence[str], output: str | None = None) -> Function:
    """The :class:`Function` of ``text`` over the ordered ``inputs``.

    ``text`` is either an assignment ``Y = ...`` or a bare expression.  When
    ``output`` is given the assignment must name it.  Every name in the
    expression must be one of ``inputs`` (inputs the expression does not use
    are allowed here; the catalog loader reports them).
    """
    if _looks_like_assignment(text):
        a = parse_assignment(text)
        if output is not None and a.output != output:
            raise ExprError(f"assigns {a.output!r} but the cell's output is {output!r}", a.output_col)
        expr = a.expression
    else:
        expr = parse_expression(text)
    known = set(inputs)
    for name in expr.names:
        if name not in known:
            col = _col_of_name(text, name)
            raise ExprError(f"unknown pin {name!r} (inputs: {', '.join(inputs)})", col)
    return Function.from_table(len(inputs), expr.table(list(inputs)))


def _looks_like_assignment(text: str) -> bool:
    t = text.replace("==", "").replace("!=", "")
    return "=" in t


def _col_of_name(text: str, name: str) -> int:
    m = re.search(r"(?<![A-Za-z0-9_$])" + re.escape(name) + r"(?![A-Za-z0-9_$])", text)
    return m.start() + 1 if m else 1
