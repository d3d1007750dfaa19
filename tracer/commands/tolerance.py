"""``tracer tolerance``: Monte Carlo tolerance analysis of a scene.

Tolerances come from the scene's ``[tolerances.NAME]`` tables (``key``, ``dist`` =
"normal" or "uniform", ``sigma`` or ``half_width``; or ``index = "MATERIAL"`` for a
delta-n) and from ``--tol KEYPATH normal SIGMA`` / ``--tol KEYPATH uniform HALF``.
Every trial draws every tolerance, writes the perturbed values into a copy of the
scene, loads it through the scene loader and traces it. Printed: the yield (trials in
which every requirement of the scene passes, and per requirement), the worst trials,
and for each result its spread and the tolerances that drive it (squared Spearman
rank correlation of the perturbation with the result, normalised; ``--oat`` adds
one-at-a-time changes for +-1 standard deviation).

With ``--out DIR``: ``tolerance.csv`` (one row per trial), ``tolerance.json`` and
histograms with the sensitivity bars. Draws depend on the seed, the trial and the
tolerance only, so ``--workers`` and ``--scheduler`` never change the numbers.
"""

from __future__ import annotations

from . import _common as c
from .sweep import add_parallel_options, check_new_keys, make_backend, states_from

NAME = "tolerance"
HELP = "Monte Carlo tolerance analysis: yield, worst trials, sensitivity ranking, histograms"
DESCRIPTION = __doc__.replace("``", "")
EXAMPLES = """examples:
  tracer tolerance scenes/penta_prism_laser.toml --tol solids.penta.rotation[2] uniform 0.5deg --trials 200
  tracer tolerance scenes/microwave_prism_coupler.toml --trials 500 --workers 2 --out results/tol
  tracer tolerance scenes/microwave_prism_coupler.toml --tol solids.input.rotation normal 0.2deg \\
      --min-yield 0.95

exit codes: 0 success, 1 the yield is below --min-yield, 2 input error
"""


def add_arguments(parser) -> None:
    c.add_scene(parser)
    g = parser.add_argument_group("tolerances")
    g.add_argument("--tol", nargs=3, action="append", default=[],
                   metavar=("KEYPATH", "DIST", "SCALE"),
                   help="normal SIGMA or uniform HALF_WIDTH, e.g. --tol solids.p.rotation[2] "
                        "uniform 0.5deg (added to the scene's [tolerances])")
    g.add_argument("--trials", type=c.whole_option(1, "1 or more trials"), default=100, metavar="N",
                   help="random trials (default 100)")
    g.add_argument("--oat", action="store_true",
                   help="also one-at-a-time sensitivities (+-1 standard deviation each)")
    g.add_argument("--min-yield", type=_yield_fraction, metavar="FRACTION",
                   help="exit 1 when the fraction of trials that pass every requirement is "
                        "below FRACTION (0 to 1, e.g. 0.95)")
    c.add_trace_options(parser)
    parser.add_argument("--no-polarization", action="store_true",
                        help="leave out the transmission for s and p input states")
    parser.add_argument("--s-angle", default="90 deg", metavar="ANGLE",
                        help="linear input angle from the source x_axis taken as s (default 90 deg)")
    parser.add_argument("--skip-errors", action="store_true",
                        help="count trials that cannot be loaded or traced as failures and go on")
    add_parallel_options(parser)
    c.add_output_options(parser, json_help="write the JSON report to PATH")
    parser.add_argument("--no-figures", action="store_true", help="with --out: tables only")


def _yield_fraction(text: str) -> float:
    import argparse

    try:
        value = float(text.rstrip("%")) / (100 if text.endswith("%") else 1)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected a fraction such as 0.95, got {text!r}") from None
    if not 0 <= value <= 1:
        raise argparse.ArgumentTypeError(f"expected a fraction from 0 to 1 (or 0 % to 100 %), "
                                         f"got {text!r}")
    return value


def run(args) -> int:
    from ..errors import TracerError
    from ..sweep import one_at_a_time, parse_tol_option, tolerance_run

    if args.trials < 1:
        raise TracerError(f"--trials {args.trials}: expected a positive number of trials")
    nominal = c.load_scene(args.scene)  # the nominal scene first: its problems, not every trial's
    tols = [parse_tol_option(p, d, s) for p, d, s in args.tol]
    check_new_keys(args.scene, {p: 0 for p, _, _ in args.tol}, "--tol")
    c.output_file(args.json, "--json", example="tolerance.json")
    settings = c.trace_settings(args)
    c.guard_points(nominal, args, settings, args.trials)
    seed = settings.pop("seed", None)
    out = c.out_dir(args.out)
    backend = make_backend(args)
    try:
        result = tolerance_run(args.scene, tols, trials=args.trials, seed=seed, settings=settings,
                               states=states_from(args), backend=backend,
                               on_error="skip" if args.skip_errors else "raise",
                               progress=None if not args.quiet else False)
        oat = None
        if args.oat:
            oat = one_at_a_time(args.scene, tols, columns=result.summary_columns(),
                                settings=settings, backend=backend)
    finally:
        backend.close()
    if not args.quiet:
        print(f"{args.scene}")
        print(result.format_text())
        if oat:
            print("one at a time (change for +1 standard deviation):")
            for col, rows in oat.items():
                if rows:
                    print(f"  {col}: " + ", ".join(f"{n} {d:+.3g}" for n, d, _, _ in rows[:4]))
    data = result.to_dict()
    if oat is not None:
        data["one_at_a_time"] = {col: [dict(tolerance=n, change_per_std=d, minus=lo, plus=hi)
                                       for n, d, lo, hi in rows] for col, rows in oat.items()}
    if args.json or out is not None:
        import json

        text = json.dumps(data, indent=2).replace('"yield_"', '"yield"') + "\n"
        if args.json:
            c.write_text(args.json, text)
        if out is not None:
            with c.manifest(out, NAME, args.scene) as m:  # stale files of an earlier run removed
                m.add(args.json)
                files = m.add(result.write(out, figures=not args.no_figures))
                m.add(c.write_text(out / "tolerance.json", text))
            c.say(args, "wrote " + ", ".join(str(f) for f in files))
    if args.min_yield is not None and result.requirements:
        if result.yield_fraction() < args.min_yield:
            c.stderr(f"yield {result.yield_fraction():.3f} is below --min-yield {args.min_yield}")
            return 1
    return 0
