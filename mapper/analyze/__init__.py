"""Analyses of a build: timing, glitches, supply current, relay checks and cautions.

Each analysis reads a :class:`~mapper.build.Build` (and nothing of how it was
made) and returns a typed result (:mod:`mapper.analyze.results`).
:func:`analyze_build` runs every analysis that fits the kind of build;
:mod:`mapper.flow` calls it after the proof.

Modules: :mod:`~mapper.analyze.timing` (static timing of gate builds),
:mod:`~mapper.analyze.relay` (relay timing, feedback loops),
:mod:`~mapper.analyze.supply` (supply current),
:mod:`~mapper.analyze.timed`, :mod:`~mapper.analyze.glitch_engine` and
:mod:`~mapper.analyze.glitch` (the glitch finder for gate builds),
:mod:`~mapper.analyze.relay_glitch` (transfers of changeover contacts),
:mod:`~mapper.analyze.cautions`.
"""
from __future__ import annotations

from ..build import Build
from .cautions import cautions
from .glitch import BUILD_MAX_TRANSITIONS, BUILD_MAX_WORK, glitch_report
from .relay import feedback_loops, relay_timing
from .relay_glitch import relay_glitches, relay_transfers
from .results import Analysis, Glitches, Proof, Timing
from .supply import supply_current
from .switch import check_relay_build
from .timing import static_timing
from .wired import wired_figures

__all__ = ["analyze_build", "build_timing", "build_glitches"]


def build_timing(build: Build, clock_hz: float | None = None) -> Timing:
    """Worst and best paths of any build (coil levels for relays, catalog delays for gates).

    ``clock_hz`` is the clock the builder means to run: hold margins and
    pulse widths are checked at it (else at the fastest safe clock).
    """
    period = 1.0 / clock_hz if clock_hz else None
    return relay_timing(build, period) if build.is_relay else static_timing(build, period)


def build_glitches(build: Build, multi: bool = False, max_transitions: int = BUILD_MAX_TRANSITIONS,
                   max_work: int | None = BUILD_MAX_WORK, together=()) -> Glitches:
    """Glitches of any build: timed simulation of gate builds, contact transfers of relay builds.

    ``multi``, ``max_transitions`` and ``max_work`` steer the search of gate
    builds (:func:`mapper.analyze.glitch.glitch_report`), with ``together``
    the groups of inputs that change at once; a relay build is searched in
    full up to a size limit (:func:`mapper.analyze.relay_glitch.relay_glitches`).
    """
    if not build.is_relay:
        return glitch_report(build, multi=multi, max_transitions=max_transitions, max_work=max_work,
                             together=together)
    if not build.contacts:
        return Glitches([], 0, 0, None, [])
    rg = relay_glitches(build)
    return Glitches(rg["hazards"], len(rg["hazards"]), sum(1 for h in rg["hazards"] if h["error"]), rg["search"],
                    relay_transfers(build))


def analyze_build(build: Build, proof: Proof, glitches: Glitches | None = None,
                  clock_hz: float | None = None, together=()) -> Analysis:
    """Every analysis of ``build``: timing, supply, glitches (unless given), relay loops, cautions.

    ``clock_hz`` is the clock rate the builder means to run (timing checks and
    the switching supply current use it); ``together`` lists groups of
    inputs that change at once (the glitch search changes them together).
    """
    timing = build_timing(build, clock_hz)
    supply = supply_current(build, clock_hz)
    loops = feedback_loops(build) if build.is_relay else []
    if glitches is None:
        glitches = build_glitches(build, together=together)
    notes = []
    wiring = None
    wired = None
    if build.is_relay:
        report = check_relay_build(build)
        wiring = report.as_dict()
        notes.append(_wiring_note(report))
        wired = wired_figures(build, report.settled)
    return Analysis(timing=timing, supply=supply, glitches=glitches, proof=proof,
                    cautions=cautions(build, timing, supply, loops, wired, glitches), loops=loops, notes=notes,
                    wiring_check=wiring, wired=wired.as_dict() if wired is not None else None)


def _wiring_note(r) -> str:
    """The switch-level checks in one sentence with their counts."""
    how = "all of them" if r.exhaustive else "a sample"
    cut = (f"; {r.late_orders_cut} of those without the slowest-relay orders, their budget spent"
           if r.late_orders_cut else "")
    return (f"checked as wired, relays moving in every order: {r.stable_states} settled states and "
            f"{r.changes_checked + r.changes_sampled} input changes ({how}; {r.changes_sampled} of the changes "
            f"on sampled orders{cut}), {r.states_visited:,} states visited, {r.defects} defect(s)")
