"""Functions of few inputs built again from their truth tables, with don't-cares.

Every output (and storage input) of a design of at most
:data:`MAX_FREE` free variables is collapsed to its truth table over them;
where the design's don't-care network (BLIF ``.exdc``) is 1, its value is
free.  Each such incompletely specified function is then built by
:meth:`Synth.build`, the first rule that applies winning:

1. a function the graph already computes (or its complement), or one that
   fits the care set, is reused (functional sharing across outputs);
2. a function of at most four inputs gets the structure of fewest ANDs
   known (:mod:`mapper.logic.restructure.structures`), its don't-cares set
   to give the smallest;
3. **bi-decomposition** -- ``f = g(A, C) op h(B, C)`` with ``op`` one of
   AND, OR, exclusive-OR and ``A``, ``B`` disjoint non-empty sets of inputs
   -- when the shared set ``C`` is empty (A. Mishchenko, B. Steinbach and
   M. Perkowski, "An algorithm for bi-decomposition of logic functions",
   DAC 2001; their test for OR with don't-cares: ``Q & (exists A: R) &
   (exists B: R) = 0`` for ON-set ``Q`` and OFF-set ``R``, AND by duality;
   the sets grown greedily from a pair of inputs, as there; done here on
   truth tables rather than their BDDs);
4. a totally symmetric function of four inputs or more becomes a counter of
   ones (:mod:`mapper.logic.restructure.symmetric`);
5. a bi-decomposition with a shared set ``C``;
6. Shannon expansion on the input that leaves the two halves the fewest
   inputs.

Each part made is itself built the same way, so the recursion is over the
inputs of one function (at most :data:`MAX_FREE` deep), never over a
netlist.
"""
from __future__ import annotations

from itertools import combinations

from ..aig import AIG
from ..function import var_mask
from .structures import apply, structure
from .symmetric import Counter, local_table, symmetry

__all__ = ["Synth", "MAX_FREE"]

#: designs with more free variables (inputs and storage outputs) are not collapsed
MAX_FREE = 14
#: seed pairs grown at most per decomposition search
MAX_SEEDS = 8
#: built nodes scanned for a function that fits a care set
MAX_SCAN = 3000


class Synth:
    """Builds incompletely specified functions over ``n`` free variables into ``aig``."""

    def __init__(self, aig: AIG, free: list, n: int, counters: bool = True):
        self.g = aig
        self.n = n
        self.full = (1 << (1 << n)) - 1
        self.free = list(free)
        self.counters = counters
        self.tab: list = [0]
        self.known: dict = {0: 0, self.full: 1}
        self.scan: list = []
        self.counter = Counter(aig)
        self._sync()
        for j, lit in enumerate(free):
            t = var_mask(n, j)
            self.tab[lit >> 1] = t ^ (self.full if lit & 1 else 0)
            self._know(lit >> 1)

    # -- the graph's tables ----------------------------------------------
    def _sync(self) -> None:
        """Tables of the nodes added since the last call."""
        g, tab, full = self.g, self.tab, self.full
        start = len(tab)
        while len(tab) < g.num_vars:
            v = len(tab)
            a = g.f0[v]
            if a < 0:
                tab.append(0)   # a free variable: set by the constructor
                continue
            b = g.f1[v]
            tab.append((tab[a >> 1] ^ (full if a & 1 else 0)) & (tab[b >> 1] ^ (full if b & 1 else 0)))
        for v in range(start, len(tab)):
            if g.f0[v] >= 0:
                self._know(v)

    def _know(self, v: int) -> None:
        t = self.tab[v]
        self.known.setdefault(t, 2 * v)
        self.known.setdefault(t ^ self.full, 2 * v + 1)
        self.scan.append(v)

    def table(self, lit: int) -> int:
        self._sync()
        return self.tab[lit >> 1] ^ (self.full if lit & 1 else 0)

    # -- the rules ----------------------------------------------------------
    def build(self, on: int, dc: int = 0) -> int:
        """A literal of the graph computing a function that is 1 on ``on``,
        0 off ``on | dc`` (see the module docstring for how)."""
        full = self.full
        on &= full
        dc &= full & ~on
        off = full & ~(on | dc)
        if not on:
            return 0
        if not off:
            return 1
        hit = self.known.get(on) if not dc else self._fits(on, off)
        if hit is not None:
            return hit
        on, off, supp = self._support(on, off)
        dc = full & ~(on | off)
        hit = self.known.get(on) if not dc else self._fits(on, off)
        if hit is not None:
            return hit
        if len(supp) <= 4:
            return self._small(on, off, supp)
        # a counting function goes to the counter first (its carries serve the
        # other outputs that count the same inputs); a plain AND or OR only
        # when that counter is there already
        lit = self._symmetric(on, off, supp, plain=False) if self.counters and len(supp) >= 4 else None
        if lit is None:
            lit = self._decompose(on, off, supp, shared=False)
        if lit is None and self.counters and len(supp) >= 4:
            lit = self._symmetric(on, off, supp)
        if lit is None:
            lit = self._decompose(on, off, supp, shared=True)
        if lit is None:
            lit = self._shannon(on, off, supp)
        self._sync()
        return lit

    def _fits(self, on: int, off: int):
        """A built literal that is 1 on ``on`` and 0 on ``off``, or ``None``."""
        full = self.full
        for v in self.scan[-MAX_SCAN:]:
            t = self.tab[v]
            if not (on & ~t) and not (off & t):
                return 2 * v
            if not (on & t) and not (off & ~t & full):
                return 2 * v + 1
        return None

    def _support(self, on: int, off: int):
        """Drop the inputs the function need not depend on: ``(on, off, inputs left)``."""
        n = self.n
        supp = []
        for j in range(n):
            if depends(on, n, j) or depends(off, n, j):
                supp.append(j)
        kept = []
        for j in supp:
            if on & _swap(off, n, j):   # essential: some ON minterm's neighbour across j is OFF
                kept.append(j)
                continue
            on, off = _smooth(on, n, j), _smooth(off, n, j)
        return on, off, kept

    def _small(self, on: int, off: int, supp: list) -> int:
        """Four inputs or fewer: the smallest structure over the completions of the don't-cares."""
        k = len(supp)
        lon = local_table(on, supp, self.n)
        lcare = local_table(on | off, supp, self.n)
        full = (1 << (1 << k)) - 1
        free_bits = [m for m in range(1 << k) if not (lcare >> m) & 1]
        options = [lon, lon | (full & ~lcare)]
        if len(free_bits) <= 6:
            options = []
            for mask in range(1 << len(free_bits)):
                t = lon
                for i, m in enumerate(free_bits):
                    if (mask >> i) & 1:
                        t |= 1 << m
                options.append(t)
        best = min(options, key=lambda t: (len(structure(k, t)[0]), t))
        ops, out = structure(k, best)
        lit = apply(self.g, ops, out, [self.free[j] for j in supp])
        self._sync()
        return lit

    def _symmetric(self, on: int, off: int, supp: list, plain: bool = True):
        """The function from a counter of ones of its inputs, when it is
        totally symmetric; ``plain`` false refuses an AND or OR of the
        inputs unless their counter is built already."""
        got = symmetry(on, off, supp, self.n)
        if got is None:
            return None
        pol, values = got
        lits = [self.free[j] ^ p for j, p in zip(supp, pol)]
        if not plain and _is_plain(values) and not self.counter.has(lits):
            return None
        bits = self.counter.bits(lits)
        self._sync()
        w = len(bits)
        if w > 4:
            return None
        lon = lcare = 0
        for c, val in enumerate(values):
            if val is not None:
                lcare |= 1 << c
                if val:
                    lon |= 1 << c
        full = (1 << (1 << w)) - 1
        free_bits = [m for m in range(1 << w) if not (lcare >> m) & 1]
        options = [lon]
        for mask in range(1, 1 << min(len(free_bits), 8)):
            t = lon
            for i, m in enumerate(free_bits[:8]):
                if (mask >> i) & 1:
                    t |= 1 << m
            options.append(t)
        best = min(options, key=lambda t: (len(structure(w, t & full)[0]), t))
        ops, out = structure(w, best)
        lit = apply(self.g, ops, out, bits)
        self._sync()
        return lit

    # -- bi-decomposition -----------------------------------------------
    def _decompose(self, on: int, off: int, supp: list, shared: bool):
        """The best bi-decomposition found (``shared``: with a shared set
        allowed), built; ``None`` when none."""
        best = None
        for op in ("or", "and", "xor"):
            if op == "xor" and on | off != self.full:
                continue   # exclusive-OR only for completely specified functions
            got = self._group(on, off, supp, op)
            if got is None:
                continue
            xa, xb = got
            xc = len(supp) - len(xa) - len(xb)
            if xc and not shared:
                continue
            key = (xc, max(len(xa), len(xb)), ("xor", "or", "and").index(op))
            if best is None or key < best[0]:
                best = (key, op, xa, xb)
        if best is None:
            return None
        _, op, xa, xb = best
        if op == "xor":
            return self._build_xor(on, xa, xb)
        if op == "or":
            return self._build_or(on, off, xa, xb)
        return self._build_or(off, on, xa, xb) ^ 1

    def _group(self, on: int, off: int, supp: list, op: str):
        """Sets ``(A, B)`` for a decomposition by ``op``, grown from seed
        pairs; the pair giving the fewest shared inputs wins."""
        n = self.n
        if op == "and":
            on, off = off, on
        best = None
        seeds = 0
        for a, b in combinations(supp, 2):
            if not self._ok(on, off, op, [a], [b]):
                continue
            xa, xb = [a], [b]
            for v in supp:
                if v in (a, b):
                    continue
                first, second = (xa, xb) if len(xa) <= len(xb) else (xb, xa)
                for side in (first, second):
                    side.append(v)
                    if self._ok(on, off, op, xa, xb):
                        break
                    side.pop()
            cand = (len(supp) - len(xa) - len(xb), abs(len(xa) - len(xb)))
            if best is None or cand < best[0]:
                best = (cand, list(xa), list(xb))
            seeds += 1
            if seeds >= MAX_SEEDS or best[0][0] == 0:
                break
        del n
        return None if best is None else (best[1], best[2])

    def _ok(self, on: int, off: int, op: str, xa: list, xb: list) -> bool:
        n = self.n
        if op == "xor":
            f = on
            fa = _zero(f, n, xa)
            fb = _zero(f, n, xb)
            return not (f ^ fa ^ fb ^ _zero(fa, n, xb))
        ea = off
        for j in xa:
            ea = _smooth(ea, n, j)
        if not on & ea:
            return True
        eb = off
        for j in xb:
            eb = _smooth(eb, n, j)
        return not (on & ea & eb)

    def _build_or(self, on: int, off: int, xa: list, xb: list) -> int:
        """``g(A, C) | h(B, C)`` for ON-set ``on`` and OFF-set ``off`` (Mishchenko et al.)."""
        n, full = self.n, self.full
        ea, eb = off, off
        for j in xa:
            ea = _smooth(ea, n, j)
        for j in xb:
            eb = _smooth(eb, n, j)
        qg = on & ea
        for j in xb:
            qg = _smooth(qg, n, j)
        rg = eb
        g = self.build(qg, full & ~(qg | rg))
        tg = self.table(g)
        qh = on & ~tg
        for j in xa:
            qh = _smooth(qh, n, j)
        rh = ea
        h = self.build(qh, full & ~(qh | rh))
        return self.g.add_or(g, h)

    def _build_xor(self, f: int, xa: list, xb: list) -> int:
        n = self.n
        g_t = _zero(f, n, xb)
        h_t = f ^ g_t
        return self.g.add_xor(self.build(g_t), self.build(h_t))

    def _shannon(self, on: int, off: int, supp: list) -> int:
        n = self.n
        best = None
        for j in supp:
            parts = []
            for val in (0, 1):
                a, b = _fix(on, n, j, val), _fix(off, n, j, val)
                parts.append((a, b))
            size = sum(len(self._support(a, b)[2]) for a, b in parts)
            if best is None or size < best[0]:
                best = (size, j, parts)
        assert best is not None
        _, j, ((on0, off0), (on1, off1)) = best
        full = self.full
        hi = self.build(on1, full & ~(on1 | off1))
        lo = self.build(on0, full & ~(on0 | off0))
        return self.g.add_mux(self.free[j], hi, lo)


def _is_plain(values) -> bool:
    """Whether a symmetric function with ``values`` per count of ones is an
    AND or an OR of its inputs (one value at no ones, the other at all)."""
    ones = [w for w, v in enumerate(values) if v == 1]
    zeros = [w for w, v in enumerate(values) if v == 0]
    return ones == [len(values) - 1] or zeros == [0]


def depends(t: int, n: int, j: int) -> bool:
    m = var_mask(n, j)
    return ((t & m) >> (1 << j)) != (t & ~m & ((1 << (1 << n)) - 1))


def _swap(t: int, n: int, j: int) -> int:
    """``t`` with input ``j`` complemented (each minterm moved to its neighbour across ``j``)."""
    m = var_mask(n, j)
    s = 1 << j
    return ((t & m) >> s) | ((t & ~m & ((1 << (1 << n)) - 1)) << s)


def _smooth(t: int, n: int, j: int) -> int:
    """Existential quantification of input ``j``."""
    return t | _swap(t, n, j)


def _fix(t: int, n: int, j: int, val: int) -> int:
    """The cofactor at input ``j`` = ``val``, spread over both values of ``j``."""
    m = var_mask(n, j)
    s = 1 << j
    if val:
        x = t & m
        return x | (x >> s)
    x = t & ~m & ((1 << (1 << n)) - 1)
    return x | (x << s)


def _zero(t: int, n: int, js) -> int:
    for j in js:
        t = _fix(t, n, j, 0)
    return t
