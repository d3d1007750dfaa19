"""The progress bar of long traces: on a terminal only, never in captured output."""

import io
import itertools
from pathlib import Path

import tracer
from tracer.engine import tree

SCENE = Path(__file__).parents[1] / "scenes" / "plate_ghost.toml"


class _Terminal(io.StringIO):
    def isatty(self):
        return True


def _fake_clock(monkeypatch):
    ticks = itertools.count(0.0, 2.0)  # every call two seconds later: every update is shown
    monkeypatch.setattr(tree.time, "perf_counter", lambda: next(ticks))


def test_bar_on_a_terminal_reaches_every_ray(monkeypatch):
    term = _Terminal()
    monkeypatch.setattr(tree.sys, "stderr", term)
    _fake_clock(monkeypatch)
    res = tracer.trace(tracer.load(SCENE), rays=40, batch_size=8)
    text = term.getvalue()
    total = int(sum(res.launched))
    assert "tracing [" in text
    assert f"{total}/{total} rays" in text and text.endswith("\n")


def test_no_bar_when_stderr_is_not_a_terminal_or_when_switched_off(monkeypatch):
    pipe = io.StringIO()
    monkeypatch.setattr(tree.sys, "stderr", pipe)
    _fake_clock(monkeypatch)
    tracer.trace(tracer.load(SCENE), rays=40, batch_size=8)
    term = _Terminal()
    monkeypatch.setattr(tree.sys, "stderr", term)
    tracer.trace(tracer.load(SCENE), rays=40, batch_size=8, progress=False)
    assert pipe.getvalue() == "" and term.getvalue() == ""
