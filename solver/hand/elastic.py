"""Immediate (undrained elastic) settlement: closed forms of the elastic half-space and layer.

Flexible and rigid circles (Timoshenko & Goodier 1951; Poulos & Davis 1974), the
displacement below any point of a uniform disc (the Boussinesq point load integrated), strips
on a layer over a rigid base (Steinbrenner 1934 approximation) and the chart form of Janbu,
Bjerrum & Kjaernsli (1956).

Conventions: kN, m, kPa; depth ``z`` positive downward from the loaded surface, settlement
positive downward. Functions broadcast their point arguments.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

from solver.errors import InputError

__all__ = [
    "circle_axis_displacement",
    "circle_immediate_settlement",
    "disc_displacement",
    "strip_immediate_settlement",
    "rigid_strip_immediate_settlement",
    "chart_immediate_settlement",
]


def _elastic(youngs_modulus: float, poisson_ratio: float) -> tuple[float, float]:
    e = float(youngs_modulus)
    nu = float(poisson_ratio)
    if not np.isfinite(e) or e <= 0.0:
        raise InputError(f"Young's modulus must be > 0 kPa, got {e!r}", field="youngs_modulus",
                         fix="give the undrained modulus Eu in kPa")
    if not 0.0 <= nu <= 0.5:
        raise InputError(f"Poisson's ratio must lie in [0, 0.5], got {nu!r}", field="poisson_ratio",
                         fix="use 0.5 for undrained (immediate) settlement")
    return e, nu


def circle_axis_displacement(z: ArrayLike, q: float, radius: float, youngs_modulus: float,
                             poisson_ratio: float = 0.5) -> NDArray[np.float64]:
    """Vertical displacement on the axis of a flexible uniform circle on a half-space (m).

    Integral of the Boussinesq (1885) point-load displacement over the disc (Poulos &
    Davis 1974, *Elastic Solutions for Soil and Rock Mechanics*)::

        w(z) = q (1 + nu) / E * [2 (1 - nu)(sqrt(a^2 + z^2) - z) + z - z^2 / sqrt(a^2 + z^2)]

    so ``w(0) = 2 q a (1 - nu^2) / E``. ``z`` in m (>= 0), ``q`` kPa, ``E`` kPa.
    """
    e, nu = _elastic(youngs_modulus, poisson_ratio)
    z = np.asarray(z, dtype=float)
    root = np.sqrt(radius * radius + z * z)
    return q * (1.0 + nu) / e * (2.0 * (1.0 - nu) * (root - z) + z - z * z / root)


def circle_immediate_settlement(q: float, radius: float, youngs_modulus: float,
                                poisson_ratio: float = 0.5, layer_thickness: float = np.inf,
                                position: str = "centre") -> float:
    """Immediate (undrained elastic) settlement of a uniform circular load (m).

    Half-space (Timoshenko & Goodier 1951, *Theory of Elasticity*; Poulos & Davis 1974),
    with ``k = q a (1 - nu^2) / E``:

    - ``"centre"`` of a flexible load: ``2 k``;
    - ``"edge"`` of a flexible load: ``4 k / pi``;
    - ``"average"`` of a flexible load: ``16 k / (3 pi)``;
    - ``"rigid"`` plate carrying mean pressure q: ``pi k / 2`` (Boussinesq 1885).

    For a layer of finite thickness ``h`` on a rigid base the centre value is taken as
    ``w(0) - w(h)`` from :func:`circle_axis_displacement` (Steinbrenner 1934, *Tafeln zur
    Setzungsberechnung*, Die Strasse 1: the half-space displacement below the layer is
    removed; an approximation that ignores the change of stresses caused by the base), and
    the rigid value as ``pi/4`` of it (the half-space rigid-to-centre ratio; common
    practice). ``"edge"`` and ``"average"`` need a half-space.

    Parameters
    ----------
    q : float
        Pressure (kPa).
    radius : float
        Radius a (m).
    youngs_modulus : float
        Undrained modulus Eu (kPa).
    poisson_ratio : float
        0.5 for undrained loading.
    layer_thickness : float
        Thickness of the compressible layer above a rigid base (m); ``inf`` for a half-space.
    position : {"centre", "edge", "average", "rigid"}

    Returns
    -------
    float
        Settlement (m).
    """
    e, nu = _elastic(youngs_modulus, poisson_ratio)
    if radius <= 0.0:
        raise InputError("circle radius must be > 0 m", field="radius")
    k = q * radius * (1.0 - nu * nu) / e
    if np.isinf(layer_thickness):
        factors = {"centre": 2.0, "edge": 4.0 / np.pi, "average": 16.0 / (3.0 * np.pi), "rigid": np.pi / 2.0}
        if position not in factors:
            raise InputError(f"unknown position {position!r}", field="position",
                             fix="use 'centre', 'edge', 'average' or 'rigid'")
        return float(factors[position] * k)
    if layer_thickness <= 0.0:
        raise InputError("layer thickness must be > 0 m", field="layer_thickness")
    centre = float(circle_axis_displacement(0.0, q, radius, e, nu)
                   - circle_axis_displacement(layer_thickness, q, radius, e, nu))
    if position == "centre":
        return centre
    if position == "rigid":
        return float(np.pi / 4.0 * centre)
    raise InputError(f"position {position!r} needs a half-space (layer_thickness = inf)", field="position",
                     fix="use 'centre' or 'rigid' for a finite layer")


def _strip_depth_integrals(u: NDArray[np.float64], h: float
                           ) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """int_0^h arctan(u/z) dz and int_0^h 2 u z/(u^2+z^2) dz, both 0 at u = 0."""
    nz = u != 0.0
    uu = np.where(nz, u, 1.0)
    lg = np.log1p((h / uu) ** 2)
    i_theta = np.where(nz, h * np.arctan(uu / h) + 0.5 * uu * lg, 0.0)
    j = np.where(nz, uu * lg, 0.0)
    return i_theta, j


def strip_immediate_settlement(x: ArrayLike, q: float, width: float, layer_thickness: float,
                               youngs_modulus: float, poisson_ratio: float = 0.5,
                               x_center: float = 0.0) -> NDArray[np.float64]:
    """Immediate settlement of a flexible uniform strip on a layer of finite thickness (m).

    The plane-strain vertical strain ``eps_z = (1 + nu)/E [(1 - nu) sigma_z - nu sigma_x]``
    from the half-space stresses (Carothers 1920; Poulos & Davis 1974) is integrated in
    closed form from the surface to the rigid base at ``layer_thickness`` (Steinbrenner
    1934 approximation: stresses of the half-space, strain cut off at the base). With
    ``u_i = x - x_i``::

        s = (1 + nu) q / (pi E) * [(1 - 2 nu)(I(u_1) - I(u_2)) + (J(u_1) - J(u_2)) / 2]
        I(u) = h arctan(u/h) + (u/2) ln(1 + h^2/u^2),   J(u) = u ln(1 + h^2/u^2)

    A strip on a half-space has unbounded settlement, so ``layer_thickness`` is required.
    For the undrained case (nu = 0.5) at the centre this is
    ``s = 3 q b ln(1 + h^2/b^2) / (2 pi E)``, b the half-width.

    Parameters
    ----------
    x : array_like
        Abscissae of the surface points (m).
    q : float
        Pressure (kPa).
    width : float
        Strip width B (m).
    layer_thickness : float
        Depth h of the rigid base (m), finite.
    youngs_modulus : float
        Undrained modulus Eu (kPa).
    poisson_ratio : float
        0.5 for undrained loading.
    x_center : float
        Centre line (m).

    Returns
    -------
    ndarray
        Settlement (m), shape of ``x``.
    """
    e, nu = _elastic(youngs_modulus, poisson_ratio)
    if not (np.isfinite(layer_thickness) and layer_thickness > 0.0):
        raise InputError("a strip needs a finite layer thickness > 0 m "
                         "(the half-space settlement is unbounded)",
                         field="layer_thickness", fix="give the depth to a stiff base")
    if not width > 0.0:
        raise InputError("strip width must be > 0 m", field="width")
    x = np.asarray(x, dtype=float) - x_center
    i1, j1 = _strip_depth_integrals(x + 0.5 * width, layer_thickness)
    i2, j2 = _strip_depth_integrals(x - 0.5 * width, layer_thickness)
    return (1.0 + nu) * q / (np.pi * e) * ((1.0 - 2.0 * nu) * (i1 - i2) + 0.5 * (j1 - j2))


def rigid_strip_immediate_settlement(q: float, width: float, layer_thickness: float, youngs_modulus: float,
                                     poisson_ratio: float = 0.5) -> float:
    """Immediate settlement of a rigid strip, taken as the mean of the flexible profile (m).

    Common practice: a rigid footing settles about the average of the flexible
    settlement under the same mean pressure. For a circle on a half-space the exact rigid
    value is 0.925 of the flexible average (Timoshenko & Goodier 1951), so this
    slightly over-estimates. The mean is a 64-point Gauss-Legendre average of
    :func:`strip_immediate_settlement` across the width.
    """
    xg, wg = np.polynomial.legendre.leggauss(64)
    s = strip_immediate_settlement(0.5 * width * xg, q, width, layer_thickness, youngs_modulus, poisson_ratio)
    return float(0.5 * np.sum(wg * s))


def chart_immediate_settlement(q: float, width: float, youngs_modulus: float, mu0: float,
                               mu1: float) -> float:
    """Mean immediate settlement ``mu0 mu1 q B / Eu`` from chart factors (m).

    Janbu, Bjerrum & Kjaernsli (1956), NGI Publication 16 (charts revised by Christian &
    Carrier 1978, Can. Geotech. J. 15): ``mu1`` for layer thickness and shape, ``mu0`` for
    embedment depth. The user reads the factors from the published charts; none are
    stored here.
    """
    e, _ = _elastic(youngs_modulus, 0.5)
    return float(mu0 * mu1 * q * width / e)

def disc_displacement(r: float, z: NDArray[np.float64], radius: float, q: float,
                      youngs_modulus: float, poisson_ratio: float = 0.5, n_angles: int = 256
                      ) -> NDArray[np.float64]:
    """Vertical displacement (m) at depths z below a point at distance r from the centre of a
    uniform flexible disc on an elastic half-space.

    The Boussinesq (1885) point-load displacement ``w = P (1 + nu) / (2 pi E R) [2 (1 - nu) +
    z^2 / R^2]`` integrated over the disc in polar coordinates centred on the point: the radial
    integral is exact, ``[(1 + nu)/(2 pi E)] [2 (1 - nu) R - z^2 / R]`` between the ray's
    entry and exit, ``R = sqrt(rho^2 + z^2)``; the angle integral is a Gauss-Legendre sum.
    On the axis it equals :func:`solver.hand.settlement.circle_axis_displacement` (Poulos &
    Davis 1974). For points outside the disc the angle is substituted
    ``sin(theta) = (a/r) sin(t)`` (no square-root end point behaviour).
    """
    z = np.asarray(z, dtype=float)
    a, nu, e = float(radius), float(poisson_ratio), float(youngs_modulus)
    xg, wg = np.polynomial.legendre.leggauss(n_angles)

    def g(rho):
        rr = np.sqrt(rho * rho + z[None, :] ** 2)
        with np.errstate(divide="ignore", invalid="ignore"):
            return 2.0 * (1.0 - nu) * rr - np.where(rr > 0.0, z[None, :] ** 2 / np.where(rr > 0.0, rr, 1.0), 0.0)

    if r < a:
        th = 0.5 * np.pi * (xg + 1.0)                      # 0 .. pi
        w_th = 0.5 * np.pi * wg
        rho2 = r * np.cos(th) + np.sqrt(np.maximum(a * a - (r * np.sin(th)) ** 2, 0.0))
        integral = 2.0 * np.sum(w_th[:, None] * (g(rho2[:, None]) - g(np.zeros((n_angles, 1)))), axis=0)
    else:
        t = 0.25 * np.pi * (xg + 1.0)                      # 0 .. pi/2
        w_t = 0.25 * np.pi * wg
        ratio = a / max(r, 1e-300)
        sin_th = ratio * np.sin(t)
        cos_th = np.sqrt(np.maximum(1.0 - sin_th ** 2, 1e-300))
        h = a * np.cos(t)
        jac = ratio * np.cos(t) / cos_th
        rho1 = np.maximum(r * cos_th - h, 0.0)
        rho2 = r * cos_th + h
        integral = 2.0 * np.sum((w_t * jac)[:, None] * (g(rho2[:, None]) - g(rho1[:, None])), axis=0)
    return q * (1.0 + nu) / (2.0 * np.pi * e) * integral

