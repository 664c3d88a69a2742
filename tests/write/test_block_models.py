"""The Verilog models of the medium-scale chips (cells.v) run in Icarus Verilog, an outside simulator,
against the parts' published function tables (issue 20).

The tables are those of generic 74HC283, '85, '138, '139, '151, '161, '163,
'164, '373/'573 and '595 datasheets, as recalled (``from memory``), or the part's defining
arithmetic (``common practice``), written here as Python rules.  A missing
simulator is a failure (``make debs`` installs it), not a skip.
"""
from __future__ import annotations

import itertools
import shutil
import subprocess

import pytest

from mapper import flow
from mapper.write.verilog import cells_text


@pytest.fixture(scope="module")
def cells():
    return flow.load_target("msi-74").cells


def _run(tmp_path, cd, steps: list) -> list:
    """Simulate the model of ``cd``: each step is ``(inputs, pulse)`` -- the inputs applied, the outputs
    read after they settle, then the input ``pulse`` (a clock) taken high and low again when given.
    Returns per step a dict output -> 0/1."""
    assert shutil.which("iverilog") and shutil.which("vvp"), "iverilog not installed: `make debs`"
    ins, outs = list(cd.inputs), [cd.output, *cd.extra_outputs] if cd.block is None else list(cd.outputs)
    lines = ["`timescale 1ns/1ns", "module bench;"]
    lines += [f"  reg {p} = 1'b0;" for p in ins] + [f"  wire {o};" for o in outs]
    lines.append(f"  {cd.name} dut ({', '.join(f'.{p}({p})' for p in ins + outs)});")
    lines.append("  initial begin")
    for values, pulse in steps:
        lines.append("    " + " ".join(f"{p} = 1'b{values.get(p, 0)};" for p in ins) + " #5;")
        lines.append(f'    $display("%b", {{{", ".join(outs)}}});')
        if pulse:
            lines.append(f"    {pulse} = 1'b1; #5; {pulse} = 1'b0; #5;")
    lines += ["    $finish;", "  end", "endmodule"]
    (tmp_path / "bench.v").write_text("\n".join(lines) + "\n")
    (tmp_path / "cells.v").write_text(cells_text([cd]))
    sim = tmp_path / "bench.vvp"
    r = subprocess.run(["iverilog", "-g2001", "-o", str(sim), str(tmp_path / "bench.v"), str(tmp_path / "cells.v")],
                       capture_output=True, text=True)
    assert r.returncode == 0, r.stderr
    r = subprocess.run(["vvp", "-n", str(sim)], capture_output=True, text=True, timeout=120)
    rows = [ln.strip() for ln in r.stdout.splitlines() if ln.strip() and set(ln.strip()) <= set("01xz")]
    assert len(rows) == len(steps), r.stdout[-1000:]
    return [dict(zip(outs, (int(c) if c in "01" else c for c in row))) for row in rows]


def _bits(prefix: str, value: int, n: int, first: int = 0) -> dict:
    return {f"{prefix}{i + first}": (value >> i) & 1 for i in range(n)}


def test_283_model_adds(tmp_path, cells):
    # common practice: S4..S1 and C4 are the 5-bit sum A + B + C0, for every input
    rows = list(itertools.product(range(16), range(16), range(2)))
    steps = [(_bits("A", a, 4, 1) | _bits("B", b, 4, 1) | {"C0": c}, None) for a, b, c in rows]
    for (a, b, c), out in zip(rows, _run(tmp_path, cells["add4"], steps)):
        assert sum(out[f"S{i + 1}"] << i for i in range(4)) + (out["C4"] << 4) == a + b + c


def _85(a: int, b: int, gt_i: int, lt_i: int, eq_i: int) -> tuple:
    """From memory: the 74HC85 function table as a rule -- the words decide when they differ; equal words
    pass A=B in high on, else give A>B = not (A<B in) and A<B = not (A>B in)."""
    if a != b:
        return (int(a > b), int(a < b), 0)
    if eq_i:
        return (0, 0, 1)
    return (1 - lt_i, 1 - gt_i, 0)


def test_85_model_compares(tmp_path, cells):
    rows = list(itertools.product(range(16), range(16), range(8)))
    rows = [r for r in rows if r[0] == r[1] or r[2] == 2] + [(5, 5, c) for c in range(8)]
    steps = [(_bits("A", a, 4) | _bits("B", b, 4) | {"GT_I": c & 1, "LT_I": (c >> 1) & 1, "EQ_I": c >> 2}, None)
             for a, b, c in rows]
    for (a, b, c), out in zip(rows, _run(tmp_path, cells["cmp4"], steps)):
        assert (out["GT_O"], out["LT_O"], out["EQ_O"]) == _85(a, b, c & 1, (c >> 1) & 1, c >> 2)


def test_138_and_139_models_decode(tmp_path, cells):
    # from memory: the selected output of an enabled decoder is low, every other output high
    rows = list(itertools.product(range(8), range(8)))
    steps = [({"A0": a & 1, "A1": (a >> 1) & 1, "A2": a >> 2, "E1_N": e & 1, "E2_N": (e >> 1) & 1,
               "E3": e >> 2}, None) for a, e in rows]
    for (a, e), out in zip(rows, _run(tmp_path, cells["dec3"], steps)):
        on = e == 0b100
        assert [out[f"Y{k}_N"] for k in range(8)] == [0 if on and k == a else 1 for k in range(8)]
    rows2 = list(itertools.product(range(4), range(2)))
    steps = [({"A0": a & 1, "A1": a >> 1, "E_N": e}, None) for a, e in rows2]
    (tmp_path / "dec2").mkdir()
    for (a, e), out in zip(rows2, _run(tmp_path / "dec2", cells["dec2"], steps)):
        assert [out[f"Y{k}_N"] for k in range(4)] == [0 if e == 0 and k == a else 1 for k in range(4)]


def test_151_model_selects(tmp_path, cells):
    # from memory: E high gives Y low (Y inverted high); else Y is the data input S2 S1 S0 choose
    rows = list(itertools.product((0x00, 0xFF, 0xA5, 0x3C, 0x81), range(8), range(2)))
    steps = [(_bits("I", d, 8) | _bits("S", s, 3) | {"E_N": e}, None) for d, s, e in rows]
    for (d, s, e), out in zip(rows, _run(tmp_path, cells["mux8"], steps)):
        y = 0 if e else (d >> s) & 1
        assert (out["Y"], out["Y_N"]) == (y, 1 - y)


@pytest.mark.parametrize("cell,asynchronous", [("count4", True), ("count4s", False)])
def test_161_163_models_count(tmp_path, cells, cell, asynchronous):
    # from memory: '161/'163 -- clear low empties the counter (the '161 at once, the '163 at the next clock
    # edge); LOAD low loads D C B A at the edge; ENP and ENT high count; RCO = ENT at a count of 15
    run = {"CLR_N": 1, "LOAD_N": 1, "ENP": 1, "ENT": 1}
    steps = [({"CLR_N": 0}, "CLK"),                               # empty it (both kinds, with a clock)
             (run | {"LOAD_N": 0, "A": 1, "B": 0, "C": 1, "D": 1}, "CLK")]   # load 13
    steps += [(run, "CLK")] * 4                                    # 13, 14, 15, 0 -> 1
    steps += [(run | {"ENP": 0}, "CLK"), (run | {"ENT": 0}, "CLK")]   # held at 1
    steps += [(run | {"CLR_N": 0}, None), (run, None)]            # clear without a clock
    got = _run(tmp_path, cells[cell], steps)
    # (the first row is read before any clock: the '163 is still unknown there)
    q = [None] + [sum(out[f"Q{c}"] << i for i, c in enumerate("ABCD")) for out in got[1:]]
    assert q[1] == 0
    assert q[2:8] == [13, 14, 15, 0, 1, 1]
    assert [out["RCO"] for out in got[2:6]] == [0, 0, 1, 0]
    assert got[7]["RCO"] == 0   # ENT low: no ripple carry
    assert q[8:10] == ([0, 0] if asynchronous else [1, 1])   # the '161 empties at once, the '163 waits


def test_595_model_shifts_then_stores(tmp_path, cells):
    # from memory: 74HC595 -- SRCLK shifts SER in at QA's end; RCLK copies the shift stages to QA-QH; QH'
    # shows the last stage
    word = 0b11010010
    steps = [({"SRCLR_N": 1, "SER": (word >> (7 - k)) & 1}, "SRCLK") for k in range(8)]
    steps += [({"SRCLR_N": 1}, "RCLK"), ({"SRCLR_N": 1}, None)]
    got = _run(tmp_path, cells["shift8o"], steps)
    assert got[8]["QH_S"] == word >> 7
    assert sum(got[9][f"Q{c}"] << i for i, c in enumerate("ABCDEFGH")) == word


def test_164_model_shifts_a_and_b_and_clears_at_once(tmp_path, cells):
    # from memory: 74HC164 -- at each rising clock QA takes A AND B and every other stage the one before it;
    # clear low empties all eight at once, without a clock
    rows = [(1, 1), (0, 1), (1, 0), (1, 1), (1, 1), (0, 0), (1, 1), (0, 1), (1, 1)]
    steps = [({"CLR_N": 0}, None)] + [({"CLR_N": 1, "A": a, "B": b}, "CLK") for a, b in rows]
    steps += [({"CLR_N": 1}, None), ({"CLR_N": 0}, None)]
    got = _run(tmp_path, cells["shift8"], steps)
    words = [sum(out[f"Q{c}"] << i for i, c in enumerate("ABCDEFGH")) for out in got]
    q, expect = 0, [0]
    for a, b in rows:
        expect.append(q)
        q = ((q << 1) | (a & b)) & 0xFF
    assert words[:len(expect)] == expect
    assert words[-2] == q and words[-1] == 0


def test_373_573_model_is_transparent_while_le_is_high(tmp_path, cells):
    # from memory: 74HC373/573 (output enable held on) -- Q follows D while LE is high, holds while LE is low
    rows = [(1, 1), (0, 1), (0, 0), (1, 0), (1, 1), (1, 0), (0, 0), (0, 1)]
    got = _run(tmp_path, cells["latch_q"], [({"D": d, "LE": le}, None) for d, le in rows])
    q, expect = None, []
    for d, le in rows:
        q = d if le else q
        expect.append(q)
    assert [out["Q"] for out in got] == expect


@pytest.mark.parametrize("name,part", [("counter4", "74HC163"), ("cmp2", "74HC85"), ("mux4", "74HC153"),
                                       ("full_adder", "74HC283"), ("sipo8", "74HC164"),
                                       ("latches/latch8", "74HC573"), ("loadcount4", "74HC163")])
def test_block_build_exports_verilog_that_reads_back_equal(netfit, data, tmp_path, name, part):
    # a build with a medium-scale chip written as structural Verilog with its models beside it, read back
    # and proved equal to the design it came from (textbook circuits, common practice)
    design = data / ("" if "/" in name else "textbook") / f"{name}.blif"
    code, out, _ = netfit("build", design, "-t", "msi-74", "-o", tmp_path / "out", "--json", as_json=True)
    assert code == 0 and out["parts"].get(part) == 1
    code, out, _ = netfit("verify", design, tmp_path / "out" / f"{design.stem}.v")
    assert code == 0 and out.startswith("equal")
