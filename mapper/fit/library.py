"""The match table of a target: for each small function, the cheapest network of its cells.

For every truth table over ``n <= 4`` cut leaves the table holds an
:class:`Impl`: a small network of target cells (a *supergate*) over the
leaves in positive phase, with its cost in fractions of a part (a slot of a
quad package costs 1/4) and its depth in cell levels.

Two sources fill it:

* **Exact chains** for targets whose only logic cell is a 2-input NAND or NOR
  (``nand-only``, ``nor-only``): the shipped table of SAT-based exact
  synthesis (:mod:`mapper.logic.exact`).  Every function of up to three
  inputs has a proved minimum chain; a 4-input class has a proved minimum
  or, where the proof is not done yet, the best chain known (an upper
  bound, at least as good as a Shannon split on any input from the proved
  3-input chains).  The cover still weighs every chain against covers made
  of smaller cuts, so an upper bound that a split beats is never used.
* **Supergates** for any other target: compositions of the target's cells
  enumerated bottom-up (published: S. Chatterjee, A. Mishchenko, R. Brayton et
  al., "Reducing structural bias in technology mapping", ICCAD 2005): every
  cell over leaves and rails, then a cell over those, and for up to three
  leaves repeated to a fixed point.  Cost is a tree cost; identical gates in
  different supergates merge when the build is instantiated.

Cells whose inputs include a pin shared by every slot of their part (the
select of a quad multiplexer) are left out of the table: they can only share
a package when they share that net, which a per-cut match cannot know.
"""
from __future__ import annotations

import hashlib
import logging
import os
import pickle
import tempfile
from dataclasses import dataclass
from functools import cache
from itertools import combinations_with_replacement
from pathlib import Path

from ..logic.function import var_mask

__all__ = ["Impl", "CellLibrary", "GND", "VCC", "symmetric_table"]

log = logging.getLogger(__name__)

_CACHE_VERSION = 2

#: signal numbers of the rails inside an :class:`Impl`
GND = -1
VCC = -2


@dataclass(frozen=True)
class Impl:
    """A network of cells over ``n`` leaves.

    ``gates[i] = (cell, args)``: gate ``i`` is signal ``n + i``; each arg is a
    leaf ``0..n-1``, an earlier gate, :data:`GND` or :data:`VCC`.  ``out`` is
    the signal that computes the function.
    """

    cost: float
    depth: int
    gates: tuple
    out: int


def _cell_costs(target) -> dict:
    """Cost of one slot of each logic cell: 1 / slots of its cheapest carrier."""
    costs = {}
    for name, cd in target.cells.items():
        if cd.storage is not None or cd.function is None:
            continue
        best = None
        for pid in target.carriers.get(name, []):
            pd = target.parts[pid]
            slots = len(pd.slots_for(name)) or len(pd.slots)
            shared = set(pd.shared_pins)
            if shared & set(cd.inputs):
                best = None
                break
            c = 1.0 / max(1, slots)
            best = c if best is None else min(best, c)
        if best is not None:
            costs[name] = best
    return costs


class CellLibrary:
    """Match table of one target (see the module docstring)."""

    def __init__(self, target, k: int = 4):
        self.target = target
        self.k = k
        self.costs = _cell_costs(target)
        if not self.costs:
            raise ValueError(f"target {target.name} has no logic cells to map onto")
        self.cells = {name: target.cells[name] for name in self.costs}
        self.exact_gate = self._exact_gate()
        self._tables: dict = {}

    def _exact_gate(self):
        if len(self.cells) != 1:
            return None
        (name, cd), = self.cells.items()
        if cd.function.n != 2:
            return None
        t = cd.function.table()
        return {0b0111: "nand", 0b0001: "nor"}.get(t) and (name, {0b0111: "nand", 0b0001: "nor"}[t])

    # -- lookup -------------------------------------------------------------
    def lookup(self, n: int, table: int) -> Impl | None:
        """Cheapest known implementation of ``table`` over ``n`` leaves, or ``None``."""
        if self.exact_gate is not None:
            impl = _exact_impl(self.exact_gate[0], self.exact_gate[1], n, table, self.costs[self.exact_gate[0]])
            if impl is not None:
                return impl
            # not in the shipped exact table: fall back to enumerated supergates
        lib = self._tables.get(n)
        if lib is None:
            lib = self._tables[n] = self._cached(n)
        got = lib.get(table)
        if got is None or isinstance(got, Impl):
            return got
        impl = lib[table] = Impl(*got)  # stored as a plain tuple: fast to unpickle
        return impl

    def _cached(self, n: int) -> dict:
        """The supergate table over ``n`` leaves, from the on-disk cache when
        an identical set of cells and costs was enumerated before."""
        key = hashlib.sha256(repr((_CACHE_VERSION, n, sorted(
            (name, cd.function.n, cd.function.table(), self.costs[name])
            for name, cd in self.cells.items()))).encode()).hexdigest()[:24]
        folder = Path(os.environ.get("NETFIT_CACHE") or Path.home() / ".cache" / "netfit")
        path = folder / f"match-{key}.pickle"
        try:
            with open(path, "rb") as fh:
                return pickle.load(fh)
        except (OSError, pickle.PickleError, EOFError, AttributeError, ValueError):
            pass
        table = self._enumerate(n)
        try:
            folder.mkdir(parents=True, exist_ok=True)
            fd, tmp = tempfile.mkstemp(dir=folder, suffix=".tmp")
            with os.fdopen(fd, "wb") as fh:
                plain = {t: (i.cost, i.depth, i.gates, i.out) for t, i in table.items()}
                pickle.dump(plain, fh, protocol=pickle.HIGHEST_PROTOCOL)
            os.replace(tmp, path)
        except OSError as exc:  # a read-only home is no reason to fail
            log.debug("match table cache not written: %s", exc)
        return table

    def inverter(self) -> Impl | None:
        """Cheapest inverter of leaf 0 (``None`` when the cells cannot make one)."""
        return self.lookup(1, 0b01)

    # -- supergate enumeration -------------------------------------------
    def _compose_round(self, two, pool_a, pool_b, n, full, best, offer) -> bool:
        changed = False
        same = pool_a is pool_b
        for name, ctab, c in two:
            # the four minterm masks of the 2-input cell, as all-ones or zero
            m0, m1, m2, m3 = (full if (ctab >> m) & 1 else 0 for m in range(4))
            get = best.get
            for i, (ta, ia) in enumerate(pool_a):
                na = ~ta & full
                base = ia.cost + c
                for tb, ib in (pool_b[i:] if same else pool_b):
                    nb = ~tb & full
                    t = (m0 & na & nb) | (m1 & ta & nb) | (m2 & na & tb) | (m3 & ta & tb)
                    old = get(t)
                    if old is not None and old.cost <= base + ib.cost:
                        continue
                    changed |= offer(t, _compose(name, c, n, ia, ib))
        return changed

    def _enumerate(self, n: int) -> dict:
        full = (1 << (1 << n)) - 1
        best: dict = {}

        def offer(t, impl):
            old = best.get(t)
            if old is None or (impl.cost, impl.depth, len(impl.gates)) < (old.cost, old.depth, len(old.gates)):
                best[t] = impl
                return True
            return False

        for j in range(n):
            offer(var_mask(n, j), Impl(0.0, 0, (), j))
        offer(0, Impl(0.0, 0, (), GND))
        offer(full, Impl(0.0, 0, (), VCC))
        base = dict(best)
        cells = sorted(self.cells.items(), key=lambda kv: self.costs[kv[0]])
        # level 1: every cell over leaves and rails
        sigs = list(base.items())
        for name, cd in cells:
            a = cd.function.n
            if a > 4:
                continue  # wider cells over at most four leaves only repeat inputs
            ctab = cd.function.table()
            combos = (combinations_with_replacement(range(len(sigs)), a) if symmetric_table(ctab, a)
                      else _tuples(len(sigs), a))
            for combo in combos:
                tabs = [sigs[i][0] for i in combo]
                t = _apply(ctab, a, tabs, full)
                args = tuple(sigs[i][1].out for i in combo)
                offer(t, Impl(self.costs[name], 1, ((name, args),), n))
        # level 2+ : 2-input cells over the functions found so far, to a
        # fixed point for up to three leaves.  For four leaves the space is
        # too large for that: a 2-input cell combines any function of three
        # of the leaves (from the 3-leaf table) with a level-1 function.
        two = [(name, cd.function.table(), self.costs[name]) for name, cd in cells if cd.function.n == 2]
        if n <= 3:
            for _ in range(4):
                pool = sorted(best.items(), key=lambda kv: (kv[1].cost, kv[1].depth))
                if not self._compose_round(two, pool, pool, n, full, best, offer):
                    break
        else:
            small = list(best.items())
            wide: dict = {}
            if 3 not in self._tables:
                self._tables[3] = self._cached(3)
            sub = {t: (i if isinstance(i, Impl) else Impl(*i)) for t, i in self._tables[3].items()}
            for drop in range(4):
                keep = tuple(j for j in range(4) if j != drop)
                for t3, impl in sub.items():
                    t = _expand(t3, keep, 4)
                    cand = _remap(impl, 3, keep, 4)
                    old = wide.get(t)
                    if old is None or old.cost > cand.cost:
                        wide[t] = cand
            for t, impl in wide.items():
                offer(t, impl)
            self._compose_round(two, sorted(wide.items(), key=lambda kv: kv[1].cost), small, n, full, best, offer)
        # inverter on the output of anything, when cheaper than what we have
        inv = best.get(var_mask(n, 0) ^ full) if n >= 1 else None
        if inv is not None and inv.gates:
            (iname, _), = inv.gates
            ic = self.costs[iname]
            for t, impl in list(best.items()):
                nt = t ^ full
                old = best.get(nt)
                if old is None or old.cost > impl.cost + ic:
                    g = impl.gates + ((iname, (impl.out,)) if self.cells[iname].function.n == 1
                                      else (iname, (impl.out, impl.out)),)
                    offer(nt, Impl(impl.cost + ic, impl.depth + 1, g, n + len(impl.gates)))
        log.debug("match table of %s over %d leaves: %d functions", self.target.name, n, len(best))
        return best


def _expand(table: int, positions, n: int) -> int:
    from .cuts import expand_table
    return expand_table(table, tuple(positions), n)


def _remap(impl: Impl, n_from: int, positions, n_to: int) -> Impl:
    """``impl`` over ``n_from`` leaves, with leaf ``i`` moved to ``positions[i]``
    of ``n_to`` leaves."""
    d = n_to - n_from

    def s(x):
        if x < 0:
            return x
        return positions[x] if x < n_from else x + d

    return Impl(impl.cost, impl.depth,
                tuple((c, tuple(s(a) for a in args)) for c, args in impl.gates), s(impl.out))


def symmetric_table(t: int, n: int) -> bool:
    from .cuts import expand_table
    for j in range(n - 1):
        perm = list(range(n))
        perm[j], perm[j + 1] = perm[j + 1], perm[j]
        if expand_table(t, tuple(perm), n) != t:
            return False
    return True


def _tuples(m: int, a: int):
    """All ``a``-tuples of indices below ``m`` (with repetition, ordered)."""
    if a == 0:
        yield ()
        return
    for rest in _tuples(m, a - 1):
        for i in range(m):
            yield rest + (i,)


def _apply(ctab: int, a: int, tabs, full: int) -> int:
    """Table of a cell (table ``ctab`` over ``a`` inputs) applied to input tables."""
    out = 0
    for m in range(1 << a):
        if not (ctab >> m) & 1:
            continue
        term = full
        for j in range(a):
            term &= tabs[j] if (m >> j) & 1 else (~tabs[j] & full)
            if not term:
                break
        out |= term
    return out


def _compose(name: str, cost: float, n: int, ia: Impl, ib: Impl) -> Impl:
    """Cell ``name``(ia, ib) as one network (ib's gates renumbered after ia's)."""
    ga = ia.gates
    off = len(ga)

    def s(x):
        return x + off if x >= n else x

    gb = tuple((c, tuple(s(x) for x in args)) for c, args in ib.gates)
    gates = ga + gb + ((name, (ia.out, s(ib.out))),)
    return Impl(ia.cost + ib.cost + cost, 1 + max(ia.depth, ib.depth), gates, n + len(gates) - 1)


@cache
def _exact_impl(cell: str, gate: str, n: int, table: int, cost: float) -> Impl | None:
    from ..logic import exact

    full = (1 << (1 << n)) - 1
    if table == 0:
        return Impl(0.0, 0, (), GND)
    if table == full:
        return Impl(0.0, 0, (), VCC)
    chain = exact.lookup(n, table, gate)
    if chain is None:
        return None
    gates = tuple((cell, (a, b)) for a, b in chain.gates)
    depth = [0] * (n + len(gates))
    for i, (_, (a, b)) in enumerate(gates):
        depth[n + i] = 1 + max(depth[a], depth[b])
    out = chain.outputs[0]
    return Impl(cost * len(gates), depth[out], gates, out)


class RecostedLibrary(CellLibrary):
    """``base``'s match table weighed with other costs per cell: the same
    networks, each costed as the sum of its cells' new costs (the network
    chosen per function stays the base table's; the cover's choices between
    cuts and phases follow the new costs)."""

    def __init__(self, base: CellLibrary, costs: dict):  # no table of its own: base's, recosted
        self.base = base
        self.target, self.k, self.cells = base.target, base.k, base.cells
        self.costs = costs
        self.exact_gate = base.exact_gate
        self._tables = {}
        self._memo: dict = {}

    def lookup(self, n: int, table: int) -> Impl | None:
        key = (n, table)
        if key in self._memo:
            return self._memo[key]
        impl = self.base.lookup(n, table)
        if impl is not None:
            impl = Impl(sum(self.costs[c] for c, _ in impl.gates), impl.depth, impl.gates, impl.out)
        self._memo[key] = impl
        return impl
