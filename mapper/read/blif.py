"""Reader for BLIF netlists.

Follows "Berkeley Logic Interchange Format (BLIF)", University of California,
Berkeley, July 28, 1992 -- the format description distributed with the
Berkeley logic tools.  What is read, and how:

* ``.model``, ``.inputs``, ``.outputs``, ``.clock`` (clocks become primary
  inputs too, and are listed in ``Netlist.clocks``), ``.end``.  Several
  ``.inputs``/``.outputs``/``.clock`` lines are concatenated.  Commands before
  the first ``.model`` form a model named after the file; a missing ``.end``
  at the end of the file is accepted.
* ``.names`` with a single-output cover: rows of ``0``/``1``/``-`` input
  characters and an output value.  Rows with output 1 list the ON-set, rows
  with output 0 the OFF-set; one cover must not mix the two.  ``.names x``
  with no rows is the constant 0, a single row ``1`` the constant 1 (a row
  ``0`` is also the constant 0).  Covers wider than 16 inputs stay covers.
* ``.latch input output [type control] [init]`` with the types ``re fe ah
  al as``.  Without a type, or with the control ``NIL``, the latch is
  clocked by the design's *global clock* (as the published ISCAS-89 and
  MCNC sequential files write every latch: ``.latch G10 G5 0``): it is read
  as kind ``re`` (or the type given) controlled by the one net the top model
  names with ``.clock``, or, when it names none or several, by a clock
  input the reader adds, ``clock`` (``clock_1`` ... when that name is
  taken).  A note (:attr:`Netlist.notes`) says which.  An ``as`` latch has
  no control.  Initial values 0, 1, 2 (don't care), 3 (unknown, the
  default).
* ``.subckt model formal=actual ...``: ports are bound by name; every input
  (and clock) of the instantiated model must be bound, outputs may be left
  open.  The hierarchy is flattened: nets inside an instance are named by
  the instance path joined with ``/``; an instance is named
  ``<model>_<k>`` where ``k`` counts the instances of that model in the same
  parent (from 0), for example ``fa_1/xor_gate_0/out``.  Nets bound to ports
  keep the parent's name.
* ``.search file``: the models of that file become available.  The path is
  relative to the file holding the ``.search``; a path leading outside the
  design's folder (the folder of the file given to :func:`read`) is refused
  unless ``allow_outside=True``.  Each file is read once, which also breaks
  cycles of ``.search`` (a file that searches itself, or two that search
  each other, are read once each).  A name without suffix that does not
  exist is tried with ``.blif`` added.
* ``.exdc``: the external don't-care network of the **top** model is read
  into ``Netlist.exdc`` (a :class:`~mapper.netlist.Netlist` over the same
  inputs whose outputs are the top outputs it defines; where it is 1 the
  output value does not matter).  It may hold only ``.names``.  The
  don't-care network of any other model is skipped with a warning (it
  cannot be carried through flattening).  ``netfit verify`` uses the top
  model's network as don't-cares (differences where it is 1 do not count),
  and so does the proof of a build; a gate build may use them
  (:mod:`mapper.logic.restructure.collapse`), which a warning says.
* Limits (:mod:`mapper.limits`), each checked before the work it bounds:
  the size of a file, the number of files ``.search`` reads, the nodes of
  the flattened design (the expansion of the hierarchy is counted, with
  exact integers, before anything is flattened), the depth of the
  hierarchy, and the number of errors reported (reading stops after the
  limit and says so).  Flattening keeps one name segment per level, so
  its memory grows with the depth, not with its square.
* ``\\`` at the end of a line joins the next line to it (plain
  concatenation, as the description says; positions still point at the
  physical line of each token); ``#`` starts a comment, anywhere (also
  after a ``\\``, and a line holding only a comment inside a continued
  line is passed over).  Lines end with LF, CR LF or a lone CR.
* Dot-commands that only carry timing or load hints (``.area``, ``.delay``,
  ``.wire_load_slope``, ``.wire``, ``.input_arrival``, ``.output_required``,
  ``.input_drive``, ``.output_load``, ``.max_input_load``, their
  ``.default_*`` forms, ``.cycle``, ``.clock_event``) are skipped with one
  warning per command name.
* Refused with an error: ``.gate`` and ``.mlatch`` (they need the cell
  library the file was mapped with, which BLIF does not carry; the message
  names the cell) and state tables (``.start_kiss`` ... ``.end_kiss``,
  ``.latch_order``, ``.code``).

Every problem is reported as ``file:line:col: error: ...`` (1-based, the
column of the offending token); all errors found are raised together as one
:class:`BlifError`.  Undriven nets, two drivers and unbound ports are found
model by model, so an error inside a model used many times is reported once.
The reader does not call :meth:`Netlist.check`; :func:`mapper.read.read_design`
does.

Examples
--------
>>> import tempfile, pathlib
>>> d = pathlib.Path(tempfile.mkdtemp())
>>> _ = (d / "and.blif").write_text(".model t\\n.inputs a b\\n.outputs y\\n.names a b y\\n11 1\\n.end\\n")
>>> n = read(d / "and.blif")
>>> n.inputs, n.outputs, n.nodes["y"].func.table()
(['a', 'b'], ['y'], 8)
"""
from __future__ import annotations

import bisect
import logging
import re
from pathlib import Path

from .. import limits
from ..errors import Diagnostic, InputError, NetlistError
from ..logic.function import Function
from ..netlist import STORAGE_KINDS, Netlist, Storage
from ..order import topological_order

__all__ = ["BlifError", "read", "read_text", "TIMING_COMMANDS"]

log = logging.getLogger(__name__)

#: dot-commands that carry only timing, load or area hints (skipped, one warning each)
TIMING_COMMANDS = frozenset({
    ".area", ".delay", ".wire_load_slope", ".wire",
    ".input_arrival", ".default_input_arrival",
    ".output_required", ".default_output_required",
    ".input_drive", ".default_input_drive",
    ".output_load", ".default_output_load",
    ".max_input_load", ".default_max_input_load",
    ".cycle", ".clock_event",
})

_REFUSED = {
    ".gate": "'.gate' instantiates a cell of a gate library, which BLIF itself does not define; "
             "give the logic as .names covers instead",
    ".mlatch": "'.mlatch' instantiates a storage cell of a gate library, which BLIF itself does not "
               "define; give it as a .latch instead",
    ".start_kiss": "state tables (.start_kiss ... .end_kiss) are not supported; encode the states "
                   "into .latch and .names first",
    ".latch_order": "'.latch_order' belongs to a state-table description, which is not supported",
    ".code": "'.code' belongs to a state-table description, which is not supported",
}

_LATCH_INITS = {"0": 0, "1": 1, "2": 2, "3": 3}


def _refusal(cmd: str, toks: list) -> str:
    """The message for a refused command; for ``.gate``/``.mlatch`` it names the cell and its library."""
    msg = _REFUSED[cmd]
    if cmd in (".gate", ".mlatch") and len(toks) > 1:
        msg += (f" (cell '{toks[1]}' comes from the gate library the file was mapped with; that library "
                "is not part of the BLIF file and netfit reads none)")
    return msg

_TOKEN = re.compile(r"\S+")
_LINE_END = re.compile(r"\r\n|\r|\n")
#: the control of a latch clocked by the design's global clock until flattening names it (a BLIF
#: token never holds a space, so no net of a file can be called this)
GLOBAL_CLOCK = " global clock"
#: the name of the clock input added for the global clock (``clock_1`` ... when taken)
GLOBAL_CLOCK_NAME = "clock"


class BlifError(InputError):
    """A BLIF file (or a file it searches) is malformed; carries every diagnostic found."""


class _Stop(Exception):
    """Reading stops: the error limit is reached (the errors so far are reported)."""


# -- lines and positions -----------------------------------------------------
def _logical_lines(text: str):
    """Yield ``(tokens, lineno, src)`` for every non-empty logical line.

    Comments are removed and ``\\``-continued lines joined.  ``src`` is the
    comment-free text of a single physical line, or a list of
    ``(lineno, text)`` parts for a continued line; :func:`_positions`
    turns it back into token positions.
    """
    phys = _LINE_END.split(text)
    n = len(phys)
    i = 0
    while i < n:
        s = phys[i]
        i += 1
        h = s.find("#")
        if h >= 0:
            s = s[:h]
        s = s.rstrip()
        if not s:
            continue
        if s[-1] != "\\":
            yield s.split(), i, s
            continue
        start = i
        parts = [(i, s[:-1])]
        while i < n:
            s = phys[i]
            i += 1
            h = s.find("#")
            if h >= 0:
                s = s[:h]
                if not s.strip():
                    continue  # a comment line inside a continued line: passed over
            s = s.rstrip()
            if s.endswith("\\"):
                parts.append((i, s[:-1]))
                continue
            parts.append((i, s))
            break
        toks = "".join(p for _, p in parts).split()
        if toks:
            yield toks, start, parts


def _positions(lineno: int, src) -> list:
    """``(line, col)`` of every token of a logical line (see :func:`_logical_lines`)."""
    if isinstance(src, str):
        return [(lineno, m.start() + 1) for m in _TOKEN.finditer(src)]
    starts, lines = [], []
    full = []
    off = 0
    for ln, text in src:
        starts.append(off)
        lines.append(ln)
        full.append(text)
        off += len(text)
    out = []
    for m in _TOKEN.finditer("".join(full)):
        k = bisect.bisect_right(starts, m.start()) - 1
        # a part may be empty, so several parts can start at one offset: take the last
        out.append((lines[k], m.start() - starts[k] + 1))
    return out


# -- parsed models -----------------------------------------------------------
class _Model:
    """One ``.model`` as parsed, before flattening."""

    __slots__ = ("name", "where", "inputs", "outputs", "clocks", "items", "exdc", "exdc_where",
                 "file_index", "broken", "blind")

    def __init__(self, name, where, file_index):
        self.name = name
        self.where = where
        self.file_index = file_index
        self.inputs = []   # (name, where)
        self.outputs = []  # (name, where)
        self.clocks = []   # (name, where)
        self.items = []
        self.exdc: list | None = None   # list of items after .exdc
        self.exdc_where = None
        # nets whose defining line was malformed: not reported again as undriven
        self.broken = set()
        # a construct we cannot read (.gate, an unknown command ...) may define any net
        self.blind = False


# items (tuples, for speed):
#   ("n", out, fanins, func, where, lineno, src)
#   ("l", out, d, kind, control, init, where, lineno, src)
#   ("s", model, bindings[(formal, actual, where)], where_of_model_token, lineno, src)


class _Cover:
    __slots__ = ("out", "fanins", "where", "lineno", "src", "cubes", "phase", "ok", "dest", "model")

    def __init__(self, out, fanins, where, lineno, src, dest, model):
        self.out = out
        self.fanins = fanins
        self.where = where
        self.lineno = lineno
        self.src = src
        self.cubes = []
        self.phase = None
        self.ok = True
        self.dest = dest
        self.model = model


_SKIP = _Cover("", (), None, 0, "", None, None)  # rows after a broken header are skipped silently


class _Reader:
    def __init__(self, main: Path, allow_outside: bool):
        self.main = main
        self.root = _folder_of(main)
        self.allow_outside = allow_outside
        self.errors: list = []
        self.warnings: list = []
        self.timing: dict = {}      # command -> [where, count]
        self.models: dict = {}      # name -> _Model
        self.first_model: _Model | None = None
        self.files: set = set()    # resolved paths read
        self.file_rank: dict = {}   # file name as shown in diagnostics -> order of reading
        self.queue: list = []       # (path, where of the .search token)
        self.search_failed = False
        self.funcs: dict = {}       # (n, cubes, phase) -> Function (shared between nodes)
        self.max_errors = limits.value("errors")
        self.max_nodes = limits.value("nodes")
        self.items = 0              # .names, .latch and .subckt lines read, in every file
        self.stopped: Diagnostic | None = None   # why reading stopped early, if it did

    # -- diagnostics --
    def err(self, message, where):
        """Record an error; stops reading (:class:`_Stop`) when the error limit is reached."""
        self.errors.append(Diagnostic(message, *where))
        if len(self.errors) >= self.max_errors and self.stopped is None:
            self.stopped = Diagnostic(f"reading stopped after {len(self.errors)} errors: "
                                      f"{limits.exceeded('errors')}", str(self.main))
            raise _Stop

    def warn(self, message, where):
        file, line, col = where
        self.warnings.append(Diagnostic(message, file, line, col, severity="warning"))

    # -- files --
    def read_all(self) -> None:
        self.queue.append((self.main, None))
        max_files, max_bytes = limits.value("search_files"), limits.value("file_bytes")
        while self.queue:
            path, where = self.queue.pop(0)
            try:
                key = path.resolve()
            except (OSError, ValueError):
                key = path
            if key in self.files:
                log.debug("%s: already read", path)
                continue
            at = where or (str(path), None, None)
            if len(self.files) >= max_files:
                self.search_failed = True
                self.err(f"'{path}' would be file {len(self.files) + 1} of this design: "
                         f"{limits.exceeded('search_files')}", at)
                continue
            try:
                size = path.stat().st_size
                if size > max_bytes:
                    self.search_failed = True
                    self.err(f"'{path}' is {size} bytes: {limits.exceeded('file_bytes', size)}", at)
                    continue
                data = path.read_bytes()
            except OSError as exc:
                reason = exc.strerror or str(exc)
                self.search_failed = True
                self.err(f"cannot read '{path}': {reason}", at)
                continue
            self.files.add(key)
            self.file_rank[str(path)] = len(self.file_rank)
            text = data.decode("utf-8-sig", errors="replace")
            del data
            self.parse(path, text, self.file_rank[str(path)])

    def search(self, including: Path, name: str, where) -> None:
        bad = next((ch for ch in name if ord(ch) < 32 or ord(ch) == 127), None)
        if bad is not None:
            self.search_failed = True
            self.err(f"'.search': the file name holds the control character {bad!r}", where)
            return
        shown = name if len(name) <= 60 else name[:60] + "…"
        try:
            p = Path(name)
            if not p.is_absolute():
                p = including.parent / p
            if not p.exists() and not p.suffix and p.with_suffix(".blif").exists():
                p = p.with_suffix(".blif")
            inside = self.allow_outside or p.resolve().is_relative_to(self.root)
            found = p.is_file()
        except OSError as exc:
            self.search_failed = True
            self.err(f"'.search {shown}': {exc.strerror or exc}", where)
            return
        if not inside:
            self.search_failed = True
            self.err(f"'.search {shown}' leads outside the design's folder {self.root} "
                     "(allow it with --allow-outside)", where)
            return
        if not found:
            self.search_failed = True
            self.err(f"'.search {shown}': no such file ({p})", where)
            return
        self.queue.append((p, where))

    # -- one file --
    def parse(self, path: Path, text: str, file_index: int) -> None:
        fname = str(path)
        err = self.err
        model = None
        dest = None          # list receiving items (model.items or model.exdc)
        cover: _Cover | None = None
        ended_any = False
        in_kiss = False
        funcs = self.funcs

        def finish(c):
            if c is _SKIP:
                return
            if not c.ok:
                c.model.broken.add(c.out)
                return
            n = len(c.fanins)
            # a row given twice adds nothing; dropping it first bounds the table work by the distinct rows
            key = (n, tuple(dict.fromkeys(c.cubes)), 0 if c.phase == "0" else 1)
            f = funcs.get(key)
            if f is None:
                f = Function.from_cover(n, key[1], key[2])
                funcs[key] = f
            c.dest.append(("n", c.out, c.fanins, f, c.where, c.lineno, c.src))

        for toks, ln, src in _logical_lines(text):
            t0 = toks[0]
            if in_kiss:
                if t0 == ".end_kiss":
                    in_kiss = False
                continue
            if t0[0] != ".":
                # a cover row
                if cover is None:
                    err("this line is neither a dot-command nor a row of a .names cover",
                        (fname, *_positions(ln, src)[0]))
                    continue
                if cover is _SKIP:
                    continue
                n = len(cover.fanins)
                if n:
                    if len(toks) != 2:
                        pos = _positions(ln, src)
                        k = 2 if len(toks) > 2 else 0
                        err(f"a cover row needs {n} input character(s) and an output value; "
                            f"found {len(toks)} field(s)", (fname, *pos[k]))
                        cover.ok = False
                        continue
                    cube, val = toks
                    if len(cube) != n:
                        err(f"cube '{cube}' has {len(cube)} character(s) but .names lists {n} input(s)",
                            (fname, *_positions(ln, src)[0]))
                        cover.ok = False
                        continue
                    if cube.strip("01-"):
                        bad = next(i for i, ch in enumerate(cube) if ch not in "01-")
                        line, col = _positions(ln, src)[0]
                        err(f"bad character '{cube[bad]}' in cube '{cube}' (allowed: 0 1 -)",
                            (fname, line, col + bad))
                        cover.ok = False
                        continue
                else:
                    if len(toks) != 1:
                        err(f"'.names {cover.out}' has no inputs, so its rows hold only an output "
                            f"value (1 or 0); found {len(toks)} fields", (fname, *_positions(ln, src)[1]))
                        cover.ok = False
                        continue
                    cube, val = "", toks[0]
                if val != "1" and val != "0":
                    err(f"bad output value '{val}' in cover row (allowed: 1 for the ON-set, 0 for the OFF-set)",
                        (fname, *_positions(ln, src)[-1]))
                    cover.ok = False
                    continue
                if cover.phase is None:
                    cover.phase = val
                elif val != cover.phase:
                    err(f"cover of '{cover.out}' mixes ON-set rows (output 1) and OFF-set rows (output 0)",
                        (fname, *_positions(ln, src)[-1]))
                    cover.ok = False
                    continue
                cover.cubes.append(cube)
                continue

            # a dot-command: close the open cover first
            if cover is not None:
                finish(cover)
                cover = None
            cmd = t0

            if cmd in TIMING_COMMANDS:
                seen = self.timing.get(cmd)
                if seen is None:
                    self.timing[cmd] = [(fname, ln, _positions(ln, src)[0][1]), 1]
                else:
                    seen[1] += 1
                continue
            if cmd == ".model":
                pos = _positions(ln, src)
                if len(toks) < 2:
                    err("'.model' needs a model name", (fname, *pos[0]))
                elif len(toks) > 2:
                    err(f"unexpected '{toks[2]}' after the model name", (fname, *pos[2]))
                name = toks[1] if len(toks) > 1 else f"(unnamed model at line {ln})"
                model = self._open_model(name, (fname, *pos[min(1, len(pos) - 1)]), file_index,
                                         named=len(toks) > 1)
                dest = model.items
                continue
            if cmd == ".search":
                pos = _positions(ln, src)
                if len(toks) != 2:
                    err("'.search' needs exactly one file name", (fname, *pos[min(2, len(pos) - 1)]))
                else:
                    self.search(path, toks[1], (fname, *pos[1]))
                continue
            if cmd in _REFUSED:
                err(_refusal(cmd, toks), (fname, *_positions(ln, src)[0]))
                if model is not None:
                    model.blind = True
                if cmd == ".start_kiss":
                    in_kiss = True
                else:
                    cover = _SKIP
                continue
            if cmd == ".end":
                if len(toks) > 1:
                    err(f"unexpected '{toks[1]}' after '.end'", (fname, *_positions(ln, src)[1]))
                if model is None:
                    err("'.end' outside a model", (fname, *_positions(ln, src)[0]))
                model = None
                dest = None
                ended_any = True
                continue

            if cmd not in (".names", ".latch", ".subckt", ".inputs", ".outputs", ".clock", ".exdc"):
                err(f"unknown command '{cmd}'", (fname, *_positions(ln, src)[0]))
                if model is not None:
                    model.blind = True
                cover = _SKIP
                continue
            if model is None:
                if ended_any:
                    err(f"'{cmd}' outside a model (after '.end'; start one with '.model')",
                        (fname, *_positions(ln, src)[0]))
                    cover = _SKIP
                    continue
                model = self._open_model(path.stem, (fname, ln, 1), file_index, named=True)
                dest = model.items
            in_exdc = dest is model.exdc and model.exdc is not None

            if cmd in (".names", ".latch", ".subckt"):
                self.count_item(fname, ln, src)
            if cmd == ".names":
                if len(toks) < 2:
                    err("'.names' needs at least an output net", (fname, *_positions(ln, src)[0]))
                    cover = _SKIP
                    continue
                if isinstance(src, str):
                    col = len(src) - len(toks[-1]) + 1
                    where = (fname, ln, col)
                else:
                    where = (fname, *_positions(ln, src)[-1])
                cover = _Cover(toks[-1], tuple(toks[1:-1]), where, ln, src, dest, model)
                continue
            if cmd == ".latch":
                if in_exdc:
                    err("'.latch' is not allowed in an .exdc network (it is combinational)",
                        (fname, *_positions(ln, src)[0]))
                    continue
                self._latch(toks, ln, src, fname, dest, model)
                continue
            if cmd == ".subckt":
                if in_exdc:
                    err("'.subckt' is not allowed in an .exdc network", (fname, *_positions(ln, src)[0]))
                    continue
                self._subckt(toks, ln, src, fname, dest, model)
                continue
            if cmd in (".inputs", ".outputs", ".clock"):
                if in_exdc:
                    err(f"'{cmd}' is not allowed after '.exdc' (the don't-care network shares the "
                        "model's ports)", (fname, *_positions(ln, src)[0]))
                    continue
                lst = {".inputs": model.inputs, ".outputs": model.outputs, ".clock": model.clocks}[cmd]
                pos = _positions(ln, src)
                for tok, p in zip(toks[1:], pos[1:]):
                    lst.append((tok, (fname, *p)))
                continue
            if cmd == ".exdc":
                pos = _positions(ln, src)
                if len(toks) > 1:
                    err(f"unexpected '{toks[1]}' after '.exdc'", (fname, *pos[1]))
                if model.exdc is not None:
                    err("a second '.exdc' in one model", (fname, *pos[0]))
                    continue
                model.exdc = []
                model.exdc_where = (fname, *pos[0])
                dest = model.exdc
                continue

        if cover is not None:
            finish(cover)
        if self.first_model is None:
            self.err("the file holds no model (no '.model' and no commands)", (fname, 1, 1))

    def count_item(self, fname: str, ln: int, src) -> None:
        """Count one node line; stop reading when the files hold more than the node limit."""
        self.items += 1
        if self.items > self.max_nodes:
            where = (fname, *_positions(ln, src)[0])
            self.errors.append(Diagnostic(f"too many nodes in the files of this design: "
                                          f"{limits.exceeded('nodes', self.items)}", *where))
            self.stopped = Diagnostic("reading stopped at the node limit", fname)
            raise _Stop

    def _open_model(self, name, where, file_index, named):
        m = _Model(name, where, file_index)
        first = self.models.get(name)
        if first is not None and named:
            self.err(f"model '{name}' is defined twice (first at {first.where[0]}:{first.where[1]})", where)
            return m  # parsed for its errors, never used
        self.models[name] = m
        if self.first_model is None:
            self.first_model = m
        return m

    def _latch(self, toks, ln, src, fname, dest, model):
        pos = _positions(ln, src)
        n = len(toks)
        if n < 3 or n > 6:
            err_at = pos[0] if n < 3 else pos[6]
            self.err("'.latch' takes: input output [type control] [init]", (fname, *err_at))
            if n >= 3:
                model.broken.add(toks[2])
            return
        d, q = toks[1], toks[2]
        # no type and no control: the latch is clocked by the design's global clock
        kind, init = "re", 3
        control: str | None = GLOBAL_CLOCK
        ok = True
        if n in (5, 6):
            kind = toks[3]
            if kind not in STORAGE_KINDS:
                self.err(f"bad latch type '{kind}' (allowed: {' '.join(STORAGE_KINDS)})", (fname, *pos[3]))
                ok = False
            control = toks[4]
            if n == 5 and kind in STORAGE_KINDS and control in _LATCH_INITS:
                self.err(f"latch type '{kind}' must be followed by its control net (NIL for none) "
                         "before the initial value", (fname, *pos[4]))
                ok = False
            if control == "NIL":
                control = None if kind == "as" else GLOBAL_CLOCK
            elif kind == "as":
                self.warn(f"asynchronous latch '{q}' has no control; control net '{control}' ignored",
                          (fname, *pos[4]))
                control = None
        if n == 4 and toks[3] in STORAGE_KINDS:
            self.err(f"latch type '{toks[3]}' must be followed by its control net (NIL for none)",
                     (fname, *pos[3]))
            model.broken.add(q)
            return
        if n in (4, 6):
            tok = toks[-1]
            if tok not in _LATCH_INITS:
                self.err(f"bad latch initial value '{tok}' (allowed: 0 1 2 3)", (fname, *pos[-1]))
                ok = False
            else:
                init = _LATCH_INITS[tok]
        if not ok:
            model.broken.add(q)
        else:
            dest.append(("l", q, d, kind, control, init, (fname, *pos[2]), ln, src))

    def _subckt(self, toks, ln, src, fname, dest, model):
        pos = _positions(ln, src)
        if len(toks) < 2:
            self.err("'.subckt' needs a model name", (fname, *pos[0]))
            return
        bindings = []
        ok = True
        for tok, p in zip(toks[2:], pos[2:]):
            formal, eq, actual = tok.partition("=")
            if not eq or not formal or not actual:
                self.err(f"'{tok}' is not a binding of the form formal=actual", (fname, *p))
                ok = False
                continue
            bindings.append((formal, actual, (fname, *p)))
        if not ok:
            model.broken.update(a for _, a, _ in bindings)
            model.blind = True
        else:
            dest.append(("s", toks[1], bindings, (fname, *pos[1]), ln, src))

    # -- model checks --
    def reachable(self, top: _Model) -> list:
        seen = {top.name}
        order = [top]
        k = 0
        while k < len(order):
            m = order[k]
            k += 1
            for it in m.items:
                if it[0] == "s" and it[1] not in seen and it[1] in self.models:
                    seen.add(it[1])
                    order.append(self.models[it[1]])
        return order

    def check_model(self, m: _Model) -> None:
        err = self.err
        drivers = {}
        maybe = set(m.broken)   # nets that may be driven by something we could not read
        for name, w in m.inputs:
            if name in drivers:
                err(f"input '{name}' is declared twice", w)
            else:
                drivers[name] = w
        for name, w in m.clocks:
            drivers.setdefault(name, w)
        seen_out = {}
        for name, w in m.outputs:
            if name in seen_out:
                err(f"output '{name}' is declared twice", w)
            seen_out[name] = w

        def drive(net, w):
            first = drivers.get(net)
            if first is not None:
                err(f"net '{net}' has two drivers (first driven at {first[0]}:{first[1]})", w)
            else:
                drivers[net] = w

        for it in m.items:
            kind = it[0]
            if kind == "n" or kind == "l":
                drive(it[1], it[6] if kind == "l" else it[4])
            else:
                child = self.models.get(it[1])
                if child is None:
                    known = ", ".join(sorted(self.models)[:10])
                    if not self.search_failed:
                        # when a .search failed, the model may well be in the missing file
                        err(f"unknown model '{it[1]}' (models read: {known})", it[3])
                    maybe.update(a for _, a, _ in it[2])
                    continue
                ins = {n for n, _ in child.inputs} | {n for n, _ in child.clocks}
                outs = {n for n, _ in child.outputs} - ins
                bound = set()
                for formal, actual, w in it[2]:
                    if formal in bound:
                        err(f"port '{formal}' of model '{child.name}' is bound twice", w)
                        continue
                    bound.add(formal)
                    if formal in outs:
                        drive(actual, (w[0], w[1], w[2] + len(formal) + 1))
                    elif formal not in ins:
                        err(f"model '{child.name}' has no port '{formal}'", w)
                missing = [n for n, _ in child.inputs + child.clocks if n not in bound]
                if missing:
                    shown = ", ".join(f"'{x}'" for x in dict.fromkeys(missing))
                    err(f"input(s) {shown} of model '{child.name}' not connected", it[3])

        if m.exdc is not None:
            self.check_exdc(m)
        if not m.blind:
            self.check_undriven(m, drivers, maybe)

    def check_undriven(self, m: _Model, drivers: dict, maybe: set) -> None:
        """Report nets used (or declared as outputs) that nothing in ``m`` drives."""
        err = self.err
        reported = set(maybe)

        def use(net, lineno, src, k, shift=0):
            if net not in drivers and net not in reported:
                reported.add(net)
                line, col = _positions(lineno, src)[k]
                err(f"net '{net}' is used but never driven", (m.where[0], line, col + shift))

        for it in m.items:
            kind = it[0]
            if kind == "n":
                for j, f in enumerate(it[2]):
                    if f not in drivers:
                        use(f, it[5], it[6], j + 1)
            elif kind == "l":
                use(it[2], it[7], it[8], 1)
                if it[4] is not None and it[4] != GLOBAL_CLOCK:
                    use(it[4], it[7], it[8], 4)
            else:
                child = self.models.get(it[1])
                if child is None:
                    continue
                ins = {n for n, _ in child.inputs} | {n for n, _ in child.clocks}
                for k, (formal, actual, _w) in enumerate(it[2]):
                    if formal in ins:
                        use(actual, it[4], it[5], k + 2, len(formal) + 1)
        for name, w in m.outputs:
            if name not in drivers and name not in reported:
                reported.add(name)
                err(f"output '{name}' is never driven", w)

    def check_exdc(self, m: _Model) -> None:
        drivers = {n: w for n, w in m.inputs + m.clocks}
        local: dict = {}
        for it in m.exdc or ():
            first = local.get(it[1])
            if it[1] in drivers or first is not None:
                first = first or drivers[it[1]]
                self.err(f"net '{it[1]}' has two drivers in the .exdc network "
                         f"(first driven at {first[0]}:{first[1]})", it[4])
            else:
                local[it[1]] = it[4]
        reported = set()
        for it in m.exdc or ():
            for j, f in enumerate(it[2]):
                if f not in drivers and f not in local and f not in reported:
                    reported.add(f)
                    line, col = _positions(it[5], it[6])[j + 1]
                    self.err(f"net '{f}' is used in the .exdc network but never driven there",
                             (m.where[0], line, col))
        outs = {n for n, _ in m.outputs}
        if not any(net in outs for net in local):
            self.warn(f"the .exdc network of model '{m.name}' defines none of its outputs", m.exdc_where)

    def find_cycles(self, order: list) -> None:
        """Report models that instantiate themselves (iterative depth-first search)."""
        state: dict = {}  # name -> 1 on the path, 2 done
        for root in order:
            if state.get(root.name):
                continue
            path = [root.name]
            state[root.name] = 1
            stack = [(root, iter(root.items))]
            while stack:
                m, it = stack[-1]
                item = next(it, None)
                if item is None:
                    stack.pop()
                    state[m.name] = 2
                    path.pop()
                    continue
                if item[0] != "s" or item[1] not in self.models:
                    continue
                child = self.models[item[1]]
                st = state.get(child.name)
                if st == 1:
                    loop = path[path.index(child.name):] + [child.name]
                    self.err(f"model '{child.name}' instantiates itself ({' -> '.join(loop)})", item[3])
                elif st is None:
                    state[child.name] = 1
                    path.append(child.name)
                    stack.append((child, iter(child.items)))

    # -- flattening --
    def check_size(self, top: _Model, order: list) -> bool:
        """Refuse a hierarchy that would flatten beyond the node or depth limit, before flattening.

        Each model's expansion is counted bottom-up with exact integers (a
        hierarchy that doubles at each of 1,000 levels is counted, not
        built).  Returns whether flattening may go on.
        """
        children = {m.name: [it[1] for it in m.items if it[0] == "s" and it[1] in self.models] for m in order}
        ranked, _ = topological_order(list(children), lambda name: children[name])
        size: dict = {}
        depth: dict = {}
        for name in ranked:
            m = self.models[name]
            own = sum(1 for it in m.items if it[0] != "s")
            size[name] = own + sum(size[c] for c in children[name])
            depth[name] = 1 + max((depth[c] for c in children[name]), default=0)
        subs = [it for it in top.items if it[0] == "s" and it[1] in size]
        biggest = max(subs, key=lambda it: (size[it[1]], depth[it[1]]), default=None)
        where = biggest[3] if biggest is not None else top.where
        ok = True
        if size[top.name] > self.max_nodes:
            self.err(f"the hierarchy of model '{top.name}' expands to {limits.shown(size[top.name])} nodes: "
                     f"{limits.exceeded('nodes', size[top.name])}", where)
            ok = False
        if depth[top.name] > limits.value("hierarchy_depth"):
            self.err(f"the hierarchy of model '{top.name}' is {depth[top.name]} levels deep: "
                     f"{limits.exceeded('hierarchy_depth', depth[top.name])}", where)
            ok = False
        return ok

    def flatten(self, top: _Model) -> Netlist:
        """The flat netlist of ``top`` (sizes already checked by :meth:`check_size`)."""
        nl = Netlist(top.name)
        for name, w in top.inputs:
            nl.add_input(name, where=w)
        for name, w in top.clocks:
            if name not in nl.nodes:
                nl.add_input(name, where=w)
            if name not in nl.clocks:
                nl.clocks.append(name)
        for name, w in top.outputs:
            nl.add_output(name, where=w)
        add_logic = nl.add_logic
        add_storage = nl.add_storage
        models = self.models
        stack: list = [_Frame(top.items, None, None, "")]
        while stack:
            frame = stack[-1]
            item = next(frame.items, None)
            if item is None:
                stack.pop()
                continue
            kind = item[0]
            rn = frame.rename
            try:
                if kind == "n":
                    if frame.ports is None:
                        add_logic(item[1], item[2], item[3], item[4])
                    else:
                        add_logic(rn(item[1]), tuple(map(rn, item[2])), item[3], item[4])
                elif kind == "l":
                    _, q, d, k, c, init, w = item[:7]
                    if frame.ports is not None:
                        q, d = rn(q), rn(d)
                        c = rn(c) if c is not None and c != GLOBAL_CLOCK else c
                    add_storage(q, d, k, c, init, where=w)
                else:
                    child = models[item[1]]
                    n = frame.counters.get(child.name, 0)
                    frame.counters[child.name] = n + 1
                    ports = {formal: rn(actual) for formal, actual, _ in item[2]}
                    stack.append(_Frame(child.items, ports, frame, f"{child.name}_{n}/"))
            except NetlistError as exc:
                for d in exc.diagnostics:
                    self.err(d.message, (d.file, d.line, d.col))
        self.name_global_clock(nl, top)
        if top.exdc is not None:
            nl.exdc = self.exdc_netlist(top)
        return nl

    def name_global_clock(self, nl: Netlist, top: _Model) -> None:
        """Give the latches clocked by the design's global clock a real clock net, and say so in a note."""
        nodes = nl.nodes
        uses = [q for q, node in nodes.items() if isinstance(node, Storage) and node.control == GLOBAL_CLOCK]
        if not uses:
            return
        first: tuple = nl.origin.get(uses[0]) or top.where
        if len(top.clocks) == 1:
            clk = top.clocks[0][0]
            how = f"the model's one clock '{clk}'"
        else:
            outs = set(nl.outputs)
            clk, k = GLOBAL_CLOCK_NAME, 0
            while clk in nodes or clk in outs:
                k += 1
                clk = f"{GLOBAL_CLOCK_NAME}_{k}"
            nl.add_input(clk, where=first)
            nl.clocks.append(clk)
            how = f"an input netfit adds, '{clk}'"
        for q in uses:
            st = nodes[q]
            nodes[q] = Storage(st.d, st.kind, clk, st.init)
        shown = ", ".join(uses[:6]) + (f" … ({len(uses)} in all)" if len(uses) > 6 else "")
        file, line, col = first
        nl.notes.append(Diagnostic(
            f"{len(uses)} latch(es) name no clock ({shown}): BLIF clocks them by the design's global "
            f"clock, which is {how}", file, line, col, severity="note"))

    def exdc_netlist(self, top: _Model) -> Netlist:
        dc = Netlist(f"{top.name}/exdc")
        for name, w in top.inputs + top.clocks:
            if name not in dc.nodes:
                dc.add_input(name, where=w)
        for it in top.exdc or ():
            dc.add_logic(it[1], it[2], it[3], it[4])
        for name, w in top.outputs:
            if name in dc.nodes and name not in dc.inputs:
                dc.add_output(name, where=w)
        try:
            dc.topological_order()
        except NetlistError as exc:
            self.errors.extend(exc.diagnostics)
        return dc


def _folder_of(path: Path) -> Path:
    """The folder of ``path`` as an absolute path (its resolved form when the system can give it)."""
    try:
        return path.resolve().parent
    except (OSError, ValueError):
        return path.absolute().parent


class _Frame:
    """One model instance while flattening: its items, its port bindings, and its place in the path.

    The instance path (``fa_1/xor_gate_0/``) is kept as one segment per
    level and joined only when a net inside the instance needs its name, so
    a hierarchy ``d`` levels deep holds ``d`` short segments, not ``d``
    prefixes of growing length.
    """

    __slots__ = ("items", "ports", "parent", "segment", "text", "counters")

    def __init__(self, items, ports, parent, segment):
        self.items = iter(items)
        self.ports = ports          # formal -> actual net in the flat design (None for the top)
        self.parent = parent
        self.segment = segment
        self.text = "" if parent is None else None   # the joined prefix, once asked for
        self.counters: dict = {}    # model -> instances of it made in this frame so far

    def prefix(self) -> str:
        if self.text is None:
            segs = []
            f = self
            while f.text is None:
                segs.append(f.segment)
                f = f.parent
            self.text = f.text + "".join(reversed(segs))
        return self.text

    def rename(self, net: str) -> str:
        if self.ports is None:
            return net
        actual = self.ports.get(net)
        return actual if actual is not None else self.prefix() + net


def read(path, top: str | None = None, allow_outside: bool = False) -> Netlist:
    """Read a BLIF design and flatten its hierarchy.

    Parameters
    ----------
    path : str or Path
        The design file.  Files named by ``.search`` are read too.
    top : str, optional
        Name of the top model; by default the first model of ``path``.
    allow_outside : bool
        Let ``.search`` read files outside the folder of ``path``.

    Returns
    -------
    Netlist
        The flat design with positions in ``origin`` and reading warnings in
        ``warnings``; not yet checked (see :meth:`Netlist.check`).

    Raises
    ------
    BlifError
        With every error found, each ``file:line:col``.
    """
    path = Path(path)
    r = _Reader(path, allow_outside)
    try:
        r.read_all()
    except _Stop:
        r.queue.clear()
    return _finish(r, path, top)


def read_text(text: str, name: str = "text.blif", top: str | None = None) -> Netlist:
    """Read BLIF from a string; positions name ``name`` as the file.

    ``.search`` is refused (there is no folder to search in).  Meant for
    tests and for tools that build BLIF in memory.
    """
    path = Path(name)
    r = _Reader(path, allow_outside=False)
    r.file_rank[str(path)] = 0
    try:
        r.parse(path, text, 0)
        for _, where in r.queue:
            r.err("'.search' cannot be used in BLIF text read from memory", where)
    except _Stop:
        pass
    r.queue.clear()
    return _finish(r, path, top)


def _finish(r: _Reader, path: Path, top) -> Netlist:
    netlist = None
    if r.stopped is None:
        try:
            netlist = _flat_design(r, path, top)
        except _Stop:
            netlist = None
    for cmd, (where, count) in r.timing.items():
        times = f" ({count} lines)" if count > 1 else ""
        r.warn(f"'{cmd}' carries only timing or load hints; skipped{times}", where)

    def key(d):
        return (r.file_rank.get(d.file, -1), d.line or 0, d.col or 0)

    if r.errors or netlist is None:
        errors = _dedupe(sorted(r.errors, key=key))
        if r.stopped is not None:
            errors.append(r.stopped)
        raise BlifError(errors)
    netlist.warnings.extend(sorted(r.warnings, key=key))
    log.debug("%s: %d nets from %d model(s) in %d file(s)", path, len(netlist.nodes), len(r.models),
              len(r.file_rank))
    return netlist


def _flat_design(r: _Reader, path: Path, top) -> Netlist | None:
    """Check the models the top model uses, then flatten it (``None`` when errors were found)."""
    if r.first_model is None:
        return None
    top_model: _Model | None = r.first_model
    if top is not None:
        top_model = r.models.get(top)
        if top_model is None:
            known = ", ".join(sorted(r.models)[:20])
            r.err(f"no model named '{top}' (models read: {known})", (str(path), None, None))
            return None
    assert top_model is not None
    order = r.reachable(top_model)
    for m in order:
        r.check_model(m)
        if m is not top_model and m.exdc is not None:
            r.warn(f"the .exdc network of model '{m.name}' is skipped (only the top model's "
                   "don't-care network is kept)", m.exdc_where)
    r.find_cycles(order)
    if r.errors or not r.check_size(top_model, order):
        return None
    netlist = r.flatten(top_model)
    if netlist.exdc is not None:
        r.warn(f"the don't-care network (.exdc) of model '{top_model.name}' is kept as don't-cares: "
               "`netfit verify` and the proof of a build ignore output differences where it is 1, and a "
               "gate build may use that freedom (designs of at most 14 inputs and storage outputs)",
               top_model.exdc_where)
    return netlist


def _dedupe(diags: list) -> list:
    seen = set()
    out = []
    for d in diags:
        k = (d.file, d.line, d.col, d.message)
        if k not in seen:
            seen.add(k)
            out.append(d)
    return out
