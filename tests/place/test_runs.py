"""Placement and wire runs, read back as a builder would and checked against the build.

Sources of the checks:

* solderless breadboard practice (common practice, TRADE-FACTS.md "Board
  practice"): the five holes a-e (and f-j) of one column are one strip, a
  supply rail joins its holes along the board; on a perforated or
  wire-wrap board only a wire joins two holes.  The test reads each hole by
  the name the wiring list prints (``e12``, ``2:e12``, ``VCC top 12``,
  ``12,7``) and joins holes by these rules alone;
* the nets rebuilt from the wires must be the build's nets (:meth:`Build.nets`),
  every pin reached, no two nets joined;
* at most two wires on any pin (common wire-wrap practice);
* every daisy chain no longer than twice a minimum spanning tree of its stops
  (the tree from networkx, an independent library; the bound is the
  textbook double-tree argument, common practice);
* on a breadboard one hole takes one lead or wire end, and nothing goes
  into a hole under a part's body (common practice): the test reads the
  holes under each body from the part's outline on its own;
* a support part's legs no more than an inch (ten holes) apart: it stands
  at the part it serves, its leads bent to the holes (common practice; the
  leads of DO-35, DO-41 and 0.25 W axial parts are about an inch long
  each, generic datasheets, from memory);
* DIP pin numbering: pin 1 marked, counting counter-clockwise seen from
  above (generic datasheets).
"""
from __future__ import annotations

import dataclasses
import functools
import math
import re
from pathlib import Path

import networkx as nx
import pytest

from mapper import flow
from mapper.build import SUPPLY_NETS
from mapper.catalog.targets import builtin_targets
from mapper.errors import UsageError
from mapper.place import board_from_spec, plan
from mapper.place.runs import hole_name
from mapper.read import read_design

ROOT = Path(__file__).parent.parent.parent
DATA = ROOT / "tests" / "data"
DESIGNS = sorted((ROOT / "examples").rglob("*.blif"))[:1] + [DATA / "c17.blif"] + \
    sorted((DATA / "textbook").glob("*.blif"))
TARGETS = tuple(name for name, _ in builtin_targets())
# a wire-wrap board is placed and wired as a perforated one: its own run is below
BOARDS = ("breadboard-830", "breadboard-400", "perf:80x60")


@functools.cache
def _build(path: str, target: str):
    return flow.fit(read_design(path), flow.load_target(target), effort=0).build


@functools.cache
def _plan(path: str, target: str, board: str):
    return plan(_build(path, target), board)


def _node(name: str, label: str, breadboard: bool):
    """What a hole joins, by its printed name (see the module docstring)."""
    if name == "off the board":
        return ("terminal", label)
    if not breadboard:
        m = re.fullmatch(r"(\d+),(\d+)", name)
        assert m, name
        return ("hole", int(m.group(1)), int(m.group(2)))
    m = re.fullmatch(r"(?:(\d+):)?(?:([a-j])(\d+)|(VCC|GND) (top|bottom) (\d+))", name)
    assert m, name
    board = int(m.group(1) or 1)
    if m.group(2):
        half = "top" if m.group(2) in "abcde" else "bottom"
        return ("strip", board, half, int(m.group(3)))
    return ("rail", board, m.group(4), m.group(5))


def _rebuild(b, pl):
    """Union of holes by the wires and by the board's own strips and rails; pins found by their holes."""
    p, runs = pl.placement, pl.runs
    bb = p.board.is_breadboard
    g = nx.Graph()
    for w in runs.wires:
        a = _node(hole_name(p, w.a.hole), w.a.label, bb)
        c = _node(hole_name(p, w.b.hole), w.b.label, bb)
        g.add_edge(a, c)
    pin_node = {}
    for (ref, key), xy in p.holes.items():
        n = _node(hole_name(p, xy), f"{ref}-{key}", bb)
        pin_node[(ref, str(key))] = n
        g.add_node(n)
    return g, pin_node


def _check_nets(b, pl):
    """The wires and the board's own strips and rails join exactly the build's nets, terminals included."""
    g, pin_node = _rebuild(b, pl)
    comp = {}
    for i, c in enumerate(nx.connected_components(g)):
        for n in c:
            comp[n] = i
    nets = {net: {(r, str(k)) for r, k in pins} for net, pins in b.nets().items()}
    owner: dict = {}
    for net, pins in nets.items():
        comps = {comp[pin_node[pin]] for pin in pins}
        assert len(comps) == 1, f"{net} is not joined: {len(comps)} pieces"
        c = comps.pop()
        assert owner.setdefault(c, net) == net, f"{net} and {owner[c]} are joined"
    # the design's inputs and outputs reach their nets through their terminals
    bb = pl.placement.board.is_breadboard
    term = {e.label: _node(hole_name(pl.placement, e.hole), e.label, bb) for w in pl.runs.wires for e in (w.a, w.b)}
    for i in b.inputs:
        if nets.get(i):
            assert comp[term[f"input {i}"]] == comp[pin_node[next(iter(nets[i]))]], i
    for o in b.outputs:
        net = b.output_nets.get(o, o)
        if nets.get(net) and net not in SUPPLY_NETS:
            assert comp[term[f"output {o}"]] == comp[pin_node[next(iter(nets[net]))]], o


def _check_chains(b, pl):
    """At most two wires on a pin (a strip on a breadboard); every chain within twice its spanning tree."""
    p, runs = pl.placement, pl.runs
    bb = p.board.is_breadboard
    ends: dict = {}
    for w in runs.wires:
        for e in (w.a, w.b):
            if not e.label.endswith(" rail") and not e.label.startswith(("input ", "output ", "supply ")):
                node = _node(hole_name(p, e.hole), e.label, bb)
                ends.setdefault(node, []).append(w.number)
    over = {n: ws for n, ws in ends.items() if len(ws) > 2}
    assert not over, over
    logic = {q.ref for q in b.parts}
    for net, stops in runs.chains.items():
        if net in SUPPLY_NETS and bb:
            continue  # taps to a rail, not a chain
        pts = []
        for label in stops:
            if label.startswith(("input ", "output ", "supply ")):
                kind, name = label.split(" ", 1)
                pts.append(p.terminals[(kind, name)])
            else:
                ref, key = label.split("-", 1)
                key = int(key) if key.isdigit() and (ref not in logic or not b.part_def(ref).relay) else key
                pts.append(p.holes[(ref, key)])
        length = sum(abs(a[0] - c[0]) + abs(a[1] - c[1]) for a, c in zip(pts, pts[1:]))
        full = nx.Graph()
        for i in range(len(pts)):
            for j in range(i + 1, len(pts)):
                full.add_edge(i, j, weight=abs(pts[i][0] - pts[j][0]) + abs(pts[i][1] - pts[j][1]))
        tree = sum(d["weight"] for _, _, d in nx.minimum_spanning_edges(full, data=True)) if len(pts) > 1 else 0
        assert length <= 2 * tree, (net, length, tree)


def _under_bodies(p) -> set:
    """Holes under the body of every part with an outline, its own pins left out."""
    out = set()
    for pp in p.parts.values():
        if pp.fp is None:
            continue
        x0, y0, x1, y1 = pp.fp.outline
        ox, oy = pp.origin
        out |= {(ox + x, oy + y) for x in range(math.ceil(x0), math.floor(x1) + 1)
                for y in range(math.ceil(y0), math.floor(y1) + 1)} - set(pp.pins.values())
    return out


def _check_holes(b, pl):
    """On a breadboard: one lead or wire end per hole, none under a part's body, support legs within an inch."""
    p = pl.placement
    used: dict = {}
    for (ref, key), xy in p.holes.items():
        used.setdefault(xy, []).append(f"{ref}-{key}")
    for w in pl.runs.wires:
        for e in (w.a, w.b):
            if hole_name(p, e.hole) != "off the board":
                used.setdefault(e.hole, []).append(f"wire {w.number}")
    twice = {hole_name(p, xy): what for xy, what in used.items() if len(what) > 1}
    assert not twice, twice
    under = {hole_name(p, xy): used[xy] for xy in _under_bodies(p) if xy in used}
    assert not under, under
    for pp in p.parts.values():
        if pp.kind == "support":
            (xa, ya), (xb, yb) = list(pp.pins.values())
            assert abs(xa - xb) + abs(ya - yb) <= 10, (pp.ref, pp.note, [hole_name(p, h) for h in pp.pins.values()])


@pytest.mark.parametrize("board", BOARDS)
@pytest.mark.parametrize("target", TARGETS)
@pytest.mark.parametrize("path", DESIGNS, ids=lambda p: p.stem)
def test_wires_rebuild_the_build_nets(path, target, board):
    _check_nets(_build(str(path), target), _plan(str(path), target, board))


@pytest.mark.parametrize("board", BOARDS)
@pytest.mark.parametrize("target", TARGETS)
@pytest.mark.parametrize("path", DESIGNS, ids=lambda p: p.stem)
def test_at_most_two_wires_on_a_pin_and_chains_within_the_tree_bound(path, target, board):
    _check_chains(_build(str(path), target), _plan(str(path), target, board))


@pytest.mark.parametrize("board", [b for b in BOARDS if b.startswith("breadboard")])
@pytest.mark.parametrize("target", TARGETS)
@pytest.mark.parametrize("path", DESIGNS, ids=lambda p: p.stem)
def test_one_lead_to_a_hole_none_under_a_body_and_support_parts_at_hand(path, target, board):
    _check_holes(_build(str(path), target), _plan(str(path), target, board))


def test_crowded_strips_and_rails_spill_onto_a_board_of_their_own():
    # Robustness, not a build a target would make: a relay build's load resistor copied a hundred and
    # twenty times onto its net, and forty times between two nets (both legs in strips, as a steering
    # diode stands), far more than the strips and GND rails of one breadboard-400 hold.  The checks
    # are the breadboard rules above (common practice), read back by this module's reader.
    b = _build(str(DATA / "textbook" / "half_adder.blif"), "relay-spdt")
    load = next(s for s in b.support if s.role == "pull-down")
    other = next(n for s in b.support if s.role == "pull-down" for n in s.nets if n not in (*SUPPLY_NETS, *load.nets))
    between = (next(n for n in load.nets if n not in SUPPLY_NETS), other)
    extra = [dataclasses.replace(load, ref=f"R{100 + i}") for i in range(120)]
    extra += [dataclasses.replace(load, ref=f"R{300 + i}", nets=between) for i in range(40)]
    crowded = dataclasses.replace(b, support=list(b.support) + extra)
    alone = plan(b, "breadboard-400")
    pl = plan(crowded, "breadboard-400")
    assert alone.placement.boards == 1 < pl.placement.boards
    _check_nets(crowded, pl)
    _check_chains(crowded, pl)
    _check_holes(crowded, pl)


def test_wire_wrap_board_is_wired_like_a_perforated_one():
    path = str(DATA / "textbook" / "full_adder.blif")
    wrap, perf = _plan(path, "gates-74", "wrap:80x60"), _plan(path, "gates-74", "perf:80x60")
    assert wrap.placement.board.kind == "wire-wrap"
    assert [(w.a.hole, w.b.hole) for w in wrap.runs.wires] == [(w.a.hole, w.b.hole) for w in perf.runs.wires]
    test_wires_rebuild_the_build_nets(DATA / "textbook" / "full_adder.blif", "gates-74", "wrap:80x60")


@pytest.mark.parametrize("target", ["gates-74", "relay-dpdt"])
def test_dip_pins_count_counter_clockwise_from_pin_1(target):
    b = _build(str(DATA / "textbook" / "full_adder.blif"), target)
    for board in ("breadboard-830", "perf:80x60"):
        p = _plan(str(DATA / "textbook" / "full_adder.blif"), target, board).placement
        for pp in p.parts.values():
            if not pp.package.startswith("DIP-"):
                continue
            n = int(pp.package[4:])
            x1, y1 = pp.pins[1]
            for k in range(1, n // 2 + 1):  # bottom row, left to right
                assert pp.pins[k] == (x1 + k - 1, y1), (pp.ref, k)
            for k in range(n // 2 + 1, n + 1):  # top row (0.3 inch up), right to left
                assert pp.pins[k] == (x1 + n - k, y1 - 3), (pp.ref, k)
    assert b.parts


def test_annealing_is_never_longer_than_reference_order():
    for target in TARGETS:
        b = _build(str(DATA / "textbook" / "seg7.blif"), target)
        for board in ("breadboard-830", "perf:120x80"):
            placed = plan(b, board).placement
            ordered = plan(b, board, anneal=False).placement
            assert placed.length <= ordered.length == placed.length_start, (target, board)


def test_a_supply_pin_goes_to_its_rail_and_a_capacitor_sits_across_the_rails():
    b = _build(str(DATA / "c17.blif"), "nand-only")
    pl = plan(b, "breadboard-830")
    p = pl.placement
    for pp in p.parts.values():
        if pp.kind == "support":
            names = [hole_name(p, xy) for xy in pp.pins.values()]
            assert sorted(n.split()[0] for n in names) == ["GND", "VCC"], names
    rails = [w for w in pl.runs.wires if w.net in SUPPLY_NETS]
    assert all(w.b.label == f"{w.net} rail" for w in rails)
    assert {w.colour for w in rails} == {"red", "black"}


@pytest.mark.parametrize("spec", ["perf:3x3", "breadboard-9000", "wrap:ax5", "perf:10"])
def test_bad_board_names_are_usage_errors(spec):
    with pytest.raises(UsageError, match="--board"):
        board_from_spec(spec)


def test_a_board_too_small_says_what_would_fit():
    b = _build(str(DATA / "textbook" / "seg7.blif"), "nand-only")
    with pytest.raises(UsageError, match="try --board perf:"):
        plan(b, "perf:20x12")


def test_build_command_refuses_a_bad_board_before_fitting(netfit, tmp_path):
    code, out, err = netfit("build", DATA / "c17.blif", "-t", "gates-74", "--board", "cork:3x3", "-o", tmp_path)
    assert code == 2 and "--board" in err
    assert not list(tmp_path.iterdir())
