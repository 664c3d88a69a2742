"""The one place that knows the whole line: read -> check -> map -> analyze -> verify -> write.

Each public function here is one command's job, returning plain data (dicts
with stable keys) that the CLI prints as a table or as JSON.
"""
from __future__ import annotations

import logging
from pathlib import Path

from .read import read_design
from .write import writer_for

__all__ = ["inspect", "verify", "convert", "targets", "target_info"]

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
