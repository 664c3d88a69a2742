"""The glitch finder, checked against textbook hazards, the catalog's delays, the algebraic method and
an independent reference simulation written here.

Sources:

* A signal ANDed with its own inverted copy pulses for as long as the
  inverter takes (common practice; from memory); the width range is the
  catalog's inverter delay range (typical to maximum).
* f = a·b' + b·c glitches when b changes with a = c = 1; the consensus term
  a·c removes it (common textbook example; from memory).
* Huffman (JACM 1957) / Eichelberger (IBM J. R&D 1965): a two-level AND-OR
  has a static-1 hazard for a single-input change exactly where no one cube
  holds both states -- the simulation must agree on every 3-input cover.
* Function hazards of multi-input changes: f(A) = f(B) with the three-valued
  value unknown (Eichelberger 1965).
* A reference simulation in this file composes whole waveforms gate by gate
  (transport delay) at random delay vectors inside the catalog ranges -- a
  different algorithm from the event queue under test.
"""
from __future__ import annotations

import itertools
import json
import random
import re

import pytest

from mapper import flow
from mapper.analyze.glitch import find_glitches, glitch_report
from mapper.analyze.glitch_engine import Engine, X, path_mask
from mapper.analyze.relay_glitch import relay_transfers
from mapper.analyze.timed import Gate, TimedCircuit
from mapper.catalog import load_target
from mapper.fit.gates import CellUse, Mapping
from mapper.fit.pack import pack
from mapper.logic.function import isop
from mapper.logic.hazard import hazard_transitions
from mapper.read import read_design

NS = 1e-9
TEXTBOOK = ".model hazard\n.inputs a b c\n.outputs f\n.names a b c f\n10- 1\n-11 1\n.end\n"
GATED = """\
# a latch whose enable is the textbook hazardous function en = a·b' + b·c
.model gated
.inputs a b c d
.outputs q
.names a b c en
10- 1
-11 1
.latch d q ah en 0
.end
"""


TARGETS = ["gates-74", "nand-only"]


def hand_build(target, cells, inputs, outputs):
    m = Mapping([CellUse(c, tuple(a), o) for c, a, o in cells], {o: o for o in outputs})
    return pack("hand", target, list(inputs), list(outputs), m, [])


# -- reference simulation ------------------------------------------------------
def _value_at(wave, t):
    v = wave[0][1]
    for ti, vi in wave:
        if ti <= t:
            v = vi
        else:
            break
    return v


def reference_waves(circ, s0, s1, delay):
    """Every net's waveform [(time, value)] after the inputs go from state s0 to s1 at time 0.

    Whole waveforms are composed gate by gate (a gate's output at time t + d is its function of the
    inputs' values at t), in rounds until every gate is done: no event queue.
    """
    start = float("-inf")
    wave = {}
    for i, name in enumerate(circ.inputs):
        a, b = (s0 >> i) & 1, (s1 >> i) & 1
        wave[name] = [(start, a)] + ([(0.0, b)] if a != b else [])
    for net, v in circ.constants.items():
        wave[net] = [(start, v)]
    todo = list(range(len(circ.gates)))
    while todo:
        left = []
        for k in todo:
            g = circ.gates[k]
            if not all(n in wave for n in g.ins):
                left.append(k)
                continue
            times = sorted({t for n in g.ins for t, _ in wave[n]})
            out = []
            for t in times:
                idx = sum(_value_at(wave[n], t) << j for j, n in enumerate(g.ins))
                v = (g.table >> idx) & 1
                if not out or out[-1][1] != v:
                    out.append((t if t == start else round(t + delay[k], 15), v))
            wave[g.out] = out
        assert len(left) < len(todo), "loop"
        todo = left
    return wave


def reference_glitches(circ, delays_per_transition=48, seed=1):
    """(net, condition state, changed input) -> widths of first pulses seen, for every single-input change."""
    rng = random.Random(seed)
    n = len(circ.inputs)
    seen: dict = {}
    nets = set(circ.outputs.values()) | set(circ.watch)
    vectors = [[g.dmin for g in circ.gates], [g.dmax for g in circ.gates]]
    for _ in range(delays_per_transition // 2):
        vectors.append([rng.choice((g.dmin, g.dmax)) for g in circ.gates])
        vectors.append([rng.uniform(g.dmin, g.dmax) for g in circ.gates])
    for s in range(1 << n):
        for j in range(n):
            s1 = s ^ (1 << j)
            for d in vectors:
                w = reference_waves(circ, s, s1, d)
                for net in nets:
                    ev = w[net][1:]
                    a, b = w[net][0][1], w[net][-1][1]
                    if (a == b and len(ev) >= 2) or (a != b and len(ev) >= 3):
                        cond = s & ~(1 << j)
                        seen.setdefault((net, cond, j), []).append(ev[1][0] - ev[0][0])
    return seen


def reported(res, circ):
    """(net, condition state, changed input) -> list of width ranges, from find_glitches' hazards."""
    out: dict = {}
    names = circ.inputs
    for h in res["hazards"]:
        (x,) = h["inputs_changed"]
        j = names.index(x)
        others = [i for i in range(len(names)) if i != j]
        for cube in h["when"]:
            free = [i for i in others if names[i] not in cube]
            base = sum(1 << i for i in others if cube.get(names[i]) == 1)
            for m in range(1 << len(free)):
                s = base
                for t, i in enumerate(free):
                    if (m >> t) & 1:
                        s |= 1 << i
                out.setdefault((h["net"], s, j), []).append(h["width_s"])
    return out


def assert_matches_reference(circ, **kw):
    res = find_glitches(circ)
    rep = reported(res, circ)
    seen = reference_glitches(circ, **kw)
    # nothing the reference saw at its delay vectors is missing from the search
    assert set(seen) <= set(rep), sorted(set(seen) - set(rep))
    # and every reported hazard shows up in the reference at some of its delay vectors
    assert set(rep) <= set(seen), sorted(set(rep) - set(seen))
    # pulse widths seen fall inside the reported ranges
    for key, widths in seen.items():
        lo = min(r[0] for r in rep[key])
        hi = max(r[1] for r in rep[key])
        for w in widths:
            assert lo - 1e-15 <= w <= hi + 1e-15, (key, w, rep[key])
    return res


# -- checks ---------------------------------------------------------------------
def test_and_with_inverted_copy_pulses_for_the_inverter_delay_range():
    # common practice (from memory): y = a·a' pulses high for the inverter's delay when a rises;
    # z = a + a' pulses low for it when a falls.  The range is the catalog's (typical .. maximum).
    t = load_target("gates-74")
    inv = t.parts["74HC04"]
    lo, hi = inv.delay_typ["inv"].value, inv.delay_max["inv"].value
    b = hand_build(t, [("inv", ("a",), "an"), ("and2", ("a", "an"), "y"), ("or2", ("a", "an"), "z")],
                   ["a"], ["y", "z"])
    res = glitch_report(b).as_dict()
    by_out = {h["output"]: h for h in res["hazards"]}
    assert set(by_out) == {"y", "z"}
    assert by_out["y"]["kind"] == "static-0" and by_out["y"]["directions"] == ["a rises"]
    assert by_out["z"]["kind"] == "static-1" and by_out["z"]["directions"] == ["a falls"]
    for h in by_out.values():
        assert h["width_s"] == pytest.approx([lo, hi])
        assert h["inputs_changed"] == ["a"]
        # the racing paths: straight into the gate, and through the inverter (on its catalog pins)
        hops = sorted(len(p["hops"]) for p in h["racing_paths"])
        assert hops == [1, 2]
        via = max(h["racing_paths"], key=lambda p: len(p["hops"]))
        assert via["hops"][0]["part"] == b.cells[0].part_ref and via["hops"][0]["cell"] == "inv"
        assert via["hops"][0]["from_pin_number"] in (1, 3, 5, 9, 11, 13)   # '04 inputs (from memory)
    assert res["glitch_errors"] == 0
    assert res["glitch_search"]["exhaustive"] and res["glitch_search"]["checked"] == 2


def test_min_delay_as_a_fraction_of_the_maximum():
    t = load_target("gates-74")
    hi = t.parts["74HC04"].delay_max["inv"].value
    b = hand_build(t, [("inv", ("a",), "an"), ("and2", ("a", "an"), "y")], ["a"], ["y"])
    res = glitch_report(b, min_fraction=0.25).as_dict()
    assert res["hazards"][0]["width_s"] == pytest.approx([0.25 * hi, hi])
    assert res["glitch_search"]["min_delay"] == "0.25 of the maximum"


@pytest.mark.parametrize("target", TARGETS)
def test_textbook_hazard_found_and_removed(target, tmp_path, netfit):
    # common textbook example (from memory): f = a·b' + b·c glitches when b changes with a = c = 1
    p = tmp_path / "hazard.blif"
    p.write_text(TEXTBOOK)
    code, r, _ = netfit("timing", p, "--target", target, "--json", as_json=True)
    assert code == 0
    hz = [h for h in r["hazards"] if h["inputs_changed"] == ["b"]]
    assert [(h["output"], h["kind"]) for h in hz] == [("f", "static-1")]
    assert {"a": 1, "c": 1} in hz[0]["when"]
    assert hz[0]["width_s"][1] > 0
    assert r["cover_hazards"][0]["fix"] == {"a": 1, "c": 1}
    # --hazard-free: the consensus term a·c survives mapping and the glitch finder sees no hazard
    code, r2, _ = netfit("timing", p, "--target", target, "--hazard-free", "--json", as_json=True)
    assert code == 0
    assert r2["hazards"] == []
    hf = r2["hazard_free"]
    assert hf["terms_added"] == 1 and hf["hazards"] == 0 and hf["hazards_plain"] >= 1
    assert hf["extra_parts"] == hf["parts"] - hf["parts_plain"]
    # the build command reports the same cost
    code, s, _ = netfit("build", p, "--target", target, "--hazard-free", "--json", as_json=True)
    assert code == 0 and s["hazard_free"]["extra_parts"] == hf["extra_parts"]
    assert s["parts_total"] == hf["parts"]


@pytest.mark.parametrize("target", TARGETS)
def test_textbook_build_matches_reference_simulation(target, tmp_path):
    p = tmp_path / "hazard.blif"
    p.write_text(TEXTBOOK)
    design = read_design(p)
    t = load_target(target)
    for b, a in (flow.fit(design, t), flow.fit_hazard_free(design, t)):
        res = assert_matches_reference(TimedCircuit.from_build(b))
        if a.hazard_free is not None:
            assert res["hazards"] == []


@pytest.mark.parametrize("name", ["full_adder", "mux4", "cmp2"])
def test_textbook_designs_match_reference_simulation(name, data):
    b, a = flow.fit(read_design(data / "textbook" / f"{name}.blif"), load_target("gates-74"), effort=0)
    assert_matches_reference(TimedCircuit.from_build(b), delays_per_transition=24)


def test_c17_matches_reference_simulation(data):
    # ISCAS-85 c17 (Brglez and Fujiwara 1985) as published, 6 NAND2 on nand-only parts
    t = load_target("nand-only")
    gates = [("N1", "N3", "N10"), ("N3", "N6", "N11"), ("N2", "N11", "N16"),
             ("N11", "N7", "N19"), ("N10", "N16", "N22"), ("N16", "N19", "N23")]
    b = hand_build(t, [("nand2", (x, y), o) for x, y, o in gates], ["N1", "N2", "N3", "N6", "N7"], ["N22", "N23"])
    res = assert_matches_reference(TimedCircuit.from_build(b), delays_per_transition=24)
    assert res["transitions"]["checked"] == 5 * 32


@pytest.mark.parametrize("target", ["gates-74", "nand-only", "nor-only"])
def test_glitch_on_a_latch_enable_is_an_error(tmp_path, netfit, target):
    # the textbook hazard a·b' + b·c (Huffman 1957) on a latch enable: built as the design's cover it
    # glitches when b changes with a=c=1, and that glitch reaches the enable -- an error
    p = tmp_path / "gated.blif"
    p.write_text(GATED)
    design = read_design(p)
    raw = flow.fit(design, load_target(target), clean_controls=False).analysis
    bad = [h for h in raw.glitches.hazards if h["error"]]
    assert bad and all(h["reaches"][0]["role"] == "enable" for h in bad)
    assert raw.glitches.errors == len(bad)
    assert any(c.startswith("glitch on en reaches the enable") for c in raw.cautions)
    # by default the enable's cone is built hazard-free: no glitch reaches it, and a note says what it cost
    # and that the design's own cover glitches there
    b, a = flow.fit(design, load_target(target))
    assert a.glitches.errors == 0
    assert any("built free of glitches" in n and "cured by the term" in n for n in a.all_notes(b))
    code, r, err = netfit("timing", p, "--target", target, "--json", as_json=True)
    assert r["glitch_errors"] == 0 and code == (1 if r["timing_violations"] else 0)
    code, r, _ = netfit("timing", p, "--target", target, "--hazard-free", "--json", as_json=True)
    assert r["glitch_errors"] == 0


def _and_or(cubes, n=3):
    """Two-level AND-OR of a cover with one inverter per input: inverters 1-2, ANDs 1-4, OR 1 (a.u.).

    The AND range is wider than an inverter's minimum, so either term of a racing pair can let go
    first: every hazard the algebra predicts can occur.
    """
    names = "abcde"[:n]
    gates = [Gate(f"{x}_n", (x,), 0b01, 1.0, 2.0) for x in names]
    terms = []
    for i, cube in enumerate(cubes):
        lits = tuple(names[j] if ch == "1" else f"{names[j]}_n" for j, ch in enumerate(cube) if ch != "-")
        k = len(lits)
        gates.append(Gate(f"p{i}", lits, 1 << ((1 << k) - 1), 1.0, 4.0))
        terms.append(f"p{i}")
    k = len(terms)
    gates.append(Gate("f", tuple(terms), ((1 << (1 << k)) - 1) & ~1, 1.0, 1.0))
    return TimedCircuit("andor", list(names), gates, {"f": "f"})


def _sim_transitions(res):
    out = set()
    for h in res["hazards"]:
        assert h["kind"] == "static-1", h      # no static-0 or dynamic hazards in a two-level SOP
        j = "abc".index(h["inputs_changed"][0])
        others = [i for i in range(3) if i != j]
        for cube in h["when"]:
            free = [i for i in others if "abc"[i] not in cube]
            base = sum(1 << i for i in others if cube.get("abc"[i]) == 1)
            for m in range(1 << len(free)):
                s = base
                for t, i in enumerate(free):
                    if (m >> t) & 1:
                        s |= 1 << i
                out.add((s, j))
    return out


def _covers(max_cubes):
    cubes = ["".join(t) for t in itertools.product("01-", repeat=3)]
    covers = [tuple(isop(f, f, 3)[0]) for f in range(1, 256)]
    for k in range(1, max_cubes + 1):
        covers.extend(itertools.combinations(cubes, k))
    return list(dict.fromkeys(covers))


def test_simulation_agrees_with_algebra_on_three_input_covers():
    # Huffman 1957 / Eichelberger 1965 against the timed simulation: every irredundant cover of every
    # 3-input function and every cover of up to two cubes
    covers = _covers(2)
    hazardous = 0
    for cubes in covers:
        alg = hazard_transitions(list(cubes), 3)
        assert _sim_transitions(find_glitches(_and_or(cubes))) == alg, cubes
        hazardous += bool(alg)
    assert hazardous > 50


@pytest.mark.slow
def test_simulation_agrees_with_algebra_on_three_cube_covers():
    covers = [c for c in _covers(3) if len(c) == 3]
    for cubes in covers:
        assert _sim_transitions(find_glitches(_and_or(cubes))) == hazard_transitions(list(cubes), 3), cubes


def test_multi_input_change_finds_a_function_hazard():
    # y = a·b with b delayed by a buffer: a rising while b falls makes a 1-pulse as wide as the buffer's
    # delay; f(01) = f(10) = 0 while the value with both unknown is unknown: a function hazard
    # (Eichelberger 1965), invisible to single-input changes
    circ = TimedCircuit("fh", ["a", "b"], [Gate("bd", ("b",), 0b10, 3 * NS, 9 * NS),
                                           Gate("y", ("a", "bd"), 0b1000, 2 * NS, 5 * NS)], {"y": "y"})
    assert find_glitches(circ)["hazards"] == []
    res = find_glitches(circ, multi=True)
    (h,) = res["hazards"]
    assert h["kind"] == "static-0" and sorted(h["inputs_changed"]) == ["a", "b"]
    assert h["directions"] == ["a rises, b falls"]
    assert h["width_s"] == pytest.approx([3 * NS, 9 * NS])
    assert res["transitions"]["sizes"] == [1, 2]


def test_dynamic_hazard():
    # three paths of different lengths from x into an XOR-of-copies network: x changes once, the output
    # changes three times (a dynamic hazard; common textbook example of reconvergent fan-out)
    gates = [Gate("x1", ("x",), 0b10, 1.0, 1.0), Gate("x2", ("x1",), 0b10, 2.0, 2.0),
             Gate("u", ("x", "x1"), 0b0110, 1.0, 1.0),          # x XOR x1: 1 during [1, 2)
             Gate("y", ("u", "x2"), 0b1110, 1.0, 1.0)]          # u OR x2: 0, 1 at 2, 0 at 3, 1 at 4
    circ = TimedCircuit("dyn", ["x"], gates, {"y": "y"})
    res = find_glitches(circ)
    (h,) = [h for h in res["hazards"] if h["directions"] == ["x rises"]]
    assert h["kind"] == "dynamic"
    assert h["width_s"] == pytest.approx([1.0, 1.0])     # the spurious 1 lasts one x1 delay
    w = reference_waves(circ, 0, 1, [g.dmin for g in circ.gates])["y"]
    assert [v for _, v in w] == [0, 1, 0, 1]


def test_sampled_search_states_its_count(tmp_path):
    # ariths-gen 8-bit ripple-carry adder (independent generator): 16 inputs, too many changes to try all
    from generated import make
    d = read_design(make("rca", 8, tmp_path))
    circ = TimedCircuit.from_netlist(d, 7 * NS, 23 * NS)
    res = find_glitches(circ, max_transitions=200, seed=3)
    tr = res["transitions"]
    assert tr["checked"] == 200 and tr["total"] == 16 * 2 ** 16 and not tr["exhaustive"] and tr["seed"] == 3
    # the same seed gives the same answer
    assert find_glitches(circ, max_transitions=200, seed=3)["hazards"] == res["hazards"]
    # the hazards found are real: the reference simulation shows each of the first few at some
    # delay vector inside the ranges
    assert res["hazards"]
    rng = random.Random(1)
    names = circ.inputs
    for h in res["hazards"][:6]:
        (x,) = h["inputs_changed"]
        j = names.index(x)
        cube = h["when"][0]
        s0 = sum(1 << i for i, n in enumerate(names) if cube.get(n) == 1)
        s0 |= 0 if "rises" in h["directions"][0] else 1 << j
        shown = False
        for _ in range(400):
            dv = [rng.choice((g.dmin, g.dmax)) for g in circ.gates]
            ev = reference_waves(circ, s0, s0 ^ (1 << j), dv)[h["net"]]
            if (ev[0][1] == ev[-1][1] and len(ev) >= 3) or len(ev) >= 4:
                shown = True
                break
        assert shown, h
    # the engine's steady values agree with the project's bit-parallel simulator
    from mapper.simulate import simulate
    eng = Engine(circ)
    rng = random.Random(0)
    for _ in range(20):
        s = rng.getrandbits(16)
        vals = eng.steady(s)
        words = {name: (s >> i) & 1 for i, name in enumerate(circ.inputs)}
        ref = simulate(d, words, 1)
        for o in d.outputs:
            assert vals[eng.ids[o]] == ref[o] & 1


def test_work_budget_stops_early():
    circ = _and_or(("10-", "-11"))
    res = find_glitches(circ, max_work=1)
    assert res["transitions"]["stopped_early"] and res["transitions"]["checked"] == 1


def test_relay_floating_interval(tmp_path):
    # a changeover contact breaks before it makes (common practice): during the transfer the common
    # net floats, from the coil change until the operate/release time, then bounces (catalog figures)
    p = tmp_path / "hazard.blif"
    p.write_text(TEXTBOOK)
    b, a = flow.fit(read_design(p), load_target("relay-spdt"))
    fl = a.glitches.floating
    assert fl == relay_transfers(b)
    r = b.target.parts[b.parts[0].part_id].relay
    for f in fl:
        start, end = f["floating_s"]
        assert start <= end
        assert end >= max(r.operate_time.value, r.release_time.value) - 1e-12
        assert f["settled_s"] == pytest.approx(end + r.bounce_time.value)


def test_relay_break_before_make_glitch(tmp_path):
    # the same textbook function on one changeover relay: f = b ? c : a.  With a = c = 1 both sides of
    # the contact carry 1, and while b moves the armature the common terminal touches neither: f drops
    # for the transfer gap (hazards of contact networks: Yoeli and Rinon, JACM 1964; break-before-make:
    # common practice).  The states are the ones the algebra names for the sum-of-products cover.
    p = tmp_path / "hazard.blif"
    p.write_text(TEXTBOOK)
    b, a = flow.fit(read_design(p), load_target("relay-spdt"))
    (h,) = a.glitches.hazards
    assert (h["output"], h["kind"], h["inputs_changed"], h["when"]) == ("f", "static-1", ["b"], [{"a": 1, "c": 1}])
    assert h["directions"] == ["b falls", "b rises"]
    fl = {f["net"]: f for f in a.glitches.floating}
    assert h["width_s"][0] == 0.0
    assert h["width_s"][1] == pytest.approx(fl["f"]["floating_s"][1] - fl["f"]["floating_s"][0])
    assert h["racing_paths"][0]["break_before_make"]["coil"] == "b"
    assert a.glitches.search["exhaustive"]


def test_relay_glitch_passes_through_contacts(data):
    # ripple through a contact that does not move: every reported glitch is at a state where the output
    # is 1 before and after the change (a static-1 hazard), checked with the project's simulator
    from mapper.simulate import simulate
    b, a = flow.fit(read_design(data / "textbook" / "full_adder.blif"), load_target("relay-dpdt"))
    n = b.to_netlist()
    names = list(n.inputs)
    assert a.glitches.hazards
    for h in a.glitches.hazards:
        (x,) = h["inputs_changed"]
        for cube in h["when"]:
            s = {k: cube.get(k, 0) for k in names}
            for v in (0, 1):
                s[x] = v
                assert simulate(n, s, 1)[h["net"]] & 1 == 1


def test_timing_json_keys(tmp_path, netfit, data):
    code, r, _ = netfit("timing", data / "c17.blif", "--target", "gates-74", "--json", as_json=True)
    assert code == 0
    for key in ("delay_s", "delay_typ_s", "levels", "outputs", "paths", "critical_path", "hazards",
                "glitch_errors", "glitch_search", "cover_hazards"):
        assert key in r
    assert isinstance(r["hazards"], list)
    for h in r["hazards"]:
        assert h["kind"] in ("static-1", "static-0", "dynamic")
        assert set(h) >= {"output", "kind", "inputs_changed", "width_s"}
        assert len(h["width_s"]) == 2 and 0 <= h["width_s"][0] <= h["width_s"][1]
    json.dumps(r)


def test_timing_bad_input(tmp_path, netfit):
    p = tmp_path / "bad.blif"
    p.write_text(".model bad\n.inputs a\n.outputs f\n.names a f\n2 1\n.end\n")
    code, _, err = netfit("timing", p, "--target", "gates-74")
    assert code == 2 and "bad.blif:5" in err
    code, _, err = netfit("timing", tmp_path / "missing.blif", "--target", "gates-74")
    assert code == 2


@pytest.mark.parametrize("target", ["gates-74", "nand-only"])
@pytest.mark.parametrize("name", ["half_adder", "full_adder", "cmp2"])
def test_hazard_free_build_is_never_worse_than_plain(name, target, data):
    # --hazard-free returns the plain build when consensus terms do not lower the glitches found (XOR
    # outputs have only dynamic hazards, which consensus terms do not cure -- Huffman 1957 treats
    # static ones); either way it is proved equal to the design and reports what it chose
    d = read_design(data / "textbook" / f"{name}.blif")
    b, a = flow.fit_hazard_free(d, load_target(target))
    h = a.hazard_free
    assert a.verified == "proved"
    assert h["hazards"] <= h["hazards_plain"]
    assert h["chosen"] in ("plain", "consensus")
    if h["chosen"] == "plain":
        assert h["extra_parts"] == 0 and h["hazards"] == h["hazards_plain"] and "note" in h


def test_nets_known_in_three_valued_simulation_never_move(tmp_path):
    # Eichelberger (IBM J. R&D 1965): a net with a known value when the changing inputs are set unknown
    # holds that value for every delay.  The search leaves those cells out of its timed runs, so this is
    # checked against the reference simulation above (whole waveforms, random delays in the ranges), and
    # the cut-down runs must give the same events as full ones.  Circuit: ariths-gen 3x3 array multiplier.
    from generated import make
    d = read_design(make("arr", 3, tmp_path))
    circ = TimedCircuit.from_netlist(d, 7 * NS, 23 * NS)
    eng = Engine(circ)
    rng = random.Random(5)
    n = len(circ.inputs)
    known_seen = 0
    for _ in range(12):
        s0, j = rng.getrandbits(n), rng.randrange(n)
        tern, _ = eng.ternary(s0, (j,))
        dv = [rng.uniform(g.dmin, g.dmax) for g in circ.gates]
        waves = reference_waves(circ, s0, s0 ^ (1 << j), dv)
        for g in circ.gates:
            if tern[eng.ids[g.out]] != X:
                known_seen += 1
                assert len(waves[g.out]) == 1, (g.out, s0, j)
        v0, v1 = eng.steady(s0), eng.steady_after(s0, (j,))
        assert v1 == eng.steady(s0 ^ (1 << j))
        changes = [(eng.input_ids[j], v1[eng.input_ids[j]])]
        look = set(eng.look)
        live = eng.live_fanout(tern, (j,))
        for delay in (eng.dmin, eng.dmax, [x * (1 + 0.5 * rng.random()) for x in eng.dmin]):
            full = eng.simulate(v0, changes, delay, look)
            cut = eng.simulate(v0, changes, delay, look, live)
            for m in look:
                assert [(t, v, path_mask(p), src) for t, v, p, src in full[m]] == \
                       [(t, v, path_mask(p), src) for t, v, p, src in cut[m]]
    assert known_seen > 0


def test_budget_inside_a_change_reports_real_hazards_and_says_what_it_did(tmp_path):
    # ariths-gen 3x3 array multiplier (independent generator): the full search against a budget that runs
    # out in the middle of a change's delay corners.  What the budgeted search reports must be among what
    # the full search reports (every hazard was seen at a concrete delay vector), the work may pass the
    # budget by at most the three-valued pass of one change, and the counts are stated.
    from generated import make
    d = read_design(make("arr", 3, tmp_path))
    circ = TimedCircuit.from_netlist(d, 7 * NS, 23 * NS)
    full = find_glitches(circ, max_work=None)
    assert full["transitions"]["exhaustive"] and full["transitions"]["last_change_partial"] is None
    ref = reported(full, circ)
    partial_seen = False
    for budget in (300, 1000, 3000, 10000):
        res = find_glitches(circ, max_work=budget)
        tr = res["transitions"]
        assert tr["stopped_early"] and tr["work_budget"] == budget
        assert tr["cell_evaluations"] <= budget + 2 * len(circ.gates)
        got = reported(res, circ)
        assert set(got) <= set(ref)
        if tr["last_change_partial"]:
            partial_seen = True
            part = tr["last_change_partial"]
            assert 0 <= part["delay_corners_run"] < part["delay_corners"]
    assert partial_seen


def test_build_report_budget_grows_with_the_build(tmp_path):
    # the glitch figures of every build: budget = max(max_work, work_per_cell x cells), stated in words
    # with the counts.  Circuit: ariths-gen 4-bit ripple-carry adder (independent generator) on gates-74.
    from generated import make
    b, a = flow.fit(read_design(make("rca", 4, tmp_path)), load_target("gates-74"))
    r = glitch_report(b, max_work=10, work_per_cell=50)
    g = r.search
    assert g["work_budget"] == 50 * len(TimedCircuit.from_build(b).gates)
    assert g["stopped_early"] and not g["exhaustive"]
    assert f"{g['checked']:,} of {g['total']:,} input changes" in g["sample"]
    assert f"{g['timed_runs']:,} timed simulations" in g["sample"]
    r = glitch_report(b, max_work=None, max_transitions=4096)
    assert r.search["sample"].startswith(f"all {r.search['total']:,} input changes")


DECODED_CLOCK = """\
# a flip-flop clocked by decoded logic of our own: clk = a·b + b'·c (the textbook hazard when b changes
# with a = c = 1, Huffman 1957)
.model dclk
.inputs a b c d
.outputs q
.names a b c clk
11- 1
-01 1
.latch d q re clk 0
.end
"""

COUNTER_CLOCK = """\
# a flip-flop clocked by q0 xor q1 of a 2-bit counter of our own: on 01 -> 10 and 11 -> 00 both bits change
# on one edge, and whichever arrives first makes a pulse no consensus term can remove (a function hazard)
.model xclk
.inputs clk d
.outputs q
.latch n0 q0 re clk 0
.latch n1 q1 re clk 0
.names q0 n0
0 1
.names q0 q1 n1
10 1
01 1
.names q0 q1 g
10 1
01 1
.latch d q re g 0
.end
"""


@pytest.mark.parametrize("target", ["gates-74", "nand-only", "nor-only"])
def test_decoded_clock_is_flagged_and_built_clean(tmp_path, netfit, target):
    p = tmp_path / "dclk.blif"
    p.write_text(DECODED_CLOCK)
    design = read_design(p)
    # mapped as it comes, a glitch reaches the flip-flop's clock: the build says so, naming the net and change
    raw = flow.fit(design, load_target(target), clean_controls=False).analysis
    assert raw.glitches.errors >= 1
    bad = [h for h in raw.glitches.hazards if h["error"]]
    assert all(h["net"] == "clk" and h["reaches"][0]["role"] == "clock" for h in bad)
    assert any(h["inputs_changed"] == ["b"] for h in bad)
    assert any(c.startswith("glitch on clk reaches the clock") and "when b changes" in c for c in raw.cautions)
    # by default the clock's cone is built hazard-free: no glitch reaches storage, on every gate target, and
    # the build notes that the design's own cover glitched there and the term that cures it (a·c)
    code, s, _ = netfit("build", p, "--target", target, "--json", as_json=True)
    assert code == 0 and s["glitch_errors"] == 0
    note = next(n for n in s["notes"] if "built free of glitches" in n)
    assert "cured by the term a·c" in note
    code, r, _ = netfit("timing", p, "--target", target, "--json", as_json=True)
    assert r["glitch_errors"] == 0 and r["glitch_search"]["control_search"]["exhaustive"]


@pytest.mark.parametrize("target", ["relay-spdt", "relay-dpdt"])
def test_decoded_clock_is_refused_on_relays(tmp_path, netfit, target):
    # a contact network built as changeover trees drops the clock while b's contact transfers, and relays
    # moving in any order would step the storage on it: refused with the reason, not built
    p = tmp_path / "dclk.blif"
    p.write_text(DECODED_CLOCK)
    code, _, err = netfit("build", p, "--target", target)
    assert code == 2 and "clock clk" in err and "b changes" in err


@pytest.mark.parametrize("target", ["gates-74", "nand-only", "nor-only"])
def test_clock_from_bits_changing_together_is_an_error(tmp_path, netfit, target):
    p = tmp_path / "xclk.blif"
    p.write_text(COUNTER_CLOCK)
    code, r, err = netfit("timing", p, "--target", target, "--json", as_json=True)
    assert code == 1 and r["glitch_errors"] >= 1
    # found by changing the counter's two bits together, as its clock edge does
    both = [h for h in r["hazards"] if h["error"] and sorted(h["inputs_changed"]) == ["q0", "q1"]]
    assert both and r["glitch_search"]["bits_changed_together"] > 0
    # g and n1 are both q0 xor q1 in the design: the build drives them from one gate, named as either
    assert any(re.match(r"glitch on (g|n1) reaches the clock", c) for c in r["cautions"])
    # no consensus term cures it: the build keeps the caution
    code, s, _ = netfit("build", p, "--target", target, "--json", as_json=True)
    assert code == 0 and s["glitch_errors"] >= 1
    assert any(re.match(r"glitch on (g|n1) ", c) for c in s["cautions"])
