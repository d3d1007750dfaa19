"""tracer: polarisation-aware ray tracing of prism assemblies.

The package is organised one concept per module (see ``DEVELOPERS.md``):
``units``, ``materials``, ``fresnel``, ``films``, ``coatings``, ``polarization``,
``geometry``, ``scene``, ``engine``, ``analysis``, ``plot``, ``report``, ``cli``.
"""

__version__ = "0.1.0"

__all__ = ["__version__", "trace", "trace_sequence", "load"]

_LAZY = {"trace": "tracer.engine", "trace_sequence": "tracer.engine", "load": "tracer.scene"}


def __getattr__(name):  # lazy imports keep ``import tracer`` light
    if name in _LAZY:
        import importlib

        return getattr(importlib.import_module(_LAZY[name]), name)
    raise AttributeError(f"module 'tracer' has no attribute {name!r}")
