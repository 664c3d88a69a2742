"""Readers: one module per input format, each ``read(path, **options) -> Netlist``.

The registry maps a file suffix to the module that reads it; :func:`read_design`
picks by suffix.  To add a format, write ``mapper/read/<fmt>.py`` with a
``read`` function and an exception class derived from
:class:`mapper.errors.InputError`, then add its suffixes here.
"""
from __future__ import annotations

import importlib
import logging
from pathlib import Path

from .. import limits
from ..errors import Diagnostic, InputError, UsageError
from ..logic.feedback import cut_loops, has_feedback
from ..logic.flowtable import check_feedback

__all__ = ["READERS", "reader_for", "read_design", "announce"]

log = logging.getLogger(__name__)

READERS = {
    ".blif": "mapper.read.blif",
    ".v": "mapper.read.verilog",
    ".sv": "mapper.read.verilog",
}


def reader_for(path):
    """The reader module for ``path`` (by suffix); :class:`UsageError` if none."""
    suffix = Path(path).suffix.lower()
    mod = READERS.get(suffix)
    if mod is None:
        known = ", ".join(sorted(READERS))
        raise UsageError(f"{path}: no reader for '{suffix or '(no suffix)'}' files (known: {known})")
    return importlib.import_module(mod)


def read_design(path, quiet: bool = False, **options):
    """Read and check a design file; returns a :class:`~mapper.netlist.Netlist`.

    The file's size is checked against the limit ``file_bytes``
    (:mod:`mapper.limits`) before any reader sees it.  Loops of logic are
    read as storage: cut at a few nets (:func:`mapper.logic.feedback.cut_loops`)
    and analysed (:func:`mapper.logic.flowtable.check_feedback`, which refuses
    a loop that can only oscillate).  Unless ``quiet``,
    the design's notes and warnings are logged (see :func:`announce`).
    """
    p = Path(path)
    try:
        if p.is_dir():
            raise UsageError(f"{path}: is a folder, not a design file")
        if not p.is_file():
            raise UsageError(f"{path}: no such file")
        size = p.stat().st_size
    except OSError as exc:
        raise UsageError(f"{path}: {exc.strerror or exc}") from None
    if size > limits.value("file_bytes"):
        raise InputError(Diagnostic(f"the file is {size} bytes: {limits.exceeded('file_bytes', size)}",
                                    str(path)))
    netlist = reader_for(p).read(p, **options)
    cut_loops(netlist)
    netlist.check()
    if has_feedback(netlist):
        check_feedback(netlist)
    if not quiet:
        announce(netlist)
    return netlist


def announce(netlist) -> None:
    """Log the notes and warnings of a design read, each as ``file:line:col: note|warning: ...``.

    The records carry ``diagnostic=True`` so the command line prints them as
    they are, without a level prefix of its own.
    """
    for d in list(netlist.notes) + list(netlist.warnings):
        log.warning("%s", d, extra={"diagnostic": True})
