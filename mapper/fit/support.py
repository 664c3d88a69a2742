"""Support parts a build needs, by the target's rules: decoupling, coil diodes, pull-downs.

Each ``<support part=... per=...>`` rule of the target places ``count``
copies of its part:

* ``per="chip"`` -- across the supply pins of every chip (a decoupling
  capacitor per chip: common practice);
* ``per="coil"`` -- across every relay coil, anode to ``GND`` (clamps the
  turn-off spike; common practice);
* ``per="relay-driven-net"`` -- from every relay-driven net that feeds a coil
  or an output to ``GND`` (its defined load while no contact feeds it).

References are numbered by the part's role (``C1``…, ``D1``…, ``R1``…).
"""
from __future__ import annotations

from collections import Counter

from ..build import Build, SupportInstance
from ..relay_logic import relay_driven_nets

__all__ = ["add_support", "loaded_nets"]


def loaded_nets(b: Build) -> list:
    """Relay-driven nets that feed a coil or an output: the ones that need a defined load."""
    feeds = set(b.coils.values()) | set(b.output_nets.values()) | set(b.outputs)
    return [n for n in relay_driven_nets(b) if n in feeds]


def _places(b: Build, per: str) -> list:
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
    raise ValueError(f"unknown support rule per {per!r}")


def add_support(b: Build) -> None:
    """Add the support parts of every rule of the build's target (see the module docstring)."""
    counters: Counter = Counter()
    for rule in b.target.support_rules:
        pd = b.target.parts[rule.part]
        prefix = pd.ref_prefix()
        for nets, purpose in _places(b, rule.per):
            for _ in range(rule.count):
                counters[prefix] += 1
                b.support.append(SupportInstance(f"{prefix}{counters[prefix]}", pd.id, nets, purpose, pd.role))
