"""Tests of the cell-function parser (mapper/catalog/expr.py).

Outside sources used here, named beside each check:
* pyslang, an independent SystemVerilog front end (from the package
  registry): it evaluates every generated expression, with the pins replaced
  by 1'b0/1'b1, as a constant ``localparam bit``; our truth table must agree
  at every input assignment.  This checks operator meaning, binding
  (IEEE 1364 operator precedence) and lexing (``^~`` against ``^ ~``) at once.
* pyslang also judges the malformed texts: each one it must reject too.
* textbook truth tables of NAND, NOR, XOR, XNOR (common practice).
"""
from __future__ import annotations

import itertools

import pyslang  # the outside front end: a test dependency, never skipped
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from mapper.catalog.expr import ExprError, expr_function, parse_assignment, parse_expression

NAMES = ["A", "B", "C", "E_N"]


def _slang_values(texts: list[str]) -> list[int]:
    """Evaluate constant one-bit expressions with pyslang; one value per text."""
    body = "\n".join(f"  localparam bit P{i} = {t};" for i, t in enumerate(texts))
    tree = pyslang.syntax.SyntaxTree.fromText(f"module m;\n{body}\nendmodule\n")
    comp = pyslang.ast.Compilation()
    comp.addSyntaxTree(tree)
    errors = [d for d in comp.getAllDiagnostics() if d.isError()]
    assert not errors, [str(d.code) for d in errors]
    values = {}
    for sym in comp.getRoot().topInstances[0].body:
        if sym.name.startswith("P"):
            values[int(sym.name[1:])] = str(sym.value)
    out = []
    for i in range(len(texts)):
        v = values[i]
        assert v in ("1'b0", "1'b1"), v
        out.append(int(v[-1]))
    return out


def _slang_rejects(text: str) -> bool:
    tree = pyslang.syntax.SyntaxTree.fromText(f"module m;\n  localparam bit P = {text};\nendmodule\n")
    comp = pyslang.ast.Compilation()
    comp.addSyntaxTree(tree)
    return any(d.isError() for d in comp.getAllDiagnostics())


# -- random expressions, rendered with random (sometimes missing) parentheses and spacing
_BIN = ["&", "|", "^", "~^", "^~", "&&", "||"]


def _exprs():
    leaf = st.one_of(st.sampled_from(NAMES), st.sampled_from(["1'b0", "1'b1"]))

    def extend(children):
        return st.one_of(
            st.tuples(st.sampled_from(["~", "!"]), children),
            st.tuples(st.sampled_from(_BIN), children, children),
            st.tuples(st.just("?"), children, children, children),
        )
    return st.recursive(leaf, extend, max_leaves=10)


def _render(tree, parens, spaces) -> str:
    """Text of a tree; ``parens`` (an iterator of bools) decides where to bracket."""
    def wrap(s):
        return f"({s})" if next(parens) else s
    sp = " " if spaces else ""
    # explicit stack, post-order
    stack = [(tree, False)]
    done: list = []
    while stack:
        node, visited = stack.pop()
        if isinstance(node, str):
            done.append(node)
            continue
        if not visited:
            stack.append((node, True))
            for child in reversed(node[1:]):
                stack.append((child, False))
            continue
        n = len(node) - 1
        args = [done.pop() for _ in range(n)][::-1]
        op = node[0]
        if op in ("~", "!"):
            # IEEE 1364: a unary operator takes a primary, so anything but a name or constant is bracketed
            arg = args[0] if isinstance(node[1], str) or _bracketed(args[0]) else f"({args[0]})"
            done.append(wrap(f"{op}{arg}"))
        elif op == "?":
            # spaced always: in Verilog "1'b0?1" would read '?' as a digit of the number
            done.append(wrap(f"{args[0]} ? {args[1]} : {args[2]}"))
        else:
            done.append(wrap(f"{args[0]}{sp}{op}{sp}{args[1]}"))
    return done[0]


@settings(max_examples=120, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(tree=_exprs(), picks=st.lists(st.integers(0, 3), min_size=64, max_size=64), spaces=st.booleans())
def test_random_expressions_agree_with_pyslang(tree, picks, spaces):
    # source: pyslang's constant evaluation of the very same text.  Brackets are sparse (one node in
    # four) so that most texts lean on operator binding.
    text = _render(tree, iter([p == 0 for p in picks] + [True] * 64), spaces)
    f = expr_function("Y = " + text, NAMES)
    subst_texts, ours = [], []
    for values in itertools.product((0, 1), repeat=len(NAMES)):
        t = text
        # replace longest names first so "E_N" is not hit by a shorter one
        for name in sorted(NAMES, key=len, reverse=True):
            t = _replace_name(t, name, f"1'b{values[NAMES.index(name)]}")
        subst_texts.append(t)
        ours.append(f(*values))
    assert ours == _slang_values(subst_texts), text


def _bracketed(text: str) -> bool:
    """True when the whole text is one parenthesized group."""
    if not text.startswith("("):
        return False
    depth = 0
    for i, ch in enumerate(text):
        depth += ch == "("
        depth -= ch == ")"
        if depth == 0:
            return i == len(text) - 1
    return False


def _replace_name(text, name, by):
    import re
    return re.sub(r"(?<![A-Za-z0-9_'])" + re.escape(name) + r"(?![A-Za-z0-9_])", by, text)


def _agree_with_pyslang(texts, names):
    """Our table of each text against pyslang's value at every assignment of ``names``."""
    subst, ours = [], []
    for text in texts:
        f = expr_function("Y = " + text, names)
        for values in itertools.product((0, 1), repeat=len(names)):
            t = text
            for name in sorted(names, key=len, reverse=True):
                t = _replace_name(t, name, f"1'b{values[names.index(name)]}")
            subst.append(t)
            ours.append((text, values, f(*values)))
    theirs = _slang_values(subst)
    return [(t, v, o, s) for (t, v, o), s in zip(ours, theirs) if o != s]


def test_every_pair_of_operators_binds_as_in_verilog():
    # source: pyslang, on every ordered pair of binary operators and every mix with ?: and unary ops
    # (IEEE 1364 operator precedence decides; we only compare)
    texts = []
    for op1 in _BIN:
        for op2 in _BIN:
            texts.append(f"A {op1} B {op2} C")
        texts += [f"A ? B : C {op1} D", f"A {op1} B ? C : D", f"~A {op1} B", f"!A {op1} ~B",
                  f"A {op1} B ? C : D {op1} A", f"A{op1}~B"]
    texts += ["A ? B : C ? D : A", "A ? B ? C : D : A", "A ? (B ? C : D) : ~A", "~(A ? B : C)"]
    assert _agree_with_pyslang(texts, ["A", "B", "C", "D"]) == []


# -- textbook tables (common practice)
@pytest.mark.parametrize("text,table", [
    ("Y = ~(A & B)", [1, 1, 1, 0]),
    ("Y = ~(A | B)", [1, 0, 0, 0]),
    ("Y = A ^ B", [0, 1, 1, 0]),
    ("Y = A ~^ B", [1, 0, 0, 1]),
    ("Y = A ^~ B", [1, 0, 0, 1]),
    ("Y = !A & !B", [1, 0, 0, 0]),
    ("Y = A ? 1'b1 : B", [0, 1, 1, 1]),
])
def test_textbook_two_input_tables(text, table):
    f = expr_function(text, ["A", "B"])
    # order: (A,B) = 00, 10, 01, 11 (A is input 0)
    assert [f(a, b) for b in (0, 1) for a in (0, 1)] == table


def test_mux_with_enable_matches_the_157_description():
    # generic 74-series datasheets: enable high forces the output low; select picks B when high
    f = expr_function("Y = E_N ? 1'b0 : (S ? B : A)", ["A", "B", "S", "E_N"])
    for a, b, s, e in itertools.product((0, 1), repeat=4):
        assert f(a, b, s, e) == (0 if e else (b if s else a))


def test_deep_nesting_needs_no_recursion():
    depth = 5000
    text = "(" * depth + "A" + ")" * depth
    assert expr_function(text, ["A"])(1) == 1
    text = "~" * depth + "A"
    assert expr_function(text, ["A"])(1) == 1  # an even number of inversions


def test_assignment_parts():
    a = parse_assignment("assign Y = A & B;")
    assert a.output == "Y" and a.expression.names == ("A", "B")


@pytest.mark.parametrize("text,col,words,verilog_too", [
    ("A & (B | C", 11, "expected ')'", True),
    ("A &", 4, "operand was expected", True),
    ("A ? B", 6, "has no ':'", True),
    ("A : B", 3, "without a matching '?'", True),
    ("A B", 3, "expected an operator", True),
    ("A @ B", 3, "unexpected character", True),
    ("(A))", 4, "without a matching '('", True),
    # Verilog allows these two (a wider constant; '&B' as a reduction), a one-bit cell function does not
    ("A & 2'b01", 5, "one-bit constants", False),
    ("A & & B", 5, "expected a name", False),
    ("A & 1", 5, "one-bit constants", False),
    ("1'b0?A:B", 1, "one-bit constants", True),
])
def test_malformed_expressions_have_columns(text, col, words, verilog_too):
    with pytest.raises(ExprError) as err:
        parse_expression(text)
    assert err.value.col == col and words in err.value.message
    subst = text.replace("A", "1'b0").replace("B", "1'b1").replace("C", "1'b0")
    # source: pyslang judges the same text
    assert _slang_rejects(subst) == verilog_too


def test_unknown_pin_and_wrong_output():
    with pytest.raises(ExprError) as err:
        expr_function("Y = A & Z", ["A", "B"])
    assert "unknown pin 'Z'" in err.value.message and err.value.col == 9
    with pytest.raises(ExprError) as err:
        expr_function("Q = A", ["A"], output="Y")
    assert "assigns 'Q'" in err.value.message


def test_reduction_operators_are_refused():
    with pytest.raises(ExprError, match="reduction"):
        parse_expression("A ~& B")
