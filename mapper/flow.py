"""The one place that knows the whole line: read -> check -> map -> prove -> analyze -> write.

Each public function here is one command's job, returning plain data (dicts
with stable keys, or text laid out by a writer) that the CLI prints as a
table or as JSON.  :func:`fit` is the heart: it maps a design onto a target,
proves the build equal to the design, and runs every analysis of it,
returning a :class:`Result` (the build and its analysis).
"""
from __future__ import annotations

import logging
import time
from pathlib import Path
from typing import NamedTuple

from . import progress
from .analyze import analyze_build, build_glitches
from .analyze.glitch import MAX_TRANSITIONS, TIMING_MAX_WORK
from .analyze.results import Analysis, Proof
from .build import Build
from .catalog import Target, builtin_targets, describe_target
from .catalog import load_target as _load_target
from .errors import InputError, InternalError, NetfitError, UsageError
from .logic.feedback import has_feedback
from .logic.hazard import COLLAPSE_INPUTS, add_consensus, design_hazards
from .netlist import Netlist
from .place import board_from_spec
from .place import plan as plan_board
from .read import read_design
from .verify import check_equivalence
from .write import BUILD_WRITERS, atomic_write, writer_for
from .write.compare import compare_svg, compare_table
from .write.files import check_out_dir, check_out_file, write_folder
from .write.parts import order_rows, parts_csv, parts_json, parts_table, spares_from_text

__all__ = ["Result", "inspect", "verify", "convert", "load_target", "targets", "target_info", "fit", "build",
           "write_build", "parts", "compare", "BUILD_FILES", "fit_hazard_free", "timing"]

log = logging.getLogger(__name__)


def inspect(path, **read_options) -> dict:
    """Facts about one design: ports, storage, node counts, depth, fan-out, warnings, feedback loops."""
    n = read_design(path, quiet=True, **read_options)
    fanouts = n.fanouts()
    for o in n.outputs:
        fanouts.setdefault(o, []).append(o)  # an output port is one more load of its net
    counts = {name: len(v) for name, v in fanouts.items()}
    widest = max(counts.items(), key=lambda kv: kv[1], default=(None, 0))
    storage = n.storage()
    inputs = set(n.inputs)
    return {
        "design": n.name,
        "file": str(path),
        "inputs": list(n.inputs),
        "outputs": list(n.outputs),
        "storage": len(storage),
        "storage_kinds": _count(s.kind for s in storage.values()),
        "nodes": sum(1 for k in n.nodes if k not in inputs),
        "kinds": dict(sorted(n.kind_counts().items())),
        "depth": n.depth(),
        "max_fanout": widest[1],
        "max_fanout_net": widest[0],
        "warnings": [str(w) for w in n.warnings],
        "notes": [str(d) for d in n.notes],
        "feedback": _feedback(n),
    }


def _feedback(n: Netlist) -> list:
    """The design's feedback loops read as storage: what each is, and its flow table (Huffman)."""
    if not has_feedback(n):
        return []
    from .logic.flowtable import analyse
    return [r.as_dict() for r in analyse(n).regions if r.region.loop]


def _count(items) -> dict:
    out: dict = {}
    for i in items:
        out[i] = out.get(i, 0) + 1
    return out


def verify(path_a, path_b, **read_options) -> dict:
    """Prove two designs equal, or find an input that tells them apart."""
    a = read_design(path_a, **read_options)
    b = read_design(path_b, **read_options)
    result = check_equivalence(a, b)
    out = result.to_dict()
    out["a"], out["b"] = str(path_a), str(path_b)
    return out


def convert(src, dst, **read_options) -> dict:
    """Read ``src`` and write it as the format of ``dst``'s suffix."""
    writer = writer_for(dst)
    check_out_file(dst, protect=(src,))  # before any work: a folder, an unwritable place, the design itself
    n = read_design(src, **read_options)
    getattr(writer, "check_design", lambda d: None)(n)
    writer.write_netlist(n, Path(dst), protect=(src,))
    return {"from": str(src), "to": str(dst), "inputs": len(n.inputs), "outputs": len(n.outputs),
            "storage": len(n.storage()), "nodes": len(n.nodes) - len(n.inputs)}


#: rounds of repeater relays added where a contact chain leaves a coil short of its operating voltage
MAX_REPEATER_ROUNDS = 4


class Result(NamedTuple):
    """A proved build and everything found out about it."""

    build: Build
    analysis: Analysis


def load_target(name_or_path) -> Target:
    """A built-in target by name, or a user's target file."""
    return _load_target(name_or_path)


def targets() -> list:
    """The built-in targets: a list of ``{"name", "description", "path"}``."""
    import importlib.resources
    root = importlib.resources.files("mapper.targets")
    return [{"name": n, "description": d, "path": str(root.joinpath(n + ".xml"))} for n, d in builtin_targets()]


def target_info(name_or_path) -> dict:
    """Everything about one target (built-in name or path): cells, parts, defaults, data sources."""
    return describe_target(_load_target(name_or_path))


def _map(design: Netlist, target: Target, effort: int, keep, trees: bool) -> Build:
    if target.is_relay:
        from .fit.spellings import fit_relays_spelled
        return fit_relays_spelled(design, target, effort=effort)
    from .fit.fit import fit_gates
    return fit_gates(design, target, effort=effort, keep=keep, trees=trees)


def prove(design: Netlist, build: Build) -> Proof:
    """Prove ``build`` does the logic of ``design``; a build that differs is a bug of ours (exit 3)."""
    result = check_equivalence(design, build.to_netlist(), hints=build.hints())
    if not result.equivalent:
        raise InternalError(
            f"the build of {design.name} on {build.target.name} does not do the same logic as the design "
            f"({result.method}; counterexample {result.counterexample}) — this is a bug in netfit")
    return Proof("proved", result.method, list(result.notes))


def fit(design: Netlist, target: Target, effort: int = 1, keep=(), trees: bool = False,
        clock_hz: float | None = None, together=(), clean_controls: bool = True) -> Result:
    """Map a read design onto a loaded target, prove the build, and analyze it.

    ``keep`` and ``trees`` serve hazard-free builds (see
    :func:`mapper.fit.fit.fit_gates`).  ``clock_hz`` is the clock rate the
    builder means to run and ``together`` groups of inputs that change at
    once (see :func:`mapper.analyze.analyze_build`).  A build that fails its
    proof is a bug of ours (:class:`InternalError`, exit 3), never a result.

    Clocks and enables are built free of glitches by default: when a gate
    build lets a glitch reach a clock, enable, preset or clear, the cones of
    the design's clocks and enables are rewritten as hazard-free two-level
    covers (:func:`mapper.logic.hazard.add_consensus`), built again with
    those nodes kept, and the build with the fewest such glitches (then the
    fewest parts) is returned; a note says what it cost (``clean_controls``
    false keeps the first build, for tests and comparisons).  On relay targets a
    design whose latches can run data through one another, or whose decoded
    clock can glitch, is refused (:class:`UsageError`, exit 2): relays move
    in any order, so no relay build of it is safe.  A design with feedback
    loops read as storage is built by :func:`_fit_feedback`, whose controls
    are not yet rebuilt hazard-free that way (its glitches are reported).
    """
    if has_feedback(design):
        return _fit_feedback(design, target, effort, keep, trees, clock_hz, together)
    if target.is_relay:
        _refuse_latch_races(design, target)
    r = _fit_once(design, target, effort, keep, trees, clock_hz, together)
    if clean_controls and not target.is_relay and not keep and r.analysis.glitches.errors:
        r = _clean_controls(design, target, effort, r, clock_hz, together)
    return r


def _fit_feedback(design, target, effort, keep, trees, clock_hz, together) -> Result:
    """A design with loops read as storage (:mod:`mapper.logic.feedback`), proved against the design itself.

    Gate targets keep the loops as gates; a target with latch parts also
    gets a build with each loop that is a latch made a latch part
    (:func:`mapper.logic.flowtable.latch_form`), and the one of fewer parts
    is kept.  Relays build the loops that are latches with one input as
    enable as relay latches; other loops are refused with the reason
    (:func:`_relay_loops`, in the style of :func:`_refuse_latch_races`).
    """
    from .logic.flowtable import analyse, latch_form
    report = analyse(design, races=False)
    if target.is_relay:
        plan = _relay_loops(design, target, report)
        _refuse_latch_races(plan, target)
        return _fit_once(plan, target, effort, keep, trees, clock_hz, together, proof_design=design)
    r = _keep_races(design, target, _fit_once(design, target, effort, keep, trees, clock_hz, together),
                    clock_hz, together)
    if any(cd.storage in ("ah", "al") for name, cd in target.cells.items() if target.carriers.get(name)):
        parts = latch_form(design, report)
        if len(parts.storage()) and sum(1 for s in parts.storage().values() if s.kind == "as") < sum(
                1 for s in design.storage().values() if s.kind == "as"):
            alt = _fit_once(parts, target, effort, keep, trees, clock_hz, together, proof_design=design)
            if (len(alt.build.parts), len(alt.build.cells)) < (len(r.build.parts), len(r.build.cells)):
                alt.analysis.notes.append(f"feedback loops that are latches built as latch parts: "
                                          f"{_parts(len(alt.build.parts))} against {len(r.build.parts)} with the "
                                          "loops kept as gates")
                return alt
            r.analysis.notes.append(f"feedback loops kept as gates: {_parts(len(r.build.parts))} against "
                                    f"{len(alt.build.parts)} with latch parts")
    return r


def _parts(n: int) -> str:
    return f"{n} part{'' if n == 1 else 's'}"


def _keep_races(design: Netlist, target: Target, r: Result, clock_hz, together) -> Result:
    """``r``, or a build gate for gate where that is as small, or where ``r``'s loops race and the design's not.

    The proof compares loops in fundamental mode, with all of a loop's delay at its cut; a build that
    reshapes the gates of a loop can still race where the design did not (one input change, two
    gates excited, the end depends on which wins: :func:`mapper.logic.flowtable.critical_races_added`).
    Then the builds a builder makes by hand, gate for gate (:func:`mapper.fit.fit.baseline_builds`),
    are tried, fewest parts first, and the first that adds no such race is kept; if none, ``r`` is
    kept with a caution naming the races.  A gate-for-gate build of no more parts and gates than
    ``r`` is kept even where ``r`` adds no race: it keeps the design's loops (the cross-coupled pair,
    its delay once round) as drawn.
    """
    from .fit.fit import baseline_builds
    from .logic.flowtable import critical_races_added
    added = critical_races_added(design, r.build.to_netlist())
    size = (len(r.build.parts), len(r.build.cells))
    tried = sorted(baseline_builds(design, target).items(), key=lambda kv: (len(kv[1].parts), len(kv[1].cells)))
    for label, b in tried:
        if not added and (len(b.parts), len(b.cells)) > size:
            break  # a build as small as the mapper's that keeps the design's loops gate for gate is preferred
        if not critical_races_added(design, b.to_netlist()):
            alt = _fit_once(design, target, 0, (), False, clock_hz, together, build=b)
            why = (f"the build of {_parts(size[0])} reshapes a loop so that it races where the design does not "
                   f"({added[0]})" if added else "as few parts and gates as the mapper's, with the design's loops "
                   "gate for gate")
            alt.analysis.notes.append(f"feedback loops built {label} ({_parts(len(b.parts))}): {why}")
            return alt
    if not added:
        return r
    r.analysis.cautions.append(f"the build's feedback loops race where the design's do not: {'; '.join(added[:3])}"
                               " -- keep that input change slow, or draw the loop so that it cannot race")
    return r


def _relay_loops(design: Netlist, target: Target, report) -> Netlist:
    """The design with its loops made relay latches, or a refusal naming each loop relays cannot build safely."""
    from .logic.flowtable import latch_form
    bad = []
    ok = []
    for r in report.regions:
        if not r.region.loop:
            bad.append(f"{r.region.cuts[0]} is asynchronous storage with no clock or enable (a delay, not a loop)")
            continue
        q = r.region.cuts[0]
        if "flip_flop" in r.roles:
            bad.append(f"the loops at {r.roles['flip_flop']['master']} and {q} are a master-slave flip-flop made of "
                       "gates: relays build flip-flops of their own, so describe it as one (a '.latch ... re' or "
                       "'always @(posedge ...)')")
        elif "master_of" in r.roles:
            continue  # said with its slave
        elif r.kind == "d-latch":
            ok.append(q)
        elif r.kind in ("sr-latch", "gated-sr-latch"):
            bad.append(f"the loop at {q} is a {r.form.split(':')[0]}: on relays its enable would be decoded from set "
                       "and reset, which drops out while a contact transfers, and set and reset released together "
                       "race; describe it as a D latch with one enable, or build it on a gate target")
        else:
            bad.append(f"the loop at {q} is not a latch with one enable ({r.form})")
    if bad:
        raise UsageError(f"{design.name} cannot be built safely on relays ({target.name}): " + "; ".join(bad))
    return latch_form(design, report, only=set(ok))


def _fit_once(design, target, effort, keep, trees, clock_hz, together, proof_design=None, build=None) -> Result:
    """One map, proof and analysis (with repeater relays where relay chains are too long).

    The build is proved against ``proof_design`` when given (the design as read, when ``design``
    is a form of it made for the fit), else against ``design``.  A ``build`` given is proved and
    analysed as it is, not mapped again."""
    clock = [time.perf_counter()]
    stages: dict = {}

    def lap(name):
        now = time.perf_counter()
        stages[name] = round(now - clock[0], 3)
        clock[0] = now

    build = build or _map(design, target, effort, keep, trees)
    lap("fit")
    proof = prove(proof_design or design, build)
    lap("proof")
    analysis = analyze_build(build, proof, clock_hz=clock_hz, together=together)
    lap("analysis")
    for _ in range(MAX_REPEATER_ROUNDS):   # relay chains too long to hold their coils: add repeaters
        nets = (analysis.wired or {}).get("redrive") or []
        if not nets:
            break
        from .fit.relay import redrive
        again = redrive(build, nets)
        if again is build:
            break
        build = again
        proof = prove(proof_design or design, build)
        analysis = analyze_build(build, proof, clock_hz=clock_hz, together=together)
        lap("repeaters")
    if build.is_relay and analysis.glitches.errors:
        _refuse_relay_control_glitch(design, build, target, analysis)
    wiring = analysis.wiring_check
    if wiring is not None and wiring["defects"]:
        found = {k: len(wiring[k]) for k in ("order_dependent", "oscillations", "shorts", "back_feeds", "floating",
                                             "behaviour") if wiring[k]}
        raise InternalError(f"the relay build of {design.name} on {target.name} fails the checks as wired ({found}; "
                            f"first: {next(wiring[k][0] for k in found)}) -- this is a bug in netfit")
    analysis.stage_s = stages
    return Result(build, analysis)


def _refuse_latch_races(design: Netlist, target: Target) -> None:
    """Refuse a relay build of latches that run data through one another (see :mod:`mapper.logic.races`)."""
    from .logic.races import latch_races
    races = latch_races(design)
    if not races:
        return
    lines = []
    for r in races:
        if r["kind"] == "loop":
            lines.append(f"latches {', '.join(r['latches'])} feed their own data while {r['enable']} holds them "
                         "open: they have no stable value then")
        else:
            lines.append(f"latch {r['to']} is fed from latch {r['from']}, and they are open on opposite levels of "
                         f"{r['enable']}: as it changes one opens while the other closes, and relays moving in "
                         "any order let the new data run through both")
    raise UsageError(f"{design.name} cannot be built safely on relays ({target.name}): " + "; ".join(lines)
                     + ". Use flip-flops, or two enables that are never on together")


def _refuse_relay_control_glitch(design: Netlist, build: Build, target: Target, analysis: Analysis) -> None:
    """Refuse a relay build whose decoded clock or enable can drop out while a contact transfers."""
    bad = [h for h in analysis.glitches.hazards if h["error"]]
    h = bad[0]
    when = "; ".join(", ".join(f"{k}={v}" for k, v in w.items()) or "any state" for w in h["when"][:3])
    storage = design.storage()
    name = next((storage[lt.net].control for lt in build.latches
                 if lt.control == h["net"] and lt.net in storage and storage[lt.net].control), h["net"])
    raise UsageError(
        f"the {h['reaches'][0]['role'] if h['reaches'] else 'clock'} {name} of {design.name} is decoded by "
        f"contacts and drops out while a contact transfers ({', '.join(h['inputs_changed'])} changes when {when}): "
        f"on relays ({target.name}) its storage would step on that dropout. netfit builds contact networks as "
        "changeover trees, which cannot hold such a net; drive the clock or enable from one input (or one "
        f"storage bit), or build {design.name} on a gate target, where its clock is built free of glitches")


def _clean_controls(design: Netlist, target: Target, effort: int, plain: Result, clock_hz, together) -> Result:
    """The build with clock and enable cones made hazard-free, when that lets fewer glitches reach storage."""
    from .logic.hazard import control_cones
    controls, nodes = control_cones(design)
    if not nodes:
        return plain
    hf, kept, report = add_consensus(design, collapse_inputs=COLLAPSE_INPUTS, only=nodes)
    if not kept:
        return plain
    same = check_equivalence(design, hf)
    if not same.equivalent:
        raise InternalError(f"making the clocks of {design.name} hazard-free changed their logic — a bug in netfit")
    tries = [plain]
    for trees in (False, True):
        tries.append(_fit_once(hf, target, effort, kept, trees, clock_hz, together))
        if not tries[-1].analysis.glitches.errors:
            break
    best = min(tries, key=lambda x: (x.analysis.glitches.errors, len(x.build.parts), len(x.build.cells)))
    own = [h for h in design_hazards(design) if h["node"] in nodes]
    if best is plain:
        plain.analysis.notes.append(
            "clocks and enables rebuilt as hazard-free covers still let a glitch reach storage: the plain build "
            "is kept (see its cautions)")
        return plain
    extra = len(best.build.parts) - len(plain.build.parts)
    terms = report["terms_added"]
    note = (f"clocks and enables ({', '.join(controls)}) built free of glitches: {terms} consensus term(s) "
            f"added, {extra:+d} part(s) against the plain build, which let {plain.analysis.glitches.errors} "
            "glitch(es) reach storage")
    if own:
        note += ("; the design's own cover glitches there (" + "; ".join(
            f"{h['node']} when {h['input']} changes, cured by the term {_cube_text(h['fix'])}" for h in own[:3])
            + ")")
    best.analysis.notes.append(note)
    return best


def _cube_text(d: dict) -> str:
    return "·".join(f"{k}" if v else f"{k}'" for k, v in d.items()) or "1"


def build(path, target_name, out_dir=None, effort: int = 1, copies: int = 1, hazard_free: bool = False,
          documents: dict | None = None, clock_hz: float | None = None, together=(), **read_options) -> Result:
    """``netfit build``: read, fit, prove, analyze, and write the build's files when ``out_dir`` is given.

    ``documents`` holds the options of the documents (see :func:`write_build`);
    ``clock_hz`` and ``together`` go to :func:`fit`.
    """
    documents = dict(documents or {})
    board_from_spec(documents.get("board"))  # a bad --board is refused before the fit
    spares_from_text(documents.get("spares"))
    if out_dir is not None:
        check_out_dir(out_dir, protect=(path,))  # before any work: a file, an unwritable place
    with progress.stage("reading the design"):
        design = read_design(path, **read_options)
    if out_dir is not None:
        check_out_dir(out_dir, protect=(path,), names=_build_names(design.name))
        for _, module in BUILD_WRITERS:  # what a writer cannot write is said before the work
            getattr(module, "check_design", lambda d: None)(design)
    target = load_target(target_name)
    with progress.stage(f"fitting {design.name} onto {target.name} and proving it"):
        if hazard_free:
            r = fit_hazard_free(design, target, effort, clock_hz=clock_hz, together=together)
        else:
            r = fit(design, target, effort=effort, clock_hz=clock_hz, together=together)
    if out_dir is not None:
        with progress.stage("writing the build's files"):
            write_build(r, out_dir, protect=(path,), copies=copies, **documents)
    return r


#: file names of ``netfit build -o DIR`` besides ``<design>.v/.blif/.json``
BUILD_FILES = tuple(name for name, _ in BUILD_WRITERS if not name.startswith("."))


def _file_stem(design: str) -> str:
    import re
    stem = re.sub(r"[^A-Za-z0-9._-]", "_", design).strip(".") or "design"
    return stem + "_build" if stem == "cells" else stem


def _build_names(design: str) -> list:
    """The file names :data:`BUILD_WRITERS` give a build of ``design``."""
    stem = _file_stem(design)
    return [stem + name if name.startswith(".") else name for name, _ in BUILD_WRITERS]


def write_build(r: Result, out_dir, protect=(), copies: int = 1, **options) -> list:
    """Write the build's files into ``out_dir``; returns their paths.

    ``<design>.v`` and ``<design>_models.v`` (structural Verilog and cell models),
    ``<design>.blif``, ``<design>.json`` (the whole build), ``parts.csv``
    (the ordering list for ``copies`` copies), ``wiring.txt``,
    ``schematic.svg`` and ``report.html`` (:data:`mapper.write.BUILD_WRITERS`).
    The wiring is checked (every pin on at most one net) before any file is
    written; the files are written into a temporary folder and swapped in
    whole (:func:`mapper.write.files.write_folder`).  ``options``: ``board``
    (as ``--board``: where the parts are placed and wired, :mod:`mapper.place`),
    ``sockets`` and ``spares`` (the ordering list), ``shapes`` (the
    schematic's gate shapes), ``bringup`` (true: the bring-up list in the report).
    """
    from .write import wiring

    wiring.wiring(r.build, r.analysis)  # raises before anything is written if a pin would join two nets
    options["plan"] = plan_board(r.build, options.pop("board", None))
    options["bringup"] = _bringup_data(r.build) if options.pop("bringup", False) else None

    def job(module):
        return lambda p: module.write_build(r.build, r.analysis, p, protect=protect, copies=copies, **options)

    jobs = [(name, job(module)) for name, (_, module) in zip(_build_names(r.build.design), BUILD_WRITERS)]
    written = write_folder(out_dir, jobs, protect=protect)
    log.info("wrote %d files into %s", len(written), out_dir)
    return written


def parts(path, target_name, effort: int = 1, copies: int = 1, sockets: bool = False, spares=None,
          **read_options) -> dict:
    """``netfit parts``: the ordering list for ``copies`` copies of the build.

    ``sockets`` adds a socket per chip; ``spares`` (``"2"`` or ``"10%"``)
    extra parts per row.  Returns ``{"result": Result, "json": data, "csv":
    text, "table": text}``.
    """
    spares = spares_from_text(spares)
    r = build(path, target_name, effort=effort, **read_options)
    b = r.build
    return {"result": r, "json": parts_json(b, copies, sockets, spares), "csv": parts_csv(b, copies, sockets, spares),
            "table": parts_table(b, copies, sockets, spares), "rows": order_rows(b, copies, sockets, spares)}


def _bringup_data(b: Build) -> dict | None:
    """The bring-up plan of ``b`` as data for the report, or ``None`` (said in the log) where none is made yet."""
    from .bringup.plan import make_plan
    from .bringup.report import plan_json
    try:
        with progress.stage("finding the bring-up settings"):
            return plan_json(make_plan(b))
    except UsageError as exc:
        log.warning("no bring-up section in the report: %s", exc)
        return None


def bringup(path, target_name, effort: int = 1, seed: int = 0, bound: int | None = None, **read_options) -> dict:
    """``netfit bringup``: the build's bring-up plan (:mod:`mapper.bringup`); ``bound``: the most clock steps
    the solver unrolls for a build with flip-flops.

    Returns ``{"result": Result, "plan": Plan, "json": data, "text": table, "csv": text}``.
    """
    from .bringup.plan import make_plan
    from .bringup.report import plan_csv, plan_json, plan_text
    r = build(path, target_name, effort=effort, **read_options)
    with progress.stage("finding the bring-up settings"):
        plan = make_plan(r.build, seed=seed, bound=bound)
    return {"result": r, "plan": plan, "json": plan_json(plan), "text": plan_text(plan), "csv": plan_csv(plan)}


def _compare_one(path: str, target_name: str, effort: int, read_options: dict) -> dict:
    """Build one target for :func:`compare` (runs in a worker process); never raises."""
    try:
        design = read_design(path, quiet=True, **read_options)
        r = fit(design, load_target(target_name), effort=effort)
        return r.analysis.summary(r.build)
    except InputError as exc:
        return {"target": target_name, "error": "; ".join(d.message for d in exc.diagnostics),
                "error_kind": "input"}
    except NetfitError as exc:
        return {"target": target_name, "error": str(exc),
                "error_kind": "internal" if exc.exit_code == 3 else "usage"}
    except Exception as exc:  # a bug of ours: reported in its column, the other targets go on
        log.debug("target %s failed", target_name, exc_info=True)
        return {"target": target_name, "error": f"internal error: {type(exc).__name__}: {exc}",
                "error_kind": "internal"}


def _compare_worker(level: int) -> None:
    """Logging in a compare worker as in the parent (the CLI's level; nothing more under --quiet)."""
    logging.basicConfig(level=level, format="%(levelname)s: %(message)s")


def compare(path, target_names=None, effort: int = 1, jobs: int | None = None, svg=None,
            **read_options) -> dict:
    """``netfit compare``: build the design on every target, in parallel processes.

    Returns ``{"design": name, "file": path, "targets": [summary, ...]}`` in
    the order of ``target_names`` (default: every built-in target), and under
    ``"table"`` the side-by-side table as text.  Each entry is the target's
    build summary (:meth:`~mapper.analyze.results.Analysis.summary`) or, for a
    target the design cannot be built on, ``{"target", "error",
    "error_kind"}``.  ``svg`` names a file for the bar chart.  A bad design or
    an unknown target name raises before anything is built.
    """
    import multiprocessing
    import os
    from concurrent.futures import ProcessPoolExecutor, as_completed

    design = read_design(path, **read_options)
    names = list(target_names) if target_names else [n for n, _ in builtin_targets()]
    for n in names:
        load_target(n)
    workers = max(1, min(len(names), jobs or os.cpu_count() or 1))
    results: dict = {}
    with progress.stage(f"building {design.name} on {len(names)} targets", total=len(names)) as st:
        if workers == 1:
            for n in names:
                results[n] = _compare_one(str(path), n, effort, read_options)
                st.advance()
        else:
            # spawned workers: a fresh interpreter each, no state forked from a busy parent
            ctx = multiprocessing.get_context("spawn")
            level = logging.getLogger().getEffectiveLevel()
            with ProcessPoolExecutor(max_workers=workers, mp_context=ctx, initializer=_compare_worker,
                                     initargs=(level,)) as ex:
                futs = {ex.submit(_compare_one, str(path), n, effort, read_options): n for n in names}
                for f in as_completed(futs):
                    results[futs[f]] = f.result()
                    st.advance()
    data = {"design": design.name, "file": str(path), "targets": [results[n] for n in names]}
    if svg:
        atomic_write(svg, compare_svg(data), protect=(path,))
    return {**data, "table": compare_table(data)}


def fit_hazard_free(design: Netlist, target: Target, effort: int = 1, clock_hz: float | None = None,
                    together=()) -> Result:
    """Fit ``design`` with every two-level cover made free of static hazards (``--hazard-free``).

    Small cones that glitch are collapsed into two-level covers and
    consensus terms are added (:func:`mapper.logic.hazard.add_consensus`),
    the rewritten design is proved equal to the design, and the mapper keeps
    the added terms.  Of the builds at each effort level up to ``effort``
    and the plain build, the one with the fewest glitches found, then the
    fewest parts, is returned.  ``analysis.hazard_free`` says what the
    terms cost: the added terms, ``chosen`` (``"consensus"`` or ``"plain"``),
    ``parts_plain``/``parts``/``extra_parts``, ``cells_plain``/``cells`` and the
    glitch finder's hazard counts of both builds.
    """
    hf, kept, report = add_consensus(design, collapse_inputs=COLLAPSE_INPUTS)
    same = check_equivalence(design, hf)
    if not same.equivalent:
        raise InternalError(f"adding consensus terms changed the logic of {design.name} — this is a bug in netfit")
    plain = fit(design, target, effort=effort, clock_hz=clock_hz, together=together)
    # The mapper may still rebuild a kept node from a minimum circuit with reconvergent paths
    # (x + x'y for x + y), which glitches again; the part search makes that likelier.  So each
    # effort level is tried and the glitch finder picks: fewest glitches, then fewest parts --
    # the plain build included, so the answer is never worse than it (ties go to the plain build).
    tries = [plain] + [fit(hf, target, effort=e, keep=kept, trees=True, clock_hz=clock_hz, together=together)
                       for e in sorted({0, effort})]
    best = min(tries, key=lambda x: (x.analysis.glitches.total, len(x.build.parts), len(x.build.cells)))
    report["chosen"] = "plain" if best is plain else "consensus"
    if best is plain:
        report["note"] = ("the builds with consensus terms showed no fewer glitches than the plain build "
                          "(the mapper rebuilt kept nodes with reconvergent paths, or the hazards are "
                          "dynamic ones that consensus terms do not cure): the plain build is kept")
    b, pb = best.build, plain.build
    report.update({
        "parts_plain": len(pb.parts), "parts": len(b.parts), "extra_parts": len(b.parts) - len(pb.parts),
        "cells_plain": len(pb.cells), "cells": len(b.cells),
        "hazards_plain": plain.analysis.glitches.total, "hazards": best.analysis.glitches.total,
    })
    if target.is_relay and best is not plain:
        report["note"] = "contact networks are not built as AND-OR covers: the consensus terms may not survive"
    best.analysis.hazard_free = report
    best.analysis.notes.append(
        f"hazard-free covers: {report['terms_added']} consensus term(s) added in "
        f"{report['nodes_split']} node(s); {report['extra_parts']:+d} part(s) against the plain build")
    return best


def timing(path, target_name, hazard_free: bool = False, multi: bool = False, effort: int = 1,
           max_transitions: int | None = None, clock_hz: float | None = None, together=(),
           **read_options) -> dict:
    """``netfit timing``: static timing, clock verdicts, glitches and cover hazards of a design's build.

    Returns a dict with ``delay_s`` (worst path, maximum figures), ``delay_typ_s``,
    ``levels``, ``outputs``, ``paths`` (per output: worst and best path with parts
    and pins), ``critical_path`` and ``critical_start``, the clock figures of a
    sequential build (``clock_max_hz``, ``clock_period_min_s``, ``clock_path``,
    hold margins and their violations, pulse widths, and for relays the
    shortest clock high and low), ``timing_violations`` (hold margins and
    pulse widths missed, a ``clock_hz`` too fast), ``hazards`` (each with at
    least ``output``, ``kind``, ``inputs_changed``, ``width_s`` and
    ``error``), ``glitch_errors`` (hazards reaching a clock, enable, preset
    or clear), ``glitch_search``, ``cover_hazards`` (the algebraic check of
    the design's two-level covers), ``floating`` for relay builds,
    ``supply`` figures and ``hazard_free`` when asked for.  ``multi`` (pairs
    of inputs changing at once) is refused on relay targets: the
    switch-level check of every relay build already moves the relays in
    every order.
    """
    design = read_design(path, **read_options)
    target = load_target(target_name)
    if multi and target.is_relay:
        raise UsageError("--multi tries pairs of inputs changing at once in the timed search of gate builds; "
                         f"{target.name} is a relay target, whose builds are checked relay by relay in every "
                         "order (see the wiring check in the build's report): leave --multi out")
    if hazard_free:
        r = fit_hazard_free(design, target, effort, clock_hz=clock_hz, together=together)
    else:
        r = fit(design, target, effort=effort, clock_hz=clock_hz, together=together)
    b, a = r.build, r.analysis
    if b.cells:
        from .analyze.cautions import cautions
        a.glitches = build_glitches(b, multi=multi, max_transitions=max_transitions or MAX_TRANSITIONS,
                                    max_work=None if max_transitions else TIMING_MAX_WORK, together=together)
        a.cautions = cautions(b, a.timing, a.supply, a.loops, None, a.glitches)
    t = a.timing.as_dict()
    bits = {x for lt in b.latches for x in (lt.net, lt.state)}
    paths = t.get("paths") or [{"output": o, "best_s": v[0], "worst_s": v[1],
                                "storage": b.output_nets.get(o, o) in bits} for o, v in t["outputs"].items()]
    out = {"design": b.design, "target": target.name, "parts": len(b.parts), "relay": b.is_relay,
           "delay_s": t["delay_s"], "delay_typ_s": t["delay_typ_s"], "levels": t["levels"],
           "outputs": t["outputs"], "paths": paths, "critical_path": t["critical_path"],
           "critical_start": t.get("critical_start"), "critical_end": t.get("critical_end")}
    for key, value in t.items():
        if key.startswith(("clock_", "hold_", "input_", "pulse_", "latches_")) or key in (
                "overloaded", "per_level_s", "operate_s", "release_s", "bounce_s", "timing_violations",
                "feedback_loops"):
            out[key] = value
    out.setdefault("timing_violations", 0)
    g = a.glitches
    if g.floating is not None:
        out["floating"] = g.floating
    out.update({"hazards": g.hazards, "hazards_total": g.total, "glitch_errors": g.errors,
                "glitch_search": g.search or {}, "cover_hazards": design_hazards(design)})
    out["supply"] = a.supply.as_dict(b.is_relay)
    if a.hazard_free is not None:
        out["hazard_free"] = a.hazard_free
    out["cautions"] = list(a.cautions)
    out["notes"] = a.all_notes(b)
    return out
