"""Fit a design onto a gate target: map, place storage, pack, and search for fewer parts.

The search keeps a change only when the whole-part count falls (ties broken
by delay, then by wires); every candidate is a complete build, and the one
returned is proved equal to the design by the caller (:mod:`mapper.flow`).

The search maps two spellings of the design made from its function in small
regions (:mod:`mapper.fit.spellings`), so that the same design written in BLIF
or in Verilog, with its nets renamed or reordered, gets the same parts; only
the careful builder's builds start from the design as written.

Candidates tried, as long as the budget lasts (it shrinks with the design;
a design of over 6,000 nodes gets one mapping):

* always, the builds a careful builder makes by hand (:mod:`mapper.fit.plain`):
  the design converted to NAND2 (and NOR2) forms with double inversions
  cancelled and identical gates shared, and each gate plugged into the cell
  that carries it -- so the answer never has more parts than either;
* the mapping with every cell of the target, of each spelling;
* for a target of one NAND2 or NOR2 cell, the mapping of the dual design with
  the dual cell (read back with the rails swapped);
* the mappings of the restructured forms of each spelling
  (:mod:`mapper.logic.restructure`: rewritten, factored, collapsed and built
  again with counters of ones and decompositions); a form is kept only when
  its build has fewer whole parts than every build before it -- the stop
  rule of the restructuring script is this count, measured after mapping;
* the design with its 2:1 multiplexers of one select in quad multiplexer
  parts (:mod:`mapper.fit.muxes`), a small design split on one input into
  multiplexers (:mod:`mapper.fit.muxsplit`), and nodes that are
  multiplexers of other signals under don't-cares (:mod:`mapper.fit.muxchoice`);
* the same mappings with other cut budgets and numbers of area-flow passes;
* re-mapping the best mapped logic itself (its NAND/NOR structure often
  exposes sharing the first subject graph hid);
* seeds of a single NAND2 or NOR2 cell type, alone and with one other type;
* for each part type in the build, the mapping without that cell type,
  when its cells might move into spare slots of the others;
* on a target of several cells, the best build of each one-cell target its
  parts carry (nand-only and nor-only inside gates-74), searched in full as
  on its own, so that the answer never has more parts than those.
"""
from __future__ import annotations

import logging
from dataclasses import replace

from ..build import Build
from ..catalog.model import Target
from ..errors import UsageError
from ..logic.canonical import canonical_order
from ..logic.function import Function
from ..netlist import Logic, Netlist
from .blocks import has_blocks, with_blocks, without_blocks
from .electrical import split_fanout
from .gates import Mapping, map_logic, subject_graph
from .library import CellLibrary, RecostedLibrary
from .names import design_names
from .pack import pack
from .plain import hand_mapping, plugin_mapping
from .spellings import spellings
from .storage import close_loops, gate_storage

__all__ = ["baseline_builds", "fit_gates", "mapping_netlist"]

log = logging.getLogger(__name__)

_LIBS: dict = {}


def _library(target, exclude=frozenset()) -> CellLibrary:
    key = (target.name, target.path, frozenset(exclude))
    lib = _LIBS.get(key)
    if lib is None:
        t = target
        if exclude:
            t = _restricted(target, exclude)
        lib = _LIBS[key] = CellLibrary(t)
    return lib


def _restricted(target, exclude):
    cells = {k: v for k, v in target.cells.items() if k not in exclude}
    carriers = {k: v for k, v in target.carriers.items() if k not in exclude}
    return replace(target, cells=cells, carriers=carriers)


#: (cuts per node, area-flow passes) tried besides the default (8, 3)
_VARIANTS = [(8, 1), (4, 1), (16, 1), (8, 5), (16, 5), (12, 3), (4, 3), (6, 1)]


def _score(build: Build, mapping: Mapping) -> tuple:
    return (len(build.parts), mapping.depth, len(build.cells))


class _PartSearch:
    """The candidates of :func:`fit_gates` and the best build among them (fewest parts, then levels, then cells)."""

    def __init__(self, design: Netlist, target: Target, effort: int, keep, trees: bool, plain: Netlist,
                 others: tuple = ()):
        self.design, self.target, self.keep, self.trees = design, target, keep, trees
        self.plain = plain  # the design as written: the careful builder's builds start from it
        self.others = others  # other spellings of the design, mapped and restructured too
        self.storage_cells = _storage_cells(target)
        self.lib = _library(target)
        self.best: Build | None = None
        self.best_mapping: Mapping | None = None
        self.best_score: tuple = ()
        self.tried: list = []
        # further candidates cost a whole mapping each: fewer of them on big designs (a mapping's
        # time grows with the size, so the count falls faster above a few hundred nodes: a
        # thousand-node design should not wait longer than a ten-thousand-node one)
        size = max(1, len(design.nodes) - len(design.inputs))
        self.budget = int(min(40, 12_000 / size, 6_000_000 / size ** 2)) if effort > 0 else 0
        self.big = size > 6_000  # room for at most one candidate beyond the first
        self.subjects: list = []
        if self.big:
            self.others = ()  # one spelling: room for one more candidate only

    def spend(self) -> bool:
        if self.budget <= 0:
            return False
        self.budget -= 1
        return True

    def consider(self, mapping: Mapping, label: str, floor: bool = False) -> tuple:
        """Assemble ``mapping`` and keep it if it scores best so far; a ``floor``
        candidate (a baseline) is kept only with fewer parts, so that ties between
        builds of as many parts stay with the mapper's own."""
        b = _assemble(self.design, self.target, mapping, self.storage_cells)
        self.tried.append((label, len(b.parts)))
        score = _score(b, mapping)
        if floor and self.best is not None and score[0] >= self.best_score[0]:
            return score
        if self.best is None or score < self.best_score:
            self.best, self.best_mapping, self.best_score = b, mapping, score
        return score

    def result(self) -> Build:
        if self.best is None:
            raise UsageError(f"target {self.target.name} made no build of {self.design.name}")
        return self.best

    def first_mappings(self) -> None:
        """The mapping with every cell; for one NAND2 or NOR2 cell, also the dual design's.

        A network of NORs computes the dual of the same network of NANDs, so
        NOR(dual) mapped as NAND gives the design back; the AIG is built of
        ANDs, so one of the two often maps better.  A big design gets one of
        the two: the dual for a NOR cell (its AND-built subject graph then
        maps as NANDs), else the design.
        """
        design, lib, target = self.design, self.lib, self.target
        complete = _complete_cells(lib)
        dual = len(lib.cells) == 1 and bool(complete) and not design.storage()
        nor = dual and lib.cells[complete[0]].logic_function().table() == 0b0001
        dual_design = dual_netlist(design) if dual and (nor or not self.big) else None
        try:
            if dual_design is None or not self.big:
                subject = subject_graph(design, self.keep, trees=self.trees)
                self.subjects.append((design, subject, lib, ""))
                self.consider(map_logic(design, lib, subject=subject), "all cells")
            if dual_design is not None:
                dual_lib = _library(_dual_target(target), frozenset())
                dual_subject = subject_graph(dual_design, self.keep, trees=self.trees)
                self.subjects.append((dual_design, dual_subject, dual_lib, "dual "))
                self.consider(_undual(map_logic(dual_design, dual_lib, subject=dual_subject)), "dual")
        except RuntimeError as exc:
            raise UsageError(f"target {target.name} cannot build this design's logic with its cells ({exc})") from None

    def baselines(self) -> None:
        """The careful builder's builds (:func:`baseline_mappings`), whatever the budget: the
        search must never answer with more parts than a build made by hand.  Hazard-free
        builds (``keep``, ``trees``) have their own covers and skip them."""
        if self.keep or self.trees:
            return
        for label, m in baseline_mappings(self.plain, self.target, self.lib, quick=self.big).items():
            if len(self.lib.cells) == 1 and self.best is not None:
                # one cell type: the slots alone bound the parts from below, and a floor
                # candidate must have fewer parts; no need to pack one that cannot
                (cost,) = self.lib.costs.values()
                at_least = -(-len(m.cells) // max(1, round(1 / cost)))
                if at_least >= self.best_score[0]:
                    self.tried.append((label + " (at least)", at_least))
                    continue
            self.consider(m, label, floor=True)

    def restructured(self) -> None:
        """Map each restructured form of the design (:mod:`mapper.logic.restructure`), and on a
        target of one NAND2 or NOR2 cell its dual too; a form that beats every build so far
        becomes the subject the later candidates start from.  Hazard-free builds keep their covers."""
        if self.keep or self.trees:
            return
        from ..logic.restructure.script import forms
        one_cell = len(self.lib.cells) == 1 and bool(_complete_cells(self.lib)) and not self.design.storage()
        for form in [f for d in (self.design, *self.others) for f in forms(d)]:
            ways = [("", form.netlist, self.lib)]
            dual = dual_netlist(form.netlist) if one_cell and not self.big else None
            if dual is not None:
                ways.append(("dual ", dual, _library(_dual_target(self.target), frozenset())))
            for tag, net, lib in ways:
                subject = subject_graph(net)
                m = map_logic(net, lib, subject=subject)
                before = self.best_score
                self.consider(_undual(m) if tag else m, f"{tag}{form.label}")
                if self.best_score < before:
                    self.subjects[:] = [(net, subject, lib, tag)] + self.subjects[:1]

    def other_spellings(self) -> None:
        """Map each other spelling of the design (:mod:`mapper.logic.regions`); one that beats
        every build so far becomes the subject the later candidates start from."""
        for other in self.others:
            subject = subject_graph(other)
            before = self.best_score
            self.consider(map_logic(other, self.lib, subject=subject), "regions as tables")
            if self.best_score < before:
                self.subjects[:] = [(other, subject, self.lib, "")] + self.subjects[:1]

    def multiplexers(self) -> None:
        """The design with its 2:1 multiplexers of a common select in the target's multiplexer
        parts (:mod:`mapper.fit.muxes`), from the design and from the best subject so far; the
        small design split on one input into multiplexers (:mod:`mapper.fit.muxsplit`); nodes
        that are multiplexers of other signals under don't-cares (:mod:`mapper.fit.muxchoice`).
        The logic around the multiplexers is mapped with every cell and with each NAND2 or
        NOR2 cell alone (it often packs best in one kind of gate)."""
        if self.keep or self.trees:
            return
        from .muxchoice import resub_mux_mappings
        from .muxes import mux_cell, mux_mappings
        from .muxsplit import split_mappings
        if mux_cell(self.target, self.lib) is None:
            return
        libs = [self.lib] + [_library(self.target, frozenset(c for c in self.lib.cells if c != k))
                             for k in _complete_cells(self.lib)]
        sources = [self.design, *self.others]
        sources += [s[0] for s in self.subjects[:1] if all(s[0] is not x for x in sources) and not s[3]]
        for src in sources:
            for k, m in enumerate(mux_mappings(src, libs, self.target)):
                self.consider(m, "multiplexer parts", floor=k > 0)
        # the split and the forms map a few times per library: small designs only (a budget
        # of 20 candidates or more: up to about 500 nodes), outside the budget the later
        # candidates share; like the one-cell libraries above, they win only with fewer parts
        if self.budget >= 20:
            for label, m in split_mappings(self.design, libs, self.target) + resub_mux_mappings(
                    self.design, libs, self.target):
                self.consider(m, label, floor=True)

    def one_cell_builds(self, effort: int) -> None:
        """The best builds of the targets of one NAND2 or NOR2 cell that this target's parts
        carry (the nand-only and nor-only builds on gates-74), each searched in full as on
        its own, so that a target of more cells never answers with more parts than those."""
        if len(self.lib.cells) == 1 or self.keep or self.trees:
            return
        for cell in _complete_cells(self.lib):
            sub = _search(self.design, _one_cell_target(self.target, cell), effort, (), False, True, self.plain,
                          self.others)
            if sub.best_mapping is not None:
                self.consider(sub.best_mapping, f"{cell} only, searched as its own target")

    def variants(self) -> None:
        """Other cut budgets and numbers of area-flow passes: the cover heuristics land in
        different local optima, and whole parts are what counts."""
        variants = [] if self.big else _VARIANTS if len(self.subjects) > 1 else _VARIANTS[:4]
        for limit, passes in variants:
            for subj_design, subj, sub_lib, label in self.subjects:
                if not self.spend():
                    break
                m = map_logic(subj_design, sub_lib, subject=subj, cuts_per_node=limit, area_passes=passes)
                self.consider(_undual(m) if label else m,
                              f"{label}{limit} gate choices per net, {passes} cost round(s)")

    def package_costs(self) -> None:
        """Map again with each cell's cost following how full its packages were in the
        best build so far: the more of a cell type's last package stands empty, the more
        the type costs, up to twice its slot price (its few cells there, moved to other
        types, empty that package); a type with every package full keeps its price, and a
        type not used at all costs twice (it would need a package of its own).  Repeated,
        from the new best build, while the part count falls."""
        base = self.lib
        for _ in range(3):
            if self.best_mapping is None or not self.spend():
                return
            counts: dict = {}
            for c in self.best_mapping.cells:
                counts[c.cell] = counts.get(c.cell, 0) + 1
            costs = {}
            for cell, cost in base.costs.items():
                slots = max(1, round(1 / cost))
                n = counts.get(cell, 0)
                last = n % slots  # cells in a package not full (0: all full)
                costs[cell] = cost * (2.0 if n == 0 else 1.0 + (slots - last) / slots if last else 1.0)
            before = self.best_score
            subj_design, subj, _, _ = self.subjects[0]
            m = map_logic(subj_design, RecostedLibrary(base, costs), subject=subj)
            if self.consider(m, "package costs") >= before:
                return

    def remap(self) -> None:
        """Re-map the mapped logic: a second subject graph built from the best cover so far."""
        m = self.best_mapping
        for _ in range(2):
            if m is None or not self.spend():
                break
            again = map_logic(mapping_netlist(self.design, m, self.target), self.lib, keep=self.keep,
                              trees=self.trees)
            if again.area < m.area - 1e-9:
                m = again
                self.consider(m, "re-mapped")
            else:
                break

    def seeds(self, subject) -> None:
        """A single complete cell type (NAND2 or NOR2), alone and with each other type: one kind
        of part packs best, and its mapping is exact."""
        lib = self.lib
        used = self.result().cell_counts()
        seeds = [{base} for base in _complete_cells(lib)]
        seeds += [{base, extra} for base in _complete_cells(lib)
                  for extra in sorted(used, key=lambda c: (-used[c], c)) if extra != base and extra in lib.cells]
        seen_seeds: set = set()
        for keep_cells in seeds:
            if frozenset(keep_cells) in seen_seeds:
                continue
            seen_seeds.add(frozenset(keep_cells))
            if not self.spend():
                break
            trial = frozenset(c for c in lib.cells if c not in keep_cells)
            try:
                sub = _library(self.target, trial)
                m2 = map_logic(self.design, sub, subject=subject)
            except (ValueError, RuntimeError):
                continue
            self.consider(m2, "only " + "+".join(sorted(keep_cells)))

    def drop_types(self, subject) -> None:
        """Drop part types one at a time (greedy descent over cell subsets): fewer kinds of part
        often means fewer parts, since spare slots pool."""
        excluded: frozenset = frozenset()
        for _ in range(8):
            step = None
            for cell in sorted(set(self.result().cell_counts())):
                if cell not in self.lib.cells or cell in excluded:
                    continue
                trial = excluded | {cell}
                if not self.spend():
                    break
                try:
                    sub = _library(self.target, trial)
                except ValueError:
                    continue
                if sub.inverter() is None:
                    continue
                try:
                    m2 = map_logic(self.design, sub, subject=subject)
                except RuntimeError:
                    continue
                before = self.best_score
                if self.consider(m2, "without " + "+".join(sorted(trial))) < before:
                    step = trial
            if step is None:
                break
            excluded = step


def fit_gates(design: Netlist, target: Target, effort: int = 1, keep=(), trees: bool = False,
              restructure: bool = True) -> Build:
    """The build with the fewest whole parts found for ``design`` on ``target``.

    ``keep`` names design nets that must stay signals of their own, and
    ``trees`` asks for tree-shaped matches only, which keep hazard-free
    covers hazard-free (see :func:`mapper.fit.gates.map_logic`).  The
    candidates are those of the module docstring, in that order, as long as
    the budget lasts.  ``restructure`` false leaves out the restructured
    forms, the multiplexer parts and the one-cell targets' builds (the
    search as it was before them: the benchmarks' "before").  On a target with
    medium-scale chips the design is also built with them, and the build of
    fewer parts kept (:func:`mapper.fit.blocks.with_blocks`).
    """
    if not keep and not trees and has_blocks(target):
        return with_blocks(design, target,
                           lambda d: fit_gates(d, without_blocks(target), effort, restructure=restructure))
    # the search maps spellings made from the design's function in small regions, listed in an
    # order from the structure alone (mapper.fit.spellings): the same design written differently --
    # names, the order of inputs and gates, a sum of products or an expression -- meets the same
    # choices and gets the same parts.  The careful builder's builds start from the design as written.
    ports = list(design.inputs)
    subject, others = canonical_order(design), ()
    if not keep and not trees:  # (hazard-free covers are mapped as written)
        subject, *rest = spellings(design)
        others = tuple(rest)
    design = canonical_order(design)
    search = _search(subject, target, effort, keep, trees, restructure, design, others)
    if restructure:
        search.one_cell_builds(effort)
    best = search.result()
    if search.best_mapping is not None and not keep and not trees:
        # nets of the spellings that equal the design's own nets take their names back
        named = design_names(design, search.best_mapping, mapping_netlist(design, search.best_mapping, target))
        again = _assemble(design, target, named, search.storage_cells) if named is not search.best_mapping else None
        if again is not None and len(again.parts) == len(best.parts):
            best = again
    best.inputs = ports  # the design's own port order
    if design.exdc is not None:
        from ..logic.restructure.collapse import off_care_differences
        used = off_care_differences(design, best.to_netlist())
        if used:
            best.notes.append("don't-cares used: outputs " + ", ".join(used) + " differ from the design only "
                              "where its don't-care network (.exdc) is 1; the proof compares them elsewhere")
    log.info("tried: %s", ", ".join(f"{label}: {n} parts" for label, n in search.tried))
    fewest = min(n for _, n in search.tried) if search.tried else len(best.parts)
    best.notes.append(f"part search: {len(search.tried)} variants tried, best {fewest} parts ("
                      + "; ".join(f"{label}: {n}" for label, n in search.tried) + ")")
    return best


def _search(design: Netlist, target: Target, effort: int, keep, trees: bool, restructure: bool,
            plain: Netlist, others: tuple = ()) -> _PartSearch:
    """The part search of :func:`fit_gates` on ``target`` alone (``plain``: the design as written;
    ``others``: other spellings of ``design``)."""
    search = _PartSearch(design, target, effort, keep, trees, plain, others)
    search.first_mappings()
    search.other_spellings()
    search.baselines()
    if restructure:
        search.restructured()
        search.multiplexers()
    subject = search.subjects[0][1]
    search.variants()
    if effort > 0 and not search.big:
        search.remap()
        if len(search.lib.cells) > 1:
            search.package_costs()
    if effort > 0 and len(search.lib.cells) > 1:
        search.seeds(subject)
        search.drop_types(subject)
    return search


def _one_cell_target(target: Target, cell: str) -> Target:
    """``target`` with one logic cell, ``cell``, and its storage cells (same parts and pins)."""
    keep = {name for name, cd in target.cells.items() if name == cell or cd.storage is not None}
    return replace(target, name=f"{target.name}:{cell}",
                   cells={k: v for k, v in target.cells.items() if k in keep},
                   carriers={k: v for k, v in target.carriers.items() if k in keep})


def baseline_mappings(design: Netlist, target: Target, lib: CellLibrary | None = None,
                      quick: bool = False) -> dict:
    """label -> :class:`Mapping` of each build a careful builder makes without a mapper
    (:mod:`mapper.fit.plain`): by hand in each complete 2-input cell of the target
    (NAND2, NOR2), and gate for gate into the cells that carry them.

    ``quick`` (big designs) leaves out gate for gate where it cannot win: on
    a target of one NAND2 or NOR2 cell, a design drawn only in gates of at
    most two inputs (each textbook form is the gate's own minimum chain, and
    the hand conversion only shares and cancels)."""
    lib = lib or _library(target)
    out: dict = {}
    for cell in _complete_cells(lib):
        out[f"by hand in {cell}"] = hand_mapping(design, lib, cell)
    if quick and len(lib.cells) == 1 and out and all(
            node.func.n <= 2 for node in design.nodes.values() if isinstance(node, Logic)):
        return out
    m = plugin_mapping(design, lib)
    if m is not None:
        out["gate for gate"] = m
    return out


def baseline_builds(design: Netlist, target: Target) -> dict:
    """label -> packed :class:`Build` of each of :func:`baseline_mappings` (what the
    benchmarks and tests measure the part search against)."""
    storage_cells = _storage_cells(target)
    return {label: _assemble(design, target, m, storage_cells)
            for label, m in baseline_mappings(design, target).items()}


def dual_netlist(design: Netlist):
    """The dual design (every function f replaced by f*(x) = ~f(~x)), or
    ``None`` when a node is too wide for a table.  Ports and net names stay."""
    n = Netlist(design.name)
    for i in design.inputs:
        n.add_input(i)
    for name, node in design.nodes.items():
        if not isinstance(node, Logic):
            continue
        f = node.func
        if f.n > 16:
            return None
        full = (1 << (1 << f.n)) - 1
        t = f.table()
        # f*(x) = ~f(~x): reverse the minterm order, then complement
        rev = int(format(t, f"0{1 << f.n}b")[::-1], 2)
        n.add_logic(name, node.fanins, Function.from_table(f.n, ~rev & full))
    for o in design.outputs:
        n.add_output(o)
    return n


def _undual(mapping: Mapping) -> Mapping:
    """A mapping of the dual design, read as a build of the design: the same
    gates, with the supply rails swapped (the dual of constant 1 is 0)."""
    swap = {"VCC": "GND", "GND": "VCC"}

    def net(x):
        return swap.get(x, x) if x is not None else None

    cells = [replace(c, args=tuple(net(a) for a in c.args)) for c in mapping.cells]
    outputs = {o: net(n) for o, n in mapping.outputs.items()}
    storage = {k: (net(d), net(c)) for k, (d, c) in mapping.storage_nets.items()}
    return Mapping(cells, outputs, storage, mapping.area, mapping.depth)


def _dual_target(target):
    """The target with its one NAND2/NOR2 cell computing the dual function
    (same name, parts and pins): used only to map a dual design."""
    cells = {}
    for name, cd in target.cells.items():
        if cd.function is not None and cd.function.n == 2 and cd.function.table() in (0b0111, 0b0001):
            cd = replace(cd, function=Function.from_table(2, 0b0111 ^ 0b0001 ^ cd.function.table()))
        cells[name] = cd
    return replace(target, name=target.name + "~dual", cells=cells)


def _complete_cells(lib) -> list:
    """2-input cells that can build any function alone (NAND2, NOR2)."""
    out = []
    for name, cd in lib.cells.items():
        if cd.function.n == 2 and cd.function.table() in (0b0111, 0b0001):
            out.append(name)
    return sorted(out)


def _storage_cells(target) -> dict:
    """storage kind -> cell name among the target's cells."""
    out: dict = {}
    for name, cd in target.cells.items():
        if cd.storage is not None and target.carriers.get(name):
            out.setdefault(cd.storage, name)
    return out


def _assemble(design, target, mapping: Mapping, storage_cells):
    storage_uses = []
    extra_cells = []
    loop_cells = []
    groups = {}
    inverted: dict = {}
    for net, node in design.storage().items():
        d, ctrl = mapping.storage_nets[net]
        kind = node.kind
        if kind == "as":
            continue  # a feedback loop: closed as gates below
        cell = storage_cells.get(kind)
        invert_ctrl = False
        if cell is None:
            flipped = {"fe": "re", "al": "ah", "re": "fe", "ah": "al"}.get(kind)
            if flipped in storage_cells:
                cell, invert_ctrl = storage_cells[flipped], True
        if ctrl is None:
            raise UsageError(f"storage element {net} has no clock or enable net")
        if cell is None:
            cells, group = gate_storage(_library(target), kind, d, ctrl, net, node.init)
            loop_cells.extend(cells)
            groups[net] = group
            continue
        cd = target.cells[cell]
        if invert_ctrl:   # one inverter per control net, shared by every element on it
            if ctrl not in inverted:
                inverted[ctrl] = _fresh(design, f"{ctrl}_n")
                extra_cells.append(_inverter_use(target, ctrl, inverted[ctrl]))
            ctrl = inverted[ctrl]
        pins = {cd.inputs[0]: d, cd.inputs[1]: ctrl, cd.output: net}
        for extra in cd.inputs[2:]:
            pins[extra] = "VCC"  # preset/clear inactive (active low)
        storage_uses.append((cell, pins, net, node.init))
    if extra_cells:
        mapping = Mapping(mapping.cells + extra_cells, mapping.outputs, mapping.storage_nets,
                          mapping.area, mapping.depth)
    notes: list = []
    mapping = split_fanout(mapping, target, notes)
    mapping, loops = close_loops(_library(target), design, mapping)  # after the fan-out pass, as below
    groups.update(loops)
    if loop_cells:  # after the fan-out pass, whose ordering assumes no loops
        mapping = Mapping(mapping.cells + loop_cells, mapping.outputs, mapping.storage_nets,
                          mapping.area, mapping.depth)
        notes.append(f"{len(groups)} storage element(s) built from gates: "
                     + ", ".join(sorted({g.template for g in groups.values()})))
    b = pack(design.name, target, design.inputs, design.outputs, mapping, storage_uses)
    b.storage_groups.update(groups)
    b.notes.extend(notes)
    return b


def _fresh(design, base: str) -> str:
    """``base``, or ``base~2``, ``base~3`` ... : a net name the design does not use."""
    name, k = base, 1
    while name in design.nodes:
        k += 1
        name = f"{base}~{k}"
    return name


def _inverter_use(target, src, out):
    from .gates import CellUse
    impl = _library(target).inverter()
    if impl is None:
        raise UsageError(f"target {target.name} cannot make an inverter for a clock of the other edge")
    (cell, args), = impl.gates
    return CellUse(cell, tuple(src for _ in args), out, None)


def mapping_netlist(design: Netlist, mapping: Mapping, target) -> Netlist:
    """The mapped logic as a netlist over the same ports and storage (for re-mapping)."""
    n = Netlist(design.name)
    for i in design.inputs:
        n.add_input(i)
    for net, node in design.storage().items():
        d, c = mapping.storage_nets[net]
        n.add_storage(net, d, node.kind, c, node.init)
    for rail, v in (("VCC", 1), ("GND", 0)):
        n.add_constant(rail, v)
    for c in mapping.cells:
        cd = target.cells[c.cell]
        n.add_logic(c.out, c.args, cd.function)
    for o in design.outputs:
        net = mapping.outputs[o]
        if net != o:
            n.add_logic(o, [net], Function.from_table(1, 0b10))
        n.add_output(o)
    return n
