"""Reading technology targets (``targets/*.xml``, schema ``targets/target.rng``).

A target names its catalogs, the cells a build may use and the parts that
may carry them, the objective order, the support-part rules and (for relays)
the supply voltage.  Every reference is checked; faults are collected and
raised together as one :class:`TargetError` with file and line.

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

import importlib.resources
from collections import Counter
from pathlib import Path

from .. import limits
from ..errors import Diagnostic, InputError
from .catalogs import CatalogError, Collector, TooManyErrors, builtin_catalogs, figure, read_catalog
from .model import DEFAULT_OBJECTIVE, ROLE_FOR_PER, SupportRule, Target
from .xmlfile import read_xml, validate

__all__ = ["TargetError", "load_target", "builtin_targets"]


class TargetError(InputError):
    """A target file (or a catalog it names) is unreadable, breaks the schema, or has dangling references."""


def builtin_targets() -> list:
    """``(name, description)`` of every target shipped with netfit, sorted by name."""
    root = importlib.resources.files("mapper.targets")
    out = []
    for p in sorted(root.iterdir(), key=lambda p: p.name.removesuffix(".xml")):
        if not p.name.endswith(".xml"):
            continue
        el = read_xml(p.read_bytes(), str(p), "target", "target", TargetError)
        out.append((el.get("name") or p.name[:-4], " ".join((el.findtext("description") or "").split())))
    return out


def _builtin_target_names() -> list:
    root = importlib.resources.files("mapper.targets")
    return sorted(p.name[:-4] for p in root.iterdir() if p.name.endswith(".xml"))


def _is_file(path) -> bool:
    """Whether ``path`` names a readable file; a name the system cannot take (too long, a NUL) is none."""
    try:
        return bool(path.is_file())
    except (OSError, ValueError):
        return False


def _resolve_catalog(src: str, base: Path | None):
    """A target's ``<catalog src=...>``: relative to the target file first, then the built-ins."""
    if "\x00" in src:
        return None
    if base is not None:
        cand = base / src
        if _is_file(cand):
            return cand
    if "/" not in src and "\\" not in src:
        stem = src[:-4] if src.endswith(".xml") else src
        res = importlib.resources.files("mapper.libraries").joinpath(stem + ".xml")
        if _is_file(res):
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
    looks_like_path = p.suffix.lower() == ".xml" or "/" in text or "\\" in text or _is_file(p)
    if looks_like_path:
        if not _is_file(p):
            raise TargetError(Diagnostic(f"target file {text} does not exist"))
        try:
            display, base = text, p.resolve().parent
            size = p.stat().st_size
            if size > limits.value("catalog_bytes"):
                raise TargetError(Diagnostic(f"the file is {size} bytes: "
                                             f"{limits.exceeded('catalog_bytes', size)}", text))
            data = p.read_bytes()
        except OSError as exc:
            raise TargetError(Diagnostic(f"cannot read: {exc.strerror or exc}", text)) from exc
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


def _catalogs(root, base: Path | None, c: Collector) -> list:
    """``[(catalog element, Catalog), ...]`` of the catalogs the target names."""
    cats: list = []
    seen: list = []
    for el in root.findall("catalog"):
        src = el.get("src").strip()
        where = _resolve_catalog(src, base)
        if where is None:
            looked = f"{base / src}, " if base is not None else ""
            c.err(el, f"catalog {src!r} not found (looked for {looked}and the built-in catalogs: "
                      f"{', '.join(builtin_catalogs())})")
            continue
        if str(where) in seen:
            c.err(el, f"catalog {src!r} is named twice")
            continue
        try:
            cats.append((el, read_catalog(where)))
            seen.append(str(where))
        except CatalogError as exc:
            c.diags.extend(exc.diagnostics)
    return cats


def _merged(cats: list, c: Collector) -> tuple[dict, dict]:
    """Every part and cell of the named catalogs; a part in two catalogs, or a cell defined two ways, is a fault."""
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
    return all_parts, all_cells


def _uses(root, kind: str, all_parts: dict, all_cells: dict, c: Collector) -> tuple[dict, dict, dict]:
    """``(cells, carriers, parts)`` from the target's ``<use>`` elements."""
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
                c.err(car, f"part {pid} has no section or pole performing {cname} "
                           f"(its cells: {', '.join(part.cells())})")
                continue
            if part.kind != want_kind:
                c.err(car, f"part {pid} is a {part.kind}; a {kind} target builds on {want_kind}s")
                continue
            ids.append(pid)
            parts[pid] = part
        cells[cname] = cell
        carriers[cname] = ids
    return cells, carriers, parts


def _support_rules(root, all_parts: dict, parts: dict, c: Collector) -> list:
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
        if ROLE_FOR_PER[per] not in part.roles:
            c.err(s, f"support part {pid} has role {' '.join(part.roles)!r}; one per {per} must have role "
                     f"{ROLE_FOR_PER[per]!r}")
            continue
        if (pid, per) in seen_rules:
            c.err(s, f"support rule for {pid} per {per} is given twice")
            continue
        seen_rules.add((pid, per))
        count = c.count(s, "count", f"support rule for {pid}", "support_count") if s.get("count") else 1
        if count is None:
            continue
        rules.append(SupportRule(pid, per, count, (s.get("source") or "").strip()))
        parts[pid] = part
    return rules


def _load_target(data: bytes, display: str, base: Path | None) -> Target:
    root = read_xml(data, display, "target", "target", TargetError)
    diags = validate(root, "mapper.targets", "target.rng", display, "target")
    if diags:
        raise TargetError(diags)
    c = Collector(display)
    try:
        return _target_from(root, display, base, c)
    except TooManyErrors:
        raise TargetError([d for d in c.diags if d is not None]) from None


def _target_from(root, display: str, base: Path | None, c: Collector) -> Target:
    kind = root.get("kind")
    cats = _catalogs(root, base, c)
    if c.diags:
        raise TargetError(c.diags)
    all_parts, all_cells = _merged(cats, c)
    cells, carriers, parts = _uses(root, kind, all_parts, all_cells, c)

    obj_el = root.find("objective")
    objective = tuple(obj_el.text.split()) if obj_el is not None else DEFAULT_OBJECTIVE
    dup = [k for k, v in Counter(objective).items() if v > 1]
    if dup:
        c.err(obj_el, f"objective names {', '.join(dup)} twice")

    supply = None
    sup_el = root.find("supply")
    if sup_el is not None:
        supply = figure(sup_el, c, "supply", "V")
    if kind == "relay" and sup_el is None:
        c.err(root, "a relay target needs its supply voltage (<supply value=\"5 V\" source=\"...\"/>)")
    if kind == "relay" and supply is not None:
        for pid, part in list(parts.items()):
            if part.relay is not None and abs(part.relay.coil_voltage.value - supply.value) > 1e-9:
                c.err(sup_el, f"relay {pid} has a {part.relay.coil_voltage.value:g} V coil but the target "
                              f"supply is {supply.value:g} V")
    rules = _support_rules(root, all_parts, parts, c)
    if c.diags:
        raise TargetError([d for d in c.diags if d is not None])
    return Target(name=root.get("name"), description=" ".join(root.findtext("description").split()),
                  path=display, kind=kind, cells=cells, parts=parts, carriers=carriers, objective=objective,
                  support_rules=rules, supply_voltage=supply, catalogs=[str(cat.path) for _, cat in cats],
                  available=all_parts, catalog_cells=all_cells)
