"""Writer for netfit's own JSON form of a netlist.

The layout (``"format": "netfit-netlist"``, ``"version": 1``; keys are only
ever added, never renamed)::

    {
      "format": "netfit-netlist", "version": 1,
      "name": "c17",
      "inputs": ["N1", ...], "outputs": ["N22", ...], "clocks": [],
      "nodes": [
        {"net": "N10", "fanins": ["N1", "N3"], "cover": ["11"], "phase": 0,
         "table": "0x7"},
        ...
      ],
      "storage": [
        {"net": "q", "d": "d", "kind": "re", "control": "clk", "init": 3}, ...
      ],
      "exdc": null
    }

``nodes`` lists every logic node (constants have no fan-ins) in definition
order.  ``cover`` is a list of cubes over the fan-ins (character ``j`` for
fan-in ``j``: ``1``, ``0`` or ``-``) and ``phase`` says whether the cubes
list the ON-set (1) or the OFF-set (0).  ``table`` is the truth table as a
hexadecimal string (bit ``m`` is the value where fan-in ``j`` has bit ``j``
of ``m``), given only for nodes of at most 16 fan-ins.  ``exdc`` is the
external don't-care network in the same layout, or null.

Builds
------
:func:`write_build` writes the whole build (``"format": "netfit-build"``,
``"version": 1``; keys only ever added)::

    {
      "format": "netfit-build", "version": 1,
      "summary": {...},                  # as `netfit build --json` (Analysis.summary)
      "design": "c17", "target": "nand-only",
      "inputs": [...], "outputs": [...], "output_nets": {"N22": "N22", ...},
      "parts": [{"ref": "U1", "part": "74HC00", "description": ..., "package": "DIP-14",
                 "kind": "chip", "sections": [{"section": 1, "cell": "nand2", "instance": "U1_1",
                 "pins": {"A": {"pin": 1, "net": "N1"}, ...}}, ...],
                 "pins": [{"pin": 1, "name": "A1", "net": "N1", "use": "input"}, ...]}, ...],
      "cells": [{"instance": "U1_1", "cell": "nand2", "part": "U1", "section": 1,
                 "pins": {"A": {"pin": 1, "net": "N1"}, ...}, "origin": "N10", "init": 3}, ...],
      "contacts": [{"part": "K1", "pole": 1, "coil": "N2", "com": "x1", "no": "VCC", "nc": "N1"}, ...],
      "coils": {"K1": "N2", ...},
      "nets": [{"net": "N1", "pins": ["U1-1", ...], "drivers": [...], "loads": [...], ...}, ...],
      "support": [{"ref": "C1", "part": "C-100N", "nets": ["VCC", "GND"], "purpose": ...}, ...],
      "ties": [{"part": "U2", "pin": 12, "rail": "GND", "reason": ...}, ...],
      "timing": {...}, "cautions": [...], "notes": [...]
    }

``timing`` holds the figures of the build's analyses
(:meth:`~mapper.analyze.results.Analysis.figures`) except the list of
glitches (``hazards``; their number is kept), which ``netfit timing --json``
gives in full.

Pins are package pin numbers, or terminal names (``COIL+``, ``NO1``) for
relays; ``use`` is one of ``input output supply tie open nc coil contact
support`` (see :mod:`mapper.write.wiring`).
"""
from __future__ import annotations

import json
import logging
import math

from ..analyze.results import Analysis
from ..build import Build
from ..logic.function import MAX_TABLE_INPUTS
from ..netlist import Logic, Netlist, Storage
from .files import atomic_write
from .verilog import verilog_names
from .wiring import PinLookup, wiring

__all__ = ["FORMAT", "VERSION", "BUILD_FORMAT", "SUFFIXES", "netlist_dict", "write_netlist", "dumps",
           "build_dict", "write_build", "finite"]

log = logging.getLogger(__name__)

FORMAT = "netfit-netlist"
VERSION = 1
BUILD_FORMAT = "netfit-build"
#: suffixes of the files this module writes
SUFFIXES = (".json",)


def netlist_dict(netlist: Netlist) -> dict:
    """The netlist as plain data (see the module docstring); JSON-serialisable."""
    nodes = []
    storage = []
    for name, node in netlist.nodes.items():
        if isinstance(node, Logic):
            cubes, phase = node.func.cover()
            entry = {"net": name, "fanins": list(node.fanins), "cover": list(cubes), "phase": phase}
            if node.func.n <= MAX_TABLE_INPUTS:
                entry["table"] = hex(node.func.table())
            nodes.append(entry)
        elif isinstance(node, Storage):
            storage.append({"net": name, "d": node.d, "kind": node.kind, "control": node.control,
                            "init": node.init})
    return {
        "format": FORMAT,
        "version": VERSION,
        "name": netlist.name,
        "inputs": list(netlist.inputs),
        "outputs": list(netlist.outputs),
        "clocks": list(netlist.clocks),
        "nodes": nodes,
        "storage": storage,
        "exdc": netlist_dict(netlist.exdc) if netlist.exdc is not None else None,
    }


def write_netlist(netlist: Netlist, path, protect=()) -> None:
    """Write ``netlist`` as JSON to ``path`` (atomically; never over a file in ``protect``)."""
    atomic_write(path, dumps(netlist_dict(netlist)), protect=protect)


def dumps(data: dict) -> str:
    """JSON text of ``data``: one top-level key per line and, in the lists
    ``nodes`` and ``storage``, one entry per line (readable and diffable, and
    several times faster than fully indented output on big netlists).

    Standard JSON only: a figure that is not finite is written ``null``
    (see :func:`finite`), never ``Infinity`` or ``NaN``.
    """
    data = finite(data)
    parts = []
    for key, value in data.items():
        k = json.dumps(key)
        if key in ("nodes", "storage", "cells", "contacts", "nets", "support", "ties", "parts") and value \
                and isinstance(value, list):
            body = ",\n  ".join(json.dumps(e, ensure_ascii=False, allow_nan=False) for e in value)
            parts.append(f" {k}: [\n  {body}\n ]")
        else:
            parts.append(f" {k}: {json.dumps(value, ensure_ascii=False, allow_nan=False)}")
    return "{\n" + ",\n".join(parts) + "\n}\n"


def finite(value, where: str = ""):
    """A copy of ``value`` (dicts, lists, tuples, numbers, text) with every float that is not finite
    replaced by ``None``, each replacement logged with its key path.

    Catalog figures are refused when they are not finite (:func:`mapper.units.parse_quantity`), so a
    non-finite result is a fault upstream; it is said, and the file stays standard JSON.
    """
    # the data is a JSON document of our own making: a few levels deep, so recursion is bounded
    if isinstance(value, float):
        if math.isfinite(value):
            return value
        log.warning("a figure that is not finite (%r) at %s is written as null", value, where or "the top")
        return None
    if isinstance(value, dict):
        return {k: finite(v, f"{where}.{k}" if where else str(k)) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [finite(v, f"{where}[{i}]") for i, v in enumerate(value)]
    return value


def _plain(value):
    """JSON-ready copy of timing data (tuples to lists, unknown objects to text)."""
    return json.loads(json.dumps(value, default=str))


#: timing entries left out of the build file: the glitch list can be large; `netfit timing --json` has it
_TIMING_LEFT_OUT = ("hazards",)


def build_dict(build: Build, analysis: Analysis) -> dict:
    """The whole build as plain data (see the module docstring); JSON-serialisable."""
    w = wiring(build, analysis)
    pin_of = PinLookup(build)
    inst = verilog_names(build).instances
    cells = build.target.cells
    by_slot = {(c.part_ref, c.slot): c for c in build.cells}
    parts = []
    for part in w["parts"]:
        entry = {"ref": part["ref"], "part": part["part"], "description": part["description"],
                 "package": part["package"], "kind": part["kind"]}
        if part["kind"] == "support":
            entry["purpose"] = part.get("purpose", "")
        else:
            pd = build.part_def(part["ref"])
            slots = []
            # a chip's gate units are its sections, a relay's its poles
            word = "pole" if part["kind"] == "relay" else "section"
            for s in pd.slots:
                c = by_slot.get((part["ref"], s.index))
                if c is not None:
                    slots.append({word: s.index, "cell": c.cell, "instance": inst[("cell", c.part_ref, c.slot)],
                                  "pins": {p: {"pin": pin_of(c, p), "net": c.pins.get(p)}
                                           for p in cells[c.cell].pins}})
                else:
                    used = any(k.part_ref == part["ref"] and k.pole == s.index for k in build.contacts)
                    slots.append({word: s.index, "cell": s.cell,
                                  "instance": inst.get(("pole", part["ref"], s.index)) if used else None,
                                  "pins": {p: {"pin": num} for p, num in s.pins.items()}})
            entry[word + "s"] = slots
        entry["pins"] = [{"pin": pu.number, "name": pu.name, "label": pu.label, "net": pu.net, "use": pu.use,
                          "note": pu.note} for pu in part["pins"]]
        parts.append(entry)
    return {
        "format": BUILD_FORMAT,
        "version": VERSION,
        "summary": _plain(analysis.summary(build)),
        "design": build.design,
        "target": build.target.name,
        "inputs": list(build.inputs),
        "outputs": list(build.outputs),
        "output_nets": {o: build.output_nets.get(o, o) for o in build.outputs},
        "parts": parts,
        "cells": [{"instance": inst[("cell", c.part_ref, c.slot)], "cell": c.cell, "part": c.part_ref,
                   "section": c.slot, "pins": {p: {"pin": pin_of(c, p), "net": c.pins.get(p)}
                                            for p in cells[c.cell].pins},
                   "origin": c.origin, "init": c.init, "group": c.group}
                  for c in build.cells],
        "storage_groups": [{"net": g.q, "kind": g.kind, "d": g.d, "control": g.control, "init": g.init,
                            "built_as": g.template}
                           for g in build.storage_groups.values()],
        "contacts": [{"instance": inst[("pole", k.part_ref, k.pole)], "part": k.part_ref, "pole": k.pole,
                      "coil": build.coils.get(k.part_ref), "com": k.com, "no": k.no, "nc": k.nc}
                     for k in build.contacts],
        "coils": dict(build.coils),
        "nets": [{"net": n["net"], "rail": n["rail"], "ports": n["ports"], "pins": n["pins"],
                  "drivers": n["drivers"], "loads": n["loads"], "others": n["others"]} for n in w["nets"]],
        "support": [{"ref": s.ref, "part": s.part_id, "nets": list(s.nets), "purpose": s.purpose}
                    for s in build.support],
        "ties": [{"part": t.part_ref, "pin": t.pin, "rail": t.rail, "reason": t.reason} for t in build.ties],
        "timing": _plain({k: v for k, v in analysis.figures(build).items() if k not in _TIMING_LEFT_OUT}),
        "cautions": list(analysis.cautions),
        "notes": analysis.all_notes(build),
    }


def write_build(build: Build, analysis: Analysis, path, protect=(), **options) -> list:
    """Write the whole build as JSON to ``path`` (atomically; never over a file in ``protect``)."""
    return [atomic_write(path, dumps(build_dict(build, analysis)), protect=protect)]
