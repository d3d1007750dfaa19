"""``tracer ghosts``: the ranked ghost table of each detector.

Traces the scene non-sequentially and lists, per detector, every path that reaches it
ranked by power: power [W], fraction of the source power, ratio to the design-path
signal, number of reflections, where the path lands (centroid x, y and RMS radius in
the detector's frame, mm), degree of polarisation and a compact path label
(``solid(face:EVENT ...)``, events T transmit, R partial reflection, TIR total internal
reflection, FT tunnelled across a gap, A absorbed; ``(...)×n`` folds repeats).

The design path (marked ``*``) is the path that follows the scene's declared sequence
(``[trace] sequence``) when there is one, else the strongest path on the detector.

``--csv PATH`` (one detector) or ``--out DIR`` (one ``ghosts-DETECTOR.csv`` per
detector) write every path; ``--json PATH`` writes the tables as JSON.
"""

from __future__ import annotations

from . import _common as c

NAME = "ghosts"
HELP = "rank the paths reaching each detector by power, design path marked"
DESCRIPTION = __doc__.replace("``", "")
EXAMPLES = """examples:
  tracer ghosts scenes/plate_ghost.toml
  tracer ghosts scenes/cube_beamsplitter_camera.toml --detector camera --top 20
  tracer ghosts scenes/tir_prism_pair.toml --csv ghosts.csv --detector light_valve
  tracer ghosts scenes/porro_erecting_pair.toml --out results/porro --json ghosts.json

exit codes: 0 success, 2 input error
"""


def add_arguments(parser) -> None:
    c.add_scene(parser)
    parser.add_argument("--detector", action="append", metavar="NAME",
                        help="only this detector (repeat for several; default every detector)")
    parser.add_argument("--top", type=c.count_option, default=20, metavar="N",
                        help="paths printed per detector (default 20; files hold every path)")
    parser.add_argument("--csv", metavar="PATH", help="write the table of the one selected detector as CSV")
    c.add_trace_options(parser)
    c.add_output_options(parser, json_help="write the ghost tables as JSON to PATH")


def run(args) -> int:
    from .. import __version__
    from ..analysis import ghost_table, write_json
    from ..analysis.summary_json import CAUTION
    from ..errors import TracerError
    from ..scene.problems import did_you_mean

    scene = c.load_scene(args.scene)
    if not scene.detectors:
        raise TracerError(f"{args.scene}: the scene has no detector, so there is no ghost table; "
                          "add a [detectors.NAME] table (see docs/scene-format.md)")
    names = args.detector or list(scene.detectors)
    unknown = [n for n in names if n not in scene.detectors]
    if unknown:
        raise TracerError(f"--detector {unknown[0]}: no such detector in {args.scene}"
                          f"{did_you_mean(unknown[0], scene.detectors)}")
    if args.csv and len(names) != 1:
        raise TracerError("--csv writes one table: choose one detector with --detector "
                          f"(detectors: {', '.join(names)}), or use --out DIR for all")
    c.output_file(args.csv, "--csv", example="ghosts.csv")
    c.output_file(args.json, "--json", example="ghosts.json")
    out = c.out_dir(args.out)
    result = c.trace_scene(scene, args)
    tables = {n: ghost_table(result, n) for n in names}
    if not args.quiet:
        for i, t in enumerate(tables.values()):
            if i:
                print()
            print(t.format_text(limit=max(int(args.top), 0)))
    written = []
    if args.csv:
        written.append(str(c.write_text(args.csv, next(iter(tables.values())).to_csv())))
    if out is not None:
        with c.manifest(out, NAME, args.scene) as m:  # stale files of an earlier run removed
            for n, t in tables.items():
                written.append(str(m.add(c.write_text(out / f"ghosts-{n}.csv", t.to_csv()))[0]))
    if args.json:
        write_json(dict(caution=CAUTION, tool=dict(name="tracer", version=__version__),
                        scene=dict(title=scene.title, path=scene.path),
                        source_power_w=float(result.source_power_w),
                        seed=int(result.options.seed),
                        detectors={n: t.to_dict() for n, t in tables.items()}), args.json)
        written.append(args.json)
    if written and not args.quiet:
        print("\nwrote " + ", ".join(written))
    return 0
