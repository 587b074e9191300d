"""Closed-form solutions the finite-element results are checked against.

Each function cites the published work its formula comes from. Equation numbers or details
quoted from memory say so. The module depends on numpy and scipy only and never imports
the finite-element code.

Units: kN, m, kPa, days; permeability k in m/day, unit weight of water gamma_w in kN/m3, so
k / gamma_w is in m2/(kPa day) and consolidation coefficients are in m2/day.

Signs
-----
- Excess pore pressure: positive in compression (everywhere in this module).
- Settlement: positive downward.
- Mandel stresses and the Lame cylinder: tension positive (mechanics convention, as in the
  finite-element core).
- Strip and line loads on a half-space: compression positive (soil mechanics convention, as in
  Poulos & Davis 1974), z is depth, positive downward.

Array convention
----------------
Functions of time and position return shape ``time.shape + position.shape``: a time array
(nt,) and a position array (nx,) give (nt, nx); a scalar time gives (nx,); scalars give a numpy
scalar.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import NamedTuple

import numpy as np
from numpy.typing import ArrayLike
from scipy.optimize import brentq
from scipy.special import erfc

from .errors import InputError

__all__ = [
    "AnalyticArgumentError",
    "terzaghi_excess_pressure", "terzaghi_average_degree", "terzaghi_time_factor",
    "time_factor", "consolidation_coefficient",
    "olson_ramp_average_degree", "olson_ramp_excess_pressure",
    "MandelParameters", "mandel_roots", "mandel_initial_pressure", "mandel_pressure",
    "mandel_vertical_stress", "mandel_vertical_displacement", "mandel_horizontal_displacement",
    "PlaneStresses", "strip_load_stresses", "flamant_line_load_stresses",
    "CylinderSolution", "lame_cylinder", "oedometer_modulus",
]


class AnalyticArgumentError(InputError, ValueError):
    """A closed-form solution was asked for with arguments outside its range.

    It is both the package's ``InputError`` and a ``ValueError``; ``field`` names the argument.
    """


# ----------------------------------------------------------------------------- helpers
def _check_positive(value: float, name: str) -> float:
    value = float(value)
    if not np.isfinite(value) or value <= 0.0:
        raise AnalyticArgumentError(f"must be a positive finite number, got {value!r}",
                                    field=name)
    return value


def _check_finite(value: float, name: str) -> float:
    value = float(value)
    if not np.isfinite(value):
        raise AnalyticArgumentError(f"must be a finite number, got {value!r}", field=name)
    return value


def _check_poisson(nu: float, name: str) -> float:
    nu = float(nu)
    if not (-1.0 < nu < 0.5):
        raise AnalyticArgumentError(f"drained Poisson's ratio must lie in (-1, 0.5), got {nu!r}",
                                    field=name)
    return nu


def _as_array(values: ArrayLike, name: str, minimum: float | None = None) -> np.ndarray:
    arr = np.asarray(values, dtype=float)
    if not np.all(np.isfinite(arr)):
        raise AnalyticArgumentError("must be finite (no nan or inf)", field=name)
    if minimum is not None and arr.size and arr.min() < minimum:
        raise AnalyticArgumentError(f"must be >= {minimum:g}, smallest value is {arr.min():g}",
                                    field=name)
    return arr


def _check_terms(n_terms: int) -> int:
    if isinstance(n_terms, bool) or int(n_terms) != n_terms or n_terms < 1:
        raise AnalyticArgumentError(f"must be a positive integer, got {n_terms!r}",
                                    field="n_terms")
    return int(n_terms)


def _scalar_if_0d(arr: np.ndarray) -> np.ndarray:
    # a 0-d array becomes a numpy scalar; other shapes are returned unchanged
    return arr[()] if arr.ndim == 0 else arr


# ============================================================================= Terzaghi
# Below this time factor the image (erfc) series is used; above it the Fourier series. Both
# are exact series and converge to rounding with a handful of terms on their side of the
# switch: the first neglected image term is below erfc(10 / (2 sqrt(0.05))) ~ 1e-219 and the
# last Fourier term kept (m = 59) is already below exp(-(119 pi / 2)^2 0.05) ~ 1e-759.
_EARLY_TV = 0.05
_N_IMAGES = 5
_N_FOURIER = 60


def _fourier_m(n: int) -> np.ndarray:
    """M_m = pi (2m + 1) / 2, m = 0..n-1, (n,)."""
    return 0.5 * np.pi * (2.0 * np.arange(n) + 1.0)


def _ierfc(order: int, x: np.ndarray) -> np.ndarray:
    """Repeated integral i^n erfc(x) for order 0..3.

    Recurrence 2n i^n erfc(x) = i^(n-2) erfc(x) - 2x i^(n-1) erfc(x), with
    i^-1 erfc(x) = 2/sqrt(pi) exp(-x^2) and i^0 erfc = erfc (Carslaw & Jaeger 1959,
    Conduction of Heat in Solids, 2nd ed., Appendix II; from memory). At large x the
    recurrence loses relative digits, but the cancelling terms are themselves of order
    exp(-x^2), so the absolute error stays at rounding level, which is all the series need.
    """
    prev = 2.0 / np.sqrt(np.pi) * np.exp(-x * x)   # i^-1 erfc
    cur = erfc(x)                                  # i^0 erfc
    for n in range(1, order + 1):
        prev, cur = cur, (prev - 2.0 * x * cur) / (2.0 * n)
    return cur


def _terzaghi_unit_profile(Z: np.ndarray, T: np.ndarray, n_terms: int) -> np.ndarray:
    """u/u0 at Z = z/H (nz,) for time factors T (nt,), T >= 0 -> (nt, nz)."""
    out = np.empty((T.size, Z.size))
    zero = T == 0.0
    early = (T > 0.0) & (T < _EARLY_TV)
    late = T >= _EARLY_TV
    if zero.any():
        # the instant of loading: u0 inside, the drained face(s) already at zero
        out[zero] = np.where((Z > 0.0) & (Z < 2.0), 1.0, 0.0)
    if early.any():
        # Image series for the layer 0 <= Z <= 2 drained at both faces (equivalently 0..1
        # with an impervious base at Z = 1):
        #   u/u0 = 1 - sum_n (-1)^n [erfc((2n + Z)/(2 sqrt T)) + erfc((2n + 2 - Z)/(2 sqrt T))]
        # (Carslaw & Jaeger 1959, section 3.3, slab with zero surface temperature; from memory)
        s = 2.0 * np.sqrt(T[early])[:, None]
        acc = np.zeros((s.shape[0], Z.size))
        for n in range(_N_IMAGES):
            acc += (-1.0) ** n * (erfc((2 * n + Z) / s) + erfc((2 * n + 2 - Z) / s))
        out[early] = 1.0 - acc
    if late.any():
        M = _fourier_m(n_terms)
        # sum_m 2/M sin(M Z) exp(-M^2 T)  (Terzaghi 1925)
        out[late] = (np.exp(-np.outer(T[late], M * M)) * (2.0 / M)) @ np.sin(np.outer(M, Z))
    return out


def terzaghi_excess_pressure(z: ArrayLike, H: float, Tv: ArrayLike, u0: float = 1.0,
                             n_terms: int = 200) -> np.ndarray:
    """Excess pore pressure of one-dimensional consolidation under a sudden uniform load.

    Terzaghi, K. (1925), *Erdbaumechanik auf bodenphysikalischer Grundlage*, Deuticke, Vienna;
    series as in Terzaghi, K. (1943), *Theoretical Soil Mechanics*, Wiley, ch. XIII
    (from memory)::

        u(z, Tv) = sum_{m>=0} (2 u0 / M) sin(M z / H) exp(-M^2 Tv),   M = pi (2m + 1) / 2

    solving du/dTv = d2u/d(z/H)2 with u = 0 at the drained face z = 0, du/dz = 0 at z = H
    and u = u0 at Tv = 0. For Tv < 0.05 the equivalent image series in erfc (Carslaw &
    Jaeger 1959, *Conduction of Heat in Solids*, 2nd ed., section 3.3; from memory) is used
    instead, so the result is exact to rounding for every Tv > 0 (the Fourier series alone
    would need thousands of terms at small Tv).

    Parameters
    ----------
    z : array_like, (nz,) or scalar
        Depth below the drained face, m, 0 <= z <= 2 H. For a layer of thickness 2H drained at
        both faces pass ``H`` = half the thickness; the profile is symmetric about z = H.
        For a layer drained at its top only (impervious base), 0 <= z <= H is physical.
    H : float
        Length of the drainage path, m (half the thickness for double drainage).
    Tv : array_like, (nt,) or scalar
        Time factor Tv = cv t / H^2, >= 0. At Tv = 0 the result is u0 inside the layer and
        0 on the drained face(s).
    u0 : float
        Initial excess pore pressure, kPa (the load increment for one-dimensional loading).
    n_terms : int
        Number of Fourier terms used for Tv >= 0.05 (200 is far more than needed there; the
        argument is kept to study truncation).

    Returns
    -------
    numpy.ndarray, shape ``Tv.shape + z.shape``, e.g. (nt, nz)
        Excess pore pressure, kPa, positive in compression.
    """
    H = _check_positive(H, "H")
    u0 = _check_finite(u0, "u0")
    n_terms = _check_terms(n_terms)
    z = _as_array(z, "z", minimum=0.0)
    Tv = _as_array(Tv, "Tv", minimum=0.0)
    if z.size and z.max() > 2.0 * H * (1.0 + 1e-12):
        raise AnalyticArgumentError(f"depth {z.max():g} m exceeds 2 H = {2 * H:g} m", field="z",
                                    fix="measure z from the drained face; H is the drainage "
                                        "path (half the thickness for double drainage).")
    Z = np.minimum(z.ravel() / H, 2.0)
    u = u0 * _terzaghi_unit_profile(Z, Tv.ravel(), n_terms)
    return _scalar_if_0d(u.reshape(Tv.shape + z.shape))


def _terzaghi_unit_mean(T: np.ndarray) -> np.ndarray:
    """Mean of u/u0 over the drainage path, 1 - U, for T >= 0 (any shape)."""
    out = np.ones(T.shape)     # T = 0: nothing has drained yet
    early = (T > 0.0) & (T < _EARLY_TV)
    late = T >= _EARLY_TV
    if early.any():
        # U = 2 sqrt(T/pi) + 4 sqrt(T) sum_{n>=1} (-1)^n ierfc(n / sqrt(T))
        # (mean of the image series over the layer; Carslaw & Jaeger 1959, section 3.3)
        r = np.sqrt(T[early])
        acc = np.zeros_like(r)
        for n in range(1, _N_IMAGES + 1):
            acc += (-1.0) ** n * _ierfc(1, n / r)
        out[early] = 1.0 - (2.0 * r / np.sqrt(np.pi) + 4.0 * r * acc)
    if late.any():
        M = _fourier_m(_N_FOURIER)
        out[late] = np.exp(-np.multiply.outer(T[late], M * M)) @ (2.0 / (M * M))
    return out


def terzaghi_average_degree(Tv: ArrayLike) -> np.ndarray:
    """Average degree of consolidation of Terzaghi's one-dimensional problem.

    Terzaghi (1925), *Erdbaumechanik*; Terzaghi (1943), *Theoretical Soil Mechanics*,
    ch. XIII (from memory)::

        U(Tv) = 1 - sum_{m>=0} (2 / M^2) exp(-M^2 Tv),   M = pi (2m + 1) / 2

    For Tv < 0.05 the equivalent early-time form U = 2 sqrt(Tv/pi) + 4 sqrt(Tv)
    sum_{n>=1} (-1)^n ierfc(n / sqrt(Tv)) is used (Carslaw & Jaeger 1959, *Conduction of
    Heat in Solids*, section 3.3; from memory); both are exact to rounding in their ranges.
    U is the settlement divided by the final settlement; the same U holds for double
    drainage when Tv is formed with H = half the thickness.

    Parameters
    ----------
    Tv : array_like, any shape
        Time factor cv t / H^2, >= 0.

    Returns
    -------
    numpy.ndarray, same shape as ``Tv``
        Average degree of consolidation U, 0 <= U < 1.
    """
    Tv = _as_array(Tv, "Tv", minimum=0.0)
    return _scalar_if_0d(1.0 - _terzaghi_unit_mean(Tv))


def terzaghi_time_factor(U: ArrayLike) -> np.ndarray:
    """Time factor at which Terzaghi's average degree of consolidation reaches U.

    Inverse of :func:`terzaghi_average_degree` by Brent's method (Brent 1973, *Algorithms for
    Minimization without Derivatives*, Prentice-Hall) to 1e-14 in Tv, one root per entry.
    Familiar values: U = 0.5 -> Tv = 0.197, U = 0.9 -> Tv = 0.848 (Terzaghi 1943, from memory).

    Parameters
    ----------
    U : array_like, any shape
        Average degree of consolidation, 0 <= U < 1.

    Returns
    -------
    numpy.ndarray, same shape as ``U``
        Time factor Tv = cv t / H^2.
    """
    U = _as_array(U, "U", minimum=0.0)
    if U.size and U.max() >= 1.0:
        raise AnalyticArgumentError(f"must be below 1 (U = 1 is reached only as t -> inf), got "
                                    f"{U.max():g}", field="U")
    out = np.zeros(U.size)
    for i, target in enumerate(U.ravel()):
        if target == 0.0:
            continue
        # one-term estimate (exact for Tv >~ 0.2) sets a safe upper bracket
        upper = max(1.0, -4.0 / np.pi**2 * np.log(np.pi**2 * (1.0 - target) / 8.0) + 1.0)
        out[i] = brentq(lambda t: 1.0 - _terzaghi_unit_mean(np.array([t]))[0] - target,
                        0.0, upper, xtol=1e-14, rtol=1e-14)
    return _scalar_if_0d(out.reshape(U.shape))


def time_factor(t: ArrayLike, cv: float, H: float) -> np.ndarray:
    """Time factor Tv = cv t / H^2 (Terzaghi 1925); t in days, cv in m2/day, H in m."""
    cv = _check_positive(cv, "cv")
    H = _check_positive(H, "H")
    t = _as_array(t, "t", minimum=0.0)
    return _scalar_if_0d(cv * t / H**2)


def consolidation_coefficient(k: float, mv: float, gamma_w: float = 9.81) -> float:
    """Coefficient of consolidation cv = k / (mv gamma_w), m2/day (Terzaghi 1925).

    k in m/day, mv (coefficient of volume compressibility) in 1/kPa, gamma_w in kN/m3.
    """
    k = _check_positive(k, "k")
    mv = _check_positive(mv, "mv")
    gamma_w = _check_positive(gamma_w, "gamma_w")
    return k / (mv * gamma_w)


# ============================================================================= Olson ramp
# Duhamel superposition (Carslaw & Jaeger 1959, section 1.14; from memory) of the Terzaghi
# step response u_1(Z, T) (u0 = 1): a load rising at rate q / Tvc gives
#     u(Z, T) = q / Tvc [G(Z, T) - G(Z, T - Tvc)],   G(Z, T) = int_0^T u_1(Z, s) ds,
# with G(Z, T < 0) = 0 (a ramp starting at 0 minus an equal ramp starting at Tvc).
def _ramp_integral_profile(Z: np.ndarray, T: np.ndarray) -> np.ndarray:
    """G(Z, T) = int_0^T u_1(Z, s) ds for T >= 0 (nt,), Z (nz,) -> (nt, nz)."""
    out = np.zeros((T.size, Z.size))
    early = (T > 0.0) & (T < _EARLY_TV)
    late = T >= _EARLY_TV
    if early.any():
        # int_0^T erfc(x / (2 sqrt s)) ds = 4 T i2erfc(x / (2 sqrt T))
        # (Carslaw & Jaeger 1959, Appendix II; from memory), applied to the image series
        Te = T[early][:, None]
        s = 2.0 * np.sqrt(Te)
        acc = np.zeros((Te.shape[0], Z.size))
        for n in range(_N_IMAGES):
            acc += (-1.0) ** n * (_ierfc(2, (2 * n + Z) / s) + _ierfc(2, (2 * n + 2 - Z) / s))
        out[early] = Te - 4.0 * Te * acc
    if late.any():
        M = _fourier_m(_N_FOURIER)
        # sum 2/M^3 sin(MZ) = Z - Z^2/2 (the Fourier series of the steady solution of
        # -w'' = 1, w(0) = 0, w'(1) = 0), so G = Z - Z^2/2 - sum 2/M^3 sin(MZ) exp(-M^2 T)
        steady = Z - 0.5 * Z * Z
        out[late] = steady - (np.exp(-np.outer(T[late], M * M)) * (2.0 / M**3)) @ np.sin(
            np.outer(M, Z))
    return out


def _ramp_integral_mean(T: np.ndarray) -> np.ndarray:
    """Gbar(T) = int_0^T (1 - U(s)) ds, mean of G over the drainage path, T >= 0 (any shape)."""
    out = np.zeros(T.shape)
    early = (T > 0.0) & (T < _EARLY_TV)
    late = T >= _EARLY_TV
    if early.any():
        # mean over Z of the early form of G:
        #   Gbar = T - 8 T^(3/2) [i3erfc(0) + 2 sum_{n>=1} (-1)^n i3erfc(n / sqrt T)],
        #   i3erfc(0) = 1 / (6 sqrt(pi))   (Carslaw & Jaeger 1959, Appendix II; from memory)
        Te = T[early]
        r = np.sqrt(Te)
        acc = np.full(Te.shape, 1.0 / (6.0 * np.sqrt(np.pi)))
        for n in range(1, _N_IMAGES + 1):
            acc += 2.0 * (-1.0) ** n * _ierfc(3, n / r)
        out[early] = Te - 8.0 * Te * r * acc
    if late.any():
        M = _fourier_m(_N_FOURIER)
        # sum 2/M^4 = int_0^1 (Z - Z^2/2) dZ = 1/3
        out[late] = 1.0 / 3.0 - np.exp(-np.multiply.outer(T[late], M * M)) @ (2.0 / M**4)
    return out


def _check_ramp_time(Tvc: float) -> float:
    Tvc = float(Tvc)
    if not np.isfinite(Tvc) or Tvc < 0.0:
        raise AnalyticArgumentError(f"construction time factor must be >= 0 and finite, got "
                                    f"{Tvc!r}", field="Tvc")
    return Tvc


def olson_ramp_average_degree(Tv: ArrayLike, Tvc: float) -> np.ndarray:
    """Average degree of consolidation under a load ramped linearly to its final value.

    Olson, R. E. (1977), "Consolidation under time dependent loading", *J. Geotech. Eng.
    Div.* ASCE 103(GT1), 55-60 (pages from memory). The load rises linearly from 0 at Tv = 0
    to q at Tv = Tvc and is then held; U is the settlement divided by the final settlement
    under q::

        Tv <= Tvc:  U = Tv/Tvc [1 - 2/Tv sum_m 1/M^4 (1 - exp(-M^2 Tv))]
        Tv >= Tvc:  U = 1 - 2/Tvc sum_m 1/M^4 (exp(M^2 Tvc) - 1) exp(-M^2 Tv)

    with M = pi (2m + 1) / 2. It is evaluated in the equivalent Duhamel form
    U = min(Tv/Tvc, 1) - [Gbar(Tv) - Gbar(Tv - Tvc)] / Tvc, Gbar(T) = int_0^T (1 - U_T(s)) ds
    with U_T Terzaghi's degree (Carslaw & Jaeger 1959, *Conduction of Heat in Solids*,
    section 1.14, Duhamel's theorem; from memory), using an erfc form of Gbar at small times
    so that short ramps keep full accuracy. Tvc = 0 gives Terzaghi's U.

    Parameters
    ----------
    Tv : array_like, any shape
        Time factor cv t / H^2, >= 0 (H = drainage path; half the thickness for double
        drainage).
    Tvc : float
        Time factor at the end of the ramp, cv tc / H^2, >= 0.

    Returns
    -------
    numpy.ndarray, same shape as ``Tv``
        Average degree of consolidation relative to the final load.
    """
    Tv = _as_array(Tv, "Tv", minimum=0.0)
    Tvc = _check_ramp_time(Tvc)
    if Tvc == 0.0:
        return terzaghi_average_degree(Tv)
    shape, Tv = Tv.shape, Tv.ravel()
    later = np.maximum(Tv - Tvc, 0.0)
    # when both ends are in the Fourier range, difference the decaying sums directly:
    # Gbar(T) - Gbar(T - Tvc) = sum 2/M^4 exp(-M^2 (T - Tvc)) (1 - exp(-M^2 Tvc))
    direct = later >= _EARLY_TV
    diff = _ramp_integral_mean(Tv) - _ramp_integral_mean(later)
    if direct.any():
        M = _fourier_m(_N_FOURIER)
        diff[direct] = np.exp(-np.multiply.outer(later[direct], M * M)) @ (
            -2.0 / M**4 * np.expm1(-M * M * Tvc))
    U = np.minimum(Tv / Tvc, 1.0) - diff / Tvc
    return _scalar_if_0d(U.reshape(shape))


def olson_ramp_excess_pressure(z: ArrayLike, H: float, Tv: ArrayLike, Tvc: float,
                               q: float = 1.0) -> np.ndarray:
    """Excess pore pressure profile under a load ramped linearly to q over Tvc, then held.

    By Duhamel superposition (Carslaw & Jaeger 1959, *Conduction of Heat in Solids*, section
    1.14; from memory) of Terzaghi's (1925) step response, as in Olson (1977), *J. Geotech.
    Eng. Div.* ASCE 103(GT1)::

        Tv <= Tvc:  u = q/Tvc sum_m (2/M^3) sin(M z/H) (1 - exp(-M^2 Tv))
        Tv >= Tvc:  u = q/Tvc sum_m (2/M^3) sin(M z/H) (exp(M^2 Tvc) - 1) exp(-M^2 Tv)

    with M = pi (2m + 1) / 2; it solves du/dTv = d2u/d(z/H)2 + (q/Tvc) while loading. The
    series converges only like 1/M^3 at small Tv, so it is evaluated as
    u = q/Tvc [G(z, Tv) - G(z, Tv - Tvc)], G = time integral of the unit Terzaghi response,
    from an erfc form at small times and the Fourier form with its steady part
    z/H - (z/H)^2/2 summed in closed form otherwise. The depth mean of u relates to the
    degree of consolidation by U = min(Tv/Tvc, 1) - mean(u)/q. Tvc = 0 gives Terzaghi's
    profile with u0 = q.

    Parameters
    ----------
    z : array_like, (nz,) or scalar
        Depth below the drained face, m, 0 <= z <= 2 H (see
        :func:`terzaghi_excess_pressure` for double drainage).
    H : float
        Drainage path length, m.
    Tv : array_like, (nt,) or scalar
        Time factor cv t / H^2, >= 0.
    Tvc : float
        Time factor at the end of the ramp, >= 0.
    q : float
        Final vertical load, kPa (one-dimensional loading: the excess pressure generated
        equals the load increment).

    Returns
    -------
    numpy.ndarray, shape ``Tv.shape + z.shape``, e.g. (nt, nz)
        Excess pore pressure, kPa, positive in compression.
    """
    H = _check_positive(H, "H")
    q = _check_finite(q, "q")
    Tvc = _check_ramp_time(Tvc)
    if Tvc == 0.0:
        return terzaghi_excess_pressure(z, H, Tv, u0=q)
    z = _as_array(z, "z", minimum=0.0)
    Tv = _as_array(Tv, "Tv", minimum=0.0)
    if z.size and z.max() > 2.0 * H * (1.0 + 1e-12):
        raise AnalyticArgumentError(f"depth {z.max():g} m exceeds 2 H = {2 * H:g} m", field="z")
    Z = np.minimum(z.ravel() / H, 2.0)
    T = Tv.ravel()
    later = np.maximum(T - Tvc, 0.0)
    diff = _ramp_integral_profile(Z, T) - _ramp_integral_profile(Z, later)
    direct = later >= _EARLY_TV
    if direct.any():
        M = _fourier_m(_N_FOURIER)
        diff[direct] = (np.exp(-np.outer(later[direct], M * M))
                        * (-2.0 / M**3 * np.expm1(-M * M * Tvc))) @ np.sin(np.outer(M, Z))
    u = q / Tvc * diff
    return _scalar_if_0d(u.reshape(Tv.shape + z.shape))


# ============================================================================= Mandel
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


def _mandel_series(t: np.ndarray, params: MandelParameters, a: float,
                   n_terms: int) -> _MandelSeries:
    roots = mandel_roots(params.poisson_ratio, params.undrained_poisson_ratio, n_terms)
    T = params.consolidation_coefficient * t.ravel() / a**2
    return _MandelSeries(roots, np.sin(roots), np.cos(roots),
                         roots - np.sin(roots) * np.cos(roots),
                         np.exp(-np.outer(T, roots**2)), T == 0.0)


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
    n_terms = _check_terms(n_terms)
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

    Abousleiman et al. (1996), "Mandel's problem revisited", *Geotechnique* 46(2), 187-195,
    with F = force / 2::

        sigma_yy = -F/a
                   - 2F (nu_u - nu) / (a (1 - nu)) sum_i sin x_i / (x_i - sin x_i cos x_i)
                                                   cos(x_i x / a) exp(-x_i^2 c t / a^2)
                   + 2F / a sum_i sin x_i cos x_i / (x_i - sin x_i cos x_i)
                                                   exp(-x_i^2 c t / a^2)

    and sigma_xx = sigma_xy = 0 everywhere. Each term integrates to zero over the width, so
    the integral of sigma_yy over -a..a is -force at all times. Geometry, loading and
    arguments as in :func:`mandel_pressure`.

    Returns
    -------
    numpy.ndarray, shape ``t.shape + x.shape``
        sigma_yy, kPa, tension positive (compression negative).

    Notes
    -----
    The series are summed with ``n_terms`` terms; the first neglected term decays as
    exp(-(n_terms pi)^2 c t / a^2), so 200 terms are exact to rounding for c t / a^2 >= 1e-4;
    raise ``n_terms`` for earlier times. At t = 0 exactly the undrained (t = 0+) values are
    returned in closed form.
    """
    x, t, a, force = _mandel_inputs(x, t, a, force)
    n_terms = _check_terms(n_terms)
    s = _mandel_series(t, params, a, n_terms)
    nu, nu_u = params.poisson_ratio, params.undrained_poisson_ratio
    F = 0.5 * force
    xi = x.ravel() / a
    cos_mode = np.cos(s.roots[:, None] * xi[None, :])              # (n, nx)
    varying = (s.decay * (s.sin / s.denom)) @ cos_mode             # (nt, nx)
    uniform = s.decay @ (s.sin * s.cos / s.denom)                  # (nt,)
    sigma = (-F / a - 2.0 * F * (nu_u - nu) / (a * (1.0 - nu)) * varying
             + 2.0 * F / a * uniform[:, None])
    sigma[s.zero] = -F / a
    return _scalar_if_0d(sigma.reshape(t.shape + x.shape))


def mandel_vertical_displacement(t: ArrayLike, params: MandelParameters, a: float, b: float,
                                 force: float, n_terms: int = 200) -> np.ndarray:
    """Settlement of the top plate of Mandel's block relative to its mid-height.

    Abousleiman et al. (1996), "Mandel's problem revisited", *Geotechnique* 46(2), 187-195,
    with F = force / 2::

        u_y(y, t) = [-F (1 - nu) / (2 G a)
                     + F (1 - nu_u) / (G a) sum_i sin x_i cos x_i / (x_i - sin x_i cos x_i)
                                                 exp(-x_i^2 c t / a^2)] y

    returned as the settlement w(t) = -u_y(b, t), downward positive: the top plate (y = b)
    moves down by w and the bottom plate up by w, so the block shortens by 2w. Limits:
    w(0+) = force (1 - nu_u) b / (4 G a) (undrained plane strain, uniaxial stress), and
    w(inf) = force (1 - nu) b / (4 G a) (drained). Geometry and loading as in
    :func:`mandel_pressure`.

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

    Notes
    -----
    The series are summed with ``n_terms`` terms; the first neglected term decays as
    exp(-(n_terms pi)^2 c t / a^2), so 200 terms are exact to rounding for c t / a^2 >= 1e-4;
    raise ``n_terms`` for earlier times. At t = 0 exactly the undrained (t = 0+) values are
    returned in closed form.
    """
    _, t, a, force = _mandel_inputs(None, t, a, force)
    b = _check_positive(b, "b")
    n_terms = _check_terms(n_terms)
    s = _mandel_series(t, params, a, n_terms)
    G, nu, nu_u = params.shear_modulus, params.poisson_ratio, params.undrained_poisson_ratio
    F = 0.5 * force
    transient = s.decay @ (s.sin * s.cos / s.denom)                # (nt,)
    w = b * (F * (1.0 - nu) / (2.0 * G * a) - F * (1.0 - nu_u) / (G * a) * transient)
    w[s.zero] = b * F * (1.0 - nu_u) / (2.0 * G * a)
    return _scalar_if_0d(w.reshape(t.shape))


def mandel_horizontal_displacement(x: ArrayLike, t: ArrayLike, params: MandelParameters,
                                   a: float, force: float, n_terms: int = 200) -> np.ndarray:
    """Horizontal displacement u_x in Mandel's block, positive in +x (outward at x = a).

    Abousleiman et al. (1996), "Mandel's problem revisited", *Geotechnique* 46(2), 187-195,
    with F = force / 2::

        u_x = [F nu / (2 G a) - F nu_u / (G a) sum_i sin x_i cos x_i / (x_i - sin x_i cos x_i)
                                                 exp(-x_i^2 c t / a^2)] x
              + F / G sum_i cos x_i / (x_i - sin x_i cos x_i) sin(x_i x / a)
                                                 exp(-x_i^2 c t / a^2)

    independent of y; zero on the centre line. Limits: u_x = force nu_u x / (4 G a) at t = 0+
    and force nu x / (4 G a) as t -> inf. Geometry, loading and arguments as in
    :func:`mandel_pressure`.

    Returns
    -------
    numpy.ndarray, shape ``t.shape + x.shape``
        u_x, m.

    Notes
    -----
    The series are summed with ``n_terms`` terms; the first neglected term decays as
    exp(-(n_terms pi)^2 c t / a^2), so 200 terms are exact to rounding for c t / a^2 >= 1e-4;
    raise ``n_terms`` for earlier times. At t = 0 exactly the undrained (t = 0+) values are
    returned in closed form.
    """
    x, t, a, force = _mandel_inputs(x, t, a, force)
    n_terms = _check_terms(n_terms)
    s = _mandel_series(t, params, a, n_terms)
    G, nu, nu_u = params.shear_modulus, params.poisson_ratio, params.undrained_poisson_ratio
    F = 0.5 * force
    xr = x.ravel()
    uniform = s.decay @ (s.sin * s.cos / s.denom)                  # (nt,)
    sin_mode = np.sin(s.roots[:, None] * (xr / a)[None, :])        # (n, nx)
    varying = (s.decay * (s.cos / s.denom)) @ sin_mode             # (nt, nx)
    ux = ((F * nu / (2.0 * G * a) - F * nu_u / (G * a) * uniform)[:, None] * xr[None, :]
          + F / G * varying)
    ux[s.zero] = F * nu_u / (2.0 * G * a) * xr
    return _scalar_if_0d(ux.reshape(t.shape + x.shape))


# ============================================================================= half-space
class PlaneStresses(NamedTuple):
    """Plane-strain stresses in a half-space, kPa, compression positive.

    ``tau_xz`` carries the sign of Flamant's expression 2 P x z^2 / (pi r^4) for a line load
    at x = 0 (compression-positive tensor, i.e. the mechanics tensor with its sign flipped).
    """

    sigma_z: np.ndarray
    sigma_x: np.ndarray
    tau_xz: np.ndarray


def flamant_line_load_stresses(x: ArrayLike, z: ArrayLike, P: float) -> PlaneStresses:
    """Stresses under a vertical line load on the surface of an elastic half-space.

    Flamant, A. (1892), "Sur la repartition des pressions dans un solide rectangulaire charge
    transversalement", *C. R. Acad. Sci. Paris* 114, 1465-1468; as given by Poulos & Davis
    (1974), *Elastic Solutions for Soil and Rock Mechanics*, Wiley, section 2.1 (section
    number from memory)::

        sigma_z = 2 P z^3 / (pi r^4),  sigma_x = 2 P x^2 z / (pi r^4),
        tau_xz = 2 P x z^2 / (pi r^4),  r^2 = x^2 + z^2

    independent of the elastic constants.

    Parameters
    ----------
    x : array_like
        Horizontal distance from the load, m (broadcast against ``z``).
    z : array_like
        Depth, m, >= 0; the load point itself (x = z = 0) is singular and refused.
    P : float
        Line load, kN/m, downward positive.

    Returns
    -------
    PlaneStresses
        sigma_z, sigma_x, tau_xz, kPa, compression positive, shape ``broadcast(x, z)``.
    """
    P = _check_finite(P, "P")
    x = _as_array(x, "x")
    z = _as_array(z, "z", minimum=0.0)
    x, z = np.broadcast_arrays(x, z)
    r2 = x * x + z * z
    if np.any(r2 == 0.0):
        raise AnalyticArgumentError("the stresses are singular at the load point x = z = 0",
                                    field="x, z")
    f = 2.0 * P / (np.pi * r2 * r2)
    return PlaneStresses(_scalar_if_0d(f * z**3), _scalar_if_0d(f * x * x * z),
                         _scalar_if_0d(f * x * z * z))


def strip_load_stresses(x: ArrayLike, z: ArrayLike, b: float, q: float) -> PlaneStresses:
    """Stresses under a uniform strip load on the surface of an elastic half-space.

    Carothers, S. D. (1920), "Plane strain: the direct determination of stress", *Proc. R.
    Soc. London* A 97, 110-123 (details from memory); as given by Poulos & Davis (1974),
    *Elastic Solutions for Soil and Rock Mechanics*, Wiley, section 3.1 (from memory)::

        sigma_z = q/pi [alpha + sin(alpha) cos(alpha + 2 delta)]
        sigma_x = q/pi [alpha - sin(alpha) cos(alpha + 2 delta)]
        tau_xz  = q/pi sin(alpha) sin(alpha + 2 delta)

    where, with theta_1 = atan((x + b)/z) and theta_2 = atan((x - b)/z) measured from the
    vertical, alpha = theta_1 - theta_2 is the angle the strip subtends at the point and
    delta = theta_2 the angle to the edge at x = +b (negative inside the strip). This is the
    integral of :func:`flamant_line_load_stresses` over the strip. On the surface z = 0 the
    values are the limits from below: q, q, 0 under the strip, 0 outside, and
    q/2, q/2, +-q/pi at the edges x = +-b.

    Parameters
    ----------
    x : array_like
        Horizontal distance from the centre line, m (broadcast against ``z``).
    z : array_like
        Depth, m, >= 0.
    b : float
        Half-width of the strip, m.
    q : float
        Uniform pressure, kPa, downward positive.

    Returns
    -------
    PlaneStresses
        sigma_z, sigma_x, tau_xz, kPa, compression positive, shape ``broadcast(x, z)``.
    """
    b = _check_positive(b, "b")
    q = _check_finite(q, "q")
    x = _as_array(x, "x")
    z = _as_array(z, "z", minimum=0.0)
    x, z = np.broadcast_arrays(x, z)
    # arctan2 gives the surface limits +-pi/2 at z = 0 without division by zero
    theta1 = np.arctan2(x + b, z)
    theta2 = np.arctan2(x - b, z)
    alpha = theta1 - theta2
    delta = theta2
    sa, c2 = np.sin(alpha), np.cos(alpha + 2.0 * delta)
    sigma_z = q / np.pi * (alpha + sa * c2)
    sigma_x = q / np.pi * (alpha - sa * c2)
    tau = q / np.pi * sa * np.sin(alpha + 2.0 * delta)
    return PlaneStresses(_scalar_if_0d(sigma_z), _scalar_if_0d(sigma_x), _scalar_if_0d(tau))


# ============================================================================= cylinder
class CylinderSolution(NamedTuple):
    """Lame cylinder: radial displacement (m) and stresses (kPa), tension positive."""

    u_r: np.ndarray
    sigma_rr: np.ndarray
    sigma_tt: np.ndarray
    sigma_zz: np.ndarray


def lame_cylinder(r: ArrayLike, a: float, b: float, p_inner: float, p_outer: float,
                  E: float, nu: float) -> CylinderSolution:
    """Thick-walled cylinder under inner and outer pressure, plane strain.

    Lame, G. (1852), *Lecons sur la theorie mathematique de l'elasticite des corps solides*,
    Bachelier, Paris; as in Timoshenko & Goodier (1970), *Theory of Elasticity*, 3rd ed.,
    McGraw-Hill, section 28 (section number from memory)::

        sigma_rr = A - B / r^2,   sigma_tt = A + B / r^2,
        A = (p_i a^2 - p_o b^2) / (b^2 - a^2),   B = (p_i - p_o) a^2 b^2 / (b^2 - a^2)
        u_r = (1 + nu) / E [(1 - 2 nu) A r + B / r]          (plane strain, eps_zz = 0)
        sigma_zz = nu (sigma_rr + sigma_tt)

    Stresses are tension positive, so sigma_rr(a) = -p_inner and sigma_rr(b) = -p_outer;
    u_r is positive outward.

    Parameters
    ----------
    r : array_like, any shape
        Radius, m, a <= r <= b.
    a, b : float
        Inner and outer radius, m, 0 < a < b.
    p_inner, p_outer : float
        Pressure on the inner and outer surface, kPa, positive pushing on the wall.
    E : float
        Young's modulus, kPa.
    nu : float
        Poisson's ratio, in (-1, 0.5).

    Returns
    -------
    CylinderSolution
        u_r (m), sigma_rr, sigma_tt, sigma_zz (kPa), each shaped like ``r``.
    """
    a = _check_positive(a, "a")
    b = _check_positive(b, "b")
    if not b > a:
        raise AnalyticArgumentError(f"outer radius b = {b:g} m must exceed inner radius "
                                    f"a = {a:g} m", field="b")
    p_i = _check_finite(p_inner, "p_inner")
    p_o = _check_finite(p_outer, "p_outer")
    E = _check_positive(E, "E")
    nu = _check_poisson(nu, "nu")
    r = _as_array(r, "r")
    if r.size and (r.min() < a * (1.0 - 1e-12) or r.max() > b * (1.0 + 1e-12)):
        raise AnalyticArgumentError(f"radii must lie in [a, b] = [{a:g}, {b:g}] m", field="r")
    A = (p_i * a * a - p_o * b * b) / (b * b - a * a)
    Bc = (p_i - p_o) * a * a * b * b / (b * b - a * a)
    srr = A - Bc / r**2
    stt = A + Bc / r**2
    ur = (1.0 + nu) / E * ((1.0 - 2.0 * nu) * A * r + Bc / r)
    szz = nu * (srr + stt)
    return CylinderSolution(_scalar_if_0d(ur), _scalar_if_0d(srr), _scalar_if_0d(stt),
                            _scalar_if_0d(szz))


def oedometer_modulus(E: float, nu: float) -> float:
    """Constrained (oedometric) modulus E (1 - nu) / ((1 + nu)(1 - 2 nu)), kPa.

    Linear isotropic elasticity under lateral restraint (Timoshenko & Goodier 1970, *Theory of
    Elasticity*, 3rd ed., McGraw-Hill); equals lambda + 2G and 1/mv of one-dimensional theory.
    """
    E = _check_positive(E, "E")
    nu = _check_poisson(nu, "nu")
    return E * (1.0 - nu) / ((1.0 + nu) * (1.0 - 2.0 * nu))
