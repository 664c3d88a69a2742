"""The objects a loaded catalog or target is made of (plain data, SI units).

Everything downstream reads these: the mapper (cells, carriers), the
packer (slots and pins), the analyses (delays, currents, relay figures) and
the writers (pinouts, prices).  Loading and checking them is
:mod:`mapper.catalog.catalogs` and :mod:`mapper.catalog.targets`.
"""
from __future__ import annotations

from collections import Counter
from dataclasses import dataclass, field

from ..logic.function import Function

__all__ = ["Figure", "CellDef", "SlotDef", "RelayData", "PartDef", "SupportRule", "Target",
           "SUPPORT_ROLES", "ROLE_FOR_PER", "DEFAULT_OBJECTIVE"]

#: what a support part does in a build -> the letter its references start with
SUPPORT_ROLES = {
    "decoupling": "C",    # a capacitor across a chip's supply pins
    "coil-diode": "D",    # a diode across a relay coil (clamps the turn-off spike)
    "steering": "D",      # a diode that lets two feeds join one coil without feeding each other
    "pull-down": "R",     # a resistor from a relay-driven net to GND (its defined load)
}
#: a target's ``<support per=...>`` -> the role its part must have
ROLE_FOR_PER = {"chip": "decoupling", "coil": "coil-diode", "relay-driven-net": "pull-down",
                "steering": "steering"}

DEFAULT_OBJECTIVE = ("parts", "delay", "wires")


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

    @property
    def outputs(self) -> tuple:
        """The output and the extra outputs."""
        return (self.output,) + tuple(self.extra_outputs)

    def logic_function(self) -> Function:
        """The function of a logic cell (``ValueError`` for a storage cell, which has none)."""
        if self.function is None:
            raise ValueError(f"cell {self.name} is a storage cell: it has no logic function")
        return self.function


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
    """One orderable part.

    ``kind`` is ``chip``, ``relay`` or ``support``; a support part lists the
    ``roles`` it can play (keys of :data:`SUPPORT_ROLES`; a small diode is
    both a coil diode and a steering diode).  ``ratings`` holds further
    sourced figures by name (``resistance``, ``setup-time``, ...).
    """

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
    roles: tuple = ()

    @property
    def role(self) -> str:
        """The first role of a support part (``""`` for other parts)."""
        return self.roles[0] if self.roles else ""

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

    def units(self) -> int:
        """Sections a build can use: poles of a relay, slots of a chip."""
        return self.relay.poles if self.relay is not None else len(self.slots)

    def rating(self, name: str) -> float | None:
        """The value of rating ``name``, or ``None`` when the catalog gives none."""
        f = self.ratings.get(name)
        return f.value if f is not None else None

    def ref_prefix(self) -> str:
        """The letter this part's references start with (``U`` chips, ``K`` relays, by role otherwise)."""
        if self.kind == "relay":
            return "K"
        if self.kind == "chip":
            return "U"
        return SUPPORT_ROLES.get(self.role, "X")

    def pin_names(self) -> dict:
        """Package pin number -> printable name.

        Supply and shared pins keep their names (``VCC``, ``COIL+``).  A chip's
        section pins are named as generic datasheets name them, the section number
        before the pin (``1A``, ``3Y``; a chip of one section: the pin alone); a
        relay's contact terminals carry the pole number after (``NO1``, ``COM2``), so
        a wiring list can say ``K2-NO1``.
        """
        names: dict = {}
        for n, num in self.supply_pins.items():
            names[num] = n
        for n, num in self.shared_pins.items():
            names[num] = n
        for s in self.slots:
            for pin, num in s.pins.items():
                if self.kind == "relay":
                    names.setdefault(num, f"{pin}{s.index}")
                else:
                    names.setdefault(num, f"{s.index}{pin}" if len(self.slots) > 1 else pin)
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
        for label, fig in (("quiescent current", self.current_quiescent),
                           ("current per unit", self.current_per_unit),
                           ("input load", self.input_load), ("output drive", self.output_drive),
                           ("price", self.price)):
            if fig is not None:
                out.append((label, fig))
        for n, f in self.ratings.items():
            out.append((n, f))
        r = self.relay
        if r is not None:
            for label, rf in (("coil voltage", r.coil_voltage), ("coil resistance", r.coil_resistance),
                              ("coil current", r.coil_current), ("operate time", r.operate_time),
                              ("release time", r.release_time), ("bounce time", r.bounce_time),
                              ("contact current", r.contact_current), ("contact voltage", r.contact_voltage)):
                if rf is not None:
                    out.append((label, rf))
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
    """A technology to build in: the cells a build may use, the parts that carry them, and its rules.

    ``kind`` is ``gates`` or ``relay``.  ``carriers`` maps each cell to the
    part ids that may carry it, first choice first.  ``available`` holds
    every part of the named catalogs and ``catalog_cells`` every cell of them
    (a slot of a used part may perform a cell the target does not use).
    """

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
    available: dict = field(default_factory=dict)
    catalog_cells: dict = field(default_factory=dict)

    @property
    def is_relay(self) -> bool:
        """Whether builds on this target are relay contact networks."""
        return self.kind == "relay"

    def cell_of_slot(self, part_id: str, slot: int) -> CellDef:
        """The cell slot ``slot`` of part ``part_id`` performs (used by the target or not)."""
        pd = self.parts[part_id]
        for s in pd.slots:
            if s.index == slot:
                cd = self.cells.get(s.cell) or self.catalog_cells.get(s.cell)
                if cd is None:
                    raise KeyError(f"{part_id} slot {slot}: cell {s.cell} is in no catalog of target {self.name}")
                return cd
        raise KeyError(f"{part_id} has no slot {slot}")

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
