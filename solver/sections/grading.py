"""Grading toward draining boundaries: elements as fine as the consolidation boundary layer.

When a load is applied the excess pore pressure is undrained everywhere but at a draining
boundary, where it is zero; in the first time step of length dt it falls to zero over a layer
of thickness of order sqrt(c_v dt) (Terzaghi 1925: near the boundary
u / u0 = erf(z / (2 sqrt(c_v t)))). Elements much larger than that layer spread the drop over
one element and overshoot above it (the P1 pressure cannot follow), and the error fades only
as the layer grows thicker than the elements.

So every draining boundary and every interface across which the vertical permeability changes
by :data:`CONTRAST` or more (a free-draining sand below a clay, the ground surface, the base of
an embankment, later drains) gets the boundary size

    h_b = sqrt(c_v dt_1)          (dt_1 = time_steps.first_step)

with c_v of the slower (softer) side, at least ``section.grading.min_size``, growing away from
the boundary at :data:`~solver.sections.sizes.GROWTH` m per m. The grading covers the part of
each boundary that a load reaches: each loaded span widened on each side by the larger of the
boundary's depth below the loaded surface and half the loaded width. When the whole mesh
would exceed ``section.grading.element_budget`` triangles (default :data:`BUDGET_FACTOR`
times the mesh without grading, at least :data:`BUDGET_FLOOR`), every boundary size is
enlarged by one common factor until it does not. ``section.grading.boundary_size`` sets h_b
directly; ``section.grading.enabled = false`` turns the grading off.

c_v of a layer is the finite-element one: k_y M / gamma_w with M the constrained modulus
E (1 - nu) / ((1 + nu)(1 - 2 nu)) (or the given constrained_modulus), divided by
1 + S M / alpha^2 with storage; for Modified Cam Clay M is the normally consolidated one
(1 + e_0) sigma'_v0 / lambda at the middle of the layer (at least 1 kPa), the softest it is.
Permeability normal to the boundary: k_y for the ground, interfaces and base, k_x for drained
sides and excavation walls.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .sizes import GROWTH

CONTRAST = 10.0      # permeability ratio across an interface that makes it a draining one
                     # (common practice: a layer ten times more permeable drains the other)
BUDGET_FACTOR = 4.0  # default element budget: this many times the mesh without grading,
BUDGET_FLOOR = 2500  # and at least this many triangles


@dataclass
class GradedPiece:
    """A straight piece of a draining boundary with its boundary size."""
    x0: float
    y0: float
    x1: float
    y1: float
    cv: float            # m2/day, of the slower side
    asked: float         # m, sqrt(c_v dt_1) at least min_size (or the size given)
    size: float = 0.0    # m, as used (after the element budget)
    where: str = ""      # what it is: "base", "interface_2", "ground", ...


def layer_cv(model, j: int, vertical: bool = True, x: float = 0.0) -> float:
    """Finite-element coefficient of consolidation of layer j (from 0), m2/day."""
    m = model.materials.get(model.layers[j].material)
    if m is None:
        return math.inf    # no material (a geometry-only model): nothing consolidates
    k = m.permeability_x if not vertical or m.permeability_y is None else m.permeability_y
    gw = model.water.unit_weight
    if m.model == "modified cam clay":
        sv = max(_mid_layer_effective_stress(model, j, x), 1.0)
        M = (1.0 + m.void_ratio) * sv / m.lambda_
    elif m.youngs_modulus is not None:
        E, nu = m.youngs_modulus, m.poisson_ratio
        M = E * (1 - nu) / ((1 + nu) * (1 - 2 * nu))
    elif m.constrained_modulus is not None:
        M = m.constrained_modulus
    else:
        return math.inf    # no stiffness given: the model checks say so elsewhere
    alpha = m.biot_coefficient
    if alpha <= 0:
        return math.inf
    return k * M / (gw * (alpha * alpha + m.storage * M))


def _mid_layer_effective_stress(model, j: int, x: float) -> float:
    from ..initial import LayerColumn, geostatic_stress
    from ..model import domain_extent
    x_min, x_max, _ = domain_extent(model)
    col = LayerColumn.from_model(model, x_min, x_max)
    tops = col.tops(np.array([x]))[0]
    y = 0.5 * (tops[j] + tops[j + 1])
    g = geostatic_stress(col, -model.water.table_depth, model.water.unit_weight,
                         np.array([x]), np.array([y]))
    return float(g["vertical_effective_kPa"][0])


def _merge(ranges):
    out = []
    for a, b in sorted(ranges):
        if out and a <= out[-1][1]:
            out[-1] = (out[-1][0], max(out[-1][1], b))
        else:
            out.append((a, b))
    return out


def _subtract(ranges, holes):
    out = []
    for a, b in ranges:
        pieces = [(a, b)]
        for ha, hb in holes:
            nxt = []
            for pa, pb in pieces:
                if hb <= pa or ha >= pb:
                    nxt.append((pa, pb))
                    continue
                if ha > pa:
                    nxt.append((pa, ha))
                if hb < pb:
                    nxt.append((hb, pb))
            pieces = nxt
        out += pieces
    return out


def draining_pieces(plan) -> list[GradedPiece]:
    """The pieces of draining boundaries and permeability-contrast interfaces a load reaches,
    each with the c_v of its slower side and the boundary size asked for."""
    model = plan.model
    settings = model.section.grading
    dt1 = float(model.time_steps.first_step)
    spans = plan.loaded_spans()
    if not spans or not settings.enabled:
        return []
    n = len(plan.layer_names)
    xm = 0.5 * (plan.x_min + plan.x_max)

    def reach(k: int):
        """x ranges of line k (0 ground, n base) that a load reaches."""
        out = []
        for a, b, _, y_load in spans:
            y = plan.y_line(k, 0.5 * (a + b))
            m = max(y_load - y, 0.5 * (b - a))
            out.append((max(a - m, plan.x_min), min(b + m, plan.x_max)))
        return _merge(out)

    def asked(cv):
        if settings.boundary_size is not None:
            return float(settings.boundary_size)
        return max(float(settings.min_size), math.sqrt(cv * dt1))

    pieces: list[GradedPiece] = []

    def along(k: int, ranges, cv: float, where: str):
        for a, b in ranges:
            if b - a > plan.tol:
                pieces.append(GradedPiece(a, plan.y_line(k, a), b, plan.y_line(k, b), cv,
                                          asked(cv), where=where))

    dr = model.drainage
    # The ground surface: drained where it is open (or under a drained surface load) when the
    # top drains, and always under the embankment (the fill carries no excess pore pressure).
    fill = [(a, b) for a, b, _, _ in plan.footprints[:1]] if plan.lifts else []
    footing_bases = [(a, b) for _, a, b in plan.surface_footings] + \
                    [(a, b) for _, a, b, _ in plan.notches]
    ground = (_subtract([(plan.x_min, plan.x_max)], footing_bases) if dr.top else fill)
    ground = [(max(a, c), min(b, d)) for a, b in _merge(ground) for c, d in reach(0)
              if min(b, d) > max(a, c)]
    along(0, ground, layer_cv(model, 0, x=xm), "ground")
    for k in range(1, n):
        above, below = model.layers[k - 1], model.layers[k]
        ka, kb = (_vertical_k(model.materials.get(lay.material)) for lay in (above, below))
        if min(ka, kb) > 0 and max(ka, kb) >= CONTRAST * min(ka, kb):
            cv = min(layer_cv(model, k - 1, x=xm), layer_cv(model, k, x=xm))
            along(k, reach(k), cv, f"interface_{k}")
    if dr.base:
        along(n, reach(n), layer_cv(model, n - 1, x=xm), "base")
    # Vertical draining boundaries: drained sides, excavation walls (one piece per layer).
    walls = []
    if dr.sides:
        walls += [(plan.x_max, "right")] + ([] if plan.symmetric else [(plan.x_min, "left")])
    for x, where in walls:
        for j in range(n):
            top, bot = plan.y_line(j, x), plan.y_line(j + 1, x)
            if top - bot > plan.tol and any(a - plan.tol <= x <= b + plan.tol
                                            for a, b in reach(j + 1)):
                cv = layer_cv(model, j, vertical=False, x=x)
                pieces.append(GradedPiece(x, bot, x, top, cv, asked(cv), where=where))
    if dr.top:
        for _, a, b, d in plan.notches:
            cv = layer_cv(model, 0, vertical=False, x=a)
            for x in (a, b):
                if not (plan.symmetric and abs(x) <= plan.tol):
                    pieces.append(GradedPiece(x, -d, x, 0.0, cv, asked(cv),
                                              where="excavation_walls"))
    return [p for p in pieces if math.isfinite(p.asked) and p.asked > 0]


def _vertical_k(m) -> float:
    if m is None:
        return 0.0
    return m.permeability_x if m.permeability_y is None else m.permeability_y


def add_grading(plan, count, base: float, cap: float = math.inf) -> list[GradedPiece]:
    """Add the graded pieces to the plan's size field within the element budget.

    ``count(size_field) -> float`` estimates the triangles of the whole mesh; ``base`` is that
    count without grading and ``cap`` a limit the budget never exceeds. Pieces whose boundary
    size is no finer than the mesh there already are left out. Returns the pieces used, their
    ``size`` set.
    """
    pieces = draining_pieces(plan)
    if not pieces:
        return []
    field = plan.size
    used = []
    for p in pieces:
        t = np.linspace(0.0, 1.0, 21)
        there = field.evaluate(p.x0 + t * (p.x1 - p.x0), p.y0 + t * (p.y1 - p.y0))
        if p.asked < there.max():
            used.append(p)
    if not used:
        return []
    given = plan.model.section.grading.element_budget
    budget = float(given) if given is not None else max(BUDGET_FACTOR * base, BUDGET_FLOOR)
    budget = min(budget, cap)
    if base >= budget:
        return []          # the mesh is at its budget before any grading
    n_places = len(field.places)

    def place(factor: float) -> float:
        del field.places[n_places:]
        for p in used:
            p.size = factor * p.asked
            field.add_segment(p.x0, p.y0, p.x1, p.y1, p.size, GROWTH, "section.grading",
                              exact=True)
        return count(field)

    added = place(1.0) - base
    if base + added <= budget:
        return used
    # One common factor f on every boundary size. The triangles the grading adds fall as a
    # power of f (about 1 / f: a band of growing elements along each piece); secant steps on
    # log(added) against log(f) aim at 95 % of the budget, ending below it.
    target = base + 0.95 * (budget - base)
    f0, a0 = 1.0, added
    f1 = a0 / (target - base)
    for _ in range(6):
        a1 = place(f1) - base
        if 0.85 * (budget - base) <= a1 <= budget - base:
            break
        slope = math.log(a0 / a1) / math.log(f1 / f0) if a1 > 0 and f1 != f0 else 1.0
        slope = min(max(slope, 0.3), 3.0)
        f0, a0, f1 = f1, a1, f1 * (a1 / (target - base)) ** (1.0 / slope)
    if a1 > budget - base:
        while place(f1) > budget and f1 < 1e6:
            f1 *= 1.3
    return used
