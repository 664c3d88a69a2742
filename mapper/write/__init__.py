"""Writers: one module per output format, and the registries that name them.

A netlist writer (for ``netfit convert``) declares the suffixes it writes in
``SUFFIXES`` and offers ``write_netlist(netlist, path, protect=())``.  A build
writer (for ``netfit build -o``) offers ``write_build(build, analysis, path,
protect=(), **options) -> [paths written]``; options a writer has no use for
are ignored.  Every writer goes through :func:`~mapper.write.files.atomic_write`:
the text is written to a temporary file beside the target and renamed, so an
interrupted run never leaves half a file.

To add a format: write the module, then add it to :data:`NETLIST_MODULES`
and/or :data:`BUILD_WRITERS` below (``tests/write/test_registry.py`` checks
that every writer module is registered).
"""
from __future__ import annotations

from pathlib import Path

from ..errors import UsageError
from . import blif, board, html, json, parts, svg, verilog, wiring
from .files import atomic_write

__all__ = ["WRITERS", "NETLIST_MODULES", "BUILD_WRITERS", "writer_for", "atomic_write"]

#: modules that write a netlist in their format (each declares its ``SUFFIXES``)
NETLIST_MODULES = (blif, json, verilog)
#: suffix -> netlist writer module
WRITERS = {suffix: m for m in NETLIST_MODULES for suffix in m.SUFFIXES}
#: the files of ``netfit build -o DIR``: a name starting with "." is a suffix on the design's name
BUILD_WRITERS = (
    (".v", verilog),         # also writes <design>_models.v beside it
    (".blif", blif),
    (".json", json),
    ("parts.csv", parts),
    ("wiring.txt", wiring),
    ("schematic.svg", svg),
    ("board.svg", board),
    ("report.html", html),
)


def writer_for(path):
    """The netlist writer module for ``path`` (by suffix); :class:`UsageError` if none."""
    suffix = Path(path).suffix.lower()
    mod = WRITERS.get(suffix)
    if mod is None:
        known = ", ".join(sorted(WRITERS))
        raise UsageError(f"{path}: no writer for '{suffix or '(no suffix)'}' files (known: {known})")
    return mod
