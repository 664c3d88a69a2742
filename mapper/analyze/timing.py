"""Static timing of a build from the catalog's propagation delays.

Arrival times run from the primary inputs and storage outputs (time 0)
through every cell, adding the delay of the part its slot sits in, to the
outputs and the data inputs of storage cells.  Both the typical and the
maximum catalog figures are propagated; the worst path uses maximum delays.
Iterative over a topological order of the cells, never recursive.
"""
from __future__ import annotations

import logging

__all__ = ["static_timing", "cell_delay"]

log = logging.getLogger(__name__)


def cell_delay(build, cell) -> tuple[float, float]:
    """(typical, maximum) delay in seconds of one placed cell; 0 when the
    catalog gives none."""
    pd = build.part_def(cell.part_ref)
    typ = pd.delay_typ.get(cell.cell) if pd.delay_typ else None
    mx = pd.delay_max.get(cell.cell) if pd.delay_max else None
    t = typ.value if typ is not None else 0.0
    m = mx.value if mx is not None else t
    return t, max(m, t)


def static_timing(build) -> dict:
    """Worst and best arrival per output and the critical path.

    Returns a dict with ``delay_s`` (worst path, maximum delays),
    ``delay_typ_s``, ``levels``, ``outputs`` (output -> ``[best_s, worst_s]``)
    and ``critical_path`` (list of ``{"cell", "part", "slot", "net", "arrival_s"}``).
    """
    cells = build.cells
    target = build.target
    driver = {}
    for c in cells:
        cd = target.cells[c.cell]
        if cd.storage is None:
            driver[c.pins[cd.output]] = c
    # topological order of combinational cells
    order, indeg, users = [], {}, {}
    for c in cells:
        cd = target.cells[c.cell]
        if cd.storage is not None:
            continue
        deps = {c.pins[p] for p in cd.inputs if c.pins[p] in driver}
        indeg[id(c)] = len(deps)
        for d in deps:
            users.setdefault(d, []).append(c)
    ready = [c for c in cells if target.cells[c.cell].storage is None and indeg[id(c)] == 0]
    while ready:
        c = ready.pop()
        order.append(c)
        out = c.pins[target.cells[c.cell].output]
        for u in users.get(out, ()):
            indeg[id(u)] -= 1
            if indeg[id(u)] == 0:
                ready.append(u)
    worst, best, typ, lev, prev = {}, {}, {}, {}, {}
    for c in order:
        cd = target.cells[c.cell]
        t, m = cell_delay(build, c)
        ins = [c.pins[p] for p in cd.inputs]
        w_in = max(ins, key=lambda n: worst.get(n, 0.0))
        out = c.pins[cd.output]
        worst[out] = worst.get(w_in, 0.0) + m
        best[out] = min((best.get(n, 0.0) for n in ins), default=0.0) + min(t, m)
        typ[out] = max((typ.get(n, 0.0) for n in ins), default=0.0) + t
        lev[out] = 1 + max((lev.get(n, 0) for n in ins), default=0)
        prev[out] = (w_in, c)
    ends = [build.output_nets.get(o, o) for o in build.outputs]
    for c in cells:
        cd = target.cells[c.cell]
        if cd.storage is not None:
            ends.append(c.pins[cd.inputs[0]])
    outputs = {o: [best.get(build.output_nets.get(o, o), 0.0), worst.get(build.output_nets.get(o, o), 0.0)]
               for o in build.outputs}
    end = max(ends, key=lambda n: worst.get(n, 0.0), default=None)
    path = []
    n = end
    while n in prev:
        w_in, c = prev[n]
        path.append({"cell": c.cell, "part": c.part_ref, "slot": c.slot, "net": n,
                     "arrival_s": worst[n]})
        n = w_in
    path.reverse()
    return {
        "delay_s": worst.get(end, 0.0) if end is not None else 0.0,
        "delay_typ_s": max((typ.get(n, 0.0) for n in ends), default=0.0),
        "levels": max((lev.get(n, 0) for n in ends), default=0),
        "outputs": outputs,
        "critical_path": path,
    }
