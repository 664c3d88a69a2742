"""Part catalogs and technology targets: loading, validation, and the objects the mapper reads.

A *catalog* (``libraries/*.xml``, schema ``libraries/catalog.rng``) lists
cells -- what a slot does, with its function in Verilog expression syntax --
and parts -- what you order: package, pinout, slots, delays, supply current,
loading, price, and for relays the coil and contact figures.  Every figure
carries a ``source``.

A *target* (``targets/*.xml``, schema ``targets/target.rng``) names its
catalogs, the cells a build may use and the parts that may carry them, the
objective order, the support-part rules and (for relays) the supply voltage.

Files are read with entity resolution, DTD loading and network access off; a
document type declaration or entity declaration is refused before the parser
sees the file, so a hostile file can neither read local files nor expand.
Schema violations and semantic faults (unknown cells, pins out of range or
used twice, slots missing pins, bad functions, dangling references) are
collected and raised together as :class:`CatalogError` / :class:`TargetError`
carrying :class:`~mapper.errors.Diagnostic` objects with file and line.

All figures are in SI units: seconds, amperes, volts, ohms; loads in unit
loads (one 74LS input); prices in the part's currency.

Examples
--------
>>> t = load_target("nand-only")
>>> t.kind, sorted(t.cells), t.carriers["nand2"]
('gates', ['nand2'], ['74HC00'])
>>> p = t.parts["74HC00"]
>>> len(p.slots), p.supply_pins, p.slots[0].pins
(4, {'VCC': 14, 'GND': 7}, {'A': 1, 'B': 2, 'Y': 3})
>>> p.delay_typ["nand2"].value
7e-09
"""
from __future__ import annotations

import functools
import importlib.resources
import logging
import re
from collections import Counter
from dataclasses import dataclass, field
from decimal import Decimal
from pathlib import Path

from lxml import etree

from ..errors import Diagnostic, InputError
from ..logic.function import Function
from .expr import ExprError, parse_assignment

__all__ = [
    "Figure",
    "CellDef",
    "SlotDef",
    "RelayData",
    "PartDef",
    "SupportRule",
    "Target",
    "CatalogError",
    "TargetError",
    "DEFAULT_OBJECTIVE",
    "load_catalog",
    "load_target",
    "builtin_targets",
    "builtin_catalogs",
    "describe_target",
    "parse_quantity",
]

log = logging.getLogger(__name__)

DEFAULT_OBJECTIVE = ("parts", "delay", "wires")
_MAX_BYTES = 8 * 1024 * 1024  # catalogs are a few dozen kilobytes


class CatalogError(InputError):
    """A catalog file is unreadable, breaks the schema, or contradicts itself."""


class TargetError(InputError):
    """A target file (or a catalog it names) is unreadable, breaks the schema, or has dangling references."""


# ---------------------------------------------------------------------------
# the objects
@dataclass(frozen=True)
class Figure:
    """A sourced number in SI units, with the conditions it holds under."""

    value: float
    source: str
    conditions: str = ""


@dataclass
class CellDef:
    """What a slot does: ordered inputs, an output, and its function.

    ``function`` is over ``inputs`` in order (input 0 least significant) for
    logic cells and ``None`` for storage cells, whose ``expr`` names the value
    captured (``"Q = D"``) and whose ``storage`` is a kind as in
    :mod:`mapper.netlist` (``"re"``, ``"fe"``, ``"ah"``, ``"al"``).
    ``roles`` maps input pins to their role (``data``, ``clock``, ``enable``,
    ``preset``, ``clear``, ``select``, ``coil``); ``active_low`` lists the
    inputs that act when low.
    """

    name: str
    inputs: tuple
    output: str
    function: Function | None
    expr: str
    storage: str | None
    extra_outputs: tuple = ()
    roles: dict = field(default_factory=dict)
    active_low: tuple = ()
    description: str = ""

    @property
    def pins(self) -> tuple:
        """Every pin of the cell: inputs, output, extra outputs."""
        return tuple(self.inputs) + (self.output,) + tuple(self.extra_outputs)


@dataclass
class SlotDef:
    """One unit of a part: its 1-based index, its cell, and cell pin -> package pin number."""

    index: int
    cell: str
    pins: dict


@dataclass
class RelayData:
    """Coil and contact figures of a relay (times are maxima unless the source says otherwise)."""

    poles: int
    form: str
    coil_voltage: Figure
    coil_resistance: Figure
    coil_current: Figure
    operate_time: Figure
    release_time: Figure
    bounce_time: Figure
    contact_rating: str
    contact_current: Figure | None = None
    contact_voltage: Figure | None = None


@dataclass
class PartDef:
    """One orderable part (see the module docstring for units)."""

    id: str
    description: str
    kind: str
    package: str
    pin_count: int
    slots: list
    supply_pins: dict
    shared_pins: dict
    delay_typ: dict
    delay_max: dict
    current_quiescent: Figure | None
    current_per_unit: Figure | None
    input_load: Figure | None
    output_drive: Figure | None
    price: Figure | None
    currency: str
    price_source: str
    relay: RelayData | None
    family: str
    source_file: str
    pinout_source: str = ""
    nc_pins: tuple = ()
    ratings: dict = field(default_factory=dict)

    def slots_for(self, cell: str) -> list:
        """The slots of this part that perform ``cell``, in index order."""
        return [s for s in self.slots if s.cell == cell]

    def cells(self) -> list:
        """Names of the cells this part's slots perform, first appearance first."""
        out: list = []
        for s in self.slots:
            if s.cell not in out:
                out.append(s.cell)
        return out

    def pin_names(self) -> dict:
        """Package pin number -> printable name.

        Supply and shared pins keep their names (``VCC``, ``COIL+``); slot
        pins are the cell pin followed by the slot index (``A1``, ``Y3``,
        ``NO1``), so a wiring list can say ``K2-NO1``.
        """
        names: dict = {}
        for n, num in self.supply_pins.items():
            names[num] = n
        for n, num in self.shared_pins.items():
            names[num] = n
        for s in self.slots:
            for pin, num in s.pins.items():
                names.setdefault(num, f"{pin}{s.index}")
        for num in self.nc_pins:
            names[num] = "NC"
        return dict(sorted(names.items()))

    def figures(self) -> list:
        """``(label, Figure)`` for every sourced number of the part."""
        out = []
        for c, f in self.delay_typ.items():
            out.append((f"delay typical {c}", f))
        for c, f in self.delay_max.items():
            out.append((f"delay maximum {c}", f))
        for label, f in (("quiescent current", self.current_quiescent),
                         ("current per unit", self.current_per_unit),
                         ("input load", self.input_load), ("output drive", self.output_drive),
                         ("price", self.price)):
            if f is not None:
                out.append((label, f))
        for n, f in self.ratings.items():
            out.append((n, f))
        r = self.relay
        if r is not None:
            for label in ("coil_voltage", "coil_resistance", "coil_current", "operate_time",
                          "release_time", "bounce_time", "contact_current", "contact_voltage"):
                f = getattr(r, label)
                if f is not None:
                    out.append((label.replace("_", " "), f))
        return out


@dataclass
class SupportRule:
    """``count`` of support part ``part`` per ``per`` (``chip``, ``coil`` or ``relay-driven-net``)."""

    part: str
    per: str
    count: int = 1
    source: str = ""


@dataclass
class Target:
    """A technology to build in (see the module docstring)."""

    name: str
    description: str
    path: str
    kind: str
    cells: dict
    parts: dict
    carriers: dict
    objective: tuple
    support_rules: list
    supply_voltage: Figure | None
    catalogs: list
    available: dict = field(default_factory=dict)  # every part of the named catalogs

    def sources(self) -> dict:
        """Source -> number of figures of this target's parts that cite it (pinouts count once per part)."""
        c: Counter = Counter()
        for p in self.parts.values():
            if p.pinout_source:
                c[p.pinout_source] += 1
            for _, f in p.figures():
                c[f.source] += 1
        if self.supply_voltage is not None:
            c[self.supply_voltage.source] += 1
        return dict(c.most_common())


# ---------------------------------------------------------------------------
# quantities
_UNIT_WORDS = {"s": "a time (s)", "A": "a current (A)", "V": "a voltage (V)", "ohm": "a resistance (ohm)",
               "UL": "a number of unit loads (UL)", "": "a plain number", "W": "a power (W)",
               "F": "a capacitance (F)"}
_PREFIX = {"": 0, "p": -12, "n": -9, "u": -6, "µ": -6, "m": -3, "k": 3, "M": 6}  # powers of ten
_QTY = re.compile(r"^\s*([0-9]+(?:\.[0-9]+)?(?:[eE][+-]?[0-9]+)?)\s?(p|n|u|µ|m|k|M)?(s|A|V|W|F|ohm|Ω|UL)?\s*$")


def parse_quantity(text: str) -> tuple[float, str]:
    """``"7 ns"`` -> ``(7e-09, "s")``; ``"10 kohm"`` -> ``(10000.0, "ohm")``; ``"0.30"`` -> ``(0.3, "")``.

    Raises ``ValueError`` for anything else (including a prefix without a unit).
    """
    m = _QTY.match(text)
    if not m:
        raise ValueError(f"{text!r} is not a number with an SI unit")
    num, prefix, unit = m.group(1), m.group(2) or "", m.group(3) or ""
    if unit == "Ω":
        unit = "ohm"
    if prefix and not unit:
        raise ValueError(f"{text!r} has a prefix {prefix!r} but no unit")
    # scaled in decimal so "7 ns" is exactly the float nearest 7e-9
    return float(Decimal(num).scaleb(_PREFIX[prefix])), unit


# ---------------------------------------------------------------------------
# safe reading
def _parser() -> etree.XMLParser:
    return etree.XMLParser(resolve_entities=False, no_network=True, load_dtd=False, huge_tree=False,
                           dtd_validation=False, collect_ids=False, remove_comments=False)


_ENC_DECL = re.compile(rb"^<\?xml[^>]*?encoding\s*=\s*[\"']([A-Za-z0-9._\-]+)[\"']")


def _line_of(data: bytes, offset: int) -> int:
    return data.count(b"\n", 0, offset) + 1


def _read_xml(data: bytes, display: str, root_tag: str, what: str, err_cls):
    """Parse ``data`` safely; returns the root element or raises ``err_cls``."""
    def fail(msg, line=None, col=None):
        raise err_cls(Diagnostic(msg, display, line, col))

    if len(data) > _MAX_BYTES:
        fail(f"file is {len(data)} bytes; a {what} larger than {_MAX_BYTES // (1024 * 1024)} MiB is refused")
    if data[:2] in (b"\xff\xfe", b"\xfe\xff") or b"\x00" in data[:4096]:
        fail(f"a {what} must be UTF-8 text", 1)
    try:
        data.decode("utf-8")
    except UnicodeDecodeError as exc:
        fail(f"a {what} must be UTF-8 text (bad byte at offset {exc.start})", _line_of(data, exc.start))
    if data.startswith(b"\xef\xbb\xbf"):
        data = data[3:]
    m = _ENC_DECL.match(data)
    if m and m.group(1).decode().lower().replace("_", "-") not in ("utf-8", "utf8", "us-ascii", "ascii"):
        fail(f"a {what} must be UTF-8 (the declaration says {m.group(1).decode()!r})", 1)
    # Refused before parsing: a catalog needs no DTD, and entities are how hostile XML reads local
    # files or expands without bound.  Nothing is parsed or fetched.
    for token, why in ((b"<!DOCTYPE", "a document type declaration (<!DOCTYPE ...>)"),
                       (b"<!ENTITY", "an entity declaration (<!ENTITY ...>)")):
        pos = data.find(token)
        if pos >= 0:
            fail(f"{why} is not allowed in a {what}; entities and DTDs are never loaded", _line_of(data, pos))
    try:
        root = etree.fromstring(data, _parser())
    except etree.XMLSyntaxError as exc:
        msg = re.sub(r", line \d+, column \d+$", "", exc.msg or "malformed XML")
        line, col = (exc.position if exc.position else (exc.lineno, None))
        fail(f"malformed XML: {msg}", line, col or None)
    if root.getroottree().docinfo.doctype:
        fail(f"a document type declaration is not allowed in a {what}", 1)
    if root.tag != root_tag:
        fail(f"expected a {what} (a <{root_tag}> element at the top), found <{root.tag}>", root.sourceline)
    return root


@functools.lru_cache(maxsize=None)
def _schema(package: str, name: str) -> etree.RelaxNG:
    data = importlib.resources.files(package).joinpath(name).read_bytes()
    return etree.RelaxNG(etree.fromstring(data, _parser()))


def _validate(root, package: str, schema_name: str, display: str, what: str) -> list:
    schema = _schema(package, schema_name)
    if schema.validate(root):
        return []
    # libxml2 often says several things about one fault (the datatype, then the element that failed);
    # one diagnostic per line reads better.  Messages without a line only repeat a lined one.
    by_line: dict = {}
    for e in schema.error_log:
        msgs = by_line.setdefault(e.line or None, [])
        if e.message not in msgs:
            msgs.append(e.message)
    if len(by_line) > 1:
        by_line.pop(None, None)
    return [Diagnostic(f"does not fit the {what} schema: {'; '.join(msgs)}", display, line)
            for line, msgs in sorted(by_line.items(), key=lambda kv: kv[0] or 0)]


_FIGURE_TAGS = frozenset({"pinout", "typ", "max", "quiescent", "per-unit", "input", "output", "rating", "price",
                          "coil-voltage", "coil-resistance", "coil-current", "operate-time", "release-time",
                          "bounce-time", "contact-rating"})


def _unsourced(root, display: str) -> list:
    """Figures without a ``source`` (the schema would only say the element 'failed to validate')."""
    out = []
    for el in root.iter():
        if not isinstance(el.tag, str) or (el.tag in ("input", "output") and el.get("value") is None):
            continue  # a cell's pins, not figures
        if el.tag in _FIGURE_TAGS and not (el.get("source") or "").strip():
            out.append(Diagnostic(f"<{el.tag}> has no source=\"...\": every number says where it came from "
                                  f"(a generic datasheet family, common practice, from memory, ...)", display,
                                  el.sourceline))
    return out


def _display(path) -> str:
    return str(path)


# ---------------------------------------------------------------------------
# catalogs
@dataclass
class _Catalog:
    name: str
    description: str
    path: str
    parts: dict
    cells: dict
    lines: dict  # part id / "cell:<name>" -> line


class _Collector:
    def __init__(self, display: str):
        self.display = display
        self.diags: list = []

    def err(self, where, msg: str, col=None) -> None:
        line = where if isinstance(where, int) or where is None else where.sourceline
        self.diags.append(Diagnostic(msg, self.display, line, col))


def _figure(el, c: _Collector, label: str, unit: str | None, extra: str = "") -> Figure | None:
    """A Figure from an element with value/source[/conditions]; ``unit`` None accepts any unit."""
    if el is None:
        return None
    text = el.get("value")
    try:
        value, got = parse_quantity(text)
    except ValueError as exc:
        c.err(el, f"{label}: {exc}")
        return None
    if unit is not None and got != unit:
        c.err(el, f"{label}: {text!r} is not {_UNIT_WORDS.get(unit, unit)}")
        return None
    conds = [x for x in (extra, el.get("conditions") or "") if x]
    return Figure(value, el.get("source").strip(), "; ".join(conds))


def _delay_figure(el, c: _Collector, label: str, path: str, need_load: bool) -> Figure | None:
    if el is None:
        return None
    parts = []
    for attr, unit in (("voltage", "V"), ("load", "F")):
        text = el.get(attr)
        if text is None:
            if attr == "load" and need_load:
                c.err(el, f"{label}: a chip's delay needs the output load it holds for (load=\"15 pF\")")
            continue
        try:
            v, u = parse_quantity(text)
        except ValueError as exc:
            c.err(el, f"{label}: {attr}: {exc}")
            continue
        if u != unit:
            c.err(el, f"{label}: {attr} {text!r} is not {_UNIT_WORDS[unit]}")
            continue
        parts.append(text)
    parts.append(el.get("temperature").replace("°", "").replace("C", "").strip() + " °C")
    cond = ", ".join(parts)
    if path:
        cond = f"{path}; {cond}"
    return _figure(el, c, label, "s", cond)


def _cell_from(el, c: _Collector) -> CellDef | None:
    name = el.get("name")
    inputs = [i.get("name") for i in el.findall("input")]
    outputs = [o.get("name") for o in el.findall("output")]
    ok = True
    seen = set()
    for pin_el in el.findall("input") + el.findall("output"):
        n = pin_el.get("name")
        if n in seen:
            c.err(pin_el, f"cell {name}: pin {n} is declared twice")
            ok = False
        seen.add(n)
    storage = el.get("storage")
    roles = {i.get("name"): i.get("role") for i in el.findall("input") if i.get("role")}
    active_low = tuple(i.get("name") for i in el.findall("input") if i.get("active") == "low")
    text = el.get("function")
    try:
        a = parse_assignment(text)
    except ExprError as exc:
        c.err(el, f"cell {name}: bad function {text!r}: {exc.message} (column {exc.col} of the function)")
        return None
    if a.output != outputs[0]:
        c.err(el, f"cell {name}: the function assigns {a.output!r} but the cell's first output is {outputs[0]!r}")
        ok = False
    for n in a.expression.names:
        if n not in inputs:
            c.err(el, f"cell {name}: the function uses {n!r}, which is not an input of the cell "
                      f"(inputs: {', '.join(inputs)})")
            ok = False
    if not ok:
        return None
    func = None
    if storage is None:
        if len(outputs) != 1:
            c.err(el, f"cell {name}: a logic cell has one output, not {len(outputs)} "
                      f"(storage cells say storage=\"re\" and so on)")
            return None
        unused = [n for n in inputs if n not in a.expression.names]
        if unused:
            c.err(el, f"cell {name}: input {', '.join(unused)} is not used by the function {text!r}")
            return None
        func = Function.from_table(len(inputs), a.expression.table(inputs))
        for pin, role in roles.items():
            if role in ("clock", "data"):
                c.err(el, f"cell {name}: input {pin} has role {role!r}, which only storage cells have")
                return None
    else:
        control = "clock" if storage in ("re", "fe") else "enable"
        ctl = [p for p, r in roles.items() if r == control]
        if len(ctl) != 1:
            c.err(el, f"cell {name}: a storage cell of kind {storage!r} needs exactly one input with "
                      f"role=\"{control}\" (found {len(ctl)})")
            return None
        bad = [n for n in a.expression.names if roles.get(n) != "data"]
        if bad:
            c.err(el, f"cell {name}: the captured value may use only role=\"data\" inputs, not {', '.join(bad)}")
            return None
    return CellDef(name=name, inputs=tuple(inputs), output=outputs[0], function=func, expr=text,
                   storage=storage, extra_outputs=tuple(outputs[1:]), roles=roles, active_low=active_low,
                   description=el.get("description") or "")


def _part_from(el, cells: dict, c: _Collector, display: str, default_currency: str,
               broken: frozenset = frozenset()) -> PartDef | None:
    pid = el.get("id")
    kind = el.get("kind")
    n_before = len(c.diags)
    pkg = el.find("package")
    npins = int(pkg.get("pins"))
    pinout = el.find("pinout")
    used: dict = {}  # number -> what

    def claim(num_el, num: int, what: str):
        if num < 1 or num > npins:
            c.err(num_el, f"part {pid}: pin {num} ({what}) is out of range for {pkg.get('name')} (1-{npins})")
            return
        if num in used:
            c.err(num_el, f"part {pid}: pin {num} is used twice ({used[num]} and {what})")
            return
        used[num] = what

    supply: dict = {}
    shared: dict = {}
    names_seen: set = set()
    for s in pinout.findall("supply"):
        n, num = s.get("name"), int(s.get("number"))
        if n in names_seen:
            c.err(s, f"part {pid}: pin name {n} is declared twice")
        names_seen.add(n)
        claim(s, num, f"supply {n}")
        supply[n] = num
    for s in pinout.findall("pin"):
        n, num = s.get("name"), int(s.get("number"))
        if n in names_seen:
            c.err(s, f"part {pid}: pin name {n} is declared twice")
        names_seen.add(n)
        claim(s, num, f"pin {n}")
        shared[n] = num
    slots = []
    indices = set()
    for s in pinout.findall("slot"):
        idx, cname = int(s.get("index")), s.get("cell")
        if idx in indices:
            c.err(s, f"part {pid}: slot {idx} is declared twice")
        indices.add(idx)
        cell = cells.get(cname)
        if cell is None:
            if cname not in broken:  # a cell with a fault of its own was reported already
                known = ", ".join(sorted(cells)) or "none"
                c.err(s, f"part {pid}: slot {idx} performs unknown cell {cname!r} (cells of this catalog: {known})")
            else:
                c.diags.append(None)  # the part is not usable, but say nothing more
            for p in s.findall("pin"):  # still account for its pins, so they are not reported unassigned
                if p.get("number") is not None:
                    claim(p, int(p.get("number")), f"slot {idx} {p.get('name')}")
            continue
        pins: dict = {}
        for p in s.findall("pin"):
            pn = p.get("name")
            if pn in pins:
                c.err(p, f"part {pid}: slot {idx} lists pin {pn} twice")
                continue
            if pn not in cell.pins:
                c.err(p, f"part {pid}: slot {idx} has pin {pn}, which cell {cname} does not have "
                         f"(its pins: {', '.join(cell.pins)})")
                continue
            if p.get("shared") is not None:
                ref = p.get("shared")
                if ref not in shared:
                    c.err(p, f"part {pid}: slot {idx} pin {pn} refers to shared pin {ref!r}, which the "
                             f"pinout does not declare (<pin name=\"{ref}\" number=\"...\"/>)")
                    continue
                pins[pn] = shared[ref]
            else:
                num = int(p.get("number"))
                claim(p, num, f"slot {idx} {pn}")
                pins[pn] = num
        missing = [pn for pn in cell.pins if pn not in pins and pn not in
                   {p.get("name") for p in s.findall("pin")}]
        if missing:
            c.err(s, f"part {pid}: slot {idx} misses pin {', '.join(missing)} of cell {cname}")
        slots.append(SlotDef(idx, cname, {pn: pins[pn] for pn in cell.pins if pn in pins}))
    slots.sort(key=lambda s: s.index)
    if indices and sorted(indices) != list(range(1, len(indices) + 1)):
        c.err(pinout, f"part {pid}: slot indices must run 1..{len(indices)} (found {sorted(indices)})")
    nc: list = []
    nc_el = pinout.find("nc")
    if nc_el is not None:
        for tok in nc_el.get("numbers").split():
            claim(nc_el, int(tok), "not connected")
            nc.append(int(tok))
    unassigned = [k for k in range(1, npins + 1) if k not in used]
    if unassigned:
        c.err(pinout, f"part {pid}: pin {', '.join(map(str, unassigned))} of {npins} is not assigned "
                      f"(list pins with no function in <nc numbers=\"...\"/>)")

    # what each kind must have
    if kind == "chip":
        if not slots and not pinout.findall("slot"):
            c.err(el, f"part {pid}: a chip needs at least one slot")
        if not supply:
            c.err(pinout, f"part {pid}: a chip needs its supply pins (<supply name=\"VCC\" number=\"14\"/>)")
    elif kind == "support":
        if pinout.findall("slot"):
            c.err(pinout, f"part {pid}: a support part has no slots")
    relay_el = el.find("relay")
    if kind == "relay" and relay_el is None:
        c.err(el, f"part {pid}: a relay needs a <relay> element (coil and contact figures)")
    if kind != "relay" and relay_el is not None:
        c.err(relay_el, f"part {pid}: only a part of kind=\"relay\" has a <relay> element")

    delay_typ: dict = {}
    delay_max: dict = {}
    slot_cells = {s.cell for s in slots}
    for d in el.findall("delay"):
        cname = d.get("cell")
        if cname in broken:
            continue
        if cname not in slot_cells:
            c.err(d, f"part {pid}: delay for cell {cname!r}, which no slot of the part performs")
            continue
        if cname in delay_typ:
            c.err(d, f"part {pid}: delay for cell {cname} is given twice")
            continue
        path = d.get("path") or ""
        t = _delay_figure(d.find("typ"), c, f"part {pid} typical delay", path, kind == "chip")
        m = _delay_figure(d.find("max"), c, f"part {pid} maximum delay", path, kind == "chip")
        if t is not None and m is not None:
            if m.value < t.value:
                c.err(d.find("max"), f"part {pid}: maximum delay {d.find('max').get('value')} is below the "
                                     f"typical {d.find('typ').get('value')}")
            delay_typ[cname], delay_max[cname] = t, m
    if kind in ("chip", "relay"):
        for cname in sorted(slot_cells):
            if cname not in delay_typ and not any(d.get("cell") == cname for d in el.findall("delay")):
                c.err(el, f"part {pid}: no delay given for cell {cname}")

    sc = el.find("supply-current")
    q = _figure(sc.find("quiescent") if sc is not None else None, c, f"part {pid} quiescent current", "A")
    pu = _figure(sc.find("per-unit") if sc is not None else None, c, f"part {pid} current per unit", "A")
    ld = el.find("loading")
    il = _figure(ld.find("input") if ld is not None else None, c, f"part {pid} input load", "UL")
    od = _figure(ld.find("output") if ld is not None else None, c, f"part {pid} output drive", "UL")
    ratings: dict = {}
    for r in el.findall("rating"):
        f = _figure(r, c, f"part {pid} {r.get('name')}", None)
        if f is not None:
            ratings[r.get("name")] = f
    price_el = el.find("price")
    price = _figure(price_el, c, f"part {pid} price", "")
    currency = (price_el.get("currency") if price_el is not None else None) or default_currency
    if price_el is not None and not currency:
        c.err(price_el, f"part {pid}: the price has no currency (currency=\"USD\" on the price or the catalog)")

    relay = None
    if relay_el is not None and kind == "relay":
        figs = {}
        for tag, unit in (("coil-voltage", "V"), ("coil-resistance", "ohm"), ("coil-current", "A"),
                          ("operate-time", "s"), ("release-time", "s"), ("bounce-time", "s")):
            figs[tag] = _figure(relay_el.find(tag), c, f"part {pid} {tag.replace('-', ' ')}", unit)
        cr = relay_el.find("contact-rating")
        ccur = cvol = None
        try:
            cv, cu = parse_quantity(cr.get("current"))
            vv, vu = parse_quantity(cr.get("voltage"))
            if cu != "A" or vu != "V":
                raise ValueError("contact rating needs a current in A and a voltage in V")
            src = cr.get("source").strip()
            ccur = Figure(cv, src, cr.get("type"))
            cvol = Figure(vv, src, cr.get("type"))
        except ValueError as exc:
            c.err(cr, f"part {pid} contact rating: {exc}")
        poles = int(relay_el.get("poles"))
        if poles != len(slots):
            c.err(relay_el, f"part {pid}: the relay has {poles} pole{'s' * (poles != 1)} but the pinout "
                            f"{len(slots)} slot{'s' * (len(slots) != 1)} (one slot per pole)")
        if None not in figs.values() and ccur is not None:
            relay = RelayData(poles=poles, form=relay_el.get("form"), coil_voltage=figs["coil-voltage"],
                              coil_resistance=figs["coil-resistance"], coil_current=figs["coil-current"],
                              operate_time=figs["operate-time"], release_time=figs["release-time"],
                              bounce_time=figs["bounce-time"],
                              contact_rating=f"{cr.get('current')} at {cr.get('voltage')} {cr.get('type')}",
                              contact_current=ccur, contact_voltage=cvol)
    if len(c.diags) > n_before:
        return None
    return PartDef(
        id=pid, description=" ".join(el.findtext("description").split()), kind=kind,
        package=pkg.get("name"), pin_count=npins, slots=slots, supply_pins=supply, shared_pins=shared,
        delay_typ=delay_typ, delay_max=delay_max, current_quiescent=q, current_per_unit=pu,
        input_load=il, output_drive=od, price=price, currency=currency or "",
        price_source=price.source if price is not None else "", relay=relay, family=el.get("family") or "",
        source_file=display, pinout_source=pinout.get("source").strip(), nc_pins=tuple(sorted(nc)),
        ratings=ratings)


def _read_bytes(path) -> bytes:
    try:
        return Path(path).read_bytes() if not hasattr(path, "read_bytes") else path.read_bytes()
    except OSError as exc:
        raise CatalogError(Diagnostic(f"cannot read: {exc.strerror or exc}", _display(path)))


def _load_catalog_full(path, data: bytes | None = None) -> _Catalog:
    display = _display(path)
    if data is None:
        data = _read_bytes(path)
    root = _read_xml(data, display, "catalog", "catalog", CatalogError)
    diags = _unsourced(root, display)
    lines_said = {d.line for d in diags}
    diags += [d for d in _validate(root, "mapper.libraries", "catalog.rng", display, "catalog")
              if d.line not in lines_said]
    if diags:
        raise CatalogError(diags)
    c = _Collector(display)
    cells: dict = {}
    lines: dict = {}
    broken: set = set()
    for el in root.findall("cell"):
        name = el.get("name")
        if name in cells or f"cell:{name}" in lines:
            c.err(el, f"cell {name} is declared twice (first on line {lines[f'cell:{name}']})")
            continue
        lines[f"cell:{name}"] = el.sourceline
        cell = _cell_from(el, c)
        if cell is not None:
            cells[name] = cell
        else:
            broken.add(name)
    parts: dict = {}
    currency = root.get("currency") or ""
    for el in root.findall("part"):
        pid = el.get("id")
        if pid in lines:
            c.err(el, f"part {pid} is declared twice (first on line {lines[pid]})")
            continue
        lines[pid] = el.sourceline
        part = _part_from(el, cells, c, display, currency, frozenset(broken))
        if part is not None:
            parts[pid] = part
    if c.diags:
        raise CatalogError([d for d in c.diags if d is not None])
    log.debug("catalog %s: %d cells, %d parts", display, len(cells), len(parts))
    return _Catalog(root.get("name"), " ".join((root.findtext("description") or "").split()), display,
                    parts, cells, lines)


def load_catalog(path) -> tuple[dict, dict]:
    """Read and check one catalog file: ``(parts by id, cells by name)``.

    Raises :class:`CatalogError` with every fault found (file and line).
    """
    cat = _load_catalog_full(path)
    return cat.parts, cat.cells


def builtin_catalogs() -> list:
    """Names of the catalogs shipped with netfit (file stems of ``libraries/*.xml``)."""
    root = importlib.resources.files("mapper.libraries")
    return sorted(p.name[:-4] for p in root.iterdir() if p.name.endswith(".xml"))


# ---------------------------------------------------------------------------
# targets
def builtin_targets() -> list:
    """``(name, description)`` of every target shipped with netfit, sorted by name."""
    root = importlib.resources.files("mapper.targets")
    out = []
    for p in sorted(root.iterdir(), key=lambda p: p.name):
        if not p.name.endswith(".xml"):
            continue
        el = _read_xml(p.read_bytes(), str(p), "target", "target", TargetError)
        out.append((el.get("name") or p.name[:-4], " ".join((el.findtext("description") or "").split())))
    return out


def _builtin_target_names() -> list:
    root = importlib.resources.files("mapper.targets")
    return sorted(p.name[:-4] for p in root.iterdir() if p.name.endswith(".xml"))


def _resolve_catalog(src: str, base: Path | None):
    """A target's ``<catalog src=...>``: relative to the target file first, then the built-ins."""
    if base is not None:
        cand = base / src
        if cand.is_file():
            return cand
    if "/" not in src and "\\" not in src:
        stem = src[:-4] if src.endswith(".xml") else src
        res = importlib.resources.files("mapper.libraries").joinpath(stem + ".xml")
        if res.is_file():
            return res
    return None


def load_target(name_or_path) -> Target:
    """A target by built-in name (``"nand-only"``) or by path to a ``.xml`` file.

    Loads the catalogs it names (relative to the target file, or built-in
    catalogs by name) and checks every reference.  Raises
    :class:`TargetError` carrying every fault found, with file and line.
    """
    text = str(name_or_path)
    p = Path(text)
    looks_like_path = p.suffix.lower() == ".xml" or "/" in text or "\\" in text or p.is_file()
    if looks_like_path:
        if not p.is_file():
            raise TargetError(Diagnostic(f"target file {text} does not exist"))
        display, base = text, p.resolve().parent
        try:
            data = p.read_bytes()
        except OSError as exc:
            raise TargetError(Diagnostic(f"cannot read: {exc.strerror or exc}", text))
    else:
        names = _builtin_target_names()
        if text not in names:
            raise TargetError(Diagnostic(
                f"unknown target {text!r} (built-in targets: {', '.join(names)}; "
                f"or give the path of a target .xml file)"))
        res = importlib.resources.files("mapper.targets").joinpath(text + ".xml")
        display, base, data = str(res), None, res.read_bytes()
        if isinstance(res, Path):
            base = res.parent
    return _load_target(data, display, base)


def _load_target(data: bytes, display: str, base: Path | None) -> Target:
    root = _read_xml(data, display, "target", "target", TargetError)
    diags = _validate(root, "mapper.targets", "target.rng", display, "target")
    if diags:
        raise TargetError(diags)
    c = _Collector(display)
    kind = root.get("kind")
    cats: list = []
    cat_paths: list = []
    for el in root.findall("catalog"):
        src = el.get("src").strip()
        where = _resolve_catalog(src, base)
        if where is None:
            looked = f"{base / src}, " if base is not None else ""
            c.err(el, f"catalog {src!r} not found (looked for {looked}and the built-in catalogs: "
                      f"{', '.join(builtin_catalogs())})")
            continue
        if str(where) in cat_paths:
            c.err(el, f"catalog {src!r} is named twice")
            continue
        try:
            cats.append((el, _load_catalog_full(where)))
            cat_paths.append(str(where))
        except CatalogError as exc:
            c.diags.extend(exc.diagnostics)
    if c.diags:
        raise TargetError(c.diags)

    all_parts: dict = {}
    all_cells: dict = {}
    part_from: dict = {}
    cell_from: dict = {}
    for el, cat in cats:
        for pid, part in cat.parts.items():
            if pid in all_parts:
                c.err(el, f"part {pid} is in two catalogs ({part_from[pid]} and {cat.path})")
                continue
            all_parts[pid], part_from[pid] = part, cat.path
        for name, cell in cat.cells.items():
            prev = all_cells.get(name)
            if prev is None:
                all_cells[name], cell_from[name] = cell, cat.path
            elif (prev.inputs, prev.output, prev.extra_outputs, prev.storage, prev.function) != (
                    cell.inputs, cell.output, cell.extra_outputs, cell.storage, cell.function):
                c.err(el, f"cell {name} differs between {cell_from[name]} and {cat.path}")

    cells: dict = {}
    carriers: dict = {}
    parts: dict = {}
    want_kind = "chip" if kind == "gates" else "relay"
    for use in root.findall("use"):
        cname = use.get("cell")
        if cname in cells or cname in carriers:
            c.err(use, f"cell {cname} is listed twice")
            continue
        cell = all_cells.get(cname)
        if cell is None:
            c.err(use, f"unknown cell {cname!r} (cells of the named catalogs: {', '.join(sorted(all_cells))})")
            continue
        ids: list = []
        for car in use.findall("carrier"):
            pid = car.get("part")
            part = all_parts.get(pid)
            if part is None:
                c.err(car, f"unknown part {pid!r} (not in the named catalogs)")
                continue
            if pid in ids:
                c.err(car, f"part {pid} is named twice as a carrier of {cname}")
                continue
            if not part.slots_for(cname):
                c.err(car, f"part {pid} has no slot performing {cname} (its cells: {', '.join(part.cells())})")
                continue
            if part.kind != want_kind:
                c.err(car, f"part {pid} is a {part.kind}; a {kind} target builds on {want_kind}s")
                continue
            ids.append(pid)
            parts[pid] = part
        cells[cname] = cell
        carriers[cname] = ids

    obj_el = root.find("objective")
    objective = tuple(obj_el.text.split()) if obj_el is not None else DEFAULT_OBJECTIVE
    dup = [k for k, v in Counter(objective).items() if v > 1]
    if dup:
        c.err(obj_el, f"objective names {', '.join(dup)} twice")

    supply = None
    sup_el = root.find("supply")
    if sup_el is not None:
        supply = _figure(sup_el, c, "supply", "V")
    if kind == "relay" and sup_el is None:
        c.err(root, "a relay target needs its supply voltage (<supply value=\"5 V\" source=\"...\"/>)")
    if kind == "relay" and supply is not None:
        for pid, part in list(parts.items()):
            if part.relay is not None and abs(part.relay.coil_voltage.value - supply.value) > 1e-9:
                c.err(sup_el, f"relay {pid} has a {part.relay.coil_voltage.value:g} V coil but the target "
                              f"supply is {supply.value:g} V")

    rules: list = []
    seen_rules: set = set()
    for s in root.findall("support"):
        pid, per = s.get("part"), s.get("per")
        part = all_parts.get(pid)
        if part is None:
            c.err(s, f"unknown support part {pid!r} (not in the named catalogs)")
            continue
        if part.kind != "support":
            c.err(s, f"part {pid} is a {part.kind}, not a support part")
            continue
        if (pid, per) in seen_rules:
            c.err(s, f"support rule for {pid} per {per} is given twice")
            continue
        seen_rules.add((pid, per))
        rules.append(SupportRule(pid, per, int(s.get("count") or 1), (s.get("source") or "").strip()))
        parts[pid] = part
    if c.diags:
        raise TargetError(c.diags)
    return Target(name=root.get("name"), description=" ".join(root.findtext("description").split()),
                  path=display, kind=kind, cells=cells, parts=parts, carriers=carriers, objective=objective,
                  support_rules=rules, supply_voltage=supply, catalogs=cat_paths, available=all_parts)


# ---------------------------------------------------------------------------
# plain data for the command line
def _fig(f: Figure | None):
    if f is None:
        return None
    return {"value": f.value, "source": f.source, "conditions": f.conditions}


def describe_target(t: Target) -> dict:
    """Plain data (stable keys, SI units in key names) describing a loaded target."""
    cells = []
    for c in t.cells.values():
        cells.append({"name": c.name, "inputs": list(c.inputs), "output": c.output,
                      "extra_outputs": list(c.extra_outputs), "function": c.expr, "storage": c.storage,
                      "roles": dict(c.roles), "description": c.description, "carriers": t.carriers[c.name]})
    parts = []
    for p in t.parts.values():
        parts.append({
            "id": p.id, "description": p.description, "kind": p.kind, "family": p.family,
            "package": p.package, "pin_count": p.pin_count,
            "slots": [{"index": s.index, "cell": s.cell, "pins": dict(s.pins)} for s in p.slots],
            "supply_pins": dict(p.supply_pins), "shared_pins": dict(p.shared_pins),
            "nc_pins": list(p.nc_pins), "pin_names": {str(k): v for k, v in p.pin_names().items()},
            "delay_typ_s": {k: _fig(v) for k, v in p.delay_typ.items()},
            "delay_max_s": {k: _fig(v) for k, v in p.delay_max.items()},
            "current_quiescent_a": _fig(p.current_quiescent), "current_per_unit_a": _fig(p.current_per_unit),
            "input_load_ul": _fig(p.input_load), "output_drive_ul": _fig(p.output_drive),
            "price": _fig(p.price), "currency": p.currency,
            "relay": None if p.relay is None else {
                "poles": p.relay.poles, "form": p.relay.form,
                "coil_voltage_v": _fig(p.relay.coil_voltage), "coil_resistance_ohm": _fig(p.relay.coil_resistance),
                "coil_current_a": _fig(p.relay.coil_current), "operate_time_s": _fig(p.relay.operate_time),
                "release_time_s": _fig(p.relay.release_time), "bounce_time_s": _fig(p.relay.bounce_time),
                "contact_rating": p.relay.contact_rating},
            "ratings": {k: _fig(v) for k, v in p.ratings.items()},
            "pinout_source": p.pinout_source, "source_file": p.source_file,
        })
    return {
        "name": t.name, "description": t.description, "path": t.path, "kind": t.kind,
        "catalogs": list(t.catalogs), "cells": cells, "parts": parts,
        "other_parts": sorted(pid for pid in t.available if pid not in t.parts),
        "objective": list(t.objective),
        "support_rules": [{"part": r.part, "per": r.per, "count": r.count, "source": r.source}
                          for r in t.support_rules],
        "supply_voltage_v": _fig(t.supply_voltage),
        "sources": t.sources(),
    }
