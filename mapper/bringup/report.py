"""A bring-up plan as data (``--json``), as a text table, and as CSV.

The JSON keys are stable and only ever added to.  The text says, in order:
what an open input reads (from the catalog, with its source), the coverage,
the settings with the expected outputs and probe points, the diagnosis table
and the procedure.  A sequential plan shows, in place of the settings, how
the builder sets the start state and each sequence step by step ("set the
inputs, read the outputs, give one clock pulse"); its steps are numbered
through all sequences, and the diagnosis table and ``--failed`` use those
numbers.
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
    if plan.sequential:
        return _seq_procedure(plan)
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


#: how a sequence starts on a build whose storage is built of gates (nothing to set)
POWER_ON = ("switch the supply off and on before each sequence; the storage built of gates starts in any "
            "state, and the first steps bring it to a known one (an expected level '?' may read either)")


def _seq_procedure(plan: Plan) -> list:
    clocks = ", ".join(plan.clocks)
    return [
        "Check the supply first: with a meter, VCC and GND at the supply pins of every chip.",
        (f"Before each sequence: {POWER_ON}." if not plan.start else
         "Before each sequence, set the start state: every flip-flop by its preset or clear pin as listed "
         "under 'start' (the level a flip-flop takes at power-on is not relied on)."),
        f"Then do the steps of the sequence in order: set every input as listed, keeping {clocks} low; read "
        f"every output against the expected levels; then give {clocks} one pulse (low, high, low), except "
        "after the last step. Hold the inputs steady through the pulse.",
        "Write down each step (by its number) and output that reads the other level; a sequence may go on "
        "after a failure, but the steps after the first failure say less.",
        "If nothing reads wrong, the wiring has none of the faults detected here.",
        "If one step fails, look up its line in the diagnosis table: the suspects are the pins and nets to "
        "check first. If several fail, the places named on every failing line come first.",
        "A probe point that reads wrong narrows the suspects: follow its net back toward the inputs and the "
        "flip-flops.",
    ]


def coverage_line(plan: Plan) -> str:
    """The coverage in one line (always printed)."""
    pct = 100.0 * len(plan.detected) / plan.detectable if plan.detectable else 100.0
    if plan.sequential:
        every = 100.0 * len(plan.detected) / plan.classes if plan.classes else 100.0
        if not plan.bound:   # storage built of gates: random sequences only, no bound searched
            return (f"coverage: {len(plan.detected)} detected of {plan.classes} fault classes ({every:.1f}%) from "
                    f"{plan.total} faults; {len(plan.unresolved)} unresolved (neither detected nor shown "
                    "undetectable: not counted as covered)")
        return (f"coverage: {len(plan.detected)} detected of {plan.detectable} fault classes detectable within "
                f"{plan.bound} clock steps ({pct:.1f}%), of {plan.classes} classes in all ({every:.1f}%) from "
                f"{plan.total} faults; {len(plan.beyond)} not detected by any sequence of up to {plan.bound} "
                f"steps (not counted as covered), {len(plan.undetectable)} proved undetectable, "
                f"{len(plan.unresolved)} unresolved")
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
    und, unr, bey = set(plan.undetectable), set(plan.unresolved), set(plan.beyond)
    classes = []
    for k, members in enumerate(plan.faults.classes):
        fs = [plan.faults.faults[i] for i in members]
        classes.append({"class": k + 1, "faults": [f.key for f in fs], "labels": [f.label for f in fs],
                        "places": plan.places(k), "open_wire": any(f.open for f in fs),
                        "net_pins": {f.net: on_net.get(f.net, []) for f in fs if f.kind == "net"},
                        "status": "undetectable" if k in und else "unresolved" if k in unr else
                        "beyond_bound" if k in bey else "detected",
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
        if plan.sequential:
            seq, step = plan.steps[p]
            # the last step of a sequence is only read: a pulse after it shows nothing
            settings[-1].update(sequence=seq + 1, step=step + 1,
                                clock_pulse_after=step + 1 < len(plan.sequences[seq]))
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
        "sequential": plan.sequential,
    } | (_seq_json(plan) if plan.sequential else {})


def _seq_json(plan: Plan) -> dict:
    """The keys only a sequential plan has."""
    every = 100.0 * len(plan.detected) / plan.classes if plan.classes else 100.0
    return {
        "clock_inputs": plan.clocks,
        "start_from_power_on": not plan.start,
        "start": [{"level": lv, "how": how} for lv, how in plan.start],
        "sequences": [{"sequence": k + 1, "steps": [q + 1 for q, (p, _) in enumerate(plan.steps) if p == k]}
                      for k in range(len(plan.sequences))],
        "clock_steps": len(plan.steps),
        "bound_steps": plan.bound,
        "beyond_bound": len(plan.beyond),
        "coverage_of_all_percent": every,
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
    """``a=1 b=0``; a level not known yet (storage built of gates just after power-on) shows as ``?``."""
    return " ".join(f"{n}={'?' if v is None else v}" for n, v in zip(names, vals))


def plan_text(plan: Plan) -> str:
    """The plan as a text table (see the module docstring)."""
    d = plan_json(plan)
    w = io.StringIO()
    w.write(f"bring-up of {d['design']} on {d['target']} ({d['parts']} parts)\n\n")
    w.write("what an input with a missing wire reads (from the catalog):\n")
    for oi in d["open_inputs"]:
        w.write(f"  {oi['part']:<14}{oi['reads']:<8}{oi['conditions']}  [{oi['source']}]\n")
    if plan.sequential:
        w.write(f"\n{len(plan.sequences)} sequence(s), {len(plan.steps)} clock steps in all, for "
                f"{d['fault_classes']} fault classes\n")
    else:
        w.write(f"\n{len(plan.settings)} setting(s) for {d['fault_classes']} fault classes "
                f"({2 ** len(plan.inputs) if len(plan.inputs) <= 62 else 'more than 2^62'} input combinations)\n")
    for m in d["methods"]:
        w.write(f"  {m}\n")
    if plan.sequential:
        _seq_text(w, d)
    else:
        w.write("\nsettings (inputs -> expected outputs; probe points with their expected levels)\n")
    for s in d["settings"]:
        if plan.sequential and s["step"] == 1:
            w.write(f"  sequence {s['sequence']} (set the start state first)\n")
        levels = _levels(list(s["inputs"]), s["inputs"].values())
        if plan.sequential:
            levels = f"step {s['step']}: " + (f"set {levels}" if levels else "(no inputs to set)")
        w.write(f"  {s['setting']:>3}  {levels}\n")
        w.write(f"       expect  {_levels(list(s['outputs']), s['outputs'].values())}\n")
        for pr in s["probes"]:
            w.write(f"       probe   {pr['part']} pin {pr['pin']} (net {pr['net']}) = {pr['level']}"
                    f"   (wrong there: {pr['points_at']} suspect(s))\n")
        if plan.sequential and s["clock_pulse_after"]:
            w.write(f"       then    one pulse on {', '.join(plan.clocks)}\n")
    w.write("\ndiagnosis (setting, output reading the other level -> places to check)\n")
    for row in d["dictionary"]:
        sus = row["suspects"]
        more = f" ... {len(sus) - SUSPECTS_SHOWN} more" if len(sus) > SUSPECTS_SHOWN else ""
        w.write(f"  {row['setting']:>3}  {row['output']:<10} not {row['expected']}: "
                f"{', '.join(sus[:SUSPECTS_SHOWN])}{more}\n")
    if plan.undetectable:
        w.write("\nfaults no sequence can detect (proved: the build with one behaves as the good one from every "
                "state; the logic around them is redundant):\n" if plan.sequential else
                "\nfaults no setting can detect (the logic around them is redundant):\n")
        for k in plan.undetectable:
            w.write(f"  {'; '.join(d['classes'][k]['labels'])}\n")
    if plan.beyond:
        w.write(f"\nfaults no sequence of up to {plan.bound} clock steps detects (not covered; a longer sequence "
                "may detect them):\n")
        for k in plan.beyond:
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


def _seq_text(w, d: dict) -> None:
    if d["start_from_power_on"]:
        w.write(f"\nstart: {POWER_ON}\n")
    else:
        w.write("\nstart (before every sequence; the power-on state is not relied on):\n")
    for st in d["start"]:
        w.write(f"  {st['how']}\n")
    w.write(f"\nsequences (each step: set the inputs with {', '.join(d['clock_inputs'])} low, read the outputs, "
            "then give one clock pulse; probe points with their expected levels)\n")


def plan_csv(plan: Plan) -> str:
    """One row per setting: its number, every input, every expected output, then the probe points.

    A sequential plan's rows are its steps, with their sequence and step numbers after the setting
    number, and the clock inputs to pulse after the expected outputs."""
    w = io.StringIO()
    out = csv.writer(w, lineterminator="\n")
    seq = ["sequence", "step"] if plan.sequential else []
    out.writerow(["setting"] + seq + [f"in:{n}" for n in plan.inputs] + [f"out:{n}" for n in plan.outputs]
                 + (["then_pulse"] if plan.sequential else [])
                 + [f"probe{i + 1}" for i in range(max((len(x) for x in plan.probes), default=0))])
    for p, vec in enumerate(plan.settings):
        probes = [f"{ref} pin {pin} ({net})={lv}" for net, ref, pin, lv, _ in plan.probes[p]]
        where = [plan.steps[p][0] + 1, plan.steps[p][1] + 1] if plan.sequential else []
        last = plan.sequential and plan.steps[p][1] + 1 == len(plan.sequences[plan.steps[p][0]])
        pulse = ["" if last else "+".join(plan.clocks)] if plan.sequential else []
        expect = ["?" if v is None else v for v in plan.expected[p]]
        out.writerow([p + 1, *where, *vec, *expect, *pulse, *probes])
    return w.getvalue()
