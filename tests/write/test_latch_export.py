"""Latches built from gates: built on every kind of target, proved, exported and simulated outside.

Outside sources, named beside each check:

* **Icarus Verilog** (``iverilog``/``vvp`` from Debian), an independent
  event-driven simulator: the written Verilog (the design converted, and
  each build's ``<design>.v`` + ``<design>_models.v``) is driven through a sequence
  of single input changes and its outputs read after each settles;
* the expected outputs are the textbook state tables (common practice):
  the NOR latch (s sets, r resets, both 0 hold, both 1 drive q and qn to 0),
  the NAND latch (active low; both 0 drive q and qn to 1), the gated set-reset latch (a NAND latch
  whose set and reset act only while enabled), the gated D latch
  (transparent while enabled, holding while not) and the master-slave D
  flip-flop (takes d at the rising edge when the master is open while the
  clock is low).

Storage built from gates powers up unknown (``x`` in the simulator), so each
sequence starts by setting or loading the latch.
"""
from __future__ import annotations

import shutil
import subprocess
from pathlib import Path

import pytest

from mapper import flow
from mapper.logic.flowtable import critical_races_added
from mapper.read import read_design
from mapper.verify import check_equivalence

DATA = Path(__file__).parent.parent / "data" / "latches"

# (inputs in the design's port order) -> expected outputs after they settle, one row per step;
# every step changes one input (Huffman's fundamental mode: no races between inputs)
NOR_SR = ("nor_sr.v", ("s", "r"), ("q", "qn"), [
    ((1, 0), (1, 0)),  # set
    ((0, 0), (1, 0)),  # hold 1
    ((0, 1), (0, 1)),  # reset
    ((0, 0), (0, 1)),  # hold 0
    ((1, 0), (1, 0)),  # set
    ((1, 1), (0, 0)),  # both active: q and qn both 0
    ((0, 1), (0, 1)),  # set released: reset wins
    ((0, 0), (0, 1)),  # hold 0
])
NAND_SR = ("nand_sr.v", ("sn", "rn"), ("q", "qn"), [
    ((0, 1), (1, 0)),  # set (active low)
    ((1, 1), (1, 0)),  # hold 1
    ((1, 0), (0, 1)),  # reset
    ((1, 1), (0, 1)),  # hold 0
    ((1, 0), (0, 1)),
    ((0, 0), (1, 1)),  # both active: q and qn both 1
    ((0, 1), (1, 0)),  # reset released: set wins
    ((1, 1), (1, 0)),  # hold 1
])
D_LATCH = ("dlatch.v", ("d", "en"), ("q", "qn"), [
    ((1, 1), (1, 0)),  # transparent: q follows d
    ((0, 1), (0, 1)),
    ((1, 1), (1, 0)),
    ((1, 0), (1, 0)),  # closed: holds 1
    ((0, 0), (1, 0)),  # d changes while closed: still 1
    ((0, 1), (0, 1)),  # opened: takes 0
    ((0, 0), (0, 1)),  # closed: holds 0
    ((1, 0), (0, 1)),  # d changes while closed: still 0
    ((1, 1), (1, 0)),
])
GATED_SR = ("gated_sr.v", ("s", "r", "en"), ("q", "qn"), [
    ((1, 0, 1), (1, 0)),  # enabled: set
    ((0, 0, 1), (1, 0)),  # hold 1
    ((0, 1, 1), (0, 1)),  # reset
    ((0, 1, 0), (0, 1)),  # closed
    ((1, 1, 0), (0, 1)),  # set and reset while closed: nothing happens
    ((1, 0, 0), (0, 1)),
    ((1, 0, 1), (1, 0)),  # opened with set active: set
    ((1, 1, 1), (1, 1)),  # both active while enabled: q and qn both 1 (NAND latch)
    ((0, 1, 1), (0, 1)),  # set released: reset wins
    ((0, 1, 0), (0, 1)),
])
MS_FF = ("msff.v", ("d", "clk"), ("q",), [
    ((1, 0), None),    # master takes d while clk is low; q not yet known
    ((1, 1), (1,)),    # rising edge: q takes 1
    ((0, 1), (1,)),    # d changes while clk is high: q holds
    ((0, 0), (1,)),    # falling edge: q holds, master takes 0
    ((1, 0), (1,)),    # master follows d
    ((0, 0), (1,)),
    ((0, 1), (0,)),    # rising edge: q takes 0
    ((1, 1), (0,)),
    ((1, 0), (0,)),
    ((1, 1), (1,)),    # rising edge: q takes 1
])


def _simulate(tmp_path: Path, files: list, module: str, ins, outs, steps, power_up=()) -> list:
    """Outputs of the Verilog ``files`` (top ``module``) after each step, as Icarus Verilog simulates them.

    The nets ``power_up`` are forced to 0 and released at time 0, with the first step's inputs applied:
    a loop of gates powers up at 0 or 1, where the simulator's unknown (x) may never resolve through a
    gate whose other input does not decide it alone."""
    lines = ["`timescale 1ns/1ns", "module bench;"]
    lines += [f"  reg {i};" for i in ins] + [f"  wire {o};" for o in outs]
    lines.append(f"  {module} dut ({', '.join(f'.{p}({p})' for p in (*ins, *outs))});")
    lines.append("  initial begin")
    if power_up:
        lines.append("    " + " ".join(f"{i} = 1'b{v};" for i, v in zip(ins, steps[0][0])))
        lines.append("    " + " ".join(f"force dut.\\{n} = 1'b0;" for n in power_up) + " #2;")
        lines.append("    " + " ".join(f"release dut.\\{n} ;" for n in power_up) + " #2;")
    for values, _ in steps:
        lines.append("    " + " ".join(f"{i} = 1'b{v};" for i, v in zip(ins, values)) + " #50;")
        lines.append(f'    $display("%b", {{{", ".join(outs)}}});')
    lines += ["    $finish;", "  end", "endmodule"]
    bench = tmp_path / "bench.v"
    bench.write_text("\n".join(lines) + "\n")
    sim = tmp_path / "bench.vvp"
    r = subprocess.run(["iverilog", "-g2001", "-o", str(sim), str(bench), *map(str, files)],
                       capture_output=True, text=True)
    assert r.returncode == 0, r.stderr
    r = subprocess.run(["vvp", "-n", str(sim)], capture_output=True, text=True, timeout=60)
    assert r.returncode == 0, r.stderr
    return [ln.strip() for ln in r.stdout.splitlines() if ln.strip() and set(ln.strip()) <= set("01xz")]


def _check(tmp_path, files, module, case, power_up=()):
    assert shutil.which("iverilog") and shutil.which("vvp"), "`make debs` installs the outside simulator"
    _, ins, outs, steps = case
    got = _simulate(tmp_path, files, module, ins, outs, steps, power_up)
    want = [None if exp is None else "".join(map(str, exp)) for _, exp in steps]
    assert len(got) == len(want), got
    bad = [(k, steps[k][0], want[k], got[k]) for k in range(len(want)) if want[k] is not None and got[k] != want[k]]
    assert not bad, bad


CASES = [NOR_SR, NAND_SR, GATED_SR, D_LATCH, MS_FF]


@pytest.mark.parametrize("case", CASES, ids=lambda c: c[0])
def test_converted_verilog_keeps_the_loops_as_gates(tmp_path, case):
    # the converted file is simulated by Icarus Verilog, and read back by netfit as the same design
    src = DATA / case[0]
    out = tmp_path / f"out_{src.name}"
    flow.convert(src, out)
    text = out.read_text()
    assert "always" not in text and "reg " not in text  # gates only: no behavioural storage
    design = read_design(src, quiet=True)
    _check(tmp_path, [out], design.name, case)
    back = read_design(out, quiet=True)
    res = check_equivalence(design, back)
    assert res.equivalent, res.notes


BUILDS = [(c, t) for c in CASES for t in ("nand-only", "nor-only", "gates-74", "gates-74ls")] + [
    (D_LATCH, "relay-spdt"), (D_LATCH, "relay-dpdt")]


@pytest.mark.parametrize("case, target", BUILDS, ids=lambda x: x if isinstance(x, str) else x[0])
def test_build_is_proved_and_simulates_as_the_textbook_latch(tmp_path, case, target):
    design = read_design(DATA / case[0], quiet=True)
    r = flow.fit(design, flow.load_target(target), effort=0)
    assert r.analysis.verified == "proved"
    # the build's loops race no more than the design's: no single input change whose end depends on which
    # of two gates wins (the simulator below gives every gate the same delay, so it cannot show that)
    if not target.startswith("relay"):
        assert critical_races_added(design, r.build.to_netlist()) == []
    flow.write_build(r, tmp_path)
    stem = flow._file_stem(r.build.design)
    loops = [g.q for g in r.build.storage_groups.values() if g.kind == "as"]
    _check(tmp_path, [tmp_path / f"{stem}.v", tmp_path / f"{stem}_models.v"], design.name, case, loops)


@pytest.mark.parametrize("target", ["nand-only", "nor-only"])
@pytest.mark.parametrize("name", ["nor_sr.v", "nand_sr.v", "dlatch.v"])
def test_gate_only_targets_keep_the_cross_coupled_pair(name, target):
    # the build's feedback loop is the design's, cut at the same net (matched by construction)
    design = read_design(DATA / name, quiet=True)
    r = flow.fit(design, flow.load_target(target), effort=0)
    groups = [g for g in r.build.storage_groups.values() if g.kind == "as"]
    assert [g.q for g in groups] == ["q"]
    assert not any(c.group is not None for c in r.build.cells)
    # the proof's note states the assumption it rests on
    assert r.analysis.verified == "proved"


def test_native_pair_is_one_package():
    # a NOR latch on a NOR target and a NAND latch on a NAND target: the two gates of one quad package
    # (common practice: the cross-coupled pair is the cheapest latch on a one-gate target)
    for name, target in (("nor_sr.v", "nor-only"), ("nand_sr.v", "nand-only")):
        r = flow.fit(read_design(DATA / name, quiet=True), flow.load_target(target), effort=1)
        assert len(r.build.parts) == 1 and len(r.build.cells) == 2, (name, target)
    # the gated D latch of four NANDs and an inverter (five NAND slots: two packages) keeps its loop the
    # cross-coupled pair of the textbook drawing: two gates once round
    r = flow.fit(read_design(DATA / "dlatch.v", quiet=True), flow.load_target("nand-only"), effort=1)
    assert len(r.build.parts) == 2 and len(r.build.cells) == 5
    (lp,) = r.analysis.timing.loops
    assert sorted(lp["nets"]) == ["q", "qn"]


def test_relays_refuse_the_set_reset_latch_with_the_reason():
    from mapper.errors import UsageError
    with pytest.raises(UsageError) as exc:
        flow.fit(read_design(DATA / "nor_sr.v", quiet=True), flow.load_target("relay-spdt"), effort=0)
    assert "the loop at q is a set-reset latch" in str(exc.value)


def _mixed_reference(steps):
    """Outputs (y, z, q) of tests/data/latches/mixed.blif after each step of (clk, a, b, c), by the textbook
    rules (common practice): y toggles at a rising clock edge while a is 1 (a T flip-flop, power-up 0);
    q is a NAND set-reset latch set while a and b are 1 and reset while c is 0 (both: q is 1); z = q and y."""
    y, q, clk = 0, None, 0
    out = []
    for c_, a, b, c in steps:
        if c_ and not clk:
            y ^= a
        clk = c_
        s, r = a & b, 1 - c
        q = 1 if s else (0 if r else q)
        out.append(None if q is None else f"{y}{q & y}{q}")
    return out


def test_mixed_design_converted_proved_and_simulated(tmp_path):
    # a clocked register, a latch built from gates and combinational logic in one design (invented)
    src = DATA / "mixed.blif"
    design = read_design(src, quiet=True)
    assert sorted(s.kind for s in design.storage().values()) == ["as", "re"]
    for target in ("nand-only", "nor-only", "gates-74"):
        r = flow.fit(design, flow.load_target(target), effort=0)
        assert r.analysis.verified == "proved", target
    out = tmp_path / "mixed.v"
    flow.convert(src, out)
    back = read_design(out, quiet=True)
    assert check_equivalence(design, back).equivalent
    # single input changes: (clk, a, b, c)
    seq = [(0, 1, 1, 1), (0, 1, 0, 1), (1, 1, 0, 1), (0, 1, 0, 1), (0, 1, 0, 0), (0, 1, 1, 0), (0, 1, 1, 1),
           (1, 1, 1, 1), (0, 1, 1, 1), (0, 0, 1, 1), (1, 0, 1, 1), (0, 0, 1, 1), (0, 0, 1, 0), (0, 1, 1, 0),
           (1, 1, 1, 0), (0, 1, 1, 0), (0, 1, 1, 1), (0, 1, 0, 1), (1, 1, 0, 1)]
    assert all(sum(x != y for x, y in zip(p, n)) == 1 for p, n in zip(seq, seq[1:]))
    want = _mixed_reference(seq)
    got = _simulate(tmp_path, [out], design.name, ("clk", "a", "b", "c"), ("y", "z", "q"),
                    [(s, None) for s in seq])
    assert [g if w is not None else None for g, w in zip(got, want)] == want


def test_a_build_that_would_race_is_built_gate_for_gate():
    # the fewest-part NAND build of the master-slave flip-flop shares gates between master and slave so
    # that one clock change leaves the master's end to a race between two gates; the gate-for-gate build
    # keeps the textbook's two latches and is kept instead, with a note saying why
    design = read_design(DATA / "msff.v", quiet=True)
    r = flow.fit(design, flow.load_target("nand-only"), effort=1)
    assert any(n.startswith("feedback loops built by hand in nand2") and "races where the design does not" in n
               for n in r.analysis.notes), r.analysis.notes
    assert critical_races_added(design, r.build.to_netlist()) == []


def test_latches_on_opposite_enables_share_no_enable_pin(tmp_path):
    # the '75 quad latch has one enable per pair of latches: pin 13 for latches 1-2 and pin 4 for 3-4
    # (generic datasheets, /work/shared/TRADE-FACTS.md); the master and slave of a flip-flop open on
    # opposite clock levels, so they may not share a pair
    design = read_design(DATA / "msff.v", quiet=True)
    r = flow.fit(design, flow.load_target("gates-74"), effort=1)
    latches = [c for c in r.build.cells if c.cell == "latch"]
    assert len(latches) == 2
    on_pin: dict = {}
    for c in latches:
        on_pin.setdefault((c.part_ref, r.build.pin_of(c, "EN")), set()).add(c.pins["EN"])
    assert all(len(nets) == 1 for nets in on_pin.values()), on_pin
    assert {num for _, num in on_pin} <= {4, 13}
    flow.write_build(r, tmp_path)  # the wiring list's check that no pin joins two nets passes
    assert (tmp_path / "wiring.txt").exists()
