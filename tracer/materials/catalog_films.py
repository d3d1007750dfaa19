"""Tabulated optical constants of thin-film coating materials.

Rows are a subset of the published tabulation (every 10 nm from 350 to 700 nm, every
50 nm from 700 to 1500 nm), transcribed digit for digit from the source's data as
distributed in the public-domain (CC0) refractiveindex.info database (not written
from memory). Linear interpolation between the kept rows departs from the full table
by less than about 2e-4 in n.

References
----------
[1] L. Gao, F. Lemarchand and M. Lequime, "Exploitation of multiple incidences
    spectrometric measurements for thin film reverse engineering", Optics Express 20,
    15734-15751 (2012): a 400 nm Ta2O5 layer made by ion-assisted electron-beam
    deposition.
"""

from __future__ import annotations

from tracer.materials.catalog_metals import table
from tracer.materials.models import Tabulated

__all__ = ["tantala_film"]

# wavelength [um]   n   kappa            Gao, Lemarchand and Lequime 2012 [1], Ta2O5 film
_TA2O5 = """
0.350 2.317048 0.000655
0.360 2.299649 0.000569
0.370 2.284205 0.000495
0.380 2.270419 0.000431
0.390 2.258048 0.000376
0.400 2.246896 0.000327
0.410 2.236799 0.000284
0.420 2.227622 0.000247
0.430 2.219252 0.000214
0.440 2.211593 0.000184
0.450 2.204562 0.000158
0.460 2.198091 0.000135
0.470 2.192118 0.000115
0.480 2.186592 0.000100
0.490 2.181469 0.000081
0.500 2.176708 0.000067
0.510 2.172274 0.000055
0.520 2.168138 0.000044
0.530 2.164273 0.000035
0.540 2.160655 0.000027
0.550 2.157262 0.000021
0.560 2.154076 0.000015
0.570 2.151080 0.000010
0.580 2.148258 0.000007
0.590 2.145598 0.000004
0.600 2.143086 0.000002
0.610 2.140712 0.000001
0.620 2.138466 0
0.630 2.136339 0
0.640 2.134322 0
0.650 2.132408 0
0.660 2.130589 0
0.670 2.128860 0
0.680 2.127213 0
0.690 2.125645 0
0.700 2.124149 0
0.750 2.117617 0
0.800 2.112356 0
0.850 2.108052 0
0.900 2.104484 0
0.950 2.101491 0
1.000 2.098955 0
1.050 2.096787 0
1.100 2.094918 0
1.150 2.093296 0
1.200 2.091878 0
1.250 2.090631 0
1.300 2.089529 0
1.350 2.088550 0
1.400 2.087676 0
1.450 2.086893 0
1.500 2.086189 0
"""


def tantala_film() -> Tabulated:
    """Ta2O5 coating layer (ion-assisted e-beam), Gao et al. 2012 [1], 0.35-1.5 um."""
    return Tabulated(*table(_TA2O5), name="ta2o5-film", index_basis="vacuum", reference=(
        "L. Gao, F. Lemarchand and M. Lequime, Exploitation of multiple incidences "
        "spectrometric measurements for thin film reverse engineering, Opt. Express 20, "
        "15734-15751 (2012); ion-assisted e-beam Ta2O5 film, tabulated n, k (subset of "
        "rows), linear interpolation; valid 0.35-1.5 um"))
