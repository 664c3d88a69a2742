"""Structural Verilog reader (placeholder docstring, rewritten below)."""
from __future__ import annotations

import gc
import logging

from pyslang import ast, syntax

from ..errors import Diagnostic, InputError
from ..netlist import Netlist
from .verilog_bits import BitStore
from .verilog_check import check
from .verilog_lower import lower
from .verilog_messages import code_name, translate
from .verilog_source import MAX_NESTING, Report, compile_design, load, load_text

__all__ = ["MAX_ERRORS", "VerilogError", "read", "read_text"]

log = logging.getLogger(__name__)

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


def _read(src, top):
    # the reader makes many small objects and no cycles: the cycle collector
    # would only rescan them over and over
    was_enabled = gc.isenabled()
    gc.disable()
    try:
        return _read_design(src, top)
    finally:
        if was_enabled:
            gc.enable()


def _read_design(src, top):
    rep = Report(src)
    for f, off, msg in src.early:
        line, col = f.line_col(off)
        rep.error((f.display, line, col), msg)
    if rep.errors:
        _raise(rep)
    res = compile_design(src, top)
    if res is None:
        rep.error(None, f"the text is nested more than {MAX_NESTING} levels deep (parentheses, "
                        "conditional operators or statements)")
        _raise(rep)
    rep.sm = res.sm
    info = _Design(res, rep)
    inst = info.top_instance(top)
    if inst is not None and info.recursive:
        info.report_recursion(inst)
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
    log.debug("%s: top '%s', %d inputs, %d outputs, %d nets", src.main.display, netlist.name,
              len(netlist.inputs), len(netlist.outputs), len(netlist.nodes))
    return netlist


class _Design:
    """Questions about the compiled design: its top, its modules, includes."""

    def __init__(self, res, rep):
        self.res, self.rep = res, rep
        self.handled = {"InfinitelyRecursiveHierarchy", "InvalidTopModule"}
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
        used = set()
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
        if res is None:
            return None
        self.res = res
        self.rep.sm = res.sm
        self.recursive = True
        tops = list(res.comp.getRoot().topInstances)
        return tops[0] if tops else None

    def report_recursion(self, top):
        """The instance that brings a module into itself, with the chain of modules."""
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
                    return
                stack.append((m, chain + [name]))

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


def _raise(rep):
    # a module used several times repeats its messages: keep each once
    errors = list(dict.fromkeys(d for d in rep.diags if d.severity == "error"))
    errors.sort(key=lambda d: (d.file or "", d.line or 0, d.col or 0))
    if len(errors) > MAX_ERRORS:
        extra = len(errors) - MAX_ERRORS
        errors = errors[:MAX_ERRORS] + [Diagnostic(f"… and {extra} more error(s)", errors[0].file)]
    raise VerilogError(errors)
