"""The gate graph: what every reader makes and every later stage reads.

A :class:`Netlist` maps each signal (net) name to what drives it:

* ``Input``    -- a primary input;
* ``Logic``    -- a logic node: ordered fan-in nets and a :class:`~mapper.logic.function.Function`
  (a constant is a logic node with no fan-ins);
* ``Storage``  -- a latch or flip-flop: data net, kind, control net, initial value.

Storage kinds follow the BLIF ``.latch`` types: ``re`` rising edge, ``fe``
falling edge, ``ah`` transparent while the control is high, ``al`` transparent
while low, ``as`` asynchronous (no control).  Initial values: 0, 1,
2 (don't care), 3 (unknown).

Bus bits are named ``name[i]``; flattened hierarchy uses ``/``-joined instance
paths.  ``Netlist.combinational_graph()`` gives the ``networkx.DiGraph`` view
(edges from fan-in to node, none into storage); every check and analysis is
iterative, never recursive over depth, because netlists can be thousands of
levels deep.

Examples
--------
>>> from mapper.logic.function import Function
>>> n = Netlist("half")
>>> n.add_input("a"); n.add_input("b")
>>> n.add_logic("s", ["a", "b"], Function.from_table(2, 0b0110))
>>> n.add_logic("c", ["a", "b"], Function.from_table(2, 0b1000))
>>> n.add_output("s"); n.add_output("c")
>>> n.check()
[]
>>> n.depth()
1
"""
from __future__ import annotations

import logging
import re
from collections import Counter
from dataclasses import dataclass, field

import networkx as nx

from . import limits
from .errors import Diagnostic, NetlistError
from .logic.function import Function
from .order import topological_order

__all__ = [
    "Input",
    "Logic",
    "Storage",
    "Netlist",
    "STORAGE_KINDS",
    "INIT_DONT_CARE",
    "INIT_UNKNOWN",
]

log = logging.getLogger(__name__)

STORAGE_KINDS = ("re", "fe", "ah", "al", "as")
INIT_DONT_CARE = 2
INIT_UNKNOWN = 3


@dataclass(frozen=True)
class Input:
    """A primary input."""

    fanins: tuple = ()


@dataclass(frozen=True)
class Logic:
    """A logic node: ``func`` over the ordered ``fanins``."""

    fanins: tuple
    func: Function


@dataclass(frozen=True)
class Storage:
    """A storage element driving its net from data net ``d``.

    ``control`` is the clock or enable net (``None`` for kind ``as`` or when
    the source gave none); ``init`` is 0, 1, 2 (don't care) or 3 (unknown).
    """

    d: str
    kind: str = "re"
    control: str | None = None
    init: int = INIT_UNKNOWN

    @property
    def fanins(self) -> tuple:
        return (self.d,) if self.control is None else (self.d, self.control)


@dataclass
class Netlist:
    """A flat gate-level design.  See the module docstring."""

    name: str
    inputs: list = field(default_factory=list)
    outputs: list = field(default_factory=list)
    nodes: dict = field(default_factory=dict)
    #: nets named by ``.clock`` (BLIF) or used as clocks; kept for writers
    clocks: list = field(default_factory=list)
    #: where each net was defined or first used: net -> (file, line, col)
    origin: dict = field(default_factory=dict)
    #: warnings found while reading or checking
    warnings: list = field(default_factory=list)
    #: external don't-care network (BLIF ``.exdc``): outputs named like ours;
    #: where it is 1 the output value does not matter
    exdc: Netlist | None = None
    #: what a reader decided for the user to know (severity ``note``), such as a clock it added
    notes: list = field(default_factory=list)
    #: the outputs as a set, for :meth:`add_output` (kept in step with ``outputs`` there)
    _output_set: set = field(default_factory=set, init=False, repr=False, compare=False)

    # -- building ---------------------------------------------------------
    def _drive(self, name: str, node, where) -> None:
        if name in self.nodes:
            first = self.origin.get(name)
            at = f" (first driven at {first[0]}:{first[1]})" if first and first[0] else ""
            raise NetlistError(Diagnostic(f"net '{name}' has two drivers{at}", *(where or (None, None, None))))
        self.nodes[name] = node
        if where is not None:
            self.origin[name] = where

    def add_input(self, name: str, where=None) -> None:
        """Declare a primary input (order is kept)."""
        self._drive(name, Input(), where)
        self.inputs.append(name)

    def add_output(self, name: str, where=None) -> None:
        """Declare a primary output net (order is kept; may be any driven net)."""
        seen = self._output_set
        if len(seen) != len(self.outputs):   # the list was changed directly: catch up once
            seen.clear()
            seen.update(self.outputs)
        if name in seen:
            raise NetlistError(Diagnostic(f"output '{name}' is declared twice", *(where or (None, None, None))))
        self.outputs.append(name)
        seen.add(name)
        if where is not None and name not in self.origin:
            self.origin[name] = where

    def add_logic(self, name: str, fanins, func: Function, where=None) -> None:
        fanins = tuple(fanins)
        if len(fanins) != func.n:
            raise ValueError(f"node {name}: {len(fanins)} fan-ins but a function of {func.n}")
        self._drive(name, Logic(fanins, func), where)

    def add_constant(self, name: str, value: int, where=None) -> None:
        self.add_logic(name, (), Function.constant(value), where)

    def add_storage(self, name: str, d: str, kind: str = "re", control: str | None = None,
                    init: int = INIT_UNKNOWN, where=None) -> None:
        if kind not in STORAGE_KINDS:
            raise ValueError(f"unknown storage kind {kind!r}")
        if init not in (0, 1, 2, 3):
            raise ValueError(f"bad initial value {init!r}")
        self._drive(name, Storage(d, kind, control, init), where)

    # -- queries ----------------------------------------------------------
    def storage(self) -> dict:
        """Storage elements in definition order: net -> :class:`Storage`."""
        return {k: v for k, v in self.nodes.items() if isinstance(v, Storage)}

    def logic(self) -> dict:
        return {k: v for k, v in self.nodes.items() if isinstance(v, Logic)}

    def fanouts(self) -> dict:
        """net -> list of nets it feeds (outputs not counted)."""
        out: dict = {k: [] for k in self.nodes}
        for name, node in self.nodes.items():
            for f in node.fanins:
                out.setdefault(f, []).append(name)
        return out

    def combinational_graph(self) -> nx.DiGraph:
        """The gate graph without edges into storage elements (they break loops)."""
        g = nx.DiGraph()
        g.add_nodes_from(self.nodes)
        for name, node in self.nodes.items():
            if isinstance(node, Logic):
                for f in node.fanins:
                    g.add_edge(f, name)
        return g

    def topological_order(self) -> list:
        """Every net, fan-ins before the logic that reads them; storage and
        inputs count as sources.  Raises :class:`NetlistError` on a loop."""
        nodes = self.nodes
        order, left = topological_order(nodes, lambda n: nodes[n].fanins if isinstance(nodes[n], Logic) else None)
        undriven = not left and any(f not in nodes for node in nodes.values() if isinstance(node, Logic)
                                    for f in node.fanins)
        if left or undriven:
            missing = [f for node in nodes.values() for f in node.fanins if f not in nodes]
            if missing:
                raise NetlistError(Diagnostic(f"net '{missing[0]}' is used but never driven"))
            raise NetlistError(self._loop_diagnostics())
        return order

    def levels(self) -> dict:
        """net -> logic level (inputs, constants and storage outputs are level 0)."""
        lev: dict = {}
        for n in self.topological_order():
            node = self.nodes[n]
            if isinstance(node, Logic) and node.fanins:
                lev[n] = 1 + max(lev[f] for f in node.fanins)
            else:
                lev[n] = 0
        return lev

    def depth(self) -> int:
        """Largest logic level of any net."""
        lev = self.levels()
        return max(lev.values(), default=0)

    def kind_counts(self) -> Counter:
        """Node counts by kind of function (``and2``, ``xor2``, ``const``, ``cover5`` ...)."""
        c: Counter = Counter()
        for node in self.nodes.values():
            if isinstance(node, Input):
                continue
            if isinstance(node, Storage):
                c[f"storage-{node.kind}"] += 1
                continue
            c[describe_function(node.func)] += 1
        return c

    # -- checks -----------------------------------------------------------
    def _where(self, net) -> tuple[str | None, int | None, int | None]:
        return self.origin.get(net) or (None, None, None)

    def _first_where(self) -> tuple[str | None, int | None, int | None]:
        """The first known position in the design (``(None, None, None)`` when none is known)."""
        for w in self.origin.values():
            if w and w[0]:
                return w
        return (None, None, None)

    def _loop_diagnostics(self) -> list:
        """One error per combinational loop (up to the error limit of :mod:`mapper.limits`).

        A topological sort finds the logic on or behind a loop first; only
        that part is handed to the search for strongly connected components,
        so a design without loops costs one pass over its nodes.
        """
        nodes = self.nodes
        _, left = topological_order(nodes, lambda n: nodes[n].fanins if isinstance(nodes[n], Logic) else None)
        if not left:
            return []
        on = set(left)
        g = nx.DiGraph()
        g.add_nodes_from(left)
        g.add_edges_from((f, n) for n in left for f in nodes[n].fanins if f in on)
        diags = []
        most = limits.value("errors")
        loops = [c for c in nx.strongly_connected_components(g) if len(c) > 1 or any(g.has_edge(n, n) for n in c)]
        for comp in sorted(loops, key=lambda c: min(c))[:most]:
            nets = sorted(comp)
            shown = ", ".join(nets[:12]) + (f", … ({len(nets)} nets)" if len(nets) > 12 else "")
            diags.append(Diagnostic(
                f"combinational loop not broken by a storage element through nets: {shown}",
                *self._where(nets[0])))
        if len(loops) > most:
            diags.append(Diagnostic(f"… and {len(loops) - most} more combinational loops not shown: "
                                    f"{limits.exceeded('errors')}", *self._where(nets[0])))
        return diags

    def check(self) -> list:
        """Check the circuit; raise :class:`NetlistError` with every error found.

        Errors: undriven nets (used or declared as output but never driven),
        combinational loops.  Warnings (returned, and appended to
        ``self.warnings``): a design with no outputs, unused inputs, dangling
        logic (nodes that reach no output or storage element).
        """
        errors = []
        reported = set()
        for node in self.nodes.values():
            for f in node.fanins:
                if f not in self.nodes and f not in reported:
                    reported.add(f)
                    errors.append(Diagnostic(f"net '{f}' is used but never driven", *self._where(f)))
        for o in self.outputs:
            if o not in self.nodes and o not in reported:
                reported.add(o)
                errors.append(Diagnostic(f"output '{o}' is never driven", *self._where(o)))
        errors = _at_most(errors, "error") if errors else self._loop_diagnostics()
        if errors:
            raise NetlistError(errors)

        warnings = []
        if not self.outputs:
            warnings.append(Diagnostic(f"design {self.name} has no outputs: a build of it does nothing",
                                       *self._first_where(), severity="warning"))
        used = set()
        for node in self.nodes.values():
            used.update(node.fanins)
        used.update(self.outputs)
        unused = [i for i in self.inputs if i not in used]
        warnings.extend(_at_most([Diagnostic(f"input '{i}' is not used", *self._where(i), severity="warning")
                                  for i in unused], "warning"))
        # dangling: not in the transitive fan-in of any output or storage element
        live = set(self.outputs)
        stack = list(self.outputs)
        for name, node in self.nodes.items():
            if isinstance(node, Storage):
                live.add(name)
                stack.append(name)
        while stack:
            n = stack.pop()
            for f in self.nodes[n].fanins:
                if f not in live:
                    live.add(f)
                    stack.append(f)
        dangling = [n for n, node in self.nodes.items()
                    if not isinstance(node, Input) and n not in live]
        if dangling:
            shown = ", ".join(dangling[:8]) + (" …" if len(dangling) > 8 else "")
            warnings.append(Diagnostic(
                f"{len(dangling)} logic node(s) drive nothing that reaches an output: {shown}",
                *self._where(dangling[0]), severity="warning"))
        self.warnings.extend(warnings)
        return warnings

    def renamed(self, names: dict) -> Netlist:
        """A copy with the nets in ``names`` (old -> new) renamed everywhere; the new names must
        be free (the caller makes sure)."""
        def r(n):
            return names.get(n, n)
        nodes: dict = {}
        for name, node in self.nodes.items():
            if isinstance(node, Logic):
                node = Logic(tuple(r(f) for f in node.fanins), node.func)
            elif isinstance(node, Storage):
                node = Storage(r(node.d), node.kind, None if node.control is None else r(node.control), node.init)
            nodes[r(name)] = node
        return Netlist(self.name, [r(n) for n in self.inputs], [r(n) for n in self.outputs], nodes,
                       [r(n) for n in self.clocks], {r(k): v for k, v in self.origin.items()},
                       list(self.warnings), self.exdc, list(self.notes))

    def copy(self) -> Netlist:
        n = Netlist(self.name, list(self.inputs), list(self.outputs), dict(self.nodes),
                    list(self.clocks), dict(self.origin), list(self.warnings), self.exdc, list(self.notes))
        return n

    def __len__(self) -> int:
        return len(self.nodes)


def _at_most(diags: list, severity: str) -> list:
    """The first diagnostics up to the error limit, and one more saying how many were left out."""
    most = limits.value("errors")
    if len(diags) <= most:
        return diags
    last = diags[most - 1]
    return diags[:most] + [Diagnostic(f"… and {len(diags) - most} more like these not shown: "
                                      f"{limits.exceeded('errors')}", last.file, last.line, last.col,
                                      severity=severity)]


_NAMED = {
    (1, 0b10): "buf", (1, 0b01): "inv",
    (2, 0b1000): "and2", (2, 0b0111): "nand2", (2, 0b1110): "or2", (2, 0b0001): "nor2",
    (2, 0b0110): "xor2", (2, 0b1001): "xnor2",
}


def describe_function(func: Function) -> str:
    """A short human name for a node's function kind (for counts and reports)."""
    if func.n == 0:
        return "const"
    if func.has_table or func.n <= 6:
        t = func.table()
        name = _NAMED.get((func.n, t))
        if name:
            return name
        full = (1 << (1 << func.n)) - 1
        if t == 1 << (full.bit_length() - 1):
            return f"and{func.n}"
        if t == full ^ (1 << (full.bit_length() - 1)):
            return f"nand{func.n}"
        if t == full ^ 1:
            return f"or{func.n}"
        if t == 1:
            return f"nor{func.n}"
    return f"cover{func.n}"


#: plain words for the node kinds of :meth:`Netlist.kind_counts` (singular, plural)
_STORAGE_WORDS = {
    "re": ("rising-edge flip-flop", "rising-edge flip-flops"),
    "fe": ("falling-edge flip-flop", "falling-edge flip-flops"),
    "ah": ("latch open while its enable is high", "latches open while their enable is high"),
    "al": ("latch open while its enable is low", "latches open while their enable is low"),
    "as": ("storage element following its data", "storage elements following their data"),
}
_GATE_WORDS = {"and": "AND", "nand": "NAND", "or": "OR", "nor": "NOR", "xor": "exclusive-OR",
               "xnor": "exclusive-NOR"}


def kind_in_words(kind: str, count: int = 2) -> str:
    """Plain words for a node kind of :meth:`Netlist.kind_counts`, singular when ``count`` is 1.

    >>> kind_in_words("storage-re")
    'rising-edge flip-flops'
    >>> kind_in_words("nand3", 1)
    '3-input NAND gate'
    >>> kind_in_words("cover5")
    '5-input functions (sum of products)'
    """
    one = count == 1
    if kind.startswith("storage-"):
        words = _STORAGE_WORDS.get(kind[8:])
        return (words[0] if one else words[1]) if words else kind
    if kind == "const":
        return "constant" if one else "constants"
    if kind == "buf":
        return "buffer" if one else "buffers"
    if kind == "inv":
        return "inverter" if one else "inverters"
    m = re.fullmatch(r"([a-z]+?)(\d+)", kind)
    if m and m.group(1) == "cover":
        return f"{m.group(2)}-input function" + ("" if one else "s") + " (sum of products)"
    if m and m.group(1) in _GATE_WORDS:
        return f"{m.group(2)}-input {_GATE_WORDS[m.group(1)]} gate" + ("" if one else "s")
    return kind
