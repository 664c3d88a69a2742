"""Writing a file whole or not at all: a temporary file beside the target, then a rename."""
from __future__ import annotations

import os
import tempfile
from pathlib import Path

from ..errors import UsageError

__all__ = ["atomic_write"]


def _umask() -> int:
    mask = os.umask(0o022)
    os.umask(mask)
    return mask


def atomic_write(path, text: str, protect=()) -> Path:
    """Write ``text`` to ``path`` through a temporary file and a rename; returns the path.

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
    return path
