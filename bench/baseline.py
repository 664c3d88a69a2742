"""The fair baselines: what a careful builder gets without a mapper (issue 17).

(a) *by hand*: the design converted to NAND2 (or NOR2) forms with double
    inversions cancelled and identical gates shared -- the 9-NAND full adder
    and the 5-NAND half adder come out where the design has them (common
    practice of digital-design courses);
(b) *gate for gate*: each gate of the design plugged into the cell that
    carries it, packed per part type;
(c) the better of the two: every figure of the benchmarks is against it.

Both are built by :func:`mapper.fit.fit.baseline_builds` (from
:mod:`mapper.fit.plain`) and packed like any build; storage elements count
the same on both sides (flip-flop parts, or gates where the target has none).
"""
from __future__ import annotations

from mapper.fit.fit import baseline_builds

__all__ = ["fair_baseline"]


def fair_baseline(design, target) -> dict:
    """``{"hand": parts, "plug": parts, "best": parts}`` (``None`` where a
    way does not apply to the target), for ``design`` on ``target``."""
    builds = baseline_builds(design, target)
    hand = [len(b.parts) for label, b in builds.items() if label.startswith("by hand")]
    plug = [len(b.parts) for label, b in builds.items() if label == "gate for gate"]
    h = min(hand) if hand else None
    p = min(plug) if plug else None
    return {"hand": h, "plug": p, "best": min(x for x in (h, p) if x is not None)}
