"""Writers: one module per output format.

A writer module offers ``write_netlist(netlist, path)`` (for ``netfit
convert``) and/or ``write_build(build, path)`` (for ``netfit build -o``).
Every writer goes through :func:`atomic_write`: the text is written to a
temporary file beside the target and renamed, so an interrupted run never
leaves half a file.
"""
from __future__ import annotations

import importlib
import os
import tempfile
from pathlib import Path

from ..errors import UsageError

__all__ = ["WRITERS", "writer_for", "atomic_write"]

WRITERS = {
    ".blif": "mapper.write.blif",
    ".json": "mapper.write.json",
    ".v": "mapper.write.verilog",
}


def writer_for(path):
    suffix = Path(path).suffix.lower()
    mod = WRITERS.get(suffix)
    if mod is None:
        known = ", ".join(sorted(WRITERS))
        raise UsageError(f"{path}: no writer for '{suffix or '(no suffix)'}' files (known: {known})")
    try:
        return importlib.import_module(mod)
    except ModuleNotFoundError as exc:
        raise UsageError(f"{path}: writing '{suffix}' files is not available yet") from exc


def _umask() -> int:
    mask = os.umask(0o022)
    os.umask(mask)
    return mask


def atomic_write(path, text: str, protect=()) -> None:
    """Write ``text`` to ``path`` through a temporary file and a rename.

    ``protect`` lists input paths that must never be overwritten.
    """
    path = Path(path)
    for p in protect:
        try:
            if path.exists() and path.samefile(p):
                raise UsageError(f"{path}: refusing to overwrite an input file")
        except FileNotFoundError:
            pass
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    try:
        # mkstemp makes the file private (0600); a written file gets the usual mode under the umask
        os.chmod(tmp, 0o666 & ~_umask())
        with os.fdopen(fd, "w", encoding="utf-8", newline="\n") as fh:
            fh.write(text)
        os.replace(tmp, path)
    except BaseException:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        raise
