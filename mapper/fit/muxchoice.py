"""Which nodes go into quad multiplexer parts, from the multiplexer forms of
:mod:`mapper.logic.restructure.muxresub` (resubstitution with don't-cares).

A quad multiplexer part (a 74HC157) has one select pin for its four
sections, so a form pays only where several nodes can share a select.  The
choice here is greedy: every node with a form of two data signals (a true
multiplexer, freeing at least two AND nodes) takes the select that the
most such nodes share.  With ``fill``, the spare sections of each select's
last package then take ANDs and ORs of that select (a section with one
data input tied to a rail): a gate moved into a section that would stand
empty anyway.  A select keeps its nodes when at least ``least`` nodes could
share it (its ANDs and ORs counted with ``fill``).

Each choice is one candidate of the part search (:mod:`mapper.fit.fit`),
mapped, packed and weighed like every other, and its build is proved equal
to the design.
"""
from __future__ import annotations

from ..logic.aig import from_netlist
from ..logic.minimize import min_cover
from ..logic.restructure.graph import mffc_size
from ..logic.restructure.muxresub import mux_forms
from .muxes import mapped_with_muxes, mux_cell

__all__ = ["resub_mux_mappings", "choose"]

#: (least nodes sharing a select, fill spare sections) tried, in this order
CHOICES = [(4, True), (2, True)]


def resub_mux_mappings(design, libs: list, target) -> list:
    """``[(label, Mapping)]``: ``design`` mapped with the nodes each of
    :data:`CHOICES` picks built in the target's multiplexer parts; empty when
    the target has none, the design has storage, or no select is shared."""
    got = mux_cell(target, libs[0])
    if got is None or design.storage():
        return []   # storage: its loops and latches are built by their own rules
    aig, _ = from_netlist(design, cover=min_cover)
    forms = mux_forms(aig)
    if not forms:
        return []
    phases = _read_phases(aig)
    out = []
    seen: set = set()
    for least, fill in CHOICES:
        muxes = choose(forms, phases, least, fill, aig)
        key = frozenset(muxes.items())
        if not muxes or key in seen:
            continue
        seen.add(key)
        label = f"multiplexer forms, selects shared {least}+" + (", spare sections filled" if fill else "")
        out += [(label, m) for m in mapped_with_muxes(design, aig, muxes, set(muxes), libs, got)]
    return out


def choose(forms: dict, phases: dict, least: int, fill: bool, aig) -> dict:
    """variable -> its chosen form ``(s, d1, d0, compl)`` (see the module docstring).

    ``forms`` is :func:`~mapper.logic.restructure.muxresub.mux_forms` of
    ``aig``; ``phases`` maps a variable to ``(readers of its positive
    literal, readers of its complement)``: the form with the fewest data in
    a phase the logic does not make anyway, then giving the phase most
    readers want, is preferred.  A true multiplexer form counts only where
    it frees at least two AND nodes (the node's fan-out-free cone down to the
    form's inputs: a lone AND is a gate already), and a node inside the cone
    of a chosen node is not chosen."""
    refs = aig.fanout_counts()
    true_forms: dict = {}
    for v, fs in forms.items():
        fs = [f for f in fs if f[1] > 1 and f[2] > 1
              and mffc_size(aig, v, refs, [x >> 1 for x in f[:3]])[0] >= 2]
        if fs:
            true_forms[v] = fs
    share: dict = {}
    for fs in true_forms.values():
        for s in {f[0] for f in fs}:
            share[s] = share.get(s, 0) + 1
    groups: dict = {}
    picked: dict = {}
    for v, fs in true_forms.items():
        top = max(share[f[0]] for f in fs)
        s = min(f[0] for f in fs if share[f[0]] == top)
        picked[v] = _best([f for f in fs if f[0] == s], phases, v)
        groups.setdefault(s, []).append(v)
    # nodes that die with a true multiplexer are no gates for spare sections
    gates = _gate_forms(forms, phases, set(picked) | _inside(aig, refs, picked)) if fill else {}
    chosen: dict = {}
    for s, vs in groups.items():
        extra = gates.get(s, [])
        if len(vs) + len(extra) < least:
            continue
        chosen.update((v, picked[v]) for v in vs)
        # gates take the sections the true multiplexers leave in their last package
        chosen.update(extra[:-len(vs) % 4])
    inside = _inside(aig, refs, chosen)
    chosen = {v: f for v, f in chosen.items() if v not in inside}
    return {v: _select_phase(f, phases.get(f[0] >> 1, (0, 0))) for v, f in chosen.items()}


def _gate_forms(forms: dict, phases: dict, taken: set) -> dict:
    """select -> ``[(variable, form)]`` of the nodes not in ``taken`` that are
    an AND or OR of the select (one data input a constant)."""
    out: dict = {}
    for v, fs in forms.items():
        if v in taken:
            continue
        by_select: dict = {}
        for f in fs:
            if f[1] < 2 or f[2] < 2:
                by_select.setdefault(f[0], []).append(f)
        for s, mine in by_select.items():
            out.setdefault(s, []).append((v, _best(mine, phases, v)))
    return out


def _select_phase(form: tuple, phase: tuple) -> tuple:
    """``form`` with its select in the phase most readers of the select's node read
    (``s ? d1 : d0`` is ``!s ? d0 : d1``): the phase the rest of the logic makes anyway."""
    s, d1, d0, compl = form
    return (s ^ 1, d0, d1, compl) if phase[1] > phase[0] else form


def _inside(aig, refs: list, chosen: dict) -> set:
    """Nodes that die with a chosen node (its cone down to its form's inputs), outputs first."""
    inside: set = set()
    for v in sorted(chosen, reverse=True):
        if v in inside:
            continue
        _, cone = mffc_size(aig, v, refs, [x >> 1 for x in chosen[v][:3]])
        inside.update(u for u in cone if u != v)
    return inside


def _best(fs: list, phases: dict, v: int) -> tuple:
    """The form of ``v`` with the fewest data in the phase the logic does not
    make anyway (each an inverter), then whose output phase most readers want."""
    def cost(f):
        wrong = sum(1 for d in f[1:3] if d > 1 and d & 1 != _natural(phases, d >> 1))
        return (wrong, -phases.get(v, (0, 0))[f[3]], f)
    return min(fs, key=cost)


def _natural(phases: dict, var: int) -> int:
    """The phase of ``var`` most of its readers read (0 for a free input: its complement is an inverter)."""
    pos, neg = phases.get(var, (0, 0))
    return 1 if neg > pos else 0


def _read_phases(aig) -> dict:
    """variable -> (reads of its positive literal, reads of its complement) by ANDs and outputs."""
    out: dict = {}

    def read(x):
        pos, neg = out.get(x >> 1, (0, 0))
        out[x >> 1] = (pos + 1, neg) if not x & 1 else (pos, neg + 1)

    for v in range(1, aig.num_vars):
        if aig.f0[v] >= 0:
            read(aig.f0[v])
            read(aig.f1[v])
    for _, x in aig.outputs:
        read(x)
    for latch in aig.latches:
        read(latch.next)
        if latch.control is not None:
            read(latch.control)
    for v in list(aig.inputs) + [latch.var for latch in aig.latches]:
        out[v] = (1, 0)   # a free variable comes in its positive phase
    return out
