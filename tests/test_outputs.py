"""Every run ends cleanly: atomic output files, the run manifest and its stale-file
cleanup, Ctrl-C (exit 130, one line), ``--out`` checked before tracing, and the
compiled-kernel cache outside the package. Common practice, no source."""

import json
import os
import signal
import subprocess
import sys
import textwrap
import time
from pathlib import Path

import pytest

from tracer import outputs
from tracer.cli import EXIT_INTERRUPTED, main
from tracer.errors import TracerError

ROOT = Path(__file__).resolve().parents[1]
PLATE = ROOT / "scenes" / "plate_ghost.toml"
TIR = ROOT / "scenes" / "tir_prism_pair.toml"


def run_cli(capsys, *argv):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    assert "Traceback" not in out + err
    return code, out, err


def _leftovers(folder):
    return [p.name for p in Path(folder).iterdir() if p.name.endswith(".tmp")]


# ------------------------------------------------------------------ atomic writes


def test_atomic_write_failure_mid_write_leaves_no_partial_target(tmp_path, monkeypatch):
    target = tmp_path / "summary.json"

    class Boom(Exception):
        pass

    real_open = open

    class HalfFile:
        """Writes half the data, then fails (a full disk, a crash, Ctrl-C)."""

        def __init__(self, fh):
            self.fh = fh

        def write(self, data):
            self.fh.write(data[: len(data) // 2])
            self.fh.flush()
            raise Boom()

        def __enter__(self):
            return self

        def __exit__(self, *exc):
            self.fh.close()
            return False

    monkeypatch.setattr(outputs, "open", lambda *a, **k: HalfFile(real_open(*a, **k)), raising=False)
    with pytest.raises(Boom):
        outputs.atomic_write_text(target, '{"complete": true}\n' * 100)
    assert not target.exists()
    assert _leftovers(tmp_path) == []  # the temporary file is removed too
    # an existing complete file survives a failed rewrite unchanged
    monkeypatch.undo()
    outputs.atomic_write_text(target, "old complete\n")
    monkeypatch.setattr(outputs, "open", lambda *a, **k: HalfFile(real_open(*a, **k)), raising=False)
    with pytest.raises(Boom):
        outputs.atomic_write_text(target, "new " * 1000)
    assert target.read_text() == "old complete\n"
    assert _leftovers(tmp_path) == []


def test_atomic_write_interrupted_by_ctrl_c_and_figure_failure(tmp_path):
    class FailingFigure:
        def savefig(self, path, **kw):
            Path(path).write_bytes(b"\x89PNG partial")
            raise KeyboardInterrupt

    target = tmp_path / "rays.png"
    with pytest.raises(KeyboardInterrupt):
        outputs.atomic_savefig(FailingFigure(), target)
    assert not target.exists() and _leftovers(tmp_path) == []


def test_atomic_write_round_trip_and_unwritable_is_tracer_error(tmp_path):
    p = outputs.atomic_write_bytes(tmp_path / "sub" / "a.bin", b"\x00\x01")
    assert p.read_bytes() == b"\x00\x01"
    blocker = tmp_path / "file"
    blocker.write_text("x")
    with pytest.raises(TracerError, match="cannot write"):
        outputs.atomic_write_text(blocker / "a.txt", "x")


def test_real_figures_are_written_whole(tmp_path):
    pytest.importorskip("matplotlib")
    from tracer.plot._style import pyplot, save

    fig = pyplot().figure()
    fig.add_subplot().plot([0, 1], [0, 1])
    files = save(fig, tmp_path / "f.png", formats=("png", "svg"))
    assert [f.name for f in files] == ["f.png", "f.svg"]
    assert files[0].read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert files[1].read_text().rstrip().endswith("</svg>")
    assert _leftovers(tmp_path) == []


# ------------------------------------------------------------------ manifest


def _manifest(folder):
    return json.loads((Path(folder) / "manifest.json").read_text(encoding="utf-8"))


def test_run_writes_a_manifest_and_removes_stale_files_of_an_earlier_run(tmp_path, capsys):
    out = tmp_path / "out"
    code, _, _ = run_cli(capsys, "run", TIR, "--rays", 3, "--out", out, "--no-figures", "--quiet")
    assert code in (0, 1)
    first = _manifest(out)["runs"]["run"]
    tir_files = {f["path"] for f in first["files"]}
    assert {"summary.json", "budget.csv"} <= tir_files
    assert first["scenes"][0]["path"] == str(TIR)
    assert first["scenes"][0]["sha256"] == outputs.file_sha256(TIR) and first["complete"] is True
    for f in first["files"]:
        assert (out / f["path"]).stat().st_size == f["bytes"]
    # a user's own file, never listed by a manifest, and a draw output (another command)
    (out / "my-notes.txt").write_text("keep me")
    (out / "manifest.json").write_text(json.dumps(
        {**_manifest(out), "runs": {**_manifest(out)["runs"],
                                    "draw": {"files": [{"path": "plate_ghost-rays.png"}]}}}))
    (out / "plate_ghost-rays.png").write_bytes(b"not ours to remove here")
    # the same folder, another scene: ghost tables of the TIR detectors are stale
    code, _, _ = run_cli(capsys, "run", PLATE, "--rays", 3, "--out", out, "--no-figures", "--quiet")
    second = _manifest(out)["runs"]["run"]
    plate_files = {f["path"] for f in second["files"]}
    stale = tir_files - plate_files
    assert stale, "the two scenes have different detectors"
    for name in stale:
        assert not (out / name).exists()
    for name in plate_files:
        assert (out / name).exists()
    assert (out / "my-notes.txt").read_text() == "keep me"
    assert (out / "plate_ghost-rays.png").exists()  # listed under draw, not run
    assert second["scenes"][0]["path"] == str(PLATE)


def test_manifest_never_deletes_outside_the_folder_or_unlisted_files(tmp_path):
    folder = tmp_path / "out"
    folder.mkdir()
    outside = tmp_path / "precious.txt"
    outside.write_text("x")
    (folder / "mine.csv").write_text("x")
    (folder / "manifest.json").write_text(json.dumps(
        {"runs": {"run": {"files": [{"path": "../precious.txt"}, {"path": str(outside)},
                                    {"path": "old.csv"}]}}}))
    (folder / "old.csv").write_text("stale")
    m = outputs.RunManifest(folder, command="run")
    m.add(outputs.atomic_write_text(folder / "new.csv", "y"))
    removed = m.finish()
    assert removed == ["old.csv"]
    assert outside.exists() and (folder / "mine.csv").exists() and (folder / "new.csv").exists()
    # an unreadable manifest deletes nothing
    (folder / "manifest.json").write_text("{not json")
    (folder / "other.csv").write_text("x")
    assert outputs.RunManifest(folder, command="run").finish() == []
    assert (folder / "other.csv").exists() and (folder / "new.csv").exists()


def test_failed_run_marks_the_manifest_incomplete(tmp_path):
    folder = tmp_path / "out"
    with pytest.raises(KeyboardInterrupt):
        with outputs.RunManifest(folder, command="run") as m:
            m.add(outputs.atomic_write_text(folder / "summary.json", "{}\n"))
            raise KeyboardInterrupt
    run = _manifest(folder)["runs"]["run"]
    assert run["complete"] is False and [f["path"] for f in run["files"]] == ["summary.json"]


# ------------------------------------------------------------------ Ctrl-C, --out


def test_ctrl_c_is_one_line_and_exit_130(monkeypatch, capsys):
    from tracer.commands import run as run_cmd

    def interrupted(args):
        raise KeyboardInterrupt

    monkeypatch.setattr(run_cmd, "run", interrupted)
    code, out, err = run_cli(capsys, "run", PLATE)
    assert code == EXIT_INTERRUPTED == 130
    assert out == "" and len(err.strip().splitlines()) == 1 and "interrupted" in err


#: A child in its own session with SIGINT at its default (a shell's background job would
#: otherwise inherit SIGINT ignored), as after Ctrl-C in a terminal.
_SIGINT_CHILD = dict(start_new_session=True,
                     preexec_fn=lambda: signal.signal(signal.SIGINT, signal.SIG_DFL))


@pytest.mark.skipif(sys.platform == "win32", reason="POSIX signals")
def test_sigint_to_a_real_process_exits_130_without_traceback(tmp_path):
    # a child that starts a long trace of the TIR pair, then receives SIGINT
    script = textwrap.dedent(f"""
        import sys
        from tracer.cli import main
        print("started", flush=True)
        sys.exit(main(["run", {str(TIR)!r}, "--rays", "20000000", "--out", {str(tmp_path / "o")!r},
                       "--quiet"]))
    """)
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    proc = subprocess.Popen([sys.executable, "-c", script], stdout=subprocess.PIPE,
                            stderr=subprocess.PIPE, text=True, env=env, **_SIGINT_CHILD)
    assert proc.stdout.readline().strip() == "started"
    time.sleep(3.0)  # into loading / tracing
    proc.send_signal(signal.SIGINT)
    out, err = proc.communicate(timeout=120)
    assert proc.returncode == 130, err
    assert "Traceback" not in err and err.strip().splitlines()[-1].startswith("tracer: interrupted")
    leftovers = [p for p in (tmp_path / "o").rglob("*") if p.suffix == ".tmp"] if (tmp_path / "o").exists() else []
    assert leftovers == []


@pytest.mark.skipif(sys.platform == "win32", reason="POSIX signals")
def test_sigint_to_a_sweep_with_worker_processes_ends_them_at_once(tmp_path):
    # Ctrl-C in a terminal reaches the whole process group: the workers ignore it, the parent
    # prints one line, ends the workers and exits 130 without waiting for their tasks.
    argv = [sys.executable, "-m", "tracer.cli", "sweep", str(ROOT / "scenes" / "microwave_prism_coupler.toml"),
            "--vary", "solids.output.mate.gap", "5mm", "30mm", "400", "--rays", "3000",
            "--workers", "2", "--quiet", "--out", str(tmp_path / "o")]
    proc = subprocess.Popen(argv, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True,
                            env=dict(os.environ, PYTHONPATH=str(ROOT)), **_SIGINT_CHILD)
    time.sleep(15.0)  # workers started and busy
    assert proc.poll() is None, proc.communicate()
    os.killpg(proc.pid, signal.SIGINT)
    start = time.monotonic()
    _, err = proc.communicate(timeout=120)
    assert proc.returncode == 130, err
    assert "Traceback" not in err and err.strip() == ("tracer: interrupted; files already written "
                                                      "are complete, the rest were not written")
    assert time.monotonic() - start < 30
    assert not (tmp_path / "o" / "sweep.csv").exists()


def test_unwritable_out_exits_2_before_tracing(tmp_path, monkeypatch, capsys):
    from tracer.commands import _common

    def no_trace(*a, **k):
        raise AssertionError("traced although --out is not writable")

    monkeypatch.setattr(_common, "trace_scene", no_trace)

    def refuse(*a, **k):
        raise PermissionError(13, "Permission denied")

    monkeypatch.setattr(outputs.tempfile, "mkstemp", refuse)
    for argv in (("run", PLATE, "--rays", 2), ("draw", PLATE), ("report", PLATE, "--no-figures"),
                 ("ghosts", PLATE)):
        code, _, err = run_cli(capsys, *argv, "--out", tmp_path / "o")
        assert code == 2, argv
        assert "--out" in err and "not writable" in err and "Permission denied" in err
    code, _, err = run_cli(capsys, "run", PLATE, "--json", tmp_path / "s.json")
    assert code == 2 and "--json" in err and "not writable" in err


# ------------------------------------------------------------------ kernel cache


def test_kernel_cache_goes_to_a_per_user_folder_outside_the_package(tmp_path):
    # A fresh process with an empty XDG cache compiles one kernel: its cache index lands in
    # $XDG_CACHE_HOME/tracer/numba, none in the package's __pycache__.
    pytest.importorskip("numba")
    pkg = ROOT / "tracer"
    before = {p for p in pkg.rglob("*.nbi")}
    env = {k: v for k, v in os.environ.items() if k != "NUMBA_CACHE_DIR"}
    env.update(PYTHONPATH=str(ROOT), XDG_CACHE_HOME=str(tmp_path / "xdg"))
    code = textwrap.dedent("""
        import numpy as np
        from tracer.engine import jit, hash_kernel
        print(jit.cache_dir())
        keys = np.full(8, -1, np.int64); vals = np.zeros(8, np.int64)
        hash_kernel._lookup(keys, vals, 3, np.arange(3, dtype=np.int64), np.zeros(3, np.int64))
    """)
    res = subprocess.run([sys.executable, "-c", code], env=env, capture_output=True, text=True,
                         timeout=300)
    assert res.returncode == 0, res.stderr
    assert Path(res.stdout.strip()) == tmp_path / "xdg" / "tracer" / "numba"
    cached = list((tmp_path / "xdg" / "tracer" / "numba").rglob("*.nbi"))
    assert any("_lookup" in p.name for p in cached)
    assert {p for p in pkg.rglob("*.nbi")} - before == set()
    # an explicit NUMBA_CACHE_DIR is honoured
    env["NUMBA_CACHE_DIR"] = str(tmp_path / "numba-own")
    res = subprocess.run([sys.executable, "-c", code], env=env, capture_output=True, text=True,
                         timeout=300)
    assert res.returncode == 0, res.stderr
    assert Path(res.stdout.strip()) == tmp_path / "numba-own"
    assert list((tmp_path / "numba-own").rglob("*.nbi"))
