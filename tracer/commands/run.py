"""``tracer run``: trace a scene non-sequentially and analyse where the light goes.

Prints the power budget (every detector, absorbed per face and per bulk, escaped per
exit face, discarded by the power threshold, cut by the event cap, and the closure
residual), the ghost table of each detector (paths ranked by power, the design path
marked) and the verdict of every requirement of the scene.

With ``--out DIR`` it also writes ``summary.json``, ``budget.csv``, one
``ghosts-DETECTOR.csv`` per detector and, unless ``--no-figures``, the power-budget
figure and a ray diagram as PNG, and ``manifest.json`` (what this run wrote, the scene
and its hash; files of an earlier run listed there and not written again are removed).
``--json PATH`` writes the JSON summary (layout in docs/json-summary.md) anywhere. Every
file is written to a temporary name and renamed when complete.

A requirement passes only when it would still pass had all the discarded and cut power
gone the worst way for it; otherwise it is inconclusive (the bound is shown, with what to
do). With power_threshold = "auto" (the default when the scene does not set it) the trace
is repeated with lower thresholds until the verdicts are conclusive, within a cost limit.

``--save-baseline FILE`` writes the results a repository commits beside the scene;
``--baseline FILE`` compares with such a file and names every quantity that moved by
more than its tolerance (docs/versions.md).

Exit code 1 when any requirement fails or is inconclusive (they are listed) or a
quantity moved beyond its baseline tolerance, 2 for an input error (every problem of
the scene is printed), else 0.
"""

from __future__ import annotations

from pathlib import Path

from . import _common as c

NAME = "run"
HELP = "trace a scene, print the power budget, ghost tables and requirement verdicts"
DESCRIPTION = __doc__.replace("``", "")
EXAMPLES = """examples:
  tracer run scenes/plate_ghost.toml
  tracer run scenes/tir_prism_pair.toml --rays 200 --out results/tir
  tracer run scenes/cube_beamsplitter_camera.toml --threshold 1e-8 --json cube.json --quiet
  tracer run scenes/penta_prism_laser.toml --top 5 --seed 7
  tracer run scenes/plate_ghost.toml --save-baseline baselines/plate_ghost.toml
  tracer run scenes/plate_ghost.toml --baseline baselines/plate_ghost.toml --quiet

exit codes: 0 success, 1 a requirement failed or is inconclusive, or a baseline quantity moved, 2 input error
"""


def add_arguments(parser) -> None:
    c.add_scene(parser)
    c.add_trace_options(parser)
    c.add_output_options(parser)
    parser.add_argument("--top", type=c.count_option, default=10, metavar="N",
                        help="paths shown per detector in the printed ghost tables (default 10; "
                             "files hold every path)")
    parser.add_argument("--no-figures", action="store_true",
                        help="with --out: write tables and JSON only")
    from ..versions.cli_options import add_baseline_options
    add_baseline_options(parser)


def run(args) -> int:
    from ..analysis import analyse, format_verdicts, run_summary, write_json

    scene = c.load_scene(args.scene)
    c.output_file(args.json, "--json", example="summary.json")
    out = c.out_dir(args.out)
    want_figures = out is not None and not args.no_figures
    result = c.trace_scene(scene, args, segments=4000 if want_figures else 0)
    analysis = analyse(result)
    top = max(int(args.top), 0)

    if not args.quiet:
        print(f"{scene.title} ({args.scene})")
        print(f"traced {result.events} events, {sum(int(n) for n in result.launched)} source rays, "
              f"mode {result.options.mode}, seed {result.options.seed}, "
              f"power threshold {result.options.power_threshold:g}, "
              f"at most {result.options.max_events} events per ray")
        if result.threshold_choice:
            from ..analysis.auto_threshold import describe_choice

            print(describe_choice(result.threshold_choice))
        print()
        print(analysis.budget.format_text())
        for table in analysis.ghosts.values():
            print()
            print(table.format_text(limit=top))
        if result.compiled.scatter_models:
            from ..analysis.scatter_sources import format_scatter_ranking

            for name in result.compiled.detector_names:
                text = format_scatter_ranking(result, name)
                if text:
                    print()
                    print(text)
        if not scene.detectors:
            print()
            print("detectors: none declared, so no light is recorded (the budget above still "
                  "closes); add a [detectors.NAME] table to get ghost tables")
        print()
    warnings = analysis.warnings
    if warnings:
        c.say(args, *warnings, "")
    if analysis.verdicts and (not args.quiet or not analysis.passed):
        print(format_verdicts(analysis.verdicts))
        from ..analysis.leakage import leakage_notes

        for line in leakage_notes(result, analysis.verdicts):
            print("  " + line)
    elif not args.quiet:
        print("requirements: none declared")

    summary = run_summary(analysis)
    written = []
    if args.json:
        write_json(summary, args.json)
        written.append(args.json)
    if out is not None:
        with c.manifest(out, NAME, args.scene) as m:  # stale files of an earlier run removed
            if args.json:
                m.add(args.json)
            if not (args.json and Path(args.json).resolve() == (out / "summary.json").resolve()):
                write_json(summary, out / "summary.json")
                written.append(str(out / "summary.json"))
                m.add(out / "summary.json")
            m.add(c.write_text(out / "budget.csv", analysis.budget.to_csv()))
            written.append(str(out / "budget.csv"))
            for name, table in analysis.ghosts.items():
                written.append(str(m.add(c.write_text(out / f"ghosts-{name}.csv", table.to_csv()))[0]))
            if want_figures:
                from ..report.figures import save_figures

                skipped: list = []
                figs = save_figures(result, analysis, out, kinds=("budget", "rays"), skipped=skipped)
                m.add(figs)
                written += [str(p) for p in figs]
                for kind, why in skipped:
                    c.say(args, f"figure {kind} not drawn: {why}")
    from ..versions.cli_options import baseline_step
    baseline_ok = baseline_step(args, scene, analysis, written)
    if not args.quiet:
        if written:
            print()
            print("wrote " + ", ".join(written))
        print()
        print(c.CAUTION_LINE)
    return 0 if analysis.passed and baseline_ok else 1
