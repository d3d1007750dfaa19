"""Coating objects: a thin-film stack (:class:`Coating`), the lossless abstraction
(:class:`IdealCoating`), and the evaluation of an index (a number or an index model).

Layers are listed **from the substrate (the solid) outwards**; see :mod:`tracer.coatings`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..fresnel import CoefficientError

__all__ = ["CoatingError", "Coating", "IdealCoating", "evaluate_index"]


class CoatingError(CoefficientError):
    """Bad coating definition or treatment (a :class:`tracer.errors.TracerError`)."""


def _is_model(x) -> bool:
    return hasattr(x, "refractive_index")


def evaluate_index(index, wavelength, *, extrapolate: bool = False) -> np.ndarray:
    """Complex index of a number or an index model at ``wavelength``.

    Parameters
    ----------
    index : complex, array_like or index model
        A number ``n + iκ`` (or array broadcast with the rays), or an object with
        ``refractive_index(wavelength, *, extrapolate=False)``.
    wavelength : array_like float [m]
        Vacuum wavelength.
    extrapolate : bool
        Passed to the model (evaluate outside its valid range).

    Returns
    -------
    complex ndarray [1]
    """
    if _is_model(index):
        return np.asarray(index.refractive_index(wavelength, extrapolate=extrapolate), dtype=np.complex128)
    try:
        return np.asarray(index, dtype=np.complex128)
    except (TypeError, ValueError):
        raise CoatingError(
            f"an index must be a number or an index model with refractive_index(wavelength), got {index!r}"
        ) from None


def _check_index(index, where: str):
    if _is_model(index):
        return index
    try:
        a = np.asarray(index, dtype=np.complex128)
    except (TypeError, ValueError):
        raise CoatingError(
            f"{where}: index must be a number or an index model with refractive_index(wavelength), "
            f"got {index!r}"
        ) from None
    if not np.all(np.isfinite(a)) or np.any(a.imag < 0):
        raise CoatingError(f"{where}: index must be finite with imaginary part >= 0 (loss), got {index!r}")
    return index


@dataclass(frozen=True)
class Coating:
    """A thin-film stack, layers listed from the substrate outwards.

    Attributes
    ----------
    spec : tuple of (index or model, float)
        ``(index, thickness [m])`` per layer, substrate first.
    name : str
        Label for reports.
    kind : str
        How it was built (``stack``, ``quarter_wave``, ``v_coat``, ``mirror``).
    design_wavelength : float or None [m]
        Design wavelength of the constructors that have one.
    """

    spec: tuple
    name: str = "coating"
    kind: str = "stack"
    design_wavelength: float | None = None

    def __post_init__(self):
        spec = []
        for j, item in enumerate(self.spec):
            try:
                index, d = item
            except (TypeError, ValueError):
                raise CoatingError(
                    f"coating {self.name!r} layer {j}: expected (index or material, thickness [m]), got {item!r}"
                ) from None
            _check_index(index, f"coating {self.name!r} layer {j}")
            try:
                d = float(d)
            except (TypeError, ValueError):
                raise CoatingError(
                    f"coating {self.name!r} layer {j}: thickness must be a number [m], got {d!r}"
                ) from None
            if not (math.isfinite(d) and d >= 0):
                raise CoatingError(
                    f"coating {self.name!r} layer {j}: thickness must be finite and >= 0 [m], got {d!r}"
                )
            spec.append((index, d))
        object.__setattr__(self, "spec", tuple(spec))

    def __len__(self) -> int:
        return len(self.spec)

    @property
    def thicknesses(self) -> tuple[float, ...]:
        """Layer thicknesses [m], substrate first."""
        return tuple(d for _, d in self.spec)

    def layers(self, wavelength, *, extrapolate: bool = False) -> list[tuple[np.ndarray, float]]:
        """Layers ``(index array, thickness [m])`` at ``wavelength``, substrate first.

        Parameters
        ----------
        wavelength : array_like float [m]
            Vacuum wavelength(s); model indices are evaluated there (broadcast).
        extrapolate : bool
            Allow index models outside their valid range.
        """
        return [(evaluate_index(n, wavelength, extrapolate=extrapolate), d) for n, d in self.spec]


@dataclass(frozen=True)
class IdealCoating:
    """Lossless abstract coating: reflectance ``reflectance`` for s and p (phases in the
    module docstring)."""

    reflectance: float
    name: str = "ideal"

    def __post_init__(self):
        r = float(self.reflectance)
        if not 0.0 <= r <= 1.0:
            raise CoatingError(f"ideal coating {self.name!r}: reflectance must lie in [0, 1], got {self.reflectance!r}")
        object.__setattr__(self, "reflectance", r)
