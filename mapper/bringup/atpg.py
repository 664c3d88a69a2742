"""Test generation by satisfiability for the faults random settings miss (gate builds without storage).

The good build is written as clauses once (each section as the prime
implicants of its function for each output level, which is exact).  For one
fault, a copy of the part the fault can reach is added, the outputs of both
are compared, and the solver is asked for an input setting under which some
output differs, with clauses saying that a difference travels along a path
of differing nets to an output (T. Larrabee, "Test pattern generation using
Boolean satisfiability", IEEE TCAD 11(1), 1992).  One solver serves every
fault: a fault's clauses carry a selector literal assumed true for its own
call and set false after it, so what the solver learnt about the good build
is kept (incremental satisfiability, common practice).  A setting found detects the
fault; "no setting" proves the fault undetectable -- the logic around it is
redundant; a solver that runs out of its conflict budget leaves the fault
unresolved, and the report says so.
"""
from __future__ import annotations

from functools import cache

from pysat.solvers import Solver

from ..errors import InternalError
from ..logic.function import Function
from .gatesim import GateCircuit
from .ternary import AND, CONST, COPY, NOT, XOR, classify, primes

__all__ = ["SettingSolver", "gate_clauses", "xor_clauses", "CONFLICTS", "FOUND", "UNDETECTABLE", "UNKNOWN"]

#: conflicts the solver may spend on one fault before it is left unresolved
CONFLICTS = 200_000
FOUND, UNDETECTABLE, UNKNOWN = "found", "undetectable", "unknown"
#: levels of gates past a fault site asked first (see :meth:`SettingSolver.test`)
WINDOW = 4


@cache
def _cubes(func: Function) -> tuple:
    """``(on, off)`` prime cubes of ``func`` as ``(ones, zeros)`` input-index tuples."""
    op = classify(func)
    n = func.n
    kind = op[0]
    if kind == CONST:
        return ([((), ())], []) if op[1] else ([], [((), ())])
    if kind in (COPY, NOT):
        j = op[1]
        one, zero = [((j,), ())], [((), (j,))]
        return (one, zero) if kind == COPY else (zero, one)
    if kind == AND:
        inv, out_inv = op[1], op[2]
        all_true = (tuple(j for j in range(n) if not inv[j]), tuple(j for j in range(n) if inv[j]))
        singles = [((j,), ()) if inv[j] else ((), (j,)) for j in range(n)]
        on, off = [all_true], singles
        return (off, on) if out_inv else (on, off)
    if kind == XOR or n <= 8:
        t = func.table()
        full = (1 << (1 << n)) - 1
        return (primes(n, t), primes(n, ~t & full))
    return (op[1], op[2])


def gate_clauses(func: Function, ins: list, y: int) -> list:
    """Clauses saying ``y`` is ``func`` of ``ins`` (literals)."""
    on, off = _cubes(func)
    out = [[-ins[j] for j in ones] + [ins[j] for j in zeros] + [y] for ones, zeros in on]
    out += [[-ins[j] for j in ones] + [ins[j] for j in zeros] + [-y] for ones, zeros in off]
    return out


def xor_clauses(d: int, a: int, b: int) -> list:
    """Clauses saying ``d`` is ``a`` XOR ``b``."""
    return [[-d, a, b], [-d, -a, -b], [d, -a, b], [d, a, -b]]


class SettingSolver:
    """One solver for every fault of a gate build without storage (see the module docstring)."""

    def __init__(self, circ: GateCircuit):
        self.circ = circ
        self.n = len(circ.nets)
        # good net i is variable i + 1
        self.solver = Solver(name="glucose4")
        self.solver.add_clause([2])    # VCC (net id 1)
        self.solver.add_clause([-1])   # GND (net id 0)
        for nd in circ.nodes:
            for c in gate_clauses(nd[4], [circ.pin_net[p] + 1 for p in nd[2]], nd[1] + 1):
                self.solver.add_clause(c)
        self.top = self.n

    def close(self) -> None:
        self.solver.delete()

    def _var(self) -> int:
        self.top += 1
        return self.top

    def _cone(self, site: tuple, depth: int | None) -> tuple:
        """``(nodes in order, observed nets, whole)``: the fanout of a fault site within ``depth`` levels
        (``None``: all of it).  Observed are the outputs reached and, cut short, every net read beyond the
        cut; ``whole`` says nothing was cut."""
        circ = self.circ
        readers = circ.readers()
        if site[0] == "pin":
            start = [k for k, nd in enumerate(circ.nodes) if site[1] in nd[2]]
        else:
            start = list(readers.get(site[1], []))
        seen = set(start)
        level = list(start)
        steps = 1
        while level and (depth is None or steps < depth):
            nxt = []
            for k in level:
                for r in readers.get(circ.nodes[k][1], []):
                    if r not in seen:
                        seen.add(r)
                        nxt.append(r)
            level = nxt
            steps += 1
        outs = {n for _, n in circ.outputs}
        cone_nets = {circ.nodes[k][1] for k in seen} | ({site[1]} if site[0] == "net" else set())
        observed = {n for n in cone_nets if n in outs}
        cut = {circ.nodes[k][1] for k in seen if any(r not in seen for r in readers.get(circ.nodes[k][1], []))}
        return sorted(seen, key=circ.rank().__getitem__), observed | cut, not cut

    def test(self, site: tuple, value: int) -> tuple:
        """A setting that detects a fault, or a proof that none does.

        ``site`` is ``("pin", pin id)`` or ``("net", net id)`` and ``value``
        the level it is stuck at.  Returns ``(FOUND, {input index: 0/1})``,
        ``(UNDETECTABLE, None)`` or ``(UNKNOWN, None)``.

        A window of :data:`WINDOW` levels is tried first, with every net read
        beyond it counted as seen: that asks less than the whole build, so
        "no setting" there already proves the fault undetectable (most
        redundant faults die within a few gates); otherwise the whole fanout
        is asked.
        """
        kind, vec, whole = self._ask(site, value, WINDOW)
        if kind == UNDETECTABLE or whole:
            return kind, vec
        kind, vec, _ = self._ask(site, value, None)
        return kind, vec

    def _ask(self, site: tuple, value: int, depth: int | None) -> tuple:
        circ = self.circ
        fanout, observed, whole = self._cone(site, depth)
        reached = sorted(observed)
        if not reached:
            return UNDETECTABLE, None, whole
        sel = self._var()
        clauses: list = []
        const = self._var()
        clauses.append([const] if value else [-const])
        bad: dict = {}
        if site[0] == "net":
            bad[site[1]] = const
            clauses.append([-(site[1] + 1)] if value else [site[1] + 1])   # the fault must show
        for k in fanout:
            nd = circ.nodes[k]
            ins = []
            for p in nd[2]:
                net = circ.pin_net[p]
                if site[0] == "pin" and p == site[1]:
                    ins.append(const)
                    clauses.append([-(net + 1)] if value else [net + 1])
                else:
                    ins.append(bad.get(net, net + 1))
            y = self._var()
            bad[nd[1]] = y
            clauses += gate_clauses(nd[4], ins, y)
        diffs = []
        for n in reached:
            d = self._var()
            clauses += xor_clauses(d, n + 1, bad.get(n, n + 1))
            diffs.append(d)
        clauses.append(diffs)
        clauses += self._paths(site, fanout, set(reached), bad)
        s = self.solver
        for c in clauses:
            s.add_clause(c + [-sel])
        s.conf_budget(CONFLICTS)
        res = s.solve_limited(assumptions=[sel])
        model = s.get_model() if res else None
        s.add_clause([-sel])   # this fault's clauses are done with
        if res is None:
            return UNKNOWN, None, whole
        if not res:
            return UNDETECTABLE, None, whole
        if model is None:
            raise InternalError("the solver found a setting but gave no model")
        on = {x for x in model if x > 0}
        return FOUND, {i: 1 if net + 1 in on else 0 for i, net in enumerate(circ.inputs)}, whole

    def _paths(self, site: tuple, fanout: list, outputs: set, bad: dict) -> list:
        """Larrabee's active-path clauses: a difference on a net must go on through a reader, or be an output.

        They add nothing a test needs (every test has such a path) but let the
        solver refute a fault locally, where the difference dies, instead of
        over the whole cone.
        """
        circ = self.circ
        cone = set(fanout)
        readers = circ.readers()
        d: dict = {}
        out: list = []
        for k in fanout:
            net = circ.nodes[k][1]
            x = self._var()
            out += xor_clauses(x, net + 1, bad[net])
            d[k] = x
        for k in fanout:
            net = circ.nodes[k][1]
            if net not in outputs:
                out.append([-d[k]] + [d[j] for j in readers.get(net, []) if j in cone])
        if site[0] == "pin":
            out.append([d[k] for k in fanout if site[1] in circ.nodes[k][2]])
        elif site[1] not in outputs:
            out.append([d[k] for k in readers.get(site[1], []) if k in cone])
        return out
