"""Bring-up plans of relay builds without storage: contact and coil faults, checked on rewired copies.

The rewired copy is the build's own JSON wiring list with one wire moved
(a terminal wire taken off, a coil fed from the supply, a net's wires all
loose or all on the supply, a contact welded shut by a jumper), read by the
tests' independent switch-level reader (``tests/switchlevel.py``), which
knows nothing of the bring-up simulator.  The settings are applied one
after another from power-up, as a builder does.  Designs: ISCAS-85 c17
(published) and an ariths-gen adder.
"""
from __future__ import annotations

import copy
import json
import random

import pytest
from switchlevel import WiredRelays

from generated import make
from mapper import flow
from mapper.bringup.plan import diagnose, make_plan, place_of
from mapper.write import json as wjson


def _pins(data):
    for part in data["parts"]:
        for pin in part["pins"]:
            yield part, pin


def _rewired(data: dict, f, fresh) -> dict:
    """A copy of the wiring list with fault ``f`` made by moving wires."""
    d = copy.deepcopy(data)
    if f is None:
        return d
    if f.kind == "coil":
        for part, pin in _pins(d):
            if part["ref"] == f.ref and pin["name"] == "COIL+":
                pin["net"] = "VCC" if f.value else next(fresh)
    elif f.kind == "contact" and f.value == 0:
        for part, pin in _pins(d):
            if part["ref"] == f.ref and pin["name"] == f"{f.side}{f.pole}":
                pin["net"] = next(fresh)
    elif f.kind == "contact":   # welded: a jumper joins the common and that side for good
        nets = {pin["name"]: pin["net"] for part, pin in _pins(d) if part["ref"] == f.ref}
        a, b = nets[f"COM{f.pole}"], nets[f"{f.side}{f.pole}"]
        for x, y in ((a, b), (b, a)):
            d["parts"].append({"ref": "J", "kind": "jumper", "pins": [{"name": "A", "net": x},
                                                                       {"name": "K", "net": y}]})
    else:   # a net: every wire loose, or every wire on the supply
        for _, pin in _pins(d):
            if pin["net"] == f.net:
                pin["net"] = "VCC" if f.value else next(fresh)
        for o, n in d["output_nets"].items():
            if n == f.net:
                d["output_nets"][o] = "VCC" if f.value else next(fresh)
    return d


def _observe(data: dict, plan, tmp_path) -> set | None:
    """Failing ``(setting, output)`` pairs of a wiring list, settings applied in turn from power-up;
    ``None`` when the copy does not settle in one way (its readings are not defined)."""
    path = tmp_path / "copy.json"
    path.write_text(json.dumps(data))
    w = WiredRelays(path)
    try:
        pos = w.start()
        seen = set()
        for p, vec in enumerate(plan.settings):
            inputs = dict(zip(plan.inputs, vec))
            pos = w.apply(pos, inputs)
            got = w.outputs_of(pos, inputs)
            seen |= {(p, o) for o, name in enumerate(plan.outputs) if got[name] != plan.expected[p][o]}
        return seen
    except AssertionError:
        return None


def _check(r, tmp_path, rng, tries) -> int:
    plan = make_plan(r.build)
    path = tmp_path / "build.json"
    wjson.write_build(r.build, r.analysis, path)
    data = json.loads(path.read_text())
    fresh = (f"loose{k}" for k in range(10**9))
    assert _observe(_rewired(data, None, fresh), plan, tmp_path) == set()   # expected levels are right
    fl = plan.faults
    und = set(plan.undetectable)
    checked = 0
    for i in rng.sample(range(len(fl.faults)), min(tries, len(fl.faults))):
        f = fl.faults[i]
        seen = _observe(_rewired(data, f, fresh), plan, tmp_path)
        if seen is None:
            continue
        k = fl.rep_of[i]
        if k in und:
            assert not seen, f.key
            continue
        if k in plan.unresolved:
            continue
        assert seen, f.key
        assert place_of(f) in diagnose(plan, seen), f.key
        checked += 1
    return checked


@pytest.mark.parametrize("target", ["relay-spdt", "relay-dpdt"])
def test_injected_relay_faults_on_c17(tmp_path, target):
    r = flow.build("tests/data/c17.blif", target)
    plan = make_plan(r.build)
    assert not plan.unresolved and len(plan.detected) == plan.detectable   # 5 inputs: every combination
    kinds = {f.kind for f in plan.faults.faults}
    assert {"coil", "contact", "net"} <= kinds
    assert _check(r, tmp_path, random.Random(target), 200) >= 30


def test_injected_relay_faults_on_an_adder(tmp_path):
    path = make("rca", 2, tmp_path)   # ariths-gen ripple-carry adder, 4 inputs
    r = flow.build(str(path), "relay-spdt")
    assert _check(r, tmp_path, random.Random(3), 20) >= 8
