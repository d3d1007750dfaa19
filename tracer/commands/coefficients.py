"""``tracer coefficients``: reflectance and tunnelling transmittance of a prism/gap pair.

A quick table for the bench: two identical prisms of one material facing each other across a
gap of another medium, at one internal angle of incidence, for a range of gap thicknesses.
It prints Rs, Rp, Ts, Tp of the gap layer (the characteristic-matrix solution), the
critical angle of the prism/gap interface and the evanescent decay length, so that a designer
can size a TIR gap before building a scene.
"""

from __future__ import annotations

import json
import math

import numpy as np

from .. import films, units
from ..errors import TracerError

NAME = "coefficients"
HELP = "tabulate reflectance and tunnelling through a prism/gap/prism layer against gap thickness"
DESCRIPTION = __doc__.replace("``", "")
EXAMPLES = """examples:
  tracer coefficients --prism glass:517642 --gap air --angle "45 deg" --wavelength "550 nm"
  tracer coefficients --prism 1.44 --gap 1.0 --angle 45 --wavelength "10.7 GHz" --thickness 0mm 30mm 7
  tracer coefficients --prism fused-silica --thickness "0 um" "2 um" 21 --json table.json

exit codes: 0 success, 2 input error
"""


def add_arguments(parser) -> None:
    parser.add_argument("--prism", default="glass:517642", metavar="MATERIAL",
                        help="prism material: catalog name, glass:NNNVVV or an index such as "
                             "1.5168 (default: glass:517642)")
    parser.add_argument("--gap", default="air", metavar="MATERIAL",
                        help="gap medium: catalog name or an index (default: air); "
                             "indices are relative to air, as glass catalogs quote them")
    parser.add_argument("--angle", default="45 deg", metavar="ANGLE",
                        help="angle of incidence inside the prism, from the normal, 0 to 90 deg "
                             "(default: 45 deg)")
    parser.add_argument("--wavelength", default="550 nm", metavar="W",
                        help="vacuum wavelength, or a frequency such as '10.7 GHz' (default: 550 nm)")
    parser.add_argument("--thickness", nargs=3, metavar=("FROM", "TO", "COUNT"),
                        default=["0 um", "1.5 um", "16"],
                        help="gap thickness range, e.g. '0 um' '1.5 um' 16 (default)")
    parser.add_argument("--json", metavar="PATH", help="also write the table as JSON to PATH")


def _material(text: str, option: str):
    """A catalog material, or a constant index for a number (relative to air, as a
    scene's inline materials and glass catalogs are; tracer.materials.basis)."""
    from .. import materials

    try:
        try:
            value = float(text)
        except ValueError:
            return materials.get(text)
        return materials.ConstantIndex(value, name=text)
    except TracerError as exc:
        raise TracerError(f"{option}: {exc}") from None


def _index(model, wavelength: float) -> tuple[complex, complex]:
    """Absolute index and index relative to air of ``model`` at ``wavelength``."""
    return (complex(np.asarray(model.refractive_index(wavelength)).item()),
            complex(np.asarray(model.relative_index(wavelength)).item()))


def gap_table(*, n_prism: complex, n_gap: complex, angle: float, wavelength: float,
              thickness: np.ndarray) -> dict:
    """Coefficients of the prism | gap | prism layer for each thickness.

    Parameters
    ----------
    n_prism, n_gap : complex [1]
        Indices of the prisms and of the gap medium.
    angle : float [rad]
        Angle of incidence inside the prism on the gap.
    wavelength : float [m]
        Vacuum wavelength.
    thickness : (K,) float [m]
        Gap thicknesses.
    """
    thickness = np.asarray(thickness, dtype=float)
    s = films.stack(n_in=n_prism, layers=[(n_gap, thickness)], n_out=n_prism,
                    wavelength=wavelength, angle=angle)
    sin_c = (n_gap / n_prism).real
    critical = math.degrees(math.asin(sin_c)) if sin_c < 1 else float("nan")
    beyond = (n_prism.real * math.sin(angle)) ** 2 - n_gap.real**2
    kappa = 2 * math.pi / wavelength * math.sqrt(beyond) if beyond > 0 else 0.0
    return {
        "critical_angle_deg": critical,
        "decay_length_m": (1 / kappa) if kappa else None,
        "thickness_m": thickness.tolist(),
        "Rs": np.broadcast_to(s.Rs, thickness.shape).tolist(),
        "Rp": np.broadcast_to(s.Rp, thickness.shape).tolist(),
        "Ts": np.broadcast_to(s.Ts, thickness.shape).tolist(),
        "Tp": np.broadcast_to(s.Tp, thickness.shape).tolist(),
    }


def run(args) -> int:
    from . import _common as c

    c.output_file(args.json, "--json", example="coefficients.json")
    wavelength = units.wavelength(args.wavelength)
    angle = units.angle(args.angle)
    if not 0 <= angle <= math.pi / 2:
        raise TracerError(f"--angle {args.angle}: expected an angle of incidence from 0 to 90 deg "
                          "(measured from the face normal inside the prism)")
    start, stop = (units.length(v, default="um") for v in args.thickness[:2])
    try:
        count = int(args.thickness[2])
    except ValueError:
        raise TracerError(f"--thickness: COUNT must be a whole number, got {args.thickness[2]!r}") from None
    if count < 1 or stop < start or start < 0:
        raise TracerError("--thickness: expected FROM >= 0, TO >= FROM and COUNT >= 1")
    prism, gap = _material(args.prism, "--prism"), _material(args.gap, "--gap")
    n_prism, rel_prism = _index(prism, wavelength)
    n_gap, rel_gap = _index(gap, wavelength)
    table = gap_table(n_prism=n_prism, n_gap=n_gap, angle=angle, wavelength=wavelength,
                      thickness=np.linspace(start, stop, count))
    table.update(prism=prism.name, gap=gap.name, n_prism=[n_prism.real, n_prism.imag],
                 n_gap=[n_gap.real, n_gap.imag],
                 n_prism_relative_to_air=[rel_prism.real, rel_prism.imag],
                 n_gap_relative_to_air=[rel_gap.real, rel_gap.imag],
                 index_basis="n_prism, n_gap: absolute; *_relative_to_air: as printed",
                 angle_deg=math.degrees(angle), wavelength_m=wavelength)

    print(f"prism {prism.name} (n = {rel_prism.real:.5f}) | gap {gap.name} "
          f"(n = {rel_gap.real:.5f}) | prism   [indices relative to air]")
    print(f"angle of incidence {math.degrees(angle):.3f} deg, wavelength {units.format_length(wavelength)}")
    if math.isnan(table["critical_angle_deg"]):
        print("no critical angle (gap medium is denser than the prism)")
    else:
        print(f"critical angle {table['critical_angle_deg']:.3f} deg", end="")
        if table["decay_length_m"]:
            print(f"; beyond it: evanescent decay length {units.format_length(table['decay_length_m'])}")
        else:
            print("; below it: the gap transmits as a thin film")
    print(f"{'gap':>12}  {'Rs':>10}  {'Rp':>10}  {'Ts':>10}  {'Tp':>10}")
    for d, rs, rp, ts, tp in zip(table["thickness_m"], table["Rs"], table["Rp"], table["Ts"], table["Tp"]):
        gap = "0 (contact)" if d == 0 else units.format_length(d)
        print(f"{gap:>12}  {rs:10.6f}  {rp:10.6f}  {ts:10.3e}  {tp:10.3e}")
    print("R: reflected back into the first prism, T: transmitted into the second (tunnelling "
          "beyond the critical angle); s and p polarisation, fractions of the incident power")
    if args.json:
        c.write_text(args.json, json.dumps(table, indent=2) + "\n")
    return 0
