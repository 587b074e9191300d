"""Mandel's problem: a poroelastic block squeezed between rigid, frictionless plates.

References: Mandel (1953), "Consolidation des sols (etude mathematique)", *Geotechnique*
3(7), 287-299; Abousleiman, Cheng, Cui, Detournay, Roegiers & Ulm (1996), "Mandel's problem
revisited", *Geotechnique* 46(2), 187-195; Cheng & Detournay (1988), *Int. J. Numer. Anal.
Methods Geomech.* 12(5), 551-572.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import NamedTuple

import numpy as np
from numpy.typing import ArrayLike

from .arguments import (AnalyticArgumentError, _as_array, _check_finite, _check_poisson,
                        _check_positive, _check_terms, _scalar_if_0d)


@dataclass(frozen=True)
class MandelParameters:
    """Poroelastic constants of Mandel's problem, from drained parameters.

    Standard relations of Biot's (1941) theory in the notation of Rice & Cleary (1976),
    "Some basic stress diffusion solutions for fluid-saturated elastic porous media with
    compressible constituents", *Rev. Geophys. Space Phys.* 14(2), 227-241, and Detournay &
    Cheng (1993), "Fundamentals of poroelasticity", *Comprehensive Rock Engineering* vol. 2,
    Pergamon, 113-171::

        K   = 2 G (1 + nu) / (3 (1 - 2 nu))          drained bulk modulus
        M   = 1 / S                                   Biot modulus (infinite for S = 0)
        K_u = K + alpha^2 M                           undrained bulk modulus
        B   = alpha M / K_u = alpha / (alpha^2 + S K) Skempton's coefficient
        nu_u = (3 K_u - 2 G) / (2 (3 K_u + G))         undrained Poisson's ratio
        c   = (k / gamma_w) / (S + alpha^2 / (K + 4G/3))
            = (k / gamma_w) M (K + 4G/3) / (K_u + 4G/3)   consolidation coefficient

    With S = 0 and alpha = 1 (incompressible constituents): B = 1, nu_u = 0.5 and
    c = (k / gamma_w)(K + 4G/3), the oedometric value.

    Parameters
    ----------
    shear_modulus : float
        Drained shear modulus G, kPa.
    poisson_ratio : float
        Drained Poisson's ratio nu, in (-1, 0.5).
    permeability : float
        Hydraulic conductivity k, m/day.
    gamma_w : float
        Unit weight of water, kN/m3.
    biot_alpha : float
        Biot's coefficient alpha, in (0, 1].
    storage : float
        Storage coefficient S = 1/M at constant volumetric strain, 1/kPa, >= 0
        (0 = incompressible fluid and grains).
    """

    shear_modulus: float
    poisson_ratio: float
    permeability: float
    gamma_w: float = 9.81
    biot_alpha: float = 1.0
    storage: float = 0.0

    def __post_init__(self) -> None:
        _check_positive(self.shear_modulus, "shear_modulus")
        _check_poisson(self.poisson_ratio, "poisson_ratio")
        _check_positive(self.permeability, "permeability")
        _check_positive(self.gamma_w, "gamma_w")
        alpha = float(self.biot_alpha)
        if not (0.0 < alpha <= 1.0):
            raise AnalyticArgumentError(f"must lie in (0, 1], got {self.biot_alpha!r}",
                                        field="biot_alpha")
        S = float(self.storage)
        if not np.isfinite(S) or S < 0.0:
            raise AnalyticArgumentError(f"must be >= 0 and finite, got {self.storage!r}",
                                        field="storage")

    @classmethod
    def from_young_modulus(cls, young_modulus: float, poisson_ratio: float,
                           permeability: float, **kwargs: float) -> "MandelParameters":
        """Build from the drained Young's modulus E (kPa): G = E / (2 (1 + nu))."""
        E = _check_positive(young_modulus, "young_modulus")
        nu = _check_poisson(poisson_ratio, "poisson_ratio")
        return cls(E / (2.0 * (1.0 + nu)), nu, permeability, **kwargs)

    @property
    def young_modulus(self) -> float:
        """Drained Young's modulus E = 2 G (1 + nu), kPa."""
        return 2.0 * self.shear_modulus * (1.0 + self.poisson_ratio)

    @property
    def bulk_modulus(self) -> float:
        """Drained bulk modulus K, kPa."""
        G, nu = self.shear_modulus, self.poisson_ratio
        return 2.0 * G * (1.0 + nu) / (3.0 * (1.0 - 2.0 * nu))

    @property
    def constrained_modulus(self) -> float:
        """Drained constrained (oedometric) modulus K + 4G/3 = lambda + 2G, kPa."""
        return self.bulk_modulus + 4.0 * self.shear_modulus / 3.0

    @property
    def biot_modulus(self) -> float:
        """Biot modulus M = 1/S, kPa (inf for S = 0)."""
        return np.inf if self.storage == 0.0 else 1.0 / self.storage

    @property
    def undrained_bulk_modulus(self) -> float:
        """Undrained bulk modulus K_u = K + alpha^2 M, kPa (inf for S = 0)."""
        if self.storage == 0.0:
            return np.inf
        return self.bulk_modulus + self.biot_alpha**2 / self.storage

    @property
    def skempton_b(self) -> float:
        """Skempton's pore pressure coefficient B = alpha / (alpha^2 + S K)."""
        a = self.biot_alpha
        return a / (a * a + self.storage * self.bulk_modulus)

    @property
    def undrained_poisson_ratio(self) -> float:
        """Undrained Poisson's ratio nu_u = (3 K_u - 2G) / (2 (3 K_u + G)), <= 0.5."""
        # multiplied through by S so that S = 0 (K_u infinite) needs no special case
        S, G, a = self.storage, self.shear_modulus, self.biot_alpha
        ku_s = self.bulk_modulus * S + a * a      # K_u S
        return (3.0 * ku_s - 2.0 * G * S) / (2.0 * (3.0 * ku_s + G * S))

    @property
    def consolidation_coefficient(self) -> float:
        """Consolidation coefficient c, m2/day."""
        s = self.storage + self.biot_alpha**2 / self.constrained_modulus
        return self.permeability / self.gamma_w / s


def mandel_roots(nu: float, nu_u: float, n: int) -> np.ndarray:
    """First n positive roots of tan(x) = (1 - nu) / (nu_u - nu) x.

    Characteristic equation of Mandel's problem (Mandel 1953, *Geotechnique* 3(7), 287-299;
    in this form Abousleiman, Cheng, Cui, Detournay, Roegiers & Ulm 1996, "Mandel's problem
    revisited", *Geotechnique* 46(2), 187-195).

    Brackets: with kappa = (1 - nu)/(nu_u - nu) > 1, h(x) = (nu_u - nu) sin(x)/x -
    (1 - nu) cos(x) (zero exactly at the roots) is negative at x -> 0+, changes sign once in
    ((i-1) pi, (i-1/2) pi) for every i >= 1 and has no root elsewhere on x > 0 (on
    ((i-1/2) pi, i pi) tan x < 0 < kappa x). Each root is found by vectorised bisection on its
    bracket to full double precision; x_i -> (i - 1/2) pi from below as i grows, and equals
    it when nu_u = nu.

    Parameters
    ----------
    nu, nu_u : float
        Drained and undrained Poisson's ratios, -1 < nu <= nu_u <= 0.5, nu < 0.5.
    n : int
        Number of roots.

    Returns
    -------
    numpy.ndarray, (n,)
        Roots x_1 < x_2 < ... < x_n.
    """
    nu = _check_poisson(nu, "nu")
    nu_u = float(nu_u)
    if not (nu <= nu_u <= 0.5):
        raise AnalyticArgumentError(f"undrained Poisson's ratio must lie in [nu, 0.5] = "
                                    f"[{nu:g}, 0.5], got {nu_u!r}", field="nu_u")
    n = _check_terms(n)
    i = np.arange(1, n + 1, dtype=float)
    lo = (i - 1.0) * np.pi
    hi = (i - 0.5) * np.pi

    def h(x: np.ndarray) -> np.ndarray:
        return (nu_u - nu) * np.sinc(x / np.pi) - (1.0 - nu) * np.cos(x)

    f_lo = h(lo)
    for _ in range(64):   # bracket width pi/2 halved 64 times: below one ulp of the root
        mid = 0.5 * (lo + hi)
        f_mid = h(mid)
        same = np.sign(f_mid) == np.sign(f_lo)
        lo = np.where(same, mid, lo)
        f_lo = np.where(same, f_mid, f_lo)
        hi = np.where(same, hi, mid)
    return 0.5 * (lo + hi)


def mandel_initial_pressure(params: MandelParameters, a: float, force: float) -> float:
    """Uniform excess pore pressure just after loading Mandel's block (t = 0+), kPa.

    p0 = F B (1 + nu_u) / (3a) with F = force / 2 (Abousleiman et al. 1996, "Mandel's problem
    revisited", *Geotechnique* 46(2), who load the block with 2F), i.e.
    p0 = force B (1 + nu_u) / (6a): Skempton's B times the mean total compression under the
    undrained plane-strain state sigma_yy = -force/(2a), sigma_xx = 0,
    sigma_zz = nu_u sigma_yy.

    Parameters
    ----------
    params : MandelParameters
    a : float
        Half-width of the block, m.
    force : float
        Total compressive force on the plate (the whole width 2a), kN per m out of plane.
    """
    a = _check_positive(a, "a")
    force = _check_finite(force, "force")
    return force * params.skempton_b * (1.0 + params.undrained_poisson_ratio) / (6.0 * a)


class _MandelSeries(NamedTuple):
    roots: np.ndarray   # (n,)
    sin: np.ndarray     # (n,)
    cos: np.ndarray     # (n,)
    denom: np.ndarray   # (n,) x_i - sin x_i cos x_i
    decay: np.ndarray   # (nt, n) exp(-x_i^2 c t / a^2)
    zero: np.ndarray    # (nt,) bool, t == 0
    uniform: np.ndarray  # (nt,) sum_i sin x_i cos x_i / (x_i - sin x_i cos x_i) decay_i


def _mandel_series(t: np.ndarray, params: MandelParameters, a: float,
                   n_terms: int) -> _MandelSeries:
    """The roots and the terms of Mandel's series at times ``t``; ``mandel_roots`` checks
    ``n_terms``. The series' accuracy is discussed under :func:`mandel_pressure` (Notes)."""
    roots = mandel_roots(params.poisson_ratio, params.undrained_poisson_ratio, n_terms)
    T = params.consolidation_coefficient * t.ravel() / a**2
    sin, cos = np.sin(roots), np.cos(roots)
    denom = roots - sin * cos
    decay = np.exp(-np.outer(T, roots**2))
    return _MandelSeries(roots, sin, cos, denom, decay, T == 0.0, decay @ (sin * cos / denom))


def _mandel_inputs(x: ArrayLike | None, t: ArrayLike, a: float, force: float
                   ) -> tuple[np.ndarray | None, np.ndarray, float, float]:
    a = _check_positive(a, "a")
    force = _check_finite(force, "force")
    t = _as_array(t, "t", minimum=0.0)
    if x is None:
        return None, t, a, force
    x = _as_array(x, "x")
    if x.size and np.abs(x).max() > a * (1.0 + 1e-12):
        raise AnalyticArgumentError(f"position {np.abs(x).max():g} m lies outside the block "
                                    f"|x| <= a = {a:g} m", field="x")
    return np.clip(x, -a, a), t, a, force


def mandel_pressure(x: ArrayLike, t: ArrayLike, params: MandelParameters, a: float,
                    force: float, n_terms: int = 200) -> np.ndarray:
    """Excess pore pressure in Mandel's block.

    Mandel (1953), "Consolidation des sols (etude mathematique)", *Geotechnique* 3(7),
    287-299; in the form of Abousleiman, Cheng, Cui, Detournay, Roegiers & Ulm (1996),
    "Mandel's problem revisited", *Geotechnique* 46(2), 187-195 (see also Cheng & Detournay
    1988, *Int. J. Numer. Anal. Methods Geomech.* 12(5), 551-572)::

        p(x, t) = 2 p0 sum_i sin(x_i) / (x_i - sin x_i cos x_i)
                  (cos(x_i x / a) - cos x_i) exp(-x_i^2 c t / a^2)

    with x_i the roots of :func:`mandel_roots`, p0 from :func:`mandel_initial_pressure`.

    Geometry and loading: block |x| <= a, |y| <= b, plane strain, squeezed at t = 0 between
    rigid, frictionless, impervious plates at y = +-b by a total force ``force`` (kN per m out
    of plane, over the whole width 2a; the papers' 2F), held constant afterwards; the faces
    x = +-a are drained (p = 0) and free of traction. A quarter model x in [0, a],
    y in [0, b] carries force / 2 on its half plate.

    Early on, the centre pressure rises above p0 (Mandel-Cryer effect; Cryer 1963, *Q. J.
    Mech. Appl. Math.* 16(4), 401-412).

    Parameters
    ----------
    x : array_like, (nx,) or scalar
        Horizontal distance from the centre line, m, |x| <= a.
    t : array_like, (nt,) or scalar
        Time since loading, days, >= 0.
    params : MandelParameters
    a : float
        Half-width of the block, m.
    force : float
        Total compressive force on the plate, kN/m.
    n_terms : int
        Number of series terms.

    Returns
    -------
    numpy.ndarray, shape ``t.shape + x.shape``, e.g. (nt, nx)
        Excess pore pressure, kPa, positive in compression.

    Notes
    -----
    The series are summed with ``n_terms`` terms; the first neglected term decays as
    exp(-(n_terms pi)^2 c t / a^2), so 200 terms are exact to rounding for c t / a^2 >= 1e-4;
    raise ``n_terms`` for earlier times. At t = 0 exactly the undrained (t = 0+) values are
    returned in closed form.
    """
    x, t, a, force = _mandel_inputs(x, t, a, force)
    s = _mandel_series(t, params, a, n_terms)
    p0 = mandel_initial_pressure(params, a, force)
    xi = x.ravel() / a
    modes = np.cos(s.roots[:, None] * xi[None, :]) - s.cos[:, None]                        # (n, nx)
    p = 2.0 * p0 * (s.decay * (s.sin / s.denom)) @ modes          # (nt, nx)
    p[s.zero] = np.where(np.abs(xi) < 1.0, p0, 0.0)
    return _scalar_if_0d(p.reshape(t.shape + x.shape))


def mandel_vertical_stress(x: ArrayLike, t: ArrayLike, params: MandelParameters, a: float,
                           force: float, n_terms: int = 200) -> np.ndarray:
    """Total vertical stress sigma_yy in Mandel's block, tension positive.

    Abousleiman et al. (1996) (see the module's references), with F = force / 2::

        sigma_yy = -F/a
                   - 2F (nu_u - nu) / (a (1 - nu)) sum_i sin x_i / (x_i - sin x_i cos x_i)
                                                   cos(x_i x / a) exp(-x_i^2 c t / a^2)
                   + 2F / a sum_i sin x_i cos x_i / (x_i - sin x_i cos x_i)
                                                   exp(-x_i^2 c t / a^2)

    and sigma_xx = sigma_xy = 0 everywhere. Each term integrates to zero over the width, so
    the integral of sigma_yy over -a..a is -force at all times. Geometry, loading,
    arguments and the series' accuracy (Notes) as in :func:`mandel_pressure`.

    Returns
    -------
    numpy.ndarray, shape ``t.shape + x.shape``
        sigma_yy, kPa, tension positive (compression negative).
    """
    x, t, a, force = _mandel_inputs(x, t, a, force)
    s = _mandel_series(t, params, a, n_terms)
    nu, nu_u = params.poisson_ratio, params.undrained_poisson_ratio
    F = 0.5 * force
    xi = x.ravel() / a
    cos_mode = np.cos(s.roots[:, None] * xi[None, :])              # (n, nx)
    varying = (s.decay * (s.sin / s.denom)) @ cos_mode             # (nt, nx)
    sigma = (-F / a - 2.0 * F * (nu_u - nu) / (a * (1.0 - nu)) * varying
             + 2.0 * F / a * s.uniform[:, None])
    sigma[s.zero] = -F / a
    return _scalar_if_0d(sigma.reshape(t.shape + x.shape))


def mandel_vertical_displacement(t: ArrayLike, params: MandelParameters, a: float, b: float,
                                 force: float, n_terms: int = 200) -> np.ndarray:
    """Settlement of the top plate of Mandel's block relative to its mid-height.

    Abousleiman et al. (1996) (see the module's references), with F = force / 2::

        u_y(y, t) = [-F (1 - nu) / (2 G a)
                     + F (1 - nu_u) / (G a) sum_i sin x_i cos x_i / (x_i - sin x_i cos x_i)
                                                 exp(-x_i^2 c t / a^2)] y

    returned as the settlement w(t) = -u_y(b, t), downward positive: the top plate (y = b)
    moves down by w and the bottom plate up by w, so the block shortens by 2w. Limits:
    w(0+) = force (1 - nu_u) b / (4 G a) (undrained plane strain, uniaxial stress), and
    w(inf) = force (1 - nu) b / (4 G a) (drained). Geometry, loading and the series'
    accuracy (Notes) as in :func:`mandel_pressure`.

    Parameters
    ----------
    t : array_like, (nt,) or scalar
        Time since loading, days.
    params : MandelParameters
    a, b : float
        Half-width and half-height of the block, m.
    force : float
        Total compressive force on the plate, kN/m.
    n_terms : int
        Number of series terms.

    Returns
    -------
    numpy.ndarray, shape ``t.shape``
        Settlement of the top plate, m, downward positive.
    """
    _, t, a, force = _mandel_inputs(None, t, a, force)
    b = _check_positive(b, "b")
    s = _mandel_series(t, params, a, n_terms)
    G, nu, nu_u = params.shear_modulus, params.poisson_ratio, params.undrained_poisson_ratio
    F = 0.5 * force
    w = b * (F * (1.0 - nu) / (2.0 * G * a) - F * (1.0 - nu_u) / (G * a) * s.uniform)
    w[s.zero] = b * F * (1.0 - nu_u) / (2.0 * G * a)
    return _scalar_if_0d(w.reshape(t.shape))


def mandel_horizontal_displacement(x: ArrayLike, t: ArrayLike, params: MandelParameters,
                                   a: float, force: float, n_terms: int = 200) -> np.ndarray:
    """Horizontal displacement u_x in Mandel's block, positive in +x (outward at x = a).

    Abousleiman et al. (1996) (see the module's references), with F = force / 2::

        u_x = [F nu / (2 G a) - F nu_u / (G a) sum_i sin x_i cos x_i / (x_i - sin x_i cos x_i)
                                                 exp(-x_i^2 c t / a^2)] x
              + F / G sum_i cos x_i / (x_i - sin x_i cos x_i) sin(x_i x / a)
                                                 exp(-x_i^2 c t / a^2)

    independent of y; zero on the centre line. Limits: u_x = force nu_u x / (4 G a) at t = 0+
    and force nu x / (4 G a) as t -> inf. Geometry, loading, arguments and the series'
    accuracy (Notes) as in :func:`mandel_pressure`.

    Returns
    -------
    numpy.ndarray, shape ``t.shape + x.shape``
        u_x, m.
    """
    x, t, a, force = _mandel_inputs(x, t, a, force)
    s = _mandel_series(t, params, a, n_terms)
    G, nu, nu_u = params.shear_modulus, params.poisson_ratio, params.undrained_poisson_ratio
    F = 0.5 * force
    xr = x.ravel()
    sin_mode = np.sin(s.roots[:, None] * (xr / a)[None, :])        # (n, nx)
    varying = (s.decay * (s.cos / s.denom)) @ sin_mode             # (nt, nx)
    ux = ((F * nu / (2.0 * G * a) - F * nu_u / (G * a) * s.uniform)[:, None] * xr[None, :]
          + F / G * varying)
    ux[s.zero] = F * nu_u / (2.0 * G * a) * xr
    return _scalar_if_0d(ux.reshape(t.shape + x.shape))

