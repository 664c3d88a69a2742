"""Structural Verilog-2001 of a build, and behavioural models of its cells.

:func:`write_build` writes ``<design>.v``: one module named after the design,
with one instance per used section, named ``<part ref>_<section>`` (``U3_2``
is section 2 of chip U3; ``K2_1`` is pole 1 of relay K2), each preceded by a
comment giving the part and the package pin of every cell pin.  Beside it
:func:`write_cells` writes ``<design>_models.v``, one behavioural module per
cell the build uses, so that the pair simulates in any standard Verilog
simulator and netfit's own reader reads the pair back (it takes the models
file beside a design that instantiates modules it does not define).

Names
-----
* A net keeps its name when it is a plain Verilog identifier (letters,
  digits, ``_``, ``$``, not a keyword of Verilog-2001 or SystemVerilog).
* **Buses.**  BLIF and our netlists name bus bits ``a[0]``, ``a[1]`` ...
  as scalar nets whose names contain brackets.  Ports ``base[i]`` are
  regrouped into one vector port ``base`` (``input [3:0] a``) when all of
  these hold: every bit from 0 to the highest index is a port, all of the
  same direction; ``base`` is a plain identifier; and no other net of the
  build is called ``base`` or ``base[j]``.  Inside the module the bit is
  then written ``a[3]``, the same text as the net name.  Any other name with
  brackets (an internal net ``t[2]``, a port bus with a hole) becomes an
  escaped identifier (``\\t[2] `` -- backslash, the name, a space).
* **Ports keep the design's names exactly.**  An internal net whose name
  has characters an escaped identifier cannot carry (spaces, control
  characters, non-ASCII) has them replaced by ``_`` (made unique with a
  numeric suffix), listed in the header comment; a *port* with such a name
  is refused (:class:`~mapper.errors.UsageError`, or before any work by
  :func:`check_design`), and so is an output that is also an input of the
  design (a net passed straight through): a Verilog module cannot have two
  ports of one name, and renaming one would make the export differ from
  the design.
* The supply rails are ``supply1 VCC`` and ``supply0 GND``.
* The module is named after the design; a name that is not a plain
  identifier has its other characters replaced by ``_``, and a keyword or a
  leading digit gets the prefix ``d_`` (``edge`` becomes ``d_edge``).

Netlists
--------
:func:`write_netlist` (``netfit convert design.blif design.v``) writes a
design rather than a build, inside the structural subset netfit reads: one
``assign`` per logic node (its cover as a sum of products, or the
complement of one when the cover lists the OFF-set), ``always
@(posedge c)`` / ``@(negedge c)`` with a non-blocking assignment per
edge-triggered element and ``always @*`` with ``if (en)`` / ``if (!en)`` per
latch, each storage net a ``reg`` with its initial value where the design
gives 0 or 1.  A storage net that is also an output port is held in a
``reg`` named ``<net>_q`` and assigned to the port.  A feedback loop read as
storage (kind ``as``, :mod:`mapper.logic.feedback`) is written closed
again: the logic of its excitation is assigned to the cut net itself, so
the file holds the loop of gates the design had (a plain copy of its data
where the excitation is read elsewhere too).  An edge or level element with
no control net has no Verilog form and is refused; a don't-care network
(``.exdc``) is not written (a warning says so).

Relays
------
Each used pole is an instance of the changeover cell: ``COIL`` on the coil
net of its relay, ``NO`` and ``NC`` on the nets of its terminals, ``COM``
on its common net.  A terminal left unused reads 0 (``1'b0``): in the build
a relay-driven net that no closed contact feeds is held at 0 by its load.
The model's armature moves only on a definite 1 at the coil and starts
released, so storage powers up released, as the build assumes.  A pole fed
at its common terminal (a storage sequencer's changeover, see
:mod:`mapper.relay_logic`) is an instance of ``<cell>_fed``, which drives
its ``NO`` and ``NC`` terminals.  A steering diode is an ``assign`` from
anode to cathode (one way), and a net with more than one driver -- a coil
fed through several diodes, a coil net fed by several contacts -- is a
``wor`` (wired OR), as the contacts and diodes join it.

Storage cells carry a parameter ``INIT`` (the power-up value the design
declares; ``1'bx`` when it declares none).  Storage built from gates (a
loop of NAND gates, :attr:`~mapper.build.Build.storage_groups`) has no
such parameter: like the hardware it powers up unknown, and simulates as
``x`` until written.  The header comment lists each such net with the value
the design declares, for a test bench to force at time 0 -- the power-on
reset the build's cautions ask for.
"""
from __future__ import annotations

import logging
import re
from dataclasses import dataclass, field
from pathlib import Path

from .. import __version__
from ..analyze.results import Analysis
from ..build import Build, ref_key
from ..errors import Diagnostic, InputError, InternalError, UsageError
from ..logic.feedback import closed_logic
from ..netlist import Logic, Netlist, Storage
from .files import atomic_write
from .layout import render

__all__ = ["KEYWORDS", "VerilogNames", "verilog_names", "build_text", "cells_text", "write_build",
           "write_cells", "models_file", "MODELS_SUFFIX", "netlist_text", "write_netlist", "check_design"]

log = logging.getLogger(__name__)

#: the cell models of ``<design>.v`` are written beside it as ``<design>_models.v``
MODELS_SUFFIX = "_models.v"


def models_file(design_path) -> Path:
    """The models file written beside the build's Verilog ``design_path`` (``out/c17.v`` ->
    ``out/c17_models.v``)."""
    p = Path(design_path)
    return p.with_name(p.stem + MODELS_SUFFIX)

#: reserved words of Verilog-2001 (IEEE 1364-2001 Annex B) and SystemVerilog (IEEE 1800-2017 Annex B):
#: a net of that name is written as an escaped identifier so either language reads the file
KEYWORDS = frozenset("""
always and assign automatic begin buf bufif0 bufif1 case casex casez cell cmos config deassign default
defparam design disable edge else end endcase endconfig endfunction endgenerate endmodule endprimitive
endspecify endtable endtask event for force forever fork function generate genvar highz0 highz1 if
ifnone incdir include initial inout input instance integer join large liblist library localparam
macromodule medium module nand negedge nmos nor noshowcancelled not notif0 notif1 or output parameter
pmos posedge primitive pull0 pull1 pulldown pullup pulsestyle_onevent pulsestyle_ondetect rcmos real
realtime reg release repeat rnmos rpmos rtran rtranif0 rtranif1 scalared showcancelled signed small
specify specparam strong0 strong1 supply0 supply1 table task time tran tranif0 tranif1 tri tri0 tri1
triand trior trireg unsigned use uwire vectored wait wand weak0 weak1 while wire wor xnor xor
accept_on alias always_comb always_ff always_latch assert assume before bind bins binsof bit break byte
chandle checker class clocking const constraint context continue cover covergroup coverpoint cross
dist do endchecker endclass endclocking endgroup endinterface endpackage endprogram endproperty
endsequence enum eventually expect export extends extern final first_match foreach forkjoin global iff
ignore_bins illegal_bins implements implies import inside int interconnect interface intersect
join_any join_none let local logic longint matches modport nettype new nexttime null package packed
priority program property protected pure rand randc randcase randsequence ref reject_on restrict
return s_always s_eventually s_nexttime s_until s_until_with sequence shortint shortreal soft solve
static string strong struct super sync_accept_on sync_reject_on tagged this throughout timeprecision
timeunit type typedef union unique unique0 until until_with untyped var virtual void wait_order weak
wildcard with within
""".split())

_SIMPLE = re.compile(r"^[A-Za-z_][A-Za-z0-9_$]*$")
_BIT = re.compile(r"^([A-Za-z_][A-Za-z0-9_$]*)\[(\d+)\]$")
_ESCAPABLE = re.compile(r"^[\x21-\x7e]+$")
RAILS = {"VCC": "supply1", "GND": "supply0"}


def _is_simple(name: str) -> bool:
    return bool(_SIMPLE.match(name)) and name not in KEYWORDS


def identifier(name: str) -> str:
    """``name`` as a Verilog identifier: itself when simple, else escaped (``\\name ``).

    ``name`` must consist of printable ASCII (see :class:`VerilogNames` for the others).

    >>> identifier("n10"), identifier("a.b"), identifier("wire")
    ('n10', '\\\\a.b ', '\\\\wire ')
    """
    if _is_simple(name):
        return name
    if not _ESCAPABLE.match(name):
        raise ValueError(f"{name!r} cannot be an escaped identifier")
    return "\\" + name + " "


@dataclass
class Port:
    """One port of the module: direction, Verilog name, and ``(msb, lsb)`` for a vector."""

    direction: str
    name: str
    range: tuple | None = None
    #: for a vector: bit index -> net name; for a scalar: {None: net}
    bits: dict = field(default_factory=dict)

    #: ``"wor "`` for an output with several drivers (contacts and diodes joined on it)
    net_type: str = ""

    @property
    def decl(self) -> str:
        rng = f"[{self.range[0]}:{self.range[1]}] " if self.range else ""
        return f"{self.direction} {self.net_type}{rng}{self.name}"


@dataclass
class VerilogNames:
    """How each net of a build is written in Verilog.

    ``ref`` maps a net to the text that refers to it inside the module
    (``n10``, ``a[3]`` for a bit of a regrouped vector port, ``\\t[2] ``);
    ``ports`` are the module's ports in order (inputs, then outputs);
    ``wires`` the internal nets to declare; ``renamed`` the nets whose names
    had to change (net -> Verilog name); ``instances`` cell or pole key ->
    instance name.
    """

    module: str
    ref: dict
    ports: list
    wires: list
    renamed: dict
    instances: dict
    #: output port -> the net driving it, where they differ (written as ``assign``)
    assigns: list


def _all_nets(b: Build) -> list:
    nets = list(b.inputs) + list(b.outputs)
    for c in b.cells:
        nets.extend(n for n in c.pins.values() if n is not None)
    for k in b.contacts:
        nets.extend(n for n in (k.com, k.no, k.nc) if n is not None)
    nets.extend(b.coils.values())
    nets.extend(b.output_nets.values())
    for s in _steering(b):
        nets.extend(s.nets)
    return list(dict.fromkeys(nets))


def _steering(b: Build) -> list:
    return [s for s in b.support if s.role == "steering"]


def _driven_often(b: Build) -> set:
    """Nets with more than one driver (several contacts or diodes join them): written as ``wor``."""
    count: dict = {}
    for k in b.contacts:
        for net in ((k.no, k.nc) if k.com in RAILS else (k.com,)):
            if net is not None and net not in RAILS:
                count[net] = count.get(net, 0) + 1
    for s in _steering(b):
        count[s.nets[1]] = count.get(s.nets[1], 0) + 1
    return {n for n, c in count.items() if c > 1}


def _vector_groups(ports_in: list, ports_out: list, all_nets: list) -> dict:
    """base -> (direction, {index: net}) for the port buses that become vectors."""
    by_base: dict = {}
    for direction, names in (("input", ports_in), ("output", ports_out)):
        for n in names:
            m = _BIT.match(n)
            if m:
                by_base.setdefault(m.group(1), []).append((direction, int(m.group(2)), n))
    claimed: dict = {}
    for n in all_nets:
        m = _BIT.match(n)
        base = m.group(1) if m else n
        claimed.setdefault(base, set()).add(n)
    groups = {}
    for base, bits in by_base.items():
        dirs = {d for d, _, _ in bits}
        idx = sorted(i for _, i, _ in bits)
        if len(dirs) != 1 or base in KEYWORDS or base in RAILS:
            continue
        if idx != list(range(0, idx[-1] + 1)):
            continue  # a bus is regrouped only when it is whole: bits 0 .. n, each once
        members = {n for _, _, n in bits}
        if claimed.get(base, set()) - members:
            continue  # an internal net `base[j]` or a net `base` would clash with the vector
        groups[base] = (dirs.pop(), {i: n for _, i, n in bits})
    return groups


class _Namer:
    """Verilog names of nets and ports (the rules of the module docstring), for a build or a netlist."""

    def __init__(self, inputs, outputs, all_nets, output_nets: dict, rails=RAILS):
        self.taken: set = set()  # names as Verilog sees them (an escaped identifier equals its plain text)
        self.ref: dict = {}
        self.renamed: dict = {}
        inputs_set = set(inputs)
        groups = _vector_groups(list(inputs), [o for o in outputs if o not in inputs_set], all_nets)
        for rail in rails:
            self.taken.add(rail)
            self.ref[rail] = rail
        for base, (_, bits) in groups.items():
            self.taken.add(base)
            for i, n in bits.items():
                self.ref[n] = f"{base}[{i}]"
        # nets whose names are usable as they are come first, so they never lose their name to a renaming
        order = [n for n in all_nets if n not in self.ref]
        for n in order:
            if _ESCAPABLE.match(n) and n not in self.taken:
                self.taken.add(n)
                self.ref[n] = identifier(n)
        for n in order:
            if n in self.ref:
                continue
            v = self.fresh(re.sub(r"[^\x21-\x7e]", "_", n) or "_")
            self.ref[n] = identifier(v)
            self.renamed[n] = v
            log.info("net %r written in Verilog as %r", n, v)
        self.ports = []
        seen_groups: set = set()
        for direction, names in (("input", inputs), ("output", outputs)):
            for n in names:
                m = _BIT.match(n)
                if m and m.group(1) in groups and groups[m.group(1)][0] == direction:
                    base = m.group(1)
                    if base in seen_groups:
                        continue
                    seen_groups.add(base)
                    bits = groups[base][1]
                    self.ports.append(Port(direction, base, (max(bits), min(bits)), dict(bits)))
                    continue
                why = _port_fault(n, direction, inputs_set)
                if why:
                    raise UsageError(f"port '{n}' cannot be written in Verilog: {why}")
                self.ports.append(Port(direction, self.ref[n], None, {None: n}))
        port_nets = set(inputs) | set(outputs)
        self.wires = [n for n in all_nets if n not in port_nets and n not in rails]
        self.assigns = []
        for p in self.ports:
            if p.direction != "output":
                continue
            for i, o in p.bits.items():
                net = output_nets.get(o, o)
                target = (p.name if i is None else f"{p.name}[{i}]")
                if net != o or o in inputs_set:
                    if net not in self.ref:
                        raise InternalError(f"output {o} is carried by net {net}, which nothing drives")
                    self.assigns.append((target, self.ref[net], o, net))

    def fresh(self, base: str) -> str:
        cand, k = base, 1
        while cand in self.taken:
            cand = f"{base}_{k}"
            k += 1
        self.taken.add(cand)
        return cand


def _port_fault(name: str, direction: str, inputs: set) -> str | None:
    """Why port ``name`` cannot keep its name in Verilog (``None`` when it can)."""
    if direction == "output" and name in inputs:
        return ("it is both an input and an output of the design, and a Verilog module cannot have two "
                "ports of one name; give the output a name of its own in the design (a buffer)")
    if not _ESCAPABLE.match(name):
        return "it holds characters a Verilog name cannot carry (spaces, control or non-ASCII characters)"
    return None


def check_design(netlist: Netlist) -> None:
    """Refuse, before any work, a design whose ports Verilog cannot carry under their own names.

    Raises :class:`~mapper.errors.InputError` with a diagnostic per port, at
    the port's position in the design file.
    """
    inputs = set(netlist.inputs)
    diags = []
    for direction, names in (("input", netlist.inputs), ("output", netlist.outputs)):
        for n in names:
            why = _port_fault(n, direction, inputs)
            if why:
                diags.append(Diagnostic(f"port '{n}' cannot be written in Verilog: {why}",
                                        *netlist.origin.get(n, (None, None, None))))
    if diags:
        raise InputError(diags)


def _module_name(name: str, avoid=()) -> str:
    module = name if _is_simple(name) else re.sub(r"[^A-Za-z0-9_$]", "_", name) or "design"
    if module[0].isdigit() or module[0] == "$" or module in KEYWORDS:
        module = "d_" + module
    if module in avoid:
        module = module + "_build"
    return module


def verilog_names(b: Build) -> VerilogNames:
    """Decide the Verilog name of every net, port and instance of ``b`` (see the module docstring)."""
    nm = _Namer(b.inputs, b.outputs, _all_nets(b), b.output_nets)
    instances: dict = {}
    for c in sorted(b.cells, key=lambda c: (ref_key(c.part_ref), c.slot)):
        instances[("cell", c.part_ref, c.slot)] = nm.fresh(f"{c.part_ref}_{c.slot}")
    for k in sorted(b.contacts, key=lambda k: (ref_key(k.part_ref), k.pole)):
        instances[("pole", k.part_ref, k.pole)] = nm.fresh(f"{k.part_ref}_{k.pole}")
    return VerilogNames(_module_name(b.design, b.target.cells), nm.ref, nm.ports, nm.wires, nm.renamed,
                        instances, nm.assigns)


def cell_module(name: str) -> str:
    """The Verilog module name of cell ``name``."""
    return identifier(name) if _ESCAPABLE.match(name) else re.sub(r"[^\x21-\x7e]", "_", name)


def _init_literal(init: int) -> str:
    return {0: "1'b0", 1: "1'b1"}.get(init, "1'bx")


def _instances(b: Build, nm: VerilogNames) -> list:
    """Plain data for each instance line of the module, ordered by part and slot."""
    from .wiring import PinLookup

    out: list[dict] = []
    cells = b.target.cells
    pin_of = PinLookup(b)

    def conn(net):
        return "1'b0" if net is None else nm.ref[net]

    by_part: dict = {}
    for c in b.cells:
        by_part.setdefault(c.part_ref, []).append(("cell", c))
    for k in b.contacts:
        by_part.setdefault(k.part_ref, []).append(("pole", k))
    for p in sorted(b.parts, key=lambda p: ref_key(p.ref)):
        pd = b.part_def(p.ref)
        items = sorted(by_part.get(p.ref, []), key=lambda it: it[1].slot if it[0] == "cell" else it[1].pole)
        header = f"{p.ref}: {pd.id}, {pd.description} ({pd.package})"
        names = pd.pin_names()  # datasheet pin names: 1A, 1B, 1Y ...
        if not items:
            coil = b.coils.get(p.ref)
            note = f"coil on {coil}, no pole used" if coil else "no section used"
            out.append({"header": header + f" -- {note}", "lines": []})
            continue
        lines: list[dict] = []
        for kind, it in items:
            if kind == "cell":
                cd = cells[it.cell]
                placed = []
                for pin in cd.pins:
                    net = it.pins.get(pin)
                    num = pin_of(it, pin)
                    placed.append((pin, nm.ref[net] if net is not None else "", num))
                params = f" #(.INIT({_init_literal(it.init)}))" if cd.storage is not None else ""
                open_ = [pin for pin, c_, _ in placed if not c_]
                lines.append({"module": cell_module(it.cell), "params": params,
                              "name": nm.instances[("cell", it.part_ref, it.slot)],
                              "what": f"section {it.slot}, {it.cell}"
                              + (f" ({', '.join(open_)} open)" if open_ else ""),
                              "pins": [(pin, conn_) for pin, conn_, _ in placed],
                              "numbers": " ".join(f"{names.get(num, pin)}={num}" for pin, _, num in placed)})
            else:
                slot = next((s for s in pd.slots if s.index == it.pole), None)
                if slot is None:
                    raise InternalError(f"{p.ref} has no pole {it.pole}")
                cd = cells[slot.cell]
                coil = b.coils.get(p.ref)
                if coil is None:
                    raise InternalError(f"relay {p.ref} has a pole in use but no coil net")
                role_net = {}
                for pin in cd.inputs:
                    role = cd.roles.get(pin)
                    if role == "coil":
                        role_net[pin] = coil
                net_of = {"COM": it.com, "NO": it.no, "NC": it.nc}
                fed = it.com in RAILS   # fed at the common terminal: it drives NO and NC
                pins, numbers = [], []
                for pin in cd.pins:
                    net = role_net.get(pin, net_of.get(pin))
                    drives = (pin != cd.output and pin not in role_net) if fed else pin == cd.output
                    if drives:
                        pins.append((pin, nm.ref[net] if net is not None else ""))
                    else:
                        pins.append((pin, conn(net)))
                    num = slot.pins.get(pin)
                    label = f"{pin}{it.pole}" if pin in net_of else ("COIL+" if pin in role_net else pin)
                    numbers.append(f"{label}={num}")
                lines.append({"module": cell_module(slot.cell) + ("_fed" if fed else ""), "params": "",
                              "name": nm.instances[("pole", it.part_ref, it.pole)],
                              "what": f"pole {it.pole}, {slot.cell}" + ("" if it.com else f" ({cd.output} open)"),
                              "pins": pins, "numbers": " ".join(numbers)})
        out.append({"header": header, "lines": lines})
    return out


def build_text(b: Build, analysis: Analysis, cells_file: str = "") -> str:
    """The structural Verilog-2001 text of ``b`` (one module; cell models in ``cells_file``)."""
    nm = verilog_names(b)
    used_rails = sorted({n for c in b.cells for n in c.pins.values() if n in RAILS}
                        | {n for k in b.contacts for n in (k.com, k.no, k.nc) if n in RAILS}
                        | {n for n in b.coils.values() if n in RAILS}
                        | {n for _, _, _, n in nm.assigns if n in RAILS})
    power_up = [(nm.ref.get(g.q, g.q), g.init, g.template or g.kind) for g in b.storage_groups.values()
                if g.init in (0, 1)]
    wired = _driven_often(b)
    for p in nm.ports:
        if p.direction == "output" and any(n in wired for n in p.bits.values()):
            p.net_type = "wor "
    diodes = [(nm.ref[s.nets[1]], nm.ref[s.nets[0]], s.ref) for s in _steering(b)]
    return render("build.v.j2", b=b, verified=analysis.verified, nm=nm, diodes=diodes, version=__version__,
                  cells_file=cells_file,
                  rails=[(RAILS[r], r) for r in used_rails], power_up=power_up,
                  wires=[("wor" if w in wired else "wire", nm.ref[w]) for w in nm.wires], parts=_instances(b, nm),
                  renamed=sorted(nm.renamed.items()))


# -- cell models ------------------------------------------------------------------------------
def _rhs(expr: str) -> str:
    left, sep, right = expr.partition("=")
    if not sep:
        raise InternalError(f"cell function {expr!r} has no '='")
    return right.strip()


def _model(cd) -> dict:
    """Plain data for the behavioural model of one cell (see ``cells.v.j2``)."""
    name = cell_module(cd.name)
    ins = list(cd.inputs)
    outs = [cd.output] + list(cd.extra_outputs)
    m: dict = {"name": name, "description": cd.description or cd.name, "inputs": ins, "outputs": outs,
               "kind": "logic", "expr": cd.expr}
    coil = [p for p in ins if cd.roles.get(p) == "coil"]
    if cd.storage is None and coil:
        rhs = _rhs(cd.expr)
        for p in coil:
            rhs = re.sub(rf"(?<![A-Za-z0-9_$']){re.escape(p)}(?![A-Za-z0-9_$])", "armature", rhs)
        m.update(kind="relay", coil=coil[0], rhs=rhs)
        return m
    if cd.storage is None:
        m.update(rhs=_rhs(cd.expr))
        return m
    roles = cd.roles
    data = next((p for p in ins if roles.get(p) == "data"), ins[0])
    ctrl = next((p for p in ins if roles.get(p) in ("clock", "enable")), ins[1] if len(ins) > 1 else "")
    low = set(cd.active_low)

    def active(p):
        return f"!{p}" if p in low else p

    def edge(p):
        return f"negedge {p}" if p in low else f"posedge {p}"

    asyncs = []  # (condition, value), clear before preset
    for role, value in (("clear", "1'b0"), ("preset", "1'b1")):
        for p in ins:
            if roles.get(p) == role:
                asyncs.append((active(p), value, p))
    m.update(kind="storage", storage=cd.storage, data=data, control=ctrl, q=cd.output,
             inverted=list(cd.extra_outputs), asyncs=[(c, v) for c, v, _ in asyncs])
    if cd.storage in ("re", "fe"):
        clock_edge = ("posedge " if cd.storage == "re" else "negedge ") + ctrl
        m["sensitivity"] = " or ".join([clock_edge] + [edge(p) for _, _, p in asyncs])
    elif cd.storage in ("ah", "al"):
        m["enable"] = ctrl if cd.storage == "ah" else f"!{ctrl}"
    else:  # "as": follows its data
        m["enable"] = "1'b1"
    return m


def cells_text(cells, fed=()) -> str:
    """The models file: a behavioural module for each :class:`~mapper.catalog.CellDef` in ``cells``, and a
    ``<cell>_fed`` model (driven from the common terminal) for each relay cell named in ``fed``."""
    models = [_model(cd) for cd in cells]
    for cd in cells:
        if cd.name in fed:
            m = _model(cd)
            sides = [p for p in cd.inputs if cd.roles.get(p) != "coil"]
            m.update(kind="relay_fed", name=m["name"] + "_fed", source=cd.output, sides=sides,
                     inputs=[p for p in cd.inputs if p not in sides] + [cd.output], outputs=sides)
            models.append(m)
    return render("cells.v.j2", models=models, version=__version__)


def fed_cells(b: Build) -> set:
    """Relay cells of the poles fed at their common terminal."""
    out: set = set()
    for k in b.contacts:
        if k.com in RAILS:
            pd = b.part_def(k.part_ref)
            out.update(s.cell for s in pd.slots if s.index == k.pole)
    return out


def used_cells(b: Build) -> list:
    """The cell definitions a build instantiates (cells of used slots and of used poles), by name."""
    names = {c.cell for c in b.cells}
    for k in b.contacts:
        pd = b.part_def(k.part_ref)
        for s in pd.slots:
            if s.index == k.pole:
                names.add(s.cell)
    return [b.target.cells[n] for n in sorted(names)]


def write_cells(b: Build, path, protect=()) -> None:
    """Write the cell models of ``b`` (``<design>_models.v``) to ``path`` (atomically)."""
    atomic_write(path, cells_text(used_cells(b), fed_cells(b)), protect=protect)


def write_build(b: Build, analysis: Analysis, path, protect=(), **options) -> list:
    """Write ``b`` as structural Verilog to ``path`` and its cell models beside it
    (:func:`models_file`)."""
    path = Path(path)
    cells_path = models_file(path)
    if cells_path == path:
        raise InternalError("the build's Verilog cannot be written to its own models file")
    atomic_write(path, build_text(b, analysis, cells_path.name), protect=protect)
    write_cells(b, cells_path, protect=protect)
    return [path, cells_path]


# -- netlists ---------------------------------------------------------------------------------
def _sop(func, fanins: list) -> str:
    """A Verilog expression of ``func`` over the fan-in references (sum of products of its cover)."""
    const = func.constant_value()
    if const is not None:
        return f"1'b{const}"
    cubes, phase = func.cover()
    terms = []
    for cube in cubes:
        lits = [(f if ch == "1" else f"~{f}") for f, ch in zip(fanins, cube) if ch != "-"]
        terms.append(" & ".join(lits) if lits else "1'b1")
    if len(terms) == 1:
        body = terms[0]
    else:
        body = " | ".join(f"({t})" if " & " in t else t for t in terms)
    return body if phase else f"~({body})"


def netlist_text(netlist: Netlist) -> str:
    """``netlist`` as Verilog-2001 in the structural subset netfit reads (see "Netlists" above)."""
    if netlist.exdc is not None:
        log.warning("%s: the don't-care network (.exdc) has no Verilog form and is not written", netlist.name)
    # feedback loops read as storage (kind "as") are written closed again, as the gates they were
    folded = closed_logic(netlist)
    hidden = set(folded.values())
    all_nets = list(dict.fromkeys(list(netlist.inputs) + list(netlist.outputs) + [
        x for name, node in netlist.nodes.items() if name not in hidden for x in (name, *node.fanins)
        if x not in hidden]))
    nm = _Namer(netlist.inputs, netlist.outputs, all_nets, {}, rails=())
    ref = nm.ref
    port_nets = set(netlist.inputs) | set(netlist.outputs)
    regs, seq, comb, holders = [], [], [], {}
    for name, node in netlist.nodes.items():
        if not isinstance(node, Storage):
            continue
        if node.kind == "as":
            if node.init in (0, 1):
                log.warning("%s: the loop at %s is written as gates, which power up unknown (the design "
                            "declares %d)", netlist.name, name, node.init)
            continue
        if node.control is None:
            raise UsageError(f"storage element {name} has no clock or enable (kind {node.kind}): "
                             f"Verilog has no form for it")
        target = ref[name]
        if name in port_nets:
            holder = nm.fresh(f"{name}_q" if _ESCAPABLE.match(name) else "q")
            holders[name] = identifier(holder)
            target = identifier(holder)
        init = f" = 1'b{node.init}" if node.init in (0, 1) else ""
        regs.append(f"{target}{init}")
        d, c = ref[node.d], ref[node.control]
        if node.kind in ("re", "fe"):
            seq.append((f"{'posedge' if node.kind == 're' else 'negedge'} {c}", f"{target} <= {d};"))
        else:
            cond = c if node.kind == "ah" else f"!{c}"
            seq.append(("*", f"if ({cond}) {target} = {d};"))
    for name, node in netlist.nodes.items():
        if isinstance(node, Logic) and name not in hidden:
            comb.append((ref[name], _sop(node.func, [ref[f] for f in node.fanins])))
        elif isinstance(node, Storage) and node.kind == "as":
            exc = folded.get(name)
            if exc is not None:
                logic = netlist.nodes[exc]
                comb.append((ref[name], _sop(logic.func, [ref[f] for f in logic.fanins])))
            else:
                comb.append((ref[name], ref[node.d]))
    for name, holder in holders.items():
        comb.append((ref[name], holder))
    storage_nets = {n for n, x in netlist.nodes.items() if isinstance(x, Storage) and x.kind != "as"}
    wires = [ref[w] for w in nm.wires if w not in storage_nets]
    return render("netlist.v.j2", n=netlist, module=_module_name(netlist.name or "design"), ports=nm.ports,
                  wires=wires, regs=regs, seq=seq, comb=comb, assigns=nm.assigns,
                  renamed=sorted(nm.renamed.items()), version=__version__)


#: suffixes of the files this module writes
SUFFIXES = (".v",)


def write_netlist(netlist: Netlist, path, protect=()) -> None:
    """Write ``netlist`` as Verilog to ``path`` (atomically; never over a file in ``protect``)."""
    atomic_write(path, netlist_text(netlist), protect=protect)
