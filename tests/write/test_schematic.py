"""schematic.svg read back by geometry alone, against the build it draws.

Sources of the checks:

* the drawing is read by ``drawing_reader.py`` (the tests' own reader:
  wires join where an end of one lies on another, crossings do not join,
  pins join the wires their ends touch, same-named flags are one net --
  common practice of reading a schematic) and the connectivity it finds
  must equal the build's nets (:meth:`Build.nets`): no false join, no
  missing join, no two nets' wires overlapping or touching, a junction dot
  exactly where three or more things meet, no wire through a symbol;
* the designs: every example, ISCAS-85 c17 (Brglez and Fujiwara, ISCAS
  1985) and the textbook circuits of ``tests/data/textbook``, on every
  built-in target;
* package pin numbers against the pinouts of generic 74-series datasheets
  as written down in ``TRADE-FACTS.md`` (the table below, copied by hand).
"""
from __future__ import annotations

import functools
from pathlib import Path

import pytest

from drawing_reader import arms, connectivity, read
from mapper import flow
from mapper.build import SUPPLY_NETS
from mapper.read import read_design
from mapper.write.svg import svg_text

ROOT = Path(__file__).parent.parent.parent
DATA = ROOT / "tests" / "data"
DESIGNS = sorted((ROOT / "examples").rglob("*.blif")) + [DATA / "c17.blif"] + sorted((DATA / "textbook").glob("*.blif"))
TARGETS = ("nand-only", "nor-only", "gates-74", "relay-spdt", "relay-dpdt")


@functools.cache
def _build(path: str, target: str):
    r = flow.fit(read_design(path), flow.load_target(target), effort=0)
    assert r.analysis.verified == "proved"
    return r


def _drawing(r, shapes="distinctive"):
    return read(svg_text(r.build, r.analysis, shapes=shapes).encode())


def _check_connectivity(b, dr) -> list:
    """Every difference between the drawing's connectivity and the build's nets, in words."""
    groups, problems = connectivity(dr)
    errors = [f"{rel} of wires of {a} and {c} on page {pg}: {sa} / {sb}" for rel, pg, a, c, sa, sb in problems]
    want = {net: {(r, str(p)) for r, p in pins} for net, pins in b.nets().items()}
    drawn = {(part, pin) for _, part, pin, _ in dr.pins}
    comp = {}
    for i, g in enumerate(groups):
        for pin in g["pins"]:
            comp[pin] = i
    for net, pins in want.items():
        if pins - drawn:
            errors.append(f"{net}: pins not drawn {sorted(pins - drawn)[:5]}")
        found = {comp[p] for p in pins if p in comp}
        if len(found) > 1:
            errors.append(f"{net}: drawn as {len(found)} separate pieces (a missing join)")
        for i in found:
            extra = groups[i]["pins"] - pins
            if extra:
                errors.append(f"{net}: joined to pins of other nets {sorted(extra)[:5]} (a false join)")
    for g in groups:
        for name in g["inputs"]:
            if name in want and want[name] and not want[name] <= g["pins"]:
                errors.append(f"input port {name} is not on its net")
        for o in g["outputs"]:
            net = b.output_nets.get(o, o)
            if net in SUPPLY_NETS:
                if net not in g["names"]:
                    errors.append(f"output {o} (held at {net}) is not drawn on its rail")
            elif want.get(net) and not want[net] <= g["pins"] and not (net in b.inputs and net in g["inputs"]):
                errors.append(f"output port {o} is not on net {net}")
    for o in b.outputs:
        if not any(o in g["outputs"] for g in groups):
            errors.append(f"output {o} has no port")
    return errors


def _check_dots(dr) -> list:
    count = arms(dr)
    dots = set(dr.dots)
    errors = [f"page {pg}: no dot where {n} meet at {p}" for pg, pts in count.items() for p, n in pts.items()
              if n >= 3 and (pg, p) not in dots]
    errors += [f"page {pg}: a dot where only {count[pg].get(p, 0)} meet at {p}" for pg, p in dots
               if count[pg].get(p, 0) < 3]
    return errors


def _check_bodies(dr) -> list:
    """No wire enters a symbol's body (pins stand outside it)."""
    errors = []
    for pg, part, (x0, y0, x1, y1) in dr.bodies:
        for s in dr.segs:
            if s.page != pg:
                continue
            if s.horizontal():
                inside = y0 < s.y1 < y1 and min(s.x1, s.x2) < x1 and max(s.x1, s.x2) > x0
            else:
                inside = x0 < s.x1 < x1 and min(s.y1, s.y2) < y1 and max(s.y1, s.y2) > y0
            if inside:
                errors.append(f"page {pg}: a wire of {s.group} runs through {part}")
    return errors


def _check_page_bounds(dr) -> list:
    w, h = dr.page_size
    errors = [f"page {pg}: drawn at {x},{y}, outside the page" for pg, x, y in dr.extents
              if not (0 <= x <= w and 0 <= y <= h)]
    for pg, x, y, text, size, anchor in dr.texts:
        width = len(text) * size * 0.62  # a generous width of sans-serif text
        lo = x - (width if anchor == "end" else width / 2 if anchor == "middle" else 0)
        if lo < 0 or lo + width > w or y - size < 0 or y > h:
            errors.append(f"page {pg}: text {text!r} at {x},{y} runs off the page")
    return errors


@pytest.mark.parametrize("target", TARGETS)
@pytest.mark.parametrize("path", DESIGNS, ids=lambda p: p.stem)
def test_drawing_connects_exactly_the_build_nets(path, target):
    r = _build(str(path), target)
    dr = _drawing(r)
    errors = _check_connectivity(r.build, dr) + _check_dots(dr) + _check_bodies(dr) + _check_page_bounds(dr)
    assert not errors, errors[:10]
    assert dr.segs  # something was wired, not all flagged


@pytest.mark.parametrize("target", ["gates-74", "relay-dpdt"])
def test_rectangular_symbols_draw_the_same_connections(target):
    r = _build(str(DATA / "textbook" / "full_adder.blif"), target)
    dr = _drawing(r, "rectangular")
    assert not _check_connectivity(r.build, dr) + _check_dots(dr) + _check_bodies(dr)


def test_every_pin_carries_part_pin_and_net_and_every_symbol_its_section():
    r = _build(str(DATA / "textbook" / "full_adder.blif"), "gates-74")
    text = svg_text(r.build, r.analysis)
    for c in r.build.cells:
        assert f"section {c.slot}" in text and f'data-part="{c.part_ref}"' in text
    dr = read(text.encode())
    assert all(part and pin for _, part, pin, _ in dr.pins)


# -- pin numbers against the datasheets -----------------------------------------------------------
# source: TRADE-FACTS.md, "74-series gate parts" (generic datasheets; '08/'32/'86 share the '00 pinout
# and '11/'27 the '10 pinout, from memory): part type -> cell pin -> package pin of each section
TRADE_PINOUTS = {
    "00": {"A": (1, 4, 9, 12), "B": (2, 5, 10, 13), "Y": (3, 6, 8, 11)},
    "08": {"A": (1, 4, 9, 12), "B": (2, 5, 10, 13), "Y": (3, 6, 8, 11)},
    "32": {"A": (1, 4, 9, 12), "B": (2, 5, 10, 13), "Y": (3, 6, 8, 11)},
    "86": {"A": (1, 4, 9, 12), "B": (2, 5, 10, 13), "Y": (3, 6, 8, 11)},
    "02": {"Y": (1, 4, 10, 13), "A": (2, 5, 8, 11), "B": (3, 6, 9, 12)},
    "04": {"A": (1, 3, 5, 9, 11, 13), "Y": (2, 4, 6, 8, 10, 12)},
    "10": {"A": (1, 3, 9), "B": (2, 4, 10), "C": (13, 5, 11), "Y": (12, 6, 8)},
    "11": {"A": (1, 3, 9), "B": (2, 4, 10), "C": (13, 5, 11), "Y": (12, 6, 8)},
    "27": {"A": (1, 3, 9), "B": (2, 4, 10), "C": (13, 5, 11), "Y": (12, 6, 8)},
    "74": {"CLR_N": (1, 13), "D": (2, 12), "CLK": (3, 11), "PRE_N": (4, 10), "Q": (5, 9), "QN": (6, 8)},
}
# '20: inputs 1,2,4,5 -> 6 and 9,10,12,13 -> 8; '30: inputs 1-6, 11, 12 -> 8 (as sets: the order of a
# NAND's inputs does not matter)
TRADE_NAND_INPUTS = {"20": ((1, 2, 4, 5), (9, 10, 12, 13)), "30": ((1, 2, 3, 4, 5, 6, 11, 12),)}
TRADE_NAND_OUTPUT = {"20": (6, 8), "30": (8,)}
TRADE_SUPPLY = {"GND": 7, "VCC": 14}  # DIP-14 parts; the '157 is GND 8, VCC 16


def _type_of(part_id: str) -> str:
    digits = "".join(ch for ch in part_id[2:] if ch.isdigit()) if part_id.startswith("74") else ""
    return digits


@pytest.mark.parametrize("target", ["gates-74", "nand-only", "nor-only"])
@pytest.mark.parametrize("path", DESIGNS, ids=lambda p: p.stem)
def test_pin_numbers_are_the_datasheet_pins(path, target):
    r = _build(str(path), target)
    b = r.build
    dr = _drawing(r)
    groups, _ = connectivity(dr)
    net_of = {}
    for g in groups:
        for pin in g["pins"]:
            net_of[pin] = g
    checked = 0
    for c in b.cells:
        kind = _type_of(b.part(c.part_ref).part_id)
        table = TRADE_PINOUTS.get(kind)
        for pin, net in c.pins.items():
            if net is None:
                continue
            if table is not None:
                number = table[pin][c.slot - 1]
            elif kind in TRADE_NAND_INPUTS:
                number = None  # by the sets below
            else:
                continue
            drawn = {(part, p) for part, p in net_of.get((c.part_ref, str(number)), {"pins": set()})["pins"]} \
                if number is not None else set()
            if number is not None:
                # the drawn pin with the datasheet's number is on this cell pin's net
                want = {(rr, str(pp)) for rr, pp in b.nets()[net]}
                assert (c.part_ref, str(number)) in drawn and drawn == want, (c.part_ref, c.slot, pin, number)
                checked += 1
        if kind in TRADE_NAND_INPUTS:
            ins = {str(n) for n in TRADE_NAND_INPUTS[kind][c.slot - 1]}
            drawn_ins = {p for _, part, p, _ in dr.pins if part == c.part_ref} & ins
            assert drawn_ins == ins
            out = str(TRADE_NAND_OUTPUT[kind][c.slot - 1])
            assert any(part == c.part_ref and p == out for _, part, p, _ in dr.pins)
            checked += 1
    for p in b.parts:
        if b.part_def(p.ref).package == "DIP-14":
            for rail, number in TRADE_SUPPLY.items():
                g = net_of[(p.ref, str(number))]
                assert rail in g["names"], (p.ref, rail, number)
                checked += 1
    assert checked


@pytest.mark.parametrize("target", ["gates-74", "relay-spdt"])
def test_one_spelling_of_references_sections_and_nets_in_every_document(tmp_path, target):
    # the same references, sections and net names in the schematic, the wiring list, the ordering list
    # and the structural Verilog (instance U3_2 is section 2 of U3)
    import csv
    import re

    r = _build(str(DATA / "textbook" / "full_adder.blif"), target)
    b = r.build
    flow.write_build(r, tmp_path)
    svg_doc = (tmp_path / "schematic.svg").read_text()
    wiring = (tmp_path / "wiring.txt").read_text()
    verilog = (tmp_path / "full_adder.v").read_text()
    rows = list(csv.DictReader((tmp_path / "parts.csv").open()))
    refs = {p.ref for p in b.parts} | {s.ref for s in b.support}
    assert set(re.findall(r'data-part="([^"]+)"', svg_doc)) == refs
    assert {ref for r_ in rows for ref in r_["refs"].split()} == refs
    assert all(re.search(rf"^  {ref} ", wiring, re.M) for ref in refs)
    for c in b.cells:
        assert f"section {c.slot}" in svg_doc and f"{c.part_ref}_{c.slot}" in verilog
    for k in b.contacts:
        assert f"pole {k.pole}" in svg_doc and f"{k.part_ref}_{k.pole}" in verilog
    dr = read(svg_doc.encode())
    shown = {name for _, cls, kind, name, _ in dr.connectors if kind != "output"}
    shown |= set(re.findall(r'class="net-name" data-net="([^"]+)"', svg_doc))
    nets = set(b.nets()) | set(b.inputs)
    assert shown <= nets, shown - nets
    for net in b.nets():
        assert re.search(rf"^  {re.escape(net)} ", wiring, re.M), net


@pytest.mark.parametrize("path", [DATA / "textbook" / "cmp2.blif", DATA / "textbook" / "mux4.blif",
                                  DATA / "textbook" / "full_adder.blif"], ids=lambda p: p.stem)
def test_block_chips_drawn_with_their_pins(path):
    # medium-scale chips (issue 20) on msi-74: each drawn as one labelled block whose numbered pins join
    # exactly the build's nets (the numbers are the catalog's pinout, from memory of generic datasheets)
    r = _build(str(path), "msi-74")
    blocks = [c for c in r.build.cells if r.build.target.cells[c.cell].pins and
              r.build.part_def(c.part_ref).id in ("74HC85", "74HC153", "74HC283")]
    assert blocks
    dr = _drawing(r)
    errors = _check_connectivity(r.build, dr) + _check_dots(dr) + _check_bodies(dr) + _check_page_bounds(dr)
    assert not errors, errors[:10]
    drawn = {(part, pin) for _, part, pin, _ in dr.pins}
    for c in blocks:
        pd = r.build.part_def(c.part_ref)
        slot = next(s for s in pd.slots if s.index == c.slot)
        for pin, net in c.pins.items():
            if net is not None:
                assert (c.part_ref, str(slot.pins[pin])) in drawn, (c.part_ref, pin)
