"""Storage built from gates, checked gate by gate against textbook behaviour.

The prover treats each gate-built latch or flip-flop as one storage element,
so the templates themselves are checked here with a settling simulation of
their cross-coupled gates (relaxation until no net changes), against the
textbook definitions (common practice): a D latch follows D while enabled
and holds otherwise; an edge-triggered D flip-flop takes D only at its
clock edge.
"""
from __future__ import annotations

import random

import pytest

from mapper import flow
from mapper.fit.fit import _library
from mapper.fit.storage import gate_storage
from mapper.read import read_design
from mapper.simulate import run_cycles

GATE = {"nand2": lambda a, b: 1 - (a & b), "nor2": lambda a, b: 1 - (a | b)}


def settle(cells, values):
    """Relax the gate network until stable; ``values`` holds inputs and state."""
    for _ in range(100):
        changed = False
        for c in cells:
            v = GATE[c.cell](values[c.args[0]], values[c.args[1]])
            if values.get(c.out) != v:
                values[c.out] = v
                changed = True
        if not changed:
            return values
    raise AssertionError("the template oscillates")


def start(cells, q, value):
    """Initial state: every internal net 0 except a consistent stored value."""
    vals = {c.out: 0 for c in cells}
    vals[q] = value
    return vals


@pytest.mark.parametrize("target", ["nand-only", "nor-only"])
@pytest.mark.parametrize("kind", ["ah", "al"])
def test_latch_template_follows_and_holds(target, kind):
    lib = _library(flow.load_target(target))
    cells, group = gate_storage(lib, kind, "d", "en", "q", 3)
    rng = random.Random(1)
    vals = None
    stored = None
    for step in range(200):
        d, en = rng.randint(0, 1), rng.randint(0, 1)
        if vals is None:  # begin with a transparent step so the state is known
            en = 1 if kind == "ah" else 0
            vals = start(cells, "q", 0)
        vals.update(d=d, en=en)
        settle(cells, vals)
        transparent = en == (1 if kind == "ah" else 0)
        if transparent:
            stored = d
        assert vals["q"] == stored, (step, d, en)


@pytest.mark.parametrize("target", ["nand-only", "nor-only"])
@pytest.mark.parametrize("kind", ["re", "fe"])
def test_flip_flop_template_takes_d_at_the_edge(target, kind):
    lib = _library(flow.load_target(target))
    cells, group = gate_storage(lib, kind, "d", "clk", "q", 3)
    idle = 0 if kind == "re" else 1
    vals = start(cells, "q", 0)
    # settle with the clock idle, then make one edge to load a known value
    vals.update(d=0, clk=idle)
    settle(cells, vals)
    vals.update(clk=1 - idle)
    settle(cells, vals)
    stored = 0
    rng = random.Random(2)
    for step in range(100):
        d = rng.randint(0, 1)
        # D changes while the clock is active and while idle: no effect
        vals.update(d=d)
        settle(cells, vals)
        assert vals["q"] == stored
        vals.update(clk=idle)
        settle(cells, vals)
        assert vals["q"] == stored
        d = rng.randint(0, 1)
        vals.update(d=d)
        settle(cells, vals)
        assert vals["q"] == stored
        vals.update(clk=1 - idle)  # the active edge
        settle(cells, vals)
        stored = d
        assert vals["q"] == stored, step


def test_counter_on_nand_only_counts():
    """The textbook 4-bit counter (common practice) on nand-only: flip-flops
    from NAND2 (9 each), proved as storage, and counting 0..15, 0."""
    d = read_design("tests/data/textbook/counter4.blif")
    b, a = flow.fit(d, flow.load_target("nand-only"))
    assert a.verified == "proved"
    assert len(b.storage_groups) == 4
    assert sum(1 for c in b.cells if c.group) == 36
    bn = b.to_netlist()
    seq = [{"clk": 0} for _ in range(18)]
    got = run_cycles(bn, seq, 1, init={s: 0 for s in bn.storage()})
    values = [sum(o[f"q{i}"] << i for i in range(4)) for o in got]
    assert values == [k % 16 for k in range(18)]
