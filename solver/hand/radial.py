"""Radial consolidation towards vertical drains: the unit cell, smear, well resistance.

The hand method for soft clay with prefabricated vertical drains, and the closed forms the
finite elements are validated against:

- the unit cell of a drain pattern (Barron 1948): equivalent diameter ``d_e = 1.05 s``
  (triangular) or ``1.128 s`` (square), i.e. a circle of the area each drain serves;
- a band drain's equivalent diameter ``d_w = 2 (a + b) / pi`` (Hansbo 1979);
- equal strain with smear and well resistance (Barron 1948; Hansbo 1981):
  ``U_h = 1 - exp(-8 T_h / mu)``, ``T_h = c_h t / d_e**2``. ``mu`` is integrated exactly here
  for the cell (:func:`cell_factor`); for an ideal drain it equals Barron's
  ``F(n) = n**2/(n**2 - 1) ln n - (3 n**2 - 1)/(4 n**2)``, and for ``n >> 1`` it tends to
  Hansbo's ``ln(n/s) + (k_h/k_s) ln s - 3/4 + pi z (2 l - z) k_h / q_w``;
- free strain, ideal drain (Barron 1948): the Bessel-function series (:func:`free_strain_degree`);
- vertical and radial flow together (Carrillo 1942): ``1 - U = (1 - U_v)(1 - U_h)``;
- the plane-strain drain line with the same average degree as the cell it stands for (the
  matching of Hird, Pyrah and Russell 1992, with smear and well resistance as in Indraratna and
  Redana 1997): :func:`plane_strain_match`, found by the same exact integration in the
  plane-strain cell;
- an equivalent vertical permeability for coarse models (Chai, Shen, Miura and Bergado 2001):
  :func:`equivalent_vertical_permeability`;
- the drain spacing that reaches a target degree by a given time: :func:`spacing_for_degree`.

Units: m, days, permeability m/day, discharge capacity m3/day, c_h m2/day.
"""

from __future__ import annotations

from dataclasses import dataclass
from math import log, pi, sqrt

import numpy as np
from numpy.typing import ArrayLike, NDArray
from scipy import optimize, special

from solver.errors import InputError

from .rate import degree_of_consolidation

__all__ = [
    "CELL_DIAMETER_FACTOR",
    "band_drain_diameter",
    "cell_diameter",
    "barron_ideal_factor",
    "DrainCell",
    "cell_factor",
    "radial_degree",
    "radial_time_for_degree",
    "free_strain_degree",
    "combined_degree",
    "PlaneStrainMatch",
    "plane_strain_match",
    "plane_strain_factor",
    "equivalent_vertical_permeability",
    "spacing_for_degree",
]

CELL_DIAMETER_FACTOR = {"triangular": sqrt(2.0 * sqrt(3.0) / pi), "square": sqrt(4.0 / pi)}
"""d_e / s for each pattern: the circle with the area one drain serves (Barron 1948 rounds
these to 1.05 and 1.128)."""


def band_drain_diameter(width: float, thickness: float) -> float:
    """Equivalent diameter (m) of a band drain ``a x b``: ``2 (a + b) / pi`` (Hansbo 1979)."""
    if not (width > 0 and thickness > 0):
        raise InputError("a band drain needs a positive width and thickness", field="drains.width",
                         fix="give width and thickness in m, e.g. width = 0.1, thickness = 0.004")
    return 2.0 * (width + thickness) / pi


def cell_diameter(spacing: float, pattern: str) -> float:
    """Diameter (m) of the unit cell of a drain at ``spacing`` in a triangular or square grid."""
    try:
        return CELL_DIAMETER_FACTOR[pattern] * spacing
    except KeyError:
        raise InputError(f"unknown drain pattern {pattern!r}", field="drains.pattern",
                         fix='use "triangular" or "square"') from None


def barron_ideal_factor(n: float) -> float:
    """Barron's (1948) equal-strain factor F(n) of an ideal drain, n = d_e / d_w > 1."""
    n2 = n * n
    return n2 / (n2 - 1.0) * log(n) - (3.0 * n2 - 1.0) / (4.0 * n2)


@dataclass(frozen=True)
class DrainCell:
    """One drain and the soil it drains, in the axisymmetric unit cell.

    Parameters
    ----------
    cell_diameter : d_e (m).
    drain_diameter : d_w (m).
    smear_ratio : d_s / d_w (1: no smear).
    smear_permeability_ratio : k_h / k_s in the smear zone (1: no smear).
    permeability_h : k_h of the undisturbed soil (m/day); needed with well resistance.
    discharge_capacity : q_w (m3/day); ``None`` for an ideal drain (no well resistance).
    drain_length : l (m), the length drained through one end: the whole length when the drain
        discharges at the top only, half of it when it discharges at both ends.
    """

    cell_diameter: float
    drain_diameter: float
    smear_ratio: float = 1.0
    smear_permeability_ratio: float = 1.0
    permeability_h: float | None = None
    discharge_capacity: float | None = None
    drain_length: float | None = None

    def __post_init__(self):
        if not (self.drain_diameter > 0 and self.cell_diameter > self.drain_diameter):
            raise InputError("the drain spacing must give a cell wider than the drain",
                             field="drains.spacing",
                             fix="make the spacing larger than the drain's equivalent diameter")
        if self.smear_ratio < 1 or self.smear_ratio * self.drain_diameter > self.cell_diameter:
            raise InputError("the smear zone must lie between the drain and the edge of its cell",
                             field="drains.smear_ratio",
                             fix="give 1 <= smear_ratio <= cell diameter / drain diameter")
        if not self.smear_permeability_ratio > 0:
            raise InputError("the smear permeability ratio k_h / k_s must be positive",
                             field="drains.smear_permeability_ratio", fix="e.g. 2 to 5, or 1 for none")
        if self.discharge_capacity is not None:
            if not (self.discharge_capacity > 0 and (self.permeability_h or 0) > 0
                    and (self.drain_length or 0) > 0):
                raise InputError("well resistance needs a positive discharge capacity, the soil's "
                                 "horizontal permeability and the drain length",
                                 field="drains.discharge_capacity",
                                 fix="give discharge_capacity in m3/day (or with units)")

    @property
    def n(self) -> float:
        return self.cell_diameter / self.drain_diameter


def _mean_over_ring(r0: float, r1: float, re: float, rw: float, weight: float) -> float:
    """Integral over r0 < r < r1 of ``weight * f0(r) * 2 r`` with
    ``f0(r) = re**2 ln(r/rw) - (r**2 - rw**2)/2`` (the equal-strain head shape, Barron 1948)."""
    def antiderivative(r):
        # d/dr: 2 r f0(r) = 2 re^2 r ln(r/rw) - r^3 + rw^2 r
        return re * re * (r * r * log(r / rw) - r * r / 2.0) - r ** 4 / 4.0 + rw * rw * r * r / 2.0
    return weight * (antiderivative(r1) - antiderivative(r0))


def cell_factor(cell: DrainCell, z: float | None = None) -> float:
    """The equal-strain factor mu of a unit cell: ``U_h = 1 - exp(-8 T_h / mu)``.

    Found exactly from the equal-strain head distribution (Barron 1948; Hansbo 1981): under a
    uniform vertical strain rate the head gradient is ``(gamma_w / 2 k(r)) eps_dot (r_e**2/r - r)``;
    integrated out from the drain (with ``k = k_s`` inside the smear zone) and averaged over the
    cell's area it gives ``u_bar = gamma_w eps_dot r_e**2 mu / (2 k_h)``. Well resistance adds
    ``pi z (2 l - z) k_h / q_w`` at depth ``z`` below the drain's discharging end (Hansbo 1981);
    with ``z = None`` its mean over the drained length, ``2 pi l**2 k_h / (3 q_w)``.
    """
    re, rw = cell.cell_diameter / 2.0, cell.drain_diameter / 2.0
    rs = cell.smear_ratio * rw
    kappa = cell.smear_permeability_ratio

    def f0(r):
        return re * re * log(r / rw) - (r * r - rw * rw) / 2.0

    # f(r) = kappa f0(r) inside the smear zone; kappa f0(rs) + f0(r) - f0(rs) outside.
    integral = _mean_over_ring(rw, rs, re, rw, kappa)
    integral += _mean_over_ring(rs, re, re, rw, 1.0) + (kappa - 1.0) * f0(rs) * (re * re - rs * rs)
    mu = integral / (re * re - rw * rw) / (re * re)
    if cell.discharge_capacity is not None:
        length = cell.drain_length
        well = (2.0 * length * length / 3.0 if z is None
                else float(np.clip(z, 0.0, length)) * (2.0 * length - float(np.clip(z, 0.0, length))))
        mu += pi * well * cell.permeability_h / cell.discharge_capacity
    return mu


def radial_degree(t: ArrayLike, ch: float, cell: DrainCell, z: float | None = None) -> NDArray[np.float64]:
    """Average degree of radial consolidation U_h at times t (days), equal strain.

    ``U_h = 1 - exp(-8 T_h / mu)``, ``T_h = c_h t / d_e**2`` (Barron 1948; Hansbo 1981).
    """
    t = np.asarray(t, dtype=float)
    th = ch * np.maximum(t, 0.0) / cell.cell_diameter ** 2
    return -np.expm1(-8.0 * th / cell_factor(cell, z))


def radial_time_for_degree(degree: float, ch: float, cell: DrainCell, z: float | None = None) -> float:
    """Time (days) to reach an average degree of radial consolidation, equal strain."""
    if not 0.0 <= degree < 1.0:
        raise InputError("a degree of consolidation lies between 0 and 1", field="degree",
                         fix="give e.g. 0.9 for 90 %")
    return -float(np.log1p(-degree)) * cell_factor(cell, z) * cell.cell_diameter ** 2 / (8.0 * ch)


def free_strain_degree(t: ArrayLike, ch: float, cell_diameter: float, drain_diameter: float,
                       n_terms: int = 60) -> NDArray[np.float64]:
    """Average degree of radial consolidation, free strain, ideal drain (Barron 1948).

    Solves ``du/dt = c_h (u_rr + u_r / r)`` on ``r_w < r < r_e`` with ``u(r_w) = 0``,
    ``u_r(r_e) = 0`` and a uniform initial excess pore pressure, by its eigenfunctions
    ``V(a r) = J0(a r) Y0(a r_w) - Y0(a r) J0(a r_w)`` with ``V'(a r_e) = 0``; the coefficients
    follow from the orthogonality of V with weight r. The first neglected term decays as
    ``exp(-a_N**2 c_h t)``.
    """
    re, rw = cell_diameter / 2.0, drain_diameter / 2.0
    alphas = _free_strain_roots(re, rw, n_terms)
    t = np.asarray(t, dtype=float)
    area = (re * re - rw * rw) / 2.0                 # int r dr over the cell
    u_bar = np.zeros_like(t)
    for a in alphas:
        def V(r):
            return special.j0(a * r) * special.y0(a * rw) - special.y0(a * r) * special.j0(a * rw)

        def W(r):                                    # antiderivative of r V(a r): r V1 / a
            return r * (special.j1(a * r) * special.y0(a * rw)
                        - special.y1(a * r) * special.j0(a * rw)) / a
        int_rv = W(re) - W(rw)                       # int r V dr
        # int r V^2 dr over (rw, re) with V(rw) = 0, V'(re) = 0:
        # = re^2 V(re)^2 / 2 - rw^2 V'(rw)^2 / (2 a^2)  (Lommel's integral)
        dv_rw = -a * (special.j1(a * rw) * special.y0(a * rw) - special.y1(a * rw) * special.j0(a * rw))
        norm = re * re * V(re) ** 2 / 2.0 - rw * rw * dv_rw ** 2 / (2.0 * a * a)
        coef = int_rv / norm
        u_bar += coef * int_rv / area * np.exp(-a * a * ch * np.maximum(t, 0.0))
    return 1.0 - u_bar


def _free_strain_roots(re: float, rw: float, n: int) -> NDArray[np.float64]:
    """The first n roots a of J1(a re) Y0(a rw) - Y1(a re) J0(a rw) = 0."""
    def g(a):
        return special.j1(a * re) * special.y0(a * rw) - special.y1(a * re) * special.j0(a * rw)
    # Roots are spaced about pi / (re - rw) apart: bracket sign changes on a fine grid.
    step = pi / (re - rw) / 20.0
    roots, a0, g0 = [], step * 1e-3, g(step * 1e-3)
    while len(roots) < n:
        a1 = a0 + step
        g1 = g(a1)
        if np.sign(g1) != np.sign(g0):
            roots.append(optimize.brentq(g, a0, a1, xtol=1e-14, rtol=1e-14))
        a0, g0 = a1, g1
    return np.array(roots)


def combined_degree(vertical: ArrayLike, radial: ArrayLike) -> NDArray[np.float64]:
    """Average degree under vertical and radial flow: ``1 - (1 - U_v)(1 - U_h)`` (Carrillo 1942)."""
    return 1.0 - (1.0 - np.asarray(vertical, dtype=float)) * (1.0 - np.asarray(radial, dtype=float))


# ------------------------------------------------------------ the plane-strain drain line


def plane_strain_factor(half_width: float, drain_half_width: float, smear_half_width: float,
                        smear_permeability_ratio: float) -> float:
    """Equal-strain factor of a plane-strain cell, ``U = 1 - exp(-c_hp t / (mu_p B**2))``.

    The cell is ``2 B`` wide with a drain of half-width ``b_w`` at its centre and smear out to
    ``b_s``. Under a uniform strain rate the head gradient is ``(gamma_w / k(x)) eps_dot (B - x)``;
    integrated out from the drain face and averaged over ``b_w < x < B`` it gives
    ``u_bar = gamma_w eps_dot B**2 mu_p / k_hp``. For ``b_w -> 0`` and no smear ``mu_p = 1/3``.
    """
    B, bw, bs, kappa = half_width, drain_half_width, smear_half_width, smear_permeability_ratio

    def g0(x):                                       # int_bw^x (B - xi) dxi
        return B * (x - bw) - (x * x - bw * bw) / 2.0

    def int_g0(x0, x1):                              # int_x0^x1 g0(x) dx
        def G(x):
            return B * (x * x / 2.0 - bw * x) - (x ** 3 / 6.0 - bw * bw * x / 2.0)
        return G(x1) - G(x0)
    integral = kappa * int_g0(bw, bs) + int_g0(bs, B) + (kappa - 1.0) * g0(bs) * (B - bs)
    return integral / (B - bw) / (B * B)


@dataclass(frozen=True)
class PlaneStrainMatch:
    """A plane-strain drain line that consolidates like the axisymmetric cell it stands for."""

    half_width: float             # B (m): half the spacing of the drain lines
    drain_half_width: float       # b_w (m)
    smear_half_width: float       # b_s (m)
    permeability_ratio: float     # k_hp / k_h: the plane-strain horizontal permeability factor
    smear_permeability_ratio: float   # k_hp / k_sp, kept equal to the cell's k_h / k_s
    discharge_capacity: float | None  # q_wp (m2/day per m run) of the drain line, or None


def plane_strain_match(cell: DrainCell, half_width: float | None = None,
                       drain_half_width: float | None = None) -> PlaneStrainMatch:
    """Match a plane-strain drain line to an axisymmetric cell (Hird, Pyrah and Russell 1992).

    The line spacing ``2 B`` is the cell's diameter unless given (Hird et al.'s geometric choice
    ``B = r_e``); the drain half-width is the drain radius unless given, and the smear zone
    keeps its proportion to the drain (``b_s / b_w = d_s / d_w``) and its permeability ratio.
    The horizontal permeability is scaled so that the average degree is the same at all times:
    ``k_hp / (mu_p B**2) = 8 k_h / (mu d_e**2)``, both factors integrated exactly (this reduces to
    ``k_hp / k_h = (2 B**2 / 3 r_e**2) / (ln n - 3/4)`` for an ideal drain with ``n >> 1``,
    Indraratna and Redana 1997). The well resistance is matched depth by depth:
    ``q_wp = 2 B q_w / (pi r_e**2)`` (Hird et al. 1992 give ``2 q_w / (pi B)`` for ``B = r_e``).
    """
    re, rw = cell.cell_diameter / 2.0, cell.drain_diameter / 2.0
    B = re if half_width is None else float(half_width)
    bw = rw if drain_half_width is None else float(drain_half_width)
    bs = min(cell.smear_ratio * bw, B)
    ideal = DrainCell(cell.cell_diameter, cell.drain_diameter, cell.smear_ratio,
                      cell.smear_permeability_ratio)
    mu_ax = cell_factor(ideal)
    mu_p = plane_strain_factor(B, bw, bs, cell.smear_permeability_ratio)
    ratio = 8.0 * mu_p * B * B / (mu_ax * cell.cell_diameter ** 2)
    q_wp = None
    if cell.discharge_capacity is not None:
        q_wp = 2.0 * B * cell.discharge_capacity / (pi * re * re)
    return PlaneStrainMatch(B, bw, bs, ratio, cell.smear_permeability_ratio, q_wp)


def equivalent_vertical_permeability(kv: float, kh: float, cell: DrainCell, drain_length: float) -> float:
    """Vertical permeability that stands for vertical drains in a coarse model (m/day).

    ``k_ve = (1 + 2.5 l**2 k_h / (mu d_e**2 k_v)) k_v`` with ``l`` the drainage length of the
    drains and ``mu`` the cell factor with the mean well resistance (Chai, Shen, Miura and
    Bergado 2001; the factor 2.5 from memory).
    """
    mu = cell_factor(cell)
    return (1.0 + 2.5 * drain_length ** 2 * kh / (mu * cell.cell_diameter ** 2 * kv)) * kv


def spacing_for_degree(target: float, time: float, ch: float, cv: float, layer_drainage_length: float,
                       pattern: str, drain_diameter: float, smear_ratio: float = 1.0,
                       smear_permeability_ratio: float = 1.0, kh: float | None = None,
                       discharge_capacity: float | None = None, drain_length: float | None = None,
                       vertical_degree=None) -> float:
    """The largest drain spacing (m) that reaches an average degree ``target`` by ``time`` (days).

    Vertical and radial flow combine by Carrillo (1942); ``vertical_degree(t, cv, H_dr)`` gives
    U_v (Terzaghi's, :func:`solver.hand.rate.degree_of_consolidation`, by default). Raises InputError when no spacing above the drain diameter
    reaches the target.
    """
    if vertical_degree is None:
        vertical_degree = degree_of_consolidation
    uv = float(vertical_degree(time, cv, layer_drainage_length)) if cv > 0 else 0.0
    if uv >= target:
        raise InputError("vertical drainage alone reaches the target degree by then: no drains "
                         "are needed", field="--by", fix="ask for a higher degree or an earlier time")
    need_h = 1.0 - (1.0 - target) / (1.0 - uv)

    def shortfall(s):
        cell = DrainCell(cell_diameter(s, pattern), drain_diameter, smear_ratio, smear_permeability_ratio,
                         kh, discharge_capacity, drain_length)
        return float(radial_degree(time, ch, cell)) - need_h
    s_min = drain_diameter * max(smear_ratio, 1.0) / CELL_DIAMETER_FACTOR[pattern] * 1.0001
    if shortfall(s_min) < 0:
        raise InputError("no drain spacing reaches the target degree by then",
                         field="--by", fix="allow more time, a lower degree, or a drain with more capacity")
    s_max = s_min
    while shortfall(s_max) > 0:
        s_max *= 2.0
        if s_max > 1e3:
            raise InputError("drains at any spacing up to 1 km reach the target degree by then",
                             field="--by", fix="check the times and the coefficients of consolidation")
    return optimize.brentq(shortfall, s_min, s_max, xtol=1e-6)
