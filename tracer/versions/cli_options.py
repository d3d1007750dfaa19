"""The baseline options of ``tracer run`` (kept here so that the command stays small)."""

from __future__ import annotations

__all__ = ["add_baseline_options", "baseline_step"]


def add_baseline_options(parser) -> None:
    g = parser.add_argument_group("baselines (results committed beside the scene)")
    g.add_argument("--save-baseline", metavar="FILE",
                   help="write the results as a small, stable TOML baseline file")
    g.add_argument("--baseline", metavar="FILE",
                   help="compare with a baseline file; exit 1 naming every quantity that moved "
                        "beyond its tolerance ([baseline] table of the scene)")


def baseline_step(args, scene, analysis, written: list) -> bool:
    """Save and/or check a baseline; False when a quantity moved. Prints what moved."""
    save, check = getattr(args, "save_baseline", None), getattr(args, "baseline", None)
    if not save and not check:
        return True
    from ..analysis import run_summary
    from . import baseline as b
    from .. import errors
    from ..commands._common import output_file

    summary = run_summary(analysis, max_paths=10**9)
    tol = b.scene_tolerances(scene)
    ok = True
    if check:
        try:
            loaded = b.load_baseline(check)
        except errors.SceneError:
            raise
        result = b.compare(loaded, summary, tolerances=tol, file=check)
        ok = result.passed
        if not getattr(args, "quiet", False) or not ok:
            print()
            print(result.format_text())
    if save:
        output_file(save, "--save-baseline", example="baselines/scene.toml")
        written.append(str(b.save_baseline(summary, save, scene=args.scene,
                                           top_paths=tol.top_paths)))
    return ok
