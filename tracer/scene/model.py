"""The in-memory scene: what the loader produces and the engine consumes.

Plain frozen dataclasses, SI units throughout (metres, radians, watts). The loader
(:mod:`tracer.scene.loader`) turns a TOML file into a :class:`Scene`; the engine never
reads TOML. Geometry is already placed in scene coordinates.

This module is the contract between the scene loader, the engine and the analysis;
change it only together with all three.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Literal

import numpy as np

__all__ = [
    "Spectrum",
    "TraceSettings",
    "FaceTreatment",
    "SolidSpec",
    "GapSpec",
    "Polarization",
    "AimSpec",
    "SourceSpec",
    "DetectorSpec",
    "RequirementSpec",
    "Scene",
]

TreatmentKind = Literal["uncoated", "stack", "ideal", "mirror", "absorber"]


@dataclass(frozen=True)
class Spectrum:
    """Wavelengths carried by a source or the scene.

    Attributes
    ----------
    wavelengths : (K,) float [m]
        Vacuum wavelengths.
    weights : (K,) float [1]
        Fraction of the source power at each wavelength; sums to 1.
    bandwidth : float or None [m]
        Full width of each line. Fixes the coherence length lambda**2 / bandwidth that
        decides whether a thin layer (gap) below its critical angle is treated
        coherently. ``None`` means monochromatic (infinite coherence length).
    """

    wavelengths: np.ndarray
    weights: np.ndarray
    bandwidth: float | None = None

    def coherence_length(self) -> np.ndarray:
        """Coherence length lambda**2 / bandwidth per line [m] (inf when monochromatic)."""
        wl = np.asarray(self.wavelengths, dtype=float)
        if self.bandwidth is None or self.bandwidth <= 0:
            return np.full_like(wl, np.inf)
        return wl**2 / self.bandwidth


@dataclass(frozen=True)
class TraceSettings:
    """How the engine traces.

    Attributes
    ----------
    mode : "tree" or "monte-carlo"
        ``tree`` splits every ray into reflected and transmitted children
        (deterministic); ``monte-carlo`` follows one child per event, chosen with
        probability proportional to its power (unbiased, for very large ray counts).
    power_threshold : float [1]
        Children whose power falls below this fraction of their source ray's power are
        discarded and their power booked as discarded.
    max_events : int
        Rays that have undergone this many events are cut and their power booked as cut.
    sequence : tuple of str or None
        Optional design path, as ``"solid.face"`` strings, for the sequential mode.
    auto_threshold : bool
        ``power_threshold = "auto"`` (the default of scene files that do not set it):
        ``power_threshold`` is only the first try; the trace is repeated with a lower
        threshold (and a higher event cap when cut power is the problem) until every
        requirement's verdict is conclusive, within ``auto_cost``
        (:mod:`tracer.analysis.auto_threshold`).
    auto_cost : float [1]
        With ``auto_threshold``: the retraces stop once all traces together have cost this
        many times the events of the first trace.
    scatter_rays : int
        Tree mode: scatter directions sampled at a scatter event (each carried by a pair of
        rays, one per polarisation, :mod:`tracer.scatter.fields`).
    scatter_depth : int
        Tree mode: scatter events on a path that spawn ``scatter_rays`` directions; later
        scatter events on the same path spawn one (unbiased, cheaper).
    scatter_targets : tuple of str or None
        Detectors and ``solid.face`` faces the aimed share of the scatter directions aims
        at; ``None``: every plane detector; ``()``: none.
    target_share : float [1]
        Share of the ``scatter_rays`` directions aimed at the targets (balance heuristic).
    """

    mode: Literal["tree", "monte-carlo"] = "tree"
    power_threshold: float = 1e-6
    max_events: int = 64
    sequence: tuple[str, ...] | None = None
    auto_threshold: bool = False
    auto_cost: float = 30.0
    scatter_rays: int = 16
    scatter_depth: int = 1
    scatter_targets: tuple[str, ...] | None = None
    target_share: float = 0.5


@dataclass(frozen=True)
class FaceTreatment:
    """Surface treatment of one face.

    kind
        ``uncoated``: bare Fresnel interface. ``stack``: a thin-film stack
        (``coating`` is a :class:`tracer.coatings.Coating`). ``ideal``: lossless
        coating of reflectance ``reflectance`` for both polarisations. ``mirror``:
        ``coating`` may be a metal/dielectric stack, or ``None`` for a perfect
        mirror (R = 1, rs = -1, rp = +1 in the DESIGN.md convention, i.e. the same
        as a perfect conductor). ``absorber``: every ray that reaches the face ends
        there and its power is booked as absorbed on this face.
    coating_name
        Name of the coating in the scene file (for reports), or ``None``.
    scatter
        A scatter model (:mod:`tracer.scatter`) for the diffuse part of the face, or
        ``None``; ``kind``, ``coating`` and ``reflectance`` then describe its specular part.
    """

    kind: TreatmentKind = "uncoated"
    coating: Any = None
    reflectance: float | None = None
    coating_name: str | None = None
    scatter: Any = None


@dataclass(frozen=True)
class SolidSpec:
    """A placed solid.

    Attributes
    ----------
    name : str
        Scene name, unique.
    material : tracer.materials index model
        Anything with ``refractive_index(wavelength) -> complex ndarray``.
    material_name : str
        Name used in the scene file (for reports).
    geometry : tracer.geometry solid
        Already placed in scene coordinates (see :mod:`tracer.geometry`).
    faces : dict[str, FaceTreatment]
        Treatment of every face of ``geometry`` (faces not mentioned in the file are
        ``uncoated``).
    kind : str
        Catalog kind or construction (``right_angle_prism``, ``polygon``,
        ``polyhedron``, ``mesh``, ``tube`` ...), for reports.
    opaque : bool
        An opaque part (``[parts.NAME]``: mount, baffle, housing): it takes part in
        intersection like any solid but is never entered; the power its faces transmit
        is absorbed on the face. ``material`` is then the part's bulk (a metal for a
        specular surface) or the ambient when the file names none.
    bevels : tuple of tracer.geometry.bevels.Bevel
        The ground bevels cut on the solid's edges (``[[solids.NAME.bevels]]``), each with
        its two faces and width [m]; ``geometry`` already has their chamfer faces
        (``bevel_<a>_<b>``). Empty for a solid without bevels.
    """

    name: str
    material: Any
    material_name: str
    geometry: Any
    faces: dict[str, FaceTreatment]
    kind: str = "custom"
    opaque: bool = False
    bevels: tuple = ()

    @property
    def table_key(self) -> str:
        """Key path of the solid's table in the scene file (``solids.NAME`` or ``parts.NAME``)."""
        return f"{'parts' if self.opaque else 'solids'}.{self.name}"


@dataclass(frozen=True)
class GapSpec:
    """A thin layer between two facing faces of two solids.

    The optical stack, seen from solid A, is
    ``A | A's coating | medium, thickness | B's coating reversed | B``.

    Attributes
    ----------
    thickness : float [m]
        Separation at the reference point (centre of A's face footprint).
    wedge : float [rad]
        Angle between the two faces; the engine uses the local thickness at each hit
        (distance from the hit point to B's plane) whatever this says; kept for reports.
    origin : "declared", "mated" or "automatic"
        How the gap entered the scene.
    coherence : "auto", "coherent" or "incoherent"
        Per ray. ``auto``: coherent beyond the gap medium's critical angle or when the
        thickness is below the coherence length, incoherent otherwise. ``incoherent``:
        incoherent where the field propagates in the gap, coherent beyond the critical
        angle (an evanescent field has no phase to lose: frustrated TIR still tunnels).
        ``coherent``: always coherent.
    """

    name: str
    solid_a: str
    face_a: str
    solid_b: str
    face_b: str
    medium: Any
    medium_name: str
    thickness: float
    wedge: float = 0.0
    origin: Literal["declared", "mated", "automatic"] = "declared"
    coherence: Literal["auto", "coherent", "incoherent"] = "auto"


@dataclass(frozen=True)
class Polarization:
    """Source polarisation as a Stokes vector in the source's reference frame.

    The frame: ``x_axis`` (unit, perpendicular to the propagation direction) is the
    direction of a field at 0 deg linear polarisation; ``y_axis = direction x x_axis``.
    S1 > 0 is linear along x_axis, S2 > 0 linear at +45 deg (towards y_axis), S3 > 0 is
    right-handed circular in the convention documented in :mod:`tracer.polarization`.

    stokes : (4,) float, normalised so that S0 = 1.
    """

    stokes: np.ndarray = field(default_factory=lambda: np.array([1.0, 0.0, 0.0, 0.0]))
    label: str = "unpolarised"


@dataclass(frozen=True)
class AimSpec:
    """How an aimed source (``[sources.NAME.aim]``) was placed; for reports only.

    The loader has already turned it into the source's ``position`` and ``direction``:
    the central ray leaves ``position`` along ``direction`` and meets ``face`` at
    ``point`` after ``distance``.

    Attributes
    ----------
    face : str
        ``"solid.face"`` aimed at.
    point : (3,) float [m]
        The point of the face the central ray meets (scene frame).
    angle : float [rad]
        Signed angle of incidence outside the solid, from the face's inward normal;
        positive turns the ray right-handed about ``plane_normal``.
    plane_normal : (3,) float
        Unit normal of the plane of incidence (it contains the face normal).
    distance : float [m]
        From the source's position to ``point``.
    angle_inside : float or None [rad]
        The refracted angle inside the solid at ``wavelength``, when the file gave it.
    wavelength : float or None [m]
        Vacuum wavelength of that conversion.
    """

    face: str
    point: np.ndarray
    angle: float
    plane_normal: np.ndarray
    distance: float
    angle_inside: float | None = None
    wavelength: float | None = None


@dataclass(frozen=True)
class SourceSpec:
    """A ray source.

    kind
        ``collimated``: parallel rays over an aperture (``aperture`` "circle" with
        ``size[0]`` the diameter, or "rectangle" with ``size`` = (width, height));
        ``point``: rays from ``position`` into a cone of ``half_angle`` about
        ``direction`` (``half_angle`` = pi for all directions);
        ``fan``: rays from ``position`` in the plane spanned by ``direction`` and
        ``x_axis``, over +-``half_angle`` (2D scenes).
    sampling
        ``grid`` (deterministic, regular) or ``random`` (uses the scene seed).
    rays
        Number of rays to launch (the grid may round it; the engine reports the
        count used).
    power : float [W]
        Total power of the source, shared equally by its rays and split over the
        spectrum by its weights.
    x_axis : (3,) float
        Reference direction of the polarisation frame and of the aperture's width.
    aim : AimSpec or None
        Set when the file aimed the source at a face (``position`` and ``direction``
        follow from it); ``None`` for a source given by position and direction.
    """

    name: str
    kind: Literal["collimated", "point", "fan"]
    position: np.ndarray
    direction: np.ndarray
    x_axis: np.ndarray
    power: float
    rays: int
    spectrum: Spectrum
    polarization: Polarization
    aperture: Literal["circle", "rectangle"] = "circle"
    size: tuple[float, float] = (0.0, 0.0)
    half_angle: float = 0.0
    sampling: Literal["grid", "random"] = "grid"
    inside_solid: str | None = None
    aim: AimSpec | None = None


@dataclass(frozen=True)
class DetectorSpec:
    """A detector.

    kind
        ``plane``: a rectangle centred on ``position`` with normal ``normal`` (rays are
        counted when they cross it travelling against the normal, i.e. the normal
        points towards the light it detects, unless ``two_sided``); ``x_axis`` fixes
        the pixel columns; ``size`` (width, height) [m]; ``pixels`` (nx, ny);
        ``outline`` ``"rectangle"`` or ``"circle"`` (a disk of diameter ``size[0]``
        inscribed in the pixel square).
        ``far_field``: a sphere at infinity that collects every escaping ray by
        direction; ``pixels`` (n_azimuth, n_polar).
    on_face
        ``"solid.face"`` when the plane lies on a face (for reports), else ``None``.
    """

    name: str
    kind: Literal["plane", "far_field"]
    position: np.ndarray
    normal: np.ndarray
    x_axis: np.ndarray
    size: tuple[float, float]
    pixels: tuple[int, int] = (64, 64)
    two_sided: bool = False
    on_face: str | None = None
    outline: Literal["rectangle", "circle"] = "rectangle"


@dataclass(frozen=True)
class RequirementSpec:
    """A check a run evaluates.

    kind
        ``min_power``: power on ``detector`` >= ``limit`` [W] (or, with
        ``relative``, fraction of total source power). ``max_power``: power on
        ``detector`` <= ``limit`` (same units). ``max_ghost_fraction``: power of
        the ghost paths on ``detector`` / the design signal (design path and the paths
        equivalent to it, :mod:`tracer.analysis.ghosts`) <= ``limit``.
        ``max_leakage``: power crossing ``gap`` / source power <= ``limit``; which
        crossings count is ``mechanism``: ``"crossed"`` (every crossing, the default),
        ``"tunnelled"`` (frustrated TIR only) or ``"refracted"`` (refraction below the
        gap medium's critical angle only).
    """

    name: str
    kind: Literal["min_power", "max_power", "max_scattered_power", "max_ghost_fraction",
                  "max_leakage"]
    limit: float
    detector: str | None = None
    gap: str | None = None
    relative: bool = False
    mechanism: Literal["crossed", "tunnelled", "refracted"] = "crossed"


@dataclass(frozen=True)
class Scene:
    """A loaded, validated scene in SI units."""

    path: str | None
    title: str
    dimension: Literal[2, 3]
    ambient: Any
    ambient_name: str
    spectrum: Spectrum
    seed: int
    settings: TraceSettings
    solids: dict[str, SolidSpec]
    gaps: dict[str, GapSpec]
    sources: dict[str, SourceSpec]
    detectors: dict[str, DetectorSpec]
    requirements: dict[str, RequirementSpec]
    notes: tuple[str, ...] = ()
    raw: dict | None = None  # the parsed TOML, for writing back

    def _repr_html_(self) -> str:  # Jupyter (tracer.notebook)
        from ..notebook import scene_html
        return scene_html(self)
