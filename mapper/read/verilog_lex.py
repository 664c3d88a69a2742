"""Tokens of a Verilog file, with the compiler directives already carried out.

The lexer turns the text of a file into a list of tokens, each a tuple
``(kind, value, line, col, file)``:

* ``kind`` is ``"id"`` for identifiers (simple or escaped; ``value`` is the
  name without the backslash), ``"num"`` for numbers (``value`` is
  ``(int_value, width_or_None)``; ``None`` marks an unsized literal),
  ``"str"`` for string literals, ``"sys"`` for ``$names``, ``"eof"`` at the
  end, and for keywords and operators the text itself (``"module"``, ``";"``,
  ``"~^"``), so the parser compares kinds only.
* ``line`` and ``col`` are 1-based; a column counts characters (a tab is one
  column).  ``file`` is the path as given (an included file has its own).

Compiler directives are evaluated here: `` `timescale ``, `` `resetall ``,
`` `celldefine ``/`` `endcelldefine `` and `` `pragma `` are skipped;
`` `define `` (without arguments) / `` `undef `` / `` `ifdef `` / `` `ifndef `` /
`` `elsif `` / `` `else `` / `` `endif `` are evaluated; a macro use is replaced
by the tokens of its text, placed at the position of the use;
`` `default_nettype wire|none `` is passed on to the parser as a ``"`nettype"``
token; `` `include "file" `` reads the file relative to the including one
(never outside the design's folder unless ``allow_outside``).  Everything
else (macros with arguments, `` `line ``, `` `unconnected_drive `` ...) is an
error.  Attributes ``(* ... *)`` are skipped: they carry no logic.

Numbers: sized and unsized literals in binary, octal, decimal and hex; ``x``,
``z`` and ``?`` digits are an error (a structural netlist has no unknown or
high-impedance values), as are real numbers and signed literals (``'sd``).

The lexer never raises for bad input: it records
:class:`~mapper.errors.Diagnostic` objects in the list it is given and goes on.
"""
from __future__ import annotations

import logging
import re
from pathlib import Path

from ..errors import Diagnostic

__all__ = ["KEYWORDS", "SV_KEYWORDS", "lex_file", "lex_text"]

log = logging.getLogger(__name__)

#: reserved words of IEEE 1364-2005 (Annex B)
KEYWORDS = frozenset("""
always and assign automatic begin buf bufif0 bufif1 case casex casez cell cmos config deassign
default defparam design disable edge else end endcase endconfig endfunction endgenerate endmodule
endprimitive endspecify endtable endtask event for force forever fork function generate genvar
highz0 highz1 if ifnone incdir include initial inout input instance integer join large liblist
library localparam macromodule medium module nand negedge nmos nor noshowcancelled not notif0
notif1 or output parameter pmos posedge primitive pull0 pull1 pulldown pullup pulsestyle_onevent
pulsestyle_ondetect rcmos real realtime reg release repeat rnmos rpmos rtran rtranif0 rtranif1
scalared showcancelled signed small specify specparam strong0 strong1 supply0 supply1 table task
time tran tranif0 tranif1 tri tri0 tri1 triand trior trireg unsigned use uwire vectored wait wand
weak0 weak1 while wire wor xnor xor
""".split())

#: further reserved words of SystemVerilog, reserved only in ``.sv`` files
SV_KEYWORDS = frozenset("""
alias always_comb always_ff always_latch assert assume before bind bins binsof bit break byte
chandle class clocking const constraint context continue cover covergroup coverpoint cross dist do
endclass endclocking endgroup endinterface endpackage endprogram endproperty endsequence enum
expect export extends extern final first_match foreach forkjoin iff ignore_bins illegal_bins import
inside int interface intersect join_any join_none local logic longint matches modport new null
package packed priority program property protected pure rand randc randcase randsequence ref return
sequence shortint shortreal solve static string struct super tagged this throughout timeprecision
timeunit type typedef union unique var virtual void wait_order wildcard with within
""".split())

_OPS = [
    "<<<", ">>>", "===", "!==",
    "~&", "~|", "~^", "^~", "&&", "||", "==", "!=", "<=", ">=", "<<", ">>", "**", "+:", "-:", "->",
    "(", ")", "[", "]", "{", "}", ";", ",", ".", ":", "?", "#", "@", "=",
    "~", "!", "&", "|", "^", "+", "-", "*", "/", "%", "<", ">",
]

# leading blanks are taken with the token that follows them (half the matches)
_TOKEN_RE = re.compile(
    r"[ \t\r\f\v]*(?:"
    r"(?P<nl>\n)"
    r"|(?P<lc>//[^\n]*)"
    r"|(?P<bc>/\*)"
    r"|(?P<attr>\(\*(?!\s*\)))"
    r"|(?P<based>(?:\d[\d_]*[ \t]*)?'[sS]?[bBoOdDhH][ \t]*[0-9a-zA-Z_?]*)"
    r"|(?P<real>\d[\d_]*(?:\.\d[\d_]*(?:[eE][+-]?\d+)?|[eE][+-]?\d+))"
    r"|(?P<dec>\d[\d_]*)"
    r"|(?P<id>[a-zA-Z_][a-zA-Z0-9_$]*)"
    r"|(?P<esc>\\[^\s]+)"
    r"|(?P<sys>\$[a-zA-Z0-9_$]+)"
    r"|(?P<dir>`[a-zA-Z_][a-zA-Z0-9_$]*)"
    r"|(?P<str>\"(?:[^\"\\\n]|\\.)*\")"
    r"|(?P<op>" + "|".join(re.escape(o) for o in _OPS) + r")"
    r"|(?P<bad>.)"
    r"|(?P<end>$))"
)

_BASED_RE = re.compile(r"(?:(\d[\d_]*)[ \t]*)?'([sS]?)([bBoOdDhH])[ \t]*([0-9a-zA-Z_?]*)")
_BASE_BITS = {"b": 1, "o": 3, "h": 4}
_BASE_DIGITS = {"b": "01", "o": "01234567", "d": "0123456789", "h": "0123456789abcdef"}

#: widest literal we accept (a structural netlist never needs more)
MAX_LITERAL_WIDTH = 1 << 16

_SKIPPED_DIRECTIVES = {"timescale", "resetall", "celldefine", "endcelldefine", "pragma"}
_REFUSED_DIRECTIVES = {
    "line": "`line directives are outside the structural subset",
    "unconnected_drive": "`unconnected_drive is outside the structural subset "
                         "(it gives unconnected inputs a pull; connect them instead)",
    "nounconnected_drive": "`nounconnected_drive is outside the structural subset",
    "default_decay_time": "`default_decay_time is outside the structural subset",
    "default_trireg_strength": "`default_trireg_strength is outside the structural subset",
    "delay_mode_distributed": "delay modes are outside the structural subset",
    "delay_mode_path": "delay modes are outside the structural subset",
    "delay_mode_unit": "delay modes are outside the structural subset",
    "delay_mode_zero": "delay modes are outside the structural subset",
    "begin_keywords": "`begin_keywords is outside the structural subset",
    "end_keywords": "`end_keywords is outside the structural subset",
}
_COND_DIRECTIVES = {"ifdef", "ifndef", "elsif", "else", "endif"}

#: include nesting deeper than this is taken for an include loop
MAX_INCLUDE_DEPTH = 16
#: macro expansion nesting deeper than this is taken for a macro loop
MAX_MACRO_DEPTH = 32


class _Source:
    """One text being lexed: the file's name and a position cursor."""

    __slots__ = ("text", "file", "pos", "line", "line_start")

    def __init__(self, text: str, file: str):
        self.text = text
        self.file = file
        self.pos = 0
        self.line = 1
        self.line_start = 0


class _Lexer:
    def __init__(self, diags: list, sv: bool, root_dir: Path | None, allow_outside: bool):
        self.diags = diags
        self.keywords = KEYWORDS | SV_KEYWORDS if sv else KEYWORDS
        self.sv = sv
        self.root_dir = root_dir
        self.allow_outside = allow_outside
        self.macros: dict = {}
        self.tokens: list = []
        # conditional stack: entries [taking_now, some_branch_taken, where, seen_else]
        self.conds: list = []
        self.active = True
        self.include_stack: list = []

    # -- diagnostics ------------------------------------------------------
    def error(self, msg, file, line, col):
        self.diags.append(Diagnostic(msg, file, line, col))

    # -- main loop --------------------------------------------------------
    def run(self, src: _Source, macro_at=None, macro_depth=0):
        """Lex ``src`` into ``self.tokens``.  With ``macro_at`` every token
        is placed at that (line, col, file) position (a macro use)."""
        text = src.text
        toks = self.tokens
        kw = self.keywords
        match = _TOKEN_RE.match
        n = len(text)
        pos = src.pos
        line = src.line
        line_start = src.line_start
        file = src.file
        while pos < n:
            m = match(text, pos)
            kind = m.lastgroup
            end = m.end()
            pos = m.start(kind)
            col = pos - line_start + 1
            if kind == "end":
                pos = end
                break
            if kind == "nl":
                line += 1
                line_start = end
                pos = end
                continue
            if kind == "lc":
                pos = end
                continue
            if kind == "bc":
                close = text.find("*/", end)
                if close < 0:
                    if self.active or macro_at:
                        self._err_at("unterminated /* comment", file, line, col, macro_at)
                    close = n - 2
                seg_end = close + 2
                nls = text.count("\n", pos, seg_end)
                if nls:
                    line += nls
                    line_start = text.rfind("\n", pos, seg_end) + 1
                pos = seg_end
                continue
            if kind == "attr":
                close = text.find("*)", end)
                if close < 0:
                    if self.active:
                        self._err_at("unterminated attribute (* ... *)", file, line, col, macro_at)
                    close = n - 2
                seg_end = close + 2
                nls = text.count("\n", pos, seg_end)
                if nls:
                    line += nls
                    line_start = text.rfind("\n", pos, seg_end) + 1
                pos = seg_end
                continue
            if kind == "dir":
                name = m.group(kind)[1:]
                src.pos, src.line, src.line_start = end, line, line_start
                self._directive(name, src, line, col, macro_at, macro_depth)
                pos, line, line_start = src.pos, src.line, src.line_start
                continue
            pos = end
            if not self.active:
                continue
            if macro_at is not None:
                tl, tc, tf = macro_at
            else:
                tl, tc, tf = line, col, file
            if kind == "id":
                word = m.group(kind)
                toks.append((word if word in kw else "id", word, tl, tc, tf))
            elif kind == "op":
                op = m.group(kind)
                toks.append((op, op, tl, tc, tf))
            elif kind == "dec":
                digits = m.group(kind).replace("_", "")
                toks.append(("num", (int(digits), None), tl, tc, tf))
            elif kind == "based":
                val = self._based(m.group(kind), tf, tl, tc)
                toks.append(("num", val, tl, tc, tf))
            elif kind == "esc":
                toks.append(("id", m.group(kind)[1:], tl, tc, tf))
            elif kind == "sys":
                toks.append(("sys", m.group(kind), tl, tc, tf))
            elif kind == "str":
                toks.append(("str", m.group(kind)[1:-1], tl, tc, tf))
            elif kind == "real":
                self.error(f"real number '{m.group(kind)}' is outside the structural subset", tf, tl, tc)
                toks.append(("num", (0, None), tl, tc, tf))
            else:  # bad
                ch = m.group(kind)
                if ch == '"':
                    self.error("unterminated string", tf, tl, tc)
                    nl = text.find("\n", pos)
                    pos = n if nl < 0 else nl
                elif ch == "'":
                    self.error("a quote must be followed by a base letter b, o, d or h", tf, tl, tc)
                else:
                    self.error(f"unexpected character {ch!r}", tf, tl, tc)
        src.pos, src.line, src.line_start = pos, line, line_start

    def _err_at(self, msg, file, line, col, macro_at):
        if macro_at is not None:
            line, col, file = macro_at
        self.error(msg, file, line, col)

    # -- literals ---------------------------------------------------------
    def _based(self, text, file, line, col):
        m = _BASED_RE.match(text)
        size_s, signed, base, digits = m.groups()
        base = base.lower()
        width = None
        if size_s is not None:
            width = int(size_s.replace("_", ""))
            if width == 0:
                self.error("a literal cannot be 0 bits wide", file, line, col)
                width = 1
            elif width > MAX_LITERAL_WIDTH:
                self.error(f"a literal of {width} bits is too wide (at most {MAX_LITERAL_WIDTH})",
                           file, line, col)
                width = MAX_LITERAL_WIDTH
        if signed:
            self.error(f"signed literal '{text}' is outside the structural subset "
                       "(netfit reads unsigned values only)", file, line, col)
        digits = digits.replace("_", "").lower()
        if not digits:
            self.error(f"literal '{text}' has no digits", file, line, col)
            return (0, width)
        bad = [c for c in digits if c in "xz?"]
        if bad:
            self.error(f"'{bad[0]}' digit in '{text}': unknown (x) and high-impedance (z) values are "
                       "outside the structural subset", file, line, col)
            return (0, width)
        allowed = _BASE_DIGITS[base]
        for c in digits:
            if c not in allowed:
                name = {"b": "binary", "o": "octal", "d": "decimal", "h": "hex"}[base]
                self.error(f"digit '{c}' is not valid in a {name} literal '{text}'", file, line, col)
                return (0, width)
        value = int(digits, {"b": 2, "o": 8, "d": 10, "h": 16}[base])
        if width is not None and value >> width:
            self.diags.append(Diagnostic(
                f"literal '{text}' does not fit in {width} bits; its upper bits are dropped",
                file, line, col, severity="warning"))
            value &= (1 << width) - 1
        return (value, width)

    # -- directives -------------------------------------------------------
    def _rest_of_line(self, src: _Source) -> str:
        """The text up to the end of the line (with backslash continuations),
        consumed; the newline itself is left for the main loop."""
        text = src.text
        parts = []
        pos = src.pos
        while True:
            nl = text.find("\n", pos)
            if nl < 0:
                nl = len(text)
            seg = text[pos:nl]
            if seg.endswith("\\") and nl < len(text):
                parts.append(seg[:-1])
                src.line += 1
                src.line_start = nl + 1
                pos = nl + 1
                continue
            parts.append(seg)
            pos = nl
            break
        src.pos = pos
        body = "\n".join(parts)
        # a // comment ends a macro text; a /* */ comment inside it is dropped
        body = re.sub(r"/\*.*?\*/", " ", body)
        cut = body.find("//")
        if cut >= 0:
            body = body[:cut]
        return body.strip()

    def _word(self, src: _Source):
        """Skip blanks on this line and take one identifier; None if there is none."""
        m = re.compile(r"[ \t]*([a-zA-Z_][a-zA-Z0-9_$]*)").match(src.text, src.pos)
        if not m:
            return None, src.pos - src.line_start + 1
        col = m.start(1) - src.line_start + 1
        src.pos = m.end()
        return m.group(1), col

    def _directive(self, name, src: _Source, line, col, macro_at, macro_depth):
        file = src.file
        where = macro_at if macro_at is not None else (line, col, file)

        def err(msg):
            self.error(msg, where[2], where[0], where[1])

        if name in _COND_DIRECTIVES:
            if name in ("ifdef", "ifndef", "elsif"):
                word, wcol = self._word(src)
                if word is None:
                    err(f"`{name} needs a macro name")
                    word = ""
            if name in ("ifdef", "ifndef"):
                defined = word in self.macros
                take = defined if name == "ifdef" else not defined
                outer = self.active
                self.conds.append([outer and take, take, where, False, outer])
                self.active = outer and take
            elif name == "elsif":
                if not self.conds:
                    err("`elsif without `ifdef")
                    return
                c = self.conds[-1]
                if c[3]:
                    err("`elsif after `else")
                take = (not c[1]) and word in self.macros
                c[0] = c[4] and take
                c[1] = c[1] or take
                self.active = c[0]
            elif name == "else":
                if not self.conds:
                    err("`else without `ifdef")
                    return
                c = self.conds[-1]
                if c[3]:
                    err("second `else for one `ifdef")
                c[3] = True
                take = not c[1]
                c[0] = c[4] and take
                c[1] = True
                self.active = c[0]
            else:  # endif
                if not self.conds:
                    err("`endif without `ifdef")
                    return
                c = self.conds.pop()
                self.active = c[4]
            return
        if not self.active:
            return
        if name in _SKIPPED_DIRECTIVES:
            self._rest_of_line(src)
            return
        if name in _REFUSED_DIRECTIVES:
            self._rest_of_line(src)
            err(_REFUSED_DIRECTIVES[name])
            return
        if name == "define":
            word, wcol = self._word(src)
            if word is None:
                self._rest_of_line(src)
                err("`define needs a macro name")
                return
            if src.pos < len(src.text) and src.text[src.pos] == "(":
                self._rest_of_line(src)
                if macro_at is None:
                    where = (line, wcol, file)
                err(f"macro '{word}' takes arguments: macros with arguments are outside the structural subset")
                return
            body = self._rest_of_line(src)
            self.macros[word] = body
            return
        if name == "undef":
            word, wcol = self._word(src)
            if word is None:
                err("`undef needs a macro name")
            else:
                self.macros.pop(word, None)
            return
        if name == "default_nettype":
            word, wcol = self._word(src)
            if word in ("wire", "none"):
                tl, tc, tf = where
                self.tokens.append(("`nettype", word, tl, tc, tf))
            else:
                err(f"`default_nettype {word or ''} is outside the structural subset (use wire or none)")
            return
        if name == "include":
            self._include(src, where)
            return
        if name in self.macros:
            if macro_depth >= MAX_MACRO_DEPTH:
                err(f"macro '{name}' expands into itself")
                return
            body = self.macros[name]
            if body:
                self.run(_Source(body, file), macro_at=where, macro_depth=macro_depth + 1)
            return
        err(f"unknown directive or undefined macro `{name}")

    def _include(self, src: _Source, where):
        m = re.compile(r'[ \t]*"([^"\n]*)"').match(src.text, src.pos)
        tl, tc, tf = where
        if not m:
            self._rest_of_line(src)
            self.error('`include needs a file name in double quotes', tf, tl, tc)
            return
        src.pos = m.end()
        self._rest_of_line(src)
        name = m.group(1)
        base = Path(src.file).parent
        path = (base / name).resolve()
        if self.root_dir is not None and not self.allow_outside:
            try:
                path.relative_to(self.root_dir)
            except ValueError:
                self.error(f"`include \"{name}\" is outside the design's folder "
                           "(allow it with --allow-outside)", tf, tl, tc)
                return
        if len(self.include_stack) >= MAX_INCLUDE_DEPTH or str(path) in self.include_stack:
            self.error(f"`include \"{name}\" includes itself", tf, tl, tc)
            return
        try:
            text = path.read_text(encoding="utf-8", errors="replace")
        except OSError as exc:
            self.error(f"cannot read `include \"{name}\": {exc.strerror or exc}", tf, tl, tc)
            return
        shown = str(base / name) if not Path(name).is_absolute() else name
        self.include_stack.append(str(path))
        depth = len(self.conds)
        self.run(_Source(text, shown))
        self._close_conds(depth, shown)
        self.include_stack.pop()

    def _close_conds(self, depth, file):
        while len(self.conds) > depth:
            c = self.conds.pop()
            tl, tc, tf = c[2]
            self.error("`ifdef without `endif", tf, tl, tc)
            self.active = c[4]


def lex_text(text: str, file: str, diags: list, sv: bool = False, root_dir=None,
             allow_outside: bool = False) -> list:
    """Tokens of ``text`` (see the module docstring); problems go to ``diags``.

    The list ends with an ``"eof"`` token placed after the last character.
    """
    lx = _Lexer(diags, sv, Path(root_dir).resolve() if root_dir is not None else None, allow_outside)
    src = _Source(text, file)
    lx.include_stack.append(str(Path(file).resolve()))
    lx.run(src)
    lx._close_conds(0, file)
    lx.tokens.append(("eof", None, src.line, src.pos - src.line_start + 1, file))
    return lx.tokens


def lex_file(path, diags: list, allow_outside: bool = False) -> list:
    """Tokens of the file at ``path``; ``.sv`` files also reserve SystemVerilog words."""
    p = Path(path)
    text = p.read_text(encoding="utf-8", errors="replace")
    return lex_text(text, str(path), diags, sv=p.suffix.lower() == ".sv", root_dir=p.parent,
                    allow_outside=allow_outside)
