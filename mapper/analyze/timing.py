"""Static timing of a build from the catalog's propagation delays.

What it computes
----------------
Arrival times run from the primary inputs (time 0) and from the outputs of
storage cells (their clock arrival plus the catalog's clock-to-output delay)
through every logic cell, adding the delay of the part its slot sits in, to
the outputs and to the data inputs of storage cells.  Four arrivals are
propagated for every net:

* latest with maximum figures -- the worst path (``delay_s``);
* latest with typical figures (``delay_typ_s``);
* earliest with minimum figures -- the best path (the catalogs give typical
  and maximum delays only, so the minimum is taken to be the typical figure);
* earliest with maximum figures.

Each output gets its worst and best path, listed part by part with package
pins (:meth:`mapper.build.Build.pin_of`), and the build's critical path is
the worst of all of them.

Loads.  The catalog figures hold for the load their ``conditions`` name (15
or 50 pF).  Where a part lists a rating ``delay-per-unit-load`` (seconds per
unit load on its output) that term is added for the net's fan-out load,
counted from the ``input_load`` of the parts the net feeds; the built-in
catalogs give no such rating, so their figures are used as they stand.  A
net loaded beyond its driver's ``output_drive`` is listed in
``overloaded`` either way.

Storage.  For a sequential build the highest safe clock rate comes from the
storage-to-storage paths (static timing analysis as in every digital-design
textbook; the setup relation below is common practice):

    T >= launch clock arrival (max) + clock-to-output (max) + logic (max)
         + setup of the capturing cell - capture clock arrival (min)

and the hold slack from the same paths with minimum figures.  Setup and hold
times come from part ratings ``setup-time`` / ``hold-time`` when the catalog
gives them (the built-in catalogs do not; then they count as 0 and a note
says so).  Clocks are traced back through inverters to their source: a path
launched on one edge and captured on the other has half a period (a 50 %
duty cycle is assumed).  Transparent latches are timed like flip-flops
clocked at their enable's opening edge (no time borrowing), which is
conservative.

Relay builds have contacts, not cells; their timing (operate and release
times) comes from :mod:`mapper.analyze.relay`.

Everything is iterative over a topological order of the cells.
"""
from __future__ import annotations

import contextlib
import gc
import logging

from ..build import SUPPLY_NETS, Build
from ..order import topological_order
from .loops import loop_cuts, loop_figures
from .results import ClockFigures, Timing

__all__ = ["static_timing", "cell_delay", "net_loads", "PartIndex", "paused_gc", "LOAD_RATING", "SETUP_RATING",
           "HOLD_RATING", "PULSE_RATING"]

log = logging.getLogger(__name__)

#: part rating (seconds per unit load on the output) that makes delay depend on load
LOAD_RATING = "delay-per-unit-load"
#: part ratings read for storage cells
SETUP_RATING = "setup-time"
HOLD_RATING = "hold-time"
#: shortest clock (or enable) pulse, high and low, a storage part needs
PULSE_RATING = "pulse-width"

_RAILS = SUPPLY_NETS
_EDGE = {"re": "rise", "ah": "rise", "fe": "fall", "al": "fall"}
_CLOCK_ROLES = ("clock", "enable")


@contextlib.contextmanager
def paused_gc():
    """Python's cycle collector off for the block (and back on after, if it was on).

    The analyses make millions of small tuples and dicts and no reference
    cycles; each automatic collection walks every object alive, so on a big
    build they took more than half the time.  Reference counting still frees
    everything as usual.
    """
    was = gc.isenabled()
    gc.disable()
    try:
        yield
    finally:
        if was:
            gc.enable()


class PartIndex:
    """Part definitions and package pins of a build's cells, looked up by dictionary.

    :meth:`mapper.build.Build.part_def` and :meth:`~mapper.build.Build.pin_of`
    search the build's part list on every call, which is quadratic over a
    whole build; this gives the same answers from tables made once.
    """

    def __init__(self, build):
        self.build = build
        self.parts = build.target.parts
        self.ref_id: dict = {}
        for p in build.parts:
            self.ref_id.setdefault(p.ref, p.part_id)  # the first part of a ref, as Build.part does
        self._pins: dict = {}
        self._delays: dict = {}

    def part_id(self, ref: str) -> str:
        """Part id of the part numbered ``ref`` (``KeyError`` when there is none)."""
        return self.ref_id[ref]

    def part_def(self, ref_or_id: str):
        """The catalog definition of a part ref (or of a part id), as :meth:`Build.part_def`."""
        return self.parts[self.ref_id.get(ref_or_id, ref_or_id)]

    def pin_of(self, cell, pin: str):
        """Package pin of ``pin`` of ``cell``, as :meth:`Build.pin_of` (which raises when there is none)."""
        pid = self.ref_id[cell.part_ref]
        key = (pid, cell.slot)
        table = self._pins.get(key)
        if table is None:
            pd = self.parts[pid]
            table = dict(pd.shared_pins)
            for s in pd.slots:
                if s.index == cell.slot:
                    table.update(s.pins)  # a slot's own pin wins over a shared pin of the same name
                    break
            self._pins[key] = table
        number = table.get(pin)
        if number is None:
            return self.build.pin_of(cell, pin)  # raises the build's own error
        return number

    def cell_delay(self, cell, load_ul: float = 0.0) -> tuple[float, float]:
        """:func:`cell_delay` of ``cell``, worked out once per part type, cell and load."""
        key = (self.ref_id.get(cell.part_ref, cell.part_ref), cell.cell, load_ul)
        d = self._delays.get(key)
        if d is None:
            d = self._delays[key] = cell_delay(self.build, cell, load_ul, self)
        return d

    def input_load(self, ref: str) -> float:
        """Unit loads of one input of the part numbered ``ref`` (0 when the catalog gives none)."""
        pd = self.part_def(ref)
        return pd.input_load.value if pd.input_load is not None else 0.0


def cell_delay(build, cell, load_ul: float = 0.0, index: PartIndex | None = None) -> tuple[float, float]:
    """(typical, maximum) delay in seconds of one placed cell.

    Zero when the catalog gives no figure.  ``load_ul`` (unit loads on the
    cell's output) adds ``load_ul`` times the part's ``delay-per-unit-load``
    rating when the catalog has one.  ``index`` (a :class:`PartIndex` of the
    build) makes the part look-up quick.
    """
    pd = index.part_def(cell.part_ref) if index is not None else build.part_def(cell.part_ref)
    typ = pd.delay_typ.get(cell.cell) if pd.delay_typ else None
    mx = pd.delay_max.get(cell.cell) if pd.delay_max else None
    t = typ.value if typ is not None else 0.0
    m = mx.value if mx is not None else t
    m = max(m, t)
    rate = pd.ratings.get(LOAD_RATING)
    if rate is not None and load_ul > 0:
        t += rate.value * load_ul
        m += rate.value * load_ul
    return t, m


def net_loads(build, index: PartIndex | None = None) -> dict:
    """net -> fan-out load in unit loads (sum of ``input_load`` over the cell inputs it feeds)."""
    target = build.target
    index = index or PartIndex(build)
    loads: dict = {}
    per_ref: dict = {}
    cdefs = target.cells
    get = loads.get
    for c in build.cells:
        per = per_ref.get(c.part_ref)
        if per is None:
            per = per_ref[c.part_ref] = index.input_load(c.part_ref)
        pins = c.pins
        for p in cdefs[c.cell].inputs:
            net = pins.get(p)
            if net is not None and net not in _RAILS:
                loads[net] = get(net, 0.0) + per
    return loads


class _Graph:
    """The cells of a build as a timing graph (one arc per used input pin).

    Storage cells and storage built from gates (:attr:`Build.storage_groups`,
    a loop of cells) are cut out of the graph and become storage points:
    their outputs start paths, their data and control inputs end them.
    """

    def __init__(self, build):
        self.build = build
        target = build.target
        self.comb = []       # logic cells in topological order
        self.points = []     # storage points (dicts, see _storage_points)
        self.driver: dict = {}     # net -> logic cell driving it
        self.sdriver = {}    # net -> storage point whose output it is
        cdefs = target.cells
        logic = []
        for c in build.cells:
            cd = cdefs[c.cell]
            if cd.storage is None and c.group is None:
                logic.append((c, cd))
        driver = self.driver
        # feedback loops kept as gates are cut where the design was: the cell driving a cut net ends
        # paths at the loop's excitation, and the cut net starts them (mapper.analyze.loops)
        self.cut = cut = loop_cuts(build)
        for c, cd in logic:
            out = c.pins[cd.output]
            driver[cut.get(out, out)] = c
        self.index = index = PartIndex(build)
        loads = net_loads(build, index)
        self.loads = loads
        self.delay = delay = {}
        for c in build.cells:
            cd = cdefs[c.cell]
            delay[id(c)] = index.cell_delay(c, loads.get(c.pins.get(cd.output), 0.0))
        # the arcs of each logic cell, made once for every propagation:
        # (cell, ((input pin, input net), ...) without rails, output net, (typical, maximum))
        recs: list = []
        pos: dict = {}  # output net -> position in recs
        for c, cd in logic:
            pins = c.pins
            ins = tuple((p, pins[p]) for p in cd.inputs if pins.get(p) is not None and pins[p] not in _RAILS)
            out = cut.get(pins[cd.output], pins[cd.output])
            pos[out] = len(recs)
            recs.append((c, ins, out, delay[id(c)]))
        order, left = topological_order(range(len(recs)), lambda i: {pos[n] for _, n in recs[i][1] if n in pos},
                                        first_first=True)
        if left:
            log.warning("the build's logic cells form a loop; %d cells left out of the timing", len(left))
        self.arcs = [recs[i] for i in order]
        self.comb = [a[0] for a in self.arcs]
        self._storage_points()

    def _storage_points(self) -> None:
        b = self.build
        target = b.target
        for c in b.cells:
            cd = target.cells[c.cell]
            if cd.storage is None or c.group is not None:
                continue
            pd = self.index.part_def(c.part_ref)
            ctrl_pin = next((p for p in cd.inputs if cd.roles.get(p) in _CLOCK_ROLES), None)
            if ctrl_pin is None and len(cd.inputs) > 1:
                ctrl_pin = cd.inputs[1]
            outs = {c.pins[o]: (o, self.index.pin_of(c, o)) for o in (cd.output,) + tuple(cd.extra_outputs)
                    if c.pins.get(o)}
            self.points.append({
                "part": c.part_ref, "cell": c.cell, "part_id": pd.id, "kind": cd.storage,
                "clock": c.pins.get(ctrl_pin) if ctrl_pin else None, "d": c.pins.get(cd.inputs[0]),
                "outs": outs, "delay": self.delay[id(c)],
                "setup": _rating(pd, SETUP_RATING), "hold": _rating(pd, HOLD_RATING),
                "pulse": _rating(pd, PULSE_RATING),
            })
        members: dict = {}
        for c in b.cells:
            if c.group is not None:
                members.setdefault(c.group, []).append(c)
        for key, grp in b.storage_groups.items():
            if grp.kind == "as":
                c = self.driver.get(grp.d)
                self.sdriver[grp.q] = {"part": c.part_ref if c else None, "cell": "feedback loop",
                                       "outs": {grp.q: (None, None)}}
                continue
            cells = members.get(key, [])
            clk2q = self._group_path(cells, grp.control, grp.q)
            d2q = self._group_path(cells, grp.d, grp.q)
            self.points.append({
                "part": cells[0].part_ref if cells else None, "cell": grp.template or "storage from gates",
                "part_id": None, "kind": grp.kind, "clock": grp.control, "d": grp.d,
                "outs": {grp.q: (None, None)}, "delay": clk2q, "d2q": d2q,
                # storage made of gates must see D settle through its loop before it closes, and
                # its control must stay long enough for the loop to settle (common practice)
                "setup": d2q[1], "hold": 0.0, "pulse": clk2q[1], "group": key,
            })
        for pt in self.points:
            for net in pt["outs"]:
                self.sdriver[net] = pt
        self.loop_starts = {q: 0.0 for q in self.cut}

    def _group_path(self, cells, src, dst) -> tuple[float, float]:
        """Longest simple path (typical, maximum) from net ``src`` to net ``dst`` inside a storage group."""
        target = self.build.target
        users: dict = {}
        for c in cells:
            cd = target.cells[c.cell]
            for p in cd.inputs:
                users.setdefault(c.pins.get(p), []).append(c)
        best = (0.0, 0.0)
        stack: list = [(src, frozenset(), 0.0, 0.0)]
        steps = 0
        while stack and steps < 10_000:  # a template has a handful of cells
            steps += 1
            net, seen, t, m = stack.pop()
            if net == dst and seen:
                best = max(best, (t, m), key=lambda x: x[1])
                continue
            for c in users.get(net, ()):
                if id(c) in seen:
                    continue
                out = c.pins[target.cells[c.cell].output]
                dt, dm = self.delay[id(c)]
                stack.append((out, seen | {id(c)}, t + dt, m + dm))
        return best


def _propagate(g: _Graph, starts: dict, pick_late: bool, use_max: bool):
    """Arrival per net from ``starts`` (net -> time) through the logic cells.

    Returns ``(arrival, prev)`` with ``prev[net] = (input pin, input net, cell)``
    of the arc that set the arrival.  Rails never arrive.
    """
    arr = dict(starts)
    prev: dict = {}
    k = 1 if use_max else 0
    get = arr.get
    for c, ins, out, delay in g.arcs:
        best = None
        bt = 0.0
        for p, n in ins:
            t = get(n)
            if t is None:
                continue
            if best is None or (t > bt if pick_late else t < bt):
                best, bt = (p, n), t
        if best is None:
            continue  # a cell fed from rails only: a constant
        arr[out] = bt + delay[k]
        prev[out] = (best[0], best[1], c)
    return arr, prev


def _propagate_all(g: _Graph, base_late: dict, base_typ: dict):
    """The four propagations of :func:`static_timing` and the levels, in one pass over the cells.

    Returns ``(late, late_typ, early, early_max, late_prev, early_prev,
    levels)``: the same as :func:`_propagate` with (``base_late``, latest,
    maximum), (``base_typ``, latest, typical), (``base_typ``, earliest,
    typical) and (``base_late``, earliest, maximum), and net -> most cells
    on a path to it.  ``base_late`` and ``base_typ`` have the same nets, so
    all four arrive at the same nets.
    """
    late = dict(base_late)
    late_t = dict(base_typ)
    early = dict(base_typ)
    early_m = dict(base_late)
    lprev: dict = {}
    eprev: dict = {}
    lev: dict = {}
    lget = late.get
    vget = lev.get
    for c, ins, out, (dt, dm) in g.arcs:
        if not ins:
            continue  # a cell fed from rails only: a constant
        lv = 0
        bl = None
        for p, n in ins:
            v = vget(n, 0)
            if v > lv:
                lv = v
            x = lget(n)
            if x is None:
                continue
            y, z, w = late_t[n], early[n], early_m[n]
            if bl is None:
                bl, pl, by, bz, pe, bw = x, (p, n), y, z, (p, n), w
                continue
            if x > bl:
                bl, pl = x, (p, n)
            if y > by:
                by = y
            if z < bz:
                bz, pe = z, (p, n)
            if w < bw:
                bw = w
        lev[out] = lv + 1
        if bl is None:
            continue
        late[out] = bl + dm
        late_t[out] = by + dt
        early[out] = bz + dt
        early_m[out] = bw + dm
        lprev[out] = (pl[0], pl[1], c)
        eprev[out] = (pe[0], pe[1], c)
    return late, late_t, early, early_m, lprev, eprev, lev


def _path(g: _Graph, prev: dict, end: str, arrivals: list, memo: dict | None = None) -> list:
    """The arcs from a start point to ``end``, first to last, with pins and arrivals.

    ``memo`` (one dict per ``prev`` and ``arrivals``) keeps each hop made, so
    the paths of many outputs share the hops they have in common (on a big
    build they run thousands of cells deep and share most of them).
    """
    target = g.build.target
    ix = g.index
    hops = []
    n = end
    seen = set()
    while n in prev and n not in seen:
        seen.add(n)
        if memo is not None:
            hop = memo.get(n)
            if hop is not None:
                hops.append(hop)
                n = hop["net_in"]
                continue
        pin, n_in, c = prev[n]
        cd = target.cells[c.cell]
        t, m = g.delay[id(c)]
        hop = {
            "cell": c.cell, "part": c.part_ref, "part_id": ix.part_id(c.part_ref), "section": c.slot,
            "from_pin": pin, "from_pin_number": ix.pin_of(c, pin),
            "to_pin": cd.output, "to_pin_number": ix.pin_of(c, cd.output),
            "net_in": n_in, "net": n, "delay_s": m, "delay_typ_s": t,
        }
        for key, arr in arrivals:
            hop[key] = arr.get(n)
        if memo is not None:
            memo[n] = hop
        hops.append(hop)
        n = n_in
    hops.reverse()
    return hops


def _start_of(g: _Graph, net: str) -> dict:
    pt = g.sdriver.get(net)
    if pt is not None:
        pin, number = pt["outs"].get(net, (None, None))
        out = {"net": net, "kind": "storage", "part": pt["part"], "cell": pt["cell"]}
        if pin is not None:
            out.update({"pin": pin, "pin_number": number})
        return out
    return {"net": net, "kind": "input"}


def _first_net(prev: dict, end: str) -> str:
    n = end
    seen = set()
    while n in prev and n not in seen:
        seen.add(n)
        n = prev[n][1]
    return n


def _clock_source(g: _Graph, net: str) -> tuple[str, int]:
    """Trace a clock net back through inverting/buffering cells: (source net, inversions)."""
    target = g.build.target
    inv = 0
    seen = set()
    while net in g.driver and net not in seen:
        seen.add(net)
        c = g.driver[net]
        cd = target.cells[c.cell]
        nets = [c.pins[p] for p in cd.inputs]
        live = {n for n in nets if n not in _RAILS}
        if len(live) != 1:
            break
        src = live.pop()
        t = cd.function.table()
        vals = []
        for v in (0, 1):
            m = 0
            for j, n in enumerate(nets):
                bit = v if n == src else (1 if n == "VCC" else 0)
                m |= bit << j
            vals.append((t >> m) & 1)
        if vals == [1, 0]:
            inv ^= 1
        elif vals != [0, 1]:
            break
        net = src
    return net, inv


def _rating(pd, name) -> float | None:
    return pd.rating(name)


#: a loop of latches open together (or a period search) gives up after this many rounds
_MAX_ROUNDS = 64


class _Clocking:
    """Setup, hold and pulse-width checks of the storage points of a build at a clock period.

    Every storage point ``i`` has a *phase* (the clock edge it captures on,
    or the edge that opens a latch), a clock arrival (late and early), its
    delays, and setup, hold and pulse-width figures.  Times of point ``i``
    are counted from its edge ``O_i`` (0 for the rising edge of its clock
    source, ``T/2`` for the falling edge: a 50 % duty cycle).

    A flip-flop's output leaves at ``d_i = clock + clock-to-output``; a
    latch's at ``d_i = max(clock + enable-to-output, a_i + D-to-output)``:
    data that comes while it is open passes through, borrowing time from
    the next stage.  The data at ``i`` is the latest of
    ``d_j + path_ji + s_ji`` over the storage points ``j`` of the same clock
    source, where ``s_ji`` shifts ``j``'s launching edge to ``i``'s frame:
    the latest launch strictly before ``i`` captures (a flip-flop at its
    edge, a latch when it closes at ``O_i + T/2``).  So ``s = -T`` from the
    same edge into a flip-flop, ``0`` into a latch open on that edge (it
    flows through in the same window), ``-T/2`` from the other edge.  A
    latch's departure depends on its arrival, so the arrivals are repeated
    until they settle; when they never do, latches open together form a loop
    and no period works (K. A. Sakallah, T. N. Mudge and O. A. Olukotun,
    "Analysis and design of latch-controlled synchronous digital circuits",
    DAC 1990 -- their timing model, here for one clock and its inverse).

    Setup: ``a_i + setup_i <= clock_i (early) + (T/2 for a latch)``.
    Hold: the first launch at or after ``i`` captures must arrive no sooner
    than ``hold_i`` after it, with earliest figures.  Pulse width: each
    half period at least the storage part's ``pulse-width`` rating.
    """

    def __init__(self, g: _Graph, info: list):
        self.g = g
        self.info = info
        self.by_source: dict = {}
        for s in info:
            self.by_source.setdefault(s["source"], []).append(s)
        self.latches = any(s["latch"] for s in info)
        self._launch: dict = {}

    @staticmethod
    def shift(launch, capture, T: float) -> float:
        if launch["edge"] != capture["edge"]:
            return -T / 2
        return 0.0 if capture["latch"] else -T

    @staticmethod
    def _hold_shift(launch, capture, T: float) -> float:
        if launch["edge"] != capture["edge"]:
            return 0.0 if capture["latch"] else T / 2
        return T / 2 if capture["latch"] else 0.0

    def arrivals(self, dep: dict, T: float, want_prev: bool = False):
        """Latest data arrival per storage point (``None`` without a storage path), and the paths' trace."""
        arr: dict = {}
        prevs: dict = {}
        for pts in self.by_source.values():
            for edge, latch in {(p["edge"], p["latch"]) for p in pts}:
                probe = {"edge": edge, "latch": latch}
                starts: dict = {}
                for j in pts:
                    t = dep[id(j)] + self.shift(j, probe, T)
                    for q in j["outs"]:
                        if q not in starts or t > starts[q]:
                            starts[q] = t
                late, prev = _propagate(self.g, starts, True, True)
                for i in pts:
                    if i["edge"] == edge and i["latch"] == latch and i["d"] in late:
                        arr[id(i)] = late[i["d"]]
                        if want_prev:
                            prevs[id(i)] = (late, prev)
        return arr, prevs

    def settle(self, T: float):
        """Departures and arrivals at period ``T`` (``None`` when latches open together loop)."""
        dep = {id(s): s["clk_late"] + s["clk2q"][1] for s in self.info}
        rounds = 1 if not self.latches else _MAX_ROUNDS
        for _ in range(rounds):
            arr, _ = self.arrivals(dep, T)
            changed = False
            for s in self.info:
                a = arr.get(id(s))
                if s["latch"] and a is not None:
                    d = max(s["clk_late"] + s["clk2q"][1], a + s["d2q"][1])
                    if d > dep[id(s)] + 1e-15:
                        dep[id(s)] = d
                        changed = True
            if not changed:
                return dep, arr
        return None

    def setup_slacks(self, T: float):
        """``(worst slack, point, arrivals, departures)`` at ``T``; slack ``-inf`` when latches loop."""
        r = self.settle(T)
        if r is None:
            return float("-inf"), None, {}, None
        dep, arr = r
        worst, at = float("inf"), None
        for s in self.info:
            a = arr.get(id(s))
            if a is None:
                continue
            close = s["clk_early"] + (T / 2 if s["latch"] else 0.0)
            slack = close - (a + s["setup"])
            if slack < worst:
                worst, at = slack, s
        return worst, at, arr, dep

    def min_period(self) -> float:
        """The shortest period that meets every setup (bisection when latches borrow time)."""
        if not self.latches:
            # no latch: departures do not depend on T, so each relation gives T directly
            return max((self.need_ff(s) for s in self.info), default=0.0)
        hi = max(1e-12, sum(s["clk2q"][1] + s["setup"] for s in self.info) + sum(a[3][1] for a in self.g.arcs))
        lo = 0.0
        if self.setup_slacks(hi)[0] < 0:
            for _ in range(20):
                hi *= 4
                if self.setup_slacks(hi)[0] >= 0:
                    break
            else:
                return float("inf")
        for _ in range(48):
            mid = (lo + hi) / 2
            if self.setup_slacks(mid)[0] >= 0:
                hi = mid
            else:
                lo = mid
            if hi - lo <= hi * 1e-6:
                break
        return hi

    def launched(self, source, edge):
        """``(arrival, prev)`` of the flip-flop launches of one clock source and edge, from their edge."""
        key = (source, edge)
        got = self._launch.get(key)
        if got is None:
            starts: dict = {}
            for j in self.by_source.get(source, []):
                if j["edge"] == edge:
                    t = j["clk_late"] + j["clk2q"][1]
                    for q in j["outs"]:
                        starts[q] = max(starts.get(q, t), t)
            got = self._launch[key] = _propagate(self.g, starts, True, True)
        return got

    def need_ff(self, cap) -> float:
        """The period a capture needs when no latch borrows: ``T`` from its own edge, ``T/2`` from the other."""
        need = 0.0
        if cap["d"] is None:
            return need
        for edge in {p["edge"] for p in self.by_source.get(cap["source"], [])}:
            late, _ = self.launched(cap["source"], edge)
            if cap["d"] in late:
                x = late[cap["d"]] + cap["setup"] - cap["clk_early"]
                need = max(need, x if edge == cap["edge"] else 2 * x)
        return need

    def holds(self, T: float) -> list:
        """Hold slack per storage point fed by a storage path, at period ``T``.

        Each item is ``(slack, point, start net, early arrivals, trace)``.
        """
        out = []
        for pts in self.by_source.values():
            for edge, latch in {(p["edge"], p["latch"]) for p in pts}:
                probe = {"edge": edge, "latch": latch}
                starts: dict = {}
                for j in pts:
                    if latch and j["latch"] and j["edge"] == edge:
                        continue  # latches open together: data flows through both in one window (by design)
                    t = j["clk_early"] + j["clk2q"][0] + self._hold_shift(j, probe, T)
                    for q in j["outs"]:
                        if q not in starts or t < starts[q]:
                            starts[q] = t
                early, prev = _propagate(self.g, starts, False, False)
                for i in pts:
                    if i["edge"] == edge and i["latch"] == latch and i["d"] in early:
                        slack = early[i["d"]] - (i["clk_late"] + i["hold"])
                        out.append((slack, i, _first_net(prev, i["d"]), early, prev))
        return out


def _point_info(g: _Graph, late_clk: dict, early_clk: dict) -> tuple[list, set]:
    """Clock source, edge, clock arrivals and figures of every storage point; part ids lacking figures."""
    info = []
    missing = set()
    for pt in g.points:
        clk = pt["clock"]
        src, inv = _clock_source(g, clk) if clk else (None, 0)
        edge = _EDGE.get(pt["kind"], "rise")
        if inv:
            edge = "fall" if edge == "rise" else "rise"
        latch = pt["kind"] in ("ah", "al")
        if pt["part_id"] and (pt["setup"] is None or pt["hold"] is None):
            missing.add(pt["part_id"])
        info.append({
            "point": pt, "clock": clk, "source": src, "edge": edge, "latch": latch,
            "clk_late": late_clk.get(clk, 0.0) if clk else 0.0,
            "clk_early": early_clk.get(clk, 0.0) if clk else 0.0,
            # a latch's catalog figure is D to Q with the latch open; enable to Q is taken as the same
            "clk2q": pt["delay"], "d2q": pt.get("d2q", pt["delay"]),
            "setup": pt["setup"] or 0.0, "hold": pt["hold"] or 0.0, "pulse": pt.get("pulse") or 0.0,
            "d": pt["d"], "outs": list(pt["outs"]),
        })
    return info, missing


def _where(s) -> dict:
    return {"part": s["point"]["part"], "cell": s["point"]["cell"], "net": s["d"]}


def _sequential(g: _Graph, base_late: dict, base_typ: dict, period_s: float | None = None) -> ClockFigures:
    """Storage-to-storage timing: shortest period, pulse widths, hold margins, input setup, clock to output.

    ``period_s`` is the clock the builder means to run (``--clock``); hold
    margins and pulse widths are checked at it, else at the shortest period.
    """
    b = g.build
    # clock arrivals: from the inputs, and from storage outputs for clocks made by storage (ripple)
    late_clk, _ = _propagate(g, base_late, True, True)
    early_clk, _ = _propagate(g, base_typ, False, False)
    info, missing = _point_info(g, late_clk, early_clk)
    ck = _Clocking(g, info)
    notes = []
    paths_T = ck.min_period()
    pulse = max((s["pulse"] for s in info), default=0.0)
    pulse_T = 2 * pulse   # each half of a 50 % duty cycle at least the widest pulse a part needs
    period = max(paths_T, pulse_T)
    limited_by = "pulse width" if pulse_T > paths_T else "storage-to-storage path"
    worst = None
    latches = []
    if period == float("inf"):
        notes.append("latches open at the same time form a loop through logic: no clock rate lets it settle")
        max_hz = None
    else:
        max_hz = (1.0 / period) if period > 0 else None
        trace = None
        half = False
        if ck.latches:
            _, at, arr, dep = ck.setup_slacks(paths_T)
            if at is not None and dep is not None:
                trace = ck.arrivals(dep, paths_T, want_prev=True)[1].get(id(at))
            for s in info:
                a = arr.get(id(s))
                if s["latch"] and a is not None and a > s["clk_late"]:
                    latches.append({**_where(s), "borrowed_s": a - s["clk_late"]})
        else:
            at = max((s for s in info if ck.need_ff(s) > 0), key=ck.need_ff, default=None)
            if at is not None:
                best = None
                for edge in ("rise", "fall"):
                    late, prev = ck.launched(at["source"], edge)
                    if at["d"] in late:
                        x = late[at["d"]] + at["setup"] - at["clk_early"]
                        need = x if edge == at["edge"] else 2 * x
                        if best is None or need > best[0]:
                            best = (need, late, prev, edge != at["edge"])
                if best is not None:
                    trace, half = (best[1], best[2]), best[3]
        if trace is not None and at is not None:
            late, prev = trace
            d = at["d"]
            first = _first_net(prev, d)
            if ck.latches:
                # arrivals were counted from the capturing edge: count them from the launching edge
                src = g.sdriver.get(first)
                launch = next((j for j in info if j["point"] is src), None)
                shift = ck.shift(launch, at, paths_T) if launch is not None else 0.0
                half = launch is not None and launch["edge"] != at["edge"]
                late = {n: t - shift for n, t in late.items()}
            worst = {"from": _start_of(g, first), "to": _where(at),
                     "arrival_s": late[d], "setup_s": at["setup"], "latch": at["latch"], "half_cycle": half,
                     "path": _path(g, prev, d, [("arrival_s", late)])}
    if worst is None and period != float("inf"):
        notes.append("no storage-to-storage path: the clock rate is limited by the storage parts' shortest "
                     "clock pulse" if pulse else
                     "no storage-to-storage path and no pulse-width figure: nothing here limits the clock rate")
    if missing:
        notes.append("the catalog gives no setup or hold time for " + ", ".join(sorted(missing))
                     + ": they count as 0 in the clock rate")
    if any(s["source"] is not None and s["source"] not in b.inputs for s in info):
        notes.append("a clock or enable comes from logic, not straight from an input: glitches on it are "
                     "searched for in the glitch report")
    # hold margins and pulse widths at the period the builder runs (or the shortest)
    check_T = period_s if period_s is not None else (period if period != float("inf") else 0.0)
    violations = []
    hold_slack = None
    hold_worst = None
    for slack, s, first, early, prev in ck.holds(check_T):
        if hold_slack is None or slack < hold_slack:
            hold_slack = slack
            hold_worst = {"from": _start_of(g, first), "to": _where(s)}
        if slack < -1e-15:
            violations.append({"from": _start_of(g, first), "to": _where(s), "slack_s": slack,
                               "hold_s": s["hold"], "path": _path(g, prev, s["d"], [("arrival_s", early)])})
    violations.sort(key=lambda v: v["slack_s"])
    narrow = []
    if check_T > 0:
        for s in info:
            if s["pulse"] and check_T / 2 < s["pulse"] - 1e-15:
                narrow.append({**_where(s), "pulse_s": s["pulse"], "half_period_s": check_T / 2})
    # inputs to storage data (before the capturing edge, or the closing edge of a latch), storage to outputs
    inp0 = {i: 0.0 for i in b.inputs}
    late_in, _ = _propagate(g, inp0, True, True)
    input_setup = 0.0
    for cap in info:
        d = cap["d"]
        if d in late_in and d not in g.sdriver:
            input_setup = max(input_setup, late_in[d] + cap["setup"] - cap["clk_early"])
    q0 = {}
    for s in info:
        for q in s["outs"]:
            q0[q] = s["clk_late"] + s["clk2q"][1]
    late_q, _ = _propagate(g, q0, True, True)
    clk_to_out = max((late_q.get(b.output_nets.get(o, o), 0.0) for o in b.outputs
                      if b.output_nets.get(o, o) in late_q), default=None)
    return ClockFigures(period_min_s=period, max_hz=max_hz, path=worst,
                        hold_slack_s=hold_slack, hold_path=hold_worst, input_setup_s=input_setup,
                        clock_to_output_s=clk_to_out, notes=notes, limited_by=limited_by,
                        pulse_width_s=pulse, checked_period_s=check_T, hold_violations=violations,
                        pulse_violations=narrow, latches=latches,
                        requested_period_s=period_s)


def static_timing(build: Build, period_s: float | None = None) -> Timing:
    """Static timing of a gate build (see the module docstring).

    The :class:`~mapper.analyze.results.Timing` has ``delay_s`` (worst path
    with maximum delays), ``delay_typ_s`` (with typical), ``levels`` (most
    cells on any path), ``outputs`` (output -> ``[best_s, worst_s]``),
    ``paths`` (one dict per output: ``worst_s``, ``worst_typ_s``, ``best_s``,
    ``best_max_s``, ``levels``, ``worst_path`` and ``best_path`` hop by hop
    with parts and pins, ``worst_start``, ``best_start``), ``critical_path``
    (hops of the worst path of the whole build, each with ``cell``, ``part``,
    ``part_id``, ``slot``, ``from_pin``/``from_pin_number``,
    ``to_pin``/``to_pin_number``, ``net_in``, ``net``, ``delay_s``,
    ``delay_typ_s``, ``arrival_s``, ``arrival_typ_s``), ``critical_start`` /
    ``critical_end``, ``overloaded`` (nets loaded beyond their driver's output
    drive) and, for builds with storage, ``clock``
    (:class:`~mapper.analyze.results.ClockFigures`).
    """
    with paused_gc():
        return _static_timing(build, period_s)


def _overloaded(g: _Graph) -> list:
    out = []
    for net, ul in sorted(g.loads.items()):
        c = g.driver.get(net)
        ref = c.part_ref if c is not None else (g.sdriver.get(net) or {}).get("part")
        if ref is None:
            continue
        pd = g.index.part_def(ref)
        if pd.output_drive is not None and ul > pd.output_drive.value + 1e-12:
            out.append({"net": net, "load_ul": round(ul, 6), "drive_ul": pd.output_drive.value, "part": ref})
    return out


def _static_timing(build: Build, period_s: float | None = None) -> Timing:
    """The work of :func:`static_timing`."""
    if not build.cells:
        return Timing(0.0, 0.0, 0, {o: [0.0, 0.0] for o in build.outputs}, [], paths=[
            {"output": o, "worst_s": 0.0, "worst_typ_s": 0.0, "best_s": 0.0, "best_max_s": 0.0, "levels": 0,
             "worst_path": [], "best_path": []} for o in build.outputs], overloaded=[])
    g = _Graph(build)
    # storage outputs start at their clock-to-output delay after the clock edge
    base_late = {i: 0.0 for i in build.inputs}
    base_late.update(g.loop_starts)  # a loop's state starts paths when it changes
    base_typ = dict(base_late)
    for pt in g.points:
        t, m = pt["delay"]
        for net in pt["outs"]:
            base_late[net] = m
            base_typ[net] = t
    late, late_t, early, early_m, lprev, eprev, lev = _propagate_all(g, base_late, base_typ)
    ends = [(o, build.output_nets.get(o, o)) for o in build.outputs]
    for pt in g.points:
        for label, n in (("data", pt["d"]), ("clock", pt["clock"])):
            if n and n not in _RAILS:
                ends.append((f"{pt['part']} {pt['cell']} {label}", n))
    for q, exc in g.cut.items():  # a feedback loop's excitation ends the paths into it
        ends.append((f"feedback loop {q}", exc))
    arrivals = [("arrival_s", late), ("arrival_typ_s", late_t)]
    late_hops: dict = {}
    early_hops: dict = {}
    paths = []
    outputs = {}
    for o, net in ends[:len(build.outputs)]:
        w = late.get(net, 0.0) if net not in _RAILS else 0.0
        paths.append({
            "output": o, "net": net,
            "worst_s": w,
            "worst_typ_s": late_t.get(net, 0.0),
            "best_s": early.get(net, 0.0),
            "best_max_s": early_m.get(net, 0.0),
            "levels": lev.get(net, 0),
            "worst_start": _start_of(g, _first_net(lprev, net)),
            "worst_path": _path(g, lprev, net, arrivals, late_hops),
            "best_start": _start_of(g, _first_net(eprev, net)),
            "best_path": _path(g, eprev, net, [("arrival_s", early)], early_hops),
        })
        outputs[o] = [early.get(net, 0.0), w]
    live = [(label, n) for label, n in ends if n in late]
    end_label, end = max(live, key=lambda ln: late[ln[1]], default=(None, None))
    return Timing(
        delay_s=late.get(end, 0.0) if end is not None else 0.0,
        delay_typ_s=max((late_t.get(n, 0.0) for _, n in ends), default=0.0),
        levels=max((lev.get(n, 0) for _, n in ends), default=0),
        outputs=outputs,
        paths=paths,
        critical_path=_path(g, lprev, end, arrivals, late_hops) if end is not None else [],
        critical_start=_start_of(g, _first_net(lprev, end)) if end is not None else None,
        critical_end={"net": end, "endpoint": end_label} if end is not None else None,
        overloaded=_overloaded(g),
        clock=_sequential(g, base_late, base_typ, period_s) if g.points else None,
        loops=loop_figures(g, lambda net: _propagate(g, {net: 0.0}, True, True)[0]) if g.cut else None,
    )
