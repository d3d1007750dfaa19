"""Small scene factory for the engine tests: builds Scene objects directly in Python."""

from __future__ import annotations

import numpy as np

from tracer.geometry.solid import ConvexSolid
from tracer.materials.models import ConstantIndex
from tracer.scene.model import (
    DetectorSpec,
    FaceTreatment,
    GapSpec,
    Polarization,
    Scene,
    SolidSpec,
    SourceSpec,
    Spectrum,
    TraceSettings,
)

# The factory's media are absolute numbers (index_basis "vacuum"), so that the tests'
# closed forms use the indices as written; catalog materials passed in are referred to
# air (tracer.materials.basis) and tests using them take their absolute index.
AIR = ConstantIndex(1.0, name="air", index_basis="vacuum")


def _solid(normals, offsets, names):
    return ConvexSolid(normals, offsets, names)


def box(lo, hi, names=("px", "py", "pz", "mx", "my", "mz")):
    lo, hi = np.asarray(lo, float), np.asarray(hi, float)
    n = np.vstack([np.eye(3), -np.eye(3)])
    d = np.concatenate([hi, -lo])
    return _solid(n, d, list(names))


def prism(vertices_xy, z0, z1, names):
    """Right prism over a convex polygon (CCW in x-y) between z0 and z1.

    names: one per polygon edge (edge i from vertex i to i+1), then "bottom", "top".
    """
    v = np.asarray(vertices_xy, float)
    normals, offsets = [], []
    for i in range(len(v)):
        a, b = v[i], v[(i + 1) % len(v)]
        e = b - a
        nrm = np.array([e[1], -e[0], 0.0])
        nrm /= np.linalg.norm(nrm)
        normals.append(nrm)
        offsets.append(nrm[:2] @ a)
    normals += [np.array([0, 0, -1.0]), np.array([0, 0, 1.0])]
    offsets += [-z0, z1]
    return _solid(np.array(normals), np.array(offsets), list(names) + ["bottom", "top"])


def solid(name, geometry, n=1.5, faces=None, material=None):
    mat = material if material is not None else ConstantIndex(n, name=f"n{n}", index_basis="vacuum")
    return SolidSpec(name=name, material=mat, material_name=mat.name, geometry=geometry,
                     faces=faces or {}, kind="custom")


def beam(name="src", position=(0, 0, -0.01), direction=(0, 0, 1), x_axis=(1, 0, 0), rays=1,
         diameter=0.0, wavelengths=(550e-9,), weights=None, stokes=(1, 0, 0, 0), power=1.0,
         kind="collimated", half_angle=0.0, bandwidth=None, sampling="grid", inside=None):
    wl = np.asarray(wavelengths, float)
    w = np.full(len(wl), 1.0 / len(wl)) if weights is None else np.asarray(weights, float)
    return SourceSpec(
        name=name, kind=kind, position=np.asarray(position, float),
        direction=np.asarray(direction, float) / np.linalg.norm(direction),
        x_axis=np.asarray(x_axis, float), power=power, rays=rays,
        spectrum=Spectrum(wl, w, bandwidth), polarization=Polarization(np.asarray(stokes, float)),
        aperture="circle", size=(diameter, 0.0), half_angle=half_angle, sampling=sampling,
        inside_solid=inside,
    )


def plane(name, position, normal, size=(0.1, 0.1), x_axis=None, two_sided=False):
    normal = np.asarray(normal, float)
    if x_axis is None:
        x_axis = np.array([1.0, 0, 0]) if abs(normal[0]) < 0.9 else np.array([0, 1.0, 0])
    return DetectorSpec(name=name, kind="plane", position=np.asarray(position, float),
                        normal=normal, x_axis=np.asarray(x_axis, float), size=size,
                        pixels=(8, 8), two_sided=two_sided)


def far_field(name="sky", normal=(0, 0, 1)):
    return DetectorSpec(name=name, kind="far_field", position=np.zeros(3),
                        normal=np.asarray(normal, float), x_axis=np.array([1.0, 0, 0]),
                        size=(0.0, 0.0), pixels=(8, 8))


def gap(name, a, fa, b, fb, thickness, n=1.0, coherence="auto"):
    med = ConstantIndex(n, name=f"gap{n}", index_basis="vacuum")
    return GapSpec(name=name, solid_a=a, face_a=fa, solid_b=b, face_b=fb, medium=med,
                   medium_name=med.name, thickness=thickness, coherence=coherence)


def scene(solids=(), sources=(), detectors=(), gaps=(), ambient=AIR, seed=1, threshold=1e-6,
          max_events=64, mode="tree", sequence=None, title="test"):
    return Scene(
        path=None, title=title, dimension=3, ambient=ambient, ambient_name=ambient.name,
        spectrum=Spectrum(np.array([550e-9]), np.array([1.0])), seed=seed,
        settings=TraceSettings(mode=mode, power_threshold=threshold, max_events=max_events,
                               sequence=sequence),
        solids={s.name: s for s in solids}, gaps={g.name: g for g in gaps},
        sources={s.name: s for s in sources}, detectors={d.name: d for d in detectors},
        requirements={},
    )


def plate_scene(n=1.5, thickness=1e-3, rays=1, threshold=1e-12, **kw):
    plate = solid("plate", box((-5e-3, -5e-3, 0), (5e-3, 5e-3, thickness),
                               names=("right", "back", "exit", "left", "front", "entrance")), n=n)
    return scene(
        solids=[plate],
        sources=[beam(rays=rays, diameter=2e-3 if rays > 1 else 0.0, **kw)],
        detectors=[plane("camera", (0, 0, 0.01), (0, 0, -1)),
                   plane("back", (0, 0, -0.005), (0, 0, 1))],
        threshold=threshold,
    )


def moved(geometry, rotation=np.eye(3), translation=(0, 0, 0)):
    """The geometry rotated about the origin by ``rotation`` then moved by ``translation``."""
    R = np.asarray(rotation, float)
    t = np.asarray(translation, float)
    if hasattr(geometry, "transformed") and ConvexSolid is not None:
        return geometry.transformed(R, t)
    n = geometry.face_normals @ R.T
    return _solid(n, geometry.face_offsets + n @ t, geometry.face_names)


def rot_x(a):
    c, s = np.cos(a), np.sin(a)
    return np.array([[1, 0, 0], [0, c, -s], [0, s, c]])


def rot_z(a):
    c, s = np.cos(a), np.sin(a)
    return np.array([[c, -s, 0], [s, c, 0], [0, 0, 1]])


def right_angle(L, height=None):
    h = L if height is None else height
    return prism([[0, 0], [L, 0], [0, L]], -h / 2, h / 2, ["leg_a", "hypotenuse", "leg_b"])


def prism_pair_scene(*, n=1.5, gap_thickness=1e-6, L=0.01, wavelength=550e-9, stokes=(1, 1, 0, 0),
                     partner=True, threshold=1e-9, gap_n=1.0):
    """Two right-angle prisms, hypotenuses facing across an air gap.

    The beam enters ``upper.leg_a`` going +y at normal incidence, meets the hypotenuse at
    45 deg; the direct transmitted path crosses into ``lower`` and leaves ``lower.leg_a``
    to the detector ``top``; the reflected one leaves ``upper.leg_b`` towards ``side``.
    The source x_axis is z (the s direction at the hypotenuse).
    """
    s = gap_thickness / np.sqrt(2)
    up = right_angle(L)
    lo = prism([[L + s, s], [L + s, L + s], [s, L + s]], -L / 2, L / 2,
               ["leg_b", "leg_a", "hypotenuse"])
    solids = [solid("upper", up, n=n)]
    gaps = []
    if partner:
        solids.append(solid("lower", lo, n=n))
        gaps.append(gap("g", "upper", "hypotenuse", "lower", "hypotenuse", gap_thickness, n=gap_n))
    return scene(
        solids=solids, gaps=gaps,
        sources=[beam(position=(0.3 * L, -0.01, 0), direction=(0, 1, 0), x_axis=(0, 0, 1),
                      stokes=stokes, wavelengths=(wavelength,))],
        detectors=[plane("top", (0.3 * L, 3 * L, 0), (0, -1, 0), size=(10 * L, 10 * L)),
                   plane("side", (-2 * L, 0.3 * L, 0), (1, 0, 0), size=(10 * L, 10 * L))],
        threshold=threshold,
    )
