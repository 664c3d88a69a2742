"""Storage on medium-scale chips (issue 20): latch banks on octal latches, shift registers on '164 and
'595, counters with synchronous clear and parallel load on the '163.

Outside sources, named beside each check: textbook circuits (tests/data/textbook/sipo8.blif,
loadcount4.blif, tests/data/latches/latch8.blif, their Verilog twins, and the variants written below,
common practice) whose behaviour is written here as Python rules; the build run clock by clock
(``mapper.simulate.run_cycles``, the build's own cells and the catalog's models of the chips, not the
design) against those rules and against the design; the exported structural Verilog and its models run
in Icarus Verilog, an independent simulator, with real clock edges and enables; the export read back and
proved equal to the design.  Every build is proved by SAT, as every build is.
"""
from __future__ import annotations

import random
import shutil
import subprocess

import pytest

from mapper import flow
from mapper.read import read_design
from mapper.simulate import run_cycles


@pytest.fixture(scope="module")
def msi74():
    return flow.load_target("msi-74")


@pytest.fixture(scope="module")
def gates74():
    return flow.load_target("gates-74")


def _fit(path, msi74, gates74=None):
    design = read_design(path)
    result = flow.fit(design, msi74)
    assert result.analysis.proof.status == "proved"
    if gates74 is not None:   # never more parts than without the medium-scale chips
        without, _ = flow.fit(design, gates74)
        assert len(result.build.parts) < len(without.parts)
    return design, result


def _word(values: dict, prefix: str, n: int, run: int = 0) -> int:
    return sum(((values[f"{prefix}{i}"] >> run) & 1) << i for i in range(n))


def _iverilog(tmp_path, result, steps: list, clocks: tuple) -> list:
    """The exported build (``<design>.v`` and its models) in Icarus Verilog: per step the inputs are set,
    the outputs read once settled, then each clock in ``clocks`` taken high and low.  A missing simulator is
    a failure, not a skip.  Returns per step a dict output -> 0/1 (or 'x')."""
    assert shutil.which("iverilog") and shutil.which("vvp"), "iverilog not installed: `make debs`"
    out = tmp_path / "out"
    flow.write_build(result, out)
    build = result.build
    ins, outs = list(build.inputs), list(build.outputs)
    lines = ["`timescale 1ns/1ns", "module bench;"]
    lines += [f"  reg {i} = 1'b0;" for i in ins] + [f"  wire {o};" for o in outs]
    lines.append(f"  {build.design} dut ({', '.join(f'.{p}({p})' for p in ins + outs)});")
    lines.append("  initial begin")
    for values in steps:
        lines.append("    " + " ".join(f"{i} = 1'b{values.get(i, 0)};" for i in ins if i not in clocks) + " #5;")
        lines.append(f'    $display("%b", {{{", ".join(outs)}}});')
        for c in clocks:
            lines.append(f"    {c} = 1'b1; #5; {c} = 1'b0; #5;")
    lines += ["    $finish;", "  end", "endmodule", ""]
    (out / "bench.v").write_text("\n".join(lines))
    sim = out / "bench.vvp"
    files = [out / "bench.v", out / f"{build.design}.v", out / f"{build.design}_models.v"]
    r = subprocess.run(["iverilog", "-g2001", "-o", str(sim), *map(str, files)], capture_output=True, text=True)
    assert r.returncode == 0, r.stderr
    r = subprocess.run(["vvp", "-n", str(sim)], capture_output=True, text=True, timeout=120)
    got = [ln.strip() for ln in r.stdout.splitlines() if ln.strip() and set(ln.strip()) <= set("01xz")]
    assert len(got) == len(steps), r.stdout[-1000:]
    return [{o: int(c) if c in "01" else c for o, c in zip(outs, line)} for line in got]


def _same_as_design(design, build, seq: list, mask: int) -> None:
    """The build and the design run clock by clock on the same inputs give the same outputs."""
    assert run_cycles(build.to_netlist(), seq, mask) == run_cycles(design, seq, mask)


def _reads_back_equal(netfit, path, tmp_path) -> None:
    """The build written as structural Verilog with its models, read back and proved equal to the design."""
    code, _, _ = netfit("build", path, "-t", "msi-74", "-o", tmp_path / "rb", "--json", as_json=True)
    assert code == 0
    code, out, _ = netfit("verify", path, tmp_path / "rb" / f"{read_design(path).name}.v")
    assert code == 0 and out.startswith("equal")


# -- latches -------------------------------------------------------------------------------------------
def _latch_rule(steps: list, n: int, open_level: int) -> list:
    """A transparent latch bank (common practice): while the enable is at its open level each q follows
    its d; else it holds.  Outputs read with the step's inputs settled (starts at 0)."""
    q, out = 0, []
    for s in steps:
        if s["en"] == open_level:
            q = _word(s, "d", n)
        out.append(q)
    return out


def test_textbook_latch_bank_on_one_octal_latch(data, tmp_path, msi74, gates74, netfit):
    path = data / "latches" / "latch8.blif"
    design, result = _fit(path, msi74, gates74)
    assert result.build.part_counts() == {"74HC573": 1}
    # the design starts at 0 but the chip powers up unknown and has no clear (common practice)
    starts = [c for c in result.analysis.cautions if "must start at 0" in c]
    assert len(starts) == 8 and all("no clear input" in c for c in starts)
    rng = random.Random(8)
    steps = [{"en": int(rng.random() < 0.4)} | {f"d{i}": rng.getrandbits(1) for i in range(8)} for _ in range(40)]
    got = _iverilog(tmp_path, result, steps, ())
    assert [_word(g, "q", 8) for g in got] == _latch_rule(steps, 8, 1)
    _same_as_design(design, result.build, steps, 1)
    _reads_back_equal(netfit, path, tmp_path)


def test_latches_open_while_low_take_one_inverter(tmp_path, msi74, gates74):
    # five latches open while their enable is low (BLIF `al`), starting at 1: one octal latch (three spare
    # latches, their inputs tied) with the enable through an inverter; the starting value kept.  (On
    # gates-74 the five share one inverter too: each once made its own, on one net name -- two drivers.)
    lines = [".model al5", ".inputs en " + " ".join(f"d{i}" for i in range(5)),
             ".outputs " + " ".join(f"q{i}" for i in range(5))]
    lines += [f".latch d{i} q{i} al en 1" for i in range(5)]
    path = tmp_path / "al5.blif"
    path.write_text("\n".join(lines + [".end", ""]))
    design, result = _fit(path, msi74, gates74)
    build = result.build
    assert build.part_counts() == {"74HC573": 1, "74HC04": 1}
    assert sorted(c.init for c in build.cells if c.cell == "latch_q") == [1] * 5
    u = next(p.ref for p in build.parts if p.part_id == "74HC573")
    # generic 74HC573 pinout (from memory): D0-D7 on pins 2-9; three spare D inputs tied, OE (pin 1) held on
    nets = build.nets()
    assert (u, 1) in nets["GND"] and len([p for p in range(2, 10) if (u, p) in nets["GND"]]) == 3
    rng = random.Random(5)
    steps = [{"en": int(rng.random() < 0.6)} | {f"d{i}": rng.getrandbits(1) for i in range(5)} for _ in range(30)]
    got = _iverilog(tmp_path, result, steps, ())
    expect, q = [], 0b11111
    for s in steps:
        q = _word(s, "d", 5) if s["en"] == 0 else q
        expect.append(q)
    assert [_word(g, "q", 5) for g in got] == expect


# -- shift registers -----------------------------------------------------------------------------------
def _shift_rule(bits: list, n: int) -> list:
    """A serial-in, parallel-out shift register (common practice): the word before each clock edge, bit 0
    the newest; starts at 0."""
    q, out = 0, []
    for b in bits:
        out.append(q)
        q = ((q << 1) | b) & ((1 << n) - 1)
    return out


def test_textbook_shift_register_on_one_164(data, tmp_path, msi74, gates74, netfit):
    path = data / "textbook" / "sipo8.blif"
    design, result = _fit(path, msi74, gates74)
    build = result.build
    assert build.part_counts() == {"74HC164": 1}
    # each stage starts at 0 in the design; the chip powers up unknown, its clear (tied off) can empty it
    starts = [c for c in result.analysis.cautions if "must start at 0" in c]
    assert len(starts) == 8 and all("clear input" in c and "no clear" not in c for c in starts)
    # generic 74HC164 pinout (from memory): B (pin 2) and the clear (pin 9) tied high; the taps QA-QD on
    # pins 3-6 and QE-QH on 10-13 drive the outputs
    u = build.parts[0].ref
    nets = build.nets()
    assert {(u, 2), (u, 9)} <= set(nets["VCC"])
    for i, pin in enumerate((3, 4, 5, 6, 10, 11, 12, 13)):
        assert (u, pin) in nets[build.output_nets.get(f"q{i}", f"q{i}")]
    rng = random.Random(164)
    bits = [rng.getrandbits(1) for _ in range(40)]
    got = _iverilog(tmp_path, result, [{"si": b} for b in bits], ("clk",))
    assert [_word(g, "q", 8) for g in got] == _shift_rule(bits, 8)
    seq = [{"clk": 0, "si": rng.getrandbits(16)} for _ in range(30)]
    _same_as_design(design, build, seq, (1 << 16) - 1)
    _reads_back_equal(netfit, path, tmp_path)


def test_long_chain_with_anded_serial_input_on_two_164s(tmp_path, msi74, gates74):
    # 11 stages whose first takes a AND b: two '164s (the second fed from the first's last stage, five of
    # its stages spare) and no AND gate -- the chip's own two serial inputs take a and b
    lines = [".model sh11", ".inputs clk a b", ".outputs " + " ".join(f"q{i}" for i in range(11)),
             ".names a b s", "11 1", ".latch s q0 re clk 0"]
    lines += [f".latch q{i} q{i + 1} re clk 0" for i in range(10)]
    path = tmp_path / "sh11.blif"
    path.write_text("\n".join(lines + [".end", ""]))
    design, result = _fit(path, msi74, gates74)
    assert result.build.part_counts() == {"74HC164": 2}
    rng = random.Random(11)
    steps = [{"a": rng.getrandbits(1), "b": int(rng.random() < 0.8)} for _ in range(40)]
    got = _iverilog(tmp_path, result, steps, ("clk",))
    assert [_word(g, "q", 11) for g in got] == _shift_rule([s["a"] & s["b"] for s in steps], 11)


def _595_blif(n: int, tapped: bool = False) -> str:
    """A shift register of ``n`` stages on ``sclk`` and an output register on ``rclk`` copying it (common
    practice: the serial-to-parallel converter with a storage register); ``tapped``: a stage is also an
    output, which the '595 cannot show."""
    lines = [".model conv", ".inputs sclk rclk si", ".outputs " + " ".join(f"o{i}" for i in range(n))
             + (" s2" if tapped else ""), ".latch si s0 re sclk 0"]
    lines += [f".latch s{i} s{i + 1} re sclk 0" for i in range(n - 1)]
    lines += [f".latch s{i} o{i} re rclk 0" for i in range(n)]
    return "\n".join(lines + [".end", ""])


def test_shift_and_output_register_on_595s(tmp_path, msi74, gates74):
    path = tmp_path / "conv.blif"
    path.write_text(_595_blif(12))
    design, result = _fit(path, msi74, gates74)
    assert result.build.part_counts() == {"74HC595": 2}
    rng = random.Random(595)
    steps = [{"si": rng.getrandbits(1)} for _ in range(40)]
    # both clocks pulse every step, the shift clock first: the output register shows the shift register
    # as it stood after the step's shift
    got = _iverilog(tmp_path, result, steps, ("sclk", "rclk"))
    shifted = _shift_rule([s["si"] for s in steps], 12)[1:] + [None]
    assert [_word(g, "o", 12) for g in got[1:]] == shifted[:-1]
    seq = [{"sclk": 0, "rclk": 0, "si": rng.getrandbits(8)} for _ in range(30)]
    _same_as_design(design, result.build, seq, 255)


def test_tapped_shift_register_is_not_put_on_a_595(tmp_path, msi74):
    # a stage the design reads on its own cannot come out of a '595: the chain goes on a '164 instead
    path = tmp_path / "conv.blif"
    path.write_text(_595_blif(8, tapped=True))
    _, result = _fit(path, msi74)
    counts = result.build.part_counts()
    assert "74HC595" not in counts and counts["74HC164"] == 1


# -- counters ------------------------------------------------------------------------------------------
def _loadcount_rule(steps: list) -> list:
    """The loadable counter of tests/data/textbook/loadcount4.blif (common practice): the count before each
    clock edge; clear first, then load, then count when enabled."""
    q, out = 0, []
    for s in steps:
        out.append(q)
        q = 0 if s["clr"] else _word(s, "d", 4) if s["ld"] else (q + s["en"]) % 16
    return out


def test_textbook_loadable_counter_on_one_163(data, tmp_path, msi74, gates74, netfit):
    path = data / "textbook" / "loadcount4.blif"
    design, result = _fit(path, msi74, gates74)
    build = result.build
    # clear and load are active high in the design, low on the chip: one inverter chip for both
    assert build.part_counts() == {"74HC163": 1, "74HC04": 1}
    rng = random.Random(163)
    steps = [{"clr": int(rng.random() < 0.05), "ld": int(rng.random() < 0.1), "en": int(rng.random() < 0.8)}
             | {f"d{i}": rng.getrandbits(1) for i in range(4)} for _ in range(120)]
    got = _iverilog(tmp_path, result, steps, ("clk",))
    assert [_word(g, "q", 4) for g in got] == _loadcount_rule(steps)
    runs = 16
    seq = [{"clk": 0} | {k: sum((rng.random() < p) << r for r in range(runs)) for k, p in
                        (("clr", 0.05), ("ld", 0.1), ("en", 0.8), ("d0", .5), ("d1", .5), ("d2", .5), ("d3", .5))}
           for _ in range(80)]
    _same_as_design(design, build, seq, (1 << runs) - 1)
    _reads_back_equal(netfit, path, tmp_path)


def _decade_blif() -> str:
    """The textbook synchronous decade counter (common practice): a binary counter that clears itself at
    the clock edge after 9 (its clear the AND of q0 and q3), counting when en is high."""
    lines = [".model decade", ".inputs clk en", ".outputs q0 q1 q2 q3"]
    lines += [f".latch n{i} q{i} re clk 0" for i in range(4)]
    lines += [".names q0 q3 en tc", "111 1"]
    carry = "en"
    for i in range(4):
        lines += [f".names {carry} q{i} t{i}", "10 1", "01 1"]
        if i < 3:
            lines += [f".names {carry} q{i} c{i}", "11 1"]
            carry = f"c{i}"
        lines += [f".names tc t{i} n{i}", "01 1"]
    return "\n".join(lines + [".end", ""])


def test_decade_counter_clears_itself_through_the_163s_clear(tmp_path, msi74, gates74):
    path = tmp_path / "decade.blif"
    path.write_text(_decade_blif())
    design, result = _fit(path, msi74, gates74)
    assert result.build.part_counts()["74HC163"] == 1
    rng = random.Random(10)
    ens = [int(rng.random() < 0.85) for _ in range(100)]
    got = run_cycles(result.build.to_netlist(), [{"clk": 0, "en": e} for e in ens], 1)
    q, expect = 0, []
    for e in ens:
        expect.append(q)
        q = (q + e) % 10
    assert [_word(g, "q", 4) for g in got] == expect


def test_counter_that_loads_at_its_terminal_count_on_the_163s_load(tmp_path, msi74, gates74):
    # the textbook modulo counter by loading (common practice): a binary counter that loads 6 at the clock
    # edge after 15, so it runs 0..15 once and then 6..15 (ten states) for ever
    lines = [".model mod10l", ".inputs clk", ".outputs q0 q1 q2 q3", ".names q0 q1 q2 q3 tc", "1111 1"]
    carry = None
    for i in range(4):
        lines.append(f".latch n{i} q{i} re clk 0")
        if carry is None:
            lines += [".names q0 t0", "0 1"]
            carry = "q0"
        else:
            lines += [f".names {carry} q{i} t{i}", "10 1", "01 1"]
            if i < 3:
                lines += [f".names {carry} q{i} c{i}", "11 1"]
                carry = f"c{i}"
        lines += [f".names tc t{i} n{i}", *(["1- 1", "-1 1"] if (6 >> i) & 1 else ["01 1"])]
    path = tmp_path / "mod10l.blif"
    path.write_text("\n".join(lines + [".end", ""]))
    _, result = _fit(path, msi74, gates74)
    assert result.build.part_counts()["74HC163"] == 1
    got = run_cycles(result.build.to_netlist(), [{"clk": 0}] * 40, 1)
    q, expect = 0, []
    for _ in range(40):
        expect.append(q)
        q = 6 if q == 15 else q + 1
    assert [_word(g, "q", 4) for g in got] == expect


def test_a_register_with_synchronous_reset_is_not_taken_for_a_counter(tmp_path, msi74):
    # d_i = ~rst & x_i has a clear but counts nothing: no counter chip; the six flip-flops on one hex
    # register chip, the reset as gates before it (common practice), run against the rule clock by clock
    lines = [".model rreg", ".inputs clk rst " + " ".join(f"x{i}" for i in range(6)),
             ".outputs " + " ".join(f"q{i}" for i in range(6))]
    for i in range(6):
        lines += [f".names rst x{i} n{i}", "01 1", f".latch n{i} q{i} re clk 0"]
    path = tmp_path / "rreg.blif"
    path.write_text("\n".join(lines + [".end", ""]))
    _, result = _fit(path, msi74)
    counts = result.build.part_counts()
    assert "74HC163" not in counts and counts["74HC174"] == 1
    rng = random.Random(6)
    steps = [{"clk": 0, "rst": int(rng.random() < 0.2), **{f"x{i}": rng.getrandbits(1) for i in range(6)}}
             for _ in range(40)]
    got = run_cycles(result.build.to_netlist(), steps, 1)
    q, expect = 0, []
    for s in steps:
        expect.append(q)
        q = 0 if s["rst"] else _word(s, "x", 6)
    assert [_word(g, "q", 6) for g in got] == expect


# -- the wiring list and the glitch finder on block builds ----------------------------------------------
#: generic 74HC283 pinout (from memory; the catalog's own numbers are not read here): operand, carry and
#: sum pins
PINS_283 = {"A1": 5, "A2": 3, "A3": 14, "A4": 12, "B1": 6, "B2": 2, "B3": 15, "B4": 11, "C0": 7,
            "S1": 4, "S2": 1, "S3": 13, "S4": 10, "C4": 9}


def _adder_plus_xor_blif() -> str:
    """A 4-bit ripple-carry adder of textbook full adders (common practice), no carry in, and y = s0 ^ a0
    (which is b0: the same value reached through the adder and around it)."""
    lines = [".model addx", ".inputs " + " ".join([f"a{i}" for i in range(4)] + [f"b{i}" for i in range(4)]),
             ".outputs " + " ".join([f"s{i}" for i in range(4)] + ["c4", "y"])]
    carry = None
    for i in range(4):
        a, b = f"a{i}", f"b{i}"
        lines += [f".names {a} {b} t{i}", "10 1", "01 1"]
        if carry is None:
            lines += [f".names t{i} s{i}", "1 1", f".names {a} {b} c{i + 1}", "11 1"]
        else:
            lines += [f".names t{i} {carry} s{i}", "10 1", "01 1", f".names {a} {b} g{i}", "11 1",
                      f".names t{i} {carry} p{i}", "11 1", f".names g{i} p{i} c{i + 1}", "1- 1", "-1 1"]
        carry = f"c{i + 1}"
    return "\n".join(lines + [".names s0 a0 y", "10 1", "01 1", ".end", ""])


@pytest.fixture(scope="module")
def adder_build(tmp_path_factory, msi74):
    path = tmp_path_factory.mktemp("addx") / "addx.blif"
    path.write_text(_adder_plus_xor_blif())
    design, result = _fit(path, msi74)
    assert result.build.part_counts()["74HC283"] == 1
    return result


def test_wiring_list_of_an_adder_chip_names_its_pins(adder_build):
    from mapper.write.wiring import wiring
    w = wiring(adder_build.build, adder_build.analysis)
    u = next(p.ref for p in adder_build.build.parts if p.part_id == "74HC283")
    nets = {n["net"]: n for n in w["nets"]}
    for i in range(4):   # operands in, sums and the carry out driven from the pins of the pinout
        assert f"{u}-{PINS_283[f'A{i + 1}']}" in nets[f"a{i}"]["loads"]
        assert f"{u}-{PINS_283[f'B{i + 1}']}" in nets[f"b{i}"]["loads"]
        assert nets[adder_build.build.output_nets.get(f"s{i}", f"s{i}")]["drivers"] == [f"{u}-{PINS_283[f'S{i + 1}']}"]
    assert nets[adder_build.build.output_nets.get("c4", "c4")]["drivers"] == [f"{u}-{PINS_283['C4']}"]
    assert f"{u}-{PINS_283['C0']}" in nets["GND"]["loads"]   # no carry in: tied low


def test_glitch_through_an_adder_chip_and_around_it(adder_build, msi74):
    # a static hazard (Huffman 1957; Eichelberger 1965): y = s0 ^ a0 is b0 whatever a0 does, but a change
    # of a0 reaches the XOR at once and again through the adder chip, so y pulses for about the chip's
    # A-to-sum delay.  The finder must see the chip's path: the widest pulse equals the difference of the
    # two paths, the longer one going through the '283
    g = adder_build.analysis.glitches
    assert g.search is not None and g.errors == 0
    hazards = [h for h in g.hazards if h["output"] == "y"]
    assert hazards and all(h["inputs_changed"] == ["a0"] for h in hazards)
    assert {h["kind"] for h in g.hazards} <= {"static-0", "static-1"}
    assert all(h["output"] == "y" for h in g.hazards)   # the adder's own outputs change once per change
    a_to_s = next(p for p in msi74.parts["74HC283"].path_delays["add4"] if "S1" in p.to and "A1" in p.frm)
    for h in hazards:
        (short, long_) = sorted(p["delay_s"][1] for p in h["racing_paths"])
        assert h["width_s"][1] == pytest.approx(long_ - short)
        assert long_ - short == pytest.approx(a_to_s.max.value)


# -- textbook Verilog: the design's own text and the build, both in Icarus Verilog --------------------------
def _vbench(files: list, module: str, ports: list, steps: list, clock: str | None, folder) -> list:
    """Run ``module`` (from ``files``) in Icarus Verilog: per step the inputs set, outputs read once settled,
    then ``clock`` pulsed.  ``ports`` are ``(name, width, "in"|"out")``.  Returns per step the output words
    as a string of 0/1/x."""
    assert shutil.which("iverilog") and shutil.which("vvp"), "iverilog not installed: `make debs`"
    ins = [(n, w) for n, w, d in ports if d == "in"]
    outs = [n for n, _, d in ports if d == "out"]
    lines = ["`timescale 1ns/1ns", "module bench;"]
    lines += [f"  reg [{w - 1}:0] {n} = 0;" for n, w in ins]
    lines += [f"  wire [{w - 1}:0] {n};" for n, w, d in ports if d == "out"]
    lines.append(f"  {module} dut ({', '.join(f'.{n}({n})' for n, _, _ in ports)});")
    lines.append("  initial begin")
    for s in steps:
        lines.append("    " + " ".join(f"{n} = {s.get(n, 0)};" for n, _ in ins if n != clock) + " #5;")
        lines.append(f'    $display("%b", {{{", ".join(outs)}}});')
        if clock:
            lines.append(f"    {clock} = 1; #5; {clock} = 0; #5;")
    lines += ["    $finish;", "  end", "endmodule", ""]
    (folder / "bench.v").write_text("\n".join(lines))
    sim = folder / "bench.vvp"
    r = subprocess.run(["iverilog", "-g2001", "-o", str(sim), str(folder / "bench.v"), *map(str, files)],
                       capture_output=True, text=True)
    assert r.returncode == 0, r.stderr
    r = subprocess.run(["vvp", "-n", str(sim)], capture_output=True, text=True, timeout=120)
    got = [ln.strip() for ln in r.stdout.splitlines() if ln.strip() and set(ln.strip()) <= set("01xz")]
    assert len(got) == len(steps), r.stdout[-1000:]
    return got


VERILOG = {   # file -> (ports, clock, the medium-scale chip expected)
    "sipo8.v": ([("clk", 1, "in"), ("si", 1, "in"), ("q", 8, "out")], "clk", "74HC164"),
    "latch8.v": ([("en", 1, "in"), ("d", 8, "in"), ("q", 8, "out")], None, "74HC573"),
    "loadcount4.v": ([("clk", 1, "in"), ("clr", 1, "in"), ("ld", 1, "in"), ("en", 1, "in"), ("d", 4, "in"),
                      ("q", 4, "out")], "clk", "74HC163"),
}


@pytest.mark.parametrize("name", sorted(VERILOG))
def test_textbook_verilog_storage_built_runs_as_its_source(data, tmp_path, msi74, gates74, name):
    # the textbook Verilog (common practice) read by our reader, built with a medium-scale chip; the design's
    # own text and the exported build run side by side in Icarus Verilog on the same random inputs
    ports, clock, chip = VERILOG[name]
    path = data / ("latches" if name.startswith("latch") else "textbook") / name
    design, result = _fit(path, msi74, gates74)
    assert result.build.part_counts()[chip] == 1
    out = tmp_path / "out"
    flow.write_build(result, out)
    rng = random.Random(name)
    steps = [{n: rng.getrandbits(w) for n, w, d in ports if d == "in"} for _ in range(60)]
    if name == "latch8.v":
        steps = [{"en": 1, "d": 0}] + steps   # the latches start unknown in the source: open them once first
    if name == "loadcount4.v":   # clear and load now and then, not every other cycle
        steps = [s | {"clr": int(rng.random() < 0.05), "ld": int(rng.random() < 0.15)} for s in steps]
    (tmp_path / "src").mkdir()
    want = _vbench([path], design.name, ports, steps, clock, tmp_path / "src")
    got = _vbench([out / f"{design.name}.v", out / f"{design.name}_models.v"], design.name, ports, steps, clock,
                  out)
    assert "x" not in "".join(want)
    assert got == want
