"""Bring-up sequences of builds whose flip-flops are built of gates (nand-only, nor-only).

Outside checks: the designs are ISCAS-89 s27 (published .bench, translated by the tests' own reader) and
MCNC beecount (published).  Injected faults are made on rewired copies of each build (a wire moved to a
rail; every wire of a net moved) and run by this file's own relaxation simulation of the copy's gates -- as
tests/fit/test_storage.py checks the templates: two levels, gates taken in wiring order again and again
until no net changes -- from random power-on levels of every net, never by the bring-up simulator.  For
each power-on state: the good copy reads the expected level wherever the plan knows one; a copy with a
fault the plan calls detected reads wrong at every (step, output) of the fault's signature; and the
diagnosis names the moved wire.
"""
from __future__ import annotations

import random

import pytest
from bringup.rewire import NoFault as _NoFault
from bringup.rewire import rewired as _rewired
from read.test_published import bench_to_blif, read_bench

from mapper import flow
from mapper.bringup.plan import diagnose, make_plan, place_of
from mapper.bringup.report import coverage_line, plan_csv, plan_json, plan_text


def _gates(nb) -> list:
    """``(output net, input nets, truth table, inputs)`` of every gate of a rewired build."""
    out = []
    for c in nb.cells:
        cd = nb.cell_def(c)
        f = cd.logic_function()
        out.append((c.pins[cd.output], [c.pins[p] for p in cd.inputs], f.table(), f.n))
    return out


def _relax(gates, v) -> bool:
    for _ in range(200):
        changed = False
        for out, ins, table, _n in gates:
            k = sum(v[x] << j for j, x in enumerate(ins))
            y = table >> k & 1
            if v.get(out) != y:
                v[out] = y
                changed = True
        if not changed:
            return True
    return False   # oscillates


def _run(nb, plan, rng) -> set | None:
    """``(step, output)`` at which the rewired copy reads other than a known expected level, from random
    power-on levels (``None``: it oscillates, so the check says nothing)."""
    gates = _gates(nb)
    seen = set()
    for k, seq in enumerate(plan.sequences):
        v = {out: rng.getrandbits(1) for out, _, _, _ in gates}
        v.update(VCC=1, GND=0)
        steps = [q for q, (p, _) in enumerate(plan.steps) if p == k]
        for q, vec in zip(steps, seq):
            v.update(dict(zip(plan.inputs, vec)))
            for clk in plan.clocks:
                v[clk] = 0
            if not _relax(gates, v):
                return None
            for o, name in enumerate(plan.outputs):
                want = plan.expected[q][o]
                if want is not None and v[nb.output_nets.get(name, name)] != want:
                    seen.add((q, o))
            for level in (1, 0):   # one clock pulse
                for clk in plan.clocks:
                    v[clk] = level
                if not _relax(gates, v):
                    return None
    return seen


def _s27(tmp_path) -> str:
    path = tmp_path / "s27.blif"
    path.write_text(bench_to_blif(read_bench(open("tests/data/published/s27.bench").read()), "s27"))
    return str(path)


@pytest.mark.parametrize("design,target", [("s27", "nand-only"), ("s27", "nor-only"),
                                           ("tests/data/published/beecount.blif", "nand-only")])
def test_injected_faults_on_gate_built_flip_flops(tmp_path, design, target):
    b = flow.build(_s27(tmp_path) if design == "s27" else design, target).build
    assert b.storage_groups
    plan = make_plan(b)
    assert plan.sequential and plan.start == [] and plan.detected
    rng = random.Random(f"{design}-{target}")
    for _ in range(3):
        assert _run(_rewired(b, _NoFault()), plan, rng) == set()   # the good copy, from any power-on state
    fl = plan.faults
    inside = {i for i, f in enumerate(fl.faults) if f.kind == "pin" and "/" in f.net}   # a latch's own gates
    found = [i for i in range(len(fl.faults)) if fl.rep_of[i] in plan.detected]
    checked = checked_inside = 0
    # every detected fault inside a latch's own gates, and a sample of the rest
    sample = [i for i in found if i in inside] + rng.sample([i for i in found if i not in inside],
                                                            min(60, len(found) - len(inside & set(found))))
    for i in sample:
        f = fl.faults[i]
        k = fl.rep_of[i]
        for _ in range(2):
            seen = _run(_rewired(b, f), plan, rng)
            assert seen is not None, f.key   # a fault the plan detects must not leave the copy oscillating
            assert plan.signature[k] <= seen, f.key
        assert place_of(f) in diagnose(plan, plan.signature[k]), f.key
        checked += 1
        checked_inside += i in inside
    assert checked >= 10 and checked_inside == len(inside & set(found))


def test_outputs_say_how_a_gate_built_build_starts(tmp_path):
    plan = make_plan(flow.build(_s27(tmp_path), "nand-only").build)
    d = plan_json(plan)
    assert d["start_from_power_on"] and d["start"] == [] and d["bound_steps"] == 0
    assert any(v is None for s in d["settings"] for v in s["outputs"].values())   # '?' before it is known
    text = plan_text(plan)
    assert "switch the supply off and on" in text and "=?" in text and coverage_line(plan) in text
    assert "unresolved" in coverage_line(plan)
    assert ",?" in plan_csv(plan)
