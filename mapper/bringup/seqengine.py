"""The fault simulator of a gate build with flip-flops: sequences run clock by clock, faults found.

A *sequence* is a list of steps, each a tuple of levels of the inputs that
are not clocks.  Every sequence starts from the *start state* -- each
flip-flop set by its preset or clear pin before step 1 (see
:func:`start_state`) -- and each step is: set the inputs, read the outputs,
give every clock input one pulse.

Sequences are run in blocks as :class:`mapper.bringup.engine.Engine` runs
settings: with ``P`` sequences and ``F`` faults, machine bit ``P * k + p`` is
sequence ``p`` on the good build (``k = 0``) or on the build with fault
``k - 1``, so one pass steps every fault under every sequence (parallel-
pattern, parallel-fault sequential fault simulation: Abramovici, Breuer and
Friedman, *Digital Systems Testing and Testable Design*, 1990, ch. 5).
A fault is detected at a step when some output of its build is surely at
the other level than the good build's.

Storage built of gates (nand-only, nor-only) is simulated gate by gate,
loops and all (:class:`mapper.bringup.gatesim.LoopMachine`): nothing is set
at the start, every net starts unknown, and a step's expected level is
``None`` where the good build is not known yet.
"""
from __future__ import annotations

from dataclasses import dataclass

from ..build import SUPPLY_NETS, Build
from ..errors import InternalError, UsageError
from .faults import Fault
from .gatesim import GateCircuit, LoopMachine, SeqMachine

__all__ = ["SeqEngine", "SeqRun", "start_state", "MAX_BITS"]

#: machines in one pass of the simulator (a run of more is split by faults)
MAX_BITS = 1 << 14


@dataclass
class SeqRun:
    """What a run of sequences found.

    ``good[p][t]`` is the tuple of output levels of the good build at step
    ``t`` of sequence ``p``; ``fails[f][p]`` the set of ``(step, output
    index)`` at which the build with fault ``f`` reads the other level.
    """

    good: list
    fails: list

    def detected(self, f: int) -> list:
        """Indices of the sequences that detect fault ``f``."""
        return [p for p, obs in enumerate(self.fails[f]) if obs]

    def first(self, f: int, p: int) -> int | None:
        """The first step of sequence ``p`` at which fault ``f`` shows (``None``: never)."""
        obs = self.fails[f][p]
        return min(t for t, _ in obs) if obs else None


def start_state(b: Build, circ: GateCircuit) -> list:
    """``(level, how)`` per flip-flop: the level each starts from and how the builder sets it.

    The level is the design's initial value (a flip-flop the design leaves
    unknown starts at 0), or the other level where the section has no pin to
    set that one: any known start serves to find wiring faults, and every
    expected level is figured from it.  It is set by touching its preset (for 1) or clear
    (for 0) pin to its active level for a moment before step 1 -- possible
    only where the section has that pin and it is tied to its resting rail
    (:class:`UsageError` otherwise: no start the builder can set is known).
    """
    out = []
    for f in circ.flops:
        c = b.cells[f.cell]
        level = c.init if c.init in (0, 1) else 0
        if (f.preset if level == 1 else f.clear) is None:
            level = 1 - level   # the other level, where the section can only be set to that one
        p, low = (f.preset, f.preset_low) if level == 1 else (f.clear, f.clear_low)
        what = "preset" if level == 1 else "clear"
        if p is None:
            raise UsageError(f"bring-up sequences for flip-flops with neither preset nor clear pin "
                             f"({c.part_ref} section {c.slot}) are not made yet: the start state cannot be set")
        pin = circ.pins[p]
        rest = "VCC" if low else "GND"
        if pin.net != rest:
            raise UsageError(f"bring-up sequences for flip-flops whose {what} is driven by logic "
                             f"({c.part_ref} pin {pin.number}, net {pin.net}) are not made yet: only preset and "
                             "clear tied to their resting rail")
        out.append((level, f"{c.part_ref} pin {pin.number} ({what}): take its wire off {rest}, touch the pin "
                    f"to {'GND' if low else 'VCC'} for a moment, put the wire back -> Q "
                    f"({circ.nets[f.q]}) = {level}"))
    return out


class SeqEngine:
    """The sequential fault simulator of one gate build with edge-triggered flip-flops."""

    def __init__(self, b: Build):
        if b.is_relay:
            raise InternalError("the sequential bring-up simulator models gate builds only")
        self.b = b
        self.relay = False
        self.circ = GateCircuit.from_build(b)
        c = self.circ
        if c.storage:
            raise UsageError("bring-up lists for builds with latch chips are not made yet: only edge-triggered "
                             "flip-flop chips and storage built of gates")
        self.loops = c.loops
        if c.loops:
            self._loop_setup(b)
            return
        clock_nets = {c.pin_net[f.clock] for f in c.flops}
        for n in clock_nets:
            if n not in c.inputs:
                raise UsageError(f"bring-up sequences for a clock made by logic ({c.nets[n]}) are not made "
                                 "yet: only clocks that are inputs of the design")
        for nd in c.nodes:
            hit = [c.nets[c.pin_net[p]] for p in nd[2] if c.pin_net[p] in clock_nets]
            if hit:
                raise UsageError(f"bring-up sequences for a clock that also feeds gates ({hit[0]}) are not "
                                 "made yet: only clocks that feed flip-flops alone")
        outs = {n for _, n in c.outputs}
        if clock_nets & outs:
            raise UsageError("bring-up sequences for a clock that is also an output are not made yet")
        self.clock_inputs = [b.inputs[k] for k, n in enumerate(c.inputs) if n in clock_nets]
        self.inputs = [x for x in b.inputs if x not in self.clock_inputs]
        self._data = [k for k, n in enumerate(c.inputs) if n not in clock_nets]
        self.outputs = list(b.outputs)
        self.start = start_state(b, c)
        self._sites = {(p.ref, p.number): pid for pid, p in enumerate(c.pins)}

    def _loop_setup(self, b: Build) -> None:
        """Storage built of gates: the clocks are the control nets of its flip-flops; nothing is set at the
        start (the power-on state is unknown, and the first steps must make it known)."""
        c = self.circ
        if c.flops:
            raise UsageError("bring-up lists for builds with both flip-flop chips and storage built of gates "
                             "are not made yet")
        controls = {g.control for g in b.storage_groups.values() if g.kind in ("re", "fe")}
        self.clock_inputs = [x for x in b.inputs if x in controls]
        self.inputs = [x for x in b.inputs if x not in self.clock_inputs]
        self._data = [k for k, x in enumerate(b.inputs) if x not in self.clock_inputs]
        self.outputs = list(b.outputs)
        self.start = []
        self._sites = {(p.ref, p.number): pid for pid, p in enumerate(c.pins)}

    def site(self, f: Fault) -> tuple:
        """Where fault ``f`` sits: ``("pin", pin id)`` or ``("net", net id)``."""
        if f.kind == "pin":
            return ("pin", self._sites[(f.ref, f.pin)])
        if f.kind == "net" and f.net not in SUPPLY_NETS:
            return ("net", self.circ.index[f.net])
        raise InternalError(f"no place in the simulator for fault {f.key}")

    def machine(self, width: int, faults: list) -> SeqMachine | LoopMachine:
        """``width`` machines; ``faults`` is a list of ``(Fault, mask)``: the machines that carry each."""
        pins: dict = {}
        nets: dict = {}
        for f, m in faults:
            kind, at = self.site(f)
            d = pins if kind == "pin" else nets
            lo, hi = d.get(at, (0, 0))
            d[at] = (lo | m, hi) if f.value == 0 else (lo, hi | m)
        if self.loops:
            clocks = tuple(self.circ.index[x] for x in self.clock_inputs)
            return LoopMachine(self.circ, width, pins, nets, clocks)
        return SeqMachine(self.circ, width, pins, nets)

    def run(self, sequences: list, faults: list, nets: list | None = None) -> SeqRun:
        """Run every sequence on the good build and on the build with each fault (see the module docstring).

        With ``nets`` (net ids), ``self.levels`` is also filled: per block
        start, per step, per net, the ``(hi, lo)`` words (for probe points).
        """
        P = len(sequences)
        fails: list = [[set() for _ in range(P)] for _ in faults]
        good: list = [[] for _ in range(P)]
        self.levels: list = []
        if not P:
            return SeqRun(good, fails)
        T = max(len(s) for s in sequences)
        pm = (1 << P) - 1
        per = max(1, MAX_BITS // P - 1)
        levels = [v for v, _ in self.start]
        for lo in range(0, max(1, len(faults)), per):
            chunk = faults[lo:lo + per]
            rep = sum(1 << (P * k) for k in range(len(chunk) + 1))
            m = self.machine(P * (len(chunk) + 1), [(f, pm << (P * (k + 1))) for k, f in enumerate(chunk)])
            m.start(levels)
            block_levels = []
            for t in range(T):
                live = sum(1 << p for p, s in enumerate(sequences) if t < len(s))
                m.settle(self._words(sequences, t, rep))
                if nets is not None:
                    block_levels.append({n: m.value(n) for n in nets})
                self._compare(m, lo, t, P, pm, live, rep, good, fails)
                m.pulse()
            self.levels.append((lo, len(chunk), rep, block_levels))
        return SeqRun(good, fails)

    def _words(self, sequences: list, t: int, rep: int) -> list:
        words = [0] * len(self.b.inputs)
        for i, k in enumerate(self._data):
            words[k] = sum(1 << p for p, s in enumerate(sequences) if t < len(s) and s[t][i]) * rep
        return words

    def _compare(self, m: SeqMachine | LoopMachine, lo: int, t: int, P: int, pm: int, live: int, rep: int,
                 good: list, fails: list) -> None:
        for o, (h, l) in enumerate(m.outputs()):
            gh, gl = h & pm, l & pm
            if lo == 0:
                if (gh | gl) & live != live and not self.loops:
                    raise InternalError(f"output {self.outputs[o]} is not settled in the good build at step "
                                        f"{t + 1}")
                for p in range(P):
                    if live >> p & 1:
                        if len(good[p]) <= t:
                            good[p].append([])
                        # storage built of gates starts unknown: None until the steps make it known
                        good[p][t].append(gh >> p & 1 if (gh | gl) >> p & 1 else None)
            diff = ((gh * rep & l) | (gl * rep & h)) >> P
            k = 0
            while diff:
                d = diff & pm & live
                while d:
                    p = (d & -d).bit_length() - 1
                    fails[lo + k][p].add((t, o))
                    d &= d - 1
                diff >>= P
                k += 1
