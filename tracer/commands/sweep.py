"""``tracer sweep``: trace a scene over a range or list of values of one or more keys.

Each ``--vary KEYPATH FROM TO COUNT`` spaces COUNT values evenly from FROM to TO (both
included; quantities keep their unit, e.g. ``0.1um 1um``), each ``--values KEYPATH
v1,v2,...`` takes the values given; several make a grid (every combination, the first
option varying slowest). Key paths name values as the scene file writes them:
``solids.upper.mate.gap``, ``solids.p.rotation[2]``, ``sources.beam.direction[0]``,
``coatings.ar.layers[0].thickness``, ``spectrum.wavelengths[0]``.

Every point is loaded through the scene loader (a bad value is reported with its key
path and the point) and traced; the table holds detector powers and fractions, the
transmission for s and p input states (``T.s.DET``, ``T.p.DET``), ghost power and the
strongest ghost, gap leakage, requirement values and verdicts, and the design path's
deviation when the scene declares a sequence.

With ``--out DIR``: ``sweep.csv``, ``sweep.json`` and figures (transmission for s and
p, ghost power, detector fractions against the first axis). ``--json PATH`` writes the
JSON table anywhere. ``--workers N`` runs points on N local processes, ``--scheduler
ADDRESS`` on a Dask cluster; the table is the same either way.
"""

from __future__ import annotations

import math

from . import _common as c

NAME = "sweep"
HELP = "trace a scene over a range of values of one or more keys (a table and figures)"
DESCRIPTION = __doc__.replace("``", "")
EXAMPLES = """examples:
  tracer sweep scenes/microwave_prism_coupler.toml --vary solids.output.mate.gap "2 mm" "40 mm" 20
  tracer sweep scenes/microwave_prism_coupler.toml --vary solids.output.mate.gap 5mm 30mm 6 \\
      --out results/gap --workers 2
  tracer sweep scenes/penta_prism_laser.toml --values solids.penta.rotation[2] "0 deg,1 deg,2 deg"
  tracer sweep scenes/microwave_prism_coupler.toml --vary solids.input.rotation "-2 deg" "2 deg" 5 \\
      --vary solids.output.mate.gap 5mm 20mm 4
  tracer sweep scenes/microwave_prism_coupler.toml --vary solids.output.mate.gap 5mm 30mm 6 \\
      --scheduler tcp://scheduler.example:8786
  (a negative value with a unit needs the space: "-1 deg", not -1deg; the Dask example needs
  pip install 'tracer[dask]' and a running scheduler)

exit codes: 0 success, 2 input error (also when a point cannot be loaded or traced)
"""


def add_arguments(parser) -> None:
    c.add_scene(parser)
    g = parser.add_argument_group("what varies")
    g.add_argument("--vary", nargs=4, action="append", default=[],
                   metavar=("KEYPATH", "FROM", "TO", "COUNT"),
                   help="COUNT values evenly from FROM to TO (units allowed: 0.1um, '45 deg')")
    g.add_argument("--values", nargs=2, action="append", default=[], metavar=("KEYPATH", "LIST"),
                   help="comma-separated values, e.g. '0.1 um,0.2 um,0.5 um'")
    c.add_trace_options(parser)
    p = parser.add_argument_group("results")
    p.add_argument("--no-polarization", action="store_true",
                   help="leave out the transmission for s and p input states")
    p.add_argument("--s-angle", default="90 deg", metavar="ANGLE",
                   help="linear input angle from the source x_axis taken as s (default 90 deg; "
                        "p is 90 deg away)")
    p.add_argument("--seeds", choices=("common", "per-task"), default="common",
                   help="common: every point traces with the scene seed (default); per-task: "
                        "point i with a seed spawned from the scene seed and i")
    p.add_argument("--skip-errors", action="store_true",
                   help="keep going past points that cannot be loaded or traced")
    add_parallel_options(parser)
    c.add_output_options(parser, json_help="write the JSON table to PATH")
    parser.add_argument("--no-figures", action="store_true", help="with --out: tables only")
    parser.add_argument("--write-scenes", metavar="DIR",
                        help="also write one scene file per point to DIR (comments and layout of "
                             "the scene kept, only the swept values changed)")


def add_parallel_options(parser) -> None:
    """``--workers N``, ``--scheduler ADDRESS``, ``--start-method``."""
    g = parser.add_argument_group("parallel work")
    g.add_argument("--workers", type=_workers, metavar="N",
                   help="local worker processes: a whole number >= 1, or 'auto' for one per CPU "
                        "(default 1)")
    g.add_argument("--scheduler", metavar="ADDRESS",
                   help="run on a Dask cluster, e.g. tcp://scheduler.example:8786 (needs dask[distributed])")
    g.add_argument("--start-method", choices=("spawn", "fork", "forkserver"), default="spawn",
                   help="how local workers start (default spawn)")


def _workers(text: str) -> int:
    """``--workers``: N >= 1, or ``auto`` (0 for the backend: one per CPU)."""
    if text.strip().lower() == "auto":
        return 0
    return c.whole_number(text, minimum=1, expected="1 or more worker processes (or 'auto' "
                                                     "for one per CPU)")


def check_new_keys(scene_path: str, values: dict, option: str) -> None:
    """Load the scene once with each changed key that the file does not hold yet, so that a
    misspelt key path is one clear message before any point is traced (a key the file
    holds was loaded already; an optional key the format knows is accepted)."""
    from ..errors import SceneError, TracerError
    from ..scene import from_dict
    from ..sweep import KeyPathError, get_value, with_values
    from ..sweep.runner import document_of

    doc, path, base = document_of(scene_path)
    for key, value in values.items():
        try:
            get_value(doc, key)
            continue  # the file holds it: its value is checked point by point
        except KeyPathError:
            pass
        changed = with_values(doc, {key: value})  # a missing table is a KeyPathError here
        try:
            from_dict(changed, path=path, base_dir=base)
        except SceneError as exc:
            mine = [p for p in exc.problems if p.key == key or p.key.startswith(key + ".")
                    or p.key.startswith(key + "[")]
            if mine:
                raise TracerError(f"{option} {key}: {mine[0].message}") from None
        except TracerError:
            pass  # another kind of problem: reported with its point


def make_backend(args):
    from ..sweep import get_backend

    return get_backend(args.workers, args.scheduler, start_method=args.start_method)


def _axes(args):
    from ..errors import TracerError
    from ..sweep import list_axis, parse_value, parse_values, range_axis

    axes = []
    for path, a, b, n in args.vary:
        try:
            count = int(n)
        except ValueError:
            raise TracerError(f"--vary {path} {a} {b} {n}: COUNT must be a whole number") from None
        if count < 1:
            raise TracerError(f"--vary {path} {a} {b} {n}: COUNT must be 1 or more")
        axes.append(range_axis(path, parse_value(a), parse_value(b), count))
    for path, text in args.values:
        if any(not part.strip() for part in text.split(",")):
            raise TracerError(f"--values {path} {text!r}: an empty value between commas; "
                              "expected values such as '0.1 um,0.2 um,0.5 um'")
        axes.append(list_axis(path, parse_values(text)))
    if not axes:
        raise TracerError("nothing to vary: give --vary KEYPATH FROM TO COUNT or --values KEYPATH LIST")
    return axes


def states_from(args) -> dict:
    from ..sweep.keypath import to_si

    if getattr(args, "no_polarization", False):
        return {}
    s = to_si(args.s_angle, "angle")
    return {"s": s, "p": s - math.pi / 2}


def _table(result) -> str:
    from ..analysis.tables import format_table

    cols = [k for k in result.columns if k.startswith(("fraction.", "T.", "leakage.", "pass."))
            or k == "deviation_deg"]
    header = ["#"] + [a.label for a in result.axes] + [
        "deviation [deg]" if k == "deviation_deg" else k for k in cols]
    rows = []
    for i, (p, r) in enumerate(zip(result.points, result.rows)):
        cells = [str(i)] + [_axis_cell(a, p[a.path]) for a in result.axes]
        for k in cols:
            v = r.get(k)
            cells.append("-" if v is None else ("yes" if v is True else "NO" if v is False
                                                else f"{v:.5g}" if isinstance(v, float) else str(v)))
        rows.append(cells)
    return format_table(header, rows, align="r" * len(header))


def _axis_cell(axis, value) -> str:
    """A swept value for the table, without the unit the column header already gives."""
    from ..sweep.keypath import split_quantity

    if axis.unit:
        try:
            number, unit = split_quantity(value)
        except Exception:  # noqa: BLE001 - not a quantity: shown as written
            return str(value)
        if unit == axis.unit:
            return f"{number:g}"
    return str(value)


def run(args) -> int:
    from ..sweep import sweep

    nominal = c.load_scene(args.scene)  # the nominal scene first: its problems, not every point's
    settings = c.trace_settings(args)
    axes = _axes(args)
    c.guard_points(nominal, args, settings, math.prod(len(a.values) for a in axes))
    for option, given in (("--vary", args.vary), ("--values", args.values)):
        firsts = {a.path: a.values[0] for a in axes if any(g[0] == a.path for g in given)}
        check_new_keys(args.scene, firsts, option)
    c.output_file(args.json, "--json", example="sweep.json")
    out = c.out_dir(args.out)
    backend = make_backend(args)
    try:
        result = sweep(args.scene, axes, settings=settings, states=states_from(args),
                       seeds=args.seeds, backend=backend,
                       on_error="skip" if args.skip_errors else "raise",
                       progress=None if not args.quiet else False)
    finally:
        backend.close()
    if not args.quiet:
        print(f"{args.scene}: {len(result.points)} points")
        print(_table(result))
        print("columns: fraction.DET = power on detector DET / source power; T.s.DET, T.p.DET = "
              "the same for an s or p polarised source; leakage.GAP = power crossing (tunnelled or refracted) "
              "GAP / source power; pass.REQ = requirement REQ met (files hold more columns)")
        for e in result.errors:
            if e:
                c.stderr(f"skipped {e}")
    if args.json:
        result.to_json(args.json)
    if out is not None:
        with c.manifest(out, NAME, args.scene) as m:  # stale files of an earlier run removed
            m.add(args.json)
            files = m.add(result.write(out, figures=not args.no_figures))
        c.say(args, "wrote " + ", ".join(str(f) for f in files))
    if args.write_scenes:
        from ..versions.edit import write_point_scenes
        files = write_point_scenes(args.scene, result.points, c.out_dir(args.write_scenes))
        c.say(args, f"wrote {len(files)} point scenes to {args.write_scenes}")
    return 0
