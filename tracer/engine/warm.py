"""Load (or compile) the engine's kernels before timed or parallel work.

numba compiles a kernel on its first call, or loads it from the on-disk cache, which
takes a fraction of a second per kernel in every new process. :func:`warm_up` traces a
tiny built-in scene (a glass cube, partly coated, in front of a detector) so that every
kernel of the event loop is ready; worker pools call it when a worker starts.
"""

from __future__ import annotations

import numpy as np

from . import jit

__all__ = ["warm_up"]

_done = {"warm": False}


def _tiny_scene():
    from ..geometry.solid import ConvexSolid
    from ..materials.models import ConstantIndex
    from ..scene.model import (DetectorSpec, FaceTreatment, Polarization, Scene, SolidSpec,
                               SourceSpec, Spectrum, TraceSettings)

    n = np.vstack([np.eye(3), -np.eye(3)])
    cube = ConvexSolid(n, np.full(6, 0.005), ["px", "py", "pz", "mx", "my", "mz"])
    glass = ConstantIndex(1.5, name="warm-glass")
    faces = {"mx": FaceTreatment(kind="ideal", reflectance=0.01)}
    spectrum = Spectrum(np.array([550e-9]), np.array([1.0]))
    return Scene(
        path=None, title="warm-up", dimension=3, ambient=ConstantIndex(1.0, name="warm-air"),
        ambient_name="warm-air", spectrum=spectrum, seed=0,
        settings=TraceSettings(power_threshold=1e-6, max_events=16),
        solids={"cube": SolidSpec(name="cube", material=glass, material_name="warm-glass",
                                  geometry=cube, faces=faces, kind="warm-up")},
        gaps={},
        sources={"beam": SourceSpec(
            name="beam", kind="collimated", position=np.array([-0.02, 0.0, 0.0]),
            direction=np.array([1.0, 0.2, 0.0]) / np.hypot(1.0, 0.2),
            x_axis=np.array([0.0, 0.0, 1.0]), power=1.0, rays=4, spectrum=spectrum,
            polarization=Polarization(), aperture="circle", size=(0.002, 0.0))},
        detectors={"screen": DetectorSpec(
            name="screen", kind="plane", position=np.array([0.03, 0.0, 0.0]),
            normal=np.array([-1.0, 0.0, 0.0]), x_axis=np.array([0.0, 1.0, 0.0]),
            size=(0.1, 0.1), pixels=(4, 4))},
        requirements={},
    )


def warm_up() -> None:
    """Make every compiled kernel ready in this process (once; no-op without numba)."""
    if _done["warm"] or not jit.compiled():
        return
    from .api import trace

    trace(_tiny_scene(), progress=False)
    _done["warm"] = True
