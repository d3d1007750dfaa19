"""Coatings, and the response of a treated face or of a gap, as the engine needs them.

A :class:`Coating` is a thin-film stack listed **from the substrate (the solid) outwards**
to the surrounding medium; light arriving from outside meets the layers in reverse order.
Every index may be a number (complex ``n + iκ``) or an index model, i.e. any object with
``refractive_index(wavelength, *, extrapolate=False) -> complex ndarray``; models are
evaluated at the ray wavelengths by :meth:`Coating.layers`.

Constructors
------------
* :func:`stack` - explicit layers ``(index or model, thickness [m])``.
* :func:`quarter_wave` - one layer of optical thickness λ0/4 at a design wavelength (and
  optionally a design angle of incidence in the ambient medium).
* :func:`v_coat` - two-layer antireflection coating (high index on the substrate, low
  index outside) whose thicknesses give zero reflectance at the design wavelength at
  normal incidence.
* :func:`quarter_wave_mirror` - the all-quarter-wave reflector ``(HL)^N H``.
* :func:`ideal` - a lossless abstraction with the same reflectance ``R`` for s and p.

The engine calls :func:`face_response` (a treated face between a solid and its
surroundings) and :func:`gap_response` (two solids across a thin gap, coatings on either
face); both return :class:`tracer.fresnel.Coefficients` like :func:`tracer.films.stack`,
with the sign, phase and power conventions of :mod:`tracer.fresnel`.

Phases of the abstract treatments (ours)
----------------------------------------
* Perfect mirror (``mirror`` with no coating): ``rs = -1``, ``rp = +1``, ``R = 1``,
  ``T = 0`` - the limit of the Fresnel coefficients for a perfect conductor
  (``n2 -> i∞``); with a ``reflectance`` R given instead: ``rs = -sqrt(R)``,
  ``rp = +sqrt(R)``, ``T = 0``, ``A = 1 - R``.
* Ideal coating of reflectance R: ``rs = -sqrt(R)``, ``rp = +sqrt(R)`` (the mirror's phases,
  so ``rp = -rs`` at normal incidence as for a physical reflection), ``Rs = Rp = R``,
  ``Ts = Tp = 1 - R`` with real positive ``ts``, ``tp`` scaled so that the power factors of
  :func:`tracer.fresnel.power_factors` return ``1 - R``. Where the exit medium is beyond
  its critical angle no wave can leave, and the bare interface's total reflection
  (with its phases) is returned instead.
* Absorber: every coefficient 0, ``A = 1``.

References
----------
[1] H. A. Macleod, *Thin-Film Optical Filters*, 4th ed., CRC Press, 2010 (chapters 2-5:
    quarter-wave layers, two-layer antireflection coatings, quarter-wave stacks).
[2] M. Born and E. Wolf, *Principles of Optics*, 7th ed., Cambridge University Press,
    1999, section 1.6.

Examples
--------
>>> from tracer import coatings
>>> c = coatings.quarter_wave(material=1.38, design_wavelength=550e-9)
>>> r = coatings.face_response(c, n_inside=1.52, n_outside=1.0, wavelength=550e-9,
...                            cos_angle=1.0, from_inside=False)
>>> round(float(r.Rs), 4)
0.0126
"""

from .designs import ideal, quarter_wave, quarter_wave_mirror, stack, v_coat
from .model import Coating, CoatingError, IdealCoating, evaluate_index
from .response import face_response, gap_response

__all__ = [
    "CoatingError",
    "Coating",
    "IdealCoating",
    "stack",
    "quarter_wave",
    "v_coat",
    "quarter_wave_mirror",
    "ideal",
    "face_response",
    "gap_response",
    "evaluate_index",
]
