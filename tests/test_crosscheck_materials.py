"""Cross-check of every catalog material against the published dispersion formulas,
evaluated here independently (coefficients recalled from memory, marked so), and against
a few textbook index values. Flags any discrepancy beyond 1e-5 in n."""

from __future__ import annotations

import numpy as np
import pytest

from test_crosscheck_oracles import cauchy_from_code, ciddor, sellmeier

from tracer import materials

# name: (B, C [um^2], wavelengths [um]); coefficients from memory of the cited papers
SELLMEIER = {
    # Malitson, JOSA 55, 1205 (1965), fused silica 20 degC
    "fused-silica": ((0.6961663, 0.4079426, 0.8974794),
                     (0.0684043**2, 0.1162414**2, 9.896161**2), [0.25, 0.5876, 1.064, 3.0]),
    # Malitson, Appl. Opt. 2, 1103 (1963), CaF2 24 degC
    "caf2": ((0.5675888, 0.4710914, 3.8484723),
             (0.050263605**2, 0.1003909**2, 34.649040**2), [0.25, 0.5876, 1.064, 5.0]),
    # Malitson and Dodge, JOSA 62, 1405 (1972), sapphire ordinary / extraordinary
    "sapphire-o": ((1.4313493, 0.65054713, 5.3414021),
                   (0.0726631**2, 0.1193242**2, 18.028251**2), [0.3, 0.5876, 1.064, 4.0]),
    "sapphire-e": ((1.5039759, 0.55069141, 6.5927379),
                   (0.0740288**2, 0.1216529**2, 20.072248**2), [0.3, 0.5876, 1.064, 4.0]),
    # Dodge, Appl. Opt. 23, 1980 (1984), MgF2 ordinary / extraordinary
    "mgf2-o": ((0.48755108, 0.39875031, 2.3120353),
               (0.04338408**2, 0.09461442**2, 23.793604**2), [0.3, 0.5876, 1.064, 5.0]),
    "mgf2-e": ((0.41344023, 0.50497499, 2.4904862),
               (0.03684262**2, 0.09076162**2, 23.771995**2), [0.3, 0.5876, 1.064, 5.0]),
    # Daimon and Masumura, Appl. Opt. 46, 3811 (2007), water 20 degC (C in um^2)
    "water": ((5.684027565e-1, 1.726177391e-1, 2.086189578e-2, 1.130748688e-1),
              (5.101829712e-3, 1.821153936e-2, 2.620722293e-2, 1.069792721e1), [0.2, 0.5893, 1.0]),
    # Sultanova et al., Acta Phys. Pol. A 116, 585 (2009), one-term fits
    "pmma": ((1.1819,), (0.011313,), [0.45, 0.5893, 1.0]),
    "polycarbonate": ((1.4182,), (0.021304,), [0.45, 0.5893, 1.0]),
}


@pytest.mark.parametrize("name", list(SELLMEIER))
def test_sellmeier_entries(name):
    """Catalog Sellmeier entries vs the published formula evaluated here (1e-5 in n;
    coefficients from memory)."""
    B, C, lams = SELLMEIER[name]
    m = materials.get(name)
    for lam in lams:
        n = complex(m.published_index(lam * 1e-6))
        assert abs(n.real - sellmeier(lam, B, C)) < 1e-5, (name, lam)
        assert n.imag == 0.0


@pytest.mark.parametrize("name,lam_um,n_ref,tol", [
    ("fused-silica", 0.5875618, 1.45846, 2e-5),  # catalogue n_d of fused silica, from memory
    ("fused-silica", 1.064, 1.44963, 2e-5),      # from memory
    ("caf2", 0.5875618, 1.43385, 3e-5),          # from memory
    ("sapphire-o", 0.5875618, 1.76817, 5e-5),    # n_o of sapphire at d, from memory
    ("mgf2-o", 0.6328, 1.37708, 1e-4),           # from memory
    # water absolute index at 589.3 nm, 20 degC: 1.33299 relative to air (refractometry
    # standard, from memory) times n_air 1.000272
    ("water", 0.5893, 1.33299 * 1.000272, 5e-5),
    ("pmma", 0.5893, 1.4905, 2e-4),              # from memory
    ("polycarbonate", 0.5893, 1.5846, 5e-4),     # from memory
])
def test_textbook_values(name, lam_um, n_ref, tol):
    assert complex(materials.get(name).published_index(lam_um * 1e-6)).real == pytest.approx(n_ref, abs=tol)


@pytest.mark.parametrize("name,kw", [("air", {}), ("air-lab", dict(t_c=20.0, h=0.5))])
def test_ciddor_air(name, kw):
    """Ciddor 1996 (Appl. Opt. 35, 1566), Eqs. 1-5 with BIPM compressibility, evaluated
    here from memory: agreement to 1e-9 in n."""
    m = materials.get(name)
    for lam in [0.35, 0.55, 0.633, 1.0, 1.6]:
        assert complex(m.published_index(lam * 1e-6)).real == pytest.approx(ciddor(lam, **kw), abs=1e-9)


def test_ciddor_known_value():
    """Standard dry air at 633 nm: (n - 1) 1e8 = 27653 from Eq. 1 of Ciddor 1996 (from memory)."""
    n = complex(materials.get("air").published_index(633e-9)).real
    assert (n - 1) == pytest.approx(2.7653e-4, abs=3e-8)


def test_radio_air():
    """Smith and Weintraub 1953 dry term N = 77.6 p[hPa]/T at 15 degC, 1013.25 hPa (from memory)."""
    n = complex(materials.get("air-radio").published_index(0.028)).real
    assert n == pytest.approx(1 + 77.6e-6 * 1013.25 / 288.15, abs=1e-12)


@pytest.mark.parametrize("name,nd,vd", [("crown-517642", 1.517, 64.2), ("flint-620364", 1.620, 36.4),
                                        ("dense-flint-755276", 1.755, 27.6)])
def test_generic_glass_codes(name, nd, vd):
    """Glass code NNNVVV: n_d = 1.NNN at 587.5618 nm and V_d = (n_d - 1)/(n_F - n_C) = VV.V
    (definition of the Abbe number; line wavelengths from memory)."""
    m = materials.get(name)
    n = lambda lam: complex(m.published_index(lam * 1e-6)).real  # noqa: E731
    assert n(0.5875618) == pytest.approx(nd, abs=1e-9)
    assert (n(0.5875618) - 1) / (n(0.4861327) - n(0.6562725)) == pytest.approx(vd, abs=1e-6)
    for lam in [0.4, 0.7, 1.0]:
        assert n(lam) == pytest.approx(cauchy_from_code(nd, vd, lam), abs=1e-9)


def test_silver_at_633_interpolated():
    """Silver, Johnson and Christy 1972 rows 0.6168 um (0.06, 4.152) and 0.6595 um (0.05,
    4.483) (values from the public table, recalled): linear interpolation at 632.8 nm, and
    normal-incidence R from air ~ 0.989 (common practice)."""
    n = complex(materials.get("silver").published_index(632.8e-9))
    f = (0.6328 - 0.6168) / (0.6595 - 0.6168)
    assert n.real == pytest.approx(0.06 + f * (0.05 - 0.06), abs=1e-9)
    assert n.imag == pytest.approx(4.152 + f * (4.483 - 4.152), abs=1e-9)
    R = abs((1 - n) / (1 + n)) ** 2
    assert R == pytest.approx(0.989, abs=2e-3)


def test_constant_indices():
    """Invented constant materials keep their stated index (scene data, no source)."""
    assert complex(materials.get("cement").published_index(550e-9)) == 1.56
    assert complex(materials.get("microwave-dielectric-1.44").published_index(0.028)) == 1.44
    assert complex(materials.get("vacuum").published_index(550e-9)) == 1.0


def test_loss_tangent_index():
    """Dielectric with loss tangent: eps = eps' (1 + i tan d), n + i k = sqrt(eps) with
    k ~ n tan d / 2 (exp(-i w t); common practice, e.g. microwave engineering texts)."""
    from tracer.materials.models import ConstantIndex

    m = ConstantIndex.from_loss_tangent(1.44, 2e-3, name="lossy")
    n = complex(m.published_index(0.028))
    want = np.sqrt(1.44**2 * (1 + 2e-3j))
    assert n == pytest.approx(complex(want), abs=1e-15)
    assert n.imag == pytest.approx(1.44 * 2e-3 / 2, rel=1e-6)
