"""Scatter from ground, rough and blackened faces: models, measured tables, sampling.

See :mod:`tracer.scatter.models` for the shared interface (partition of a face's power,
normalised angular density, sampling), :mod:`tracer.scatter.psd` for the K-correlation
surface spectrum, :mod:`tracer.scatter.table` for measured BSDF tables and
:mod:`tracer.scatter.targets` for the importance sampling of declared targets.
"""

from .models import (REFLECT_SIDE, TRANSMIT_SIDE, BlackSurface, Lambertian, Partition,
                     RoughSurface, cosine_density, cosine_sample, rayleigh_rice_brdf)

__all__ = ["REFLECT_SIDE", "TRANSMIT_SIDE", "BlackSurface", "Lambertian", "Partition",
           "RoughSurface", "cosine_density", "cosine_sample", "rayleigh_rice_brdf"]
