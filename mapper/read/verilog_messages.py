"""pyslang's diagnostics in netfit's own words.

pyslang reports what is wrong with the text (syntax, undeclared names,
unknown modules ...) as a code, a location and a few arguments.  This
module gives each error a message of ours and the position the user
needs: a missing token is reported at the token found in its place, an
unterminated comment where it starts, a real number where it stands.
Codes without a message of their own get a general one that names the
code.  Warnings are left out, except the few that netfit treats as errors.
"""
from __future__ import annotations

import re

from .verilog_source import MAX_INCLUDE_DEPTH

__all__ = ["code_name", "translate"]

#: pyslang warnings that are errors for netfit
_WARNINGS_AS_ERRORS = {"ParameterDoesNotExist", "RangeSelectReversed"}

_NEXT = re.compile(rb"(?:\s+|//[^\n]*|/\*.*?\*/)*(\w+|`\w+|\S)", re.DOTALL)
_WORD = re.compile(rb"[`\\]?[\w$.]+")


def code_name(d) -> str:
    s = str(d.code)
    return s[9:-1] if s.startswith("DiagCode(") else s


def translate(d, rep, ctx):
    """``(at, message)`` for a pyslang diagnostic, or ``None`` to leave it out.

    ``rep`` is the :class:`~.verilog_source.Report` (positions and text);
    ``ctx`` answers design questions (``nettype_none(at)``, ``first_line(name)``).
    """
    name = code_name(d)
    if not d.isError() and name not in _WARNINGS_AS_ERRORS:
        return None
    args = [str(a) for a in d.args]
    handler = _HANDLERS.get(name)
    if handler is not None:
        out = handler(d, args, rep, ctx)
        if out is not None:
            return out
    if name.startswith("Expected"):
        return _expected(d, rep, f"this text cannot be read here ({name})")
    return d.location, f"this is not valid Verilog ({name})"


# -- helpers ------------------------------------------------------------------------
def _next_token(rep, loc):
    """(position, text) of the first token at or after ``loc``."""
    f, off = rep.file_of(loc)
    if f is None:
        return loc, ""
    m = _NEXT.match(f.data, off)
    if m is None:
        line, col = f.line_col(len(f.data))
        return (f.display, line, col), "the end of the file"
    line, col = f.line_col(m.start(1))
    return (f.display, line, col), f"'{m.group(1).decode('utf-8', errors='replace')}'"


def _word_at(rep, loc) -> str:
    f, off = rep.file_of(loc)
    if f is None:
        return ""
    m = _WORD.match(f.data, off)
    return m.group(0).decode("utf-8", errors="replace") if m else ""


def _expected(d, rep, what):
    at, found = _next_token(rep, d.location)
    return at, f"{what}, found {found}" if found else what


# -- one handler per code -------------------------------------------------------------
def _expected_token(d, args, rep, ctx):
    return _expected(d, rep, f"expected '{args[0]}'" if args else "expected something else")


def _expected_kind(what):
    return lambda d, args, rep, ctx: _expected(d, rep, f"expected {what}")


def _undeclared(d, args, rep, ctx):
    note = " (`default_nettype none)" if ctx.nettype_none(d.location) else ""
    return d.location, f"'{args[0]}' is not declared{note}"


def _unterminated_comment(d, args, rep, ctx):
    f, _ = rep.file_of(d.location)
    if f is not None:
        # the first /* that no */ closes (comments, strings and closed comments skipped)
        for m in _COMMENTS.finditer(f.data):
            if m.group(1):
                line, col = f.line_col(m.start())
                return (f.display, line, col), "unterminated /* comment"
    return d.location, "unterminated /* comment"


_COMMENTS = re.compile(rb'//[^\n]*|"(?:\\.|[^"\\\n])*"|/\*.*?\*/|(/\*)', re.DOTALL)


def _reversed_select(d, args, rep, ctx):
    # a warning for pyslang, which drops the expression: an error for netfit
    f, off = rep.file_of(d.location)
    start = d.location
    name = "?"
    if f is not None:
        head = f.data[max(0, off - 400):off]
        m = re.search(rb"(\\\S+\s|[A-Za-z_][\w$]*)\s*\[\s*$", head)
        if m:
            name = m.group(1).decode("utf-8", errors="replace").strip().lstrip("\\")
            line, col = f.line_col(off - (len(head) - m.start(1)))
            start = (f.display, line, col)
    rng = args[2].split("[", 1)[-1] if "[" in args[2] else ""
    return start, f"part-select [{args[0]}:{args[1]}] runs the other way from '{name}[{rng}'"


def _directive_without(what):
    def handler(d, args, rep, ctx):
        return d.location, f"{_word_at(rep, d.location)} without {what}"
    return handler


def _assign_to_net(d, args, rep, ctx):
    target = rep.text(d.ranges[0]) if d.ranges else ""
    target = target.strip() or _word_at(rep, d.location)
    base = re.match(r"\\?[\w$.]+", target)
    net = base.group(0) if base else target
    return d.location, f"'{net}' is a wire: an always block can only assign a reg"


def _bad_binary(d, args, rep, ctx):
    if "real" in args and len(d.ranges) >= 3:
        rng = d.ranges[2] if args[1] == "real" else d.ranges[1]
        return rng.start, f"real number '{rep.text(rng)}' is outside the structural subset"
    return d.location, "this operator cannot take these operands"


def _local_param(d, args, rep, ctx):
    f, off = rep.file_of(d.location)
    pname = _word_at(rep, d.location).lstrip(".")
    if not pname and f is not None:
        m = re.compile(rb"\.\s*(\w+)").match(f.data, off)
        pname = m.group(1).decode() if m else "?"
    module = ""
    if f is not None:
        head = f.data[max(0, off - 2000):off]
        found = re.findall(rb"([A-Za-z_][\w$]*)\s*#\s*\(", head)
        module = found[-1].decode() if found else ""
    of = f" of '{module}'" if module else ""
    return d.location, f"'{pname}' is a localparam{of} and cannot be set"


def _duplicate_definition(d, args, rep, ctx):
    name = args[-1] if args else _word_at(rep, d.location)
    first = ctx.first_line(name)
    return d.location, f"module '{name}' is declared twice" + (f" (first at line {first})" if first else "")


_HANDLERS = {
    "ExpectedToken": _expected_token,
    "ExpectedIdentifier": _expected_kind("a name"),
    "ExpectedExpression": _expected_kind("an expression"),
    "ExpectedStatement": _expected_kind("a statement"),
    "ExpectedMember": _expected_kind("a declaration, an assignment or an instance"),
    "ExpectedDeclarator": _expected_kind("a name to declare"),
    "ExpectedPortConnection": _expected_kind("a port connection"),
    "ExpectedIncludeFileName": lambda d, a, r, c: (d.location, "`include needs a file name in double quotes"),
    "UndeclaredIdentifier": _undeclared,
    "UnknownModule": lambda d, a, r, c: (d.location, f"unknown module '{a[0]}'"),
    "UnknownPrimitive": lambda d, a, r, c: (d.location, f"unknown module '{a[0]}'"),
    "UnterminatedBlockComment": _unterminated_comment,
    "UnknownDirective": lambda d, a, r, c: (d.location, f"unknown directive or undefined macro {a[0]}"),
    "UnexpectedConditionalDirective": _directive_without("`ifdef"),
    "MissingEndIfDirective": _directive_without("`endif"),
    "CouldNotOpenIncludeFile": lambda d, a, r, c: (d.location, f"cannot find the included file '{a[0]}'"),
    "ExceededMaxIncludeDepth": lambda d, a, r, c: (
        d.location, f"`include nests files more than {MAX_INCLUDE_DEPTH} deep (does a file include itself?)"),
    "RecursiveMacro": lambda d, a, r, c: (d.location, f"macro '{a[0] if a else '?'}' expands into itself"),
    "MixingOrderedAndNamedPorts": lambda d, a, r, c: (d.location, "named and positional port connections are mixed"),
    "PortDoesNotExist": lambda d, a, r, c: (d.location, f"module '{a[1]}' has no port '{a[0]}'"),
    "DuplicatePortConnection": lambda d, a, r, c: (d.location, f"port '{a[0]}' is connected twice"),
    "TooManyPortConnections": lambda d, a, r, c: (
        d.location, f"module '{a[0]}' has {a[2]} port(s); this instance connects {a[1]}"),
    "MissingPortIODeclaration": lambda d, a, r, c: (d.location, f"port '{a[0]}' has no input or output declaration"),
    "AssignedToLocalPortParam": _local_param,
    "AssignedToLocalBodyParam": _local_param,
    "ParameterDoesNotExist": lambda d, a, r, c: (d.location, f"module '{a[1]}' has no parameter '{a[0]}'"),
    "TooManyParamAssignments": lambda d, a, r, c: (
        d.location, f"module '{a[0]}' has only {a[2]} parameter(s) to set; this instance sets {a[1]}"),
    "AssignToNet": _assign_to_net,
    "RangeSelectReversed": _reversed_select,
    "ReplicationZeroOutsideConcat": lambda d, a, r, c: (d.location,
                                                        "replication count must be at least 1, not 0"),
    "BadBinaryExpression": _bad_binary,
    "DuplicateDefinition": _duplicate_definition,
    "Redefinition": lambda d, a, r, c: (d.location, f"'{a[0]}' is declared twice"),
    "NotAConstant": lambda d, a, r, c: (d.location, "a constant is needed here"),
    "ConstEvalNonConstVariable": lambda d, a, r, c: (d.location, "a constant is needed here"),
    "ConstEvalFunctionIdentifiersMustBeLocal": lambda d, a, r, c: (d.location, "a constant is needed here"),
    "ConstEvalHierarchicalName": lambda d, a, r, c: (d.location, "a constant is needed here"),
    "ExpressionNotConstant": lambda d, a, r, c: (d.location, "a constant is needed here"),
    "ValueMustNotBeUnknown": lambda d, a, r, c: (d.location, "this value may not contain x or z digits"),
    "UnknownSystemName": lambda d, a, r, c: (d.location, f"unknown system task or function '{a[0]}'"),
}
