"""Sizes netfit refuses to go beyond, as data: each checked before the work it bounds is done.

Every reader and loader asks :func:`value` for a limit before it allocates
what the limit bounds (the nets of a flattened hierarchy, the pins of a
part, the support parts of a rule ...), and words its error with
:func:`exceeded`, which names the limit and how to raise it.  Each limit
can be raised (or lowered) for one run with its environment variable, for
example ``NETFIT_MAX_NODES=5000000 netfit build big.blif -t nand-only``.

The defaults keep reading a small mutated or hostile file within a few
hundred megabytes of memory and a few seconds of processor time, and are
above every published benchmark netlist netfit is meant for (the largest
combinational EPFL design, hyp, has about 214,000 nodes; ISCAS-89 s38584
about 20,000); the EPFL designs of more than ten million gates need
``NETFIT_MAX_NODES`` and ``NETFIT_MAX_FILE_BYTES`` raised.

Examples
--------
>>> value("hierarchy_depth") >= 1000
True
>>> exceeded("part_pins", 20000000)  # doctest: +ELLIPSIS
'20000000 is more than the limit of ... (raise it with the environment variable NETFIT_MAX_PART_PINS)'
"""
from __future__ import annotations

import math
import os
from dataclasses import dataclass

from .errors import UsageError

__all__ = ["Limit", "LIMITS", "value", "exceeded", "shown"]


@dataclass(frozen=True)
class Limit:
    """One limit: its default, the environment variable that changes it, and what it counts."""

    name: str
    default: int
    env: str
    counts: str


LIMITS = {lim.name: lim for lim in (
    Limit("file_bytes", 64 * 1024 * 1024, "NETFIT_MAX_FILE_BYTES", "bytes in one design file"),
    Limit("nodes", 250_000, "NETFIT_MAX_NODES", "nodes of a design after flattening its hierarchy"),
    Limit("hierarchy_depth", 5_000, "NETFIT_MAX_DEPTH", "levels of nested models or modules"),
    Limit("search_files", 1_000, "NETFIT_MAX_FILES", "files one design reads through .search or include"),
    Limit("errors", 50, "NETFIT_MAX_ERRORS", "errors reported before reading stops"),
    Limit("part_pins", 1_024, "NETFIT_MAX_PART_PINS", "pins of one part in a catalog"),
    Limit("part_sections", 256, "NETFIT_MAX_PART_SECTIONS", "sections or poles of one part in a catalog"),
    Limit("support_count", 64, "NETFIT_MAX_SUPPORT_COUNT", "support parts one target rule asks for per item"),
    Limit("catalog_bytes", 8 * 1024 * 1024, "NETFIT_MAX_CATALOG_BYTES", "bytes in one catalog or target file"),
)}


def value(name: str) -> int:
    """The limit ``name`` for this run: its environment variable if set, else the default.

    Raises :class:`~mapper.errors.UsageError` when the variable is set to
    something other than a positive whole number.
    """
    lim = LIMITS[name]
    text = os.environ.get(lim.env)
    if text is None or not text.strip():
        return lim.default
    try:
        v = int(text.strip().replace("_", ""))
    except ValueError:
        raise UsageError(f"{lim.env}={text!r}: the limit of {lim.counts} must be a whole number") from None
    if v < 1:
        raise UsageError(f"{lim.env}={text!r}: the limit of {lim.counts} must be 1 or more")
    return v


def shown(count: int) -> str:
    """A count for a message: exact up to 15 digits, else its order of magnitude (``about 10^301``)."""
    if count < 10 ** 15:
        return str(count)
    # math.log10 takes integers of any size: a count of thousands of digits is never turned into text
    return f"about 10^{int(math.log10(count))}"


def exceeded(name: str, found: int | None = None) -> str:
    """The tail of an error message for limit ``name``: the limit and how to raise it.

    With ``found`` the message starts with that count (``"20000000 is more
    than the limit of 1024 ..."``); without it, with the limit itself.
    """
    lim = LIMITS[name]
    head = f"{shown(found)} is more than the limit of {value(name)}" if found is not None else \
        f"the limit is {value(name)}"
    return f"{head} {lim.counts} (raise it with the environment variable {lim.env})"
