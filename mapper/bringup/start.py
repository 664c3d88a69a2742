"""The start of every sequence: a state of the build the builder can bring it to.

Relay builds power up with every relay released, which is the start the
build is made for (storage that must start at 1 is built holding its
complement): the builder switches the supply off, every input to 0, and
the supply on again.

Chips and loops of gates power up at unknown values.  In order, the start
is found by:

1. a *synchronizing* prefix: a short walk of input changes after which the
   good build's every flip-flop, latch and loop of gates is known whatever
   it powered up as (found by simulating many random walks at once from the
   all-unknown state, three-valued);
2. moving the wires of tied preset and clear pins of flip-flop chips to
   their active level for a moment (a builder can do that safely: the pin
   is on a rail, not on a driven net), to each flip-flop's starting value;
   then a prefix again for what is still unknown.

Storage that neither brings to a known value (a counter built of gates with
no reset) is reported: the faults that need its value cannot be checked
from a known start, and the report says to add a reset.
"""
from __future__ import annotations

import random
from dataclasses import dataclass, field

from .engine import Engine

__all__ = ["Start", "find_start", "clock_inputs", "PREFIX_WALKS"]

#: random walks tried at once for a synchronizing prefix
PREFIX_WALKS = 256


@dataclass
class Start:
    """How every sequence starts: ``actions`` (as :attr:`Engine.start_actions`) in plain words too."""

    actions: list = field(default_factory=list)
    words: list = field(default_factory=list)
    #: storage (net names) still unknown after the start
    unknown: list = field(default_factory=list)
    #: the input vector at the start
    vector: tuple = ()


def clock_inputs(engine: Engine) -> list:
    """Indices of inputs that clock or enable storage (changed more often in random walks)."""
    b = engine.b
    nets: set = set()
    if b.is_relay:
        nets = {s.control for s in b.sequencers}
    else:
        for c in b.cells:
            cd = b.cell_def(c)
            for pin, role in cd.roles.items():
                if role in ("clock", "enable"):
                    nets.add(c.pins.get(pin))
        nets |= {g.control for g in b.storage_groups.values()}
    return [i for i, name in enumerate(engine.inputs) if name in nets]


def _unknown(engine: Engine, m, bit: int = 0) -> list:
    """Storage (names) of machine ``bit`` whose value is unknown: flip-flops, latches, loop nets."""
    c = engine.circ
    out = []
    for k in c.flops + c.latches:  # type: ignore[union-attr]
        h, l = m.S[k]
        if not (h | l) >> bit & 1:
            out.append(c.nets[c.nodes[k][1]])  # type: ignore[union-attr]
    for net in c.loops:  # type: ignore[union-attr]
        if not (m.H[net] | m.L[net]) >> bit & 1:
            out.append(c.nets[net])
    return out


def _prefix(engine: Engine, actions: list, rng: random.Random, length: int) -> list | None:
    """The shortest random walk (of :data:`PREFIX_WALKS`) after which nothing is unknown, or ``None``."""
    n = len(engine.inputs)
    W = PREFIX_WALKS
    m = engine.machine(W)
    engine.start_actions = actions
    engine.start(m)
    full = (1 << W) - 1
    vec = [0] * n
    last = next((a[1] for a in reversed(actions) if a[0] == "set"), None)
    if last is not None:
        vec = list(last)
    walks: list = [[] for _ in range(W)]
    words = [full if v else 0 for v in vec]
    clocks = clock_inputs(engine)
    for _ in range(length):
        for w in range(W):
            i = rng.choice(clocks) if clocks and rng.random() < 0.5 else rng.randrange(n)
            words[i] ^= 1 << w
            walks[w].append(tuple(words[j] >> w & 1 for j in range(n)))
        m.apply(list(words))
        known = full
        c = engine.circ
        for k in c.flops + c.latches:  # type: ignore[union-attr]
            h, l = m.S[k]
            known &= h | l
        for net in c.loops:  # type: ignore[union-attr]
            known &= m.H[net] | m.L[net]
        if known:
            w = (known & -known).bit_length() - 1
            return walks[w]
    return None


def find_start(engine: Engine, seed: int = 0) -> Start:
    """The start of ``engine``'s build (see the module docstring); also sets ``engine.start_actions``."""
    n = len(engine.inputs)
    if engine.relay or not engine.sequential:
        engine.start_actions = []
        return Start([], ["switch the supply off, set every input to 0, switch the supply on"]
                     if engine.relay else [], [], (0,) * n)
    rng = random.Random(seed)
    c = engine.circ
    length = min(64, 4 * (len(c.flops) + len(c.latches) + len(c.groups)) + 8)  # type: ignore[union-attr]
    words = ["switch the supply on with every input at 0"]
    prefix = _prefix(engine, [], rng, length)
    if prefix is not None:
        actions = [("set", v) for v in prefix]
        engine.start_actions = actions
        words.append(f"apply the {len(prefix)} start settings (they bring every storage element to a known value, "
                     "whatever it powered up as)")
        return Start(actions, words, [], prefix[-1] if prefix else (0,) * n)
    actions = []
    force = _hand_set(engine)
    if force:
        actions.append(("force", force))
        pins = c.pins  # type: ignore[union-attr]
        for p, v in sorted(force.items()):
            pr = pins[p]
            words.append(f"move the wire on {pr.ref} pin {pr.number} ({pr.name}) from {pr.net} to "
                         f"{'VCC' if v else 'GND'} for a moment, then back to {pr.net}")
    prefix = _prefix(engine, actions, rng, length)
    if prefix:
        actions += [("set", v) for v in prefix]
        words.append(f"apply the {len(prefix)} start settings")
    engine.start_actions = actions
    m = engine.machine(1)
    engine.start(m)
    unknown = _unknown(engine, m)
    vec = next((a[1] for a in reversed(actions) if a[0] == "set"), (0,) * n)
    return Start(actions, words, unknown, tuple(vec))


def _hand_set(engine: Engine) -> dict:
    """Pin id -> level: the tied preset or clear pin of each flip-flop chip, to its starting value."""
    b = engine.b
    c = engine.circ
    init = {c.index[cell.pins[b.cell_def(cell).output]]: cell.init for cell in b.cells  # type: ignore[union-attr]
            if b.cell_def(cell).storage is not None}
    out = {}
    for k in c.flops:  # type: ignore[union-attr]
        nd = c.nodes[k]  # type: ignore[union-attr]
        q, pre, clr, pre_low, clr_low = nd[1], nd[5], nd[6], nd[8], nd[9]
        start = 1 if init.get(q) == 1 else 0
        p, low = (pre, pre_low) if start else (clr, clr_low)
        if p >= 0 and c.pins[p].net in ("VCC", "GND"):  # type: ignore[union-attr]
            out[p] = 0 if low else 1
    return out
