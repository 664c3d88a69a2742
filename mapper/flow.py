"""The one place that knows the whole line: read -> check -> map -> analyze -> verify -> write.

Each public function here is one command's job, returning plain data (dicts
with stable keys) that the CLI prints as a table or as JSON.
"""
from __future__ import annotations

import logging
from pathlib import Path

from .read import read_design
from .write import writer_for

__all__ = ["inspect", "verify", "convert", "load_target", "targets", "target_info", "fit", "build",
           "write_build"]

log = logging.getLogger(__name__)


def inspect(path, **read_options) -> dict:
    """Facts about one design: ports, storage, node counts, depth, fan-out, warnings."""
    n = read_design(path, **read_options)
    fanouts = n.fanouts()
    for o in n.outputs:
        fanouts.setdefault(o, [])
    counts = {name: len(v) + n.outputs.count(name) for name, v in fanouts.items()}
    widest = max(counts.items(), key=lambda kv: kv[1], default=(None, 0))
    storage = n.storage()
    return {
        "design": n.name,
        "file": str(path),
        "inputs": list(n.inputs),
        "outputs": list(n.outputs),
        "storage": len(storage),
        "storage_kinds": _count(s.kind for s in storage.values()),
        "nodes": sum(1 for k in n.nodes if k not in set(n.inputs)),
        "kinds": dict(sorted(n.kind_counts().items())),
        "depth": n.depth(),
        "max_fanout": widest[1],
        "max_fanout_net": widest[0],
        "warnings": [str(w) for w in n.warnings],
    }


def _count(items) -> dict:
    out: dict = {}
    for i in items:
        out[i] = out.get(i, 0) + 1
    return out


def verify(path_a, path_b, **read_options) -> dict:
    """Prove two designs equal, or find an input that tells them apart."""
    from .verify import check_equivalence

    a = read_design(path_a, **read_options)
    b = read_design(path_b, **read_options)
    result = check_equivalence(a, b)
    out = result.to_dict()
    out["a"], out["b"] = str(path_a), str(path_b)
    return out


def convert(src, dst, **read_options) -> dict:
    """Read ``src`` and write it as the format of ``dst``'s suffix."""
    n = read_design(src, **read_options)
    writer = writer_for(dst)
    writer.write_netlist(n, Path(dst), protect=(src,))
    return {"from": str(src), "to": str(dst), "inputs": len(n.inputs), "outputs": len(n.outputs),
            "storage": len(n.storage()), "nodes": len(n.nodes) - len(n.inputs)}


def load_target(name_or_path):
    """A built-in target by name, or a user's target file."""
    from .fit.target import load_target as _load
    return _load(name_or_path)


def targets() -> list:
    """The built-in targets: a list of ``{"name", "description", "path"}``."""
    from .fit.target import builtin_targets
    import importlib.resources
    root = importlib.resources.files("mapper.targets")
    return [{"name": n, "description": d, "path": str(root.joinpath(n + ".xml"))} for n, d in builtin_targets()]


def target_info(name_or_path) -> dict:
    """Everything about one target (built-in name or path): cells, parts, defaults, data sources."""
    from .fit.target import describe_target, load_target as _load
    return describe_target(_load(name_or_path))


def fit(design, target, effort: int = 1, keep=()):
    """Map a read design onto a loaded target and prove the build; returns the Build.

    A build that fails its proof is a bug of ours (:class:`InternalError`,
    exit 3), never a result.
    """
    from .analyze.timing import static_timing
    from .errors import InternalError
    from .verify import check_equivalence

    if getattr(target, "kind", "gates") == "relay":
        from .fit.relay import fit_relays
        build = fit_relays(design, target, effort=effort)
    else:
        from .fit.fit import fit_gates
        build = fit_gates(design, target, effort=effort, keep=keep)
    if getattr(target, "kind", "gates") != "relay":
        # relay builds carry their own timing and supply figures (mapper.analyze.relay_timing)
        build.timing.update(static_timing(build))
        _supply(build)
    result = check_equivalence(design, build.to_netlist(), hints=build.hints())
    if not result.equivalent:
        raise InternalError(
            f"the build of {design.name} on {target.name} does not do the same logic as the design "
            f"({result.method}; counterexample {result.counterexample}) — this is a bug in netfit")
    build.verified = "proved"
    build.notes.extend(result.notes)
    return build


def _supply(build) -> None:
    """Supply current: quiescent per part plus per active unit (worst case: every unit active)."""
    worst = typ = 0.0
    for p in build.parts:
        pd = build.target.parts[p.part_id]
        q = pd.current_quiescent.value if pd.current_quiescent is not None else 0.0
        u = pd.current_per_unit.value if pd.current_per_unit is not None else 0.0
        used = sum(1 for c in build.cells if c.part_ref == p.ref) + sum(
            1 for k in build.contacts if k.part_ref == p.ref)
        if pd.relay is not None:
            coil = pd.relay.coil_current.value
            worst += coil
            typ += coil / 2
        else:
            worst += q + u * used
            typ += q + u * used / 2
    build.timing["supply_current_a"] = round(worst, 9)
    build.timing["supply_current_typ_a"] = round(typ, 9)


def build(path, target_name, out_dir=None, effort: int = 1, **read_options):
    """``netfit build``: read, fit, prove, and write the build's files when ``out_dir`` is given."""
    design = read_design(path, **read_options)
    target = load_target(target_name)
    b = fit(design, target, effort=effort)
    if out_dir is not None:
        write_build(b, out_dir, protect=(path,))
    return b


def write_build(b, out_dir, protect=()) -> list:
    """Write every build output the writers offer into ``out_dir``; returns the paths."""
    import importlib

    out = Path(out_dir)
    written = []
    for suffix, modname in (("blif", "mapper.write.blif"), ("json", "mapper.write.json"),
                            ("v", "mapper.write.verilog")):
        try:
            mod = importlib.import_module(modname)
        except ModuleNotFoundError:
            continue
        fn = getattr(mod, "write_build", None)
        if fn is None:
            continue
        p = out / f"{b.design}.{suffix}"
        fn(b, p, protect=protect)
        written.append(p)
    return written
