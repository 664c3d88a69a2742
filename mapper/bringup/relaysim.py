"""A relay build as wired, and a bit-parallel switch-level simulator of it with faults.

The model reads a relay :class:`~mapper.build.Build` as a wiring diagram
(the same physics as :mod:`mapper.relay_logic` describes): a closed contact
joins its two nets both ways, a net is *powered* when a path of closed
contacts joins it to the supply rail or to an input that is on, and a relay is operated
while its coil net is powered.  Nothing here reads the logic view the
prover checks: a fault can feed power backwards through a contact (a net
joined to the rail by mistake powers the nets behind it), and the model
follows that.

Bit ``k`` of every word is machine ``k``; each machine may have its own
inputs and its own fault: a contact that never closes or never opens, a
coil that is never or always energized, a net that is never powered or
always powered.

Settling
--------
A build without storage has no feedback, so it settles in one state
whatever the order the relays move in: every relay is set to its coil at
once, again and again, until nothing moves.  A machine still moving after
one round per relay (a fault that makes contacts chase each other) is
marked unsettled: its readings are unknown.  Builds with storage are not
modelled (:func:`mapper.bringup.plan.make_plan` refuses them).
"""
from __future__ import annotations

from dataclasses import dataclass

from ..build import Build
from ..errors import InternalError
from ..order import topological_order

__all__ = ["RelayCircuit", "RelayMachine"]


@dataclass
class RelayCircuit:
    """A relay build as nets, relays and poles (integer net ids; ``-1`` unused)."""

    nets: list
    index: dict
    refs: list          # relay refs, build order
    coil: list          # coil net id per relay
    poles: list         # per relay: [(com, no, nc)]
    inputs: list
    outputs: list       # (port, net id)
    edges: list         # (relay, pole, side "NO"/"NC", com, other), sources first

    @classmethod
    def from_build(cls, b: Build) -> RelayCircuit:
        """The model of relay build ``b``."""
        if not b.is_relay:
            raise InternalError("a gate build has no relay model")
        if b.latches or b.sequencers or any(s.role == "steering" for s in b.support):
            raise InternalError("the bring-up simulator models relay builds without storage only")
        index: dict = {}

        def nid(net):
            return -1 if net is None else index.setdefault(net, len(index))

        nid("VCC")
        nid("GND")
        inputs = [nid(i) for i in b.inputs]
        refs = [p.ref for p in b.parts]
        by_ref: dict = {}
        for k in b.contacts:
            by_ref.setdefault(k.part_ref, []).append(k)
        coil = [nid(b.coils.get(r)) for r in refs]
        poles = [[(nid(k.com), nid(k.no), nid(k.nc)) for k in sorted(by_ref.get(r, []), key=lambda k: k.pole)]
                 for r in refs]
        outputs = [(o, nid(b.output_nets.get(o, o))) for o in b.outputs]
        edges = []
        for r, ps in enumerate(poles):
            for p, (com, no, nc) in enumerate(ps):
                for side, other in (("NO", no), ("NC", nc)):
                    if com >= 0 and other >= 0:
                        edges.append((r, p, side, com, other))
        # sides before commons: power flows that way in a sound build, so one sweep mostly suffices
        deps: dict = {}
        for _, _, _, com, other in edges:
            deps.setdefault(com, []).append(other)
        order, left = topological_order(list(range(len(index))), lambda n: deps.get(n, ()))
        rank = {n: i for i, n in enumerate(order + left)}
        edges.sort(key=lambda e: rank[e[3]])
        return cls(list(index), index, refs, coil, poles, inputs, outputs, edges)


class RelayMachine:
    """``width`` machines of one :class:`RelayCircuit` (see the module docstring).

    ``faults`` maps a site to masks: ``("contact", r, pole, side)`` ->
    ``(never closes, never opens)``; ``("coil", r)`` -> ``(never, always)``;
    ``("net", n)`` -> ``(never powered, always powered)``.
    """

    def __init__(self, circ: RelayCircuit, width: int, faults: dict | None = None):
        self.c = circ
        self.width = width
        self.M = (1 << width) - 1
        faults = faults or {}
        self.contact = {k[1:]: v for k, v in faults.items() if k[0] == "contact"}
        self.coilf = {k[1]: v for k, v in faults.items() if k[0] == "coil"}
        self.netf = {k[1]: v for k, v in faults.items() if k[0] == "net"}
        self.pos = [0] * len(circ.refs)
        self.inputs = [0] * len(circ.inputs)
        self.unsettled = 0
        self.on: list = [0] * len(circ.nets)

    # -- power ---------------------------------------------------------------------------------------
    def power(self) -> list:
        """Which nets are powered in each machine, relays where they are now."""
        c, M, pos = self.c, self.M, self.pos
        n = len(c.nets)
        on = [0] * n
        keep = [M] * n
        for net, (s0, s1) in self.netf.items():
            keep[net] = M & ~s0
            on[net] = s1 & ~s0
        on[0] |= M & keep[0]
        for net, w in zip(c.inputs, self.inputs):
            on[net] |= w & keep[net]
        links = []
        for r, p, side, com, other in c.edges:
            closed = pos[r] if side == "NO" else M & ~pos[r]
            f = self.contact.get((r, p, side))
            if f is not None:
                closed = (closed & ~f[0]) | f[1]
            if closed:
                links.append((com, other, closed))
        for _ in range(n + 2):
            moved = False
            for a, b, w in links:
                x = on[b] & w & keep[a] & ~on[a]
                if x:
                    on[a] |= x
                    moved = True
                y = on[a] & w & keep[b] & ~on[b]
                if y:
                    on[b] |= y
                    moved = True
            if not moved:
                break
        self.on = on
        return on

    def _wants(self, on: list) -> list:
        out = []
        for r, net in enumerate(self.c.coil):
            w = on[net] if net >= 0 else 0
            f = self.coilf.get(r)
            if f is not None:
                w = (w & ~f[0]) | f[1]
            out.append(w)
        return out

    # -- settling ------------------------------------------------------------------------------------
    def settle(self) -> None:
        """Move relays until nothing moves (see the module docstring)."""
        n = len(self.c.refs)
        moving = 0
        for _ in range(n + 2):
            want = self._wants(self.power())
            moving = 0
            for r in range(n):
                moving |= want[r] ^ self.pos[r]
            if not moving:
                return
            self.pos = want
        self.unsettled |= moving
        self.power()

    def power_up(self, words: list) -> None:
        """Every relay released, inputs ``words``, then settled."""
        self.pos = [0] * len(self.c.refs)
        self.unsettled = 0
        self.apply(words)

    def apply(self, words: list) -> None:
        """Set the inputs to ``words`` (one int per input) and settle."""
        self.inputs = [w & self.M for w in words]
        self.settle()

    # -- reading ------------------------------------------------------------------------------------
    def value(self, net: int) -> tuple:
        known = self.M & ~self.unsettled
        return self.on[net] & known, ~self.on[net] & known

    def outputs(self) -> list:
        return [self.value(n) for _, n in self.c.outputs]
