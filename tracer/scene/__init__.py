"""Scenes: the TOML format, its strict validation, the loader and the writer.

>>> import tracer.scene
"""

from .problems import Problem, SceneError

__all__ = ["Problem", "SceneError"]
