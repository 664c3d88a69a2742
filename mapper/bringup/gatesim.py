"""A gate build as wired, pin by pin, and a bit-parallel three-valued simulator of it with faults.

The model reads a :class:`~mapper.build.Build` of gate chips: every used
section is a node that reads its input *pins* (each pin its own place where
a fault can sit) and drives its output net with its catalog function.  Nodes
are evaluated once each, in the order of the wiring.  Edge-triggered
flip-flop sections (data, clock and maybe preset and clear pins) are
:class:`Flop` records: their Q and Q-bar nets are sources of the gates, like
inputs, and :class:`SeqMachine` steps them clock by clock.  A medium-scale
chip without registers (an adder, a comparator, a decoder, a multiplexer)
is one node per wired output over the input pins that output reads, its
function flattened from the catalog's block model.  The gates of storage
built of gates (``Build.storage_groups``) are nodes like any other, in
loops: :class:`LoopMachine` settles them.  Other storage (latch chips,
registers inside blocks) is counted in ``storage`` and not modelled.

Values are three-valued and bit-parallel (:mod:`mapper.bringup.ternary`):
bit ``k`` of every word belongs to machine ``k``, and each machine may carry
its own input values and its own faults (a pin or a net forced to 0 or 1).
With every input set, every net of a build without storage is known; the
third value is kept so that a wrong model shows as "not settled" rather
than as a wrong level.
"""
from __future__ import annotations

from dataclasses import dataclass, field

import networkx as nx

from ..build import Build
from ..errors import InternalError
from .ternary import AND, classify, evaluate

__all__ = ["GateCircuit", "GateMachine", "SeqMachine", "LoopMachine", "PinRef", "Flop"]


@dataclass(frozen=True)
class PinRef:
    """One input pin of a used section: package pin ``number`` of ``ref``, cell pin ``name``, on ``net``."""

    ref: str
    number: int | str
    name: str
    net: str
    cell: int


@dataclass(frozen=True)
class Flop:
    """One edge-triggered flip-flop section: pin ids of its data, clock, preset and clear (``None``: the
    section has no such pin), the net ids of Q and Q-bar (``None``: not wired), and its cell index.
    ``preset_low`` / ``clear_low`` say the pin acts when low."""

    d: int
    clock: int
    preset: int | None
    clear: int | None
    q: int
    qn: int | None
    cell: int
    preset_low: bool = True
    clear_low: bool = True


@dataclass
class GateCircuit:
    """A gate build as nets, pins and nodes (see the module docstring)."""

    nets: list
    index: dict
    inputs: list                    # net ids of the primary inputs, in the build's order
    outputs: list                   # (port, net id)
    pins: list                      # PinRef per pin id
    pin_net: list                   # net id per pin id
    nodes: list                     # ("g", out net id, pin ids, three-valued op, function) per section
    order: list                     # node ids, everything a node reads before it
    driver: dict = field(default_factory=dict)   # net id -> node id
    storage: int = 0                # sections that remember and are not modelled (latches, gate storage)
    flops: list = field(default_factory=list)   # Flop per edge-triggered flip-flop section
    loops: bool = False             # storage built of gates: loops of gates, settled by LoopMachine
    #: node ids in order of evaluation, a loop of gates as one list: ``(False, [k])`` or ``(True, [k, ...])``
    parts: list = field(default_factory=list)

    @property
    def has_state(self) -> bool:
        """Whether anything in the build remembers (flip-flops or latches)."""
        return bool(self.storage or self.flops or self.loops)

    @classmethod
    def from_build(cls, b: Build) -> GateCircuit:
        """The model of gate build ``b`` (:class:`InternalError` for a relay build)."""
        if b.is_relay:
            raise InternalError("a relay build has no gate model")
        index: dict = {}

        def nid(net: str) -> int:
            return index.setdefault(net, len(index))

        nid("GND")
        nid("VCC")
        inputs = [nid(i) for i in b.inputs]
        pins: list = []
        nodes: list = []
        storage = 0

        seen: dict = {}

        def pin(ci: int, c, name: str) -> int:
            net = c.pins.get(name)
            if net is None:
                raise InternalError(f"{c.part_ref} section {c.slot}: input {name} is on no net")
            key = (c.part_ref, b.pin_of(c, name))
            if key in seen:   # a pin the sections of a chip share (the selects of a '153): one place
                if pins[seen[key]].net != net:
                    raise InternalError(f"{key[0]} pin {key[1]} is on two nets")
                return seen[key]
            pins.append(PinRef(c.part_ref, key[1], name, net, ci))
            nid(net)
            seen[key] = len(pins) - 1
            return len(pins) - 1

        flops: list = []
        loops = 0
        for ci, c in enumerate(b.cells):
            cd = b.cell_def(c)
            if cd.storage is not None and _is_flop(cd) and c.group is None:
                flops.append(_flop(cd, c, ci, pin, nid))
                continue
            if c.group is not None and cd.storage is None and cd.block is None:
                loops += 1   # a gate of a latch or flip-flop built of gates: a gate like any other
                ins = tuple(pin(ci, c, p) for p in cd.inputs)
                func = cd.logic_function()
                nodes.append(("g", nid(c.pins[cd.output]), ins, classify(func), func))
                continue
            if cd.block is not None and not cd.block.registers and c.group is None:
                nodes += _block_nodes(cd, c, ci, pin, nid)
                continue
            if cd.storage is not None or c.group is not None or cd.block is not None:
                storage += 1
                continue
            ins = tuple(pin(ci, c, p) for p in cd.inputs)
            func = cd.logic_function()
            nodes.append(("g", nid(c.pins[cd.output]), ins, classify(func), func))
        outputs = [(o, nid(b.output_nets.get(o, o))) for o in b.outputs]
        pin_net = [index[p.net] for p in pins]
        circ = cls(list(index), index, inputs, outputs, pins, pin_net, nodes, [], storage=storage, flops=flops,
                   loops=bool(loops or b.storage_groups))
        if not storage:
            circ._order()
        return circ

    def sources(self) -> set:
        """Net ids no gate drives: rails, inputs, and the Q and Q-bar nets of the flip-flops."""
        return {0, 1, *self.inputs, *(f.q for f in self.flops), *(f.qn for f in self.flops if f.qn is not None)}

    def readers(self) -> dict:
        """net id -> node ids that read it (made once)."""
        got = self.__dict__.get("_readers")
        if got is None:
            got = self.__dict__["_readers"] = {}
            for k, nd in enumerate(self.nodes):
                for p in nd[2]:
                    got.setdefault(self.pin_net[p], []).append(k)
        return got

    def rank(self) -> dict:
        """node id -> its place in :attr:`order` (made once)."""
        got = self.__dict__.get("_rank")
        if got is None:
            got = self.__dict__["_rank"] = {k: i for i, k in enumerate(self.order)}
        return got

    def _order(self) -> None:
        driver: dict = {}
        sources = self.sources()
        for k, nd in enumerate(self.nodes):
            net = nd[1]
            if net in driver or net in sources:
                raise InternalError(f"net {self.nets[net]} has two drivers in the build")
            driver[net] = k
        self.driver = driver
        g = nx.DiGraph()
        g.add_nodes_from(range(len(self.nodes)))
        for k, nd in enumerate(self.nodes):
            for p in nd[2]:
                src = driver.get(self.pin_net[p])
                if src is not None:
                    g.add_edge(src, k)
        if not self.loops:
            try:
                self.order = list(nx.topological_sort(g))
            except nx.NetworkXUnfeasible:
                raise InternalError("a loop of gates outside any storage group in the build") from None
            self.parts = [(False, [k]) for k in self.order]
            return
        cond = nx.condensation(g)
        self.parts = []
        for comp in nx.topological_sort(cond):
            members = sorted(cond.nodes[comp]["members"])
            loop = len(members) > 1 or g.has_edge(members[0], members[0])
            self.parts.append((loop, members))
        self.order = [k for _, ks in self.parts for k in ks]


class GateMachine:
    """``width`` machines of one :class:`GateCircuit`, each with its own inputs and faults.

    ``pin_faults`` and ``net_faults`` map a pin id or a net id to ``(s0,
    s1)``: the machines in which that pin (or net) is forced to 0 and to 1.
    """

    def __init__(self, circ: GateCircuit, width: int, pin_faults: dict | None = None,
                 net_faults: dict | None = None):
        if circ.has_state:
            raise InternalError("the bring-up simulator models builds without storage only")
        self._setup(circ, width, pin_faults, net_faults)

    def _setup(self, circ: GateCircuit, width: int, pin_faults: dict | None, net_faults: dict | None) -> None:
        self.c = circ
        self.width = width
        self.M = (1 << width) - 1
        self.net_faults = dict(net_faults or {})
        pf = self.pin_faults = dict(pin_faults or {})
        # every pin read resolved once with its fault: (net id, (s0, s1) or None)
        self._code = [(nd[1], tuple((circ.pin_net[p], pf.get(p)) for p in nd[2]), nd[3]) for nd in circ.nodes]
        n = len(circ.nets)
        self.H = [0] * n
        self.L = [0] * n

    def _gate(self, reads: tuple, op: tuple) -> tuple:
        """``(hi, lo)`` of a gate from the values now on its pins (each pin after its fault)."""
        H, L, M = self.H, self.L, self.M
        if op[0] == AND:
            h, l = M, 0
            for (net, inj), i in zip(reads, op[1]):
                a, b = H[net], L[net]
                if inj is not None:
                    a, b = (a & ~inj[0]) | inj[1], (b & ~inj[1]) | inj[0]
                if i:
                    h &= b
                    l |= a
                else:
                    h &= a
                    l |= b
            return (l, h) if op[2] else (h, l)
        ins = []
        for net, inj in reads:
            a, b = H[net], L[net]
            if inj is not None:
                a, b = (a & ~inj[0]) | inj[1], (b & ~inj[1]) | inj[0]
            ins.append((a, b))
        return evaluate(op, ins, M)

    def _set(self, net: int, h: int, l: int) -> None:
        """Put a value on ``net``, after its fault."""
        inj = self.net_faults.get(net)
        if inj is not None:
            h, l = (h & ~inj[0]) | inj[1], (l & ~inj[1]) | inj[0]
        self.H[net], self.L[net] = h, l

    def power_up(self, words: list) -> None:
        """Apply the inputs ``words`` (one int per input, bit ``k`` for machine ``k``) and settle every net."""
        M = self.M
        self._set(1, M, 0)
        self._set(0, 0, M)
        for net, w in zip(self.c.inputs, words):
            self._set(net, w & M, ~w & M)
        self._gates()

    def _gates(self) -> None:
        code = self._code
        for k in self.c.order:
            out, reads, op = code[k]
            h, l = self._gate(reads, op)
            self._set(out, h, l)

    def value(self, net: int) -> tuple:
        """``(hi, lo)`` of net id ``net``."""
        return self.H[net], self.L[net]

    def outputs(self) -> list:
        """``(hi, lo)`` of every output port, in the build's order."""
        return [(self.H[n], self.L[n]) for _, n in self.c.outputs]


def _block_nodes(cd, c, ci: int, pin, nid) -> list:
    """A medium-scale chip without registers as one node per wired output, each reading the chip's input
    pins its output depends on (a pin read by several outputs is one pin id: a fault there reaches all)."""
    blk = cd.block
    ids = {name: pin(ci, c, name) for name in cd.inputs}   # every pin, read by an output or not
    out = []
    for sig in cd.outputs:
        net = c.pins.get(sig)
        if net is None:
            continue
        names, func = blk.table(sig)
        out.append(("g", nid(net), tuple(ids[x] for x in names), classify(func), func))
    return out


def _is_flop(cd) -> bool:
    """An edge-triggered section with a data and a clock pin (the rest preset or clear)."""
    roles = sorted(cd.roles.get(p, "") for p in cd.inputs)
    return (cd.storage == "re" and roles.count("data") == 1 and roles.count("clock") == 1
            and all(r in ("data", "clock", "preset", "clear") for r in roles) and len(roles) == len(set(roles)))


def _flop(cd, c, ci: int, pin, nid) -> Flop:
    """The :class:`Flop` of section ``c`` (pins added to the model through ``pin``)."""
    by_role = {cd.roles[p]: p for p in cd.inputs}
    ids = {r: pin(ci, c, name) for r, name in by_role.items()}
    qn = next((c.pins[x] for x in cd.extra_outputs if c.pins.get(x)), None)
    return Flop(ids["data"], ids["clock"], ids.get("preset"), ids.get("clear"), nid(c.pins[cd.output]),
                nid(qn) if qn is not None else None, ci,
                by_role.get("preset") in cd.active_low, by_role.get("clear") in cd.active_low)


class SeqMachine(GateMachine):
    """``width`` machines of a gate build with flip-flops, stepped clock by clock.

    Each step: :meth:`settle` applies the inputs (every clock input at rest,
    low) with the flip-flops holding, and settles every net; :meth:`pulse`
    then gives every clock input one pulse: a flip-flop whose clock pin sees
    the edge takes the level on its data pin.  A machine whose clock pin (or
    clock net) is stuck sees no edge and holds.  A preset or clear pin at its
    active level forces the flip-flop at once, whatever the clock (both at
    once: Q and Q-bar both high, as the data sheets of the '74 say).
    Everything is three-valued: a flip-flop started unknown stays unknown
    until it takes a known level.
    """

    def __init__(self, circ: GateCircuit, width: int, pin_faults: dict | None = None,
                 net_faults: dict | None = None):
        if circ.storage:
            raise InternalError("the bring-up simulator models edge-triggered flip-flops only")
        self._setup(circ, width, pin_faults, net_faults)
        self.SH = [0] * len(circ.flops)
        self.SL = [0] * len(circ.flops)
        clock_nets = {circ.pin_net[f.clock] for f in circ.flops}
        self._clock_inputs = [k for k, n in enumerate(circ.inputs) if n in clock_nets]

    def _pin(self, p: int) -> tuple:
        """``(hi, lo)`` read at pin ``p``, after its fault."""
        net = self.c.pin_net[p]
        a, b = self.H[net], self.L[net]
        inj = self.pin_faults.get(p)
        if inj is not None:
            a, b = (a & ~inj[0]) | inj[1], (b & ~inj[1]) | inj[0]
        return a, b

    def _stuck(self, p: int) -> int:
        """Machines in which pin ``p`` or its net is stuck (at either level)."""
        out = 0
        for inj in (self.pin_faults.get(p), self.net_faults.get(self.c.pin_net[p])):
            if inj is not None:
                out |= inj[0] | inj[1]
        return out

    def start(self, levels: list) -> None:
        """Every machine's flip-flops at ``levels`` (0, 1, or ``None`` for unknown), as the builder sets them."""
        M = self.M
        for j, v in enumerate(levels):
            self.SH[j] = M if v == 1 else 0
            self.SL[j] = M if v == 0 else 0

    def _async(self, j: int) -> tuple:
        """``(preset, clear)``: the machines where flip-flop ``j`` is surely forced by each."""
        f = self.c.flops[j]
        out = []
        for p, low in ((f.preset, f.preset_low), (f.clear, f.clear_low)):
            if p is None:
                out.append(0)
                continue
            h, l = self._pin(p)
            out.append(l if low else h)
        return out[0], out[1]

    def settle(self, words: list) -> None:
        """Apply the inputs ``words`` (clock inputs held low whatever they say) and settle every net."""
        M = self.M
        self._set(1, M, 0)
        self._set(0, 0, M)
        words = list(words)
        for k in self._clock_inputs:
            words[k] = 0
        for net, w in zip(self.c.inputs, words):
            self._set(net, w & M, ~w & M)
        for j, f in enumerate(self.c.flops):
            pre, clr = self._async(j)
            h, l = (self.SH[j] | pre) & ~clr, (self.SL[j] | clr) & ~pre
            self.SH[j], self.SL[j] = h | (pre & clr), l
            self._set(f.q, self.SH[j], self.SL[j])
            if f.qn is not None:
                self._set(f.qn, l | (pre & clr), h & ~(pre & clr))
        self._gates()

    def pulse(self) -> None:
        """One clock pulse: every flip-flop that sees the edge takes its data level (call after :meth:`settle`)."""
        for j, f in enumerate(self.c.flops):
            edge = self.M & ~self._stuck(f.clock)
            pre, clr = self._async(j)
            edge &= ~(pre | clr)
            dh, dl = self._pin(f.d)
            self.SH[j] = (dh & edge) | (self.SH[j] & ~edge)
            self.SL[j] = (dl & edge) | (self.SL[j] & ~edge)


class LoopMachine(GateMachine):
    """``width`` machines of a gate build whose storage is built of gates (loops), stepped clock by clock.

    Every net starts unknown (the power-on state is not relied on).  Each
    change of the inputs settles in the two phases of ternary simulation
    (Eichelberger, "Hazard detection in combinational and sequential
    switching circuits", IBM J. Res. Dev. 9(2), 1965): first every input
    that changes is unknown and the unknown spreads through the gates until
    nothing changes; then the inputs take their new levels and the gates
    gain what knowledge they can.  A level known at the end is the level
    the board shows whatever its gate delays and whatever order its loops
    settle in; a race or an oscillation stays unknown.  (An earlier
    unit-delay model called some faults detected that only showed with
    equal gate delays: a rewired board settling its gates in another order
    did not show them.)  A step is :meth:`settle` (the inputs, clocks low),
    then :meth:`pulse`: every clock input high, then low again, each
    settled the same way.
    """

    def __init__(self, circ: GateCircuit, width: int, pin_faults: dict | None = None,
                 net_faults: dict | None = None, clocks: tuple = ()):
        if circ.storage or circ.flops:
            raise InternalError("the loop simulator models builds whose storage is all built of gates")
        self._setup(circ, width, pin_faults, net_faults)
        self._clocks = [k for k, n in enumerate(circ.inputs) if n in clocks]
        self._fresh = True
        self._readers = circ.readers()
        self._now: list = []

    def start(self, levels: list) -> None:
        """Power on: every net unknown (``levels`` is empty: there is nothing the builder sets)."""
        self.H = [0] * len(self.c.nets)
        self.L = [0] * len(self.c.nets)
        self._fresh = True
        self._now = []

    def _apply(self, new: list) -> None:
        """Put the inputs at ``new`` ((hi, lo) each) and settle (see the class docstring)."""
        M = self.M
        self._set(1, M, 0)
        self._set(0, 0, M)
        if self._fresh:   # power on: every net unknown, every gate once, in order
            self._fresh = False
            for net, (h, l) in zip(self.c.inputs, new):
                self._set(net, h, l)
            self._gates()
        # phase A: an input that changes is unknown while it changes, and the unknown spreads through
        # every gate until nothing changes (it only loses knowledge, so it ends)
        old = self._now or [(0, 0)] * len(new)
        for net, (h, l), (oh, ol) in zip(self.c.inputs, new, old):
            self._set(net, h & oh, l & ol)
        self._spread(gain=False)
        # phase B: the inputs at their new levels; gates only gain knowledge, so this ends too
        for net, (h, l) in zip(self.c.inputs, new):
            self._set(net, h, l)
        self._now = list(new)
        self._spread(gain=True)

    def _spread(self, gain: bool) -> None:
        """Every gate, then the readers of each net that changed, until nothing changes.  ``gain``
        False (phase A): a net stays known only where its old and new levels agree; True (phase B): a
        net takes what its gate now knows.  Either way knowledge only moves one way, so it ends."""
        code = self._code
        active = set(range(len(self.c.nodes)))
        while active:
            nxt: set = set()
            for k in sorted(active):
                out = code[k][0]
                h, l = self._gate(code[k][1], code[k][2])
                oh, ol = self.H[out], self.L[out]
                nh, nl = (oh | h, ol | l) if gain else (oh & h, ol & l)
                self._set(out, nh, nl)
                if (self.H[out], self.L[out]) != (oh, ol):
                    nxt.update(self._readers.get(out, []))
            active = nxt

    def settle(self, words: list) -> None:
        """Apply the inputs ``words`` (clock inputs low whatever they say) and settle."""
        M = self.M
        new = [(w & M, ~w & M) for w in words]
        for k in self._clocks:
            new[k] = (0, M)
        self._apply(new)

    def pulse(self) -> None:
        """Every clock input high, then low again, each settled."""
        M = self.M
        new = list(self._now)
        for k in self._clocks:
            new[k] = (M, 0)
        self._apply(new)
        for k in self._clocks:
            new[k] = (0, M)
        self._apply(list(new))

