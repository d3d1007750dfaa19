"""Colours shared by every figure: wavelength to colour, material to colour.

Wavelength to colour
--------------------
Visible light (380--780 nm) is coloured from the CIE 1931 2-degree colour-matching
functions, in the multi-lobe piecewise-Gaussian approximation of [1] (Eq. 2 and
Table 1 of [1]; coefficients written down from memory of the paper and checked in the
tests against CIE 1931 table values), converted to linear sRGB with the matrix of the
sRGB standard [2], negative (out-of-gamut) channels clipped to zero, scaled so that the
largest channel is 1 (pure hue at full brightness), gamma-encoded as in [2], and faded
towards both ends of the visible band (the hue is held at its 400 nm and 680 nm
values beyond those wavelengths, where the fit's tails drift; then a linear ramp of the display value from 1 at
420 nm / 700 nm to 0.45 at 380 nm / 780 nm, in the spirit of the simple piecewise map
of [3]) so that the spectrum ends meet the false-colour bands below without a jump in
brightness.

Outside the visible band the colours are a documented false-colour scale (our own,
interpolated in log wavelength):

=====================  ===================  ======================================
band                   wavelengths          colour
=====================  ===================  ======================================
ultraviolet            < 380 nm             dark violet (380 nm) -> slate indigo (10 nm)
infrared               780 nm -- 30 um      dark red (780 nm) -> brown (30 um)
THz and microwave      >= 30 um             light grey-violet (30 um) -> dark grey-violet (1 m)
=====================  ===================  ======================================

:func:`wavelength_to_rgb` returns these colours; :func:`ray_rgb` is what every figure
and the 3D export draw rays with: the same colours with the brightness of very light
ones (yellows) capped so that they stay visible on a white page (relative luminance at
most :data:`RAY_MAX_LUMINANCE`). Same wavelength, same colour, in every figure.

Material to colour
------------------
:func:`material_color` picks a colour for a material name from a fixed palette of
light tints by a stable hash (CRC-32) of the lower-cased name, so a material keeps its
colour across figures, runs and scenes; :func:`material_colors` resolves collisions
within one scene deterministically (next free palette entry in sorted-name order).

References
----------
[1] C. Wyman, P.-P. Sloan, P. Shirley, "Simple analytic approximations to the CIE XYZ
    color matching functions", Journal of Computer Graphics Techniques 2(2), 1--11, 2013.
[2] IEC 61966-2-1:1999, "Multimedia systems and equipment -- Colour measurement and
    management -- Part 2-1: Default RGB colour space -- sRGB".
[3] D. Bruton, "Color science: approximate RGB values for visible wavelengths", 1996.

Examples
--------
>>> rgb = wavelength_to_rgb([450e-9, 550e-9, 650e-9])
>>> [int(c.argmax()) for c in rgb]   # blue, green, red channel largest
[2, 1, 0]
>>> material_color("N-BK7") == material_color("n-bk7")
True
"""

from __future__ import annotations

import zlib

import numpy as np

__all__ = [
    "VISIBLE",
    "RAY_MAX_LUMINANCE",
    "cie_xyz",
    "wavelength_to_rgb",
    "ray_rgb",
    "wavelength_band",
    "wavelength_label",
    "material_color",
    "material_colors",
    "MATERIAL_PALETTE",
    "darker",
]

#: The visible band drawn in true colour [m].
VISIBLE = (380e-9, 780e-9)

#: Largest relative luminance of a ray colour (see :func:`ray_rgb`) [1].
RAY_MAX_LUMINANCE = 0.62

# Table 1 of [1], multi-lobe fit: (amplitude, mean [nm], sigma below, sigma above).
_LOBES = {
    "x": ((1.056, 599.8, 37.9, 31.0), (0.362, 442.0, 16.0, 26.7), (-0.065, 501.1, 20.4, 26.2)),
    "y": ((0.821, 568.8, 46.9, 40.5), (0.286, 530.9, 16.3, 31.1)),
    "z": ((1.217, 437.0, 11.8, 36.0), (0.681, 459.0, 26.0, 13.8)),
}

# XYZ -> linear sRGB (D65), IEC 61966-2-1 [2].
_XYZ_TO_SRGB = np.array([
    [3.2406, -1.5372, -0.4986],
    [-0.9689, 1.8758, 0.0415],
    [0.0557, -0.2040, 1.0570],
])

# False-colour anchors: (wavelength [m], rgb), interpolated in log10(wavelength).
_UV = ((10e-9, (0.27, 0.22, 0.42)), (380e-9, (0.30, 0.0, 0.45)))
_IR = ((780e-9, (0.45, 0.0, 0.0)), (3e-6, (0.50, 0.16, 0.06)), (30e-6, (0.55, 0.36, 0.20)))
_RADIO = ((30e-6, (0.66, 0.60, 0.76)), (1.0, (0.38, 0.32, 0.50)))

#: Light tints for solids (filled semi-transparent); chosen to stay apart from each other
#: and from the saturated ray colours.
MATERIAL_PALETTE = (
    "#8fb8de",  # light blue
    "#9fd5c1",  # mint
    "#c9b3e6",  # lavender
    "#f2c18d",  # apricot
    "#b8d98b",  # light olive
    "#e8a0a8",  # rose
    "#d9cf8a",  # sand
    "#a0c4c8",  # grey teal
    "#c4a484",  # tan
    "#b0b0c8",  # grey lilac
)


def _lobe(lam_nm, amp, mu, s1, s2):
    sigma = np.where(lam_nm < mu, s1, s2)
    return amp * np.exp(-0.5 * ((lam_nm - mu) / sigma) ** 2)  # Eq. 2 in [1]


def cie_xyz(wavelength) -> np.ndarray:
    """CIE 1931 2-degree colour-matching functions, multi-lobe fit of [1].

    Parameters
    ----------
    wavelength : array_like [m]
        Vacuum wavelengths.

    Returns
    -------
    (..., 3) float [1]
        ``x_bar, y_bar, z_bar`` at each wavelength.

    >>> round(float(cie_xyz(555e-9)[1]), 2)   # y_bar peaks near 555 nm at 1
    1.0
    """
    lam = np.asarray(wavelength, dtype=float) * 1e9
    out = []
    for key in "xyz":
        out.append(sum(_lobe(lam, *lobe) for lobe in _LOBES[key]))
    return np.stack(out, axis=-1)


def _gamma(c):
    c = np.clip(c, 0.0, 1.0)
    return np.where(c <= 0.0031308, 12.92 * c, 1.055 * c ** (1 / 2.4) - 0.055)  # sRGB encoding [2]


def _false(lam, anchors):
    xs = np.log10([a[0] for a in anchors])
    cols = np.array([a[1] for a in anchors])
    x = np.log10(np.clip(lam, 10 ** xs[0], 10 ** xs[-1]))
    return np.stack([np.interp(x, xs, cols[:, k]) for k in range(3)], axis=-1)


#: Hue band [m]: beyond it the fit's tails drift off the CIE table (a greenish cast
#: past ~700 nm, cyan below ~390 nm) while the true hue barely changes, so the hue is
#: held at its value at the band ends and only the brightness fades.
_HUE_BAND = (400e-9, 680e-9)


def _visible(lam):
    xyz = cie_xyz(np.clip(lam, *_HUE_BAND))
    rgb = np.clip(xyz @ _XYZ_TO_SRGB.T, 0.0, None)
    peak = rgb.max(axis=-1, keepdims=True)
    rgb = _gamma(rgb / np.where(peak > 0, peak, 1.0))
    nm = lam * 1e9
    fade = np.ones_like(nm)
    fade = np.where(nm < 420, 0.45 + 0.55 * (nm - 380) / 40, fade)
    fade = np.where(nm > 700, 0.45 + 0.55 * (780 - nm) / 80, fade)
    return rgb * np.clip(fade, 0.45, 1.0)[..., None]


def wavelength_to_rgb(wavelength) -> np.ndarray:
    """Display colour of a vacuum wavelength (see the module docstring).

    Parameters
    ----------
    wavelength : array_like [m]

    Returns
    -------
    (..., 3) float in [0, 1]
        sRGB (gamma-encoded) colour.

    >>> wavelength_to_rgb(1550e-9).round(2).tolist()   # infrared: false colour
    [0.48, 0.08, 0.03]
    """
    lam = np.asarray(wavelength, dtype=float)
    vis = _visible(np.clip(lam, *VISIBLE))
    uv = _false(lam, _UV)
    ir = _false(lam, _IR)
    radio = _false(lam, _RADIO)
    out = np.where((lam < VISIBLE[0])[..., None], uv, vis)
    out = np.where((lam > VISIBLE[1])[..., None], ir, out)
    out = np.where((lam >= _RADIO[0][0])[..., None], radio, out)
    return np.clip(out, 0.0, 1.0)


def ray_rgb(wavelength) -> np.ndarray:
    """Colour rays are drawn with: :func:`wavelength_to_rgb` with light colours darkened.

    The relative luminance ``0.2126 R + 0.7152 G + 0.0722 B`` (of the encoded values, a
    plain brightness measure) is capped at :data:`RAY_MAX_LUMINANCE` by scaling all three
    channels, so hue is kept and yellow rays stay visible on white.

    Parameters
    ----------
    wavelength : array_like [m]

    Returns
    -------
    (..., 3) float in [0, 1]

    >>> r, g, b = ray_rgb(580e-9)
    >>> bool(0.2126 * r + 0.7152 * g + 0.0722 * b <= RAY_MAX_LUMINANCE + 1e-12)
    True
    """
    rgb = wavelength_to_rgb(wavelength)
    lum = rgb @ np.array([0.2126, 0.7152, 0.0722])
    scale = np.where(lum > RAY_MAX_LUMINANCE, RAY_MAX_LUMINANCE / np.maximum(lum, 1e-12), 1.0)
    return rgb * scale[..., None]


def wavelength_band(wavelength: float) -> str:
    """``"ultraviolet"``, ``"visible"``, ``"infrared"`` or ``"THz/microwave"``.

    wavelength : float [m]

    >>> wavelength_band(532e-9), wavelength_band(10.6e-6), wavelength_band(0.028)
    ('visible', 'infrared', 'THz/microwave')
    """
    if wavelength < VISIBLE[0]:
        return "ultraviolet"
    if wavelength <= VISIBLE[1]:
        return "visible"
    if wavelength < _RADIO[0][0]:
        return "infrared"
    return "THz/microwave"


def wavelength_label(wavelength: float) -> str:
    """Legend label: ``"532 nm"``, ``"1550 nm (IR)"``, ``"10.7 GHz (28 mm)"``.

    wavelength : float [m]

    >>> wavelength_label(532e-9), wavelength_label(1.55e-6)
    ('532 nm', '1550 nm (IR)')
    """
    from tracer.units import format_frequency, format_wavelength

    band = wavelength_band(wavelength)
    text = format_wavelength(wavelength, digits=4)
    if band == "visible":
        return text
    if band == "ultraviolet":
        return f"{text} (UV)"
    if band == "infrared":
        return f"{text} (IR)"
    return f"{format_frequency(299792458.0 / wavelength, digits=4)} ({text})"


def material_color(name: str) -> str:
    """Palette colour of a material name (stable across runs; case-insensitive).

    name : str
        Material name as written in the scene.
    """
    return MATERIAL_PALETTE[zlib.crc32(str(name).strip().lower().encode()) % len(MATERIAL_PALETTE)]


def material_colors(names) -> dict[str, str]:
    """Colours for the materials of one scene, distinct where the palette allows.

    Each name gets :func:`material_color` unless an earlier name (sorted order) took that
    colour; then it gets the next free palette entry.

    >>> c = material_colors(["N-BK7", "N-SF11", "N-BK7"])
    >>> len(c), c["N-BK7"] == material_color("N-BK7")
    (2, True)
    """
    out: dict[str, str] = {}
    used: set[str] = set()
    for name in sorted({str(n) for n in names}, key=str.lower):
        col = material_color(name)
        if col in used and len(used) < len(MATERIAL_PALETTE):
            i = MATERIAL_PALETTE.index(col)
            while MATERIAL_PALETTE[i] in used:
                i = (i + 1) % len(MATERIAL_PALETTE)
            col = MATERIAL_PALETTE[i]
        used.add(col)
        out[name] = col
    return out


#: Fill of opaque parts (mounts, baffles, housings): dark grey without a material, a
#: lighter grey for a part with a bulk material (metal), so that parts never look like glass.
PART_COLOR = "#3b3b3b"
PART_MATERIAL_COLOR = "#8a8a8a"


def solid_label(spec) -> str:
    """Legend label of a solid: its material, or ``"part"`` / ``"part (MATERIAL)"`` for an
    opaque part (``spec.opaque``)."""
    if getattr(spec, "opaque", False):
        return "part" if spec.material_name == "opaque" else f"part ({spec.material_name})"
    return str(spec.material_name)


def scene_colors(scene) -> dict[str, str]:
    """Fill colour per :func:`solid_label` of every solid of ``scene``: the material palette
    for solids (:func:`material_colors`), greys for parts."""
    specs = list(scene.solids.values())
    out = material_colors(solid_label(s) for s in specs if not getattr(s, "opaque", False))
    for s in specs:
        if getattr(s, "opaque", False):
            out[solid_label(s)] = PART_COLOR if solid_label(s) == "part" else PART_MATERIAL_COLOR
    return out


def darker(color, factor: float = 0.55) -> tuple[float, float, float]:
    """The colour scaled towards black (edges of filled solids).

    color : hex string or RGB tuple; factor : float [1] (1 = unchanged).

    >>> darker("#ffffff", 0.5)
    (0.5, 0.5, 0.5)
    """
    if isinstance(color, str):
        h = color.lstrip("#")
        rgb = tuple(int(h[i:i + 2], 16) / 255 for i in (0, 2, 4))
    else:
        rgb = tuple(float(c) for c in color[:3])
    return tuple(round(c * factor, 6) for c in rgb)
