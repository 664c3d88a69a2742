"""Placement: the parts of a build on a board, and the wires that join them.

A step after the fit that reads a :class:`~mapper.build.Build` and nothing
downstream of it (this package imports only ``build``, ``catalog`` and
``errors``): :mod:`~mapper.place.boards` (the boards ``--board`` names),
:mod:`~mapper.place.footprints` (where the pins of a package stand),
:mod:`~mapper.place.placement` (where each part goes, by simulated
annealing) and :mod:`~mapper.place.runs` (each net as a numbered daisy
chain of wires).  The writers of ``wiring.txt``, ``board.svg`` and the
report read the result.
"""
from __future__ import annotations

from dataclasses import dataclass

from ..build import Build
from .boards import DEFAULT_BOARD, Board, board_from_spec
from .placement import Placement, catalog_order, place
from .runs import Runs, wire_runs

__all__ = ["Plan", "plan", "plan_for", "Board", "board_from_spec", "Placement", "Runs", "place", "catalog_order",
           "wire_runs", "DEFAULT_BOARD"]


@dataclass
class Plan:
    """A build placed on a board and wired."""

    placement: Placement
    runs: Runs


def plan(b: Build, board: str | Board | None = None, anneal: bool = True) -> Plan:
    """Place ``b`` on ``board`` (a name as ``--board`` takes, default :data:`DEFAULT_BOARD`) and wire it."""
    bd = board if isinstance(board, Board) else board_from_spec(board)
    p = place(b, bd, anneal=anneal)
    return Plan(p, wire_runs(b, p))


def plan_for(b: Build) -> Plan:
    """The plan of ``b`` on the default board (what a writer uses when it is given none)."""
    return plan(b, None)
