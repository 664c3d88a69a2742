"""Sizes bounded before they are built (mapper/limits.py and the readers and loaders that use it).

Boundedness is shown structurally, never by timing: the step that would
allocate is replaced by one that fails the test if it is reached, and the
refusal must come first, with a message that names the limit and the
environment variable that raises it.  Hostile inputs are made at test time
from a few lines of code (the small ones are kept as files in the invalid
corpora of tests/read/blif and tests/catalog).
"""
from __future__ import annotations

import json
import math
import random
from pathlib import Path

import pytest

from mapper import limits
from mapper.catalog import CatalogError, load_catalog
from mapper.errors import InputError, UsageError
from mapper.logic.function import Function
from mapper.netlist import Netlist
from mapper.read import blif, read_design
from mapper.read.blif import BlifError
from mapper.write.json import dumps, finite

HERE = Path(__file__).parent
BLIF_INVALID = HERE / "read" / "blif" / "invalid"
CATALOGS_INVALID = HERE / "catalog" / "catalogs" / "invalid"


def _never(what):
    def fail(*args, **kwargs):
        raise AssertionError(f"{what} was reached: the limit must refuse the input before it")
    return fail


def _nested(depth: int, path: Path, internal: bool = False) -> Path:
    body = ".names i t\n1 1\n.names t o\n1 1\n" if internal else ".names i o\n0 1\n"
    parts = [f".model m{k}\n.inputs i\n.outputs o\n.subckt m{k + 1} i=i o=o\n.end\n" for k in range(depth)]
    parts.append(f".model m{depth}\n.inputs i\n.outputs o\n{body}.end\n")
    path.write_text("".join(parts))
    return path


# -- hierarchies ---------------------------------------------------------------------------------
def test_doubling_hierarchy_is_counted_not_built(monkeypatch):
    monkeypatch.setattr(blif._Reader, "flatten", _never("flattening"))
    with pytest.raises(BlifError) as exc:
        blif.read(BLIF_INVALID / "doubling_hierarchy.blif")
    d = exc.value.first
    assert "expands to 1099511627776 nodes" in d.message and "NETFIT_MAX_NODES" in d.message


def test_ten_thousand_nested_models_refused_before_flattening(tmp_path, monkeypatch):
    path = _nested(10_000, tmp_path / "deep.blif")
    monkeypatch.setattr(blif._Reader, "flatten", _never("flattening"))
    with pytest.raises(BlifError) as exc:
        blif.read(path)
    d = exc.value.first
    assert "is 10001 levels deep" in d.message and "NETFIT_MAX_DEPTH" in d.message and d.line == 4


def test_deep_hierarchy_names_one_segment_per_level(tmp_path, monkeypatch):
    # with the limit raised, 10,000 levels flatten; the ports are passed straight down, so no instance
    # path is ever joined: the memory of names grows with the depth, not with its square
    monkeypatch.setenv("NETFIT_MAX_DEPTH", "20000")
    joined = []
    real = blif._Frame.prefix
    monkeypatch.setattr(blif._Frame, "prefix", lambda self: joined.append(1) or real(self))
    n = blif.read(_nested(10_000, tmp_path / "deep.blif"))
    assert n.nodes["o"].fanins == ("i",) and joined == []
    # an internal net at the bottom: one path joined, once
    n = blif.read(_nested(3_000, tmp_path / "deep2.blif", internal=True))
    assert len(joined) == 2 and sum(1 for k in n.nodes if k.endswith("/t")) == 1


def test_node_limit_of_a_flat_file_stops_reading(tmp_path, monkeypatch):
    monkeypatch.setenv("NETFIT_MAX_NODES", "100")
    p = tmp_path / "flat.blif"
    p.write_text(".model f\n.inputs a\n.outputs n199\n" + "".join(f".names a n{k}\n1 1\n" for k in range(200)))
    with pytest.raises(BlifError) as exc:
        blif.read(p)
    assert exc.value.first.line == 4 + 2 * 100 and "101 is more than the limit of 100" in exc.value.first.message


def test_search_chain_stops_at_the_file_limit(tmp_path, monkeypatch):
    monkeypatch.setenv("NETFIT_MAX_FILES", "2")
    for k in range(4):
        (tmp_path / f"f{k}.blif").write_text(f".search f{k + 1}.blif\n.model m{k}\n.inputs a\n.outputs a\n.end\n")
    with pytest.raises(BlifError) as exc:
        blif.read(tmp_path / "f0.blif")
    assert any("would be file 3 of this design" in d.message and "NETFIT_MAX_FILES" in d.message
               for d in exc.value.diagnostics)


# -- errors, file sizes --------------------------------------------------------------------------
def test_a_binary_file_of_ten_megabytes_stops_after_fifty_errors(tmp_path):
    rng = random.Random(10)
    p = tmp_path / "noise.blif"
    p.write_bytes(rng.randbytes(10 * 2**20))
    with pytest.raises(BlifError) as exc:
        blif.read(p)
    diags = exc.value.diagnostics
    assert len(diags) == 51 and "reading stopped after 50 errors" in diags[-1].message
    assert "NETFIT_MAX_ERRORS" in diags[-1].message


def test_error_limit_can_be_lowered(tmp_path, monkeypatch):
    monkeypatch.setenv("NETFIT_MAX_ERRORS", "5")
    p = tmp_path / "bad.blif"
    p.write_text(".model m\n" + "1x 1\n" * 100)
    with pytest.raises(BlifError) as exc:
        blif.read(p)
    assert len(exc.value.diagnostics) == 6


def test_file_size_is_checked_before_any_reader_runs(tmp_path, monkeypatch, netfit):
    monkeypatch.setenv("NETFIT_MAX_FILE_BYTES", "1000")
    monkeypatch.setattr(blif, "read", _never("the BLIF reader"))
    p = tmp_path / "big.blif"
    p.write_text(".model m\n.inputs a\n.outputs a\n" + "# filler\n" * 300)
    with pytest.raises(InputError, match="is more than the limit of 1000 bytes in one design file"):
        read_design(p)
    code, _, err = netfit("inspect", p)
    assert code == 2 and f"{p}: error: the file is" in err and "NETFIT_MAX_FILE_BYTES" in err


def test_a_limit_set_to_nonsense_is_a_usage_error(monkeypatch, netfit, tmp_path):
    monkeypatch.setenv("NETFIT_MAX_NODES", "lots")
    with pytest.raises(UsageError, match="NETFIT_MAX_NODES='lots'"):
        limits.value("nodes")
    p = tmp_path / "a.blif"
    p.write_text(".model m\n.inputs a\n.outputs a\n.end\n")
    code, _, err = netfit("inspect", p)
    assert code == 2 and "NETFIT_MAX_NODES" in err and "Traceback" not in err


# -- the netlist ---------------------------------------------------------------------------------
class _CountingList(list):
    tests = 0

    def __contains__(self, x):
        type(self).tests += 1
        return super().__contains__(x)


def test_outputs_are_checked_with_a_set_not_the_list():
    n = Netlist("many")
    n.add_input("a")
    n.outputs = _CountingList()
    for k in range(2000):
        n.add_logic(f"o{k}", ["a"], Function.from_table(1, 0b10))
        n.add_output(f"o{k}")
    with pytest.raises(InputError, match="declared twice"):
        n.add_output("o7")
    assert _CountingList.tests == 0


def test_many_loops_are_reported_up_to_the_error_limit():
    n = Netlist("loops")
    inv = Function.from_table(1, 0b01)
    for k in range(120):
        n.add_logic(f"a{k}", [f"b{k}"], inv)
        n.add_logic(f"b{k}", [f"a{k}"], inv)
        n.add_output(f"a{k}")
    with pytest.raises(InputError) as exc:
        n.check()
    diags = exc.value.diagnostics
    assert len(diags) == 51 and "70 more" in diags[-1].message
    assert all("combinational loop" in d.message for d in diags[:50])


def test_a_design_without_outputs_is_warned_about(tmp_path, netfit):
    p = tmp_path / "none.blif"
    p.write_text(".model none\n.inputs a\n.names a t\n1 1\n.end\n")
    n = read_design(p, quiet=True)
    assert any("has no outputs" in w.message and w.line == 2 for w in n.warnings)
    code, out, err = netfit("inspect", p)
    assert code == 0 and "has no outputs" in out


# -- catalogs ------------------------------------------------------------------------------------
def test_pin_count_is_refused_before_pins_are_given_out(monkeypatch):
    from mapper.catalog import catalogs
    monkeypatch.setattr(catalogs, "_PinClaims", _never("giving out pins"))
    for name in ("pins_twenty_million.xml", "pins_int_max.xml", "pins_five_thousand_digits.xml"):
        with pytest.raises(CatalogError, match="NETFIT_MAX_PART_PINS"):
            load_catalog(CATALOGS_INVALID / name)


def test_empty_catalog_and_target_files_get_line_one(tmp_path, netfit):
    catalog = tmp_path / "empty_catalog.xml"
    catalog.write_text("")
    with pytest.raises(CatalogError) as exc:
        load_catalog(catalog)
    assert exc.value.first.line == 1
    target = tmp_path / "empty_target.xml"
    target.write_text("")
    code, _, err = netfit("targets", target)
    assert code == 2 and f"{target}:1:1: error: malformed XML" in err


def test_schema_errors_name_the_attribute_and_its_value(tmp_path):
    src = (HERE.parent / "libraries" / "74hc.xml").read_text()
    cases = {
        'pins="14"': ('pins="many"', '<package pins="many">: pins must be a whole number from 1'),
        'kind="chip"': ('kind="chipp"', '<part kind="chipp">: kind must be one of "chip", "relay", "support"'),
        '<package name="DIP-14"': ('<package colour="red" name="DIP-14"',
                                   '<package> has no attribute colour (it has: '),
        ' name="DIP-14"': ("", '<package> needs the attribute name="..."'),
    }
    for old, (new, words) in cases.items():
        p = tmp_path / "c.xml"
        p.write_text(src.replace(old, new, 1))
        with pytest.raises(CatalogError) as exc:
            load_catalog(p)
        assert any(words in d.message and d.line for d in exc.value.diagnostics), \
            [str(d) for d in exc.value.diagnostics]


# -- figures -------------------------------------------------------------------------------------
def test_json_never_carries_infinity_or_nan():
    text = dumps({"delay_s": float("inf"), "nodes": [{"x": float("nan")}], "ok": 1.5})
    data = json.loads(text)   # standard JSON: Python's reader would also take Infinity; the text must not hold it
    assert "Infinity" not in text and "NaN" not in text
    assert data == {"delay_s": None, "nodes": [{"x": None}], "ok": 1.5}
    assert finite((1.0, -math.inf)) == [1.0, None]
