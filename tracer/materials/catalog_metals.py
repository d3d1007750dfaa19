"""Tabulated optical constants of metals for mirrors: aluminium, silver, gold.

Each table gives the vacuum wavelength [um], n and kappa of the published source,
transcribed digit for digit from the sources' tabulations as distributed in the
public-domain (CC0) refractiveindex.info database (not written from memory).
Values between rows are interpolated linearly in wavelength (see
:class:`tracer.materials.models.Tabulated`).

References
----------
[1] P. B. Johnson and R. W. Christy, "Optical constants of the noble metals",
    Physical Review B 6, 4370-4379 (1972); room-temperature evaporated films
    (silver and gold, 0.188-1.937 um, Table I).
[2] A. D. Rakić, "Algorithm for the determination of intrinsic optical constants of
    metal films: application to aluminum", Applied Optics 34, 4755-4767 (1995);
    evaporated aluminium (rows 0.207-12.4 um of the published tabulation).
"""

from __future__ import annotations

import numpy as np

from tracer.materials.models import Tabulated

__all__ = ["silver", "gold", "aluminium", "table"]

# wavelength [um]   n   kappa            Johnson and Christy 1972 [1], silver
_SILVER = """
0.1879 1.07 1.212
0.1916 1.10 1.232
0.1953 1.12 1.255
0.1993 1.14 1.277
0.2033 1.15 1.296
0.2073 1.18 1.312
0.2119 1.20 1.325
0.2164 1.22 1.336
0.2214 1.25 1.342
0.2262 1.26 1.344
0.2313 1.28 1.357
0.2371 1.28 1.367
0.2426 1.30 1.378
0.2490 1.31 1.389
0.2551 1.33 1.393
0.2616 1.35 1.387
0.2689 1.38 1.372
0.2761 1.41 1.331
0.2844 1.41 1.264
0.2924 1.39 1.161
0.3009 1.34 0.964
0.3107 1.13 0.616
0.3204 0.81 0.392
0.3315 0.17 0.829
0.3425 0.14 1.142
0.3542 0.10 1.419
0.3679 0.07 1.657
0.3815 0.05 1.864
0.3974 0.05 2.070
0.4133 0.05 2.275
0.4305 0.04 2.462
0.4509 0.04 2.657
0.4714 0.05 2.869
0.4959 0.05 3.093
0.5209 0.05 3.324
0.5486 0.06 3.586
0.5821 0.05 3.858
0.6168 0.06 4.152
0.6595 0.05 4.483
0.7045 0.04 4.838
0.7560 0.03 5.242
0.8211 0.04 5.727
0.8920 0.04 6.312
0.9840 0.04 6.992
1.0880 0.04 7.795
1.2160 0.09 8.828
1.3930 0.13 10.10
1.6100 0.15 11.85
1.9370 0.24 14.08
"""

# wavelength [um]   n   kappa            Johnson and Christy 1972 [1], gold
_GOLD = """
0.1879 1.28 1.188
0.1916 1.32 1.203
0.1953 1.34 1.226
0.1993 1.33 1.251
0.2033 1.33 1.277
0.2073 1.30 1.304
0.2119 1.30 1.350
0.2164 1.30 1.387
0.2214 1.30 1.427
0.2262 1.31 1.460
0.2313 1.30 1.497
0.2371 1.32 1.536
0.2426 1.32 1.577
0.2490 1.33 1.631
0.2551 1.33 1.688
0.2616 1.35 1.749
0.2689 1.38 1.803
0.2761 1.43 1.847
0.2844 1.47 1.869
0.2924 1.49 1.878
0.3009 1.53 1.889
0.3107 1.53 1.893
0.3204 1.54 1.898
0.3315 1.48 1.883
0.3425 1.48 1.871
0.3542 1.50 1.866
0.3679 1.48 1.895
0.3815 1.46 1.933
0.3974 1.47 1.952
0.4133 1.46 1.958
0.4305 1.45 1.948
0.4509 1.38 1.914
0.4714 1.31 1.849
0.4959 1.04 1.833
0.5209 0.62 2.081
0.5486 0.43 2.455
0.5821 0.29 2.863
0.6168 0.21 3.272
0.6595 0.14 3.697
0.7045 0.13 4.103
0.7560 0.14 4.542
0.8211 0.16 5.083
0.8920 0.17 5.663
0.9840 0.22 6.350
1.0880 0.27 7.150
1.2160 0.35 8.145
1.3930 0.43 9.519
1.6100 0.56 11.21
1.9370 0.92 13.78
"""

# wavelength [um]   n   kappa            Rakić 1995 [2], aluminium
_ALUMINIUM = """
2.0664E-01 1.2677E-01 2.3563E+00
2.4797E-01 1.8137E-01 2.9029E+00
3.0996E-01 2.8003E-01 3.7081E+00
3.2628E-01 3.1474E-01 3.9165E+00
3.6466E-01 3.9877E-01 4.3957E+00
4.1328E-01 5.2135E-01 5.0008E+00
4.4280E-01 6.0790E-01 5.3676E+00
4.7687E-01 7.2780E-01 5.7781E+00
5.1660E-01 8.7340E-01 6.2418E+00
5.6357E-01 1.0728E+00 6.7839E+00
6.1993E-01 1.3660E+00 7.4052E+00
6.5225E-01 1.5724E+00 7.7354E+00
6.8881E-01 1.8301E+00 8.0601E+00
7.2932E-01 2.1606E+00 8.3565E+00
7.7491E-01 2.6154E+00 8.4914E+00
7.9478E-01 2.7675E+00 8.3866E+00
8.1569E-01 2.7668E+00 8.2573E+00
8.3774E-01 2.6945E+00 8.1878E+00
8.8561E-01 2.2802E+00 8.1134E+00
9.1166E-01 1.9739E+00 8.3058E+00
9.3928E-01 1.6784E+00 8.5970E+00
9.6863E-01 1.4867E+00 9.0655E+00
9.9988E-01 1.4359E+00 9.4939E+00
1.0332E+00 1.3998E+00 9.8914E+00
1.1271E+00 1.3281E+00 1.0969E+01
1.2399E+00 1.3157E+00 1.2245E+01
1.3776E+00 1.3899E+00 1.3784E+01
1.5498E+00 1.5782E+00 1.5656E+01
1.7712E+00 1.9205E+00 1.7991E+01
2.0664E+00 2.4738E+00 2.0982E+01
2.4797E+00 3.3372E+00 2.5004E+01
2.7552E+00 3.9380E+00 2.7580E+01
3.0996E+00 4.7097E+00 3.0737E+01
3.2628E+00 5.0735E+00 3.2183E+01
3.4440E+00 5.4903E+00 3.3814E+01
3.6466E+00 5.9564E+00 3.5608E+01
3.8745E+00 6.4808E+00 3.7595E+01
4.1328E+00 7.0796E+00 3.9826E+01
4.4280E+00 7.7757E+00 4.2367E+01
4.7687E+00 8.5881E+00 4.5257E+01
5.1660E+00 9.5580E+00 4.8593E+01
5.6357E+00 1.0742E+01 5.2518E+01
6.1993E+00 1.2195E+01 5.7156E+01
6.8881E+00 1.4088E+01 6.2841E+01
7.7491E+00 1.6755E+01 6.9857E+01
8.8561E+00 2.0837E+01 7.8274E+01
1.0332E+01 2.6216E+01 8.8197E+01
1.2399E+01 3.3519E+01 1.0128E+02
"""


def table(text: str) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Parse a three-column block (um, n, kappa) into (wavelength [m], n, kappa)."""
    data = np.array([[float(x) for x in line.split()] for line in text.strip().splitlines()])
    return data[:, 0] * 1e-6, data[:, 1], data[:, 2]


def silver() -> Tabulated:
    """Silver, Johnson and Christy 1972 [1], 0.1879-1.937 um."""
    return Tabulated(*table(_SILVER), name="silver", index_basis="vacuum", reference=(
        "P. B. Johnson and R. W. Christy, Optical constants of the noble metals, "
        "Phys. Rev. B 6, 4370-4379 (1972); tabulated n, k (evaporated film, room "
        "temperature), linear interpolation"))


def gold() -> Tabulated:
    """Gold, Johnson and Christy 1972 [1], 0.1879-1.937 um."""
    return Tabulated(*table(_GOLD), name="gold", index_basis="vacuum", reference=(
        "P. B. Johnson and R. W. Christy, Optical constants of the noble metals, "
        "Phys. Rev. B 6, 4370-4379 (1972); tabulated n, k (evaporated film, room "
        "temperature), linear interpolation"))


def aluminium() -> Tabulated:
    """Aluminium, Rakić 1995 [2], 0.2066-12.4 um."""
    return Tabulated(*table(_ALUMINIUM), name="aluminium", index_basis="vacuum", reference=(
        "A. D. Rakić, Algorithm for the determination of intrinsic optical constants of "
        "metal films: application to aluminum, Appl. Opt. 34, 4755-4767 (1995); "
        "tabulated n, k (evaporated film), linear interpolation"))
