"""Typed results of the analyses of a build, and the plain data made from them.

The analyses (:mod:`mapper.analyze`) read a :class:`~mapper.build.Build` and
return these; the writers and the command line read them beside the build.
Each result turns into plain data with stable, append-only keys (SI units in
key names) through ``as_dict``; :meth:`Analysis.figures` is the ``timing``
object of a build's JSON file and :meth:`Analysis.summary` the summary that
``netfit build --json`` prints.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import TYPE_CHECKING

if TYPE_CHECKING:
    from ..build import Build

__all__ = ["ClockFigures", "RelayFigures", "Timing", "Supply", "Glitches", "Proof", "Analysis"]


@dataclass
class ClockFigures:
    """Clocked figures of a sequential build (see :mod:`mapper.analyze.timing` and :mod:`mapper.analyze.relay`).

    ``period_min_s`` is the shortest safe period (``inf`` when none works),
    ``limited_by`` what sets it, ``path`` the storage-to-storage path that
    does.  Hold margins and pulse widths are checked at ``checked_period_s``
    (the clock asked for, ``requested_period_s``, else the shortest period):
    ``hold_violations`` and ``pulse_violations`` list what fails there.
    ``latches`` lists latches that borrow time (data passing while open).
    Relay builds add ``high_min_s`` and ``low_min_s``: how long the clock
    must stay high and low for every relay of the storage to land.
    """

    period_min_s: float
    max_hz: float | None
    path: dict | None
    hold_slack_s: float | None
    hold_path: dict | None
    input_setup_s: float
    clock_to_output_s: float | None
    notes: list = field(default_factory=list)
    limited_by: str = ""
    pulse_width_s: float = 0.0
    checked_period_s: float = 0.0
    hold_violations: list = field(default_factory=list)
    pulse_violations: list = field(default_factory=list)
    latches: list = field(default_factory=list)
    requested_period_s: float | None = None
    high_min_s: float | None = None
    low_min_s: float | None = None
    #: relay builds: how long data inputs must stay after the active change; storage coil change after it
    input_hold_s: float | None = None
    clock_to_q_s: float = 0.0

    @property
    def violations(self) -> int:
        """Hold and pulse-width violations at the checked period, and a requested clock too fast."""
        fast = self.requested_period_s is not None and self.requested_period_s < self.period_min_s * (1 - 1e-9)
        return len(self.hold_violations) + len(self.pulse_violations) + int(fast)

    def as_dict(self) -> dict:
        finite = self.period_min_s if self.period_min_s != float("inf") else None
        out = {"clock_period_min_s": finite, "clock_max_hz": self.max_hz, "clock_path": self.path,
               "hold_slack_s": self.hold_slack_s, "hold_path": self.hold_path,
               "input_setup_s": self.input_setup_s, "clock_to_output_s": self.clock_to_output_s,
               "clock_notes": list(self.notes), "clock_limited_by": self.limited_by,
               "clock_pulse_min_s": self.pulse_width_s, "clock_checked_period_s": self.checked_period_s,
               "hold_violations": self.hold_violations, "pulse_violations": self.pulse_violations,
               "latches_borrowing": self.latches, "clock_requested_period_s": self.requested_period_s,
               "timing_violations": self.violations}
        if self.high_min_s is not None:
            out["clock_high_min_s"] = self.high_min_s
            out["clock_low_min_s"] = self.low_min_s
            out["input_hold_s"] = self.input_hold_s
        return out


@dataclass
class RelayFigures:
    """Relay timing figures: one coil level, the relay's own times, storage clock to output."""

    per_level_s: float
    operate_s: float | None
    release_s: float | None
    bounce_s: float | None
    clock_to_q_s: float

    def as_dict(self) -> dict:
        return {"per_level_s": self.per_level_s, "operate_s": self.operate_s, "release_s": self.release_s,
                "bounce_s": self.bounce_s, "clock_to_q_s": self.clock_to_q_s}


@dataclass
class Timing:
    """Worst and best paths of a build (static timing of gates, or coil levels of relays).

    ``outputs`` maps each output to ``[best_s, worst_s]``; ``critical_path``
    lists the hops of the worst path (dicts with parts, pins and arrivals).
    Gate builds also have ``paths`` (per output, worst and best, hop by
    hop), ``critical_start``/``critical_end``, ``overloaded`` nets and, with
    storage, ``clock``; relay builds have ``relay``.
    """

    delay_s: float
    delay_typ_s: float
    levels: int
    outputs: dict
    critical_path: list
    paths: list | None = None
    critical_start: dict | None = None
    critical_end: dict | None = None
    overloaded: list | None = None
    clock: ClockFigures | None = None
    relay: RelayFigures | None = None
    #: gate builds with feedback loops kept as gates: one dict per loop (see :mod:`mapper.analyze.loops`)
    loops: list | None = None

    def as_dict(self) -> dict:
        out = {"delay_s": self.delay_s, "delay_typ_s": self.delay_typ_s, "levels": self.levels,
               "outputs": self.outputs}
        if self.paths is not None:
            out["paths"] = self.paths
        out["critical_path"] = self.critical_path
        out.update({"critical_start": self.critical_start, "critical_end": self.critical_end})
        if self.relay is None:
            out["overloaded"] = self.overloaded if self.overloaded is not None else []
        if self.clock is not None:
            out.update(self.clock.as_dict())
        if self.relay is not None:
            out.update(self.relay.as_dict())
        if self.loops is not None:
            out["feedback_loops"] = self.loops
        return out


@dataclass
class Supply:
    """Supply current of a build; relay builds add coil figures and contact loads.

    ``current_a`` is the worst case (see ``basis``), ``current_typ_a`` the
    typical figure.  ``input_coil_current_a`` maps an input net to the coil
    current it carries when on; ``contact_overloads`` lists ``[net, amps,
    rating]`` where coils fed through contacts draw more than they are rated for.
    """

    current_a: float
    current_typ_a: float
    basis: str = ""
    #: with nothing switching (gate builds: the quiescent figures; relay builds: every coil on, as ``current_a``)
    static_a: float | None = None
    #: the switching rate ``current_a`` assumes (gate builds)
    switching_hz: float | None = None
    coil_current_a: float | None = None
    coil_voltage_v: float | None = None
    input_coil_current_a: dict = field(default_factory=dict)
    contact_overloads: list = field(default_factory=list)

    def as_dict(self, relay: bool) -> dict:
        out: dict = {"supply_current_a": self.current_a, "supply_current_typ_a": self.current_typ_a,
                     "supply_current_static_a": self.static_a, "supply_basis": self.basis}
        if self.switching_hz is not None:
            out["supply_switching_hz"] = self.switching_hz
        if relay:
            out.update({"coil_current_a": self.coil_current_a, "coil_voltage_v": self.coil_voltage_v,
                        "input_coil_current_a": self.input_coil_current_a,
                        "contact_overloads": self.contact_overloads})
        return out


@dataclass
class Glitches:
    """Glitches found in a build (see :mod:`mapper.analyze.glitch` and :mod:`mapper.analyze.relay_glitch`).

    ``hazards`` lists them (at most a few hundred; ``total`` counts all),
    ``errors`` counts those reaching a clock, enable, preset or clear input,
    ``search`` says what was examined, ``floating`` (relay builds) when each
    relay-driven net floats during a transfer.
    """

    hazards: list = field(default_factory=list)
    total: int = 0
    errors: int = 0
    search: dict | None = None
    floating: list | None = None

    def as_dict(self) -> dict:
        out: dict = {"hazards": self.hazards, "hazards_total": self.total, "glitch_errors": self.errors}
        if self.floating is not None:
            out["floating"] = self.floating
        if self.search is not None:
            out["glitch_search"] = self.search
        return out


@dataclass
class Proof:
    """Whether the build was proved to do the design's logic, how, and the prover's notes."""

    status: str = "not checked"
    method: str = ""
    notes: list = field(default_factory=list)


@dataclass
class Analysis:
    """Everything netfit found out about a build: the results every writer reads beside it.

    ``cautions`` are what a builder must heed (supply, mains, start-up
    states, loads); ``loops`` the feedback loops of a relay build;
    ``hazard_free`` what consensus terms cost when they were asked for;
    ``stage_s`` seconds per stage of the run; ``notes`` further notes of the
    run (beside the build's own and the prover's).
    """

    timing: Timing
    supply: Supply
    glitches: Glitches
    proof: Proof
    cautions: list = field(default_factory=list)
    loops: list = field(default_factory=list)
    hazard_free: dict | None = None
    stage_s: dict = field(default_factory=dict)
    notes: list = field(default_factory=list)
    #: relay builds: the switch-level checks of the build as wired (:mod:`mapper.analyze.switch`)
    wiring_check: dict | None = None
    #: relay builds: worst currents and coil voltages as wired (:mod:`mapper.analyze.wired`)
    wired: dict | None = None

    @property
    def verified(self) -> str:
        """The proof's status in one word (``"proved"``)."""
        return self.proof.status

    def all_notes(self, build: Build) -> list:
        """The build's notes (how it was made), then the prover's, then the run's."""
        return list(build.notes) + list(self.proof.notes) + list(self.notes)

    def figures(self, build: Build) -> dict:
        """Timing, supply and glitch figures as one dict (the ``timing`` object of the build file)."""
        out = self.timing.as_dict()
        out.update(self.supply.as_dict(build.is_relay))
        if build.fit_stats:
            out["synthesis"] = dict(build.fit_stats)
        out.update(self.glitches.as_dict())
        if self.wiring_check is not None:
            out["wiring_check"] = self.wiring_check
        if self.wired is not None:
            out["wired"] = self.wired
        if self.stage_s:
            out["stage_s"] = dict(self.stage_s)
        if self.hazard_free is not None:
            out["hazard_free"] = self.hazard_free
        return out

    def summary(self, build: Build) -> dict:
        """The ``--json`` summary of ``netfit build`` (stable, append-only keys)."""
        cost, currency = build.cost()
        s = {
            "design": build.design,
            "target": build.target.name,
            "parts_total": len(build.parts),
            "parts": dict(sorted(build.part_counts().items())),
            "cells": dict(sorted(build.cell_counts().items())),
            **_units(build),
            "support_parts": dict(sorted(build.support_counts().items())),
            "delay_s": self.timing.delay_s,
            "cost": cost,
            "currency": currency,
            "verified": self.proof.status,
            "delay_typ_s": self.timing.delay_typ_s,
            "supply_current_a": self.supply.current_a,
            "supply_current_typ_a": self.supply.current_typ_a,
        }
        if build.is_relay:
            s["coil_current_a"] = self.supply.coil_current_a
            s["coil_voltage_v"] = self.supply.coil_voltage_v
        s["ties"] = len(build.ties)
        s["supply_current_static_a"] = self.supply.static_a
        s["supply_basis"] = self.supply.basis
        s["hazards_total"] = self.glitches.total
        s["glitch_errors"] = self.glitches.errors
        ck = self.timing.clock
        s["clock_max_hz"] = ck.max_hz if ck is not None else None
        s["timing_violations"] = ck.violations if ck is not None else 0
        s["cautions"] = list(self.cautions)
        s["notes"] = self.all_notes(build)
        if self.hazard_free is not None:
            s["hazard_free"] = self.hazard_free
        return s


def _units(build: Build) -> dict:
    """Sections of chips used and paid for (``sections_used``, ``sections_available``,
    ``spare_sections``), or on relay builds poles (``poles_used`` ...)."""
    word = "poles" if build.is_relay else "sections"
    return {f"{word}_used": build.slots_used(), f"{word}_available": build.slots_available(),
            f"spare_{word}": build.spare_slots()}


def units_of(summary: dict) -> tuple:
    """``(word, used, available, spare)`` of a build summary: ``word`` is ``"sections"`` (chips)
    or ``"poles"`` (relays); the numbers are None for a summary without them (a failed build)."""
    word = "poles" if "poles_used" in summary else "sections"
    return (word, summary.get(f"{word}_used"), summary.get(f"{word}_available"), summary.get(f"spare_{word}"))
