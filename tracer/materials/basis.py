"""Index bases: catalog indices are relative to air, the engine works in absolute indices.

Glass catalogs, glass codes and the published dispersion formulas of optical glasses and
crystals give the index *relative to air* (the ratio of the speed of light in air to that
in the material; common practice for glass catalogs, no source), while the gases' own
models (Ciddor air, radio air) and vacuum give *absolute* indices. A model says which
through its ``index_basis`` (``"air"``, the default, or ``"vacuum"``).

Every model's ``refractive_index`` returns the absolute index at a vacuum wavelength, so
the engine, the coefficient functions and the thin-film solver see one basis: an
air-referenced formula is multiplied by the index of standard air (:data:`STANDARD_AIR`: Ciddor's standard air, 15 degC, 101 325 Pa,
dry, 450 ppm CO2) at the same wavelength. A glass of catalog index n in a scene surrounded
by ``air`` then meets an index ratio of exactly n, as in optical design practice; in
``vacuum`` the ratio is n * n_air, its absolute index; thin-film phases and optical path
lengths are the absolute ones. ``relative_index`` gives the value relative to air (what a
catalog quotes). Plain numbers given to the low-level functions (:mod:`tracer.fresnel`,
:mod:`tracer.films`) are used as they are.

Standard air outside Ciddor's range (0.3-1.69 um) is taken at the nearest end of that
range for shorter or infrared wavelengths below 1 mm (its refractivity changes by less
than 1e-6 over the infrared, recalled from memory), and from the Smith-Weintraub dry term
at 15 degC from 1 mm on (radio and microwave).
"""

from __future__ import annotations

import numpy as np

__all__ = ["STANDARD_AIR", "standard_air_index"]

#: Catalog name of the reference medium of the basis.
STANDARD_AIR = "air"

_CIDDOR_RANGE = (0.3e-6, 1.69e-6)
_RADIO_FROM = 1e-3
_models: dict = {}


def _reference_models():
    if not _models:
        from .models import CiddorAir, RadioAir

        _models["optical"] = CiddorAir(name=STANDARD_AIR)
        _models["radio"] = RadioAir(name="air-radio")
    return _models["optical"], _models["radio"]


def standard_air_index(wavelength) -> np.ndarray:
    """Absolute index of standard air at ``wavelength`` [m] (real, any shape).

    Examples
    --------
    >>> round(float(standard_air_index(587.6e-9)), 6)
    1.000277
    """
    wl = np.asarray(wavelength, dtype=float)
    optical, radio = _reference_models()
    lo, hi = _CIDDOR_RANGE
    n = optical.refractive_index(np.clip(wl, lo, hi)).real
    radio_n = radio.n
    return np.where(wl >= _RADIO_FROM, radio_n, n)
