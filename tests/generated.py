"""Designs made at test time by an independent generator library.

Source: ``ariths-gen`` from the package registry (Klhufek and Mrazek, Brno
University of Technology), which writes flat and hierarchical BLIF and
Verilog of adders and multipliers.  Its circuits are not ours, so a netlist
read from them and simulated against Python integer arithmetic checks our
readers, simulator and prover against the outside world.
"""
from __future__ import annotations

import io
from pathlib import Path

from ariths_gen.multi_bit_circuits import adders, multipliers, others
from ariths_gen.wire_components import Bus

__all__ = ["ADDERS", "MULTIPLIERS", "COMPARATORS", "make", "bus_value", "operand_words"]

ADDERS = {
    "rca": adders.UnsignedRippleCarryAdder,
    "cla": adders.UnsignedCarryLookaheadAdder,
    "ks": adders.UnsignedKoggeStoneAdder,
    "bk": adders.UnsignedBrentKungAdder,
    "sk": adders.UnsignedSklanskyAdder,
    "csel": adders.UnsignedCarrySelectAdder,
    "pg": adders.UnsignedPGRippleCarryAdder,
}
MULTIPLIERS = {
    "arr": multipliers.UnsignedArrayMultiplier,
    "dadda": multipliers.UnsignedDaddaMultiplier,
    "wallace": multipliers.UnsignedWallaceMultiplier,
    "csa": multipliers.UnsignedCarrySaveMultiplier,
}

#: comparators: one output ``<name>_out`` (a < b, a >= b ...)
COMPARATORS = {
    "lt": others.UnsignedCompareLT,
    "gte": others.UnsignedCompareGTE,
    "gt": others.UnsignedCompareGT,
}


def make(kind: str, width: int, folder, fmt: str = "blif", hier: bool = False) -> Path:
    """Write one generated circuit; returns its path.

    ``kind`` is a key of :data:`ADDERS`, :data:`MULTIPLIERS` or :data:`COMPARATORS`.  Inputs are
    the buses ``a[i]``, ``b[i]``; the output bus is ``<name>_out[i]`` where
    ``name`` is ``f"{kind}{width}"``.
    """
    cls = ADDERS.get(kind) or MULTIPLIERS.get(kind) or COMPARATORS[kind]
    name = f"{kind}{width}"
    circuit = cls(Bus("a", width), Bus("b", width), name=name)
    buf = io.StringIO()
    if fmt == "blif":
        (circuit.get_blif_code_hier if hier else circuit.get_blif_code_flat)(buf)
    elif fmt == "v":
        (circuit.get_v_code_hier if hier else circuit.get_v_code_flat)(buf)
    else:
        raise ValueError(fmt)
    path = Path(folder) / f"{name}{'_hier' if hier else ''}.{fmt}"
    path.write_text(buf.getvalue())
    return path


def bus_value(values: dict, bus: str, width: int) -> int:
    """Integer from single-bit values named ``bus[i]``."""
    return sum((values[f"{bus}[{i}]"] & 1) << i for i in range(width))


def operand_words(width: int, pairs):
    """Bit-parallel words for the inputs ``a[i]``, ``b[i]`` from operand pairs.

    Returns ``(words, mask)`` with ``words[name]`` holding bit ``k`` = bit of
    pair ``k``.
    """
    words = {f"{bus}[{i}]": 0 for bus in "ab" for i in range(width)}
    for k, (x, y) in enumerate(pairs):
        for i in range(width):
            if (x >> i) & 1:
                words[f"a[{i}]"] |= 1 << k
            if (y >> i) & 1:
                words[f"b[{i}]"] |= 1 << k
    return words, (1 << len(pairs)) - 1
