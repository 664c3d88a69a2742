"""The fault simulator of a build: faults put into machines, settings run, faults found.

:class:`Engine` wraps the gate model (:mod:`mapper.bringup.gatesim`) or the
relay model (:mod:`mapper.bringup.relaysim`) of a build without storage
(:func:`mapper.bringup.plan.make_plan` refuses the others before it gets
here).  Settings are run in *blocks*: with ``P`` settings and ``F`` faults, a run has ``(F + 1) * P``
machines -- block 0 the good build under every setting, block ``f + 1``
the build with fault ``f`` under every setting -- so one pass of the
simulator compares every fault under every setting (parallel-pattern and
parallel-fault simulation at once; both are textbook practice, e.g.
Abramovici, Breuer and Friedman, *Digital Systems Testing and Testable
Design*, 1990, ch. 5).

A fault is *detected* by a setting when some output of the faulty build is
surely at the other level than the good build's (both known).
"""
from __future__ import annotations

from dataclasses import dataclass

from ..build import Build
from ..errors import InternalError
from .faults import Fault
from .gatesim import GateCircuit, GateMachine
from .relaysim import RelayCircuit, RelayMachine

__all__ = ["Engine", "Run", "MAX_BITS"]

#: machines in one pass of the simulator (a run of more is split by faults)
MAX_BITS = 1 << 15


@dataclass
class Run:
    """What a run found: the good level of every output, and per fault the outputs that read wrong.

    ``good[p][o]`` is the level (0 or 1) of output ``o`` under setting ``p``;
    ``fails[f][p]`` the set of output indices at which the build with fault
    ``f`` reads the other level under setting ``p`` (empty when ``p`` misses
    ``f``).
    """

    good: list
    fails: list

    def detected(self, f: int) -> list:
        """Indices of the settings that detect fault ``f``."""
        return [p for p, obs in enumerate(self.fails[f]) if obs]


class Engine:
    """The fault simulator of one build without storage."""

    def __init__(self, b: Build):
        self.b = b
        self.relay = b.is_relay
        self.circ: GateCircuit | RelayCircuit
        self.inputs = list(b.inputs)
        self.outputs = list(b.outputs)
        if self.relay:
            self.circ = RelayCircuit.from_build(b)
            self._sites = {ref: r for r, ref in enumerate(self.circ.refs)}
            return
        self.circ = GateCircuit.from_build(b)
        if self.circ.has_state:
            raise InternalError("the bring-up simulator models builds without storage only")
        self._sites = {(p.ref, p.number): pid for pid, p in enumerate(self.circ.pins)}

    def site(self, f: Fault) -> tuple:
        """Where fault ``f`` sits: ``("pin", pin id)``, ``("net", net id)``, ``("coil", relay)`` or
        ``("contact", relay, pole index, side)``."""
        if f.kind == "pin" and not self.relay:
            return ("pin", self._sites[(f.ref, f.pin)])
        if f.kind == "net":
            return ("net", self.circ.index[f.net])
        if f.kind == "coil" and self.relay:
            return ("coil", self._sites[f.ref])
        if f.kind == "contact" and self.relay:
            poles = sorted(k.pole for k in self.b.contacts if k.part_ref == f.ref)
            return ("contact", self._sites[f.ref], poles.index(f.pole), f.side)
        raise InternalError(f"no place in the simulator for fault {f.key}")

    def machine(self, width: int, faults: tuple | list = ()) -> GateMachine | RelayMachine:
        """``width`` machines; ``faults`` is a list of ``(Fault, mask)``: the machines that carry each."""
        masks: dict = {}
        for f, m in faults:
            s = self.site(f)
            lo, hi = masks.get(s, (0, 0))
            masks[s] = (lo | m, hi) if f.value == 0 else (lo, hi | m)
        if self.relay:
            return RelayMachine(self.circ, width, masks)   # type: ignore[arg-type]
        pins = {s[1]: v for s, v in masks.items() if s[0] == "pin"}
        nets = {s[1]: v for s, v in masks.items() if s[0] == "net"}
        return GateMachine(self.circ, width, pins, nets)   # type: ignore[arg-type]

    # -- runs ------------------------------------------------------------------------------------------
    def blocks(self, settings: list, faults: list):
        """Simulate in blocks: yield ``(lo, count, machine, rep)`` after each block has settled.

        Machine bit ``p`` is the good build under setting ``p``; bit
        ``P * (k + 1) + p`` the build with fault ``faults[lo + k]`` under
        setting ``p``.  ``rep`` repeats a ``P``-bit word into every block.
        """
        P = len(settings)
        per = max(1, MAX_BITS // P - 1)
        for lo in range(0, max(1, len(faults)), per):
            chunk = faults[lo:lo + per]
            rep = 0
            for k in range(len(chunk) + 1):
                rep |= 1 << (P * k)
            pm = (1 << P) - 1
            m = self.machine(P * (len(chunk) + 1), [(f, pm << (P * (k + 1))) for k, f in enumerate(chunk)])
            words = []
            for i in range(len(self.inputs)):
                w = sum(1 << p for p, v in enumerate(settings) if v[i])
                words.append(w * rep)
            m.power_up(words)
            yield lo, len(chunk), m, rep

    def run(self, settings: list, faults: list) -> Run:
        """Run every setting (a tuple of input levels) on the good build and on the build with each fault."""
        P = len(settings)
        fails: list = [[set() for _ in range(P)] for _ in faults]
        if not P:
            return Run([], fails)
        pm = (1 << P) - 1
        good: list = [[] for _ in range(P)]
        for lo, _count, m, rep in self.blocks(settings, faults):
            for o, (h, l) in enumerate(m.outputs()):
                gh, gl = h & pm, l & pm
                if lo == 0:
                    if (gh | gl) != pm:
                        raise InternalError(f"output {self.outputs[o]} is not settled in the good build")
                    for p in range(P):
                        good[p].append(gh >> p & 1)
                diff = ((gh * rep & l) | (gl * rep & h)) >> P
                k = 0
                while diff:
                    d = diff & pm
                    while d:
                        p = (d & -d).bit_length() - 1
                        fails[lo + k][p].add(o)
                        d &= d - 1
                    diff >>= P
                    k += 1
        return Run(good, fails)
