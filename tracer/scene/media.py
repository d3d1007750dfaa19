"""``[materials.NAME]`` (inline index models) and resolving material names.

A material name in a scene (``solids.X.material``, a gap ``medium``, ``ambient``, a
coating layer) is looked up first among the scene's own ``[materials.NAME]`` and then
in the catalog (:func:`tracer.materials.get`, which also reads ``glass:517642``).

Models (``model = ...``): ``constant`` (``n``, optional ``k`` or ``loss_tangent``),
``cauchy`` (``A``, ``B`` [um^2], ``C`` [um^4], optional ``k``), ``sellmeier`` (arrays
``B`` and ``C`` [um^2], optional ``A`` = 1), ``table`` (``wavelengths``, ``n``,
optional ``k``), ``glass-code`` (``code = "517642"``), ``catalog`` (``name``: an alias
of a catalog material). Common keys: ``valid_range = ["400 nm", "700 nm"]`` and
``reference``; the formula models also take ``index_basis`` (``"air"``, the default: the
values are relative to air, as glass catalogs quote them; ``"vacuum"``: absolute
indices, e.g. from a permittivity; :mod:`tracer.materials.basis`).
"""

from __future__ import annotations


import numpy as np

from .. import units
from ..errors import TracerError
from .context import Build
from .problems import did_you_mean
from .ranges import INDEX_IMAG, INDEX_REAL, LOSS_TANGENT, check_index
from .reader import Table

__all__ = ["read_material", "resolve_material", "MATERIAL_MODELS", "check_range"]

MATERIAL_MODELS = ("constant", "cauchy", "sellmeier", "table", "glass-code", "catalog")


def _catalog():
    try:
        from .. import materials
    except ImportError:  # pragma: no cover - the catalog is part of the package
        return None
    return materials


def read_material(name: str, t: Table, build: Build):
    """Build one inline material; ``None`` (with problems recorded) when invalid."""
    model = t.string("model", required=True, choices=MATERIAL_MODELS)
    reference = t.string("reference", default=f"scene material {name!r} (user values)")
    vr = t.quantities("valid_range", "wavelength", length=2, positive=True)
    if vr is not None and not vr[1] > vr[0]:
        t.error("valid_range", "expected [shortest, longest] wavelengths, in increasing order")
        vr = None
    bad_range = t.has("valid_range") and vr is None
    basis = t.string("index_basis", default="air", choices=("air", "vacuum"))
    mats = _catalog()
    kwargs = {"name": name, "reference": reference or "", "index_basis": basis or "air"}
    out = None
    try:
        if model == "constant":
            n = t.number("n", required=True, minimum=INDEX_REAL[0], maximum=INDEX_REAL[1],
                         what="a refractive index (real part)")
            k = t.number("k", minimum=INDEX_IMAG[0], maximum=INDEX_IMAG[1],
                         what="an extinction coefficient")
            tan_d = t.number("loss_tangent", minimum=LOSS_TANGENT[0], maximum=LOSS_TANGENT[1],
                             what="a loss tangent")
            if k is not None and tan_d is not None:
                t.error("loss_tangent", 'give either "k" or "loss_tangent", not both')
            elif n is not None and not bad_range:
                rng = {"valid_range": tuple(vr)} if vr is not None else {}
                if tan_d is not None:
                    out = mats.ConstantIndex.from_loss_tangent(n, tan_d, **kwargs, **rng)
                else:
                    out = mats.ConstantIndex(complex(n, k or 0.0), **kwargs, **rng)
        elif model == "cauchy":
            a = t.number("A", required=True, minimum=INDEX_REAL[0], maximum=INDEX_REAL[1],
                         what="a refractive index (real part)")
            b = t.number("B", default=0.0, minimum=-1e6, maximum=1e6)
            c = t.number("C", default=0.0, minimum=-1e6, maximum=1e6)
            k = t.number("k", default=0.0, minimum=INDEX_IMAG[0], maximum=INDEX_IMAG[1],
                         what="an extinction coefficient")
            if None not in (a, b, c, k) and not bad_range:
                rng = {"valid_range": tuple(vr)} if vr is not None else {}
                out = mats.Cauchy(a, b, c, kappa=k, **kwargs, **rng)
        elif model == "sellmeier":
            b = t.numbers("B", required=True)
            c = t.numbers("C", required=True, minimum=0.0)
            a = t.number("A", default=1.0, minimum=0.0, maximum=INDEX_REAL[1] ** 2)
            if vr is None and not bad_range:
                t.error(None, 'missing key "valid_range": a Sellmeier fit needs the wavelengths it '
                              'was made for, e.g. valid_range = ["400 nm", "1000 nm"]')
            elif b is not None and c is not None and b.size != c.size:
                t.error("C", f"expected as many C terms as B terms ({b.size}), got {c.size}")
            elif b is not None and c is not None and a is not None and vr is not None:
                out = mats.Sellmeier(b, c, A=a, valid_range=tuple(vr), **kwargs)
        elif model == "table":
            wl = t.quantities("wavelengths", "wavelength", required=True, positive=True)
            n = t.numbers("n", required=True, minimum=0.0)
            k = t.numbers("k", minimum=0.0)
            t.known("valid_range")
            if vr is not None:
                t.error("valid_range", "a table's valid range is the span of its wavelengths")
            if wl is not None and n is not None:
                if n.size != wl.size or (k is not None and k.size != wl.size):
                    t.error(None, f"expected n (and k) with one value per wavelength ({wl.size})")
                elif wl.size < 2 or not all(wl[1:] > wl[:-1]):
                    t.error("wavelengths", "expected at least two wavelengths in increasing order")
                elif not all((n >= INDEX_REAL[0]) & (n <= INDEX_REAL[1])):
                    t.error("n", f"expected every index between {INDEX_REAL[0]:g} and "
                                 f"{INDEX_REAL[1]:g}, got {n.tolist()}")
                elif k is not None and not all(k <= INDEX_IMAG[1]):
                    t.error("k", f"expected every extinction coefficient at most {INDEX_IMAG[1]:g}, "
                                 f"got {k.tolist()}")
                else:
                    out = mats.Tabulated(wl, n, k, **kwargs)
        elif model == "glass-code":
            if t.has("index_basis") and "index_basis" in t.data:
                t.error("index_basis", "a glass code gives n_d relative to air by definition")
            raw = t.raw("code")
            if raw is None:
                t.error(None, 'missing key "code": expected a six-digit glass code such as "517642"')
            elif isinstance(raw, bool) or not isinstance(raw, (str, int)):
                t.error("code", f'expected a six-digit glass code such as "517642", got {raw!r}')
            elif not bad_range:
                rng = {"valid_range": tuple(vr)} if vr is not None else {}
                try:
                    out = mats.glass_from_code(str(raw), name=name, **rng)
                except TracerError as exc:
                    t.error("code", str(exc))
        elif model == "catalog":
            ref = t.string("name", required=True)
            if ref is not None:
                if ref == name:
                    t.error("name", "a catalog alias cannot name itself")
                else:
                    try:
                        out = mats.get(ref)
                    except TracerError as exc:
                        t.error("name", str(exc))
            for bad in ("valid_range", "reference", "index_basis"):
                if t.has(bad) and bad in t.data:
                    t.error(bad, "a catalog alias takes range and reference from the catalog")
    except TracerError as exc:
        t.error(None, str(exc))
        out = None
    except (ValueError, TypeError, ArithmeticError, AttributeError) as exc:
        t.error(None, f"could not build the material: {exc}")
        out = None
    t.finish(context=f'for model "{model}"' if model else None)
    return out


def resolve_material(build: Build, key: str, name):
    """The index model named ``name`` (scene-local first, then the catalog), or ``None``."""
    if not isinstance(name, str) or not name.strip():
        build.problems.error(key, f"expected a material name, got {name!r}")
        return None
    if name in build.materials:
        return build.materials[name]
    if name in build.material_keys:  # defined in the scene, but broken: already reported
        return None
    mats = _catalog()
    try:
        return mats.get(name)
    except TracerError as exc:
        message = str(exc)
        local = sorted(build.material_keys)
        if local:
            message += f" (scene materials: {', '.join(local)})"
        build.problems.error(key, message)
    except (AttributeError, ImportError):
        build.problems.error(key, f'unknown material "{name}"'
                             + did_you_mean(name, build.material_keys))
    return None


def check_range(build: Build, key: str, model, name: str, wavelengths) -> None:
    """Record a problem when ``model`` is not valid at every scene wavelength [m]."""
    if model is None or wavelengths is None or len(wavelengths) == 0:
        return
    try:
        values = np.asarray(model.refractive_index(wavelengths), dtype=complex).ravel()
    except TracerError as exc:
        build.problems.error(key, f'material "{name}": {exc}')
        return
    except Exception as exc:  # a broken model must not crash loading
        build.problems.error(key, f'material "{name}" cannot be evaluated: {exc}')
        return
    wl = np.broadcast_to(np.asarray(wavelengths, dtype=float), values.shape)
    for w, n in zip(wl, values):
        bad = check_index(complex(n))
        if bad is not None:
            build.problems.error(key, f'material "{name}" at {units.format_quantity(float(w), "wavelength")}: '
                                      f"{bad}")
            return
