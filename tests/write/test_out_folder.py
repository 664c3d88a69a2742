"""Output folders and files are written whole (mapper/write/files.py).

Behaviour checked in child processes stopped by real signals at random
moments, and with two builds writing into one folder at once: afterwards
the folder holds exactly one complete build -- byte for byte one of the
builds the children wrote into their reference folders -- and no temporary
file or folder is left anywhere.  No times are asserted; the random
moments only spread the signals over the writing.
"""
from __future__ import annotations

import filecmp
import os
import random
import signal
import subprocess
import sys
from pathlib import Path

import pytest

from mapper import flow
from mapper.errors import UsageError
from mapper.read import read_design
from mapper.write import files

DATA = Path(__file__).parent.parent / "data"
CHILD = Path(__file__).parent / "folder_writer.py"
DESIGNS = [DATA / "c17.blif", DATA / "textbook" / "full_adder.blif"]


def _start(out: Path, refs: Path, designs) -> subprocess.Popen:
    proc = subprocess.Popen([sys.executable, str(CHILD), str(out), str(refs)] + [str(d) for d in designs],
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    line = proc.stdout.readline()
    assert line.strip() == "ready", proc.stderr.read()
    return proc


def _same_folder(a: Path, b: Path) -> bool:
    cmp = filecmp.dircmp(a, b)
    if cmp.left_only or cmp.right_only or cmp.common_dirs:
        return False
    _, mismatch, errors = filecmp.cmpfiles(a, b, cmp.common_files, shallow=False)
    return not mismatch and not errors


def _leftovers(root: Path) -> list:
    return [p for p in root.rglob("*") if p.name.startswith(".") or p.name.endswith((".tmp", ".old"))]


def _stop(proc: subprocess.Popen, sig: int) -> None:
    proc.send_signal(sig)
    proc.communicate(timeout=120)
    # stopped by the signal (SIGTERM), or by the interrupt it turned into (SIGINT: exit 130 or -2)
    assert proc.returncode in (-sig, 130, 1), proc.returncode


def test_signals_at_random_moments_leave_one_whole_build(tmp_path):
    # one child at a time (children started side by side slow each other down, which only costs time)
    rng = random.Random(13)
    rounds = 8
    for k in range(rounds):
        base = tmp_path / f"run{k}"
        proc = _start(base / "out", base / "refs", DESIGNS)
        try:  # let the child write builds in turn for a random while, then stop it
            proc.wait(timeout=rng.uniform(0.0, 0.5))
        except subprocess.TimeoutExpired:
            pass
        _stop(proc, signal.SIGTERM if k % 2 else signal.SIGINT)
        refs = [base / "refs" / str(j) for j in range(len(DESIGNS))]
        assert any(_same_folder(base / "out", ref) for ref in refs), f"run {k}: a mix or a part of a build"
        assert _leftovers(base) == [], f"run {k}: temporary files left"


def test_two_builds_into_one_folder_at_once(tmp_path):
    rng = random.Random(7)
    for k in range(3):
        base = tmp_path / f"pair{k}"
        out = base / "out"
        a = _start(out, base / "refs_a", DESIGNS[:1])
        b = _start(out, base / "refs_b", DESIGNS[1:])
        try:
            a.wait(timeout=rng.uniform(0.2, 1.0))
        except subprocess.TimeoutExpired:
            pass
        _stop(a, signal.SIGTERM)
        _stop(b, signal.SIGTERM)
        assert _same_folder(out, base / "refs_a" / "0") or _same_folder(out, base / "refs_b" / "0"), \
            f"pair {k}: the folder mixes two builds"
        assert _leftovers(base) == []


@pytest.fixture(scope="module")
def c17_result():
    return flow.fit(read_design(DATA / "c17.blif"), flow.load_target("nand-only"), effort=0)


def test_a_second_build_replaces_the_first_and_keeps_other_files(tmp_path, c17_result):
    fa = flow.fit(read_design(DATA / "textbook" / "full_adder.blif"), flow.load_target("nand-only"), effort=0)
    out = tmp_path / "out"
    flow.write_build(c17_result, out)
    (out / "notes.txt").write_text("mine\n")
    (out / "photos").mkdir()
    (out / "photos" / "board.txt").write_text("x\n")
    flow.write_build(fa, out)
    names = {p.name for p in out.iterdir()}
    assert "c17.v" not in names and "c17.json" not in names and "c17.blif" not in names  # no mix
    assert {"full_adder.v", "full_adder.json", "full_adder.blif", "notes.txt", "photos"} <= names
    assert (out / "notes.txt").read_text() == "mine\n" and (out / "photos" / "board.txt").exists()
    assert _leftovers(tmp_path) == []


def test_output_problems_are_found_before_the_build(tmp_path, netfit, monkeypatch):
    design = tmp_path / "c17.blif"
    design.write_text((DATA / "c17.blif").read_text())
    a_file = tmp_path / "taken"
    a_file.write_text("x")
    # -o names an existing file
    code, _, err = netfit("build", design, "-t", "nand-only", "-o", a_file)
    assert code == 2 and "is a file" in err and "Traceback" not in err
    # a folder under a file cannot be made
    code, _, err = netfit("build", design, "-t", "nand-only", "-o", a_file / "sub")
    assert code == 2 and "is a file" in err
    # convert into a folder
    (tmp_path / "dir.v").mkdir()
    code, _, err = netfit("convert", design, tmp_path / "dir.v")
    assert code == 2 and "is a folder" in err
    # -o beside the design: the build's c17.blif would replace the design; nothing is written
    before = sorted(p.name for p in tmp_path.iterdir())
    code, _, err = netfit("build", design, "-t", "nand-only", "-o", tmp_path)
    assert code == 2 and "refusing to overwrite" in err
    assert sorted(p.name for p in tmp_path.iterdir()) == before
    assert design.read_text() == (DATA / "c17.blif").read_text()
    # a folder that is not writable (os.access stands in for the permissions, which root ignores)
    ro = tmp_path / "ro"
    ro.mkdir()
    real_access = os.access
    monkeypatch.setattr(files.os, "access", lambda p, mode: False if Path(p) == ro else real_access(p, mode))
    code, _, err = netfit("build", design, "-t", "nand-only", "-o", ro / "out")
    assert code == 2 and "not writable" in err
    with pytest.raises(UsageError, match="not writable"):
        files.atomic_write(ro / "x.v", "text")


def test_in_place_writing_when_the_folder_holds_the_working_folder(tmp_path, c17_result, monkeypatch):
    out = tmp_path / "out"
    out.mkdir()
    (out / "keep.txt").write_text("k")
    monkeypatch.chdir(out)
    assert files.check_out_dir(".").swap is False
    flow.write_build(c17_result, ".")
    names = {p.name for p in out.iterdir()}
    assert {"c17.v", "c17.json", "keep.txt", "report.html"} <= names
    assert _leftovers(out) == []


def test_atomic_write_held_signal_leaves_no_temporary_file(tmp_path, monkeypatch):
    # a SIGINT that arrives while a file is written: the file is not left half, no .tmp stays, and the
    # interrupt still happens once the temporary file is gone
    target = tmp_path / "f.txt"
    real_chmod = os.chmod

    def chmod_then_interrupt(path, mode):  # runs after the temporary file is made, before it is written
        os.kill(os.getpid(), signal.SIGINT)
        real_chmod(path, mode)

    monkeypatch.setattr(files.os, "chmod", chmod_then_interrupt)
    with pytest.raises(KeyboardInterrupt):
        files.atomic_write(target, "hello")
    assert not target.exists() and _leftovers(tmp_path) == []
