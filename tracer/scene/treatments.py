"""``[coatings.NAME]`` and face treatments.

Kinds (``kind = ...``):

``stack``
    ``layers``: an array of tables ``{material = "...", thickness = "99.6 nm"}`` or
    ``{material = "...", waves = 0.25}`` (optical thickness in waves at
    ``design_wavelength``), listed from the substrate outwards.
``quarter-wave``
    One layer of ``material``, a quarter wave thick at ``design_wavelength`` (at
    ``design_angle`` of incidence, default 0, measured in ``design_medium``: a material,
    default the scene's ambient; name the glass for a buried coating such as a cube's
    hypotenuse).
``v-coat``
    Two-layer antireflection coating of ``high`` (on the substrate) and ``low``
    materials with zero reflectance at ``design_wavelength`` at normal incidence from the
    scene's ambient; designed for the solid it is applied to, unless ``substrate``
    names a material.
``hl-mirror``
    Dielectric mirror (HL)^N H of quarter-wave layers, ``high``, ``low``, ``pairs`` = N,
    at ``design_wavelength`` (optionally ``design_angle`` in ``design_medium``, as above).
``ideal``
    Lossless, ``reflectance`` R for both polarisations.
``mirror``
    Perfect mirror (optionally with ``reflectance`` R < 1, the rest absorbed), or a
    metal film: ``metal`` (a material) and ``thickness`` (default 200 nm).
``absorber``
    Blackened face: every ray that reaches it is absorbed.

Scatter treatments (:mod:`tracer.scatter`; the specular part is ``specular``: ``"fresnel"``
for the bare interface (default), or the name of a coating defined in the file):

``lambertian``
    ``reflectance`` and optional ``transmittance`` (fractions scattered by Lambert's law into
    the reflection and transmission hemispheres); ``rest = "specular"`` (default: the rest
    meets the specular part) or ``"absorbed"``.
``rough``
    A polished face with ``rms_roughness`` (length), ``correlation_length`` (length) and
    ``psd_exponent`` (> 1, default 2) of a K-correlation surface spectrum: total integrated
    scatter and a first-order angular distribution, smooth-surface limit only.
``black``
    Black paint or anodising: ``diffuse_reflectance`` (Lambertian) and
    ``specular_reflectance`` (mirror-like), the rest absorbed; opaque.
``bsdf-table``
    A measured BSDF from the CSV ``file`` (:mod:`tracer.scatter.table`), ``side =
    "reflect"`` (default) or ``"transmit"``, ``rest`` as for ``lambertian``.

Every scatter kind takes ``depolarization`` (0..1, default 1: the scattered light is
unpolarised).

Built-in names usable without a table: ``uncoated``, ``absorber``, ``mirror`` (perfect).
"""

from __future__ import annotations

import numpy as np

from ..errors import TracerError
from .context import Build
from .media import resolve_material
from .model import FaceTreatment
from .files import resolve_scene_file
from .reader import Table

__all__ = ["read_coating", "BUILTIN_TREATMENTS", "COATING_KINDS", "SCATTER_KINDS", "PerSubstrate",
           "DEFAULT_METAL_THICKNESS"]

#: Thickness of a metal mirror film when none is given [m] (opaque for Al, Ag, Au in
#: the visible; common practice, no source).
DEFAULT_METAL_THICKNESS = 200e-9

#: Kinds with a scatter model; read after the others, since their ``specular`` may name one.
SCATTER_KINDS = ("lambertian", "rough", "black", "bsdf-table")
COATING_KINDS = ("stack", "quarter-wave", "v-coat", "hl-mirror", "ideal", "mirror",
                 "absorber") + SCATTER_KINDS

#: Treatments available by name in every scene.
BUILTIN_TREATMENTS = {
    "uncoated": FaceTreatment("uncoated", coating_name="uncoated"),
    "absorber": FaceTreatment("absorber", coating_name="absorber"),
    "mirror": FaceTreatment("mirror", coating=None, coating_name="mirror"),
}


def _coatings_module():
    from .. import coatings
    return coatings


def _layer_list(t: Table, build: Build, design_wl):
    """The ``layers`` array of a stack: [(material model, thickness or None, waves or None)]."""
    raw = t.raw("layers")
    if raw is None:
        t.error(None, 'missing key "layers": expected an array of tables such as '
                      '[{material = "MgF2", thickness = "100 nm"}]')
        return None
    if not isinstance(raw, list) or not raw:
        t.error("layers", "expected a non-empty array of tables {material = ..., thickness = ...}")
        return None
    out, ok = [], True
    for i, item in enumerate(raw):
        lt = Table(item, f"{t.path('layers')}[{i}]", build.problems, build.units)
        if not isinstance(item, dict):
            ok = False
            continue
        mname = lt.string("material", required=True)
        model = resolve_material(build, lt.path("material"), mname) if mname else None
        thickness = lt.quantity("thickness", "length", nonnegative=True)
        waves = lt.number("waves", minimum=0.0)
        if lt.has("thickness") == lt.has("waves"):
            lt.error(None, 'give exactly one of "thickness" (a length) or "waves" '
                           "(optical thickness in waves at design_wavelength)")
            ok = False
        elif waves is not None and design_wl is None:
            lt.error("waves", 'needs the coating\'s "design_wavelength"')
            ok = False
        lt.finish()
        if model is None or (thickness is None and waves is None):
            ok = False
        out.append((mname, model, thickness, waves))
    return out if ok else None


class PerSubstrate:
    """A coating whose design depends on the solid it is applied to (a V-coat).

    ``make(substrate_model, substrate_name) -> FaceTreatment``; results are cached per
    substrate name.
    """

    def __init__(self, name: str, make):
        self.name, self._make, self._cache = name, make, {}

    def for_substrate(self, model, substrate_name: str) -> FaceTreatment:
        if substrate_name not in self._cache:
            self._cache[substrate_name] = self._make(model, substrate_name)
        return self._cache[substrate_name]


def read_coating(name: str, t: Table, build: Build):
    """One ``[coatings.NAME]`` table as a :class:`FaceTreatment` (or a
    :class:`PerSubstrate` for a V-coat without an explicit ``substrate``)."""
    kind = t.string("kind", required=True, choices=COATING_KINDS)
    t.string("note")
    co = _coatings_module()
    out = None
    try:
        if kind in SCATTER_KINDS:
            out = _read_scatter(kind, name, t, build)
        elif kind == "absorber":
            out = FaceTreatment("absorber", coating_name=name)
        elif kind == "ideal":
            r = t.quantity("reflectance", "fraction", required=True, nonnegative=True, maximum=1.0)
            if r is not None:
                out = FaceTreatment("ideal", coating=co.ideal(r, name=name), reflectance=r,
                                    coating_name=name)
        elif kind == "mirror":
            metal = t.string("metal")
            thickness = t.quantity("thickness", "length", positive=True)
            refl = t.quantity("reflectance", "fraction", nonnegative=True, maximum=1.0)
            if metal is None:
                if "thickness" in t.data:
                    t.error("thickness", 'a perfect mirror has no thickness; add "metal" for a metal film')
                elif not t.has("metal") and not (t.has("reflectance") and refl is None):
                    out = FaceTreatment("mirror", coating=None, reflectance=refl, coating_name=name)
            else:
                if "reflectance" in t.data:
                    t.error("reflectance", "a metal mirror's reflectance follows from the metal; "
                                           'remove "reflectance" or "metal"')
                model = resolve_material(build, t.path("metal"), metal)
                if thickness is None and not t.has("thickness"):
                    thickness = DEFAULT_METAL_THICKNESS
                if model is not None and thickness is not None:
                    out = FaceTreatment("mirror", coating=co.stack([(model, thickness)], name=name),
                                        coating_name=name)
        elif kind in ("stack", "quarter-wave", "v-coat", "hl-mirror"):
            wl = t.quantity("design_wavelength", "wavelength", positive=True,
                            required=kind != "stack")
            coating = None
            if kind == "stack":
                layers = _layer_list(t, build, wl)
                if layers is not None:
                    spec = []
                    for mname, model, d, waves in layers:
                        if waves is not None:
                            n = float(np.real(co.evaluate_index(model, wl)))
                            d = waves * wl / n  # optical thickness n d = waves * lambda0
                        spec.append((model, d))
                    coating = co.stack(spec, name=name)
            elif kind == "quarter-wave":
                mname = t.string("material", required=True)
                model = resolve_material(build, t.path("material"), mname) if mname else None
                angle = t.quantity("design_angle", "angle", default=0.0, nonnegative=True)
                medium = _design_medium(t, build)
                if model is not None and wl is not None and angle is not None and medium is not None:
                    coating = co.quarter_wave(material=model, design_wavelength=wl,
                                              n_ambient=medium, design_angle=angle, name=name)
            else:
                hi_name = t.string("high", required=True)
                lo_name = t.string("low", required=True)
                hi = resolve_material(build, t.path("high"), hi_name) if hi_name else None
                lo = resolve_material(build, t.path("low"), lo_name) if lo_name else None
                if kind == "hl-mirror":
                    pairs = t.integer("pairs", required=True, minimum=0, maximum=200)
                    angle = t.quantity("design_angle", "angle", default=0.0, nonnegative=True)
                    medium = _design_medium(t, build)
                    if None not in (hi, lo, wl, pairs, angle, medium):
                        coating = co.quarter_wave_mirror(high=hi, low=lo, pairs=pairs,
                                                         design_wavelength=wl,
                                                         n_ambient=medium,
                                                         design_angle=angle, name=name)
                else:
                    sub_name = t.string("substrate")
                    sub = resolve_material(build, t.path("substrate"), sub_name) if sub_name else None
                    if None not in (hi, lo, wl) and (sub is not None or sub_name is None):
                        ambient = _ambient(build)
                        if sub is not None:
                            coating = co.v_coat(high=hi, low=lo, substrate=sub, design_wavelength=wl,
                                                ambient=ambient, name=name)
                        else:
                            def make(model, substrate_name, hi=hi, lo=lo, wl=wl, ambient=ambient):
                                c = co.v_coat(high=hi, low=lo, substrate=model, design_wavelength=wl,
                                              ambient=ambient, name=f"{name} on {substrate_name}")
                                return FaceTreatment("stack", coating=c, coating_name=name)
                            # check once against the design ambient is left to each face
                            out = PerSubstrate(name, make)
            if coating is not None:
                out = FaceTreatment("stack", coating=coating, coating_name=name)
    except TracerError as exc:
        t.error(None, str(exc))
        out = None
    except (ValueError, TypeError, ArithmeticError, AttributeError) as exc:
        t.error(None, f"could not build the coating: {exc}")
        out = None
    t.finish(context=f'for a coating of kind "{kind}"' if kind else None)
    return out


def _specular_part(name: str, t: Table, build: Build):
    """The specular treatment under a scatter model: ``specular`` = ``"fresnel"`` (the bare
    interface) or the name of a coating without scatter, defined in the file."""
    spec = t.string("specular", default="fresnel") or "fresnel"
    if spec == "fresnel":
        return BUILTIN_TREATMENTS["uncoated"]
    found = build.coatings.get(spec)
    if isinstance(found, FaceTreatment) and found.scatter is None and found.kind != "absorber":
        return found
    if isinstance(found, PerSubstrate):
        t.error("specular", f'"{spec}" is designed per substrate (a V-coat without "substrate"); '
                            'give it a "substrate" to use it under a scatter treatment')
    elif found is not None:
        t.error("specular", f'"{spec}" cannot be the specular part of a scatter treatment (expected '
                            '"fresnel" or a coating without scatter that is not an absorber)')
    elif spec in getattr(build, "coating_keys", ()):
        pass  # defined but broken: already reported
    else:
        known = sorted(k for k, v in build.coatings.items()
                       if isinstance(v, FaceTreatment) and v.scatter is None)
        t.error("specular", f'unknown coating "{spec}"; expected "fresnel" or one of '
                            f"{', '.join(known)}")
    return None


def _read_scatter(kind: str, name: str, t: Table, build: Build):
    """A scatter treatment (module docstring) as a :class:`FaceTreatment` with ``scatter``."""
    from .. import scatter as sc
    from ..scatter import table as _table  # noqa: F401  (sc.table below)

    depol = t.quantity("depolarization", "fraction", default=1.0, nonnegative=True, maximum=1.0)
    if kind == "black":
        diffuse = t.quantity("diffuse_reflectance", "fraction", required=True, nonnegative=True,
                             maximum=1.0)
        specular = t.quantity("specular_reflectance", "fraction", default=0.0, nonnegative=True,
                              maximum=1.0)
        if None in (diffuse, specular, depol):
            return None
        if diffuse + specular > 1.0:
            t.error("diffuse_reflectance", f"diffuse_reflectance + specular_reflectance = "
                                           f"{diffuse + specular:g} exceeds 1")
            return None
        return FaceTreatment("mirror", coating=None, reflectance=specular, coating_name=name,
                             scatter=sc.BlackSurface(diffuse=diffuse, specular=specular,
                                                     depolarization=depol))
    base = _specular_part(name, t, build)
    rest = "specular"
    if kind in ("lambertian", "bsdf-table"):
        rest = t.string("rest", default="specular", choices=("specular", "absorbed")) or "specular"
    model = None
    if kind == "lambertian":
        refl = t.quantity("reflectance", "fraction", required=True, nonnegative=True, maximum=1.0)
        trans = t.quantity("transmittance", "fraction", default=0.0, nonnegative=True, maximum=1.0)
        if refl is not None and trans is not None:
            if refl + trans > 1.0:
                t.error("reflectance", f"reflectance + transmittance = {refl + trans:g} exceeds 1")
            elif depol is not None:
                model = sc.Lambertian(reflectance=refl, transmittance=trans, rest=rest,
                                      depolarization=depol)
    elif kind == "rough":
        sigma = t.quantity("rms_roughness", "length", required=True, positive=True)
        corr = t.quantity("correlation_length", "length", required=True, positive=True)
        expo = t.number("psd_exponent", default=2.0, minimum=1.0)
        if expo is not None and expo <= 1.0:
            t.error("psd_exponent", f"expected a number > 1 (the roughness must be finite), got {expo:g}")
            expo = None
        if None not in (sigma, corr, expo, depol):
            model = sc.RoughSurface(rms_roughness=sigma, correlation_length=corr, exponent=expo,
                                    depolarization=depol)
    else:  # bsdf-table
        path = t.string("file", required=True)
        side = t.string("side", default="reflect", choices=("reflect", "transmit")) or "reflect"
        file = None
        if path is not None:
            file = resolve_scene_file(t, build, "file", path, what="BSDF table",
                                      expected="a CSV file with the columns "
                                               + ",".join(sc.table.COLUMNS))
        if file is not None and depol is not None:
            try:
                model = sc.table.read_table(
                    file, side=sc.REFLECT_SIDE if side == "reflect" else sc.TRANSMIT_SIDE,
                    rest=rest, depolarization=depol)
            except sc.table.BsdfTableError as exc:
                t.error("file", str(exc))
                model = None
            else:
                for w in model.warnings:
                    t.note("file", w)
    if model is None or base is None:
        return None
    return FaceTreatment(base.kind, coating=base.coating, reflectance=base.reflectance,
                         coating_name=name, scatter=model)


def _ambient(build: Build):
    return build.ambient if build.ambient is not None else 1.0


def _design_medium(t: Table, build: Build):
    """Index model in which ``design_angle`` is measured (``design_medium``, default the
    ambient); ``None`` when the named material is unknown (the problem is recorded)."""
    name = t.string("design_medium")
    if name is None:
        return _ambient(build)
    return resolve_material(build, t.path("design_medium"), name)
