"""``tracer path``: the sequential design-path report.

Follows the design path (the scene's ``[trace] sequence``, or ``--sequence``) with the
chief ray of a source and a few neighbour rays, taking at each face the child that
reaches the next face of the sequence. Prints, per face: the event (transmit, reflect,
TIR, tunnel), the angle of incidence, the critical angle, the TIR margin (degrees
beyond the critical angle), the tunnelling leakage behind a TIR face and the fraction of
power kept; then the throughput for the source polarisation, deviation, lateral
displacement, optical path length, image orientation (handedness and rotation),
retardance, diattenuation and the output Stokes vector.

Over the source's whole angular extent (its own rays: a fan's angles, a cone's
directions, a beam's aperture, followed along the chief ray's choices), each TIR face
gets the worst-case TIR margin and the fraction of the source power that meets it below
the critical angle; a warning follows when that fraction is not zero (that light is
refracted across the gap instead of being reflected).

A sequence entry is ``solid.face``, optionally with ``:T`` or ``:R`` to force the
transmitted or reflected child; it may end with a detector name.

Exit code 1 when the chief ray leaves the sequence (the face where it left is
printed), 2 for an input error, else 0.
"""

from __future__ import annotations

import math

from . import _common as c

NAME = "path"
HELP = "follow the design path (a face sequence) and report throughput, deviation, image, polarisation"
DESCRIPTION = __doc__.replace("``", "")
EXAMPLES = """examples:
  tracer path scenes/tir_prism_pair.toml
  tracer path scenes/penta_prism_laser.toml --json penta-path.json
  tracer path scenes/plate_ghost.toml --sequence plate.front plate.back:R plate.front:R plate.back
  tracer path scenes/cube_beamsplitter_camera.toml --source beam --wavelength "532 nm" \\
      --sequence a.leg_b a.hypotenuse:R a.leg_a monitor

exit codes: 0 success, 1 the chief ray left the sequence, 2 input error
"""


def add_arguments(parser) -> None:
    c.add_scene(parser)
    parser.add_argument("--sequence", nargs="+", metavar="FACE",
                        help="design path as solid.face entries (default: the scene's sequence)")
    parser.add_argument("--source", metavar="NAME", help="source of the chief ray (default: the first)")
    parser.add_argument("--wavelength", metavar="W",
                        help="vacuum wavelength such as '550 nm' or a frequency such as '10.7 GHz' "
                             "(default: the source's first line)")
    c.add_output_options(parser, out=False, json_help="write the design-path report as JSON to PATH")


def _deg(x) -> str:
    return "-" if x is None else f"{x:.3f}"


def format_report(s: dict) -> str:
    """Text of a :meth:`SequenceReport.summary` dict."""
    from ..analysis.tables import fmt_fraction, fmt_sci, format_table

    lines = ["design path: " + " > ".join(s["sequence"])]
    body = []
    # a bulk column only when some segment before a face absorbs (lossy solids)
    lossy = any(st.get("bulk_transmittance", 1.0) < 1.0 for st in s["steps"])
    so_far = 1.0
    for i, st in enumerate(s["steps"], 1):
        row = [str(i), st["face"], st["kind"], _deg(st.get("angle_of_incidence_deg")),
               _deg(st.get("critical_angle_deg")), _deg(st.get("tir_margin_deg")),
               fmt_sci(st.get("leakage"))]
        if lossy:
            row.append(fmt_fraction(st.get("bulk_transmittance", 1.0)))
        # "kept": the share of the power arriving at this face that goes on along the path;
        # "so far": what is left of the chief ray's power after this step
        so_far *= float(st.get("bulk_transmittance", 1.0))
        if "power_fraction" in st:
            so_far *= float(st["power_fraction"])
            row += [fmt_fraction(st["power_fraction"]), fmt_fraction(so_far)]
        else:  # a detector: nothing is lost, the step reports the power that arrives
            so_far = float(st.get("power", so_far))
            row += ["-", fmt_fraction(so_far)]
        body.append(row)
    head = ["step", "face", "event", "incidence [°]", "critical [°]", "TIR margin [°]", "leakage"]
    head += ["bulk before"] if lossy else []
    lines.append(format_table(head + ["kept", "so far"], body,
                              align="r<<rrrr" + "r" * (len(head) - 4), indent="  "))
    lines += spread_lines(s)
    if not s["complete"]:
        left = s.get("left_at") or {}
        where = left.get("hit") or "nothing (the ray left the assembly)"
        reason = f" ({left['reason']})" if left.get("reason") else ""
        lines.append(f"  the chief ray LEFT the sequence at step {int(left.get('step', 0)) + 1}: "
                     f"expected {left.get('expected')}, met {where}{reason}")
        return "\n".join(lines)
    hand = {1: "upright (not mirrored)", -1: "mirrored", 0: "degenerate", None: "-"}[s.get("handedness")]
    rows = [
        ["throughput", f"{fmt_fraction(s['throughput'])} of the chief ray's power"],
        ["deviation", f"{s['deviation_deg']:.4f}°"],
        ["lateral displacement", f"{1e3 * s['lateral_displacement_m']:.4f} mm"],
        ["optical path length", f"{1e3 * s['optical_path_length_m']:.4f} mm"],
        ["image", hand + ("" if s.get("image_rotation_deg") is None
                          else f", rotated {s['image_rotation_deg']:.2f}°")],
    ]
    am = s.get("angular_map")
    if am is not None:
        # output slope per input tilt (rad/rad) in the output frame: the identity for a
        # constant-deviation path (penta prism, plate), |det| != 1 for a dispersing prism
        # away from minimum deviation
        cells = "  ".join("[" + " ".join(f"{v + 0.0:+.4f}" for v in row) + "]" for row in am)
        rows.append(["angular map", f"{cells}  (output tilt per input tilt, x and y)"])
    rows += [
        ["retardance", f"{s['retardance_deg']:.3f}°"],
        ["diattenuation", f"{s['diattenuation']:.4g}"],
    ]
    st = s.get("output_stokes") or []
    if len(st) == 4 and st[0] > 0:
        dop = math.sqrt(sum(x * x for x in st[1:])) / st[0]
        rows.append(["output Stokes", "(" + ", ".join(f"{round(x / st[0], 4) + 0.0:.4f}" for x in st)
                     + f") × {fmt_sci(st[0])}, degree of polarisation {dop:.4f}"])
    lines.append(format_table(["", ""], rows, align="<<", indent="  ").split("\n", 1)[1])
    if not s.get("neighbours_complete", True):
        lines.append("  (neighbour rays left the sequence: image orientation not available)")
    return "\n".join(lines)


def spread_lines(s: dict) -> list[str]:
    """Text lines: TIR margin over the source's angular extent and the warnings."""
    from ..analysis.tables import fmt_fraction

    sp = s.get("spread")
    if not sp:
        return []
    what = {"fan": f"fan ±{sp['half_angle_deg']:.3g}°", "point": f"cone ±{sp['half_angle_deg']:.3g}°",
            "collimated": "collimated beam, aperture only"}.get(sp["kind"], sp["kind"])
    out = [f"  over the source's extent ({sp['source']}: {what}, {sp['rays']} rays "
           f"at {1e9 * sp['wavelength_m']:.4g} nm):"]
    tir = [st for st in s["steps"] if "below_critical_fraction" in st]
    if not tir:
        out.append("    no TIR face on the design path")
    for st in tir:
        worst = st.get("worst_tir_margin_deg")
        out.append(f"    {st['face']}: worst TIR margin {_deg(worst)}°, "
                   f"{fmt_fraction(st['below_critical_fraction'])} of the source power below the "
                   f"critical angle ({fmt_fraction(st['spread_arriving_fraction'])} arrives)")
    out += [f"  WARNING: {w}" for w in s.get("warnings", [])]
    return out


def run(args) -> int:
    from .. import __version__, units
    from ..analysis import write_json
    from ..engine import trace_sequence

    from ..analysis.summary_json import CAUTION
    from ..errors import TracerError
    from ..scene.problems import did_you_mean

    scene = c.load_scene(args.scene)
    c.output_file(args.json, "--json", example="path.json")
    if not args.sequence and not scene.settings.sequence:
        faces = [f"{n}.{f}" for n, s in scene.solids.items() for f in s.geometry.face_names]
        raise TracerError(f"{args.scene}: no design path to follow: give --sequence SOLID.FACE ... "
                          f"or add sequence = [\"solid.face\", ...] to the [trace] table "
                          f"(faces: {', '.join(faces[:12])}{', ...' if len(faces) > 12 else ''})")
    if args.source is not None and args.source not in scene.sources:
        raise TracerError(f"--source {args.source}: no such source in {args.scene}"
                          f"{did_you_mean(args.source, scene.sources)}")
    wavelength = units.wavelength(args.wavelength) if args.wavelength else None
    report = trace_sequence(scene, args.sequence, source=args.source, wavelength=wavelength)
    summary = report.summary()
    if not args.quiet or not summary["complete"]:
        print(f"{scene.title} ({args.scene})")
        print(format_report(summary))
    if args.json:
        write_json(dict(caution=CAUTION, tool=dict(name="tracer", version=__version__),
                        scene=dict(title=scene.title, path=scene.path), **summary), args.json)
        if not args.quiet:
            print(f"\nwrote {args.json}")
    return 0 if summary["complete"] else 1
