"""The tutorial docs/tutorial.py runs from start to end (so it cannot rot)."""

import runpy
from pathlib import Path

TUTORIAL = Path(__file__).resolve().parent.parent / "docs" / "tutorial.py"


def test_tutorial_runs(capsys):
    ns = runpy.run_path(str(TUTORIAL), run_name="__main__")
    out = capsys.readouterr().out
    assert "first ghost / design:" in out and "solids.plate.material" in out
    assert ns["d"].worse and (ns["work"] / "diff.html").read_text().startswith("<!DOCTYPE html>")
    assert len(ns["swept"].rows) == 3
