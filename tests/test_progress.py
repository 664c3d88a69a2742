"""The progress display: only on a terminal, only for stages over the delay, never under --quiet or --json.

Conventions checked: NO_COLOR (https://no-color.org: when set and not
empty, no ANSI colour), TERM=dumb (no cursor control), and the rule of our
DESIGN.md that data goes to stdout and progress to stderr.
"""
from __future__ import annotations

import io
import time

import pytest

from mapper import progress


class FakeTerminal(io.StringIO):
    def isatty(self):
        return True


@pytest.fixture
def fast(monkeypatch):
    monkeypatch.setattr(progress, "DELAY_S", 0.05)
    monkeypatch.delenv("NO_COLOR", raising=False)
    monkeypatch.setenv("TERM", "xterm")
    yield
    progress.configure(False)


def test_slow_stage_on_a_terminal_is_drawn_and_erased(fast):
    term = FakeTerminal()
    progress.configure(True, term)
    with progress.stage("fitting", total=4) as st:
        time.sleep(0.4)
        st.advance(2)
        time.sleep(0.3)
    text = term.getvalue()
    assert "fitting" in text and "2/4" in text
    assert "\x1b[32m" in text  # the bar in colour
    assert text.endswith("\r\x1b[2K")  # the line is cleared at the end


def test_no_color_means_no_colour(fast, monkeypatch):
    monkeypatch.setenv("NO_COLOR", "1")
    term = FakeTerminal()
    progress.configure(True, term)
    with progress.stage("fitting", total=2) as st:
        st.advance()
        time.sleep(0.4)
    text = term.getvalue()
    assert "fitting" in text and "\x1b[32m" not in text and "\x1b[0m" not in text


def test_quick_stage_shows_nothing(fast, monkeypatch):
    monkeypatch.setattr(progress, "DELAY_S", 5.0)
    term = FakeTerminal()
    progress.configure(True, term)
    with progress.stage("reading"):
        time.sleep(0.2)
    assert term.getvalue() == ""


def test_not_a_terminal_or_dumb_or_off_shows_nothing(fast, monkeypatch):
    pipe = io.StringIO()
    progress.configure(True, pipe)
    assert not progress.enabled()
    monkeypatch.setenv("TERM", "dumb")
    progress.configure(True, FakeTerminal())
    assert not progress.enabled()
    monkeypatch.setenv("TERM", "xterm")
    term = FakeTerminal()
    progress.configure(False, term)
    with progress.stage("fitting"):
        time.sleep(0.3)
    assert term.getvalue() == "" and pipe.getvalue() == ""


def test_json_and_quiet_switch_progress_off(netfit, data, monkeypatch):
    seen = []
    monkeypatch.setattr(progress, "configure", lambda on, stream=None: seen.append(on))
    netfit("build", data / "textbook" / "half_adder.blif", "--target", "gates-74", "--effort", "0", "--json")
    netfit("-q", "build", data / "textbook" / "half_adder.blif", "--target", "gates-74", "--effort", "0")
    netfit("build", data / "textbook" / "half_adder.blif", "--target", "gates-74", "--effort", "0")
    assert seen == [False, False, True]
