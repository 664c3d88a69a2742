"""A small progress display on stderr for stages that take more than about a second.

Library code marks its stages with :func:`stage` (a context manager) and,
where it knows how much work there is, calls :meth:`Stage.advance`.  Nothing
is shown unless the command line has switched the display on with
:func:`configure`, stderr is a terminal, and the stage has lasted longer
than :data:`DELAY_S`: quick stages and scripted runs (pipes, ``--quiet``,
``--json``) stay silent.  ``NO_COLOR`` (https://no-color.org) turns the
colour off; ``TERM=dumb`` turns the display off.

The display is one line, redrawn in place by a background thread: the stage
label, a bar when the amount of work is known (``3/5``), and the seconds
spent.  It is erased when the stage ends, so nothing is left in logs.  No
third-party package is needed for this; the standard library suffices.

Examples
--------
>>> with stage("fitting") as s:      # silent: the display is off by default
...     s.advance()
"""
from __future__ import annotations

import os
import re
import sys
import threading
import time
from contextlib import contextmanager
from typing import TextIO

__all__ = ["configure", "enabled", "stage", "Stage", "DELAY_S"]

#: stages shorter than this show nothing
DELAY_S = 1.0
_INTERVAL_S = 0.1

class _State:
    """Whether stages are drawn, and where."""

    on: bool = False
    stream: TextIO | None = None


_state = _State()
_lock = threading.Lock()
_active: list = []  # stack of running stages; only the innermost draws


def configure(on: bool, stream=None) -> None:
    """Switch the display on or off (the CLI calls this; off by default).

    It only ever shows when ``stream`` (stderr by default) is a terminal and
    ``TERM`` is not ``dumb``.
    """
    stream = stream if stream is not None else sys.stderr
    tty = bool(getattr(stream, "isatty", lambda: False)())
    _state.on = bool(on) and tty and os.environ.get("TERM", "") != "dumb"
    _state.stream = stream


def enabled() -> bool:
    """Whether stages are drawn at all."""
    return _state.on


def _colour() -> bool:
    return not os.environ.get("NO_COLOR")


class Stage:
    """One running stage: its label, work done and total (``None`` when unknown)."""

    def __init__(self, label: str, total: int | None = None):
        self.label = label
        self.total = total
        self.done = 0
        self.start = time.monotonic()
        self.shown = False

    def advance(self, n: int = 1, label: str | None = None) -> None:
        """Count ``n`` more units of work done (optionally changing the label)."""
        with _lock:
            self.done += n
            if label is not None:
                self.label = label

    def line(self, width: int) -> str:
        secs = time.monotonic() - self.start
        text = f"{self.label} "
        if self.total:
            frac = min(1.0, self.done / self.total)
            bar_w = 20
            full = int(round(frac * bar_w))
            bar = "#" * full + "-" * (bar_w - full)
            if _colour():
                bar = "\x1b[32m" + "#" * full + "\x1b[2m" + "-" * (bar_w - full) + "\x1b[0m"
            text += f"[{bar}] {self.done}/{self.total} "
        else:
            spin = "|/-\\"[int(secs / _INTERVAL_S) % 4]
            text += spin + " "
        text += f"{secs:.1f} s"
        if len(_strip(text)) > width - 1:
            text = _strip(text)[: max(10, width - 1)]
        return text


def _strip(text: str) -> str:
    return re.sub(r"\x1b\[[0-9;]*m", "", text)


def _width(stream) -> int:
    try:
        return os.get_terminal_size(stream.fileno()).columns
    except (OSError, AttributeError, ValueError):
        return 80


def _painter(st: Stage, stop: threading.Event) -> None:
    stream = _state.stream or sys.stderr
    while not stop.wait(_INTERVAL_S):
        if time.monotonic() - st.start < DELAY_S:
            continue
        with _lock:
            if not _active or _active[-1] is not st:
                continue
            try:
                stream.write("\r\x1b[2K" + st.line(_width(stream)))
                stream.flush()
                st.shown = True
            except (OSError, ValueError):
                return


@contextmanager
def stage(label: str, total: int | None = None):
    """Run a stage: yields a :class:`Stage`; draws it on stderr if it lasts over :data:`DELAY_S`."""
    st = Stage(label, total)
    if not _state.on:
        yield st
        return
    stop = threading.Event()
    with _lock:
        _active.append(st)
    t = threading.Thread(target=_painter, args=(st, stop), name="netfit-progress", daemon=True)
    t.start()
    try:
        yield st
    finally:
        stop.set()
        t.join()
        with _lock:
            if st in _active:
                _active.remove(st)
            if st.shown:
                stream = _state.stream or sys.stderr
                try:
                    stream.write("\r\x1b[2K")
                    stream.flush()
                except (OSError, ValueError):
                    pass
