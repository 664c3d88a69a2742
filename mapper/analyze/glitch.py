"""Glitch finder: event-driven timing simulation of a build with delay ranges.

The delay model
---------------
Every cell has one propagation delay, fixed for the circuit in hand but
known only to lie in a range ``[min, max]`` from the catalog: ``max`` is the
catalog's maximum figure, ``min`` its typical figure (the catalogs give no
minimum; a fraction of the maximum can be asked for instead).  Because a
cell's delay is the same for every change through it, two paths through the
same cell share that cell's delay.  Changes propagate with transport delay
(a pulse shorter than a cell's delay still passes it; real gates swallow
some of those, so the widths reported are an upper view of what gets out).

Every event carries its *path*: the set of cells it went through since the
input change.  The time between two events is then a sum of cell delays
with signs, and its exact range over the delay box is
``[sum of min over cells only on the later path - sum of max over cells only
on the earlier one, ...]``.  That is the pulse-width range reported: an AND
of a signal and its own inverted copy pulses for exactly the inverter's
delay range.

What is searched
----------------
For every input state and every single-input change (and, on request, every
change of two inputs at once) -- all of them when there are at most
``max_transitions``, else that many drawn at random, and the count is
stated:

1. a three-valued simulation with the changing inputs unknown (E. B.
   Eichelberger, IBM J. Res. Dev. 9(2), 1965) marks the nets that may move;
   a net that may glitch must come out unknown and be reached from the
   changing inputs by at least two paths of unknown nets -- other changes
   are glitch-free for any delays and are not simulated further;
2. for the nets still in question (outputs, and nets that reach a clock,
   enable, preset or clear input of a storage cell), the paths from the
   changing inputs are enumerated (at most :data:`PATHS_PER_NET` per net) and
   the circuit is simulated at delay corners that make each path as early
   (its cells at min, all others at max) and as late as possible, plus all
   at min and all at max.  A race between two paths shows at one of those
   corners whenever the delay ranges allow it in that order.

A net that ends where it started but moved is a static-1 or static-0
hazard; one that ends elsewhere but moved more than once is a dynamic
hazard.  Every hazard reported was seen at a concrete delay vector inside
the ranges, so none is invented; a hazard needing a race among three or
more paths in a particular order may be missed -- the count of changes that
the three-valued test could not rule out but no corner showed is reported
(``not_shown``; most are changes that can glitch only under delays outside
the catalog ranges).  At most :data:`PATHS_PER_CHANGE` paths per change get
corners of their own, shared out among the nets in question.

Work budget.  The search counts cell evaluations.  ``netfit timing``
allows :data:`TIMING_MAX_WORK`; the figures in every build report allow
:data:`BUILD_MAX_WORK` or :data:`BUILD_WORK_PER_CELL` per cell, whichever is
more, so their time grows in step with the rest of the build while the share
of input changes examined shrinks.  The budget is checked before every
change and every timed run and within a run (a run that would pass it is
given up), and ``glitch_search`` says what was covered: ``checked`` of
``total`` changes, ``timed_runs``, ``cell_evaluations`` of ``work_budget``,
``last_change_partial`` (how many of the last change's delay corners ran)
and all of that in words in ``sample``.  Timed runs leave out the cells
whose output the three-valued simulation found known (they cannot move),
which gives the same events for less work.

Hazards are reported per net, kind and changing inputs: ``when`` lists the
states of the other inputs where it shows (merged into cubes),
``directions`` which way the inputs went, ``width_s`` the union of the
pulse-width ranges of all races seen, ``racing_paths`` the race with the
widest pulse (hop by hop with parts and pins) and ``races`` how many
different pairs of paths raced.

A glitch on a net that reaches a clock, enable, preset or clear input of a
storage cell can store a wrong value: it is flagged as an error.

Relay builds have no cells; :func:`relay_transfers` gives the interval
during which each relay-driven net floats (the changeover contact breaks
before it makes) and when it has settled (bounce added).
"""
from __future__ import annotations

import heapq
import logging
import random
from dataclasses import dataclass, field

from ..logic.function import isop

__all__ = [
    "Gate",
    "TimedCircuit",
    "find_glitches",
    "glitch_report",
    "relay_transfers",
    "relay_glitches",
    "PATHS_PER_NET",
    "PATHS_PER_CHANGE",
    "MAX_TRANSITIONS",
    "BUILD_MAX_TRANSITIONS",
    "BUILD_MAX_WORK",
    "BUILD_WORK_PER_CELL",
    "path_mask",
    "TIMING_MAX_WORK",
    "WATCH_ROLES",
]

log = logging.getLogger(__name__)

#: paths enumerated per net in question, per input change
PATHS_PER_NET = 8
#: paths (each tried early and late) per input change, over all nets in question
PATHS_PER_CHANGE = 12
#: input changes examined by ``netfit timing`` before it samples instead
MAX_TRANSITIONS = 20000
#: cell evaluations ``netfit timing`` spends by default (some tens of seconds on a big build);
#: asking for a number of changes lifts it
TIMING_MAX_WORK = 5_000_000
#: input changes examined for the figures in every build report
BUILD_MAX_TRANSITIONS = 1024
#: cell evaluations allowed for the figures in every build report (keeps big builds quick) ...
BUILD_MAX_WORK = 80_000
#: ... or this many per cell of the build when that is more: the search's time then grows in step
#: with the build's setup (a timed run of one change on a 20k-cell build is some 100k-300k evaluations,
#: so a big build gets at least one change's uniform-delay runs; the share of changes examined shrinks)
BUILD_WORK_PER_CELL = 16
#: storage-cell input roles where a glitch is an error
WATCH_ROLES = ("clock", "enable", "preset", "clear")
#: hazards listed at most (the count of all is given)
MAX_LISTED = 500

_X = 2


@dataclass
class Gate:
    """One timed cell: ``out = table(ins)`` after a delay in ``[dmin, dmax]`` seconds.

    ``table`` is a truth table over ``ins`` (input 0 least significant).
    ``part``, ``cell``, ``slot``, ``in_pins`` (``(name, number)`` per input)
    and ``out_pin`` describe the cell for reports.
    """

    out: str
    ins: tuple
    table: int
    dmin: float
    dmax: float
    part: str | None = None
    cell: str | None = None
    slot: int | None = None
    in_pins: tuple = ()
    out_pin: tuple | None = None


@dataclass
class TimedCircuit:
    """A combinational circuit of timed gates (see :class:`Gate`).

    ``inputs`` are the free variables (primary inputs and storage outputs),
    ``outputs`` maps output names to nets, ``watch`` maps nets that reach a
    storage cell's clock/enable/preset/clear to descriptions of those pins,
    ``constants`` maps rail nets to 0/1.
    """

    name: str
    inputs: list
    gates: list
    outputs: dict
    watch: dict = field(default_factory=dict)
    constants: dict = field(default_factory=dict)

    @classmethod
    def from_build(cls, build, min_fraction: float | None = None) -> "TimedCircuit":
        """The logic cells of a gate build with their catalog delay ranges.

        ``min`` is the typical figure, or ``min_fraction`` times the maximum
        when given.  Storage outputs become inputs; an inverted storage
        output (``QN``) is a zero-delay inverter of ``Q``.
        """
        from .timing import PartIndex, net_loads

        target = build.target
        ix = PartIndex(build)
        loads = net_loads(build, ix)
        gates = []
        inputs = list(build.inputs)
        taken = set(inputs)
        shapes: dict = {}
        watch: dict = {}
        members: dict = {}
        for c in build.cells:
            if getattr(c, "group", None) is not None:
                members.setdefault(c.group, []).append(c)
        for key, grp in getattr(build, "storage_groups", {}).items():
            # storage made of gates: its loop is one storage element here, as for the prover
            if grp.q not in taken:
                inputs.append(grp.q)
                taken.add(grp.q)
            if grp.control and grp.control not in ("VCC", "GND"):
                cells = members.get(key, [])
                watch.setdefault(grp.control, []).append({
                    "part": cells[0].part_ref if cells else None, "cell": grp.template, "slot": None,
                    "pin": "control", "pin_number": None,
                    "role": "clock" if grp.kind in ("re", "fe") else "enable"})
        for c in build.cells:
            cd = target.cells[c.cell]
            if getattr(c, "group", None) is not None:
                continue
            if cd.storage is not None:
                q = c.pins.get(cd.output)
                if q and q not in taken:
                    inputs.append(q)
                    taken.add(q)
                for extra in cd.extra_outputs:
                    if c.pins.get(extra) and q:
                        gates.append(Gate(c.pins[extra], (q,), 0b01, 0.0, 0.0, c.part_ref, c.cell, c.slot,
                                          ((cd.output, ix.pin_of(c, cd.output)),),
                                          (extra, ix.pin_of(c, extra))))
                for p in cd.inputs:
                    role = cd.roles.get(p)
                    if role is None and len(cd.inputs) > 1 and p == cd.inputs[1]:
                        role = "clock"  # a storage cell's control input
                    net = c.pins.get(p)
                    if role in WATCH_ROLES and net and net not in ("VCC", "GND"):
                        watch.setdefault(net, []).append({
                            "part": c.part_ref, "cell": c.cell, "slot": c.slot, "pin": p,
                            "pin_number": ix.pin_of(c, p), "role": role})
                continue
            pins = c.pins
            t, m = ix.cell_delay(c, loads.get(pins.get(cd.output), 0.0))
            lo = t if min_fraction is None else min_fraction * m
            # pin numbers and truth table are the same for every cell in the same slot of the same part type
            key = (ix.part_id(c.part_ref), c.slot, c.cell)
            shape = shapes.get(key)
            if shape is None:
                shape = shapes[key] = (tuple((p, ix.pin_of(c, p)) for p in cd.inputs),
                                       (cd.output, ix.pin_of(c, cd.output)), cd.function.table())
            gates.append(Gate(
                pins[cd.output], tuple([pins[p] for p in cd.inputs]), shape[2],
                min(lo, m), m, c.part_ref, c.cell, c.slot, shape[0], shape[1]))
        outputs = {o: build.output_nets.get(o, o) for o in build.outputs}
        return cls(build.design, inputs, gates, outputs, watch, {"VCC": 1, "GND": 0})

    @classmethod
    def from_netlist(cls, netlist, dmin: float, dmax: float) -> "TimedCircuit":
        """A design's logic nodes as gates, each with the delay range ``[dmin, dmax]``.

        Storage outputs become inputs and their controls are watched, as for
        builds.  Nodes wider than a truth table are refused (``ValueError``).
        """
        from ..netlist import Logic, Storage

        inputs = list(netlist.inputs)
        gates = []
        watch: dict = {}
        consts = {}
        for name, node in netlist.nodes.items():
            if isinstance(node, Storage):
                inputs.append(name)
                if node.control is not None:
                    watch.setdefault(node.control, []).append({
                        "part": None, "cell": f"storage {name}", "slot": None, "pin": "control",
                        "pin_number": None, "role": "clock" if node.kind in ("re", "fe") else "enable"})
            elif isinstance(node, Logic):
                if not node.fanins:
                    consts[name] = node.func.constant_value()
                    continue
                gates.append(Gate(name, tuple(node.fanins), node.func.table(), dmin, dmax))
        return cls(netlist.name, inputs, gates, {o: o for o in netlist.outputs}, watch, consts)


class _Engine:
    """Integer-indexed form of a :class:`TimedCircuit` with the simulations."""

    def __init__(self, circ: TimedCircuit):
        self.circ = circ
        ids: dict = {}
        nid = ids.setdefault
        for i in circ.inputs:
            nid(i, len(ids))
        for n in circ.constants:
            nid(n, len(ids))
        raw_in = []
        raw_out = []
        for g in circ.gates:
            raw_in.append(tuple([nid(n, len(ids)) for n in g.ins]))
            raw_out.append(nid(g.out, len(ids)))
        for n in list(circ.outputs.values()) + list(circ.watch):
            nid(n, len(ids))
        self.ids = ids
        self.names = list(ids)
        self.input_ids = [ids[i] for i in circ.inputs]
        # topological order of the gates
        drv = {o: k for k, o in enumerate(raw_out)}
        indeg = [0] * len(circ.gates)
        users: dict = {}
        for k, ins in enumerate(raw_in):
            deps = {n for n in ins if n in drv}
            indeg[k] = len(deps)
            for d in deps:
                users.setdefault(d, []).append(k)
        ready = [k for k in range(len(circ.gates)) if indeg[k] == 0][::-1]
        order = []
        while ready:
            k = ready.pop()
            order.append(k)
            for u in users.get(raw_out[k], ()):
                indeg[u] -= 1
                if indeg[u] == 0:
                    ready.append(u)
        if len(order) != len(circ.gates):
            raise ValueError("the circuit's cells form a loop; the glitch finder needs loop-free logic")
        self.gates = [circ.gates[k] for k in order]
        self.gin = [raw_in[k] for k in order]
        self.gout = [raw_out[k] for k in order]
        self.gtab = [g.table for g in self.gates]
        self.dmin = [g.dmin for g in self.gates]
        self.dmax = [g.dmax for g in self.gates]
        self.driver = {o: k for k, o in enumerate(self.gout)}
        self.fanout: dict = {}
        for k, ins in enumerate(self.gin):
            for n in set(ins):
                self.fanout.setdefault(n, []).append(k)
        self.const = {ids[n]: v for n, v in circ.constants.items()}
        self.watch_ids = {ids[n] for n in circ.watch}
        self.out_ids = {ids[n] for n in circ.outputs.values()}
        self.look = sorted(self.watch_ids | self.out_ids)
        self._cone: dict = {}
        self._steady: dict = {}
        #: cell evaluations so far (the search's budget counts these)
        self.work = 0

    # -- plain and three-valued evaluation --------------------------------
    def steady(self, state: int) -> list:
        """Net values (list by net id) with the inputs at ``state`` (bit i = input i)."""
        v = self._steady.get(state)
        if v is not None:
            return v
        vals = [0] * len(self.names)
        for n, c in self.const.items():
            vals[n] = c
        for i, n in enumerate(self.input_ids):
            vals[n] = (state >> i) & 1
        self.work += len(self.gin)
        for k, ins in enumerate(self.gin):
            idx = 0
            for j, n in enumerate(ins):
                idx |= vals[n] << j
            vals[self.gout[k]] = (self.gtab[k] >> idx) & 1
        self._keep(state, vals)
        return vals

    def _keep(self, state: int, vals: list) -> None:
        # at most 4096 states, and at most about 4 million values in all (memory on big builds)
        if len(self._steady) < min(4096, 1 + 4_000_000 // max(1, len(vals))):
            self._steady[state] = vals

    def steady_after(self, state: int, changed: tuple) -> list:
        """Net values after the inputs ``changed`` flip from ``state`` (only their cone is evaluated)."""
        after = state
        for i in changed:
            after ^= 1 << i
        v = self._steady.get(after)
        if v is not None:
            return v
        vals = list(self.steady(state))
        for i in changed:
            vals[self.input_ids[i]] = (after >> i) & 1
        cone = self.cone(changed)
        self.work += len(cone)
        gin, gout, gtab = self.gin, self.gout, self.gtab
        for k in cone:
            idx = 0
            for j, n in enumerate(gin[k]):
                idx |= vals[n] << j
            vals[gout[k]] = (gtab[k] >> idx) & 1
        self._keep(after, vals)
        return vals

    def cone(self, changed: tuple) -> list:
        """Gate indices (topological) reachable from the input indices ``changed``."""
        key = changed
        c = self._cone.get(key)
        if c is not None:
            return c
        seen = set()
        stack = [self.input_ids[i] for i in changed]
        nets = set(stack)
        while stack:
            n = stack.pop()
            for k in self.fanout.get(n, ()):
                if k not in seen:
                    seen.add(k)
                    o = self.gout[k]
                    if o not in nets:
                        nets.add(o)
                        stack.append(o)
        c = sorted(seen)
        self._cone[key] = c
        return c

    def _eval(self, k, vals) -> int:
        idx = 0
        for j, n in enumerate(self.gin[k]):
            idx |= vals[n] << j
        return (self.gtab[k] >> idx) & 1

    def _eval3(self, k, vals) -> int:
        idx = 0
        xs = []
        for j, n in enumerate(self.gin[k]):
            v = vals[n]
            if v == _X:
                xs.append(j)
            else:
                idx |= v << j
        t = self.gtab[k]
        if not xs:
            return (t >> idx) & 1
        seen = set()
        for m in range(1 << len(xs)):
            i = idx
            for b, j in enumerate(xs):
                if (m >> b) & 1:
                    i |= 1 << j
            seen.add((t >> i) & 1)
            if len(seen) == 2:
                return _X
        return seen.pop()

    def ternary(self, state: int, changed: tuple):
        """Three-valued values with the changed inputs unknown, and X-path counts per net."""
        vals = list(self.steady(state))
        cnt: dict = {}
        for i in changed:
            n = self.input_ids[i]
            vals[n] = _X
            cnt[n] = 1
        cone = self.cone(changed)
        self.work += len(cone)
        for k in cone:
            v = self._eval3(k, vals)
            o = self.gout[k]
            vals[o] = v
            if v == _X:
                cnt[o] = min(sum(cnt.get(n, 0) for n in set(self.gin[k]) if vals[n] == _X), 1 << 30)
        return vals, cnt

    def paths(self, net: int, tern: list, changed_ids: set, limit: int) -> list:
        """Up to ``limit`` paths from changed inputs to ``net`` through unknown nets.

        Each path is a chain of cell indices as :meth:`simulate` records it
        (here first cell outermost); :func:`path_mask` gives its bit mask.
        """
        out = []
        stack = [(net, None)]
        while stack and len(out) < limit:
            n, mask = stack.pop()
            if n in changed_ids:
                out.append(mask)
                continue
            k = self.driver.get(n)
            if k is None:
                continue
            for m in dict.fromkeys(self.gin[k]):
                if tern[m] == _X:
                    stack.append((m, (k, mask)))
        return out

    # -- timed simulation ---------------------------------------------------
    def live_fanout(self, tern: list, changed: tuple) -> dict:
        """Fan-out lists cut down to the cells that can move in a timed run of this change.

        Only cells whose output is unknown (X) in the three-valued values
        ``tern`` can move at all: a known output holds for every delay, so
        the cells left out would only be evaluated to no effect and the
        events of a run are the same without them.  Returns net id -> cell
        indices, as :attr:`fanout`.
        """
        gout = self.gout
        live = {k for k in self.cone(changed) if tern[gout[k]] == _X}
        fo: dict = {}
        fanout = self.fanout
        for n in [self.input_ids[i] for i in changed] + [gout[k] for k in live]:
            ks = [k for k in fanout.get(n, ()) if k in live]
            if ks:
                fo[n] = ks
        return fo

    def simulate(self, vals0: list, changes: list, delay: list, look: set, fanout: dict | None = None,
                 max_work: int | None = None) -> dict | None:
        """Transport-delay event simulation of input ``changes`` [(net id, value)] at time 0.

        Returns net id -> list of ``(time, value, path, source net id)``
        for the nets in ``look`` (changes of value only).  ``path`` is the
        chain of cells the change went through, last first, as nested pairs
        ``(cell index, rest)`` ending in ``None`` (:func:`path_mask` turns
        it into a bit mask); building masks on the way would cost a big-integer
        operation per event.  ``fanout`` (see :meth:`live_fanout`) limits the
        cells simulated.  A run that would evaluate more than ``max_work``
        cells is given up: it returns ``None`` (its work still counts).
        """
        cur = list(vals0)
        last = list(vals0)  # the value each net was last scheduled to take
        # events wait in buckets per time; the heap holds the distinct times only
        buckets: dict = {}
        times: list = []
        if changes:
            buckets[0.0] = [(n, v, None, n) for n, v in changes]
            times.append(0.0)
        waves = {n: [] for n in look}
        wget = waves.get
        work = 0
        if fanout is None:
            fanout = self.fanout
        fget = fanout.get
        gin, gout, gtab = self.gin, self.gout, self.gtab
        pop, push = heapq.heappop, heapq.heappush
        while times:
            t0 = pop(times)
            limit = t0 + max(abs(t0), 1e-15) * 1e-9
            batch = [(t0, buckets.pop(t0))]
            while times and times[0] <= limit:
                t = pop(times)
                batch.append((t, buckets.pop(t)))
            touched: dict = {}
            for t, events in batch:
                for ev in events:
                    n, v, form, src = ev
                    old = cur[n]
                    if old == v:
                        continue
                    cur[n] = v
                    w = wget(n)
                    if w is not None:
                        w.append((t, v, form, src))
                    ks = fget(n)
                    if ks is None:
                        continue
                    cause = (n, old, form, src)
                    for k in ks:
                        ch = touched.get(k)
                        if ch is None:
                            touched[k] = [cause]
                        else:
                            ch.append(cause)
            work += len(touched)
            if max_work is not None and work > max_work:
                self.work += work
                return None
            for k, ch in touched.items():
                o = gout[k]
                ins = gin[k]
                tab = gtab[k]
                idx = 0
                j = 0
                for x in ins:
                    idx |= cur[x] << j
                    j += 1
                nv = (tab >> idx) & 1
                if nv == last[o]:
                    continue
                cause = ch[0]
                if len(ch) > 1:
                    # the input whose change this output change needs (reverting it alone undoes it)
                    for c in ch:
                        n0, old0 = c[0], c[1]
                        a = 0
                        j = 0
                        for x in ins:
                            a |= (old0 if x == n0 else cur[x]) << j
                            j += 1
                        if (tab >> a) & 1 != nv:
                            cause = c
                            break
                last[o] = nv
                t = t0 + delay[k]
                ev = (o, nv, (k, cause[2]), cause[3])
                b = buckets.get(t)
                if b is None:
                    buckets[t] = [ev]
                    push(times, t)
                else:
                    b.append(ev)
        self.work += work + len(self.gin) // 4 + 1  # and the copies made per run
        return waves

    def width(self, early: int, late: int) -> tuple[float, float]:
        """Exact range of (time of path ``late``) - (time of path ``early``) over the delay box."""
        lo = hi = 0.0
        for k in _bits(late & ~early):
            lo += self.dmin[k]
            hi += self.dmax[k]
        for k in _bits(early & ~late):
            lo -= self.dmax[k]
            hi -= self.dmin[k]
        return lo, hi

    def span(self, mask: int) -> tuple[float, float]:
        lo = sum(self.dmin[k] for k in _bits(mask))
        hi = sum(self.dmax[k] for k in _bits(mask))
        return lo, hi


def _sec(x: float) -> float:
    """Seconds rounded to the femtosecond (sums of catalog figures carry float noise)."""
    return round(x, 15)


_BYTE_BITS = [tuple(j for j in range(8) if (v >> j) & 1) for v in range(256)]


def _bits(mask: int):
    """Indices of the set bits of ``mask``, lowest first."""
    if mask.bit_length() <= 1024:
        while mask:
            low = mask & -mask
            yield low.bit_length() - 1
            mask ^= low
        return
    # a wide mask (a path deep in a big build): byte by byte, not a big-integer operation per bit
    data = mask.to_bytes((mask.bit_length() + 7) // 8, "little")
    for i, v in enumerate(data):
        if v:
            base = i << 3
            for j in _BYTE_BITS[v]:
                yield base + j


def path_mask(path) -> int:
    """Bit mask of the cells on a path as :meth:`_Engine.simulate` records it."""
    ks = []
    while path is not None:
        k, path = path
        ks.append(k)
    if not ks:
        return 0
    bits = bytearray((max(ks) >> 3) + 1)
    for k in ks:
        bits[k >> 3] |= 1 << (k & 7)
    return int.from_bytes(bits, "little")


def _transitions(n: int, sizes: tuple, limit: int, seed: int):
    """(list of (state, changed tuple), total, exhaustive)."""
    from itertools import combinations
    groups = [c for s in sizes for c in combinations(range(n), s)]
    total = (1 << n) * len(groups)
    if total <= limit:
        return [(s, c) for s in range(1 << n) for c in groups], total, True
    rng = random.Random(seed)
    seen = set()
    out = []
    while len(out) < limit:
        s = rng.getrandbits(n) if n else 0
        c = groups[rng.randrange(len(groups))]
        if (s, c) in seen:
            continue
        seen.add((s, c))
        out.append((s, c))
    return out, total, False


def _hop_list(eng: _Engine, mask: int, src: int) -> list:
    """The cells of a path (a gate mask from source net ``src``) in order, with pins."""
    hops = []
    prev = src
    for k in _bits(mask):  # gate indices are topological
        g = eng.gates[k]
        pin = None
        for (p, num), n in zip(g.in_pins or [(None, None)] * len(g.ins), g.ins):
            if eng.ids[n] == prev:
                pin = (p, num)
                break
        hop = {"net_in": eng.names[prev], "net": g.out, "delay_s": [_sec(g.dmin), _sec(g.dmax)]}
        if g.part is not None:
            hop.update({"part": g.part, "cell": g.cell, "slot": g.slot})
            if pin:
                hop.update({"from_pin": pin[0], "from_pin_number": pin[1]})
            if g.out_pin:
                hop.update({"to_pin": g.out_pin[0], "to_pin_number": g.out_pin[1]})
        hops.append(hop)
        prev = eng.gout[k]
    return hops


def find_glitches(circ: TimedCircuit, multi: bool = False, max_transitions: int = MAX_TRANSITIONS,
                  seed: int = 0, paths_per_net: int = PATHS_PER_NET, max_work: int | None = None,
                  max_paths: int = PATHS_PER_CHANGE) -> dict:
    """Search ``circ`` for glitches (see the module docstring).

    Returns a dict with ``hazards`` (list, see :func:`glitch_report`),
    ``transitions`` (``checked``, ``total``, ``exhaustive``, ``sizes``,
    ``timed_runs``, ``not_shown``, ``stopped_early``) and ``errors`` (the
    count of hazards that reach a storage cell's clock, enable, preset or
    clear).  ``max_work`` bounds the cell evaluations; the search stops after
    the change that passes it and says how many changes it examined.
    """
    from .timing import paused_gc

    with paused_gc():
        return _find_glitches(circ, multi, max_transitions, seed, paths_per_net, max_work, max_paths)


def _find_glitches(circ, multi, max_transitions, seed, paths_per_net, max_work, max_paths) -> dict:
    """The work of :func:`find_glitches`."""
    eng = _Engine(circ)
    n = len(circ.inputs)
    sizes = (1, 2) if multi else (1,)
    sizes = tuple(s for s in sizes if s <= n)
    trans, total, exhaustive = _transitions(n, sizes, max_transitions, seed) if n else ([], 0, True)
    if max_work is not None and exhaustive:
        # a budget may stop the search: take the changes in random order so what is done is a fair sample
        random.Random(seed).shuffle(trans)
    groups: dict = {}
    runs = 0
    not_shown = 0
    checked = 0
    stopped = False
    partial = None
    for state, changed in trans:
        if max_work is not None and eng.work > max_work:
            stopped = True
            break
        checked += 1
        tern, cnt = eng.ternary(state, changed)
        after = state
        for i in changed:
            after ^= 1 << i
        v0 = eng.steady(state)
        cands = [m for m in eng.look if tern[m] == _X and cnt.get(m, 0) >= 2]
        if not cands:
            continue
        v1 = eng.steady_after(state, changed)
        changed_ids = {eng.input_ids[i] for i in changed}
        # paths of every net in question, taken in turn so each net gets its share of the corners
        per_net = [eng.paths(m, tern, changed_ids, paths_per_net) for m in cands]
        masks: dict = {}
        for rank in range(paths_per_net):
            for ps in per_net:
                if rank < len(ps) and len(masks) < max_paths:
                    masks.setdefault(path_mask(ps[rank]), None)
        corners = [("min", 0), ("max", 0)] + [(kind, p) for p in masks for kind in ("early", "late")]
        changes = [(eng.input_ids[i], v1[eng.input_ids[i]]) for i in changed]
        look = set(cands)
        fanout = eng.live_fanout(tern, changed)
        found: dict = {}
        done = 0
        for kind, p in corners:
            if max_work is not None and eng.work > max_work:
                stopped = True
                break
            delay = eng.dmax[:] if kind in ("max", "early") else eng.dmin[:]
            if kind == "early":
                for k in _bits(p):
                    delay[k] = eng.dmin[k]
            elif kind == "late":
                for k in _bits(p):
                    delay[k] = eng.dmax[k]
            waves = eng.simulate(v0, changes, delay, look, fanout,
                                 None if max_work is None else max(0, max_work - eng.work))
            if waves is None:
                stopped = True
                break
            done += 1
            runs += 1
            for m in cands:
                ev = waves[m]
                a, b = v0[m], v1[m]
                if a == b and len(ev) >= 2:
                    hk = f"static-{a}"
                elif a != b and len(ev) >= 3:
                    hk = "dynamic"
                else:
                    continue
                (t1, _, f1, s1), (t2, _, f2, s2) = ev[0], ev[1]
                f1, f2 = path_mask(f1), path_mask(f2)
                key = (m, hk, frozenset({(f1, s1), (f2, s2)}))
                if key not in found:
                    found[key] = ((f1, s1), (f2, s2), t2 - t1)
        if done < len(corners):
            partial = {"delay_corners_run": done, "delay_corners": len(corners)}
        else:
            static_cands = {m for m in cands if v0[m] == v1[m]}
            shown = {k[0] for k in found}
            not_shown += len(static_cands - shown)
        cond_bits = [i for i in range(n) if i not in changed]
        cond = 0
        for b, i in enumerate(cond_bits):
            cond |= ((state >> i) & 1) << b
        dirs = tuple(f"{circ.inputs[i]} {'rises' if (after >> i) & 1 else 'falls'}" for i in changed)
        for (m, hk, pair), ((f1, s1), (f2, s2), ex) in found.items():
            gkey = (m, hk, changed)
            g = groups.get(gkey)
            lo, hi = eng.width(f1, f2)
            lo = max(lo, 0.0)
            if g is None:
                g = groups[gkey] = {
                    "net": m, "kind": hk, "changed": changed, "conds": set(), "dirs": set(),
                    "width": (lo, hi), "example": ex, "widest": hi,
                    "paths": [(f1, s1), (f2, s2)], "cond_bits": cond_bits, "races": set(),
                }
            else:
                g["width"] = (min(g["width"][0], lo), max(g["width"][1], hi))
                if hi > g["widest"]:
                    g["widest"], g["paths"], g["example"] = hi, [(f1, s1), (f2, s2)], ex
            g["races"].add(pair)
            g["conds"].add(cond)
            g["dirs"].add(dirs)
    hazards = []
    port_of: dict = {}
    for o, net in circ.outputs.items():
        port_of.setdefault(net, []).append(o)
    for g in sorted(groups.values(), key=lambda g: (eng.names[g["net"]], g["kind"], g["changed"])):
        net = eng.names[g["net"]]
        names = [circ.inputs[i] for i in g["cond_bits"]]
        when = _conditions(sorted(g["conds"]), names, exhaustive)
        reaches = circ.watch.get(net, [])
        paths = []
        for f, s in g["paths"]:
            lo, hi = eng.span(f)
            paths.append({"from": eng.names[s], "delay_s": [_sec(lo), _sec(hi)], "hops": _hop_list(eng, f, s)})
        for port in port_of.get(net, [None]):
            hazards.append({
                "output": port if port is not None else net,
                "net": net,
                "kind": g["kind"],
                "inputs_changed": [circ.inputs[i] for i in g["changed"]],
                "directions": sorted(", ".join(d) for d in g["dirs"]),
                "when": when,
                "width_s": [_sec(g["width"][0]), _sec(g["width"][1])],
                "width_example_s": _sec(g["example"]),
                "racing_paths": paths,
                "races": len(g["races"]),
                "reaches": reaches,
                "error": bool(reaches),
            })
    errors = sum(1 for h in hazards if h["error"])
    listed = hazards[:MAX_LISTED]
    return {
        "hazards": listed,
        "hazards_total": len(hazards),
        "errors": errors,
        "transitions": {"checked": checked, "total": total, "exhaustive": exhaustive and not stopped,
                        "stopped_early": stopped, "cell_evaluations": eng.work, "work_budget": max_work,
                        "last_change_partial": partial,
                        "sizes": list(sizes), "timed_runs": runs, "not_shown": not_shown,
                        "seed": None if exhaustive else seed},
    }


def _sample_text(tr: dict) -> str:
    """What a glitch search covered, in one sentence with its counts."""
    total = tr["total"]
    total_s = f"{total:,}" if total < 10 ** 12 else f"{total:.3g}"
    if tr["exhaustive"]:
        text = f"all {total_s} input changes"
    else:
        how = "in random order" if tr.get("seed") is None else "drawn at random"
        text = f"{tr['checked']:,} of {total_s} input changes {how}"
        if tr["stopped_early"]:
            text += f", until the work budget of {tr['work_budget']:,} cell evaluations ran out"
    text += f"; {tr['timed_runs']:,} timed simulations"
    part = tr.get("last_change_partial")
    if part:
        text += (f"; the last change only at {part['delay_corners_run']} of its "
                 f"{part['delay_corners']} delay corners")
    return text


def _conditions(conds: list, names: list, exhaustive: bool) -> list:
    """States of the other inputs, merged into cubes (dicts name -> value)."""
    k = len(names)
    if k == 0:
        return [{}]
    if k <= 12:
        tab = 0
        for c in conds:
            tab |= 1 << c
        cubes, _ = isop(tab, tab, k)
        return [{names[j]: int(ch) for j, ch in enumerate(cube) if ch != "-"} for cube in sorted(cubes)]
    return [{names[j]: (c >> j) & 1 for j in range(k)} for c in conds[:8]]


def glitch_report(build, multi: bool = False, max_transitions: int = BUILD_MAX_TRANSITIONS,
                  seed: int = 0, min_fraction: float | None = None,
                  max_work: int | None = BUILD_MAX_WORK, work_per_cell: float = BUILD_WORK_PER_CELL) -> dict:
    """Glitch figures of a build for ``build.timing``.

    Gate builds: :func:`find_glitches` on the build's cells, giving
    ``hazards``, ``hazards_total``, ``glitch_errors`` and ``glitch_search``.
    The work budget is ``max_work`` cell evaluations or ``work_per_cell``
    times the number of cells, whichever is more (``None``: no budget);
    ``glitch_search["sample"]`` says in words what the search covered.
    Relay builds: ``floating`` (:func:`relay_transfers`) and the
    break-before-make glitches of :func:`relay_glitches`.
    """
    if not build.cells:
        out = {"hazards": [], "hazards_total": 0, "glitch_errors": 0}
        if build.contacts:
            out["floating"] = relay_transfers(build)
            rg = relay_glitches(build)
            out["hazards"] = rg["hazards"]
            out["hazards_total"] = len(rg["hazards"])
            out["glitch_search"] = rg["search"]
        return out
    from .timing import paused_gc

    with paused_gc():
        circ = TimedCircuit.from_build(build, min_fraction)
    if max_work is not None:
        max_work = max(max_work, int(work_per_cell * len(circ.gates)))
    res = find_glitches(circ, multi=multi, max_transitions=max_transitions, seed=seed, max_work=max_work)
    search = dict(res["transitions"])
    search["min_delay"] = "typical figure" if min_fraction is None else f"{min_fraction:g} of the maximum"
    search["sample"] = _sample_text(search)
    return {"hazards": res["hazards"], "hazards_total": res["hazards_total"],
            "glitch_errors": res["errors"], "glitch_search": search}


def _relay_setup(build):
    """(loaded nets, part ref -> (typical, transfer, bounce) seconds, drivers, pole order)."""
    from .relay_timing import DIODE_RELEASE_FACTOR

    target = build.target
    loaded, diodes = set(), set()
    for s in build.support:
        pd = target.parts.get(s.part_id)
        if pd is not None and pd.ratings.get("resistance") is not None and "GND" in s.nets:
            loaded.update(x for x in s.nets if x != "GND")
        if "diode" in f"{s.part_id} {pd.description if pd else ''}".lower():
            diodes.update(s.nets)
    sw = {}
    for p in build.parts:
        pd = target.parts[p.part_id]
        r = pd.relay
        if r is None:
            continue
        typ_fig = pd.delay_typ.get("changeover") if pd.delay_typ else None
        typ = typ_fig.value if typ_fig is not None else r.operate_time.value
        release = r.release_time.value * (DIODE_RELEASE_FACTOR if build.coils.get(p.ref) in diodes else 1.0)
        sw[p.ref] = (typ, max(r.operate_time.value, release), r.bounce_time.value)
    # relay-driven nets in topological order (fan-ins first); nets on loops (seal-in storage) last
    drivers: dict = {}
    for k in build.contacts:
        drivers.setdefault(k.com, []).append(k)
    deps = {net: {x for k in ks for x in (k.no, k.nc, build.coils.get(k.part_ref)) if x in drivers}
            for net, ks in drivers.items()}
    indeg = {n: len(d - {n}) for n, d in deps.items()}
    users: dict = {}
    for n, d in deps.items():
        for x in d - {n}:
            users.setdefault(x, []).append(n)
    ready = sorted((n for n, c in indeg.items() if c == 0), reverse=True)
    order = []
    while ready:
        n = ready.pop()
        order.append(n)
        for u in users.get(n, ()):
            indeg[u] -= 1
            if indeg[u] == 0:
                ready.append(u)
    done = set(order)
    left = [n for n in drivers if n not in done]
    return loaded, sw, drivers, order, left


def relay_transfers(build) -> list:
    """For each pole of a relay build, when its common net may float and when it has settled.

    The coil net's change arrives between its earliest and latest time (coil
    levels of the relays before it: typical changeover delay at the earliest,
    the longer of operate and release time plus bounce at the latest).  The
    changeover contact then breaks -- the common terminal touches neither side
    and its net floats (or is held by its load resistor) -- and makes within
    the operate or release time (a coil diode lengthens the release time as
    in :mod:`mapper.analyze.relay_timing`); then it bounces for the bounce
    time.  So:

    * ``floating_s`` = ``[earliest coil change, latest coil change + max(operate, release)]``
    * ``settled_s`` = ``floating_s[1] + bounce``

    each as seconds after the input change.  ``loaded`` says whether a
    resistor to ``GND`` holds the net while it floats (common practice: a
    relay-driven net feeding logic or a coil needs a defined load).
    """
    loaded, sw, drivers, order, left = _relay_setup(build)
    early: dict = {}
    late: dict = {}
    for net in order + left:  # nets on loops (seal-in storage) are timed from 0
        e = []
        la = []
        for k in drivers[net]:
            coil = build.coils.get(k.part_ref)
            typ, transfer, bounce = sw.get(k.part_ref, (0.0, 0.0, 0.0))
            e.append(early.get(coil, 0.0) + typ)
            la.append(late.get(coil, 0.0) + transfer + bounce)
            for x in (k.no, k.nc):
                if x in drivers:
                    e.append(early.get(x, 0.0))
                    la.append(late.get(x, 0.0))
        early[net] = min(e)
        late[net] = max(la)
    out = []
    for k in build.contacts:
        coil = build.coils.get(k.part_ref)
        typ, transfer, bounce = sw.get(k.part_ref, (0.0, 0.0, 0.0))
        start = early.get(coil, 0.0)
        end = late.get(coil, 0.0) + transfer
        out.append({"net": k.com, "part": k.part_ref, "pole": k.pole, "coil": coil,
                    "floating_s": [round(start, 9), round(end, 9)],
                    "settled_s": round(end + bounce, 9),
                    "loaded": k.com in loaded})
    return out


#: relay builds with more free variables (inputs and storage) than this are not searched
RELAY_MAX_INPUTS = 16


def relay_glitches(build, max_inputs: int = RELAY_MAX_INPUTS) -> dict:
    """Static-1 glitches of a relay build's outputs from break-before-make transfers.

    While a changeover contact transfers, its common terminal touches neither
    side: the net is cut off from the supply for that gap, and a net held by
    a load resistor reads 0.  So when a coil changes while both the
    normally-open and the normally-closed side carry 1 -- before and after
    the change -- the common net drops and comes back: a static-1 hazard of
    the contact network (hazards in contact networks: M. Yoeli and S. Rinon,
    JACM 11(1), 1964; the transfer gap: common practice).  A cut-off net
    passes the cut on through contacts of relays that do not move (contacts
    pass signals at once), down to the loaded nets that read it as 0; it is not followed
    through coils (a dropout shorter than the release time does not release a
    held relay -- common practice).  Every single-input change from every
    state of the inputs and storage outputs is examined (bit-parallel, up to
    ``max_inputs`` free variables).

    Returns ``hazards`` (as :func:`find_glitches`: ``output``, ``net``,
    ``kind``, ``inputs_changed``, ``directions``, ``when``, ``width_s`` =
    ``[0, transfer time of the relay that moves]``, ``racing_paths`` naming
    that relay's pole) and ``search``.
    """
    from ..logic.function import var_mask
    from ..netlist import Storage
    from ..simulate import simulate

    n = build.to_netlist()
    storage = [name for name, node in n.nodes.items() if isinstance(node, Storage)]
    free = list(n.inputs) + storage
    k = len(free)
    search = {"method": "break-before-make transfers, every single-input change", "free_variables": k}
    if k > max_inputs:
        search["checked"] = 0
        search["note"] = f"more than {max_inputs} inputs and storage outputs: not searched"
        return {"hazards": [], "search": search}
    npat = 1 << k
    mask = (1 << npat) - 1
    words = {x: var_mask(k, j) for j, x in enumerate(free)}
    vals = simulate(n, {x: words[x] for x in n.inputs}, mask, {x: words[x] for x in storage})
    vals["VCC"], vals["GND"] = mask, 0

    def val(net):
        return vals.get(net, 0) if net is not None else 0

    loaded, sw, drivers, order, _left = _relay_setup(build)
    out_ports: dict = {}
    for o in build.outputs:
        out_ports.setdefault(build.output_nets.get(o, o), []).append(o)
    hazards = []
    for j, x in enumerate(free):
        sh = 1 << j
        mj = var_mask(k, j)

        def nb(w):
            return ((w & mj) >> sh) | ((w & ~mj & mask) << sh)

        glitch: dict = {}
        cause: dict = {}
        for net in order:
            if net not in n.nodes or isinstance(n.nodes[net], Storage):
                continue
            pole = drivers[net][0]
            c = val(build.coils.get(pole.part_ref))
            no, nc, z = val(pole.no), val(pole.nc), val(net)
            ch = c ^ nb(c)
            # the net is cut off (floats, or is held low by its load) for the gap
            g = ch & no & nc & nb(no) & nb(nc)
            if g:
                cause[net] = pole
            through = ~ch & mask & z & nb(z) & ((c & glitch.get(pole.no, 0)) | (~c & glitch.get(pole.nc, 0)))
            if through & ~g:
                src = pole.no if glitch.get(pole.no, 0) & c & through else pole.nc
                cause.setdefault(net, cause.get(src))
            g |= through
            if g:
                glitch[net] = g
        for net, ports in out_ports.items():
            g = glitch.get(net, 0)
            if not g:
                continue
            conds = sorted({_drop_bit(p, j) for p in _bits(g)})
            dirs = []
            if g & ~mj:
                dirs.append(f"{x} rises")
            if g & mj:
                dirs.append(f"{x} falls")
            pole = cause.get(net)
            transfer = sw.get(pole.part_ref, (0, 0, 0))[1] if pole is not None else 0.0
            names = [free[i] for i in range(k) if i != j]
            for port in ports:
                hazards.append({
                    "output": port, "net": net, "kind": "static-1", "inputs_changed": [x],
                    "directions": sorted(dirs), "when": _conditions(conds, names, True),
                    "width_s": [0.0, _sec(transfer)], "width_example_s": _sec(transfer),
                    "racing_paths": [{"from": x, "break_before_make": {
                        "part": pole.part_ref, "pole": pole.pole, "coil": build.coils.get(pole.part_ref),
                        "net": pole.com, "loaded": pole.com in loaded} if pole is not None else None}],
                    "races": 1, "reaches": [], "error": False,
                })
    search["checked"] = k * npat
    search["exhaustive"] = True
    return {"hazards": hazards, "search": search}


def _drop_bit(p: int, j: int) -> int:
    """State ``p`` without bit ``j`` (higher bits move down)."""
    return (p & ((1 << j) - 1)) | ((p >> (j + 1)) << j)
