"""Options and helpers shared by the subcommands that trace a scene.

Consistent options: ``--out DIR``, ``--rays N``, ``--seed N``, ``--threshold X``,
``--max-events N``, ``--mode``, ``--json PATH``, ``--quiet``.
"""

from __future__ import annotations

import argparse
import os
import sys
from pathlib import Path

from ..errors import TracerError

__all__ = ["add_scene", "add_trace_options", "add_output_options", "load_scene", "trace_scene",
           "out_dir", "say", "plot_module", "write_text", "whole_number", "count_option",
           "output_file", "scene_file_problem", "manifest", "CAUTION_LINE"]

#: The one-line safety caution at the end of the text output (the full text is in the
#: README and in every HTML report).
CAUTION_LINE = ("caution: an engineering estimate from a ray model, not a safety certification; "
                "measure stray beams and follow the laser and RF safety rules that apply")


def whole_number(text: str, *, minimum: int, expected: str) -> int:
    """A whole-number option value at least ``minimum``; ``expected`` describes it in
    the message for a smaller one.

    >>> whole_number("3", minimum=1, expected="a positive whole number")
    3
    """
    try:
        value = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected a whole number, got {text!r}") from None
    if value < minimum:
        raise argparse.ArgumentTypeError(f"expected {expected}, got {text!r}")
    return value


def whole_option(minimum: int, expected: str):
    """An argparse ``type`` for a whole number of at least ``minimum``."""
    def parse(text: str) -> int:
        return whole_number(text, minimum=minimum, expected=expected)
    return parse


def count_option(text: str) -> int:
    """A count of 0 or more (``--top``, ``--segments``)."""
    return whole_number(text, minimum=0, expected="0 or more")


def _positive_int(text: str) -> int:
    return whole_number(text, minimum=1, expected="a positive whole number")


def _seed(text: str) -> int:
    return whole_number(text, minimum=0, expected="a non-negative whole number")


def _fraction(text: str) -> float:
    if text.strip().lower() == "auto":
        return "auto"
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f'expected a fraction such as 1e-6 or "auto", got {text!r}') from None
    from ..scene.ranges import POWER_THRESHOLD_MIN
    if not POWER_THRESHOLD_MIN <= value < 1:
        raise argparse.ArgumentTypeError(f"expected a fraction t with {POWER_THRESHOLD_MIN:g} <= t < 1, "
                                         f"got {text!r}")
    return value


def _ray_count(text: str) -> int:
    from ..scene.ranges import MAX_RAYS
    value = whole_number(text, minimum=1, expected="a positive whole number")
    if value > MAX_RAYS:
        raise argparse.ArgumentTypeError(f"expected at most {MAX_RAYS} rays per spectral line "
                                         f"(the scene file's limit too), got {text!r}")
    return value


def add_scene(parser, *, many: bool = False) -> None:
    """The scene file argument(s)."""
    if many:
        parser.add_argument("scenes", nargs="+", metavar="SCENE", help="scene files (.toml)")
    else:
        parser.add_argument("scene", metavar="SCENE", help="scene file (.toml)")


def add_trace_options(parser) -> None:
    """``--rays``, ``--seed``, ``--threshold``, ``--max-events``, ``--mode``."""
    g = parser.add_argument_group("trace settings (default: from the scene file)")
    g.add_argument("--rays", type=_ray_count, metavar="N",
                   help="geometric rays per spectral line for every source")
    g.add_argument("--seed", type=_seed, metavar="N", help="random seed")
    g.add_argument("--threshold", type=_fraction, metavar="X",
                   help="power threshold: children below this fraction of their source ray's "
                        'power are discarded; "auto": lowered until the requirement verdicts '
                        "are conclusive")
    g.add_argument("--max-events", type=_positive_int, metavar="N",
                   help="rays reaching this many events are cut")
    g.add_argument("--mode", choices=("tree", "monte-carlo"),
                   help="tree: split every ray (exact path powers); monte-carlo: one child per event")
    g.add_argument("--allow-large", action="store_true",
                   help="trace even when the estimate (from a small pilot trace) says the run "
                        "would not fit this machine's memory or take more than about an hour")


def add_output_options(parser, *, out: bool = True, json_help: str | None = None) -> None:
    """``--out DIR``, ``--json PATH``, ``--quiet``."""
    if out:
        parser.add_argument("--out", metavar="DIR", help="output folder (created if missing)")
    parser.add_argument("--json", metavar="PATH", help=json_help or "write the JSON summary to PATH")
    parser.add_argument("--quiet", "-q", action="store_true", help="print only problems and failures")


def scene_file_problem(path: str) -> str | None:
    """What is wrong with ``path`` as a scene file argument (missing, a folder), else None."""
    if not os.path.exists(path):
        return f"{path}: no such scene file"
    if os.path.isdir(path):
        return (f"{path}: is a folder, not a scene file; give the .toml files in it "
                f"(for example {os.path.join(path, '*.toml')})")
    return None


def load_scene(path: str):
    """Load a scene; a missing file or any problem is a TracerError listing every problem."""
    from ..scene import load

    problem = scene_file_problem(path)
    if problem:
        raise TracerError(problem)
    return load(path)


def output_file(path: str | None, option: str, *, example: str = "results.json") -> str | None:
    """Check an output file option (``--json PATH``, ``--csv PATH``) before any work:
    not a folder, and its folder exists or can be made (it is made) and is writable. ``example`` is the
    file name suggested when a folder is given."""
    if path is None:
        return None
    p = Path(path)
    if p.is_dir():
        raise TracerError(f"{option} {path}: is a folder; give a file name such as {p / example}")
    parent = p.parent
    if not parent.exists():
        try:
            parent.mkdir(parents=True, exist_ok=True)
        except OSError as exc:
            raise TracerError(f"{option} {path}: cannot create the folder {parent}: "
                              f"{exc.strerror or exc}") from None
    elif not parent.is_dir():
        raise TracerError(f"{option} {path}: {parent} is not a folder")
    import tempfile

    try:  # writable: proved by a temporary file, before any work
        fd, tmp = tempfile.mkstemp(prefix=".tracer-write-test.", dir=parent)
        os.close(fd)
        os.unlink(tmp)
    except OSError as exc:
        raise TracerError(f"{option} {path}: the folder {parent} is not writable: "
                          f"{exc.strerror or exc}") from None
    return path


def trace_settings(args) -> dict:
    """Trace settings from the command-line options (only those given)."""
    settings = {}
    for opt, key in (("rays", "rays"), ("seed", "seed"), ("threshold", "power_threshold"),
                     ("max_events", "max_events"), ("mode", "mode")):
        v = getattr(args, opt, None)
        if v is not None:
            settings[key] = v
    return settings


def guard_settings(scene, args, settings: dict) -> dict:
    """Refuse a trace that would not fit this machine (unless ``--allow-large``) and return
    ``settings`` with the event and memory budgets that stop a misjudged run."""
    from ..engine.estimate import EVENT_BUDGET, check_fits, machine_memory

    allow_large = bool(getattr(args, "allow_large", False))
    check_fits(scene, allow_large=allow_large, **settings)  # raises TooLarge
    settings = dict(settings)
    if not allow_large:  # a run the estimate misjudged still ends, with a message
        settings.setdefault("event_budget", 2 * EVENT_BUDGET)
        settings.setdefault("memory_budget", machine_memory())
    return settings


def guard_points(scene, args, settings: dict, points: int) -> None:
    """Refuse a sweep or tolerance run of ``points`` traces of (about) ``scene`` whose events
    together, or whose memory per trace, would not fit this machine (unless ``--allow-large``)."""
    from ..engine.estimate import EVENT_BUDGET, check_fits

    points = max(int(points), 1)
    check_fits(scene, allow_large=bool(getattr(args, "allow_large", False)),
               event_budget=EVENT_BUDGET / points, **settings)


def trace_scene(scene, args, **extra):
    """Trace ``scene`` non-sequentially with the options of ``args`` (and ``extra``)."""
    from ..engine import trace
    from ..engine.tree import EventBudgetExceeded

    settings = trace_settings(args)
    settings.update(extra)
    settings.setdefault("progress", None if not getattr(args, "quiet", False) else False)
    settings = guard_settings(scene, args, settings)
    try:
        return trace(scene, **settings)
    except EventBudgetExceeded as exc:
        raise TracerError(f"{exc}; the estimate before the trace was too low. Use fewer rays "
                          "(--rays), a higher power threshold (--threshold) or fewer events per "
                          "ray (--max-events), or pass --allow-large to trace it anyway") from None


def out_dir(path: str | None, default: str | None = None) -> Path | None:
    """Create the output folder and check that it is writable, before any tracing
    (``None`` when neither is given); problems are a TracerError (exit 2)."""
    from ..outputs import check_writable_folder

    target = path or default
    if target is None:
        return None
    return check_writable_folder(target, "--out")


def write_text(path: Path, text: str) -> Path:
    """Write UTF-8 text atomically (:func:`tracer.outputs.atomic_write_text`); an
    unwritable path is a TracerError."""
    from ..outputs import atomic_write_text

    return atomic_write_text(path, text)


class _NoManifest:
    """Stand-in for a run without an output folder."""

    def add(self, *paths):
        return [Path(p) for p in paths if p is not None]

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        return False


def manifest(out: Path | None, command: str, scene_path=None):
    """The :class:`tracer.outputs.RunManifest` of this run in ``out`` (a context manager:
    on leaving it removes the earlier run's stale files and writes ``manifest.json``), or
    a stand-in that records nothing when there is no output folder."""
    if out is None:
        return _NoManifest()
    from ..outputs import RunManifest

    return RunManifest(out, command=command, scene=scene_path)


def say(args, *lines) -> None:
    """Print unless ``--quiet``."""
    if not getattr(args, "quiet", False):
        for line in lines:
            print(line)


def plot_module():
    """:mod:`tracer.plot` when it (and matplotlib) import, else ``None``."""
    try:
        from .. import plot
    except ImportError:
        return None
    return plot


def scene_stem(scene) -> str:
    """File stem for outputs of ``scene`` (its file name, else its title)."""
    if getattr(scene, "path", None):
        return Path(scene.path).stem
    title = getattr(scene, "title", "") or "scene"
    return "".join(c if c.isalnum() or c in "-_" else "_" for c in title).strip("_") or "scene"


def stderr(text: str) -> None:
    print(text, file=sys.stderr)
