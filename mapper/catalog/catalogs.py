"""Reading catalog files (``libraries/*.xml``, schema ``libraries/catalog.rng``).

A catalog lists cells -- what a slot does, with its function in Verilog
expression syntax -- and parts -- what you order: package, pinout, slots,
delays, supply current, loading, price, for relays the coil and contact
figures, and for support parts their role.  Every figure carries a
``source``.  Schema violations and semantic faults (unknown cells, pins out
of range or used twice, slots missing pins, bad functions) are collected and
raised together as one :class:`CatalogError`.
"""
from __future__ import annotations

import importlib.resources
import logging
from dataclasses import dataclass
from pathlib import Path

from .. import limits
from ..errors import Diagnostic, InputError
from ..logic.function import MAX_TABLE_INPUTS, Function
from ..units import UNIT_WORDS, parse_quantity
from .blockload import block_from, is_block, path_delay
from .expr import ExprError, parse_assignment
from .model import SUPPORT_ROLES, CellDef, Figure, OpenInput, PartDef, RelayData, SlotDef
from .xmlfile import read_xml, unsourced, validate

__all__ = ["CatalogError", "Catalog", "load_catalog", "read_catalog", "builtin_catalogs", "Collector",
           "figure"]

log = logging.getLogger(__name__)


class CatalogError(InputError):
    """A catalog file is unreadable, breaks the schema, or contradicts itself."""


@dataclass
class Catalog:
    """One catalog file read and checked."""

    name: str
    description: str
    path: str
    parts: dict
    cells: dict
    lines: dict  # part id / "cell:<name>" -> line


#: the longest cell function read (the functions of real cells fit on a line)
MAX_FUNCTION_CHARS = 4096


class TooManyErrors(Exception):
    """Raised by :meth:`Collector.err` at the error limit; the loader reports what it collected."""


class Collector:
    """Diagnostics of one file, gathered while reading goes on (up to the error limit)."""

    def __init__(self, display: str):
        self.display = display
        self.diags: list = []
        self.max_errors = limits.value("errors")

    def err(self, where, msg: str, col=None) -> None:
        line = where if isinstance(where, int) or where is None else where.sourceline
        self.diags.append(Diagnostic(msg, self.display, line, col))
        if sum(d is not None for d in self.diags) >= self.max_errors:
            self.diags.append(Diagnostic(f"reading stopped after {self.max_errors} errors: "
                                         f"{limits.exceeded('errors')}", self.display))
            raise TooManyErrors

    def count(self, el, attr: str, label: str, limit: str | None = None) -> int | None:
        """Attribute ``attr`` of ``el`` as a whole number, checked against ``limit`` before any use.

        The schema has made sure it is a positive integer; its size is what
        is checked here (a 5,000-digit number is refused before Python makes
        an integer of it).  ``None`` (with an error recorded) when it is too big.
        """
        text = (el.get(attr) or "").strip()
        digits = text.lstrip("+").lstrip("0") or "0"   # the schema's positiveInteger allows "+0014"
        cap = limits.value(limit) if limit else 10 ** 9
        if len(digits) > 12 or int(digits) > cap:
            if limit:
                self.err(el, f"{label}: {attr}=\"{_clip(text)}\": {limits.exceeded(limit, _whole(digits))}")
            else:
                self.err(el, f"{label}: {attr}=\"{_clip(text)}\" is larger than {cap}")
            return None
        return int(digits)


def _whole(text: str) -> int:
    """A digit string as a number for a message (its order of magnitude when very long)."""
    return int(text) if len(text) <= 15 else 10 ** min(len(text) - 1, 10 ** 6)


def _clip(text: str, n: int = 24) -> str:
    return text if len(text) <= n else text[:n] + "…"


def figure(el, c: Collector, label: str, unit: str | None, extra: str = "") -> Figure | None:
    """A Figure from an element with value/source[/conditions]; ``unit`` None accepts any unit."""
    if el is None:
        return None
    text = el.get("value")
    try:
        value, got = parse_quantity(text)
    except ValueError as exc:
        c.err(el, f"{label}: <{el.tag} value=\"{_clip(text or '')}\">: {exc}")
        return None
    if unit is not None and got != unit:
        c.err(el, f"{label}: <{el.tag} value=\"{_clip(text)}\">: {text!r} is not {UNIT_WORDS.get(unit, unit)}")
        return None
    conds = [x for x in (extra, el.get("conditions") or "") if x]
    return Figure(value, el.get("source").strip(), "; ".join(conds))


def _delay_figure(el, c: Collector, label: str, path: str, need_load: bool) -> Figure | None:
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
            _, u = parse_quantity(text)
        except ValueError as exc:
            c.err(el, f"{label}: {attr}=\"{_clip(text)}\": {exc}")
            continue
        if u != unit:
            c.err(el, f"{label}: {attr} {text!r} is not {UNIT_WORDS[unit]}")
            continue
        parts.append(text)
    parts.append(el.get("temperature").replace("°", "").replace("C", "").strip() + " °C")
    cond = ", ".join(parts)
    if path:
        cond = f"{path}; {cond}"
    return figure(el, c, label, "s", cond)


# ---------------------------------------------------------------------------
# cells
def _cell_from(el, c: Collector) -> CellDef | None:
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
    text = el.get("function") or ""
    if len(inputs) > MAX_TABLE_INPUTS:
        c.err(el, f"cell {name}: {len(inputs)} inputs; a cell has at most {MAX_TABLE_INPUTS} (its truth table "
                  "is kept whole)")
        return None
    if len(text) > MAX_FUNCTION_CHARS:
        c.err(el, f"cell {name}: function=\"{_clip(text)}\" is {len(text)} characters long; a cell's function "
                  f"may be at most {MAX_FUNCTION_CHARS}")
        return None
    if not ok:
        return None
    if is_block(el):
        return block_from(el, c, name, inputs, outputs, roles, active_low, storage)
    if not text.strip():
        c.err(el, f"cell {name}: a cell needs its function (function=\"{outputs[0]} = ...\")")
        return None
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
        func = _logic_function(el, c, name, inputs, outputs, roles, a)
        if func is None:
            return None
    elif not _storage_roles_ok(el, c, name, storage, roles, a):
        return None
    return CellDef(name=name, inputs=tuple(inputs), output=outputs[0], function=func, expr=text,
                   storage=storage, extra_outputs=tuple(outputs[1:]), roles=roles, active_low=active_low,
                   description=el.get("description") or "", symbol=el.get("symbol") or "")


def _logic_function(el, c: Collector, name, inputs, outputs, roles, a) -> Function | None:
    if len(outputs) != 1:
        c.err(el, f"cell {name}: a logic cell has one output, not {len(outputs)} "
                  f"(storage cells say storage=\"re\" and so on)")
        return None
    unused = [n for n in inputs if n not in a.expression.names]
    if unused:
        c.err(el, f"cell {name}: input {', '.join(unused)} is not used by the function {el.get('function')!r}")
        return None
    for pin, role in roles.items():
        if role in ("clock", "data"):
            c.err(el, f"cell {name}: input {pin} has role {role!r}, which only storage cells have")
            return None
    return Function.from_table(len(inputs), a.expression.table(inputs))


def _storage_roles_ok(el, c: Collector, name, storage, roles, a) -> bool:
    control = "clock" if storage in ("re", "fe") else "enable"
    ctl = [p for p, r in roles.items() if r == control]
    if len(ctl) != 1:
        c.err(el, f"cell {name}: a storage cell of kind {storage!r} needs exactly one input with "
                  f"role=\"{control}\" (found {len(ctl)})")
        return False
    bad = [n for n in a.expression.names if roles.get(n) != "data"]
    if bad:
        c.err(el, f"cell {name}: the captured value may use only role=\"data\" inputs, not {', '.join(bad)}")
        return False
    return True


# ---------------------------------------------------------------------------
# parts
class _PinClaims:
    """Package pins of one part as they are given out; refuses a pin out of range or given twice."""

    def __init__(self, pid: str, package: str, npins: int, c: Collector):
        self.pid, self.package, self.npins, self.c = pid, package, npins, c
        self.used: dict = {}  # number -> what

    def claim(self, num_el, num: int, what: str) -> None:
        if num < 1 or num > self.npins:
            self.c.err(num_el, f"part {self.pid}: pin {num} ({what}) is out of range for {self.package} "
                               f"(1-{self.npins})")
            return
        if num in self.used:
            self.c.err(num_el, f"part {self.pid}: pin {num} is used twice ({self.used[num]} and {what})")
            return
        self.used[num] = what


def _named_pins(pinout, pid: str, claims: _PinClaims, c: Collector) -> tuple[dict, dict]:
    """``(supply pins, shared pins)``: name -> number."""
    supply: dict = {}
    shared: dict = {}
    names_seen: set = set()
    for tag, into, what in (("supply", supply, "supply "), ("pin", shared, "pin ")):
        for s in pinout.findall(tag):
            n, num = s.get("name"), c.count(s, "number", f"part {pid} {what}{s.get('name')}")
            if num is None:
                continue
            if n in names_seen:
                c.err(s, f"part {pid}: pin name {n} is declared twice")
            names_seen.add(n)
            claims.claim(s, num, f"{what}{n}")
            into[n] = num
    return supply, shared


def _units(pinout) -> list:
    """The ``<section>`` and ``<pole>`` elements of a pinout, in file order."""
    return [e for e in pinout if e.tag in ("section", "pole")]


def _slots(pinout, pid: str, cells: dict, shared: dict, claims: _PinClaims, c: Collector,
           broken: frozenset) -> list:
    slots = []
    indices = set()
    for s in _units(pinout):
        unit = s.tag  # section (a chip's gate unit) or pole (a relay's contact set)
        idx, cname = c.count(s, "index", f"part {pid} {unit}"), s.get("cell")
        if idx is None:
            continue
        if idx in indices:
            c.err(s, f"part {pid}: {unit} {idx} is declared twice")
        indices.add(idx)
        cell = cells.get(cname)
        if cell is None:
            if cname not in broken:  # a cell with a fault of its own was reported already
                known = ", ".join(sorted(cells)) or "none"
                c.err(s, f"part {pid}: {unit} {idx} performs unknown cell {cname!r} (cells of this catalog: {known})")
            else:
                c.diags.append(None)  # the part is not usable, but say nothing more
            for p in s.findall("pin"):  # still account for its pins, so they are not reported unassigned
                num = c.count(p, "number", f"part {pid} {unit} {idx}") if p.get("number") is not None else None
                if num is not None:
                    claims.claim(p, num, f"{unit} {idx} {p.get('name')}")
            continue
        held = frozenset(p.get("name") for p in pinout.findall("pin") if p.get("tie"))
        pins = _slot_pins(s, pid, idx, cell, shared, claims, c, held)
        missing = [pn for pn in cell.pins if pn not in pins and pn not in
                   {p.get("name") for p in s.findall("pin")}]
        if missing:
            c.err(s, f"part {pid}: {unit} {idx} misses pin {', '.join(missing)} of cell {cname}")
        slots.append(SlotDef(idx, cname, {pn: pins[pn] for pn in cell.pins if pn in pins}))
    slots.sort(key=lambda s: s.index)
    if indices and sorted(indices) != list(range(1, len(indices) + 1)):
        c.err(pinout, f"part {pid}: section or pole numbers must run 1..{len(indices)} (found {sorted(indices)})")
    return slots


def _slot_pins(s, pid: str, idx: int, cell: CellDef, shared: dict, claims: _PinClaims, c: Collector,
               held: frozenset = frozenset()) -> dict:
    pins: dict = {}
    for p in s.findall("pin"):
        pn = p.get("name")
        if pn in pins:
            c.err(p, f"part {pid}: {s.tag} {idx} lists pin {pn} twice")
            continue
        if pn not in cell.pins:
            c.err(p, f"part {pid}: {s.tag} {idx} has pin {pn}, which cell {cell.name} does not have "
                     f"(its pins: {', '.join(cell.pins)})")
            continue
        if p.get("shared") is not None:
            ref = p.get("shared")
            if ref in held:
                c.err(p, f"part {pid}: slot {idx} pin {pn} is wired to {ref}, which every build holds at a rail "
                         f"(tie=\"...\")")
                continue
            if ref not in shared:
                c.err(p, f"part {pid}: {s.tag} {idx} pin {pn} refers to shared pin {ref!r}, which the "
                         f"pinout does not declare (<pin name=\"{ref}\" number=\"...\"/>)")
                continue
            pins[pn] = shared[ref]
        else:
            num = c.count(p, "number", f"part {pid} {s.tag} {idx} pin {pn}")
            if num is None:
                continue
            claims.claim(p, num, f"{s.tag} {idx} {pn}")
            pins[pn] = num
    return pins


def _nc_pins(pinout, pid: str, claims: _PinClaims, c: Collector) -> tuple:
    nc: list = []
    nc_el = pinout.find("nc")
    if nc_el is not None:
        for tok in nc_el.get("numbers").split():
            if len(tok) > 12:
                c.err(nc_el, f"part {pid}: <nc numbers=...> holds \"{_clip(tok)}\", no pin number of a part")
                continue
            claims.claim(nc_el, int(tok), "not connected")
            nc.append(int(tok))
    unassigned = [k for k in range(1, claims.npins + 1) if k not in claims.used]
    if unassigned:
        c.err(pinout, f"part {pid}: pin {', '.join(map(str, unassigned))} of {claims.npins} is not assigned "
                      f"(list pins with no function in <nc numbers=\"...\"/>)")
    return tuple(sorted(nc))


def _kind_checks(el, pinout, pid: str, kind: str, slots: list, supply: dict, c: Collector) -> None:
    """What each kind of part must have (and must not)."""
    role = el.get("role")
    if kind == "chip":
        if not slots and not _units(pinout):
            c.err(el, f"part {pid}: a chip needs at least one section")
        if not supply:
            c.err(pinout, f"part {pid}: a chip needs its supply pins (<supply name=\"VCC\" number=\"14\"/>)")
    elif kind == "support":
        if _units(pinout):
            c.err(pinout, f"part {pid}: a support part has no sections or poles")
        if role is None:
            c.err(el, f"part {pid}: a support part needs its role (role=\"{'|'.join(SUPPORT_ROLES)}\", "
                      "several separated by spaces)")
    if kind != "support" and role is not None:
        c.err(el, f"part {pid}: only a support part has a role")
    relay_el = el.find("relay")
    if kind == "relay" and relay_el is None:
        c.err(el, f"part {pid}: a relay needs a <relay> element (coil and contact figures)")
    if kind != "relay" and relay_el is not None:
        c.err(relay_el, f"part {pid}: only a part of kind=\"relay\" has a <relay> element")


def _delays(el, pid: str, kind: str, slots: list, c: Collector, broken: frozenset,
            cells: dict | None = None) -> tuple[dict, dict, dict]:
    """``(typical, maximum, per path)``: a cell's one delay, or a block's delay per path (``from``/``to``),
    where the cell's one figure is then its slowest path."""
    delay_typ: dict = {}
    delay_max: dict = {}
    paths: dict = {}
    slot_cells = {s.cell for s in slots}
    for d in el.findall("delay"):
        cname = d.get("cell")
        if cname in broken:
            continue
        if cname not in slot_cells:
            c.err(d, f"part {pid}: delay for cell {cname!r}, which no section or pole of the part performs")
            continue
        per_path = d.get("from") is not None or d.get("to") is not None
        if cname in delay_typ and not (per_path and cname in paths):
            c.err(d, f"part {pid}: delay for cell {cname} is given twice")
            continue
        path = d.get("path") or ""
        t = _delay_figure(d.find("typ"), c, f"part {pid} typical delay", path, kind == "chip")
        m = _delay_figure(d.find("max"), c, f"part {pid} maximum delay", path, kind == "chip")
        if t is not None and m is not None:
            if m.value < t.value:
                c.err(d.find("max"), f"part {pid}: maximum delay {d.find('max').get('value')} is below the "
                                     f"typical {d.find('typ').get('value')}")
            if per_path:
                cell = (cells or {}).get(cname)
                pd_ = path_delay(d, c, pid, cell, t, m) if cell is not None else None
                if pd_ is None:
                    continue
                paths.setdefault(cname, []).append(pd_)
                if cname in delay_max and delay_max[cname].value >= m.value:
                    continue
            delay_typ[cname], delay_max[cname] = t, m
    if kind in ("chip", "relay"):
        for cname in sorted(slot_cells):
            if cname not in delay_typ and not any(d.get("cell") == cname for d in el.findall("delay")):
                c.err(el, f"part {pid}: no delay given for cell {cname}")
    return delay_typ, delay_max, paths


def _relay_data(relay_el, pid: str, nslots: int, c: Collector) -> RelayData | None:
    figs = {}
    for tag, unit in (("coil-voltage", "V"), ("coil-resistance", "ohm"), ("coil-current", "A"),
                      ("operate-time", "s"), ("release-time", "s"), ("bounce-time", "s")):
        figs[tag] = figure(relay_el.find(tag), c, f"part {pid} {tag.replace('-', ' ')}", unit)
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
    poles = c.count(relay_el, "poles", f"part {pid} <relay>", "part_sections")
    if poles is None:
        return None
    if poles != nslots:
        c.err(relay_el, f"part {pid}: the relay has {poles} pole{'s' * (poles != 1)} but the pinout "
                        f"lists {nslots} <pole> element{'s' * (nslots != 1)}")
    got = {tag: f for tag, f in figs.items() if f is not None}
    if len(got) < len(figs) or ccur is None:
        return None
    return RelayData(poles=poles, form=relay_el.get("form"), coil_voltage=got["coil-voltage"],
                     coil_resistance=got["coil-resistance"], coil_current=got["coil-current"],
                     operate_time=got["operate-time"], release_time=got["release-time"],
                     bounce_time=got["bounce-time"],
                     contact_rating=f"{cr.get('current')} at {cr.get('voltage')} {cr.get('type')}",
                     contact_current=ccur, contact_voltage=cvol)


def _part_from(el, cells: dict, c: Collector, display: str, default_currency: str,
               broken: frozenset = frozenset()) -> PartDef | None:
    pid = el.get("id")
    kind = el.get("kind")
    n_before = len(c.diags)
    pkg = el.find("package")
    pinout = el.find("pinout")
    npins = c.count(pkg, "pins", f"part {pid} <package>", "part_pins")
    if npins is None:
        return None
    nslots = len(_units(pinout))
    if nslots > limits.value("part_sections"):
        c.err(pinout, f"part {pid}: {nslots} sections or poles: {limits.exceeded('part_sections', nslots)}")
        return None
    claims = _PinClaims(pid, pkg.get("name"), npins, c)
    supply, shared = _named_pins(pinout, pid, claims, c)
    slots = _slots(pinout, pid, cells, shared, claims, c, broken)
    nc = _nc_pins(pinout, pid, claims, c)
    _kind_checks(el, pinout, pid, kind, slots, supply, c)
    delay_typ, delay_max, paths = _delays(el, pid, kind, slots, c, broken, cells)

    sc = el.find("supply-current")
    q = figure(sc.find("quiescent") if sc is not None else None, c, f"part {pid} quiescent current", "A")
    pu = figure(sc.find("per-unit") if sc is not None else None, c, f"part {pid} current per unit", "A")
    ld = el.find("loading")
    il = figure(ld.find("input") if ld is not None else None, c, f"part {pid} input load", "UL")
    od = figure(ld.find("output") if ld is not None else None, c, f"part {pid} output drive", "UL")
    ratings: dict = {}
    for r in el.findall("rating"):
        f = figure(r, c, f"part {pid} {r.get('name')}", None)
        if f is not None:
            ratings[r.get("name")] = f
    oi = el.find("open-input")
    open_input = (OpenInput(oi.get("reads"), oi.get("source").strip(), (oi.get("conditions") or "").strip())
                  if oi is not None else None)
    price_el = el.find("price")
    price = figure(price_el, c, f"part {pid} price", "")
    currency = (price_el.get("currency") if price_el is not None else None) or default_currency
    if price_el is not None and not currency:
        c.err(price_el, f"part {pid}: the price has no currency (currency=\"USD\" on the price or the catalog)")
    relay_el = el.find("relay")
    relay = _relay_data(relay_el, pid, len(slots), c) if relay_el is not None and kind == "relay" else None
    if len(c.diags) > n_before:
        return None
    return PartDef(
        id=pid, description=" ".join(el.findtext("description").split()), kind=kind,
        package=pkg.get("name"), pin_count=claims.npins, slots=slots, supply_pins=supply, shared_pins=shared,
        delay_typ=delay_typ, delay_max=delay_max, current_quiescent=q, current_per_unit=pu,
        input_load=il, output_drive=od, price=price, currency=currency or "",
        price_source=price.source if price is not None else "", relay=relay, family=el.get("family") or "",
        source_file=display, pinout_source=pinout.get("source").strip(), nc_pins=nc,
        ratings=ratings, roles=tuple((el.get("role") or "").split()), open_input=open_input, path_delays=paths,
        held={n: p.get("tie") for p in pinout.findall("pin") if p.get("tie") for n in [p.get("name")]})


# ---------------------------------------------------------------------------
# files
def _read_bytes(path) -> bytes:
    """The bytes of a catalog file, its size checked before it is read."""
    try:
        p = path if hasattr(path, "read_bytes") else Path(path)
        if isinstance(p, Path):
            size = p.stat().st_size
            if size > limits.value("catalog_bytes"):
                raise CatalogError(Diagnostic(f"the file is {size} bytes: "
                                              f"{limits.exceeded('catalog_bytes', size)}", str(path)))
        return p.read_bytes()
    except (OSError, ValueError) as exc:
        reason = exc.strerror if isinstance(exc, OSError) and exc.strerror else str(exc)
        raise CatalogError(Diagnostic(f"cannot read: {reason}", str(path))) from exc


def read_catalog(path, data: bytes | None = None) -> Catalog:
    """Read and check one catalog file (a path, or a resource with ``read_bytes``).

    Raises :class:`CatalogError` with every fault found (file and line).
    """
    display = str(path)
    if data is None:
        data = _read_bytes(path)
    root = read_xml(data, display, "catalog", "catalog", CatalogError)
    diags = unsourced(root, display)
    lines_said = {d.line for d in diags}
    diags += [d for d in validate(root, "mapper.libraries", "catalog.rng", display, "catalog")
              if d.line not in lines_said]
    if diags:
        raise CatalogError(diags)
    c = Collector(display)
    cells: dict = {}
    parts: dict = {}
    lines: dict = {}
    try:
        _entries(root, c, display, cells, parts, lines)
    except TooManyErrors:
        pass
    if c.diags:
        raise CatalogError([d for d in c.diags if d is not None])
    log.debug("catalog %s: %d cells, %d parts", display, len(cells), len(parts))
    return Catalog(root.get("name"), " ".join((root.findtext("description") or "").split()), display,
                   parts, cells, lines)


def _entries(root, c: Collector, display: str, cells: dict, parts: dict, lines: dict) -> None:
    """Read the cells, then the parts, of a catalog into ``cells`` and ``parts`` (faults into ``c``)."""
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


def load_catalog(path) -> tuple[dict, dict]:
    """Read and check one catalog file: ``(parts by id, cells by name)``.

    Raises :class:`CatalogError` with every fault found (file and line).
    """
    cat = read_catalog(path)
    return cat.parts, cat.cells


def builtin_catalogs() -> list:
    """Names of the catalogs shipped with netfit (file stems of ``libraries/*.xml``)."""
    root = importlib.resources.files("mapper.libraries")
    return sorted(p.name[:-4] for p in root.iterdir() if p.name.endswith(".xml"))
