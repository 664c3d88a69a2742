"""Equal designs written differently get the same parts (issue 19).

The designs are the textbook circuits in ``tests/data/textbook`` and ISCAS-85 c17 (Brglez and
Fujiwara, ISCAS 1985); each is written again with every internal net renamed and its inputs and gates
listed in a shuffled order -- the same logic, so the same part count is expected on every target.
Before the part search walked designs in a structural order, seg7 took 14 or 13 NAND packages
depending on the order its gates were listed in.  The spellings the search maps
(``mapper.fit.spellings``) are checked here too: from a design's BLIF and from its Verilog export
they are the same netlists up to names (the part counts of the two files are compared target by
target in ``test_crossformat.py``).
"""
from __future__ import annotations

import random
from pathlib import Path

import pytest

from mapper import flow
from mapper.fit.spellings import spellings
from mapper.logic.canonical import canonical_order
from mapper.logic.regions import LIMIT, _leaves, _members, collapse_regions, regions
from mapper.read import read_design
from mapper.verify import check_equivalence
from mapper.write.verilog import netlist_text

DATA = Path(__file__).parent.parent / "data"
DESIGNS = [DATA / "textbook" / f"{n}.blif" for n in ("seg7", "cmp2", "full_adder", "counter4")] + [DATA / "c17.blif"]


def _rewritten(design, seed):
    """The same design with internal nets renamed and inputs and nodes listed in a shuffled order."""
    rng = random.Random(seed)
    keep = set(design.inputs) | set(design.outputs)
    names = {n: f"w{rng.randrange(10**6)}_{k}" for k, n in enumerate(sorted(design.nodes)) if n not in keep}
    out = design.renamed(names)
    items = list(out.nodes.items())
    rng.shuffle(items)
    out.nodes = dict(items)
    rng.shuffle(out.inputs)
    return out


@pytest.mark.parametrize("target", ["gates-74", "nand-only", "nor-only", "relay-spdt"])
@pytest.mark.parametrize("path", DESIGNS, ids=lambda p: p.stem)
def test_rewritten_designs_get_the_same_parts(path, target):
    design = read_design(path, quiet=True)
    counts = set()
    for seed in (None, 1, 2):
        d = design if seed is None else _rewritten(design, seed)
        assert check_equivalence(design, d).equivalent  # the rewrite is the same logic
        b, a = flow.fit(d, flow.load_target(target))
        assert a.verified == "proved"
        assert b.inputs == d.inputs  # the build keeps the design's own port order
        counts.add(len(b.parts))
    assert len(counts) == 1, counts


def test_canonical_order_keeps_every_net_and_port():
    design = read_design(DATA / "textbook" / "seg7.blif", quiet=True)
    c = canonical_order(_rewritten(design, 3))
    assert set(c.nodes) == set(_rewritten(design, 3).nodes) and c.outputs == design.outputs
    assert sorted(c.inputs) == sorted(design.inputs)
    # the order comes from the structure: two different rewrites list the same structure alike
    a, b = canonical_order(_rewritten(design, 4)), canonical_order(_rewritten(design, 5))
    assert a.inputs == b.inputs
    shapes = [[(type(x.nodes[n]).__name__, len(x.nodes[n].fanins)) for n in x.nodes] for x in (a, b)]
    assert shapes[0] == shapes[1]


def _shape(netlist) -> list:
    """The netlist's structure without its names: each node's kind, function and fan-ins by position."""
    pos = {n: k for k, n in enumerate(list(netlist.inputs) + [n for n in netlist.nodes if n not in netlist.inputs])}
    out = []
    for name, node in netlist.nodes.items():
        func = getattr(node, "func", None)
        out.append((type(node).__name__, None if func is None else (func.n, func.table()),
                    tuple(pos[f] for f in node.fanins), netlist.outputs.index(name) if name in netlist.outputs else -1))
    return out


@pytest.mark.parametrize("path", DESIGNS + sorted((DATA / "published").glob("*.blif")), ids=lambda p: p.stem)
def test_blif_and_its_verilog_reach_the_same_spellings(path, tmp_path):
    # the part search maps spellings made from the function of small regions (mapper.fit.spellings):
    # from a design's BLIF and from netfit's Verilog export of it they must be the same netlists
    # up to names -- except where a region has more inputs than a table is built for
    design = read_design(path, quiet=True)
    v = tmp_path / f"{path.stem}.v"
    v.write_text(netlist_text(design))
    other = read_design(v, quiet=True)
    assert len(other.nodes) > len(design.nodes)  # the export's expressions read as smaller gates
    wide = [m for m in _members(design, regions(design)).values() if len(_leaves(design, m)) > LIMIT]
    for a, b in zip(spellings(design), spellings(other)):
        assert check_equivalence(design, a).equivalent and check_equivalence(design, b).equivalent
        if not wide:
            assert _shape(a) == _shape(b)


def test_regions_join_a_net_read_twice_in_one_expression():
    # a = x & y read twice inside one expression (an exclusive-OR written as a sum of products) is
    # inside that expression's region: fan-out is counted between regions, not between gates
    from mapper.logic.function import Function
    from mapper.netlist import Netlist
    n = Netlist("t")
    for i in ("x", "y", "z"):
        n.add_input(i)
    n.add_logic("a", ("x", "y"), Function.from_table(2, 0b1000))
    n.add_logic("p", ("a", "z"), Function.from_table(2, 0b0010))   # a & ~z
    n.add_logic("q", ("a", "z"), Function.from_table(2, 0b0100))   # ~a & z
    n.add_logic("o", ("p", "q"), Function.from_table(2, 0b1110))
    n.add_output("o")
    assert set(regions(n).values()) == {"o"}
    c = collapse_regions(n)
    assert set(c.nodes) == {"x", "y", "z", "o"} and check_equivalence(n, c).equivalent
    # and a net read by two regions stays a net of its own
    n.add_output("a")
    assert regions(n)["a"] == "a" and set(collapse_regions(n).nodes) == {"x", "y", "z", "a", "o"}
