"""tracer: polarisation-aware ray tracing of prism assemblies.

The package is organised one concept per module (see ``DEVELOPERS.md``):
``units``, ``materials``, ``fresnel``, ``films``, ``coatings``, ``polarization``,
``geometry``, ``scene``, ``engine``, ``analysis``, ``plot``, ``report``, ``cli``.
"""

__version__ = "0.1.0"

__all__ = ["__version__"]
