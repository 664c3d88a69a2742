"""A gate build as wired, pin by pin, and a bit-parallel three-valued simulator of it with faults.

The model reads a :class:`~mapper.build.Build` of chips: every used section
is a node that reads its input *pins* (each pin its own place where a fault
can sit) and drives its output nets.  Gate sections compute their catalog
function; flip-flop sections (``re``/``fe``) keep a bit that takes the value
their data pin had before an active clock edge, with active-low preset and
clear pins acting at once (both active: both outputs high, as the 74-series
flip-flop datasheets say); latch sections pass their data pin while enabled.
Storage built of gates is what it is on the board: a loop of gates.

Values are three-valued and bit-parallel (:mod:`mapper.bringup.ternary`):
bit ``k`` of every word belongs to machine ``k``, and each machine may carry
its own input values and its own faults (a pin or a net forced to 0 or 1).

Settling
--------
Nets settle in the order of the strongly connected parts of the wiring.
Outside loops each node is evaluated once, after everything it reads.  A
loop (storage built of gates, a latch feeding itself, next-state logic
around gate-built flip-flops) is settled by unit-delay steps: every node of
the loop takes its new value from the old values at once, as if every gate
had the same delay, until nothing moves; bits still moving after
:data:`LOOP_STEPS` steps per node (a faulty loop that oscillates) are made
unknown.  A flip-flop's bit after a step is decided by its clock pin before
and after the step and its data pin before the step (an ideal flip-flop: it
samples the data before the edge), and its preset and clear pins.  Glitches
are not simulated: the glitch finder of :mod:`mapper.analyze` deals with
them, and a build whose clocks can glitch is cautioned or refused there.
"""
from __future__ import annotations

from dataclasses import dataclass, field

import networkx as nx

from ..build import Build
from ..errors import InternalError
from .ternary import AND, classify, evaluate

__all__ = ["GateCircuit", "GateMachine", "PinRef", "LOOP_STEPS"]

#: unit-delay steps per node of a loop before the bits still moving are called unknown
LOOP_STEPS = 4


@dataclass(frozen=True)
class PinRef:
    """One input pin of a used section: package pin ``number`` of ``ref``, cell pin ``name``, on ``net``."""

    ref: str
    number: int | str
    name: str
    net: str
    cell: int


@dataclass
class GateCircuit:
    """A gate build as nets, pins and nodes (see the module docstring)."""

    nets: list
    index: dict
    inputs: list                    # net ids of the primary inputs, in the build's order
    outputs: list                   # (port, net id)
    pins: list                      # PinRef per pin id
    pin_net: list                   # net id per pin id
    nodes: list                     # ("g", out, pins, op, function) | ("f", q, qn, d, clk, pre, clr, rising, pre_low, clr_low)
                                    # | ("l", q, qn, d, en, active_high)
    blocks: list                    # (node ids, is_loop), in settling order
    driver: dict = field(default_factory=dict)   # net id -> node id
    flops: list = field(default_factory=list)    # node ids of flip-flops
    latches: list = field(default_factory=list)  # node ids of latches
    loops: list = field(default_factory=list)    # net ids driven inside loops
    groups: dict = field(default_factory=dict)   # storage group key -> (q net id, cell ids)

    @property
    def has_state(self) -> bool:
        """Whether anything in the build remembers (flip-flops, latches, loops of gates)."""
        return bool(self.flops or self.latches or self.loops)

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
        flops, latches = [], []

        def pin(ci: int, c, name: str) -> int:
            net = c.pins.get(name)
            if net is None:
                raise InternalError(f"{c.part_ref} section {c.slot}: input {name} is on no net")
            pins.append(PinRef(c.part_ref, b.pin_of(c, name), name, net, ci))
            nid(net)
            return len(pins) - 1

        for ci, c in enumerate(b.cells):
            cd = b.cell_def(c)
            if cd.storage is None:
                ins = tuple(pin(ci, c, p) for p in cd.inputs)
                func = cd.logic_function()
                nodes.append(("g", nid(c.pins[cd.output]), ins, classify(func), func))
                continue
            q = nid(c.pins[cd.output])
            qn = next((nid(c.pins[x]) for x in cd.extra_outputs if c.pins.get(x)), -1)
            by_role = {r: p for p, r in cd.roles.items()}
            d = pin(ci, c, by_role.get("data", cd.inputs[0]))
            if cd.storage in ("re", "fe"):
                clk = pin(ci, c, by_role.get("clock", cd.inputs[1]))
                pre = pin(ci, c, by_role["preset"]) if "preset" in by_role else -1
                clr = pin(ci, c, by_role["clear"]) if "clear" in by_role else -1
                nodes.append(("f", q, qn, d, clk, pre, clr, cd.storage == "re",
                              by_role.get("preset") in cd.active_low, by_role.get("clear") in cd.active_low))
                flops.append(len(nodes) - 1)
            else:
                en = pin(ci, c, by_role.get("enable", cd.inputs[1]))
                nodes.append(("l", q, qn, d, en, cd.storage == "ah"))
                latches.append(len(nodes) - 1)
        outputs = [(o, nid(b.output_nets.get(o, o))) for o in b.outputs]
        pin_net = [index[p.net] for p in pins]
        circ = cls(list(index), index, inputs, outputs, pins, pin_net, nodes, [], flops=flops, latches=latches)
        circ._order()
        for key, g in b.storage_groups.items():
            cells = [i for i, c in enumerate(b.cells) if c.group == key]
            circ.groups[key] = (index[g.q], cells)
        return circ

    def node_outputs(self, nd: tuple) -> tuple:
        if nd[0] == "g":
            return (nd[1],)
        return (nd[1],) if nd[2] < 0 else (nd[1], nd[2])

    def node_reads(self, nd: tuple) -> tuple:
        """Pin ids a node reads within one settling (a flip-flop's data pin is read before the step)."""
        if nd[0] == "g":
            return nd[2]
        if nd[0] == "f":
            return tuple(p for p in (nd[4], nd[5], nd[6]) if p >= 0)
        return (nd[3], nd[4])

    def _order(self) -> None:
        driver: dict = {}
        for k, nd in enumerate(self.nodes):
            for net in self.node_outputs(nd):
                if net in driver or net in self.inputs or net < 2:
                    raise InternalError(f"net {self.nets[net]} has two drivers in the build")
                driver[net] = k
        self.driver = driver
        g = nx.DiGraph()
        g.add_nodes_from(range(len(self.nodes)))
        for k, nd in enumerate(self.nodes):
            for p in self.node_reads(nd):
                src = driver.get(self.pin_net[p])
                if src is not None:
                    g.add_edge(src, k)
        cond = nx.condensation(g)
        blocks = []
        loops = []
        for c in nx.topological_sort(cond):
            members = sorted(cond.nodes[c]["members"])
            is_loop = len(members) > 1 or g.has_edge(members[0], members[0])
            blocks.append((members, is_loop))
            if is_loop:
                loops += [net for k in members for net in self.node_outputs(self.nodes[k])]
        self.blocks = blocks
        self.loops = loops


class GateMachine:
    """``width`` machines of one :class:`GateCircuit`, each with its own inputs and faults.

    ``pin_faults`` and ``net_faults`` map a pin id or a net id to ``(s0,
    s1)``: the machines in which that pin (or net) is forced to 0 and to 1.
    """

    def __init__(self, circ: GateCircuit, width: int, pin_faults: dict | None = None,
                 net_faults: dict | None = None):
        self.c = circ
        self.width = width
        self.M = (1 << width) - 1
        self.pin_faults = dict(pin_faults or {})
        self.net_faults = dict(net_faults or {})
        #: a net that is always unknown (what a pin reads while a builder moves its wire)
        self.X = len(circ.nets)
        self._compile()
        n = len(circ.nets) + 1
        self.H = [0] * n
        self.L = [0] * n
        nf = len(circ.nodes)
        self.S = [(0, 0)] * nf        # the bit of a flip-flop or latch node
        self.clk0 = [(0, 0)] * nf     # a flip-flop's clock pin after the last step
        self.d0 = [(0, 0)] * nf       # a flip-flop's data pin after the last step
        self._next: dict = {}
        self.inputs = [0] * len(circ.inputs)

    # -- compiling the nodes with their faults -------------------------------------------------------
    def _compile(self, extra: dict | None = None) -> None:
        """Resolve every pin read with its fault; ``extra`` holds pins forced by hand (value 0, 1, or
        ``None`` for "changing": read as unknown)."""
        pf = dict(self.pin_faults)
        c = self.c
        reads = [(c.pin_net[p], pf.get(p)) for p in range(len(c.pins))]
        M = self.M
        for p, v in (extra or {}).items():   # a hand-set force overrides a fault on the same pin
            reads[p] = (self.X, None) if v is None else (c.pin_net[p], (0, M) if v else (M, 0))
        self._reads = reads
        code = []
        for nd in c.nodes:
            if nd[0] == "g":
                code.append((0, nd[1], tuple(reads[p] for p in nd[2]), nd[3]))
            elif nd[0] == "f":
                code.append((1,) + nd[1:])
            else:
                code.append((2,) + nd[1:])
        self._code = code

    def _pin(self, p: int) -> tuple:
        net, inj = self._reads[p]
        h, l = self.H[net], self.L[net]
        if inj is not None:
            s0, s1 = inj
            h = (h & ~s0) | s1
            l = (l & ~s1) | s0
        return h, l

    # -- one node ----------------------------------------------------------------------------------
    def _gate(self, nd: tuple) -> tuple:
        """``(out, hi, lo)`` of a gate node from the values now on its pins."""
        H, L, M = self.H, self.L, self.M
        op = nd[3]
        if op[0] == AND:
            h, l = M, 0
            for (net, inj), i in zip(nd[2], op[1]):
                a, b = H[net], L[net]
                if inj is not None:
                    a, b = (a & ~inj[0]) | inj[1], (b & ~inj[1]) | inj[0]
                if i:
                    h &= b
                    l |= a
                else:
                    h &= a
                    l |= b
            if op[2]:
                h, l = l, h
        else:
            ins = []
            for net, inj in nd[2]:
                a, b = H[net], L[net]
                if inj is not None:
                    a, b = (a & ~inj[0]) | inj[1], (b & ~inj[1]) | inj[0]
                ins.append((a, b))
            h, l = evaluate(op, ins, M)
        return ((nd[1], h, l),)

    def _flop(self, k: int, nd: tuple) -> tuple:
        M = self.M
        _, q, qn, _d, clk, pre, clr, rising, pre_low, clr_low = nd
        ch, cl = self._pin(clk)
        ph, pl = self.clk0[k]
        if rising:
            edge, none = pl & ch, ph | cl
        else:
            edge, none = ph & cl, pl | ch
        maybe = M & ~(edge | none)
        dh, dl = self.d0[k]
        sh, sl = self.S[k]
        bh = (edge & dh) | (none & sh) | (maybe & sh & dh)
        bl = (edge & dl) | (none & sl) | (maybe & sl & dl)
        pa = self._active(pre, pre_low)
        ca = self._active(clr, clr_low)
        qh = pa[0] | (ca[1] & bh)
        ql = pa[1] & (ca[0] | bl)
        self._next[k] = (qh & ca[1], ql)
        return (q, qh, ql), (qn, ca[0] | (pa[1] & bl), ca[1] & (pa[0] | bh))

    def _active(self, p: int, low: bool) -> tuple:
        """``(surely active, surely inactive)`` of a preset or clear pin (no pin: never active)."""
        if p < 0:
            return 0, self.M
        h, l = self._pin(p)
        return (l, h) if low else (h, l)

    def _latch(self, k: int, nd: tuple) -> tuple:
        _, q, qn, d, en, high = nd
        eh, el = self._pin(en)
        if not high:
            eh, el = el, eh
        dh, dl = self._pin(d)
        sh, sl = self.S[k]
        qh = (eh & dh) | (el & sh) | (dh & sh)
        ql = (eh & dl) | (el & sl) | (dl & sl)
        self._next[k] = (qh, ql)
        return (q, qh, ql), (qn, ql, qh)

    def _set(self, net: int, h: int, l: int, widen: bool) -> bool:
        """Put a value on ``net`` (after its fault); ``widen`` keeps only what the old value agrees with."""
        if net < 0:
            return False
        inj = self.net_faults.get(net)
        if inj is not None:
            h, l = (h & ~inj[0]) | inj[1], (l & ~inj[1]) | inj[0]
        H, L = self.H, self.L
        if widen:
            h &= H[net]
            l &= L[net]
        if h != H[net] or l != L[net]:
            H[net], L[net] = h, l
            return True
        return False

    def _node(self, k: int) -> tuple:
        nd = self._code[k]
        if nd[0] == 0:
            return self._gate(nd)
        if nd[0] == 1:
            return self._flop(k, nd)
        return self._latch(k, nd)

    def _run(self) -> None:
        """Settle every net: in order outside loops; loops by unit-delay steps (see :meth:`_loop`)."""
        for members, loop in self.c.blocks:
            if loop:
                self._loop(members)
                continue
            for net, h, l in self._node(members[0]):
                self._set(net, h, l, False)

    def _loop(self, members: list) -> None:
        """Settle a loop: every node takes its new value from the old values at once (one gate delay per
        step, all delays alike); bits still moving after :data:`LOOP_STEPS` per node become unknown."""
        for widen in (False, True):
            for _ in range(LOOP_STEPS * len(members) + 8):
                new = [v for k in members for v in self._node(k)]
                changed = False
                for net, h, l in new:
                    changed = self._set(net, h, l, widen) or changed
                if not changed:
                    return
        raise InternalError("a loop of gates did not settle in the fault simulation")

    # -- steps -----------------------------------------------------------------------------------
    def _load_inputs(self, words: list) -> None:
        M = self.M
        for net, w in zip(self.c.inputs, words):
            self._set(net, w & M, ~w & M, False)
        self._set(1, M, 0, False)
        self._set(0, 0, M, False)

    def power_up(self, words: list) -> None:
        """Every net and bit unknown, then the inputs ``words`` applied and everything settled."""
        n = len(self.c.nets) + 1
        self.H, self.L = [0] * n, [0] * n
        nf = len(self.c.nodes)
        self.S, self.clk0, self.d0 = [(0, 0)] * nf, [(0, 0)] * nf, [(0, 0)] * nf
        self.apply(words)

    def apply(self, words: list) -> None:
        """Change the inputs to ``words`` (one int per input, bit ``k`` for machine ``k``) and settle."""
        self._load_inputs(words)
        self._run()
        self._commit()
        self.inputs = list(words)

    def force(self, pins: dict) -> None:
        """Hold pins (pin id -> 0 or 1) at a level while settling, then let go and settle again.

        This is what a builder does by hand to set storage: touch a pin to
        GND or VCC for a moment.
        """
        for held in (pins, {}):
            self._compile(held)
            self.apply(self.inputs)

    def _commit(self) -> None:
        for k in self.c.flops:
            nd = self.c.nodes[k]
            self.S[k] = self._next.get(k, self.S[k])
            self.clk0[k] = self._pin(nd[4])
            self.d0[k] = self._pin(nd[3])
        for k in self.c.latches:
            self.S[k] = self._next.get(k, self.S[k])
        self._next = {}

    # -- reading ---------------------------------------------------------------------------------
    def value(self, net: int) -> tuple:
        return self.H[net], self.L[net]

    def outputs(self) -> list:
        """``(hi, lo)`` of every output port, in the build's order."""
        return [(self.H[n], self.L[n]) for _, n in self.c.outputs]

    def state_words(self) -> list:
        """The words that make a machine's state: loop nets, flip-flop and latch bits, inputs.

        Everything else follows from these by settling (:meth:`load_state_words`).
        """
        out = [w for net in self.c.loops for w in (self.H[net], self.L[net])]
        for k in self.c.flops:
            out += [*self.S[k], *self.clk0[k], *self.d0[k]]
        for k in self.c.latches:
            out += list(self.S[k])
        return out + list(self.inputs)

    def load_state_words(self, words: list) -> None:
        """Put machines into the states of :meth:`state_words` and settle the nets outside loops."""
        i = 0
        for net in self.c.loops:
            self.H[net], self.L[net] = words[i], words[i + 1]
            i += 2
        for k in self.c.flops:
            self.S[k] = (words[i], words[i + 1])
            self.clk0[k] = (words[i + 2], words[i + 3])
            self.d0[k] = (words[i + 4], words[i + 5])
            i += 6
        for k in self.c.latches:
            self.S[k] = (words[i], words[i + 1])
            i += 2
        self.apply(list(words[i:]))
