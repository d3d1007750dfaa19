"""Refractive-index models and the catalog of published materials.

An index model is any object with ``refractive_index(wavelength, *, extrapolate=False)``
returning complex ``n + i*kappa`` (vacuum wavelength [m], broadcast), and attributes
``name``, ``valid_range`` (m, m) and ``reference``. See :mod:`tracer.materials.models`
for the model classes and :mod:`tracer.materials.catalog` for the named materials.

>>> from tracer import materials
>>> round(float(materials.get("caf2").relative_index(587.6e-9).real), 4)  # as quoted, relative to air
1.4338
"""

from tracer.materials.catalog import aliases, describe, get, names
from tracer.materials.models import (
    FRAUNHOFER_C,
    FRAUNHOFER_D,
    FRAUNHOFER_F,
    Cauchy,
    CiddorAir,
    ConstantIndex,
    IndexModel,
    RadioAir,
    Sellmeier,
    Tabulated,
    glass_from_code,
    parse_glass_code,
)

from tracer.materials import models as _models

__all__ = ["get", "names", "aliases", "describe", *_models.__all__]
