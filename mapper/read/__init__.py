"""Readers: one module per input format, each ``read(path, **options) -> Netlist``.

The registry maps a file suffix to the module that reads it; :func:`read_design`
picks by suffix.  To add a format, write ``mapper/read/<fmt>.py`` with a
``read`` function and an exception class derived from
:class:`mapper.errors.InputError`, then add its suffixes here.
"""
from __future__ import annotations

import importlib
from pathlib import Path

from ..errors import UsageError

__all__ = ["READERS", "reader_for", "read_design"]

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


def read_design(path, **options):
    """Read and check a design file; returns a :class:`~mapper.netlist.Netlist`."""
    p = Path(path)
    if not p.is_file():
        raise UsageError(f"{path}: no such file")
    netlist = reader_for(p).read(p, **options)
    netlist.check()
    return netlist
