"""``tracer draw``: figures of a scene and its traced rays.

Writes into ``--out DIR`` (default: the current folder) one file per figure:
``rays`` (section of the solids with the traced rays, opacity and width falling with
power), ``rays3d`` (3D view), ``budget`` (where the power goes), ``irradiance`` and
``stokes`` (maps on each plane detector), ``far_field`` (intensity by direction),
``scatter`` (per plane detector that scattered light reaches: where the scattered light
goes, where it lands and which faces send it), and ``glb`` (the solids, detectors and rays as a binary glTF file for 3D viewers). Choose
with ``--kind`` (repeatable; default ``rays``, ``all`` for every figure kind and the GLB
file) and the figure formats with ``--format`` (png, svg). ``manifest.json`` in the folder
lists the files of the last draw run (earlier ones it listed and not drawn again are
removed; other files are left alone).
"""

from __future__ import annotations

from . import _common as c

NAME = "draw"
HELP = "draw ray diagrams, detector maps and the power budget as PNG/SVG"
DESCRIPTION = __doc__.replace("``", "")
EXAMPLES = """examples:
  tracer draw scenes/tir_prism_pair.toml
  tracer draw scenes/cube_beamsplitter_camera.toml --kind rays --kind irradiance --out figures
  tracer draw scenes/porro_erecting_pair.toml --kind all --format svg --format png --out figures
  tracer draw scenes/plate_ghost.toml --rays 50 --threshold 1e-8
  tracer draw scenes/corner_cube_retroreflector.toml --kind glb --out figures

exit codes: 0 success, 2 input error (or no plotting available)
"""


def add_arguments(parser) -> None:
    from ..report.figures import KINDS

    c.add_scene(parser)
    parser.add_argument("--kind", action="append", choices=KINDS + ("glb", "all"), metavar="KIND",
                        help=f"figure kind: {', '.join(KINDS)}, glb or all (repeatable; default rays)")
    parser.add_argument("--format", action="append", choices=("png", "svg"), metavar="FMT",
                        help="file format: png or svg (repeatable; default png)")
    parser.add_argument("--segments", type=c.count_option, default=4000, metavar="N",
                        help="ray segments recorded for the diagrams (default 4000)")
    c.add_trace_options(parser)
    parser.add_argument("--out", metavar="DIR", default=".", help="output folder (default: current)")
    parser.add_argument("--quiet", "-q", action="store_true", help="print only problems")


def run(args) -> int:
    from ..analysis import analyse
    from ..errors import TracerError
    from ..report.figures import KINDS, save_figures

    if c.plot_module() is None:
        raise TracerError("drawing needs matplotlib: pip install matplotlib")
    kinds = args.kind or ["rays"]
    kinds = list(KINDS) + ["glb"] if "all" in kinds else list(dict.fromkeys(kinds))
    glb = "glb" in kinds
    kinds = [k for k in kinds if k != "glb"]
    formats = tuple(dict.fromkeys(args.format or ["png"]))
    scene = c.load_scene(args.scene)
    out = c.out_dir(args.out)
    result = c.trace_scene(scene, args, segments=max(int(args.segments), 0))
    analysis = analyse(result) if "budget" in kinds else None
    skipped: list = []
    stem = c.scene_stem(scene)
    with c.manifest(out, NAME, args.scene) as m:  # stale files of an earlier run removed
        files = m.add(save_figures(result, analysis, out, kinds=kinds, formats=formats,
                                   skipped=skipped, prefix=f"{stem}-"))
        if "far_field" in (args.kind or []) and not getattr(result.compiled, "far_fields", None):
            skipped.append(("far_field", "the scene has no far-field detector"))
        if "scatter" in (args.kind or []) and not any("-scatter-" in f.name for f in files):
            skipped.append(("scatter", "no scattered light reached a plane detector"))
        if glb:
            try:
                from ..plot.export3d import export_glb
            except ImportError as exc:
                skipped.append(("glb", f"3D export not available ({exc})"))
            else:
                from ..report.figures import drawing_result

                files += m.add(export_glb(scene, drawing_result(result), out / f"{stem}.glb"))
    if not args.quiet:
        for f in files:
            print(f"wrote {f}")
    if not files:
        why = "; ".join(f"{k}: {w}" for k, w in skipped)
        raise TracerError(f"{args.scene}: no figure drawn" + (f" ({why})" if why else ""))
    for kind, why in skipped:
        print(f"tracer draw: {kind} not drawn: {why}")
    return 0
