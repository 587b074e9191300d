"""Stress increase in a linear-elastic half-space under surface loads (hand method).

Conventions (whole module): compression positive, depth ``z`` positive downward from the
ground surface (``z = 0``), horizontal coordinates ``x`` (across a strip or embankment)
and ``y`` (along it, used by rectangles and circles only), metres; surface pressures and
stresses in kPa. Every function broadcasts its point arguments with numpy and returns
an array of the broadcast shape. Plane-strain loads (strips, embankments) are infinitely
long in ``y`` and ignore it.

The half-space is homogeneous, isotropic and weightless; the results are the stress
*increase* caused by the load, to be added to the initial (geostatic) stresses.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray
from scipy import integrate

from solver.errors import InputError

__all__ = [
    "uniform_strip_stress",
    "linear_strip_stress",
    "profile_load_stress",
    "embankment_profile",
    "rectangle_corner_influence",
    "rectangle_vertical_stress",
    "circle_centre_stress",
    "circle_vertical_stress",
    "spread_2to1_strip",
    "spread_2to1_rectangle",
    "spread_2to1_circle",
]


# --------------------------------------------------------------------------- helpers


def _depth(z: ArrayLike, field_name: str = "z") -> NDArray[np.float64]:
    z = np.asarray(z, dtype=float)
    if np.any(z < 0.0) or not np.all(np.isfinite(z)):
        raise InputError("depth must be finite and >= 0 (z positive downward from the ground surface)",
                         field=field_name, fix="give depths below the loaded surface, z >= 0 m")
    return z


def _positive(value: float, field_name: str, what: str) -> float:
    value = float(value)
    if not np.isfinite(value) or value <= 0.0:
        raise InputError(f"{what} must be a finite number > 0, got {value!r}", field=field_name,
                         fix=f"give {what} > 0")
    return value


def _finite(value: float, field_name: str, what: str) -> float:
    value = float(value)
    if not np.isfinite(value):
        raise InputError(f"{what} must be finite, got {value!r}", field=field_name)
    return value


# --------------------------------------------------------------------- plane strain


def uniform_strip_stress(x: ArrayLike, z: ArrayLike, width: float, q: float,
                         x_center: float = 0.0) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Vertical and horizontal stress under a uniform strip load (plane strain).

    With ``theta_i = arctan2(x - x_i, z)`` the angles from the vertical through the point
    to the left (``x_1``) and right (``x_2``) edges, and ``alpha = theta_1 - theta_2``::

        sigma_z = q/pi * [alpha + (sin 2 theta_1 - sin 2 theta_2) / 2]
        sigma_x = q/pi * [alpha - (sin 2 theta_1 - sin 2 theta_2) / 2]

    which is the familiar ``q/pi [alpha +- sin(alpha) cos(alpha + 2 delta)]``
    (Carothers 1920, Proc. Royal Society of London A; Poulos & Davis 1974, *Elastic
    Solutions for Soil and Rock Mechanics*, Wiley), obtained by integrating the line-load
    solution of Flamant (1892) over the width.

    Parameters
    ----------
    x, z : array_like
        Point coordinates (m), broadcast together; ``z >= 0``.
    width : float
        Strip width B (m), > 0.
    q : float
        Uniform surface pressure (kPa), compression positive.
    x_center : float
        Centre line of the strip (m).

    Returns
    -------
    sigma_z, sigma_x : ndarray
        Vertical and horizontal stress increase (kPa), shape of ``broadcast(x, z)``.
    """
    width = _positive(width, "width", "strip width")
    z = _depth(z)
    x = np.asarray(x, dtype=float) - float(x_center)
    th1 = np.arctan2(x + 0.5 * width, z)
    th2 = np.arctan2(x - 0.5 * width, z)
    alpha = th1 - th2
    half = 0.5 * (np.sin(2.0 * th1) - np.sin(2.0 * th2))
    return q / np.pi * (alpha + half), q / np.pi * (alpha - half)


def linear_strip_stress(x: ArrayLike, z: ArrayLike, x_start: float, x_end: float, q_start: float,
                        q_end: float) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Stresses under a strip whose pressure varies linearly from ``q_start`` to ``q_end``.

    The load is split into a uniform strip ``q_start`` and a triangular strip rising from
    0 at ``x_start`` to ``q_end - q_start`` at ``x_end``. For the triangular strip (rising
    to ``p`` over width ``L``), with ``u_i = x - x_i``, ``R_i^2 = u_i^2 + z^2`` and
    ``alpha`` as in :func:`uniform_strip_stress`::

        sigma_z = p/pi * [u_1 alpha / L - z u_2 / R_2^2]
        sigma_x = p/pi * [u_1 alpha / L + (2 z / L) ln(R_2 / R_1) + z u_2 / R_2^2]

    (Poulos & Davis 1974, *Elastic Solutions for Soil and Rock Mechanics*, triangular
    strip load; here re-derived by integrating the Flamant (1892) line-load solution,
    ``d sigma_z = (2/pi) cos^2(theta) p(xi) d theta``). Summing such pieces gives any
    embankment cross-section in closed form (Osterberg 1957, Proc. 4th ICSMFE, used the
    same superposition for his embankment chart).

    Parameters
    ----------
    x, z : array_like
        Point coordinates (m); ``z >= 0``.
    x_start, x_end : float
        Edges of the strip (m), ``x_end > x_start``.
    q_start, q_end : float
        Surface pressure at the two edges (kPa).

    Returns
    -------
    sigma_z, sigma_x : ndarray
        Stress increase (kPa), shape of ``broadcast(x, z)``.
    """
    x_start = _finite(x_start, "x_start", "strip edge")
    x_end = _finite(x_end, "x_end", "strip edge")
    length = x_end - x_start
    if length <= 0.0:
        raise InputError(f"strip edges must satisfy x_end > x_start, got {x_start} and {x_end}",
                         field="x_end", fix="order the strip edges left to right")
    z = _depth(z)
    x = np.asarray(x, dtype=float)
    x, z = np.broadcast_arrays(x, z)
    u1 = x - x_start
    u2 = x - x_end
    th1 = np.arctan2(u1, z)
    th2 = np.arctan2(u2, z)
    alpha = th1 - th2
    half = 0.5 * (np.sin(2.0 * th1) - np.sin(2.0 * th2))
    r1sq = u1 * u1 + z * z
    r2sq = u2 * u2 + z * z
    below = z > 0.0
    with np.errstate(divide="ignore", invalid="ignore"):
        # z u2 / R2^2 and z ln(R2/R1) vanish on the surface (their limits as z -> 0).
        t2 = np.where(r2sq > 0.0, z * u2 / np.where(r2sq > 0.0, r2sq, 1.0), 0.0)
        ratio = np.where(below, r2sq / np.where(below, r1sq, 1.0), 1.0)
        log_term = np.where(below, (z / length) * np.log(ratio), 0.0)
    tri_z = (u1 * alpha / length - t2) / np.pi
    tri_x = (u1 * alpha / length + log_term + t2) / np.pi
    dq = q_end - q_start
    sigma_z = q_start * (alpha + half) / np.pi + dq * tri_z
    sigma_x = q_start * (alpha - half) / np.pi + dq * tri_x
    return sigma_z, sigma_x


def profile_load_stress(x: ArrayLike, z: ArrayLike, x_nodes: ArrayLike, q_nodes: ArrayLike
                        ) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Stresses under a piecewise-linear strip pressure (any embankment section, berms).

    The pressure runs linearly between ``(x_nodes[i], q_nodes[i])`` and is zero outside
    ``[x_nodes[0], x_nodes[-1]]``; each segment is a trapezoid done in closed form by
    :func:`linear_strip_stress` (superposition, Osterberg 1957; Poulos & Davis 1974).
    Repeated x values make a vertical step in pressure.

    Parameters
    ----------
    x, z : array_like
        Point coordinates (m); ``z >= 0``.
    x_nodes : array_like, shape (n,)
        Non-decreasing node abscissae (m), ``n >= 2``.
    q_nodes : array_like, shape (n,)
        Surface pressure at the nodes (kPa).

    Returns
    -------
    sigma_z, sigma_x : ndarray
        Stress increase (kPa), shape of ``broadcast(x, z)``.
    """
    xn = np.asarray(x_nodes, dtype=float).ravel()
    qn = np.asarray(q_nodes, dtype=float).ravel()
    if xn.size < 2 or xn.size != qn.size:
        raise InputError(f"x_nodes and q_nodes need the same length >= 2, got {xn.size} and {qn.size}",
                         field="x_nodes", fix="give one surface pressure per node")
    if np.any(np.diff(xn) < 0.0) or not (np.all(np.isfinite(xn)) and np.all(np.isfinite(qn))):
        raise InputError("x_nodes must be finite and non-decreasing", field="x_nodes",
                         fix="order the profile nodes left to right")
    z = _depth(z)
    shape = np.broadcast_shapes(np.shape(x), np.shape(z))
    sz = np.zeros(shape)
    sx = np.zeros(shape)
    for i in range(xn.size - 1):  # loop over a handful of segments only
        if xn[i + 1] > xn[i] and (qn[i] != 0.0 or qn[i + 1] != 0.0):
            dz, dx = linear_strip_stress(x, z, xn[i], xn[i + 1], qn[i], qn[i + 1])
            sz += dz
            sx += dx
    return sz, sx


def embankment_profile(x_center: float, crest_width: float, side_slope: float, height: float,
                       unit_weight: float) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Surface-pressure nodes of a symmetric trapezoidal embankment.

    Parameters
    ----------
    x_center : float
        Centre line (m).
    crest_width : float
        Width of the flat crest (m), >= 0 (0 gives a triangle).
    side_slope : float
        Horizontal run per unit rise of each side slope (e.g. 2 for 2H:1V), >= 0.
    height : float
        Fill height (m), > 0.
    unit_weight : float
        Fill unit weight (kN/m3), > 0.

    Returns
    -------
    x_nodes, q_nodes : ndarray, shape (4,)
        Toe, crest edge, crest edge, toe; pressure ``unit_weight * height`` (kPa) on the crest.
    """
    if crest_width < 0.0 or side_slope < 0.0:
        raise InputError("crest width and side slope must be >= 0", field="crest_width",
                         fix="give crest_width >= 0 m and side_slope (H:V) >= 0")
    height = _positive(height, "height", "embankment height")
    unit_weight = _positive(unit_weight, "unit_weight", "fill unit weight")
    if crest_width == 0.0 and side_slope == 0.0:
        raise InputError("an embankment with no crest and vertical sides has no width",
                         field="crest_width", fix="give crest_width > 0 or side_slope > 0")
    b = 0.5 * crest_width
    run = side_slope * height
    q = unit_weight * height
    xn = x_center + np.array([-b - run, -b, b, b + run])
    return xn, np.array([0.0, q, q, 0.0])


# ----------------------------------------------------------------------- rectangles


def rectangle_corner_influence(m: ArrayLike, n: ArrayLike) -> NDArray[np.float64]:
    """Influence factor for vertical stress under the corner of a uniform rectangle.

    With ``m = B/z``, ``n = L/z`` and ``V = m^2 + n^2 + 1`` (Newmark 1935, *Simplified
    computation of vertical pressures in elastic foundations*, Univ. Illinois Eng. Exp.
    Station Circular 24; tabulated by Fadum 1948, Proc. 2nd ICSMFE)::

        I = 1/(4 pi) [ 2 m n sqrt(V) / (V + m^2 n^2) * (V + 1) / V
                       + arctan( 2 m n sqrt(V) / (V - m^2 n^2) ) ]

    The arctan is taken on the branch in ``[0, pi]``: when ``V < m^2 n^2`` the plain
    arctan would return a negative angle and ``pi`` must be added; ``numpy.arctan2`` with
    the (positive) numerator and the signed denominator does exactly that.

    One side infinite (a corner of a semi-infinite strip of width ``m z``) is the limit
    ``n -> inf`` of the same expression::

        I(m, inf) = 1/(2 pi) [ arctan(m) + m / (1 + m^2) ]

    (0.2046 for m = 1, 0.1374 for m = 0.5, Fadum 1948; half the value under the edge of an
    infinite strip, Carothers 1920); both infinite (the surface, ``z = 0``) gives 1/4.

    Parameters
    ----------
    m, n : array_like
        Side lengths over depth (-), >= 0, broadcast together; ``inf`` allowed.

    Returns
    -------
    ndarray
        ``sigma_z / q`` at depth z below the corner (-).
    """
    m = np.asarray(m, dtype=float)
    n = np.asarray(n, dtype=float)
    m, n = np.broadcast_arrays(m, n)
    inf_m, inf_n = np.isinf(m), np.isinf(n)
    mm = np.where(inf_m, 1.0, m)
    nn = np.where(inf_n, 1.0, n)
    v = mm * mm + nn * nn + 1.0
    mn2 = (mm * nn) ** 2
    num = 2.0 * mm * nn * np.sqrt(v)
    i = (num / (v + mn2) * (v + 1.0) / v + np.arctan2(num, v - mn2)) / (4.0 * np.pi)
    # one side infinite: the finite ratio f of the other side (0 gives 0)
    f = np.where(inf_n, mm, nn)
    strip = (np.arctan(f) + f / (1.0 + f * f)) / (2.0 * np.pi)
    i = np.where(inf_m ^ inf_n, strip, i)
    return np.where(inf_m & inf_n, 0.25, i)


def _signed_corner(a: NDArray[np.float64], b: NDArray[np.float64], z: NDArray[np.float64]
                   ) -> NDArray[np.float64]:
    """Corner integral over [0, a] x [0, b], odd in a and in b (so outside points work)."""
    with np.errstate(divide="ignore"):
        m = np.where(z > 0.0, np.abs(a) / np.where(z > 0.0, z, 1.0), np.inf)
        n = np.where(z > 0.0, np.abs(b) / np.where(z > 0.0, z, 1.0), np.inf)
    m = np.where(a == 0.0, 0.0, m)
    n = np.where(b == 0.0, 0.0, n)
    return np.sign(a) * np.sign(b) * rectangle_corner_influence(m, n)


def rectangle_vertical_stress(x: ArrayLike, y: ArrayLike, z: ArrayLike, length_x: float,
                              width_y: float, q: float, x_center: float = 0.0,
                              y_center: float = 0.0) -> NDArray[np.float64]:
    """Vertical stress at any point (inside or outside the plan) under a uniform rectangle.

    Four corner rectangles are superposed, each with the signed corner integral
    ``F(a, b) = sign(a) sign(b) I(|a|/z, |b|/z)`` (``I`` from
    :func:`rectangle_corner_influence`), so that for a point outside the plan the
    fictitious areas are subtracted automatically (Newmark 1935; Poulos & Davis 1974)::

        sigma_z = q [F(x2-x, y2-y) - F(x1-x, y2-y) - F(x2-x, y1-y) + F(x1-x, y1-y)]

    Parameters
    ----------
    x, y, z : array_like
        Point coordinates (m), broadcast together; ``z >= 0``.
    length_x, width_y : float
        Plan dimensions along x and y (m), > 0.
    q : float
        Uniform pressure (kPa).
    x_center, y_center : float
        Plan centre (m).

    Returns
    -------
    ndarray
        Vertical stress increase (kPa), shape of ``broadcast(x, y, z)``.
    """
    length_x = _positive(length_x, "length_x", "rectangle length")
    width_y = _positive(width_y, "width_y", "rectangle width")
    z = _depth(z)
    x, y, z = np.broadcast_arrays(np.asarray(x, dtype=float), np.asarray(y, dtype=float), z)
    x1 = x_center - 0.5 * length_x - x
    x2 = x_center + 0.5 * length_x - x
    y1 = y_center - 0.5 * width_y - y
    y2 = y_center + 0.5 * width_y - y
    f = (_signed_corner(x2, y2, z) - _signed_corner(x1, y2, z) - _signed_corner(x2, y1, z)
         + _signed_corner(x1, y1, z))
    return q * f


# -------------------------------------------------------------------------- circles


def circle_centre_stress(z: ArrayLike, radius: float, q: float, poisson_ratio: float = 0.5
                         ) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Vertical and horizontal stress on the axis of a uniform circular load.

    Integration of the Boussinesq (1885, *Application des potentiels a l'etude de
    l'equilibre et du mouvement des solides elastiques*) point-load solution over the disc
    (Poulos & Davis 1974, *Elastic Solutions for Soil and Rock Mechanics*; Timoshenko &
    Goodier 1951, *Theory of Elasticity*)::

        sigma_z = q [1 - z^3 / (a^2 + z^2)^(3/2)]
        sigma_r = q/2 [(1 + 2 nu) - 2 (1 + nu) z / sqrt(a^2 + z^2) + z^3 / (a^2 + z^2)^(3/2)]

    Parameters
    ----------
    z : array_like
        Depth (m), >= 0.
    radius : float
        Load radius a (m), > 0.
    q : float
        Uniform pressure (kPa).
    poisson_ratio : float
        Poisson's ratio of the half-space (horizontal stress only), in [0, 0.5].

    Returns
    -------
    sigma_z, sigma_r : ndarray
        Vertical and horizontal (radial = hoop on the axis) stress increase (kPa).
    """
    radius = _positive(radius, "radius", "circle radius")
    if not 0.0 <= poisson_ratio <= 0.5:
        raise InputError(f"Poisson's ratio must lie in [0, 0.5], got {poisson_ratio}",
                         field="poisson_ratio")
    z = _depth(z)
    c = z / np.sqrt(radius * radius + z * z)
    sz = q * (1.0 - c**3)
    sr = 0.5 * q * ((1.0 + 2.0 * poisson_ratio) - 2.0 * (1.0 + poisson_ratio) * c + c**3)
    return sz, sr


def circle_vertical_stress(x: ArrayLike, y: ArrayLike, z: ArrayLike, radius: float, q: float,
                           x_center: float = 0.0, y_center: float = 0.0,
                           tolerance: float = 1e-6) -> NDArray[np.float64]:
    """Vertical stress at any point under a uniform circular load.

    The Boussinesq (1885) point-load stress is integrated over the disc in polar
    coordinates centred on the point. The radial integral is exact,
    ``int_0^R 3 z^3 s / (2 pi (s^2 + z^2)^(5/2)) ds = (1 - z^3/(R^2 + z^2)^(3/2)) / (2 pi)``,
    leaving one smooth integral over the ray angle, done adaptively for all points at once
    with :func:`scipy.integrate.quad_vec` (error below ``tolerance * q``). For points
    outside the disc the angle is substituted ``sin(phi) = (a/r) sin(t)`` to remove the
    square-root behaviour at the tangent rays. On the axis the closed form
    (:func:`circle_centre_stress`) is used; on the surface the limits ``q``, ``q/2`` and 0.

    Parameters
    ----------
    x, y, z : array_like
        Point coordinates (m), broadcast together; ``z >= 0``.
    radius : float
        Load radius a (m), > 0.
    q : float
        Uniform pressure (kPa).
    x_center, y_center : float
        Centre of the load (m).
    tolerance : float
        Absolute tolerance of the angle integral, as a fraction of ``q``.

    Returns
    -------
    ndarray
        Vertical stress increase (kPa), shape of ``broadcast(x, y, z)``.
    """
    a = _positive(radius, "radius", "circle radius")
    z = _depth(z)
    x, y, z = np.broadcast_arrays(np.asarray(x, dtype=float), np.asarray(y, dtype=float), z)
    shape = z.shape
    r = np.hypot(x - x_center, y - y_center).ravel()
    zz = z.ravel()
    out = np.empty(r.shape)
    surface = zz == 0.0
    out[surface] = np.where(r[surface] < a, 1.0, np.where(r[surface] == a, 0.5, 0.0))
    axis = (~surface) & (r == 0.0)
    out[axis] = 1.0 - (zz[axis] / np.sqrt(a * a + zz[axis] ** 2)) ** 3
    rest = ~(surface | axis)
    if np.any(rest):
        rr = r[rest]
        zr = zz[rest]
        zr2 = zr * zr
        inside = rr <= a
        ratio = np.minimum(a / rr, 1.0)

        def cube(rad: NDArray[np.float64]) -> NDArray[np.float64]:
            return (zr2 / (rad * rad + zr2)) ** 1.5

        def integrand(s: float) -> NDArray[np.float64]:
            # inside: phi = pi s, ray length R = r cos(phi) + sqrt(a^2 - r^2 sin^2(phi))
            phi = np.pi * s
            root = np.sqrt(np.maximum(a * a - (rr * np.sin(phi)) ** 2, 0.0))
            g_in = 1.0 - cube(rr * np.cos(phi) + root)
            # outside: t = pi s / 2, sin(phi) = (a/r) sin(t); the ray crosses the disc
            # between R1 and R2 = r cos(phi) -+ a cos(t); d phi = (a/r) cos t / cos phi dt
            t = 0.5 * np.pi * s
            cphi = np.sqrt(np.maximum(1.0 - (ratio * np.sin(t)) ** 2, 1e-300))
            h = a * np.cos(t)
            g_out = 0.5 * (cube(rr * cphi - h) - cube(rr * cphi + h)) * ratio * np.cos(t) / cphi
            return np.where(inside, g_in, g_out)

        val, _err = integrate.quad_vec(integrand, 0.0, 1.0, epsabs=tolerance, epsrel=0.0,
                                       norm="max", limit=2000)
        out[rest] = val
    return q * out.reshape(shape)


# ------------------------------------------------------------------------ 2:1 spread


def spread_2to1_strip(z: ArrayLike, width: float, q: float) -> NDArray[np.float64]:
    """Average vertical stress under a strip by the 2:1 spread, ``q B / (B + z)`` (kPa).

    Quick check only: the load spreads at 2 vertical to 1 horizontal on each side (common
    practice; described in textbooks such as Holtz & Kovacs 1981, *An Introduction to
    Geotechnical Engineering*). It gives the mean stress over the widened base, not the
    centre-line value.
    """
    width = _positive(width, "width", "strip width")
    return q * width / (width + _depth(z))


def spread_2to1_rectangle(z: ArrayLike, length: float, width: float, q: float) -> NDArray[np.float64]:
    """Average vertical stress under a rectangle by the 2:1 spread, ``q B L / ((B+z)(L+z))`` (kPa).

    Quick check only (common practice; e.g. Holtz & Kovacs 1981).
    """
    length = _positive(length, "length", "rectangle length")
    width = _positive(width, "width", "rectangle width")
    z = _depth(z)
    return q * length * width / ((length + z) * (width + z))


def spread_2to1_circle(z: ArrayLike, diameter: float, q: float) -> NDArray[np.float64]:
    """Average vertical stress under a circle by the 2:1 spread, ``q D^2 / (D + z)^2`` (kPa).

    Quick check only (common practice; e.g. Holtz & Kovacs 1981).
    """
    diameter = _positive(diameter, "diameter", "circle diameter")
    return q * diameter**2 / (diameter + _depth(z)) ** 2
