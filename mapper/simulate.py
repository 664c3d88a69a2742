"""Bit-parallel simulation of a :class:`~mapper.netlist.Netlist`.

Every value is a Python ``int`` whose bit ``k`` is the value of a net in
pattern ``k``; ``mask`` has one bit set per pattern (``(1 << P) - 1`` for
``P`` patterns), so one pass evaluates thousands of patterns at the cost of
a few big-integer operations per node.

The netlist is compiled once into a flat program (one small instruction per
logic node, in topological order) and the program is cached per netlist
object; a changed netlist is noticed and recompiled.  Common gates (buffers,
inverters, AND/OR/NAND/NOR of any width with inverted inputs, XOR/XNOR of any
width) get their own instructions; every other function is evaluated from its
cover (:meth:`~mapper.logic.function.Function.eval_words`).  Nothing recurses
over the netlist's depth.

Cycle semantics of :func:`run_cycles`
-------------------------------------
A *cycle* is one clock period.  In each cycle the inputs of that cycle are
applied, the combinational logic is evaluated with the storage outputs
holding their current values, the primary outputs are recorded, and then
every storage element updates:

* ``re``, ``fe`` (edge-triggered): the cycle boundary is one active edge of
  its clock, so the element takes the value of its data net every cycle.
  The clock net's value is not consulted (the clock is implicit); this is
  the usual reading of a synchronous design whose clock is a primary input
  or absent.
* ``ah``, ``al`` (level-sensitive latches): the element is sampled at the
  end of the cycle: where its control net evaluated to 1 (``ah``) or 0
  (``al``) in this cycle it takes its data value, elsewhere it keeps its
  value.  Transparency *within* a cycle (a change passing straight through
  an open latch to the outputs of the same cycle) is not modelled.
* ``as`` (no control): takes its data value every cycle.

Initial values: 0 and 1 as declared; don't care (2) and unknown (3) start
at 0 unless ``unknown="random"`` is asked for (then each pattern gets its own
random bit, reproducible through ``seed``).  ``init`` overrides any element.

Examples
--------
>>> from mapper.netlist import Netlist
>>> from mapper.logic.function import Function
>>> n = Netlist("half")
>>> n.add_input("a"); n.add_input("b")
>>> n.add_logic("s", ["a", "b"], Function.from_table(2, 0b0110))
>>> n.add_output("s")
>>> simulate(n, {"a": 0b1100, "b": 0b1010}, 0b1111)["s"]
6
"""
from __future__ import annotations

import logging
import operator
import random
import weakref

from .logic.function import MAX_TABLE_INPUTS, Function, var_mask
from .netlist import Input, Logic, Netlist, Storage

__all__ = ["simulate", "run_cycles", "SimProgram", "compile_netlist", "words_from_patterns",
           "pattern_of"]

log = logging.getLogger(__name__)

# instruction codes
_CONST0, _CONST1, _COPY, _NOT, _AND, _XOR, _COVER = range(7)

#: widest function (inputs) whose table is inspected for a special instruction
_CLASSIFY_MAX = 6


def _parity_table(n: int) -> int:
    t = 0
    for j in range(n):
        t ^= var_mask(n, j)
    return t


def _classify(func: Function, fanins: tuple) -> tuple:
    """An instruction ``(code, args, flags)`` for ``func`` over fan-in indices.

    For ``_AND`` ``flags`` is ``(input_inversions, output_inversion)``: the
    value is ``out_inv XOR AND_j (v[args[j]] XOR inv_j)``.  For ``_XOR`` it is
    the output inversion.
    """
    n = func.n
    const = func.constant_value()
    if const is not None:
        return (_CONST1 if const else _CONST0, (), None)
    if n > _CLASSIFY_MAX or not (func.has_table or n <= MAX_TABLE_INPUTS):
        return (_COVER, fanins, func)
    t = func.table()
    full = (1 << (1 << n)) - 1
    # a function of one input only (possibly among several)
    support = [j for j in range(n)
               if ((t & var_mask(n, j)) >> (1 << j)) != (t & ~var_mask(n, j) & full)]
    if len(support) == 1:
        j = support[0]
        return (_COPY if t & var_mask(n, j) else _NOT, (fanins[j],), None)
    # AND family: exactly one minterm is 1 (AND with inversions) or 0 (OR/NAND family)
    for out_inv, tt in ((0, t), (1, ~t & full)):
        if tt and tt & (tt - 1) == 0 and len(support) == n:
            m = tt.bit_length() - 1
            inv = tuple(0 if (m >> j) & 1 else 1 for j in range(n))
            return (_AND, fanins, (inv, out_inv))
    if len(support) == n:
        p = _parity_table(n)
        if t == p:
            return (_XOR, fanins, 0)
        if t == ~p & full:
            return (_XOR, fanins, 1)
    return (_COVER, fanins, func)


class SimProgram:
    """A netlist compiled for bit-parallel simulation (see the module docstring).

    Attributes
    ----------
    names : list of str
        Every net, in evaluation order; ``index[name]`` is its slot.
    inputs, storage : list of (name, slot)
        Where input words and storage values are loaded.
    code : list of tuple
        ``(code, out_slot, args, flags)`` per logic node, topological order.
    """

    def __init__(self, netlist: Netlist):
        order = netlist.topological_order()
        self.names = order
        self.index = {name: i for i, name in enumerate(order)}
        idx = self.index
        self.inputs = []
        self.storage = []
        self.code = []
        for name in order:
            node = netlist.nodes[name]
            if isinstance(node, Input):
                self.inputs.append((name, idx[name]))
            elif isinstance(node, Storage):
                self.storage.append((name, idx[name]))
            elif isinstance(node, Logic):
                fanins = tuple(idx[f] for f in node.fanins)
                c, args, flags = _classify(node.func, fanins)
                self.code.append((c, idx[name], args, flags))
        self._snapshot = list(netlist.nodes.values())
        self._snapshot_names = list(netlist.nodes)

    def matches(self, netlist: Netlist) -> bool:
        """True when ``netlist`` still has exactly the nodes this was compiled from."""
        nodes = netlist.nodes
        if len(nodes) != len(self._snapshot) or list(nodes) != self._snapshot_names:
            return False
        return all(map(operator.is_, nodes.values(), self._snapshot))

    def run(self, words: dict, mask: int, state: dict | None = None) -> list:
        """Values of every slot (a list indexed like :attr:`names`)."""
        v = [0] * len(self.names)
        for name, i in self.inputs:
            v[i] = words.get(name, 0) & mask
        if state:
            for name, i in self.storage:
                v[i] = state.get(name, 0) & mask
        M = mask
        for c, o, args, flags in self.code:
            if c == _AND:
                inv, out_inv = flags
                acc = M
                for a, ia in zip(args, inv):
                    acc &= (v[a] ^ M) if ia else v[a]
                v[o] = (acc ^ M) if out_inv else acc
            elif c == _XOR:
                acc = M if flags else 0
                for a in args:
                    acc ^= v[a]
                v[o] = acc
            elif c == _NOT:
                v[o] = v[args[0]] ^ M
            elif c == _COPY:
                v[o] = v[args[0]]
            elif c == _CONST1:
                v[o] = M
            elif c == _CONST0:
                v[o] = 0
            else:
                v[o] = flags.eval_words([v[a] for a in args], M)
        return v


_CACHE: dict = {}


def _forget(key):
    _CACHE.pop(key, None)


def compile_netlist(netlist: Netlist) -> SimProgram:
    """The (cached) :class:`SimProgram` of ``netlist``."""
    key = id(netlist)
    hit = _CACHE.get(key)
    if hit is not None:
        ref, prog = hit
        if ref() is netlist and prog.matches(netlist):
            return prog
    prog = SimProgram(netlist)
    def forget(_ref, k=key) -> None:
        _forget(k)

    _CACHE[key] = (weakref.ref(netlist, forget), prog)
    return prog


def simulate(netlist: Netlist, words: dict, mask: int, state: dict | None = None) -> dict:
    """Combinational values of every net for many patterns at once.

    Parameters
    ----------
    netlist : Netlist
        A checked netlist (no combinational loops).
    words : dict
        Input name -> int; bit ``k`` is the input's value in pattern ``k``.
        Missing inputs read 0.
    mask : int
        One bit per pattern (``(1 << P) - 1``).
    state : dict, optional
        Storage net -> int, the values the storage outputs hold; missing
        ones (or all, when ``None``) read 0.

    Returns
    -------
    dict
        Every net -> int (only bits inside ``mask`` set).
    """
    prog = compile_netlist(netlist)
    return dict(zip(prog.names, prog.run(words, mask, state)))


def run_cycles(netlist: Netlist, sequence: list, mask: int, init: dict | None = None,
               unknown: str = "zero", seed=None) -> list:
    """Simulate storage elements cycle by cycle (semantics in the module docstring).

    Parameters
    ----------
    netlist : Netlist
    sequence : list of dict
        Per cycle, input name -> int (bit-parallel, as in :func:`simulate`).
    mask : int
        One bit per pattern.
    init : dict, optional
        Storage net -> int; overrides the declared initial values.
    unknown : {"zero", "random"}
        Start value of elements whose initial value is don't care (2) or
        unknown (3) and that ``init`` does not give.
    seed : optional
        Seed of the random start values.

    Returns
    -------
    list of dict
        Per cycle, primary output name -> int.
    """
    if unknown not in ("zero", "random"):
        raise ValueError(f"unknown= must be 'zero' or 'random', not {unknown!r}")
    prog = compile_netlist(netlist)
    rng = random.Random(seed)
    nbits = mask.bit_length()
    storage = netlist.storage()
    state = {}
    for name, st in storage.items():
        if init is not None and name in init:
            state[name] = init[name] & mask
        elif st.init == 1:
            state[name] = mask
        elif st.init == 0 or unknown == "zero":
            state[name] = 0
        else:
            state[name] = rng.getrandbits(nbits) & mask if nbits else 0
    idx = prog.index
    out_slots = [(o, idx[o]) for o in netlist.outputs]
    updates = []
    for name, st in storage.items():
        ctl = None
        if st.kind in ("ah", "al") and st.control is not None:
            ctl = (idx[st.control], st.kind == "al")
        updates.append((name, idx[st.d], ctl))
    trace = []
    for words in sequence:
        v = prog.run(words, mask, state)
        trace.append({o: v[i] for o, i in out_slots})
        new = {}
        for name, d, ctl in updates:
            if ctl is None:
                new[name] = v[d]
            else:
                c = v[ctl[0]]
                if ctl[1]:
                    c ^= mask
                new[name] = (v[d] & c) | (state[name] & ~c & mask)
        state = new
    return trace


def words_from_patterns(names, patterns) -> tuple[dict, int]:
    """Pack patterns (each a dict name -> 0/1) into bit-parallel words.

    Returns ``(words, mask)``; pattern ``k`` becomes bit ``k``.
    """
    words = {n: 0 for n in names}
    for k, pat in enumerate(patterns):
        bit = 1 << k
        for n in names:
            if pat.get(n, 0):
                words[n] |= bit
    return words, (1 << len(patterns)) - 1


def pattern_of(values: dict, k: int) -> dict:
    """Pattern ``k`` of bit-parallel ``values`` as a dict name -> 0/1."""
    return {n: (w >> k) & 1 for n, w in values.items()}
