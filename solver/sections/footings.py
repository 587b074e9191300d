"""Strip footings (plane strain) or one circular footing (axisymmetry) on layered ground."""

from __future__ import annotations

from ..errors import InputError
from ..mesh import Mesh
from .plan import Plan
from .sizes import EDGE_FACTOR


def footings_mesh(model) -> Mesh:
    """Layered ground under strip footings (plane strain) or one circular footing (axisymmetry).

    See :func:`footings_plan`.
    """
    return footings_plan(model).mesh(f"footings section '{model.title}'")


def footings_plan(model) -> Plan:
    """The plan of :func:`footings_mesh` (all but gmsh).

    A footing with embedment D > 0 sits at y = -D at the bottom of a rectangular notch of its
    own width (the soil above its base is removed); D = 0 is a loaded segment of the surface.
    """
    sec = model.section
    if not sec.footings:
        raise InputError("section kind 'footings' needs at least one footing",
                         field="section.footings", source=model.source,
                         fix="add a [[section.footings]] entry with name, center and width.")
    plan = Plan.start(model)
    if plan.axisymmetric and (len(sec.footings) != 1 or abs(sec.footings[0].center) > 0):
        raise InputError("an axisymmetric section holds one circular footing centred at r = 0",
                         field="section.footings", source=model.source,
                         fix="give one footing with center = 0 (its width is the diameter).")
    spans = []
    for i, f in enumerate(sec.footings):
        where = f"section.footings[{i + 1}]"
        if f.width <= 0:
            raise InputError(f"footing {f.name!r} has width {f.width:g} m", field=where,
                             source=model.source, fix="give a positive width.")
        if f.embedment < 0:
            raise InputError(f"footing {f.name!r} has embedment {f.embedment:g} m",
                             field=where, source=model.source,
                             fix="give the depth of the base below the ground (>= 0).")
        x0, x1 = f.center - f.width / 2, f.center + f.width / 2
        if plan.symmetric:
            if abs(f.center) <= plan.tol:
                x0 = 0.0
            elif x0 < -plan.tol:
                raise InputError(f"footing {f.name!r} crosses the symmetry line x = 0 off "
                                 "centre", field=where, source=model.source,
                                 fix="centre it at x = 0, move it to x >= 0, or model the "
                                     "full section (half = false).")
        plan.check_inside(x0, x1, where)
        for (a, b, other) in spans:
            if x0 < b - plan.tol and x1 > a + plan.tol:
                raise InputError(f"footings {other!r} and {f.name!r} overlap", field=where,
                                 source=model.source, fix="move them apart.")
        spans.append((x0, x1, f.name))
        if f.embedment > 0:
            base = -max(plan.y_line(len(plan.lines) - 1, x) for x in (x0, x1))
            if f.embedment >= base - plan.tol:
                raise InputError(f"footing {f.name!r} is embedded {f.embedment:g} m, not "
                                 f"above the base of the model ({base:g} m deep there)",
                                 field=where, source=model.source,
                                 fix="make the model deeper or the embedment smaller.")
            plan.notches.append((f.name, x0, x1, f.embedment))
        else:
            plan.surface_footings.append((f.name, x0, x1))
        d = f.embedment
        h0 = plan.near(f.width)
        src = plan.near_source = plan.near_field(f"{where}.width")
        plan.footprints.append((x0, x1, h0, -d))
        plan.size.add_segment(x0, -d, x1, -d, h0, source=src)
        for x in (x0, x1):
            if not (plan.symmetric and abs(x) <= plan.tol):
                plan.size.add_point(x, -d, EDGE_FACTOR * h0, source=src)
                if d > 0:
                    plan.size.add_point(x, 0.0, EDGE_FACTOR * h0, source=src)
    for ld in plan.loads:
        for (a, b, name) in spans:
            if ld.x0 < b - plan.tol and ld.x1 > a + plan.tol:
                raise InputError(f"surface load {ld.name!r} overlaps footing {name!r}",
                                 field=ld.where, source=model.source,
                                 fix="load the footing itself (its load or force).")
    return plan
