"""Error types shared across the package.

Every error a user can cause is a subclass of :class:`TracerError`; the command
line prints its message and exits with code 2 instead of showing a traceback.
"""

__all__ = ["TracerError", "UnitError", "MaterialError", "RangeError"]


class TracerError(Exception):
    """Base class for errors caused by user input (bad scene, unit, option)."""


class UnitError(TracerError, ValueError):
    """A quantity string could not be parsed or has the wrong kind of unit."""


class MaterialError(TracerError, ValueError):
    """Unknown material name or malformed index model."""


class RangeError(TracerError, ValueError):
    """A model was evaluated outside its valid range without opting in."""
