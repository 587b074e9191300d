"""One-dimensional consolidation: Terzaghi's solution for a suddenly applied load and Olson's
for a load rising linearly in time (ramp), with the time factor and the coefficient of
consolidation."""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike
from scipy.optimize import brentq
from scipy.special import erfc

from .arguments import (AnalyticArgumentError, _as_array, _check_finite, _check_positive,
                        _check_terms, _scalar_if_0d)



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

