"""The spellings of a design the part searches map, the same whatever file the design came from.

A design read from BLIF and the same design read from Verilog differ at the gate level: a sum of
products against an expression tree, or a product of sums.  Mapping either as written lands the
searches on different part counts.  So the searches map two spellings made from the design's
function in small regions (:mod:`mapper.logic.regions`), never the gates as written:

* *rebuilt*: each fan-out-free region of at most :data:`~mapper.logic.regions.LIMIT` inputs built
  again from its truth table as 2-input gates by bi-decomposition (exclusive-ORs kept);
* *tables*: each region of at most :data:`TABLES` inputs one node of its truth table (mapped from
  its smallest two-level cover; the restructuring's algebraic factoring starts from these), the
  wider ones rebuilt as above.

Measured on the benchmark adders (``bench/bench_fit.py``): each spelling alone loses to the
design as written somewhere; the two together never did, and often beat it.  A region of more
than :data:`~mapper.logic.regions.LIMIT` inputs keeps its gates as written in both spellings, so
there two files of one design can still differ.

Both are listed in the structural order of :mod:`mapper.logic.canonical`.  The design as written
is left to the careful builder's builds (:mod:`mapper.fit.plain`), which are only floors, and to
the proof, which always compares a build with the design as read.
"""
from __future__ import annotations

from ..build import Build
from ..catalog.model import Target
from ..logic.canonical import canonical_order
from ..logic.regions import collapse_regions, rebuilt_regions
from ..netlist import Netlist

__all__ = ["spellings", "fit_relays_spelled", "TABLES"]

#: the *tables* spelling keeps regions of at most this many inputs as one node each (wider ones
#: rebuilt: the smallest two-level cover of a wide table is too big a graph to map)
TABLES = 8


def spellings(design: Netlist) -> list:
    """``[rebuilt, tables]`` of ``design`` (see the module docstring)."""
    tables = collapse_regions(design)
    return [canonical_order(rebuilt_regions(tables)), canonical_order(rebuilt_regions(tables, least=TABLES + 1))]


def fit_relays_spelled(design: Netlist, target: Target, effort: int = 1) -> Build:
    """The relay build of fewest relays (then poles) of the spellings of ``design``
    (:func:`mapper.fit.relay.fit_relays` on each; the first kept on a tie).  Inputs, outputs and
    storage keep their names in every spelling, so the build is one of ``design``."""
    from .relay import fit_relays

    builds = [fit_relays(spelled, target, effort=effort) for spelled in spellings(design)]
    best = min(builds, key=lambda b: (len(b.parts), len(b.contacts)))  # the first of the fewest
    best.inputs = list(design.inputs)  # the design's own port order
    return best
