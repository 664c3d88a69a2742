"""One design read from BLIF and from Verilog gets the same parts on every target (issue 19).

The BLIF of a design writes each node as a sum of products; netfit's own Verilog export writes
the same node as an expression, which the reader turns into a tree of small gates; and the
Verilog a person writes by hand may say it yet another way.  Here each design is written as

* the BLIF file itself;
* netfit's Verilog export of it (``mapper.write.verilog.netlist_text``), read back;
* ``assign`` statements of the test's own, each node as a product of sums (the clauses of its
  complement's cover), read back -- a spelling neither of the others uses;

and every target must build all three with the same number of parts, each build proved equal to
the file it was made from.  Before the part search mapped spellings made from the function of
small regions (``mapper.fit.spellings``), the 2-bit comparator took 4 NAND packages from its BLIF
and 5 from its Verilog, and the 7-segment decoder 11 and 13.

Designs: the textbook circuits of ``tests/data/textbook`` (common practice), ISCAS-85 c17
(Brglez and Fujiwara, ISCAS 1985) and the published MCNC and ISCAS-89 files of
``tests/data/published`` (see the README there for their sources).
"""
from __future__ import annotations

import re
import shutil
import subprocess
from pathlib import Path

import pytest

from mapper import flow
from mapper.logic.function import Function
from mapper.logic.regions import LIMIT, _leaves, _members, regions
from mapper.netlist import Logic, Storage
from mapper.read import read_design
from mapper.verify import check_equivalence
from mapper.write.verilog import netlist_text

DATA = Path(__file__).parent.parent / "data"
TEXTBOOK = sorted((DATA / "textbook").glob("*.blif")) + [DATA / "c17.blif"]
TARGETS = [t["name"] for t in flow.targets()]


def _widest_region(path: Path) -> int:
    design = read_design(path, quiet=True)
    return max((len(_leaves(design, m)) for m in _members(design, regions(design)).values()), default=0)


#: published files whose fan-out-free regions all fit a truth table (mapper.logic.regions.LIMIT
#: inputs): for these the spellings the search maps are the same from any file, so the parts are
#: too.  A wider region keeps its gates as written -- the open gap, pinned down below.
PUBLISHED = [p for p in sorted((DATA / "published").glob("*.blif")) if _widest_region(p) <= LIMIT]


def _name(net: str) -> str:
    return net if re.fullmatch(r"[A-Za-z_][A-Za-z0-9_]*", net) else "\\" + net + " "


def _product_of_sums(func: Function, ins: list) -> str:
    """``func`` over the nets ``ins`` as an AND of ORs: one clause per cube of its complement."""
    full = (1 << (1 << func.n)) - 1
    t = func.table()
    if t in (0, full):
        return "1'b1" if t else "1'b0"
    cubes, phase = Function.from_table(func.n, ~t & full).cover()
    clauses = ["(" + " | ".join(f"~{ins[j]}" if ch == "1" else ins[j] for j, ch in enumerate(c) if ch != "-") + ")"
               for c in cubes]
    expr = " & ".join(clauses)
    return expr if phase else f"~({expr})"


def assign_text(design) -> str:
    """``design`` as Verilog ``assign`` statements of products of sums (the test's own writer:
    Verilog-2001 continuous assignments, registers in ``always`` blocks)."""
    ports = list(design.inputs) + list(design.outputs)
    lines = [f"module {_name(design.name or 'top')} (" + ", ".join(_name(p) for p in ports) + ");"]
    lines += [f"  input {_name(i)};" for i in design.inputs]
    lines += [f"  output {_name(o)};" for o in design.outputs]
    lines += [f"  wire {_name(n)};" for n in design.nodes if n not in ports]
    for net, node in design.nodes.items():
        if isinstance(node, Storage):
            held = _name(net + "__held")
            if node.kind == "as":  # a feedback loop: written closed, read back as a loop again
                lines.append(f"  assign {_name(net)} = {_name(node.d)};")
                continue
            init = f" = 1'b{node.init}" if node.init in (0, 1) else ""
            lines.append(f"  reg {held}{init};")
            c, d = _name(node.control), _name(node.d)
            if node.kind in ("re", "fe"):
                lines.append(f"  always @({'posedge' if node.kind == 're' else 'negedge'} {c}) {held} <= {d};")
            else:
                lines.append(f"  always @* if ({c if node.kind == 'ah' else '!' + c}) {held} = {d};")
            lines.append(f"  assign {_name(net)} = {held};")
        elif isinstance(node, Logic):
            lines.append(f"  assign {_name(net)} = {_product_of_sums(node.func, [_name(f) for f in node.fanins])};")
    return "\n".join(lines + ["endmodule", ""])


def _spellings(path: Path, tmp_path: Path, writers=("export", "assign")) -> list:
    design = read_design(path, quiet=True)
    out = [design]
    for tag, text in (("export", netlist_text), ("assign", assign_text)):
        if tag not in writers:
            continue
        file = tmp_path / f"{path.stem}_{tag}.v"
        file.write_text(text(design))
        other = read_design(file, quiet=True)
        assert check_equivalence(design, other).equivalent  # the same logic, spelled otherwise
        out.append(other)
    # the spellings differ at the gate level (else the test would show nothing)
    assert len({len(d.nodes) for d in out}) > 1
    return out


def _same_parts(path: Path, target: str, tmp_path: Path, writers=("export", "assign")) -> None:
    t = flow.load_target(target)
    counts = []
    for design in _spellings(path, tmp_path, writers):
        build, analysis = flow.fit(design, t)
        assert analysis.verified == "proved"
        counts.append(len(build.parts))
    assert len(set(counts)) == 1, f"{path.stem} on {target}: BLIF, {', '.join(writers)}: {counts}"


def _has_logic(path: Path) -> bool:
    return any(isinstance(n, Logic) for n in read_design(path, quiet=True).nodes.values())


#: the one textbook build where the spellings still part ways (the gap, named): the loadable
#: counter on nand-only takes 20 packages from its BLIF and from the assign spelling, 19 from the
#: export -- the re-mapping that finds 19 starts from the best build so far, and that is the careful
#: builder's hand conversion of the design as written (which the spellings do not change)
_GAPS = {("loadcount4", "nand-only")}


def _textbook_cases():
    # a design of storage alone (the shift register) is spelled alike by every writer: nothing to test
    for path in TEXTBOOK:
        if not _has_logic(path):
            continue
        for target in TARGETS:
            marks = [pytest.mark.xfail(strict=True, reason="spellings part ways (see _GAPS)")] \
                if (path.stem, target) in _GAPS else []
            yield pytest.param(path, target, marks=marks, id=f"{path.stem}-{target}")


@pytest.mark.parametrize("path, target", list(_textbook_cases()))
def test_textbook_designs_get_the_same_parts_from_blif_and_verilog(path, target, tmp_path):
    _same_parts(path, target, tmp_path)


@pytest.mark.slow
@pytest.mark.parametrize("target", [t for t in TARGETS if t != "msi-74"])
@pytest.mark.parametrize("path", PUBLISHED, ids=lambda p: p.stem)
def test_published_files_get_the_same_parts_from_blif_and_verilog(path, target, tmp_path):
    # the BLIF and netfit's export (the assign writer's products of sums of these wide PLA nodes
    # are left to the textbook designs: they multiply the time of an already long check).  Not on
    # msi-74: its medium-scale chips are found in the design as written (mapper.fit.blocks), and
    # mm4a and s344 got 40 and 38, 21 and 24 parts from BLIF and export -- the open gap there.
    _same_parts(path, target, tmp_path, writers=("export",))



def _iverilog_rows(tmp_path: Path, text: str, design) -> list:
    """Every input combination through Icarus Verilog (an independent simulator) on ``text``:
    per row, the outputs in port order as a string of 0/1."""
    ins, outs = list(design.inputs), list(design.outputs)
    bench = ["module bench;", f"  reg [{len(ins) - 1}:0] v;", f"  wire [{len(outs) - 1}:0] w;",
             "  integer k;",
             f"  {_name(design.name or 'top')} dut (" + ", ".join(
                 [f".{_name(i)}(v[{k}])" for k, i in enumerate(ins)] +
                 [f".{_name(o)}(w[{k}])" for k, o in enumerate(outs)]) + ");",
             f"  initial begin for (k = 0; k < {1 << len(ins)}; k = k + 1) begin v = k; #1; "
             '$display("%b", w); end end', "endmodule"]
    (tmp_path / "design.v").write_text(text)
    (tmp_path / "bench.v").write_text("\n".join(bench) + "\n")
    subprocess.run(["iverilog", "-o", str(tmp_path / "sim"), str(tmp_path / "bench.v"), str(tmp_path / "design.v")],
                   check=True, capture_output=True)
    run = subprocess.run(["vvp", "-n", str(tmp_path / "sim")], check=True, capture_output=True, text=True)
    return [line[::-1] for line in run.stdout.split() if set(line) <= {"0", "1"}]


@pytest.mark.parametrize("path", [p for p in TEXTBOOK if not any(
    isinstance(n, Storage) for n in read_design(p, quiet=True).nodes.values())], ids=lambda p: p.stem)
def test_the_assign_writer_agrees_with_an_independent_simulator(path, tmp_path):
    # the test's own writer checked outside netfit: Icarus Verilog runs the assign statements on
    # every input combination, and each row must be what the BLIF's covers compute
    missing = [t for t in ("iverilog", "vvp") if shutil.which(t) is None]
    assert not missing, "iverilog not installed: `make debs` installs the outside simulator"
    design = read_design(path, quiet=True)
    rows = _iverilog_rows(tmp_path, assign_text(design), design)
    n = len(design.inputs)
    want = []
    for k in range(1 << n):
        values = {i: (k >> j) & 1 for j, i in enumerate(design.inputs)}
        for net in design.topological_order():
            node = design.nodes[net]
            if isinstance(node, Logic):
                values[net] = node.func(*(values[f] for f in node.fanins))
        want.append("".join(str(values[o]) for o in design.outputs))
    assert rows == want


def test_the_published_files_left_out_are_those_with_regions_wider_than_a_table():
    # the gap, named: i4 (MCNC) has fan-out-free regions of up to 47 inputs and s208.1 (ISCAS-89)
    # one of 18; their wide regions keep the gates the file wrote, and there BLIF and Verilog still
    # differ (measured on nand-only: i4 77 parts from its BLIF and 85 from its export, s208 43 and
    # 44).  Any other published file that grows such a region shows up here.
    wide = {p.stem: _widest_region(p) for p in sorted((DATA / "published").glob("*.blif")) if p not in PUBLISHED}
    assert wide == {"i4": 47, "s208": 18}
