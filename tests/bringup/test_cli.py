"""``netfit bringup``: text, --json and --csv, the coverage line, refusals.

The levels checked here come from the published c17 gate list (ISCAS-85,
Brglez and Fujiwara 1985), evaluated by the test itself.
"""
from __future__ import annotations

import csv
import io

C17 = {"N10": ("N1", "N3"), "N11": ("N3", "N6"), "N16": ("N2", "N11"),
       "N19": ("N11", "N7"), "N22": ("N10", "N16"), "N23": ("N16", "N19")}


def _c17(v: dict) -> dict:
    v = dict(v)
    for g, (a, b) in C17.items():
        v[g] = 1 - (v[a] & v[b])
    return {"N22": v["N22"], "N23": v["N23"]}


def test_text_has_settings_table_and_coverage(netfit):
    code, out, err = netfit("bringup", "tests/data/c17.blif", "-t", "gates-74", "-q")
    assert code == 0, err
    assert "settings (inputs -> expected outputs" in out and "diagnosis" in out and "procedure" in out
    assert "coverage: 22 detected of 22 detectable fault classes (100.0%); 22 classes from 46 faults" in out
    # the catalog's word on open inputs, with its source
    assert "74HC00" in out and "either" in out and "generic 74HC datasheets" in out


def test_json_levels_match_the_published_gate_list(netfit):
    code, data, err = netfit("bringup", "tests/data/c17.blif", "-t", "nand-only", "--json", as_json=True)
    assert code == 0
    assert "coverage: 22 detected" in err   # the coverage is always printed, on stderr beside JSON
    assert data["faults_total"] == 46 and data["fault_classes"] == 22
    assert data["detected"] == data["detectable"] == 22 and data["coverage_percent"] == 100.0
    assert data["input_combinations"] == 32
    for s in data["settings"]:
        assert s["outputs"] == _c17(s["inputs"])
        for p in s["probes"]:   # a probe's expected level is the net's level in the published netlist
            v = dict(s["inputs"])
            for g, (a, b) in C17.items():
                v[g] = 1 - (v[a] & v[b])
            assert p["level"] == v[p["net"]]
    statuses = {c["status"] for c in data["classes"]}
    assert statuses == {"detected"}
    for row in data["dictionary"]:
        assert row["suspects"] and row["output"] in ("N22", "N23")


def test_csv_rows_are_the_settings(netfit):
    code, out, err = netfit("bringup", "tests/data/c17.blif", "-t", "nand-only", "--csv")
    assert code == 0 and "coverage:" in err
    rows = list(csv.DictReader(io.StringIO(out)))
    assert rows and [int(r["setting"]) for r in rows] == list(range(1, len(rows) + 1))
    for r in rows:
        v = {n: int(r[f"in:{n}"]) for n in ("N1", "N2", "N3", "N6", "N7")}
        assert _c17(v) == {"N22": int(r["out:N22"]), "N23": int(r["out:N23"])}


def test_refusals_are_usage_errors(netfit):
    code, out, err = netfit("bringup", "tests/data/published/dk27.blif", "-t", "relay-spdt")
    assert code == 2 and "not made yet" in err and not out
    code, out, err = netfit("bringup", "tests/data/nonexistent.blif", "-t", "gates-74")
    assert code == 2


def test_failed_names_the_faults_that_explain_them(netfit):
    code, data, _ = netfit("bringup", "tests/data/c17.blif", "-t", "gates-74", "--json", as_json=True)
    # each class's own failures, given back, put its places first
    for c in data["classes"][:8]:
        fails = [(row["setting"], row["output"]) for row in data["dictionary"] if c["class"] in row["classes"]]
        arg = ",".join(f"{s}:{o}" for s, o in fails)
        code, out, err = netfit("bringup", "tests/data/c17.blif", "-t", "gates-74", "--failed", arg)
        assert code == 0 and "coverage:" in err
        listed = [ln.strip().split("  (")[0] for ln in out.splitlines()[1:]]
        assert set(c["places"]) <= set(listed[:len(c["places"]) + 4]), (c, listed)
    code, out, err = netfit("bringup", "tests/data/c17.blif", "-t", "gates-74", "--failed", "99:N22")
    assert code == 2 and "--failed" in err


def test_sequences_of_the_textbook_counter(netfit, tmp_path):
    # the textbook 4-bit counter (tests/data/textbook/counter4.blif, common practice) counts 0, 1, 2, ... from
    # its start, one count per clock pulse: the expected outputs of step s are s - 1 in binary
    code, data, err = netfit("bringup", "tests/data/textbook/counter4.blif", "-t", "gates-74", "--json",
                             as_json=True)
    assert code == 0 and "coverage:" in err
    assert data["sequential"] and data["clock_inputs"] == ["clk"] and data["inputs"] == []
    assert [s["level"] for s in data["start"]] == [0, 0, 0, 0]
    for s in data["settings"]:
        assert [s["outputs"][f"q{i}"] for i in range(4)] == [(s["step"] - 1) >> i & 1 for i in range(4)]
    # q3 rises first after 8 pulses: q3 reading 0 at step 9 points at the wires of q3's flip-flop
    code, out, err = netfit("bringup", "tests/data/textbook/counter4.blif", "-t", "gates-74", "--failed", "9:q3")
    assert code == 0 and "net q3" in out


def test_a_clock_that_feeds_gates_is_refused_plainly(netfit, tmp_path):
    path = tmp_path / "gated.blif"   # the clock read by a gate as data: not made yet, said plainly
    path.write_text(".model g\n.inputs clk a\n.outputs y\n.latch d q re clk 0\n.names a q d\n10 1\n01 1\n"
                    ".names clk q y\n11 1\n.end\n")
    code, out, err = netfit("bringup", path, "-t", "gates-74")
    assert code == 2 and "clock" in err and "not made yet" in err and not out
