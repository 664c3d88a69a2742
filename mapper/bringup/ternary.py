"""Three-valued (0, 1, unknown) bit-parallel evaluation of cell functions.

A value is a pair of integers ``(hi, lo)``: bit ``k`` of ``hi`` is set when
the net is surely 1 in machine ``k``, bit ``k`` of ``lo`` when it is surely
0, and neither when it is unknown (a floating net, a storage element that
powered up unset, a race).  Both never hold at once.

A function is evaluated exactly in three values when it is written as the
sum of all its prime implicants (for the ON-set and for the OFF-set): the
output is surely 1 exactly when some prime of the ON-set has every literal
surely true, and surely 0 likewise for the OFF-set (the Blake canonical form;
Eichelberger, IBM J. R&D 9(2), 1965, uses the same reading for hazards).
Common gates get shorter forms of the same result: AND/OR/NAND/NOR with any
inversions, XOR/XNOR, buffers and inverters.  Functions of more than
:data:`PRIME_INPUTS` inputs use an irredundant cover instead, which is sound
(a known output is right) but may say "unknown" where a prime would know.
"""
from __future__ import annotations

from functools import cache

from ..logic.function import Function, isop, var_mask

__all__ = ["Op", "classify", "evaluate", "primes", "PRIME_INPUTS", "lub"]

#: widest function whose prime implicants are enumerated (3**8 cubes)
PRIME_INPUTS = 8

#: operation kinds
CONST, COPY, NOT, AND, XOR, SOP = range(6)

Op = tuple


def _support(n: int, t: int, full: int) -> list:
    return [j for j in range(n) if ((t & var_mask(n, j)) >> (1 << j)) != (t & ~var_mask(n, j) & full)]


def primes(n: int, t: int) -> list:
    """Every prime implicant of the ON-set ``t`` as ``(ones, zeros)`` input-index tuples."""
    full = (1 << (1 << n)) - 1
    implicants = []
    # a cube as (care mask, value bits); its minterm set is the AND of its literals' tables
    for code in range(3 ** n):
        care = vals = 0
        c = code
        m = full
        for j in range(n):
            c, digit = divmod(c, 3)
            if digit == 2:
                continue
            care |= 1 << j
            if digit == 1:
                vals |= 1 << j
                m &= var_mask(n, j)
            else:
                m &= ~var_mask(n, j) & full
        if m and m & ~t == 0:
            implicants.append((care, vals))
    primes = []
    for care, vals in implicants:
        # prime: no implicant with fewer literals contains it
        if not any(c2 != care and c2 & care == c2 and vals & c2 == v2 for c2, v2 in implicants):
            primes.append((tuple(j for j in range(n) if care >> j & 1 and vals >> j & 1),
                           tuple(j for j in range(n) if care >> j & 1 and not vals >> j & 1)))
    return primes


def _cover_cubes(cubes) -> list:
    return [(tuple(j for j, ch in enumerate(c) if ch == "1"), tuple(j for j, ch in enumerate(c) if ch == "0"))
            for c in cubes]


@cache
def classify(func: Function) -> Op:
    """The three-valued operation of ``func`` (see the module docstring).

    Returns ``(CONST, value)``, ``(COPY, j)``, ``(NOT, j)``, ``(AND, inversions, out_inv)`` (the value is
    ``out_inv XOR AND_j (x_j XOR inv_j)``), ``(XOR, out_inv)`` or ``(SOP, on_cubes, off_cubes)`` with
    cubes as ``(inputs that must be 1, inputs that must be 0)``.
    """
    n = func.n
    const = func.constant_value()
    if const is not None:
        return (CONST, const)
    if n > 16:
        cubes, phase = func.cover()
        # only the given phase is known as a cover; the other phase is left unknown-safe: the
        # output is surely the given phase where a cube holds, and never claimed otherwise
        cc = _cover_cubes(cubes)
        return (SOP, cc, []) if phase else (SOP, [], cc)
    t = func.table()
    full = (1 << (1 << n)) - 1
    sup = _support(n, t, full)
    if len(sup) == 1:
        j = sup[0]
        return (COPY, j) if t & var_mask(n, j) else (NOT, j)
    if len(sup) == n:
        for out_inv, tt in ((0, t), (1, ~t & full)):
            if tt and tt & (tt - 1) == 0:
                m = tt.bit_length() - 1
                return (AND, tuple(0 if m >> j & 1 else 1 for j in range(n)), out_inv)
        parity = 0
        for j in range(n):
            parity ^= var_mask(n, j)
        if t == parity:
            return (XOR, 0)
        if t == ~parity & full:
            return (XOR, 1)
    if n <= PRIME_INPUTS:
        return (SOP, primes(n, t), primes(n, ~t & full))
    on, _ = isop(t, t, n)
    off, _ = isop(~t & full, ~t & full, n)
    return (SOP, _cover_cubes(on), _cover_cubes(off))


def evaluate(op: Op, ins: list, mask: int) -> tuple:
    """``(hi, lo)`` of ``op`` over input values ``ins`` (each ``(hi, lo)``) in the machines of ``mask``."""
    kind = op[0]
    if kind == AND:
        inv, out_inv = op[1], op[2]
        h, l = mask, 0
        for (a, b), i in zip(ins, inv):
            if i:
                h &= b
                l |= a
            else:
                h &= a
                l |= b
        return (l, h) if out_inv else (h, l)
    if kind == NOT:
        h, l = ins[op[1]]
        return l, h
    if kind == COPY:
        return ins[op[1]]
    if kind == XOR:
        known, val = mask, op[1] * mask
        for a, b in ins:
            known &= a | b
            val ^= a
        return val & known, ~val & known & mask
    if kind == CONST:
        return (mask, 0) if op[1] else (0, mask)
    hi = lo = 0
    for ones, zeros in op[1]:
        c = mask
        for j in ones:
            c &= ins[j][0]
        for j in zeros:
            c &= ins[j][1]
        hi |= c
    for ones, zeros in op[2]:
        c = mask
        for j in ones:
            c &= ins[j][0]
        for j in zeros:
            c &= ins[j][1]
        lo |= c
    return hi, lo


def lub(a: tuple, b: tuple) -> tuple:
    """The least upper bound of two values: known only where both agree."""
    return a[0] & b[0], a[1] & b[1]
