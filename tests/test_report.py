"""The HTML report: content, self-containment, exit codes, and rendering in a real browser.

The browser test opens the page in headless Chromium (Debian's ``chromium`` package) and
checks that every embedded figure decoded (``img.complete && naturalWidth > 0``); it
skips where no browser is installed.
"""

import base64
import os
import re
import shutil
import subprocess
from pathlib import Path

import pytest

from tracer.cli import main
from tracer.report import CAUTION_TEXT, build_report
from tracer.scene import load

ROOT = Path(__file__).resolve().parents[1]
PLATE = ROOT / "scenes" / "plate_ghost.toml"
TIR = ROOT / "scenes" / "tir_prism_pair.toml"

# a 1x1 white PNG (valid file), used where the plotting module is not available
PNG_1PX = base64.b64decode(
    "iVBORw0KGgoAAAANSUhEUgAAAAEAAAABCAYAAAAfFcSJAAAADUlEQVR42mP8/5+hHgAHggJ/PchI7wAAAABJRU5ErkJggg==")


def _has_plot():
    try:
        import matplotlib  # noqa: F401
        import tracer.plot  # noqa: F401
    except ImportError:
        return False
    return True


def test_report_holds_tables_caution_and_settings():
    scene = load(PLATE)
    rep = build_report(scene, rays=5, figures=False)
    page = rep.html
    assert page.startswith("<!DOCTYPE html>")
    # the safety caution, word for word, and the engineering-estimate disclaimer
    assert "Safety caution" in page and "not a safety certification" in page
    assert "IEC&nbsp;60825-1" in page and "local codes" in page
    assert "not a safety certification" in CAUTION_TEXT
    # tables: budget, ghosts, verdicts, design path, settings
    assert "Power budget" in page and "closure residual" in page.lower()
    assert "plate(front:T back:R front:R back:T)" in page
    assert "Ghost paths" in page and "Detector screen" in page
    assert "direct" in page and "ghost" in page and "all 2 passed" in page
    assert "Design path (sequential)" in page and "plate.front" in page
    assert "Trace settings" in page and "power threshold" in page
    assert re.search(r"tracer \d+\.\d+", page)


@pytest.fixture(scope="module")
def tir_report():
    """One report of the TIR pair with figures (when plotting is available), shared."""
    return build_report(load(TIR), rays=5, figures=_has_plot())


def test_report_is_self_contained(tir_report):
    rep = tir_report
    page = rep.html
    # no external resources: no remote or relative src/href, no external scripts or styles
    assert not re.search(r'(src|href)\s*=\s*"(?!data:|#)', page)
    assert "<link" not in page and "<script" not in page and "@import" not in page
    assert "url(" not in page
    if _has_plot():
        assert rep.figures, rep.skipped
        assert page.count('src="data:image/png;base64,') == len(rep.figures)


def test_report_command_writes_html_and_exits_1_on_failure(tmp_path, capsys):
    code = main(["report", str(PLATE), "--rays", "3", "--no-figures", "--out", str(tmp_path), "--quiet"])
    assert code == 0
    page = (tmp_path / "plate_ghost.html").read_text(encoding="utf-8")
    assert "all 2 passed" in page
    strict = tmp_path / "strict.toml"
    strict.write_text(PLATE.read_text(encoding="utf-8").replace("limit = 0.005", "limit = 1e-9"),
                      encoding="utf-8")
    code = main(["report", str(strict), "--rays", "3", "--no-figures", "--out", str(tmp_path)])
    out = capsys.readouterr().out
    assert code == 1 and "FAIL" in out
    page = (tmp_path / "strict.html").read_text(encoding="utf-8")
    assert "1 of 2 failed" in page and ">FAIL<" in page


def _chromium():
    for name in ("chromium", "chromium-browser"):
        path = shutil.which(name) or (f"/usr/bin/{name}" if os.path.exists(f"/usr/bin/{name}") else None)
        if path:
            return path
    return None


def _render(page_path: Path, tmp_path: Path, *extra) -> subprocess.CompletedProcess:
    exe = _chromium()
    args = [exe, "--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
            "--disable-component-update", "--disable-sync", "--no-first-run",
            f"--user-data-dir={tmp_path / 'profile'}", *extra, page_path.as_uri()]
    return subprocess.run(args, capture_output=True, text=True, timeout=120)


@pytest.mark.skipif(_chromium() is None, reason="no Chromium installed")
def test_report_figures_render_in_headless_chromium(tmp_path, tir_report):
    scene = load(TIR)
    if _has_plot():
        rep = tir_report
        assert rep.figures, rep.skipped
        page = rep.html
    else:  # the page machinery alone, with a real PNG
        from tracer.analysis import analyse
        from tracer.engine import trace
        from tracer.report.html import render_html
        from tracer.scene import summarize

        page = render_html(analysis=analyse(trace(scene, rays=5)), scene_summary=summarize(scene),
                           figures=[("rays", "test figure", PNG_1PX)])
    # a marker the browser sets once every image has decoded
    probe = ("<script>window.addEventListener('load', function () {"
             "var im = Array.prototype.slice.call(document.images);"
             "var ok = im.length > 0 && im.every(function (i) { return i.complete && i.naturalWidth > 0; });"
             "document.body.setAttribute('data-images', ok ? 'loaded-' + im.length : 'broken');"
             "});</script>")
    path = tmp_path / "report.html"
    path.write_text(page.replace("</body>", probe + "</body>"), encoding="utf-8")
    done = _render(path, tmp_path, "--virtual-time-budget=5000", "--dump-dom")
    assert done.returncode == 0, done.stderr[-2000:]
    m = re.search(r'data-images="([^"]+)"', done.stdout)
    assert m, done.stdout[:2000]
    n = page.count("data:image/png;base64,")
    assert m.group(1) == f"loaded-{n}"
    shot = tmp_path / "report.png"
    done = _render(path, tmp_path, "--hide-scrollbars", "--window-size=1100,1600",
                   f"--screenshot={shot}")
    assert done.returncode == 0 and shot.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
