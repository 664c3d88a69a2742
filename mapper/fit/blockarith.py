"""Finding adders and magnitude comparators inside a gate-level design.

Both are found by what the design's nets compute, not by how the design
draws them, so ripple-carry, carry-lookahead and prefix adders, and
comparators in any gate form, are found alike.

**Adders.**  Every bit of an adder of any architecture has a sum net
``s = a ^ b ^ c`` of its two operand bits and the carry into it, and its
carry out ``MAJ(a, b, c)`` is the next bit's carry in.  The finder looks in
each net's near fan-in for three nets whose exclusive-OR (complemented or
not) is the net's signature, finds the net carrying their majority, and
chains bits whose carry out is the next bit's carry in.  Each chain of full
adders becomes 4-bit adder chips, bottom bit first; a top chip with fewer
than four bits has its spare operand bits tied low, and its sum output just
above the last bit gives the carry out (an adder chip used as a 3-bit adder
with one input pair tied).  A half adder is a full adder whose carry in is
tied low.

A chain whose top carry no net carries is carried on upward where the
design uses the sums of further operand bits with that carry: a
carry-select adder works each upper block out for carry in 0 and for 1 and
chooses by the real carry, so the chosen nets are those sums, and one chain
of adder chips replaces both copies and the choosing.

**Comparators.**  A net that compares two words (``X < Y`` or ``X <= Y``, so
also ``>``, ``>=`` with the words swapped) falls as each bit of ``X`` rises
and rises with each bit of ``Y`` (it is negative unate in ``X`` and positive
unate in ``Y``), and a bit pair counts more the higher it is: with every
higher pair held equal, a pair decides the answer in half the patterns, the
next one down in a quarter.  The finder measures each input's influence by
flipping it in the random patterns (its *sensitivity*), pairs and orders
the bits, and reads ``<`` or ``<=`` from the value with the words equal.
The comparison becomes comparator chips cascaded from the lowest nibble up
(each chip's three outputs into the next one's cascade inputs); relations
of the same two words share the chips.

Every use is proved by SAT before it is kept (:func:`mapper.fit.blockuse.prove_uses`).
"""
from __future__ import annotations

import logging
import random

from ..netlist import Logic
from .blockuse import BlockUse, Signatures, cone, equal_lits, rail_lit

__all__ = ["find_adders", "find_comparators"]

log = logging.getLogger(__name__)

#: fan-in searched for the three nets of a sum bit: levels and nets
_SUM_DEPTH, _SUM_NETS = 4, 20
#: widest comparison looked for (bits of each word)
_MAX_BITS = 24


# -- adders ---------------------------------------------------------------------------------------
def _sum_bits(sigs: Signatures, nets: list) -> list:
    """``(s, leaves)`` for every way a net is the exclusive-OR of three literals of its fan-in (or of
    two and a rail): ``leaves`` are three ``(net, inverted)`` with ``s = l0 ^ l1 ^ l2``.

    Of the ways to read one net, only those whose leaves stand lowest (the
    fewest logic levels added up) are kept: the operand bits themselves
    rather than their exclusive-OR taken inside the adder.  Nets of one
    signature (copies of the same sum) are read once.
    """
    design, sig, mask = sigs.design, sigs.sig, sigs.mask
    level = design.levels()
    out: list = []
    done: set = set()
    for s in nets:
        S = sig[s]
        if S in done or S ^ mask in done:
            continue
        done.add(S)
        near = [n for n in cone(design, s, _SUM_DEPTH, _SUM_NETS) if n in sig and sig[n] not in (S, S ^ mask)]
        where: dict = {}
        for n in near:
            where.setdefault(sig[n], n)
        found: dict = {}
        for i, x in enumerate(near):
            for y in near[i + 1:]:
                z_sig = S ^ sig[x] ^ sig[y]
                for inv, v in ((False, z_sig), (True, z_sig ^ mask)):
                    z = "GND" if v == 0 else where.get(v) if v != mask else None
                    if z is None or z in (x, y):
                        continue
                    key = frozenset((x, y, z))
                    if key in found:
                        continue
                    zl = ("VCC", False) if (z, inv) == ("GND", True) else (z, inv)
                    found[key] = ((x, False), (y, False), zl)
        if not found:
            continue
        cost = {k: sum(level.get(n, 0) for n in k) for k in found}
        low = min(cost.values())
        out.extend((s, leaves) for k, leaves in found.items() if cost[k] == low)
    return out


def _polarities(leaves) -> list:
    """The leaf literals with an even number of them flipped: every way to read ``l0 ^ l1 ^ l2``."""
    out = []
    for flips in ((0, 0, 0), (1, 1, 0), (1, 0, 1), (0, 1, 1)):
        out.append(tuple((n, inv ^ bool(f)) if n not in ("GND", "VCC") or not f else
                         ("VCC" if n == "GND" else "GND", inv) for (n, inv), f in zip(leaves, flips)))
    return out


def _full_adders(sigs: Signatures, sums: list) -> list:
    """Full-adder bits: ``(s, leaves, carry out literal or None)`` for each reading of each sum.

    A net that is some bit's carry out is no sum of its own (the carry
    ``g | p & c`` of a ripple adder is also the exclusive-OR of its two
    terms, which never are 1 together).
    """
    mask = sigs.mask
    bits = []
    for s, leaves in sums:
        for lits in _polarities(leaves):
            a, b, c = (sigs.of(l) for l in lits)
            maj = (a & b) | (c & (a | b))
            co = sigs.find(maj, avoid=(s,)) if maj not in (0, mask) else None
            bits.append((s, lits, co))
    carries = {sigs.of(co) for _, _, co in bits if co is not None}
    carries |= {v ^ mask for v in carries}
    return [b for b in bits if sigs.sig[b[0]] not in carries]


def _chains(bits: list) -> list:
    """Chains of full adders, bottom first: each bit's carry in is the carry out of the one below.

    Returns lists of ``(s, a, b, cin, cout)``, longest chains first, no sum
    net in two chains.
    """
    at: dict = {}   # literal -> [(bit, position of the literal among its leaves)]
    for i, (_s, lits, _co) in enumerate(bits):
        for j, lit in enumerate(lits):
            at.setdefault(lit, []).append((i, j))
    outs = {co for _, _, co in bits if co is not None}

    def succ(i):
        s, _lits, co = bits[i]
        return [(k, j) for k, j in at.get(co, ()) if bits[k][0] != s] if co is not None else []

    length: dict = {}
    visiting: set = set()
    for root in range(len(bits)):   # longest chain upward from each bit (iterative post-order)
        stack = [(root, False)]
        while stack:
            i, ready = stack.pop()
            if i in length:
                continue
            if ready:
                length[i] = 1 + max((length.get(k, 0) for k, _ in succ(i)), default=0)
                continue
            if i in visiting:
                continue  # a carry that loops back (only in degenerate logic) counts as no step
            visiting.add(i)
            stack.append((i, True))
            stack.extend((k, False) for k, _ in succ(i) if k not in length and k not in visiting)
    used: set = set()
    chains = []
    for i in sorted(range(len(bits)), key=lambda i: -length[i]):
        s, lits, co = bits[i]
        if s in used:
            continue
        # the bottom bit takes its carry in on a rail or a carry out, where it has one
        j = next((j for j, l in enumerate(lits) if l[0] in ("GND", "VCC")),
                 next((j for j, l in enumerate(lits) if l in outs), 2))
        chain: list = []
        cur: tuple | None = (i, j)
        while cur is not None:
            k, j = cur
            s, lits, co = bits[k]
            if s in used:
                break
            used.add(s)
            a, b = (lits[x] for x in range(3) if x != j)
            chain.append((s, a, b, lits[j], co))
            nxt = [(k2, j2) for k2, j2 in succ(k) if bits[k2][0] not in used]
            cur = max(nxt, key=lambda kj: length[kj[0]], default=None)
        chains.append(chain)
    return chains


def find_adders(sigs: Signatures, cells: dict, taken: set, serial) -> list:
    """4-bit adder uses covering the design's chains of full adders (see the module docstring).

    Chains are taken longest first; a chain whose sums all lie in the near
    fan-in of one taken already (the half adders inside a full adder) is
    left to the gates, and so is a lone half adder or a full adder whose
    carry no net carries.
    """
    if "add4" not in cells:
        return []
    design = sigs.design
    nets = [n for n, node in design.nodes.items()
            if isinstance(node, Logic) and node.fanins and n not in taken]
    uses = []
    inside: set = set()
    bits = _full_adders(sigs, _sum_bits(sigs, nets))
    chains = _chains(bits)
    ops = _operand_pairs(sigs, bits)
    for chain in chains:
        chain = _extended(sigs, chain, ops)
        if all(link[0] in inside for link in chain) or any(link[0] in taken for link in chain):
            continue
        if len(chain) == 1 and (chain[0][4] is None or any(x[0] in ("GND", "VCC") for x in chain[0][1:4])):
            continue  # a lone half adder (an exclusive-OR and an AND) is no adder chip's work
        for k in range(0, len(chain), 4):
            uses.append(_adder_use(sigs, chain, k, taken, serial))
        for s, _a, _b, _c, co in chain:
            inside.update(cone(design, s, 3, 40))
            if co is not None:
                inside.update(cone(design, co[0], 3, 40))
    return uses


def _operand_pairs(sigs: Signatures, bits: list) -> list:
    """Every pair of leaves of every full-adder reading (no rails), the lowest standing first: the
    operand bits themselves before nets made from them."""
    level = sigs.design.levels()
    pairs: dict = {}
    for _s, lits, _co in bits:
        for i in range(3):
            for j in range(i + 1, 3):
                x, z = lits[i], lits[j]
                if x[0] not in ("VCC", "GND") and z[0] not in ("VCC", "GND"):
                    pairs.setdefault((x, z), level.get(x[0], 0) + level.get(z[0], 0))
    return sorted(pairs, key=lambda p: pairs[p])


def _extended(sigs: Signatures, chain: list, ops: list) -> list:
    """The chain carried on upward where the design uses the sums of further operand bits with the
    chain's own carry, though no net carries that carry (a carry-select adder works each upper block out
    for carry in 0 and 1 and chooses by the real carry: the chosen nets are those sums).

    ``ops`` are the operand pairs of every adder bit read in the design;
    the next bit is a pair whose sum with the chain's carry is a net.
    """
    mask = sigs.mask
    out = list(chain)
    used = {(a, b) for _s, a, b, _c, _co in out}
    s, a, b, c, co = out[-1]
    x, z = sigs.of(a), sigs.of(b)
    carry = sigs.of(co) if co is not None else (x & z) | (sigs.of(c) & (x | z))
    while carry not in (0, mask):
        nxt = None
        for a2, b2 in ops:
            if (a2, b2) in used:
                continue
            x, z = sigs.of(a2), sigs.of(b2)
            lit = sigs.find(x ^ z ^ carry)
            if lit is not None and not lit[1] and isinstance(sigs.design.nodes.get(lit[0]), Logic) and \
                    all(lit[0] != link[0] for link in out):
                nxt = (lit[0], a2, b2, x, z)
                break
        if nxt is None:
            break
        s2, a2, b2, x, z = nxt
        used.add((a2, b2))
        carry_in = out[-1][4]
        if len(out) % 4 == 0 and carry_in is None:
            break   # a chip's carry in must be a net
        carry = (x & z) | (carry & (x | z))
        co = sigs.find(carry) if carry not in (0, mask) else None
        out.append((s2, a2, b2, carry_in, co))
    return out


def _adder_use(sigs: Signatures, chain: list, k: int, taken: set, serial) -> BlockUse:
    """One 4-bit adder chip for bits ``k`` .. ``k + 3`` of ``chain``."""
    part = chain[k:k + 4]
    ins = {"C0": part[0][3]}
    outs: dict = {}
    for j in range(4):
        if j < len(part):
            s, a, b, _cin, _co = part[j]
            ins[f"A{j + 1}"], ins[f"B{j + 1}"] = a, b
            outs[f"S{j + 1}"] = equal_lits(sigs, (s, False), taken)
        else:
            ins[f"A{j + 1}"] = ins[f"B{j + 1}"] = rail_lit(0)
    top_co = part[-1][4]
    if top_co is not None and top_co[0] not in ("VCC", "GND") and top_co[0] not in taken:
        pin = "C4" if len(part) == 4 else f"S{len(part) + 1}"
        outs[pin] = equal_lits(sigs, top_co, taken)
    taken.update(n for lits in outs.values() for n, _ in lits)
    return BlockUse("add4", ins, {p: v for p, v in outs.items() if v}, family="adder", name=serial(),
                    label=f"adder bits {k}-{k + len(part) - 1} of the chain ending at {chain[-1][0]}")


# -- comparators ----------------------------------------------------------------------------------
def _supports(design, limit: int) -> dict:
    """net -> set of inputs and storage outputs it depends on (structurally); ``None`` past ``limit``."""
    sup: dict = {}
    for n in design.topological_order():
        node = design.nodes[n]
        if isinstance(node, Logic):
            acc: set | None = set()
            for f in node.fanins:
                fs = sup.get(f)
                if fs is None or acc is None:
                    acc = None
                    break
                acc |= fs
            sup[n] = acc if acc is not None and len(acc) <= limit else None
        else:
            sup[n] = {n}
    return sup


def _sensitivity(sigs: Signatures, y: str, var: str, forced: dict) -> tuple:
    """``(rises, falls)``: patterns where ``y`` rises, and falls, as ``var`` goes 0 -> 1 (with ``forced``
    words in place of some inputs)."""
    mask = sigs.mask
    base = sigs.value(y, forced) if forced else sigs.sig[y]
    w = forced.get(var, sigs.sig[var])
    flipped = dict(forced)
    flipped[var] = w ^ mask
    other = sigs.value(y, flipped)
    y1 = (base & w) | (other & ~w & mask)
    y0 = (base & ~w & mask) | (other & w)
    return y1 & ~y0 & mask, y0 & ~y1 & mask


def _word_pair(sigs: Signatures, y: str, support: list):
    """``(X, Y, relation)`` when ``y`` compares two words (bits least significant first; relation ``"<"``
    or ``"<="`` of ``X`` to ``Y``), else ``None``.

    Pairs are found from the top down, a few levels a round: with the pairs
    found so far held equal, the next pair decides ``y`` in about half the
    patterns, the one below in a quarter, and so on; an input that both
    raises and lowers ``y`` somewhere means no comparison.
    """
    mask = sigs.mask
    order: list = []
    forced: dict = {}
    left = list(support)
    while left:
        xs: list = []
        ys: list = []
        infl: dict = {}
        for v in left:
            rises, falls = _sensitivity(sigs, y, v, forced)
            if rises and falls:
                return None
            infl[v] = bin(rises | falls).count("1")
            if infl[v]:
                (ys if rises else xs).append(v)
        xs.sort(key=lambda v: -infl[v])
        ys.sort(key=lambda v: -infl[v])
        took = 0
        # take pairs while their influence is clearly measured: each level halves it, and at a sixteenth
        # of the patterns or more the sampling noise (about its square root) cannot swap two levels
        floor = max(16, (mask.bit_length() or 1) // 16)
        while xs and ys and infl[xs[0]] >= floor and infl[ys[0]] >= floor and took < 6:
            x, yv = xs.pop(0), ys.pop(0)
            order.append((x, yv))
            forced[yv] = forced.get(x, sigs.sig[x])
            left.remove(x)
            left.remove(yv)
            took += 1
        if not took:
            return None
    if len(order) < 2:
        return None
    value = sigs.value(y, forced)
    if value not in (0, mask):
        return None
    order.reverse()
    return [x for x, _ in order], [v for _, v in order], "<" if value == 0 else "<="


#: cascade inputs of the lowest chip (LT_I, EQ_I, GT_I) -> what its outputs then say of A and B
_BOTTOM = {(0, 1, 0): {"<": ("LT_O", False), ">": ("GT_O", False), "==": ("EQ_O", False),
                       ">=": ("LT_O", True), "<=": ("GT_O", True), "!=": ("EQ_O", True)},
           (1, 0, 0): {"<=": ("LT_O", False), ">": ("GT_O", False), ">=": ("GT_O", True), "<": ("LT_O", True)},
           (0, 0, 1): {"<": ("LT_O", False), ">=": ("GT_O", False), "<=": ("LT_O", True), ">": ("GT_O", True)}}


def _cascade(words: tuple, wants: list, serial) -> list:
    """Comparator chips for words ``A``, ``B`` (lists of nets, least significant first), driving each
    ``(net, relation of A to B)`` of ``wants``."""
    a, b = words
    n = len(a)
    # the cascade inputs of the lowest chip: every order relation served, with the fewest outputs taken
    # inverted; an equality is served only where those inputs allow it, else left to the gates
    order = {r for _, r in wants if r not in ("==", "!=")}
    rels = {r for _, r in wants}
    bottom = min(_BOTTOM, key=lambda k: (not order <= set(_BOTTOM[k]),
                                         sum(_BOTTOM[k].get(r, ("", True))[1] for r in order),
                                         not rels <= set(_BOTTOM[k]), k != (0, 1, 0)))
    wants = [(net, r) for net, r in wants if r in _BOTTOM[bottom]]
    gid = serial()
    uses = []
    prev = None
    chips = -(-n // 4)
    for k in range(chips):
        ins = {}
        for j in range(4):
            i = 4 * k + j
            ins[f"A{j}"] = (a[i], False) if i < n else rail_lit(0)
            ins[f"B{j}"] = (b[i], False) if i < n else rail_lit(0)
        if prev is None:
            ins["LT_I"], ins["EQ_I"], ins["GT_I"] = (rail_lit(v) for v in bottom)
        else:
            ins["LT_I"], ins["EQ_I"], ins["GT_I"] = ((f"{prev}.{p}", False) for p in ("LT_O", "EQ_O", "GT_O"))
        name = serial()
        outs: dict = {}
        if k < chips - 1:
            outs = {p: [(f"{name}.{p}", False)] for p in ("LT_O", "EQ_O", "GT_O")}
        else:
            for net, rel in wants:
                pin, inv = _BOTTOM[bottom].get(rel) or _BOTTOM[(0, 1, 0)][rel]
                outs.setdefault(pin, []).append((net, inv))
        uses.append(BlockUse("cmp4", ins, outs, family="comparator", name=name, group=gid,
                             label=f"comparator bits {4 * k}-{min(n, 4 * k + 4) - 1} of {n}"))
        prev = name
    return uses


def _equalities(sigs: Signatures, a: tuple, b: tuple, taken: set, sup: dict) -> list:
    """``(net, "==")`` for design nets that say the words ``a`` and ``b`` are equal, ``(net, "!=")`` for
    nets that say they differ: the same comparator chips drive them from their equal output.

    Two random words are seldom equal, so the design is simulated again with
    ``b`` made a copy of ``a`` in a random half of the patterns (each pattern
    then keeps a chance of one half to compare equal, whatever the width).
    Only nets that read every bit of both words are candidates: the equality
    of the upper bits alone differs from the whole words' in too few
    patterns to tell them apart.
    """
    mask = sigs.mask
    half = random.Random(len(a)).getrandbits(mask.bit_length()) & mask
    changes = {y: (sigs.sig[x] & half) | (sigs.sig[y] & ~half & mask) for x, y in zip(a, b)}
    eq = mask
    for x, y in zip(a, b):
        eq &= ~(sigs.sig[x] ^ changes[y]) & mask
    if eq in (0, mask):
        return []
    values = sigs.resimulate(changes)
    out = []
    bits = set(a) | set(b)
    for net, node in sigs.design.nodes.items():
        if net in taken or not isinstance(node, Logic) or values.get(net) not in (eq, eq ^ mask) \
                or sup.get(net) != bits:
            continue
        out.append((net, "==" if values[net] == eq else "!="))
    return out


def find_comparators(sigs: Signatures, cells: dict, taken: set, serial) -> list:
    """Comparator chips for the nets that compare two words (see the module docstring)."""
    if "cmp4" not in cells:
        return []
    design = sigs.design
    sup = _supports(design, 2 * _MAX_BITS)
    cands = [n for n, node in design.nodes.items() if isinstance(node, Logic) and n not in taken
             and sup.get(n) is not None and len(sup[n]) >= 4 and len(sup[n]) % 2 == 0]
    # the widest first; a net inside a comparison already found is no candidate
    cands.sort(key=lambda n: -len(sup[n]))
    pairs: dict = {}   # (A, B) -> [(net, relation)]
    inside: set = set()
    for y in cands:
        if y in inside:
            continue
        ones = bin(sigs.sig[y]).count("1") / (sigs.mask.bit_length() or 1)
        if not 0.2 <= ones <= 0.8:
            continue  # two random words compare either way about half the time
        found = _word_pair(sigs, y, sorted(sup[y]))
        if found is None:
            continue
        xs, ys, rel = found
        key, flip = ((tuple(xs), tuple(ys)), False) if tuple(xs) < tuple(ys) else ((tuple(ys), tuple(xs)), True)
        if flip:
            rel = {"<": ">", "<=": ">="}[rel]
        pairs.setdefault(key, []).append((y, rel))
        inside.update(n for n in cone(design, y, 64, 4 * len(sup[y]) ** 2) if isinstance(design.nodes.get(n), Logic))
        log.debug("comparison %s: %s %s %s", y, xs, rel, ys)
    uses = []
    for (a, b), wants in pairs.items():
        wants.extend(_equalities(sigs, a, b, taken | {net for net, _ in wants}, sup))
        chips = _cascade((list(a), list(b)), wants, serial)
        uses.extend(chips)
        taken.update(net for u in chips for lits in u.outputs.values() for net, _ in lits)
    return uses
