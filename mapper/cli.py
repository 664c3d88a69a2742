"""The ``netfit`` command: parses arguments, calls :mod:`mapper.flow`, prints.

Data goes to stdout, logs and progress to stderr.  Exit codes: 0 success,
1 the answer is "no", 2 bad input or usage, 3 internal error.
"""
from __future__ import annotations

import argparse
import json
import logging
import os
import sys
import traceback

from . import __version__
from .errors import InputError, NetfitError
from .units import si

__all__ = ["main", "COMMANDS"]

log = logging.getLogger("mapper")

#: command name -> (help, function that adds its arguments, function that runs it)
COMMANDS: dict = {}


def command(name, help, add_args):
    """Register a command: ``add_args(subparser)`` declares its options."""
    def deco(fn):
        COMMANDS[name] = (help, add_args, fn)
        return fn
    return deco


def _read_options(args) -> dict:
    opts = {}
    if getattr(args, "top", None):
        opts["top"] = args.top
    if getattr(args, "allow_outside", False):
        opts["allow_outside"] = True
    return opts


def _add_read_args(p):
    p.add_argument("--top", metavar="NAME", help="top module/model (default: the one nothing else instantiates)")
    p.add_argument("--allow-outside", action="store_true",
                   help="let .search and includes read files outside the design's folder")


def _print_json(obj) -> None:
    from .write.json import finite  # standard JSON only: never Infinity or NaN
    json.dump(finite(obj), sys.stdout, indent=2, sort_keys=False, allow_nan=False)
    sys.stdout.write("\n")


# -- inspect --------------------------------------------------------------
def _inspect_args(p):
    p.add_argument("design")
    _add_read_args(p)
    p.add_argument("--json", action="store_true", help="print JSON")


@command("inspect", "show ports, storage, node counts, depth and warnings of a design", _inspect_args)
def cmd_inspect(args):
    from . import flow
    info = flow.inspect(args.design, **_read_options(args))
    if args.json:
        _print_json(info)
        return 0
    print(inspect_text(info), end="")
    _print_feedback(info.get("feedback") or [])
    return 0


def inspect_text(info: dict) -> str:
    """The ``netfit inspect`` table: what the design holds, in plain words."""
    from .netlist import kind_in_words
    from .write.layout import render
    rows = [("inputs", len(info["inputs"]), _short(info["inputs"])),
            ("outputs", len(info["outputs"]), _short(info["outputs"]))]
    storage = {k: v for k, v in info["kinds"].items() if k.startswith("storage-")}
    logic = {k: v for k, v in info["kinds"].items() if not k.startswith("storage-")}
    rows += [(kind_in_words(k, v), v, "") for k, v in storage.items()]
    rows.append(("logic functions", sum(logic.values()), ""))
    rows += [("  " + kind_in_words(k, v), v, "") for k, v in logic.items()]
    rows.append(("logic levels on the longest path", info["depth"], ""))
    if info["max_fanout_net"] is not None:
        rows.append(("most loads on one net", info["max_fanout"], f"net {info['max_fanout_net']}"))
    rows.append(("warnings", len(info["warnings"]), ""))
    return render("inspect.txt.j2", design=info["design"], file=info["file"], rows=rows,
                  notes=info.get("notes") or [], warnings=info["warnings"])


def _print_feedback(loops: list) -> None:
    """Each feedback loop read as storage: its cut, what it is, and its flow table (stable states in ())."""
    from .logic.flowtable import flow_table_lines
    if loops:
        print(f"\nfeedback loops read as storage: {len(loops)}")
    for r in loops:
        print(f"  cut at {', '.join(r['cut'])} ({r['kind']}): {r['form']}")
        if r["flow_table"] is not None:
            for line in flow_table_lines(r["flow_table"]):
                print(f"    {line}")


def _short(names, limit=10):
    s = " ".join(names[:limit])
    return s + (f" … (+{len(names) - limit})" if len(names) > limit else "")


# -- verify ---------------------------------------------------------------
#: how a proof went, in plain words (the JSON keeps the method's short name)
_HOW_PROVED = {
    "structural": "proved: both reduce to the same gates",
    "simulation": "proved: every input combination tried",
    "sat": "proved: a search for an input that tells them apart found none",
    "sat-sweeping": "proved: a search for an input that tells them apart found none, "
                    "after shared points were proved equal and merged",
}


def _verify_args(p):
    p.add_argument("a")
    p.add_argument("b")
    _add_read_args(p)
    p.add_argument("--json", action="store_true", help="print JSON")


@command("verify", "prove two designs do the same logic, or show an input that tells them apart",
         _verify_args)
def cmd_verify(args):
    from . import flow
    res = flow.verify(args.a, args.b, **_read_options(args))
    if args.json:
        _print_json(res)
    else:
        if res["equivalent"]:
            print(f"equal: {args.a} and {args.b} do the same logic ({_HOW_PROVED.get(res['method'], res['method'])})")
        elif not res.get("decided", True):
            print(f"not proved: {args.a} and {args.b} ({res['method']})")
            for note in res.get("notes", []):
                print(f"  {note}")
        else:
            print(f"different: {args.a} and {args.b} ({res['method']})")
            cex = res.get("counterexample") or {}
            if not cex:  # ports, storage kinds or starting values: the notes are the reason
                for note in res.get("notes", []):
                    print(f"  {note}")
            for k, v in (cex.get("inputs") or {}).items():
                print(f"  input  {k} = {v}")
            for k, v in (cex.get("state") or {}).items():
                print(f"  state  {k} = {v}")
            for d in cex.get("differs", []):
                what = {"next-state": "next state of", "control": "control of"}.get(d.get("kind"), "output")
                print(f"  {what} {d['output']}: {d['a']} in A, {d['b']} in B")
        if not args.quiet and (res["equivalent"] or res.get("counterexample")):
            for note in res.get("notes", []):
                print(f"note: {note}", file=sys.stderr)
    return 0 if res["equivalent"] else 1


# -- convert --------------------------------------------------------------
def _convert_args(p):
    p.add_argument("source")
    p.add_argument("dest")
    _add_read_args(p)
    p.add_argument("--json", action="store_true", help="print JSON")


@command("convert", "read a design and write it in another format (chosen by suffix)", _convert_args)
def cmd_convert(args):
    from . import flow
    res = flow.convert(args.source, args.dest, **_read_options(args))
    if args.json:
        _print_json(res)
    else:
        print(f"wrote {res['to']}: {res['inputs']} inputs, {res['outputs']} outputs, "
              f"{res['storage']} storage, {res['nodes']} nodes")
    return 0


# -- build ----------------------------------------------------------------
def _build_args(p):
    p.add_argument("design")
    p.add_argument("--target", "-t", required=True, metavar="T",
                   help="target name (see `netfit targets`) or a target .xml file")
    p.add_argument("-o", "--out", metavar="DIR", help=(
        "write the build's files into DIR: DESIGN.v and DESIGN_models.v, DESIGN.blif, DESIGN.json, parts.csv, "
        "wiring.txt, schematic.svg, board.svg, report.html"))
    p.add_argument("--qty", type=_positive, default=1, metavar="N",
                   help="parts.csv for N copies of the build (default 1)")
    p.add_argument("--effort", type=int, default=1, choices=(0, 1),
                   help="0: one mapping pass; 1 (default): also search for fewer parts")
    p.add_argument("--hazard-free", action="store_true",
                   help="add consensus terms so two-level covers cannot glitch, and report the parts they cost")
    p.add_argument("--board", metavar="B", help=(
        "the board the wiring list places the parts on: breadboard-830 (default), breadboard-400, "
        "perf:WxH or wrap:WxH (a perforated or wire-wrap board of W x H holes at 0.1 inch)"))
    p.add_argument("--symbols", choices=("distinctive", "rectangular"), default="distinctive",
                   help="gate symbols of the schematic: IEEE 91 distinctive shapes (default) or IEC rectangles")
    p.add_argument("--bringup", action="store_true",
                   help="put the bring-up list (see `netfit bringup`) into report.html")
    _add_clock_args(p)
    _add_order_args(p)
    _add_read_args(p)
    p.add_argument("--json", action="store_true", help="print the build summary as JSON")


def _add_clock_args(p):
    p.add_argument("--clock", type=_clock, metavar="RATE", help=(
        "the clock you will run, as a rate (10MHz, 5Hz) or a period (100ns, 200ms): hold margins, pulse "
        "widths and the switching supply current are figured at it"))
    p.add_argument("--together", action="append", type=_names, default=[], metavar="A,B,...", help=(
        "inputs that change at once (bits of one bus, outputs of one counter): the glitch search changes "
        "them together; give it once per group"))


def _clock(text):
    from .units import parse_quantity
    try:
        value, unit = parse_quantity(text.strip())
    except ValueError:
        raise argparse.ArgumentTypeError(f"{text!r} is not a rate (10MHz, 5Hz) or a period (100ns)") from None
    if value <= 0 or unit not in ("Hz", "s"):
        raise argparse.ArgumentTypeError(f"{text!r} is not a rate (10MHz, 5Hz) or a period (100ns)")
    return value if unit == "Hz" else 1.0 / value


def _names(text):
    names = [n.strip() for n in text.split(",") if n.strip()]
    if len(names) < 2:
        raise argparse.ArgumentTypeError(f"{text!r}: name two or more inputs, separated by commas")
    return names


def _add_order_args(p):
    p.add_argument("--sockets", action="store_true", help="order a socket for every chip")
    p.add_argument("--spares", type=_spares, metavar="N|P%",
                   help="order spares: N more of each part, or P percent more (rounded up)")


def _spares(text):
    from . import flow
    try:
        return flow.spares_from_text(text)
    except NetfitError as exc:
        raise argparse.ArgumentTypeError(str(exc)) from None


def _positive(text):
    try:
        n = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"{text!r} is not a whole number") from None
    if n < 1:
        raise argparse.ArgumentTypeError(f"must be 1 or more, not {n}")
    return n


def _progress(args) -> None:
    """Progress on stderr unless --quiet or --json (and only on a terminal; see mapper.progress)."""
    from . import progress
    progress.configure(not getattr(args, "quiet", False) and not getattr(args, "json", False))


@command("build", "fit a design onto a target with the fewest whole parts, proven equal to the design",
         _build_args)
def cmd_build(args):
    from . import flow
    _progress(args)
    docs = {"board": args.board, "sockets": args.sockets, "spares": args.spares, "shapes": args.symbols,
            "bringup": args.bringup}
    r = flow.build(args.design, args.target, out_dir=args.out, effort=args.effort, copies=args.qty,
                   hazard_free=args.hazard_free, documents=docs, clock_hz=args.clock, together=args.together,
                   **_read_options(args))
    s = r.analysis.summary(r.build)
    if args.json:
        _print_json(s)
        return 0
    if "hazard_free" in s:
        h = s["hazard_free"]
        print(f"hazard-free: {h['terms_added']} consensus term(s) added; {h['parts']} parts against "
              f"{h['parts_plain']} for the plain build ({h['extra_parts']:+d}); glitches found "
              f"{h['hazards']} against {h['hazards_plain']}")
    print(f"design  {s['design']}  on target {s['target']}   proof: {s['verified']}")
    print(f"parts   {s['parts_total']}  (" + ", ".join(f"{k} ×{v}" for k, v in s["parts"].items()) + ")")
    if s["cells"]:
        print("cells   " + ", ".join(f"{k} ×{v}" for k, v in s["cells"].items()))
    from .analyze.results import units_of
    word, used, available, spare = units_of(s)
    print(f"{word:<7} {used} used of {available}  ({spare} spare)")
    if s["support_parts"]:
        print("support " + ", ".join(f"{k} ×{v}" for k, v in s["support_parts"].items()))
    print(f"delay   {si(s['delay_s'], 's')} slowest path (maximum figures)")
    ck = r.analysis.timing.clock
    if ck is not None:
        print("clock   " + _clock_line(ck.as_dict()))
    if "supply_current_a" in s:
        static = s.get("supply_current_static_a")
        extra = (f"; {si(static, 'A')} with nothing switching" if static is not None and not r.build.is_relay
                 else "")
        print(f"supply  {si(s['supply_current_a'], 'A')} worst case ({s.get('supply_basis', '')}){extra}")
    print(f"glitches {s['hazards_total']} found" + (f", {s['glitch_errors']} reaching storage"
                                                   if s["glitch_errors"] else ""))
    print(f"cost    {s['cost']:.2f} {s['currency']}")
    for c in s["cautions"]:
        print(f"caution: {c}")
    if args.out:
        print(f"wrote   {args.out}")
    return 0


# -- timing ---------------------------------------------------------------
def _timing_args(p):
    p.add_argument("design")
    p.add_argument("--target", "-t", required=True, metavar="T",
                   help="target name (see `netfit targets`) or a target .xml file")
    p.add_argument("--hazard-free", action="store_true",
                   help="build with consensus terms added to the two-level covers, and show what they cost")
    p.add_argument("--multi", action="store_true",
                   help="also try every two inputs changing at once (gate targets)")
    p.add_argument("--changes", type=_positive, metavar="N",
                   help="examine at most N input changes, drawn at random beyond that (default 20000)")
    p.add_argument("--detail", action="store_true",
                   help="list every glitch with its racing paths, and when relay contacts float")
    p.add_argument("--effort", type=int, default=1, choices=(0, 1),
                   help="0: one mapping pass; 1 (default): also search for fewer parts")
    _add_clock_args(p)
    _add_read_args(p)
    p.add_argument("--json", action="store_true", help="print JSON")


def _hop_text(h) -> str:
    if "part" not in h:
        return f"{h['net']}"
    pins = ""
    if "from_pin_number" in h:
        pins = f" pin {h['from_pin_number']}→{h.get('to_pin_number')}"
    return f"{h['part']}{pins} ({h['cell']}) {h['net']}"


def _cube_text(d) -> str:
    return " ".join(f"{k}={v}" for k, v in d.items()) or "in any state"


def _pulse_text(w) -> str:
    lo, hi = w
    return f"up to {si(hi, 's')}" if lo <= 0 else f"{si(lo, 's')} to {si(hi, 's')}"


def _clock_line(c: dict) -> str:
    """The clock verdict in one line: the safe rate, and the rate asked for."""
    if c.get("clock_period_min_s") is None:
        return "no clock rate works: latches open at the same time feed one another in a loop"
    text = (f"safe up to {si(c['clock_max_hz'], 'Hz')}: one tick per {si(c['clock_period_min_s'], 's')} "
            f"(set by the {c.get('clock_limited_by') or 'storage'})")
    req = c.get("clock_requested_period_s")
    if req is not None:
        spare = req - c["clock_period_min_s"]
        text += (f"; {si(1 / req, 'Hz')} asked: " + (f"meets it with {si(spare, 's')} to spare" if spare >= 0
                                                    else f"too fast by {si(-spare, 's')} a tick"))
    return text


def _storage_text(d: dict) -> str:
    text = d.get("net") or "?"
    if d.get("part"):
        text += f" ({d['part']} {d.get('cell', '')}".rstrip() + (f" pin {d['pin_number']}" if d.get("pin_number")
                                                                 else "") + ")"
    return text


def _print_paths(r) -> None:
    if r["relay"]:   # relay builds: the fastest change (typical relays) and the slowest (worst figures)
        print(f"\n{'output':<16}{'fastest':>15}{'slowest':>15}")
        for p in r["paths"]:
            cells = [("with the clock" if p.get("storage") else "at once") if not p[k] else si(p[k], "s")
                     for k in ("best_s", "worst_s")]
            print(f"{p['output']:<16}{cells[0]:>15}{cells[1]:>15}")
        if "clock_to_output_s" in r:
            print(f"{'':16}(outputs of storage change {si(r['clock_to_output_s'], 's')} after a clock edge at "
                  "the latest)")
    else:
        print(f"\n{'output':<16}{'fastest typ':>12}{'fastest max':>12}{'slowest typ':>12}{'slowest max':>12}")
        for p in r["paths"]:
            print(f"{p['output']:<16}" + "".join(f"{si(p[k], 's'):>12}" for k in
                                                  ("best_s", "best_max_s", "worst_typ_s", "worst_s")))
    if not r["critical_path"]:
        return
    st = r.get("critical_start") or {}
    start = st.get("net") or r["critical_path"][0].get("net_in", "")
    kind = {"input": "input", "storage": "storage bit", "rail": "the supply rail"}.get(st.get("kind") or "", "net")
    print(f"\nslowest path, from {kind} {_storage_text({**st, 'net': start}) if kind != 'the supply rail' else ''}"
          .rstrip() + ":")
    if r["relay"]:
        print(f"  {'step':<5}{'relay':<8}{'coil':<14}{'pole':<6}{'signal':<16}{'ready at':>10}")
        for i, h in enumerate(r["critical_path"], 1):
            print(f"  {i:<5}{h.get('part', ''):<8}{h.get('coil', ''):<14}{h.get('pole', ''):<6}{h['net']:<16}"
                  f"{si(h.get('arrival_s'), 's'):>10}")
        return
    print(f"  {'step':<5}{'chip':<7}{'pins in→out':<14}{'signal':<16}{'adds':>9}{'ready at':>10}")
    for i, h in enumerate(r["critical_path"], 1):
        pins = f"{h.get('from_pin_number')}→{h.get('to_pin_number')}"
        print(f"  {i:<5}{h['part']:<7}{pins:<14}{h['net']:<16}{'+' + si(h['delay_s'], 's'):>9}"
              f"{si(h['arrival_s'], 's'):>10}")


def _print_clock(r) -> None:
    if "clock_period_min_s" not in r:
        return
    print("\nclock   " + _clock_line(r))
    path = r.get("clock_path") or {}
    if path.get("from"):
        print(f"        slowest storage-to-storage path: {_storage_text(path['from'])} → "
              f"{_storage_text(path['to'])}" + (" (launched on the other edge)" if path.get("half_cycle") else ""))
    if r.get("clock_high_min_s") is not None:
        print(f"        keep the clock high at least {si(r['clock_high_min_s'], 's')} and low at least "
              f"{si(r['clock_low_min_s'], 's')} (every relay of the storage lands in that time)")
        hold = si(r.get("input_hold_s"), "s")
        print("        data inputs: " + (f"steady {si(r['input_setup_s'], 's')} before the clock edge and held "
                                         f"{hold} after it" if r.get("input_setup_s") else
                                         f"held {hold} after the clock edge"))
    else:
        if r.get("hold_slack_s") is not None:
            print(f"        smallest hold margin {si(r['hold_slack_s'], 's')} (at one tick per "
                  f"{si(r.get('clock_checked_period_s'), 's')})")
        print(f"        data inputs steady {si(r.get('input_setup_s'), 's')} before the clock edge")
        if r.get("clock_pulse_min_s"):
            print(f"        clock high and low at least {si(r['clock_pulse_min_s'], 's')} each")
    if r.get("clock_to_output_s") is not None:
        print(f"        outputs ready {si(r['clock_to_output_s'], 's')} after the clock edge")
    for b in r.get("latches_borrowing", [])[:5]:
        print(f"        latch {b['net'] and _storage_text({'net': b['net'], 'part': b['part'], 'cell': b['cell']})}"
              f" takes data {si(b['borrowed_s'], 's')} after it opens (time borrowed from the next stage)")
    for v in r.get("hold_violations", [])[:10]:
        print(f"        hold margin missed by {si(-v['slack_s'], 's')}: {_storage_text(v['from'])} → "
              f"{_storage_text(v['to'])}")
    for v in r.get("pulse_violations", [])[:10]:
        print(f"        clock half period {si(v['half_period_s'], 's')} is shorter than the "
              f"{si(v['pulse_s'], 's')} pulse {v['part']} needs")
    for n in r.get("clock_notes", []):
        print(f"        {n}")


def _glitch_groups(hazards: list) -> list:
    """Glitches grouped by output and kind: one row each with the changes, counts and widest pulse."""
    groups: dict = {}
    for h in hazards:
        g = groups.setdefault((h["output"], h["kind"]), {"output": h["output"], "kind": h["kind"], "n": 0,
                                                         "inputs": [], "widest": 0.0, "reaches": [],
                                                         "error": False})
        g["n"] += 1
        for i in h["inputs_changed"]:
            if i not in g["inputs"]:
                g["inputs"].append(i)
        g["widest"] = max(g["widest"], h["width_s"][1])
        g["error"] = g["error"] or h.get("error", False)
        for w in h.get("reaches", []):
            text = f"the {w['role']} of {w['part']}" + (f" pin {w['pin_number']}" if w.get("pin_number") else "")
            if text not in g["reaches"]:
                g["reaches"].append(text)
    return sorted(groups.values(), key=lambda g: (not g["error"], g["output"], g["kind"]))


def _print_glitches(r, detail: bool) -> None:
    g = r["glitch_search"]
    if g.get("sample"):
        print(f"\nglitch search: {g['sample']}; shortest delays taken as the {g.get('min_delay', 'typical figure')}")
        ctl = g.get("control_search")
        if ctl:
            print(f"               clocks and enables ({', '.join(ctl.get('nets', []))}) searched on their own: "
                  f"{ctl['sample']}")
        if g.get("bits_changed_together"):
            print(f"               {g['bits_changed_together']} change(s) of storage bits on one clock edge tried "
                  "together")
    elif g.get("method"):
        print(f"\nglitch search: {g['method']}, {g.get('checked', 0)} changes")
    groups = _glitch_groups(r["hazards"])
    print(f"glitches {r['hazards_total']}" + (f" in {len(groups)} group(s)" if groups else "")
          + (f", {r['glitch_errors']} reaching storage" if r["glitch_errors"] else ""))
    if groups:
        print(f"  {'signal':<16}{'kind':<10}{'changes':>8}  {'widest':>8}  inputs changing")
    for grp in groups:
        mark = "  → " + ", ".join(grp["reaches"]) if grp["reaches"] else ""
        print(f"  {grp['output']:<16}{grp['kind']:<10}{grp['n']:>8}  {si(grp['widest'], 's'):>8}  "
              f"{', '.join(grp['inputs'])}{mark}")
    if not detail:
        if r["hazards"]:
            print("  (--detail lists each glitch with its racing paths)")
        return
    for h in r["hazards"]:
        when = "; ".join(_cube_text(w) for w in h["when"])
        when = when if when == "in any state" else "with " + when
        print(f"\n  {h['output']}: {h['kind']} pulse {_pulse_text(h['width_s'])} when "
              f"{', '.join(h['inputs_changed'])} change{'s' if len(h['inputs_changed']) == 1 else ''} "
              f"({'; '.join(h['directions'])}) {when}")
        for p in h["racing_paths"]:
            if p and "hops" in p:
                print(f"      {p['from']} → " + " → ".join(_hop_text(x) for x in p["hops"]))
            elif p and p.get("break_before_make"):
                bm = p["break_before_make"]
                held = "held low by its load" if bm.get("loaded") else "floating"
                print(f"      {p['from']} moves {bm['part']} (coil {bm['coil']}): pole {bm['pole']} breaks "
                      f"before it makes, {bm['net']} {held} meanwhile")
        for w in h.get("reaches", []):
            pin = f", pin {w['pin_number']}" if w.get("pin_number") else ""
            print(f"      reaches the {w['role']} of {w['part']} ({w['cell']}{pin}): it can store a wrong bit")
    floats = r.get("floating") or []
    if floats:
        print("\nrelay contacts in transfer (the net touches neither side):")
        for f in floats:
            print(f"  {f['net']:<16}{f['part']} pole {f['pole']}: from {si(f['floating_s'][0], 's')} to "
                  f"{si(f['floating_s'][1], 's')}, settled by {si(f['settled_s'], 's')}"
                  + ("" if f["loaded"] else "  (nothing holds it meanwhile)"))


@command("timing", "slowest and fastest paths, safe clock rate, hold margins and glitches of a design's build",
         _timing_args)
def cmd_timing(args):
    from . import flow
    _progress(args)
    r = flow.timing(args.design, args.target, hazard_free=args.hazard_free, multi=args.multi,
                    effort=args.effort, max_transitions=args.changes, clock_hz=args.clock, together=args.together,
                    **_read_options(args))
    code = 1 if r["glitch_errors"] or r["timing_violations"] else 0
    if args.json:
        _print_json(r)
        return code
    print(f"design  {r['design']}  on target {r['target']}  ({r['parts']} parts)")
    print(f"slowest path {si(r['delay_s'], 's')} (maximum figures), {si(r['delay_typ_s'], 's')} typical; "
          f"{r['levels']} {'coil level' if r['relay'] else 'gate'}(s) deep")
    _print_paths(r)
    _print_clock(r)
    _print_loops(r.get("feedback_loops") or [])
    sup = r["supply"]
    print(f"\nsupply  {si(sup['supply_current_a'], 'A')} worst case ({sup.get('supply_basis', '')})"
          + (f"; {si(sup['supply_current_static_a'], 'A')} with nothing switching"
             if sup.get("supply_current_static_a") is not None and not r["relay"] else ""))
    _print_glitches(r, args.detail)
    if r["cover_hazards"]:
        print(f"\ncover hazards (the design's own two-level covers): {len(r['cover_hazards'])}")
        for c in r["cover_hazards"][:50 if args.detail else 10]:
            print(f"  {c['node']:<12}{c['kind']:<10}{c['input']} changes with "
                  f"{'; '.join(_cube_text(w) for w in c['when'])}; cured by the term {_cube_text(c['fix'])}")
    if "hazard_free" in r:
        h = r["hazard_free"]
        print(f"\nhazard-free: {h['terms_added']} consensus term(s) added; {h['parts']} parts against "
              f"{h['parts_plain']} ({h['extra_parts']:+d}); glitches {h['hazards']} against {h['hazards_plain']}")
    for c in r.get("cautions", []):
        if c.startswith(("glitch on", "hold margin", "the clock asked", "clock pulses", "latches open")):
            print(f"caution: {c}")
    if r["glitch_errors"]:
        print(f"netfit: error: {r['glitch_errors']} glitch(es) reach a clock, enable, preset or clear input "
              "(--hazard-free, or drive it from one input)", file=sys.stderr)
    if r["timing_violations"]:
        print(f"netfit: error: {r['timing_violations']} timing check(s) fail: hold margins, clock pulses or the "
              "clock asked for (see above)", file=sys.stderr)
    return code


def _print_loops(loops: list) -> None:
    """Feedback loops kept as gates: once round each loop, and how long each input reaching it must last."""
    for lp in loops:
        print(f"\nfeedback loop at {', '.join(lp['cut'])} (parts {', '.join(lp['parts'])}): once round "
              f"{si(lp['loop_delay_s'], 's')} (maximum figures), {si(lp['loop_delay_typ_s'], 's')} typical")
        if lp["pulse_min_s"]:
            print("  shortest pulse that the loop keeps: " + ", ".join(
                f"{i} {si(t, 's')}" for i, t in lp["pulse_min_s"].items()))


# -- parts ----------------------------------------------------------------
def _parts_args(p):
    p.add_argument("design")
    p.add_argument("--target", "-t", required=True, metavar="T",
                   help="target name (see `netfit targets`) or a target .xml file")
    p.add_argument("--qty", type=_positive, default=1, metavar="N", help="for N copies of the build (default 1)")
    p.add_argument("--effort", type=int, default=1, choices=(0, 1),
                   help="0: one mapping pass; 1 (default): also search for fewer parts")
    _add_order_args(p)
    _add_read_args(p)
    fmt = p.add_mutually_exclusive_group()
    fmt.add_argument("--json", action="store_true", help="print JSON")
    fmt.add_argument("--csv", action="store_true", help="print the ordering list as CSV (as parts.csv)")


@command("parts", "the ordering list of a build: parts, quantities and prices, support parts included",
         _parts_args)
def cmd_parts(args):
    from . import flow
    _progress(argparse.Namespace(quiet=args.quiet, json=args.json or args.csv))
    p = flow.parts(args.design, args.target, effort=args.effort, copies=args.qty, sockets=args.sockets,
                   spares=args.spares, **_read_options(args))
    if args.json:
        _print_json(p["json"])
    elif args.csv:
        sys.stdout.write(p["csv"])
    else:
        b, a = p["result"]
        print(f"{b.design} on {b.target.name} (proof: {a.verified})")
        sys.stdout.write(p["table"])
    return 0


# -- bringup -------------------------------------------------------------
def _bringup_args(p):
    p.add_argument("design")
    p.add_argument("--target", "-t", required=True, metavar="T",
                   help="target name (see `netfit targets`) or a target .xml file")
    p.add_argument("--effort", type=int, default=1, choices=(0, 1),
                   help="0: one mapping pass; 1 (default): also search for fewer parts")
    p.add_argument("--seed", type=int, default=0, metavar="N", help="seed of the random settings (default 0)")
    p.add_argument("--steps", type=_positive, metavar="N", help=(
        "builds with flip-flops: the longest sequence the solver looks for, in clock steps (default: twice "
        "the flip-flops and 8, at most 24)"))
    p.add_argument("--failed", metavar="S:OUT,...", help=(
        "the failures you saw, as setting:output pairs (2:N22,4:N23; for sequences the step number): print "
        "the places to check, best first"))
    _add_read_args(p)
    fmt = p.add_mutually_exclusive_group()
    fmt.add_argument("--json", action="store_true", help="print JSON")
    fmt.add_argument("--csv", action="store_true", help="print the settings as CSV")


def _failures(text: str, plan) -> set:
    """``--failed`` as ``(setting index, output index)`` pairs (:class:`UsageError` for a bad pair)."""
    from .errors import UsageError
    out = set()
    for item in (t.strip() for t in text.split(",")):
        if not item:
            continue
        num, _, name = item.partition(":")
        if not num.strip().isdigit() or not 1 <= int(num) <= len(plan.settings) or name.strip() not in plan.outputs:
            raise UsageError(f"--failed: {item!r} is not SETTING:OUTPUT with a setting 1..{len(plan.settings)} "
                             f"and an output of the design ({', '.join(plan.outputs[:5])}...)")
        out.add((int(num) - 1, plan.outputs.index(name.strip())))
    return out


@command("bringup", "input settings that find wiring faults on the built board, what to expect, and where to look "
         "when an output reads wrong", _bringup_args)
def cmd_bringup(args):
    from . import flow
    _progress(argparse.Namespace(quiet=args.quiet, json=args.json or args.csv))
    r = flow.bringup(args.design, args.target, effort=args.effort, seed=args.seed, bound=args.steps,
                     **_read_options(args))
    if args.failed is not None:
        from .bringup.report import diagnosis_text
        sys.stdout.write(diagnosis_text(r["plan"], _failures(args.failed, r["plan"])))
    elif args.json:
        _print_json(r["json"])
    elif args.csv:
        sys.stdout.write(r["csv"])
    else:
        sys.stdout.write(r["text"])
    if args.json or args.csv or args.failed is not None:   # the coverage is always printed: on stderr beside data
        from .bringup.report import coverage_line
        print(coverage_line(r["plan"]), file=sys.stderr)
    return 0


# -- compare --------------------------------------------------------------
def _compare_args(p):
    p.add_argument("design")
    p.add_argument("--targets", metavar="A,B,...", help="targets to compare (default: every built-in target)")
    p.add_argument("--effort", type=int, default=1, choices=(0, 1),
                   help="0: one mapping pass; 1 (default): also search for fewer parts")
    p.add_argument("--jobs", "-j", type=_positive, metavar="N",
                   help="build in at most N processes at once (default: one per processor)")
    p.add_argument("--svg", metavar="FILE", help="also draw the comparison as a bar chart into FILE")
    _add_read_args(p)
    p.add_argument("--json", action="store_true", help="print JSON")


@command("compare", "build a design on several targets side by side: parts, cost, delay, supply current",
         _compare_args)
def cmd_compare(args):
    from . import flow
    _progress(args)
    names = [t.strip() for t in args.targets.split(",") if t.strip()] if args.targets else None
    data = flow.compare(args.design, names, effort=args.effort, jobs=args.jobs, svg=args.svg,
                        **_read_options(args))
    table = data.pop("table")
    if args.json:
        _print_json(data)
    else:
        sys.stdout.write(table)
        if args.svg:
            print(f"wrote {args.svg}")
    built = [t for t in data["targets"] if "error" not in t]
    return 0 if built else 1


# -- targets --------------------------------------------------------------
def _targets_args(p):
    p.add_argument("name", nargs="?", metavar="TARGET",
                   help="a target name or a target .xml file: show its cells, parts, defaults and sources")
    p.add_argument("--json", action="store_true", help="print JSON")


@command("targets", "list the targets, or show one target's cells, parts, defaults and data sources",
         _targets_args)
def cmd_targets(args):
    from . import flow
    if not args.name:
        rows = flow.targets()
        if args.json:
            _print_json(rows)
            return 0
        width = max((len(r["name"]) for r in rows), default=4)
        print(f"{'target':<{width}}  description")
        for r in rows:
            print(f"{r['name']:<{width}}  {r['description']}")
        return 0
    info = flow.target_info(args.name)
    if args.json:
        _print_json(info)
        return 0
    _print_target(info)
    return 0


def _print_target(t) -> None:
    print(f"target    {t['name']}  ({t['kind']})")
    print(f"          {t['description']}")
    print(f"file      {t['path']}")
    for c in t["catalogs"]:
        print(f"catalog   {c}")
    print("\ncells")
    for c in t["cells"]:
        what = c["function"] if not c["storage"] else f"{c['function']}  (storage {c['storage']})"
        outs = " ".join([c["output"]] + c["extra_outputs"])
        print(f"  {c['name']:<11}{'(' + ' '.join(c['inputs']) + ') -> ' + outs:<34}{what}")
        print(f"  {'':<11}carried by {', '.join(c['carriers']) or '-'}")
    print("\nparts")
    for p in t["parts"]:
        price = f"{p['price']['value']:.2f} {p['currency']}" if p["price"] else "-"
        print(f"  {p['id']:<14}{p['description']}")
        units = p.get("poles") or p.get("sections") or []
        word = "pole" if "poles" in p else "section"
        print(f"  {'':<14}{p['package']}, {p['pin_count']} pins, {len(units)} {word}{'' if len(units) == 1 else 's'}; "
              f"price {price}")
        for cell, d in p["delay_max_s"].items():
            typ = p["delay_typ_s"][cell]
            print(f"  {'':<14}delay {cell}: {si(typ['value'], 's')} typical ({typ['conditions']}), "
                  f"{si(d['value'], 's')} maximum ({d['conditions']})")
        if p["relay"]:
            r = p["relay"]
            print(f"  {'':<14}{r['poles']} pole(s), form {r['form']}; coil {si(r['coil_voltage_v']['value'], 'V')}, "
                  f"{r['coil_resistance_ohm']['value']:g} ohm, {si(r['coil_current_a']['value'], 'A')}; "
                  f"operate {si(r['operate_time_s']['value'], 's')}, release {si(r['release_time_s']['value'], 's')}, "
                  f"bounce {si(r['bounce_time_s']['value'], 's')}; contacts {r['contact_rating']}")
        word = "pole" if "poles" in p else "section"
        for s in p.get("poles") or p.get("sections") or []:
            pins = " ".join(f"{k}={v}" for k, v in s["pins"].items())
            print(f"  {'':<14}{word} {s['index']}  {s['cell']:<11}{pins}")
        fixed = [f"{n}={num}" for n, num in {**p["supply_pins"], **p["shared_pins"]}.items()]
        if fixed:
            print(f"  {'':<14}pins   {' '.join(fixed)}" + (f"  (not connected: {' '.join(map(str, p['nc_pins']))})"
                                                          if p["nc_pins"] else ""))
    print("\ndefaults")
    print(f"  objective   {', then '.join(t['objective'])}")
    for r in t["support_rules"]:
        print(f"  support     {r['part']} x{r['count']} per {r['per']}" + (f"  ({r['source']})" if r["source"] else ""))
    if t["supply_voltage_v"]:
        s = t["supply_voltage_v"]
        print(f"  supply      {si(s['value'], 'V')}  ({s['source']})")
    if t["other_parts"]:
        print(f"  also in the catalogs: {', '.join(t['other_parts'])}")
    print("\ndata sources (figures and pinouts citing each)")
    for src, n in t["sources"].items():
        print(f"  {n:>4}  {src}")


class _LogFormat(logging.Formatter):
    """``LEVEL: message``, except for a design's diagnostics, which already read ``file:line:col: warning: ...``."""

    def format(self, record: logging.LogRecord) -> str:
        if getattr(record, "diagnostic", False):
            return record.getMessage()
        return super().format(record)


def build_parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(prog="netfit", description=(
        "Fit a gate-level design onto parts you can buy (chips or relays), with the fewest parts, "
        "proven to do the same logic."))
    p.add_argument("--version", action="version", version=f"netfit {__version__}")
    _add_global_args(p, False)
    # the same options after the command (``netfit verify a b -q``); absent there, they leave the first alone
    common = argparse.ArgumentParser(add_help=False)
    _add_global_args(common, argparse.SUPPRESS)
    sub = p.add_subparsers(dest="command", metavar="COMMAND")
    for name, (help, add_args, _) in COMMANDS.items():
        sp = sub.add_parser(name, help=help, description=help, parents=[common])
        add_args(sp)
    return p


def _add_global_args(p, default) -> None:
    p.add_argument("--debug", action="store_true", default=default, help="show tracebacks of internal errors")
    p.add_argument("-q", "--quiet", action="store_true", default=default,
                   help="no progress or notes on stderr (errors only)")
    p.add_argument("-v", "--verbose", action="store_true", default=default, help="more log output on stderr")


def main(argv=None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    level = logging.WARNING if not args.verbose else logging.INFO
    if args.quiet:
        level = logging.ERROR
    root = logging.getLogger()
    if not root.handlers:  # as logging.basicConfig, with the design's own diagnostics printed as they are
        handler = logging.StreamHandler(sys.stderr)
        handler.setFormatter(_LogFormat("%(levelname)s: %(message)s"))
        root.addHandler(handler)
        root.setLevel(level)
    if not args.command:
        parser.print_help(sys.stderr)
        return 2
    _, _, run = COMMANDS[args.command]
    try:
        return run(args)
    except InputError as exc:
        for d in exc.diagnostics:
            print(str(d), file=sys.stderr)
        return exc.exit_code
    except NetfitError as exc:
        print(f"netfit: error: {exc}", file=sys.stderr)
        if args.debug and exc.exit_code == 3:
            traceback.print_exc()
        return exc.exit_code
    except KeyboardInterrupt:
        print("netfit: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:
        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        return 0
    except Exception as exc:  # noqa: BLE001 -- a bug of ours: reported, exit 3
        print(f"netfit: internal error: {type(exc).__name__}: {exc}", file=sys.stderr)
        if args.debug:
            traceback.print_exc()
        else:
            print("netfit: run again with --debug for the traceback, and please report it", file=sys.stderr)
        return 3


if __name__ == "__main__":
    sys.exit(main())
