"""What the block matcher works with: a use of a block, the design's signatures, and the proof of a use.

A :class:`BlockUse` says how one slot of a medium-scale chip (an adder, a
comparator, a counter ...) takes over part of a design: which design net (or
rail) feeds each input pin, which design nets each output pin drives, and
which of the design's storage elements each register inside holds.  Either
side may be complemented (an input fed through an inverter, a design net
that is the complement of a pin); pins may also be joined to pins of other
uses directly (*link* nets: a comparator's cascade outputs into the next
comparator), which need no design net at all.

Candidates are found by simulation signatures (:class:`Signatures`: every
net's values under the same random input patterns and storage states, so
equal functions have equal signatures) and kept only when
:func:`prove_uses` proves them by SAT: the pin's function of the bound inputs
equals the design net for every input and every state (published: random
simulation to propose, SAT to decide, as in SAT sweeping -- Kuehlmann et al.,
IEEE TCAD 2002; Mishchenko et al., ICCAD 2006).
"""
from __future__ import annotations

import logging
import random
from dataclasses import dataclass, field

from pysat.solvers import Solver

from ..catalog.model import CellDef
from ..logic.aig import AIG, from_netlist
from ..logic.cnf import AigCnf
from ..netlist import Logic, Netlist, Storage
from ..simulate import simulate
from ..verify import DEFAULT_SOLVER

__all__ = ["RAILS", "BlockUse", "Signatures", "prove_uses", "cone", "equal_lits", "rail_lit", "inactive",
           "rising_groups"]

log = logging.getLogger(__name__)

RAILS = ("VCC", "GND")
#: random patterns of the signatures
PATTERNS = 1024
#: storage kinds that are one another on the inverted control (only latches are matched so)
MIRROR = {"ah": "al", "al": "ah"}
#: conflicts allowed for one proof of a pin (a few thousand cover every chip-sized function)
PROOF_BUDGET = 20_000


def rail_lit(value: int) -> tuple:
    """The literal of a rail: ``("VCC", False)`` for 1, ``("GND", False)`` for 0."""
    return ("VCC", False) if value else ("GND", False)


def inactive(cd: CellDef, pin: str) -> tuple:
    """The rail that keeps an active-low (or active-high) control input idle."""
    return rail_lit(1 if pin in cd.active_low else 0)


@dataclass
class BlockUse:
    """One slot of a block part taking over part of a design (see the module docstring).

    ``inputs`` maps every input pin to a literal ``(net, inverted)``: a
    design net, a rail, or a link net made by another use.  ``outputs`` maps
    output pins to the literals they drive: ``(design net, inverted)`` says
    the design net is the pin (or its complement); a link net is not in the
    design.  ``state`` maps registers to ``(design storage net, init)``.
    ``part`` is the carrier to use (``None``: the target's first), ``chip``
    groups uses that must share one part (``None``: packed by shared pins).
    """

    cell: str
    inputs: dict
    outputs: dict = field(default_factory=dict)
    state: dict = field(default_factory=dict)
    family: str = ""
    label: str = ""
    name: str = ""
    part: str | None = None
    chip: str | None = None
    group: str | None = None

    def covered(self) -> set:
        """Design nets (and link nets) this use drives: output literals and registers."""
        out = {net for lits in self.outputs.values() for net, _ in lits}
        out.update(net for net, _ in self.state.values())
        return out

    def input_nets(self) -> set:
        """Nets (not rails) feeding its input pins."""
        return {net for net, _ in self.inputs.values() if net not in RAILS}


class Signatures:
    """Every net's values under :data:`PATTERNS` random input patterns and storage states.

    Equal functions of the inputs and storage outputs have equal signatures;
    unequal ones differ with overwhelming likelihood (a difference in one
    input combination of ``2**n`` shows in a pattern with chance ``2**-n``,
    so a candidate is only a candidate until :func:`prove_uses`).
    """

    def __init__(self, design: Netlist, patterns: int = PATTERNS, seed: int = 20):
        self.design = design
        self.mask = (1 << patterns) - 1
        rng = random.Random(seed)
        self.words = {i: rng.getrandbits(patterns) for i in design.inputs}
        self.state = {q: rng.getrandbits(patterns) for q in design.storage()}
        self.sig = simulate(design, self.words, self.mask, self.state)
        self.sig["VCC"], self.sig["GND"] = self.mask, 0
        self._index: dict = {}
        for net, v in self.sig.items():
            if net not in RAILS:
                self._index.setdefault(v, []).append(net)
        self._fanout: dict | None = None
        self._cones: dict = {}

    def of(self, lit: tuple) -> int:
        """Signature of a literal ``(net, inverted)``."""
        v = self.sig[lit[0]]
        return v ^ self.mask if lit[1] else v

    def find(self, value: int, avoid=()) -> tuple | None:
        """A net with signature ``value`` (``(net, False)``) or its complement (``(net, True)``); rails first."""
        if value == 0:
            return ("GND", False)
        if value == self.mask:
            return ("VCC", False)
        for inv, v in ((False, value), (True, value ^ self.mask)):
            for net in self._index.get(v, ()):
                if net not in avoid:
                    return (net, inv)
        return None

    def nets_with(self, value: int) -> list:
        """Every net whose signature is ``value`` (not its complement)."""
        return list(self._index.get(value, ()))

    def fanout(self) -> dict:
        """net -> nets it feeds (storage data and control included)."""
        if self._fanout is None:
            self._fanout = self.design.fanouts()
        return self._fanout

    def resimulate(self, changes: dict) -> dict:
        """Every net's signature with some inputs or storage outputs given other words."""
        words = {k: changes.get(k, v) for k, v in self.words.items()}
        state = {k: changes.get(k, v) for k, v in self.state.items()}
        return simulate(self.design, words, self.mask, state)

    def value(self, net: str, changes: dict) -> int:
        """The signature of ``net`` with some inputs or storage outputs given other words: only its
        fan-in is evaluated again, and only the nodes the changes reach."""
        prog = self._cones.get(net)
        if prog is None:
            prog = self._cones[net] = self._cone_program(net)
        vals = dict(changes)
        mask = self.mask
        for name, node in prog:
            if any(f in vals for f in node.fanins):
                vals[name] = node.func.eval_words([vals.get(f, self.sig[f]) for f in node.fanins], mask)
        return vals.get(net, self.sig[net])

    def _cone_program(self, net: str) -> list:
        """``(name, Logic node)`` of the fan-in of ``net``, fan-ins first (iterative)."""
        nodes = self.design.nodes
        order: list = []
        seen: set = set()
        stack = [(net, False)]
        while stack:
            n, ready = stack.pop()
            node = nodes.get(n)
            if not isinstance(node, Logic):
                continue
            if ready:
                order.append((n, node))
                continue
            if n in seen:
                continue
            seen.add(n)
            stack.append((n, True))
            stack.extend((f, False) for f in node.fanins if f not in seen)
        return order


def rising_groups(sigs: Signatures, taken) -> dict:
    """clock net -> the rising-edge flip-flops on it (design order) not in ``taken``: what the register,
    counter and shift-register finders share out."""
    groups: dict = {}
    for q, st in sigs.design.storage().items():
        if st.kind == "re" and st.control is not None and q not in taken:
            groups.setdefault(st.control, []).append(q)
    return groups


def equal_lits(sigs: Signatures, lit: tuple, taken=()) -> list:
    """``lit`` and every other design net of the same signature (``(net, False)``) or of the
    complement (``(net, True)``), none of them in ``taken``: one pin drives them all."""
    value = sigs.of(lit)
    out = [lit] if lit[0] not in taken else []
    for inv, v in ((False, value), (True, value ^ sigs.mask)):
        for net in sigs.nets_with(v):
            if net != lit[0] and net not in taken and isinstance(sigs.design.nodes.get(net), Logic):
                out.append((net, inv))
    return out


def cone(design: Netlist, net: str, depth: int, limit: int) -> list:
    """Nets in the fan-in of ``net`` up to ``depth`` logic levels (breadth first, at most ``limit``),
    ``net`` itself left out; inputs and storage outputs end the walk."""
    out: list = []
    seen = {net}
    frontier = [net]
    for _ in range(depth):
        nxt = []
        for n in frontier:
            node = design.nodes.get(n)
            if not isinstance(node, Logic):
                continue
            for f in node.fanins:
                if f not in seen:
                    seen.add(f)
                    out.append(f)
                    nxt.append(f)
                    if len(out) >= limit:
                        return out
        frontier = nxt
    return out


# -- the proof ------------------------------------------------------------------------------------
def _expr_lit(g: AIG, expr, env: dict) -> int:
    """The AIG literal of a catalog expression over literals ``env`` (by name)."""
    stack: list = []
    for item in expr.postfix:
        op = item[0]
        if op == "name":
            stack.append(env[item[1]])
        elif op == "const":
            stack.append(1 if item[1] else 0)
        elif op == "not":
            stack.append(stack.pop() ^ 1)
        elif op == "mux":
            e, t, c = stack.pop(), stack.pop(), stack.pop()
            stack.append(g.add_mux(c, t, e))
        else:
            b, a = stack.pop(), stack.pop()
            if op == "and":
                stack.append(g.add_and(a, b))
            elif op == "or":
                stack.append(g.add_or(a, b))
            elif op == "xor":
                stack.append(g.add_xor(a, b))
            else:
                stack.append(g.add_xor(a, b) ^ 1)
    return stack[0]


def _cell_lits(g: AIG, cd: CellDef, ins: dict, regs: dict) -> tuple[dict, dict]:
    """``(output literals, register next-value literals)`` of one cell over input literals ``ins``
    and register literals ``regs``."""
    if cd.block is not None:
        # registers holding no design storage are spare (the far end of a shift register used in part):
        # whatever reads them is left out, and a pin or register that needs one is missing from the answer
        env = dict(ins)
        env.update(regs)
        for name, expr in cd.block.assigns:
            if all(x in env for x in expr.names):
                env[name] = _expr_lit(g, expr, env)
        outs = {o: env[o] for o in cd.outputs if o in env}
        nxt = {r.name: _expr_lit(g, r.next, env) for r in cd.block.registers
               if r.name in regs and all(x in env for x in r.next.names)}
        return outs, nxt
    if cd.storage is not None:  # a flip-flop or latch: its register is its output
        q = regs[cd.output]
        outs = {cd.output: q}
        outs.update({x: q ^ 1 for x in cd.extra_outputs})
        return outs, {cd.output: ins[cd.inputs[0]]}
    f = cd.logic_function()
    cubes, phase = f.cover()
    lit = g.add_cover(cubes, phase, [ins[p] for p in cd.inputs])
    return {cd.output: lit}, {}


def _order(uses: list) -> list:
    """Uses in an order where every link net is made before it is read (a loop of links drops its uses)."""
    made = {net: u for u in uses for lits in u.outputs.values() for net, _ in lits}
    out, done, stack = [], set(), []
    for u in uses:
        stack.append((u, False))
        visiting: set = set()
        while stack:
            x, ready = stack.pop()
            if id(x) in done:
                continue
            if ready:
                done.add(id(x))
                out.append(x)
                continue
            if id(x) in visiting:
                continue
            visiting.add(id(x))
            stack.append((x, True))
            for net, _ in x.inputs.values():
                y = made.get(net)
                if y is not None and y is not x and id(y) not in done:
                    stack.append((y, False))
    return out


class _Prover:
    """One AIG of the design and the uses, and a SAT solver over it."""

    def __init__(self, design: Netlist):
        self.design = design
        self.g, self.lit = from_netlist(design)
        self.solver = Solver(name=DEFAULT_SOLVER)
        self.cnf = AigCnf(self.g, self.solver)

    def close(self) -> None:
        self.solver.delete()

    def equal(self, a: int, b: int) -> bool:
        if a == b:
            return True
        x = self.g.add_xor(a, b)
        if x in (0, 1):
            return x == 0
        self.solver.conf_budget(PROOF_BUDGET)
        got = self.solver.solve_limited(assumptions=[self.cnf.lit(x)])
        return got is False

    def literal(self, lit: tuple, links: dict) -> int | None:
        net, inv = lit
        if net == "VCC":
            return 1
        if net == "GND":
            return 0
        base = self.lit.get(net, links.get(net))
        return None if base is None else base ^ int(inv)


def prove_uses(design: Netlist, uses: list, cells: dict) -> list:
    """The uses proved to do what they claim, in the order given (a use's group falls with it).

    For each use: every output pin's function of the bound inputs equals
    each design net bound to it (complemented where it says so), and every
    register's next value equals its storage element's data, for every
    input and storage state; a register's clock pin must be fed by the
    storage element's own control net, of the same kind (or, for a latch
    open at the other level, by its complement).  Registers of a block that
    hold no storage element are spare: nothing bound may read them.
    """
    storage = design.storage()
    pr = _Prover(design)
    links: dict = {}
    bad_groups: set = set()
    ok: set = set()
    try:
        for u in _order(uses):
            if u.group is not None and u.group in bad_groups:
                continue
            good = _prove_one(pr, u, cells[u.cell], storage, links)
            if good:
                ok.add(id(u))
            else:
                log.debug("block use %s (%s) not proved", u.label, u.cell)
                if u.group is not None:
                    bad_groups.add(u.group)
    finally:
        pr.close()
    return [u for u in uses if id(u) in ok and (u.group is None or u.group not in bad_groups)]


def _prove_one(pr: _Prover, u: BlockUse, cd: CellDef, storage: dict, links: dict) -> bool:
    ins = {}
    for pin in cd.inputs:
        lit = u.inputs.get(pin)
        x = pr.literal(lit, links) if lit is not None else None
        if x is None:
            return False
        ins[pin] = x
    regs = {}
    for reg, (net, _init) in u.state.items():
        st = storage.get(net)
        if not isinstance(st, Storage):
            return False
        regs[reg] = pr.lit[net]
    outs, nxt = _cell_lits(pr.g, cd, ins, regs)
    for reg, (net, _init) in u.state.items():
        st = storage[net]
        clock = _clock_pin(cd, reg)
        kind = cd.block.kind if cd.block is not None else cd.storage
        # a latch open while its enable is low is the chip's latch open while high on the inverted enable
        flip = st.kind != kind and MIRROR.get(kind or "") == st.kind
        if (st.kind != kind and not flip) or st.control is None or u.inputs.get(clock) != (st.control, flip):
            return False
        if reg not in nxt or not pr.equal(nxt[reg], pr.lit[st.d]):
            return False
    for pin, lits in u.outputs.items():
        if pin not in outs:
            return False
        for net, inv in lits:
            if net in pr.lit:
                if not pr.equal(outs[pin] ^ int(inv), pr.lit[net]):
                    return False
            else:
                links[net] = outs[pin] ^ int(inv)
    return True


def _clock_pin(cd: CellDef, reg: str) -> str:
    """The input that clocks register ``reg`` (a block's register, or a storage cell's control)."""
    if cd.block is not None:
        return cd.block.register(reg).clock
    return next((p for p in cd.inputs if cd.roles.get(p) in ("clock", "enable")), cd.inputs[1])
