"""Tests of the BLIF reader (mapper/read/blif.py).

Outside sources used here, named beside each check:
* the ISCAS-85 benchmark c17 (Brglez and Fujiwara, ISCAS 1985), typed into
  tests/data/c17.blif;
* the BLIF description ("Berkeley Logic Interchange Format (BLIF)", UC
  Berkeley, 1992) for the meaning of covers, constants, latches and .subckt;
* circuits made at test time by the ariths-gen generator library (adders and
  multipliers in flat and hierarchical BLIF), checked against Python's own
  integer arithmetic;
* textbook truth tables of NAND, NOR, XOR, XNOR and majority (common practice).
"""
from __future__ import annotations

import random
import re
from pathlib import Path

import pytest

import generated
from mapper.errors import InputError
from mapper.netlist import Logic, Storage
from mapper.read import read_design
from mapper.read.blif import BlifError, read, read_text
from mapper.simulate import simulate

HERE = Path(__file__).parent / "blif"
VALID = HERE / "valid"
INVALID = HERE / "invalid"
DATA = Path(__file__).parent.parent / "data"


def exhaustive(names):
    """Bit-parallel words enumerating every assignment of ``names`` (pattern k = binary k)."""
    n = len(names)
    mask = (1 << (1 << n)) - 1
    words = {}
    for j, name in enumerate(names):
        w = 0
        for k in range(1 << n):
            if (k >> j) & 1:
                w |= 1 << k
        words[name] = w
    return words, mask


def bit(word, k):
    return (word >> k) & 1


# -- c17 -------------------------------------------------------------------
def test_c17_truth_table_matches_nand_equations():
    # Source: ISCAS-85 c17 (Brglez and Fujiwara, ISCAS 1985): 5 inputs, 2 outputs, 6 NAND2 gates.
    n = read_design(DATA / "c17.blif")
    assert n.inputs == ["N1", "N2", "N3", "N6", "N7"]
    assert n.outputs == ["N22", "N23"]
    assert dict(n.kind_counts()) == {"nand2": 6}  # published gate count: 6 NAND2
    words, mask = exhaustive(n.inputs)
    vals = simulate(n, words, mask)

    def nand(x, y):
        return 1 - (x & y)

    for k in range(32):
        i1, i2, i3, i6, i7 = (bit(words[x], k) for x in n.inputs)
        g10 = nand(i1, i3)
        g11 = nand(i3, i6)
        g16 = nand(i2, g11)
        g19 = nand(g11, i7)
        assert bit(vals["N22"], k) == nand(g10, g16)
        assert bit(vals["N23"], k) == nand(g16, g19)


# -- generated circuits ------------------------------------------------------
def _operands(width, count=3000, seed=1):
    if 2 * width <= 8:  # exhaustive where small
        return [(x, y) for x in range(1 << width) for y in range(1 << width)]
    rng = random.Random(seed * 1000 + width)
    top = (1 << width) - 1
    pairs = [(0, 0), (top, top), (top, 1), (1, top)]
    pairs += [(rng.getrandbits(width), rng.getrandbits(width)) for _ in range(count)]
    return pairs


def _check_arith(netlist, kind, width, pairs):
    words, mask = generated.operand_words(width, pairs)
    vals = simulate(netlist, words, mask)
    name = f"{kind}{width}"
    outs = [o for o in netlist.outputs if o.startswith(f"{name}_out[")]
    assert len(outs) == len(netlist.outputs) and outs
    is_adder = kind in generated.ADDERS
    for k, (x, y) in enumerate(pairs):
        got = sum(bit(vals[f"{name}_out[{i}]"], k) << i for i in range(len(outs)))
        want = x + y if is_adder else x * y  # Python integer arithmetic
        assert got == want, (kind, width, x, y)


# ariths-gen 1.1.4 writes malformed hierarchical BLIF for the parallel-prefix adders
# (a cell output bound to the net of one of its own inputs) and for the Wallace
# multiplier (one port bound twice, another left open); those are read flat here,
# and their hierarchical files are checked to be refused with a positioned error.
HIER_OK_ADDERS = ["rca", "cla", "csel", "pg"]
PREFIX_ADDERS = ["ks", "bk", "sk"]


@pytest.mark.parametrize("width", [2, 3, 4, 8, 16])
@pytest.mark.parametrize("kind,hier", [(k, False) for k in HIER_OK_ADDERS + PREFIX_ADDERS]
                         + [(k, True) for k in HIER_OK_ADDERS])
def test_generated_adders(tmp_path, kind, width, hier):
    # Source: ariths-gen (independent generator); reference: Python integer addition.
    path = generated.make(kind, width, tmp_path, hier=hier)
    n = read_design(path)
    assert n.inputs == [f"a[{i}]" for i in range(width)] + [f"b[{i}]" for i in range(width)]
    _check_arith(n, kind, width, _operands(width))


@pytest.mark.parametrize("width", [2, 3, 4, 8])
@pytest.mark.parametrize("kind,hier", [("arr", False), ("arr", True), ("dadda", False), ("dadda", True),
                                       ("wallace", False), ("csa", False), ("csa", True)])
def test_generated_multipliers(tmp_path, kind, width, hier):
    # Source: ariths-gen (independent generator); reference: Python integer multiplication.
    path = generated.make(kind, width, tmp_path, hier=hier)
    n = read_design(path)
    _check_arith(n, kind, width, _operands(width, count=2000))


@pytest.mark.parametrize("kind", PREFIX_ADDERS)
def test_generated_prefix_adder_hierarchy_is_refused(tmp_path, kind):
    # ariths-gen 1.1.4, hierarchical prefix adders: line 9 reads
    # ".subckt gc g1=X p1=... g0=gnd gc_or0=X" -- the cell drives the net it reads.
    path = generated.make(kind, 4, tmp_path, hier=True)
    line9 = path.read_text().split("\n")[8]
    assert line9.startswith(".subckt gc ")
    out_binding = line9.split()[-1]
    with pytest.raises(BlifError) as exc:
        read(path)
    d = exc.value.first
    assert d.line == 9 and d.col == line9.index(out_binding) + len("gc_or0=") + 1
    assert "has two drivers" in d.message


def test_generated_wallace_hierarchy_is_refused(tmp_path):
    # ariths-gen 1.1.4, hierarchical Wallace multiplier: a csa_component instance binds
    # one input twice and leaves the next one open.
    path = generated.make("wallace", 3, tmp_path, hier=True)
    with pytest.raises(BlifError) as exc:
        read(path)
    msgs = [d.message for d in exc.value.diagnostics]
    assert any("not connected" in m for m in msgs) and any("bound twice" in m for m in msgs)


@pytest.mark.slow
@pytest.mark.parametrize("kind", ["arr", "dadda"])
def test_generated_multiplier_16_hier(tmp_path, kind):
    # Source: ariths-gen; a bigger hierarchy (thousands of .subckt instances) flattened.
    path = generated.make(kind, 16, tmp_path, hier=True)
    n = read_design(path)
    assert any("/" in net for net in n.nodes)  # instance paths kept in names
    _check_arith(n, kind, 16, _operands(16, count=2000))


# -- valid files ---------------------------------------------------------------
@pytest.mark.parametrize("path", sorted(VALID.glob("*.blif")), ids=lambda p: p.name)
def test_valid_files_read_and_check(path):
    n = read_design(path)
    assert n.outputs
    assert all(d.severity == "warning" for d in n.warnings)


def test_spec_adder_hierarchy():
    # Source: the .subckt example of the BLIF description (1992): a 4-bit adder of full adders.
    n = read_design(VALID / "spec_adder.blif")
    words, mask = exhaustive(n.inputs)
    vals = simulate(n, words, mask)
    for k in range(1 << 9):
        v = {x: bit(words[x], k) for x in n.inputs}
        a = sum(v[f"A{i}"] << i for i in range(4))
        b = sum(v[f"B{i}"] << i for i in range(4))
        got = sum(bit(vals[f"S{i}"], k) << i for i in range(4)) + (bit(vals["COUT"], k) << 4)
        assert got == a + b + v["CIN"]
    # nets inside instances are named by instance path; bound ports keep the parent's names
    assert "fulladder_2/k" in n.nodes and "CARRY1" in n.nodes and "XX" in n.nodes


def test_constants():
    # Source: BLIF description (1992): ".names x" with no rows is 0, a row "1" is 1.
    n = read_design(VALID / "constants.blif")
    words, mask = exhaustive(n.inputs)
    vals = simulate(n, words, mask)
    assert n.nodes["zero"].func.constant_value() == 0 and n.nodes["zero"].fanins == ()
    assert n.nodes["one"].func.constant_value() == 1
    assert n.nodes["zero_row"].func.constant_value() == 0
    assert vals["one_dc"] == mask and vals["never"] == 0 and vals["zero"] == 0 and vals["one"] == mask


def test_offset_covers_against_textbook_tables():
    # Textbook truth tables (common practice); OFF-set rows per the BLIF description (1992).
    n = read_design(VALID / "offset.blif")
    words, mask = exhaustive(n.inputs)
    vals = simulate(n, words, mask)
    for k in range(8):
        a, b, c = (bit(words[x], k) for x in "abc")
        assert bit(vals["nand2"], k) == 1 - (a & b)
        assert bit(vals["nor2"], k) == 1 - (a | b)
        assert bit(vals["xor2"], k) == a ^ b
        assert bit(vals["xnor2"], k) == 1 - (a ^ b)
        assert bit(vals["maj3"], k) == int(a + b + c >= 2)
        assert bit(vals["and3"], k) == a & b & c
    assert n.nodes["nand2"].func.cover() == (("11",), 0)  # the cover is kept as written


def test_latches_all_kinds_and_initial_values():
    # Source: BLIF description (1992): .latch input output [type control] [init], default init 3.
    n = read_design(VALID / "latches.blif")
    st = n.storage()
    assert {k: (s.d, s.kind, s.control, s.init) for k, s in st.items()} == {
        "q_re": ("d", "re", "clk", 0),
        "q_fe": ("d", "fe", "clk", 1),
        "q_ah": ("d", "ah", "en", 2),
        "q_al": ("d", "al", "en", 3),
        "q_as": ("d", "as", None, 3),
        # no type, and NIL control: the design's global clock, here the model's one .clock
        "q_plain": ("d", "re", "clk", 3),
        "q_nil": ("d", "re", "clk", 1),
    }
    assert n.clocks == ["clk"] and n.inputs == ["d", "en", "clk"]
    assert len(n.notes) == 1 and "global clock" in n.notes[0].message and "'clk'" in n.notes[0].message


def test_asynchronous_latch_with_control_warns(tmp_path):
    p = tmp_path / "as.blif"
    p.write_text(".model m\n.inputs d c\n.outputs q\n.latch d q as c 0\n.end\n")
    n = read(p)
    assert n.storage()["q"].control is None
    assert any("asynchronous latch 'q'" in w.message and (w.line, w.col) == (4, 15) for w in n.warnings)


def test_continuation_positions_point_at_physical_lines():
    p = VALID / "continuation.blif"
    n = read_design(p)
    assert n.inputs == ["a", "b", "c", "d"] and n.outputs == ["y"]
    assert n.origin["y"] == (str(p), 9, 4)   # the output name sits on the continued line
    assert n.origin["c"] == (str(p), 4, 2)
    words, mask = exhaustive(n.inputs)
    vals = simulate(n, words, mask)
    for k in range(16):
        a, b, c, d = (bit(words[x], k) for x in "abcd")
        assert bit(vals["y"], k) == (a & b) | (c & d)


def test_continuation_joins_without_space():
    # BLIF description (1992): a backslash at the end of a line concatenates the next line.
    n = read_text(".model m\n.inputs ab\\\ncd\n.outputs y\n.names abcd y\n1 1\n.end\n")
    assert n.inputs == ["abcd"]


def test_search_reads_other_file_and_survives_cycle():
    p = VALID / "search_main.blif"
    n = read_design(p)
    words, mask = exhaustive(n.inputs)
    vals = simulate(n, words, mask)
    for k in range(8):
        x, y, z = (bit(words[v], k) for v in "xyz")
        assert bit(vals["f"], k) == (x & y) | z
    # positions of nodes from the searched file point into that file
    assert Path(n.origin["t"][0]).name == "gates.blif" and n.origin["t"][1:] == (6, 12)


def test_search_outside_folder_refused_unless_allowed(tmp_path, netfit):
    (tmp_path / "lib.blif").write_text(".model inv\n.inputs i\n.outputs o\n.names i o\n0 1\n.end\n")
    sub = tmp_path / "design"
    sub.mkdir()
    main = sub / "main.blif"
    main.write_text(".search ../lib.blif\n.model m\n.inputs a\n.outputs y\n.subckt inv i=a o=y\n.end\n")
    with pytest.raises(BlifError) as exc:
        read(main)
    assert (exc.value.first.line, exc.value.first.col) == (1, 9)
    assert "outside the design's folder" in exc.value.first.message
    # the model it would have supplied is not reported unknown as well
    assert len(exc.value.diagnostics) == 1
    n = read(main, allow_outside=True)
    assert n.nodes["y"].fanins == ("a",)
    code, out, err = netfit("inspect", main, "--allow-outside")
    assert code == 0, err
    code, out, err = netfit("inspect", main)
    assert code == 2 and f"{main}:1:9: error:" in err


def test_search_cycle_between_two_files(tmp_path):
    (tmp_path / "a.blif").write_text(".search b.blif\n.model top\n.inputs x\n.outputs y\n"
                                     ".subckt buf i=x o=y\n.end\n")
    (tmp_path / "b.blif").write_text(".search a\n.model buf\n.inputs i\n.outputs o\n.names i o\n1 1\n.end\n")
    n = read(tmp_path / "a.blif")  # b searches a back (given without suffix): read once only
    assert n.nodes["y"].fanins == ("x",)


def test_model_defined_in_two_files(tmp_path):
    (tmp_path / "a.blif").write_text(".search b.blif\n.model top\n.inputs x\n.outputs y\n"
                                     ".subckt buf i=x o=y\n.end\n.model buf\n.inputs i\n.outputs o\n"
                                     ".names i o\n1 1\n.end\n")
    (tmp_path / "b.blif").write_text(".model buf\n.inputs i\n.outputs o\n.names i o\n1 1\n.end\n")
    with pytest.raises(BlifError) as exc:
        read(tmp_path / "a.blif")
    d = exc.value.first
    assert (Path(d.file).name, d.line, d.col) == ("b.blif", 1, 8)
    assert "defined twice" in d.message


def test_exdc_read_into_netlist():
    n = read_design(VALID / "exdc.blif")
    dc = n.exdc
    assert dc is not None and dc.inputs == ["a", "b"] and dc.outputs == ["f"]
    words, mask = exhaustive(dc.inputs)
    vals = simulate(dc, words, mask)
    assert vals["f"] == words["a"] & words["b"]


def test_exdc_of_submodel_is_skipped_with_warning():
    n = read_text(".model top\n.inputs a\n.outputs y\n.subckt s i=a o=y\n.end\n"
                  ".model s\n.inputs i\n.outputs o\n.names i o\n1 1\n.exdc\n.names i o\n1 1\n.end\n")
    assert n.exdc is None
    assert any("skipped" in w.message and w.line == 11 for w in n.warnings)


def test_timing_hints_one_warning_each():
    n = read_design(VALID / "timing.blif")
    timing = [w for w in n.warnings if "timing" in w.message]
    assert [w.message.split("'")[1] for w in timing] == [
        ".default_input_arrival", ".input_arrival", ".output_required", ".area"]
    assert "(2 lines)" in timing[1].message and timing[1].line == 6
    assert all(w.severity == "warning" for w in timing)


def test_wide_cover_stays_a_cover():
    n = read_design(VALID / "wide.blif")
    f = n.nodes["w"].func
    assert f.n == 20 and not f.has_table
    rng = random.Random(5)
    pats = [[rng.getrandbits(1) for _ in range(20)] for _ in range(3000)]
    pats += [[1] * 20, [0] * 20]
    words = {f"x{j}": sum(p[j] << k for k, p in enumerate(pats)) for j in range(20)}
    mask = (1 << len(pats)) - 1
    vals = simulate(n, words, mask)
    for k, p in enumerate(pats):
        want = all(p) or not any(p[:10]) or (p[5] == 1 and p[10] == 0)
        assert bit(vals["w"], k) == int(want)
    assert not n.nodes["w"].func.has_table  # reading, checking and simulating never made a table


def test_top_choice_and_unknown_top():
    p = VALID / "several_models.blif"
    assert read(p).name == "first"
    n = read_design(p, top="second")
    assert n.inputs == ["p"] and n.outputs == ["q"]
    vals = simulate(n, {"p": 0b10}, 0b11)
    assert vals["q"] == 0b01
    with pytest.raises(BlifError, match="no model named 'third'"):
        read(p, top="third")


def test_nested_hierarchy_instance_paths():
    n = read_design(VALID / "nested.blif")
    assert "mid_0/xo_1/t" in n.nodes and "mid_1/xo_0/t" in n.nodes
    assert "mid_0/unused_is_fine" in n.nodes   # an open output gets an internal name
    words, mask = exhaustive(n.inputs)
    vals = simulate(n, words, mask)
    assert vals["y"] == words["a"] ^ words["b"] ^ words["c"]


def test_commands_before_model_and_missing_end():
    n = read_design(VALID / "no_model_line.blif")
    assert n.name == "no_model_line" and n.nodes["y"].fanins == ("a",)


def test_deep_hierarchy_and_long_chain_without_recursion(tmp_path):
    # 3000 nested models and a 30000-node chain: reading must not recurse over depth
    depth = 3000
    parts = [f".model m{i}\n.inputs i\n.outputs o\n.subckt m{i + 1} i=i o=o\n.end\n" for i in range(depth)]
    parts.append(f".model m{depth}\n.inputs i\n.outputs o\n.names i o\n0 1\n.end\n")
    p = tmp_path / "deep.blif"
    p.write_text("".join(parts))
    n = read(p)
    assert n.nodes["o"].fanins == ("i",) and len(n.nodes) == 2
    chain = [".model chain", ".inputs x", ".outputs y", ".names x n0", "0 1"]
    for k in range(1, 30000):
        chain += [f".names n{k - 1} n{k}", "0 1"]
    chain += [".names n29999 y", "1 1", ".end"]
    p2 = tmp_path / "chain.blif"
    p2.write_text("\n".join(chain) + "\n")
    n2 = read(p2)
    assert len(n2.nodes) == 30002
    vals = simulate(n2, {"x": 0b01}, 0b11)
    assert vals["y"] == 0b01  # 30000 inverters: an even number


def test_all_errors_collected_in_order(tmp_path):
    p = tmp_path / "many.blif"
    p.write_text(".model m\n.inputs a b\n.outputs y z\n.names a b y\n1x 1\n.names a z\n2 1\n.bogus\n.end\n")
    with pytest.raises(BlifError) as exc:
        read(p)
    got = [(d.line, d.col) for d in exc.value.diagnostics]
    assert got == [(5, 2), (7, 1), (8, 1)]
    assert all(d.file == str(p) for d in exc.value.diagnostics)


def test_function_objects_shared_between_equal_covers():
    n = read_design(DATA / "c17.blif")
    funcs = {id(node.func) for node in n.nodes.values() if isinstance(node, Logic)}
    assert len(funcs) == 1


def test_storage_in_hierarchy_renamed(tmp_path):
    n = read_text(".model top\n.inputs d c\n.outputs q\n.subckt ff d=d c=c q=q\n.end\n"
                  ".model ff\n.inputs d c\n.outputs q\n.latch d m re c 0\n.latch m q re c 1\n.end\n")
    st = n.storage()
    assert st["ff_0/m"] == Storage("d", "re", "c", 0) and st["q"] == Storage("ff_0/m", "re", "c", 1)


# -- invalid files -------------------------------------------------------------
INVALID_FILES = sorted(INVALID.glob("*.blif"))
_EXPECT = re.compile(r"# expect: (\d+):(\d+): (.+)")


def test_invalid_corpus_is_large_enough():
    assert len(INVALID_FILES) >= 25


@pytest.mark.parametrize("path", INVALID_FILES, ids=lambda p: p.name)
def test_invalid_file(path, netfit):
    m = _EXPECT.match(path.read_text().split("\n", 1)[0])
    assert m, f"{path.name}: first line must be '# expect: LINE:COL: message'"
    line, col, text = int(m[1]), int(m[2]), m[3].strip()
    with pytest.raises(InputError) as exc:
        read_design(path)
    d = exc.value.first
    assert (d.file, d.line, d.col) == (str(path), line, col), str(d)
    assert text in d.message, str(d)
    assert d.severity == "error"
    code, out, err = netfit("inspect", path)
    assert code == 2
    assert f"{path}:{line}:{col}: error: " in err
    assert "Traceback" not in err and "internal error" not in err


def test_crlf_line_ends_and_byte_order_mark(tmp_path):
    p = tmp_path / "dos.blif"
    p.write_bytes(b"\xef\xbb\xbf.model m\r\n.inputs a b\r\n.outputs y\r\n.names a b y\r\n1- 1\r\n.end\r\n")
    n = read(p)
    assert n.inputs == ["a", "b"] and n.origin["y"] == (str(p), 4, 12)


def test_flattened_name_clash_is_a_positioned_error(tmp_path):
    # a parent net spelled like an instance-internal net: two drivers after flattening
    p = tmp_path / "clash.blif"
    p.write_text(".model top\n.inputs a\n.outputs y inv_0/t\n.names a inv_0/t\n1 1\n"
                 ".subckt inv i=a o=y\n.end\n.model inv\n.inputs i\n.outputs o\n.names i t\n0 1\n"
                 ".names t o\n1 1\n.end\n")
    with pytest.raises(BlifError) as exc:
        read(p)
    d = exc.value.first
    assert (d.line, d.col) == (11, 10) and "'inv_0/t' has two drivers" in d.message


def test_cli_subprocess_prints_positions_without_traceback():
    import subprocess
    import sys
    bad = INVALID / "mixed_phase.blif"
    proc = subprocess.run([sys.executable, "-m", "mapper", "inspect", str(bad)],
                          capture_output=True, text=True, timeout=120)
    assert proc.returncode == 2
    assert proc.stderr.startswith(f"{bad}:7:4: error: ")
    assert "Traceback" not in proc.stderr and proc.stdout == ""


# -- BLIF as written in the wild (the published files are in tests/read/test_published.py) ----------
def test_global_clock_added_with_a_free_name():
    # no .clock, a net already called "clock": the added input takes the next free name
    n = read_text(".model m\n.inputs d clock\n.outputs q\n.latch d q 1\n.end\n")
    assert n.inputs == ["d", "clock", "clock_1"] and n.clocks == ["clock_1"]
    assert n.storage()["q"] == Storage("d", "re", "clock_1", 1)
    assert n.notes[0].severity == "note" and "'clock_1'" in n.notes[0].message


def test_nil_control_and_several_clocks_use_the_global_clock():
    # BLIF description (1992): NIL means no control of its own; with two .clock nets neither is "the" clock
    n = read_text(".model m\n.inputs d\n.clock c1 c2\n.outputs q r s\n.latch d q re NIL 0\n.latch d r fe c2 0\n"
                  ".latch d s as NIL 0\n.end\n")
    st = n.storage()
    assert st["q"].control == "clock" and st["r"].control == "c2" and st["s"].control is None
    assert n.clocks == ["c1", "c2", "clock"]


def test_global_clock_inside_a_hierarchy_is_the_top_level_clock():
    n = read_text(".model top\n.inputs d\n.outputs q\n.subckt reg d=d q=q\n.end\n"
                  ".model reg\n.inputs d\n.outputs q\n.latch d m 0\n.latch m q 0\n.end\n")
    assert {s.control for s in n.storage().values()} == {"clock"} and n.inputs == ["d", "clock"]


def test_comment_lines_inside_continued_lines_and_old_line_ends():
    n = read_text(".model m\r.inputs a \\\r# a comment between the parts of one line\r  b\r.outputs y\r"
                  ".names a b y # a comment after the names\r11 1\r.end\r")
    assert n.inputs == ["a", "b"] and n.nodes["y"].fanins == ("a", "b")
    assert n.origin["b"][1] == 4   # the physical line of the token, lone CR line ends counted


def test_exdc_of_the_top_model_warns_how_it_is_used():
    n = read_design(VALID / "exdc.blif")
    assert any(".exdc" in w.message and "netfit verify" in w.message and "may use that freedom" in w.message
               for w in n.warnings)


def test_mlatch_names_its_cell_and_the_missing_library():
    with pytest.raises(BlifError) as exc:
        read_text(".model m\n.inputs d c\n.outputs q\n.mlatch DFFX1 D=d Q=q c 0\n.end\n")
    assert "cell 'DFFX1' comes from the gate library" in exc.value.first.message
