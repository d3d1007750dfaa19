"""The frustrated-TIR prism pair shared by the sweep, tolerance and parallel tests.

Two right-angle prisms of index 1.5 (leg 10 mm) mated hypotenuse to hypotenuse across a
thin air gap, a collimated beam entering the lower prism's leg at normal incidence and
a plane detector beyond the upper prism. Invented data.
"""

from __future__ import annotations


def ftir_pair_toml(*, title: str, seed: int, gap: str, angle: str = "90 deg",
                   wavelengths: str = '"633 nm"', diameter: float = 1, rays: int = 3,
                   sampling: str | None = None, vacuum_ambient: bool = False,
                   coating: bool = False, extra: str = "") -> str:
    """Scene text of the pair.

    Parameters
    ----------
    title : str
    seed : int
    gap : str
        Mating gap, e.g. ``"0.2 um"``.
    angle : str
        Linear polarisation angle of the beam from its ``x_axis``.
    wavelengths : str
        The TOML list body of ``[spectrum] wavelengths``.
    diameter : float [mm]
        Beam diameter.
    rays : int
    sampling : str, optional
        Source ``sampling`` (the default sampling when ``None``).
    vacuum_ambient : bool
        Declare a constant-index ``vac`` material as the ambient medium; ``vac`` and the
        glass are then absolute indices (``index_basis = "vacuum"``), so that the tests'
        closed forms take them as written.
    coating : bool
        Declare the single-layer ``ar`` stack coating (declared, not used).
    extra : str
        Tables appended at the end (requirements, tolerances).
    """
    ambient = 'ambient = "vac"\n' if vacuum_ambient else ""
    vac = ('[materials.vac]\nmodel = "constant"\nn = 1.0\nindex_basis = "vacuum"\n\n'
           if vacuum_ambient else "")
    ar = ('[coatings.ar]\nkind = "stack"\n'
          'layers = [{ material = "glass", thickness = "100 nm" }]\n\n') if coating else ""
    sample = f'sampling = "{sampling}"\n' if sampling else ""
    return f"""
format = 1
title = "{title}"
length_unit = "mm"
{ambient}seed = {seed}

[spectrum]
wavelengths = [{wavelengths}]

{vac}[materials.glass]
model = "constant"
n = 1.5
{'index_basis = "vacuum"' if vacuum_ambient else ""}

{ar}[solids.lower]
material = "glass"
kind = "right_angle_prism"
leg = 10

[solids.upper]
material = "glass"
kind = "right_angle_prism"
leg = 10
[solids.upper.mate]
to = "lower.hypotenuse"
face = "hypotenuse"
gap = "{gap}"

[sources.beam]
kind = "collimated"
position = [5, -5, 0]
direction = [0, 1, 0]
diameter = {diameter}
rays = {rays}
{sample}power = "1 mW"
polarization = {{ kind = "linear", angle = "{angle}" }}

[detectors.through]
position = [5, 25, 0]
normal = [0, -1, 0]
width = 20
height = 20
{extra}"""
