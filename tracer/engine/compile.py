"""Scene -> geometry arrays the event loop works on.

:func:`compile_scene` turns a :class:`tracer.scene.model.Scene` into a
:class:`CompiledScene`: the planes of all convex solids packed in one padded array
(so that one broadcasting expression clips a ray against every candidate solid),
axis-aligned bounding boxes for the broad phase, a global face table (solid faces
first, then plane detectors) with each face's treatment and gap partner, and the
media table (ambient, solids, gap media) used for refractive indices.

Global face ids: ``0 .. F-1`` are solid faces in scene order, ``F .. F+D-1`` the plane
detectors. Media: index 0 is the ambient, ``1 + s`` solid ``s``, then one per gap.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ..errors import TracerError
from ..tolerances import PLANE_EPS

__all__ = [
    "CompiledScene",
    "compile_scene",
    "UNCOATED",
    "COATED",
    "MIRROR",
    "ABSORBER",
    "DETECTOR",
    "EngineError",
]

UNCOATED, COATED, MIRROR, ABSORBER, DETECTOR = range(5)
_TREATMENT_CODE = {"uncoated": UNCOATED, "stack": COATED, "ideal": COATED,
                   "mirror": COATED, "absorber": ABSORBER}


class EngineError(TracerError, ValueError):
    """A scene or setting the engine cannot trace (unknown face, bad sequence ...)."""


@dataclass
class CompiledScene:
    """Geometry and optics of a scene as arrays (see module docstring)."""

    scene: object
    solid_names: list
    geometries: list
    convex: np.ndarray  # (S,) bool
    plane_n: np.ndarray  # (S, P, 3)
    plane_d: np.ndarray  # (S, P)
    plane_face: np.ndarray  # (S, P) global face id, -1 padding
    box_lo: np.ndarray  # (S, 3)
    box_hi: np.ndarray  # (S, 3)
    face_names: list  # solid faces then detectors
    face_solid: np.ndarray  # (F+D,) -1 for detectors
    face_local: np.ndarray
    face_normal: np.ndarray  # (F+D, 3) outward normal / detector normal
    face_offset: np.ndarray
    face_code: np.ndarray
    face_treatment: list
    face_gap: np.ndarray  # gap index or -1
    face_partner: np.ndarray  # partner global face id or -1
    gaps: list
    media: list  # index models
    media_names: list
    n_faces: int  # solid faces
    detector_names: list
    det_position: np.ndarray
    det_normal: np.ndarray
    det_x: np.ndarray
    det_y: np.ndarray
    det_half: np.ndarray  # (D, 2)
    det_round: np.ndarray  # (D,) bool: a disk (ellipse of semi-axes det_half), else a rectangle
    det_two_sided: np.ndarray
    far_fields: list  # DetectorSpec of far-field detectors
    face_index: dict = field(default_factory=dict)
    face_scatter: np.ndarray = None  # (F+D,) index into scatter_models, -1 none
    face_opaque: np.ndarray = None  # (F+D,) bool: a face of an opaque part (never entered)
    any_opaque: bool = False
    scatter_models: list = field(default_factory=list)
    scatter_names: list = field(default_factory=list)  # coating name of each model
    scatter_targets: object = None  # tracer.scatter.targets.Targets or None
    face_group: np.ndarray = None  # treatment group per face (coated faces)
    group_treatment: list = field(default_factory=list)
    _n_cache: dict = field(default_factory=dict)
    # broad-phase and narrow-phase arrays (see :func:`box_groups`); filled by compile_scene
    plane_nx: np.ndarray = None  # (S, P) normal components, contiguous
    plane_ny: np.ndarray = None
    plane_nz: np.ndarray = None
    plane_tab: np.ndarray = None  # (4, P, S): nx, ny, nz, d by plane row (narrow phase)
    plane_face_t: np.ndarray = None  # (P, S) global face id, -1 padding
    group_lo: np.ndarray = None  # (G, 3) box of each group of solids, or None
    group_hi: np.ndarray = None
    group_members: np.ndarray = None  # (G, K) solid indices, -1 padding
    group_members_t: np.ndarray = None  # (K, G) the same, member-major
    member_lo: np.ndarray = None  # (3, K, G) member boxes by axis (padding: zeros)
    member_hi: np.ndarray = None

    @property
    def n_solids(self) -> int:
        return len(self.solid_names)

    def index_table(self, wavelengths: np.ndarray) -> np.ndarray:
        """Refractive index of every medium at ``wavelengths`` [m] -> (media, W) complex."""
        wl = np.asarray(wavelengths, dtype=float)
        key = wl.tobytes()
        tab = self._n_cache.get(key)
        if tab is None:
            tab = np.empty((len(self.media), len(wl)), dtype=complex)
            for i, m in enumerate(self.media):
                tab[i] = np.broadcast_to(
                    np.asarray(m.refractive_index(wl), dtype=complex), wl.shape
                )
            self._n_cache[key] = tab
        return tab

    def face_id(self, name: str) -> int:
        """Global id of ``"solid.face"`` or a detector name."""
        try:
            return self.face_index[name]
        except KeyError:
            import difflib

            close = difflib.get_close_matches(name, list(self.face_index), n=3)
            hint = f" (did you mean {', '.join(close)}?)" if close else ""
            raise EngineError(f"unknown face {name!r}{hint}; expected 'solid.face'") from None


def _unit(v) -> np.ndarray:
    v = np.asarray(v, dtype=float)
    return v / np.linalg.norm(v)


def compile_scene(scene) -> CompiledScene:
    """Pack ``scene`` into arrays for the event loop.

    Parameters
    ----------
    scene : tracer.scene.model.Scene

    Returns
    -------
    CompiledScene
    """
    names = list(scene.solids)
    geoms = [scene.solids[n].geometry for n in names]
    S = len(names)
    pmax = max([len(np.asarray(g.face_offsets)) for g in geoms] + [1])
    plane_n = np.zeros((S, pmax, 3))
    plane_d = np.ones((S, pmax))  # padding: 0 . x <= 1 always holds
    plane_face = np.full((S, pmax), -1, dtype=np.int64)
    convex = np.zeros(S, dtype=bool)
    lo = np.zeros((S, 3))
    hi = np.zeros((S, 3))
    face_names, face_solid, face_local, fn, fo, code, treat = [], [], [], [], [], [], []
    for s, (name, g) in enumerate(zip(names, geoms)):
        spec = scene.solids[name]
        normals = np.asarray(g.face_normals, dtype=float)
        offsets = np.asarray(g.face_offsets, dtype=float)
        gid0 = len(face_names)
        for j, fname in enumerate(g.face_names):
            face_names.append(f"{name}.{fname}")
            face_solid.append(s)
            face_local.append(j)
            t = spec.faces.get(fname)
            if t is None:
                from ..scene.model import FaceTreatment

                t = FaceTreatment()
            treat.append(t)
            c = _TREATMENT_CODE.get(t.kind)
            if c is None:
                raise EngineError(f"solid {name!r} face {fname!r}: unknown treatment {t.kind!r}")
            if t.kind == "mirror" and t.coating is None and t.reflectance in (None, 1, 1.0):
                c = MIRROR
            code.append(c)
        fn.append(normals)
        fo.append(offsets)
        convex[s] = bool(getattr(g, "is_convex", True))
        k = len(offsets)
        plane_n[s, :k] = normals
        plane_d[s, :k] = offsets
        plane_face[s, :k] = gid0 + np.arange(k)
        b = np.asarray(g.bounds, dtype=float)
        pad = 1e-9 + 1e-9 * np.abs(b).max()
        lo[s], hi[s] = b[0] - pad, b[1] + pad
    n_faces = len(face_names)
    face_normal = np.concatenate(fn) if fn else np.zeros((0, 3))
    face_offset = np.concatenate(fo) if fo else np.zeros(0)

    # detectors ---------------------------------------------------------------------
    det_names, dpos, dnor, dx, dy, dhalf, dtwo, far = [], [], [], [], [], [], [], []
    dround = []
    for dname, d in scene.detectors.items():
        if d.kind == "far_field":
            far.append(d)
            continue
        n = _unit(d.normal)
        x = np.asarray(d.x_axis, dtype=float)
        x = _unit(x - np.dot(x, n) * n)
        det_names.append(dname)
        dpos.append(np.asarray(d.position, dtype=float))
        dnor.append(n)
        dx.append(x)
        dy.append(np.cross(n, x))
        dhalf.append(np.asarray(d.size, dtype=float) / 2)
        dtwo.append(bool(d.two_sided))
        dround.append(getattr(d, "outline", "rectangle") == "circle")
    D = len(det_names)
    all_names = face_names + det_names
    face_opaque = np.array([bool(scene.solids[names[s]].opaque) for s in face_solid] + [False] * D,
                           dtype=bool)
    face_solid = np.array(face_solid + [-1] * D, dtype=np.int64)
    face_local = np.array(face_local + list(range(D)), dtype=np.int64)
    dnor_a = np.array(dnor).reshape(D, 3)
    dpos_a = np.array(dpos).reshape(D, 3)
    face_normal = np.concatenate([face_normal, dnor_a])
    face_offset = np.concatenate([face_offset, np.einsum("ij,ij->i", dnor_a, dpos_a)])
    code = np.array(code + [DETECTOR] * D, dtype=np.int64)
    treat = treat + [None] * D
    index = {n: i for i, n in enumerate(all_names)}

    # media and gaps ---------------------------------------------------------------
    media = [scene.ambient] + [scene.solids[n].material for n in names]
    media_names = [scene.ambient_name] + [scene.solids[n].material_name for n in names]
    face_gap = np.full(len(all_names), -1, dtype=np.int64)
    partner = np.full(len(all_names), -1, dtype=np.int64)
    gaps = []
    for gname, gap in scene.gaps.items():
        try:
            fa = index[f"{gap.solid_a}.{gap.face_a}"]
            fb = index[f"{gap.solid_b}.{gap.face_b}"]
        except KeyError as exc:
            raise EngineError(f"gap {gname!r}: unknown face {exc.args[0]!r}") from None
        g = len(gaps)
        gaps.append(gap)
        media.append(gap.medium)
        media_names.append(gap.medium_name)
        for f, p in ((fa, fb), (fb, fa)):
            if face_gap[f] >= 0:
                raise EngineError(f"gap {gname!r}: face {all_names[f]!r} already in a gap")
            face_gap[f] = g
            partner[f] = p
    groups: dict = {}
    face_group = np.full(len(all_names), -1, dtype=np.int64)
    group_treatment = []
    for f, t in enumerate(treat):
        if t is None:
            continue
        key = id(t)
        if key not in groups:
            groups[key] = len(group_treatment)
            group_treatment.append(t)
        face_group[f] = groups[key]
    face_scatter, scatter_models, scatter_names = _scatter_faces(treat, all_names, face_gap,
                                                                 scene.gaps)
    glo, ghi, gmem = box_groups(lo, hi)
    mlo = mhi = gmem_t = None
    if gmem is not None:
        gmem_t = np.ascontiguousarray(gmem.T)
        safe = np.where(gmem_t >= 0, gmem_t, 0)
        mlo = np.ascontiguousarray(np.where((gmem_t >= 0)[..., None], lo[safe], 0.0).transpose(2, 0, 1))
        mhi = np.ascontiguousarray(np.where((gmem_t >= 0)[..., None], hi[safe], 0.0).transpose(2, 0, 1))
    return CompiledScene(
        plane_nx=np.ascontiguousarray(plane_n[..., 0]),
        plane_ny=np.ascontiguousarray(plane_n[..., 1]),
        plane_nz=np.ascontiguousarray(plane_n[..., 2]),
        plane_tab=np.ascontiguousarray(
            np.concatenate([plane_n, plane_d[..., None]], axis=2).transpose(2, 1, 0)),
        plane_face_t=np.ascontiguousarray(plane_face.T),
        group_lo=glo,
        group_hi=ghi,
        group_members=gmem,
        group_members_t=gmem_t,
        member_lo=mlo,
        member_hi=mhi,
        face_group=face_group,
        group_treatment=group_treatment,
        scene=scene,
        solid_names=names,
        geometries=geoms,
        convex=convex,
        plane_n=plane_n,
        plane_d=plane_d,
        plane_face=plane_face,
        box_lo=lo,
        box_hi=hi,
        face_names=all_names,
        face_solid=face_solid,
        face_local=face_local,
        face_normal=face_normal,
        face_offset=face_offset,
        face_code=code,
        face_treatment=treat,
        face_gap=face_gap,
        face_partner=partner,
        gaps=gaps,
        media=media,
        media_names=media_names,
        n_faces=n_faces,
        detector_names=det_names,
        det_position=dpos_a,
        det_normal=dnor_a,
        det_x=np.array(dx).reshape(D, 3),
        det_y=np.array(dy).reshape(D, 3),
        det_half=np.array(dhalf).reshape(D, 2),
        det_round=np.array(dround, dtype=bool),
        det_two_sided=np.array(dtwo, dtype=bool),
        far_fields=far,
        face_index=index,
        face_scatter=face_scatter,
        face_opaque=face_opaque,
        any_opaque=bool(face_opaque.any()),
        scatter_models=scatter_models,
        scatter_names=scatter_names,
        scatter_targets=_scatter_targets(scene, index, n_faces, geoms, names, det_names,
                                         dpos_a, dx, dy, dhalf, dround) if scatter_models else None,
    )


def _scatter_faces(treat, names, face_gap, gaps):
    """Per face the index of its scatter model (-1: none), the models and their names."""
    face_scatter = np.full(len(names), -1, dtype=np.int64)
    models, model_names, seen = [], [], {}
    for f, t in enumerate(treat):
        model = getattr(t, "scatter", None) if t is not None else None
        if model is None:
            continue
        if face_gap[f] >= 0:
            gname = list(gaps)[int(face_gap[f])]
            raise EngineError(f"face {names[f]!r} has the scatter treatment "
                              f"{t.coating_name!r} but is a face of gap {gname!r}: scatter "
                              "inside a gap is not modelled; put the scatter treatment on a "
                              "face in the ambient, or remove the gap")
        if id(model) not in seen:
            seen[id(model)] = len(models)
            models.append(model)
            model_names.append(t.coating_name or model.name)
        face_scatter[f] = seen[id(model)]
    return face_scatter, models, model_names


def _scatter_targets(scene, index, n_faces, geoms, names, det_names, dpos, dx, dy, dhalf,
                     dround):
    """Triangles of the scatter targets (``trace.scatter_targets``; default every plane
    detector), or ``None`` when there are none."""
    from ..scatter.targets import (Targets, ellipse_triangles, polygon_triangles,
                                   rectangle_triangles)

    wanted = scene.settings.scatter_targets
    if wanted is None:
        wanted = tuple(det_names)
    tris = []
    for name in wanted:
        if name in det_names:
            d = det_names.index(name)
            if dround[d]:
                tris.append(ellipse_triangles(dpos[d], dx[d], dy[d], dhalf[d]))
            else:
                tris.append(rectangle_triangles(dpos[d], dx[d], dy[d], dhalf[d]))
            continue
        f = index.get(name)
        if f is None or f >= n_faces:
            import difflib

            close = difflib.get_close_matches(name, det_names + list(index)[:n_faces], n=3)
            hint = f" (did you mean {', '.join(close)}?)" if close else ""
            raise EngineError(f"trace.scatter_targets: unknown target {name!r}{hint}; expected a "
                              "plane detector or a face 'solid.face'")
        solid, face = name.split(".", 1)
        g = geoms[names.index(solid)]
        poly = g.face_polygons[list(g.face_names).index(face)]
        tris.append(polygon_triangles(poly))
    if not tris:
        return None
    return Targets(np.concatenate(tris))


#: Scenes with more solids than this get a two-level broad phase (groups of solids).
GROUP_MIN_SOLIDS = 16


def box_groups(lo, hi, *, min_solids=GROUP_MIN_SOLIDS):
    """Spatially compact groups of about ``sqrt(S)`` solids and their bounding boxes.

    The groups are the leaves of a median split of the box centres along the axis of
    largest spread (a two-level bounding-volume hierarchy), so that a ray tests the
    group boxes first and the member boxes of the groups it meets only.

    Parameters
    ----------
    lo, hi : (S, 3) float [m]
        Solid bounding boxes.
    min_solids : int
        Below or at this many solids no groups are formed.

    Returns
    -------
    group_lo, group_hi : (G, 3) float [m] or None
    members : (G, K) int or None
        Solid indices of each group, ``-1`` padding.

    Examples
    --------
    >>> import numpy as np
    >>> c = np.arange(40.0)[:, None] * [1.0, 0, 0]
    >>> glo, ghi, mem = box_groups(c - 0.1, c + 0.1)
    >>> mem.shape, sorted(mem[mem >= 0].tolist()) == list(range(40))
    ((8, 5), True)
    """
    S = len(lo)
    if S <= min_solids:
        return None, None, None
    size = int(np.ceil(np.sqrt(S)))
    centre = 0.5 * (np.asarray(lo) + np.asarray(hi))
    leaves = []
    todo = [np.arange(S)]
    while todo:
        idx = todo.pop()
        if len(idx) <= size:
            leaves.append(np.sort(idx))
            continue
        c = centre[idx]
        axis = int(np.argmax(c.max(axis=0) - c.min(axis=0)))
        order = idx[np.argsort(c[:, axis], kind="stable")]
        half = len(order) // 2
        todo.extend([order[half:], order[:half]])
    leaves.sort(key=lambda a: int(a[0]))
    members = np.full((len(leaves), max(len(a) for a in leaves)), -1, dtype=np.int64)
    glo = np.empty((len(leaves), 3))
    ghi = np.empty((len(leaves), 3))
    for g, a in enumerate(leaves):
        members[g, : len(a)] = a
        glo[g] = lo[a].min(axis=0)
        ghi[g] = hi[a].max(axis=0)
    return glo, ghi, members


def on_partner_face(cs: CompiledScene, points: np.ndarray, partner: np.ndarray) -> np.ndarray:
    """Whether ``points`` (already on the partner's plane) lie within the partner face.

    For convex partners every other plane of the partner solid must hold (the face
    polygon of a convex solid is its plane clipped by the others). Non-convex partners
    are taken to cover the whole footprint.

    Parameters
    ----------
    points : (N, 3) float [m]
    partner : (N,) int
        Global face ids.
    """
    s = cs.face_solid[partner]
    ok = np.ones(len(points), dtype=bool)
    cv = cs.convex[s]
    if cv.any():
        pn = cs.plane_n[s[cv]]
        pd = cs.plane_d[s[cv]]
        side = np.einsum("npj,nj->np", pn, points[cv]) - pd
        side[cs.plane_face[s[cv]] == partner[cv, None]] = -np.inf
        ok[cv] = (side <= 1e3 * PLANE_EPS).all(axis=1)
    return ok
