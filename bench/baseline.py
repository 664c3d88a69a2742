"""Gate-by-gate substitution: the textbook way a build is made without a mapper.

Every gate of the design is replaced by its textbook NAND2 form, and the
NAND2 gates are packed four to a quad package.  Textbook forms (common
practice of digital-design courses): NOT 1, NAND2 1, AND2 2, OR2 3, NOR2 4,
XOR2 4, XNOR2 5, buffer 0; an n-input AND/OR/NAND/NOR as a tree of 2-input
ones; any other cover as NAND-NAND two-level logic (an inverter per
complemented input, a NAND tree per product term, a NAND tree for the sum).
Storage elements are not counted (both sides build them the same way).
"""
from __future__ import annotations

from math import ceil

from mapper.netlist import Logic, describe_function

__all__ = ["textbook_nand2", "textbook_parts"]

_FIXED = {"inv": 1, "nand2": 1, "and2": 2, "or2": 3, "nor2": 4, "xor2": 4, "xnor2": 5, "buf": 0, "const": 0}


def _nand_k(k: int) -> int:
    """NAND2 gates for a k-input NAND built as an AND2 tree (textbook)."""
    return 0 if k <= 1 else 2 * (k - 1) - 1


def textbook_nand2(netlist) -> int:
    total = 0
    for node in netlist.nodes.values():
        if not isinstance(node, Logic):
            continue
        kind = describe_function(node.func)
        if kind in _FIXED:
            total += _FIXED[kind]
            continue
        k = node.func.n
        if kind.startswith("nand"):
            total += _nand_k(k)
        elif kind.startswith("and"):
            total += _nand_k(k) + 1
        elif kind.startswith("nor"):
            total += 1 + k + _nand_k(k)      # OR then invert: inverters + NAND tree + inverter
        elif kind.startswith("or"):
            total += k + _nand_k(k)          # OR_k = NAND_k of inverted inputs
        else:
            cubes, phase = node.func.cover()
            inverted = {j for c in cubes for j, ch in enumerate(c) if ch == "0"}
            total += len(inverted)
            for c in cubes:
                lits = sum(1 for ch in c if ch != "-")
                total += _nand_k(lits) if lits > 1 else (1 if lits == 1 else 0)
            total += _nand_k(len(cubes)) if len(cubes) > 1 else 0
            if not phase:
                total += 1
    return total


def textbook_parts(netlist) -> int:
    return ceil(textbook_nand2(netlist) / 4)
