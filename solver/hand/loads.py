"""The model's loads as the hand method sees them: elementary surface parts at factor 1.

Every switchable load of a :class:`solver.model.Model` (embankment lifts, footings, surface
loads) becomes a :class:`Load`: its exact stress parts (uniform strips, discs, piecewise-linear
strip profiles, one-dimensional pressures) and its spread parts (uniform strips or discs for the
2:1 check and the immediate settlement). :func:`part_stress` and :func:`part_spread` give the
vertical stress increase of one part below a point. See :mod:`solver.hand.estimate` for the
method as a whole.

Units: kN, m, kPa; depth z positive downward from the original ground surface.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from solver.errors import InputError
from solver.model import Model, embankment_profile

from . import stress

__all__ = ["STAIRCASE_STEPS", "Part", "Load", "model_loads", "part_stresses", "part_stress",
           "part_horizontal_stress", "part_spread",
           "within_footing", "on_rigid_base"]

STAIRCASE_STEPS = 40
"""Uniform strips (or discs) a sloping embankment is cut into for the immediate settlement,
the 2:1 spread and (axisymmetry) the stress, per full embankment height."""

_TOL = 1e-9


@dataclass(frozen=True)
class Part:
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
class Load:
    """A load the stages can switch: stress parts (exact) and spread parts (uniform strips or
    discs, for the 2:1 check and the immediate settlement)."""
    name: str
    what: str
    stress_parts: list[Part]
    spread_parts: list[Part]
    rigid_width: float = 0.0    # > 0: a rigid footing of this width (diameter), at level
    level: float = 0.0
    center: float = 0.0
    axisymmetric: bool = False


def _region_load(name: str, xs: NDArray[np.float64], thick: NDArray[np.float64], gamma: float,
                 axi: bool) -> Load:
    """The weight of a region of thickness ``thick`` at ``xs`` as a load: the exact profile
    (plane strain) and a stack of uniform strips (rings in axisymmetry) cut at
    :data:`STAIRCASE_STEPS` levels for the 2:1 spread and the immediate settlement."""
    order = np.argsort(xs)
    xs, thick = xs[order], np.maximum(thick[order], 0.0)
    top = float(thick.max()) if thick.size else 0.0
    steps = []
    if top > 0.0:
        dq = gamma * top / STAIRCASE_STEPS
        for lev in (np.arange(STAIRCASE_STEPS) + 0.5) * top / STAIRCASE_STEPS:
            on = np.concatenate([[False], thick >= lev, [False]])
            starts = np.flatnonzero(~on[:-1] & on[1:])
            ends = np.flatnonzero(on[:-1] & ~on[1:]) - 1
            for a, b in zip(starts, ends):
                x0, x1 = float(xs[a]), float(xs[b])
                if x1 - x0 <= _TOL:
                    continue
                if axi:
                    steps.append(Part("disc", dq, 2.0 * x1))
                    if x0 > _TOL:
                        steps.append(Part("disc", -dq, 2.0 * x0))
                else:
                    steps.append(Part("strip", dq, x1 - x0, 0.5 * (x0 + x1)))
    stress_parts = steps if axi else [Part("profile", x_nodes=tuple(xs), q_nodes=tuple(gamma * thick))]
    return Load(name, f"region {name!r}", stress_parts, steps, axisymmetric=axi)


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


def model_loads(model: Model, x_span: tuple[float, float] | None, notes: list[str],
                lifts: dict | None = None) -> dict[str, Load]:
    """Every switchable load of the model, at factor 1, by the name the stages use.

    ``lifts``: for a section given as a mesh, region placed by a lift stage -> (x, thickness
    of the region along x), m: its weight is a load on the ground below (a piecewise-linear
    strip pressure in plane strain, rings in axisymmetry)."""
    sec = model.section
    axi = model.analysis == "axisymmetric"
    half = sec.half or axi
    loads: dict[str, Load] = {}

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
                discs = [Part("disc", dq, w) for w in widths if w > 0.0]
                stress_parts, spread = discs, discs
            else:
                xn = np.concatenate([-xh[::-1], xh])
                qn = gamma * np.concatenate([dh[::-1], dh])
                stress_parts = [Part("profile", x_nodes=tuple(xn), q_nodes=tuple(qn))]
                spread = [Part("strip", dq, w) for w in widths if w > 0.0]
            loads[f"lift_{n + 1}"] = Load(f"lift_{n + 1}", f"embankment lift {n + 1}",
                                           stress_parts, spread, axisymmetric=axi)
        if axi:
            notes.append("axisymmetric embankment: a circular mound, taken as a stack of "
                         f"{STAIRCASE_STEPS} uniform discs for the stress increase.")

    # ---------------------------------------------------------------- mesh regions placed as lifts
    for region, (xs, thick) in (lifts or {}).items():
        mat = model.materials[model.section.regions[region]]
        loads[region] = _region_load(region, np.asarray(xs, float), np.asarray(thick, float),
                                     float(mat.unit_weight), axi)
        notes.append(f"region {region!r} placed by a lift stage: its weight (unit weight "
                     f"{mat.unit_weight:g} kN/m3 times its thickness at each x, read from the "
                     "mesh) loads the ground below it.")

    # ---------------------------------------------------------------- footings
    for f in sec.footings if sec.kind == "footings" else []:
        area = math.pi * (f.width / 2) ** 2 if axi else f.width
        q = f.load if f.load is not None else f.force / area
        if axi:
            part = Part("disc", q, f.width, level=f.embedment)
        else:
            part = Part("strip", q, f.width, f.center, level=f.embedment)
        loads[f.name] = Load(f.name, f"footing {f.name!r}", [part], [part],
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
            parts = [Part("uniform", q)]
            notes.append(f"load {ld.name!r} covers the whole width of the section (sides on "
                         "rollers): a one-dimensional load, stress increase = pressure at every "
                         "depth, no immediate settlement.")
        elif axi:
            parts = [Part("disc", q, 2.0 * x1)]
            if x0 > _TOL:
                parts.append(Part("disc", -q, 2.0 * x0))
        elif half:
            x0 = max(x0, 0.0)
            if x0 <= _TOL:
                parts = [Part("strip", q, 2.0 * x1, 0.0)]
            else:
                parts = [Part("strip", q, x1 - x0, 0.5 * (x0 + x1)),
                         Part("strip", q, x1 - x0, -0.5 * (x0 + x1))]
        else:
            parts = [Part("strip", q, x1 - x0, 0.5 * (x0 + x1))]
        level = 0.0
        if sec.kind == "embankment" and sec.embankment is not None:
            half_crest = sec.embankment.crest_width / 2
            if x1 <= half_crest + _TOL and x0 >= -half_crest - _TOL:
                notes.append(f"load {ld.name!r} on the embankment crest: spread from the "
                             "original ground surface (the fill is not a separate layer here).")
        loads[ld.name] = Load(ld.name, f"load {ld.name!r}", parts, parts, level=level,
                               axisymmetric=axi)
    return loads


# --------------------------------------------------------------------- part responses


def part_stresses(p: Part, x: float, z: NDArray[np.float64], axi: bool
                  ) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Vertical and horizontal stress increase (kPa) of one part at depths z below the
    original ground. The horizontal one is for the undrained state (nu = 0.5): sigma_x of
    strips and profiles (plane strain, Carothers 1920), sigma_r on the axis of a disc (Poulos
    & Davis 1974), NaN off the axis of a disc (not available); a one-dimensional load gives
    sigma_x = sigma_z (no lateral strain, nu = 0.5)."""
    zz = z - p.level
    below = zz >= -_TOL
    zc = np.maximum(zz, 0.0)
    if p.shape == "uniform":
        sz = sx = np.full(z.shape, p.q)
    elif p.shape == "strip":
        sz, sx = stress.uniform_strip_stress(x, zc, p.width, p.q, p.center)
    elif p.shape == "profile":
        sz, sx = stress.profile_load_stress(x, zc, p.x_nodes, p.q_nodes)
    else:
        sz = stress.circle_vertical_stress(abs(x), 0.0, zc, 0.5 * p.width, p.q)
        sx = (stress.circle_centre_stress(zc, 0.5 * p.width, p.q, 0.5)[1] if abs(x) <= 1e-9
              else np.full(z.shape, np.nan))
    return np.where(below, sz, 0.0), np.where(below, sx, 0.0)


def part_stress(p: Part, x: float, z: NDArray[np.float64], axi: bool) -> NDArray[np.float64]:
    """Vertical stress increase (kPa) of one part at depths z below the original ground."""
    return part_stresses(p, x, z, axi)[0]


def part_horizontal_stress(p: Part, x: float, z: NDArray[np.float64], axi: bool
                           ) -> NDArray[np.float64]:
    """Horizontal stress increase (kPa) of one part, undrained (see :func:`part_stresses`)."""
    return part_stresses(p, x, z, axi)[1]


def part_spread(p: Part, x: float, z: NDArray[np.float64]) -> NDArray[np.float64]:
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



def within_footing(ld: Load, x: float, depth: float) -> bool:
    """True when (x, depth) lies on the base of footing ``ld`` (its level, inside its width)."""
    width = max(p.width for p in ld.stress_parts)
    return abs(depth - ld.level) <= 1e-6 and abs(x - ld.center) <= 0.5 * width + 1e-9


def on_rigid_base(ld: Load, x: float, depth: float) -> bool:
    """True when (x, depth) lies on the base of the rigid footing ``ld``."""
    return ld.rigid_width > 0.0 and within_footing(ld, x, depth)

