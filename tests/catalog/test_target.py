"""Tests of catalogs and targets (mapper/catalog/, libraries/*.xml, targets/*.xml).

Outside sources used here, named beside each check:
* the standard DIP pinouts of the 74-series parts, written out below pin by pin
  the way the generic family datasheets list them (pin 1 first), independently
  of the catalog files; the rows TRADE-FACTS.md marks "from memory" (and the
  '75 and '157 data pins, which it leaves to the datasheet) are marked so here;
* the logic function each part is sold as (generic family datasheets), written
  as Python truth functions, against which each cell's expression is simulated;
* Ohm's law (a coil's current is its voltage over its resistance; textbook);
* figures quoted in TRADE-FACTS.md from the generic family datasheets (HC NAND2
  7 ns typical, HC inverter 21 ns maximum at 85 °C, fan-out 10 / 20 LS loads).
"""
from __future__ import annotations

import itertools
import json
import re
from pathlib import Path

import pytest

from mapper.catalog import (
    CatalogError,
    Figure,
    TargetError,
    builtin_catalogs,
    builtin_targets,
    describe_target,
    load_catalog,
    load_target,
)
from mapper.errors import Diagnostic, InputError
from mapper.units import parse_quantity

HERE = Path(__file__).parent
LIBS = HERE.parent.parent / "libraries"
TARGETS = HERE.parent.parent / "targets"

# -- independent statement of the standard pinouts ------------------------------------------------
# Pin 1 first, as the generic family datasheets print the pin list.  "1A" is input A of unit 1;
# QN is the inverted output, CLR_N / PRE_N active-low clear / preset; EN12 is the enable shared by
# latches 1 and 2.  source: generic 74-series datasheets, except where marked from memory.
PINOUTS = {
    "00": ("1A 1B 1Y 2A 2B 2Y GND 3Y 3A 3B 4Y 4A 4B VCC", "generic datasheets"),
    "02": ("1Y 1A 1B 2Y 2A 2B GND 3A 3B 3Y 4A 4B 4Y VCC", "generic datasheets"),
    "04": ("1A 1Y 2A 2Y 3A 3Y GND 4Y 4A 5Y 5A 6Y 6A VCC", "from memory"),
    "08": ("1A 1B 1Y 2A 2B 2Y GND 3Y 3A 3B 4Y 4A 4B VCC", "from memory"),
    "32": ("1A 1B 1Y 2A 2B 2Y GND 3Y 3A 3B 4Y 4A 4B VCC", "from memory"),
    "86": ("1A 1B 1Y 2A 2B 2Y GND 3Y 3A 3B 4Y 4A 4B VCC", "from memory"),
    "10": ("1A 1B 2A 2B 2C 2Y GND 3Y 3A 3B 3C 1Y 1C VCC", "generic datasheets"),
    "11": ("1A 1B 2A 2B 2C 2Y GND 3Y 3A 3B 3C 1Y 1C VCC", "from memory"),
    "27": ("1A 1B 2A 2B 2C 2Y GND 3Y 3A 3B 3C 1Y 1C VCC", "from memory"),
    "20": ("1A 1B NC 1C 1D 1Y GND 2Y 2A 2B NC 2C 2D VCC", "generic datasheets"),
    "30": ("1A 1B 1C 1D 1E 1F GND 1Y NC NC 1G 1H NC VCC", "generic datasheets"),
    "74": ("1CLR_N 1D 1CLK 1PRE_N 1Q 1QN GND 2QN 2Q 2PRE_N 2CLK 2D 2CLR_N VCC", "generic datasheets"),
    # supply and enable pins: generic datasheets; data and output pins: from memory
    "75": ("1QN 1D 2D EN34 VCC 3D 4D 4QN 4Q 3Q 3QN GND EN12 2QN 2Q 1Q", "from memory"),
    # select, enable and supply pins: generic datasheets; data and output pins: from memory
    "157": ("S 1A 1B 1Y 2A 2B 2Y GND 3Y 3B 3A 4Y 4B 4A E_N VCC", "from memory"),
}
# shared pins: which slots each one serves (and under which cell pin)
SHARED = {"75": {"EN12": ("EN", (1, 2)), "EN34": ("EN", (3, 4))},
          "157": {"S": ("S", (1, 2, 3, 4)), "E_N": ("E_N", (1, 2, 3, 4))}}
# relays: generic numbering recalled from memory (makers differ)
RELAY_PINOUTS = {
    "RLY-SPDT-5V": "COIL+ COIL- 1COM 1NC 1NO",
    "RLY-SPDT-12V": "COIL+ COIL- 1COM 1NC 1NO",
    "RLY-DPDT-5V": "COIL+ NC NC 1COM NC 1NC NC 1NO 2NO NC 2NC NC 2COM NC NC COIL-",
    "RLY-DPDT-12V": "COIL+ NC NC 1COM NC 1NC NC 1NO 2NO NC 2NC NC 2COM NC NC COIL-",
}


def _expected_layout(listing: str, shared: dict):
    """(slots {index: {pin: number}}, supply {name: number}, nc [numbers]) from a pin list."""
    slots: dict = {}
    supply: dict = {}
    nc: list = []
    named: dict = {}
    for number, tok in enumerate(listing.split(), 1):
        m = re.fullmatch(r"(\d)([A-Z][A-Z_]*)", tok)
        if tok in ("VCC", "GND"):
            supply[tok] = number
        elif tok == "NC":
            nc.append(number)
        elif m:
            slots.setdefault(int(m.group(1)), {})[m.group(2)] = number
        else:
            named[tok] = number
    for name, (pin, idxs) in shared.items():
        for i in idxs:
            slots[i][pin] = named[name]
    return slots, supply, nc, named


@pytest.mark.parametrize("family", ["HC", "LS"])
@pytest.mark.parametrize("number", sorted(PINOUTS, key=int))
def test_chip_pinouts_match_the_standard(family, number):
    parts, _ = load_catalog(LIBS / f"74{family.lower()}.xml")
    part = parts[f"74{family}{number}"]
    listing, _source = PINOUTS[number]  # source named in the table above
    slots, supply, nc, named = _expected_layout(listing, SHARED.get(number, {}))
    assert part.pin_count == len(listing.split())
    assert part.package == f"DIP-{part.pin_count}"
    assert len(part.slots) == len(slots)  # slot count
    assert {s.index: s.pins for s in part.slots} == slots
    assert part.supply_pins == supply
    assert sorted(part.nc_pins) == nc
    assert part.shared_pins == named


@pytest.mark.parametrize("pid", sorted(RELAY_PINOUTS))
def test_relay_pinouts_and_pin_names(pid):
    parts, _ = load_catalog(LIBS / "relays.xml")
    part = parts[pid]
    names = RELAY_PINOUTS[pid].split()  # from memory (see above)
    # the wiring list prints the pole terminals as NO1, COM2 ...
    want = {n: re.sub(r"^(\d)(COM|NO|NC)$", r"\2\1", t) for n, t in enumerate(names, 1)}
    assert part.pin_names() == want
    poles = 2 if "DPDT" in pid else 1
    assert part.relay.poles == poles and len(part.slots) == poles and part.relay.form == "C"


# -- each cell simulated against what its part is sold as -------------------------------------------
# source: generic 74-series datasheets (function tables); the '157 output is low while enable is high
SOLD_AS = {
    "00": ("nand2", lambda a, b: not (a and b)),
    "02": ("nor2", lambda a, b: not (a or b)),
    "04": ("inv", lambda a: not a),
    "08": ("and2", lambda a, b: a and b),
    "32": ("or2", lambda a, b: a or b),
    "86": ("xor2", lambda a, b: a != b),
    "10": ("nand3", lambda a, b, c: not (a and b and c)),
    "11": ("and3", lambda a, b, c: a and b and c),
    "27": ("nor3", lambda a, b, c: not (a or b or c)),
    "20": ("nand4", lambda a, b, c, d: not (a and b and c and d)),
    "30": ("nand8", lambda *x: not all(x)),
    "157": ("mux2", lambda a, b, s, e_n: False if e_n else (b if s else a)),
}


@pytest.mark.parametrize("family", ["HC", "LS"])
@pytest.mark.parametrize("number", sorted(SOLD_AS, key=int))
def test_cell_functions_simulate_to_the_part_function(family, number):
    parts, cells = load_catalog(LIBS / f"74{family.lower()}.xml")
    part = parts[f"74{family}{number}"]
    name, truth = SOLD_AS[number]
    assert {s.cell for s in part.slots} == {name}
    cell = cells[name]
    assert cell.storage is None and cell.output == "Y"
    n = len(cell.inputs)
    for bits in itertools.product((0, 1), repeat=n):
        assert cell.function(*bits) == int(bool(truth(*bits))), (name, bits)


def test_relay_pole_function():
    # common practice of relay logic: the common terminal meets NO while the coil is energized, else NC
    _, cells = load_catalog(LIBS / "relays.xml")
    c = cells["changeover"]
    for coil, no, nc in itertools.product((0, 1), repeat=3):
        assert c.function(*[dict(COIL=coil, NO=no, NC=nc)[p] for p in c.inputs]) == (no if coil else nc)


@pytest.mark.parametrize("family", ["HC", "LS"])
def test_storage_cells(family):
    # generic datasheets: the '74 takes D on the rising clock edge, with active-low preset and clear;
    # the '75 latch is transparent while its enable is high
    parts, cells = load_catalog(LIBS / f"74{family.lower()}.xml")
    ff, latch = cells["dff_pc"], cells["latch"]
    assert (ff.storage, ff.function, ff.output, ff.extra_outputs) == ("re", None, "Q", ("QN",))
    assert ff.inputs == ("D", "CLK", "PRE_N", "CLR_N")
    assert ff.roles == {"D": "data", "CLK": "clock", "PRE_N": "preset", "CLR_N": "clear"}
    assert set(ff.active_low) == {"PRE_N", "CLR_N"}
    assert (latch.storage, latch.inputs, latch.extra_outputs) == ("ah", ("D", "EN"), ("QN",))
    assert parts[f"74{family}74"].slots_for("dff_pc")[1].index == 2


# -- figures ----------------------------------------------------------------------------------------
ALLOWED_SOURCE = re.compile(r"^(generic [\w .'\-]+ datasheets|common practice|from memory|example price)$")


@pytest.mark.parametrize("name", ["74hc", "74ls", "relays", "support"])
def test_every_number_carries_an_allowed_source(name):
    from lxml import etree
    root = etree.parse(str(LIBS / f"{name}.xml")).getroot()
    figures = root.xpath("//*[@value] | //contact-rating | //pinout")
    assert figures
    for el in figures:
        assert ALLOWED_SOURCE.match(el.get("source") or ""), (el.tag, el.sourceline, el.get("source"))
    parts, _ = load_catalog(LIBS / f"{name}.xml")
    for p in parts.values():
        for label, f in p.figures():
            assert ALLOWED_SOURCE.match(f.source), (p.id, label)
        if p.kind == "chip":  # delays state voltage, load and temperature
            for f in list(p.delay_typ.values()) + list(p.delay_max.values()):
                assert re.search(r"\d V, \d+ pF, -?\d+ °C", f.conditions), (p.id, f.conditions)
        if p.price is not None:
            assert p.price_source == "example price" and p.currency == "USD"


def test_figures_quoted_in_the_trade_facts():
    hc, _ = load_catalog(LIBS / "74hc.xml")
    ls, _ = load_catalog(LIBS / "74ls.xml")
    # generic 74HC datasheets: NAND2 7 ns typical at 5 V, 15 pF; inverter at most 21 ns at 4.5 V, 50 pF, 85 °C
    assert hc["74HC00"].delay_typ["nand2"] == Figure(7e-9, "generic 74HC datasheets", "5 V, 15 pF, 25 °C")
    assert hc["74HC04"].delay_max["inv"].value == pytest.approx(21e-9)
    assert "4.5 V, 50 pF, 85 °C" in hc["74HC04"].delay_max["inv"].conditions
    # generic datasheets: HC drives 10 LS loads, LS drives 20; an HC package idles at <= 2 uA
    assert hc["74HC00"].output_drive.value == 10 and ls["74LS00"].output_drive.value == 20
    assert hc["74HC00"].current_quiescent.value == pytest.approx(2e-6)
    # generic 74LS datasheets: '00 takes at most 1.6 mA with outputs high, 4.4 mA with all four low
    p = ls["74LS00"]
    assert p.current_quiescent.value + 4 * p.current_per_unit.value == pytest.approx(4.4e-3)
    for parts in (hc, ls):
        for q in parts.values():
            for cell in q.delay_typ:
                assert q.delay_typ[cell].value <= q.delay_max[cell].value


def test_relay_coils_obey_ohms_law():
    parts, _ = load_catalog(LIBS / "relays.xml")
    for p in parts.values():
        r = p.relay
        # Ohm's law: I = V / R (figures are rounded: within 5 %)
        assert r.coil_current.value == pytest.approx(r.coil_voltage.value / r.coil_resistance.value, rel=0.05)
        assert r.operate_time.value <= 10e-3 and r.bounce_time.value <= r.operate_time.value


def test_quantities():
    assert parse_quantity("7 ns") == (7e-9, "s")
    assert parse_quantity("10 kohm") == (1e4, "ohm")
    assert parse_quantity("2.88 kΩ") == (2880.0, "ohm")
    assert parse_quantity("0.30") == (0.3, "")
    with pytest.raises(ValueError):
        parse_quantity("5 m")


# -- targets ----------------------------------------------------------------------------------------
def test_builtin_targets_are_named_after_their_files():
    names = [n for n, _ in builtin_targets()]
    assert names == sorted(p.stem for p in TARGETS.glob("*.xml"))
    assert set(names) >= {"nand-only", "nor-only", "gates-74", "gates-74ls", "relay-spdt", "relay-dpdt",
                          "relay-spdt-12v", "relay-dpdt-12v"}
    assert builtin_catalogs() == ["74hc", "74ls", "relays", "support"]
    # every part of every catalog is on some built-in target (a part no target uses cannot be ordered)
    used = {pid for name, _ in builtin_targets() for ids in load_target(name).carriers.values() for pid in ids}
    for lib in ("74hc", "74ls", "relays"):
        parts, _ = load_catalog(LIBS / f"{lib}.xml")
        assert set(parts) <= used, (lib, sorted(set(parts) - used))
    for name, desc in builtin_targets():
        t = load_target(name)
        assert t.name == name and t.description == desc and "\n" not in desc
        assert t.objective == ("parts", "delay", "wires")
        for cell, ids in t.carriers.items():
            assert ids and all(t.parts[i].slots_for(cell) for i in ids)


def test_nand_and_nor_only():
    t = load_target("nand-only")
    assert list(t.cells) == ["nand2"] and t.carriers == {"nand2": ["74HC00"]}
    assert [(r.part, r.per, r.count) for r in t.support_rules] == [("C-100N", "chip", 1)]
    assert set(t.parts) == {"74HC00", "C-100N"}
    t = load_target("nor-only")
    assert t.carriers == {"nor2": ["74HC02"]} and t.kind == "gates"


def test_gates_74_covers_the_hc_set():
    t = load_target("gates-74")
    want = {"nand2": "74HC00", "nor2": "74HC02", "inv": "74HC04", "and2": "74HC08", "or2": "74HC32",
            "xor2": "74HC86", "nand3": "74HC10", "and3": "74HC11", "nor3": "74HC27", "nand4": "74HC20",
            "nand8": "74HC30", "dff_pc": "74HC74", "latch": "74HC75", "mux2": "74HC157"}
    assert {c: ids[0] for c, ids in t.carriers.items()} == want


@pytest.mark.parametrize("name,part,poles", [("relay-spdt", "RLY-SPDT-5V", 1), ("relay-dpdt", "RLY-DPDT-5V", 2)])
def test_relay_targets(name, part, poles):
    t = load_target(name)
    assert t.kind == "relay" and t.carriers == {"changeover": [part]}
    assert t.parts[part].relay.poles == poles
    assert t.supply_voltage.value == 5.0
    assert part.replace("5V", "12V") in t.available  # the 12 V variant is in the catalog
    rules = {(r.part, r.per) for r in t.support_rules}
    assert rules == {("D-1N4148", "coil"), ("R-10K", "relay-driven-net"), ("D-SS14", "steering")}
    assert t.parts["R-10K"].ratings["resistance"].value == 1e4


def _user_target(tmp_path: Path) -> Path:
    """A user's own 24 V relay and local prices, in a catalog beside the target."""
    (tmp_path / "mine").mkdir()
    cat = (LIBS / "relays.xml").read_text(encoding="utf-8")
    part = re.search(r'  <part id="RLY-SPDT-12V".*?</part>\n', cat, re.S).group(0)
    part = (part.replace("RLY-SPDT-12V", "K-24V-OWN").replace('"12 V"', '"24 V"')
            .replace("720 ohm", "2880 ohm").replace("16.7 mA", "8.3 mA")
            .replace('<price value="1.20" source="example price"/>',
                     '<price value="2.40" currency="EUR" source="my local shop"/>'))
    head = cat[:cat.index("  <part ")]
    (tmp_path / "mine" / "drawer.xml").write_text(head.replace('name="relays"', 'name="drawer"') + part +
                                                  "</catalog>\n", encoding="utf-8")
    target = tmp_path / "mine" / "relay-24.xml"
    target.write_text('''<?xml version="1.0" encoding="UTF-8"?>
<target name="relay-24" kind="relay">
  <description>the 24 V relays in my drawer</description>
  <catalog src="drawer.xml"/>
  <catalog src="support"/>
  <use cell="changeover"><carrier part="K-24V-OWN"/></use>
  <support part="D-1N4148" per="coil"/>
  <support part="R-10K" per="relay-driven-net"/>
  <supply value="24 V" source="my bench supply"/>
</target>
''', encoding="utf-8")
    return target


def test_user_target_with_its_own_catalog(tmp_path, netfit, monkeypatch):
    target = _user_target(tmp_path)
    t = load_target(str(target))
    p = t.parts["K-24V-OWN"]
    assert p.relay.coil_voltage.value == 24 and p.currency == "EUR" and p.price.value == 2.4
    assert p.source_file.endswith("drawer.xml") and t.supply_voltage.value == 24
    assert t.objective == ("parts", "delay", "wires")  # the default when the file names none
    # relative path from elsewhere, and through the command line
    monkeypatch.chdir(tmp_path)
    assert load_target("mine/relay-24.xml").name == "relay-24"
    code, out, err = netfit("targets", "mine/relay-24.xml", "--json", as_json=True)
    assert code == 0, err
    assert out["name"] == "relay-24" and out["parts"][0]["id"] == "K-24V-OWN"
    assert out["supply_voltage_v"]["value"] == 24


def test_user_catalog_errors_point_into_the_catalog(tmp_path, netfit):
    target = _user_target(tmp_path)
    cat = tmp_path / "mine" / "drawer.xml"
    text = cat.read_text(encoding="utf-8").replace('<pin name="NO" number="5"/>', '<pin name="NO" number="9"/>')
    cat.write_text(text, encoding="utf-8")
    line = next(i for i, l in enumerate(text.splitlines(), 1) if 'number="9"' in l)
    code, out, err = netfit("targets", target)
    assert code == 2 and out == ""
    assert f"{cat}:{line}: error: part K-24V-OWN: pin 9 (pole 1 NO) is out of range" in err
    assert "Traceback" not in err


def test_schema_errors_are_file_line_error(tmp_path, netfit):
    bad = tmp_path / "t.xml"
    bad.write_text('<?xml version="1.0"?>\n<target name="x" kind="gates">\n  <description>d</description>\n'
                   '  <catalog src="74hc"/>\n  <use cell="nand2" colour="red"><carrier part="74HC00"/></use>\n'
                   '</target>\n', encoding="utf-8")
    code, out, err = netfit("targets", bad)
    assert code == 2
    assert re.search(rf"^{re.escape(str(bad))}:5: error: does not fit the target schema: .*colour", err, re.M)


# -- the malformed corpus ---------------------------------------------------------------------------
CORPUS = sorted((HERE / "catalogs" / "invalid").glob("*.xml")) + sorted((HERE / "targets" / "invalid").glob("*.xml"))
_EXPECT = re.compile(r"<!-- expect: (\d+): (.*?) -->")


def test_corpus_is_large_enough():
    assert len(CORPUS) >= 15


@pytest.mark.parametrize("path", CORPUS, ids=lambda p: f"{p.parent.parent.name}/{p.name}")
def test_malformed_file(path):
    text = path.read_text(encoding="utf-8")
    m = _EXPECT.search(text)
    assert m, "each corpus file states its expected error"
    line, words = int(m.group(1)), m.group(2)
    in_catalogs = path.parent.parent.name == "catalogs"
    loader, err_cls = (load_catalog, CatalogError) if in_catalogs else (load_target, TargetError)
    with pytest.raises(err_cls) as exc:
        loader(str(path))
    diags = exc.value.diagnostics
    assert any(d.line == line and words in d.message and d.file == str(path) for d in diags), \
        [str(d) for d in diags]


# -- safety of parsing ------------------------------------------------------------------------------
def test_external_entity_reveals_nothing(netfit, tmp_path):
    secret = tmp_path / "secret.txt"
    secret.write_text("TOP-SECRET-CONTENT-42\n", encoding="utf-8")
    evil = tmp_path / "evil.xml"
    evil.write_text(f'<?xml version="1.0"?>\n<!DOCTYPE target [<!ENTITY s SYSTEM "file://{secret}">]>\n'
                    '<target name="x" kind="gates"><description>&s;</description><catalog src="74hc"/>'
                    '<use cell="nand2"><carrier part="74HC00"/></use></target>\n', encoding="utf-8")
    code, out, err = netfit("targets", evil)
    assert code == 2
    assert f"{evil}:2: error: a document type declaration" in err
    assert "TOP-SECRET" not in out + err and "root:" not in out + err


def test_entity_bomb_is_refused_before_parsing(monkeypatch):
    # refused from the text: the XML parser (which could expand it) is never called
    import mapper.catalog.xmlfile as xmlfile

    def no_parse(*args, **kwargs):
        raise AssertionError("the parser was called on an entity bomb")

    monkeypatch.setattr(xmlfile.etree, "fromstring", no_parse)
    bomb = HERE / "catalogs" / "invalid" / "entity_bomb.xml"
    with pytest.raises(CatalogError, match="document type declaration"):
        load_catalog(bomb)


def test_parser_itself_resolves_no_entities(tmp_path):
    # defence in depth: even if the text check were bypassed, the parser settings expand nothing
    from lxml import etree

    from mapper.catalog.xmlfile import xml_parser as _parser
    secret = tmp_path / "secret.txt"
    secret.write_text("TOP-SECRET-CONTENT-42\n", encoding="utf-8")
    doc = f'<!DOCTYPE a [<!ENTITY s SYSTEM "file://{secret}">]><a>&s;</a>'.encode()
    root = etree.fromstring(doc, _parser())
    assert "TOP-SECRET" not in etree.tostring(root).decode()
    laughs = ('<!DOCTYPE a [<!ENTITY l0 "lol">' +
              "".join(f'<!ENTITY l{i} "{f"&l{i - 1};" * 10}">' for i in range(1, 10)) +
              ']><a>&l9;</a>').encode()
    try:
        root = etree.fromstring(laughs, _parser())
        assert len(etree.tostring(root)) < 10_000
    except etree.XMLSyntaxError:
        pass  # refusing is as good as not expanding


def test_non_utf8_is_refused(tmp_path):
    p = tmp_path / "c.xml"
    p.write_bytes('<?xml version="1.0" encoding="UTF-16"?><catalog name="x"/>'.encode("utf-16"))
    with pytest.raises(CatalogError, match="UTF-8"):
        load_catalog(p)


# -- the command -----------------------------------------------------------------------------------
def test_targets_list(netfit):
    code, out, _ = netfit("targets")
    assert code == 0
    for name, desc in builtin_targets():
        assert re.search(rf"^{re.escape(name)}\s+{re.escape(desc)}$", out, re.M)
    code, rows, _ = netfit("targets", "--json", as_json=True)
    assert code == 0 and isinstance(rows, list)
    assert [(r["name"], r["description"]) for r in rows] == builtin_targets()


def test_targets_show(netfit):
    code, out, _ = netfit("targets", "gates-74")
    assert code == 0
    for word in ("nand2", "74HC157", "section 4", "parts, then delay, then wires", "C-100N x1 per chip",
                 "generic 74HC datasheets", "from memory", "example price"):
        assert word in out, word
    code, info, _ = netfit("targets", "relay-dpdt", "--json", as_json=True)
    assert code == 0
    assert info == json.loads(json.dumps(describe_target(load_target("relay-dpdt"))))
    k = next(p for p in info["parts"] if p["id"] == "RLY-DPDT-5V")
    assert k["relay"]["poles"] == 2 and k["pin_names"]["8"] == "NO1"
    assert info["sources"]["generic small-signal relay datasheets"] > 0
    assert "RLY-DPDT-12V" in info["other_parts"]


def test_unknown_target_is_exit_2(netfit):
    code, out, err = netfit("targets", "nand-nope")
    assert code == 2 and out == ""
    assert "unknown target 'nand-nope'" in err and "nand-only" in err
    code, out, err = netfit("targets", "no/such/file.xml")
    assert code == 2 and "does not exist" in err


def test_errors_are_input_errors():
    assert issubclass(CatalogError, InputError) and issubclass(TargetError, InputError)
    with pytest.raises(TargetError) as exc:
        load_target("nope")
    assert isinstance(exc.value.first, Diagnostic) and exc.value.first.col is None
