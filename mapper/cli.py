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
    print(f"design   {info['design']}  ({info['file']})")
    print(f"inputs   {len(info['inputs'])}: {_short(info['inputs'])}")
    print(f"outputs  {len(info['outputs'])}: {_short(info['outputs'])}")
    kinds = ", ".join(f"{k} {v}" for k, v in info["storage_kinds"].items())
    print(f"storage  {info['storage']}" + (f" ({kinds})" if kinds else ""))
    print(f"nodes    {info['nodes']}")
    for k, v in info["kinds"].items():
        print(f"  {k:<14}{v:>8}")
    print(f"depth    {info['depth']} logic levels")
    if info["max_fanout_net"] is not None:
        print(f"fan-out  largest {info['max_fanout']} (net {info['max_fanout_net']})")
    if info.get("notes"):
        print(f"notes    {len(info['notes'])}")
        for note in info["notes"]:
            print(f"  {note}")
    print(f"warnings {len(info['warnings'])}")
    for w in info["warnings"]:
        print(f"  {w}")
    return 0


def _short(names, limit=10):
    s = " ".join(names[:limit])
    return s + (f" … (+{len(names) - limit})" if len(names) > limit else "")


# -- verify ---------------------------------------------------------------
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
            print(f"equal: {args.a} and {args.b} do the same logic (proved by {res['method']})")
        else:
            print(f"different: {args.a} and {args.b} ({res['method']})")
            cex = res.get("counterexample") or {}
            for k, v in (cex.get("inputs") or {}).items():
                print(f"  input  {k} = {v}")
            for k, v in (cex.get("state") or {}).items():
                print(f"  state  {k} = {v}")
            for d in cex.get("differs", []):
                what = {"next-state": "next state of", "control": "control of"}.get(d.get("kind"), "output")
                print(f"  {what} {d['output']}: {d['a']} in A, {d['b']} in B")
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
        "write the build's files into DIR: DESIGN.v and cells.v, DESIGN.blif, DESIGN.json, parts.csv, "
        "wiring.txt, schematic.svg, report.html"))
    p.add_argument("--qty", type=_positive, default=1, metavar="N",
                   help="parts.csv for N copies of the build (default 1)")
    p.add_argument("--effort", type=int, default=1, choices=(0, 1),
                   help="0: one mapping pass; 1 (default): also search for fewer parts")
    p.add_argument("--hazard-free", action="store_true",
                   help="add consensus terms so two-level covers cannot glitch, and report the parts they cost")
    _add_read_args(p)
    p.add_argument("--json", action="store_true", help="print the build summary as JSON")


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
    r = flow.build(args.design, args.target, out_dir=args.out, effort=args.effort, copies=args.qty,
                   hazard_free=args.hazard_free, **_read_options(args))
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
    if "poles_used" in s and not s["cells"]:
        print(f"poles   {s['poles_used']} used of {s['poles_available']}  ({s['spare_slots']} spare)")
    else:
        print(f"slots   {s['slots_used']} used of {s['slots_available']}  ({s['spare_slots']} spare)")
    if s["support_parts"]:
        print("support " + ", ".join(f"{k} ×{v}" for k, v in s["support_parts"].items()))
    print(f"delay   {si(s['delay_s'], 's')} worst path (maximum figures)")
    if "supply_current_a" in s:
        print(f"supply  {si(s['supply_current_a'], 'A')} worst case")
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
    p.add_argument("--multi", action="store_true", help="also try changes of two inputs at once")
    p.add_argument("--changes", type=_positive, metavar="N",
                   help="examine at most N input changes, drawn at random beyond that (default 20000)")
    p.add_argument("--effort", type=int, default=1, choices=(0, 1),
                   help="0: one mapping pass; 1 (default): also search for fewer parts")
    _add_read_args(p)
    p.add_argument("--json", action="store_true", help="print JSON")


def _hop_text(h) -> str:
    if "part" not in h:
        return f"{h['net']}"
    pins = ""
    if "from_pin_number" in h:
        pins = f" {h['from_pin_number']}→{h.get('to_pin_number')}"
    return f"{h['part']}{pins} ({h['cell']}) {h['net']}"


def _cube_text(d) -> str:
    return " ".join(f"{k}={v}" for k, v in d.items()) or "any"


@command("timing", "worst and best paths, clock rate, and glitches of a design's build, with their causes",
         _timing_args)
def cmd_timing(args):
    from . import flow
    _progress(args)
    r = flow.timing(args.design, args.target, hazard_free=args.hazard_free, multi=args.multi,
                    effort=args.effort, max_transitions=args.changes, **_read_options(args))
    code = 1 if r["glitch_errors"] else 0
    if args.json:
        _print_json(r)
        return code
    print(f"design  {r['design']}  on target {r['target']}  ({r['parts']} parts)")
    print(f"delay   {si(r['delay_s'], 's')} worst path (maximum figures), {si(r['delay_typ_s'], 's')} "
          f"typical; {r['levels']} level(s)")
    print(f"\n{'output':<16}{'best typ':>11}{'best max':>11}{'worst typ':>11}{'worst max':>11}")
    for p in r["paths"]:
        print(f"{p['output']:<16}{si(p.get('best_s'), 's'):>11}{si(p.get('best_max_s'), 's'):>11}"
              f"{si(p.get('worst_typ_s'), 's'):>11}{si(p.get('worst_s'), 's'):>11}")
    if r["critical_path"]:
        st = r.get("critical_start") or {}
        start = st.get("net") or r["critical_path"][0].get("net_in", "")
        if st.get("kind") == "storage":
            start += f" ({st.get('part')} {st.get('cell')}" + (f" pin {st['pin_number']}" if "pin_number" in st
                                                              else "") + ")"
        print(f"\ncritical path from {start}:")
        for h in r["critical_path"]:
            if "from_pin_number" in h:
                print(f"  {h['part']:<5} {h['cell']:<8} pin {h['from_pin_number']} ({h['from_pin']}) → pin "
                      f"{h['to_pin_number']} ({h['to_pin']})  {h['net']:<14} +{si(h['delay_s'], 's'):<9} "
                      f"at {si(h['arrival_s'], 's')}")
            else:
                print(f"  {h.get('part', '')} {h['net']}  at {si(h.get('arrival_s'), 's')}")
    if r.get("clock_max_hz"):
        print(f"\nclock   at most {r['clock_max_hz'] / 1e6:.3g} MHz (period {si(r['clock_period_min_s'], 's')})"
              + (f"; hold slack {si(r['hold_slack_s'], 's')}" if r.get("hold_slack_s") is not None else ""))
        for n in r.get("clock_notes", []):
            print(f"        {n}")
    for f in r.get("floating", []):
        print(f"floats  {f['net']} ({f['part']} pole {f['pole']}): {si(f['floating_s'][0], 's')} to "
              f"{si(f['floating_s'][1], 's')}, settled by {si(f['settled_s'], 's')}"
              + ("" if f["loaded"] else "  (no load resistor)"))
    g = r["glitch_search"]
    if g.get("checked") is not None:
        how = "all of them" if g.get("exhaustive") else f"drawn at random from {g['total']}"
        if g.get("stopped_early"):
            how = f"in random order from {g['total']}, when the work budget ran out (--changes N to go on)"
        print(f"\nglitch search: {g['checked']} input change(s), {how}"
              + (f"; minimum delays: {g['min_delay']}" if g.get("min_delay") else f"; {g.get('method', '')}"))
        if g.get("sample") and not g.get("exhaustive"):
            print(f"               {g['sample']}")
    print(f"hazards {r['hazards_total']}")
    for h in r["hazards"]:
        when = "; ".join(_cube_text(w) for w in h["when"])
        print(f"  {h['output']:<12}{h['kind']:<10}{', '.join(h['inputs_changed'])} changes "
              f"({'; '.join(h['directions'])}) when {when}: pulse {si(h['width_s'][0], 's')} to "
              f"{si(h['width_s'][1], 's')}")
        for p in h["racing_paths"]:
            if "hops" in p:
                print(f"      {p['from']} → " + " → ".join(_hop_text(x) for x in p["hops"]))
            elif p.get("break_before_make"):
                bm = p["break_before_make"]
                held = "held low by its load" if bm.get("loaded") else "floating"
                print(f"      {p['from']} moves {bm['part']} (coil {bm['coil']}): pole {bm['pole']} breaks "
                      f"before it makes, {bm['net']} {held} meanwhile")
        for w in h["reaches"]:
            print(f"      error: reaches the {w['role']} of {w['part']} ({w['cell']}, pin {w['pin_number']})")
    if r["cover_hazards"]:
        print(f"\ncover hazards (the design's two-level covers): {len(r['cover_hazards'])}")
        for c in r["cover_hazards"][:50]:
            print(f"  {c['node']:<12}{c['kind']:<10}{c['input']} changes when "
                  f"{'; '.join(_cube_text(w) for w in c['when'])}; cured by the term {_cube_text(c['fix'])}")
    if "hazard_free" in r:
        h = r["hazard_free"]
        print(f"\nhazard-free: {h['terms_added']} consensus term(s) added; {h['parts']} parts against "
              f"{h['parts_plain']} ({h['extra_parts']:+d}); glitches {h['hazards']} against {h['hazards_plain']}")
    if code:
        print(f"netfit: error: {r['glitch_errors']} glitch(es) reach a clock, enable, preset or clear input",
              file=sys.stderr)
    return code


# -- parts ----------------------------------------------------------------
def _parts_args(p):
    p.add_argument("design")
    p.add_argument("--target", "-t", required=True, metavar="T",
                   help="target name (see `netfit targets`) or a target .xml file")
    p.add_argument("--qty", type=_positive, default=1, metavar="N", help="for N copies of the build (default 1)")
    p.add_argument("--effort", type=int, default=1, choices=(0, 1),
                   help="0: one mapping pass; 1 (default): also search for fewer parts")
    _add_read_args(p)
    fmt = p.add_mutually_exclusive_group()
    fmt.add_argument("--json", action="store_true", help="print JSON")
    fmt.add_argument("--csv", action="store_true", help="print the ordering list as CSV (as parts.csv)")


@command("parts", "the ordering list of a build: parts, quantities and prices, support parts included",
         _parts_args)
def cmd_parts(args):
    from . import flow
    _progress(argparse.Namespace(quiet=args.quiet, json=args.json or args.csv))
    p = flow.parts(args.design, args.target, effort=args.effort, copies=args.qty, **_read_options(args))
    if args.json:
        _print_json(p["json"])
    elif args.csv:
        sys.stdout.write(p["csv"])
    else:
        b, a = p["result"]
        print(f"{b.design} on {b.target.name} (proof: {a.verified})")
        sys.stdout.write(p["table"])
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
        print(f"  {'':<14}{p['package']}, {p['pin_count']} pins, {len(p['slots'])} slots; price {price}")
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
        for s in p["slots"]:
            pins = " ".join(f"{k}={v}" for k, v in s["pins"].items())
            print(f"  {'':<14}slot {s['index']}  {s['cell']:<11}{pins}")
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
    p.add_argument("--debug", action="store_true", help="show tracebacks of internal errors")
    p.add_argument("-q", "--quiet", action="store_true", help="no progress or notes on stderr")
    p.add_argument("-v", "--verbose", action="store_true", help="more log output on stderr")
    sub = p.add_subparsers(dest="command", metavar="COMMAND")
    for name, (help, add_args, _) in COMMANDS.items():
        sp = sub.add_parser(name, help=help, description=help)
        add_args(sp)
    return p


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
