"""Writing files and build folders whole or not at all.

* :func:`atomic_write` writes one file through a temporary file beside it
  and a rename.
* :func:`write_folder` writes the files of one build into a temporary
  folder beside the output folder and swaps it in at the end, so the folder
  holds one complete build -- the old one or the new one, never a mix.
  Builds into one folder queue on a lock; SIGINT and SIGTERM are held while
  files are written and acted on at safe points, after the temporary files
  are gone; nothing is written when a file of the build would replace an
  input (the design).
* :func:`check_out_dir` and :func:`check_out_file` say, before any work is
  done, whether the output can be written.

What the swap keeps: entries of the old folder that are not files of a
build (a user's notes, a sub-folder) are carried into the new folder (as
hard links, so the old folder stays whole until the swap); the files of
the earlier build are replaced or, when the earlier build was of a design of
another name, dropped.  Where the folder itself cannot be replaced (it is
the working folder or holds it, it is a mount point, or its parent folder
is not writable) the build is written into a temporary folder inside it and
its files are moved into place one by one, with the signals still held.
"""
from __future__ import annotations

import contextlib
import ctypes
import logging
import os
import shutil
import signal
import tempfile
import threading
from dataclasses import dataclass
from pathlib import Path

from ..errors import UsageError

try:  # file locks where the system has them
    import fcntl
except ImportError:  # pragma: no cover - not on the systems netfit is tested on
    fcntl = None  # type: ignore[assignment]

__all__ = ["atomic_write", "write_folder", "check_out_dir", "check_out_file", "OutPlan", "Interrupted"]

log = logging.getLogger(__name__)

#: signals held while files are written (acted on once the temporary files are gone)
_HELD = tuple(getattr(signal, n) for n in ("SIGINT", "SIGTERM", "SIGHUP") if hasattr(signal, n))


class Interrupted(KeyboardInterrupt):
    """Writing stopped at a safe point because SIGINT or SIGTERM arrived."""


def _umask() -> int:
    mask = os.umask(0o022)
    os.umask(mask)
    return mask


class _Held:
    """Hold SIGINT/SIGTERM/SIGHUP: a signal is noted, writing stops at the next :meth:`check`, and the
    signal is sent again once the previous handlers are back (so the process ends as it would have)."""

    def __init__(self):
        self.caught: list = []
        self.old: dict = {}

    def _note(self, signum, frame) -> None:
        self.caught.append(signum)

    def __enter__(self) -> _Held:
        if threading.current_thread() is threading.main_thread():
            for s in _HELD:
                if signal.getsignal(s) is not signal.SIG_IGN:  # an ignored signal (nohup) stays ignored
                    self.old[s] = signal.signal(s, self._note)
        return self

    def check(self) -> None:
        if self.caught:
            raise Interrupted(f"stopped by signal {self.caught[0]}")

    def __exit__(self, *exc) -> None:
        for s, h in self.old.items():
            signal.signal(s, h)
        if self.caught:
            os.kill(os.getpid(), self.caught[0])


def _refuse_input(path: Path, protect) -> None:
    for p in protect:
        try:
            if path.exists() and path.samefile(p):
                raise UsageError(f"{path}: refusing to overwrite an input file")
        except (FileNotFoundError, ValueError):
            pass


def check_out_file(path, protect=()) -> Path:
    """Raise :class:`UsageError` unless ``path`` can be written as a file (before any work is done)."""
    path = Path(path)
    _refuse_input(path, protect)
    if path.is_dir():
        raise UsageError(f"{path}: is a folder; give the name of a file to write")
    folder = _nearest_existing(path.parent)
    if not folder.is_dir():
        raise UsageError(f"{path}: {folder} is a file, so the folder for {path.name} cannot be made")
    if not os.access(folder, os.W_OK | os.X_OK):
        raise UsageError(f"{path}: the folder {folder} is not writable")
    return path


def atomic_write(path, text: str, protect=()) -> Path:
    """Write ``text`` to ``path`` through a temporary file and a rename; returns the path.

    ``protect`` lists input paths that must never be overwritten.  A path
    that cannot be written raises :class:`UsageError` with the reason; an
    interrupted write leaves no temporary file.
    """
    path = Path(path)
    check_out_file(path, protect)
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise UsageError(f"{path}: cannot make the folder {path.parent}: {exc.strerror or exc}") from None
    with _Held() as held:
        try:
            fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
        except OSError as exc:
            raise UsageError(f"{path}: cannot write in {path.parent}: {exc.strerror or exc}") from None
        try:
            # mkstemp makes the file private (0600); a written file gets the usual mode under the umask
            os.chmod(tmp, 0o666 & ~_umask())
            with os.fdopen(fd, "w", encoding="utf-8", newline="\n") as fh:
                fh.write(text)
            held.check()
            os.replace(tmp, path)
        except BaseException as exc:
            with contextlib.suppress(OSError):
                os.unlink(tmp)
            if isinstance(exc, OSError):
                raise UsageError(f"{path}: cannot write: {exc.strerror or exc}") from None
            raise
    return path


# -- build folders ------------------------------------------------------------------------------
@dataclass(frozen=True)
class OutPlan:
    """How a build folder will be written: ``swap`` the whole folder, or move files ``in place``."""

    out: Path
    swap: bool


def _nearest_existing(p: Path) -> Path:
    while not p.exists() and p != p.parent:
        p = p.parent
    return p


def _holds_cwd(out: Path) -> bool:
    try:
        cwd = Path.cwd().resolve()
    except OSError:
        return False
    return cwd == out or out in cwd.parents


def check_out_dir(out_dir, protect=(), names=()) -> OutPlan:
    """Whether the folder ``out_dir`` can take a build; raises :class:`UsageError` when not.

    Checked before any work: ``out_dir`` is not a file; the folder (or the
    nearest folder above it, where it is made) is writable; and no file of
    ``names`` (the files the build will write) would replace a file in
    ``protect`` (the design).
    """
    out = Path(os.path.abspath(out_dir))
    try:
        if out.is_symlink():  # the folder a link points at is the one written
            out = Path(os.path.realpath(out))
        if out.exists() and not out.is_dir():
            raise UsageError(f"{out_dir}: is a file; -o names a folder for the build's files")
        above = _nearest_existing(out)
        if not above.is_dir():
            raise UsageError(f"{out_dir}: {above} is a file, so the folder cannot be made")
        if not os.access(above, os.W_OK | os.X_OK):
            raise UsageError(f"{out_dir}: the folder {above} is not writable")
        for name in names:
            target = out / name
            for p in protect:
                with contextlib.suppress(FileNotFoundError, ValueError):
                    if target.exists() and target.samefile(p):
                        raise UsageError(f"{out_dir}: refusing to overwrite an input file: the build's file "
                                         f"{name} would replace {p}; write the build into another folder")
        parent_ok = os.access(out.parent, os.W_OK | os.X_OK) if out.parent.exists() else True
        swap = not out.exists() or (parent_ok and not _holds_cwd(out) and not os.path.ismount(out))
    except OSError as exc:
        raise UsageError(f"{out_dir}: {exc.strerror or exc}") from None
    return OutPlan(out, swap)


@contextlib.contextmanager
def _locked(folder: Path):
    """An exclusive lock on ``folder`` (builds writing there queue), held for the block."""
    if fcntl is None:
        yield
        return
    fd = os.open(folder, os.O_RDONLY)
    try:
        try:
            fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
        except BlockingIOError:
            log.info("another build is writing into %s: waiting for it", folder)
            fcntl.flock(fd, fcntl.LOCK_EX)
        yield
    finally:
        os.close(fd)  # closing releases the lock


def _earlier_build_files(out: Path) -> set:
    """Names of the files of an earlier build in ``out`` (``<stem>.json`` of a build, and its
    ``<stem>.v``, ``<stem>_models.v`` and ``<stem>.blif``), found from the head of the build's JSON file."""
    names = set()
    for j in out.glob("*.json"):
        try:
            with open(j, "rb") as fh:
                head = fh.read(200)
        except OSError:
            continue
        if b'"format": "netfit-build"' in head:
            names.update({j.name, j.stem + ".v", j.stem + "_models.v", j.stem + ".blif"})
    return names


def _carry_over(out: Path, tmp: Path, written: set) -> list:
    """Link the entries of ``out`` that are no build's files into ``tmp``; returns sub-folders to move."""
    dropped = written | _earlier_build_files(out)
    folders = []
    for entry in out.iterdir():
        if entry.name in dropped or (tmp / entry.name).exists():
            continue
        if entry.is_dir() and not entry.is_symlink():
            folders.append(entry)
            continue
        try:
            os.link(entry, tmp / entry.name, follow_symlinks=False)
        except OSError:
            shutil.copy2(entry, tmp / entry.name, follow_symlinks=False)
    return folders


def _exchange(a: Path, b: Path) -> bool:
    """Swap two folders in one step (Linux ``renameat2`` with ``RENAME_EXCHANGE``); False where unsupported."""
    try:
        libc = ctypes.CDLL(None, use_errno=True)
        fn = libc.renameat2
    except (OSError, AttributeError):
        return False
    at_fdcwd, exchange = -100, 2
    return fn(at_fdcwd, os.fsencode(str(a)), at_fdcwd, os.fsencode(str(b)), exchange) == 0


def _swap_in(tmp: Path, out: Path, written: set) -> None:
    """Make ``tmp`` the folder ``out``; the old folder (if any) is removed afterwards."""
    if not out.exists():
        os.rename(tmp, out)
        return
    os.chmod(tmp, out.stat().st_mode & 0o7777)
    folders = _carry_over(out, tmp, written)
    moved = []
    try:
        for f in folders:
            os.rename(f, tmp / f.name)
            moved.append(f)
        if not _exchange(tmp, out):  # two renames where one swap is not offered
            aside = Path(tempfile.mkdtemp(prefix=f".{out.name}.", suffix=".old", dir=out.parent))
            os.rmdir(aside)
            os.rename(out, aside)
            try:
                os.rename(tmp, out)
            except BaseException:
                os.rename(aside, out)
                raise
            tmp = aside
    except BaseException:
        for f in moved:
            with contextlib.suppress(OSError):
                os.rename(tmp / f.name, f)
        raise
    shutil.rmtree(tmp, ignore_errors=True)  # the old build


def _move_in(tmp: Path, out: Path, written: set) -> None:
    """Move the files of ``tmp`` (inside ``out``) into ``out`` one by one, and drop an earlier build's."""
    for name in _earlier_build_files(out) - written:
        with contextlib.suppress(OSError):
            (out / name).unlink()
    for name in sorted(written):
        os.replace(tmp / name, out / name)
    shutil.rmtree(tmp, ignore_errors=True)


def write_folder(out_dir, jobs, protect=()) -> list:
    """Write one build into the folder ``out_dir``, whole; returns the paths written.

    ``jobs`` is a list of ``(file name, write)`` where ``write(path)``
    writes that file (and possibly others beside it) and returns the paths
    it wrote.  See the module docstring for what is guaranteed.
    """
    plan = check_out_dir(out_dir, protect)
    out = plan.out
    try:
        out.parent.mkdir(parents=True, exist_ok=True)
        if not plan.swap:
            out.mkdir(exist_ok=True)
    except OSError as exc:
        raise UsageError(f"{out_dir}: cannot make the folder: {exc.strerror or exc}") from None
    with _locked(out.parent if plan.swap else out), _Held() as held:
        plan = check_out_dir(out_dir, protect)  # again: another build may have written meanwhile
        tmp = Path(tempfile.mkdtemp(prefix=f".{out.name}.", suffix=".tmp", dir=out.parent if plan.swap else out))
        try:
            os.chmod(tmp, 0o777 & ~_umask())
            written_paths = []
            for name, write in jobs:
                held.check()
                written_paths += write(tmp / name)
            held.check()
            names = {Path(p).relative_to(tmp).parts[0] for p in written_paths}
            for name in names:  # the last look before anything in the folder changes
                _refuse_input(out / name, protect)
            if plan.swap:
                _swap_in(tmp, out, names)
            else:
                _move_in(tmp, out, names)
        except BaseException as exc:
            shutil.rmtree(tmp, ignore_errors=True)
            if isinstance(exc, OSError):
                raise UsageError(f"{out_dir}: cannot write the build: {exc.strerror or exc}") from None
            raise
    return [out / Path(p).relative_to(tmp) for p in written_paths]
