"""Support parts a build needs, by the target's rules: decoupling, coil diodes, pull-downs.

Each ``<support part=... per=...>`` rule of the target places ``count``
copies of its part:

* ``per="chip"`` -- across the supply pins of every chip (a decoupling
  capacitor per chip: common practice);
* ``per="coil"`` -- across every relay coil, anode to ``GND`` (clamps the
  turn-off spike; common practice);
* ``per="relay-driven-net"`` -- from every relay-driven output net that
  carries no coil to ``GND`` (its defined load while no contact feeds it; a
  coil is a load already);
* ``per="steering"`` -- one diode at every place relay storage joins two
  feeds into one coil (:mod:`mapper.relay_logic`).

References are numbered by the part's role (``C1``…, ``D1``…, ``R1``…).
"""
from __future__ import annotations

from collections import Counter

from ..build import Build, SupportInstance
from ..catalog.model import ROLE_FOR_PER, SUPPORT_ROLES
from ..errors import UsageError
from ..relay_logic import relay_driven_nets

__all__ = ["add_support", "loaded_nets"]


def loaded_nets(b: Build) -> list:
    """Relay-driven nets that are outputs and carry no coil: the ones that need a defined load.

    A coil is a load already (from its net to ``GND``); a net that only feeds
    further contacts has no reader of its own.
    """
    outs = set(b.output_nets.values()) | set(b.outputs)
    coils = set(b.coils.values())
    return [n for n in relay_driven_nets(b) if n in outs and n not in coils]


def _places(b: Build, per: str, steering: list) -> list:
    """``(nets, purpose)`` for each place a part of a rule ``per`` goes."""
    if per == "chip":
        return [(("VCC", "GND"), f"decoupling for {p.ref}, close to its supply pins")
                for p in b.parts if b.part_def(p.ref).kind == "chip"]
    if per == "coil":
        return [(("GND", b.coils[p.ref]), f"across the coil of {p.ref} (anode to GND, cathode to "
                 f"{b.coils[p.ref]}): clamps the turn-off spike; lengthens the release time")
                for p in b.parts if p.ref in b.coils]
    if per == "relay-driven-net":
        return [((net, "GND"), f"defined load on {net}: holds it at 0 while no contact feeds it")
                for net in loaded_nets(b)]
    if per == "steering":
        return list(steering)
    raise ValueError(f"unknown support rule per {per!r}")


def add_support(b: Build, steering: list | None = None) -> None:
    """Add the support parts of every rule of the build's target (see the module docstring).

    ``steering`` lists ``((anode, cathode), purpose)`` for the steering
    diodes the build's storage needs; a build that needs them on a target
    without a ``per="steering"`` rule is refused.
    """
    counters: Counter = Counter()
    pers = {rule.per for rule in b.target.support_rules}
    if steering and "steering" not in pers:
        raise UsageError(f"target {b.target.name} names no steering diode (<support part=... per=\"steering\"/>), "
                         "which relay storage needs")
    for rule in b.target.support_rules:
        pd = b.target.parts[rule.part]
        role = ROLE_FOR_PER[rule.per]
        prefix = SUPPORT_ROLES[role]
        count = 1 if rule.per == "steering" else rule.count  # one diode is one steering place
        for nets, purpose in _places(b, rule.per, steering or []):
            for _ in range(count):
                counters[prefix] += 1
                b.support.append(SupportInstance(f"{prefix}{counters[prefix]}", pd.id, nets, purpose, role))
