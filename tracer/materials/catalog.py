"""The material catalog: published index models under short names.

``get(name)`` returns a model (case-insensitive; spaces and underscores count as
hyphens; a few aliases such as "silica" or "sapphire"); ``names()`` lists the
canonical names. A name ``glass:NNNVVV`` builds a generic glass from any six-digit
glass code (see :func:`tracer.materials.models.glass_from_code`).

Every entry states its source and valid range in its ``reference`` attribute. Where a
published formula has several forms, the form used here is written out. Sellmeier
coefficients are those of the cited papers (as distributed in the public-domain
refractiveindex.info database, which was used to check the digits); resonance
wavelengths L_i published in um enter as C_i = L_i**2.

Catalog
-------
=========================  ==============================================  ==========
name                       source, model                                   range [um]
=========================  ==============================================  ==========
fused-silica               Malitson 1965, 3-term Sellmeier, 20 degC        0.21-3.71
caf2                       Malitson 1963, 3-term Sellmeier, 24 degC        0.23-9.7
sapphire-o, sapphire-e     Malitson and Dodge 1972, 3-term Sellmeier       0.2-5.0
mgf2-o, mgf2-e             Dodge 1984, 3-term Sellmeier, 19 degC           0.2-7.0
water                      Daimon and Masumura 2007, 4-term, 20.0 degC     0.182-1.129
pmma, polycarbonate        Sultanova et al. 2009, 1-term Sellmeier         0.4368-1.052
air                        Ciddor 1996, 15 degC, 101325 Pa, dry, 450 ppm   0.3-1.69
air-lab                    Ciddor 1996 at 20 degC, 101325 Pa, 50 % RH      0.3-1.69
air-radio                  Smith and Weintraub 1953 dry term, 15 degC      1e3-1e9
vacuum                     n = 1                                           all
crown-517642 ...           generic glasses by glass code (Cauchy fit)      0.38-1.1
microwave-dielectric-1.44  constant n = 1.44 (invented, typical)           1e3-1e6
optical-cement-1.56        constant n = 1.56 (invented, typical)           0.35-2.5
ta2o5-film                 Gao et al. 2012, tabulated n, k (coating)       0.35-1.5
aluminium                  Rakić 1995, tabulated n, k                      0.207-12.4
silver, gold               Johnson and Christy 1972, tabulated n, k        0.188-1.937
=========================  ==============================================  ==========

Aliases: "sapphire" and "mgf2" mean the ordinary ray (an isotropic stand-in for a
uniaxial crystal: use the -o/-e entries when the optic axis matters); "silica" and
"sio2" mean fused silica; "aluminum"/"al", "ag", "au" the metals.

Models are shared: ``get`` returns the same object for the same name, so treat a
model as read-only.

Examples
--------
>>> m = get("Fused Silica")
>>> m.name
'fused-silica'
>>> round(float(m.relative_index(1064e-9).real), 4)
1.4496
>>> get("glass:517642").name
'glass:517642'
"""

from __future__ import annotations

import difflib
import re
from collections.abc import Callable
from dataclasses import dataclass

from tracer.errors import MaterialError
from tracer.materials import catalog_films, catalog_metals
from tracer.materials.models import (
    CiddorAir,
    ConstantIndex,
    IndexModel,
    RadioAir,
    Sellmeier,
    glass_from_code,
)

__all__ = ["get", "names", "aliases", "describe", "ENTRIES"]

_UM = 1e-6


@dataclass(frozen=True)
class Entry:
    """One catalog entry: how to build the model, and its aliases."""

    name: str
    build: Callable[[], IndexModel]
    aliases: tuple[str, ...] = ()
    summary: str = ""


def _sellmeier(name, B, C, lo_um, hi_um, reference, *, squared_l=True):
    C2 = tuple(c * c for c in C) if squared_l else tuple(C)
    return Sellmeier(B, C2, name=name, valid_range=(lo_um * _UM, hi_um * _UM),
                     reference=reference)


def _fused_silica():
    # n^2 - 1 = sum B_i l^2 / (l^2 - L_i^2), L_i in um: Eq. in Table / abstract of [Malitson 1965]
    return _sellmeier(
        "fused-silica", (0.6961663, 0.4079426, 0.8974794), (0.0684043, 0.1162414, 9.896161),
        0.21, 3.71,
        "I. H. Malitson, Interspecimen comparison of the refractive index of fused silica, "
        "J. Opt. Soc. Am. 55, 1205-1208 (1965); n^2-1 = sum B_i l^2/(l^2-L_i^2), "
        "B = 0.6961663, 0.4079426, 0.8974794, L = 0.0684043, 0.1162414, 9.896161 um; "
        "20 degC; valid 0.21-3.71 um")


def _caf2():
    return _sellmeier(
        "caf2", (0.5675888, 0.4710914, 3.8484723), (0.050263605, 0.1003909, 34.649040),
        0.23, 9.7,
        "I. H. Malitson, A redetermination of some optical properties of calcium fluoride, "
        "Appl. Opt. 2, 1103-1107 (1963); n^2-1 = sum B_i l^2/(l^2-L_i^2), "
        "B = 0.5675888, 0.4710914, 3.8484723, L = 0.050263605, 0.1003909, 34.649040 um; "
        "24 degC; valid 0.23-9.7 um")


def _sapphire_o():
    return _sellmeier(
        "sapphire-o", (1.4313493, 0.65054713, 5.3414021), (0.0726631, 0.1193242, 18.028251),
        0.2, 5.0,
        "I. H. Malitson and M. J. Dodge, Refractive index and birefringence of synthetic "
        "sapphire, J. Opt. Soc. Am. 62, 1405 (1972) (formula as given by M. J. Dodge in the "
        "CRC Handbook of Laser Science and Technology IV, 1986); ordinary ray; "
        "n^2-1 = sum B_i l^2/(l^2-L_i^2), B = 1.4313493, 0.65054713, 5.3414021, "
        "L = 0.0726631, 0.1193242, 18.028251 um; 20 degC; valid 0.2-5.0 um")


def _sapphire_e():
    return _sellmeier(
        "sapphire-e", (1.5039759, 0.55069141, 6.5927379), (0.0740288, 0.1216529, 20.072248),
        0.2, 5.0,
        "I. H. Malitson and M. J. Dodge, Refractive index and birefringence of synthetic "
        "sapphire, J. Opt. Soc. Am. 62, 1405 (1972) (formula as given by M. J. Dodge in the "
        "CRC Handbook of Laser Science and Technology IV, 1986); extraordinary ray; "
        "n^2-1 = sum B_i l^2/(l^2-L_i^2), B = 1.5039759, 0.55069141, 6.5927379, "
        "L = 0.0740288, 0.1216529, 20.072248 um; 20 degC; valid 0.2-5.0 um")


def _mgf2_o():
    return _sellmeier(
        "mgf2-o", (0.48755108, 0.39875031, 2.3120353), (0.04338408, 0.09461442, 23.793604),
        0.2, 7.0,
        "M. J. Dodge, Refractive properties of magnesium fluoride, Appl. Opt. 23, "
        "1980-1985 (1984); ordinary ray; n^2-1 = sum B_i l^2/(l^2-L_i^2), "
        "B = 0.48755108, 0.39875031, 2.3120353, L = 0.04338408, 0.09461442, 23.793604 um; "
        "19 degC; valid 0.2-7.0 um (bulk crystal; evaporated films are typically lower)")


def _mgf2_e():
    return _sellmeier(
        "mgf2-e", (0.41344023, 0.50497499, 2.4904862), (0.03684262, 0.09076162, 23.771995),
        0.2, 7.0,
        "M. J. Dodge, Refractive properties of magnesium fluoride, Appl. Opt. 23, "
        "1980-1985 (1984); extraordinary ray; n^2-1 = sum B_i l^2/(l^2-L_i^2), "
        "B = 0.41344023, 0.50497499, 2.4904862, L = 0.03684262, 0.09076162, 23.771995 um; "
        "19 degC; valid 0.2-7.0 um")


def _water():
    # Daimon and Masumura 2007, four-term Sellmeier with C_i given directly in um^2.
    return _sellmeier(
        "water",
        (5.684027565e-1, 1.726177391e-1, 2.086189578e-2, 1.130748688e-1),
        (5.101829712e-3, 1.821153936e-2, 2.620722293e-2, 1.069792721e1),
        0.182, 1.129,
        "M. Daimon and A. Masumura, Measurement of the refractive index of distilled water "
        "from the near-infrared region to the ultraviolet region, Appl. Opt. 46, "
        "3811-3820 (2007); distilled water at 20.0 degC; n^2-1 = sum B_i l^2/(l^2-C_i), "
        "B = 5.684027565e-1, 1.726177391e-1, 2.086189578e-2, 1.130748688e-1, "
        "C = 5.101829712e-3, 1.821153936e-2, 2.620722293e-2, 1.069792721e1 um^2; "
        "valid 0.182-1.129 um",
        squared_l=False)


def _pmma():
    return _sellmeier(
        "pmma", (1.1819,), (0.011313,), 0.4368, 1.052,
        "N. Sultanova, S. Kasarova and I. Nikolov, Dispersion properties of optical "
        "polymers, Acta Physica Polonica A 116, 585-587 (2009): measured indices, fitted "
        "with the one-term Sellmeier n^2-1 = 1.1819 l^2/(l^2-0.011313 um^2) (fit by "
        "M. Polyanskiy, refractiveindex.info); 20 degC; valid 0.4368-1.052 um",
        squared_l=False)


def _polycarbonate():
    return _sellmeier(
        "polycarbonate", (1.4182,), (0.021304,), 0.4368, 1.052,
        "N. Sultanova, S. Kasarova and I. Nikolov, Dispersion properties of optical "
        "polymers, Acta Physica Polonica A 116, 585-587 (2009): measured indices, fitted "
        "with the one-term Sellmeier n^2-1 = 1.4182 l^2/(l^2-0.021304 um^2) (fit by "
        "M. Polyanskiy, refractiveindex.info); 20 degC; valid 0.4368-1.052 um",
        squared_l=False)


def _air():
    return CiddorAir(name="air")


def _air_lab():
    return CiddorAir(temperature=293.15, pressure=101325.0, humidity=0.5, co2=450e-6,
                     name="air-lab")


def _air_radio():
    return RadioAir(name="air-radio")


def _vacuum():
    return ConstantIndex(1.0, name="vacuum", reference="vacuum, n = 1 exactly",
                         index_basis="vacuum")


def _generic(name: str, code: str):
    def build():
        return glass_from_code(code, name=name)
    return build


def _microwave_dielectric():
    return ConstantIndex(
        1.44, name="microwave-dielectric-1.44", valid_range=(1e-3, 1.0),
        reference=("invented typical low-loss microwave dielectric, n = 1.44 (eps_r = "
                   "2.0736, close to that of PTFE; common practice, no source), lossless; "
                   "valid 1 mm-1 m; for loss use ConstantIndex.from_loss_tangent"),
        index_basis="vacuum")  # from a permittivity: absolute


def _cement():
    return ConstantIndex(
        1.56, name="optical-cement-1.56", valid_range=(0.35e-6, 2.5e-6),
        reference=("invented typical optical cement, constant n = 1.56 (no dispersion, "
                   "no absorption; common practice, no source); valid 0.35-2.5 um"))


_ENTRY_LIST = [
    Entry("fused-silica", _fused_silica, ("silica", "sio2", "fused-quartz"),
          "Malitson 1965 Sellmeier"),
    Entry("caf2", _caf2, ("calcium-fluoride",), "Malitson 1963 Sellmeier"),
    Entry("sapphire-o", _sapphire_o, ("sapphire", "al2o3"),
          "Malitson and Dodge 1972, ordinary ray"),
    Entry("sapphire-e", _sapphire_e, (), "Malitson and Dodge 1972, extraordinary ray"),
    Entry("mgf2-o", _mgf2_o, ("mgf2", "magnesium-fluoride"), "Dodge 1984, ordinary ray"),
    Entry("mgf2-e", _mgf2_e, (), "Dodge 1984, extraordinary ray"),
    Entry("water", _water, ("h2o",), "Daimon and Masumura 2007, 20 degC"),
    Entry("pmma", _pmma, ("acrylic",), "Sultanova et al. 2009"),
    Entry("polycarbonate", _polycarbonate, ("pc",), "Sultanova et al. 2009"),
    Entry("air", _air, ("standard-air",), "Ciddor 1996 standard air"),
    Entry("air-lab", _air_lab, (), "Ciddor 1996, 20 degC, 50 % RH"),
    Entry("air-radio", _air_radio, ("air-microwave",), "Smith and Weintraub 1953"),
    Entry("vacuum", _vacuum, (), "n = 1"),
    Entry("crown-517642", _generic("crown-517642", "517642"), (), "generic crown"),
    Entry("flint-620364", _generic("flint-620364", "620364"), (), "generic flint"),
    Entry("dense-flint-755276", _generic("dense-flint-755276", "755276"), (),
          "generic dense flint"),
    Entry("microwave-dielectric-1.44", _microwave_dielectric, (), "invented, n = 1.44"),
    Entry("optical-cement-1.56", _cement, ("cement",), "invented, n = 1.56"),
    Entry("ta2o5-film", catalog_films.tantala_film, ("ta2o5", "tantala"),
          "Gao, Lemarchand and Lequime 2012, coating layer"),
    Entry("aluminium", catalog_metals.aluminium, ("aluminum", "al"), "Rakić 1995"),
    Entry("silver", catalog_metals.silver, ("ag",), "Johnson and Christy 1972"),
    Entry("gold", catalog_metals.gold, ("au",), "Johnson and Christy 1972"),
]

#: Catalog entries by canonical name.
ENTRIES: dict[str, Entry] = {e.name: e for e in _ENTRY_LIST}

#: Glass codes listed by :func:`names` (any other code also works with ``glass:``).
_LISTED_CODES = ("glass:517642", "glass:620364")

_ALIASES: dict[str, str] = {}
for _e in _ENTRY_LIST:
    _ALIASES[_e.name] = _e.name
    for _a in _e.aliases:
        _ALIASES[_a] = _e.name

_CACHE: dict[str, IndexModel] = {}

_GLASS = re.compile(r"^glass:\s*(.+)$")


def _key(name: str) -> str:
    return re.sub(r"[\s_]+", "-", name.strip().lower())


def names() -> list[str]:
    """Canonical catalog names (aliases excluded), plus a few ``glass:`` codes.

    >>> "fused-silica" in names() and "glass:517642" in names()
    True
    """
    return [*ENTRIES, *_LISTED_CODES]


def aliases() -> dict[str, str]:
    """Every accepted spelling (lower case) -> canonical name."""
    return dict(_ALIASES)


def describe(name: str) -> str:
    """One line: canonical name, valid range and reference of an entry."""
    m = get(name)
    lo, hi = m.valid_range
    return f"{m.name}: {lo:.6g}-{hi:.6g} m; {m.reference}"


def get(name: str) -> IndexModel:
    """The catalog model called ``name`` (case-insensitive).

    Parameters
    ----------
    name : str
        Canonical name, alias, or ``glass:NNNVVV``.

    Returns
    -------
    IndexModel
        The same object on every call for the same entry (models are immutable).

    Raises
    ------
    tracer.errors.MaterialError
        Unknown name (the message suggests close names) or a malformed glass code.

    Examples
    --------
    >>> get("silver").name
    'silver'
    >>> get("fused silca")
    Traceback (most recent call last):
    ...
    tracer.errors.MaterialError: unknown material 'fused silca' (did you mean 'fused-silica'?); known materials: fused-silica, caf2, sapphire-o, sapphire-e, mgf2-o, mgf2-e, water, pmma, polycarbonate, air, air-lab, air-radio, vacuum, crown-517642, flint-620364, dense-flint-755276, microwave-dielectric-1.44, optical-cement-1.56, ta2o5-film, aluminium, silver, gold, or glass:NNNVVV for a generic glass of that code
    """
    if not isinstance(name, str):
        raise MaterialError(f"a material name must be a string, got {name!r}")
    key = _key(name)
    glass = _GLASS.match(key)
    if glass is not None:
        code = glass[1].replace("-", "")
        canonical = f"glass:{code}"
        if canonical not in _CACHE:
            model = glass_from_code(code)  # raises MaterialError for a bad code
            _CACHE[model.name] = model
            canonical = model.name
        return _CACHE[canonical]
    canonical = _ALIASES.get(key)
    if canonical is None:
        candidates = list(_ALIASES)
        close = difflib.get_close_matches(key, candidates, n=3, cutoff=0.6)
        close = list(dict.fromkeys(_ALIASES[c] for c in close))
        hint = ""
        if close:
            hint = " (did you mean " + " or ".join(repr(c) for c in close) + "?)"
        raise MaterialError(
            f"unknown material {name!r}{hint}; known materials: {', '.join(ENTRIES)}, "
            "or glass:NNNVVV for a generic glass of that code"
        )
    if canonical not in _CACHE:
        _CACHE[canonical] = ENTRIES[canonical].build()
    return _CACHE[canonical]
