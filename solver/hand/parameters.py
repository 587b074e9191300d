"""Parameter conversions for the hand method (vectorised over arrays of layers).

Units: kPa for moduli and stresses, 1/kPa for mv, m/day for permeability, m2/day for cv,
kN/m3 for unit weights.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

from solver.errors import InputError

__all__ = [
    "constrained_modulus",
    "mv_from_elastic",
    "cv_from_permeability",
    "permeability_from_cv",
    "cc_from_lambda",
    "cr_from_kappa",
    "mv_from_compression_index",
]

LN10 = float(np.log(10.0))


def _arr(value: ArrayLike, field: str, what: str, strict: bool = True) -> NDArray[np.float64]:
    a = np.asarray(value, dtype=float)
    bad = ~np.isfinite(a) | ((a <= 0.0) if strict else (a < 0.0))
    if np.any(bad):
        raise InputError(f"{what} must be finite and {'> 0' if strict else '>= 0'}", field=field,
                         fix=f"check {field}")
    return a


def constrained_modulus(youngs_modulus: ArrayLike, poisson_ratio: ArrayLike) -> NDArray[np.float64]:
    """Constrained (oedometric) modulus ``E (1 - nu) / ((1 + nu)(1 - 2 nu))`` (kPa).

    Linear isotropic elasticity under zero lateral strain (Timoshenko & Goodier 1951,
    *Theory of Elasticity*). Poisson's ratio must be below 0.5 (drained).
    """
    e = _arr(youngs_modulus, "youngs_modulus", "Young's modulus")
    nu = np.asarray(poisson_ratio, dtype=float)
    if np.any(~np.isfinite(nu) | (nu <= -1.0) | (nu >= 0.5)):
        raise InputError("drained Poisson's ratio must lie in (-1, 0.5)", field="poisson_ratio",
                         fix="use the drained value, e.g. 0.2 to 0.35 for clay")
    return e * (1.0 - nu) / ((1.0 + nu) * (1.0 - 2.0 * nu))


def mv_from_elastic(youngs_modulus: ArrayLike, poisson_ratio: ArrayLike) -> NDArray[np.float64]:
    """Coefficient of volume compressibility ``mv = 1 / E_oed`` (1/kPa) from drained E, nu.

    One-dimensional compression of a linear elastic soil (Terzaghi 1925, *Erdbaumechanik*;
    Timoshenko & Goodier 1951). See :func:`constrained_modulus`.
    """
    return 1.0 / constrained_modulus(youngs_modulus, poisson_ratio)


def cv_from_permeability(permeability: ArrayLike, mv: ArrayLike,
                         gamma_w: float = 9.81) -> NDArray[np.float64]:
    """Coefficient of consolidation ``cv = k / (mv gamma_w)`` (m2/day), Terzaghi (1925).

    ``permeability`` k in m/day, ``mv`` in 1/kPa, ``gamma_w`` in kN/m3.
    """
    k = _arr(permeability, "permeability", "permeability")
    mv = _arr(mv, "mv", "mv")
    return k / (mv * float(gamma_w))


def permeability_from_cv(cv: ArrayLike, mv: ArrayLike, gamma_w: float = 9.81) -> NDArray[np.float64]:
    """Permeability ``k = cv mv gamma_w`` (m/day), the inverse of :func:`cv_from_permeability`."""
    return _arr(cv, "cv", "cv") * _arr(mv, "mv", "mv") * float(gamma_w)


def cc_from_lambda(lam: ArrayLike) -> NDArray[np.float64]:
    """Compression index ``Cc = lambda ln 10`` (about 2.303 lambda).

    ``lambda`` is the slope of the normal compression line in void ratio (or specific
    volume) against ln p' (Roscoe & Burland 1968, in *Engineering Plasticity*, Cambridge;
    Schofield & Wroth 1968, *Critical State Soil Mechanics*); Cc is the slope against
    log10 sigma'_v. Using it for one-dimensional compression assumes the 1D and isotropic
    lines are parallel (common practice).
    """
    return LN10 * _arr(lam, "lambda", "lambda (slope of the normal compression line)")


def cr_from_kappa(kappa: ArrayLike) -> NDArray[np.float64]:
    """Recompression index ``Cr = kappa ln 10`` (Schofield & Wroth 1968; as for :func:`cc_from_lambda`)."""
    return LN10 * _arr(kappa, "kappa", "kappa (slope of the swelling line)", strict=False)


def mv_from_compression_index(compression_index: ArrayLike, void_ratio: ArrayLike, sigma_v0: ArrayLike,
                              delta_sigma: ArrayLike) -> NDArray[np.float64]:
    """Secant mv over a stress increment on the normally consolidated line (1/kPa).

    ``mv = Cc log10(sigma'_f / sigma'_v0) / ((1 + e0) delta_sigma)`` (Terzaghi & Peck
    1948, *Soil Mechanics in Engineering Practice*: the definitions of mv and Cc).
    """
    cc = _arr(compression_index, "compression_index", "Cc")
    e0 = _arr(void_ratio, "void_ratio", "e0")
    s0 = _arr(sigma_v0, "sigma_v0", "initial effective stress")
    ds = _arr(delta_sigma, "delta_sigma", "stress increment")
    return cc * np.log10((s0 + ds) / s0) / ((1.0 + e0) * ds)
