"""The hand estimate of a whole model: what the engineer would work out beside the FE run.

:func:`hand_estimate` reads the same :class:`solver.model.Model` the finite-element run reads
and, for every point probe, puts together the pure functions of this package:

1. **Stress increase** under the probe from every load the stages apply, at its factor at the
   end of the last stage (elastic half-space, superposition; :mod:`solver.hand.stress`):

   - the embankment as the full symmetric section (a half model is the right half of it),
     lift by lift: the pressure of lift n is the fill unit weight times the part of the fill
     height between the base and top of that lift, a piecewise-linear strip pressure done in
     closed form (:func:`~solver.hand.stress.profile_load_stress`; Osterberg 1957 style
     superposition). In axisymmetry the embankment is a circular mound, taken as a stack of
     uniform discs (:data:`STAIRCASE_STEPS` per embankment height);
   - strip footings (plane strain) as uniform strips of ``load`` (or ``force / width``) acting
     at the footing base, ``embedment`` below the ground; the stress below the base is the
     half-space stress with the base as its surface, nothing above it (common practice). The
     pressure is the gross pressure, as in the FE run (the soil dug out for the footing is not
     counted as an unloading there either);
   - the circular footing (axisymmetry) as a uniform disc on or off its axis
     (:func:`~solver.hand.stress.circle_vertical_stress`);
   - surface loads as strips (plane strain; mirrored about x = 0 in a half model) or discs and
     rings (axisymmetry);
   - a load that covers the whole width of the section is a one-dimensional load: the sides
     of the section are on rollers, planes of symmetry, so the load is in effect infinitely
     wide: the stress increase equals the pressure at every depth and there is no immediate
     settlement (no lateral deformation).

   The 2:1 spread (:func:`~solver.hand.stress.spread_2to1_strip` and kin) is given beside it as
   a quick check: each strip (or disc) spreads at 2 vertical to 1 horizontal, and counts at
   the probe where the spread base reaches it; the embankment is spread as its stack of
   strips.

2. **Settlement per layer** below the probe in sublayers (:mod:`solver.hand.settlement`):
   Cc, Cr, e0 and sigma'_p (given directly, as OCR, or as a margin) from
   ``materials.<name>.oedometer``, or m_v; for Modified Cam Clay ``Cc = lambda ln 10``,
   ``Cr = kappa ln 10``, ``e0 = void_ratio`` (:mod:`solver.hand.parameters`); where only
   elastic parameters exist, ``m_v = 1 / E_oed`` and ``c_v = k / (m_v gamma_w)``, and a note
   says so. A layer with none of these raises :class:`~solver.errors.InputError` naming the
   layer and the missing field. The initial effective stress comes from the water table and
   the unit weights (``unit_weight`` above the water table, ``saturated_unit_weight`` below,
   as in :mod:`solver.initial`), via :func:`~solver.hand.settlement.vertical_effective_stress`.

   A probe on the ground surface (or in the embankment fill above it) gives the settlement of
   the ground at its x; a probe inside the ground gives the settlement of the soil *below its
   depth* (which is what a point at that depth moves down by). The fill's own compression is
   not included.

3. **Immediate (undrained elastic) settlement** of strips and discs on the layered ground down
   to the base of the model (a rigid base): the influence functions of
   :mod:`solver.hand.settlement` summed layer by layer, each layer with its own undrained
   modulus (Steinbrenner 1934, *Tafeln zur Setzungsberechnung*, Die Strasse 1: the half-space
   strain integrated between the layer's faces). The undrained modulus is
   ``E_u = 1.5 E' / (1 + nu')``, i.e. the same shear modulus with ``nu_u = 0.5`` (common
   practice). Free-draining layers (below) have no undrained stage: their settlement is all in
   the consolidation part. The embankment is a stack of uniform strips for this. Under a rigid
   footing (a probe at its base, inside its width) the immediate settlement is the mean of the
   flexible profile across the width (strip) or ``pi/4`` of the centre value (disc), as in
   :mod:`solver.hand.settlement`, and the stress increase of that footing is taken at the
   characteristic point, 0.37 B from the centre of a strip and 0.845 R from that of a circle
   (Grasshoff 1955, *Setzungsberechnungen starrer Fundamente mit Hilfe des kennzeichnenden
   Punktes*, Der Bauingenieur 30; values from memory), where the flexible settlement equals
   the rigid one.

4. **Secondary compression** with C_alpha from the end of primary consolidation ``t_p`` (the
   time the soil below the probe reaches U = 95 %, :data:`END_OF_PRIMARY_DEGREE`; common
   practice, see :func:`~solver.hand.settlement.secondary_compression_settlement`) to the end
   of the last stage, times counted from the start of the first stage.

5. **Time rate**: the stages become a staged loading history (a lift's weight ramps on over
   its stage, a load stage ramps the named loads to their new factor, a consolidate stage
   waits), applied to the layered one-dimensional finite-difference consolidation
   (:func:`~solver.hand.rate.probe_consolidation`) with each sublayer's secant m_v and each
   layer's c_v (or k), drained at the top if ``drainage.top`` and at the base if
   ``drainage.base``. A layer is free-draining (u = 0 in it) when its vertical permeability
   is at least :data:`FREE_DRAINING_RATIO` times the smallest vertical permeability of the
   layers and it reaches a drained boundary (the top, the base, or drained sides) directly or
   through other such layers (common practice: a sand layer against a drain acts as a drain);
   an enclosed sand lens stays in the column with its own k and m_v. A stage with
   ``until_degree`` runs its full duration here (the FE run may end it earlier).
   From the solution: settlement(t), t50 and t90 (times to 50 % and 90 % of the final
   consolidation settlement of the soil below the probe), and the largest excess pore
   pressure at the probe's depth (probes inside the ground; NaN on a drained surface).

6. **Differential settlement** and angular distortion between consecutive probes on the
   ground surface (or on a footing base, or in the fill above the ground) sorted by x, checked against Bjerrum (1963) limits
   (:mod:`solver.hand.differential`).

The final settlement is ``immediate + consolidation (U = 100 %) + secondary to the end of
the last stage``. The settlement history is ``immediate(t) + consolidation(t) +
secondary(t)``; the immediate part follows the load factors.

Units: kN, m, kPa, kN/m3, days; depth z positive downward from the original ground surface.
This module reads :mod:`solver.model` and :mod:`solver.initial` and never the FE code.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Sequence

import numpy as np
from numpy.typing import NDArray

from solver import CAUTION
from solver.errors import InputError
from solver.initial import LayerColumn, at_rest_coefficient
from solver.model import Material, Model, base_elevation, domain_extent, embankment_profile

from . import differential, parameters, rate, settlement, stress

__all__ = [
    "FREE_DRAINING_RATIO",
    "END_OF_PRIMARY_DEGREE",
    "STAIRCASE_STEPS",
    "ProbeEstimate",
    "DifferentialEstimate",
    "HandEstimate",
    "hand_estimate",
    "disc_displacement",
]

FREE_DRAINING_RATIO = 1000.0
"""A layer whose vertical permeability is at least this many times the smallest one of the
layers, and which reaches a drained boundary, is free-draining in the time rate."""

END_OF_PRIMARY_DEGREE = 0.95
"""Degree of consolidation taken as the end of primary consolidation (t95; common practice)."""

STAIRCASE_STEPS = 40
"""Uniform strips (or discs) a sloping embankment is cut into for the immediate settlement,
the 2:1 spread and (axisymmetry) the stress, per full embankment height."""

RIGID_STRIP_CHARACTERISTIC = 0.37
"""Characteristic point of a rigid strip: this fraction of B from its centre (Grasshoff 1955;
from memory)."""

RIGID_CIRCLE_CHARACTERISTIC = 0.845
"""Characteristic point of a rigid circle: this fraction of R from its centre (Grasshoff 1955;
from memory)."""

_TOL = 1e-9
_LN10 = math.log(10.0)


# ============================================================================ results


@dataclass
class ProbeEstimate:
    """The hand estimate at one point probe.

    Scalars: ``probe_depth_m`` (depth of the probe below the original ground; 0 on the
    surface or in the fill), ``final_settlement_m`` = immediate + consolidation + secondary,
    ``immediate_settlement_m``, ``consolidation_settlement_m`` (primary, U = 100 %),
    ``secondary_settlement_m`` (to the end of the last stage), ``t50_days``, ``t90_days``,
    ``end_of_primary_days`` (t95), ``max_excess_pore_pressure_kPa`` (NaN on a drained surface).

    Profile arrays, one value per sublayer below the probe (n_sub,): ``depth_m`` (mid-depth
    below the original ground), ``stress_increase_kPa`` (half-space, used),
    ``stress_increase_2to1_kPa`` (quick check), ``initial_effective_stress_kPa``,
    ``preconsolidation_pressure_kPa`` (NaN for m_v layers), ``sublayer_settlement_m``,
    ``sublayer_layer`` (names).

    History arrays (nt,): ``time_days``, ``settlement_m`` (immediate + consolidation +
    secondary), ``consolidation_degree`` (U of the soil below the probe),
    ``excess_pore_pressure_kPa`` (at the probe depth).

    ``where``: "ground surface", "in the fill", "footing base" or "inside the ground".
    """
    name: str
    x_m: float
    y_m: float
    probe_depth_m: float
    final_settlement_m: float
    immediate_settlement_m: float
    consolidation_settlement_m: float
    secondary_settlement_m: float
    t50_days: float
    t90_days: float
    end_of_primary_days: float
    max_excess_pore_pressure_kPa: float
    depth_m: NDArray[np.float64]
    stress_increase_kPa: NDArray[np.float64]
    stress_increase_2to1_kPa: NDArray[np.float64]
    initial_effective_stress_kPa: NDArray[np.float64]
    preconsolidation_pressure_kPa: NDArray[np.float64]
    sublayer_settlement_m: NDArray[np.float64]
    sublayer_layer: list[str]
    layer_settlement_m: dict[str, float]
    time_days: NDArray[np.float64]
    settlement_m: NDArray[np.float64]
    consolidation_degree: NDArray[np.float64]
    excess_pore_pressure_kPa: NDArray[np.float64]
    notes: list[str] = field(default_factory=list)
    where: str = "ground surface"

    @property
    def on_surface(self) -> bool:
        """True for a probe on the ground surface, in the fill above it or on a footing base
        (the probes the differential settlement is taken between)."""
        return self.where != "inside the ground"

    def settlement_at(self, times) -> NDArray[np.float64]:
        """Settlement (m) at ``times`` (days), linear between the history's times (held after)."""
        return np.interp(np.asarray(times, dtype=float), self.time_days, self.settlement_m)

    def stress_at(self, depth: float) -> tuple[float, float]:
        """(half-space, 2:1) stress increase (kPa) at ``depth`` (m), linear between sublayers."""
        if self.depth_m.size == 0:
            return float("nan"), float("nan")
        return (float(np.interp(depth, self.depth_m, self.stress_increase_kPa)),
                float(np.interp(depth, self.depth_m, self.stress_increase_2to1_kPa)))


@dataclass
class DifferentialEstimate:
    """Differential settlement of two neighbouring surface probes through time.

    ``differential_settlement_m`` = settlement of ``probe_a`` minus that of ``probe_b``;
    ``angular_distortion`` = its absolute value over ``distance_m``; ``checks`` against the
    Bjerrum (1963) limits of :data:`solver.hand.differential.DEFAULT_DISTORTION_LIMITS`.
    """
    probe_a: str
    probe_b: str
    distance_m: float
    time_days: NDArray[np.float64]
    differential_settlement_m: NDArray[np.float64]
    angular_distortion: NDArray[np.float64]
    checks: list[differential.LimitCheck]

    @property
    def final_differential_settlement_m(self) -> float:
        return float(self.differential_settlement_m[-1])

    @property
    def max_angular_distortion(self) -> float:
        return float(np.max(self.angular_distortion))


@dataclass
class HandEstimate:
    """The hand estimate of a model: one :class:`ProbeEstimate` per point probe (model order),
    the differential settlement of neighbouring surface probes, and notes on the model as a
    whole (parameter conversions, assumptions)."""
    title: str
    analysis: str
    end_days: float
    probes: dict[str, ProbeEstimate]
    differential: list[DifferentialEstimate]
    notes: list[str]
    caution: str = CAUTION

    def probe(self, name: str) -> ProbeEstimate:
        if name not in self.probes:
            raise InputError(f"no probe named {name!r}; the hand estimate has {list(self.probes)}",
                             field="probes")
        return self.probes[name]


# ============================================================================ loads


@dataclass(frozen=True)
class _Part:
    """One elementary surface load: a uniform strip, a uniform disc, a piecewise-linear strip
    profile, or a one-dimensional (infinitely wide) pressure; acting ``level`` m below the
    original ground. ``q`` in kPa (negative: subtracted, e.g. the hole of a ring)."""
    shape: str                  # "strip", "disc", "profile", "uniform"
    q: float = 0.0
    width: float = 0.0          # strip width or disc diameter, m
    center: float = 0.0         # strip centre, m (discs are centred on the axis)
    level: float = 0.0
    x_nodes: tuple[float, ...] = ()
    q_nodes: tuple[float, ...] = ()


@dataclass
class _Load:
    """A load the stages can switch: stress parts (exact) and spread parts (uniform strips or
    discs, for the 2:1 check and the immediate settlement)."""
    name: str
    what: str
    stress_parts: list[_Part]
    spread_parts: list[_Part]
    rigid_width: float = 0.0    # > 0: a rigid footing of this width (diameter), at level
    level: float = 0.0
    center: float = 0.0
    axisymmetric: bool = False


def _fill_height_nodes(points: list[tuple[float, float]], low: float, high: float
                       ) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """x (>= 0) and the part of the fill height between ``low`` and ``high`` at x, with nodes
    at every outline vertex and at the crossings of the two levels (piecewise linear)."""
    xs, ys = [], []
    for (xa, ya), (xb, yb) in zip(points, points[1:]):
        xs.append(xa)
        ys.append(ya)
        for lev in (low, high):
            if (ya - lev) * (yb - lev) < 0.0:
                xs.append(xa + (lev - ya) * (xb - xa) / (yb - ya))
                ys.append(lev)
    xs.append(points[-1][0])
    ys.append(points[-1][1])
    x = np.array(xs)
    y = np.array(ys)
    order = np.argsort(x, kind="stable")
    x, y = x[order], y[order]
    return x, np.clip(y, low, high) - low


def _half_width_at(points: list[tuple[float, float]], level: float) -> float:
    """Largest x at which the fill surface is at or above ``level`` (outline from the centre)."""
    best = 0.0
    for (xa, ya), (xb, yb) in zip(points, points[1:]):
        if ya >= level >= yb and ya > yb:
            best = max(best, xa + (level - ya) * (xb - xa) / (yb - ya))
        elif ya >= level and yb >= level:
            best = max(best, xb)
    return best


def _model_loads(model: Model, x_span: tuple[float, float] | None, notes: list[str]
                 ) -> dict[str, _Load]:
    """Every switchable load of the model, at factor 1, by the name the stages use."""
    sec = model.section
    axi = model.analysis == "axisymmetric"
    half = sec.half or axi
    loads: dict[str, _Load] = {}

    def covers_all(x0: float, x1: float) -> bool:
        if x_span is None:
            return False
        tol = 1e-6 * max(1.0, x_span[1] - x_span[0])
        lo = 0.0 if half else x_span[0]
        return x0 <= lo + tol and x1 >= x_span[1] - tol

    # ---------------------------------------------------------------- embankment lifts
    if sec.kind == "embankment" and sec.embankment is not None:
        emb = sec.embankment
        if emb.material not in model.materials:
            raise InputError(f"unknown fill material {emb.material!r}", field="section.embankment.material",
                             source=model.source, fix=f"use one of {sorted(model.materials)}.")
        gamma = model.materials[emb.material].unit_weight
        pts = embankment_profile(emb)
        levels = np.concatenate([[0.0], np.cumsum(emb.lifts)])
        levels[-1] = emb.height
        for n in range(len(emb.lifts)):
            lo, hi = float(levels[n]), float(levels[n + 1])
            xh, dh = _fill_height_nodes(pts, lo, hi)
            n_steps = max(2, int(round(STAIRCASE_STEPS * (hi - lo) / emb.height)))
            lev = lo + (np.arange(n_steps) + 0.5) * (hi - lo) / n_steps
            dq = gamma * (hi - lo) / n_steps
            widths = [2.0 * _half_width_at(pts, float(v)) for v in lev]
            if axi:
                discs = [_Part("disc", dq, w) for w in widths if w > 0.0]
                stress_parts, spread = discs, discs
            else:
                xn = np.concatenate([-xh[::-1], xh])
                qn = gamma * np.concatenate([dh[::-1], dh])
                stress_parts = [_Part("profile", x_nodes=tuple(xn), q_nodes=tuple(qn))]
                spread = [_Part("strip", dq, w) for w in widths if w > 0.0]
            loads[f"lift_{n + 1}"] = _Load(f"lift_{n + 1}", f"embankment lift {n + 1}",
                                           stress_parts, spread, axisymmetric=axi)
        if axi:
            notes.append("axisymmetric embankment: a circular mound, taken as a stack of "
                         f"{STAIRCASE_STEPS} uniform discs for the stress increase.")

    # ---------------------------------------------------------------- footings
    for f in sec.footings if sec.kind == "footings" else []:
        area = math.pi * (f.width / 2) ** 2 if axi else f.width
        q = f.load if f.load is not None else f.force / area
        if axi:
            part = _Part("disc", q, f.width, level=f.embedment)
        else:
            part = _Part("strip", q, f.width, f.center, level=f.embedment)
        loads[f.name] = _Load(f.name, f"footing {f.name!r}", [part], [part],
                              rigid_width=f.width if f.rigid else 0.0, level=f.embedment,
                              center=0.0 if axi else f.center, axisymmetric=axi)
        if f.embedment > 0:
            notes.append(f"footing {f.name!r}: its pressure {q:.4g} kPa acts in full at the base, "
                         f"{f.embedment:g} m deep (gross pressure, as in the FE run).")

    # ---------------------------------------------------------------- surface loads
    for ld in model.loads:
        x0, x1 = sorted((float(ld.x_left), float(ld.x_right)))
        q = float(ld.pressure)
        if covers_all(x0, x1):
            parts = [_Part("uniform", q)]
            notes.append(f"load {ld.name!r} covers the whole width of the section (sides on "
                         "rollers): a one-dimensional load, stress increase = pressure at every "
                         "depth, no immediate settlement.")
        elif axi:
            parts = [_Part("disc", q, 2.0 * x1)]
            if x0 > _TOL:
                parts.append(_Part("disc", -q, 2.0 * x0))
        elif half:
            x0 = max(x0, 0.0)
            if x0 <= _TOL:
                parts = [_Part("strip", q, 2.0 * x1, 0.0)]
            else:
                parts = [_Part("strip", q, x1 - x0, 0.5 * (x0 + x1)),
                         _Part("strip", q, x1 - x0, -0.5 * (x0 + x1))]
        else:
            parts = [_Part("strip", q, x1 - x0, 0.5 * (x0 + x1))]
        level = 0.0
        if sec.kind == "embankment" and sec.embankment is not None:
            half_crest = sec.embankment.crest_width / 2
            if x1 <= half_crest + _TOL and x0 >= -half_crest - _TOL:
                notes.append(f"load {ld.name!r} on the embankment crest: spread from the "
                             "original ground surface (the fill is not a separate layer here).")
        loads[ld.name] = _Load(ld.name, f"load {ld.name!r}", parts, parts, level=level,
                               axisymmetric=axi)
    return loads


# --------------------------------------------------------------------- part responses


def _part_stress(p: _Part, x: float, z: NDArray[np.float64], axi: bool) -> NDArray[np.float64]:
    """Vertical stress increase (kPa) of one part at depths z below the original ground."""
    zz = z - p.level
    below = zz >= -_TOL
    zc = np.maximum(zz, 0.0)
    if p.shape == "uniform":
        out = np.full(z.shape, p.q)
    elif p.shape == "strip":
        out = stress.uniform_strip_stress(x, zc, p.width, p.q, p.center)[0]
    elif p.shape == "profile":
        out = stress.profile_load_stress(x, zc, p.x_nodes, p.q_nodes)[0]
    else:
        out = stress.circle_vertical_stress(abs(x), 0.0, zc, 0.5 * p.width, p.q)
    return np.where(below, out, 0.0)


def _part_spread(p: _Part, x: float, z: NDArray[np.float64]) -> NDArray[np.float64]:
    """2:1 spread (kPa) of one uniform part at the probe: the mean stress where the widened
    base reaches the probe's x, else 0 (common practice)."""
    zz = z - p.level
    below = zz >= -_TOL
    zc = np.maximum(zz, 0.0)
    if p.shape == "uniform":
        return np.where(below, p.q, 0.0)
    if p.shape == "strip":
        val = stress.spread_2to1_strip(zc, p.width, p.q)
        reach = np.abs(x - p.center) <= 0.5 * (p.width + zc) + _TOL
    elif p.shape == "disc":
        val = stress.spread_2to1_circle(zc, p.width, p.q)
        reach = abs(x) <= 0.5 * (p.width + zc) + _TOL
    else:
        raise AssertionError(p.shape)
    return np.where(below & reach, val, 0.0)


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


# ============================================================================ layers


@dataclass
class _LayerData:
    """Hand-method view of one model layer (thickness filled in per column)."""
    model_index: int
    name: str
    material: Material
    kwargs: dict              # settlement.Layer keyword arguments except thickness
    permeability_v: float
    free_draining: bool = False


def _oed_path(m: Material, key: str) -> str:
    return f"materials.{m.name}.oedometer.{key}"


def _vertical_k(m: Material) -> float:
    return float(m.permeability_y if m.permeability_y is not None else m.permeability_x)


def _elastic_youngs(m: Material) -> float | None:
    if m.youngs_modulus is not None:
        return float(m.youngs_modulus)
    if m.constrained_modulus is not None:
        nu = m.poisson_ratio
        return float(m.constrained_modulus) * (1 + nu) * (1 - 2 * nu) / (1 - nu)
    return None


def _layer_data(model: Model, j: int, notes: list[str]) -> _LayerData:
    """Compressibility, permeability and unit weights of layer j for the hand method."""
    ly = model.layers[j]
    src = model.source
    if ly.material not in model.materials:
        raise InputError(f"layer {ly.name!r}: unknown material {ly.material!r}",
                         field=f"layers[{j + 1}].material", source=src,
                         fix=f"use one of {sorted(model.materials)}.")
    m = model.materials[ly.material]
    o = m.oedometer
    who = f"layer {ly.name!r} (material {m.name!r})"
    gamma_w = model.water.unit_weight

    def fail(key: str, message: str, fix: str, path: str | None = None) -> None:
        raise InputError(f"{who}: {message} (the FE run does not need it; the hand method does)",
                         field=path or _oed_path(m, key), source=src, fix=fix)

    sat = m.saturated_unit_weight if m.saturated_unit_weight is not None else m.unit_weight
    kw: dict = {"name": ly.name, "unit_weight": float(sat), "unit_weight_above_water": float(m.unit_weight)}
    e0 = o.void_ratio if o.void_ratio is not None else m.void_ratio
    precon = {"preconsolidation_pressure": o.preconsolidation_pressure,
              "overconsolidation_ratio": o.overconsolidation_ratio,
              "preconsolidation_margin": o.preconsolidation_margin}
    given = [k for k, v in precon.items() if v is not None]
    mcc = m.model == "modified cam clay"
    k_v = _vertical_k(m)

    def preconsolidation() -> None:
        if not given:
            fail("overconsolidation_ratio", "the preconsolidation pressure is missing",
                 f"give one of overconsolidation_ratio (1.0 for a normally consolidated layer), "
                 f"preconsolidation_margin or preconsolidation_pressure under "
                 f"[materials.{m.name}.oedometer].")
        if len(given) > 1:
            fail(given[1], f"the preconsolidation pressure is given twice ({', '.join(given)})",
                 "give one of overconsolidation_ratio, preconsolidation_margin, "
                 "preconsolidation_pressure.")
        kw["preconsolidation_pressure"] = o.preconsolidation_pressure
        kw["ocr"] = o.overconsolidation_ratio
        kw["pre_overburden_pressure"] = o.preconsolidation_margin

    if o.compression_index is not None:
        if o.volume_compressibility is not None:
            fail("volume_compressibility", "both compression_index and volume_compressibility are given",
                 "give Cc, Cr, e0 and the preconsolidation, or m_v, not both.")
        if o.recompression_index is None:
            fail("recompression_index", "recompression_index (Cr) is missing beside compression_index",
                 f"add recompression_index = ... (typically Cc/10 to Cc/5) under "
                 f"[materials.{m.name}.oedometer].")
        if e0 is None:
            fail("void_ratio", "void_ratio (e0) is missing beside compression_index",
                 f"add void_ratio = ... under [materials.{m.name}.oedometer].")
        kw.update(compression_index=float(o.compression_index),
                  recompression_index=float(o.recompression_index), void_ratio=float(e0))
        preconsolidation()
    elif o.volume_compressibility is not None:
        kw["mv"] = float(o.volume_compressibility)
        if e0 is not None:
            kw["void_ratio"] = float(e0)
    elif mcc:
        if m.lambda_ is None or m.kappa is None:
            fail("compression_index", "Modified Cam Clay needs lambda and kappa (or oedometer "
                 "compression_index)", "give lambda and kappa, or the oedometer parameters.",
                 path=f"materials.{m.name}.{'lambda' if m.lambda_ is None else 'kappa'}")
        if e0 is None:
            fail("void_ratio", "void_ratio is missing", f"give void_ratio for material {m.name!r}.",
                 path=f"materials.{m.name}.void_ratio")
        cc = float(parameters.cc_from_lambda(m.lambda_))
        cr = float(parameters.cr_from_kappa(m.kappa))
        kw.update(compression_index=cc, recompression_index=cr, void_ratio=float(e0))
        preconsolidation()
        notes.append(f"{who}: Cc = lambda ln 10 = {cc:.4g}, Cr = kappa ln 10 = {cr:.4g}, "
                     f"e0 = {e0:g} from the Modified Cam Clay parameters (Schofield & Wroth 1968).")
    else:
        partial = [k for k in ("recompression_index", *precon) if getattr(o, k) is not None]
        if partial:
            fail("compression_index", f"the oedometer data are incomplete: {', '.join(partial)} "
                 "given without compression_index", f"add compression_index (Cc) under "
                 f"[materials.{m.name}.oedometer], or give volume_compressibility instead.")
        e = _elastic_youngs(m)
        if e is None:
            fail("compression_index", "no compressibility for the hand method: no oedometer "
                 "parameters and no elastic stiffness",
                 f"give compression_index, recompression_index, void_ratio and "
                 f"overconsolidation_ratio (or volume_compressibility) under "
                 f"[materials.{m.name}.oedometer], or youngs_modulus.")
        mv = float(parameters.mv_from_elastic(e, m.poisson_ratio))
        kw["mv"] = mv
        if e0 is not None:
            kw["void_ratio"] = float(e0)
        given_e = (f"youngs_modulus = {m.youngs_modulus:g} kPa" if m.youngs_modulus is not None
                   else f"constrained_modulus = {m.constrained_modulus:g} kPa")
        cv_txt = ("" if o.consolidation_coefficient is not None else
                  f", c_v = k/(m_v gamma_w) = {k_v / (mv * gamma_w):.4g} m2/day (Terzaghi 1925)")
        notes.append(f"{who}: no oedometer compressibility given; m_v = 1/E_oed = {mv:.4g} 1/kPa "
                     f"from {given_e}, poisson_ratio = {m.poisson_ratio:g} (E_oed = E (1 - nu)/"
                     f"((1 + nu)(1 - 2 nu)), Timoshenko & Goodier 1951){cv_txt}.")
    if o.consolidation_coefficient is not None:
        kw["cv"] = float(o.consolidation_coefficient)
    else:
        kw["permeability"] = k_v
    if o.secondary_compression_index is not None:
        if "void_ratio" not in kw:
            fail("void_ratio", "void_ratio (e0) is needed with secondary_compression_index",
                 f"add void_ratio under [materials.{m.name}.oedometer].")
        kw["secondary_compression_index"] = float(o.secondary_compression_index)
    # check once, naming the model's fields (settlement.Layer names its own)
    try:
        settlement.Layer(thickness=1.0, **kw)
    except InputError as exc:
        raise InputError(f"{who}: {exc.message}", field=f"materials.{m.name}.oedometer",
                         source=src, fix=exc.fix) from None
    return _LayerData(j, ly.name, m, kw, k_v)


def _mark_free_draining(model: Model, data: list[_LayerData], notes: list[str]) -> None:
    """Apply the free-draining rule (see :data:`FREE_DRAINING_RATIO`) to the model's layers."""
    k = np.array([d.permeability_v for d in data])
    if k.size < 2:
        return
    candidate = k >= FREE_DRAINING_RATIO * k.min()
    dr = model.drainage
    n = len(data)
    free = np.zeros(n, dtype=bool)
    if dr.sides:
        free |= candidate
    if dr.top:
        for i in range(n):
            if not candidate[i]:
                break
            free[i] = True
    if dr.base:
        for i in range(n - 1, -1, -1):
            if not candidate[i]:
                break
            free[i] = True
    for d, f in zip(data, free):
        d.free_draining = bool(f)
        if f:
            notes.append(f"layer {d.name!r}: free-draining in the time rate (vertical permeability "
                         f"{d.permeability_v:.3g} m/day, at least {FREE_DRAINING_RATIO:g} times the "
                         f"smallest of the layers, {k.min():.3g} m/day, and open to a drained "
                         "boundary).")


# ============================================================================ column


@dataclass
class _Column:
    """The layers under one x, split at the probe depths: hand layers top to bottom."""
    x: float
    layers: list[settlement.Layer]
    data: list[_LayerData]          # per hand layer
    tops: NDArray[np.float64]       # (n + 1,) depths of the layer faces, m
    free: NDArray[np.bool_]         # (n,)
    eu: NDArray[np.float64]         # (n,) undrained modulus, kPa (NaN: unknown)


def _layer_faces(model: Model, x: float, n_layers: int) -> NDArray[np.float64]:
    """Depths (m) of the top of each model layer and of the base of the model at x."""
    ext = domain_extent(model)
    if ext is None:
        faces = np.concatenate([[0.0], np.cumsum([ly.thickness for ly in model.layers])])
    else:
        col = LayerColumn(ext[0], ext[1], np.array([ly.thickness for ly in model.layers], float),
                          np.array([ly.thickness if ly.thickness_right is None else ly.thickness_right
                                    for ly in model.layers], float), [])
        faces = -col.tops(np.array([float(x)]))[0]
        base = base_elevation(model, x)
        if base is not None:
            faces[-1] = -base
    faces = np.minimum(faces, faces[-1])
    return faces


def _build_column(model: Model, data: list[_LayerData], x: float, split: Sequence[float]
                  ) -> _Column:
    faces = _layer_faces(model, x, len(data))
    layers, datas, tops = [], [], [0.0]
    cuts = sorted(float(d) for d in split)
    for j, d in enumerate(data):
        a, b = float(faces[j]), float(faces[j + 1])
        if b - a <= _TOL:
            continue
        edges = [a] + [c for c in cuts if a + _TOL < c < b - _TOL] + [b]
        for lo, hi in zip(edges, edges[1:]):
            layers.append(settlement.Layer(thickness=hi - lo, **d.kwargs))
            datas.append(d)
            tops.append(hi)
    if not layers:
        raise InputError("the hand method needs layers with thickness under the probes",
                         field="layers", source=model.source, fix="give [[layers]] with thickness.")
    tops_a = np.array(tops)
    gw = model.water.unit_weight
    mid = 0.5 * (tops_a[:-1] + tops_a[1:])
    s0 = settlement.vertical_effective_stress(mid, layers, model.water.table_depth, gw)
    eu = np.full(len(layers), np.nan)
    for i, d in enumerate(datas):
        m = d.material
        e = _elastic_youngs(m)
        if e is None and m.model == "modified cam clay" and m.kappa and m.void_ratio:
            # E' from the swelling line at the mid-depth mean effective stress (Schofield &
            # Wroth 1968: K = (1 + e0) p' / kappa), E' = 3 K (1 - 2 nu)
            p0 = max(float(s0[i]), 1e-6) * (1.0 + 2.0 * at_rest_coefficient(m)) / 3.0
            e = 3.0 * (1.0 + m.void_ratio) * p0 / m.kappa * (1.0 - 2.0 * m.poisson_ratio)
        if e is not None:
            eu[i] = 1.5 * e / (1.0 + m.poisson_ratio)
    free = np.array([d.free_draining for d in datas])
    return _Column(float(x), layers, datas, tops_a, free, eu)


# ------------------------------------------------------------------ immediate settlement


def _immediate(load: _Load, col: _Column, x: float, depth: float, axi: bool) -> float:
    """Immediate settlement (m) of the soil below ``depth`` at x under one load at factor 1."""
    rigid = _on_rigid_base(load, x, depth)
    total = 0.0
    for p in load.spread_parts:
        if p.shape == "uniform":
            continue
        for i in range(len(col.layers)):
            a_, b_ = col.tops[i], col.tops[i + 1]
            if a_ < depth - 1e-9 or col.free[i] or not np.isfinite(col.eu[i]):
                continue
            a, b = max(a_ - p.level, 0.0), b_ - p.level
            if b <= 0.0:
                continue
            if p.shape == "strip":
                xs = (p.center + 0.5 * p.width * np.polynomial.legendre.leggauss(32)[0]
                      if rigid else np.array([x]))
                wts = (0.5 * np.polynomial.legendre.leggauss(32)[1] if rigid else np.ones(1))

                def f(h: float) -> NDArray[np.float64]:
                    if h <= 0.0:
                        return np.zeros(xs.shape)
                    return settlement.strip_immediate_settlement(xs, p.q, p.width, h, col.eu[i], 0.5,
                                                                 p.center)
                total += float(np.sum(wts * (f(b) - f(a))))
            else:
                r = 0.0 if rigid else abs(x)
                zz = np.array([a, b])
                if r <= 1e-9:
                    w = settlement.circle_axis_displacement(zz, p.q, 0.5 * p.width, col.eu[i], 0.5)
                else:
                    w = disc_displacement(r, zz, 0.5 * p.width, p.q, col.eu[i], 0.5)
                total += float(w[0] - w[1]) * (math.pi / 4.0 if rigid else 1.0)
    return total


# ============================================================================ stages


def _schedule(model: Model, loads: dict[str, _Load], notes: list[str]
              ) -> tuple[list[tuple[float, float, str, float]], dict[str, float], float]:
    """(pieces (start, duration, load, change of factor), final factors, end of the stages)."""
    t = 0.0
    factor = {n: 0.0 for n in loads}
    pieces = []
    for i, st in enumerate(model.stages):
        dur = float(st.duration)
        if st.kind == "lift":
            name = f"lift_{st.lift}"
            if name not in loads:
                raise InputError(f"stage {st.name!r} places lift {st.lift}, which the embankment "
                                 "does not have", field=f"stages[{i + 1}].lift", source=model.source,
                                 fix="place lifts 1, 2, ... of section.embankment.lifts.")
            pieces.append((t, dur, name, 1.0 - factor[name]))
            factor[name] = 1.0
        elif st.kind == "load":
            for j, name in enumerate(st.loads):
                if name not in loads:
                    raise InputError(f"stage {st.name!r} names load {name!r}, never defined",
                                     field=f"stages[{i + 1}].loads[{j + 1}]", source=model.source,
                                     fix=f"use one of {sorted(n for n in loads if not n.startswith('lift_'))}.")
                change = float(st.factor) - factor[name]
                if change != 0.0:
                    pieces.append((t, dur, name, change))
                factor[name] = float(st.factor)
        elif st.until_degree is not None:
            notes.append(f"stage {st.name!r} runs its full {dur:g} days here; the FE run ends it "
                         f"once the average degree of consolidation reaches {st.until_degree:.0%}.")
        t += dur
    return pieces, factor, t


def _ramp(t: NDArray[np.float64], start: float, duration: float) -> NDArray[np.float64]:
    """Fraction of a piece applied at times t (a sudden piece counts from its start on)."""
    if duration <= 0.0:
        return (t >= start).astype(float)
    return np.clip((t - start) / duration, 0.0, 1.0)


def _default_times(model: Model, end: float, knots: Sequence[float]) -> NDArray[np.float64]:
    extra = [t for t in model.output.times if 0.0 <= t <= end]
    if end > 0.0:
        grid = np.geomspace(end * 1e-4, end, 241)
        lin = np.linspace(0.0, end, 121)
    else:
        grid = lin = np.zeros(1)
    return np.unique(np.concatenate([[0.0], grid, lin, extra, list(knots), [end]]))


# ============================================================================ the estimate


def hand_estimate(model: Model, times=None, max_sublayer_thickness: float | None = None
                  ) -> HandEstimate:
    """The hand estimate of every point probe of ``model`` (see the module docstring).

    Parameters
    ----------
    model : Model
        The model as the FE run reads it.
    times : array_like, optional
        Times (days, from the start of the first stage) of the settlement histories; default:
        0, a logarithmic and a linear grid to the end of the last stage, the output times and
        every stage start and end.
    max_sublayer_thickness : float, optional
        Sublayer thickness (m); default ``min(0.5, B/4)`` (at least 0.02 m), B the narrowest
        loaded width.

    Returns
    -------
    HandEstimate

    Raises
    ------
    InputError
        A layer without the parameters the hand method needs (naming the field), no layers.
    """
    if not model.layers:
        raise InputError("the hand method needs [[layers]] (the ground as horizontal or sloping "
                         "layers)", field="layers", source=model.source,
                         fix="give [[layers]] with name, material and thickness.")
    notes: list[str] = []
    axi = model.analysis == "axisymmetric"
    data = [_layer_data(model, j, notes) for j in range(len(model.layers))]
    _mark_free_draining(model, data, notes)
    ext = domain_extent(model)
    loads = _model_loads(model, None if ext is None else (ext[0], ext[1]), notes)
    pieces, final_factor, end = _schedule(model, loads, notes)
    active = [n for n in loads if final_factor.get(n, 0.0) != 0.0 or any(p[2] == n for p in pieces)]
    knots = sorted({p[0] for p in pieces} | {p[0] + p[1] for p in pieces})
    t_out = (_default_times(model, end, knots) if times is None
             else np.unique(np.asarray(times, dtype=float).ravel()))
    if t_out.size == 0 or np.any(t_out < 0.0):
        raise InputError("times must be >= 0 days", field="times")
    # each load's footprint width (a lift: its base; a ring: its outer diameter)
    widths = [max(p.width for p in loads[n].spread_parts) for n in active
              if any(p.shape in ("strip", "disc") for p in loads[n].spread_parts)]
    if max_sublayer_thickness is None:
        max_sub = max(min(0.5, min(widths) / 4.0) if widths else 0.5, 0.02)
    else:
        max_sub = float(max_sublayer_thickness)

    footing_names = {f.name for f in model.section.footings} if model.section.kind == "footings" else set()
    # probes grouped by x: one column (split at every probe depth there) and one FD run
    probe_depths = {}
    for pr in model.probes:
        probe_depths[pr.name] = max(0.0, -float(pr.y))
    groups: dict[float, list] = {}
    for pr in model.probes:
        key = round(float(pr.x), 9)
        groups.setdefault(key, []).append(pr)

    results: dict[str, ProbeEstimate] = {}
    for prs in groups.values():
        x = float(prs[0].x)
        depths = sorted({probe_depths[p.name] for p in prs})
        col = _build_column(model, data, x, depths)
        total_depth = float(col.tops[-1])
        subs = settlement.split_layers(col.layers, max_sub)
        zm = subs.mid
        unit = {n: sum(_part_stress(p, x, zm, axi) for p in loads[n].stress_parts) for n in active}
        unit_spread = {n: sum(_part_spread(p, x, zm) for p in loads[n].spread_parts) for n in active}
        final_2to1 = sum((final_factor[n] * unit_spread[n] for n in active), np.zeros_like(zm))

        depth_of = {pr.name: min(probe_depths[pr.name], total_depth) for pr in prs}
        rigid_at = {pr.name: [n for n in active if _on_rigid_base(loads[n], x, depth_of[pr.name])]
                    for pr in prs}
        shared_depths = sorted({depth_of[pr.name] for pr in prs if not rigid_at[pr.name]})
        shared = (_column_solution(model, col, max_sub, zm, unit, active, pieces, final_factor,
                                   t_out, shared_depths) if shared_depths else None)
        for pr in prs:
            d = depth_of[pr.name]
            pnotes: list[str] = []
            if pr.y > _TOL:
                pnotes.append(f"the probe is {pr.y:g} m above the original ground (in the fill); "
                              "the estimate is the settlement of the original ground below it, "
                              "without the fill's own compression.")
            if rigid_at[pr.name]:
                # a rigid footing at whose base the probe sits: its stress at the characteristic point
                unit_p = dict(unit)
                for n in rigid_at[pr.name]:
                    ld = loads[n]
                    frac = RIGID_CIRCLE_CHARACTERISTIC if axi else RIGID_STRIP_CHARACTERISTIC
                    off = frac * (0.5 if axi else 1.0) * ld.rigid_width
                    unit_p[n] = sum(_part_stress(p, ld.center + off, zm, axi) for p in ld.stress_parts)
                    pnotes.append(f"rigid footing {n!r}: its stress increase taken at the "
                                  f"characteristic point {off:.3g} m from its centre (Grasshoff "
                                  "1955; from memory), its immediate settlement as the rigid "
                                  "value.")
                sol, j = _column_solution(model, col, max_sub, zm, unit_p, active, pieces,
                                          final_factor, t_out, [d]), 0
            else:
                sol, j = shared, shared_depths.index(d)
            est = _probe_estimate(model, pr, d, col, sol, j, final_2to1, loads, active, pieces,
                                  final_factor, x, t_out, end, pnotes, axi)
            on_base = any(_within_footing(loads[n], x, d)
                          for n in active if n in footing_names)
            est.where = ("in the fill" if pr.y > _TOL else "ground surface" if d <= _TOL else
                         "footing base" if on_base else "inside the ground")
            results[pr.name] = est
    ordered = {pr.name: results[pr.name] for pr in model.probes}
    diffs = _differential(ordered, model, notes)
    return HandEstimate(model.title, model.analysis, end, ordered, diffs, notes)


FD_GROWTH = 1.05
"""Ratio of successive time steps of the hand method's consolidation column (its U(t) stays
within 1e-4 of Terzaghi's; see the tests)."""


@dataclass
class _Solution:
    """Primary settlement and time rate of one column under one stress field."""
    ps: settlement.ProbeSettlement
    res: rate.LayeredConsolidation | None
    depths: list[float]


def _column_solution(model, col, max_sub, zm, unit, active, pieces, final_factor, t_out,
                     depths) -> _Solution:
    """Primary settlement of the whole column and its staged time rate (the FD needs all of
    it; the settlement of the soil below each depth is read off afterwards)."""
    gw = model.water.unit_weight
    stress_final = sum((final_factor[n] * unit[n] for n in active), np.zeros_like(zm))
    ps = settlement.settlement_under_probe(col.layers, lambda z: stress_final, model.water.table_depth,
                                           max_sublayer_thickness=max_sub, gamma_w=gw)
    if ps.z_mid_m.size != zm.size or not np.allclose(ps.z_mid_m, zm):
        raise AssertionError("sublayers differ")       # the same split_layers call
    history = [rate.LoadPiece(t0, dur, change * unit[name]) for (t0, dur, name, change) in pieces]
    res = None
    if history and np.sum(ps.settlement_m) > 0.0 and np.any(ps.settlement_m > 0.0):
        try:
            res = rate.probe_consolidation(col.layers, ps, t_out, drained_top=bool(model.drainage.top),
                                           drained_bottom=bool(model.drainage.base), gamma_w=gw,
                                           load_history=history, free_draining_layers=col.free,
                                           depths=depths, growth=FD_GROWTH)
        except InputError as exc:
            if "no consolidation settlement" not in exc.message:
                raise
    return _Solution(ps, res, list(depths))


def _probe_estimate(model, pr, d, col, sol, j, final_2to1, loads, active, pieces, final_factor,
                    x, t_out, end, pnotes, axi) -> ProbeEstimate:
    """Everything for one probe at depth d; ``sol`` is its column's solution, ``j`` the index
    of d in ``sol.depths``."""
    ps, res = sol.ps, sol.res
    below = ps.z_top_m >= d - 1e-9
    cons_final = float(np.sum(ps.settlement_m[below]))
    first_layer = int(ps.layer_index[int(np.argmax(below))]) if below.any() else len(col.layers)
    n_t = t_out.size
    degree = np.zeros(n_t)
    u_probe = np.zeros(n_t)
    t50 = t90 = t95 = float("nan")
    u_max = float("nan")
    drained_top = bool(model.drainage.top)
    if res is not None and cons_final > 0.0:
        degree = np.nan_to_num(res.average_degree_below[:, j])
        t50 = res.time_for_degree(0.5, below=j)
        t90 = res.time_for_degree(0.9, below=j)
        t95 = res.time_for_degree(END_OF_PRIMARY_DEGREE, below=j)
        zn = res.node_depth_m
        u_probe = np.array([np.interp(d, zn, row) for row in res.excess_pore_pressure_kPa])
        if d > 1e-9 or not drained_top:
            u_max = float(np.max(res.history_excess_pore_pressure_kPa[:, j]))
    elif cons_final != 0.0:
        pnotes.append("no consolidation time rate: the load gives no net consolidation in the column.")
    cons_t = degree * cons_final

    # immediate settlement: each load at factor 1, then the history of factors
    imm_unit = {n: _immediate(loads[n], col, x, d, axi) for n in active}
    imm_final = float(sum(final_factor[n] * imm_unit[n] for n in active))
    imm_t = np.zeros(n_t)
    for (t0, dur, name, change) in pieces:
        imm_t += change * imm_unit[name] * _ramp(t_out, t0, dur)

    # secondary compression below d from t95 to the end of the stages, in the sublayers loaded
    # past their preconsolidation pressure (m_v layers: wherever the load increases)
    layers_below = col.layers[first_layer:]
    sec_t = np.zeros(n_t)
    sec_final = 0.0
    final_eff = ps.sigma_v0_kPa + ps.delta_sigma_kPa
    loaded = np.where(np.isnan(ps.sigma_p_kPa), ps.delta_sigma_kPa > 0.0, final_eff > ps.sigma_p_kPa)
    creeping = below & loaded & np.array([col.layers[i].secondary_compression_index is not None
                                          for i in ps.layer_index])
    if creeping.any() and np.isfinite(t95) and t95 > 0.0:
        sub_ps = settlement.ProbeSettlement(ps.z_top_m[creeping], ps.z_bottom_m[creeping],
                                            ps.layer_index[creeping] - first_layer,
                                            ps.sigma_v0_kPa[creeping], ps.delta_sigma_kPa[creeping],
                                            ps.sigma_p_kPa[creeping], ps.settlement_m[creeping])
        sec_t = settlement.secondary_settlement_under_probe(layers_below, sub_ps, t_out, t95)
        sec_final = float(settlement.secondary_settlement_under_probe(layers_below, sub_ps,
                                                                      np.array([end]), t95)[0])
        if t95 >= end:
            pnotes.append(f"primary consolidation reaches 95 % after the last stage ends "
                          f"(t95 = {t95:.4g} days): no secondary compression by then.")
    elif creeping.any():
        pnotes.append("secondary compression not estimated: the end of primary (t95) is not reached.")

    layer_settlement: dict[str, float] = {}
    for i, ly in enumerate(col.layers):
        sel = (ps.layer_index == i) & below
        if sel.any():
            layer_settlement[ly.name] = layer_settlement.get(ly.name, 0.0) + float(np.sum(ps.settlement_m[sel]))
    return ProbeEstimate(
        name=pr.name, x_m=float(pr.x), y_m=float(pr.y), probe_depth_m=float(d),
        final_settlement_m=imm_final + cons_final + sec_final, immediate_settlement_m=imm_final,
        consolidation_settlement_m=cons_final, secondary_settlement_m=sec_final,
        t50_days=t50, t90_days=t90, end_of_primary_days=t95, max_excess_pore_pressure_kPa=u_max,
        depth_m=ps.z_mid_m[below], stress_increase_kPa=ps.delta_sigma_kPa[below],
        stress_increase_2to1_kPa=np.asarray(final_2to1)[below],
        initial_effective_stress_kPa=ps.sigma_v0_kPa[below],
        preconsolidation_pressure_kPa=ps.sigma_p_kPa[below], sublayer_settlement_m=ps.settlement_m[below],
        sublayer_layer=[col.layers[i].name for i in ps.layer_index[below]],
        layer_settlement_m=layer_settlement, time_days=t_out, settlement_m=imm_t + cons_t + sec_t,
        consolidation_degree=degree, excess_pore_pressure_kPa=u_probe, notes=pnotes)


def _within_footing(ld: _Load, x: float, depth: float) -> bool:
    """True when (x, depth) lies on the base of footing ``ld`` (its level, inside its width)."""
    width = max(p.width for p in ld.stress_parts)
    return abs(depth - ld.level) <= 1e-6 and abs(x - ld.center) <= 0.5 * width + 1e-9


def _on_rigid_base(ld: _Load, x: float, depth: float) -> bool:
    """True when (x, depth) lies on the base of the rigid footing ``ld``."""
    return ld.rigid_width > 0.0 and _within_footing(ld, x, depth)


def _differential(probes: dict[str, ProbeEstimate], model: Model, notes: list[str]
                  ) -> list[DifferentialEstimate]:
    """Consecutive probes on the ground surface or on footing bases, sorted by x (Bjerrum
    1963 limits)."""
    surf = sorted((p for p in probes.values() if p.on_surface), key=lambda p: p.x_m)
    out = []
    for a, b in zip(surf, surf[1:]):
        dist = abs(b.x_m - a.x_m)
        if dist <= 1e-9:
            notes.append(f"surface probes {a.name!r} and {b.name!r} share x = {a.x_m:g} m: no "
                         "angular distortion between them.")
            continue
        t = a.time_days
        keep = np.concatenate([[True], np.diff(t) > 0.0])
        h = differential.differential_between_probes(t[keep], a.settlement_m[keep], b.settlement_m[keep], dist)
        out.append(DifferentialEstimate(a.name, b.name, dist, h.times_days, h.differential_settlement_m,
                                        h.angular_distortion, h.checks))
    return out
