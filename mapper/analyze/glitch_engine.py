"""The glitch finder's engine: a timed circuit in integer arrays, with its simulations.

Plain and three-valued evaluation (E. B. Eichelberger, IBM J. Res. Dev.
9(2), 1965), path enumeration through the nets that may move, and an
event-driven timed simulation in which every event carries the set of cells
it went through (its *path*), so the time between two events is a signed sum
of cell delays and its exact range over the delay box is known.  See
:mod:`mapper.analyze.glitch` for what is searched with it.
"""
from __future__ import annotations

import heapq

from ..order import topological_order
from .timed import TimedCircuit

__all__ = ["Engine", "X", "bits", "path_mask", "sec"]

#: the unknown value of three-valued simulation
X = 2
_X = X


def sec(x: float) -> float:
    """Seconds rounded to the femtosecond (sums of catalog figures carry float noise)."""
    return round(x, 15)


_BYTE_BITS = [tuple(j for j in range(8) if (v >> j) & 1) for v in range(256)]


def bits(mask: int):
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
    """Bit mask of the cells on a path as :meth:`Engine.simulate` records it."""
    ks = []
    while path is not None:
        k, path = path
        ks.append(k)
    if not ks:
        return 0
    raw = bytearray((max(ks) >> 3) + 1)
    for k in ks:
        raw[k >> 3] |= 1 << (k & 7)
    return int.from_bytes(raw, "little")


class Engine:
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
        order, left = topological_order(range(len(circ.gates)),
                                        lambda k: {drv[n] for n in raw_in[k] if n in drv}, first_first=True)
        if left:
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
        out: list = []
        stack: list = [(net, None)]
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
        waves: dict = {n: [] for n in look}
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
        for k in bits(late & ~early):
            lo += self.dmin[k]
            hi += self.dmax[k]
        for k in bits(early & ~late):
            lo -= self.dmax[k]
            hi -= self.dmin[k]
        return lo, hi

    def span(self, mask: int) -> tuple[float, float]:
        lo = sum(self.dmin[k] for k in bits(mask))
        hi = sum(self.dmax[k] for k in bits(mask))
        return lo, hi

