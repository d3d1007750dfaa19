"""The prism catalog: a registry of named prism kinds with typed parameters.

``KINDS[name]`` is a :class:`PrismKind` whose ``parameters`` describe every keyword the
builder accepts (a :class:`ParameterSpec` each), so that the scene loader validates any
kind generically: convert quantities to SI (lengths [m], angles [rad]), then call
``KINDS[name].resolve(params, where=...)`` for defaults and type checks, and
``KINDS[name].build(**params)`` for the solid (``build`` resolves too).
The local frame of each kind is documented in its ``doc`` (and in
:mod:`tracer.geometry.catalog_prisms`).

>>> sorted(KINDS)[:3]
['corner_cube', 'dispersing_prism', 'dove_prism']
>>> prism = build("right_angle_prism", leg=0.02)
>>> prism.face_names
('leg_a', 'hypotenuse', 'leg_b', 'top', 'bottom')
"""

from __future__ import annotations

import difflib
import math
from dataclasses import dataclass, field
from typing import Any, Callable, Literal

from tracer.geometry import catalog_prisms as cp
from tracer.geometry.errors import GeometryError

__all__ = ["ParameterSpec", "PrismKind", "KINDS", "register", "build", "names"]

ParameterKind = Literal["length", "angle", "count", "choice", "bool"]


@dataclass(frozen=True)
class ParameterSpec:
    """One parameter of a prism kind.

    Attributes
    ----------
    name : str
    kind : {"length", "angle", "count", "choice", "bool"}
        ``length`` [m] positive, ``angle`` [rad], ``count`` positive int, ``choice`` one
        of ``choices``, ``bool``.
    required : bool
    default : Any
        Used when not required and not given; ``None`` means "derived" (see ``doc``).
    doc : str
    choices : tuple of str
        Allowed values of a ``choice`` parameter.
    """

    name: str
    kind: ParameterKind
    required: bool = False
    default: Any = None
    doc: str = ""
    choices: tuple[str, ...] = ()

    def check(self, value: Any, where: str = "") -> Any:
        """``value`` validated for this parameter (``GeometryError`` naming ``where``)."""
        at = f"{where}.{self.name}" if where else self.name
        if self.kind in ("length", "angle"):
            if isinstance(value, bool) or not isinstance(value, (int, float)):
                raise GeometryError(f"{at}: expected a number ({self.kind}), got {value!r}")
            v = float(value)
            if not math.isfinite(v):
                raise GeometryError(f"{at}: must be finite, got {value!r}")
            if self.kind == "length" and v <= 0:
                raise GeometryError(f"{at}: must be a positive length, got {v:g} m")
            return v
        if self.kind == "count":
            if isinstance(value, bool) or not isinstance(value, int) or value < 1:
                raise GeometryError(f"{at}: expected a positive integer, got {value!r}")
            return int(value)
        if self.kind == "bool":
            if not isinstance(value, bool):
                raise GeometryError(f"{at}: expected true or false, got {value!r}")
            return value
        if value not in self.choices:
            raise GeometryError(f"{at}: expected one of {list(self.choices)}, got {value!r}")
        return value


@dataclass(frozen=True)
class PrismKind:
    """A catalog entry.

    Attributes
    ----------
    name : str
    parameters : tuple of ParameterSpec
    faces : tuple of str
        Face names of every solid this kind builds, in ``face_names`` order.
    doc : str
        What it is and its local frame.
    builder : callable
        The raw builder (keyword-only SI parameters); use :meth:`build`.
    """

    name: str
    parameters: tuple[ParameterSpec, ...]
    faces: tuple[str, ...]
    doc: str
    builder: Callable[..., Any] = field(repr=False)

    def parameter(self, name: str) -> ParameterSpec:
        """The spec of parameter ``name``."""
        for p in self.parameters:
            if p.name == name:
                return p
        raise GeometryError(f"{self.name} has no parameter {name!r}")

    def resolve(self, params: dict[str, Any], where: str = "") -> dict[str, Any]:
        """Validated parameters with defaults filled in (derived ones left out).

        Raises ``GeometryError`` for unknown names (with a did-you-mean), missing
        required ones and values of the wrong kind; ``where`` prefixes the messages.
        """
        known = {p.name: p for p in self.parameters}
        at = where or self.name
        for key in params:
            if key not in known:
                hint = difflib.get_close_matches(key, list(known), n=1)
                extra = f"; did you mean {hint[0]!r}?" if hint else ""
                raise GeometryError(
                    f"{at}: unknown parameter {key!r} for {self.name}{extra} "
                    f"(expected {', '.join(known)})"
                )
        out: dict[str, Any] = {}
        for p in self.parameters:
            if p.name in params and params[p.name] is not None:
                out[p.name] = p.check(params[p.name], at)
            elif p.required:
                raise GeometryError(f"{at}: missing required parameter {p.name!r} ({p.doc})")
            elif p.default is not None:
                out[p.name] = p.default
        return out

    def build(self, **params: Any):
        """Build the solid from SI parameters (validated by :meth:`resolve`)."""
        return self.builder(**self.resolve(params))


KINDS: dict[str, PrismKind] = {}


def register(kind: PrismKind) -> PrismKind:
    """Add ``kind`` to :data:`KINDS` (a name may be registered once)."""
    if kind.name in KINDS:
        raise ValueError(f"prism kind {kind.name!r} is already registered")
    KINDS[kind.name] = kind
    return kind


def names() -> list[str]:
    """Sorted names of the catalog kinds."""
    return sorted(KINDS)


def build(kind: str, **params: Any):
    """Build catalog solid ``kind`` (``GeometryError`` with a did-you-mean for unknown kinds)."""
    try:
        entry = KINDS[kind]
    except KeyError:
        hint = difflib.get_close_matches(kind, list(KINDS), n=1)
        extra = f"; did you mean {hint[0]!r}?" if hint else ""
        raise GeometryError(f"unknown prism kind {kind!r}{extra} (known: {', '.join(names())})") from None
    return entry.build(**params)


def _doc(fn) -> str:
    return (fn.__doc__ or "").strip()


_P = ParameterSpec
_EXT = ("top", "bottom")

register(PrismKind(
    "right_angle_prism",
    (_P("leg", "length", True, doc="length of each leg face [m]"),
     _P("height", "length", doc="extent along z [m]; default the leg")),
    ("leg_a", "hypotenuse", "leg_b") + _EXT, _doc(cp.right_angle_prism), cp.right_angle_prism,
))
register(PrismKind(
    "dispersing_prism",
    (_P("apex_angle", "angle", True, doc="angle between entrance and exit faces [rad]"),
     _P("side", "length", doc="length of entrance and exit faces [m] (this or base)"),
     _P("base", "length", doc="length of the base [m] (this or side)"),
     _P("height", "length", doc="extent along z [m]; default the larger of side and base")),
    ("base", "exit", "entrance") + _EXT, _doc(cp.dispersing_prism), cp.dispersing_prism,
))
register(PrismKind(
    "penta_prism",
    (_P("aperture", "length", True, doc="length of entrance and exit faces [m]"),
     _P("height", "length", doc="extent along z [m]; default the aperture")),
    ("entrance", "exit", "reflector_a", "bevel", "reflector_b") + _EXT, _doc(cp.penta_prism), cp.penta_prism,
))
register(PrismKind(
    "dove_prism",
    (_P("aperture", "length", True, doc="distance between base and upper face [m]"),
     _P("length", "length", True, doc="length of the base (TIR face) [m]"),
     _P("base_angle", "angle", default=math.radians(45.0), doc="angle of the slanted ends [rad]"),
     _P("depth", "length", doc="extent along z [m]; default the aperture")),
    ("base", "exit", "upper", "entrance") + _EXT, _doc(cp.dove_prism), cp.dove_prism,
))
register(PrismKind(
    "rhomb",
    (_P("aperture", "length", True, doc="length of entrance and exit faces [m]"),
     _P("style", "choice", default="lateral", choices=("lateral", "fresnel"),
        doc="lateral displacement (45 deg) or Fresnel rhomb retarder (54 deg 37 min)"),
     _P("angle", "angle", doc="acute angle [rad]; default from style"),
     _P("length", "length", doc="length of the reflecting faces [m]; default 2 s sin^2 a / cos a"),
     _P("height", "length", doc="extent along z [m]; default the aperture")),
    ("reflector_a", "exit", "reflector_b", "entrance") + _EXT, _doc(cp.rhomb), cp.rhomb,
))
register(PrismKind(
    "wedge",
    (_P("aperture", "length", True, doc="extent of the front face along y [m]"),
     _P("thickness", "length", True, doc="thickness along x [m] at the centre or thin end"),
     _P("angle", "angle", True, doc="wedge angle [rad]"),
     _P("thickness_at", "choice", default="centre", choices=("centre", "thin_end"),
        doc="where thickness is measured"),
     _P("height", "length", doc="extent along z [m]; default the aperture")),
    ("side_a", "back", "side_b", "front") + _EXT, _doc(cp.wedge), cp.wedge,
))
register(PrismKind(
    "plate",
    (_P("width", "length", True, doc="extent along y [m]"),
     _P("height", "length", True, doc="extent along z [m]"),
     _P("thickness", "length", True, doc="extent along x [m]")),
    ("side_a", "back", "side_b", "front") + _EXT, _doc(cp.plate), cp.plate,
))
register(PrismKind(
    "corner_cube",
    (_P("size", "length", True, doc="length of the three perpendicular edges [m]"),),
    ("reflector_a", "reflector_b", "reflector_c", "entrance"), _doc(cp.corner_cube), cp.corner_cube,
))
register(PrismKind(
    "roof_prism",
    (_P("leg", "length", True, doc="length of each leg face [m]"),
     _P("height", "length", doc="extent along z [m], below sqrt(2) leg; default the leg")),
    ("leg_a", "roof_a", "leg_b", "roof_b") + _EXT, _doc(cp.roof_prism), cp.roof_prism,
))
