"""A loaded target as plain data, for ``netfit targets NAME`` (stable keys, SI units in key names)."""
from __future__ import annotations

from .model import Figure, PartDef, Target

__all__ = ["describe_target"]


def _fig(f: Figure | None):
    if f is None:
        return None
    return {"value": f.value, "source": f.source, "conditions": f.conditions}


def _part(p: PartDef) -> dict:
    return {
        "id": p.id, "description": p.description, "kind": p.kind, "family": p.family,
        "package": p.package, "pin_count": p.pin_count,
        # a chip's gate units are its sections, a relay's its poles
        ("poles" if p.kind == "relay" else "sections"): [{"index": s.index, "cell": s.cell, "pins": dict(s.pins)}
                                                         for s in p.slots],
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
        "role": " ".join(p.roles) or None,
    }


def describe_target(t: Target) -> dict:
    """Plain data describing a loaded target: cells, parts, defaults and the sources of its figures."""
    cells = []
    for c in t.cells.values():
        cells.append({"name": c.name, "inputs": list(c.inputs), "output": c.output,
                      "extra_outputs": list(c.extra_outputs), "function": c.expr, "storage": c.storage,
                      "roles": dict(c.roles), "description": c.description, "carriers": t.carriers[c.name]})
    return {
        "name": t.name, "description": t.description, "path": t.path, "kind": t.kind,
        "catalogs": list(t.catalogs), "cells": cells, "parts": [_part(p) for p in t.parts.values()],
        "other_parts": sorted(pid for pid in t.available if pid not in t.parts),
        "objective": list(t.objective),
        "support_rules": [{"part": r.part, "per": r.per, "count": r.count, "source": r.source}
                          for r in t.support_rules],
        "supply_voltage_v": _fig(t.supply_voltage),
        "sources": t.sources(),
    }
