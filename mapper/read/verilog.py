"""Structural Verilog reader: a design in IEEE 1364-2005 → :class:`~mapper.netlist.Netlist`.

How it reads
------------
pyslang (the Python package of the slang front end) preprocesses, parses
and elaborates the file: macros (with or without arguments), `` `ifdef ``
and friends, `` `default_nettype ``, parameters and their overrides,
constant expressions and constant functions, generate loops and
conditions are all resolved by it.  netfit then checks the elaborated
design against the structural subset (:mod:`.verilog_check`) and lowers it
to bits (:mod:`.verilog_expr`, :mod:`.verilog_lower`, :mod:`.verilog_bits`).
pyslang's diagnostics are reported in netfit's own words
(:mod:`.verilog_messages`); the files it sees are read and checked by netfit
first (:mod:`.verilog_source`).  ``.v`` files use the IEEE 1364-2005
keywords, ``.sv`` files SystemVerilog's.

What is read
------------
* Modules with ANSI and non-ANSI port lists; ``input``, ``output``,
  ``wire``, ``reg``, ``supply0``/``supply1``; scalars and vectors with either
  range direction.  The top is the one module no other instantiates, or the
  one named by ``top``; several candidates without ``top`` is an error.
* ``assign`` and net declaration assignments with ``~ & | ^ ~^ ! && ||``,
  reductions, ``?:``, concatenation, replication, constant bit- and
  part-selects (``[7:4]``, ``[i+:4]``, ``[i-:4]``), ``== != < <= > >=``,
  ``+ -`` (ripple-carry, modulo the expression's width) and shifts by a
  constant; ``* / % **`` between constants.  Widths follow the standard
  (pyslang applies them).
* Gate primitives ``and or nand nor xor xnor not buf``; delays on them and
  elsewhere are **ignored with one warning**: a build is timed from its
  parts' own propagation delays.
* Module instances with named or positional connections; an unconnected
  input is an error only if the instance reads it.  A port connected to
  another width is widened with zeros or cut, with a warning.
* Generate loops, ``if`` and ``case`` (constant bounds and conditions), as
  pyslang elaborates them; their blocks are steps of the instance path
  (``stage[2]/u/...``, ``genblk1/...``).
* ``always @(posedge c)`` / ``@(negedge c)`` blocks with non-blocking
  assignments become storage ``re``/``fe``; ``always @*`` / ``@(a or b)``
  blocks become logic where they assign on every path, else latches
  ``ah``/``al``.  In both: ``begin``/``end``, ``if``/``else``, ``case``,
  ``casez`` and ``casex`` with constant items (z digits, and in casex also x
  digits, match anything), ``for`` loops whose start, condition and step are
  constant (unrolled; the loop variable an ``integer``) and calls of
  functions without side effects (inlined).  A reg declared with a value
  (``reg q = 1'b0``) starts with it, else its initial value is unknown (3).

A net has one driver: two drivers is an error naming the net and both
lines.  Outside the subset, each reported where it stands with a message
of netfit's own: ``initial``, tasks, functions with side effects or output
arguments, ``while``/``repeat``/``forever``, ``inout``, tristate and switch
primitives, ``tri``/``wand``/... nets, ``x``/``z`` values, ``signed``,
memories, ``integer`` variables other than a loop's, ``integer`` ports,
``=== !==``, shifts and bit-selects by a net, hierarchical names, system
tasks, ``defparam``, asynchronous set/reset (two edges in one event list),
gated clocks, SystemVerilog's ``always_ff``/``always_comb``, user-defined primitives,
`` `include `` outside the design's folder (unless ``allow_outside``) or of
anything but a regular file.  Errors are reported in the order of the
text, each once, at most 50; positions are 1-based, a column counting
characters (a tab is one column).

Names
-----
Bus bits are named ``name[i]`` with the declared index (so a design read
from Verilog and its BLIF twin match port by port); a scalar keeps its
name.  Hierarchy is flattened: a net inside instance ``u1`` of instance
``top_adder`` is ``top_adder/u1/name``.  Connected nets are one net, named
after the top port, else the net highest in the hierarchy; logic made for
an operator gets a name ``<target>$<k>``.

Why pyslang, with numbers
-------------------------
netfit used to carry its own lexer and parser (3.4 k lines), because a
reader that walked pyslang's *syntax tree* token by token from Python was
quadratic along long comma-separated lists (34 s for the 100 k-gate file below).
Walking the *elaborated* design instead is linear: on that 100 k-gate file
pyslang preprocesses, parses and elaborates in 0.37 s, iterating the
instance's 200 k members takes 0.08 s and reading every assignment's and
gate's expression tree with its symbols 0.52 s (10 k gates: 0.05 s).
Measured with ``bench/bench_verilog.py`` (CPU seconds, pyslang 12.1, a
shared 2-core machine under load), the whole read before (netfit's own
front end) and now (``read`` is pyslang's run plus netfit's lowering):

==========================  =======  ========  ===========  ======================
design                       nodes    before    now (read)   of it: pyslang, netfit
==========================  =======  ========  ===========  ======================
random, 1 k gates              1115      0.03         0.02         0.01, 0.02
random, 10 k gates            11043      0.29         0.21         0.04, 0.17
random, 100 k gates (4.4 MB) 110036      3.08         2.23         0.38, 1.85
ariths-gen arr32, flat         5888      0.19         0.11         0.01, 0.10
ariths-gen arr32, hier         5888      0.34         0.15         0.02, 0.12
ariths-gen arr64, flat        24064      0.81         0.46         0.06, 0.41
ariths-gen arr64, hier        24064      1.40         0.71         0.10, 0.61
==========================  =======  ========  ===========  ======================

Peak Python memory of the 100 k read: 326 MiB before, 172 MiB now.  Import:
pyslang 0.03 s.  netfit's part is mostly building the netlist (slots,
logic nodes, names), which the old reader did too; an instance of a module
that was already lowered with the same parameters is copied, not walked
again (:mod:`.verilog_lower`).

pyslang also resolves what the old reader refused or never could (generate,
functions, macros with arguments, constant functions), and the tests
already used it as their second opinion.
"""
from __future__ import annotations

import gc
import logging
import os
from pathlib import Path
from typing import NoReturn

from pyslang import ast, syntax

from ..errors import Diagnostic, InputError
from ..netlist import Netlist
from .verilog_bits import BitStore
from .verilog_check import check
from .verilog_lower import lower
from .verilog_messages import code_name, translate
from .verilog_source import MAX_NESTING, Report, Sources, compile_design, load, load_text

__all__ = ["MAX_ERRORS", "VerilogError", "read", "read_text"]

log = logging.getLogger(__name__)

#: the models file netfit writes beside a build's Verilog (``write.verilog.MODELS_SUFFIX``; a test
#: keeps the two equal, the reader does not import a writer)
MODELS_SUFFIX = "_models.v"

#: errors reported at most (more are counted in a last line)
MAX_ERRORS = 50


class VerilogError(InputError):
    """A Verilog file that cannot be read: its diagnostics carry file, line, column."""


def read(path, top: str | None = None, allow_outside: bool = False) -> Netlist:
    """Read a structural Verilog file into a :class:`~mapper.netlist.Netlist`.

    Parameters
    ----------
    path : str or Path
        The ``.v`` (IEEE 1364-2005 keywords) or ``.sv`` (SystemVerilog keywords) file.
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
    src, why = load(path, allow_outside)
    if src is None:
        raise VerilogError(Diagnostic(f"cannot read the file: {why}", str(path)))
    return _read(src, top)


def read_text(text: str, file: str = "<text>", top: str | None = None,
              allow_outside: bool = False) -> Netlist:
    """Read Verilog from a string (for tests and tools); see :func:`read`.
    Includes are looked up beside ``file``."""
    return _read(load_text(text, file, allow_outside), top)


def _read(src: Sources, top: str | None) -> Netlist:
    # the reader makes many small objects and no cycles: the cycle collector
    # would only rescan them over and over
    was_enabled = gc.isenabled()
    gc.disable()
    try:
        return _read_design(src, top)
    finally:
        if was_enabled:
            gc.enable()


def _read_design(src: Sources, top: str | None) -> Netlist:
    rep = Report(src)
    for f, off, msg in src.early:
        line, col = f.line_col(off)
        rep.error((f.display, line, col), msg)
    if rep.errors:
        _raise(rep)
    res = compile_design(src, top)
    models = _models_beside(src, res)
    if models is not None:
        res = compile_design(src, top)
    if res is None:
        rep.error(None, f"the text is nested more than {MAX_NESTING} levels deep (parentheses, "
                        "conditional operators or statements)")
        _raise(rep)
    if type(res) is tuple:
        f, off = res
        line, col = f.line_col(off)
        rep.error((f.display, line, col), "cannot make sure this `include reads only what netfit "
                                          "checked; it is refused")
        _raise(rep)
    info = _Design(res, rep)
    inst = info.top_instance(top)
    if inst is not None and info.recursive and info.report_recursion(inst):
        info.handled.add("InfinitelyRecursiveHierarchy")
    for d in info.res.diags:
        if code_name(d) in info.handled:
            continue
        out = translate(d, rep, info)
        if out is not None:
            rep.error(*out)
    info.report_includes()
    if inst is None:
        _raise(rep)
    check(rep, info.res.comp, info.res.tree, inst,
          twice=any(code_name(d) == "Redefinition" for d in info.res.diags))
    if rep.errors:
        _raise(rep)
    store = BitStore(rep)
    lower(rep, store, inst)
    netlist = None
    if not rep.errors:
        netlist = store.finish(inst.body.definition.name, rep.where)
    if netlist is None or rep.errors:
        _raise(rep)
    netlist.warnings.extend(rep.warnings())
    if models is not None:
        netlist.notes.append(Diagnostic(f"the modules this file instantiates without defining them were "
                                        f"read from {models} beside it", src.main.display, None, None,
                                        severity="note"))
    log.debug("%s: top '%s', %d inputs, %d outputs, %d nets", src.main.display, netlist.name,
              len(netlist.inputs), len(netlist.outputs), len(netlist.nodes))
    return netlist


def _models_beside(src: Sources, res) -> str | None:
    """The models file netfit writes beside a build (``<design>_models.v``), added to ``src`` when the
    design instantiates modules it does not define and that file exists; its name as shown, or None."""
    if res is None or type(res) is tuple or not any(code_name(d) == "UnknownModule" for d in res.diags):
        return None
    p = Path(src.main.display)
    shown = str(p.with_name(p.stem + MODELS_SUFFIX))
    beside = os.path.join(os.path.dirname(src.main.path), p.stem + MODELS_SUFFIX)
    if os.path.realpath(beside) == src.main.path or not src.add_companion(beside):
        return None
    src.files[os.path.realpath(beside)].display = shown
    return shown


class _Design:
    """Questions about the compiled design: its top, its modules, includes."""

    def __init__(self, res, rep):
        self.res, self.rep = res, rep
        self.handled = {"InvalidTopModule"}
        self._use(res)

    def _use(self, res):
        self.res = res
        self.rep.sm = res.sm
        self.recursive = any(code_name(d) == "InfinitelyRecursiveHierarchy" for d in res.diags)
        self.modules = [d for d in res.comp.getDefinitions() if d.kind == ast.SymbolKind.Definition
                        and d.definitionKind == ast.DefinitionKind.Module and d.syntax is not None]
        self.modules.sort(key=lambda d: (d.location.buffer.id, d.location.offset))

    def top_instance(self, top):
        rep, res = self.rep, self.res
        if not self.modules:
            rep.error(None, "no module in this file")
            return None
        tops = sorted(res.comp.getRoot().topInstances, key=lambda t: (t.location.buffer.id, t.location.offset))
        if top is not None:
            for t in tops:
                if t.name == top:
                    return t
            names = ", ".join(d.name for d in self.modules)
            rep.error(None, f"no module named '{top}' (this file has: {names})")
            return None
        if len(tops) == 1:
            return tops[0]
        if len(tops) > 1:
            names = ", ".join(f"'{t.name}'" for t in tops)
            rep.error(tops[1].location, f"several modules could be the top ({names}); choose one with --top NAME")
            return None
        return self._top_of_a_loop()

    def _top_of_a_loop(self):
        """No module is free: the one no *other* module instantiates (it
        instantiates itself), compiled again as the top."""
        used: set[str] = set()
        for d in self.modules:
            names: list = []

            def note(n, names=names):
                if getattr(n, "kind", None) == syntax.SyntaxKind.HierarchyInstantiation:
                    names.append(n.type.valueText)

            d.syntax.visit(note)
            used.update(n for n in names if n != d.name)
        cands = [d for d in self.modules if d.name not in used]
        if len(cands) != 1:
            at = (cands[1] if cands else self.modules[0]).location
            self.rep.error(at, "every module is instantiated by another; choose the top with --top NAME"
                           if not cands else "several modules could be the top; choose one with --top NAME")
            return None
        res = compile_design(self.rep.src, cands[0].name)
        if res is None or type(res) is tuple:  # (it read the same text a moment ago)
            self.rep.error(cands[0].location, f"module '{cands[0].name}' cannot be read as the top")
            return None
        self._use(res)
        tops = list(res.comp.getRoot().topInstances)
        return tops[0] if tops else None

    def report_recursion(self, top) -> bool:
        """Report the instance that brings a module into itself, with the chain of
        modules; False when there is none under ``top``."""
        stack = [(top, [top.body.definition.name])]
        while stack:
            inst, chain = stack.pop()
            for m in inst.body:
                if m.kind != ast.SymbolKind.Instance:
                    continue
                name = m.body.definition.name
                if name in chain:
                    loop = " → ".join(chain[chain.index(name):] + [name])
                    self.rep.error(m.syntax.parent.type.location, f"module '{name}' instantiates itself ({loop})")
                    return True
                stack.append((m, chain + [name]))
        return False

    def report_includes(self):
        """Includes pyslang took that netfit refuses (outside the folder, missing, not a file)."""
        src, sm = self.rep.src, self.res.sm
        for inc in self.res.tree.getIncludeDirectives():
            buf = inc.buffer
            if buf is None or not buf.id:
                continue
            path = str(sm.getFullPath(buf.id))
            why = src.refused.get(path)
            if why is not None:
                self.rep.error(inc.syntax.sourceRange.start, f'`include "{inc.path}" {why}')

    # -- for the messages -----------------------------------------------------------
    def nettype_none(self, loc) -> bool:
        f, off = self.rep.file_of(loc)
        for d in self.modules:
            g, a = self.rep.file_of(d.syntax.sourceRange.start)
            _, b = self.rep.file_of(d.syntax.sourceRange.end)
            if g is f and a <= off <= b:
                nt = d.defaultNetType
                return nt is None or nt.name not in ("wire", "tri", "wand", "wor", "tri0", "tri1",
                                                     "trireg", "triand", "trior", "uwire")
        return False

    def first_line(self, name):
        for d in self.modules:
            if d.name == name:
                return self.rep.line(d.location)
        return None


def _raise(rep: Report) -> NoReturn:
    # a module used several times repeats its messages: keep each once
    errors = list(dict.fromkeys(d for d in rep.diags if d.severity == "error"))
    if not errors:  # (every path that stops has reported why; this keeps the promise of a message)
        errors = [Diagnostic("no top module could be elaborated", rep.src.main.display)]
    errors.sort(key=lambda d: (d.file or "", d.line or 0, d.col or 0))
    if len(errors) > MAX_ERRORS:
        extra = len(errors) - MAX_ERRORS
        errors = errors[:MAX_ERRORS] + [Diagnostic(f"… and {extra} more error(s)", errors[0].file)]
    raise VerilogError(errors)
