"""Medium-scale chips (issue 20): whole parts on msi-74 against the design's gates plugged in directly.

Designs: adders (ripple-carry, carry-lookahead, Kogge-Stone, Brent-Kung,
Sklansky, carry-select, PG ripple; 4, 8 and 16 bits) and comparators from
the independent generator library ariths-gen; textbook circuits
(tests/data/textbook: 4-way multiplexer tree, 2-bit comparator, 4-bit
counter, 7-segment decoder, full and half adder); textbook decoders written
as gates here (:func:`decoder_blif`: 3-to-8 with an enable and 4-to-16,
outputs active high; 2-to-4 with an active-low enable and 3-to-8, outputs
active low).

Columns: *plug* is the direct plug-in of the design's gates on gates-74
(each gate into the chip that carries it, packed per part type; the fair
baseline's "gate for gate", bench/baseline.py); *gates-74* the proven netfit
build without medium-scale chips; *msi-74* the proven build that may use
them; *x plug* the msi-74 parts over the plug-in; *MSI* the medium-scale
chips in the msi-74 build.  The goal of the issue: at most 0.5 x plug on
the arithmetic set, and never more parts than gates-74.

Storage rows (textbook, common practice): a shift register, a latch bank and a loadable counter from
tests/data (textbook/, latches/), and longer chains, a serial-to-parallel converter with an output
register, a latch bank over one chip, a decade counter and an 8-bit loadable counter (:func:`storage_blif`).

Run: ``.venv/bin/python bench/bench_msi.py [--quick] [--storage] [--json]``

Measured on 2026-12-05 (branch msi-chips before its last merge of main; seconds on a shared 2-processor
machine).  After that merge the part search's restructured forms lower some gates-74 builds (cla8 13,
ks16 34 parts); the msi-74 and plug-in columns of --quick came out the same::

    design      plug  gates-74  msi-74  MSI  x plug      s  proof
    -------------------------------------------------------------
    rca4           5         5       1    1    0.20    2.3  proved
    rca8          10        10       2    2    0.20    5.1  proved
    rca16         20        20       4    4    0.20   18.3  proved
    cla4           9         7       1    1    0.11    4.7  proved
    cla8          19        17       2    2    0.11    9.0  proved
    cla16         40        37       4    4    0.10   12.1  proved
    ks4            6         6       1    1    0.17    4.5  proved
    ks8           16        16       2    2    0.12    7.1  proved
    ks16          44        42       4    4    0.09   25.5  proved
    bk4            6         6       1    1    0.17    1.6  proved
    bk8           13        13       2    2    0.15    1.9  proved
    bk16          29        29       4    4    0.14    2.8  proved
    sk4            6         6       1    1    0.17    0.6  proved
    sk8           14        14       2    2    0.14    2.7  proved
    sk16          33        33       4    4    0.12    6.1  proved
    csel4          5         5       1    1    0.20    0.9  proved
    csel8         16        14       2    2    0.12    5.8  proved
    csel16        37        31       4    4    0.11   26.2  proved
    pg4            5         5       1    1    0.20    1.7  proved
    pg8           10        10       2    2    0.20    2.9  proved
    pg16          20        20       4    4    0.20   12.3  proved
    lt8           13        10       2    2    0.15    3.9  proved
    gte16         23        22       4    4    0.17    9.2  proved
    gt12          17        15       3    3    0.18    4.5  proved
    mux4           4         3       1    1    0.25    0.3  proved
    cmp2           5         4       1    1    0.20    0.6  proved
    counter4       4         4       1    1    0.25    0.2  proved
    seg7          12         9       9    0    0.75    2.0  proved
    full_adder     3         2       1    1    0.33    0.3  proved
    half_adder     2         2       2    0    1.00    0.1  proved
    -------------------------------------------------------------
    adders: mean msi-74 parts / plug-in 0.153; over 0.5: none
    designs with more parts on msi-74 than on gates-74: none

Decoder rows, measured on 2026-12-05 on branch decoders (the decoder finder,
mapper/fit/blockdec.py); every other row's msi-74 and plug-in columns came
out as above (gates-74 as after the merge)::

    design      plug  gates-74  msi-74  MSI  x plug      s  proof
    -------------------------------------------------------------
    dec3to8        5         5       3    1    0.60    0.1  proved
    dec2to4        3         3       1    1    0.33    0.0  proved
    dec4to16       8         7       5    2    0.62    0.2  proved
    dec3to8n       4         4       1    1    0.25    0.1  proved

(Outputs active high cost an inverter each: dec3to8 is one '138 and two hex
inverters, dec4to16 two '138s and three.)

Storage rows (``--storage``), measured on 2026-12-05 on branch msi-finders (the latch, shift-register and
counter finders: mapper/fit/blockstore.py, blockshift.py, blockcount.py)::

    design      plug  gates-74  msi-74  MSI  x plug      s  proof
    -------------------------------------------------------------
    sipo8          4         4       1    1    0.25    0.2  proved
    latch8         2         2       1    1    0.50    0.1  proved
    loadcount4     8         8       2    1    0.25    1.7  proved
    shift16        8         8       2    2    0.25    0.1  proved
    shift11and     7         7       2    2    0.29    0.1  proved
    conv8          8         8       1    1    0.12    0.1  proved
    conv16        16        16       2    2    0.12    0.1  proved
    latch12        3         3       2    2    0.67    0.1  proved
    decade         7         6       2    1    0.29    1.1  proved
    loadcount8    16        15       3    2    0.19    2.6  proved

(loadcount4/8: the clear and load are active high in the design, low on the '163: one hex inverter.
decade: its clear at 9 is a gate of its own bits beside the '163.)
"""
from __future__ import annotations

import argparse
import json
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT / "tests"))
sys.path.insert(0, str(ROOT / "bench"))

from baseline import fair_baseline  # noqa: E402

import generated  # noqa: E402
from mapper import flow  # noqa: E402
from mapper.read import read_design  # noqa: E402

ADDERS = [(k, w) for k in ("rca", "cla", "ks", "bk", "sk", "csel", "pg") for w in (4, 8, 16)]
COMPARATORS = [("lt", 8), ("gte", 16), ("gt", 12)]
TEXTBOOK = ["mux4", "cmp2", "counter4", "seg7", "full_adder", "half_adder"]
#: textbook storage (common practice): files in tests/data, and shapes written here (:func:`storage_blif`)
STORAGE_FILES = ["textbook/sipo8", "latches/latch8", "textbook/loadcount4"]
STORAGE = ["shift16", "shift11and", "conv8", "conv16", "latch12", "decade", "loadcount8"]
QUICK = [("rca", 8), ("cla", 8), ("ks", 16), ("lt", 8)]
#: textbook decoders written as gates (common practice): name -> (selects, enable, outputs active low)
DECODERS = {"dec3to8": (3, "en", False), "dec2to4": (2, "g_n", True), "dec4to16": (4, None, False),
            "dec3to8n": (3, None, True)}


def decoder_blif(name: str, folder) -> Path:
    """A textbook decoder as gates: an inverter per select, an AND (NAND when active low) per output of
    the selects or their inverters and the enable (an active-low enable through an inverter)."""
    width, enable, low = DECODERS[name]
    sel = [f"a{j}" for j in range(width)]
    outs = [f"y{k}" for k in range(1 << width)]
    lines = [f".model {name}", ".inputs " + " ".join(sel + ([enable] if enable else [])),
             ".outputs " + " ".join(outs)]
    lines += [line for s in sel for line in (f".names {s} {s}_n", "0 1")]
    en = []
    if enable:
        en = ["g"] if enable.endswith("_n") else [enable]
        if enable.endswith("_n"):
            lines += [f".names {enable} g", "0 1"]
    for k, out in enumerate(outs):
        ins = en + [s if (k >> j) & 1 else f"{s}_n" for j, s in enumerate(sel)]
        rows = ["".join("0" if i == m else "-" for i in range(len(ins))) + " 1" for m in range(len(ins))] \
            if low else ["1" * len(ins) + " 1"]
        lines += [f".names {' '.join(ins)} {out}", *rows]
    path = Path(folder) / f"{name}.blif"
    path.write_text("\n".join(lines + [".end", ""]))
    return path


def _chain(lines: list, first: str, n: int, clock: str, stage: str = "q") -> None:
    lines.append(f".latch {first} {stage}0 re {clock} 0")
    lines += [f".latch {stage}{i} {stage}{i + 1} re {clock} 0" for i in range(n - 1)]


def _counter(lines: list, n: int, carry: str, clear: str | None, load: str | None) -> None:
    """Bits q0..q(n-1) of a synchronous counter enabled by ``carry``, cleared by ``clear`` (a net, high
    active), loaded from d0.. by ``load``, at the clock edge (clear first, then load, then count)."""
    for i in range(n):
        lines += [f".latch n{i} q{i} re clk 0", f".names {carry} q{i} t{i}", "10 1", "01 1"]
        if i < n - 1:
            lines += [f".names {carry} q{i} c{i}", "11 1"]
            carry = f"c{i}"
        ins = [x for x in (clear, load) if x] + ([f"d{i}"] if load else []) + [f"t{i}"]
        ctl = "0" if clear else ""
        rows = [ctl + "0" * bool(load) + "-" * bool(load) + "1 1"]
        if load:
            rows.append(ctl + "11- 1")
        lines += [f".names {' '.join(ins)} n{i}", *rows]


def storage_blif(name: str, folder) -> Path:
    """Textbook storage (common practice): ``shift16`` a 16-stage serial-in, parallel-out shift register;
    ``shift11and`` 11 stages whose first takes a AND b; ``conv8``/``conv16`` a shift register on one clock
    copied by an output register on another (the serial-to-parallel converter); ``latch12`` twelve latches
    on one enable; ``decade`` a counter that clears itself after 9; ``loadcount8`` an 8-bit counter with
    synchronous clear and parallel load."""
    width = {"shift16": 16, "shift11and": 11, "conv8": 8, "conv16": 16, "latch12": 12, "decade": 4,
             "loadcount8": 8}[name]
    q = " ".join(f"q{i}" for i in range(width))
    lines = [f".model {name}"]
    if name.startswith("shift"):
        lines += [".inputs clk a b" if name == "shift11and" else ".inputs clk si", f".outputs {q}"]
        if name == "shift11and":
            lines += [".names a b si", "11 1"]
        _chain(lines, "si", width, "clk")
    elif name.startswith("conv"):
        lines += [".inputs sclk rclk si", f".outputs {q}"]
        _chain(lines, "si", width, "sclk", "s")
        lines += [f".latch s{i} q{i} re rclk 0" for i in range(width)]
    elif name == "latch12":
        lines += [".inputs en " + " ".join(f"d{i}" for i in range(width)), f".outputs {q}"]
        lines += [f".latch d{i} q{i} ah en 0" for i in range(width)]
    elif name == "decade":
        lines += [".inputs clk en", f".outputs {q}", ".names q0 q3 en tc", "111 1"]
        _counter(lines, width, "en", "tc", None)
    else:
        lines += [".inputs clk clr ld en " + " ".join(f"d{i}" for i in range(width)), f".outputs {q}"]
        _counter(lines, width, "en", "clr", "ld")
    path = Path(folder) / f"{name}.blif"
    path.write_text("\n".join(lines + [".end", ""]))
    return path


def designs(folder, quick=False, storage=False):
    """``(name, path, arithmetic?)`` of every design of the table."""
    if storage or not quick:
        for name in STORAGE_FILES:
            yield name.split("/")[1], ROOT / "tests" / "data" / f"{name}.blif", False
        for name in STORAGE:
            yield name, storage_blif(name, folder), False
    if storage:
        return
    for kind, width in QUICK if quick else ADDERS + COMPARATORS:
        yield f"{kind}{width}", generated.make(kind, width, folder), kind in generated.ADDERS
    if not quick:
        for name in TEXTBOOK:
            yield name, ROOT / "tests" / "data" / "textbook" / f"{name}.blif", False
        for name in DECODERS:
            yield name, decoder_blif(name, folder), False


def measure(design, gates, msi) -> dict:
    row: dict = {"plug_parts": fair_baseline(design, gates)["plug"]}
    for key, target in (("gates74", gates), ("msi74", msi)):
        t0 = time.perf_counter()
        b, a = flow.fit(design, target)
        row[f"{key}_s"] = time.perf_counter() - t0
        row[f"{key}_parts"] = len(b.parts)
        row[f"{key}_proof"] = a.proof.status
        if key == "msi74":   # the medium-scale parts: those of msi-74 that gates-74 does not list
            row["msi_chips"] = sum(1 for p in b.parts if p.part_id not in gates.parts)
    row["ratio_to_plug"] = row["msi74_parts"] / row["plug_parts"]
    return row


def main(argv=None):
    ap = argparse.ArgumentParser()
    ap.add_argument("--quick", action="store_true")
    ap.add_argument("--json", action="store_true")
    ap.add_argument("--storage", action="store_true", help="only the storage rows")
    args = ap.parse_args(argv)
    gates, msi = flow.load_target("gates-74"), flow.load_target("msi-74")
    rows = []
    with tempfile.TemporaryDirectory() as tmp:
        for name, path, arith in designs(tmp, args.quick, args.storage):
            d = read_design(path)
            row = {"design": name, "arithmetic": arith, **measure(d, gates, msi)}
            print(f"{name}: {row['msi74_parts']} / plug {row['plug_parts']}", file=sys.stderr, flush=True)
            rows.append(row)
    if args.json:
        print(json.dumps(rows, indent=1))
        return
    head = f"{'design':<10}{'plug':>6}{'gates-74':>10}{'msi-74':>8}{'MSI':>5}{'x plug':>8}{'s':>7}  proof"
    print(head)
    print("-" * len(head))
    for r in rows:
        proof = "proved" if r["gates74_proof"] == r["msi74_proof"] == "proved" else "NOT PROVED"
        print(f"{r['design']:<10}{r['plug_parts']:>6}{r['gates74_parts']:>10}{r['msi74_parts']:>8}"
              f"{r['msi_chips']:>5}{r['ratio_to_plug']:>8.2f}{r['msi74_s']:>7.1f}  {proof}")
    print("-" * len(head))
    arith = [r for r in rows if r["arithmetic"]]
    if arith:
        mean = sum(r["ratio_to_plug"] for r in arith) / len(arith)
        over = [r["design"] for r in arith if r["ratio_to_plug"] > 0.5]
        print(f"adders: mean msi-74 parts / plug-in {mean:.3f}; over 0.5: {', '.join(over) or 'none'}")
    worse = [r["design"] for r in rows if r["msi74_parts"] > r["gates74_parts"]]
    print(f"designs with more parts on msi-74 than on gates-74: {', '.join(worse) or 'none'}")


if __name__ == "__main__":
    main()
