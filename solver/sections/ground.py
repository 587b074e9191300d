"""Layered ground alone (no embankment, no footing)."""

from __future__ import annotations

from ..mesh import Mesh
from .plan import Plan


def ground_mesh(model) -> Mesh:
    """Layered ground alone; the surface is split at the ends of each surface load."""
    plan = Plan.start(model)
    return plan.mesh(f"ground section '{model.title}'")
