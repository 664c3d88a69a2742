"""A bring-up plan as data (``--json``), as a text table, and as CSV.

The JSON keys are stable and only ever added to.  The text says, in order:
what an open input reads (from the catalog, with its source), the coverage,
the settings with the expected outputs and probe points, the diagnosis table
and the procedure.
"""
from __future__ import annotations

import csv
import io

from .plan import Plan

__all__ = ["plan_json", "plan_text", "plan_csv", "coverage_line", "diagnosis_text", "SUSPECTS_SHOWN"]

#: suspects printed per line of the text table (the JSON has them all)
SUSPECTS_SHOWN = 8


def _open_inputs(plan: Plan) -> list:
    b = plan.build
    out = []
    for pid in sorted({p.part_id for p in b.parts}):
        oi = b.target.parts[pid].open_input
        out.append({"part": pid, "reads": oi.reads if oi else "unknown",
                    "conditions": oi.conditions if oi else "", "source": oi.source if oi else ""})
    return out


def _procedure(plan: Plan) -> list:
    n = len(plan.settings)
    first = ("Check the supply first: with a meter, the supply at every contact that should carry it, and GND at "
             "every coil's return." if plan.build.is_relay else
             "Check the supply first: with a meter, VCC and GND at the supply pins of every chip.")
    return [
        first,
        f"Apply settings 1 to {n} in turn: set every input as listed, then read every output (and the probe "
        "points, if you like) against the expected levels.",
        "Write down each setting and output that reads the other level.",
        "If nothing reads wrong, the wiring has none of the faults listed here.",
        "If one setting fails, look up its line in the diagnosis table: the suspects are the pins and nets to "
        "check first. If several fail, the places named on every failing line come first.",
        "A probe point that reads wrong narrows the suspects: follow its net back toward the inputs.",
    ]


def coverage_line(plan: Plan) -> str:
    """The coverage in one line (always printed)."""
    pct = 100.0 * len(plan.detected) / plan.detectable if plan.detectable else 100.0
    return (f"coverage: {len(plan.detected)} detected of {plan.detectable} detectable fault classes ({pct:.1f}%); "
            f"{plan.classes} classes from {plan.total} faults; {len(plan.undetectable)} undetectable, "
            f"{len(plan.unresolved)} unresolved")


def _net_pins(plan: Plan) -> dict:
    """net -> the part pins on it, as ``U3-5`` (what a person checks for a net's fault: each wire of it)."""
    return {net: [f"{ref}-{pin}" for ref, pin in pins] for net, pins in plan.build.nets().items()}


def plan_json(plan: Plan) -> dict:
    """The plan as plain data (stable, append-only keys)."""
    b = plan.build
    on_net = _net_pins(plan)
    detected_by: dict = {}
    for k, sig in enumerate(plan.signature):
        detected_by[k] = sorted({p + 1 for p, _ in sig})
    und, unr = set(plan.undetectable), set(plan.unresolved)
    classes = []
    for k, members in enumerate(plan.faults.classes):
        fs = [plan.faults.faults[i] for i in members]
        classes.append({"class": k + 1, "faults": [f.key for f in fs], "labels": [f.label for f in fs],
                        "places": plan.places(k), "open_wire": any(f.open for f in fs),
                        "net_pins": {f.net: on_net.get(f.net, []) for f in fs if f.kind == "net"},
                        "status": "undetectable" if k in und else "unresolved" if k in unr else "detected",
                        "detected_by": detected_by[k]})
    settings = []
    for p, vec in enumerate(plan.settings):
        settings.append({
            "setting": p + 1,
            "inputs": dict(zip(plan.inputs, vec)),
            "outputs": dict(zip(plan.outputs, plan.expected[p])),
            "probes": [{"net": net, "part": ref, "pin": pin, "level": lv, "points_at": n}
                       for net, ref, pin, lv, n in plan.probes[p]],
        })
    dictionary = []
    for p in range(len(plan.settings)):
        for o, name in enumerate(plan.outputs):
            ks = plan.suspects(p, o)
            if ks:
                dictionary.append({"setting": p + 1, "output": name, "expected": plan.expected[p][o],
                                   "suspects": list(dict.fromkeys(x for k in ks for x in plan.places(k))),
                                   "classes": [k + 1 for k in ks]})
    pct = 100.0 * len(plan.detected) / plan.detectable if plan.detectable else 100.0
    return {
        "design": b.design, "target": b.target.name, "parts": len(b.parts),
        "inputs": plan.inputs, "outputs": plan.outputs,
        "faults_total": plan.total, "fault_classes": plan.classes,
        "detected": len(plan.detected), "detectable": plan.detectable,
        "undetectable": len(plan.undetectable), "unresolved": len(plan.unresolved),
        "coverage_percent": pct,
        "input_combinations": 2 ** len(plan.inputs),
        "open_inputs": _open_inputs(plan),
        "left_out": plan.faults.left_out,
        "methods": plan.methods,
        "settings": settings,
        "dictionary": dictionary,
        "classes": classes,
        "procedure": _procedure(plan),
    }


def diagnosis_text(plan: Plan, failed: set) -> str:
    """The places to check for the failures ``failed`` (``(setting, output)``, 0-based), best first."""
    from .plan import diagnose
    on_net = _net_pins(plan)
    places = diagnose(plan, failed)
    w = io.StringIO()
    shown = ", ".join(f"setting {p + 1} {plan.outputs[o]}" for p, o in sorted(failed))
    if not places:
        w.write(f"no single fault of the model explains {shown}: check the supply and the inputs' switches\n")
        return w.getvalue()
    w.write(f"places to check for {shown}, most likely first:\n")
    for place in places[:3 * SUSPECTS_SHOWN]:
        pins = on_net.get(place[4:], []) if place.startswith("net ") else []
        w.write(f"  {place}" + (f"  (its wires: {', '.join(pins)})" if pins else "") + "\n")
    return w.getvalue()


def _levels(names: list, vals) -> str:
    return " ".join(f"{n}={v}" for n, v in zip(names, vals))


def plan_text(plan: Plan) -> str:
    """The plan as a text table (see the module docstring)."""
    d = plan_json(plan)
    w = io.StringIO()
    w.write(f"bring-up of {d['design']} on {d['target']} ({d['parts']} parts)\n\n")
    w.write("what an input with a missing wire reads (from the catalog):\n")
    for oi in d["open_inputs"]:
        w.write(f"  {oi['part']:<14}{oi['reads']:<8}{oi['conditions']}  [{oi['source']}]\n")
    w.write(f"\n{len(plan.settings)} setting(s) for {d['fault_classes']} fault classes "
            f"({2 ** len(plan.inputs) if len(plan.inputs) <= 62 else 'more than 2^62'} input combinations)\n")
    for m in d["methods"]:
        w.write(f"  {m}\n")
    w.write("\nsettings (inputs -> expected outputs; probe points with their expected levels)\n")
    for s in d["settings"]:
        w.write(f"  {s['setting']:>3}  {_levels(list(s['inputs']), s['inputs'].values())}\n")
        w.write(f"       expect  {_levels(list(s['outputs']), s['outputs'].values())}\n")
        for pr in s["probes"]:
            w.write(f"       probe   {pr['part']} pin {pr['pin']} (net {pr['net']}) = {pr['level']}"
                    f"   (wrong there: {pr['points_at']} suspect(s))\n")
    w.write("\ndiagnosis (setting, output reading the other level -> places to check)\n")
    for row in d["dictionary"]:
        sus = row["suspects"]
        more = f" ... {len(sus) - SUSPECTS_SHOWN} more" if len(sus) > SUSPECTS_SHOWN else ""
        w.write(f"  {row['setting']:>3}  {row['output']:<10} not {row['expected']}: "
                f"{', '.join(sus[:SUSPECTS_SHOWN])}{more}\n")
    if plan.undetectable:
        w.write("\nfaults no setting can detect (the logic around them is redundant):\n")
        for k in plan.undetectable:
            w.write(f"  {'; '.join(d['classes'][k]['labels'])}\n")
    if plan.unresolved:
        w.write("\nfaults neither detected nor shown undetectable within the solver's budget:\n")
        for k in plan.unresolved:
            w.write(f"  {'; '.join(d['classes'][k]['labels'])}\n")
    left = ", ".join(f"{v} {k}" for k, v in d["left_out"].items() if v)
    if left:
        w.write(f"\nnot modelled: {left} (check supply pins with a meter first)\n")
    w.write("\nprocedure\n")
    for i, step in enumerate(d["procedure"], 1):
        w.write(f"  {i}. {step}\n")
    w.write(f"\n{coverage_line(plan)}\n")
    return w.getvalue()


def plan_csv(plan: Plan) -> str:
    """One row per setting: its number, every input, every expected output, then the probe points."""
    w = io.StringIO()
    out = csv.writer(w, lineterminator="\n")
    out.writerow(["setting"] + [f"in:{n}" for n in plan.inputs] + [f"out:{n}" for n in plan.outputs]
                 + [f"probe{i + 1}" for i in range(max((len(x) for x in plan.probes), default=0))])
    for p, vec in enumerate(plan.settings):
        probes = [f"{ref} pin {pin} ({net})={lv}" for net, ref, pin, lv, _ in plan.probes[p]]
        out.writerow([p + 1, *vec, *plan.expected[p], *probes])
    return w.getvalue()
