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

Besides the prover and netfit's own switch-level check, run by ``flow.fit`` on
every build, builds are checked here at the electrical level by a model written
for the tests (``tests/switchlevel.py``): it reads the written build file pin by
pin, joins nets through closed contacts both ways and through diodes one way,
and explores every order in which the relays can move (a changeover breaks
before it makes).  It knows nothing of the mux translation the prover sees nor
of how the build was made, so it checks those too.
"""
from __future__ import annotations

import itertools
import sys
from math import ceil
from pathlib import Path

import pytest
from switchlevel import WiredRelays

import generated
from mapper import flow
from mapper.build import Build, ContactInstance, PartInstance
from mapper.errors import InternalError
from mapper.read import read_design

sys.path.insert(0, str(Path(__file__).resolve().parents[2] / "bench"))
from bench_relay import SHIFT4, template_relays  # noqa: E402

DATA = Path(__file__).resolve().parents[1] / "data"
SPDT = flow.load_target("relay-spdt")
DPDT = flow.load_target("relay-dpdt")


# ---------------------------------------------------------------------------
# the build as wired, read back from its file (see the module docstring)
class Bench:
    """A relay build on the bench: the written build file read by ``tests/switchlevel.py``, its relays
    settled after each input change in every order they can move."""

    def __init__(self, b, a, tmp_path):
        from mapper.write import json as wjson
        path = tmp_path / f"{b.design}-{b.target.name}.json"
        wjson.write_build(b, a, path)
        self.wired = WiredRelays(path)
        self.pos = self.wired.start()
        self.inputs = {i: 0 for i in b.inputs}

    def set(self, inputs: dict) -> dict:
        """Change the inputs one at a time (each change settles in every order) and read the outputs."""
        for name, v in inputs.items():
            if self.inputs.get(name) != v:
                self.inputs[name] = v
                self.pos = self.wired.apply(self.pos, self.inputs)
                assert not self.wired.shorted(self.pos, self.inputs), "the supply reaches GND"
        return self.wired.outputs_of(self.pos, self.inputs)


def outputs_of(bench: Bench, inputs: dict) -> dict:
    return bench.set(inputs)


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
    assert a.wiring_check["defects"] == 0
    return d, b, a


# ---------------------------------------------------------------------------
# the three figures of the trade
def test_inverter_is_one_relay_with_a_break_contact(tmp_path):
    # common practice of relay logic: NOT is one relay, its break contact fed from the rail
    _, b, an = fit(blif(tmp_path, "inv", ".model inv\n.inputs a\n.outputs y\n.names a y\n0 1\n.end\n"), SPDT)
    assert len(b.parts) == 1
    (k,) = b.contacts
    assert b.coils[k.part_ref] == "a" and k.com == "y" and k.nc == "VCC" and k.no is None
    bench = Bench(b, an, tmp_path)
    for a in (0, 1, 0):
        assert outputs_of(bench, {"a": a}) == {"y": 1 - a}


def test_xor2_is_two_relays(tmp_path):
    # common practice of relay logic: XOR of two inputs on two changeover relays
    p = blif(tmp_path, "xor2", ".model xor2\n.inputs a b\n.outputs y\n.names a b y\n10 1\n01 1\n.end\n")
    _, b, an = fit(p, SPDT)
    assert len(b.parts) == 2
    assert sorted(b.coils.values()) == ["a", "b"]
    bench = Bench(b, an, tmp_path)
    for a, bb in itertools.product((0, 1), repeat=2):
        assert outputs_of(bench, {"a": a, "b": bb}) == {"y": a ^ bb}


def test_and2_passes_one_input_through_the_others_make_contact(tmp_path):
    # common practice of relay logic: y = a AND b is b's net fed through a make contact of a's relay
    p = blif(tmp_path, "and2", ".model and2\n.inputs a b\n.outputs y\n.names a b y\n11 1\n.end\n")
    _, b, an = fit(p, SPDT)
    assert len(b.parts) == 1
    (k,) = b.contacts
    coil = b.coils[k.part_ref]
    assert k.com == "y" and k.nc is None and {coil, k.no} == {"a", "b"}   # pass-through, not the rail
    bench = Bench(b, an, tmp_path)
    for a, bb in itertools.product((0, 1), repeat=2):
        assert outputs_of(bench, {"a": a, "b": bb}) == {"y": a & bb}


# ---------------------------------------------------------------------------
# generated designs against arithmetic, and against the careful gate-by-gate relay build
@pytest.mark.parametrize("width", [1, 2, 3, 4])
@pytest.mark.parametrize("target", [SPDT, DPDT], ids=["spdt", "dpdt"])
def test_adders_add_and_beat_the_templates(tmp_path, width, target):
    # ariths-gen ripple-carry adders, checked against Python addition at the contact level; never more relays
    # than the careful gate-by-gate build (bench/bench_relay.py, common practice), and on DPDT at least 40 %
    # fewer from 3 bits on (the figure bench_relay measures, kept as a floor)
    d, b, a = fit(generated.make("rca", width, tmp_path), target)
    assert len(b.parts) <= template_relays(d)
    if target is DPDT and width >= 3:
        assert len(b.parts) <= 0.6 * template_relays(d)
    bench = Bench(b, a, tmp_path)
    for x, y in itertools.product(range(1 << width), repeat=2):
        out = outputs_of(bench, operands(d, width, x, y))
        got = sum(out[f"rca{width}_out[{i}]"] << i for i in range(width + 1))
        assert got == x + y


def test_comparator_compares(tmp_path):
    # ariths-gen unsigned a < b, checked against Python comparison at the contact level
    d, b, a = fit(generated.make("lt", 3, tmp_path), DPDT)
    assert len(b.parts) <= 0.6 * template_relays(d)
    (o,) = b.outputs
    bench = Bench(b, a, tmp_path)
    for x, y in itertools.product(range(8), repeat=2):
        assert outputs_of(bench, operands(d, 3, x, y))[o] == int(x < y)


def test_seven_segment_decoder(tmp_path):
    # textbook 7-segment decoder: the relay build lights the same segments as the design
    d, b, a = fit(DATA / "textbook" / "seg7.blif", DPDT)
    assert len(b.parts) <= 0.6 * template_relays(d)
    from mapper.simulate import simulate
    bench = Bench(b, a, tmp_path)
    for v in range(16):
        ins = {f"d{i}": (v >> i) & 1 for i in range(4)}
        want = simulate(d, ins, 1)
        assert outputs_of(bench, ins) == {o: want[o] for o in d.outputs}


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


@pytest.mark.parametrize("n", [3, 4, 5, 6])
def test_parity_ladder_needs_2n_minus_2_changeovers(tmp_path, n):
    # Shannon, Trans. AIEE 57, 1938 (symmetric functions): the n-input parity ladder takes 2(n-1) transfer
    # contacts -- n - 1 relays of two changeovers and the last input passed through: 2n - 2 SPDT relays,
    # n DPDT relays (each input one relay)
    rows = "".join(format(m, f"0{n}b") + " 1\n" for m in range(1 << n) if bin(m).count("1") % 2)
    ins = " ".join(f"x{i}" for i in range(n))
    p = blif(tmp_path, f"par{n}", f".model par\n.inputs {ins}\n.outputs p\n.names {ins} p\n{rows}.end\n")
    _, b1, _ = fit(p, SPDT)
    _, b2, _ = fit(p, DPDT)
    assert (len(b1.parts), len(b2.parts)) == (2 * n - 2, n)


@pytest.mark.parametrize("target,relays", [(SPDT, 5), (DPDT, 4)], ids=["spdt", "dpdt"])
def test_full_adder_relays(target, relays):
    # common practice of relay adders: a XOR b on its own coil (two relays on SPDT, one DPDT... with the carry
    # taken from a's contacts), sum and carry passed through cin's changeovers -- 5 SPDT, 4 DPDT relays
    d, b, a = fit(DATA / "textbook" / "full_adder.blif", target)
    assert len(b.parts) == relays


@pytest.mark.parametrize("target", [SPDT, DPDT], ids=["spdt", "dpdt"])
def test_no_pull_down_on_a_net_that_carries_a_coil(tmp_path, target):
    # a coil is a load to ground already (common practice): a resistor beside it is a part for nothing
    for path in (DATA / "textbook" / "seg7.blif", DATA / "textbook" / "counter4.blif",
                 generated.make("rca", 3, tmp_path)):
        _, b, a = fit(path, target)
        coils = set(b.coils.values())
        assert not [s for s in b.support if s.role == "pull-down" and set(s.nets) & coils]


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
def clock_edges(bench, n, clk="clk"):
    """Apply ``n`` rising clock edges (clk 0 then 1), settling in every order; yields the outputs after each."""
    for _ in range(n):
        outputs_of(bench, {clk: 0})
        yield outputs_of(bench, {clk: 1})


@pytest.mark.slow
@pytest.mark.parametrize("target", [SPDT, DPDT], ids=["spdt", "dpdt"])
def test_counter_counts_at_the_contacts(target, tmp_path):
    # textbook 4-bit binary counter: 0, 1, …, 15, 0 on rising edges, starting from 0, whatever order the
    # relays move in (every order explored at every edge)
    d, b, a = fit(DATA / "textbook" / "counter4.blif", target)
    bench = Bench(b, a, tmp_path)
    out = outputs_of(bench, {"clk": 0})   # power-up: every relay released
    assert [out[f"q{i}"] for i in range(4)] == [0, 0, 0, 0]
    values = [sum(o[f"q{i}"] << i for i in range(4)) for o in clock_edges(bench, 17)]
    assert values == [(k + 1) % 16 for k in range(17)]
    assert len(b.latches) == 4 and all(lt.master for lt in b.latches)
    assert sum("powers up at 0" in c for c in a.cautions) == 4


LATCH = """.model lat
.inputs d en
.outputs q
.latch d q {kind} en {init}
.end
"""


@pytest.mark.parametrize("target", [SPDT, DPDT], ids=["spdt", "dpdt"])
@pytest.mark.parametrize("kind", ["ah", "al"])
def test_level_latch_holds_through_every_order(tmp_path, kind, target):
    # a relay latch holding itself through its own make contact (common practice): transparent while
    # enabled, holding otherwise, in every order the relays can move
    _, b, a = fit(blif(tmp_path, f"lat_{kind}", LATCH.format(kind=kind, init=0)), target)
    (lt,) = b.latches
    (seq,) = b.sequencers
    hold = next(k for k in b.contacts if k.com == lt.paths[1])
    assert b.coils[hold.part_ref] == "q" and hold.no == seq.hm   # its own make contact from the hold bus
    on = 1 if kind == "ah" else 0
    bench = Bench(b, a, tmp_path)
    for d_val in (1, 0, 1):
        assert outputs_of(bench, {"d": d_val, "en": on})["q"] == d_val
        assert outputs_of(bench, {"en": 1 - on})["q"] == d_val   # close the latch first
        for d_other in (0, 1):   # disabled: holds whatever d does
            assert outputs_of(bench, {"d": d_other})["q"] == d_val


def test_falling_edge_and_initial_one(tmp_path):
    # a falling-edge toggle that must start at 1 (held in complement; a relay powers up released)
    text = ".model t\n.inputs clk\n.outputs q\n.latch d q fe clk 1\n.names q d\n0 1\n.end\n"
    _, b, a = fit(blif(tmp_path, "tfe", text), SPDT)
    (lt,) = b.latches
    assert lt.inverted and lt.state != "q"
    assert any("must start at 1" in c for c in a.cautions)
    bench = Bench(b, a, tmp_path)
    assert outputs_of(bench, {"clk": 0})["q"] == 1   # the design's initial value at power-up
    assert outputs_of(bench, {"clk": 1})["q"] == 1   # a rising edge is not this element's
    seen = []
    for _ in range(4):
        outputs_of(bench, {"clk": 1})
        seen.append(outputs_of(bench, {"clk": 0})["q"])   # falling edge
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
                        '<section index="3" cell="changeover"><pin name="COIL" shared="COIL+"/> '
                        '<pin name="COM" number="3"/> <pin name="NC" number="2"/> '
                        '<pin name="NO" number="5"/></section>\n'
                        '      <section index="4" cell="changeover"><pin name="COIL" shared="COIL+"/> '
                        '<pin name="COM" number="14"/> <pin name="NC" number="15"/> '
                        '<pin name="NO" number="12"/></section>\n'
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
    assert len(b.parts) <= template_relays(d)
    bench = Bench(b, a, tmp_path)
    for x, y in ((0, 0), (511, 1), (300, 211), (511, 511), (256, 255)):
        out = outputs_of(bench, operands(d, 9, x, y))
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


def test_feedback_loops_are_the_storage_elements(tmp_path):
    # a latch holds itself through its own make contact and a steering diode: the one loop through the
    # bit's coil net (common practice of relay storage); no caution about stray loops
    from mapper.analyze.relay import feedback_loops
    _, b, a = fit(blif(tmp_path, "lat", LATCH.format(kind="ah", init=0)), SPDT)
    (lt,) = b.latches
    loops = feedback_loops(b)
    assert any(lt.state in lp["nets"] and lt.paths[1] in lp["nets"] for lp in loops)
    assert not any("feedback loop" in c for c in a.cautions)
    # a stray loop of contacts is flagged: two relays feeding each other's coils
    from mapper.analyze.cautions import relay_cautions
    b.contacts.append(ContactInstance(b.parts[0].ref, 2, "stray_a", "stray_b", None))
    b.contacts.append(ContactInstance(b.parts[0].ref, 3, "stray_b", "stray_a", None))
    assert any("feedback loop" in c for c in relay_cautions(b, a.timing, a.supply, feedback_loops(b)))


# ---------------------------------------------------------------------------
# sequential designs of our own, many clock cycles, every order of relay moves

# a 2-bit Gray-code sequencer of our own that steps on a rising edge only while en is 1 (a clocked enable)
GRAY_EN = """.model gray_en
.inputs en clk
.outputs s0 s1 top
.latch n0 s0 re clk 0
.latch n1 s1 re clk 0
# (s1 s0) with en: 00 -> 01 -> 11 -> 10 -> 00; without: hold
.names en s0 s1 n0
01- 1
1-0 1
.names en s0 s1 n1
0-1 1
11- 1
.names s0 s1 top
11 1
.end
"""


@pytest.mark.slow
@pytest.mark.parametrize("target", [SPDT, DPDT], ids=["spdt", "dpdt"])
@pytest.mark.parametrize("text,data", [(SHIFT4, "d"), (GRAY_EN, "en")], ids=["shift4", "gray_en"])
def test_sequential_designs_over_many_cycles(tmp_path, target, text, data):
    # each cycle: the data input set at random while the clock is low, then a rising edge; every change settled
    # in every order the relays can move (sampled orders where too many), the outputs after each edge equal to
    # the design's own cycle-by-cycle simulation
    import random

    from mapper.simulate import run_cycles
    d, b, a = fit(blif(tmp_path, "seq", text), target)
    bench = Bench(b, a, tmp_path)
    rng = random.Random(7)
    # the SPDT builds have twice the relays and many more orders per edge: fewer cycles there
    cycles = [rng.getrandbits(1) for _ in range(24 if target is SPDT else 120)]
    want = run_cycles(d, [{data: v} for v in cycles], 1)
    for k, v in enumerate(cycles):
        got_before = outputs_of(bench, {data: v, "clk": 0})   # the outputs of this cycle, before its edge
        assert got_before == {o: want[k][o] & 1 for o in d.outputs}, (k, v)
        outputs_of(bench, {"clk": 1})


REDUNDANT = """\
# a node that is constant without looking it: u = (a b)(a' c) = 0 (found by the fuzzer of issue 23)
.model redund
.inputs a b c x0 x1
.outputs y0 y1
.names a b t1
11 1
.names a c t2
01 1
.names t1 t2 u
11 1
.names u x0 x1 y0
1-- 1
-11 1
-00 1
.names u x1 x0 y1
1-- 1
-11 1
-00 1
.end
"""


@pytest.mark.parametrize("target", ["relay-spdt", "relay-dpdt"])
def test_a_node_constant_in_disguise_is_built(tmp_path, target):
    # u is 0 for every input (a and a' meet): the windows once had nothing to build for it and stopped with
    # an internal error; the sweep replaces it by its constant, proved over its 3-input cone, and the build is
    # proved equal to the design (y0 = y1 = x0 xnor x1)
    from mapper.fit.relay import sweep_constants
    p = tmp_path / "redund.blif"
    p.write_text(REDUNDANT)
    design = read_design(p)
    swept = sweep_constants(design)
    assert swept.nodes["u"].fanins == () and swept.nodes["u"].func.constant_value() == 0
    assert swept.nodes["t1"] is design.nodes["t1"]    # a node that is not constant stays
    b, a = flow.fit(design, flow.load_target(target))
    assert a.verified == "proved"
    assert not any("carries up to 0 mA" in c for c in a.cautions)
