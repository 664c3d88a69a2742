"""Writer for BLIF netlists (the July 1992 Berkeley BLIF description).

:func:`netlist_text` writes one flat ``.model``: ``.inputs``, ``.outputs``,
``.clock``, a ``.latch`` line per storage element (``input output type
control init``, control ``NIL`` when there is none), a ``.names`` cover per
logic node (the node's own cover when it has one -- an OFF-set cover is
written as rows with output 0 -- otherwise an irredundant cover of its
table), constants as ``.names x`` (0) or ``.names x`` / ``1`` (1), and the
don't-care network after ``.exdc`` when the netlist has one.  Long name
lists are continued over several lines with ``\\``.

Net names that BLIF cannot carry (containing white space, ``#``, ``=`` or
``\\``, or equal to ``NIL``, the word for "no control" in ``.latch``) are
replaced deterministically: each such character becomes ``_``, and a
numeric suffix ``_1``, ``_2`` ... is added when the result would clash.
Names that are already valid never change, so ports keep their names
whenever BLIF allows.  A net that is both input and output is written
once in each list (the description allows a signal to be both).

Examples
--------
>>> from mapper.netlist import Netlist
>>> from mapper.logic.function import Function
>>> n = Netlist("t")
>>> n.add_input("a"); n.add_input("b")
>>> n.add_logic("y", ["a", "b"], Function.from_cover(2, ["11"], 0))
>>> n.add_output("y")
>>> print(netlist_text(n), end="")
.model t
.inputs a b
.outputs y
.names a b y
11 0
.end
"""
from __future__ import annotations

import logging
import re

from ..analyze.results import Analysis
from ..build import Build
from ..netlist import Input, Logic, Netlist, Storage
from .files import atomic_write

__all__ = ["netlist_text", "write_netlist", "blif_names", "write_build"]

log = logging.getLogger(__name__)

_BAD = re.compile(r"[\s#=\\]")
_WIDTH = 100  # wrap name lists beyond this many characters


def _clean(name: str) -> str:
    s = _BAD.sub("_", name)
    if s == "NIL" or not s:
        s = s + "_"
    return s


def blif_names(netlist: Netlist) -> dict:
    """The BLIF name of every net (and of the model) that needs one.

    Returns a dict from our net name to the name written; valid names map
    to themselves.  Deterministic: invalid names are replaced in the order
    inputs, outputs, nets in definition order, then the nets of the
    don't-care network.
    """
    order = list(netlist.inputs) + list(netlist.outputs) + list(netlist.clocks)
    for name, node in netlist.nodes.items():
        order.append(name)
        order.extend(node.fanins)
    if netlist.exdc is not None:
        for name, node in netlist.exdc.nodes.items():
            order.append(name)
            order.extend(node.fanins)
        order.extend(netlist.exdc.outputs)
    order = list(dict.fromkeys(order))
    valid = {n for n in order if _clean(n) == n}
    taken = set(valid)
    out = {n: n for n in valid}
    for n in order:
        if n in out:
            continue
        base = _clean(n)
        cand = base
        k = 1
        while cand in taken:
            cand = f"{base}_{k}"
            k += 1
        taken.add(cand)
        out[n] = cand
        log.debug("net %r written as %r", n, cand)
    return out


def _wrap(head: str, names) -> list:
    lines = []
    cur = head
    for nm in names:
        if len(cur) + 1 + len(nm) > _WIDTH and cur != head:
            lines.append(cur + " \\")
            cur = " " + nm
        else:
            cur = cur + " " + nm
    lines.append(cur)
    return lines


def _names_lines(out: list, name: str, fanins, func, rn) -> None:
    out.extend(_wrap(".names", [rn[f] for f in fanins] + [rn[name]]))
    if func.n == 0:
        if func.constant_value() == 1:
            out.append("1")
        return
    cubes, phase = func.cover()
    val = " 1" if phase else " 0"
    out.extend(c + val for c in cubes)


def netlist_text(netlist: Netlist) -> str:
    """The netlist as BLIF text (one flat model), ending with a newline.

    Reading the text back gives the same ports (up to the renaming of
    :func:`blif_names`), the same storage elements, and logic of the same
    functions.
    """
    rn = blif_names(netlist)
    model = _clean(netlist.name) if netlist.name else "netlist"
    out = [f".model {model}"]
    out.extend(_wrap(".inputs", [rn[i] for i in netlist.inputs]))
    out.extend(_wrap(".outputs", [rn[o] for o in netlist.outputs]))
    clocks = [c for c in netlist.clocks if c in netlist.nodes and isinstance(netlist.nodes[c], Input)]
    if clocks:
        out.extend(_wrap(".clock", [rn[c] for c in clocks]))
    for name, node in netlist.nodes.items():
        if isinstance(node, Storage):
            control = rn[node.control] if node.control is not None and node.kind != "as" else "NIL"
            out.append(f".latch {rn[node.d]} {rn[name]} {node.kind} {control} {node.init}")
    for name, node in netlist.nodes.items():
        if isinstance(node, Logic):
            _names_lines(out, name, node.fanins, node.func, rn)
    if netlist.exdc is not None:
        out.append(".exdc")
        for name, node in netlist.exdc.nodes.items():
            if isinstance(node, Logic):
                _names_lines(out, name, node.fanins, node.func, rn)
    out.append(".end")
    return "\n".join(out) + "\n"


#: suffixes of the files this module writes
SUFFIXES = (".blif",)


def write_netlist(netlist: Netlist, path, protect=()) -> None:
    """Write ``netlist`` as BLIF to ``path`` (atomically; never over a file in ``protect``)."""
    atomic_write(path, netlist_text(netlist), protect=protect)


def write_build(build: Build, analysis: Analysis, path, protect=(), **options) -> list:
    """Write a :class:`~mapper.build.Build` as BLIF: its logic view (:meth:`~mapper.build.Build.to_netlist`).

    Every used slot becomes one ``.names`` cover of its cell's function (or a
    ``.latch`` for a storage cell; relay poles become the multiplexer each
    pole is), so reading the file back gives a netlist equal to the design.
    """
    return [atomic_write(path, netlist_text(build.to_netlist()), protect=protect)]
