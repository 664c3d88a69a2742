"""Races inside a feedback region, gate by gate.

The flow table (:mod:`mapper.logic.flowtable`) puts all of a loop's delay at
its cut, which hides what happens when two gates of the loop are asked to
change at once: the set-reset latch of two NORs, with set and reset both
active (both outputs 0) and then released together, has both gates excited
at once; whichever switches first wins, and if they switch together the pair
can ring.  Here every gate of the region -- and the gates between the
region and its sources, when there are few -- has a delay of its own, of any
length: from a stable state, after the inputs change, any non-empty set of
the excited gates may switch next (the general multiple-winner model of
asynchronous circuits; Brzozowski and Seger, *Asynchronous Circuits*,
Springer 1995, ch. 5; the races themselves after Unger 1969).  Every state
reachable that way is explored:

* more than one stable state at the end is a **critical race** (the result
  depends on which gate wins: unpredictable);
* a cycle among unstable states means the region **may oscillate** (in the
  model the gates can keep switching together for ever).

Input changes looked at: every single input (fundamental mode) and every two
inputs together, from every stable state.
"""
from __future__ import annotations

from ..netlist import Logic, Netlist, Storage
from ..order import topological_order

__all__ = ["gate_races", "MAX_RACE_GATES", "MAX_RACE_STATES"]

#: the most gates one region's race search follows (each is a state variable of the search)
MAX_RACE_GATES = 10
#: states explored after one input change before the search stops (the result then says so)
MAX_RACE_STATES = 4096
#: excited gates beyond this switch one at a time or all at once (not in every subset)
_SUBSET_GATES = 6
#: races listed per region
MAX_RACES = 24


def _gates(netlist: Netlist, region, sources: list, with_cone: bool):
    """Gate list ``[(out net, fanins, function)]`` of the region (and its cone), or ``None`` if too many.

    A cut net's gate is the logic of its excitation, driving the cut net (the
    loop closed again); excitation nets are not gates of their own.
    """
    nodes = netlist.nodes
    exc = set(region.excitation.values())
    nets = []
    for n in region.nets:
        node = nodes[n]
        if n in exc:
            continue
        if isinstance(node, Storage):
            e = nodes.get(node.d)
            if not isinstance(e, Logic):
                return None
            nets.append((n, e.fanins, e.func))
        elif isinstance(node, Logic):
            nets.append((n, node.fanins, node.func))
    if with_cone:
        stop = set(sources) | set(region.nets)
        seen: set = set()
        stack = [f for _, fi, _ in nets for f in fi if f not in stop]
        while stack:
            n = stack.pop()
            if n in seen or n in stop:
                continue
            seen.add(n)
            node = nodes.get(n)
            if not isinstance(node, Logic):
                return None
            if node.fanins:
                nets.append((n, node.fanins, node.func))
                stack.extend(node.fanins)
            else:
                nets.append((n, (), node.func))
            if len(nets) > MAX_RACE_GATES:
                return None
    if len(nets) > MAX_RACE_GATES:
        return None
    return nets


class _Model:
    """The gates of a region as integers: state bit ``i`` is gate ``i``'s output."""

    def __init__(self, gates: list, sources: list, cuts):
        self.names = [g[0] for g in gates]
        gi = {n: i for i, n in enumerate(self.names)}
        si = {n: j for j, n in enumerate(sources)}
        self.sources = sources
        self.gates = []
        for _, fanins, func in gates:
            refs = []
            for f in fanins:
                if f in gi:
                    refs.append((0, gi[f]))
                elif f in si:
                    refs.append((1, si[f]))
                else:
                    raise KeyError(f)
            self.gates.append((tuple(refs), func))
        self.cuts = [gi[c] for c in cuts]
        cut = set(self.cuts)
        rest = [i for i in range(len(gates)) if i not in cut]
        # with the cut gates' outputs given, the others settle in this order (the cut breaks every loop)
        order, left = topological_order(rest, lambda i: [r for k, r in self.gates[i][0] if k == 0 and r not in cut])
        if left:
            raise KeyError("loop")
        self.order = order

    def value(self, i: int, state: int, x: int) -> int:
        refs, func = self.gates[i]
        return func(*[((state if k == 0 else x) >> r) & 1 for k, r in refs])

    def excited(self, state: int, x: int) -> int:
        out = 0
        for i in range(len(self.gates)):
            if self.value(i, state, x) != (state >> i) & 1:
                out |= 1 << i
        return out

    def stable_states(self, x: int) -> list:
        """Every stable state under input ``x``: each value of the cut gates, the others settled from it."""
        out = []
        for y in range(1 << len(self.cuts)):
            s = 0
            for j, i in enumerate(self.cuts):
                s |= ((y >> j) & 1) << i
            for i in self.order:
                s |= self.value(i, s, x) << i
            if not self.excited(s, x):
                out.append(s)
        return out


def _subsets(mask: int):
    bits = [1 << i for i in range(mask.bit_length()) if mask >> i & 1]
    if len(bits) > _SUBSET_GATES:
        yield from bits
        yield mask
        return
    for k in range(1, 1 << len(bits)):
        yield sum(b for j, b in enumerate(bits) if k >> j & 1)


def _explore(model: _Model, start: int, x: int):
    """``(stable end states, may oscillate, complete)`` after the inputs become ``x`` in state ``start``."""
    ends: set = set()
    succ: dict = {}
    stack = [start]
    seen = {start}
    complete = True
    while stack:
        s = stack.pop()
        ex = model.excited(s, x)
        if not ex:
            ends.add(s)
            continue
        nxt = [s ^ sub for sub in _subsets(ex)]
        succ[s] = nxt
        for t in nxt:
            if t not in seen:
                if len(seen) >= MAX_RACE_STATES:
                    complete = False
                    continue
                seen.add(t)
                stack.append(t)
    return ends, _has_cycle(succ), complete


def _has_cycle(succ: dict) -> bool:
    """Whether the graph of unstable states has a cycle (iterative colouring)."""
    colour: dict = {}
    for root in succ:
        if root in colour:
            continue
        colour[root] = 1
        stack = [(root, iter(succ[root]))]
        while stack:
            n, it = stack[-1]
            t = next(it, None)
            if t is None:
                colour[n] = 2
                stack.pop()
                continue
            if t not in succ:
                continue
            c = colour.get(t)
            if c == 1:
                return True
            if c is None:
                colour[t] = 1
                stack.append((t, iter(succ[t])))
    return False


def gate_races(netlist: Netlist, region, sources: list) -> list:
    """Critical races and possible oscillations of a region after one or two inputs change.

    Returns a list (at most :data:`MAX_RACES`) of ``{"from": {source: 0/1},
    "to": {...}, "inputs_changed": [...], "outcomes": [{net: 0/1 of the
    region's nets}], "oscillation": bool, "racing": [nets excited first],
    "critical": bool, "complete": bool}``; only changes whose result is
    unpredictable or that may oscillate are listed.  Empty when the region
    is too big to search (:data:`MAX_RACE_GATES` gates).
    """
    gates = _gates(netlist, region, sources, True)
    srcs = list(sources)
    if gates is None:
        gates = _gates(netlist, region, region.inputs, False)
        srcs = list(region.inputs)
        if gates is None:
            return []
    try:
        model = _Model(gates, srcs, region.cuts)
    except KeyError:
        return []
    m = len(srcs)
    if m > 8:
        return []
    show = [i for i, n in enumerate(model.names) if n in set(region.nets)]
    out = []
    seen_keys = set()
    for x1 in range(1 << m):
        starts = model.stable_states(x1)
        changes = [1 << j for j in range(m)] + [(1 << j) | (1 << k) for j in range(m) for k in range(j + 1, m)]
        for s in starts:
            for ch in changes:
                x2 = x1 ^ ch
                if not model.stable_states(x2):
                    continue  # no stable state there at all: an oscillation the flow table reports
                ends, osc, complete = _explore(model, s, x2)
                seen_ends = {tuple((e >> i) & 1 for i in show) for e in ends}
                if len(seen_ends) <= 1 and not osc:
                    continue
                key = (x1, x2, frozenset(seen_ends), osc)
                if key in seen_keys:
                    continue
                seen_keys.add(key)
                ex = model.excited(s, x2)
                out.append({
                    "from": {srcs[j]: (x1 >> j) & 1 for j in range(m)},
                    "to": {srcs[j]: (x2 >> j) & 1 for j in range(m)},
                    "inputs_changed": [srcs[j] for j in range(m) if ch >> j & 1],
                    "outcomes": [{model.names[i]: v for i, v in zip(show, e)} for e in sorted(seen_ends)],
                    "oscillation": osc,
                    "racing": [model.names[i] for i in range(len(model.names)) if ex >> i & 1],
                    "critical": len(seen_ends) > 1,
                    "complete": complete,
                })
                if len(out) >= MAX_RACES:
                    return out
    # single changes first: they are races even in fundamental mode
    out.sort(key=lambda r: (len(r["inputs_changed"]), not r["critical"]))
    return out
