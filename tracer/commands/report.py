"""``tracer report``: a self-contained HTML report per scene, for a design document.

For each scene: trace, analyse and write ``DIR/SCENE.html`` with the safety caution,
requirement verdicts, scene summary (solids and their faces, gaps, sources, detectors),
the power budget with its closure residual, ghost tables, the design path when the scene
declares a sequence, the figures (embedded PNG, no external files) and the tool version
with the trace settings. Open it in any browser or print it to PDF.

Exit code 1 when a requirement of any scene fails or is inconclusive (the report is
written all the same), 2 for an input error, else 0.
"""

from __future__ import annotations

from . import _common as c

NAME = "report"
HELP = "write a self-contained HTML report per scene (budget, ghosts, figures, verdicts)"
DESCRIPTION = __doc__.replace("``", "")
EXAMPLES = """examples:
  tracer report scenes/tir_prism_pair.toml
  tracer report scenes/*.toml --out reports
  tracer report scenes/cube_beamsplitter_camera.toml --rays 400 --threshold 1e-8 --out reports
  tracer report scenes/plate_ghost.toml --no-figures --json plate.json

exit codes: 0 success, 1 a requirement failed or is inconclusive, 2 input error
"""


def add_arguments(parser) -> None:
    c.add_scene(parser, many=True)
    c.add_trace_options(parser)
    parser.add_argument("--out", metavar="DIR", default=".",
                        help="output folder for SCENE.html (default: the current folder)")
    parser.add_argument("--json", metavar="PATH",
                        help="also write the JSON run summary (one scene only)")
    parser.add_argument("--quiet", "-q", action="store_true", help="print only problems and failures")
    parser.add_argument("--no-figures", action="store_true", help="tables only (no matplotlib needed)")
    parser.add_argument("--top", type=c.count_option, default=25, metavar="N",
                        help="rows per ghost table (default 25)")


def run(args) -> int:
    from ..analysis import format_verdicts, run_summary, write_json
    from ..errors import TracerError
    from ..report import build_report

    if args.json and len(args.scenes) != 1:
        raise TracerError("--json writes the summary of one scene: give one scene")
    scenes = [c.load_scene(p) for p in args.scenes]  # every input checked before tracing
    c.output_file(args.json, "--json", example="summary.json")
    out = c.out_dir(args.out)
    settings = c.trace_settings(args)
    settings["progress"] = None if not args.quiet else False
    failed = False
    with c.manifest(out, NAME, args.scenes) as m:  # stale files of an earlier run removed
        for path, scene in zip(args.scenes, scenes):
            rep = build_report(scene, figures=not args.no_figures, ghost_limit=max(args.top, 1), **c.guard_settings(scene, args, settings))
            target = m.add(rep.write(out / f"{c.scene_stem(scene)}.html"))[0]
            if args.json:
                write_json(run_summary(rep.analysis), args.json)
                m.add(args.json)
            if not rep.passed:
                failed = True
                print(f"{path}: requirement "
                      + ("failed" if rep.analysis.verdict == "fail" else "inconclusive"))
                print(format_verdicts(rep.analysis.verdicts))
            if not args.quiet:
                extra = f" ({len(rep.figures)} figures)" if not args.no_figures else ""
                print(f"wrote {target}{extra}")
    return 1 if failed else 0
