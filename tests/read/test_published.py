"""BLIF as written in the wild: published benchmark files read, built, proved and simulated.

Outside sources (tests/data/published, README there): ISCAS-89 s27 in its
original ``.bench`` form, s208.1 and s344 as distributed in BLIF with the
IWLS 2005 benchmarks, the MCNC (LGSynth91) sequential files dk27, beecount
and mm4a, and the MCNC copies of ISCAS-85 c17 and of i4.  Each design is
read by netfit, built on every built-in target and proved, and the build is
simulated cycle by cycle against an *independent reading of the same file*:
a small BLIF evaluator and a small ``.bench`` evaluator written below from
the format descriptions (the BLIF description, UC Berkeley 1992; the
ISCAS-89 ``.bench`` netlist format), sharing no code with netfit.
"""
from __future__ import annotations

import random
import re
from pathlib import Path

import pytest

from mapper import flow
from mapper.read import read_design
from mapper.simulate import run_cycles

DATA = Path(__file__).parent.parent / "data" / "published"
TARGETS = ["nand-only", "nor-only", "gates-74", "relay-spdt", "relay-dpdt"]
WIDTH = 64
MASK = (1 << WIDTH) - 1


# -- an independent BLIF evaluator (from the BLIF description, 1992) -----------------------------
class PlainBlif:
    """The single model of a flat BLIF file: ports, latches ``(d, q, init)``, covers ``out -> (ins, rows, phase)``."""

    def __init__(self, text: str):
        self.inputs, self.outputs, self.latches, self.covers = [], [], [], {}
        joined, lines = "", []
        for raw in text.splitlines():
            line = raw.split("#", 1)[0].rstrip()
            if line.endswith("\\"):
                joined += line[:-1]
                continue
            lines.append(joined + line)
            joined = ""
        lines.append(joined)
        cover = None
        for line in lines:
            toks = line.split()
            if not toks:
                continue
            if not toks[0].startswith("."):
                cover[1].append((toks[0], toks[1]) if len(toks) == 2 else ("", toks[0]))
                continue
            cover = None
            if toks[0] == ".inputs":
                self.inputs += toks[1:]
            elif toks[0] == ".outputs":
                self.outputs += toks[1:]
            elif toks[0] == ".latch":   # .latch d q [type control] [init]
                init = int(toks[-1]) if len(toks) in (4, 6) else 3
                self.latches.append((toks[1], toks[2], init))
            elif toks[0] == ".names":
                cover = (toks[1:-1], [])
                self.covers[toks[-1]] = cover

    def values(self, words: dict, state: dict) -> dict:
        """Every net's bit-parallel value for input words and latch state (evaluated until all are known)."""
        val = dict(words)
        val.update(state)
        todo = dict(self.covers)
        while todo:
            done = []
            for out, (ins, rows) in todo.items():
                if any(i not in val for i in ins):
                    continue
                on = 0
                for cube, _ in rows:
                    term = MASK
                    for i, ch in zip(ins, cube):
                        if ch == "1":
                            term &= val[i]
                        elif ch == "0":
                            term &= ~val[i] & MASK
                    on |= term
                phase_one = not rows or rows[0][1] == "1"
                val[out] = on if phase_one else ~on & MASK
                done.append(out)
            assert done, "the independent evaluator found a loop or an undriven net"
            for out in done:
                del todo[out]
        return val

    def run(self, sequence: list) -> list:
        """Per cycle (inputs as words), the outputs; latches start at their initial value (0 when unknown)."""
        state = {q: (MASK if init == 1 else 0) for _, q, init in self.latches}
        trace = []
        for words in sequence:
            val = self.values(words, state)
            trace.append({o: val[o] for o in self.outputs})
            state = {q: val[d] for d, q, _ in self.latches}
        return trace


# -- an independent .bench reader (ISCAS-89 format) ---------------------------------------------
_BENCH_GATES = {"AND": "and", "NAND": "nand", "OR": "or", "NOR": "nor", "NOT": "not", "BUF": "buf", "BUFF": "buf",
                "XOR": "xor", "XNOR": "xnor", "DFF": "dff"}


def read_bench(text: str) -> dict:
    """``{"inputs", "outputs", "gates": [(out, kind, ins)]}`` of an ISCAS ``.bench`` file."""
    out = {"inputs": [], "outputs": [], "gates": []}
    for raw in text.splitlines():
        line = raw.split("#", 1)[0].strip()
        if not line:
            continue
        m = re.fullmatch(r"(INPUT|OUTPUT)\((\S+)\)", line)
        if m:
            out["inputs" if m[1] == "INPUT" else "outputs"].append(m[2])
            continue
        m = re.fullmatch(r"(\S+)\s*=\s*(\w+)\((.*)\)", line)
        assert m, line
        out["gates"].append((m[1], _BENCH_GATES[m[2].upper()], [a.strip() for a in m[3].split(",")]))
    return out


def bench_to_blif(b: dict, name: str) -> str:
    """The ``.bench`` design as BLIF in the style of the published ISCAS-89 BLIF files: every flip-flop a
    ``.latch d q 0`` with no type or control (clocked by the global clock), every gate a cover."""
    rows = {"and": lambda n: ["1" * n + " 1"], "nand": lambda n: ["1" * n + " 0"],
            "nor": lambda n: ["0" * n + " 1"], "not": lambda n: ["0 1"],
            "buf": lambda n: ["1 1"], "xor": lambda n: ["10 1", "01 1"], "xnor": lambda n: ["11 1", "00 1"]}
    lines = [f".model {name}", ".inputs " + " ".join(b["inputs"]), ".outputs " + " ".join(b["outputs"])]
    for q, kind, ins in b["gates"]:
        if kind == "dff":
            lines.append(f".latch {ins[0]} {q} 0")
    for q, kind, ins in b["gates"]:
        if kind == "or":   # OR as the complement of the NOR of its inputs (an OFF-set row)
            lines += [f".names {' '.join(ins)} {q}", "0" * len(ins) + " 0"]
        elif kind != "dff":
            lines += [f".names {' '.join(ins)} {q}"] + rows[kind](len(ins))
    return "\n".join(lines + [".end", ""])


def run_bench(b: dict, sequence: list) -> list:
    """Cycle simulation of a ``.bench`` design straight from its gate list (flip-flops start at 0)."""
    ops = {"and": lambda v: _all(v), "nand": lambda v: ~_all(v) & MASK, "or": lambda v: _any(v),
           "nor": lambda v: ~_any(v) & MASK, "not": lambda v: ~v[0] & MASK, "buf": lambda v: v[0],
           "xor": lambda v: v[0] ^ v[1], "xnor": lambda v: ~(v[0] ^ v[1]) & MASK}
    flops = [(q, ins[0]) for q, kind, ins in b["gates"] if kind == "dff"]
    gates = [(q, kind, ins) for q, kind, ins in b["gates"] if kind != "dff"]
    state = {q: 0 for q, _ in flops}
    trace = []
    for words in sequence:
        val = dict(words)
        val.update(state)
        left = list(gates)
        while left:
            ready = [g for g in left if all(i in val for i in g[2])]
            assert ready
            for q, kind, ins in ready:
                val[q] = ops[kind]([val[i] for i in ins])
            left = [g for g in left if g[0] not in val]
        trace.append({o: val[o] for o in b["outputs"]})
        state = {q: val[d] for q, d in flops}
    return trace


def _all(v):
    r = MASK
    for x in v:
        r &= x
    return r


def _any(v):
    r = 0
    for x in v:
        r |= x
    return r


def _random_sequence(inputs: list, cycles: int, seed: int) -> list:
    rng = random.Random(seed)
    return [{i: rng.getrandbits(WIDTH) for i in inputs} for _ in range(cycles)]


# -- ISCAS-89 s27 --------------------------------------------------------------------------------
def test_s27_in_published_blif_style_reads_with_a_global_clock(tmp_path):
    # source: ISCAS-89 s27.bench (published); the BLIF is made from it in the style of the published
    # ISCAS-89 BLIF files (".latch G10 G5 0"), which netfit refused before ("no clock or enable net")
    bench = read_bench((DATA / "s27.bench").read_text())
    assert (len(bench["inputs"]), len(bench["outputs"])) == (4, 1)          # the file's header: 4 inputs, 1 output
    assert sum(k == "dff" for _, k, _ in bench["gates"]) == 3                # 3 D-type flip-flops
    src = tmp_path / "s27.blif"
    src.write_text(bench_to_blif(bench, "s27"))
    n = read_design(src)
    assert n.inputs == ["G0", "G1", "G2", "G3", "clock"] and n.clocks == ["clock"]
    assert {s.control for s in n.storage().values()} == {"clock"}
    assert len(n.notes) == 1 and "global clock" in n.notes[0].message and "'clock'" in n.notes[0].message
    seq = _random_sequence(bench["inputs"], 40, 27)
    want = run_bench(bench, seq)
    assert run_cycles(n, seq, MASK) == want


@pytest.mark.parametrize("target", TARGETS)
def test_s27_built_on_every_target_proved_and_simulated(tmp_path, target):
    bench = read_bench((DATA / "s27.bench").read_text())
    src = tmp_path / "s27.blif"
    src.write_text(bench_to_blif(bench, "s27"))
    design = read_design(src, quiet=True)
    r = flow.fit(design, flow.load_target(target), effort=1)
    assert r.analysis.verified == "proved"
    seq = _random_sequence(bench["inputs"], 40, 127)
    assert run_cycles(r.build.to_netlist(), seq, MASK) == run_bench(bench, seq)   # source: s27.bench itself


# -- the other published files, each on every target --------------------------------------------
PUBLISHED = ["s208.blif", "s344.blif", "dk27.blif", "beecount.blif", "mm4a.blif", "C17_mcnc.blif", "i4.blif"]


@pytest.mark.parametrize("target", TARGETS)
@pytest.mark.parametrize("name", PUBLISHED)
def test_published_file_built_proved_and_simulated(name, target):
    text = (DATA / name).read_text()
    plain = PlainBlif(text)
    design = read_design(DATA / name, quiet=True)
    assert design.outputs == plain.outputs
    assert [i for i in design.inputs if i not in design.clocks] == plain.inputs
    r = flow.fit(design, flow.load_target(target), effort=0)
    assert r.analysis.verified == "proved"
    seq = _random_sequence(plain.inputs, 30 if plain.latches else 8, sum(name.encode()))
    want = plain.run(seq)                                          # the independent reading of the file
    assert run_cycles(design, seq, MASK) == want
    assert run_cycles(r.build.to_netlist(), seq, MASK) == want


# -- each construct of the wild, on the published file that has it ------------------------------
def test_global_clock_latches_are_noted_in_inspect(netfit):
    code, info, err = netfit("inspect", DATA / "s344.blif", "--json", as_json=True)
    assert code == 0, err
    assert info["inputs"][-1] == "clock" and info["storage"] == 15          # s344: 15 flip-flops
    assert len(info["notes"]) == 1 and "15 latch(es) name no clock" in info["notes"][0]
    code, out, err = netfit("inspect", DATA / "s344.blif")
    assert "\nnotes\n" in out and "global clock" in out and "rising-edge flip-flops" in out


def test_timing_directive_in_iscas89_file_warns_once():
    n = read_design(DATA / "s208.blif", quiet=True)
    msgs = [w.message for w in n.warnings if "timing or load hints" in w.message]
    assert msgs == ["'.wire_load_slope' carries only timing or load hints; skipped"]
    assert [w.line for w in n.warnings if "wire_load_slope" in w.message] == [4]


def test_comments_blank_lines_and_unknown_initial_values():
    # mm4a: "##" comments and blank lines before .model, blanks after names; 12 latches, 4 of init 3
    n = read_design(DATA / "mm4a.blif", quiet=True)
    assert n.name == "MinMax4" and n.inputs[:7] == list("abcdefg") and n.outputs == list("tuvw")
    inits = sorted(s.init for s in n.storage().values())
    assert inits == [0] * 4 + [1] * 4 + [3] * 4
    # C17 as in the MCNC set: a comment header, OFF-set rows; ISCAS-85 c17 is 6 NAND2 gates (published)
    c17 = read_design(DATA / "C17_mcnc.blif", quiet=True)
    assert dict(c17.kind_counts()) == {"nand2": 6}
    assert c17.origin["1GAT(0)"][1] == 7


def test_continued_lines_and_no_end_in_mcnc_i4():
    n = read_design(DATA / "i4.blif", quiet=True)
    assert len(n.inputs) == 192 and n.inputs[8] == "V56(10)" and n.inputs[-1] == "V192(2)"
    # a name on a continued line is placed on its own physical line
    assert n.origin["V56(10)"][1] == 3 and n.origin["V192(2)"][1] == 25
    assert n.warnings == []
