"""Cells of several outputs, and cells with registers inside: the medium-scale chips.

A gate's cell has one output and one function.  A 4-bit adder, a
comparator, a decoder, a counter or a shift register is one *block*: several
outputs, each a function of the block's inputs, and for counters and shift
registers registers that take their next value on a clock edge.  A catalog
writes a block the way a datasheet's logic diagram reads:

* ``function`` holds several assignments separated by ``;``, in Verilog
  expression syntax (:mod:`mapper.catalog.expr`).  The left side of each is
  an output of the cell or an internal signal named here for the first time
  (a carry between two adder stages); the right side reads inputs,
  registers and signals assigned before it, so a block has no loop.
* ``<register name="QA" clock="CLK" next="..."/>`` is one bit of storage:
  on the active edge of its clock input (``storage="re"``: rising) it takes
  the value of ``next``, which may read inputs, registers and signals.  A
  register named like an output drives that output.  ``clear`` names an
  input that empties the register at once, whatever the clock does (a
  datasheet's asynchronous clear; it acts at the input's ``active`` level).

Everything here is plain data and arithmetic on truth tables: the flattened
function of any output or next value over the block's inputs and registers
(:meth:`BlockDef.table`), and bit-parallel evaluation (:meth:`BlockDef.evaluate`)
as the matcher and the prover's netlist view of a build need them.

Examples
--------
>>> from mapper.catalog.expr import parse_expression
>>> half = BlockDef(inputs=("A", "B"), outputs=("S", "C"),
...                 assigns=(("S", parse_expression("A ^ B")), ("C", parse_expression("A & B"))))
>>> half.table("C")
(('A', 'B'), Function(n=2, table=0x8))
>>> half.evaluate({"A": 0b1100, "B": 0b1010}, 0b1111)["S"]
6
"""
from __future__ import annotations

from dataclasses import dataclass, field

from ..logic.function import MAX_TABLE_INPUTS, Function, var_mask
from .expr import Expression

__all__ = ["BlockDef", "Register", "eval_expression"]


@dataclass(frozen=True)
class Register:
    """One bit of storage in a block: ``next`` taken on the active edge of input ``clock``.

    ``clear`` names an input that empties it at once (at that input's active
    level), or is ``None``.
    """

    name: str
    clock: str
    next: Expression
    clear: str | None = None


def eval_expression(expr: Expression, values: dict, mask: int) -> int:
    """Bit-parallel value of ``expr`` with ``values[name]`` holding many values of each name."""
    return expr.evaluate(values, mask)


@dataclass
class BlockDef:
    """The inside of a block cell (see the module docstring).

    ``assigns`` are ``(name, Expression)`` in the catalog's order;
    ``registers`` the block's storage; ``kind`` the storage kind of its
    registers (``"re"``/``"fe"``), ``None`` for a block of logic only.
    """

    inputs: tuple
    outputs: tuple
    assigns: tuple
    registers: tuple = ()
    kind: str | None = None
    _support: dict = field(default_factory=dict, repr=False, compare=False)
    _tables: dict = field(default_factory=dict, repr=False, compare=False)

    @property
    def register_names(self) -> tuple:
        return tuple(r.name for r in self.registers)

    def register(self, name: str) -> Register:
        for r in self.registers:
            if r.name == name:
                return r
        raise KeyError(name)

    def expression(self, name: str) -> Expression:
        """The expression of an assigned signal (``KeyError`` for an input or register)."""
        for n, e in self.assigns:
            if n == name:
                return e
        raise KeyError(name)

    def is_register(self, name: str) -> bool:
        return any(r.name == name for r in self.registers)

    def support(self, name: str, next_state: bool = False) -> tuple:
        """Inputs and registers ``name`` (an output, a signal, or with ``next_state`` a register's
        next value) reads, through the signals between; inputs first in the cell's order, then registers."""
        key = (name, next_state)
        got = self._support.get(key)
        if got is not None:
            return got
        regs = set(self.register_names)
        ins = set(self.inputs)
        assigned = dict(self.assigns)
        if next_state:
            stack = list(self.register(name).next.names)
        elif name in regs:
            stack = [name]
        else:
            stack = list(assigned[name].names)
        seen: set = set()
        found: set = set()
        while stack:
            n = stack.pop()
            if n in seen:
                continue
            seen.add(n)
            if n in ins or n in regs:
                found.add(n)
                continue
            stack.extend(assigned[n].names)
        got = tuple(i for i in self.inputs if i in found) + tuple(r for r in self.register_names if r in found)
        self._support[key] = got
        return got

    def evaluate(self, values: dict, mask: int, state: dict | None = None) -> dict:
        """Every signal and output, bit-parallel: ``values`` by input, ``state`` by register (0 when missing)."""
        env = dict(values)
        for r in self.registers:
            env[r.name] = (state or {}).get(r.name, 0) & mask
        for name, expr in self.assigns:
            env[name] = eval_expression(expr, env, mask)
        return env

    def next_state(self, values: dict, mask: int, state: dict | None = None) -> dict:
        """Each register's next value (at an active clock edge, clear inactive), bit-parallel."""
        env = self.evaluate(values, mask, state)
        return {r.name: eval_expression(r.next, env, mask) for r in self.registers}

    def table(self, name: str, next_state: bool = False) -> tuple:
        """``(support, Function)``: the flattened function of output or signal ``name`` (or with
        ``next_state`` of register ``name``'s next value) over :meth:`support`."""
        key = (name, next_state)
        got = self._tables.get(key)
        if got is not None:
            return got
        sup = self.support(name, next_state)
        n = len(sup)
        if n > MAX_TABLE_INPUTS:
            raise ValueError(f"{name} reads {n} inputs and registers; a table holds at most {MAX_TABLE_INPUTS}")
        full = (1 << (1 << n)) - 1
        words = {s: var_mask(n, j) for j, s in enumerate(sup)}
        values = {i: words.get(i, 0) for i in self.inputs}
        state = {r: words.get(r, 0) for r in self.register_names}
        if next_state:
            t = self.next_state(values, full, state)[name]
        elif self.is_register(name):
            t = state[name]
        else:
            t = self.evaluate(values, full, state)[name]
        got = (sup, Function.from_table(n, t & full))
        self._tables[key] = got
        return got
