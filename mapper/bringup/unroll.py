"""Sequences by satisfiability for the faults random sequences miss: the build unrolled clock by clock.

The build with flip-flops is drawn as an *iterative logic array*: one copy
of its gates per clock step (a *time frame*), the flip-flops' data pins of
frame ``t`` feeding their Q nets in frame ``t + 1``, frame 0 starting from the
start state (time-frame expansion; M. L. Bushnell and V. D. Agrawal,
*Essentials of Electronic Testing*, 2000, ch. 8).  The faulty build is
unrolled beside the good one -- only the nets the fault can reach get their
own variables -- with the fault in every frame, since a wiring fault stays.
For ``k = 1, 2, …`` frames the solver (as in :mod:`mapper.bringup.atpg`, after
Larrabee 1992) is asked for inputs under which some output of frame ``k``
differs; the first answer is a shortest sequence.  "No" up to the bound
says only that no sequence of at most that many steps detects the fault:
such a fault is reported as *not detected within the bound*, never as
covered and never as redundant.

A fault is proved undetectable only by a stronger question: with the
flip-flops' levels left free (every state, reachable or not), can the fault
change an output or a next state at all?  "No" means the faulty build
behaves exactly as the good one from every state, so no sequence of any
length detects it (the logic around it is redundant).
"""
from __future__ import annotations

from pysat.solvers import Solver

from ..errors import InternalError
from .atpg import CONFLICTS, FOUND, UNDETECTABLE, UNKNOWN, gate_clauses, xor_clauses
from .gatesim import GateCircuit

__all__ = ["SequenceSolver", "BEYOND"]

BEYOND = "beyond"


class _Fault:
    """One fault as the encoder needs it: where it sits and what it reaches."""

    def __init__(self, circ: GateCircuit, site: tuple, value: int):
        self.kind, self.at = site
        self.value = value
        self.pin = self.at if self.kind == "pin" else None
        self.net = self.at if self.kind == "net" else None
        self.broken_clock = {j for j, f in enumerate(circ.flops)
                             if self.pin == f.clock or self.net == circ.pin_net[f.clock]}
        self.forced: dict = {}
        for j, f in enumerate(circ.flops):
            for p, low, level in ((f.preset, f.preset_low, 1), (f.clear, f.clear_low, 0)):
                if p is not None and self.pin == p and value == (0 if low else 1):
                    self.forced[j] = level
        self.reach = _reach(circ, site, self.broken_clock | set(self.forced))


def _reach(circ: GateCircuit, site: tuple, flops: set) -> set:
    """Net ids the fault can change, over any number of clock steps (a work list, no recursion)."""
    readers = circ.readers()
    by_d: dict = {}
    for j, f in enumerate(circ.flops):
        by_d.setdefault(circ.pin_net[f.d], []).append(j)
    work: list = []
    if site[0] == "net":
        work.append(site[1])
    else:
        work += [circ.nodes[k][1] for k, nd in enumerate(circ.nodes) if site[1] in nd[2]]
        flops = flops | {j for j, f in enumerate(circ.flops) if f.d == site[1]}
    for j in flops:
        f = circ.flops[j]
        work += [f.q] + ([f.qn] if f.qn is not None else [])
    seen: set = set()
    while work:
        n = work.pop()
        if n in seen:
            continue
        seen.add(n)
        work += [circ.nodes[k][1] for k in readers.get(n, [])]
        for j in by_d.get(n, []):
            f = circ.flops[j]
            work += [f.q] + ([f.qn] if f.qn is not None else [])
    return seen


class SequenceSolver:
    """Shortest detecting sequences, or proofs, for faults of one gate build with flip-flops."""

    def __init__(self, circ: GateCircuit, start: list, data: list):
        self.circ = circ
        self.start = start                 # level per flip-flop
        self.data = data                   # net ids of the inputs that are not clocks
        self.clocks = {circ.pin_net[f.clock] for f in circ.flops}

    # -- one frame ---------------------------------------------------------------------------------
    def _frame(self, s, T: int, x: list, gs: list, bs: list, fault: _Fault) -> tuple:
        """Encode one frame; returns ``(good nets, bad nets, good next states, bad next states)``."""
        c = self.circ
        g: dict = {0: -T, 1: T}
        for n, lit in zip(self.data, x):
            g[n] = lit
        for n in self.clocks:
            g[n] = -T
        for j, f in enumerate(c.flops):
            g[f.q] = gs[j]
            if f.qn is not None:
                g[f.qn] = -gs[j]
        const = T if fault.value else -T
        bad: dict = {}
        for j, f in enumerate(c.flops):
            if bs[j] != gs[j]:
                bad[f.q] = bs[j]
                if f.qn is not None:
                    bad[f.qn] = -bs[j]
        if fault.net is not None:
            bad[fault.net] = const
        for k in c.order:
            _, out, pins, _, func = c.nodes[k]
            y = s.top = s.top + 1
            s.add([cl for cl in gate_clauses(func, [g[c.pin_net[p]] for p in pins], y)])
            g[out] = y
            if out in fault.reach and out != fault.net:
                ins = [const if p == fault.pin else bad.get(c.pin_net[p], g[c.pin_net[p]]) for p in pins]
                if ins != [g[c.pin_net[p]] for p in pins]:
                    z = s.top = s.top + 1
                    s.add(gate_clauses(func, ins, z))
                    bad[out] = z
        gn = [g[c.pin_net[f.d]] for f in c.flops]
        bn = []
        for j, f in enumerate(c.flops):
            if j in fault.forced:
                bn.append(T if fault.forced[j] else -T)
            elif j in fault.broken_clock:
                bn.append(bs[j])
            else:
                net = c.pin_net[f.d]
                bn.append(const if f.d == fault.pin else bad.get(net, g[net]))
        return g, bad, gn, bn

    def _diffs(self, s, g: dict, bad: dict) -> list:
        out = []
        for _, n in self.circ.outputs:
            if n in bad and bad[n] != g[n]:
                d = s.top = s.top + 1
                s.add(xor_clauses(d, g[n], bad[n]))
                out.append(d)
        return out

    # -- questions ----------------------------------------------------------------------------------
    def redundant(self, site: tuple, value: int) -> bool | None:
        """Whether the fault provably changes no output and no next state from any state (``None``: the
        solver ran out of its budget, or the fault forces a flip-flop and the question does not apply)."""
        fault = _Fault(self.circ, site, value)
        if fault.forced:
            return None
        with _Session() as s:
            T = s.new()
            s.add([[T]])
            x = [s.new() for _ in self.data]
            st = [s.new() for _ in self.circ.flops]
            g, bad, gn, bn = self._frame(s, T, x, st, list(st), fault)
            diffs = self._diffs(s, g, bad)
            for a, b in zip(gn, bn):
                if a != b:
                    d = s.new()
                    s.add(xor_clauses(d, a, b))
                    diffs.append(d)
            if not diffs:
                return True
            s.add([diffs])
            res = s.solve([])
            return None if res is None else not res

    def test(self, site: tuple, value: int, bound: int) -> tuple:
        """``(FOUND, steps)`` (a shortest sequence of input tuples, up to ``bound`` steps),
        ``(UNDETECTABLE, None)`` (proved, see :meth:`redundant`), ``(BEYOND, None)`` (no sequence of at most
        ``bound`` steps) or ``(UNKNOWN, None)`` (the solver's budget ran out)."""
        fault = _Fault(self.circ, site, value)
        if not any(n in fault.reach for _, n in self.circ.outputs):
            return UNDETECTABLE, None
        if self.redundant(site, value):
            return UNDETECTABLE, None
        with _Session() as s:
            T = s.new()
            s.add([[T]])
            gs = [T if v else -T for v in self.start]
            bs = [(T if fault.forced[j] else -T) if j in fault.forced else gs[j] for j in range(len(gs))]
            xs: list = []
            for _ in range(bound):
                x = [s.new() for _ in self.data]
                xs.append(x)
                g, bad, gs, bs = self._frame(s, T, x, gs, bs, fault)
                diffs = self._diffs(s, g, bad)
                if not diffs:
                    continue
                e = s.new()
                s.add([[-e] + diffs])
                res = s.solve([e])
                if res is None:
                    return UNKNOWN, None
                if res:
                    on = s.model_true()
                    return FOUND, [tuple(1 if v in on else 0 for v in x) for x in xs]
            return BEYOND, None


class _Session:
    """One solver with a variable counter; clauses are added as lists."""

    def __enter__(self):
        self.solver = Solver(name="glucose4")
        self.top = 0
        return self

    def __exit__(self, *exc):
        self.solver.delete()

    def new(self) -> int:
        self.top += 1
        return self.top

    def add(self, clauses: list) -> None:
        for cl in clauses:
            self.solver.add_clause(cl)

    def solve(self, assumptions: list):
        self.solver.conf_budget(CONFLICTS)
        return self.solver.solve_limited(assumptions=assumptions)

    def model_true(self) -> set:
        m = self.solver.get_model()
        if m is None:
            raise InternalError("the solver found a sequence but gave no model")
        return {v for v in m if v > 0}
