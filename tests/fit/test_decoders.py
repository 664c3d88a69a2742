"""Decoders on the msi-74 target: 3-to-8 and dual 2-to-4 decoder chips ('138, '139) found in gate-level
designs (issue 20).

Outside sources: the textbook decoder -- each output the AND of every
select, true or complemented (a minterm), with an enable ANDed in, outputs
active high (AND gates) or active low (NAND gates, as in the '138/'139 logic
diagrams) -- common practice; its definition (output ``k`` on exactly when
the enable is on and the select word is ``k``) is the function table of the
'138 and '139 in generic datasheets, from memory.  Each design below is
written as gates in BLIF, built on msi-74, proved equal to the design by SAT
(as every build is), and the *built board* (the cells and the catalog's
models of the chips, not the design) simulated over every input word
against that definition; it never has more parts than on gates-74.  The
exported structural Verilog of two builds is also run in Icarus Verilog, an
outside simulator, against the same definition.
"""
from __future__ import annotations

import pytest
from fit.test_block_storage import _iverilog as _run_exported

from mapper import flow
from mapper.read import read_design
from mapper.simulate import simulate


@pytest.fixture(scope="module")
def msi74():
    return flow.load_target("msi-74")


@pytest.fixture(scope="module")
def gates74():
    return flow.load_target("gates-74")


def _minterm(sel: list, k: int, out: str, enable: tuple = (), low: bool = False) -> list:
    """``.names`` lines of decoder output ``k`` of selects ``sel`` (``sel[0]`` the lowest bit) ANDed with
    the enable nets: an AND gate of the selects or their inverters, a NAND gate when ``low``."""
    ins = list(enable) + [s if (k >> j) & 1 else f"{s}_n" for j, s in enumerate(sel)]
    if low:
        rows = ["".join("0" if i == m else "-" for i in range(len(ins))) + " 1" for m in range(len(ins))]
    else:
        rows = ["1" * len(ins) + " 1"]
    return [f".names {' '.join(ins)} {out}", *rows]


def _decoder_blif(sel: list, enable: tuple, low: bool, names: list) -> list:
    """Body lines of a textbook decoder: an inverter per select, a gate per output (output ``k`` named
    ``names[k]``)."""
    lines = []
    for s in sel:
        lines += [f".names {s} {s}_n", "0 1"]
    for k in range(1 << len(sel)):
        lines += _minterm(sel, k, names[k], enable, low)
    return lines


def _build(tmp_path, text: str, msi74, gates74):
    """The msi-74 result of the design (proved), its build's outputs over every input word, the words."""
    path = tmp_path / "design.blif"
    path.write_text(text)
    design = read_design(path)
    result = flow.fit(design, msi74)
    build = result.build
    assert result.analysis.proof.status == "proved"
    without, _ = flow.fit(design, gates74)
    assert len(build.parts) <= len(without.parts)
    n = len(design.inputs)
    rows = list(range(1 << n))
    words = {i: sum(((r >> j) & 1) << k for k, r in enumerate(rows)) for j, i in enumerate(design.inputs)}
    out = simulate(build.to_netlist(), words, (1 << len(rows)) - 1)
    values = [{i: (r >> j) & 1 for j, i in enumerate(design.inputs)} for r in rows]
    return result, [{o: (out[o] >> k) & 1 for o in design.outputs} for k in range(len(rows))], values


def _iverilog(tmp_path, result, rows: list) -> list:
    """The build's exported Verilog (``<design>.v`` and its models) run in Icarus Verilog over ``rows``
    (dicts input -> 0/1): per row a dict output -> 0/1 (the storage tests' runner, with no clock)."""
    return _run_exported(tmp_path, result, rows, ())


def test_textbook_3_to_8_decoder_with_enable(tmp_path, msi74, gates74):
    # AND gates of the selects or their inverters and an enable, outputs active high: one '138 (the enable on
    # its active-high enable pin) and inverters on the outputs, fewer parts than the gates
    text = "\n".join([".model dec38", ".inputs a0 a1 a2 en", ".outputs " + " ".join(f"y{k}" for k in range(8)),
                      *_decoder_blif(["a0", "a1", "a2"], ("en",), False, [f"y{k}" for k in range(8)]), ".end", ""])
    result, outs, ins = _build(tmp_path, text, msi74, gates74)
    build = result.build
    assert build.part_counts()["74HC138"] == 1
    for got, v in zip(outs, ins):
        word = v["a0"] + 2 * v["a1"] + 4 * v["a2"]
        assert [got[f"y{k}"] for k in range(8)] == [int(v["en"] == 1 and word == k) for k in range(8)]


def test_the_138s_own_logic_with_three_enables(tmp_path, msi74, gates74):
    # the '138's logic as gates (common practice; its function table from memory): an enable gate on when
    # E3 is high and E1_N, E2_N low, and a NAND gate per output -- one '138, each enable on its own pin
    sel = ["a0", "a1", "a2"]
    names = [f"y{k}_n" for k in range(8)]
    text = "\n".join([".model dec138", ".inputs a0 a1 a2 e1_n e2_n e3", ".outputs " + " ".join(names),
                      ".names e1_n e2_n e3 en", "001 1", *_decoder_blif(sel, ("en",), True, names), ".end", ""])
    result, outs, ins = _build(tmp_path, text, msi74, gates74)
    assert result.build.part_counts() == {"74HC138": 1}
    cell = next(c for c in result.build.cells if c.cell == "dec3")
    assert (cell.pins["E1_N"], cell.pins["E2_N"], cell.pins["E3"]) in (("e1_n", "e2_n", "e3"), ("e2_n", "e1_n", "e3"))
    for got, v in zip(outs, ins):
        on = v["e3"] == 1 and v["e1_n"] == 0 and v["e2_n"] == 0
        word = v["a0"] + 2 * v["a1"] + 4 * v["a2"]
        assert [got[n] for n in names] == [int(not (on and word == k)) for k in range(8)]


@pytest.mark.parametrize("decoders,chips", [(1, {"74HC139": 1}), (2, {"74HC139": 1})])
def test_textbook_2_to_4_decoders_with_active_low_enable(tmp_path, msi74, gates74, decoders, chips):
    # NAND gates of the selects (or their inverters) and the enable (active low, through an inverter),
    # outputs active low, as the '139's logic diagram: each decoder half a '139, two of them on one chip
    lines = [f".model dec24x{decoders}"]
    ins, outs, body = [], [], []
    for d in range(decoders):
        sel = [f"a{d}_0", f"a{d}_1"]
        ins += sel + [f"g{d}_n"]
        outs += [f"y{d}_{k}_n" for k in range(4)]
        body += [f".names g{d}_n g{d}", "0 1", *_decoder_blif(sel, (f"g{d}",), True, outs[-4:])]
    text = "\n".join(lines + [".inputs " + " ".join(ins), ".outputs " + " ".join(outs), *body, ".end", ""])
    result, got_rows, in_rows = _build(tmp_path, text, msi74, gates74)
    build = result.build
    assert build.part_counts() == chips
    for got, v in zip(got_rows, in_rows):
        for d in range(decoders):
            word = v[f"a{d}_0"] + 2 * v[f"a{d}_1"]
            assert [got[f"y{d}_{k}_n"] for k in range(4)] == [int(not (v[f"g{d}_n"] == 0 and word == k))
                                                              for k in range(4)]


def _predecoded_4_to_16(sel: list, names: list) -> list:
    """Body lines of the textbook predecoded 4-to-16 decoder: two 2-to-4 predecoders of AND gates (low and
    high select pairs) and an AND gate of one output of each per output."""
    lines = [line for s in sel for line in (f".names {s} {s}_n", "0 1")]
    for k in range(4):
        lo = [sel[j] if (k >> j) & 1 else f"{sel[j]}_n" for j in (0, 1)]
        hi = [sel[j + 2] if (k >> j) & 1 else f"{sel[j + 2]}_n" for j in (0, 1)]
        lines += [f".names {' '.join(lo)} lo{k}", "11 1", f".names {' '.join(hi)} hi{k}", "11 1"]
    for k, out in enumerate(names):
        lines += [f".names lo{k & 3} hi{k >> 2} {out}", "11 1"]
    return lines


@pytest.mark.parametrize("form", ["and4", "predecoded"])
def test_textbook_4_to_16_decoder_on_two_3_to_8_chips(tmp_path, msi74, gates74, form):
    # sixteen AND gates of four selects or their inverters, or of two predecoders (common practice): two
    # '138s, one select on an active-low enable of one and on the active-high enable of the other (the
    # datasheets' cascade), no inverter for it, and no chip for the predecoders the '138s leave unread
    names = [f"y{k}" for k in range(16)]
    sel = ["a0", "a1", "a2", "a3"]
    body = _decoder_blif(sel, (), False, names) if form == "and4" else _predecoded_4_to_16(sel, names)
    text = "\n".join([".model dec416", ".inputs " + " ".join(sel), ".outputs " + " ".join(names), *body,
                      ".end", ""])
    result, outs, ins = _build(tmp_path, text, msi74, gates74)
    build = result.build
    assert build.part_counts()["74HC138"] == 2 and "74HC139" not in build.part_counts()
    assert _iverilog(tmp_path, result, ins) == outs
    dec = [c for c in build.cells if c.cell == "dec3"]
    enables = sorted((net, pin) for c in dec for pin, net in c.pins.items()
                     if pin in ("E1_N", "E2_N", "E3") and net not in ("VCC", "GND"))
    assert len(enables) == 2 and enables[0][0] == enables[1][0] in sel
    low, high = sorted(pin for _, pin in enables)
    assert low in ("E1_N", "E2_N") and high == "E3"
    for got, v in zip(outs, ins):
        word = sum(v[s] << j for j, s in enumerate(sel))
        assert [got[n] for n in names] == [int(word == k) for k in range(16)]


def test_decoder_outputs_feeding_other_logic(tmp_path, msi74, gates74):
    # an address decoder (NAND outputs, active-low chip selects) whose selects also drive other logic: an
    # I/O select low for addresses 6 and 7, a ROM read for address 0 with rd, a RAM write for addresses 1
    # and 2 with wr -- the decoder is one '138 and the rest gates reading its outputs
    sel = ["a0", "a1", "a2"]
    cs = [f"cs{k}_n" for k in range(8)]
    text = "\n".join([".model decuse", ".inputs a0 a1 a2 rd wr", ".outputs " + " ".join(cs + ["io_n", "rom_rd",
                                                                                          "ram_wr"]),
                      *_decoder_blif(sel, (), True, cs),
                      ".names cs6_n cs7_n io_n", "11 1", ".names cs0_n rd rom_rd", "01 1",
                      ".names cs1_n cs2_n wr ram_wr", "0-1 1", "-01 1", ".end", ""])
    result, outs, ins = _build(tmp_path, text, msi74, gates74)
    build = result.build
    assert build.part_counts()["74HC138"] == 1
    assert _iverilog(tmp_path, result, ins) == outs
    for got, v in zip(outs, ins):
        a = v["a0"] + 2 * v["a1"] + 4 * v["a2"]
        assert [got[n] for n in cs] == [int(a != k) for k in range(8)]
        assert got["io_n"] == int(a not in (6, 7))
        assert got["rom_rd"] == int(a == 0 and v["rd"] == 1)
        assert got["ram_wr"] == int(a in (1, 2) and v["wr"] == 1)


@pytest.mark.parametrize("name", ["full_adder.blif", "mux4.blif", "cmp2.blif"])
def test_no_decoder_where_there_is_none(data, msi74, name):
    # textbook circuits with no decoder in them (common practice): a full adder, a 4-way multiplexer and a
    # 2-bit comparator take no decoder chip
    build, analysis = flow.fit(read_design(data / "textbook" / name), msi74)
    assert analysis.proof.status == "proved"
    assert not {"74HC138", "74HC139"} & set(build.part_counts())
