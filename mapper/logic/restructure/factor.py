"""Algebraic factoring and common-divisor extraction over a network of sums of products.

Published methods:

* kernels and co-kernels of a sum of products, and their use to find
  common sub-expressions of several functions: R. K. Brayton and
  C. McMullen, "The decomposition and factorization of Boolean
  expressions", ISCAS 1982;
* weak (algebraic) division and factoring by a level-0 kernel ("quick
  factor"): R. K. Brayton, "Factoring logic functions", IBM J. Res. Dev.
  31(2), 1987;
* common cubes found as pairs of literals that occur together, extracted
  greedily by the literals they save (the single-cube half of J. Rajski and
  J. Vasudevamurthy, "The testability-preserving concurrent decomposition
  and factorization of Boolean expressions", IEEE TCAD 11(6), 1992).

A *literal* is ``2 * var + c`` (``c = 1`` complemented), a *cube* a
``frozenset`` of literals, a *sum of products* (SOP) a list of distinct
cubes; all the division here is algebraic (the cubes of divisor and
quotient share no variable), so no step needs a truth table and wide
functions are fine.

:func:`factored_graph` is the pass: the design's nodes as a network of
SOPs (each from its smallest two-level cover), common kernels and cubes
extracted while they save literals, then every SOP factored into an
and-inverter graph.

Examples
--------
>>> a, b, c, d = (2 * v for v in range(4))
>>> F = [frozenset({a, c}), frozenset({a, d}), frozenset({b, c}), frozenset({b, d})]
>>> sorted(sorted(tuple(sorted(c)) for c in k) for k in kernels(F))   # (a+b)(c+d): kernels a+b, c+d and F
[[(0,), (2,)], [(0, 4), (0, 6), (2, 4), (2, 6)], [(4,), (6,)]]
>>> q, r = divide(F, [frozenset({c}), frozenset({d})])
>>> sorted(sorted(x) for x in q), r
([[0], [2]], [])
"""
from __future__ import annotations

from collections import Counter

from ..aig import AIG

__all__ = ["kernels", "divide", "factor_into", "SopNetwork", "factored_graph", "literals"]

#: kernels gathered per SOP at most (the count can grow exponentially with its size)
MAX_KERNELS = 300
#: SOPs of more cubes are not searched for kernels (they are still factored)
MAX_KERNEL_CUBES = 120
#: extraction rounds at most (each takes one divisor out)
MAX_ROUNDS = 400


def literals(sop) -> int:
    """Number of literals of a sum of products."""
    return sum(len(c) for c in sop)


def _counts(sop) -> Counter:
    cnt: Counter = Counter()
    for c in sop:
        cnt.update(c)
    return cnt


def _common_cube(sop) -> frozenset:
    it = iter(sop)
    common = set(next(it))
    for c in it:
        common &= c
        if not common:
            break
    return frozenset(common)


def kernels(sop, limit: int = MAX_KERNELS) -> list:
    """Kernels of ``sop`` (cube-free quotients by a cube; ``sop`` itself when
    it is cube-free), each a list of cubes; at most ``limit`` of them.

    The enumeration of Brayton and McMullen: divide by each literal that
    occurs in two cubes or more, in a fixed order, skipping a co-kernel
    that holds an earlier literal (it was found before), and go on from the
    quotient.  An explicit stack; its depth is at most the number of
    literals."""
    out: list = []
    sop = list(sop)
    if len(sop) < 2:
        return out
    # literals are ordered by their numbers; a co-kernel holding a literal
    # smaller than the one divided by was found from that literal before
    stack = [(sop, -1)]
    seen: set = set()
    while stack and len(out) < limit:
        f, start = stack.pop()
        cnt = _counts(f)
        key = frozenset(f)
        if not _common_cube(f) and key not in seen:   # one kernel may have several co-kernels
            seen.add(key)
            out.append(f)
        for lit in sorted(cnt):
            if lit <= start or cnt[lit] < 2:
                continue
            sub = [c for c in f if lit in c]
            common = _common_cube(sub)
            if any(x < lit for x in common):
                continue
            stack.append(([c - common for c in sub], lit))
    return out


def divide(f, d) -> tuple[list, list]:
    """Weak division: ``(quotient, remainder)`` with ``f = quotient * d + remainder``
    (algebraic: quotient and divisor share no variable)."""
    d = list(d)
    if not d:
        return [], list(f)
    q: set | None = None
    for dc in d:
        part = {c - dc for c in f if dc <= c}
        q = part if q is None else q & part
        if not q:
            return [], list(f)
    dvars = {x >> 1 for dc in d for x in dc}
    assert q is not None   # d is not empty
    q = {c for c in q if not any(x >> 1 in dvars for x in c)}
    if not q:
        return [], list(f)
    used = {qc | dc for qc in q for dc in d}
    return sorted(q, key=sorted), [c for c in f if c not in used]


def _quick_divisor(f):
    """A level-0 kernel of ``f`` (divide by the most frequent literal while
    some literal occurs twice, then drop the common cube), or ``None`` when
    no literal occurs twice."""
    g = list(f)
    first = True
    while True:
        cnt = _counts(g)
        lit, k = max(cnt.items(), key=lambda kv: (kv[1], -kv[0]), default=(None, 0))
        if k < 2:
            break
        g = [c - {lit} for c in g if lit in c]
        first = False
    if first:
        return None
    common = _common_cube(g)
    return [c - common for c in g]


def factor_into(aig: AIG, sop, leaf) -> int:
    """Build ``sop`` into ``aig`` in factored form and return its literal.

    ``leaf(lit)`` gives the graph literal of an SOP literal.  Quick
    factoring (Brayton 1987): take out the common cube, divide by a level-0
    kernel, factor quotient, divisor and remainder alike; where the quotient
    is a single cube, factor by the most frequent literal instead.  The
    recursion is over the SOP (each call on fewer literals), never over a
    netlist."""
    sop = [c for c in sop]
    if not sop:
        return 0
    if any(not c for c in sop):
        return 1
    if len(sop) == 1:
        return aig.add_and_many(sorted(leaf(x) for x in sop[0]))
    common = _common_cube(sop)
    if common:
        rest = factor_into(aig, [c - common for c in sop], leaf)
        return aig.add_and(aig.add_and_many(sorted(leaf(x) for x in common)), rest)
    d = _quick_divisor(sop)
    if d is None:
        return aig.add_or_many([aig.add_and_many(sorted(leaf(x) for x in c)) for c in sop])
    q, r = divide(sop, d)
    if len(q) <= 1:
        cnt = _counts(sop)
        lit = max(cnt, key=lambda x: (cnt[x], -x))
        q = [c - {lit} for c in sop if lit in c]
        r = [c for c in sop if lit not in c]
        d = [frozenset({lit})]
        q, d = d, q
    prod = aig.add_and(factor_into(aig, q, leaf), factor_into(aig, d, leaf))
    if not r:
        return prod
    return aig.add_or(prod, factor_into(aig, r, leaf))


class SopNetwork:
    """A network of sums of products over free variables ``0 .. n_free-1``.

    ``sops[k]`` is the SOP of variable ``n_free + k``; ``roots`` are literals
    (or the constants ``-1`` false and ``-2`` true) of what the network must
    compute, in the order of :func:`mapper.logic.restructure.graph.roots`.
    """

    def __init__(self, n_free: int):
        self.n_free = n_free
        self.sops: list = []
        self.roots: list = []

    def add(self, sop) -> int:
        """A new node computing ``sop``; returns its variable."""
        self.sops.append(list(sop))
        return self.n_free + len(self.sops) - 1

    def literal_count(self) -> int:
        return sum(literals(s) for s in self.sops)

    # -- extraction ---------------------------------------------------------
    def extract(self, rounds: int = MAX_ROUNDS) -> int:
        """Take out common kernels and cubes while each saves literals
        (greedy, best divisor first); returns the number taken out."""
        done = 0
        cache: dict = {}
        for _ in range(rounds):
            best = self._best_kernel(cache)
            cube = self._best_cube()
            if best is None and cube is None:
                break
            if cube is not None and (best is None or cube[0] >= best[0]):
                self._take_cube(cube[1])
            else:
                self._take_kernel(best[1], best[2])
            done += 1
        return done

    def _best_kernel(self, cache: dict):
        """``(value, kernel, nodes)`` of the kernel that saves the most literals, or ``None``."""
        found: dict = {}
        for i, sop in enumerate(self.sops):
            if len(sop) < 2 or len(sop) > MAX_KERNEL_CUBES:
                continue
            key = frozenset(sop)
            ks = cache.get(key)
            if ks is None:
                ks = cache[key] = [frozenset(k) for k in kernels(sop)]
            for k in ks:
                found.setdefault(k, set()).add(i)
        best = None
        for k, users in found.items():
            klits = literals(k)
            value = -klits
            for i in users:
                q, _ = divide(self.sops[i], k)
                if q:
                    value += (len(k) - 1) * literals(q) + len(q) * (klits - 1)
            if value > 0 and (best is None or (value, -klits) > (best[0], -literals(best[1]))):
                best = (value, k, users)
        return best

    def _take_kernel(self, k, users) -> None:
        sop_k = sorted(k, key=sorted)
        var = self.add(sop_k)
        lit = 2 * var
        for i in sorted(users):
            q, r = divide(self.sops[i], sop_k)
            if q:
                self.sops[i] = [c | {lit} for c in q] + r

    def _best_cube(self):
        """``(value, pair)`` of the pair of literals found together in the most cubes, or ``None``."""
        pairs: Counter = Counter()
        for sop in self.sops:
            for c in sop:
                if len(c) < 2:
                    continue
                s = sorted(c)
                for x in range(len(s)):
                    for y in range(x + 1, len(s)):
                        pairs[(s[x], s[y])] += 1
        if not pairs:
            return None
        pair, count = max(pairs.items(), key=lambda kv: (kv[1], -kv[0][0], -kv[0][1]))
        value = count - 2
        return (value, pair) if value > 0 else None

    def _take_cube(self, pair) -> None:
        cube = frozenset(pair)
        var = self.add([cube])
        lit = 2 * var
        for i, sop in enumerate(self.sops):
            if i == var - self.n_free:
                continue
            self.sops[i] = [(c - cube) | {lit} if cube <= c else c for c in sop]

    # -- to a graph -----------------------------------------------------------
    def to_aig(self, aig: AIG, free: list) -> list:
        """Factor every node into ``aig`` (``free[j]`` the literal of free
        variable ``j``); returns the root literals."""
        lit_of = list(free) + [None] * len(self.sops)
        for var in self._order():
            lit_of[var] = factor_into(aig, self.sops[var - self.n_free], lambda x: lit_of[x >> 1] ^ (x & 1))
        return [0 if r == -1 else 1 if r == -2 else lit_of[r >> 1] ^ (r & 1) for r in self.roots]

    def _order(self) -> list:
        """The nodes some root reads, each after the nodes it reads (an
        explicit stack: extracted nodes come after their readers in number)."""
        order: list = []
        state: dict = {}
        for r in self.roots:
            if r < 0 or (r >> 1) < self.n_free:
                continue
            stack = [(r >> 1, False)]
            while stack:
                v, done = stack.pop()
                if done:
                    order.append(v)
                    continue
                if v in state:
                    continue
                state[v] = 1
                stack.append((v, True))
                for c in self.sops[v - self.n_free]:
                    for x in c:
                        u = x >> 1
                        if u >= self.n_free and u not in state:
                            stack.append((u, False))
        return order


def network_of(design, aig_free_names: list):
    """The design's logic as an :class:`SopNetwork`: each node from its
    smallest two-level cover (:func:`mapper.logic.minimize.min_cover`),
    buffers and inverters folded into their readers' literals.  Free
    variables follow ``aig_free_names`` (inputs, then storage outputs).
    Returns ``None`` for a node too wide to cover."""
    from ...netlist import Logic
    from ..minimize import min_cover

    net = SopNetwork(len(aig_free_names))
    lit: dict = {name: 2 * j for j, name in enumerate(aig_free_names)}
    for name in design.topological_order():
        node = design.nodes[name]
        if not isinstance(node, Logic):
            continue
        const = node.func.constant_value()
        if const is not None:
            lit[name] = -2 if const else -1
            continue
        cubes, phase = min_cover(node.func) if node.func.n <= 10 else node.func.cover()
        sop = _substitute(cubes, [lit[f] for f in node.fanins])
        if sop is None:   # constant after the fan-ins' constants
            lit[name] = -1 if phase else -2
            continue
        if len(sop) == 1 and len(sop[0]) == 1:
            (x,) = sop[0]
            lit[name] = x ^ (0 if phase else 1)
            continue
        if sop == [frozenset()]:
            lit[name] = -2 if phase else -1
            continue
        lit[name] = 2 * net.add(sop) + (0 if phase else 1)
    return net, lit


def _substitute(cubes, fan) -> list | None:
    """Cubes over node inputs made cubes over network literals (constants
    folded; a contradictory cube dropped); ``None`` for constant false."""
    out: set = set()
    for cube in cubes:
        c: set = set()
        dead = False
        for j, ch in enumerate(cube):
            if ch == "-":
                continue
            x = fan[j]
            if x < 0:                       # a constant input
                val = x == -2
                if val != (ch == "1"):
                    dead = True
                    break
                continue
            x = x if ch == "1" else x ^ 1
            if x ^ 1 in c:
                dead = True
                break
            c.add(x)
        if not dead:
            out.add(frozenset(c))
    if not out:
        return None
    if frozenset() in out:
        return [frozenset()]
    # a cube contained in another is redundant (single-cube containment)
    kept = [c for c in out if not any(o < c for o in out)]
    return sorted(kept, key=sorted)


def factored_graph(design, aig: AIG) -> AIG | None:
    """The algebraic pass: ``design`` (whose graph is ``aig``, for the free
    variables and roots) as an SOP network, common divisors extracted,
    factored into a new graph.  ``None`` when the design has no node worth
    it (every node of two inputs or fewer)."""
    from ...netlist import Logic
    from .graph import frame

    if not any(isinstance(n, Logic) and n.func.n > 2 for n in design.nodes.values()):
        return None
    names = [aig.names[v] for v in aig.inputs] + [latch.name for latch in aig.latches]
    net, lit = network_of(design, names)
    roots = [lit[o] for o in design.outputs]
    for st in design.storage().values():
        roots.append(lit[st.d])
        if st.control is not None:
            roots.append(lit[st.control])
    net.roots = roots
    net.extract()
    new, lmap = frame(aig)
    free = [lmap[v] for v in aig.inputs] + [lmap[latch.var] for latch in aig.latches]
    got = net.to_aig(new, free)
    return _finish_roots(aig, new, got)


def _finish_roots(aig: AIG, new: AIG, got: list) -> AIG:
    """Outputs and storage literals of ``new`` from the root literals ``got``
    (in :func:`mapper.logic.restructure.graph.roots` order)."""
    it = iter(got)
    for name, _ in aig.outputs:
        new.add_output(name, next(it))
    for old, nl in zip(aig.latches, new.latches):
        nl.next = next(it)
        nl.control = None if old.control is None else next(it)
    return new
