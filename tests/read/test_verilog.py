"""Tests of the structural Verilog reader (mapper/read/verilog.py).

Outside sources used here, named beside each check:
* textbook definitions of the half and full adder, 2:1 and 4:1 multiplexers,
  the 4-bit ripple-carry adder, the SR latch, the D latch and the D flip-flop
  with synchronous reset (common practice), written in the test corpus in
  several styles (primitives, assigns, instances);
* circuits written by the ariths-gen generator library (flat and
  hierarchical Verilog of adders and multipliers), checked against Python's
  integer arithmetic and proven equal to the BLIF the same library writes;
* pyslang, a Verilog/SystemVerilog front end (since issue 12 also the
  reader's own: it preprocesses, parses and elaborates, netfit lowers the
  result to gates): it must accept every valid file of the corpus, and its
  constant evaluation gives the value of random vector expressions (IEEE
  1364-2005 width rules) that netfit's gates must reproduce;
* Icarus Verilog (iverilog/vvp), a simulator that shares no code with the
  reader: it runs every file whose construct pyslang made readable (case,
  for loops, generate, functions, macros with arguments) and the width cases
  on the same inputs as netfit's simulator;
* IEEE 1364-2005 for the meaning of constructs (sections named beside checks).
"""
from __future__ import annotations

import random
import re
import subprocess
import sys
from pathlib import Path

import pyslang
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import generated
from mapper.errors import InputError, NetlistError
from mapper.netlist import Storage
from mapper.read import read_design
from mapper.read.verilog import VerilogError, read, read_text
from mapper.simulate import run_cycles, simulate

HERE = Path(__file__).parent / "verilog"
VALID = HERE / "valid"
INVALID = HERE / "invalid"
LOOPS = {"sr_latch_nor.v"}  # valid Verilog that the netlist check refuses



# -- helpers -----------------------------------------------------------------
def exhaustive(names):
    """Words enumerating every assignment of ``names``: pattern k is binary k."""
    n = len(names)
    words = {}
    for j, name in enumerate(names):
        w = 0
        for k in range(1 << n):
            if (k >> j) & 1:
                w |= 1 << k
        words[name] = w
    return words, (1 << (1 << n)) - 1


def bit(word, k):
    return (word >> k) & 1


def bus(values, name, width, k, indices=None):
    """Integer value of bus ``name`` in pattern ``k`` (bit i is net name[i])."""
    idx = indices if indices is not None else range(width)
    return sum(bit(values[f"{name}[{i}]"], k) << p for p, i in enumerate(idx))


def words_for(assign: list[dict], names):
    """Words from a list of per-pattern {name: 0/1} dicts."""
    words = {n: 0 for n in names}
    for k, a in enumerate(assign):
        for n in names:
            if a[n]:
                words[n] |= 1 << k
    return words, (1 << len(assign)) - 1


def slang_errors(path) -> list[str]:
    """pyslang's errors for a file (an independent front end's opinion)."""
    tree = pyslang.syntax.SyntaxTree.fromFile(str(path))
    comp = pyslang.ast.Compilation()
    comp.addSyntaxTree(tree)
    return [str(d.code) for d in comp.getAllDiagnostics() if d.isError()]


def _expect(path):
    first = path.read_text().splitlines()[0]
    m = re.match(r"// expect: (\d+):(\d+): (.+)$", first)
    assert m, f"{path.name}: first line must be '// expect: LINE:COL: message'"
    return int(m[1]), int(m[2]), m[3]


# -- the invalid corpus ------------------------------------------------------
INVALID_FILES = sorted(list(INVALID.glob("*.v")) + list(INVALID.glob("*.sv")))


def test_invalid_corpus_is_big_enough():
    assert len(INVALID_FILES) >= 20


@pytest.mark.parametrize("path", INVALID_FILES, ids=lambda p: p.name)
def test_invalid_file(path, netfit):
    # Each file states the position and message it must produce (first line).
    line, col, msg = _expect(path)
    with pytest.raises(InputError) as exc:
        read_design(path)
    first = exc.value.first
    assert (first.file, first.line, first.col) == (str(path), line, col), str(exc.value)
    assert msg in first.message, str(exc.value)
    code, _, err = netfit("inspect", path)
    assert code == 2
    assert err.startswith(f"{path}:{line}:{col}: error: ")
    assert "Traceback" not in err and "internal error" not in err


@pytest.mark.parametrize("name", ["integer_port.v", "integer_port_instance.v"])
def test_refused_files_that_are_legal_verilog(tmp_path, name):
    # These files are legal Verilog (IEEE 1364-2005 12.3.3, from memory: an output port may be
    # declared 'integer'), so their refusal is netfit's subset, not a fault in the text.
    # source: pyslang, an independent front end, finds no error; Icarus Verilog compiles them.
    path = INVALID / name
    assert slang_errors(path) == []
    r = subprocess.run(["iverilog", "-g2005", "-o", str(tmp_path / "x.vvp"), str(path)],
                       capture_output=True, text=True, timeout=120, check=False)
    assert r.returncode == 0, r.stderr


def test_bad_input_gives_no_traceback_in_a_real_process(tmp_path):
    # The installed command as a user runs it: position, exit 2, no traceback.
    path = INVALID / "multiply.v"
    line, col, msg = _expect(path)
    res = subprocess.run([sys.executable, "-m", "mapper", "inspect", str(path)],
                         capture_output=True, text=True, timeout=120, check=False)
    assert res.returncode == 2
    assert res.stderr.startswith(f"{path}:{line}:{col}: error: {msg}")
    assert "Traceback" not in res.stderr


def test_several_errors_are_collected():
    # an initial block that does more than set starting values, integer, and an event list
    # mixing an edge and a level: all three reported in one run.
    with pytest.raises(VerilogError) as exc:
        read(INVALID / "several_errors.v")
    where = [(d.line, d.col) for d in exc.value.diagnostics]
    assert where == [(3, 3), (4, 3), (5, 25)]
    assert all("outside the structural subset" in d.message for d in exc.value.diagnostics)


# -- the valid corpus ----------------------------------------------------------
VALID_FILES = sorted(list(VALID.glob("*.v")) + list(VALID.glob("*.sv")))


@pytest.mark.parametrize("path", VALID_FILES, ids=lambda p: p.name)
def test_valid_file_is_accepted_by_pyslang_and_read(path):
    # source: pyslang, an independent front end, finds no error in the file
    assert slang_errors(path) == []
    n = read(path)
    assert n.inputs and n.outputs
    if path.name not in LOOPS:
        read_design(path)  # and the netlist check passes


def _sim(name):
    n = read_design(VALID / name)
    words, mask = exhaustive(n.inputs)
    return n, simulate(n, words, mask), mask.bit_length()


@pytest.mark.parametrize("name", ["half_adder_prims.v", "half_adder_assign.v"])
def test_half_adder(name):
    # textbook: sum = a XOR b, carry = a AND b (common practice)
    n, v, P = _sim(name)
    assert n.inputs == ["a", "b"] and n.outputs == ["s", "c"]
    for k in range(P):
        a, b = bit(k, 0), bit(k, 1)
        assert bit(v["s"], k) == a ^ b
        assert bit(v["c"], k) == a & b


@pytest.mark.parametrize("name", ["full_adder_prims.v", "full_adder_assign.v", "full_adder_inst.v"])
def test_full_adder(name):
    # textbook: {cout, s} = a + b + cin (common practice)
    n, v, P = _sim(name)
    assert n.inputs == ["a", "b", "cin"] and n.outputs == ["s", "cout"]
    for k in range(P):
        total = bit(k, 0) + bit(k, 1) + bit(k, 2)
        assert bit(v["s"], k) == total & 1
        assert bit(v["cout"], k) == total >> 1


@pytest.mark.parametrize("name", ["mux2_prims.v", "mux2_assign.v"])
def test_mux2(name):
    # textbook: y = d0 when s = 0, d1 when s = 1 (common practice)
    n, v, P = _sim(name)
    for k in range(P):
        x = {i: bit(k, j) for j, i in enumerate(n.inputs)}
        assert bit(v["y"], k) == (x["d1"] if x["s"] else x["d0"])


@pytest.mark.parametrize("name", ["mux4_assign.v", "mux4_sop.v", "mux4_inst.v"])
def test_mux4(name):
    # textbook: y = d[s] (common practice)
    n, v, P = _sim(name)
    assert n.inputs == ["d[0]", "d[1]", "d[2]", "d[3]", "s[0]", "s[1]"]
    for k in range(P):
        d, s = k & 15, k >> 4
        assert bit(v["y"], k) == (d >> s) & 1


@pytest.mark.parametrize("name", ["ripple4_inst.v", "ripple4_assign.v", "ripple4_ascending.v"])
def test_ripple4(name):
    # textbook: a 4-bit adder gives {cout, sum} = a + b + cin for all 512 inputs (common practice)
    n, v, P = _sim(name)
    asc = name == "ripple4_ascending.v"
    idx = [3, 2, 1, 0] if asc else [0, 1, 2, 3]  # [0:3]: bit 3 is the least significant (IEEE 1364-2005 4.2.1)
    ins = n.inputs
    assert set(ins) == {f"a[{i}]" for i in range(4)} | {f"b[{i}]" for i in range(4)} | {"cin"}
    for k in range(P):
        x = {name_: bit(k, j) for j, name_ in enumerate(ins)}
        a = sum(x[f"a[{i}]"] << p for p, i in enumerate(idx))
        b = sum(x[f"b[{i}]"] << p for p, i in enumerate(idx))
        total = a + b + x["cin"]
        assert bus(v, "sum", 4, k, idx) == total & 15
        assert bit(v["cout"], k) == total >> 4


def test_sr_latch_from_nors_is_refused_as_a_loop():
    # textbook: the SR latch is two cross-coupled NORs, i.e. a combinational loop (common
    # practice); the Verilog reader alone reads it as such and the netlist check names both nets
    # (read_design then cuts the loop into storage: tests/logic/test_feedback.py).
    n = read(VALID / "sr_latch_nor.v")
    assert n.storage() == {}
    with pytest.raises(NetlistError) as exc:
        n.check()
    d = exc.value.first
    assert "combinational loop" in d.message and "q, qn" in d.message
    assert (d.file, d.line) == (str(VALID / "sr_latch_nor.v"), 3)


def _latch_reference(seq, init=0, low=False):
    """textbook D latch (common practice): q follows d while enabled, else holds."""
    q = init
    out = []
    for en, d in seq:
        out.append(q)
        if en != low:
            q = d
    return out


def test_flip_flop_with_preset_and_clear_tied_off_reads_as_a_plain_flip_flop():
    # a D flip-flop section with active-low preset and clear held high follows D on the rising
    # clock edge (function table of the dual D flip-flop chips, common practice); 'initial' gives
    # its starting value, as netfit's own models write it
    n = read_design(VALID / "dff_tied_clear.v")
    (q,) = n.storage().values()
    assert (q.kind, q.init) == ("re", 1)
    rng = random.Random(3)
    ds = [rng.getrandbits(1) for _ in range(30)]
    outs = run_cycles(n, [{"clk": 0, "d": d} for d in ds], 1)
    assert [o["q"] for o in outs] == [1] + ds[:-1]  # each cycle shows the value taken at the last edge


def test_case_equality_on_two_valued_nets_is_equality():
    # IEEE 1364-2005, 5.1.8: '===' differs from '==' only on x and z bits, which netfit's nets never carry
    n, v, P = _sim("case_equality.v")
    for k in range(P):
        assert bit(v["y"], k) == int(bit(k, 0) == bit(k, 1))
        assert bit(v["n"], k) == int(bit(k, 0) != 1)


def test_wor_net_is_the_or_of_its_drivers():
    # a 'wor' net is the OR of everything driving it (IEEE 1364-2005, 6.6.3); here two relay
    # contacts in parallel: lamp = a AND b, OR c
    n, v, P = _sim("wired_or.v")
    for k in range(P):
        assert bit(v["lamp"], k) == (bit(k, 0) & bit(k, 1)) | bit(k, 2)


@pytest.mark.parametrize("name,kind", [("d_latch_star.v", "ah"), ("d_latch_paren_star.v", "ah"),
                                       ("d_latch_list.v", "ah"), ("d_latch_low.v", "al")])
def test_d_latch(name, kind):
    n = read_design(VALID / name)
    st_ = n.storage()
    assert list(st_) == ["q"]
    q = st_["q"]
    assert (q.kind, q.control, q.d, q.init) == (kind, "en", "d", 3)  # no initial value: unknown (3)
    rng = random.Random(7)
    seq = [(rng.getrandbits(1), rng.getrandbits(1)) for _ in range(40)]
    outs = run_cycles(n, [{"en": e, "d": d} for e, d in seq], 1)
    assert [o["q"] for o in outs] == _latch_reference(seq, 0, low=kind == "al")


def test_dff_with_synchronous_reset():
    # textbook: on each rising clock edge q <= 0 when rst, else d (common practice)
    n = read_design(VALID / "dff_sync_reset.v")
    q = n.storage()["q"]
    assert (q.kind, q.control, q.init) == ("re", "clk", 3)
    assert n.clocks == ["clk"]
    # the reset is folded into the data logic: exhaustive check of the next state
    words, mask = exhaustive(["rst", "d"])
    v = simulate(n, words, mask)
    for k in range(4):
        rst, d = bit(k, 0), bit(k, 1)
        assert bit(v[q.d], k) == (0 if rst else d)
    rng = random.Random(3)
    seq = [(rng.getrandbits(1), rng.getrandbits(1)) for _ in range(50)]
    outs = run_cycles(n, [{"clk": 0, "rst": r, "d": d} for r, d in seq], 1)
    state, expect = 0, []
    for r, d in seq:
        expect.append(state)
        state = 0 if r else d
    assert [o["q"] for o in outs] == expect


def test_vector_register_with_enable_load_and_initial_value():
    n = read_design(VALID / "dff_vector_negedge.v")
    st_ = n.storage()
    assert sorted(st_) == [f"q[{i}]" for i in range(4)]
    assert {s.kind for s in st_.values()} == {"fe"}
    assert [st_[f"q[{i}]"].init for i in range(4)] == [1, 0, 1, 0]  # 4'b0101, bit 0 first
    rng = random.Random(11)
    seq = [{"clk": 0, "en": rng.getrandbits(1), "load": rng.getrandbits(1),
            **{f"d[{i}]": rng.getrandbits(1) for i in range(4)}} for _ in range(60)]
    outs = run_cycles(n, seq, 1)
    # IEEE 1364-2005 9.2.2: the last non-blocking assignment to a bit in a block wins
    q, expect = 0b0101, []
    for c in seq:
        expect.append(q)
        nxt = q
        if c["en"]:
            nxt = sum(c[f"d[{i}]"] << i for i in range(4))
        if c["load"]:
            nxt |= 1
        q = nxt
    assert [sum(o[f"q[{i}]"] << i for i in range(4)) for o in outs] == expect


def test_counter_counts():
    # a 2-bit counter: 0, 1, 2, 3, 0 ... after a reset (common practice)
    n = read_design(VALID / "counter2.v")
    seq = [{"clk": 0, "rst": 1}] + [{"clk": 0, "rst": 0}] * 9
    outs = run_cycles(n, seq, 1, unknown="random", seed=5)
    assert [o["n[0]"] + 2 * o["n[1]"] for o in outs[1:]] == [0, 1, 2, 3, 0, 1, 2, 3, 0]


def test_nested_latch_and_complete_level_block():
    n = read_design(VALID / "latch_nested.v")
    st_ = n.storage()
    assert list(st_) == ["q"] and st_["q"].kind == "ah"
    assert "m" not in st_  # assigned on every path: plain logic
    rng = random.Random(5)
    seq = [{k: rng.getrandbits(1) for k in "abde"} for _ in range(80)]
    outs = run_cycles(n, seq, 1)
    q, expect_q = 0, []
    for c in seq:
        expect_q.append(q)
        if c["a"] and c["b"]:
            q = c["d"]
        elif not c["a"]:
            q = c["e"]
    assert [o["q"] for o in outs] == expect_q
    assert [o["m"] for o in outs] == [c["d"] if c["a"] else c["e"] for c in seq]


def test_directives_macros_and_conditionals():
    n, v, P = _sim("directives.v")
    assert n.inputs == [f"a[{i}]" for i in range(4)]
    for k in range(P):
        assert bit(v["y"], k) == int(k == 15)  # reduction AND
        assert bit(v["z"], k) == int(k != 0)  # the `ifdef branch taken: reduction OR


def test_parameters_and_overrides():
    _, v, P = _sim("params.v")
    for k in range(0, P, 7):
        assert bus(v, "y", 8, k) == (~k) & 255


def test_netlist_style_escaped_names_supplies_and_delays():
    n, v, P = _sim("netlist_style.v")
    assert n.inputs == ["in.a", "in.b"]
    assert n.outputs == ["out0", "out1", "out2"]
    for k in range(P):
        a, b = bit(k, 0), bit(k, 1)
        assert bit(v["out0"], k) == (a & 1) ^ b
        assert bit(v["out1"], k) == a and bit(v["out2"], k) == a
    assert any("delays are ignored" in w.message for w in n.warnings)


def test_hierarchy_is_flattened_with_instance_paths():
    n, v, P = _sim("hier_deep.v")
    for k in range(P):
        assert bit(v["y1"], k) == bit(k, 0) and bit(v["y2"], k) == bit(k, 0)
    inner = [x for x in n.nodes if "/" in x]
    assert inner and all(x.split("/")[0] in ("m1", "m2") for x in inner)
    assert "m1/t" in n.nodes or "m2/t" in n.nodes


def test_port_connections_with_expressions_and_concatenations():
    # IEEE 1364-2005 12.3.9: a port connection acts as a continuous assignment (input: port =
    # expression; output: expression = port), concatenations joining bits most significant first
    n, v, P = _sim("port_expressions.v")
    for k in range(P):
        x = {nm: bit(k, j) for j, nm in enumerate(n.inputs)}
        a, b = x["a"], x["b"]
        vv = [x[f"v[{i}]"] for i in range(4)]
        inv = a ^ b
        want = {"y[1]": a, "y[0]": b, "z": a | b,
                "w[3]": (vv[2] & vv[0]) ^ inv, "w[2]": (vv[3] & vv[1]) ^ inv,
                "w[1]": 1 - vv[0], "w[0]": 1 - vv[1]}
        for o, val in want.items():
            assert bit(v[o], k) == val, (o, x)


def test_choosing_the_top(netfit):
    path = INVALID / "several_tops.v"
    n = read(path, top="second")
    assert n.name == "second"
    code, out, _ = netfit("inspect", path, "--top", "first", "--json", as_json=True)
    assert code == 0 and out["design"] == "first"
    with pytest.raises(VerilogError) as exc:
        read(path, top="third")
    assert "no module named 'third'" in exc.value.first.message


def test_include_inside_and_outside_the_folder(tmp_path):
    (tmp_path / "d").mkdir()
    (tmp_path / "defs.vh").write_text("initial y = 1'b0;\n")
    (tmp_path / "d" / "gates.vh").write_text("module inv1(input a, output y);\n  not (y, a);\nendmodule\n")
    main = tmp_path / "d" / "main.v"
    main.write_text('`include "gates.vh"\nmodule main(input a, output y);\n  inv1 u (.a(a), .y(y));\nendmodule\n')
    n = read_design(main)
    assert n.name == "main" and n.outputs == ["y"]
    out = tmp_path / "d" / "out.v"
    out.write_text('`include "../defs.vh"\nmodule m(input a, output y); assign y = a; endmodule\n')
    with pytest.raises(VerilogError) as exc:
        read(out)
    assert "outside the design's folder" in exc.value.first.message
    # allowed, the included file is read (and its 'initial' outside a module refused, in that file)
    with pytest.raises(VerilogError) as exc:
        read(out, allow_outside=True)
    assert exc.value.first.file.endswith("defs.vh") and exc.value.first.line == 1


def test_include_of_a_device_is_refused_even_when_outside_is_allowed():
    # /dev/zero never ends: the reader checks every file before anything reads it
    path = INVALID / "include_device.v"
    with pytest.raises(VerilogError) as exc:
        read(path, allow_outside=True)
    d = exc.value.first
    assert (d.line, d.col, d.message) == (2, 1, '`include "/dev/zero" is not a regular file')


def test_include_counts_only_where_the_preprocessor_takes_it(tmp_path):
    # IEEE 1364-2005 19.4: text in a branch `ifdef leaves out is not compiled, so an include
    # there (outside the folder) is no error; one the preprocessor takes and cannot find is
    (tmp_path / "d").mkdir()
    (tmp_path / "x.vh").write_text("module x; endmodule\n")
    main = tmp_path / "d" / "m.v"
    body = "module m(input a, output y);\n  assign y = a;\nendmodule\n"
    main.write_text('`ifdef NEVER\n`include "../x.vh"\n`endif\n' + body)
    assert read(main).outputs == ["y"]
    main.write_text('`include "nothere.vh"\n' + body)
    with pytest.raises(VerilogError) as exc:
        read(main)
    d = exc.value.first
    assert (d.line, d.col, d.message) == (1, 1, '`include "nothere.vh" cannot be found')


def test_deep_text_does_not_exhaust_the_stack(tmp_path):
    # 3000-term operator chains and a 3000-level else-chain of ?: (parsed in loops, lowered
    # iteratively), and a 3000-gate inverter chain: no recursion over depth.
    N = 3000
    terms = " & ".join(f"a[{i % 8}]" for i in range(N))
    chain = " : ".join(f"a[{i % 8}] ? a[{(i + 1) % 8}]" for i in range(N)) + " : 1'b0"
    invs = "\n".join(f"  not (w{i + 1}, w{i});" for i in range(N))
    text = (f"module deep(input [7:0] a, output y, output z, output w);\n  assign y = {terms};\n"
            f"  assign z = {chain};\n  wire w0 = a[0];\n{invs}\n  assign w = w{N};\nendmodule\n")
    p = tmp_path / "deep.v"
    p.write_text(text)
    n = read_design(p)
    words, mask = exhaustive(n.inputs)
    v = simulate(n, words, mask)
    assert v["y"] == words["a[0]"] & words["a[1]"] & words["a[2]"] & words["a[3]"] \
        & words["a[4]"] & words["a[5]"] & words["a[6]"] & words["a[7]"]
    for k in range(mask.bit_length()):
        a = [bit(words[f"a[{i}]"], k) for i in range(8)]
        first = next((i for i in range(N) if a[i % 8]), None)  # the first condition that holds
        assert bit(v["z"], k) == (0 if first is None else a[(first + 1) % 8])
    assert v["w"] == words["a[0]"]  # an even number of inversions
    assert n.depth() >= N
    # nesting in parentheses is limited (pyslang's parser runs on a stack of its own), with a
    # message instead of a crash
    p2 = tmp_path / "parens.v"
    p2.write_text("module p(input a, output y);\n  assign y = " + "(" * 5000 + "a" + ")" * 5000 + ";\nendmodule\n")
    with pytest.raises(VerilogError) as exc:
        read(p2)
    assert "nested more than" in exc.value.first.message


_SNIPPETS = [";", ",", "(", ")", "[", "]", "{", "}", "begin", "end", "if", "else", "always", "@", "*",
             "posedge", "module", "endmodule", "assign", "=", "<=", "wire", "reg", "input", "output", "1'b1",
             "4'hx", "a", "q", "`define X 1\n", "`ifdef X\n", "`endif\n", "#1", ".", "?", ":", "~",
             "parameter", "#(", "'", '"', "/*", "//", "\\", "3", "-1", "[-1:0]", "[3:0]", "0", "**", "<<",
             "{2{", "$x", "initial", "u1 (", ".a(", "not", "nand",
             # what netfit reads since pyslang is its front end
             "case (a)", "endcase", "casez", "casex", "default:", "for (i = 0; i < 4; i = i + 1)", "integer i;",
             "function f; input x; f = x; endfunction", "f(a)", "generate", "endgenerate", "genvar g;",
             "for (g = 0; g < 2; g = g + 1) begin : gg", "2'b1?", "`define M(x) x\n", "`M(a)"]


@pytest.mark.parametrize("seed", range(3))
def test_mutated_files_never_crash_the_reader(seed):
    # Random cuts, insertions and copies in corpus files: the reader either reads the text or
    # raises an input error with positions; never another exception (which would be exit 3).
    texts = [p.read_text() for p in VALID_FILES + INVALID_FILES]
    rng = random.Random(seed)
    for _ in range(120):
        text = rng.choice(texts)
        for _ in range(rng.randint(1, 4)):
            pos = rng.randrange(len(text) + 1)
            r = rng.random()
            if r < 0.3:
                text = text[:pos] + text[pos + rng.randint(1, 10):]
            elif r < 0.8:
                text = text[:pos] + " " + rng.choice(_SNIPPETS) + " " + text[pos:]
            else:
                a, b = sorted((rng.randrange(len(text) + 1), rng.randrange(len(text) + 1)))
                text = text[:pos] + text[a:b] + text[pos:]
        try:
            read_text(text, "mutant.v").check()
        except InputError as exc:
            assert exc.diagnostics
            assert all(d.file for d in exc.diagnostics)


# -- storage inference against a direct interpretation of the block ----------------
def _random_block(rng, depth, clocked):
    """A random statement tree: ('block', [..]) | ('if', cond, then, else) | ('set', bit, rhs)."""
    if depth == 0 or rng.random() < 0.35:
        bit_ = rng.randrange(4)
        ops = [("in", f"d{rng.randrange(4)}"), ("not", f"d{rng.randrange(4)}"), ("const", rng.getrandbits(1)),
               ("xor", f"d{rng.randrange(4)}", f"c{rng.randrange(3)}")]
        if clocked:  # a clocked block may read the register's old value
            ops.append(("q", rng.randrange(4)))
        return ("set", bit_, rng.choice(ops))
    if rng.random() < 0.5:
        cond = rng.choice([("c", rng.randrange(3)), ("!c", rng.randrange(3)),
                           ("and", rng.randrange(3), rng.randrange(3))])
        other = _random_block(rng, depth - 1, clocked) if rng.random() < 0.6 else None
        return ("if", cond, _random_block(rng, depth - 1, clocked), other)
    return ("block", [_random_block(rng, depth - 1, clocked) for _ in range(rng.randint(1, 3))])


def _render(st, arrow, indent="    "):
    kind = st[0]
    if kind == "set":
        rhs = st[2]
        text = {"in": lambda: rhs[1], "not": lambda: f"~{rhs[1]}", "const": lambda: f"1'b{rhs[1]}",
                "xor": lambda: f"{rhs[1]} ^ {rhs[2]}", "q": lambda: f"q[{rhs[1]}]"}[rhs[0]]()
        return f"{indent}q[{st[1]}] {arrow} {text};\n"
    if kind == "if":
        c = st[1]
        cond = {"c": f"c{c[1]}", "!c": f"!c{c[1]}", "and": f"c{c[1]} & c{c[-1]}"}[c[0]]
        then = st[2]
        if st[3] is not None and then[0] == "if":
            then = ("block", [then])  # an else binds to the nearest if (IEEE 1364-2005 9.4)
        out = f"{indent}if ({cond})\n{_render(then, arrow, indent + '  ')}"
        if st[3] is not None:
            out += f"{indent}else\n{_render(st[3], arrow, indent + '  ')}"
        return out
    return f"{indent}begin\n" + "".join(_render(s, arrow, indent + "  ") for s in st[1]) + f"{indent}end\n"


def _interpret(st, env, old, ins):
    """IEEE 1364-2005 9.4 and 9.2.2: if/else picks a branch, a later assignment to a bit
    wins, a bit no path assigns keeps its value; right sides read the old register."""
    kind = st[0]
    if kind == "set":
        rhs = st[2]
        v = {"in": lambda: ins[rhs[1]], "not": lambda: 1 - ins[rhs[1]], "const": lambda: rhs[1],
             "xor": lambda: ins[rhs[1]] ^ ins[rhs[2]], "q": lambda: old[rhs[1]]}[rhs[0]]()
        env[st[1]] = v
    elif kind == "if":
        c = st[1]
        cond = {"c": lambda: ins[f"c{c[1]}"], "!c": lambda: 1 - ins[f"c{c[1]}"],
                "and": lambda: ins[f"c{c[1]}"] & ins[f"c{c[-1]}"]}[c[0]]()
        if cond:
            _interpret(st[2], env, old, ins)
        elif st[3] is not None:
            _interpret(st[3], env, old, ins)
    else:
        for s in st[1]:
            _interpret(s, env, old, ins)


@pytest.mark.parametrize("clocked", [True, False], ids=["clocked", "latch"])
@pytest.mark.parametrize("seed", range(40))
def test_random_always_blocks_match_an_interpreter(seed, clocked):
    rng = random.Random(seed * 2 + clocked)
    body = _random_block(rng, 4, clocked)
    assigned = set()
    stack = [body]
    while stack:
        st_ = stack.pop()
        if st_[0] == "set":
            assigned.add(st_[1])
        elif st_[0] == "if":
            stack.extend(x for x in st_[2:] if x is not None)
        else:
            stack.extend(st_[1])
    # every bit of q must be assigned somewhere, or the output has no driver at all
    body = ("block", [("set", i, ("in", "d0")) for i in range(4) if i not in assigned] + [body])
    head = "always @(posedge clk)" if clocked else "always @*"
    text = ("module blk(input clk, input c0, c1, c2, input d0, d1, d2, d3, output reg [3:0] q);\n"
            f"  {head}\n{_render(body, '<=' if clocked else '=')}endmodule\n")
    n = read_text(text, "blk.v")
    n.check()
    ins_names = ["c0", "c1", "c2", "d0", "d1", "d2", "d3"]
    seq = [{k: rng.getrandbits(1) for k in ins_names} for _ in range(60)]
    for c in seq:
        c["clk"] = 0
    outs = run_cycles(n, seq, 1)
    # in a level-sensitive block a bit assigned on every path is plain logic (IEEE 1364-2005
    # 9.2.1: it always takes the new value); the others are latches, seen through the
    # simulator's cycle semantics: the output shows the value before this cycle's update
    comb = set() if clocked else _assigned_for_every_input(body, ins_names)
    st_names = set(n.storage())
    assert st_names == {f"q[{i}]" for i in range(4) if i not in comb}
    q = [0, 0, 0, 0]
    for k, c in enumerate(seq):
        env = dict(enumerate(q))
        _interpret(body, env, list(q), c)
        for i in range(4):
            want = env[i] if i in comb else q[i]
            assert outs[k][f"q[{i}]"] == want, (k, i, text)
        q = [env[i] for i in range(4)]


def _assigned_for_every_input(body, names):
    """Bits the block assigns whatever the inputs (tried exhaustively)."""
    out = {0, 1, 2, 3}
    for m in range(1 << len(names)):
        ins = {nm: (m >> j) & 1 for j, nm in enumerate(names)}
        env: dict = {}
        _interpret(body, env, [0] * 4, ins)
        out &= set(env)
    return out


# -- expression semantics against pyslang's constant evaluation -------------------
OPERANDS = {"a": 8, "b": 4, "c": 1}


def _slang_eval(samples, expr, width):
    """Value of ``expr`` for each sample of (a, b, c[, d]), by pyslang's constant evaluation."""
    mods = []
    for i, smp in enumerate(samples):
        a, b, c = smp[:3]
        d = smp[3] if len(smp) > 3 else 0
        mods.append(f"module s{i};\n  localparam [7:0] a = 8'd{a};\n  localparam [3:0] b = 4'd{b};\n"
                    f"  localparam [0:0] c = 1'd{c};\n  localparam [0:5] d = 6'd{d};\n"
                    f"  localparam [{width - 1}:0] y = {expr};\nendmodule\n")
    tree = pyslang.syntax.SyntaxTree.fromText("".join(mods))
    comp = pyslang.ast.Compilation()
    comp.addSyntaxTree(tree)
    errors = [str(d.code) for d in comp.getAllDiagnostics() if d.isError()]
    assert not errors, (expr, errors)
    out = {}
    for inst in comp.getRoot().topInstances:
        for sym in inst.body:
            if sym.name == "y":
                m = re.fullmatch(r"(\d+)'([bodh])([0-9a-fA-F]+)", str(sym.value))
                assert m, str(sym.value)
                out[int(inst.name[1:])] = int(m[3], {"b": 2, "o": 8, "d": 10, "h": 16}[m[2]])
    return [out[i] for i in range(len(samples))]


def _our_eval(samples, expr, width):
    # d is declared [0:5]: d[0] is its most significant bit (IEEE 1364-2005 4.2.1)
    text = (f"module t(input [7:0] a, input [3:0] b, input c, input [0:5] d, output [{width - 1}:0] y);\n"
            f"  assign y = {expr};\nendmodule\n")
    n = read_text(text, "t.v")
    n.check()
    assign = []
    for smp in samples:
        a, b, c = smp[:3]
        d = smp[3] if len(smp) > 3 else 0
        x = {f"a[{i}]": (a >> i) & 1 for i in range(8)}
        x.update({f"b[{i}]": (b >> i) & 1 for i in range(4)})
        x.update({f"d[{i}]": (d >> (5 - i)) & 1 for i in range(6)})
        x["c"] = c
        assign.append(x)
    words, mask = words_for(assign, [i for i in n.inputs if i in assign[0]])
    v = simulate(n, words, mask)
    return [sum(bit(v[f"y[{i}]"], k) << i for i in range(width)) for k in range(len(samples))]


def _sized(x):
    """An unsized number may not stand alone in a concatenation (IEEE 1364-2005 5.1.14)."""
    m = re.fullmatch(r"(\d+)|'h(\d)", x)
    return f"3'd{m[1] or m[2]}" if m else x


def _expr_strategy():
    leaf = st.one_of(
        st.sampled_from(["a", "b", "c", "a[3:0]", "a[7:4]", "a[5]", "b[2:1]", "a[1+:3]", "b[3-:2]",
                         "d", "d[1:3]", "d[0]", "d[5]", "d[0+:2]", "d[5-:3]"]),
        st.sampled_from(["1'b1", "4'hA", "3'o5", "8'd200", "2'b01", "5", "0", "'h3"]),
    )
    unary = ["~", "!", "&", "|", "^", "~&", "~|", "~^", "-"]
    binary = ["&", "|", "^", "~^", "^~", "&&", "||", "==", "!=", "<", "<=", ">", ">=", "+", "-"]

    def extend(inner):
        return st.one_of(
            st.tuples(st.sampled_from(unary), inner).map(lambda t: f"{t[0]}({t[1]})"),
            st.tuples(inner, st.sampled_from(binary), inner).map(lambda t: f"({t[0]} {t[1]} {t[2]})"),
            st.tuples(inner, inner, inner).map(lambda t: f"({t[0]} ? {t[1]} : {t[2]})"),
            st.lists(inner, min_size=1, max_size=3).map(lambda xs: "{" + ", ".join(map(_sized, xs)) + "}"),
            st.tuples(st.integers(1, 3), inner).map(lambda t: f"{{{t[0]}{{{_sized(t[1])}}}}}"),
            st.tuples(inner, st.sampled_from(["<<", ">>"]), st.integers(0, 5)).map(
                lambda t: f"({t[0]} {t[1]} {t[2]})"),
        )

    return st.recursive(leaf, extend, max_leaves=8)


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(expr=_expr_strategy(), width=st.sampled_from([1, 4, 9, 16]), seed=st.integers(0, 2 ** 16))
def test_random_expressions_agree_with_pyslang(expr, width, seed):
    # source: pyslang's constant evaluation of the same expression (IEEE 1364-2005 5.4 widths:
    # context-determined operands widen to the assignment's width before the operation)
    rng = random.Random(seed)
    samples = [(rng.getrandbits(8), rng.getrandbits(4), rng.getrandbits(1), rng.getrandbits(6))
               for _ in range(12)]
    assert _our_eval(samples, expr, width) == _slang_eval(samples, expr, width), expr


# Width rules of IEEE 1364-2005 5.4 where a careless reader goes wrong: context-determined
# operands (~, -, +, &, |, ^, ?: branches) widen to the target before the operation;
# comparison operands widen to each other only; reductions, !, && and || are self-determined.
WIDTH_CASES = [
    ("~c", 4), ("~b", 8), ("~b + a", 16), ("~(b & 4'hF)", 6), ("-b", 8), ("-c", 3),
    ("b - a", 9), ("a + b", 9), ("(a + b) >> 1", 8), ("((a + b) >> 1)", 9),
    ("~b == 4'hF", 1), ("~b == 8'hF0", 1), ("b < a", 1), ("~c < c", 1), ("b != 0", 1),
    ("!b", 4), ("~&b", 3), ("c ? ~b : a", 8), ("c ? b : ~a[1:0]", 4), ("{~c}", 4),
    ("{2{~b[0]}}", 4), ("~{b}", 6), ("a[7:4] ^~ b", 5), ("(b << 2) | c", 8), ("b << 2", 4),
    ("1'b1 + 1'b1", 2), ("1'b1 + 1'b1", 1), ("b && a[0]", 2), ("~b[3:2] + 1", 4),
    ("d", 6), ("d[0:2]", 3), ("d[1+:3]", 3), ("d[4-:2]", 2), ("{d[5], d[0]}", 2), ("d ^ a", 8),
]


@pytest.mark.parametrize("expr,width", WIDTH_CASES)
def test_width_rules_agree_with_pyslang(expr, width):
    # source: pyslang's constant evaluation of the same assignment
    rng = random.Random(expr)
    samples = [(rng.getrandbits(8), rng.getrandbits(4), rng.getrandbits(1), rng.getrandbits(6))
               for _ in range(24)]
    samples += [(0, 0, 0, 0), (255, 15, 1, 63)]
    assert _our_eval(samples, expr, width) == _slang_eval(samples, expr, width)


def test_width_rules_agree_with_iverilog(tmp_path):
    # source: Icarus Verilog simulates every case of WIDTH_CASES at the same inputs (one
    # testbench for all); pyslang is also netfit's front end now, so this is the check of
    # the width rules by a tool that shares no code with the reader
    rng = random.Random(5)
    samples = [(rng.getrandbits(8), rng.getrandbits(4), rng.getrandbits(1), rng.getrandbits(6))
               for _ in range(24)] + [(0, 0, 0, 0), (255, 15, 1, 63)]
    lines = ["module tb;", "  reg [7:0] a; reg [3:0] b; reg c; reg [0:5] d;"]
    for k, (expr, width) in enumerate(WIDTH_CASES):
        lines.append(f"  wire [{width - 1}:0] y{k} = {expr};")
    shows = " ".join("%0d" for _ in WIDTH_CASES)
    lines.append("  initial begin")
    for a, b, c, d in samples:
        lines.append(f"    a = 8'd{a}; b = 4'd{b}; c = 1'd{c}; d = 6'd{d}; #1;")
        lines.append(f'    $display("{shows}", ' + ", ".join(f"y{k}" for k in range(len(WIDTH_CASES))) + ");")
    lines += ["  end", "endmodule", ""]
    bench = tmp_path / "widths.v"
    bench.write_text("\n".join(lines))
    sim = tmp_path / "widths.vvp"
    r = subprocess.run(["iverilog", "-g2005", "-o", str(sim), str(bench)], capture_output=True, text=True,
                       timeout=120, check=False)
    assert r.returncode == 0, r.stderr
    r = subprocess.run(["vvp", "-n", str(sim)], capture_output=True, text=True, timeout=120, check=False)
    rows = [[int(x) for x in ln.split()] for ln in r.stdout.splitlines() if ln and ln[0].isdigit()]
    assert len(rows) == len(samples)
    for k, (expr, width) in enumerate(WIDTH_CASES):
        assert _our_eval(samples, expr, width) == [row[k] for row in rows], expr


def test_operators_file_agrees_with_pyslang():
    # every right-hand side of operators.v, evaluated by pyslang at random inputs
    text = (VALID / "operators.v").read_text()
    rng = random.Random(1)
    samples = [(rng.getrandbits(8), rng.getrandbits(4), 0) for _ in range(40)]
    n = read_design(VALID / "operators.v")
    assign = [{**{f"a[{i}]": (a >> i) & 1 for i in range(8)}, **{f"b[{i}]": (b >> i) & 1 for i in range(4)}}
              for a, b, _ in samples]
    words, mask = words_for(assign, n.inputs)
    v = simulate(n, words, mask)
    found = 0
    for m in re.finditer(r"assign (\w)(?:\[(\d+)(?::(\d+))?\])?\s*=\s*(.+?);", text):
        name, hi, lo, expr = m[1], m[2], m[3], m[4]
        hi = int(hi)
        lo = int(lo) if lo is not None else hi
        width = hi - lo + 1
        want = _slang_eval(samples, expr, width)
        got = [sum(bit(v[f"{name}[{lo + i}]"], k) << i for i in range(width)) for k in range(len(samples))]
        assert got == want, expr
        found += 1
    assert found == 11


# -- the ariths-gen generator: flat and hierarchical Verilog --------------------------
GOOD_HIER = ["rca", "cla", "csel", "pg", "arr", "dadda", "wallace", "csa"]
ALL_KINDS = list(generated.ADDERS) + list(generated.MULTIPLIERS)


def _arith_check(n, kind, width, pairs):
    words, mask = generated.operand_words(width, pairs)
    v = simulate(n, words, mask)
    out = n.outputs[0].split("[")[0]
    for k, (x, y) in enumerate(pairs):
        got = sum(bit(v[o], k) << i for i, o in enumerate(n.outputs))
        want = x + y if kind in generated.ADDERS else x * y
        assert got == want, (kind, x, y)
    assert all(o.startswith(out + "[") for o in n.outputs)


# ariths-gen's hierarchical form of the other circuits drives a net twice (tested below)
SMALL = [(k, False) for k in ALL_KINDS] + [(k, True) for k in ALL_KINDS if k in GOOD_HIER]


@pytest.mark.parametrize("kind,hier", SMALL, ids=[f"{'hier' if h else 'flat'}-{k}" for k, h in SMALL])
def test_ariths_gen_small_exhaustive(tmp_path, kind, hier):
    # source: ariths-gen writes the circuit; Python's integers give the answer (all 256 pairs)
    n = read_design(generated.make(kind, 4, tmp_path, fmt="v", hier=hier))
    assert n.inputs == [f"a[{i}]" for i in range(4)] + [f"b[{i}]" for i in range(4)]
    _arith_check(n, kind, 4, [(x, y) for x in range(16) for y in range(16)])


@pytest.mark.parametrize("kind", GOOD_HIER)
@pytest.mark.parametrize("hier", [False, True], ids=["flat", "hier"])
def test_ariths_gen_equal_to_its_blif_twin(tmp_path, kind, hier):
    # source: ariths-gen writes both files; the proof (mapper.verify) must find them equal,
    # port by port (bus bits named name[i] in both), and the sums/products must be right.
    from mapper.verify import check_equivalence
    width = 8
    v = read_design(generated.make(kind, width, tmp_path, fmt="v", hier=hier))
    # ariths-gen's hierarchical BLIF of the Wallace multiplier leaves inputs of a model
    # unconnected (the BLIF reader refuses it), so that twin is the flat BLIF
    twin_hier = hier and kind != "wallace"
    b = read_design(generated.make(kind, width, tmp_path, fmt="blif", hier=twin_hier))
    assert v.inputs == b.inputs and v.outputs == b.outputs
    res = check_equivalence(v, b)
    assert res.equivalent, res.to_dict()
    rng = random.Random(kind)
    _arith_check(v, kind, width, [(rng.getrandbits(width), rng.getrandbits(width)) for _ in range(300)])


@pytest.mark.parametrize("kind", sorted(set(ALL_KINDS) - set(GOOD_HIER)))
def test_ariths_gen_hierarchical_double_driver_is_refused(tmp_path, kind):
    # ariths-gen's hierarchical sk/bk/ks connect the same net to the outputs of two instances
    # (legal Verilog for pyslang, which resolves wired nets); a netlist of real gates cannot
    # join two outputs, so the reader refuses it and names the net and both lines.
    path = generated.make(kind, 4, tmp_path, fmt="v", hier=True)
    assert slang_errors(path) == []
    with pytest.raises(VerilogError) as exc:
        read(path)
    d = exc.value.first
    m = re.search(r"net '(\w+)\[0\]' has two drivers \(first driven at line \d+\)", d.message)
    assert m and d.line is not None and d.col is not None
    # the BLIF reader (separate code) finds the same net driven twice in the BLIF twin
    with pytest.raises(InputError) as exc2:
        read_design(generated.make(kind, 4, tmp_path, fmt="blif", hier=True))
    assert f"net '{m[1]}' has two drivers" in exc2.value.first.message


@pytest.mark.slow
def test_ariths_gen_big_multiplier(tmp_path):
    # a 16x16 array multiplier (about 1.5 k gates in 1.5 k assigns), random operands
    n = read_design(generated.make("arr", 16, tmp_path, fmt="v", hier=True))
    rng = random.Random(2)
    _arith_check(n, "arr", 16, [(rng.getrandbits(16), rng.getrandbits(16)) for _ in range(500)])


# -- convert and verify through the command line ---------------------------------------
@pytest.mark.parametrize("name", ["ripple4_inst.v", "dff_vector_negedge.v", "latch_nested.v", "params.v"])
def test_convert_to_blif_proves_equal(tmp_path, netfit, name):
    src = VALID / name
    dst = tmp_path / (Path(name).stem + ".blif")
    code, out, err = netfit("convert", src, dst)
    assert code == 0, err
    code, out, err = netfit("verify", src, dst, "--json", as_json=True)
    assert code == 0 and out["equivalent"], out
    from mapper.verify import check_equivalence
    a, b = read_design(src), read_design(dst)
    assert a.inputs == b.inputs and a.outputs == b.outputs
    assert sorted(a.storage()) == sorted(b.storage())
    assert check_equivalence(a, b).equivalent


def test_convert_ariths_gen_to_blif(tmp_path, netfit):
    src = generated.make("wallace", 6, tmp_path, fmt="v", hier=True)
    dst = tmp_path / "w.blif"
    assert netfit("convert", src, dst)[0] == 0
    code, out, err = netfit("verify", src, dst)
    assert code == 0, out + err
    rng = random.Random(9)
    _arith_check(read_design(dst), "wallace", 6, [(rng.getrandbits(6), rng.getrandbits(6)) for _ in range(200)])


# -- smaller points of the standard ----------------------------------------------------
def test_implicit_nets_and_unused_unconnected_inputs():
    # IEEE 1364-2005 6.1.2: an undeclared name on a gate terminal or port is an implicit wire
    n = read_text("module m(input a, b, output y);\n  and (t, a, b);\n  not (y, t);\nendmodule\n")
    n.check()
    words, mask = exhaustive(n.inputs)
    assert simulate(n, words, mask)["y"] == (~(words["a"] & words["b"])) & mask


def test_storage_without_initial_value_is_unknown_and_reg_init_is_kept():
    n = read_text("module m(input c, d, output reg q, output reg r = 1'b1);\n"
                  "  always @(posedge c) begin q <= d; r <= ~d; end\nendmodule\n")
    st_ = n.storage()
    assert st_["q"].init == 3 and st_["r"].init == 1
    assert isinstance(st_["q"], Storage) and st_["q"].control == "c"


def test_unconnected_output_is_fine_and_width_mismatch_warns():
    text = ("module sub(input [3:0] a, output [3:0] y, output z);\n  assign y = ~a;\n  assign z = &a;\nendmodule\n"
            "module m(input [1:0] x, output [3:0] y);\n  sub u (.a(x), .y(y), .z());\nendmodule\n")
    n = read_text(text)
    n.check()
    words, mask = exhaustive(n.inputs)
    v = simulate(n, words, mask)
    for k in range(4):
        assert sum(bit(v[f"y[{i}]"], k) << i for i in range(4)) == (~k) & 15  # x widened with zeros
    assert any("is 4 bit(s) wide but is connected to 2 bit(s)" in w.message for w in n.warnings)


@pytest.mark.parametrize("gate", ["and", "nand", "or", "nor", "xor", "xnor"])
def test_primitives_wider_than_a_table(gate):
    # 20 inputs: more than a truth table may hold, so the reader builds a tree; the textbook
    # meaning of an n-input gate (common practice) at 2000 random input patterns
    names = ", ".join(f"a[{i}]" for i in range(20))
    n = read_text(f"module w(input [19:0] a, output y);\n  {gate} g ({'y'}, {names});\nendmodule\n")
    n.check()
    assert max(node.func.n for node in n.logic().values()) <= 16
    rng = random.Random(gate)
    pats = [rng.getrandbits(20) for _ in range(2000)]
    pats += [0, (1 << 20) - 1]
    words, mask = words_for([{f"a[{i}]": (p >> i) & 1 for i in range(20)} for p in pats], n.inputs)
    v = simulate(n, words, mask)
    for k, p in enumerate(pats):
        base = {"and": "and", "nand": "and", "or": "or", "nor": "or", "xor": "xor", "xnor": "xor"}[gate]
        val = {"and": p == (1 << 20) - 1, "or": p != 0, "xor": p.bit_count() & 1}[base]
        if gate in ("nand", "nor", "xnor"):
            val = not val
        assert bit(v["y"], k) == int(val), (gate, p)



# -- what pyslang lets netfit read now, against an outside simulator ---------------------
def _buses(names):
    """Ports grouped as buses: [(name, [declared index, ...] least significant first or None)]."""
    out: dict = {}
    for nm in names:
        m = re.fullmatch(r"(.+)\[(-?\d+)\]", nm)
        if m:
            out.setdefault(m[1], []).append(int(m[2]))
        else:
            out[nm] = None
    return list(out.items())


def _decl(name, idx):
    return f"[{idx[-1]}:{idx[0]}] {name}" if idx is not None else name


def iverilog_cycles(tmp_path, path, top, ins, outs, vectors, clock=None, before=False):
    """Outputs per vector as Icarus Verilog simulates module ``top`` of ``path``.

    ``vectors`` are dicts of input bits (netlist names).  Combinational: the outputs
    shown 1 time unit after the inputs change.  With ``clock``: then one rising and one
    falling edge.  ``before``: the outputs are shown before the inputs change (the value
    a latch holds from the previous vector)."""
    in_buses = [b for b in _buses(ins) if b[0] != clock]
    out_buses = _buses(outs)
    lines = ["`timescale 1ns/1ns", "module tb;"]
    lines += [f"  reg {_decl(n, i)};" for n, i in in_buses]
    if clock:
        lines.append(f"  reg {clock} = 1'b0;")
    lines += [f"  wire {_decl(n, i)};" for n, i in out_buses]
    conns = [f".{n}({n})" for n, _ in in_buses + out_buses] + ([f".{clock}({clock})"] if clock else [])
    lines.append(f"  {top} dut ({', '.join(conns)});")
    show = '    $display("' + " ".join("%b" for _ in out_buses) + '", ' + ", ".join(n for n, _ in out_buses) + ");"
    lines.append("  initial begin")
    for vec in vectors:
        if before:
            lines.append(show)
        for n, idx in in_buses:
            bits = [vec[n]] if idx is None else [vec[f"{n}[{i}]"] for i in idx]
            lines.append(f"    {n} = {len(bits)}'b{''.join(str(b) for b in reversed(bits))};")
        lines.append("    #1;")
        if not before:
            lines.append(show)
        if clock:
            lines.append(f"    {clock} = 1'b1; #1; {clock} = 1'b0; #1;")
    lines += ["    $finish;", "  end", "endmodule", ""]
    bench = tmp_path / "tb.v"
    bench.write_text("\n".join(lines))
    sim = tmp_path / "tb.vvp"
    # a .sv file is read with SystemVerilog's keywords and operators (as netfit reads it)
    gen = "-g2012" if Path(path).suffix == ".sv" else "-g2005"
    r = subprocess.run(["iverilog", gen, "-o", str(sim), str(bench), str(path)],
                       capture_output=True, text=True, timeout=120, check=False)
    assert r.returncode == 0, r.stderr
    r = subprocess.run(["vvp", "-n", str(sim)], capture_output=True, text=True, timeout=120, check=False)
    assert r.returncode == 0, r.stderr
    rows = [ln.split() for ln in r.stdout.splitlines() if ln and not ln.startswith(("VCD", "tb.v"))]
    out = []
    for row in rows:
        got = {}
        for (n, idx), text in zip(out_buses, row):
            if idx is None:
                got[n] = text
            else:
                for j, i in enumerate(idx):
                    got[f"{n}[{i}]"] = text[len(idx) - 1 - j]
        out.append(got)
    return out


def _our_cycles(n, vectors, clock=None, before=False):
    if clock is None and not before:
        words, mask = words_for(vectors, n.inputs)
        v = simulate(n, words, mask)
        return [{o: str(bit(v[o], k)) for o in n.outputs} for k in range(len(vectors))]
    seq = [dict(vec, **({clock: 0} if clock else {})) for vec in vectors]
    return [{o: str(val) for o, val in row.items()} for row in run_cycles(n, seq, 1)]


# (file, top, clock, latch): every file whose construct pyslang lets netfit read now
SIMULATED = [
    ("case_statement.v", "case_statement", None, False),
    ("function.v", "function_m", None, False),
    ("generate_block.v", "generate_block", None, False),
    ("genvar_loop.v", "genvar_loop", None, False),
    ("macro_with_arguments.v", "macro_with_arguments", None, False),
    ("casez_priority.v", "casez_priority", None, False),
    ("generate_loops.v", "generate_loops", None, False),
    ("functions.v", "functions", None, False),
    ("case_clocked.v", "case_clocked", "clk", False),
    ("for_loops.v", "for_loops", "clk", False),
    ("case_latch.v", "case_latch", None, True),
    ("hier_registers.v", "hier_registers", "clk", False),
    ("loop_steps.sv", "loop_steps", "clk", False),
]


@pytest.mark.parametrize("name,top,clock,latch", SIMULATED, ids=[s[0] for s in SIMULATED])
def test_new_constructs_simulate_like_iverilog(tmp_path, name, top, clock, latch):
    # source: Icarus Verilog (iverilog/vvp), an independent simulator, runs the same file:
    # every input combination when there are at most 10 input bits, else 400 random vectors
    n = read_design(VALID / name)
    assert n.name == top
    data = [i for i in n.inputs if i != clock]
    rng = random.Random(name)
    if len(data) <= 10 and clock is None:
        vectors = [{nm: (k >> j) & 1 for j, nm in enumerate(data)} for k in range(1 << len(data))]
    else:
        vectors = [{nm: rng.getrandbits(1) for nm in data} for _ in range(400)]
    want = iverilog_cycles(tmp_path, VALID / name, top, n.inputs, n.outputs, vectors, clock, latch)
    got = _our_cycles(n, vectors, clock, latch)
    assert len(want) == len(got) == len(vectors)
    first = 1 if latch else 0  # a latch holds x before its first opening in the simulator
    assert got[first:] == want[first:]
    if latch:
        assert {s.kind for s in n.storage().values()} == {"ah"}
    if clock:
        assert {s.kind for s in n.storage().values()} == {"re"} and n.clocks == [clock]


def test_copied_instances_keep_their_own_paths_drivers_and_open_inputs():
    # netfit lowers the first instance of a module and copies it for the others; each copy
    # still answers for itself: an open input a copy reads is reported with that copy's path
    text = ("module and2(input a, b, output y);\n  assign y = a & b;\nendmodule\n"
            "module m(input p, q, output y1, y2, y3);\n"
            "  and2 u1 (.a(p), .b(q), .y(y1));\n  and2 u2 (.a(q), .b(p), .y(y2));\n"
            "  and2 u3 (.a(p), .y(y3));\nendmodule\n")
    with pytest.raises(VerilogError) as exc:
        read_text(text, "m.v")
    d = exc.value.first
    assert (d.line, d.col) == (7, 8) and "input 'b' of instance 'u3' is not connected" in d.message
    # IEEE 1364-2005 12.3: each instance is a copy of the module; the three AND gates
    # compute their own products (checked exhaustively)
    n = read_text(text.replace("  and2 u3 (.a(p), .y(y3));", "  and2 u3 (.a(p), .b(p), .y(y3));"), "m.v")
    n.check()
    words, mask = exhaustive(n.inputs)
    v = simulate(n, words, mask)
    assert v["y1"] == v["y2"] == words["p"] & words["q"] and v["y3"] == words["p"]


def test_columns_count_characters_not_bytes():
    # pyslang counts bytes; netfit's columns count characters (a tab is one column):
    # 'bb' stands after 'é' (two bytes in UTF-8) and a tab
    text = "module m(input a, output y);\n\t/* é */ assign y = a & bb;\nendmodule\n"
    with pytest.raises(VerilogError) as exc:
        read_text(text, "cols.v")
    d = exc.value.first
    assert (d.line, d.col) == (2, text.splitlines()[1].index("bb") + 1) == (2, 25)
    assert d.message == "'bb' is not declared"


def test_deep_statements_do_not_exhaust_the_stack():
    # a 3000-long chain of 'else if' is walked in a loop (IEEE 1364-2005 9.4: the first
    # condition that holds picks its branch); nesting 'if' in 'if' stops with a message
    N = 3000
    chain = "\n    else ".join(f"if (s == 12'd{k}) y = a[{k % 8}];" for k in range(N))
    text = (f"module deep(input [11:0] s, input [7:0] a, output reg y);\n  always @* begin\n    y = 1'b0;\n"
            f"    {chain}\n  end\nendmodule\n")
    n = read_text(text, "chain.v")
    n.check()
    rng = random.Random(4)
    vecs = [{**{f"s[{i}]": (k >> i) & 1 for i in range(12)}, **{f"a[{i}]": rng.getrandbits(1) for i in range(8)}}
            for k in [0, 1, 7, 2999, 3000, 4095] + [rng.randrange(4096) for _ in range(40)]]
    words, mask = words_for(vecs, n.inputs)
    v = simulate(n, words, mask)
    for k, vec in enumerate(vecs):
        s = sum(vec[f"s[{i}]"] << i for i in range(12))
        assert bit(v["y"], k) == (vec[f"a[{s % 8}]"] if s < N else 0)
    nested = "if (a[0]) " * 150 + "y = 1'b1;"
    with pytest.raises(VerilogError) as exc:
        read_text("module n(input [7:0] a, output reg y);\n  always @* begin y = 1'b0; "
                  f"{nested} end\nendmodule\n", "nested.v")
    assert "statements nest more than 100 levels deep" in exc.value.first.message


def test_generate_blocks_are_steps_of_the_instance_path():
    # IEEE 1364-2005 12.4.2: a generate loop's blocks are named block[i] in the hierarchy;
    # netfit joins hierarchy steps with '/', so the full adder of stage 2 is stage[2]/u
    n = read_design(VALID / "generate_loops.v")
    inner = {x.rsplit("/", 1)[0] for x in n.nodes if "/" in x}
    assert inner == {f"stage[{i}]/u" for i in range(4)}
