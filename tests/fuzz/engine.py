"""In-process mutation fuzzing of netfit's readers and loaders, each input under CPU and memory limits.

The valid corpus (the BLIF files of the tests and the published benchmark
files, the shipped catalogs and targets) is mutated -- bytes flipped,
inserted, deleted, spans repeated, lines shuffled, words from a dictionary
of each format put in, numbers made huge -- and hostile constructions are
built outright (a hierarchy that doubles at every level, ten thousand nested
models, a cover of thousands of inputs, thirty thousand outputs, a part of
twenty million pins, binary junk).  Every input goes through the reader in
a worker process:

* it must be read, or refused with :class:`~mapper.errors.InputError` or
  :class:`~mapper.errors.UsageError` whose diagnostics carry the file and,
  unless the fault is the file's as a whole, a line;
* a design read must survive the rest of the reading line (the checks, its
  depth and counts), and a small one a round trip through the BLIF writer
  proved equal to it, and the Verilog and JSON writers;
* within :data:`CPU_SECONDS` of processor time and :data:`MEMORY_BYTES` of
  address space (``setitimer(ITIMER_PROF)`` and ``RLIMIT_AS`` in the worker;
  a worker that stops answering is killed and the input counted).

Anything else is a *defect*: a traceback, a time or memory overrun, a
worker that dies, an error without a position, a round trip that changes
the design.  Inputs are made from ``(format, seed, case number)`` alone, so
a defect is reproduced by its number; :func:`run` returns each defect with
its input bytes.  ``tests/fuzz/test_fuzz.py`` runs a short fixed budget in
``make test``; ``bench/bench_fuzz.py`` runs long ones and prints totals.

The Verilog reader is being rebuilt on another branch; its format joins
:data:`FORMATS` with that work (the writers are exercised already).
"""
from __future__ import annotations

import contextlib
import multiprocessing
import multiprocessing.connection
import os
import random
import re
import resource
import signal
import tempfile
import time
import traceback
from dataclasses import dataclass, field
from pathlib import Path

__all__ = ["FORMATS", "Defect", "Totals", "run", "make_input", "CPU_SECONDS", "MEMORY_BYTES"]

ROOT = Path(__file__).resolve().parent.parent.parent
#: processor seconds one input may take in a worker (inputs are small: real ones take milliseconds)
CPU_SECONDS = 10.0
#: address space of a worker process (a worker holding netfit's modules uses well under 100 MB)
MEMORY_BYTES = 1024 * 1024 * 1024
#: a design at most this large is also written back and proved equal to itself
ROUND_TRIP_NODES = 1500


# -- formats ---------------------------------------------------------------------------------------
@dataclass
class Format:
    """One kind of input: its seed files, its dictionary of words, its file suffix."""

    name: str
    suffix: str
    seed_globs: tuple
    tokens: tuple
    seeds: list = field(default_factory=list)

    def seed_files(self) -> list:
        if not self.seeds:
            files = sorted({p for g in self.seed_globs for p in ROOT.glob(g)})
            self.seeds = [p.read_bytes() for p in files if p.stat().st_size < 200_000]
        return self.seeds


BLIF_TOKENS = (b".model", b".inputs", b".outputs", b".names", b".latch", b".subckt", b".search", b".end",
               b".exdc", b".clock", b".gate", b".mlatch", b".start_kiss", b".end_kiss", b".default_input_arrival",
               b".wire_load_slope", b"re", b"fe", b"ah", b"al", b"as", b"NIL", b"\\\n", b"#", b"=", b"-", b"0",
               b"1", b"2", b"3", b"\x00", b"\r", b"\t", b"[0]", b"/", b"..", b"9" * 40, b"x" * 300, "é".encode())
XML_TOKENS = (b"<", b">", b"/>", b"&amp;", b"&lt;", b"<!DOCTYPE x>", b"<!ENTITY a 'b'>", b"<!-- -->", b"=",
              b'"', b"1e309", b"1e99", b"99999999999999999999", b"2147483647", b"20000000", b"0", b"-1",
              b"7 ns", b"\x00", b"\xff", b"<cell", b"<part", b"<section", b"<pole", b"<pin", b"<use", b"<support",
              b'count="100000000"', b'pins="20000000"', b'function="Y = ~A"', "µ".encode(), b"9" * 5000)

FORMATS = {
    "blif": Format("blif", ".blif", ("tests/read/blif/valid/*.blif", "tests/read/blif/invalid/*.blif",
                                     "tests/data/*.blif", "tests/data/textbook/*.blif", "tests/data/published/*.blif",
                                     "examples/*/*.blif"), BLIF_TOKENS),
    "catalog": Format("catalog", ".xml", ("libraries/*.xml", "tests/catalog/catalogs/invalid/*.xml"), XML_TOKENS),
    "target": Format("target", ".xml", ("targets/*.xml", "tests/catalog/targets/invalid/*.xml"), XML_TOKENS),
}


# -- making inputs ---------------------------------------------------------------------------------
def _span(rng: random.Random, n: int) -> tuple:
    a = rng.randrange(n + 1)
    return a, min(n, a + rng.choice((1, 2, 4, 16, 64, 512)))


def _mutate_once(rng: random.Random, data: bytes, fmt: Format) -> bytes:
    n = len(data)
    op = rng.randrange(11)
    if op == 0 and n:                      # flip a byte
        k = rng.randrange(n)
        return data[:k] + bytes([rng.randrange(256)]) + data[k + 1:]
    if op == 1:                            # insert random bytes
        k = rng.randrange(n + 1)
        return data[:k] + bytes(rng.randrange(256) for _ in range(rng.randint(1, 8))) + data[k:]
    if op == 2 and n:                      # delete a span
        a, b = _span(rng, n)
        return data[:a] + data[b:]
    if op == 3 and n:                      # repeat a span
        a, b = _span(rng, n)
        return data[:b] + data[a:b] * rng.choice((2, 3, 10, 100)) + data[b:]
    if op == 4:                            # a word of the format
        k = rng.randrange(n + 1)
        return data[:k] + rng.choice(fmt.tokens) + rng.choice((b" ", b"\n", b"")) + data[k:]
    if op == 5:                            # a number made extreme
        digits = [i for i, ch in enumerate(data) if 48 <= ch <= 57]
        if digits:
            k = rng.choice(digits)
            return data[:k] + rng.choice((b"0", b"9" * rng.choice((9, 19, 40, 400)), b"1e309", b"-1")) + data[k + 1:]
    if op == 6:                            # lines shuffled, dropped or repeated
        lines = data.split(b"\n")
        if len(lines) > 2:
            i, j = rng.randrange(len(lines)), rng.randrange(len(lines))
            choice = rng.randrange(3)
            if choice == 0:
                lines[i], lines[j] = lines[j], lines[i]
            elif choice == 1:
                del lines[i]
            else:
                lines[i:i] = [lines[j]] * rng.choice((2, 50, 1000))
            return b"\n".join(lines)
    if op == 7:                            # spliced with another seed
        other = rng.choice(fmt.seed_files())
        a = rng.randrange(n + 1)
        b = rng.randrange(len(other) + 1)
        return data[:a] + other[b:]
    if op == 8 and n:                      # truncated
        return data[:rng.randrange(n)]
    if op == 9:                            # line ends changed
        return data.replace(b"\n", rng.choice((b"\r\n", b"\r", b"\n\n", b" \\\n")))
    return data


def hostile_blif(rng: random.Random) -> bytes:
    """One of the hostile constructions for BLIF (each small as a file, huge if expanded naively)."""
    kind = rng.randrange(9)
    if kind == 0:   # a hierarchy that doubles at each level
        depth = rng.randint(18, 200)
        parts = [".model m0\n.inputs a\n.outputs y\n.subckt m1 a=a y=t\n.subckt m1 a=t y=y\n.end\n"]
        parts += [f".model m{i}\n.inputs a\n.outputs y\n.subckt m{i + 1} a=a y=t\n.subckt m{i + 1} a=t y=y\n.end\n"
                  for i in range(1, depth)]
        parts.append(f".model m{depth}\n.inputs a\n.outputs y\n.names a y\n0 1\n.end\n")
        return "".join(parts).encode()
    if kind == 1:   # deep nesting
        depth = rng.choice((6000, 12000))
        parts = [f".model m{i}\n.inputs i\n.outputs o\n.subckt m{i + 1} i=i o=o\n.end\n" for i in range(depth)]
        parts.append(f".model m{depth}\n.inputs i\n.outputs o\n.names i o\n0 1\n.end\n")
        return "".join(parts).encode()
    if kind == 2:   # a wide cover
        n = rng.choice((17, 64, 3000))
        rows = "".join("".join(rng.choice("01-") for _ in range(n)) + " 1\n" for _ in range(rng.choice((1, 200))))
        ins = " ".join(f"x{j}" for j in range(n))
        return f".model w\n.inputs {ins}\n.outputs y\n.names {ins} y\n{rows}.end\n".encode()
    if kind == 3:   # many outputs
        k = rng.choice((30000, 60000))
        outs = " ".join(f"o{j}" for j in range(k))
        body = "".join(f".names a o{j}\n1 1\n" for j in range(k))
        return f".model many\n.inputs a\n.outputs {outs}\n{body}.end\n".encode()
    if kind == 4:   # .search loops and names no file system takes
        return rng.choice((b".search self.blif\n.model m\n.inputs a\n.outputs y\n.names a y\n1 1\n.end\n",
                           b".search a\x00b\n.model m\n.end\n", b".search " + b"x" * 5000 + b"\n.model m\n.end\n",
                           b".search /dev/zero\n.model m\n.end\n"))
    if kind == 5:   # binary junk
        return bytes(rng.randrange(256) for _ in range(rng.choice((1000, 200_000))))
    if kind == 6:   # errors by the ten thousand
        return b".model e\n" + b"1x 1\n" * rng.choice((10_000, 100_000)) + b".end\n"
    if kind == 7:   # a long loop through many nodes
        k = rng.choice((5000, 30000))
        body = "".join(f".names n{j} n{(j + 1) % k}\n0 1\n" for j in range(k))
        return f".model loop\n.inputs a\n.outputs n0\n{body}.end\n".encode()
    # one token of a hundred thousand characters, continued over lines
    return b".model t\n.inputs " + b"a\\\n" * rng.choice((1000, 100_000)) + b"b\n.outputs y\n.names ab y\n1 1\n.end\n"


def hostile_xml(rng: random.Random, fmt: Format) -> bytes:
    """Hostile constructions for catalogs and targets, from a shipped file."""
    seed = fmt.seed_files()[0]
    kind = rng.randrange(6)
    if kind == 0:
        return re.sub(rb'pins="\d+"', b'pins="' + rng.choice((b"20000000", b"2147483647", b"9" * 5000)) + b'"',
                      seed, count=1)
    if kind == 1:
        return re.sub(rb'count="\d+"', b'count="' + rng.choice((b"100000000", b"9" * 5000)) + b'"', seed, count=1)
    if kind == 2:
        ins = b"".join(b'<input name="I%d"/>' % j for j in range(rng.choice((17, 40))))
        return seed.replace(b"<cell ", b'<cell name="wide" function="Y = I0"> ' + ins + b'<output name="Y"/></cell>'
                            b"<cell ", 1)
    if kind == 3:
        return re.sub(rb'value="[^"]*"', b'value="' + rng.choice((b"1e309", b"1e99", b"1e-400")) + b'"', seed,
                      count=rng.choice((1, 5)))
    if kind == 4:   # deep nesting of elements
        depth = rng.choice((300, 5000))
        return b"<catalog>" + b"<a>" * depth + b"</a>" * depth + b"</catalog>"
    return seed * rng.choice((2, 50))


def make_input(fmt_name: str, seed: int, case: int) -> bytes:
    """The input number ``case`` of format ``fmt_name`` in the run started with ``seed``."""
    if fmt_name == "selftest":
        return SELFTEST_INPUTS[case % len(SELFTEST_INPUTS)]
    fmt = FORMATS[fmt_name]
    rng = random.Random(f"{fmt_name}:{seed}:{case}")
    if rng.random() < 0.04:
        return hostile_blif(rng) if fmt_name == "blif" else hostile_xml(rng, fmt)
    data = rng.choice(fmt.seed_files())
    for _ in range(rng.choice((1, 1, 2, 3, 5, 8))):
        data = _mutate_once(rng, data, fmt)
    return data


# -- running one input -----------------------------------------------------------------------------
class Finding(Exception):
    """A defect found by a check (not by an exception of netfit's own)."""


class _OverTime(BaseException):
    """Raised in the worker when an input has used its processor time."""


#: faults of a file as a whole: their diagnostics need no line
_WHOLE_FILE = ("reading stopped", "the file is", "cannot read", "no such file", "is a folder", "no model named",
               "does not exist", "would be file")


def _positions_ok(exc) -> None:
    """Every diagnostic of a refusal names the file, and a line unless the fault is the whole file's."""
    for d in getattr(exc, "diagnostics", ()):
        if d.file is None and not any(w in d.message for w in _WHOLE_FILE):
            raise Finding(f"an error without its file: {d}")
        if d.line is None and not any(w in d.message for w in _WHOLE_FILE):
            raise Finding(f"an error without a line: {d}")


def _round_trip(n) -> None:
    """A small design written as BLIF reads back with the same ports and is proved equal; the Verilog
    and JSON writers take it or refuse it cleanly."""
    from mapper.errors import InputError, UsageError
    from mapper.read.blif import read_text
    from mapper.verify import check_equivalence
    from mapper.write import blif as wblif
    from mapper.write import json as wjson
    from mapper.write import verilog as wverilog

    names = wblif.blif_names(n)
    back = read_text(wblif.netlist_text(n), name="roundtrip.blif")
    back.check()
    if back.inputs != [names[i] for i in n.inputs] or back.outputs != [names[o] for o in n.outputs]:
        raise Finding(f"BLIF round trip changed the ports: {n.inputs}/{n.outputs} -> {back.inputs}/{back.outputs}")
    if all(names[x] == x for x in n.nodes) and not check_equivalence(n, back).equivalent:
        raise Finding("BLIF round trip changed the logic")
    try:
        wverilog.check_design(n)
        wverilog.netlist_text(n)
    except (InputError, UsageError):
        pass
    wjson.dumps(wjson.netlist_dict(n))


def _run_blif(path: Path, data: bytes) -> str:
    from mapper.errors import InputError, UsageError
    from mapper.read import read_design

    path.write_bytes(data)
    try:
        n = read_design(path, quiet=True)
    except (InputError, UsageError) as exc:
        _positions_ok(exc)
        return "refused"
    n.depth()
    n.kind_counts()
    if len(n.nodes) <= ROUND_TRIP_NODES:
        _round_trip(n)
    return "read"


def _run_catalog(path: Path, data: bytes) -> str:
    from mapper.catalog import CatalogError
    from mapper.catalog.catalogs import read_catalog

    try:
        read_catalog(str(path), data)
    except CatalogError as exc:
        _positions_ok(exc)
        return "refused"
    return "read"


def _run_target(path: Path, data: bytes) -> str:
    from mapper.catalog import TargetError, describe_target
    from mapper.catalog.targets import _load_target
    from mapper.errors import UsageError

    try:
        t = _load_target(data, str(path), None)
    except (TargetError, UsageError) as exc:
        _positions_ok(exc)
        return "refused"
    describe_target(t)
    return "read"


#: the harness's own check: inputs that plant each kind of defect (tests/fuzz/test_fuzz.py)
SELFTEST_INPUTS = (b"fine", b"crash", b"spin", b"allocate", b"no-line", b"exit")


def _run_selftest(path: Path, data: bytes) -> str:
    from mapper.errors import Diagnostic, InputError

    if data == b"crash":
        raise ValueError("planted")
    if data == b"spin":
        while True:
            pass
    if data == b"allocate":
        _ = bytearray(4 * MEMORY_BYTES)
    if data == b"no-line":
        _positions_ok(InputError(Diagnostic("planted", str(path))))
    if data == b"exit":
        os._exit(3)
    return "read"


_RUNNERS = {"blif": _run_blif, "catalog": _run_catalog, "target": _run_target, "selftest": _run_selftest}


def _on_prof(signum, frame):
    raise _OverTime


def run_one(fmt_name: str, data: bytes, folder: Path, cpu_seconds: float = CPU_SECONDS) -> tuple:
    """``(outcome, detail)`` of one input: outcome ``read``, ``refused`` or a defect kind."""
    path = folder / f"input{FORMATS[fmt_name].suffix if fmt_name in FORMATS else ''}"
    old = signal.signal(signal.SIGPROF, _on_prof)
    signal.setitimer(signal.ITIMER_PROF, cpu_seconds)
    try:
        return _RUNNERS[fmt_name](path, data), ""
    except _OverTime:
        return "time", f"more than {cpu_seconds:g} s of processor time"
    except MemoryError:
        return "memory", "MemoryError (address space limit)"
    except Finding as exc:
        return "check", str(exc)
    except RecursionError as exc:
        return "crash", f"RecursionError: {exc}"
    except Exception as exc:  # noqa: BLE001 -- every other exception is the defect being looked for
        tb = traceback.extract_tb(exc.__traceback__)
        where = next((f"{Path(f.filename).name}:{f.lineno} in {f.name}" for f in reversed(tb)
                      if "/mapper/" in f.filename), "?")
        return "crash", f"{type(exc).__name__}: {str(exc)[:200]} ({where})"
    finally:
        signal.setitimer(signal.ITIMER_PROF, 0)
        signal.signal(signal.SIGPROF, old)


# -- workers and the run ---------------------------------------------------------------------------
def _worker(conn, memory_bytes: int, cpu_seconds: float) -> None:
    """A worker process: limits its address space, then runs ``(fmt, seed, case)`` requests."""
    import logging

    logging.disable(logging.CRITICAL)
    resource.setrlimit(resource.RLIMIT_AS, (memory_bytes, memory_bytes))
    folder = Path(tempfile.mkdtemp(prefix="netfit-fuzz-"))
    try:
        while True:
            job = conn.recv()
            if job is None:
                return
            fmt_name, seed, case = job
            outcome, detail = run_one(fmt_name, make_input(fmt_name, seed, case), folder, cpu_seconds)
            conn.send((case, outcome, detail))
            if outcome == "memory":
                return  # after a MemoryError the worker is not trusted further
    finally:
        for p in folder.iterdir():
            p.unlink()
        folder.rmdir()


@dataclass
class Defect:
    fmt: str
    case: int
    kind: str
    detail: str
    data: bytes


@dataclass
class Totals:
    fmt: str
    tried: int = 0
    read: int = 0
    refused: int = 0
    defects: list = field(default_factory=list)
    seconds: float = 0.0


class _Worker:
    def __init__(self, ctx, memory_bytes: int, cpu_seconds: float):
        self.conn, child = ctx.Pipe()
        self.proc = ctx.Process(target=_worker, args=(child, memory_bytes, cpu_seconds), daemon=True)
        self.proc.start()
        child.close()
        self.job = None
        self.since = 0.0

    def stop(self) -> None:
        if self.proc.is_alive():
            self.proc.kill()
        self.proc.join()
        self.conn.close()


def run(fmt_name: str, count: int, seed: int = 1, jobs: int = 1, memory_bytes: int = MEMORY_BYTES,
        cpu_seconds: float = CPU_SECONDS, wall_factor: float = 20.0) -> Totals:
    """Try ``count`` inputs of one format in ``jobs`` worker processes; returns the totals and defects.

    A worker that does not answer within ``wall_factor`` times the processor
    limit (a loop that no signal reaches) is killed, and so is one that dies:
    the input it was working on counts as a defect, and a new worker goes on.
    """
    ctx = multiprocessing.get_context("spawn")
    totals = Totals(fmt_name)
    start = time.perf_counter()
    workers = [_Worker(ctx, memory_bytes, cpu_seconds) for _ in range(max(1, jobs))]
    pending = list(range(count - 1, -1, -1))
    try:
        while pending or any(w.job is not None for w in workers):
            for w in workers:
                if w.job is None and pending:
                    w.job = pending.pop()
                    w.since = time.monotonic()
                    w.conn.send((fmt_name, seed, w.job))
            ready = multiprocessing.connection.wait([w.conn for w in workers if w.job is not None], timeout=1.0)
            for i, w in enumerate(workers):
                if w.job is None:
                    continue
                if w.conn in ready:
                    try:
                        case, outcome, detail = w.conn.recv()
                    except (EOFError, OSError):
                        case, outcome, detail = w.job, "died", f"the worker ended (exit {w.proc.exitcode})"
                elif time.monotonic() - w.since > cpu_seconds * wall_factor or not w.proc.is_alive():
                    case, outcome = w.job, "hang" if w.proc.is_alive() else "died"
                    detail = f"no answer within {cpu_seconds * wall_factor:g} s" if outcome == "hang" else \
                        f"the worker ended (exit {w.proc.exitcode})"
                else:
                    continue
                _count(totals, fmt_name, seed, case, outcome, detail)
                w.job = None
                if outcome in ("memory", "hang", "died"):
                    w.stop()
                    workers[i] = _Worker(ctx, memory_bytes, cpu_seconds)
    finally:
        for w in workers:
            with contextlib.suppress(OSError, ValueError):
                w.conn.send(None)
            w.stop()
    totals.seconds = time.perf_counter() - start
    return totals


def _count(totals: Totals, fmt_name: str, seed: int, case: int, outcome: str, detail: str) -> None:
    totals.tried += 1
    if outcome == "read":
        totals.read += 1
    elif outcome == "refused":
        totals.refused += 1
    else:
        totals.defects.append(Defect(fmt_name, case, outcome, detail, make_input(fmt_name, seed, case)))
