"""Test generation by satisfiability for the faults random settings miss (gate builds without storage).

For one fault, the good build and a copy of the part the fault can reach
are written as clauses (each section as the prime implicants of its
function for each output level, which is exact), the outputs of both are
compared, and a solver is asked for an input setting under which some
output differs, with clauses saying that a difference travels along a path
of differing nets to an output (T. Larrabee, "Test pattern generation using Boolean
satisfiability", IEEE TCAD 11(1), 1992).  A setting found detects the
fault; "no setting" proves the fault undetectable -- the logic around it is
redundant; a solver that runs out of its conflict budget leaves the fault
unresolved, and the report says so.
"""
from __future__ import annotations

from functools import cache

from pysat.solvers import Solver

from ..logic.function import Function
from .gatesim import GateCircuit
from .ternary import AND, CONST, COPY, NOT, XOR, classify, primes

__all__ = ["sat_test", "CONFLICTS", "FOUND", "UNDETECTABLE", "UNKNOWN"]

#: conflicts the solver may spend on one fault before it is left unresolved
CONFLICTS = 200_000
FOUND, UNDETECTABLE, UNKNOWN = "found", "undetectable", "unknown"


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


class _Cnf:
    def __init__(self):
        self.clauses: list = []
        self.n = 0

    def var(self) -> int:
        self.n += 1
        return self.n

    def gate(self, func: Function, ins: list, y: int) -> None:
        on, off = _cubes(func)
        for ones, zeros in on:
            self.clauses.append([-ins[j] for j in ones] + [ins[j] for j in zeros] + [y])
        for ones, zeros in off:
            self.clauses.append([-ins[j] for j in ones] + [ins[j] for j in zeros] + [-y])


def _fanin(circ: GateCircuit, roots: set) -> set:
    """Node ids of ``roots`` and of everything they read, all the way back to the inputs."""
    need: set = set()
    todo = list(roots)
    while todo:
        k = todo.pop()
        if k in need:
            continue
        need.add(k)
        for p in circ.nodes[k][2]:
            d = circ.driver.get(circ.pin_net[p])
            if d is not None and d not in need:
                todo.append(d)
    return need


def _cones(circ: GateCircuit, site: tuple) -> tuple:
    """``(fanout nodes in order, output nets reached, fanin nodes in order)`` of a fault site."""
    readers = circ.readers()
    if site[0] == "pin":
        start = [k for k, nd in enumerate(circ.nodes) if site[1] in nd[2]]
    else:
        start = list(readers.get(site[1], []))
    seen = set(start)
    todo = list(start)
    while todo:
        k = todo.pop()
        for r in readers.get(circ.nodes[k][1], []):
            if r not in seen:
                seen.add(r)
                todo.append(r)
    cone_nets = {circ.nodes[k][1] for k in seen} | ({site[1]} if site[0] == "net" else set())
    reached = [n for _, n in circ.outputs if n in cone_nets]
    roots = {circ.driver[n] for n in reached if n in circ.driver}
    roots |= {d for k in seen for p in circ.nodes[k][2] if (d := circ.driver.get(circ.pin_net[p])) is not None}
    need = _fanin(circ, roots)
    rank = circ.rank()
    return sorted(seen, key=rank.__getitem__), list(dict.fromkeys(reached)), sorted(need, key=rank.__getitem__)


def _paths(circ: GateCircuit, cnf: _Cnf, site: tuple, fanout: list, outputs: set, good: dict, bad: dict) -> None:
    """Larrabee's active-path clauses: a difference on a net must go on through a reader, or be an output.

    They add nothing a test needs (every test has such a path) but let the
    solver refute a fault locally, where the difference dies, instead of
    over the whole cone.
    """
    cone = set(fanout)
    readers = circ.readers()
    d: dict = {}
    for k in fanout:
        out = circ.nodes[k][1]
        x, a, b = cnf.var(), good[out], bad[out]
        cnf.clauses += [[-x, a, b], [-x, -a, -b], [x, -a, b], [x, a, -b]]
        d[k] = x
    for k in fanout:
        out = circ.nodes[k][1]
        if out not in outputs:
            cnf.clauses.append([-d[k]] + [d[j] for j in readers.get(out, []) if j in cone])
    if site[0] == "pin":
        cnf.clauses.append([d[k] for k in fanout if site[1] in circ.nodes[k][2]])
    elif site[1] not in outputs:
        cnf.clauses.append([d[k] for k in readers.get(site[1], []) if k in cone])


def sat_test(circ: GateCircuit, site: tuple, value: int) -> tuple:
    """A setting that detects a fault, or a proof that none does.

    ``circ`` has gates only (no storage); ``site`` is ``("pin",
    pin id)`` or ``("net", net id)`` and ``value`` the level it is stuck at.
    Returns ``(FOUND, {input index: 0/1})`` (inputs the solver left free
    are missing), ``(UNDETECTABLE, None)`` or ``(UNKNOWN, None)``.
    """
    fanout, reached, fanin = _cones(circ, site)
    if not reached:
        return UNDETECTABLE, None
    cnf = _Cnf()
    good: dict = {}

    def gvar(net: int) -> int:
        if net not in good:
            good[net] = cnf.var()
        return good[net]

    vcc, gnd = gvar(1), gvar(0)
    cnf.clauses += [[vcc], [-gnd]]
    for k in fanin:
        nd = circ.nodes[k]
        cnf.gate(nd[4], [gvar(circ.pin_net[p]) for p in nd[2]], gvar(nd[1]))
    bad: dict = {}
    const = cnf.var()
    cnf.clauses.append([const] if value else [-const])
    if site[0] == "net":
        bad[site[1]] = const
        cnf.clauses.append([-gvar(site[1])] if value else [gvar(site[1])])   # the fault must show
    for k in fanout:
        nd = circ.nodes[k]
        ins = []
        for p in nd[2]:
            if site[0] == "pin" and p == site[1]:
                ins.append(const)
                cnf.clauses.append([-gvar(circ.pin_net[p])] if value else [gvar(circ.pin_net[p])])
            else:
                net = circ.pin_net[p]
                ins.append(bad.get(net, gvar(net)))
        y = cnf.var()
        if not (site[0] == "net" and nd[1] == site[1]):
            bad[nd[1]] = y
        cnf.gate(nd[4], ins, y)
    diffs = []
    for n in reached:
        d = cnf.var()
        a, b = gvar(n), bad.get(n, gvar(n))
        cnf.clauses += [[-d, a, b], [-d, -a, -b], [d, -a, b], [d, a, -b]]
        diffs.append(d)
    cnf.clauses.append(diffs)
    _paths(circ, cnf, site, fanout, set(reached), good, bad)
    with Solver(name="glucose4", bootstrap_with=cnf.clauses) as s:
        s.conf_budget(CONFLICTS)
        res = s.solve_limited()
        if res is None:
            return UNKNOWN, None
        if not res:
            return UNDETECTABLE, None
        model = set(x for x in s.get_model() if x > 0)
    vec = {}
    for i, net in enumerate(circ.inputs):
        if net in good:
            vec[i] = 1 if good[net] in model else 0
    return FOUND, vec
