"""The switch-level checks of relay builds (mapper/analyze/switch.py), made to fail on purpose.

Each test breaks a good relay build the way a builder could wire it wrong, and
checks that netfit's own switch-level check finds the fault; where the fault
changes what the wired build does, the independent reading of the written file
(``tests/switchlevel.py``) must see it too.  Faults (common practice of relay
wiring): a dead short from the supply to ground, an output left without a
defined load, a relay that interrupts its own coil (a buzzer), a coil diode
fitted the wrong way round, the NO and NC terminals of a pole swapped, and a
second pole on a single-pole relay.
"""
from __future__ import annotations

import dataclasses

import pytest
from switchlevel import WiredRelays

from mapper import flow
from mapper.analyze.switch import check_relay_build
from mapper.build import ContactInstance, SupportInstance
from mapper.errors import InternalError
from mapper.read import read_design
from mapper.write import json as wjson

SPDT = flow.load_target("relay-spdt")


def _build(tmp_path, text, target=SPDT):
    p = tmp_path / "d.blif"
    p.write_text(text)
    b, a = flow.fit(read_design(p), target)
    assert a.wiring_check["defects"] == 0   # the good build passes
    return b, a


AND_OR = ".model ao\n.inputs a b c\n.outputs y z\n.names a b y\n11 1\n.names b c z\n1- 1\n-1 1\n.end\n"
LATCH = ".model lat\n.inputs d en\n.outputs q\n.latch d q ah en 0\n.end\n"


def test_dead_short_is_found(tmp_path):
    # input a wired to ground through a make contact of b's relay: a dead short whenever both are on
    b, a = _build(tmp_path, AND_OR)
    ref = next(p.ref for p in b.parts if b.coils[p.ref] == "b")
    b.contacts.append(ContactInstance(ref, 9, "a", "GND", None))
    r = check_relay_build(b)
    assert r.shorts, r.as_dict()
    assert not check_relay_build(_build(tmp_path, AND_OR)[0]).shorts


def test_missing_load_leaves_an_output_floating(tmp_path):
    # y = a AND b passes b through a's make contact: with neither a coil nor a resistor on y, y floats
    b, a = _build(tmp_path, AND_OR)
    assert any(s.role == "pull-down" and "y" in s.nets for s in b.support)
    b.support = [s for s in b.support if not (s.role == "pull-down" and "y" in s.nets)]
    r = check_relay_build(b)
    assert any(f["output"] == "y" for f in r.floating), r.as_dict()


def test_self_interrupting_coil_is_an_oscillation(tmp_path):
    # a relay fed through its own break contact buzzes (common practice: that is how a buzzer works)
    b, a = _build(tmp_path, AND_OR)
    ref = b.parts[0].ref
    b.coils[ref] = "buzz"
    b.contacts = [k for k in b.contacts if k.part_ref != ref] + [ContactInstance(ref, 1, "buzz", None, "VCC")]
    r = check_relay_build(b)
    assert r.oscillations, r.as_dict()
    wjson.write_build(b, a, tmp_path / "buzz.json")
    wired = WiredRelays(tmp_path / "buzz.json")
    with pytest.raises(AssertionError, match="never settles|chatter"):
        wired.start()


def test_reversed_coil_diode_shorts_the_supply(tmp_path):
    b, a = _build(tmp_path, AND_OR)
    # the diode of a coil an input switches (which input the build chose does not matter)
    i, d = next((i, s) for i, s in enumerate(b.support) if s.role == "coil-diode" and set(s.nets) & {"a", "b", "c"})
    coil = next(n for n in d.nets if n in ("a", "b", "c"))
    b.support[i] = dataclasses.replace(d, nets=tuple(reversed(d.nets)))   # anode on the coil, cathode on GND
    r = check_relay_build(b)
    assert r.shorts, r.as_dict()
    wjson.write_build(b, a, tmp_path / "rev.json")
    wired = WiredRelays(tmp_path / "rev.json")
    levels = {x: int(x == coil) for x in ("a", "b", "c")}
    pos = wired.start()
    pos = wired.apply(pos, levels)
    assert wired.shorted(pos, levels)


def test_swapped_no_and_nc_changes_what_the_build_does(tmp_path):
    # the prover sees the swap (the build's logic is no longer the design's), and so does the bench
    from mapper.simulate import simulate
    b, a = _build(tmp_path, AND_OR)
    i, k = next((i, k) for i, k in enumerate(b.contacts) if k.com == "z")
    b.contacts[i] = dataclasses.replace(k, no=k.nc, nc=k.no)
    design = read_design(tmp_path / "d.blif")
    with pytest.raises(InternalError, match="does not do the same logic"):
        flow.prove(design, b)
    wjson.write_build(b, a, tmp_path / "swap.json")
    wired = WiredRelays(tmp_path / "swap.json")
    pos = wired.start()
    wrong = 0
    for v in range(8):
        ins = {"a": v & 1, "b": v >> 1 & 1, "c": v >> 2 & 1}
        pos = wired.apply(pos, ins)
        wrong += wired.outputs_of(pos, ins)["z"] != simulate(design, ins, 1)["z"] & 1
    assert wrong


def test_swapped_hold_contact_of_storage_is_refused(tmp_path):
    # the latch's hold path wired to the break side: the proof's shape check refuses the build outright
    b, a = _build(tmp_path, LATCH)
    (lt,) = b.latches
    i, k = next((i, k) for i, k in enumerate(b.contacts) if k.com == lt.paths[1])
    b.contacts[i] = dataclasses.replace(k, no=k.nc, nc=k.no)
    with pytest.raises(InternalError, match="lacks pole"):
        b.to_netlist()
    r = check_relay_build(b)
    assert r.defects, r.as_dict()


def test_second_pole_on_a_single_pole_relay_is_refused(tmp_path):
    from mapper.write.wiring import wiring
    b, a = _build(tmp_path, AND_OR)
    k = b.contacts[0]
    b.contacts.append(ContactInstance(k.part_ref, 2, "extra", "VCC", None))
    with pytest.raises(InternalError, match="pole 2"):
        wiring(b, a)


def test_storage_without_its_steering_diode_is_refused(tmp_path):
    b, a = _build(tmp_path, LATCH)
    b.support = [s for s in b.support if s.role != "steering" or s is not next(
        x for x in b.support if x.role == "steering")]
    with pytest.raises(InternalError, match="steering diode"):
        b.to_netlist()


def test_a_steering_diode_put_in_by_hand_is_no_shortcut(tmp_path):
    # an extra diode from the load bus straight into the bit would make the latch follow d while it holds
    b, a = _build(tmp_path, LATCH)
    (lt,) = b.latches
    (seq,) = b.sequencers
    b.support.append(SupportInstance("D99", "D-1N4148", ("d", lt.state), "a wrong diode", "steering"))
    with pytest.raises(InternalError, match="steering diodes no storage element uses"):
        b.to_netlist()
    r = check_relay_build(b)
    assert r.behaviour, r.as_dict()
