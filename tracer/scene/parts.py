"""``[parts.NAME]``: opaque parts around the prisms (mount cells, tubes, baffles, housings).

A part is shaped and placed like a solid (any prism-catalog kind, ``polygon``,
``polyhedron``, ``mesh``, and the part shapes ``tube`` and ``plate_with_hole`` of
:mod:`tracer.geometry.parts`; ``position``, ``rotation``, ``pivot``; no ``mate``). It takes
part in intersection like any solid but light never enters it: whatever its faces
transmit is absorbed on the face. Its faces carry ``surface`` (a coating name; default
``"absorber"``, or ``"uncoated"`` when the part has a ``material``), face by face
overridable with ``faces.FACE.coating``.

``material`` is optional: a metal (``"aluminium"``, ...) or a black glass makes the bare
surface a specular reflector by its own Fresnel coefficients; without one, a face needs a
treatment that says what it does (``absorber``, ``black``, ``lambertian``, ``mirror``,
``ideal``, a ``bsdf-table`` of the reflection side).

Treatments that send light into the part (a Lambertian ``transmittance``, a
transmission-side BSDF table) are refused, since nothing is traced inside.
"""

from __future__ import annotations

from ..errors import TracerError
from ..geometry.parts import PART_KINDS
from .context import Build
from .model import FaceTreatment
from .problems import did_you_mean
from .reader import Table
from .treatments import PerSubstrate

__all__ = ["read_part_shape", "part_faces", "NO_MATERIAL", "PART_KINDS"]

#: ``material_name`` of a part whose file names no material (reports show it).
NO_MATERIAL = "opaque"

#: Treatment kinds that need a bulk material to mean anything (a bare or coated interface).
_NEEDS_BULK = ("uncoated", "stack")


def read_part_shape(kind: str, t: Table, build: Build):
    """The part's shape in its local frame (``None`` with problems recorded)."""
    from . import shapes

    return shapes.read_shape(kind, t, build, extra_kinds=PART_KINDS)


def part_faces(t: Table, local, build: Build, faces: dict | None, *, material, material_name):
    """Every face's treatment of a part: ``faces.FACE.coating`` where given, else ``surface``.

    ``material`` is the part's bulk model or ``None``. Returns ``None`` (problems recorded)
    when a treatment cannot sit on an opaque part.
    """
    has_material = material is not None
    surface = t.string("surface", default="uncoated" if has_material else "absorber")
    if local is None or faces is None or surface is None:
        return None
    if surface not in build.coating_keys:
        t.error("surface", f'unknown coating "{surface}"' + did_you_mean(surface, build.coating_keys))
        return None
    base = build.coatings.get(surface)
    if base is None:  # defined but broken: already reported
        return None
    if isinstance(base, PerSubstrate):
        if not has_material:
            t.error("surface", f'coating "{surface}" is designed for the substrate it sits on, but '
                               "the part has no material: give it one")
            return None
        try:
            base = base.for_substrate(material, material_name)
        except TracerError as exc:
            t.error("surface", f'coating "{surface}" cannot be designed for {material_name}: {exc}')
            return None
    out, ok = {}, True
    for face in local.face_names:
        where, treatment = (f"faces.{face}.coating", faces[face]) if face in faces else ("surface", base)
        problem = opaque_problem(treatment, has_material=has_material)
        if problem:
            build.problems.error(f"{t.key}.{where}", problem)
            ok = False
            if where == "surface":
                break  # one message for the surface, not one per face
            continue
        out[face] = treatment
    return out if ok else None


def opaque_problem(treatment: FaceTreatment, *, has_material: bool) -> str | None:
    """Why ``treatment`` cannot sit on an opaque part, or ``None`` when it can."""
    sc = treatment.scatter
    name = treatment.coating_name or treatment.kind
    if sc is not None:
        if float(getattr(sc, "transmittance", 0.0) or 0.0) > 0.0:
            return (f'coating "{name}" scatters into the part (transmittance > 0), but light never '
                    "enters an opaque part: set transmittance = 0")
        if getattr(sc, "side", None) is not None and getattr(sc, "side") != _reflect_side():
            return (f'coating "{name}" is a transmission-side BSDF table, but light never enters '
                    'an opaque part: use side = "reflect"')
        if type(sc).__name__ == "RoughSurface" and not has_material and treatment.kind in _NEEDS_BULK:
            return (f'coating "{name}" scatters around the specular reflection of the bulk, but the '
                    "part has no material: give the part one (for example a metal)")
        return None
    if treatment.kind in _NEEDS_BULK and not has_material:
        return (f'coating "{name}" is a bare or coated interface, but the part has no material '
                'to reflect from: give the part a material (a metal such as "aluminium") or '
                'use a treatment such as "absorber", "black" or "lambertian"')
    return None


def _reflect_side():
    from ..scatter import REFLECT_SIDE

    return REFLECT_SIDE
