"""Feedback loops kept as gates in a build: how long a loop takes, how long its inputs must last.

A design's loop read as storage (:mod:`mapper.logic.feedback`) is built as
the same loop of gates (:attr:`mapper.build.Build.storage_groups` of kind
``as``).  Its figures, from the catalog's maximum (and typical) delays of the
cells it runs through:

* **loop delay** -- the longest way once around the loop (for a set-reset
  latch of two gates, the two gates' delays): the time the loop needs to
  settle after its state starts to change;
* **minimum pulse width** of each input that reaches the loop -- a set,
  reset or enable pulse must last until the change it starts has come back
  around the loop to the gate where it entered (from then the loop holds the
  new value by itself): the longest path from the input to the output of the
  gate where it enters the loop, plus the longest way from that gate's
  output back to its own input.  For two cross-coupled gates that is two
  gate delays, the textbook figure (common practice); it is a static bound
  over paths, so where several paths enter it may be longer than a pulse
  really needs.

Static timing (:mod:`mapper.analyze.timing`) cuts each loop at the design's
cut net: that net starts paths at time 0, like an input, and the cell that
drives it ends them.
"""
from __future__ import annotations

import networkx as nx

__all__ = ["loop_cuts", "loop_figures", "MAX_CYCLES"]

#: simple cycles of one loop region followed before the figures stop (regions are a few gates)
MAX_CYCLES = 2000


def loop_cuts(build) -> dict:
    """cut net -> excitation name of every feedback loop kept as gates in ``build``."""
    return {g.q: g.d for g in build.storage_groups.values() if g.kind == "as"}


def _regions(build, cells: list, cut: dict) -> list:
    """Groups of logic cells on the loops through the cut nets (one per strongly connected part)."""
    target = build.target
    g = nx.DiGraph()
    for c in cells:
        cd = target.cells[c.cell]
        out = c.pins[cd.output]
        for p in cd.inputs:
            n = c.pins.get(p)
            if n is not None:
                g.add_edge(n, out)
    out = []
    for comp in nx.strongly_connected_components(g):
        if any(q in comp for q in cut) and (len(comp) > 1 or any(g.has_edge(n, n) for n in comp)):
            out.append(comp)
    return out


def loop_figures(g, late_from) -> list:
    """The figures of every loop of a build (see the module docstring).

    ``g`` is the timing graph of :mod:`mapper.analyze.timing` (its build,
    logic cells, cell delays); ``late_from(net)`` gives the latest arrival
    (maximum delays) at every net from a change of ``net`` at time 0, with the
    loops cut.  Returns one dict per loop region: ``cut`` (its cut nets),
    ``nets``, ``parts``, ``loop_delay_s``, ``loop_delay_typ_s`` and
    ``pulse_min_s`` (input -> seconds).
    """
    b = g.build
    cut = loop_cuts(b)
    if not cut:
        return []
    target = b.target
    cells = [c for c in b.cells if c.group is None and target.cells[c.cell].storage is None]
    by_out = {c.pins[target.cells[c.cell].output]: c for c in cells}
    out = []
    for comp in _regions(b, cells, cut):
        members = [by_out[n] for n in comp if n in by_out]
        cyc = _cycles(target, members, comp, g.delay)
        loop_t = max((t for t, _ in cyc.values()), default=0.0)
        loop_m = max((m for _, m in cyc.values()), default=0.0)
        pulse = {}
        for i in b.inputs:
            arr = late_from(i)
            w = None
            for c in members:
                cd = target.cells[c.cell]
                outside = [arr[n] for n in (c.pins.get(p) for p in cd.inputs) if n not in comp and n in arr]
                if not outside:
                    continue  # the input does not enter the loop at this gate
                gate = g.delay[id(c)][1]
                back = cyc.get(id(c), (0.0, 0.0))[1] - gate
                w = max(w or 0.0, max(outside) + gate + back)
            if w is not None:
                pulse[i] = w
        out.append({"cut": sorted(q for q in cut if q in comp), "nets": sorted(comp),
                    "parts": sorted({c.part_ref for c in members}),
                    "loop_delay_s": loop_m, "loop_delay_typ_s": loop_t, "pulse_min_s": pulse})
    out.sort(key=lambda r: str(r["cut"]))
    return out


def _cycles(target, members: list, comp: set, delay: dict) -> dict:
    """id(cell) -> (typical, maximum) delay of the longest simple cycle through it."""
    g = nx.DiGraph()
    for c in members:
        cd = target.cells[c.cell]
        out = c.pins[cd.output]
        for p in cd.inputs:
            n = c.pins.get(p)
            if n in comp:
                g.add_edge(n, out)
    driver = {c.pins[target.cells[c.cell].output]: c for c in members}
    best: dict = {}
    for k, cycle in enumerate(nx.simple_cycles(g)):
        if k >= MAX_CYCLES:
            break
        cs = [driver[n] for n in cycle if n in driver]
        t = sum(delay[id(c)][0] for c in cs)
        m = sum(delay[id(c)][1] for c in cs)
        for c in cs:
            old = best.get(id(c))
            if old is None or m > old[1]:
                best[id(c)] = (t, m)
    return best
