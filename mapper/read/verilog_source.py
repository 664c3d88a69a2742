"""The files of a Verilog design, pyslang's run over them, and positions.

* :func:`load` reads the design file and every file it may `` `include ``
  (found by a scan of the text for `` `include "…" ``), each checked
  before anything reads it: inside the design's folder unless
  ``allow_outside``, a regular file (never a device such as ``/dev/zero``).
  pyslang is then given those texts only: its source manager finds every
  include among them and never opens a file itself.
* :func:`compile_design` runs pyslang's preprocessor, parser and
  elaboration in a thread of its own with a large stack (its C++ recursion
  follows the nesting of the text, which the parser limits to
  :data:`MAX_NESTING` levels).
* :class:`Report` turns pyslang locations into ``(file, line, col)``:
  1-based, a column counting characters (pyslang counts bytes), a macro's
  text placed where the macro is used; it collects our diagnostics.

The wording of every message is netfit's own (see :mod:`.verilog_messages`).
"""
from __future__ import annotations

import bisect
import os
import re
import stat
import threading
from pathlib import Path
from typing import Any, NoReturn

import pyslang

from ..errors import Diagnostic
from .verilog_bits import Fail

__all__ = ["MAX_NESTING", "Report", "SourceFile", "Sources", "compile_design", "load", "load_text"]

#: nesting of the text (parentheses, ?: chains, statements) pyslang's parser accepts
MAX_NESTING = 4096
#: files included inside included files, at most
MAX_INCLUDE_DEPTH = 16
#: stack of the thread that runs pyslang (its recursion follows the text's nesting)
_STACK_BYTES = 256 << 20

# comments and strings (skipped) and `include with what follows it; a macro
# quote `" is taken whole so that the text after it is scanned
_SCAN = re.compile(r'//[^\n]*|/\*.*?(?:\*/|\Z)|`"|"(?:\\.|[^"\\\n])*"|\\\S+'
                   r'|`include\b[ \t]*(?:"([^"\n]*)"|(<)|(\S?))', re.DOTALL)


_MACRO_INCLUDE = ("an `include whose file name comes from a macro is outside the structural subset; "
                  "write the name in quotes")


class SourceFile:
    """One file's text, with what positions need."""

    __slots__ = ("_ascii", "_starts", "data", "display", "path", "text")

    def __init__(self, display: str, path: str, text: str):
        self.display, self.path, self.text = display, path, text
        self.data = text.encode("utf-8")
        self._starts: list[int] | None = None  # byte offset of each line's start, made when first asked
        self._ascii = self.data.isascii()

    def line_col(self, offset: int) -> tuple[int, int]:
        """1-based line and column (in characters) of a byte offset."""
        starts = self._starts
        if starts is None:
            starts = self._starts = [0] + [m.end() for m in re.finditer(b"\n", self.data)]
        i = bisect.bisect_right(starts, offset) - 1
        start = starts[i]
        if self._ascii:
            return i + 1, offset - start + 1
        return i + 1, len(self.data[start:offset].decode("utf-8", errors="replace")) + 1


class Sources:
    """The design file and the files it may include (by canonical path)."""

    def __init__(self, main: SourceFile, root: str, allow_outside: bool, sv: bool):
        self.main = main
        self.root = root
        self.allow_outside = allow_outside
        self.sv = sv
        self.files: dict = {main.path: main}
        #: canonical path -> why it may not be included
        self.refused: dict = {}
        #: (file, offset, message) of includes refused before pyslang runs
        self.early: list = []
        #: (folder joined with a name as written, canonical path, where the name is written)
        self.lookups: list = []
        #: files compiled beside the design (the models file netfit writes next to a build)
        self.companions: list = []

    def add_companion(self, path: str) -> bool:
        """Compile the file at ``path`` with the design (its modules become known); False if it
        cannot be read as a regular file."""
        canon = os.path.realpath(path)
        if canon in self.files:
            return False
        text, _ = _read(canon)
        if text is None:
            return False
        f = SourceFile(str(path), canon, text)
        self.files[canon] = f
        self.companions.append(f)
        return True


def _read(path: str):
    """Text of a regular file, or (None, reason)."""
    try:
        st = os.stat(path)
    except OSError as exc:
        return None, exc.strerror or str(exc)
    if not stat.S_ISREG(st.st_mode):
        return None, "not a regular file"
    try:
        with open(path, "rb") as fh:
            raw = fh.read()
    except OSError as exc:
        return None, exc.strerror or str(exc)
    return raw.decode("utf-8", errors="replace"), None


def load(path, allow_outside: bool = False):
    """The design at ``path`` and its includes; ``(Sources, None)`` or
    ``(None, reason)`` when the design file itself cannot be read."""
    p = Path(path)
    canon = os.path.realpath(p)
    text, why = _read(canon)
    if text is None:
        return None, why
    src = Sources(SourceFile(str(path), canon, text), os.path.dirname(canon), allow_outside,
                  p.suffix.lower() == ".sv")
    _add_includes(src)
    return src, None


def load_text(text: str, file: str, allow_outside: bool = False):
    """Sources of a text held in memory, named ``file`` (includes relative to its folder)."""
    canon = os.path.realpath(file)
    src = Sources(SourceFile(file, canon, text), os.path.dirname(canon), allow_outside,
                  file.lower().endswith(".sv"))
    _add_includes(src)
    return src


def _add_includes(src: Sources) -> None:
    """Every file an `` `include "name" `` in the design's files may reach,
    read if allowed, else recorded as refused (so that an include only
    fails where pyslang's preprocessor really takes it)."""
    names: dict = {}  # name -> first (file, offset)
    dirs: set = set()
    done: set = set()
    todo = [src.main]
    while todo:
        f = todo.pop()
        dirs.add(os.path.dirname(f.path))
        for m in _SCAN.finditer(f.text):
            if m.group(0).startswith("`include"):
                name, system, other = m.group(1), m.group(2), m.group(3)
                if name is not None:
                    names.setdefault(name, (f, m.start()))
                elif system is None and other == "`":
                    src.early.append((f, m.start(), _MACRO_INCLUDE))
        # a name may be taken relative to any file's folder (macros move text between files)
        for name, (g, off) in list(names.items()):
            for d in sorted(dirs):
                cand = os.path.realpath(os.path.join(d, name))
                src.lookups.append((os.path.join(d, name), cand, (g, off)))
                if cand in done:
                    continue
                done.add(cand)
                why = _include_refusal(src, cand)
                if why is not None:
                    src.refused[cand] = why
                    continue
                text, why = _read(cand)
                if text is None:
                    src.refused[cand] = ("is not a regular file" if why == "not a regular file"
                                         else f"cannot be read ({why})")
                    continue
                shown = name if os.path.isabs(name) else os.path.join(os.path.dirname(g.display), name)
                nf = SourceFile(shown, cand, text)
                src.files[cand] = nf
                todo.append(nf)


def _include_refusal(src: Sources, cand: str):
    if not src.allow_outside:
        root = src.root.rstrip(os.sep) + os.sep
        if not cand.startswith(root):
            return "is outside the design's folder (allow it with --allow-outside)"
    if not os.path.exists(cand):
        return "cannot be found"
    return None


def _options(sv: bool, top):
    bag = pyslang.Bag()
    version = pyslang.LanguageVersion.Default if sv else pyslang.LanguageVersion.v1364_2005
    pp = pyslang.parsing.PreprocessorOptions()
    pp.languageVersion = version
    pp.maxIncludeDepth = MAX_INCLUDE_DEPTH
    lex = pyslang.parsing.LexerOptions()
    lex.languageVersion = version
    parse = pyslang.parsing.ParserOptions()
    parse.languageVersion = version
    parse.maxRecursionDepth = MAX_NESTING
    comp = pyslang.ast.CompilationOptions()
    comp.languageVersion = version
    if top is not None:
        comp.topModules = {top}
    bag.preprocessorOptions = pp
    bag.lexerOptions = lex
    bag.parserOptions = parse
    bag.compilationOptions = comp
    return bag


class Compiled:
    """pyslang's results for one design."""

    def __init__(self, sm, tree, comp, diags):
        self.sm, self.tree, self.comp, self.diags = sm, tree, comp, diags


def compile_design(src: Sources, top=None):
    """Preprocess, parse and elaborate with pyslang; ``None`` when its parser
    gives up (the text nests deeper than :data:`MAX_NESTING`), ``(file, offset)``
    of an include it could have read from disk itself (then it did not run)."""
    def work():
        sm = pyslang.SourceManager()
        for path, f in src.files.items():
            if f is not src.main and f not in src.companions:
                sm.assignText(path, f.text)
        for path in src.refused:
            sm.assignText(path, "")
        # pyslang must find every refused file among the texts given, never on disk: its
        # own way of naming a path has to agree with ours (it always has; this makes sure)
        for joined, cand, where in src.lookups:
            if cand in src.refused and not sm.isCached(joined):
                return where
        bag = _options(src.sv, top)
        tree = pyslang.syntax.SyntaxTree.fromText(src.main.text, sm, src.main.display, src.main.path, bag)
        comp = pyslang.ast.Compilation(bag)
        comp.addSyntaxTree(tree)
        for f in src.companions:
            comp.addSyntaxTree(pyslang.syntax.SyntaxTree.fromText(f.text, sm, f.display, f.path, bag))
        comp.getRoot()
        # collecting the diagnostics elaborates (and binds) everything, here on the big stack
        diags = list(comp.getAllDiagnostics())
        return Compiled(sm, tree, comp, diags)

    return _on_big_stack(work)


def _on_big_stack(fn):
    box: dict = {}

    def run():
        try:
            box["value"] = fn()
        except RuntimeError as exc:  # pyslang's parser past its nesting limit
            box["nested"] = exc

    old = threading.stack_size()
    threading.stack_size(_STACK_BYTES)
    try:
        t = threading.Thread(target=run, name="netfit-pyslang")
        t.start()
    finally:
        threading.stack_size(old)
    t.join()
    return box.get("value")


_LOCATION = pyslang.SourceLocation

#: a position resolved: (file as shown, 1-based line, 1-based column in characters)
Where = tuple[str, int | None, int | None]

#: how to find the position of objects kept as positions until a message needs them
POSITIONS: dict = {
    # an assignment: its operator
    pyslang.ast.AssignmentExpression: lambda e: (e.syntax.operatorToken.location
                                                 if e.syntax is not None else e.sourceRange.start),
    # a gate: its keyword
    pyslang.ast.PrimitiveInstanceSymbol: lambda m: m.syntax.parent.sourceRange.start,
}


class Report:
    """Positions of pyslang locations, and the diagnostics found."""

    def __init__(self, src: Sources, sm=None):
        self.src = src
        self.sm = sm
        self.diags: list = []
        self.errors = 0
        self._by_buffer: dict = {}

    # -- positions ---------------------------------------------------------------
    def file_of(self, loc) -> tuple[SourceFile | None, int]:
        """(SourceFile, byte offset) of a pyslang location, macros expanded."""
        buf = loc.buffer
        f = self._by_buffer.get(buf.id)
        if f is None:
            sm = self.sm
            exp = sm.getFullyExpandedLoc(loc)
            if exp.buffer.id != buf.id:
                return self.file_of(exp)
            path = str(sm.getFullPath(buf))
            f = self.src.files.get(path) or self.src.files.get(os.path.realpath(path)) if path else None
            if f is None:
                return None, 0
            self._by_buffer[buf.id] = f
        return f, loc.offset

    def where(self, at: Any) -> Where:
        """``(file, line, col)`` of a position: a tuple, a pyslang location, an
        object with a resolver in :data:`POSITIONS` (looked at only now), or None."""
        if at is None:
            return (self.src.main.display, None, None)
        kind = type(at)
        if kind is tuple:
            return at
        if kind is not _LOCATION:
            find = POSITIONS.get(kind)
            at = find(at) if find is not None else at.sourceRange.start  # an expression: its start
        f, off = self.file_of(at)
        if f is None:
            return (self.src.main.display, None, None)
        line, col = f.line_col(off)
        return (f.display, line, col)

    def line(self, at: Any) -> int | None:
        return self.where(at)[1]

    def text(self, rng) -> str:
        """Source text of a pyslang source range (empty when it spans files)."""
        f, a = self.file_of(rng.start)
        g, b = self.file_of(rng.end)
        if f is None or f is not g or b < a:
            return ""
        return f.data[a:b].decode("utf-8", errors="replace")

    # -- diagnostics -------------------------------------------------------------
    def error(self, at: Any, msg: str) -> None:
        self.errors += 1
        self.diags.append(Diagnostic(msg, *self.where(at)))

    def fail(self, at: Any, msg: str) -> NoReturn:
        self.error(at, msg)
        raise Fail()

    def warn(self, at: Any, msg: str) -> None:
        self.diags.append(Diagnostic(msg, *self.where(at), severity="warning"))

    def warnings(self) -> list[Diagnostic]:
        return [d for d in self.diags if d.severity != "error"]
