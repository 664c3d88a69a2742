"""Totally symmetric functions, and counters of ones made of full and half adders.

A function is *totally symmetric* when its value depends only on how many
of its inputs are 1 (the number of ones of MCNC's rd53/rd73/rd84, majority,
parity, "at least k"); here an input may be taken complemented first
(symmetry up to input polarity).  Such a function is built as a counter of
ones -- a tree of full adders (three bits of one weight in, a sum of that
weight and a carry of twice it out) and half adders, columns of equal
weight reduced until one bit is left in each, the carry-save reduction of
C. S. Wallace, "A suggestion for a fast multiplier", IEEE Trans.
Electronic Computers EC-13, 1964 -- followed by a small function of the
count's bits, where counts larger than the number of inputs are don't-cares.
A full adder is built in the shape of the 9-NAND full adder (its
exclusive-ORs around the AND that the carry needs too; common practice), so
that a mapper finds it.

Examples
--------
>>> from mapper.logic.function import var_mask
>>> n = 3; full = 255
>>> maj = (var_mask(3, 0) & var_mask(3, 1)) | (var_mask(3, 2) & (var_mask(3, 0) | var_mask(3, 1)))
>>> pol, values = symmetry(maj, ~maj & full, [0, 1, 2], n)
>>> pol, values
((0, 0, 0), (0, 0, 1, 1))
"""
from __future__ import annotations

from functools import lru_cache

from ..function import var_mask

__all__ = ["symmetry", "weight_masks", "local_table", "Counter"]


@lru_cache(maxsize=32)
def weight_masks(k: int) -> tuple:
    """For ``k`` inputs, the table of the minterms of each weight 0..k."""
    masks = [0] * (k + 1)
    for m in range(1 << k):
        masks[bin(m).count("1")] |= 1 << m
    return tuple(masks)


def local_table(t: int, supp, n: int) -> int:
    """Global table ``t`` over ``n`` inputs (independent of the inputs outside
    ``supp``) as a table over the inputs ``supp`` (``supp[i]`` is local input ``i``)."""
    if list(supp) == list(range(n)):
        return t
    out = 0
    k = len(supp)
    for m in range(1 << k):
        g = 0
        for i, j in enumerate(supp):
            if (m >> i) & 1:
                g |= 1 << j
        if (t >> g) & 1:
            out |= 1 << m
    return out


def _flip(t: int, k: int, pol) -> int:
    full = (1 << (1 << k)) - 1
    for j, p in enumerate(pol):
        if p:
            m = var_mask(k, j)
            s = 1 << j
            t = ((t & m) >> s) | ((t & ~m & full) << s)
    return t


def _values(on: int, off: int, k: int):
    """Per weight: 1, 0 or ``None`` (no care minterm) -- or ``None`` overall
    when one weight holds minterms of both values."""
    out = []
    for w in weight_masks(k):
        a, b = on & w, off & w
        if a and b:
            return None
        out.append(1 if a else 0 if b else None)
    return tuple(out)


def _polarity(on: int, k: int) -> tuple:
    """Input polarities under which ``on`` may be symmetric, judged from
    pairs with input 0: symmetric in (x0, xj) when the cofactors at 10 and
    01 agree, in (x0, ~xj) when those at 00 and 11 do."""
    pol = [0] * k
    for j in range(1, k):
        if _cof(on, k, j, 1, 0) != _cof(on, k, j, 0, 1) and _cof(on, k, j, 0, 0) == _cof(on, k, j, 1, 1):
            pol[j] = 1
    return tuple(pol)


def _cof(on: int, k: int, j: int, a: int, b: int) -> int:
    """The block of ``on`` where input 0 is ``a`` and input ``j`` is ``b``,
    moved to the place of the block at 00 so that the four compare."""
    full = (1 << (1 << k)) - 1
    m0, mj = var_mask(k, 0), var_mask(k, j)
    sel = (m0 if a else ~m0 & full) & (mj if b else ~mj & full)
    return (on & sel) >> ((1 if a else 0) + ((1 << j) if b else 0))


def symmetry(on: int, off: int, supp, n: int):
    """``(polarity, values)`` when the function (ON-set ``on``, OFF-set
    ``off``, both global tables over ``n`` inputs independent of those
    outside ``supp``) is totally symmetric in ``supp`` with input ``i``
    complemented where ``polarity[i]`` is 1; ``values[w]`` is its value at
    ``w`` ones (``None``: don't care).  ``None`` when it is not."""
    k = len(supp)
    if k < 2 or k > 16:
        return None
    lon, loff = local_table(on, supp, n), local_table(off, supp, n)
    tries = [tuple([0] * k), _polarity(lon, k), _polarity(~loff & ((1 << (1 << k)) - 1), k)]
    for pol in dict.fromkeys(tries):
        vals = _values(_flip(lon, k, pol), _flip(loff, k, pol), k)
        if vals is not None:
            return pol, vals
    return None


class Counter:
    """Counters of ones built into a graph (one per set of literals, shared)."""

    def __init__(self, aig):
        self.aig = aig
        self.made: dict = {}

    def has(self, lits) -> bool:
        """Whether the counter of ``lits`` is built already."""
        return tuple(sorted(lits)) in self.made

    def bits(self, lits) -> list:
        """Literals of the binary count of ones among ``lits`` (least significant first)."""
        key = tuple(sorted(lits))
        got = self.made.get(key)
        if got is not None:
            return got
        g = self.aig
        cols: list = [list(key)]
        w = 0
        while w < len(cols):
            col = cols[w]
            while len(col) >= 2:
                if len(cols) == w + 1:
                    cols.append([])
                if len(col) >= 3:
                    a, b, c = col.pop(0), col.pop(0), col.pop(0)
                    s, carry = self._full(a, b, c)
                else:
                    a, b = col.pop(0), col.pop(0)
                    s, carry = self._half(a, b)
                col.append(s)
                cols[w + 1].append(carry)
            w += 1
        out = [c[0] if c else 0 for c in cols]
        del g
        self.made[key] = out
        return out

    def _half(self, a: int, b: int) -> tuple[int, int]:
        g = self.aig
        ab = g.add_and(a, b)
        return g.add_or(g.add_and(a, ab ^ 1), g.add_and(b, ab ^ 1)), ab

    def _full(self, a: int, b: int, c: int) -> tuple[int, int]:
        g = self.aig
        x, ab = self._half(a, b)
        s, xc = self._half(x, c)
        return s, g.add_or(ab, xc)
