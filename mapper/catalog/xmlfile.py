"""Reading catalog and target XML safely, and checking it against the shipped schemas.

Files are read with entity resolution, DTD loading and network access off; a
document type declaration or entity declaration is refused before the parser
sees the file, so a hostile file can neither read local files nor expand.
Schema faults come back as :class:`~mapper.errors.Diagnostic` objects with
file and line, one per line.
"""
from __future__ import annotations

import functools
import importlib.resources
import re
from dataclasses import dataclass

from lxml import etree

from .. import limits
from ..errors import Diagnostic

__all__ = ["read_xml", "validate", "unsourced", "xml_parser", "MAX_BYTES"]

MAX_BYTES = limits.LIMITS["catalog_bytes"].default  # catalogs are a few dozen kilobytes

_ENC_DECL = re.compile(rb"^<\?xml[^>]*?encoding\s*=\s*[\"']([A-Za-z0-9._\-]+)[\"']")


def xml_parser() -> etree.XMLParser:
    """The only parser catalogs and targets are read with: no entities, no DTD, no network."""
    return etree.XMLParser(resolve_entities=False, no_network=True, load_dtd=False, huge_tree=False,
                           dtd_validation=False, collect_ids=False, remove_comments=False)


def _line_of(data: bytes, offset: int) -> int:
    return data.count(b"\n", 0, offset) + 1


def read_xml(data: bytes, display: str, root_tag: str, what: str, err_cls):
    """Parse ``data`` safely; returns the root element or raises ``err_cls`` (one diagnostic)."""
    def fail(msg, line=None, col=None):
        raise err_cls(Diagnostic(msg, display, line, col))

    if len(data) > limits.value("catalog_bytes"):
        fail(f"the file is {len(data)} bytes: {limits.exceeded('catalog_bytes', len(data))}")
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
        root = etree.fromstring(data, xml_parser())
    except etree.XMLSyntaxError as exc:
        msg = re.sub(r", line \d+, column \d+$", "", exc.msg or "malformed XML")
        line, col = (exc.position if exc.position else (exc.lineno, None))
        fail(f"malformed XML: {msg}", line, col or None)
    if root.getroottree().docinfo.doctype:  # type: ignore[union-attr]  # lxml-stubs lack DocInfo.doctype
        fail(f"a document type declaration is not allowed in a {what}", 1)
    if root.tag != root_tag:
        fail(f"expected a {what} (a <{root_tag}> element at the top), found <{root.tag}>", root.sourceline)
    return root


@functools.cache
def _schema_doc(package: str, name: str):
    data = importlib.resources.files(package).joinpath(name).read_bytes()
    return etree.fromstring(data, xml_parser())


@functools.cache
def _schema(package: str, name: str) -> etree.RelaxNG:
    return etree.RelaxNG(_schema_doc(package, name))


_RNG = "{http://relaxng.org/ns/structure/1.0}"
#: how a value of each named kind in our schemas is written, for messages
_KIND_WORDS = {
    "quantity": "a number with an SI unit, such as \"7 ns\", \"10 kohm\" or \"0.30\"",
    "pinnumber": "a whole number from 1",
    "word": "a name of letters, digits and _ . + - (starting with a letter or digit)",
    "pinname": "a pin name of letters, digits and _ + -",
    "cellname": "a name of letters, digits and _ (not starting with a digit)",
    "identifier": "a name of letters, digits and _ (not starting with a digit)",
    "partid": "a part name of letters, digits and _ . + -",
    "text": "some text",
    "line": "one line of text",
    "currency": "three capital letters, such as USD",
}


@dataclass(frozen=True)
class _AttrRule:
    required: bool
    kind: str                 # a define name, "choice", "positiveInteger", "pattern" or "any"
    choices: tuple = ()
    pattern: str = ""


def _value_rule(attr_el, defines: dict) -> tuple:
    """``(kind, choices, pattern)`` of the value an RNG ``<attribute>`` allows."""
    kind, node = "any", attr_el
    for _ in range(8):  # follow refs to defines (our schemas nest them at most twice)
        child = next((c for c in node if isinstance(c.tag, str)), None)
        if child is None:
            return kind, (), ""
        tag = child.tag[len(_RNG):]
        if tag == "ref":
            kind, node = child.get("name"), defines.get(child.get("name"))
            if node is None:
                return kind, (), ""
            continue
        if tag == "choice":
            return "choice", tuple(v.text for v in child.iter(f"{_RNG}value")), ""
        if tag == "data":
            param = child.find(f"{_RNG}param[@name='pattern']")
            if param is not None:
                return (kind if kind != "any" else "pattern"), (), param.text or ""
            return (kind if kind != "any" else child.get("type")), (), ""
        return kind, (), ""
    return kind, (), ""


@functools.cache
def _attribute_rules(package: str, name: str) -> dict:
    """``(parent tag, tag) -> {attribute: _AttrRule}`` for every element of a schema of ours."""
    doc = _schema_doc(package, name)
    defines = {d.get("name"): d for d in doc.iter(f"{_RNG}define")}
    rules: dict = {}
    for el in doc.iter(f"{_RNG}element"):
        up = el.getparent()
        while up is not None and up.tag not in (f"{_RNG}element", f"{_RNG}define"):
            up = up.getparent()
        parent = up.get("name") if up is not None and up.tag == f"{_RNG}element" else None
        attrs: dict = {}
        stack = [(c, True) for c in el]
        while stack:
            node, required = stack.pop()
            if not isinstance(node.tag, str):
                continue
            tag = node.tag[len(_RNG):]
            if tag == "element":
                continue
            if tag == "attribute":
                kind, choices, pattern = _value_rule(node, defines)
                attrs[node.get("name")] = _AttrRule(required, kind, choices, pattern)
                continue
            if tag == "ref" and node.get("name") in defines:
                stack.extend((c, required) for c in defines[node.get("name")])
                continue
            keep = required and tag not in ("optional", "zeroOrMore", "choice")
            stack.extend((c, keep) for c in node)
        rules[(parent, el.get("name"))] = attrs
    return rules


def _value_fault(rule: _AttrRule, value: str) -> str | None:
    """Why ``value`` breaks ``rule`` (``None`` when it fits)."""
    if rule.kind == "choice":
        return None if value in rule.choices else "one of " + ", ".join(f'"{c}"' for c in rule.choices)
    if rule.kind in ("pinnumber", "positiveInteger"):
        return None if value.strip().isdigit() and int(value.strip() or "0") > 0 else _KIND_WORDS["pinnumber"]
    if rule.pattern:
        try:
            ok = re.fullmatch(rule.pattern, value) is not None
        except re.error:
            return None
        return None if ok else _KIND_WORDS.get(rule.kind, f"of the form {rule.pattern}")
    return None


def _attribute_faults(el, rules: dict) -> list:
    """What is wrong with the attributes of ``el``, each naming the attribute and its value."""
    parent = el.getparent()
    attrs = rules.get((parent.tag if parent is not None else None, el.tag))
    if attrs is None:  # an element defined on its own (in a <define>) is known without its parent
        attrs = rules.get((None, el.tag))
    if attrs is None:
        return []
    out = []
    for name, rule in attrs.items():
        if rule.required and el.get(name) is None:
            out.append(f"<{el.tag}> needs the attribute {name}=\"...\"")
    for name, value in el.attrib.items():
        rule = attrs.get(name)
        shown = value if len(value) <= 40 else value[:40] + "…"
        if rule is None:
            allowed = ", ".join(attrs) or "none"
            out.append(f"<{el.tag}> has no attribute {name} (it has: {allowed}); found {name}=\"{shown}\"")
            continue
        fault = _value_fault(rule, value)
        if fault:
            out.append(f"<{el.tag} {name}=\"{shown}\">: {name} must be {fault}")
    return out


def validate(root, package: str, schema_name: str, display: str, what: str) -> list:
    """Diagnostics for every way ``root`` breaks schema ``schema_name`` of ``package`` (empty: it fits)."""
    schema = _schema(package, schema_name)
    if schema.validate(root):
        return []
    # libxml2 often says several things about one fault (the datatype, then the element that failed),
    # and for attributes often only "failed to validate attributes": each element with an attribute
    # fault is looked at again against the schema's attribute rules, so the message names the
    # attribute and its value.  One diagnostic per line; messages without a line repeat a lined one.
    rules = _attribute_rules(package, schema_name)
    by_line: dict = {}
    looked: set = set()
    for e in schema.error_log:
        found = _element_at(root, e.path) if e.path else _element_named(root, e.message, rules)
        line = e.line or (found.sourceline if found is not None else None)
        msgs = by_line.setdefault(line, [])
        if e.type_name in ("RELAXNG_ERR_ATTRVALID", "RELAXNG_ERR_TYPEVAL", "RELAXNG_ERR_INVALIDATTR",
                           "RELAXNG_ERR_NOTELEM", "RELAXNG_ERR_DATATYPE", "RELAXNG_ERR_VALUE"):
            if found is not None and id(found) not in looked:
                looked.add(id(found))
                faults = _attribute_faults(found, rules)
                if faults:
                    msgs.extend(f for f in faults if f not in msgs)
                    continue
            elif found is not None:
                continue
        if e.message not in msgs and not (msgs and "failed to validate attributes" in e.message):
            msgs.append(e.message)
    if len(by_line) > 1:
        by_line.pop(None, None)
    return [Diagnostic(f"does not fit the {what} schema: {'; '.join(msgs)}", display, line)
            for line, msgs in sorted(by_line.items(), key=lambda kv: kv[0] or 0) if msgs]


def _element_named(root, message: str, rules: dict):
    """For an error libxml2 gave without line or path ("Element typ failed ..."): the first element of
    that name whose attributes break the schema, else the first of that name, else ``None``."""
    m = re.search(r"[Ee]lement (\S+)", message or "")
    if not m:
        return None
    first = None
    for el in root.iter(m.group(1)):
        if _attribute_faults(el, rules):
            return el
        first = first if first is not None else el
    return first


def _element_at(root, path: str):
    """The element at an error's path (``/catalog/part[1]/package``), or ``None``."""
    try:
        found = root.getroottree().xpath(path)
    except etree.XPathError:
        return None
    return found[0] if isinstance(found, list) and found and isinstance(found[0], etree._Element) else None


_FIGURE_TAGS = frozenset({"pinout", "typ", "max", "quiescent", "per-unit", "input", "output", "rating", "price",
                          "coil-voltage", "coil-resistance", "coil-current", "operate-time", "release-time",
                          "bounce-time", "contact-rating", "open-input"})


def unsourced(root, display: str) -> list:
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
