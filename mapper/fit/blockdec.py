"""Finding 3-to-8 and 2-to-4 decoders inside a gate-level design.

A decoder's outputs are the *minterms* of its select nets -- each output is
the AND of every select, true or complemented, so exactly one is on for each
select value -- ANDed with an enable; the '138 and '139 give them active low
(common practice: the decoder as a minterm generator, e.g. any digital design
textbook's chapter on combinational building blocks).

The finder works on cubes: for each logic net ``y`` (and for its
complement), the nets of its near fan-in that ``y`` implies -- ``y`` held at 0
whenever the net is held at the other value (read from the simulation
signatures, :class:`mapper.fit.blockuse.Signatures`) -- are its literals; when
their AND has ``y``'s signature, ``y`` is that cube.  Literals are named by
one net of each class of equal-or-complementary nets (the one nearest the
inputs), so an inverter's output and its input name the same select, and
literals the others already imply are dropped (a partial product inside a
tree of AND gates).  Cubes that share 3 (or 2) nets, with the rest of their
literals (the enable) the same, are the outputs of one decoder; the largest
groups go first, 3-to-8 before 2-to-4.  Enable literals go to the enable pin
of their polarity where there is one (an inverter otherwise); an output the
design wants active high gets an inverter.  Every proposal is proved by SAT
before it is kept (:func:`mapper.fit.blockuse.prove_uses`), and the part
search keeps the build with decoders only when it has fewer whole parts.
"""
from __future__ import annotations

from itertools import combinations

from ..netlist import Logic, Storage
from .blockuse import BlockUse, Signatures, cone, equal_lits, rail_lit

__all__ = ["find_decoders"]

#: near fan-in searched for literals: levels and nets
_DEPTH, _NETS = 4, 16
#: the widest cube looked at (selects and enables)
_WIDEST = 6
#: outputs a decoder must take to be proposed: a section with fewer is better left to gates
_LEAST = {"dec3": 4, "dec2": 3}


class _Cubes:
    """Cubes of the design's nets by signature (see the module docstring)."""

    def __init__(self, sigs: Signatures):
        self.sigs = sigs
        design = sigs.design
        order = design.topological_order()
        self.rank = {n: -1 for n in list(design.inputs) + list(design.storage())}
        for k, n in enumerate(order):
            self.rank.setdefault(n, k)

    def canon(self, net: str) -> tuple:
        """``(net, inverted)`` naming the class of nets equal to ``net`` or its complement: the one
        nearest the inputs."""
        sigs = self.sigs
        v = sigs.sig[net]
        cands = [(n, False) for n in sigs.nets_with(v)] + [(n, True) for n in sigs.nets_with(v ^ sigs.mask)]
        cands = [c for c in cands if c[0] in self.rank] or [(net, False)]
        return min(cands, key=lambda c: (self.rank[c[0]], c[0]))

    def _and(self, lits: dict) -> int:
        """The signature of the AND of the literals ``{net: value}``."""
        sigs = self.sigs
        v = sigs.mask
        for net, pol in lits.items():
            v &= sigs.sig[net] if pol else sigs.sig[net] ^ sigs.mask
        return v

    def cube(self, y: str, inv: bool) -> dict | None:
        """``{net: value}`` with ``y`` (complemented when ``inv``) the AND of those literals, irredundant,
        or ``None`` when it is no cube of 2 to :data:`_WIDEST` literals of its near fan-in."""
        sigs = self.sigs
        mask = sigs.mask
        target = sigs.sig[y] ^ (mask if inv else 0)
        # a cube of two or more literals is on in about a quarter of the patterns at most (a third
        # allowed for the spread of random patterns): nets on more often are no decoder output
        if target == 0 or 3 * bin(target).count("1") > mask.bit_length():
            return None
        off = mask if inv else 0
        lits: dict = {}
        for n in cone(sigs.design, y, _DEPTH, _NETS):
            if n not in sigs.sig or n in ("VCC", "GND"):
                continue
            for pol in (1, 0):
                if sigs.value(y, {n: 0 if pol else mask}) == off:
                    c, cinv = self.canon(n)
                    want = pol ^ int(cinv)
                    if lits.get(c, want) != want:
                        return None
                    lits[c] = want
                    break
        if self._and(lits) != target:
            return None
        for n in sorted(lits, key=lambda x: -self.rank.get(x, 0)):   # deepest first
            rest = {k: v for k, v in lits.items() if k != n}
            if rest and self._and(rest) == target:
                lits = rest
        return lits if 2 <= len(lits) <= _WIDEST else None


def _groups(cubes: dict, width: int) -> dict:
    """(selects, enable literals) -> {minterm index: [(net, inverted)]} for every ``width`` nets of each cube."""
    out: dict = {}
    for (y, inv), lits in cubes.items():
        if len(lits) < width:
            continue
        for sel in combinations(sorted(lits), width):
            en = tuple(sorted((n, v) for n, v in lits.items() if n not in sel))
            k = sum(lits[s] << j for j, s in enumerate(sel))
            out.setdefault((sel, en), {}).setdefault(k, []).append((y, inv))
    return out


def _enables(cell: str, en: tuple) -> dict | None:
    """Enable pins fed from the enable literals (``{net: value}`` wanted on): a literal that wants its
    net low goes to an active-low pin, one that wants it high to an active-high pin, else through an
    inverter; pins left over held enabled.  ``None`` when there are more literals than pins."""
    if cell == "dec2":
        if len(en) > 1:
            return None
        if not en:
            return {"E_N": rail_lit(0)}
        net, v = en[0]
        return {"E_N": (net, bool(v))}
    if len(en) > 3:
        return None
    lows = [(n, v) for n, v in en if v == 0]
    highs = [(n, v) for n, v in en if v == 1]
    pins: dict = {}
    if highs:
        pins["E3"] = (highs.pop(0)[0], False)
    elif len(lows) == 3:
        pins["E3"] = (lows.pop()[0], True)
    for pin in ("E1_N", "E2_N"):
        if lows:
            pins[pin] = (lows.pop(0)[0], False)
        elif highs:
            pins[pin] = (highs.pop(0)[0], True)
    pins.setdefault("E3", rail_lit(1))
    pins.setdefault("E1_N", rail_lit(0))
    pins.setdefault("E2_N", rail_lit(0))
    return pins


def _inverters(pins: dict) -> int:
    """Enable pins fed through an inverter."""
    return sum(1 for _, inv in pins.values() if inv)


def _proposals(cubes: dict, cell: str, width: int, used: set, spare: bool) -> list:
    """``(outputs taken, selects, enable literals, enable pins, {minterm: literals})`` of each group whose
    outputs are still free; with ``spare`` (a smaller decoder is on the target) a 3-to-8 group whose
    outputs all share one select value is left to the smaller decoder."""
    out = []
    for (sel, en), terms in _groups(cubes, width).items():
        free = {k: [lit for lit in lits if lit[0] not in used] for k, lits in terms.items()}
        free = {k: lits for k, lits in free.items() if lits}
        if len(free) < _LEAST[cell]:
            continue
        if spare and any(len({(k >> j) & 1 for k in free}) == 1 for j in range(width)):
            continue   # a select that never changes is an enable: half a '139 takes these outputs
        pins = _enables(cell, en)
        if pins is None:
            continue
        out.append((len(free), sel, en, pins, free))
    return out


def _use(sigs: Signatures, cell: str, sel: tuple, pins: dict, free: dict, taken: set, serial) -> BlockUse:
    ins = {f"A{j}": (s, False) for j, s in enumerate(sel)}
    ins.update(pins)
    outs = {}
    for k, lits in sorted(free.items()):
        # the pin is low when the minterm is on: a design net equal to the cube is the pin's complement
        y, inv = lits[0]
        outs[f"Y{k}_N"] = equal_lits(sigs, (y, not inv), taken)
        taken.update(net for net, _ in outs[f"Y{k}_N"])
    size = {"dec3": "3-to-8", "dec2": "2-to-4"}[cell]
    return BlockUse(cell, ins, outs, family="decoder", name=serial(),
                    label=f"{size} decoder of {', '.join(sel)} ({len(outs)} outputs)")


def _read(sigs: Signatures, net: str, taken: set) -> bool:
    """Whether ``net`` is an output of the design or reaches one (or a storage element) through nets
    not in ``taken`` (walked forward, iteratively)."""
    design = sigs.design
    fanout = sigs.fanout()
    outs = set(design.outputs)
    stack, seen = [net], {net}
    while stack:
        n = stack.pop()
        if n in outs or isinstance(design.nodes.get(n), Storage):
            return True
        for f in fanout.get(n, ()):
            if f not in taken and f not in seen:
                seen.add(f)
                stack.append(f)
    return False


def find_decoders(sigs: Signatures, cells: dict, taken: set, serial) -> list:
    """Decoder uses for groups of the design's nets that are minterms of the same selects (see the
    module docstring)."""
    wanted = [(c, w) for c, w in (("dec3", 3), ("dec2", 2)) if c in cells]
    if not wanted:
        return []
    design = sigs.design
    finder = _Cubes(sigs)
    cubes: dict = {}
    for y, node in design.nodes.items():
        if not isinstance(node, Logic) or y in taken:
            continue
        for inv in (False, True):
            lits = finder.cube(y, inv)
            if lits is not None:
                cubes[(y, inv)] = lits
                break
    uses: list = []
    for cell, width in wanted:
        while True:
            # nets only the outputs already taken read (a 4-to-16 decoder's predecoders) are left alone
            cubes = {y: lits for y, lits in cubes.items() if _read(sigs, y[0], taken)}
            props = _proposals(cubes, cell, width, taken, cell == "dec3" and "dec2" in cells)
            if not props:
                break
            best = max(props, key=lambda p: (p[0], -_inverters(p[3]), -len(p[2]), p[1]))
            _, sel, _en, pins, free = best
            uses.append(_use(sigs, cell, sel, pins, free, taken, serial))
    return uses
