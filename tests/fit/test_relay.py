"""Tests of relay builds (mapper/fit/relay.py, mapper/fit/contacts.py, mapper/relay_logic.py, mapper/analyze/relay.py).

Outside sources, named beside each check:
* common practice of relay logic: an inverter is one relay (a break contact),
  a 2-input XOR is two changeover relays, a 2-input AND is one relay when one
  input is fed through the other's make contact;
* the ariths-gen generator library (tests/generated.py) for adders and
  comparators, checked against Python integer arithmetic;
* the textbook 4-bit binary counter (tests/data/textbook/counter4.blif) counting
  0, 1, …, 15, 0 on rising clock edges;
* the textbook 7-segment decoder (tests/data/textbook/seg7.blif);
* the catalog's relay figures (generic small-signal relay datasheets) and Ohm's
  law for the supply current.

Besides the prover run by ``flow.fit`` on every build, builds are checked here
at the electrical level by a small simulator of our own written for these
tests (:func:`settle`): nets joined by closed contacts, input switches joining
their nets to the rail, coils energized when their net reaches the rail,
repeated until nothing changes.  It knows nothing of the mux translation the
prover sees, so it checks that translation too.
"""
from __future__ import annotations

import itertools
import sys
from math import ceil
from pathlib import Path

import pytest

import generated
from mapper import flow
from mapper.build import Build, ContactInstance, PartInstance
from mapper.errors import InternalError
from mapper.read import read_design

sys.path.insert(0, str(Path(__file__).resolve().parents[2] / "bench"))
from bench_relay import template_relays  # noqa: E402

DATA = Path(__file__).resolve().parents[1] / "data"
SPDT = flow.load_target("relay-spdt")
DPDT = flow.load_target("relay-dpdt")


# ---------------------------------------------------------------------------
# an electrical simulator of our own (see the module docstring)
class _UF:
    def __init__(self):
        self.p = {}

    def find(self, x):
        self.p.setdefault(x, x)
        root = x
        while self.p[root] != root:
            root = self.p[root]
        while self.p[x] != root:
            self.p[x], x = root, self.p[x]
        return root

    def join(self, a, b):
        self.p[self.find(a)] = self.find(b)


def settle(build: Build, inputs: dict, energized: dict | None = None, rounds: int = 200):
    """Steady state for one input assignment: (net -> 0/1 function, relay ref -> energized)."""
    energized = dict(energized or {p.ref: False for p in build.parts})
    for _ in range(rounds):
        uf = _UF()
        for name, v in inputs.items():
            if v:
                uf.join(name, "VCC")
        for k in build.contacts:
            other = k.no if energized[k.part_ref] else k.nc
            if other is not None:
                uf.join(k.com, other)
        rail = uf.find("VCC")
        new = {ref: uf.find(net) == rail for ref, net in build.coils.items()}
        if new == energized:
            return (lambda net, uf=uf, rail=rail: int(net != "GND" and uf.find(net) == rail)), energized
        energized = new
    raise AssertionError("the relays never settle")


def outputs_of(build, inputs, energized=None):
    value, energized = settle(build, inputs, energized)
    return {o: value(build.output_nets.get(o, o)) for o in build.outputs}, energized


def blif(tmp_path, name, text):
    p = tmp_path / f"{name}.blif"
    p.write_text(text)
    return p


def operands(design, width, x, y) -> dict:
    """Input values for operands ``x`` and ``y`` (ariths-gen names 1-bit buses without an index)."""
    ins = {}
    for bus, v in (("a", x), ("b", y)):
        for i in range(width):
            name = f"{bus}[{i}]" if f"{bus}[{i}]" in design.inputs else bus
            ins[name] = (v >> i) & 1
    return ins


def fit(path_or_design, target):
    d = read_design(path_or_design) if not hasattr(path_or_design, "nodes") else path_or_design
    b, a = flow.fit(d, target)
    assert a.verified == "proved"
    return d, b, a


# ---------------------------------------------------------------------------
# the three figures of the trade
def test_inverter_is_one_relay_with_a_break_contact(tmp_path):
    # common practice of relay logic: NOT is one relay, its break contact fed from the rail
    _, b, a = fit(blif(tmp_path, "inv", ".model inv\n.inputs a\n.outputs y\n.names a y\n0 1\n.end\n"), SPDT)
    assert len(b.parts) == 1
    (k,) = b.contacts
    assert b.coils[k.part_ref] == "a" and k.com == "y" and k.nc == "VCC" and k.no is None
    for a in (0, 1):
        assert outputs_of(b, {"a": a})[0] == {"y": 1 - a}


def test_xor2_is_two_relays(tmp_path):
    # common practice of relay logic: XOR of two inputs on two changeover relays
    p = blif(tmp_path, "xor2", ".model xor2\n.inputs a b\n.outputs y\n.names a b y\n10 1\n01 1\n.end\n")
    _, b, a = fit(p, SPDT)
    assert len(b.parts) == 2
    assert sorted(b.coils.values()) == ["a", "b"]
    for a, bb in itertools.product((0, 1), repeat=2):
        assert outputs_of(b, {"a": a, "b": bb})[0] == {"y": a ^ bb}


def test_and2_passes_one_input_through_the_others_make_contact(tmp_path):
    # common practice of relay logic: y = a AND b is b's net fed through a make contact of a's relay
    p = blif(tmp_path, "and2", ".model and2\n.inputs a b\n.outputs y\n.names a b y\n11 1\n.end\n")
    _, b, a = fit(p, SPDT)
    assert len(b.parts) == 1
    (k,) = b.contacts
    coil = b.coils[k.part_ref]
    assert k.com == "y" and k.nc is None and {coil, k.no} == {"a", "b"}   # pass-through, not the rail
    for a, bb in itertools.product((0, 1), repeat=2):
        assert outputs_of(b, {"a": a, "b": bb})[0] == {"y": a & bb}


# ---------------------------------------------------------------------------
# generated designs against arithmetic, and against the gate-by-gate templates
@pytest.mark.parametrize("width", [1, 2, 3, 4])
@pytest.mark.parametrize("target", [SPDT, DPDT], ids=["spdt", "dpdt"])
def test_adders_add_and_beat_the_templates(tmp_path, width, target):
    # ariths-gen ripple-carry adders, checked against Python addition at the contact level
    d, b, a = fit(generated.make("rca", width, tmp_path), target)
    assert len(b.parts) < template_relays(d)
    if target is DPDT:
        assert len(b.parts) <= 0.6 * template_relays(d)   # issue 6: at least 40 % fewer on DPDT
    for x, y in itertools.product(range(1 << width), repeat=2):
        out, _ = outputs_of(b, operands(d, width, x, y))
        got = sum(out[f"rca{width}_out[{i}]"] << i for i in range(width + 1))
        assert got == x + y


def test_comparator_compares(tmp_path):
    # ariths-gen unsigned a < b, checked against Python comparison at the contact level
    d, b, a = fit(generated.make("lt", 3, tmp_path), DPDT)
    assert len(b.parts) <= 0.6 * template_relays(d)
    (o,) = b.outputs
    for x, y in itertools.product(range(8), repeat=2):
        assert outputs_of(b, operands(d, 3, x, y))[0][o] == int(x < y)


def test_seven_segment_decoder(tmp_path):
    # textbook 7-segment decoder: the relay build lights the same segments as the design
    d, b, a = fit(DATA / "textbook" / "seg7.blif", DPDT)
    assert len(b.parts) <= 0.6 * template_relays(d)
    from mapper.simulate import simulate
    for v in range(16):
        ins = {f"d{i}": (v >> i) & 1 for i in range(4)}
        want = simulate(d, ins, 1)
        got, _ = outputs_of(b, ins)
        assert got == {o: want[o] for o in d.outputs}


@pytest.mark.parametrize("n", [2, 3, 5])
def test_parity_is_its_reduced_ordered_bdd(n):
    # Bryant, IEEE Trans. Computers C-35, 1986: the ROBDD of n-input parity has 2n - 1 decision
    # nodes under any order; the positive literal at the bottom is passed through, so 2n - 2 poles
    from mapper.fit.contacts import synthesize
    from mapper.logic.function import var_mask
    table = 0
    for j in range(n):
        table ^= var_mask(n, j)
    res = synthesize(n, [("p", table, None)], {}, 1, effort=0)
    assert res.cost[2] == 2 * n - 2
    assert res.synth.tables[res.roots["p"]] == table


def test_carry_passes_through_contacts(tmp_path):
    # ariths-gen 6-bit ripple-carry adder: its carry chain is 6 gates deep; passed through
    # contacts it adds no coil level per bit
    d, b, a = fit(generated.make("rca", 6, tmp_path), DPDT)
    assert d.depth() >= 6
    assert a.timing.levels <= 2
    through = [k for k in b.contacts for x in (k.no, k.nc)
               if x not in (None, "VCC") and x not in d.inputs]
    assert through   # relay-driven nets fed on through further contacts


# ---------------------------------------------------------------------------
# storage
def clock_edges(b, n, energized=None):
    """Apply ``n`` rising clock edges (clk 0 then 1), settling in between; yields the outputs after each."""
    for _ in range(n):
        _, energized = outputs_of(b, {"clk": 0}, energized)
        out, energized = outputs_of(b, {"clk": 1}, energized)
        yield out


@pytest.mark.parametrize("target", [SPDT, DPDT], ids=["spdt", "dpdt"])
def test_counter_counts_at_the_contacts(target):
    # textbook 4-bit binary counter: 0, 1, …, 15, 0 on rising edges, starting from 0
    d, b, a = fit(DATA / "textbook" / "counter4.blif", target)
    assert len(b.parts) < template_relays(d)
    if target is DPDT:
        assert len(b.parts) <= 0.6 * template_relays(d)
    # power-up: every relay released
    out, _ = outputs_of(b, {"clk": 0})
    assert [out[f"q{i}"] for i in range(4)] == [0, 0, 0, 0]
    values = [sum(o[f"q{i}"] << i for i in range(4)) for o in clock_edges(b, 20)]
    assert values == [(k + 1) % 16 for k in range(20)]
    assert len(b.latches) == 4 and all(lt.master for lt in b.latches)
    assert sum("powers up at 0" in c for c in a.cautions) == 4


LATCH = """.model lat
.inputs d en
.outputs q
.latch d q {kind} en {init}
.end
"""


@pytest.mark.parametrize("kind", ["ah", "al"])
def test_level_latch_seals_in(tmp_path, kind):
    # a seal-in relay latch (common practice): transparent while enabled, holds otherwise
    _, b, a = fit(blif(tmp_path, f"lat_{kind}", LATCH.format(kind=kind, init=0)), SPDT)
    (lt,) = b.latches
    hold = next(k for k in b.contacts if k.com == lt.hold)
    assert b.coils[hold.part_ref] == "q" and hold.no == "VCC"   # its own make contact from the rail
    on = 1 if kind == "ah" else 0
    energized = None
    for d_val in (1, 0, 1):
        out, energized = outputs_of(b, {"d": d_val, "en": on}, energized)
        assert out["q"] == d_val
        out, energized = outputs_of(b, {"d": d_val, "en": 1 - on}, energized)   # close the latch first
        assert out["q"] == d_val
        for d_other in (0, 1):   # disabled: holds whatever d does
            out, energized = outputs_of(b, {"d": d_other, "en": 1 - on}, energized)
            assert out["q"] == d_val


def test_falling_edge_and_initial_one(tmp_path):
    # a falling-edge toggle that must start at 1 (held in complement; a relay powers up released)
    text = ".model t\n.inputs clk\n.outputs q\n.latch d q fe clk 1\n.names q d\n0 1\n.end\n"
    _, b, a = fit(blif(tmp_path, "tfe", text), SPDT)
    (lt,) = b.latches
    assert lt.inverted and lt.state != "q"
    assert any("must start at 1" in c for c in a.cautions)
    energized = None
    out, energized = outputs_of(b, {"clk": 1}, energized)
    assert out["q"] == 1                      # the design's initial value at power-up
    seen = []
    for _ in range(4):
        out, energized = outputs_of(b, {"clk": 1}, energized)
        out, energized = outputs_of(b, {"clk": 0}, energized)   # falling edge
        seen.append(out["q"])
    assert seen == [0, 1, 0, 1]


def test_latch_without_control_is_refused(netfit, tmp_path):
    # an asynchronous latch has no control (a latch with no type at all takes the design's global clock)
    p = blif(tmp_path, "free", ".model f\n.inputs d\n.outputs q\n.latch d q as NIL\n.end\n")
    code, out, err = netfit("build", p, "--target", "relay-spdt")
    assert code == 2 and "clock or enable" in err


# ---------------------------------------------------------------------------
# packing, support parts, figures
@pytest.mark.parametrize("target", [SPDT, DPDT], ids=["spdt", "dpdt"])
def test_packing_one_coil_net_per_relay_and_fewest_relays(tmp_path, target):
    _, b, a = fit(generated.make("rca", 3, tmp_path), target)
    P = target.parts[b.parts[0].part_id].relay.poles
    per_coil = {}
    for k in b.contacts:
        per_coil.setdefault(b.coils[k.part_ref], set()).add(k.part_ref)
        assert 1 <= k.pole <= P
    poles = {}
    for k in b.contacts:
        poles[b.coils[k.part_ref]] = poles.get(b.coils[k.part_ref], 0) + 1
    assert len(b.parts) == sum(ceil(n / P) for n in poles.values())
    assert [p.ref for p in b.parts] == [f"K{i}" for i in range(1, len(b.parts) + 1)]
    coms = [k.com for k in b.contacts]
    assert len(coms) == len(set(coms))          # each relay-driven net has one driving pole


def test_support_parts_diode_per_coil_and_load_per_net(tmp_path):
    _, b, a = fit(generated.make("rca", 2, tmp_path), SPDT)
    diodes = [s for s in b.support if s.part_id == "D-1N4148"]
    assert sorted(s.nets[1] for s in diodes) == sorted(b.coils[p.ref] for p in b.parts)
    assert all(s.nets[0] == "GND" for s in diodes)               # anode to GND, cathode to the coil
    loads = {s.nets[0] for s in b.support if s.part_id == "R-10K"}
    driven = {k.com for k in b.contacts}
    feeds = (set(b.coils.values()) | set(b.output_nets.values())) & driven
    assert loads == feeds


def test_timing_and_supply_from_the_catalog(tmp_path):
    # catalog figures (generic small-signal relay datasheets) and Ohm's law
    from mapper.analyze.relay import DIODE_RELEASE_FACTOR
    _, b, a = fit(blif(tmp_path, "inv", ".model inv\n.inputs a\n.outputs y\n.names a y\n0 1\n.end\n"), SPDT)
    r = SPDT.parts["RLY-SPDT-5V"].relay
    level = max(r.operate_time.value, r.release_time.value * DIODE_RELEASE_FACTOR) + r.bounce_time.value
    assert a.timing.delay_s == pytest.approx(level)
    res = SPDT.parts["R-10K"].ratings["resistance"].value
    volts = SPDT.supply_voltage.value
    assert a.supply.coil_current_a == pytest.approx(r.coil_current.value)
    assert a.supply.current_a == pytest.approx(r.coil_current.value + volts / res)
    assert 0 < a.supply.current_typ_a < a.supply.current_a


def test_build_json_summary_keys(netfit, tmp_path):
    p = generated.make("rca", 2, tmp_path)
    code, s, err = netfit("build", p, "--target", "relay-dpdt", "--json", as_json=True)
    assert code == 0, err
    assert s["verified"] == "proved" and s["parts_total"] == sum(s["parts"].values())
    assert set(s["support_parts"]) == {"D-1N4148", "R-10K"}
    assert s["poles_used"] <= s["poles_available"] == 2 * s["parts_total"]
    assert s["coil_current_a"] > 0 and s["supply_current_a"] >= s["coil_current_a"]
    assert 1e-3 < s["delay_s"] < 1.0                               # milliseconds, not nanoseconds
    text = " ".join(s["cautions"])
    assert "mains" in text and "licensed" in text and "supply" in text


def test_a_user_catalog_with_four_pole_relays(tmp_path):
    # an N-pole relay from a user's catalog: poles packed four to a relay
    src = (Path(flow.__file__).resolve().parents[1] / "libraries" / "relays.xml").read_text()
    start = src.index('<part id="RLY-DPDT-5V"')
    end = src.index("</part>", start) + len("</part>")
    part = src[start:end].replace("RLY-DPDT-5V", "RLY-4PDT-5V").replace('poles="2"', 'poles="4"')
    part = part.replace('<nc numbers="2 3 5 7 10 12 14 15"/>',
                        '<slot index="3" cell="changeover"><pin name="COIL" shared="COIL+"/> '
                        '<pin name="COM" number="3"/> <pin name="NC" number="2"/> '
                        '<pin name="NO" number="5"/></slot>\n'
                        '      <slot index="4" cell="changeover"><pin name="COIL" shared="COIL+"/> '
                        '<pin name="COM" number="14"/> <pin name="NC" number="15"/> '
                        '<pin name="NO" number="12"/></slot>\n'
                        '      <nc numbers="7 10"/>')
    head = src[:src.index("<part ")]
    (tmp_path / "four.xml").write_text(head.replace('name="relays"', 'name="four"') + part + "\n</catalog>\n")
    (tmp_path / "relay-4pdt.xml").write_text(
        (Path(flow.__file__).resolve().parents[1] / "targets" / "relay-dpdt.xml").read_text()
        .replace('name="relay-dpdt"', 'name="relay-4pdt"').replace('src="relays"', 'src="four.xml"')
        .replace("RLY-DPDT-5V", "RLY-4PDT-5V"))
    t = flow.load_target(tmp_path / "relay-4pdt.xml")
    d, b, a = fit(generated.make("rca", 3, tmp_path), t)
    poles = {}
    for k in b.contacts:
        poles[b.coils[k.part_ref]] = poles.get(b.coils[k.part_ref], 0) + 1
        assert k.pole <= 4
    assert len(b.parts) == sum(ceil(n / 4) for n in poles.values())
    _, b2, _ = fit(d, DPDT)
    assert len(b.parts) <= len(b2.parts)


@pytest.mark.slow
def test_a_design_cut_into_windows(tmp_path):
    # more inputs than one window holds: ariths-gen 9-bit adder (18 inputs), checked by the proof
    # and by a few sums at the contact level
    d, b, a = fit(generated.make("rca", 9, tmp_path), DPDT)
    assert b.fit_stats["windows"] > 1
    assert len(b.parts) < template_relays(d)
    for x, y in ((0, 0), (511, 1), (300, 211), (511, 511), (256, 255)):
        out, _ = outputs_of(b, operands(d, 9, x, y))
        assert sum(out[f"rca9_out[{i}]"] << i for i in range(10)) == x + y


# ---------------------------------------------------------------------------
# the logic view refuses what it cannot read exactly
def _hand_build(contacts, coils, inputs=("a",), outputs=("y",)):
    b = Build("hand", SPDT, list(inputs), list(outputs))
    for ref in coils:
        b.parts.append(PartInstance(ref, "RLY-SPDT-5V"))
    b.coils = dict(coils)
    b.contacts = [ContactInstance(*c) for c in contacts]
    return b


def test_contact_logic_refuses_two_poles_on_one_net():
    b = _hand_build([("K1", 1, "y", "VCC", None), ("K2", 1, "y", None, "VCC")], {"K1": "a", "K2": "a"})
    with pytest.raises(InternalError, match="two poles"):
        b.to_netlist()


def test_contact_logic_refuses_a_loop_of_contacts():
    b = _hand_build([("K1", 1, "y", "z", None), ("K2", 1, "z", "y", "VCC")], {"K1": "a", "K2": "a"})
    with pytest.raises(InternalError, match="loop"):
        b.to_netlist()


def test_feedback_loop_without_a_load_is_warned(tmp_path):
    from mapper.analyze.relay import feedback_loops
    _, b, a = fit(blif(tmp_path, "lat", LATCH.format(kind="ah", init=0)), SPDT)
    loops = feedback_loops(b)
    assert loops and all(not lp["unloaded"] for lp in loops)
    b.support = [s for s in b.support if not (s.part_id == "R-10K" and "q" in s.nets)]
    (loop,) = [lp for lp in feedback_loops(b) if "q" in lp["nets"]]
    assert loop["unloaded"] == ["q"]
