"""Scatter models of a face: how much power scatters, and where it goes.

A scatter model is a face treatment's diffuse part. At a face the specular treatment (bare
Fresnel, a coating or a mirror) gives the specular power fractions ``R`` and ``T`` of the
parent ray; the model then says, per ray, how the parent's power is shared
(:meth:`partition`):

* ``keep_r``, ``keep_t`` [1]: factors on the specular reflected and transmitted powers;
* ``scatter_r``, ``scatter_t`` [1]: fractions of the parent's power scattered into the
  reflection hemisphere (the side the light comes from) and the transmission hemisphere;
* whatever remains is absorbed on the face (the engine books parent minus children).

and how the scattered power is spread over directions: :meth:`density` is the normalised
angular density ``p(omega)`` [1/sr] of each hemisphere (``int p dOmega = 1``), so that the
BSDF is ``scatter * p / cos(theta_s)``, and :meth:`sample` draws directions from it.
Directions are given in the face's local frame as direction sines ``(alpha, beta)`` along
``e1`` (the incident ray's tangential direction, towards the specular ray) and ``e2`` and the
cosine ``gamma`` about the hemisphere's normal.

Scattered light is unpolarised by default (``depolarization = 1``); ``0`` keeps the
parent's state (the engine's field rule, :mod:`tracer.scatter.fields`).

All methods take arrays over rays (broadcast) and return arrays; angles as cosines and
sines, wavelengths [m] in vacuum.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from . import psd as _psd

__all__ = ["Lambertian", "BlackSurface", "RoughSurface", "REFLECT_SIDE", "TRANSMIT_SIDE",
           "cosine_sample", "cosine_density", "Partition"]

REFLECT_SIDE, TRANSMIT_SIDE = 0, 1


@dataclass
class Partition:
    """Per-ray shares of a scatter event (see the module docstring), arrays [1]."""

    keep_r: np.ndarray
    keep_t: np.ndarray
    scatter_r: np.ndarray
    scatter_t: np.ndarray


def cosine_density(gamma):
    """Lambert's cosine density ``cos(theta)/pi`` [1/sr] over a hemisphere (0 below it)."""
    gamma = np.asarray(gamma, dtype=float)
    return np.where(gamma > 0, gamma / np.pi, 0.0)


def cosine_sample(u1, u2):
    """Directions drawn from ``cos(theta)/pi``: ``(alpha, beta, gamma)``.

    Malley's method: a point uniform on the unit disk, lifted to the hemisphere
    (common practice, no source).
    """
    r = np.sqrt(np.asarray(u1, dtype=float))
    phi = 2.0 * np.pi * np.asarray(u2, dtype=float)
    alpha, beta = r * np.cos(phi), r * np.sin(phi)
    gamma = np.sqrt(np.clip(1.0 - r * r, 0.0, None))
    return alpha, beta, gamma


def _full(x, like):
    return np.broadcast_to(np.asarray(x, dtype=float), np.shape(like)).copy()


@dataclass(frozen=True)
class Lambertian:
    """Ideal diffuse scatter: ``reflectance`` into the reflection hemisphere and
    ``transmittance`` into the transmission hemisphere, both with Lambert's cosine law
    (BSDF ``rho / pi`` [1/sr]).

    ``rest = "specular"``: the remaining ``1 - reflectance - transmittance`` of the power
    meets the face's specular treatment; ``"absorbed"``: it is absorbed on the face.

    >>> m = Lambertian(reflectance=0.05)
    >>> p = m.partition(cos_i=np.array([1.0]), wavelength=633e-9, n1=1.0, n2=1.5,
    ...                 r_spec=np.array([0.04]), t_spec=np.array([0.96]))
    >>> float(p.scatter_r[0]), float(p.keep_r[0])
    (0.05, 0.95)
    """

    reflectance: float
    transmittance: float = 0.0
    rest: str = "specular"
    depolarization: float = 1.0
    name: str = "lambertian"

    def partition(self, *, cos_i, wavelength, n1, n2, r_spec, t_spec, cos_t=None) -> Partition:
        keep = 1.0 - self.reflectance - self.transmittance if self.rest == "specular" else 0.0
        return Partition(_full(keep, cos_i), _full(keep, cos_i), _full(self.reflectance, cos_i),
                         _full(self.transmittance, cos_i))

    def density(self, side, *, sin_i, wavelength, n1, n2, alpha, beta, gamma):
        return cosine_density(gamma)

    def sample(self, side, *, sin_i, wavelength, n1, n2, draw):
        a, b, g = cosine_sample(draw(0), draw(1))
        return a, b, g

    @property
    def exact_sampling(self) -> bool:
        """True: :meth:`sample` draws exactly from :meth:`density`."""
        return True


@dataclass(frozen=True)
class BlackSurface:
    """A black paint or anodised finish: a Lambertian part ``diffuse`` and a mirror part
    ``specular`` (both fractions of the incident power; the engine's specular treatment of
    such a face is a mirror of reflectance ``specular``), the rest absorbed. Opaque.

    The values of the demo scenes are invented; measured values depend on the finish, the
    wavelength and the angle (common practice, no source).
    """

    diffuse: float
    specular: float = 0.0
    depolarization: float = 1.0
    name: str = "black"

    def partition(self, *, cos_i, wavelength, n1, n2, r_spec, t_spec, cos_t=None) -> Partition:
        return Partition(_full(1.0, cos_i), _full(0.0, cos_i), _full(self.diffuse, cos_i),
                         _full(0.0, cos_i))

    def density(self, side, *, sin_i, wavelength, n1, n2, alpha, beta, gamma):
        return cosine_density(gamma)

    def sample(self, side, *, sin_i, wavelength, n1, n2, draw):
        return cosine_sample(draw(0), draw(1))

    exact_sampling = True


def _gauss_legendre01(n):
    x, w = np.polynomial.legendre.leggauss(n)
    return 0.5 * (x + 1.0), 0.5 * w


@dataclass(frozen=True)
class RoughSurface:
    """A slightly rough face: total integrated scatter (TIS) with a K-correlation PSD.

    Total scatter (Davies 1954; Bennett & Porteus, JOSA 51, 123, 1961) of a face with RMS
    roughness ``sigma`` [m], vacuum wavelength ``lambda``::

        TIS_r = (4 pi sigma n1 cos(theta_i) / lambda)^2            (reflection, medium n1)
        TIS_t = (2 pi sigma (n1 cos(theta_i) - n2 cos(theta_t)) / lambda)^2   (transmission)

    The specular powers become ``R exp(-TIS_r)`` and ``T exp(-TIS_t)`` (Bennett & Porteus);
    of the removed power ``R (1 - exp(-TIS_r))`` the share ``eta`` that goes into
    propagating waves is scattered, the rest (roughness finer than the wavelength
    scatters into evanescent waves) is absorbed on the face. The angular distribution is
    the first-order (Rayleigh--Rice) one, BSDF proportional to
    ``cos(theta_i) cos(theta_s) PSD(f)`` with the grating equation
    ``f = (n_out (alpha, beta) - n1 (sin theta_i, 0)) / lambda`` [1/m], ``n_out`` the index of
    the scatter side (E. L. Church et al. 1989; J. C. Stover, "Optical Scattering", 3rd ed.,
    SPIE Press 2012, Ch. 5, recalled from memory), with the polarisation factor ``Q``
    replaced by the specular power fraction (so the scattered light is unpolarised); then
    ``eta = int_disk gamma PSD dalpha dbeta / (sigma^2 (lambda/n_out)^2 gamma_spec)`` and
    the integrated Rayleigh--Rice BSDF is exactly ``R TIS_r eta`` to first order.

    Validity: the smooth-surface limit, ``TIS_r <= SMOOTH_SURFACE_TIS_MAX`` (0.1) at normal
    incidence for the shortest wavelength and the densest medium; the scene loader refuses
    rougher faces (the first-order theory does not hold there).
    """

    rms_roughness: float
    correlation_length: float
    exponent: float = 2.0
    depolarization: float = 1.0
    name: str = "rough"
    _eta_cache: dict = field(default_factory=dict, compare=False, repr=False, hash=False)

    # totals --------------------------------------------------------------------------
    def tis_reflect(self, *, cos_i, wavelength, n1):
        """``(4 pi sigma n1 cos_i / lambda)^2`` [1] (Bennett & Porteus 1961)."""
        return (4.0 * np.pi * self.rms_roughness * np.real(n1) * np.asarray(cos_i)
                / np.asarray(wavelength)) ** 2

    def tis_transmit(self, *, cos_i, cos_t, wavelength, n1, n2):
        """``(2 pi sigma (n1 cos_i - n2 cos_t) / lambda)^2`` [1]."""
        return (2.0 * np.pi * self.rms_roughness
                * (np.real(n1) * np.asarray(cos_i) - np.real(n2) * np.asarray(cos_t))
                / np.asarray(wavelength)) ** 2

    def smooth_limit_tis(self, *, wavelength, n1):
        """The largest ``TIS_r`` the face can have (normal incidence) [1]."""
        return self.tis_reflect(cos_i=1.0, wavelength=wavelength, n1=n1)

    def _a(self):
        return _psd.amplitude(rms_roughness=self.rms_roughness,
                              correlation_length=self.correlation_length, exponent=self.exponent)

    def _f(self, side, sin_i, wavelength, n1, n2, alpha, beta):
        n_out = n1 if side == REFLECT_SIDE else n2
        fx = (n_out * alpha - n1 * sin_i) / wavelength
        fy = n_out * beta / wavelength
        return np.hypot(fx, fy)

    def _disk_integral(self, side, sin_i, wavelength, n1, n2, nodes=96):
        """``E[gamma 1_disk]`` under ``f ~ PSD/sigma^2`` [1]: radial Gauss--Legendre in the
        cumulative of the PSD, uniform in azimuth."""
        ur, wr = _gauss_legendre01(nodes)
        phi = (np.arange(2 * nodes) + 0.5) * (2.0 * np.pi / (2 * nodes))
        f = _psd.sample_frequency(ur, correlation_length=self.correlation_length,
                                  exponent=self.exponent)
        sin_i = np.atleast_1d(np.asarray(sin_i, dtype=float))
        n_out = n1 if side == REFLECT_SIDE else n2
        lam = wavelength / n_out
        # scattered direction sines for every (ray, radial node, azimuth)
        a = (n1 / n_out) * sin_i[:, None, None] + lam * f[None, :, None] * np.cos(phi)[None, None, :]
        b = lam * f[None, :, None] * np.sin(phi)[None, None, :]
        r2 = a * a + b * b
        g = np.sqrt(np.clip(1.0 - r2, 0.0, None)) * (r2 < 1.0)
        return (g.mean(axis=2) * wr[None, :]).sum(axis=1)

    def _table(self, side, wavelength, n1, n2):
        """``(sin_i nodes, eta, E[gamma 1_disk])`` for one (side, wavelength, indices), cached."""
        key = (side, float(wavelength), float(np.real(n1)), float(np.real(n2)))
        tab = self._eta_cache.get(key)
        if tab is None:
            n1r, n2r = key[2], key[3]
            s = np.linspace(0.0, 1.0, 129)
            e = self._disk_integral(side, s, key[1], n1r, n2r)
            st = s if side == REFLECT_SIDE else np.clip(n1r / n2r * s, 0.0, 1.0)
            g_spec = np.sqrt(1.0 - st * st)
            with np.errstate(divide="ignore", invalid="ignore"):
                tab = (s, np.where(g_spec > 1e-12, e / g_spec, 0.0), e)
            self._eta_cache[key] = tab
        return tab

    def _per_ray(self, side, sin_i, wavelength, n1, n2, column):
        """Column 1 (eta) or 2 (E) of :meth:`_table` per ray, rays grouped by (wavelength,
        indices) and interpolated linearly in ``sin_i``."""
        sin_i = np.asarray(sin_i, dtype=float)
        wl, a, b = (np.broadcast_to(np.asarray(x, float), sin_i.shape).ravel()
                    for x in (wavelength, np.real(n1), np.real(n2)))
        flat_s = sin_i.ravel()
        out = np.empty(flat_s.shape)
        if flat_s.size and (wl == wl[0]).all() and (a == a[0]).all() and (b == b[0]).all():
            tab = self._table(side, wl[0], a[0], b[0])  # one group: the usual case
            return np.interp(sin_i, tab[0], tab[column])
        uk, inv = np.unique(np.stack([wl, a, b], axis=1), axis=0, return_inverse=True)
        inv = inv.reshape(-1)
        for k, (w, x, y) in enumerate(uk):
            sel = inv == k
            tab = self._table(side, w, x, y)
            out[sel] = np.interp(flat_s[sel], tab[0], tab[column])
        return out.reshape(sin_i.shape)

    def propagating_share(self, side, *, sin_i, wavelength, n1, n2):
        """``eta`` [1] (class docstring), tabulated over ``sin_i`` (129 nodes) per (side,
        wavelength, indices) and interpolated linearly."""
        return self._per_ray(side, sin_i, wavelength, n1, n2, 1)

    def partition(self, *, cos_i, wavelength, n1, n2, r_spec, t_spec, cos_t=None) -> Partition:
        cos_i = np.asarray(cos_i, dtype=float)
        sin_i = np.sqrt(np.clip(1.0 - cos_i * cos_i, 0.0, None))
        tis_r = self.tis_reflect(cos_i=cos_i, wavelength=wavelength, n1=n1)
        keep_r = np.exp(-tis_r)
        eta_r = self.propagating_share(REFLECT_SIDE, sin_i=sin_i, wavelength=wavelength,
                                       n1=n1, n2=n2)
        scat_r = np.asarray(r_spec) * (1.0 - keep_r) * eta_r
        if cos_t is None:
            keep_t = np.ones_like(cos_i)
            scat_t = np.zeros_like(cos_i)
        else:
            tis_t = self.tis_transmit(cos_i=cos_i, cos_t=cos_t, wavelength=wavelength, n1=n1, n2=n2)
            keep_t = np.exp(-tis_t)
            eta_t = self.propagating_share(TRANSMIT_SIDE, sin_i=sin_i, wavelength=wavelength,
                                           n1=n1, n2=n2)
            scat_t = np.asarray(t_spec) * (1.0 - keep_t) * eta_t
        return Partition(keep_r, keep_t, scat_r, scat_t)

    # angular density and sampling ------------------------------------------------------
    def density(self, side, *, sin_i, wavelength, n1, n2, alpha, beta, gamma):
        """``gamma^2 PSD(f) / Z`` [1/sr] with ``Z = int_disk gamma PSD dalpha dbeta``."""
        gamma = np.asarray(gamma, dtype=float)
        n_out = n1 if side == REFLECT_SIDE else n2
        f = self._f(side, sin_i, wavelength, n1, n2, alpha, beta)
        p = _psd.psd(f, amplitude=1.0, correlation_length=self.correlation_length,
                     exponent=self.exponent)
        # Z with A = 1: sigma^2 (A=1) (lambda/n_out)^2 E[gamma 1_disk]
        sig2 = _psd.band_variance(np.inf, amplitude=1.0, correlation_length=self.correlation_length,
                                  exponent=self.exponent)
        e = self._per_ray(side, sin_i, wavelength, n1, n2, 2)
        z = sig2 * (np.asarray(wavelength) / n_out) ** 2 * e
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.where((gamma > 0) & (z > 0), gamma * gamma * p / z, 0.0)

    def sample(self, side, *, sin_i, wavelength, n1, n2, draw, max_rounds=64):
        """Directions drawn exactly from :meth:`density`: a spatial frequency from the PSD
        (:func:`tracer.scatter.psd.sample_frequency`) and a uniform azimuth give a point of the
        direction-sine plane; points outside the unit disk are drawn again, and a point is
        kept with probability ``gamma`` (rejection), since the density in the plane is
        ``gamma PSD / Z``. ``draw(k)`` gives the k-th uniform of every ray."""
        sin_i = np.asarray(sin_i, dtype=float)
        n = sin_i.shape[0]
        n_out = np.broadcast_to(np.real(n1 if side == REFLECT_SIDE else n2), (n,))
        n1r = np.broadcast_to(np.real(n1), (n,))
        lam = np.broadcast_to(np.asarray(wavelength, float), (n,)) / n_out
        alpha, beta = np.zeros(n), np.zeros(n)
        gamma = np.full(n, -1.0)
        todo = np.arange(n)
        for r in range(max_rounds):
            if not todo.size:
                break
            u = [draw(3 * r + k)[todo] for k in range(3)]
            f = _psd.sample_frequency(u[0], correlation_length=self.correlation_length,
                                      exponent=self.exponent)
            phi = 2.0 * np.pi * u[1]
            a = (n1r[todo] / n_out[todo]) * sin_i[todo] + lam[todo] * f * np.cos(phi)
            b = lam[todo] * f * np.sin(phi)
            r2 = a * a + b * b
            g = np.sqrt(np.clip(1.0 - r2, 0.0, None))
            ok = (r2 < 1.0) & (u[2] < g)
            idx = todo[ok]
            alpha[idx], beta[idx], gamma[idx] = a[ok], b[ok], g[ok]
            todo = todo[~ok]
        if todo.size:  # practically never: the specular direction itself
            alpha[todo] = (n1r[todo] / n_out[todo]) * sin_i[todo]
            beta[todo] = 0.0
            gamma[todo] = np.sqrt(np.clip(1.0 - alpha[todo] ** 2, 0.0, None))
        return alpha, beta, gamma

    exact_sampling = True


def rayleigh_rice_brdf(*, rms_roughness, correlation_length, exponent, wavelength, cos_i, alpha,
                       beta, gamma, reflectance):
    """First-order (Rayleigh--Rice) BRDF [1/sr] of a K-correlation surface in air::

        BRDF = (16 pi^2 / lambda^4) cos(theta_i) cos(theta_s) Q PSD(f),  f = |(alpha - sin_i, beta)| / lambda

    with ``Q`` taken as the specular ``reflectance`` (J. C. Stover, "Optical Scattering",
    3rd ed., SPIE Press 2012, Eq. 5.x; recalled from memory). The test oracle for
    :class:`RoughSurface`: its hemispherical integral is ``Q TIS eta``.
    """
    a = _psd.amplitude(rms_roughness=rms_roughness, correlation_length=correlation_length,
                       exponent=exponent)
    cos_i = np.asarray(cos_i, dtype=float)
    sin_i = np.sqrt(1.0 - cos_i**2)
    f = np.hypot(alpha - sin_i, beta) / wavelength
    p = _psd.psd(f, amplitude=a, correlation_length=correlation_length, exponent=exponent)
    return 16.0 * math.pi**2 / wavelength**4 * cos_i * gamma * reflectance * p
