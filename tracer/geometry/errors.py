"""The geometry error type.

Every problem a user can cause while building a solid (a self-intersecting polygon, a
mesh that is not watertight, an unknown face name, a bad parameter) raises
:class:`GeometryError`, a :class:`tracer.errors.TracerError`.
"""

from tracer.errors import TracerError

__all__ = ["GeometryError"]


class GeometryError(TracerError, ValueError):
    """A solid, face, parameter or placement given by the user is invalid."""
