"""Closed forms of Modified Cam Clay at a material point: the compression lines, the yield
ellipse, drained and undrained triaxial compression to the critical state, and the
one-dimensional e - log sigma'_v rule.

Soil-mechanics signs: stresses and strains compression positive; p' mean effective stress,
q deviator stress, kPa; eta = q / p'. Sources: Roscoe & Burland (1968, "On the generalised
stress-strain behaviour of 'wet' clay", in Engineering Plasticity, CUP, 535-609) for the model;
Wood (1990, Soil Behaviour and Critical State Soil Mechanics, CUP) for the paths (chapter
numbers from memory).
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np
from numpy.typing import ArrayLike

from .arguments import AnalyticArgumentError, _as_array, _check_positive, _scalar_if_0d


def _slopes(lambda_: float, kappa: float) -> tuple[float, float]:
    lambda_ = _check_positive(lambda_, "lambda_")
    kappa = _check_positive(kappa, "kappa")
    if kappa >= lambda_:
        raise AnalyticArgumentError(f"kappa ({kappa:g}) must be smaller than lambda "
                                    f"({lambda_:g})", field="kappa")
    return lambda_, kappa


def _positive_array(values: ArrayLike, name: str) -> np.ndarray:
    arr = _as_array(values, name)
    if arr.size and arr.min() <= 0.0:
        raise AnalyticArgumentError(f"must be positive, smallest value is {arr.min():g}",
                                    field=name)
    return arr


def void_ratio_on_line(p: ArrayLike, p_ref: float, e_ref: float, slope: float) -> np.ndarray:
    """Void ratio on a straight line in e - ln p' through (p_ref, e_ref):
    e = e_ref - slope ln(p' / p_ref).

    ``slope`` lambda gives the normal compression line, e = N - lambda ln p'; kappa an
    unloading-reloading line, e = e_k - kappa ln p' (Wood 1990, ch. 4, from memory).
    """
    p = _positive_array(p, "p")
    p_ref = _check_positive(p_ref, "p_ref")
    slope = _check_positive(slope, "slope")
    return _scalar_if_0d(float(e_ref) - slope * np.log(p / p_ref))


def critical_state_void_ratio(p: ArrayLike, p_ncl: float, e_ncl: float, lambda_: float,
                              kappa: float) -> np.ndarray:
    """Void ratio on the critical state line of Modified Cam Clay,
    e_cs = e_ncl - lambda ln(p' / p_ncl) - (lambda - kappa) ln 2.

    The ellipse meets the critical state line at p'_c / 2 and the isotropic normal compression
    line (through (p_ncl, e_ncl)) at p'_c, linked by an unloading line of slope kappa, so the
    two lines lie (lambda - kappa) ln 2 apart in e (Roscoe & Burland 1968; Wood 1990, ch. 6,
    from memory).
    """
    lambda_, kappa = _slopes(lambda_, kappa)
    return _scalar_if_0d(np.asarray(void_ratio_on_line(p, p_ncl, e_ncl, lambda_))
                         - (lambda_ - kappa) * np.log(2.0))


def yield_function(p: ArrayLike, q: ArrayLike, pc: ArrayLike, M: float) -> np.ndarray:
    """f = q^2 / M^2 + p' (p' - p'_c), kPa^2: zero on the yield ellipse, negative inside
    (Roscoe & Burland 1968)."""
    M = _check_positive(M, "M")
    p, q, pc = (_as_array(v, n) for v, n in ((p, "p"), (q, "q"), (pc, "pc")))
    return _scalar_if_0d(q * q / (M * M) + p * (p - pc))


def volumetric_strain_on_ellipse(p: ArrayLike, pc: ArrayLike, p0: float, pc0: float,
                                 lambda_: float, kappa: float, e0: float) -> np.ndarray:
    """Volumetric strain from (p'_0, p'_c0) to (p', p'_c), compression positive:
    eps_v = [(lambda - kappa) ln(p'_c / p'_c0) + kappa ln(p' / p'_0)] / (1 + e0).

    The plastic part follows the growth of the ellipse along the normal compression line, the
    elastic part the unloading line through the current state (Wood 1990, ch. 4, from memory),
    with the volume measured from the initial state (small strains, 1 + e0).
    """
    lambda_, kappa = _slopes(lambda_, kappa)
    p, pc = _positive_array(p, "p"), _positive_array(pc, "pc")
    p0, pc0 = _check_positive(p0, "p0"), _check_positive(pc0, "pc0")
    e0 = _check_positive(e0, "e0")
    return _scalar_if_0d(((lambda_ - kappa) * np.log(pc / pc0) + kappa * np.log(p / p0))
                         / (1.0 + e0))


class CriticalState(NamedTuple):
    """Mean effective stress and deviator stress at the critical state, kPa."""

    p: float
    q: float


def drained_triaxial_critical_state(p0: float, M: float) -> CriticalState:
    """End of drained triaxial compression at constant cell pressure from p'_0 (q = 0):
    the total stress path dq/dp' = 3 meets q = M p' at p'_cs = 3 p'_0 / (3 - M)
    (Wood 1990, ch. 7, from memory). Needs M < 3.
    """
    p0, M = _check_positive(p0, "p0"), _check_positive(M, "M")
    if M >= 3.0:
        raise AnalyticArgumentError(f"M = {M:g}: a drained path of slope 3 never reaches "
                                    "q = M p' when M >= 3", field="M")
    p = 3.0 * p0 / (3.0 - M)
    return CriticalState(p, M * p)


def undrained_mean_stress(eta: ArrayLike, p0: float, ocr: float, M: float, lambda_: float,
                          kappa: float) -> np.ndarray:
    """p' on the yield surface in undrained (constant volume) loading, at stress ratio eta:
    p' / p'_0 = [R0 M^2 / (M^2 + eta^2)]^Lambda, Lambda = (lambda - kappa) / lambda,
    R0 = p'_c0 / p'_0 the isotropic overconsolidation ratio.

    At constant volume the elastic and plastic volume changes cancel,
    kappa ln p' + (lambda - kappa) ln p'_c = const, and on the ellipse
    p'_c = p' (M^2 + eta^2) / M^2 (Wood 1990, ch. 6 and 7, from memory). Valid once the
    path has reached the yield surface; before that p' = p'_0 (isotropic elasticity).
    """
    lambda_, kappa = _slopes(lambda_, kappa)
    eta = _as_array(eta, "eta")
    p0, ocr, M = _check_positive(p0, "p0"), _check_positive(ocr, "ocr"), _check_positive(M, "M")
    if ocr < 1.0:
        raise AnalyticArgumentError(f"must be at least 1, got {ocr:g}", field="ocr")
    lam = (lambda_ - kappa) / lambda_
    return _scalar_if_0d(p0 * (ocr * M * M / (M * M + eta * eta)) ** lam)


def undrained_critical_state(p0: float, ocr: float, M: float, lambda_: float,
                             kappa: float) -> CriticalState:
    """Critical state of undrained triaxial compression: p'_f = p'_0 (R0 / 2)^Lambda,
    q_f = M p'_f; the undrained strength is c_u = q_f / 2 (Wood 1990, ch. 7, from memory;
    :func:`undrained_mean_stress` at eta = M)."""
    p = float(undrained_mean_stress(M, p0, ocr, M, lambda_, kappa))
    return CriticalState(p, M * p)


def one_dimensional_compression(sigma_v: ArrayLike, sigma_v0: float, e0: float,
                                compression_index: float) -> tuple[np.ndarray, np.ndarray]:
    """Normally consolidated one-dimensional compression from sigma'_v0 to sigma'_v:
    (void ratio e = e0 - Cc log10(sigma'_v / sigma'_v0), vertical strain
    Cc / (1 + e0) log10(sigma'_v / sigma'_v0)), the e - log sigma'_v rule (common practice).

    For Modified Cam Clay Cc = lambda ln 10, exact on the normal compression line at the
    constant stress ratio of K0 compression (Wood 1990, ch. 4 and 10, from memory).
    """
    sv = _positive_array(sigma_v, "sigma_v")
    sv0 = _check_positive(sigma_v0, "sigma_v0")
    e0 = _check_positive(e0, "e0")
    cc = _check_positive(compression_index, "compression_index")
    de = cc * np.log10(sv / sv0)
    return _scalar_if_0d(e0 - de), _scalar_if_0d(de / (1.0 + e0))
