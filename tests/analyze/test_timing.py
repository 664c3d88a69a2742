"""Static timing of builds, checked against the catalog's figures and independent path searches.

Sources:

* ISCAS-85 c17 (Brglez and Fujiwara, ISCAS 1985): 6 NAND2 gates, longest
  input-to-output path 3 gates, shortest 2 (from the published gate list in
  tests/data/c17.blif).
* 74HC00 pinout (generic 74HC datasheets, also in /work/shared/TRADE-FACTS.md):
  A 1,4,9,12 · B 2,5,10,13 · Y 3,6,8,11.
* The setup relation of synchronous timing, T >= clock-to-output + logic +
  setup (common practice of every digital-design textbook).
* Longest paths cross-checked with networkx's own DAG longest-path routine
  (an independent implementation).
"""
from __future__ import annotations

import copy

import networkx as nx
import pytest

from mapper import flow
from mapper.analyze.timing import LOAD_RATING, cell_delay, net_loads, static_timing
from mapper.catalog import Figure, load_target
from mapper.fit.gates import CellUse, Mapping
from mapper.fit.pack import pack
from mapper.read import read_design

C17_GATES = [("N1", "N3", "N10"), ("N3", "N6", "N11"), ("N2", "N11", "N16"),
             ("N11", "N7", "N19"), ("N10", "N16", "N22"), ("N16", "N19", "N23")]
HC00_PINS = {"A": {1, 4, 9, 12}, "B": {2, 5, 10, 13}, "Y": {3, 6, 8, 11}}


def hand_build(target, cells, inputs, outputs):
    """A build of hand-placed cells (``(cell, args, out)``) packed by the packer."""
    m = Mapping([CellUse(c, tuple(a), o) for c, a, o in cells], {o: o for o in outputs})
    return pack("hand", target, list(inputs), list(outputs), m, [])


def nand2_figures(target):
    pd = target.parts["74HC00"]
    return pd.delay_typ["nand2"].value, pd.delay_max["nand2"].value


def test_c17_published_gates_on_nand_only():
    # ISCAS-85 c17 as published: 3 NAND2 levels on the longest path, 2 on the shortest
    t = load_target("nand-only")
    typ, mx = nand2_figures(t)
    b = hand_build(t, [("nand2", (a, c), o) for a, c, o in C17_GATES], ["N1", "N2", "N3", "N6", "N7"], ["N22", "N23"])
    r = static_timing(b).as_dict()
    assert r["delay_s"] == pytest.approx(3 * mx)
    assert r["delay_typ_s"] == pytest.approx(3 * typ)
    assert r["levels"] == 3
    for o in ("N22", "N23"):
        best, worst = r["outputs"][o]
        assert worst == pytest.approx(3 * mx)
        assert best == pytest.approx(2 * typ)
    for p in r["paths"]:
        assert p["best_max_s"] == pytest.approx(2 * mx)
        assert p["worst_typ_s"] == pytest.approx(3 * typ)
        assert len(p["worst_path"]) == 3 and len(p["best_path"]) == 2
    # the critical path hop by hop: on the 74HC00 pins of the generic datasheet, each hop fed by the last
    path = r["critical_path"]
    assert len(path) == 3
    prev = r["critical_start"]["net"]
    assert prev in ("N3",)                     # N3 -> N11 -> N16 -> N22/N23 is the only 3-gate start
    for i, h in enumerate(path, 1):
        assert h["part_id"] == "74HC00" and h["cell"] == "nand2"
        assert h["from_pin_number"] in HC00_PINS[h["from_pin"]]
        assert h["to_pin_number"] in HC00_PINS["Y"]
        assert h["net_in"] == prev
        assert h["arrival_s"] == pytest.approx(i * mx)
        assert h["arrival_typ_s"] == pytest.approx(i * typ)
        prev = h["net"]
    assert prev in ("N22", "N23")


def test_c17_fitted_on_nand_only(data):
    # the check: c17 on nand-only, worst delay = 3 NAND2 levels x the catalog's maximum NAND2 delay
    t = load_target("nand-only")
    _, mx = nand2_figures(t)
    b, a = flow.fit(read_design(data / "c17.blif"), t)
    assert a.verified == "proved"
    assert a.timing.delay_s == pytest.approx(3 * mx)
    assert a.timing.levels == 3


def _longest_by_networkx(build, use_max=True):
    """Longest input/storage-to-endpoint delay by networkx on a graph with one node per net."""
    g = nx.DiGraph()
    k = 1 if use_max else 0
    target = build.target
    for c in build.cells:
        cd = target.cells[c.cell]
        if cd.storage is not None:
            continue
        d = cell_delay(build, c)[k]
        for p in cd.inputs:
            n = c.pins[p]
            if n not in ("VCC", "GND"):
                g.add_edge(n, c.pins[cd.output], weight=d)
    return nx.dag_longest_path_length(g, weight="weight") if g.number_of_edges() else 0.0


@pytest.mark.parametrize("name", ["full_adder", "mux4", "seg7", "cmp2"])
def test_worst_path_matches_networkx(name, data):
    # independent check: networkx's DAG longest path over the same cells and catalog delays
    t = load_target("gates-74")
    b, a = flow.fit(read_design(data / "textbook" / f"{name}.blif"), t, effort=0)
    r = a.timing.as_dict()
    assert r["delay_s"] == pytest.approx(_longest_by_networkx(b, True))
    assert r["delay_typ_s"] == pytest.approx(_longest_by_networkx(b, False))
    # the critical path's hops add up to its arrival
    assert sum(h["delay_s"] for h in r["critical_path"]) == pytest.approx(r["delay_s"])
    for p in r["paths"]:
        assert p["best_s"] <= p["worst_typ_s"] <= p["worst_s"]
        assert p["best_s"] <= p["best_max_s"] <= p["worst_s"]


def test_counter_clock_rate(data):
    # synchronous 4-bit counter (textbook circuit): T_min = clock-to-output + longest logic + setup
    # (common practice), with the 74HC74's setup time from the catalog
    t = load_target("gates-74")
    b, a = flow.fit(read_design(data / "textbook" / "counter4.blif"), t, effort=0)
    r = a.timing.as_dict()
    clk2q = t.parts["74HC74"].delay_max["dff_pc"].value
    setup = t.parts["74HC74"].rating("setup-time")
    logic = _longest_by_networkx(b, True)
    assert r["clock_period_min_s"] == pytest.approx(clk2q + logic + setup)
    assert r["clock_max_hz"] == pytest.approx(1 / (clk2q + logic + setup))
    assert r["clock_path"]["from"]["kind"] == "storage"
    assert not any("no setup or hold time" in n for n in r["clock_notes"])
    # hold: the shortest storage-to-storage path with minimum figures stays positive
    assert r["hold_slack_s"] > 0 and r["hold_violations"] == [] and r["timing_violations"] == 0
    assert r["clock_to_output_s"] == pytest.approx(clk2q)


def test_setup_time_from_catalog_rating(data):
    # a catalog that gives a longer setup time: the difference adds to the period (common practice)
    t = copy.deepcopy(load_target("gates-74"))
    t.name = "gates-74-setup"
    t.parts["74HC74"].ratings["setup-time"] = Figure(t.parts["74HC74"].rating("setup-time") + 20e-9, "test value")
    design = read_design(data / "textbook" / "counter4.blif")
    base, base_a = flow.fit(design, load_target("gates-74"), effort=0)
    b, a = flow.fit(design, t, effort=0)
    assert a.timing.clock.period_min_s == pytest.approx(base_a.timing.clock.period_min_s + 20e-9)
    assert not any("74HC74" in n for n in a.timing.clock.notes)


def test_load_dependent_delay():
    # a part rating delay-per-unit-load adds its slope times the fan-out load (linear load model,
    # common practice); the built-in catalogs have none
    t = copy.deepcopy(load_target("nand-only"))
    t.parts["74HC00"].ratings[LOAD_RATING] = Figure(1e-9, "test value")
    b = hand_build(t, [("nand2", (a, c), o) for a, c, o in C17_GATES], ["N1", "N2", "N3", "N6", "N7"], ["N22", "N23"])
    loads = net_loads(b)
    per = t.parts["74HC00"].input_load.value
    assert loads["N11"] == pytest.approx(2 * per) and loads["N16"] == pytest.approx(2 * per)
    plain = static_timing(hand_build(load_target("nand-only"), [("nand2", (a, c), o) for a, c, o in C17_GATES],
                                     ["N1", "N2", "N3", "N6", "N7"], ["N22", "N23"])).as_dict()
    r = static_timing(b).as_dict()
    # the worst path N3 -> N11 -> N16 -> N22 adds the loads on N11 and N16 (N22 drives nothing)
    assert r["delay_s"] == pytest.approx(plain["delay_s"] + 1e-9 * (loads["N11"] + loads["N16"]))


def test_overloaded_net_is_listed():
    # one 74HC output drives 10 unit loads (generic 74HC datasheets); a 74HC input counts 0.1 UL in the
    # catalog, so an output feeding 101 inputs is beyond it
    t = load_target("gates-74")
    cells = [("inv", ("a",), "x")] + [("inv", ("x",), f"y{i}") for i in range(101)]
    b = hand_build(t, cells, ["a"], [f"y{i}" for i in range(101)])
    r = static_timing(b).as_dict()
    assert [o["net"] for o in r["overloaded"]] == ["x"]


def test_build_with_no_cells():
    # an output wired straight to an input: no cell, no delay
    from mapper.logic.function import Function
    from mapper.netlist import Netlist
    n = Netlist("wire")
    n.add_input("a")
    n.add_logic("f", ["a"], Function.from_table(1, 0b10))
    n.add_output("f")
    b, a = flow.fit(n, load_target("gates-74"))
    r = static_timing(b).as_dict()
    assert r["delay_s"] == 0.0 and r["critical_path"] == []


def test_relay_build_is_timed_by_coil_levels(tmp_path):
    # relay builds have contacts, not cells: their timing is coil levels (one operate or release time
    # each, catalog figures), never the cells' static timing
    p = tmp_path / "and.blif"
    p.write_text(".model and2\n.inputs a b\n.outputs f\n.names a b f\n11 1\n.end\n")
    b, a = flow.fit(read_design(p), load_target("relay-spdt"))
    assert b.cells == [] and b.contacts
    assert a.timing.relay is not None and a.timing.paths is None
    r = b.target.parts[b.parts[0].part_id].relay
    assert a.timing.delay_s >= r.operate_time.value


@pytest.mark.parametrize("target", ["gates-74", "nand-only"])
def test_part_index_gives_the_builds_own_pins(target, tmp_path):
    # The timing pass looks parts and pins up in tables made once (PartIndex); they must give exactly
    # what the build's own (list-searching) methods give for every pin of every cell, and the pins of
    # the 74HC00 slots must be the generic datasheet's.  Circuit: ariths-gen 4-bit ripple-carry adder
    # (independent generator).
    from generated import make
    from mapper.analyze.timing import PartIndex
    b, a = flow.fit(read_design(make("rca", 4, tmp_path)), load_target(target))
    ix = PartIndex(b)
    for c in b.cells:
        assert ix.part_def(c.part_ref) is b.part_def(c.part_ref)
        assert ix.part_id(c.part_ref) == b.part(c.part_ref).part_id
        for pin in c.pins:
            assert ix.pin_of(c, pin) == b.pin_of(c, pin)
            if ix.part_id(c.part_ref) == "74HC00" and pin in HC00_PINS:
                assert ix.pin_of(c, pin) in HC00_PINS[pin]
    for p in b.parts:
        assert ix.part_def(p.part_id) is b.part_def(p.part_id)
    # every hop of every reported path carries the same pins as the build says
    by_out = {c.pins[b.target.cells[c.cell].output]: c for c in b.cells}
    for path in a.timing.paths:
        for h in path["worst_path"] + path["best_path"]:
            c = by_out[h["net"]]
            assert h["from_pin_number"] == b.pin_of(c, h["from_pin"])
            assert h["to_pin_number"] == b.pin_of(c, h["to_pin"])


# -- storage figures, latches, hold margins, clock verdicts (issue: timing verdicts) ---------------------------
#: setup, hold and shortest clock/enable pulse, seconds: the generic datasheets of each family as recalled
#: (from memory; the catalog marks them so) -- 74HC at 4.5 V up to 85 °C, 74LS at 5 V, 25 °C
STORAGE_FIGURES = {
    ("74hc", "74HC74"): (25e-9, 0.0, 25e-9),
    ("74hc", "74HC75"): (25e-9, 5e-9, 25e-9),
    ("74ls", "74LS74"): (20e-9, 5e-9, 25e-9),
    ("74ls", "74LS75"): (20e-9, 5e-9, 20e-9),
}


@pytest.mark.parametrize("lib,part", sorted(STORAGE_FIGURES))
def test_storage_parts_carry_setup_hold_and_pulse_figures(lib, part):
    from pathlib import Path

    from mapper.catalog import load_catalog
    parts, _ = load_catalog(Path(__file__).resolve().parents[2] / "libraries" / f"{lib}.xml")
    pd = parts[part]
    setup, hold, pulse = STORAGE_FIGURES[(lib, part)]
    assert pd.rating("setup-time") == pytest.approx(setup)
    assert pd.rating("hold-time") == pytest.approx(hold, abs=1e-15)
    assert pd.rating("pulse-width") == pytest.approx(pulse)
    for name in ("setup-time", "hold-time", "pulse-width"):
        f = pd.ratings[name]
        family = f"generic {part} datasheets" if part[-2:] != "74" or lib == "74hc" else "generic 74LS74A datasheets"
        assert f.source == "from memory" and family in f.conditions


LAT2 = """\
# two-phase latch pipeline of our own: q1 open while clk is high, q2 open while it is low
.model lat2
.inputs d e clk
.outputs y
.latch d q1 ah clk 0
.names q1 e n1
10 1
01 1
.latch n1 q2 al clk 0
.names q2 e y
11 1
.end
"""


def _cell_driving(b, net):
    return next(c for c in b.cells if c.pins.get(b.target.cells[c.cell].output) == net)


def test_two_phase_latches_are_timed_as_latches(tmp_path, netfit):
    # latch timing (Sakallah, Mudge and Olukotun, DAC 1990, for one clock and its inverse): q2 opens when clk
    # falls (its enable comes through an inverting gate) and closes when clk rises; the data q1 launches when
    # it opens on a rising edge must be in q2 a setup time before q2 closes, on the next rising edge:
    #     T >= D-to-Q(q1) + logic + setup(q2) - earliest enable of q2
    p = tmp_path / "lat2.blif"
    p.write_text(LAT2)
    t = load_target("gates-74")
    b, a = flow.fit(read_design(p), t)
    hc75 = t.parts["74HC75"]
    d2q_max, d2q_typ = hc75.delay_max["latch"].value, hc75.delay_typ["latch"].value
    n1 = cell_delay(b, _cell_driving(b, "n1"))
    inv = cell_delay(b, _cell_driving(b, next(c.pins["EN"] for c in b.cells if c.pins.get("Q") == "q2")))
    ck = a.timing.clock
    assert ck.period_min_s == pytest.approx(d2q_max + n1[1] + hc75.rating("setup-time") - inv[0], rel=1e-5)
    assert ck.path["to"]["net"] == "n1" and ck.path["latch"] and ck.path["half_cycle"]
    # hold: as clk rises q1 opens while q2 closes late (its enable passes the inverting gate), so the new data
    # reaches q2 too soon unless  D-to-Q(q1, typ) + logic (typ) >= inverter (max) + hold(q2)
    slack = d2q_typ + n1[0] - (inv[1] + hc75.rating("hold-time"))
    assert slack < 0
    assert [v["to"]["net"] for v in ck.hold_violations] == ["n1"]
    assert ck.hold_violations[0]["slack_s"] == pytest.approx(slack)
    assert any(c.startswith("hold margin missed") for c in a.cautions)
    code, r, _ = netfit("timing", p, "--target", "gates-74", "--json", as_json=True)
    assert code == 1 and r["timing_violations"] == 1


def test_latches_open_together_pass_data_through_in_one_window(tmp_path):
    # two latches on one enable, the second fed from the first through a gate: while the enable is high the
    # data runs through both, so all of it must fit in the half period before they close
    p = tmp_path / "flow.blif"
    p.write_text(".model flow\n.inputs d e en\n.outputs q2\n.latch d q1 ah en 0\n"
                 ".names q1 e n1\n11 1\n.latch n1 q2 ah en 0\n.end\n")
    t = load_target("gates-74")
    b, a = flow.fit(read_design(p), t)
    hc75 = t.parts["74HC75"]
    n1 = cell_delay(b, _cell_driving(b, "n1"))
    ck = a.timing.clock
    want = 2 * (hc75.delay_max["latch"].value + n1[1] + hc75.rating("setup-time"))
    assert ck.period_min_s == pytest.approx(max(want, 2 * hc75.rating("pulse-width")), rel=1e-5)
    # q2 takes its data after it opened: time borrowed from the next stage
    assert [x["net"] for x in ck.latches] == ["n1"]
    assert ck.latches[0]["borrowed_s"] == pytest.approx(hc75.delay_max["latch"].value + n1[1], rel=1e-5)


def test_a_latch_feeding_itself_has_no_clock_rate(tmp_path, netfit):
    # a transparent latch whose data is its own output inverted oscillates while open: no rate works
    p = tmp_path / "ring.blif"
    p.write_text(".model ring\n.inputs en\n.outputs q\n.latch n q ah en 0\n.names q n\n0 1\n.end\n")
    b, a = flow.fit(read_design(p), load_target("gates-74"))
    assert a.timing.clock.period_min_s == float("inf") and a.timing.clock.max_hz is None
    assert any("no clock rate" in c for c in a.cautions)
    # relays moving in any order cannot build it either: refused with the reason (exit 2)
    code, _, err = netfit("build", p, "--target", "relay-spdt")
    assert code == 2 and "no stable value" in err


def test_a_clock_asked_for_is_checked(tmp_path, netfit, data):
    # the synchronous counter's shortest period (above) against a clock asked for with --clock
    p = data / "textbook" / "counter4.blif"
    code, r, _ = netfit("timing", p, "--target", "gates-74", "--json", as_json=True)
    assert code == 0
    fast = 1.01 / r["clock_period_min_s"]
    slow = 0.99 / r["clock_period_min_s"]
    code, r2, _ = netfit("timing", p, "--target", "gates-74", "--clock", f"{fast}Hz", "--json", as_json=True)
    assert code == 1 and r2["timing_violations"] == 1
    assert any(c.startswith("the clock asked for") for c in r2["cautions"])
    code, r3, _ = netfit("timing", p, "--target", "gates-74", "--clock", f"{1 / slow * 1e9:.3f}ns", "--json",
                         as_json=True)
    assert code == 0 and r3["timing_violations"] == 0
    assert r3["clock_requested_period_s"] == pytest.approx(1 / slow, rel=1e-6)
    code, out, _ = netfit("timing", p, "--target", "gates-74", "--clock", f"{slow}Hz")
    assert "meets it with" in out
    with pytest.raises(SystemExit) as exc:   # argparse refuses a clock it cannot read: usage error, exit 2
        netfit("timing", p, "--target", "gates-74", "--clock", "fast")
    assert exc.value.code == 2


def test_supply_current_follows_the_clock_rate(data):
    # CMOS draws in step with how often it switches (I = C_pd V f, generic 74HC datasheets): the catalog's
    # per-section figure is at 1 MHz, so at 10 MHz the switching part is ten times as much; the static
    # figure (quiescent only) stays
    from mapper.analyze.supply import gate_supply
    b, a = flow.fit(read_design(data / "textbook" / "counter4.blif"), load_target("gates-74"))
    one = gate_supply(b)
    ten = gate_supply(b, 10e6)
    assert one.static_a == ten.static_a > 0
    assert ten.current_a - ten.static_a == pytest.approx(10 * (one.current_a - one.static_a))
    assert "1 MHz" in one.basis and "10 MHz" in ten.basis


def test_multi_is_refused_on_relay_targets(netfit, data):
    code, _, err = netfit("timing", data / "textbook" / "full_adder.blif", "--target", "relay-spdt", "--multi")
    assert code == 2 and "relay" in err and "--multi" in err
