"""Tests of the BLIF and JSON netlist writers and of ``netfit convert``.

Outside sources: the ISCAS-85 c17 benchmark (Brglez and Fujiwara, ISCAS 1985)
and circuits from the ariths-gen generator library, written out and read
back; the NAND truth table (common practice); the BLIF description (UC
Berkeley, 1992) for what a written file must look like (OFF-set rows end in
0, ``NIL`` for no latch control, ``\\`` continues a line).
"""
from __future__ import annotations

import json
import random
from pathlib import Path

import pytest

import generated
from mapper import verify
from mapper.logic.function import Function
from mapper.netlist import Netlist
from mapper.read import read_design
from mapper.read.blif import read_text
from mapper.simulate import simulate
from mapper.write import blif as wblif
from mapper.write import json as wjson

DATA = Path(__file__).parent.parent / "data"
VALID = Path(__file__).parent.parent / "read" / "blif" / "valid"
VALID_FILES = sorted(VALID.glob("*.blif"))


def random_words(names, count, seed):
    rng = random.Random(seed)
    return {n: rng.getrandbits(count) for n in names}, (1 << count) - 1


def roundtrip(netlist, tmp_path, name="out.blif"):
    p = tmp_path / name
    wblif.write_netlist(netlist, p)
    back = read_design(p)
    return p, back


def same_behaviour(a, b, count=2048, seed=3):
    """Outputs and next-state (data) nets agree on random inputs and random storage values."""
    words, mask = random_words(a.inputs, count, seed)
    state, _ = random_words(list(a.storage()), count, seed + 1)
    va = simulate(a, words, mask, state)
    vb = simulate(b, words, mask, state)
    for o in a.outputs:
        assert va[o] == vb[o], o
    for q, st in a.storage().items():
        assert va[st.d] == vb[b.storage()[q].d], q


def storage_facts(n):
    return {q: (s.d, s.kind, s.control, s.init) for q, s in n.storage().items()}


# -- BLIF ---------------------------------------------------------------------
@pytest.mark.parametrize("path", [DATA / "c17.blif"] + VALID_FILES, ids=lambda p: p.name)
def test_blif_roundtrip_keeps_ports_storage_and_logic(path, tmp_path):
    a = read_design(path)
    _, b = roundtrip(a, tmp_path)
    assert b.inputs == a.inputs and b.outputs == a.outputs and b.clocks == a.clocks
    assert storage_facts(b) == storage_facts(a)
    same_behaviour(a, b)
    if a.exdc is not None:
        assert b.exdc is not None and b.exdc.outputs == a.exdc.outputs
        same_behaviour(a.exdc, b.exdc)


@pytest.mark.parametrize("kind,width,hier", [("rca", 8, True), ("ks", 8, False), ("arr", 6, True),
                                             ("dadda", 6, False)])
def test_blif_roundtrip_generated(kind, width, hier, tmp_path):
    # Source: ariths-gen; the written copy must still add/multiply like Python integers.
    a = read_design(generated.make(kind, width, tmp_path, hier=hier))
    _, b = roundtrip(a, tmp_path)
    assert b.inputs == a.inputs and b.outputs == a.outputs
    rng = random.Random(7)
    pairs = [(rng.getrandbits(width), rng.getrandbits(width)) for _ in range(1000)]
    words, mask = generated.operand_words(width, pairs)
    vals = simulate(b, words, mask)
    name = f"{kind}{width}"
    for k, (x, y) in enumerate(pairs):
        got = sum(((vals[o] >> k) & 1) << i for i, o in enumerate(b.outputs))
        assert got == (x + y if kind in generated.ADDERS else x * y)
    assert all(o.startswith(f"{name}_out[") for o in b.outputs)


@pytest.mark.parametrize("path", [DATA / "c17.blif", VALID / "latches.blif", VALID / "spec_adder.blif",
                                  VALID / "offset.blif", VALID / "wide.blif"], ids=lambda p: p.name)
def test_blif_roundtrip_proven_equivalent(path, tmp_path):
    a = read_design(path)
    _, b = roundtrip(a, tmp_path)
    res = verify.check_equivalence(a, b)
    assert res.equivalent, res


def test_blif_roundtrip_of_generated_multiplier_proven_equivalent(tmp_path):
    a = read_design(generated.make("dadda", 6, tmp_path, hier=True))
    _, b = roundtrip(a, tmp_path)
    assert verify.check_equivalence(a, b).equivalent


def test_changed_copy_is_told_apart(tmp_path):
    # The round-trip checks above must be able to fail: flip one cube in the written copy.
    a = read_design(DATA / "c17.blif")
    text = wblif.netlist_text(a).replace(".names N2 N11 N16\n0- 1\n", ".names N2 N11 N16\n1- 1\n")
    b = read_text(text)
    b.check()
    assert not verify.check_equivalence(a, b).equivalent


def test_offset_cover_written_as_rows_with_output_0():
    # BLIF description (1992): rows ending in 0 list the OFF-set.
    n = read_design(VALID / "offset.blif")
    text = wblif.netlist_text(n)
    assert ".names a b nand2\n11 0\n" in text
    assert ".names a b nor2\n1- 0\n-1 0\n" in text


def test_table_functions_written_as_covers():
    n = Netlist("t")
    n.add_input("a")
    n.add_input("b")
    n.add_logic("x", ["a", "b"], Function.from_table(2, 0b0110))   # XOR from a table only
    n.add_constant("one", 1)
    n.add_constant("zero", 0)
    for o in ("x", "one", "zero"):
        n.add_output(o)
    text = wblif.netlist_text(n)
    # BLIF description (1992): a row "1" is the constant 1, no rows the constant 0
    assert text.endswith(".names one\n1\n.names zero\n.end\n")
    back = read_text(text)
    assert back.nodes["x"].func.table() == 0b0110
    assert back.nodes["one"].func.constant_value() == 1 and back.nodes["zero"].func.constant_value() == 0


def test_latch_lines():
    # BLIF description (1992): .latch input output type control init; NIL means no control.
    n = read_design(VALID / "latches.blif")
    text = wblif.netlist_text(n)
    assert ".latch d q_re re clk 0\n" in text
    assert ".latch d q_as as NIL 3\n" in text
    # a latch with no type is clocked by the design's global clock: here the model's one .clock
    assert ".latch d q_plain re clk 3\n" in text
    assert ".clock clk\n" in text


def test_awkward_names_replaced_deterministically(tmp_path):
    n = Netlist("my design")
    for i in ("a b", "a_b", "x#1", "NIL", "p=q", "back\\slash"):
        n.add_input(i)
    n.add_logic("out put", ["a b", "a_b", "x#1"], Function.from_cover(3, ["111"], 1))
    n.add_logic("ok", ["NIL", "p=q", "back\\slash"], Function.from_cover(3, ["1-0"], 1))
    n.add_output("out put")
    n.add_output("ok")
    names = wblif.blif_names(n)
    assert names["a_b"] == "a_b" and names["ok"] == "ok"          # valid names never change
    assert names["a b"] == "a_b_1" and names["x#1"] == "x_1" and names["NIL"] == "NIL_"
    assert names["p=q"] == "p_q" and names["out put"] == "out_put" and names["back\\slash"] == "back_slash"
    assert len(set(names.values())) == len(names)
    text = wblif.netlist_text(n)
    assert text == wblif.netlist_text(n)  # deterministic
    back = read_text(text)
    assert back.inputs == [names[i] for i in n.inputs] and back.outputs == ["out_put", "ok"]
    words, mask = random_words(n.inputs, 256, 11)
    va = simulate(n, words, mask)
    vb = simulate(back, {names[k]: v for k, v in words.items()}, mask)
    assert va["out put"] == vb["out_put"] and va["ok"] == vb["ok"]


def test_output_that_is_an_input(tmp_path):
    n = read_text(".model m\n.inputs a b\n.outputs a y\n.names b y\n0 1\n.end\n")
    _, back = roundtrip(n, tmp_path)
    assert back.inputs == ["a", "b"] and back.outputs == ["a", "y"]


def test_long_lists_continued_and_wide_cover_kept(tmp_path):
    n = Netlist("wide")
    ins = [f"input_number_{k}" for k in range(300)]
    for i in ins:
        n.add_input(i)
    cubes = ["1" * 300, "0" * 150 + "-" * 150]
    n.add_logic("w", ins, Function.from_cover(300, cubes, 0))
    n.add_output("w")
    text = wblif.netlist_text(n)
    name_lines = [ln for ln in text.split("\n") if ln[:1] not in "01-"]  # cover rows are not wrapped
    assert max(len(ln) for ln in name_lines) <= 120 and " \\\n" in text
    _, back = roundtrip(n, tmp_path)
    f = back.nodes["w"].func
    assert back.inputs == ins and not f.has_table and f.cover() == (tuple(cubes), 0)


def test_write_refuses_to_overwrite_protected(tmp_path):
    from mapper.errors import UsageError
    src = tmp_path / "c17.blif"
    src.write_text((DATA / "c17.blif").read_text())
    n = read_design(src)
    with pytest.raises(UsageError):
        wblif.write_netlist(n, src, protect=(src,))
    assert src.read_text() == (DATA / "c17.blif").read_text()


# -- JSON ---------------------------------------------------------------------
def _table_from_cover(n, cubes, phase):
    """Independent evaluation of a cover (cube character j belongs to fan-in j)."""
    t = 0
    for m in range(1 << n):
        hit = any(all(ch == "-" or int(ch) == (m >> j) & 1 for j, ch in enumerate(c)) for c in cubes)
        if hit == bool(phase):
            t |= 1 << m
    return t


def test_json_of_c17_matches_nand_truth_table(tmp_path):
    # Source: ISCAS-85 c17 (Brglez and Fujiwara, 1985): every gate a NAND2; NAND table 0111 (common practice).
    n = read_design(DATA / "c17.blif")
    p = tmp_path / "c17.json"
    wjson.write_netlist(n, p)
    d = json.loads(p.read_text())
    assert d["format"] == "netfit-netlist" and d["version"] == 1 and d["name"] == "c17"
    assert d["inputs"] == ["N1", "N2", "N3", "N6", "N7"] and d["outputs"] == ["N22", "N23"]
    assert d["storage"] == [] and d["exdc"] is None
    assert {e["net"]: e["fanins"] for e in d["nodes"]} == {
        "N10": ["N1", "N3"], "N11": ["N3", "N6"], "N16": ["N2", "N11"],
        "N19": ["N11", "N7"], "N22": ["N10", "N16"], "N23": ["N16", "N19"]}
    for e in d["nodes"]:
        assert _table_from_cover(2, e["cover"], e["phase"]) == 0b0111
        assert int(e["table"], 16) == 0b0111


def test_json_storage_exdc_and_wide(tmp_path):
    n = read_design(VALID / "latches.blif")
    d = wjson.netlist_dict(n)
    assert {s["net"]: (s["d"], s["kind"], s["control"], s["init"]) for s in d["storage"]} == storage_facts(n)
    assert d["clocks"] == ["clk"]
    dc = wjson.netlist_dict(read_design(VALID / "exdc.blif"))["exdc"]
    assert dc["outputs"] == ["f"] and dc["nodes"][0]["cover"] == ["11"] and dc["nodes"][0]["phase"] == 1
    wide = wjson.netlist_dict(read_design(VALID / "wide.blif"))
    (node,) = wide["nodes"]
    assert len(node["fanins"]) == 20 and "table" not in node and len(node["cover"]) == 3


@pytest.mark.parametrize("path", [DATA / "c17.blif", VALID / "offset.blif", VALID / "constants.blif",
                                  VALID / "spec_adder.blif"], ids=lambda p: p.name)
def test_json_functions_agree_with_netlist(path):
    n = read_design(path)
    d = wjson.netlist_dict(n)
    for e in d["nodes"]:
        func = n.nodes[e["net"]].func
        k = len(e["fanins"])
        assert _table_from_cover(k, e["cover"], e["phase"]) == func.table() == int(e["table"], 16)


# -- netfit convert -------------------------------------------------------------
def test_convert_blif_to_blif_and_json(tmp_path, netfit):
    src = tmp_path / "c17.blif"
    src.write_text((DATA / "c17.blif").read_text())
    out = tmp_path / "copy.blif"
    code, stdout, err = netfit("convert", src, out)
    assert code == 0, err
    assert "5 inputs, 2 outputs" in stdout
    a, b = read_design(src), read_design(out)
    assert b.inputs == a.inputs and b.outputs == a.outputs
    same_behaviour(a, b)
    js = tmp_path / "c17.json"
    code, res, err = netfit("convert", src, js, "--json", as_json=True)
    assert code == 0, err
    assert res["to"] == str(js) and res["nodes"] == 6
    d = json.loads(js.read_text())
    assert d["outputs"] == ["N22", "N23"] and len(d["nodes"]) == 6
    assert not [p for p in tmp_path.iterdir() if p.name.endswith(".tmp")]  # no temporary files left


def test_convert_refuses_to_overwrite_its_input(tmp_path, netfit):
    src = tmp_path / "c17.blif"
    text = (DATA / "c17.blif").read_text()
    src.write_text(text)
    code, out, err = netfit("convert", src, src)
    assert code == 2 and "refusing to overwrite" in err
    assert src.read_text() == text
    # the same file under another name
    code, out, err = netfit("convert", src, tmp_path / "." / "c17.blif")
    assert code == 2 and src.read_text() == text


def test_convert_bad_input_reports_position(tmp_path, netfit):
    src = tmp_path / "bad.blif"
    src.write_text(".model m\n.inputs a\n.outputs y\n.names a y\n1 7\n.end\n")
    code, out, err = netfit("convert", src, tmp_path / "x.json")
    assert code == 2 and f"{src}:5:3: error: bad output value '7'" in err
    assert not (tmp_path / "x.json").exists()


def test_json_text_parses_back_to_the_dict(tmp_path):
    n = read_design(VALID / "latches.blif")
    d = wjson.netlist_dict(n)
    assert json.loads(wjson.dumps(d)) == d
    e = wjson.netlist_dict(read_design(VALID / "exdc.blif"))
    assert json.loads(wjson.dumps(e)) == e
    empty = wjson.netlist_dict(Netlist("nothing"))
    assert json.loads(wjson.dumps(empty)) == empty
