"""Electrical rules of a gate build: fan-out from the catalog's loading data.

An output can drive so many inputs: the catalog gives each part's output
drive and input load in unit loads (one 74LS input).  A net whose driver
would carry more than its drive is split: the driving cell is duplicated
(same inputs) and the loads shared between the copies.  Duplication keeps the
logic identical, so the proof sees the same function; each split is noted.

Nets driven by a primary input or a storage output are reported, not
changed (a buffer there is the builder's choice of part).
"""
from __future__ import annotations

import logging
from math import floor

from ..errors import InternalError
from ..order import topological_order
from .gates import CellUse, Mapping

__all__ = ["fanout_limit", "split_fanout"]

log = logging.getLogger(__name__)


def _part(target, cell):
    ids = target.carriers.get(cell) or []
    return target.parts[ids[0]] if ids else None


def fanout_limit(target, driver_cell: str, load_cells) -> float:
    """How many of ``load_cells`` (cell names, one per input pin) one output of
    ``driver_cell`` may drive: ``inf`` when the catalog is silent."""
    pd = _part(target, driver_cell)
    if pd is None or pd.output_drive is None:
        return float("inf")
    loads = []
    for c in load_cells:
        lp = _part(target, c)
        if lp is not None and lp.input_load is not None and lp.input_load.value > 0:
            loads.append(lp.input_load.value)
    if not loads:
        return float("inf")
    return floor(pd.output_drive.value / max(loads) + 1e-9)


def split_fanout(mapping: Mapping, target, notes: list) -> Mapping:
    """Duplicate drivers of over-loaded nets; returns the new mapping (the
    given one is left as it was)."""
    own = [CellUse(c.cell, c.args, c.out, c.origin) for c in mapping.cells]
    sinks: dict = {}
    for c in own:
        for a in c.args:
            sinks.setdefault(a, []).append(c)
    driver = {c.out: c for c in own}
    cells = list(own)
    taken = {c.out for c in cells}
    for net, users in sinks.items():
        d = driver.get(net)
        if d is None:
            continue
        loads = [u.cell for u in users for a in u.args if a == net]
        limit = fanout_limit(target, d.cell, loads)
        if len(loads) <= limit or limit < 1:
            continue
        copies = -(-len(loads) // int(limit))
        names = [net]
        for i in range(2, copies + 1):
            name = f"{net}_f{i}"
            while name in taken:
                name += "_"
            taken.add(name)
            names.append(name)
            cells.append(CellUse(d.cell, d.args, name, d.origin))
        # share the loads between the copies, in order (in place: a cell may
        # also load another over-loaded net, whose user list holds it)
        k = 0
        for u in users:
            if net not in u.args:
                continue  # listed once per pin; already rewired
            args = list(u.args)
            for j, a in enumerate(args):
                if a == net:
                    args[j] = names[min(k // int(limit), copies - 1)]
                    k += 1
            u.args = tuple(args)
        notes.append(f"fan-out: net {net} fed {len(loads)} inputs, over the {int(limit)} its part may drive; "
                     f"its driver was duplicated into {copies} copies")
    if len(cells) == len(own):
        return mapping
    return Mapping(_topo(cells), mapping.outputs, mapping.storage_nets, mapping.area, mapping.depth)


def _topo(cells):
    """Cells in an order where every driver comes before its loads."""
    pos = {c.out: k for k, c in enumerate(cells)}
    order, left = topological_order(range(len(cells)), lambda k: {pos[a] for a in cells[k].args if a in pos})
    if left:
        raise InternalError(f"the fan-out pass made a loop of {len(left)} cells")
    return [cells[k] for k in order]
