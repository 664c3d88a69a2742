"""Single-output Boolean functions: truth tables up to 16 inputs, covers beyond.

A truth table is a Python ``int`` of ``2**n`` bits: bit ``m`` is the value of
the function at the input assignment whose bit ``j`` is the value of input
``j`` (input 0 is the least significant).  A cover is a tuple of cubes, each
a string of ``n`` characters from ``"01-"`` (character ``j`` belongs to input
``j``), together with a phase: phase 1 lists the ON-set, phase 0 the OFF-set
(the BLIF convention for single-output covers).

Wide functions (more than :data:`MAX_TABLE_INPUTS` inputs) are never expanded
into a table.

Examples
--------
>>> f = Function.from_cover(2, ["11"], 1)       # AND2
>>> f.table()
8
>>> Function.from_table(2, 0b0110).cover()      # XOR2 as an irredundant SOP
(('10', '01'), 1)
>>> g = Function.from_cover(2, ["11"], 0)       # NAND2 by its OFF-set
>>> g.eval_words([0b1100, 0b1010], 0b1111)
7
"""
from __future__ import annotations

__all__ = [
    "MAX_TABLE_INPUTS",
    "Function",
    "var_mask",
    "isop",
    "table_of_cover",
]

MAX_TABLE_INPUTS = 16

_VAR_CACHE: dict[tuple[int, int], int] = {}


def var_mask(n: int, j: int) -> int:
    """Truth table of input ``j`` among ``n`` inputs."""
    key = (n, j)
    m = _VAR_CACHE.get(key)
    if m is None:
        block = (1 << (1 << j)) - 1  # 2**j ones
        unit = block << (1 << j)  # pattern 0^k 1^k with k = 2**j
        period = 1 << (j + 1)
        m = 0
        for start in range(0, 1 << n, period):
            m |= unit << start
        _VAR_CACHE[key] = m
    return m


def table_of_cover(n: int, cubes, phase: int = 1) -> int:
    """Truth table of a cover over ``n <= MAX_TABLE_INPUTS`` inputs."""
    if n > MAX_TABLE_INPUTS:
        raise ValueError(f"a table over {n} inputs is too wide")
    full = (1 << (1 << n)) - 1
    t = 0
    for cube in cubes:
        c = full
        for j, ch in enumerate(cube):
            if ch == "1":
                c &= var_mask(n, j)
            elif ch == "0":
                c &= ~var_mask(n, j) & full
        t |= c
    return t if phase else (~t & full)


def _cofactors(t: int, n: int, j: int) -> tuple[int, int]:
    """Negative and positive cofactor of table ``t`` by input ``j``, both
    still as tables over ``n`` inputs (independent of input ``j``)."""
    m = var_mask(n, j)
    s = 1 << j
    pos = t & m
    neg = t & ~m & ((1 << (1 << n)) - 1)
    return neg | (neg << s), pos | (pos >> s)


def isop(lower: int, upper: int, n: int) -> tuple[list[str], int]:
    """Irredundant sum of products of a function between two tables.

    Minato-Morreale ISOP (S. Minato, "Fast generation of prime-irredundant
    covers from binary decision diagrams", IEICE Trans. 1993): returns cubes
    whose OR lies between ``lower`` and ``upper`` and the table of that OR.
    Iterative over an explicit stack; depth is at most ``n``.
    """
    # Each frame: (L, U, var, cube_prefix_dict) -> we do it recursively in n
    # (n <= 16, so recursion depth is bounded by 16).
    return _isop(lower, upper, n, n)


def _isop(L: int, U: int, n: int, top: int) -> tuple[list[str], int]:
    if L == 0:
        return [], 0
    full = (1 << (1 << n)) - 1
    if U == full:
        return ["-" * n], full
    # find the highest variable the interval depends on
    j = top - 1
    while j >= 0:
        l0, l1 = _cofactors(L, n, j)
        u0, u1 = _cofactors(U, n, j)
        if l0 != l1 or u0 != u1:
            break
        j -= 1
    assert j >= 0
    c0, r0 = _isop(l0 & ~u1 & full, u0, n, j)
    c1, r1 = _isop(l1 & ~u0 & full, u1, n, j)
    lstar = (l0 & ~r0 & full) | (l1 & ~r1 & full)
    ustar = u0 & u1
    cs, rs = _isop(lstar, ustar, n, j)
    m = var_mask(n, j)
    cubes = [c[:j] + "0" + c[j + 1:] for c in c0]
    cubes += [c[:j] + "1" + c[j + 1:] for c in c1]
    cubes += cs
    res = (r0 & ~m & full) | (r1 & m) | rs
    return cubes, res


class Function:
    """A Boolean function of ``n`` ordered inputs (see the module docstring)."""

    __slots__ = ("n", "_table", "_cubes", "_phase")

    def __init__(self, n: int, table: int | None = None, cubes=None, phase: int = 1):
        self.n = n
        self._table = table
        self._cubes = tuple(cubes) if cubes is not None else None
        self._phase = phase
        if table is None and cubes is None:
            raise ValueError("a function needs a table or a cover")

    @classmethod
    def from_table(cls, n: int, table: int) -> Function:
        if n > MAX_TABLE_INPUTS:
            raise ValueError(f"a table over {n} inputs is too wide")
        return cls(n, table=table & ((1 << (1 << n)) - 1))

    @classmethod
    def from_cover(cls, n: int, cubes, phase: int = 1) -> Function:
        """A function from a cover; small ones also get their table at once."""
        cubes = tuple(cubes)
        if n <= MAX_TABLE_INPUTS:
            return cls(n, table=table_of_cover(n, cubes, phase), cubes=cubes, phase=phase)
        return cls(n, cubes=cubes, phase=phase)

    @classmethod
    def constant(cls, value: int) -> Function:
        return cls(0, table=1 if value else 0)

    @property
    def has_table(self) -> bool:
        return self._table is not None

    def table(self) -> int:
        """The truth table; raises ``ValueError`` for functions wider than 16 inputs."""
        if self._table is None:
            self._table = table_of_cover(self.n, self._cubes, self._phase)
        return self._table

    def cover(self) -> tuple[tuple[str, ...], int]:
        """A cover and its phase (the one given, or an ISOP of the table)."""
        if self._cubes is None:
            table = self.table()
            cubes, _ = isop(table, table, self.n)
            self._cubes, self._phase = tuple(cubes), 1
        return self._cubes, self._phase

    def constant_value(self) -> int | None:
        """0 or 1 when the function is constant, else ``None``."""
        if self._table is not None:
            if self._table == 0:
                return 0
            if self._table == (1 << (1 << self.n)) - 1:
                return 1
            return None
        cubes, phase = self._cubes, self._phase
        if not cubes:
            return 1 - phase
        if any(set(c) <= {"-"} for c in cubes):
            return phase
        return None

    def eval_words(self, words, mask: int) -> int:
        """Bit-parallel evaluation: ``words[j]`` holds many values of input ``j``."""
        cubes, phase = self.cover()
        acc = 0
        for cube in cubes:
            c = mask
            for j, ch in enumerate(cube):
                if ch == "1":
                    c &= words[j]
                elif ch == "0":
                    c &= ~words[j]
                if not c:
                    break
            acc |= c
        acc &= mask
        return acc if phase else (~acc & mask)

    def __call__(self, *bits: int) -> int:
        """Value at one input assignment (``bits[j]`` for input ``j``)."""
        if self._table is not None:
            idx = 0
            for j, b in enumerate(bits):
                if b:
                    idx |= 1 << j
            return (self._table >> idx) & 1
        return self.eval_words(list(bits), 1)

    def __eq__(self, other) -> bool:
        if not isinstance(other, Function) or other.n != self.n:
            return NotImplemented
        if self.n <= MAX_TABLE_INPUTS:
            return self.table() == other.table()
        return self.cover() == other.cover()

    def __hash__(self):
        return hash((self.n, self.table() if self.n <= MAX_TABLE_INPUTS else self.cover()))

    def __repr__(self) -> str:
        if self._table is not None:
            return f"Function(n={self.n}, table={self._table:#x})"
        return f"Function(n={self.n}, cubes={len(self._cubes or ())}, phase={self._phase})"
