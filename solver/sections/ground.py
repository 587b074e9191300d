"""Layered ground alone (no embankment, no footing)."""

from __future__ import annotations

from ..mesh import Mesh
from .plan import Plan


def ground_mesh(model) -> Mesh:
    """Layered ground alone; the surface is split at the ends of each surface load."""
    return ground_plan(model).mesh(f"ground section '{model.title}'")


def ground_plan(model) -> Plan:
    """The plan of :func:`ground_mesh` (all but gmsh)."""
    plan = Plan.start(model)
    plan.near_source = plan.near_field("loads")
    return plan
