"""One simulator for gate and relay builds: faults put into machines, settings run, faults found.

:class:`Engine` wraps the gate model (:mod:`mapper.bringup.gatesim`) or the
relay model (:mod:`mapper.bringup.relaysim`) of a build.  Settings are run
in *blocks*: with ``P`` settings and ``F`` faults, a run has ``(F + 1) * P``
machines -- block 0 the good build under every setting, block ``f + 1``
the build with fault ``f`` under every setting -- so one pass of the
simulator compares every fault under every setting (parallel-pattern and
parallel-fault simulation at once; both are textbook practice, e.g.
Abramovici, Breuer and Friedman, *Digital Systems Testing and Testable
Design*, 1990, ch. 5).

A fault is *detected* by a setting when, at some step of it, some output
of the faulty build is surely at the other level than the good build's
(both known).
"""
from __future__ import annotations

from dataclasses import dataclass

from ..build import Build
from ..errors import InternalError
from .faults import Fault
from .gatesim import GateCircuit, GateMachine
from .relaysim import RelayCircuit, RelayMachine

__all__ = ["Engine", "Setting", "Run", "MAX_BITS"]

#: machines in one pass of the simulator (a run of more is split by faults)
MAX_BITS = 1 << 15


@dataclass(frozen=True)
class Setting:
    """One test: input vectors applied one after another from the start (one vector: a plain setting)."""

    steps: tuple

    def __len__(self) -> int:
        return len(self.steps)


@dataclass
class Run:
    """What a run found: per step and output the good level, and per fault the failing observations.

    ``good[p][s][o]`` is 0, 1 or ``None`` (unknown) for setting ``p``, step
    ``s``, output ``o``.  ``fails[f][p]`` is a dict ``step -> set of
    output indices`` at which fault ``f`` reads the other level in setting
    ``p`` (empty when the setting misses it).
    """

    good: list
    fails: list

    def detected(self, f: int) -> list:
        """Indices of the settings that detect fault ``f``."""
        return [p for p, obs in enumerate(self.fails[f]) if obs]

    def first_step(self, f: int, p: int) -> int | None:
        obs = self.fails[f][p]
        return min(obs) if obs else None


class Engine:
    """The simulator of one build, with its start procedure (see :meth:`start`)."""

    def __init__(self, b: Build):
        self.b = b
        self.relay = b.is_relay
        self.circ: GateCircuit | RelayCircuit
        if self.relay:
            self.circ = RelayCircuit.from_build(b)
            self.sequential = self.circ.ordered
        else:
            self.circ = GateCircuit.from_build(b)
            self.sequential = self.circ.has_state
        self.inputs = list(b.inputs)
        self.outputs = list(b.outputs)
        self._sites: dict = {}
        if not self.relay:
            for pid, p in enumerate(self.circ.pins):
                self._sites[(p.ref, p.number)] = pid
        else:
            for r, ref in enumerate(self.circ.refs):
                self._sites[ref] = r
            for i, (ref, _, _) in enumerate(self.circ.diodes):
                self._sites[ref] = i
        #: what brings every machine to the start (gate builds with storage): ("force", {pin: level})
        #: or ("set", vector); set by :mod:`mapper.bringup.start`
        self.start_actions: list = []

    # -- machines ------------------------------------------------------------------------------------
    def site(self, f: Fault):
        """Where fault ``f`` sits in the simulator: a pin or net id, or a relay site."""
        c = self.circ
        if not self.relay:
            if f.kind == "pin":
                return ("pin", self._sites[(f.ref, f.pin)])
            if f.kind == "net":
                return ("net", c.index[f.net])
        else:
            if f.kind == "net":
                return ("net", c.index[f.net])
            if f.kind == "coil":
                return ("coil", self._sites[f.ref])
            if f.kind == "contact":
                r = self._sites[f.ref]
                poles = sorted(k.pole for k in self.b.contacts if k.part_ref == f.ref)
                return ("contact", r, poles.index(f.pole), f.side)
            if f.kind == "diode":
                return ("diode", self._sites[f.ref])
        raise InternalError(f"no place in the simulator for fault {f.key}")

    def machine(self, width: int, faults: list = ()) -> GateMachine | RelayMachine:
        """``width`` machines; ``faults`` is a list of ``(Fault, mask)``: the machines that carry each."""
        if self.relay:
            masks: dict = {}
            for f, m in faults:
                s = self.site(f)
                if s[0] == "diode":
                    masks[s] = masks.get(s, 0) | m
                    continue
                a, b = masks.get(s, (0, 0))
                masks[s] = (a | m, b) if f.value == 0 else (a, b | m)
            return RelayMachine(self.circ, width, masks)   # type: ignore[arg-type]
        pins: dict = {}
        nets: dict = {}
        for f, m in faults:
            kind, i = self.site(f)
            d = pins if kind == "pin" else nets
            a, b = d.get(i, (0, 0))
            d[i] = (a | m, b) if f.value == 0 else (a, b | m)
        return GateMachine(self.circ, width, pins, nets)   # type: ignore[arg-type]

    def start(self, m, zero: list | None = None) -> None:
        """Bring machines to the start: power up with every input at 0, then the start actions."""
        zero = zero if zero is not None else [0] * len(self.inputs)
        m.power_up(zero)
        for kind, what in self.start_actions:
            if kind == "force":
                m.force(what)
            else:
                m.apply([m.M if v else 0 for v in what])

    # -- runs ------------------------------------------------------------------------------------------
    def run(self, settings: list, faults: list, keep_nets: bool = False) -> Run:
        """Run every setting on the good build and on the build with each fault (see the module docstring).

        Settings of a build without storage start from nothing each; those of
        a build with storage start from the start (:meth:`start`).
        """
        P = len(settings)
        if not P:
            return Run([], [[] for _ in faults])
        per = max(1, MAX_BITS // P - 1)
        good: list = []
        fails: list = []
        for lo in range(0, max(1, len(faults)), per):
            chunk = faults[lo:lo + per]
            g, fl = self._run_block(settings, chunk)
            good = g
            fails += fl
        return Run(good, fails)

    def _run_block(self, settings: list, faults: list) -> tuple:
        P = len(settings)
        F = len(faults)
        width = P * (F + 1)
        pm = (1 << P) - 1
        rep = 0
        for k in range(F + 1):
            rep |= 1 << (P * k)
        m = self.machine(width, [(f, pm << (P * (k + 1))) for k, f in enumerate(faults)])
        length = max(len(s) for s in settings)
        vectors = [[s.steps[min(t, len(s) - 1)] for s in settings] for t in range(length)]
        n_in = len(self.inputs)
        if self.sequential:
            self.start(m)
        good = [[[] for _ in range(length)] for _ in range(P)]
        fails: list = [[{} for _ in range(P)] for _ in range(F)]
        for t, vec in enumerate(vectors):
            words = []
            for i in range(n_in):
                w = 0
                for p, v in enumerate(vec):
                    if v[i]:
                        w |= 1 << p
                words.append(w * rep)
            if self.sequential or t > 0:
                m.apply(words)
            else:
                m.power_up(words)
            for o, (h, l) in enumerate(m.outputs()):
                gh, gl = h & pm, l & pm
                for p in range(P):
                    if t < len(settings[p]):
                        good[p][t].append(1 if gh >> p & 1 else 0 if gl >> p & 1 else None)
                diff = (gh * rep & l) | (gl * rep & h)
                diff >>= P
                k = 0
                while diff:
                    d = diff & pm
                    if d:
                        for p in range(P):
                            if d >> p & 1 and t < len(settings[p]):
                                fails[k][p].setdefault(t, set()).add(o)
                    diff >>= P
                    k += 1
        return good, fails
