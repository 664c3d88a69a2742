"""Currents and voltages of a relay build as wired, in the settled states the switch-level check reached.

In each settled state (:mod:`mapper.analyze.switch`) every powered coil
draws its current at the supply voltage (the catalog's coil resistance) and
every powered pull-down resistor its own; each load's current flows from its
source -- the supply, or an input that is on -- along the path that powers
it (the first found from the source: the contact networks netfit builds are
trees, so there is one), through every contact and steering diode on the
way.  So, per state:

* the current through each input, each contact and the supply is the sum of
  the loads it feeds (counted over the contacts and inputs as wired, not per
  net: a coil fed from an input *through contacts* counts on that input);
* the voltage at each coil is the supply less the drop on each contact of its
  path (current times the catalog's ``contact-resistance-aged``, a worn
  contact with its joints; else ``contact-resistance``) and the forward
  voltage of each diode (rating ``forward-voltage``).

The worst of each over the states examined is compared with the contact's
current rating and the relay's ``must-operate-voltage``.  The figures are
only as good as the states examined: the report says how many.
"""
from __future__ import annotations

from dataclasses import dataclass, field

from ..build import SUPPLY_NETS, Build
from .switch import OPERATED, RELEASED, SwitchCircuit

__all__ = ["WiredFigures", "wired_figures"]


@dataclass
class WiredFigures:
    """Worst currents and coil voltages of a relay build over the settled states examined."""

    states: int = 0
    supply_a: float = 0.0
    inputs_a: dict = field(default_factory=dict)
    contacts: list = field(default_factory=list)    # worst first: part, pole, current_a, rating_a
    coils: list = field(default_factory=list)       # lowest first: part, coil, volts, must_operate_v, contacts
    over: list = field(default_factory=list)        # the limits passed, in words
    figures: dict = field(default_factory=dict)     # the catalog figures used, with their sources
    #: nets a repeater relay should drive afresh: the last net before each under-fed coil that still has
    #: its voltage to spare (see :func:`wired_figures`)
    redrive: list = field(default_factory=list)

    def as_dict(self) -> dict:
        return {"states": self.states, "supply_current_a": round(self.supply_a, 6),
                "input_current_a": {k: round(v, 6) for k, v in self.inputs_a.items()},
                "worst_contacts": self.contacts[:10], "lowest_coil_voltages": self.coils[:10],
                "over_limits": self.over, "figures": self.figures, "redrive": self.redrive}


def _part_figures(b: Build):
    """Per relay: (coil current at the supply, contact resistance, rating, must-operate); the diode drop."""
    volts = b.target.supply_voltage.value if b.target.supply_voltage is not None else None
    per = {}
    used: dict = {}
    for p in b.parts:
        pd = b.part_def(p.ref)
        r = pd.relay
        if r is None:
            continue
        v = volts if volts is not None else r.coil_voltage.value
        res_fig = pd.ratings.get("contact-resistance-aged") or pd.ratings.get("contact-resistance")
        must = pd.ratings.get("must-operate-voltage")
        per[p.ref] = (v / r.coil_resistance.value, res_fig.value if res_fig else 0.0,
                      r.contact_current.value if r.contact_current else None, must.value if must else None, v)
        if res_fig is not None:
            used[f"{pd.id} contact resistance"] = f"{res_fig.value:g} ohm ({res_fig.source}; {res_fig.conditions})"
        if must is not None:
            used[f"{pd.id} must-operate voltage"] = f"{must.value:g} V ({must.source})"
    drop = 0.0
    for s in b.support:
        if s.role == "steering":
            f = b.part_def(s.part_id).ratings.get("forward-voltage")
            if f is not None:
                drop = max(drop, f.value)
                used[f"{s.part_id} forward voltage"] = f"{f.value:g} V ({f.source}; {f.conditions})"
    pull = {}
    for s in b.support:
        if s.role == "pull-down":
            res = b.part_def(s.part_id).rating("resistance")
            if res:
                for n in s.nets:
                    if n not in SUPPLY_NETS:
                        pull[n] = res
    return per, drop, pull, used


def wired_figures(b: Build, settled: list) -> WiredFigures:
    """The figures of the module docstring over ``settled`` states (``(positions, inputs)`` of the check)."""
    c = SwitchCircuit.from_build(b)
    per, drop, pull, used = _part_figures(b)
    out = WiredFigures(figures=used)
    if not per:
        return out
    supply_v = next(iter(per.values()))[4]
    contacts, diodes_out = c.adjacency()
    ids = {name: i for i, name in enumerate(c.names)}
    pull_ids = {ids[n]: supply_v / r for n, r in pull.items() if n in ids}
    coil_of: dict = {}
    for r, net in enumerate(c.coil):
        if net >= 0:
            coil_of.setdefault(net, []).append(r)
    pole_of: dict = {}
    for r, ps in enumerate(c.poles):
        for k, (com, no, nc) in enumerate(ps):
            pole_of[(r, com, no)] = pole_of[(r, no, com)] = k + 1
            pole_of[(r, com, nc)] = pole_of[(r, nc, com)] = k + 1
    worst_contact: dict = {}
    worst_coil: dict = {}
    paths: dict = {}
    for pos, inputs in settled:
        out.states += 1
        _one_state(c, pos, inputs, contacts, diodes_out, per, drop, pull_ids, coil_of, pole_of, supply_v,
                   out, worst_contact, worst_coil, paths)
    refs = c.refs
    out.contacts = sorted(({"part": refs[r], "pole": k, "current_a": round(a, 6),
                            "rating_a": per[refs[r]][2]} for (r, k), a in worst_contact.items()),
                          key=lambda d: -d["current_a"])
    out.coils = sorted(({"part": refs[r], "coil": c.names[c.coil[r]], "volts": round(v, 3),
                         "must_operate_v": per[refs[r]][3], "contacts_in_series": n}
                        for r, (v, n) in worst_coil.items()), key=lambda d: d["volts"])
    for d in out.contacts:
        if d["rating_a"] is not None and d["current_a"] > d["rating_a"]:
            out.over.append(f"{d['part']} pole {d['pole']} carries up to {d['current_a'] * 1000:.0f} mA, over its "
                            f"{d['rating_a']:g} A rating")
    for r, (v, _) in worst_coil.items():
        must = per[refs[r]][3]
        if must is not None and v < must:
            net = _redrive_point(paths.get(r, []), must + REDRIVE_MARGIN_V)
            if net is not None and c.names[net] not in out.redrive:
                out.redrive.append(c.names[net])
    for d in out.coils:
        if d["must_operate_v"] is not None and d["volts"] < d["must_operate_v"]:
            out.over.append(f"the coil of {d['part']} (on {d['coil']}) gets as little as {d['volts']:.2f} V through "
                            f"{d['contacts_in_series']} contacts, under its {d['must_operate_v']:g} V must-operate "
                            "voltage")
    return out


#: a repeater's own coil must get at least this much above its must-operate voltage
REDRIVE_MARGIN_V = 0.25


def _redrive_point(path: list, enough: float):
    """The net nearest the coil on ``path`` (``(net, volts)`` from the source down) that still has ``enough``."""
    best = None
    for net, v, source in path:
        if v >= enough and not source:
            best = net
    return best


def _one_state(c, pos, inputs, contacts, diodes_out, per, drop, pull_ids, coil_of, pole_of, supply_v,
               out, worst_contact, worst_coil, paths) -> None:
    """Currents along the tree of first paths from the sources, then voltages down it."""
    parent: dict = {}
    order = []
    roots = [c.vcc] + [net for i, net in enumerate(c.inputs) if inputs >> i & 1]
    seen = set(roots)
    queue = list(roots)
    head = 0
    while head < len(queue):
        n = queue[head]
        head += 1
        order.append(n)
        for r, other, need in contacts[n]:
            if pos[r] == need and other not in seen:
                seen.add(other)
                parent[other] = (n, ("contact", r, pole_of.get((r, n, other), 0)))
                queue.append(other)
        for other in diodes_out[n]:
            if other not in seen:
                seen.add(other)
                parent[other] = (n, ("diode",))
                queue.append(other)
    current = dict.fromkeys(order, 0.0)
    for n in order:
        load = pull_ids.get(n, 0.0)
        for r in coil_of.get(n, ()):
            load += per[c.refs[r]][0]
        current[n] += load
    for n in reversed(order):
        if n in parent:
            current[parent[n][0]] += current[n]
    out.supply_a = max(out.supply_a, sum(current[r] for r in roots))
    for i, net in enumerate(c.inputs):
        if inputs >> i & 1:
            name = c.names[net]
            out.inputs_a[name] = max(out.inputs_a.get(name, 0.0), current[net])
    volts = {r: (supply_v, 0) for r in roots}
    for n in order:
        if n in volts:
            continue
        src, how = parent[n]
        v, k = volts[src]
        if how[0] == "contact":
            r, pole = how[1], how[2]
            key = (r, pole)
            worst_contact[key] = max(worst_contact.get(key, 0.0), current[n])
            volts[n] = (v - current[n] * per[c.refs[r]][1], k + 1)
        else:
            volts[n] = (v - drop, k)
    for r, net in enumerate(c.coil):
        if net in volts and pos[r] in (OPERATED, RELEASED):
            v, k = volts[net]
            if r not in worst_coil or v < worst_coil[r][0]:
                worst_coil[r] = (v, k)
                chain = []
                n = net
                while True:
                    chain.append((n, volts[n][0], n == c.vcc))
                    if n not in parent:
                        break
                    n = parent[n][0]
                paths[r] = list(reversed(chain))
