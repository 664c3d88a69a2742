"""Build outputs checked against the outside.

Sources of the checks:

* **Icarus Verilog** (``iverilog``/``vvp`` from Debian), an independent
  simulator: the exported ``<design>.v`` + ``<design>_models.v`` of each benchmark
  build is compiled and simulated, and every output of every vector must
  equal netfit's own simulation of the ORIGINAL design (not of the build).
* **pyslang**, an independent SystemVerilog front end: it must elaborate the
  exported pair without errors, and it tells the test the module's ports
  (names, directions, ranges), so the test bench does not rely on the
  writer's own naming code.
* Benchmarks: ISCAS-85 c17 (Brglez and Fujiwara, ISCAS 1985), the textbook
  circuits in ``tests/data/textbook`` and adders, multipliers and comparators
  from the ariths-gen generator library (``tests/generated.py``).
* The quad 2-input NAND pinout (A 1,4,9,12 · B 2,5,10,13 · Y 3,6,8,11 · GND 7
  · VCC 14) written in this file from generic '00 family datasheets.
* Python's :mod:`csv` module reads ``parts.csv``.
"""
from __future__ import annotations

import contextlib
import csv
import functools
import io
import json
import os
import random
import re
import shutil
import signal
import subprocess
import threading
from decimal import Decimal
from pathlib import Path

import pyslang  # the outside Verilog front end: a test dependency, never skipped
import pytest

from generated import make
from mapper import flow
from mapper.analyze import analyze_build
from mapper.build import Build, CellInstance, PartInstance, SupportInstance, Tie
from mapper.catalog.targets import builtin_targets
from mapper.read import read_design
from mapper.simulate import run_cycles, simulate
from mapper.verify import check_equivalence
from mapper.write.parts import parts_csv
from mapper.write.verilog import verilog_names
from mapper.write.wiring import wiring, wiring_text

DATA = Path(__file__).parent.parent / "data"
GOLDEN = Path(__file__).parent / "golden"
TEXTBOOK = sorted((DATA / "textbook").glob("*.blif"))

def _needs_iverilog(fn):
    """Mark a test that runs the outside simulator; a missing simulator is a failure (``make debs``), not a skip."""
    @functools.wraps(fn)
    def run(*args, **kwargs):
        missing = [t for t in ("iverilog", "vvp") if shutil.which(t) is None]
        assert not missing, f"{', '.join(missing)} not installed: `make debs` installs the outside simulator"
        return fn(*args, **kwargs)
    return run


needs_iverilog = _needs_iverilog


#: a build that takes longer than this is a fault of the mapper, reported as a failure rather than a hang
FIT_DEADLINE_S = 60


@contextlib.contextmanager
def _deadline(seconds: int, what: str):
    if not hasattr(signal, "SIGALRM") or threading.current_thread() is not threading.main_thread():
        yield
        return

    def expired(signum, frame):
        raise TimeoutError(f"{what} did not finish in {seconds} s")

    old = signal.signal(signal.SIGALRM, expired)
    signal.alarm(seconds)
    try:
        yield
    finally:
        signal.alarm(0)
        signal.signal(signal.SIGALRM, old)


@functools.cache
def _built(path: str, target: str):
    design = read_design(path)
    with _deadline(FIT_DEADLINE_S, f"building {Path(path).name} on {target}"):
        return design, flow.fit(design, flow.load_target(target), effort=0)


# -- the outside simulator --------------------------------------------------------------------
def _slang_ports(files) -> tuple[str, dict]:
    """(top module name, {port name: (direction, msb, lsb)}) as pyslang elaborates ``files``;
    fails on any pyslang error."""
    comp = pyslang.ast.Compilation()
    for f in files:
        comp.addSyntaxTree(pyslang.syntax.SyntaxTree.fromFile(str(f)))
    errors = [f"{d.code} at {d.location}" for d in comp.getAllDiagnostics() if d.isError()]
    assert not errors, errors
    tops = [i for i in comp.getRoot().topInstances]
    assert len(tops) == 1, [t.name for t in tops]
    ports = {}
    for p in tops[0].body.portList:
        rng = p.type.fixedRange
        ports[p.name] = ("in" if "In" in str(p.direction) else "out", rng.left, rng.right, p.type.bitWidth)
    return tops[0].name, ports


def _esc(name: str) -> str:
    # every name escaped: `\n1 ` is the same identifier as `n1` (IEEE 1364-2001 2.7.1), and keywords are safe
    return "\\" + name + " "


def _port_of(net: str, ports: dict, direction: str):
    """(port, bit or None) carrying design net ``net``: a scalar port of that name, or a bit of a
    vector port ``base`` for a net ``base[i]``."""
    if net in ports and ports[net][3] == 1:
        assert ports[net][0] == direction, net
        return net, None
    m = re.fullmatch(r"(.+)\[(\d+)\]", net)
    assert m and m.group(1) in ports, f"no port carries design net {net!r} (ports {sorted(ports)})"
    d, msb, lsb, _ = ports[m.group(1)]
    assert d == direction and min(msb, lsb) <= int(m.group(2)) <= max(msb, lsb), net
    return m.group(1), int(m.group(2))


def _connections(names, ports, direction, prefix):
    """Port connections of a test bench: each design net gets a bench signal ``prefix<k>``."""
    by_port: dict = {}
    for k, n in enumerate(names):
        port, bit = _port_of(n, ports, direction)
        by_port.setdefault(port, {})[bit] = f"{prefix}{k}"
    conns = []
    for port, bits in by_port.items():
        if None in bits:
            name = ports[port][4] if len(ports[port]) > 4 else port  # an output renamed in the file
            conns.append(f".{_esc(name)}({bits[None]})")
        else:
            _, msb, lsb, _ = ports[port]
            step = -1 if msb >= lsb else 1
            sig = [bits.get(i, "1'b0" if direction == "in" else "") for i in range(msb, lsb + step, step)]
            assert all(sig), f"vector port {port} has bits no design net uses"
            conns.append(f".{_esc(port)}({{{', '.join(sig)}}})")
    return conns


def run_iverilog(folder: Path, design, files, vectors: list, clock: str | None = None,
                 strobes=(), power_up=None) -> list:
    """Simulate the Verilog ``files`` (the top module first) with Icarus Verilog, in ``folder``.

    ``vectors`` is a list of dicts input -> 0/1.  Without ``clock`` each
    vector is applied and the outputs read after it settles.  With ``clock``
    each vector is one cycle: the inputs are applied with the clock low and
    the ``strobes`` (enables of transparent latches) at 0, the outputs are
    read, then each strobe is pulsed to its value of the cycle and the clock
    rises once.  (So a latch takes its data at the end of the cycle, as
    netfit's cycle simulation defines it.)  ``power_up`` (net -> 0/1) is
    forced at time 0 and released, with the first vector applied and the
    clock low: the power-on reset that storage built from gates needs.
    Returns per vector a dict output -> 0/1.
    """
    vfile = files[0]
    top, ports = _slang_ports(files)
    # outputs renamed because they are also inputs, as the file's header lists them
    renamed_out = dict(re.findall(r"^//   (\S+) \(output\) -> (\S+)$", vfile.read_text(), re.M))
    for old, new in renamed_out.items():
        ports[f"{old} (output)"] = ports.pop(new) + (new,)
    ins = [i for i in design.inputs if i != clock]
    outs = list(design.outputs)
    lines = ["`timescale 1ns/1ns", "module bench;"]
    lines += [f"  reg i{k};" for k in range(len(ins))]
    lines += [f"  wire o{k};" for k in range(len(outs))]
    conns = _connections(ins, ports, "in", "i") + _connections(
        [f"{o} (output)" if o in renamed_out else o for o in outs], ports, "out", "o")
    if clock is not None:
        lines.append("  reg clk = 1'b0;")
        port, bit = _port_of(clock, ports, "in")
        assert bit is None
        conns.append(f".{_esc(port)}(clk)")
    lines.append(f"  {_esc(top)} dut ({', '.join(conns)});")
    nv = len(vectors)
    width = max(1, len(ins))
    strobe_idx = [ins.index(s_) for s_ in strobes]
    lines.append(f"  reg [{width - 1}:0] vin [0:{nv - 1}];")
    lines.append("  integer k;")
    lines.append("  initial begin")
    lines.append(f'    $readmemb("{folder / "vectors.txt"}", vin);')
    if power_up:
        forced = []
        for net, value in power_up.items():
            if net in ports or not re.fullmatch(r"(.+)\[(\d+)\]", net) or \
                    re.fullmatch(r"(.+)\[(\d+)\]", net).group(1) not in ports:
                forced.append((f"dut.{_esc(net)}", value))
            else:
                port, bit = _port_of(net, ports, "out")
                forced.append((f"dut.{_esc(port)}[{bit}]", value))
        if ins:
            lines.append(f"    {{{', '.join(f'i{k}' for k in reversed(range(len(ins))))}}} = vin[0];")
        lines.append("    " + " ".join(f"force {ref} = 1'b{v};" for ref, v in forced) + " #2;")
        lines.append("    " + " ".join(f"release {ref};" for ref, _ in forced) + " #2;")
    lines.append(f"    for (k = 0; k < {nv}; k = k + 1) begin")
    if ins:
        lines.append(f"      {{{', '.join(f'i{k}' for k in reversed(range(len(ins))))}}} = vin[k];")
    for j in strobe_idx:
        lines.append(f"      i{j} = 1'b0;")
    lines.append("      #5;")
    lines.append(f'      $display("%b", {{{", ".join(f"o{k}" for k in reversed(range(len(outs))))}}});')
    if strobe_idx:
        lines.append("      " + " ".join(f"i{j} = vin[k][{j}];" for j in strobe_idx) + " #5;")
        lines.append("      " + " ".join(f"i{j} = 1'b0;" for j in strobe_idx) + " #5;")
    if clock is not None:
        lines.append("      clk = 1'b1; #5; clk = 1'b0; #5;")
    lines += ["    end", "    $finish;", "  end", "endmodule"]
    (folder / "bench.v").write_text("\n".join(lines) + "\n")
    (folder / "vectors.txt").write_text("".join(
        "".join(str(v[i]) for i in reversed(ins)) + "\n" if ins else "0\n" for v in vectors))
    sim = folder / "bench.vvp"
    r = subprocess.run(["iverilog", "-g2001", "-o", str(sim), str(folder / "bench.v"), *map(str, files)],
                       capture_output=True, text=True)
    assert r.returncode == 0, r.stderr
    r = subprocess.run(["vvp", "-n", str(sim)], capture_output=True, text=True, timeout=120)
    assert r.returncode == 0, r.stderr
    rows = [ln.strip() for ln in r.stdout.splitlines() if re.fullmatch(r"[01xz]+", ln.strip())]
    assert len(rows) == nv, r.stdout[-2000:]
    return [{o: (int(row[len(outs) - 1 - k]) if row[len(outs) - 1 - k] in "01" else row[len(outs) - 1 - k])
             for k, o in enumerate(outs)} for row in rows]


def _vectors(names, n_random=300, seed=1) -> list:
    if len(names) <= 10:
        return [{x: (m >> j) & 1 for j, x in enumerate(names)} for m in range(1 << len(names))]
    rng = random.Random(seed)
    return [{x: rng.getrandbits(1) for x in names} for _ in range(n_random)]


def _expected(design, vectors) -> list:
    """netfit's own simulation of the original design, one pattern per vector."""
    words = {i: 0 for i in design.inputs}
    for k, v in enumerate(vectors):
        for i in design.inputs:
            words[i] |= v[i] << k
    mask = (1 << len(vectors)) - 1
    res = simulate(design, words, mask)
    return [{o: (res[o] >> k) & 1 for o in design.outputs} for k in range(len(vectors))]


def _clocking(design):
    """``(clock, strobes)``: the one primary input clocking every edge-triggered element (None for
    combinational designs) and the primary inputs enabling transparent latches (used by nothing else)."""
    st = design.storage()
    if not st:
        return None, []
    assert all(s.kind in ("re", "ah") for s in st.values()), "these checks use rising edges and ah latches"
    clocks = {s.control for s in st.values() if s.kind == "re"} or {None}
    strobes = sorted({s.control for s in st.values() if s.kind == "ah"})
    assert len(clocks) == 1 and set(strobes) <= set(design.inputs), (clocks, strobes)
    for g in strobes:
        assert all(g not in n.fanins for n in design.nodes.values() if not getattr(n, "kind", None) == "ah"), g
    return clocks.pop(), strobes


def _check_exported(tmp_path, path, target, design=None, r=None):
    if r is None:
        design, r = _built(str(path), target)
    b, a = r
    assert a.verified == "proved"
    flow.write_build(r, tmp_path)
    # storage built from gates powers up unknown; the bench plays the power-on reset the cautions ask for
    power_up = {g.q: g.init for g in b.storage_groups.values() if g.init in (0, 1)}
    files = [tmp_path / f"{flow._file_stem(b.design)}.v", tmp_path / f"{flow._file_stem(b.design)}_models.v"]
    _simulate_against_design(tmp_path, design, files, power_up)


def _simulate_against_design(tmp_path, design, files, power_up=None):
    clock, strobes = _clocking(design)
    if not design.storage():
        vectors = _vectors(list(design.inputs))
        want = _expected(design, vectors)
    else:
        # one vector per clock cycle; netfit's cycle simulation of the design (clock implicit)
        rng = random.Random(5)
        ins = [i for i in design.inputs if i != clock]
        vectors = [{i: rng.getrandbits(1) for i in ins} for _ in range(40)]
        trace = run_cycles(design, [{**v, **({clock: 0} if clock else {})} for v in vectors], 1)
        want = [{o: t[o] for o in design.outputs} for t in trace]
    got = run_iverilog(tmp_path, design, files, vectors, clock=clock, strobes=strobes, power_up=power_up)
    bad = [(k, vectors[k], want[k], got[k]) for k in range(len(vectors)) if got[k] != want[k]]
    assert not bad, bad[:3]


GATE_TARGETS = ("nand-only", "gates-74")


# source: ISCAS-85 c17 and the textbook circuits, simulated by Icarus Verilog
@needs_iverilog
@pytest.mark.parametrize("target", GATE_TARGETS)
@pytest.mark.parametrize("path", [DATA / "c17.blif"] + TEXTBOOK, ids=lambda p: p.stem)
def test_exported_verilog_simulates_equal_to_design(tmp_path, path, target):
    _check_exported(tmp_path, path, target)


# source: the ariths-gen generator library (independent adders, multipliers, comparators)
@needs_iverilog
@pytest.mark.parametrize("target", GATE_TARGETS)
@pytest.mark.parametrize("kind,width", [("rca", 4), ("cla", 4), ("ks", 4), ("arr", 3), ("dadda", 3),
                                        ("lt", 4), ("gte", 4)])
def test_exported_verilog_of_generated_circuits(tmp_path, kind, width, target):
    (tmp_path / "src").mkdir()
    src = make(kind, width, tmp_path / "src")
    _check_exported(tmp_path / "out", src, target)


# source: Icarus Verilog simulating a relay build pole by pole (changeover contacts as in the catalog)
@needs_iverilog
@pytest.mark.parametrize("target", ["relay-spdt", "relay-dpdt"])
@pytest.mark.parametrize("path", [DATA / "c17.blif", DATA / "textbook" / "full_adder.blif",
                                  DATA / "textbook" / "mux4.blif"], ids=lambda p: p.stem)
def test_exported_relay_verilog_simulates_equal_to_design(tmp_path, path, target):
    _check_exported(tmp_path, path, target)


# -- round trip: netfit reads back what it writes ---------------------------------------------------
ALL_TARGETS = [name for name, _ in builtin_targets()]


def _read_back_equal(out, design, b):
    """Read the exported ``<design>.v`` back (its models file is found beside it) and prove it equal
    to the ORIGINAL design."""
    back = read_design(out / f"{flow._file_stem(b.design)}.v", quiet=True)
    assert any("_models.v beside it" in d.message for d in back.notes)
    res = check_equivalence(design, back)
    assert res.equivalent, res.to_dict()


def test_reader_and_writer_agree_on_the_models_file_name():
    # the reader finds the models file by the writer's name for it (it does not import the writer)
    from mapper.read import verilog as reader
    from mapper.write import verilog as writer
    assert reader.MODELS_SUFFIX == writer.MODELS_SUFFIX
    assert writer.models_file("out/c17.v").name == "c17" + reader.MODELS_SUFFIX


# source: Icarus Verilog runs the same exported pair (the outside reader); netfit's own reader must
# read it back and prove it equal to the design on every target shipped
@needs_iverilog
@pytest.mark.parametrize("target", ALL_TARGETS)
@pytest.mark.parametrize("path", [DATA / "c17.blif", DATA / "textbook" / "full_adder.blif",
                                  DATA / "textbook" / "mux4.blif"], ids=lambda p: p.stem)
def test_export_reads_back_equal_on_every_target(tmp_path, path, target):
    design, r = _built(str(path), target)
    _check_exported(tmp_path, path, target, design, r)
    _read_back_equal(tmp_path, design, r.build)


# flip-flop chips with their preset and clear tied off, starting values in 'initial' lines: read
# back as plain flip-flops (sequential builds of gates and relays hold their bits in feedback loops:
# tests/write/test_seq_roundtrip.py)
@pytest.mark.parametrize("target", ["gates-74", "gates-74ls"])
def test_sequential_chip_export_reads_back_equal(tmp_path, target):
    design, r = _built(str(DATA / "textbook" / "counter4.blif"), target)
    flow.write_build(r, tmp_path)
    _read_back_equal(tmp_path, design, r.build)


COUNTER = """\
# 2-bit counter with count enable and a transparent latch (textbook sequential logic, common practice)
.model cnt
.inputs en clk d g
.outputs q0 q1 l
.latch n0 q0 re clk 0
.latch n1 q1 re clk 0
.latch d l ah g 0
.names en q0 n0
10 1
01 1
.names en q0 q1 n1
0-1 1
110 1
-01 1
.end
"""


# source: Icarus Verilog against netfit's cycle simulation of the original design (run_cycles)
@needs_iverilog
@pytest.mark.parametrize("target,latch", [
    ("gates-74", False),
    ("gates-74", True),
    ("nand-only", True),
    ("relay-spdt", True)])
def test_exported_sequential_build_simulates_equal_to_design(tmp_path, target, latch):
    src = tmp_path / "cnt.blif"
    src.write_text(COUNTER if latch else COUNTER.replace(".latch d l ah g 0\n", "")
                   .replace("q0 q1 l", "q0 q1").replace("en clk d g", "en clk"))
    design = read_design(src)
    r = flow.fit(design, flow.load_target(target), effort=0)
    _check_exported(tmp_path / "out", src, target, design, r)


# -- names ---------------------------------------------------------------------------------------
BUSNAMES = """\
# bus bits as scalar BLIF nets, a hole in one bus, keyword-named and dotted nets (our own test input)
.model buses
.inputs a[0] a[1] a[2] b[0] b[2] wire x.y
.outputs s[0] s[1] t[3] reg
.names a[0] b[0] s[0]
01 1
10 1
.names a[1] b[2] k[1]
11 1
.names k[1] wire s[1]
1- 1
-1 1
.names a[2] x.y t[3]
11 1
.names a[2] wire reg
00 1
.end
"""


@needs_iverilog
@pytest.mark.parametrize("target", GATE_TARGETS)
def test_names_with_brackets_keywords_and_dots(tmp_path, target):
    # vector ports where a bus is whole (a, s), escaped identifiers elsewhere; checked by pyslang's
    # elaboration and by simulation in Icarus Verilog
    src = tmp_path / "buses.blif"
    src.write_text(BUSNAMES)
    design = read_design(src)
    r = flow.fit(design, flow.load_target(target), effort=0)
    out = tmp_path / "out"
    flow.write_build(r, out)
    _, ports = _slang_ports([out / "buses.v", out / "buses_models.v"])
    assert ports["a"][1:] == (2, 0, 3)   # a[0..2] regrouped into input [2:0] a
    assert "b[0]" in ports and "b[2]" in ports and "b" not in ports  # a hole: stays bit by bit
    assert ports["s"][1:] == (1, 0, 2)
    assert "t[3]" in ports and "t" not in ports  # a lone bit 3 is no whole bus
    assert "wire" in ports and "reg" in ports and "x.y" in ports
    vectors = _vectors(list(design.inputs))
    assert run_iverilog(out, design, [out / "buses.v", out / "buses_models.v"], vectors) == _expected(design, vectors)


def test_instance_names_follow_part_and_slot():
    design, (b, _) = _built(str(DATA / "c17.blif"), "gates-74")
    nm = verilog_names(b)
    for c in b.cells:
        assert nm.instances[("cell", c.part_ref, c.slot)] == f"{c.part_ref}_{c.slot}"


# -- c17 on nand-only, placed by hand from the published gate list -------------------------------
# source: generic 74HC00 ('00 quad 2-input NAND) family datasheets
QUAD_NAND2 = {"A": (1, 4, 9, 12), "B": (2, 5, 10, 13), "Y": (3, 6, 8, 11)}
QUAD_NAND2_SUPPLY = {"GND": 7, "VCC": 14}

# source: Brglez and Fujiwara, ISCAS 1985 -- c17's gates, in the published order
C17_GATES = [("N10", "N1", "N3"), ("N11", "N3", "N6"), ("N16", "N2", "N11"), ("N19", "N11", "N7"),
             ("N22", "N10", "N16"), ("N23", "N16", "N19")]


def _hand_c17():
    """c17 placed by hand: its six NAND2 gates in order into slots 1-4 of U1 and 1-2 of U2."""
    t = flow.load_target("nand-only")
    b = Build("c17", t, ["N1", "N2", "N3", "N6", "N7"], ["N22", "N23"])
    b.parts = [PartInstance("U1", "74HC00"), PartInstance("U2", "74HC00")]
    for k, (y, a, bb) in enumerate(C17_GATES):
        ref, slot = ("U1", k + 1) if k < 4 else ("U2", k - 3)
        b.cells.append(CellInstance(f"{ref}_{slot}", "nand2", ref, slot, {"A": a, "B": bb, "Y": y}, origin=y))
    b.ties = [Tie("U2", 9, "GND", "input of unused section 3"), Tie("U2", 10, "GND", "input of unused section 3"),
              Tie("U2", 12, "GND", "input of unused section 4"), Tie("U2", 13, "GND", "input of unused section 4")]
    b.support = [SupportInstance("C1", "C-100N", ("VCC", "GND"), "decoupling for U1, close to its supply pins"),
                 SupportInstance("C2", "C-100N", ("VCC", "GND"), "decoupling for U2, close to its supply pins")]
    b.output_nets = {"N22": "N22", "N23": "N23"}
    design = read_design(DATA / "c17.blif")
    # the hand build is proved, not trusted
    return b, analyze_build(b, flow.prove(design, b))


def _pin_table(w, ref):
    return {pu.number: pu for part in w["parts"] if part["ref"] == ref for pu in part["pins"]}


def test_c17_wiring_pin_by_pin_against_the_quad_nand_pinout():
    b, an = _hand_c17()
    w = wiring(b, an)
    for k, (y, a, bb) in enumerate(C17_GATES):
        ref, slot = ("U1", k + 1) if k < 4 else ("U2", k - 3)
        pins = _pin_table(w, ref)
        for pin, net in (("A", a), ("B", bb), ("Y", y)):
            num = QUAD_NAND2[pin][slot - 1]
            assert pins[num].net == net, (ref, slot, pin, num)
            assert pins[num].use == ("output" if pin == "Y" else "input")
    for ref in ("U1", "U2"):
        pins = _pin_table(w, ref)
        assert sorted(pins) == list(range(1, 15))
        for rail, num in QUAD_NAND2_SUPPLY.items():
            assert pins[num].net == rail and pins[num].use == "supply"
    u2 = _pin_table(w, "U2")
    for slot in (3, 4):  # unused: inputs tied, outputs open
        assert u2[QUAD_NAND2["A"][slot - 1]].net == "GND" and u2[QUAD_NAND2["B"][slot - 1]].net == "GND"
        assert u2[QUAD_NAND2["Y"][slot - 1]].use == "open" and u2[QUAD_NAND2["Y"][slot - 1]].net is None
    text = wiring_text(b, an)
    # N16 is gate 3 (U1 slot 3, Y on pin 8) feeding gates 5 and 6 (U2 slot 1 B, pin 2; U2 slot 2 A, pin 4)
    n16 = next(n for n in w["nets"] if n["net"] == "N16")
    assert n16["drivers"] == ["U1-8"] and sorted(n16["loads"]) == sorted(["U2-2", "U2-4"])
    assert "N16" in text and "U1-8" in text


def test_real_c17_build_on_nand_only_matches_the_pinout():
    # whatever the mapper chose, every used slot's pins must sit where the datasheet puts them
    design, (b, a) = _built(str(DATA / "c17.blif"), "nand-only")
    w = wiring(b, a)
    assert b.target.name == "nand-only" and all(p.part_id == "74HC00" for p in b.parts)
    for c in b.cells:
        pins = _pin_table(w, c.part_ref)
        for pin in ("A", "B", "Y"):
            assert pins[QUAD_NAND2[pin][c.slot - 1]].net == c.pins[pin]
    for p in b.parts:
        pins = _pin_table(w, p.ref)
        assert pins[7].net == "GND" and pins[14].net == "VCC"
    # every net of the build appears in the list with exactly the pins Build.nets() gives
    labels = {n["net"]: sorted(n["pins"]) for n in w["nets"]}
    for net, joins in b.nets().items():
        assert labels[net] == sorted(f"{r}-{p}" for r, p in joins), net


def _golden(name: str, text: str):
    from mapper import __version__
    text = text.replace(f"netfit {__version__}", "netfit VERSION")
    path = GOLDEN / name
    if os.environ.get("NETFIT_UPDATE_GOLDEN"):
        path.parent.mkdir(exist_ok=True)
        path.write_text(text)
    assert path.exists(), f"{path} missing: run with NETFIT_UPDATE_GOLDEN=1 once and review it"
    assert text == path.read_text(), f"{name} differs from its golden file (NETFIT_UPDATE_GOLDEN=1 to renew)"


def test_golden_wiring_c17_nand_only():
    _golden("c17_nand-only_wiring.txt", wiring_text(*_hand_c17()))


def test_golden_parts_csv_c17_nand_only():
    _golden("c17_nand-only_parts.csv", parts_csv(_hand_c17()[0]))


# -- parts.csv -----------------------------------------------------------------------------------
@pytest.mark.parametrize("copies", [1, 7])
@pytest.mark.parametrize("target", ["gates-74", "nand-only"])
def test_parts_csv_totals_equal_the_json_summary(tmp_path, target, copies):
    design, r = _built(str(DATA / "textbook" / "full_adder.blif"), target)
    flow.write_build(r, tmp_path, copies=copies)
    summary = json.loads((tmp_path / "full_adder.json").read_text())["summary"]
    rows = list(csv.DictReader(io.StringIO((tmp_path / "parts.csv").read_text())))
    total = rows.pop()
    assert total["part"] == "total"
    sub = {r["part"]: r for r in rows if r["part"].startswith("total ")}
    rows = [r for r in rows if not r["part"].startswith("total")]
    ext = sum(Decimal(r["extended_price"]) for r in rows)
    assert ext == Decimal(total["extended_price"])
    assert Decimal(sub["total logic parts"]["extended_price"]) + Decimal(sub["total support parts"]["extended_price"]) \
        == ext
    # rows sorted by kind (chips before support parts), then by part number
    kinds = [r["kind"] for r in rows]
    assert kinds == sorted(kinds, key=["chip", "relay", "support", "socket"].index)
    assert all(r["package"] for r in rows)
    assert abs(float(ext) - summary["cost"] * copies) < 1e-9
    for r in rows:
        assert Decimal(r["unit_price"]) * int(r["quantity"]) == Decimal(r["extended_price"])
    logic = {r["part"]: int(r["quantity"]) for r in rows if r["kind"] != "support"}
    support = {r["part"]: int(r["quantity"]) for r in rows if r["kind"] == "support"}
    assert logic == {k: v * copies for k, v in summary["parts"].items()}
    assert support == {k: v * copies for k, v in summary["support_parts"].items()}
    assert int(total["quantity"]) == (summary["parts_total"] + sum(summary["support_parts"].values())) * copies
    assert int(sub["total logic parts"]["quantity"]) == summary["parts_total"] * copies
    assert int(total["sections_used"]) == summary["sections_used"] * copies
    assert int(total["sections_available"]) == summary["sections_available"] * copies


# -- the whole -o folder -------------------------------------------------------------------------
def test_build_command_writes_every_file(tmp_path, netfit):
    code, out, err = netfit("build", DATA / "c17.blif", "--target", "gates-74", "--effort", "0",
                            "-o", tmp_path, "--qty", "2")
    assert code == 0, err
    names = sorted(p.name for p in tmp_path.iterdir())
    assert names == sorted(["c17.v", "c17_models.v", "c17.blif", "c17.json", "parts.csv", "wiring.txt",
                            "schematic.svg", "board.svg", "report.html"])
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".")]  # no temporary files left
    # the BLIF of the build reads back and is proved equal to the design
    back = read_design(tmp_path / "c17.blif")
    assert check_equivalence(read_design(DATA / "c17.blif"), back).equivalent
    data = json.loads((tmp_path / "c17.json").read_text())
    assert data["format"] == "netfit-build" and data["summary"]["verified"] == "proved"
    assert {c["instance"] for c in data["cells"]} == {f"{c['part']}_{c['section']}" for c in data["cells"]}
    rows = list(csv.DictReader(io.StringIO((tmp_path / "parts.csv").read_text())))
    assert int(rows[-1]["quantity"]) == 2 * (data["summary"]["parts_total"]
                                             + sum(data["summary"]["support_parts"].values()))


def test_build_refuses_to_overwrite_its_input(tmp_path, netfit):
    src = tmp_path / "c17.blif"
    src.write_text((DATA / "c17.blif").read_text())
    code, out, err = netfit("build", src, "--target", "gates-74", "--effort", "0", "-o", tmp_path)
    assert code == 2 and "refusing to overwrite" in err
    assert src.read_text() == (DATA / "c17.blif").read_text()


def test_a_pin_on_two_nets_is_refused_as_a_bug():
    b, a = _hand_c17()
    b.ties.append(Tie("U1", 1, "GND", "a wrong tie"))  # pin 1 carries N1
    from mapper.errors import InternalError
    with pytest.raises(InternalError, match="U1-1"):
        wiring(b, a)


# -- parts command -------------------------------------------------------------------------------
def test_parts_command_table_json_csv(netfit):
    code, out, err = netfit("parts", DATA / "c17.blif", "--target", "gates-74", "--effort", "0", "--qty", "3",
                            "--json", as_json=True)
    assert code == 0, err
    assert out["copies"] == 3 and out["total"]["part"] == "total"
    code, text, _ = netfit("parts", DATA / "c17.blif", "--target", "gates-74", "--effort", "0", "--csv")
    rows = list(csv.DictReader(io.StringIO(text)))
    assert rows[-1]["part"] == "total"
    code, table, _ = netfit("parts", DATA / "c17.blif", "--target", "gates-74", "--effort", "0")
    assert code == 0 and "C-100N" in table and "total" in table
    with pytest.raises(SystemExit) as exc:  # argparse refuses 0 copies: usage error, exit 2
        netfit("parts", DATA / "c17.blif", "--target", "gates-74", "--qty", "0")
    assert exc.value.code == 2


# -- relay terminals in the wiring list ----------------------------------------------------------
@pytest.mark.parametrize("target", ["relay-spdt", "relay-dpdt"])
def test_relay_wiring_names_coil_and_contact_terminals(target):
    # every used pole's common, normally-open and normally-closed terminal, and every coil, appear under
    # the net the build puts them on, written K<n>-COM<p> / -NO<p> / -NC<p> / -COIL+ / -COIL-; the
    # package pin beside each comes from the catalog's pinout
    design, (b, a) = _built(str(DATA / "textbook" / "full_adder.blif"), target)
    w = wiring(b, a)
    on_net = {n["net"]: set(n["pins"]) for n in w["nets"]}
    assert b.contacts and b.coils
    for k in b.contacts:
        for term, net in (("COM", k.com), ("NO", k.no), ("NC", k.nc)):
            label = f"{k.part_ref}-{term}{k.pole}"
            if net is None:
                assert label in {pu.label for pu in w["open"]}, label
            else:
                assert label in on_net[net], (label, net)
    for ref, net in b.coils.items():
        assert f"{ref}-COIL+" in on_net[net] and f"{ref}-COIL-" in on_net["GND"]
    for part in w["parts"]:
        if part["kind"] != "relay":
            continue
        pd = b.target.parts[part["part"]]
        names = pd.pin_names()
        for pu in part["pins"]:
            assert names[pu.number] == pu.name or pu.use == "nc", (part["ref"], pu.number, pu.name)
        assert sorted(pu.number for pu in part["pins"]) == list(range(1, pd.pin_count + 1))
    # and the wiring agrees with Build.nets() net by net
    for net, joins in b.nets().items():
        assert sorted(on_net[net]) == sorted(f"{r}-{p}" for r, p in joins), net
    text = wiring_text(b, a)
    assert "-COIL+" in text and "-COM1" in text


PASS_THROUGH = """\
# outputs that are a copy of another output, and a constant (our own test input); an output that is
# also an input is refused for Verilog (tests/write/test_verilog_ports.py)
.model edge
.inputs a b
.outputs y z w k
.names a b y
11 1
.names a b z
11 1
.names w
1
.names a k
1 1
.end
"""


@needs_iverilog
@pytest.mark.parametrize("target", ["relay-spdt", "nand-only", "gates-74"])
def test_outputs_passed_through_copied_and_constant(tmp_path, target):
    # a module named after a Verilog keyword, outputs carried by other nets and by VCC; simulated by
    # Icarus Verilog against the design
    src = tmp_path / "edge.blif"
    src.write_text(PASS_THROUGH)
    design = read_design(src)
    r = flow.fit(design, flow.load_target(target), effort=0)
    _check_exported(tmp_path / "out", src, target, design, r)
    text = (tmp_path / "out" / "wiring.txt").read_text()
    assert "output w" in text


# -- netfit convert DESIGN OUT.v ---------------------------------------------------------------
@needs_iverilog
@pytest.mark.parametrize("source", [DATA / "c17.blif"] + TEXTBOOK + ["rca", "arr", "gte", "latch"],
                         ids=lambda p: getattr(p, "stem", p))
def test_convert_to_verilog_simulates_equal_and_reads_back(tmp_path, netfit, source):
    # a design (not a build) written as Verilog: Icarus Verilog simulates it equal to the design,
    # pyslang elaborates it, and netfit's own reader reads it back as a design proved equal
    if source == "latch":
        source = tmp_path / "cnt.blif"
        source.write_text(COUNTER)
    elif isinstance(source, str):
        source = make(source, 4 if source != "arr" else 3, tmp_path)
    out = tmp_path / "out.v"
    code, _, err = netfit("convert", source, out)
    assert code == 0, err
    design = read_design(source)
    _simulate_against_design(tmp_path, design, [out])
    assert check_equivalence(design, read_design(out)).equivalent
