"""Error types shared across the package.

Every error a user can cause is a subclass of :class:`TracerError`; the command
line prints its message and exits with code 2 instead of showing a traceback.
"""

__all__ = ["TracerError", "UnitError", "MaterialError", "RangeError", "SceneError"]


class TracerError(Exception):
    """Base class for errors caused by user input (bad scene, unit, option)."""


class UnitError(TracerError, ValueError):
    """A quantity string could not be parsed or has the wrong kind of unit."""


class MaterialError(TracerError, ValueError):
    """Unknown material name or malformed index model."""


class RangeError(TracerError, ValueError):
    """A model was evaluated outside its valid range without opting in."""


class SceneError(TracerError, ValueError):
    """A scene file has one or more problems; ``problems`` lists them all.

    Each item is a :class:`tracer.scene.problems.Problem` (file, TOML key path, message);
    ``str()`` gives one problem per line, in the order they were found. Also importable
    as ``tracer.scene.SceneError`` (the same class).

    >>> from tracer.scene import SceneError as same
    >>> same is SceneError
    True
    """

    def __init__(self, problems):
        self.problems = list(problems)
        super().__init__("\n".join(str(p) for p in self.problems))

    def __reduce__(self):  # keep pickling (process pools) working
        return (type(self), (self.problems,))
