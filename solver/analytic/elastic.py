"""Linear elastic closed forms: stresses under line and strip loads on a half-space, the
thick-walled (Lame) cylinder, and the constrained (oedometric) modulus."""

from __future__ import annotations

from typing import NamedTuple

import numpy as np
from numpy.typing import ArrayLike

from .arguments import (AnalyticArgumentError, _as_array, _check_finite, _check_poisson,
                        _check_positive, _scalar_if_0d)


# ----------------------------------------------------------------------------- half-space
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


# ----------------------------------------------------------------------------- cylinder
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
