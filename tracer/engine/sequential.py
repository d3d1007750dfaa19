"""Sequential design paths: follow a declared face sequence.

:func:`trace_sequence` launches the chief ray of a source (its ``position`` along its
``direction``) and six neighbours (two small lateral offsets along the source's
``x_axis`` and ``y_axis``, and tilts of ``+-tilt`` towards each of them), and at each face of the
sequence keeps the child (reflected or transmitted) whose next hit is the next face of
the sequence. An entry may force the child with a suffix: ``"upper.exit:T"`` or
``"upper.hypotenuse:R"``; without one, the last face keeps the transmitted child
(reflected where no wave is transmitted). A detector name may end the sequence.

Reported (:class:`SequenceReport`): throughput for the source polarisation, deviation
angle, lateral displacement, optical path length, image orientation (rotation and
handedness), the path's Jones matrix with its retardance and diattenuation, and per
face the kind of event, angle of incidence, critical angle, TIR margin (degrees above
the critical angle) and, where a gap lies behind a TIR face, the tunnelling leakage.
Rays that leave the sequence are reported with the face where they left.

Angular extent: the chief ray alone says nothing about the rest of an illumination cone.
:func:`trace_sequence` also launches the source's own rays (its pattern, ``spread_rays``
geometric rays of one spectral line: a fan's angles, a cone's directions, a beam's
aperture) and follows them along the chief ray's choices (the same child at each face).
At every face where the chief ray is totally reflected the step gets
``worst_tir_margin_deg`` (the smallest angle of incidence minus the critical angle over
the rays that arrive, negative when some are below it), ``below_critical_fraction``
(the share of the source power, as launched, whose rays meet the face below the critical
angle: there they are refracted through the gap or face instead of being reflected) and
``spread_arriving_fraction``; ``SequenceReport.warnings`` names each TIR face with a
non-zero fraction below critical.

Image orientation: the output frame is the input frame ``(x, y, k_in)`` carried by the
smallest rotation that turns ``k_in`` into ``k_out`` (about ``y`` for a reversal). The
images of the input ``x`` and ``y`` offsets, projected on the plane normal to the
output chief ray, give a 2x2 map in that frame: its determinant's sign is the
handedness (+1 upright or rotated, -1 mirrored) and the direction of the image of ``x``
the image rotation. A prism rotated by ``a`` about the axis of a single-reflection
(mirroring) system turns this angle by ``2a`` (the image of a reflection about an axis
at angle ``a``).

Angular map: how the output direction turns when the input direction is tilted, the
2x2 matrix ``A[i, j] = d(slope_i of the output along ox, oy) / d(tilt of the input
towards x, y)`` [rad/rad] in the same output frame as the image map, from central
differences of the ``+-tilt`` neighbours (slopes are the direction components over the
component along the chief output ray). This is the angular magnification of the path
(common practice for afocal systems and prisms, no source): the identity for a plate or
any system that turns every direction by the same rotation (a penta prism, two
reflections), ``|A| != 1`` in the principal plane of a dispersing prism away from minimum
deviation. ``angular_map_world`` (3x2) gives the same derivatives as world vectors
``d k_out / d tilt``, free of any choice of output frame: projected on the input axes it
shows, for a right-angle prism used as a retroreflector, the in-plane inversion (-1)
and the unchanged out-of-plane component (+1).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .. import fresnel
from .. import polarization as pol
from .compile import ABSORBER, DETECTOR, EngineError, compile_scene
from .interact import split
from .intersect import nearest_hit
from .paths import KIND_NAMES, REFLECT, TIR, TUNNEL

__all__ = ["trace_sequence", "SequenceReport"]


@dataclass
class SequenceReport:
    """What the design path does (see the module docstring).

    Angles in radians in the attributes; :meth:`summary` gives degrees as well.
    ``image_map`` (2x2 [1]) and ``angular_map`` (2x2 [rad/rad]) are in the output frame
    ``output_frame`` (rows: ox, oy); ``angular_map_world`` is (3, 2) [1/rad]; all three
    are None when a neighbour ray left the sequence. ``jones`` and ``output_stokes`` are in
    that frame too, right-handed about the output ray like a detector's
    ``(x_axis, k x x_axis)``: a detector whose ``x_axis`` is ``ox`` (or ``-ox``) reports the
    same Stokes vector.
    """

    sequence: list
    complete: bool
    left_at: dict | None
    throughput: float
    deviation: float
    lateral_displacement: float
    line_distance: float
    optical_path_length: float
    handedness: int | None
    image_rotation: float | None
    image_map: np.ndarray | None
    jones: np.ndarray
    retardance: float
    diattenuation: float
    output_stokes: np.ndarray
    steps: list = field(default_factory=list)
    input_direction: np.ndarray | None = None
    output_direction: np.ndarray | None = None
    output_point: np.ndarray | None = None
    neighbours_complete: bool = True
    angular_map: np.ndarray | None = None
    angular_map_world: np.ndarray | None = None
    output_frame: np.ndarray | None = None
    spread: dict | None = None
    warnings: list = field(default_factory=list)

    def summary(self) -> dict:
        """Plain data (degrees for angles)."""
        deg = np.degrees

        def f(x):
            return None if x is None else float(x)

        return dict(
            sequence=list(self.sequence),
            complete=bool(self.complete),
            left_at=self.left_at,
            throughput=float(self.throughput),
            deviation_deg=float(deg(self.deviation)),
            lateral_displacement_m=float(self.lateral_displacement),
            line_distance_m=float(self.line_distance),
            optical_path_length_m=float(self.optical_path_length),
            handedness=self.handedness,
            image_rotation_deg=None if self.image_rotation is None else float(deg(self.image_rotation)),
            retardance_deg=float(deg(self.retardance)),
            diattenuation=float(self.diattenuation),
            output_stokes=[float(x) for x in self.output_stokes],
            steps=[{k: (f(v) if isinstance(v, (float, np.floating)) else v) for k, v in s.items()}
                   for s in self.steps],
            neighbours_complete=bool(self.neighbours_complete),
            image_map=_listed(self.image_map),
            angular_map=_listed(self.angular_map),
            angular_map_world=_listed(self.angular_map_world),
            spread=None if self.spread is None else dict(self.spread),
            warnings=list(self.warnings),
        )


def _listed(a):
    """Nested lists of floats (None stays None)."""
    if a is None:
        return None
    return [[float(x) for x in row] for row in np.asarray(a, dtype=float)]


def _parse(cs, sequence):
    out = []
    for entry in sequence:
        name, force = entry, None
        if ":" in entry:
            name, force = entry.rsplit(":", 1)
            force = force.strip().upper()
            if force not in ("T", "R"):
                raise EngineError(f"sequence entry {entry!r}: suffix must be ':T' or ':R'")
        out.append((cs.face_id(name.strip()), force, entry))
    return out


def _rodrigues(a, b, fallback_axis):
    """Smallest rotation matrix taking unit ``a`` to unit ``b``."""
    v = np.cross(a, b)
    c = float(np.dot(a, b))
    s = np.linalg.norm(v)
    if s < 1e-12:
        if c > 0:
            return np.eye(3)
        ax = fallback_axis / np.linalg.norm(fallback_axis)
        return 2 * np.outer(ax, ax) - np.eye(3)  # rotation by pi about ax
    k = v / s
    K = np.array([[0, -k[2], k[1]], [k[2], 0, -k[0]], [-k[1], k[0], 0]])
    return np.eye(3) + s * K + (1 - c) * K @ K


def trace_sequence(scene, sequence=None, *, source=None, wavelength=None, offset=None,
                   tilt=1e-4, spread_rays=2001) -> SequenceReport:
    """Follow the design path ``sequence`` from a source's chief ray.

    Parameters
    ----------
    scene : tracer.scene.model.Scene
    sequence : list of str, optional
        ``"solid.face"`` entries (optional ``:T``/``:R`` suffix), optionally ending with
        a detector name; default ``scene.settings.sequence``.
    source : str, optional
        Source name (default: the first source).
    wavelength : float [m], optional
        Default: the source's first spectral line.
    offset : float [m], optional
        Lateral offset of the neighbour rays (default 1e-4 of the scene size, at
        least 1 nm).
    tilt : float [rad]
        Tilt of the angular neighbours (``+-tilt`` towards the source's x and y axes;
        the angular map is their central difference).
    spread_rays : int
        Geometric rays of the source's own pattern followed along the chief ray's
        choices for the TIR margin over the source's angular extent (0: none).

    Returns
    -------
    SequenceReport
    """
    from .. import sources as srcmod

    if sequence is None:
        sequence = scene.settings.sequence
    if not sequence:
        raise EngineError("no sequence: give sequence=[...] or set it in the scene settings")
    cs = compile_scene(scene)
    steps_spec = _parse(cs, list(sequence))
    if not scene.sources:
        raise EngineError("the scene has no source to launch the design path from")
    name = source or next(iter(scene.sources))
    if name not in scene.sources:
        raise EngineError(f"unknown source {name!r}; sources: {', '.join(scene.sources)}")
    spec = scene.sources[name]
    wl = float(wavelength if wavelength is not None else np.asarray(spec.spectrum.wavelengths)[0])
    ntab = cs.index_table(np.array([wl]))
    k0 = np.asarray(spec.direction, float)
    k0 = k0 / np.linalg.norm(k0)
    (x0,), (y0,) = pol.transverse_frame(k0[None], np.asarray(spec.x_axis, float))
    J = srcmod.source_coherency(spec)
    if offset is None:
        if cs.n_solids:
            size = float(np.max(cs.box_hi - cs.box_lo))
        else:
            size = 1.0
        offset = max(1e-4 * size, 1e-9)
    p0 = np.asarray(spec.position, float)
    origins = np.array([p0, p0 + offset * x0, p0 + offset * y0, p0, p0, p0, p0])
    dirs = np.array([k0, k0, k0, k0 + tilt * x0, k0 + tilt * y0, k0 - tilt * x0,
                     k0 - tilt * y0])
    dirs /= np.linalg.norm(dirs, axis=1, keepdims=True)
    xr, yr = pol.transverse_frame(dirs, x0)
    M = pol.initial_field_matrix(xr, yr)
    n = len(origins)
    medium = np.full(n, -1, dtype=np.int64)
    if spec.inside_solid is not None:
        medium[:] = cs.solid_names.index(spec.inside_solid)
    last = np.full(n, -1, dtype=np.int64)
    alive = np.ones(n, dtype=bool)
    opl = np.zeros(n)
    power = np.ones(n)
    pos = origins.copy()
    Jn = np.broadcast_to(J, (n, 2, 2))
    steps = []
    choices = []  # (face id, child, chief totally reflected, step index) per face event
    left = None
    wl_i = np.zeros(n, dtype=np.int64)
    wla = np.full(n, wl)
    coh = np.full(n, np.inf)

    t, face = nearest_hit(cs, pos, dirs, medium, last)
    for i, (fid, force, entry) in enumerate(steps_spec):
        ok = alive & (face == fid)
        if not ok[0]:
            got = int(face[0])
            left = dict(step=i, expected=entry,
                        hit=cs.face_names[got] if got >= 0 else None,
                        after=steps[-1]["face"] if steps else None)
            alive[:] = False
            break
        alive &= ok
        nmed = ntab[medium + 1, 0]
        seg = np.where(np.isfinite(t), t, 0.0)
        opl = opl + nmed.real * seg
        # bulk absorption over the segment (Beer-Lambert, alpha = 4 pi kappa / lambda), as in
        # the non-sequential trace: field amplitude exp(-2 pi kappa L / lambda)
        amp = np.exp(-2.0 * np.pi * np.maximum(nmed.imag, 0.0) * seg / wl)
        bulk_t = float(amp[0] ** 2)
        power = power * amp**2
        M = M * amp[:, None, None]
        hit = pos + t[:, None] * dirs
        code = cs.face_code[fid]
        if code in (DETECTOR, ABSORBER):
            pos = hit
            steps.append(dict(face=entry, kind="detect" if code == DETECTOR else "absorb",
                              power=float(power[0]), bulk_transmittance=bulk_t))
            if i != len(steps_spec) - 1:
                left = dict(step=i, expected=steps_spec[i + 1][2], hit=entry, after=entry)
                alive[:] = False
            break
        fa = np.full(n, fid)
        sp = split(cs, direction=dirs, position=hit, field=M, power=power, medium=medium,
                   face=fa, wavelength=wla, wl_index=wl_i, ntab=ntab, coherency=Jn,
                   coherence_length=coh)
        # which child continues the sequence
        last_step = i == len(steps_spec) - 1
        cand = {}
        for label, d, o, med, lf in (("R", sp.r_dir, hit, medium, fa),
                                     ("T", sp.t_dir, sp.t_origin, sp.t_medium, sp.t_face)):
            tt, ff = nearest_hit(cs, o, d, med, lf)
            cand[label] = (tt, ff)
        if force is not None:
            choice = force
        elif last_step:
            choice = "T" if sp.t_exists[0] else "R"
        else:
            nxt = steps_spec[i + 1][0]
            if sp.t_exists[0] and cand["T"][1][0] == nxt:
                choice = "T"
            elif cand["R"][1][0] == nxt:
                choice = "R"
            else:
                choice = "T" if sp.t_exists[0] else "R"
        if choice == "T" and not sp.t_exists[0]:
            left = dict(step=i, expected=entry + ":T", hit=None, after=entry,
                        reason="no transmitted wave")
            alive[:] = False
            break
        # event details for the chief ray
        n1 = ntab[medium[0] + 1, 0]
        nf = cs.face_normal[fid]
        inside = medium[0] == cs.face_solid[fid]
        nh = nf if inside else -nf
        cos1 = float(np.clip(np.dot(dirs[0], nh), 0, 1))
        aoi = float(np.arccos(cos1))
        g = cs.face_gap[fid]
        across = bool(inside and g >= 0 and sp.t_medium[0] >= 0)
        if across or (inside and g >= 0 and not sp.t_exists[0]):
            n_beyond = ntab[cs.n_solids + 1 + g, 0]  # the gap medium decides TIR
        elif inside:
            n_beyond = ntab[0, 0]
        else:
            n_beyond = ntab[cs.face_solid[fid] + 1, 0]
        crit = fresnel.critical_angle(n1=n1, n2=n_beyond)
        crit = None if np.isnan(crit) else float(crit)
        kind = int(sp.r_kind[0]) if choice == "R" else int(sp.t_kind[0])
        step = dict(face=entry, kind=KIND_NAMES[kind], child=choice, bulk_transmittance=bulk_t,
                    angle_of_incidence_deg=float(np.degrees(aoi)),
                    critical_angle_deg=None if crit is None else float(np.degrees(crit)),
                    tir_margin_deg=(float(np.degrees(aoi - crit))
                                    if (crit is not None and kind == TIR) else None),
                    leakage=(float(sp.t_power[0] / power[0]) if (kind == TIR and sp.t_exists[0])
                             else (0.0 if kind == TIR else None)),
                    power_fraction=float((sp.r_power[0] if choice == "R" else sp.t_power[0]) / power[0]))
        steps.append(step)
        choices.append((fid, choice, kind == TIR, len(steps) - 1))
        if choice == "R":
            dirs, M, power, pos, last = sp.r_dir, sp.r_field, sp.r_power, hit, fa
            t, face = cand["R"]
        else:
            dirs, M, power, pos, medium, last = (sp.t_dir, sp.t_field, sp.t_power, sp.t_origin,
                                                 sp.t_medium, sp.t_face)
            t, face = cand["T"]
    complete = left is None
    kin = k0
    kout = dirs[0]
    dev = float(np.arccos(np.clip(np.dot(kin, kout), -1, 1)))
    d = pos[0] - p0
    lateral = float(np.linalg.norm(d - np.dot(d, kout) * kout))
    cr = np.cross(kin, kout)
    if np.linalg.norm(cr) > 1e-9:
        line_dist = float(abs(np.dot(d, cr)) / np.linalg.norm(cr))
    else:
        line_dist = float(np.linalg.norm(d - np.dot(d, kin) * kin))
    R = _rodrigues(kin, kout, y0)
    ox, oy = R @ x0, R @ y0
    jones = pol.jones_in_frame(M[0], ox, oy)
    coh_out = jones @ J @ jones.conj().T
    stokes = pol.coherency_to_stokes(coh_out)
    handed = rot = imap = amap = amap_w = None
    nb_ok = bool(complete and alive.all())
    if nb_ok:
        def image(j):
            # propagate neighbour j to the plane through the chief exit point normal to kout
            dj = dirs[j]
            s = np.dot(pos[0] - pos[j], kout) / np.dot(dj, kout)
            q = pos[j] + s * dj - pos[0]
            return np.array([np.dot(q, ox), np.dot(q, oy)]) / offset

        imap = np.column_stack([image(1), image(2)])

        def slopes(j):
            dj = dirs[j]
            return np.array([np.dot(dj, ox), np.dot(dj, oy)]) / np.dot(dj, kout)

        # input slopes of neighbours 3..6 are exactly +-tilt (k0 +- tilt x0, normalised)
        amap = np.column_stack([(slopes(3) - slopes(5)) / (2 * tilt),
                                (slopes(4) - slopes(6)) / (2 * tilt)])
        amap_w = np.column_stack([(dirs[3] - dirs[5]) / (2 * tilt),
                                  (dirs[4] - dirs[6]) / (2 * tilt)])
        det = np.linalg.det(imap)
        handed = int(np.sign(det)) if abs(det) > 1e-9 else 0
        rot = float(np.arctan2(imap[1, 0], imap[0, 0]))
    spread = None
    warnings = []
    if spread_rays and complete:
        spread = _spread(cs, spec, choices, steps, wl=wl, ntab=ntab, count=int(spread_rays),
                         seed=int(getattr(scene, "seed", 0) or 0))
        for st in steps:
            frac = st.get("below_critical_fraction")
            if frac:
                warnings.append(
                    f"{100 * frac:.3g} % of the source power meets {st['face']} below the "
                    f"critical angle (worst TIR margin {st['worst_tir_margin_deg']:.2f}°): "
                    "that light is refracted through the face (across its gap), not totally "
                    "reflected")
    return SequenceReport(
        sequence=[e for _, _, e in steps_spec], complete=complete, left_at=left,
        throughput=float(power[0]) if complete else 0.0, deviation=dev,
        lateral_displacement=lateral, line_distance=line_dist,
        optical_path_length=float(opl[0]), handedness=handed, image_rotation=rot,
        image_map=imap, jones=jones, retardance=float(pol.retardance(jones)),
        diattenuation=float(pol.diattenuation(jones)), output_stokes=stokes, steps=steps,
        input_direction=kin, output_direction=kout, output_point=pos[0],
        neighbours_complete=nb_ok, angular_map=amap, angular_map_world=amap_w,
        output_frame=np.array([ox, oy]), spread=spread, warnings=warnings,
    )


def _spread(cs, spec, choices, steps, *, wl, ntab, count, seed):
    """Follow the source's own rays along the chief ray's choices (module docstring).

    Adds ``worst_tir_margin_deg``, ``below_critical_fraction`` and
    ``spread_arriving_fraction`` to the steps where the chief ray is totally reflected
    and returns a summary of the sample (source kind, half angle, rays).
    """
    from .. import sources as srcmod

    rays = srcmod.generate(spec, rng=np.random.default_rng(seed), count=count)
    first = rays.line_index == rays.line_index[0]  # one spectral line: the geometry
    dirs = np.asarray(rays.directions, float)[first]
    pos = np.asarray(rays.origins, float)[first]
    w = np.asarray(rays.power, float)[first]
    total = float(w.sum())
    m = len(w)
    M = np.asarray(rays.field, complex)[first]
    J = np.broadcast_to(np.asarray(rays.coherency, complex), (m, 2, 2))
    medium = np.full(m, -1, dtype=np.int64)
    if spec.inside_solid is not None:
        medium[:] = cs.solid_names.index(spec.inside_solid)
    last = np.full(m, -1, dtype=np.int64)
    alive = np.ones(m, dtype=bool)
    power = np.ones(m)
    wl_i = np.zeros(m, dtype=np.int64)
    wla = np.full(m, wl)
    coh = np.full(m, np.inf)
    for fid, choice, chief_tir, si in choices:
        t, face = nearest_hit(cs, pos, dirs, medium, last)
        alive &= face == fid
        if not alive.any():
            if chief_tir:
                steps[si].update(worst_tir_margin_deg=None, below_critical_fraction=0.0,
                                 spread_arriving_fraction=0.0)
            break
        idx = np.nonzero(alive)[0]
        hit = pos[idx] + t[idx, None] * dirs[idx]
        fa = np.full(len(idx), fid)
        sp = split(cs, direction=dirs[idx], position=hit, field=M[idx], power=power[idx],
                   medium=medium[idx], face=fa, wavelength=wla[idx], wl_index=wl_i[idx],
                   ntab=ntab, coherency=J[idx], coherence_length=coh[idx])
        if chief_tir:
            inside = medium[idx] == cs.face_solid[fid]
            nf = np.where(inside[:, None], cs.face_normal[fid], -cs.face_normal[fid])
            cos1 = np.clip(np.einsum("ij,ij->i", dirs[idx], nf), 0.0, 1.0)
            aoi = np.arccos(cos1)
            n1 = ntab[medium[idx] + 1, 0].real
            g = cs.face_gap[fid]
            beyond = np.where(inside, ntab[0, 0].real, ntab[cs.face_solid[fid] + 1, 0].real)
            if g >= 0:  # the gap medium decides TIR (unless the ray lands off the partner)
                at_gap = inside & ((sp.t_face != fid) | ~sp.t_exists)
                beyond = np.where(at_gap, ntab[cs.n_solids + 1 + g, 0].real, beyond)
            with np.errstate(invalid="ignore"):
                crit = np.where(beyond < n1, np.arcsin(np.clip(beyond / n1, 0.0, 1.0)), np.nan)
            # no critical angle (denser beyond): the whole arriving power is below it
            margin = np.where(np.isnan(crit), -np.inf, aoi - np.nan_to_num(crit))
            below = margin < 0
            worst = float(margin.min())
            steps[si].update(
                worst_tir_margin_deg=float(np.degrees(worst)) if np.isfinite(worst) else None,
                below_critical_fraction=float(w[idx][below].sum() / total) if total else 0.0,
                spread_arriving_fraction=float(w[idx].sum() / total) if total else 0.0,
            )
        keep = np.zeros(len(idx), dtype=bool)
        if choice == "R":
            keep[:] = True
            nd, nM, np_, npos, nmed, nlast = sp.r_dir, sp.r_field, sp.r_power, hit, medium[idx], fa
        else:
            keep = sp.t_exists.copy()
            nd, nM, np_, npos, nmed, nlast = (sp.t_dir, sp.t_field, sp.t_power, sp.t_origin,
                                              sp.t_medium, sp.t_face)
        alive[idx[~keep]] = False
        dirs[idx], M[idx], power[idx], pos[idx] = nd, nM, np_, npos
        medium[idx], last[idx] = nmed, nlast
    return dict(source=spec.name, kind=spec.kind,
                half_angle_deg=(float(np.degrees(spec.half_angle))
                                if spec.kind in ("point", "fan") else 0.0),
                rays=int(m), wavelength_m=float(wl))
