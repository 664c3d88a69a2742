"""Exact synthesis of minimum NAND2 (and NOR2) networks, and the shipped table of them.

A *chain* (Knuth's word for a straight-line Boolean program) over ``n`` inputs
is a list of 2-input gates; signal ``j < n`` is input ``j`` and signal
``n + i`` is gate ``i``, whose operands are earlier signals.  In a NAND2
network an inverter costs a gate (``NAND(x, x)``), and so does every
complemented input or output: only input permutations are free.

Method
------
SAT-based exact synthesis as published by A. Kojevnikov, A. S. Kulikov and
G. Yaroslavtsev, "Finding efficient circuits using SAT-solvers", SAT 2009
(LNCS 5584), and D. E. Knuth, *The Art of Computer Programming* 4A,
§7.1.2 ("Boolean evaluation"): for a trial gate count ``r`` a CNF formula
states that ``r`` gates, each picking two operands among the inputs and the
earlier gates (one *selection variable* per operand pair), take values on
every row of the truth table that agree with the gate type and make the
outputs equal the wanted tables.  ``r`` grows from a lower bound until the
formula is satisfiable; every smaller count having been refuted, the chain
is minimum.

The refutations are kept short by constraints that every *minimum* chain
can be brought to satisfy (so they never lose a solution):

* operand pairs of consecutive gates strictly increase in colexicographic
  order (place, among the gates whose operands are placed, the one with the
  smallest pair: gates it enables read it, so their pairs are larger; equal
  pairs would be two identical gates), and a single output is the last gate;
* every gate is used by a later gate or drives an output;
* no gate is constant, equal to an input, or equal to another gate
  (any of these could be removed);
* no inverter of an inverter (a double inversion can be removed).

Many functions at once: :func:`enumerate_cost` leaves the output free and
asks the solver for any ``r``-gate chain whose function is not yet known,
blocks the whole input-permutation class of each answer, and repeats until
the formula is unsatisfiable.  Run for ``r = 1, 2, ...`` this gives every
class of minimum count ``r`` with a proof, and a lower bound ``r + 1`` for
all the others, at a small fraction of the cost of refuting each class on
its own.  To keep one representative per class a lex-leader constraint asks
the output table to be no larger than its images under swaps of adjacent
inputs.

NOR2 networks come by duality: the NOR network with the same wiring as a
NAND network computes the dual ``f*(x) = ~f(~x)`` of what the NAND network
computes, so a minimum NOR2 chain for ``f`` is a minimum NAND2 chain for
``f*`` read with NOR gates.

The table
---------
``mapper/data/exact_nand2.json`` (made by ``scripts/make_exact_table.py``,
then taken further by ``scripts/prove_exact_table.py``) holds a minimum NAND2
chain for every function of 1, 2 and 3 inputs and one chain per
input-permutation class of 4-input functions (3984 classes; only
permutations are free in NAND2, so NPN classes would not do), each with a
proved lower bound and marked proved minimum or only an upper bound: not
every 4-input class is proved yet (``table_info()["proved_4"]`` says how
many are).  An unproved chain is the best known: no longer than a Shannon
split on any input from the proved 3-input chains, nor than the cut
mapper's cover of the function alone.  :func:`lookup` applies the
permutation and the duality; its ``meta`` block records how it was made.
By duality the NOR2 table is proved exactly where the NAND2 one is.

Examples
--------
>>> c = synthesize(2, [0b0110])          # XOR2
>>> len(c.gates), c.tables() == (0b0110,)
(4, True)
>>> min_gates(2, 0b1000), min_gates(2, 0b1000, gate="nor")   # AND2
(2, 3)
"""
from __future__ import annotations

import itertools
import json
import logging
from collections.abc import Sequence
from dataclasses import dataclass, field
from functools import cache, lru_cache
from importlib import resources

from .function import var_mask

__all__ = [
    "TIE_LOW",
    "TIE_HIGH",
    "GATES",
    "Chain",
    "Outcome",
    "synthesize",
    "search",
    "enumerate_cost",
    "dual_table",
    "permute_table",
    "perm_class_rep",
    "lookup",
    "lookup_entry",
    "min_gates",
    "table_info",
    "TABLE_RESOURCE",
]

log = logging.getLogger(__name__)

#: Output marker: the output is tied low (constant 0, no gate).
TIE_LOW = -1
#: Output marker: the output is tied high (constant 1, no gate).
TIE_HIGH = -2

GATES = ("nand", "nor")

#: Resource name of the shipped table inside ``mapper.data``.
TABLE_RESOURCE = "exact_nand2.json"

_SOLVER = "cadical195"


def _full(n: int) -> int:
    return (1 << (1 << n)) - 1


@dataclass(frozen=True)
class Chain:
    """A network of 2-input gates of one type.

    Signals ``0 .. n-1`` are the inputs; signal ``n + i`` is gate ``i``,
    ``gate(sig a, sig b)`` with ``a <= b < n + i`` (``a == b`` makes an
    inverter).  ``outputs[k]`` is the signal of output ``k``: a gate, an
    input (a projection needs no gate), or :data:`TIE_LOW` / :data:`TIE_HIGH`
    for a constant output (a tie, no gate).  ``gate`` is ``"nand"`` or
    ``"nor"``.
    """

    n: int
    gates: tuple[tuple[int, int], ...]
    outputs: tuple[int, ...]
    gate: str = field(default="nand")

    def __post_init__(self):
        if self.gate not in GATES:
            raise ValueError(f"unknown gate type {self.gate!r}")
        for i, (a, b) in enumerate(self.gates):
            if not (0 <= a < self.n + i and 0 <= b < self.n + i):
                raise ValueError(f"gate {i} reads a signal that is not earlier: {(a, b)}")
        for o in self.outputs:
            if not (o in (TIE_LOW, TIE_HIGH) or 0 <= o < self.n + len(self.gates)):
                raise ValueError(f"output reads no signal: {o}")

    @property
    def size(self) -> int:
        """Number of gates."""
        return len(self.gates)

    def signal_tables(self) -> list[int]:
        """Truth table of every signal (inputs first, then gates)."""
        full = _full(self.n)
        sig = [var_mask(self.n, j) for j in range(self.n)]
        nand = self.gate == "nand"
        for a, b in self.gates:
            sig.append((~(sig[a] & sig[b]) if nand else ~(sig[a] | sig[b])) & full)
        return sig

    def tables(self) -> tuple[int, ...]:
        """Truth tables of the outputs (bit ``m`` = value at assignment ``m``,
        input ``j`` = bit ``j`` of ``m``; the :mod:`mapper.logic.function`
        convention)."""
        sig = self.signal_tables()
        full = _full(self.n)
        out = []
        for o in self.outputs:
            out.append(0 if o == TIE_LOW else full if o == TIE_HIGH else sig[o])
        return tuple(out)

    def dual(self) -> Chain:
        """The same wiring with the other gate type (NAND <-> NOR), ties
        swapped: it computes the dual ``f*(x) = ~f(~x)`` of every output
        ``f`` of this chain (De Morgan)."""
        swap = {TIE_LOW: TIE_HIGH, TIE_HIGH: TIE_LOW}
        return Chain(self.n, self.gates, tuple(swap.get(o, o) for o in self.outputs),
                     "nor" if self.gate == "nand" else "nand")

    def permuted(self, perm: Sequence[int]) -> Chain:
        """The chain with input ``j`` renamed ``perm[j]``.

        If this chain computes ``f`` then the result computes
        ``permute_table(f, n, perm)``.
        """
        n = self.n

        def m(s):
            return perm[s] if 0 <= s < n else s

        gates = tuple(tuple(sorted((m(a), m(b)))) for a, b in self.gates)
        return Chain(n, gates, tuple(m(o) for o in self.outputs), self.gate)

    def encode(self) -> str:
        """Compact text: the operand pairs, two base-36 digits a gate, then
        ``>`` and the outputs (``L``/``H`` for ties)."""
        body = "".join(_b36(a) + _b36(b) for a, b in self.gates)
        outs = "".join("L" if o == TIE_LOW else "H" if o == TIE_HIGH else _b36(o) for o in self.outputs)
        return f"{body}>{outs}"

    @classmethod
    def decode(cls, n: int, text: str, gate: str = "nand") -> Chain:
        """Inverse of :meth:`encode`."""
        body, _, outs = text.partition(">")
        gates = tuple((int(body[i], 36), int(body[i + 1], 36)) for i in range(0, len(body), 2))
        outputs = tuple(TIE_LOW if c == "L" else TIE_HIGH if c == "H" else int(c, 36) for c in outs)
        return cls(n, gates, outputs, gate)


def _b36(v: int) -> str:
    if not 0 <= v < 36:
        raise ValueError("signal index too large for the compact form")
    return "0123456789abcdefghijklmnopqrstuvwxyz"[v]


# ---------------------------------------------------------------------------
# table transforms


def dual_table(n: int, table: int) -> int:
    """Truth table of the dual ``f*(x) = ~f(~x)``."""
    full = _full(n)
    rows = 1 << n
    out = 0
    for m in range(rows):
        if not (table >> (m ^ (rows - 1))) & 1:
            out |= 1 << m
    return out & full


def permute_table(table: int, n: int, perm: Sequence[int]) -> int:
    """Table of ``g`` with ``g(y) = f(x)`` where ``y[perm[j]] = x[j]``:
    input ``j`` of ``f`` becomes input ``perm[j]`` of ``g``."""
    rows = _row_map(n, tuple(perm))
    out = 0
    m = 0
    while table:
        if table & 1:
            out |= 1 << rows[m]
        table >>= 1
        m += 1
    return out


@cache
def _row_map(n: int, perm: tuple[int, ...]) -> tuple[int, ...]:
    res = []
    for m in range(1 << n):
        mm = 0
        for j in range(n):
            if (m >> j) & 1:
                mm |= 1 << perm[j]
        res.append(mm)
    return tuple(res)


@cache
def _perms(n: int) -> tuple[tuple[int, ...], ...]:
    return tuple(itertools.permutations(range(n)))


def perm_class_rep(table: int, n: int) -> tuple[int, tuple[int, ...]]:
    """Smallest table of the input-permutation class of ``table`` and a
    permutation ``p`` with ``permute_table(rep, n, p) == table``."""
    best = permute_table(table, n, tuple(range(n)))
    best_p = tuple(range(n))
    for p in _perms(n):
        t = permute_table(table, n, p)
        if t < best:
            best, best_p = t, p
    # permute_table(table, p) == best, so rep -> table goes through p's inverse
    inv = [0] * n
    for j, pj in enumerate(best_p):
        inv[pj] = j
    return best, tuple(inv)


@cache
def _swap_rows(n: int, j: int) -> tuple[int, ...]:
    """Row ``m`` with bits ``j`` and ``j+1`` exchanged, for every row."""
    res = []
    for m in range(1 << n):
        a, b = (m >> j) & 1, (m >> (j + 1)) & 1
        res.append((m & ~(3 << j)) | (a << (j + 1)) | (b << j))
    return tuple(res)


def _lex_ok(n: int, table: int) -> bool:
    """Whether ``table`` passes :meth:`_Encoder.lex_swaps`."""
    for j in range(n - 1):
        if table > permute_table(table, n, _swap_perm(n, j)):
            return False
    return True


@cache
def _swap_perm(n: int, j: int) -> tuple[int, ...]:
    p = list(range(n))
    p[j], p[j + 1] = p[j + 1], p[j]
    return tuple(p)


# ---------------------------------------------------------------------------
# the SAT encoding


@dataclass(frozen=True)
class Outcome:
    """Result of a search for a minimum chain.

    ``chain`` is the best chain found (``None`` if none within the limits);
    ``lower`` is a proved lower bound on the gate count (every smaller count
    was refuted, or ruled out by counting inputs); ``proved`` says that
    ``chain`` has exactly ``lower`` gates, i.e. is minimum.
    """

    chain: Chain | None
    lower: int
    proved: bool


class _Encoder:
    """CNF for "an ``r``-gate NAND2 chain computes these tables"."""

    def __init__(self, n: int, tables: Sequence[int] | None, r: int, symmetry: bool = True):
        # tables=None: one output, the last gate, left free (for enumeration)
        self.free = tables is None
        self.n, self.tables, self.r = n, [0] if tables is None else list(tables), r
        self.rows = 1 << n
        self.nv = 0
        self.clauses: list[list[int]] = []
        self.pairs = [[(j, k) for k in range(n + i) for j in range(k + 1)] for i in range(r)]
        self.s = [{p: self._new() for p in self.pairs[i]} for i in range(r)]
        self.x = [[self._new() for _ in range(self.rows)] for _ in range(r)]
        self.inval = [[(m >> j) & 1 for m in range(self.rows)] for j in range(n)]
        cl = self.clauses
        # each gate picks exactly one operand pair (at-most-one by a sequential
        # counter; it is not needed for soundness, only for the orderings below)
        for i in range(r):
            sv = list(self.s[i].values())
            cl.append(sv)
            self._amo(sv)
        # gate semantics on every row
        for i in range(r):
            for (j, k), var in self.s[i].items():
                for t in range(self.rows):
                    self._nand_rows(var, self._sig(j, t), self._sig(k, t), self.x[i][t], j == k)
        # outputs
        single = len(self.tables) == 1
        self.o = None
        self.out = self.x[r - 1] if single else None
        if single:
            # a free output (enumeration) is the last gate, its table left open
            f = self.tables[0]
            for t in range(0 if self.free else self.rows):
                v = self.x[r - 1][t]
                cl.append([v if (f >> t) & 1 else -v])
        else:
            self.o = [[self._new() for _ in range(r)] for _ in self.tables]
            for h, f in enumerate(self.tables):
                cl.append(list(self.o[h]))
                for i in range(r):
                    for t in range(self.rows):
                        v = self.x[i][t]
                        cl.append([-self.o[h][i], v if (f >> t) & 1 else -v])
        if not symmetry:
            return
        # every gate feeds a later gate or an output
        for i in range(r - (1 if single else 0)):
            g = n + i
            lits = [self.s[i2][p] for i2 in range(i + 1, r) for p in self.pairs[i2] if g in p]
            if self.o is not None:
                lits += [self.o[h][i] for h in range(len(self.tables))]
            cl.append(lits)
        # strictly increasing colexicographic order of consecutive operand pairs
        for i in range(r - 1):
            later = self.pairs[i + 1]
            for p in self.pairs[i]:
                key = (p[1], p[0])
                cl.append([-self.s[i][p]] + [self.s[i + 1][q] for q in later if (q[1], q[0]) > key])
        # no constant gate, no gate equal to an input
        for i in range(r):
            cl.append(list(self.x[i]))
            cl.append([-v for v in self.x[i]])
            for j in range(n):
                cl.append([self.x[i][t] if not self.inval[j][t] else -self.x[i][t] for t in range(self.rows)])
        # no two gates equal
        for i in range(r):
            for i2 in range(i + 1, r):
                ds = []
                for t in range(self.rows):
                    d = self._new()
                    a, b = self.x[i][t], self.x[i2][t]
                    # d -> a != b
                    cl.append([-d, a, b])
                    cl.append([-d, -a, -b])
                    ds.append(d)
                cl.append(ds)
        # no inverter of an inverter
        for i in range(r):
            for j in range(n + i):
                inv = self.s[i][(j, j)]
                g = n + i
                for i2 in range(i + 1, r):
                    cl.append([-inv, -self.s[i2][(g, g)]])

    def lex_swaps(self) -> None:
        """Make the free output table no larger (as an integer, bit ``2**n-1``
        most significant) than itself with inputs ``j`` and ``j+1`` swapped,
        for every ``j``: each input-permutation class keeps its smallest
        member, which satisfies all of these (a lex-leader constraint)."""
        out, cl = self.out_bits(), self.clauses
        for j in range(self.n - 1):
            sw = _swap_rows(self.n, j)
            e = self._new()
            cl.append([e])
            for m in reversed(range(self.rows)):
                if sw[m] == m:
                    continue
                f, g = out[m], out[sw[m]]
                e2 = self._new()
                # while equal so far: f <= g here, and equal here keeps "equal so far"
                cl += [[-e, -f, g], [-e, f, g, e2], [-e, -f, -g, e2]]
                e = e2

    def out_bits(self) -> list[int]:
        """The variables of the single output's table, row by row (one-output encodings only)."""
        if self.out is None:
            raise ValueError("an encoding of several outputs has no single output table")
        return self.out

    def block_clause(self, table: int) -> list[int]:
        """Clause forbidding the free output to equal ``table``."""
        return [-v if (table >> t) & 1 else v for t, v in enumerate(self.out_bits())]

    def _new(self) -> int:
        self.nv += 1
        return self.nv

    def _amo(self, lits):
        if len(lits) <= 1:
            return
        if len(lits) <= 5:
            for a, b in itertools.combinations(lits, 2):
                self.clauses.append([-a, -b])
            return
        prev = 0  # no literal yet (0 is never a SAT variable)
        for v in lits[:-1]:
            c = self._new()
            self.clauses.append([-v, c])
            if prev:
                self.clauses.append([-prev, c])
                self.clauses.append([-prev, -v])
            prev = c
        self.clauses.append([-prev, -lits[-1]])

    def _sig(self, j: int, t: int):
        """Literal of signal ``j`` on row ``t``, or the constant ``True``/``False``."""
        if j < self.n:
            return bool(self.inval[j][t])
        return self.x[j - self.n][t]

    def _nand_rows(self, s, a, b, x, same):
        cl = self.clauses
        # a & b -> not x
        if a is not False and b is not False:
            c = [-s, -x]
            if a is not True:
                c.append(-a)
            if b is not True and not same:
                c.append(-b)
            cl.append(c)
        # not a -> x ; not b -> x
        for u in (a,) if same else (a, b):
            if u is True:
                continue
            cl.append([-s, x] if u is False else [-s, u, x])

    def decode(self, model) -> Chain:
        val = set(v for v in model if v > 0)
        gates = []
        for i in range(self.r):
            pick = next(p for p, v in self.s[i].items() if v in val)
            gates.append(pick)
        outputs: tuple[int, ...]
        if self.o is None:
            outputs = (self.n + self.r - 1,)
        else:
            outputs = tuple(self.n + next(i for i in range(self.r) if self.o[h][i] in val)
                            for h in range(len(self.tables)))
        return Chain(self.n, tuple(gates), outputs)


def _limited(s, conflict_budget=None):
    """``solve`` under an optional conflict budget; ``None`` when it ran out."""
    if conflict_budget is None:
        return s.solve()
    if conflict_budget <= 0:
        return None
    s.conf_budget(int(conflict_budget))
    return s.solve_limited()


def _conflicts(s) -> int:
    return int(s.accum_stats().get("conflicts", 0))


def _solve(enc: _Encoder, conflict_budget, solver_name):
    """``True`` (with chain), ``False``, or ``None`` when the budget ran out."""
    from pysat.solvers import Solver

    with Solver(name=solver_name, bootstrap_with=enc.clauses) as s:
        res = _limited(s, conflict_budget)
        if res:
            return True, enc.decode(s.get_model())
        return res, None


def enumerate_cost(n: int, r: int, cheaper, part: tuple[int, int] | None = None,
                   conflict_budget: int | None = None,
                   solver: str = _SOLVER) -> tuple[list[Chain], bool, int]:
    """One ``r``-gate NAND2 chain for each input-permutation class of
    ``n``-input functions whose minimum NAND2 count is exactly ``r``.

    ``cheaper`` must hold every table of minimum count below ``r`` (all
    members of their classes); completeness rests on it.  One solver
    enumerates: each model gives a chain, whose whole class is then blocked,
    until the formula is unsatisfiable.  The final refutation proves that no
    other class has an ``r``-gate chain, so with every smaller count done
    this way, each chain found is a proved minimum and every class not found
    needs more than ``r`` gates.

    ``part = (v0, v1)`` keeps only functions with value ``v0`` on the
    all-zero row and ``v1`` on the all-one row (both unchanged by input
    permutations), so the four parts can run in parallel.  When the solver
    has spent ``conflict_budget`` conflicts, enumeration stops.

    Returns ``(chains, complete, conflicts)``; ``complete`` is false when the
    budget stopped the enumeration (the chains found are still of minimum
    count); ``conflicts`` is what the solver spent.
    """
    from pysat.solvers import Solver

    enc = _Encoder(n, None, r)
    enc.lex_swaps()
    top = (1 << n) - 1
    if part is not None:
        out = enc.out_bits()
        enc.clauses.append([out[0] if part[0] else -out[0]])
        enc.clauses.append([out[top] if part[1] else -out[top]])

    def wanted(t):
        return (part is None or ((t & 1) == part[0] and ((t >> top) & 1) == part[1])) and _lex_ok(n, t)

    blocked = set()
    for t in cheaper:
        if t not in blocked and wanted(t):
            blocked.add(t)
            enc.clauses.append(enc.block_clause(t))
    found: list[Chain] = []
    with Solver(name=solver, bootstrap_with=enc.clauses) as s:
        while True:
            left = None if conflict_budget is None else conflict_budget - _conflicts(s)
            res = _limited(s, left)
            if res is None:
                return found, False, _conflicts(s)
            if not res:
                return found, True, _conflicts(s)
            ch = enc.decode(s.get_model())
            f = ch.tables()[0]
            if f in blocked or ch.size != r:
                raise AssertionError("enumeration returned a blocked function")
            found.append(ch)
            for p in _perms(n):
                g = permute_table(f, n, p)
                if g not in blocked and wanted(g):
                    blocked.add(g)
                    s.add_clause(enc.block_clause(g))


def _trivial(n: int, tables: Sequence[int]):
    """Outputs needing no gate: signal index, tie marker or ``None``."""
    full = _full(n)
    res: list = []
    for f in tables:
        if f == 0:
            res.append(TIE_LOW)
        elif f == full:
            res.append(TIE_HIGH)
        else:
            res.append(next((j for j in range(n) if var_mask(n, j) == f), None))
    return res


def search(n: int, tables: Sequence[int], gate: str = "nand", max_gates: int = 14,
           conflict_budget=None, upper: Chain | None = None,
           symmetry: bool = True, solver: str = _SOLVER, lower: int = 0) -> Outcome:
    """Look for a minimum chain of ``gate`` computing ``tables`` (one per output).

    Gate counts are tried upward from a counting lower bound; each SAT call
    gets ``conflict_budget`` conflicts (a count, so results do not depend on
    the machine's load).  When a
    call runs out of budget the search continues upward (the result is then
    not proved), and a known chain ``upper`` (if given) caps the search.
    ``lower`` is a lower bound already proved by the caller (the search
    starts there).  Returns an :class:`Outcome`; ``symmetry=False`` drops the
    symmetry constraints (slower, for checking them).
    """
    if gate not in GATES:
        raise ValueError(f"unknown gate type {gate!r}")
    full = _full(n)
    tables = [t & full for t in tables]
    if gate == "nor":
        out = search(n, [dual_table(n, t) for t in tables], "nand", max_gates, conflict_budget,
                     upper.dual() if upper is not None else None,
                     symmetry, solver, lower)
        ch = out.chain.dual() if out.chain is not None else None
        return Outcome(ch, out.lower, out.proved)
    triv = _trivial(n, tables)
    need = [t for t, tv in zip(tables, triv) if tv is None]
    need = list(dict.fromkeys(need))  # equal outputs share a gate
    if not need:
        return Outcome(Chain(n, (), tuple(triv)), 0, True)
    # lower bound: the gates must connect every input the outputs depend on,
    # and distinct non-trivial outputs need distinct gates
    sup = 0
    for f in need:
        sup |= sum(1 << j for j in range(n) if _depends(n, f, j))
    lower = max(bin(sup).count("1") - 1, len(need), 1, lower)
    best = upper
    if best is not None and tuple(best.tables()) != tuple(tables):
        raise ValueError("the given upper chain does not compute the tables")
    proved_to = lower  # every count below this is refuted
    gap = False
    r = lower
    limit = max_gates if best is None else min(max_gates, best.size - 1)
    while r <= limit:
        enc = _Encoder(n, need, r, symmetry)
        res, ch = _solve(enc, conflict_budget, solver)
        log.debug("n=%d tables=%s r=%d -> %s", n, [hex(t) for t in need], r, res)
        if res:
            best = _attach(n, tables, triv, need, ch)
            break
        if res is None:
            gap = True
        elif not gap:
            proved_to = r + 1
        r += 1
    if best is None:
        return Outcome(None, proved_to, False)
    if best.size < proved_to:
        raise AssertionError("chain smaller than a refuted count")
    return Outcome(best, proved_to, best.size == proved_to)


def _attach(n, tables, triv, need, ch: Chain) -> Chain:
    """Map the solved outputs back onto the full output list."""
    where = {f: o for f, o in zip(need, ch.outputs)}
    outs = tuple(tv if tv is not None else where[f] for f, tv in zip(tables, triv))
    return Chain(n, ch.gates, outs, ch.gate)


def _depends(n: int, f: int, j: int) -> bool:
    m = var_mask(n, j)
    return ((f & m) >> (1 << j)) != (f & ~m & _full(n))


def synthesize(n: int, tables: Sequence[int], gate: str = "nand", max_gates: int = 14,
               conflict_budget=None) -> Chain | None:
    """A chain of minimum size computing ``tables`` (several outputs share gates).

    Returns ``None`` when no chain of at most ``max_gates`` gates was found or
    when a refutation ran out of ``conflict_budget`` (then minimality could
    not be shown).
    """
    out = search(n, tables, gate, max_gates, conflict_budget)
    return out.chain if out.proved else None


# ---------------------------------------------------------------------------
# the shipped table


@lru_cache(maxsize=1)
def _table() -> dict:
    try:
        text = resources.files("mapper.data").joinpath(TABLE_RESOURCE).read_text()
    except FileNotFoundError:
        log.warning("exact table %s is missing", TABLE_RESOURCE)
        return {"small": {}, "n4": {}}
    data = json.loads(text)
    small = {}
    for key, code in data["small"].items():
        nn, t = key.split(":")
        small[(int(nn), int(t, 16))] = code
    n4 = {}
    for key, val in data["n4"].items():
        code, proved, lower = val
        n4[int(key, 16)] = (code, bool(proved), int(lower))
    return {"small": small, "n4": n4, "meta": data.get("meta", {})}


def table_info() -> dict:
    """Facts about the shipped table (as written by the generator script)."""
    return dict(_table().get("meta", {}))


@lru_cache(maxsize=1 << 16)
def lookup_entry(n: int, table: int, gate: str = "nand") -> tuple[Chain, bool, int] | None:
    """The shipped chain for ``table`` with its proof status.

    Returns ``(chain, proved, lower)`` — ``proved`` is true when the chain is
    a proved minimum, ``lower`` the proved lower bound — or ``None`` for
    functions the table does not hold (more than 4 inputs, or a 4-input
    class the generator did not reach).
    """
    if gate not in GATES:
        raise ValueError(f"unknown gate type {gate!r}")
    full = _full(n)
    table &= full
    if gate == "nor":
        got = lookup_entry(n, dual_table(n, table), "nand")
        return None if got is None else (got[0].dual(), got[1], got[2])
    triv = _trivial(n, [table])[0]
    if triv is not None:
        return Chain(n, (), (triv,)), True, 0
    tab = _table()
    if n <= 3:
        code = tab["small"].get((n, table))
        if code is None:
            return None
        ch = Chain.decode(n, code)
        return ch, True, ch.size
    if n == 4:
        rep, perm = perm_class_rep(table, 4)
        got = tab["n4"].get(rep)
        if got is None:
            return None
        code, proved, lower = got
        return Chain.decode(4, code).permuted(perm), proved, lower
    return None


def lookup(n: int, table: int, gate: str = "nand") -> Chain | None:
    """A chain from the shipped table, without SAT: a proved minimum, or for
    a 4-input class not yet proved the best chain known (an upper bound;
    see :func:`lookup_entry`); ``None`` if the table does not hold it."""
    got = lookup_entry(n, table, gate)
    return None if got is None else got[0]


def min_gates(n: int, table: int, gate: str = "nand") -> int | None:
    """Proved minimum gate count from the shipped table (0 for a projection or
    a constant, which needs a tie); ``None`` if not held or not proved."""
    got = lookup_entry(n, table, gate)
    if got is None or not got[1]:
        return None
    return got[0].size
