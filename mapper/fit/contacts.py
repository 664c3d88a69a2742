"""Contact networks from decision diagrams: the synthesis engine of relay builds.

A *contact network* here is a decision structure (Lee, "Representation of
switching circuits by binary-decision programs", BSTJ 38, 1959; Akers,
"Binary decision diagrams", IEEE Trans. Computers C-27, 1978) built as
relay contacts in the way Shannon described for relay circuits (Shannon, "A
symbolic analysis of relay and switching circuits", Trans. AIEE 57, 1938;
Shannon, "The synthesis of two-terminal switching circuits", BSTJ 28,
1949): every decision node is one pole of a relay whose coil is the
node's variable, with the node's net on the common terminal, the branch
taken when the coil is energized on the normally-open terminal and the
other branch on the normally-closed terminal.

* The terminal ``1`` is the supply rail (net ``VCC``); the terminal ``0`` is
  *open* (the terminal is left unconnected and the net's defined load holds
  it at 0).  A node with one branch open is a make (normally-open) or a break
  (normally-closed) contact on its own.
* A branch whose function equals an existing net is wired to that net
  (*pass-through*: the signal is fed through the contact instead of the
  rail).  Inputs, every net already built, and sub-networks of other outputs
  are all candidates, matched exactly on their truth tables (within the
  care set of the branch), so identical sub-networks are shared between
  outputs and between levels.
* Decision variables are the window's leaves (inputs, storage outputs,
  nets built in earlier windows) and *internal decision functions*: nets of
  the design chosen as re-amplification points.  Such a net gets a coil of
  its own; a node decided on it restricts the care set of both branches
  (``g = 1`` and ``g = 0``), which is how a ripple structure passes its
  carry through contacts (``c' = h ? c : a`` with ``h = a xor b``).

Functions are truth tables over the window's ``n`` leaves (Python ``int``,
bit ``m`` = value at the assignment whose bit ``j`` is leaf ``j``), so every
match and every node's function is exact.  A node decided on a leaf uses the
leaf's cofactors (Shannon expansion) with the leaf lifted out, as in a
reduced ordered BDD under the window's leaf order; with no internal decision
functions and full care the result is exactly the reduced ordered BDD with
shared sub-graphs and literal branches wired through.

Cost of a result: every decision variable ``v`` used in ``k_v`` poles needs
``ceil(k_v / P)`` relays with ``P`` poles each (coils in parallel on the
variable's net), so the relay count is ``sum(ceil(k_v / P))``; ties are
broken by coil levels (each level adds an operate or release time) and then
by poles.

The search (:func:`synthesize`) tries leaf orders (all of them for at most
:data:`EXHAUSTIVE_LIMIT` leaves; otherwise the better of two starting orders
improved by swapping neighbours and, up to :data:`SIFT_LIMIT` leaves, by
sifting: each leaf moved through every position, kept where the cost is
least) and then chooses the
internal decision functions greedily (add one at a time while the cost
falls, then drop any whose removal does not raise it).

Recursion: the builder recurses over decision nodes along one path of a
network.  Along a path each leaf is lifted out at most once and restricts
the care set at most once, and each internal function is decided at most
once (afterwards it no longer divides the care set), so the depth is
bounded by the window size (twice the leaves plus the internal candidates,
all capped), never by the netlist's depth.
"""
from __future__ import annotations

import itertools
import logging
import time
from collections import Counter
from dataclasses import dataclass, field

from ..logic.function import var_mask

__all__ = ["OPEN", "RAIL", "ContactSynth", "SynthResult", "synthesize", "relay_count",
           "EXHAUSTIVE_LIMIT", "SIFT_LIMIT", "MAX_CANDIDATES"]

log = logging.getLogger(__name__)

#: net id of an unconnected terminal (value 0 through the defined load)
OPEN = -1
#: net id of the supply rail
RAIL = 0
#: leaf orders are searched exhaustively up to this many leaves
EXHAUSTIVE_LIMIT = 6
#: leaf orders are sifted (every leaf through every position) up to this many leaves
SIFT_LIMIT = 12
#: internal decision functions considered per window (bounds recursion depth too)
MAX_CANDIDATES = 96


class _TooBig(Exception):
    """An evaluation grew past the pole limit (a worse order; abandoned)."""


def relay_count(counts, poles: int) -> int:
    """Relays for ``counts`` (variable -> poles used) with ``poles`` poles per relay."""
    return sum(-(-k // poles) for k in counts.values() if k > 0)


class ContactSynth:
    """Nets and poles over one table space of ``n`` leaves.

    Net ids: ``RAIL`` (0) is the supply, ``1 … n`` are the leaves in order,
    later ids are decision nodes (one pole each).  ``OPEN`` (-1) is no net.

    Parameters
    ----------
    n : int
        Number of leaves.
    order : list of int, optional
        Leaf indices from the top of the diagrams down.
    candidates : dict, optional
        Internal decision functions: key -> truth table.  A candidate is
        realized (its own network built) only when first decided on.
    """

    def __init__(self, n: int, order=None, candidates=None, pole_limit: int | None = None):
        self.n = n
        self.pole_limit = pole_limit
        self.full = (1 << (1 << n)) - 1
        self.masks = [var_mask(n, j) for j in range(n)]
        self._neg = [self.full & ~m for m in self.masks]
        self._supp_cache: dict = {}
        self.tables = [self.full]
        self.supports = [0]
        self.levels = [0]
        self.exact = {self.full: RAIL}
        for j in range(n):
            nid = len(self.tables)
            self.tables.append(self.masks[j])
            self.supports.append(1 << j)
            self.levels.append(0)
            self.exact.setdefault(self.masks[j], nid)
        self.order = list(order) if order is not None else list(range(n))
        #: (com, var, no, nc) per pole, in creation order (children first)
        self.poles: list = []
        self.pole_of: dict = {}  # com net -> index in poles
        self.count: Counter = Counter()  # decision net -> poles
        self._by_fanins: dict = {}
        self._memo: dict = {}
        cands = candidates or {}
        self.cands = []
        for key, tab in cands.items():
            tab &= self.full
            if tab in (0, self.full):
                continue
            self.cands.append((key, tab, self._supp(tab, self.full)))
        # most informative first (widest support), a stable order otherwise
        self.cands.sort(key=lambda c: -bin(c[2]).count("1"))
        self.cand_net: dict = {}
        self._busy: set = set()

    # -- tables -----------------------------------------------------------
    def leaf(self, j: int) -> int:
        return 1 + j

    def table(self, net: int) -> int:
        return 0 if net == OPEN else self.tables[net]

    def _split(self, t: int, j: int) -> tuple[int, int]:
        """(negative, positive) halves of table ``t`` by leaf ``j``, both at the ``j = 0`` positions."""
        m = self.masks[j]
        return t & ~m & self.full, (t & m) >> (1 << j)

    def _supp(self, F: int, C: int) -> int:
        """Bit mask of the leaves ``F`` depends on within care set ``C``.

        Leaf ``j`` matters when two cared-for assignments differing only in
        leaf ``j`` give different values of ``F``.
        """
        if C == self.full:
            s = self._supp_cache.get(F)
            if s is not None:
                return s
        s = 0
        for j in range(self.n):
            sh = 1 << j
            if (F ^ (F >> sh)) & C & (C >> sh) & self._neg[j]:
                s |= sh
        if C == self.full:
            self._supp_cache[F] = s
        return s

    def _lift(self, F: int, C: int, j: int):
        """Lifted cofactors ``(F1, C1, F0, C0)`` by leaf ``j`` (independent of leaf ``j``)."""
        s = 1 << j
        f0, f1 = self._split(F, j)
        c0, c1 = self._split(C, j)
        return ((f1 & c1) | ((f1 & c1) << s), c1 | (c1 << s),
                (f0 & c0) | ((f0 & c0) << s), c0 | (c0 << s))

    # -- building ---------------------------------------------------------
    def realize(self, F: int, C: int | None = None) -> int:
        """A net equal to ``F`` wherever ``C`` (default: everywhere) is 1."""
        return self._build(F & self.full, self.full if C is None else C & self.full)

    def _build(self, F: int, C: int) -> int:
        F &= C
        if F == 0:
            return OPEN
        if F == C:
            return RAIL
        key = (F, C)
        r = self._memo.get(key)
        if r is not None:
            return r
        r = self._match(F, C)
        if r is None:
            r = self._decide(F, C)
        self._memo[key] = r
        return r

    def _match(self, F: int, C: int, near: int | None = None):
        if C == self.full:
            return self.exact.get(F)
        if near is None:
            near = self._supp(F, C) | self._supp(C, self.full)
        tables, supports = self.tables, self.supports
        for nid in range(1, len(tables)):
            if supports[nid] & ~near:
                continue
            if not ((tables[nid] ^ F) & C):
                return nid
        return None

    def _trivial_or_match(self, F: int, C: int, near: int | None = None):
        F &= C
        if F == 0:
            return OPEN
        if F == C:
            return RAIL
        return self._match(F, C, near)

    def _decide(self, F: int, C: int) -> int:
        sF = self._supp(F, C)
        best, best_side = None, 0
        near_c = sF | self._supp(C, self.full) if self.cands else 0
        for key, tab, sup in self.cands:
            if key in self._busy or sup & ~sF:
                continue
            c1 = C & tab
            c0 = C & ~tab & self.full
            if not c1 or not c0:
                continue
            near = near_c | sup
            side = (self._trivial_or_match(F & c1, c1, near) is not None) + \
                (self._trivial_or_match(F & c0, c0, near) is not None)
            if side > best_side:
                best, best_side = key, side
                if side == 2:
                    break
        if best is not None:
            g = self._coil_net(best)
            tab = self.tables[g]
            c1 = C & tab
            c0 = C & ~tab & self.full
            hi = self._build(F & c1, c1)
            lo = self._build(F & c0, c0)
            return self._node(g, hi, lo)
        pick = None
        for j in self.order:
            if (sF >> j) & 1:
                pick = j
                break
        if pick is None:
            # F depends on no single leaf inside C yet is not constant there:
            # split the care set on a leaf that divides it (no lifting, so the
            # care set strictly shrinks and the leaf is never split again)
            for j in self.order:
                m = self.masks[j]
                if C & m and C & ~m:
                    hi = self._build(F & m, C & m)
                    lo = self._build(F & ~m & self.full, C & ~m & self.full)
                    return self._node(self.leaf(j), hi, lo)
            raise AssertionError("a non-constant function on a care set no leaf divides")
        F1, C1, F0, C0 = self._lift(F, C, pick)
        hi = self._build(F1, C1)
        lo = self._build(F0, C0)
        return self._node(self.leaf(pick), hi, lo)

    def _coil_net(self, key) -> int:
        nid = self.cand_net.get(key)
        if nid is not None:
            return nid
        tab = next(t for k, t, _ in self.cands if k == key)
        self._busy.add(key)
        try:
            nid = self._build(tab, self.full)
        finally:
            self._busy.discard(key)
        self.cand_net[key] = nid
        return nid

    def _node(self, var: int, hi: int, lo: int) -> int:
        if hi == lo:
            return hi
        sk = (var, hi, lo)
        nid = self._by_fanins.get(sk)
        if nid is not None:
            return nid
        tv = self.tables[var]
        table = ((tv & self.table(hi)) | (~tv & self.table(lo))) & self.full
        nid = self.exact.get(table)
        if nid is not None:
            self._by_fanins[sk] = nid
            return nid
        if self.pole_limit is not None and len(self.poles) >= self.pole_limit:
            raise _TooBig()
        nid = len(self.tables)
        self.tables.append(table)
        self.supports.append(self.supports[var] | (self.supports[hi] if hi != OPEN else 0)
                             | (self.supports[lo] if lo != OPEN else 0))
        self.levels.append(max(self.levels[var] + 1, self.levels[hi] if hi != OPEN else 0,
                               self.levels[lo] if lo != OPEN else 0))
        self.exact[table] = nid
        self._by_fanins[sk] = nid
        self.pole_of[nid] = len(self.poles)
        self.poles.append((nid, var, None if hi == OPEN else hi, None if lo == OPEN else lo))
        self.count[var] += 1
        return nid

    def level(self, net: int) -> int:
        return 0 if net == OPEN else self.levels[net]

    def used_poles(self, roots) -> list:
        """Indices of the poles reachable from ``roots`` through contacts and coils."""
        seen, stack = set(), [r for r in roots if r is not None and r > self.n]
        out = []
        while stack:
            nid = stack.pop()
            if nid in seen or nid <= self.n:
                continue
            seen.add(nid)
            i = self.pole_of[nid]
            out.append(i)
            _, var, no, nc = self.poles[i]
            for x in (var, no, nc):
                if x is not None and x > self.n and x not in seen:
                    stack.append(x)
        return sorted(out)


@dataclass
class SynthResult:
    """The best networks found for one window."""

    synth: ContactSynth
    roots: dict            # target name -> net id (RAIL, OPEN, leaf or node)
    poles: list            # live poles (com, var, no, nc)
    counts: Counter        # decision net -> poles (including extra poles)
    cost: tuple            # (relays, levels, poles)
    order: list
    permitted: list        # internal decision functions allowed
    evaluations: int = 0
    seconds: float = 0.0
    log: list = field(default_factory=list)


def _evaluate(n, targets, cands, order, permitted, poles_per_relay, extra, pole_limit=None):
    cs = ContactSynth(n, order, {k: cands[k] for k in permitted}, pole_limit)
    roots = {}
    for name, table, care in targets:
        roots[name] = cs.realize(table, care)
    live = cs.used_poles(roots.values())
    counts: Counter = Counter()
    for i in live:
        counts[cs.poles[i][1]] += 1
    for key, k in extra.items():
        kind, ref = key
        if kind == "leaf":
            counts[cs.leaf(ref)] += k
        elif kind == "target":
            r = roots[ref]
            if r in (RAIL, OPEN):
                continue  # a constant control: no coil, the caller handles it
            counts[r] += k
        else:  # ("relay", name): a coil of its own
            counts[("own", ref)] += k
    lev = max((cs.level(r) for r in roots.values()), default=0)
    cost = (relay_count(counts, poles_per_relay), lev, sum(counts.values()))
    return cs, roots, live, counts, cost


def synthesize(n: int, targets: list, candidates: dict | None = None, poles_per_relay: int = 1,
               extra: dict | None = None, order=None, orders=None, effort: int = 1,
               bound: tuple | None = None, time_budget: float = 60.0) -> SynthResult | None:
    """Contact networks for ``targets`` over ``n`` leaves with the fewest relays.

    Parameters
    ----------
    n : int
        Number of leaves (the table space).
    targets : list of (name, table, care)
        Functions to build, in the order they are built (``care`` None for
        everywhere).  Each gets a net (its *root*).
    candidates : dict
        Internal decision functions allowed as re-amplification points:
        key -> table.  Only those that lower the cost are kept.
    poles_per_relay : int
        Poles of the relay the poles are packed onto.
    extra : dict
        Poles needed beyond the networks, counted into the cost:
        ``("leaf", j)`` -> k (on leaf ``j``'s coil), ``("target", name)``
        -> k (on the target's net), ``("relay", name)`` -> k (a coil of its
        own, such as a master latch).
    order : list of int, optional
        Initial leaf order (top first).
    orders : list of lists, optional
        More starting orders to try (the best one is sifted).
    effort : int
        0: the initial order only, no internal functions; 1: the searches.
    bound : tuple, optional
        A cost ``(relays, levels, poles)`` known to be reachable otherwise:
        evaluations far above it are abandoned early, and ``None`` is
        returned when the best result has more relays.
    time_budget : float
        Seconds after which the searches stop improving (a safety net for
        very large windows; the designs of the tests and benchmarks never
        reach it, so their results do not depend on the machine).

    Returns
    -------
    SynthResult or None
    """
    t0 = time.perf_counter()
    cands = dict(list((candidates or {}).items())[:MAX_CANDIDATES])
    extra = extra or {}
    targets = [(name, t, c) for name, t, c in targets]
    evals = 0
    history = []
    inf = 1 << 62
    best = None
    best_cost = (inf, inf, inf)

    def ev(order_, permitted_):
        """Evaluate; give up (None) once the poles show it cannot beat the best so far
        (``P`` poles per relay: more than ``P * relays`` poles cannot fit in fewer relays).
        Before anything is found, twice the ``bound`` is the limit: a search may pass
        above the bound on its way below it."""
        nonlocal evals
        evals += 1
        if best is not None:
            limit = poles_per_relay * best_cost[0]
        elif bound is not None:
            limit = 2 * poles_per_relay * bound[0]
        else:
            limit = None
        try:
            return _evaluate(n, targets, cands, order_, permitted_, poles_per_relay, extra, limit)
        except _TooBig:
            return None

    def offer(r, tie_ok=False) -> bool:
        nonlocal best, best_cost
        if r is None:
            return False
        if r[4] < best_cost or (tie_ok and best is not None and r[4] == best_cost):
            best, best_cost = r, r[4]
            return True
        return False

    def out_of_time():
        return time.perf_counter() - t0 > time_budget

    base_order = list(order) if order is not None else list(range(n))
    best_order = base_order
    offer(ev(best_order, []))
    history.append(("initial order", best_cost))

    if effort > 0 and n > 1:
        if n <= EXHAUSTIVE_LIMIT:
            for perm in itertools.permutations(range(n)):
                if offer(ev(list(perm), [])):
                    best_order = list(perm)
            history.append(("exhaustive order", best_cost))
        else:
            for other in [list(reversed(base_order))] + [list(o) for o in (orders or ())]:
                if offer(ev(other, [])):
                    best_order = other
            history.append(("best starting order", best_cost))
            # descent by swapping neighbours, then sifting (Rudell, ICCAD 1993: one
            # variable moved through every position) while the window is small
            for _sweep in range(4):
                improved = False
                for i in range(n - 1):
                    if out_of_time():
                        break
                    cand_order = best_order[:i] + [best_order[i + 1], best_order[i]] + best_order[i + 2:]
                    if offer(ev(cand_order, [])):
                        best_order, improved = cand_order, True
                if not improved:
                    break
            if n <= SIFT_LIMIT:
                for j in list(best_order):
                    if out_of_time():
                        break
                    rest = [x for x in best_order if x != j]
                    for pos in range(len(rest) + 1):
                        cand_order = rest[:pos] + [j] + rest[pos:]
                        if cand_order != best_order and offer(ev(cand_order, [])):
                            best_order = cand_order
                history.append(("sifted order", best_cost))

    permitted: list = []
    if effort > 0 and cands:
        # greedy choice of re-amplification points: try each candidate in turn; a candidate
        # that is used and costs nothing is kept (it may pay off with later ones)
        for k in list(cands):
            if out_of_time():
                break
            trial = permitted + [k]
            r = ev(best_order, trial)
            if offer(r, tie_ok=r is not None and k in r[0].cand_net):
                permitted = trial
        for k in list(permitted):
            if out_of_time():
                break
            trial = [x for x in permitted if x != k]
            if offer(ev(best_order, trial), tie_ok=True):
                permitted = trial
        history.append(("re-amplification points", best_cost))
    if best is None or (bound is not None and best_cost[0] > bound[0]):
        return None
    cs, roots, live, counts, cost = best
    return SynthResult(cs, roots, [cs.poles[i] for i in live], counts, cost, best_order, permitted,
                       evals, time.perf_counter() - t0, history)
