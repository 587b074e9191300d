"""The hand estimate of any model: a section given as a mesh has its soil columns read from
the mesh.

The hand method (:mod:`solver.hand`) never imports the mesh; for ``section.kind = "mesh"`` it
takes a :class:`solver.hand.ground.SectionColumns`, plain data built here from the
:class:`solver.mesh.Mesh` (:mod:`solver.mesh_column`): the regions each vertical crosses with
their local thicknesses (mapped to materials by ``[section.regions]``), and, for every region
a lift stage places, its thickness along the section (its weight is then a load). This module
sits above the mesh and the hand method, so imports keep flowing one way; the faces
(``poroplane hand``, the comparison a run writes, plots, report) call :func:`estimate`.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from .hand.estimate import hand_estimate
from .hand.ground import SectionColumns
from .hand.records import HandEstimate
from .mesh import Mesh
from .mesh_column import region_thickness, region_x_range, vertical_column

__all__ = ["mesh_section", "section_mesh", "estimate"]

LIFT_SAMPLES = 121
"""Verticals along a lift region at which its thickness is read (its weight's profile)."""


def section_mesh(model) -> Mesh:
    """The mesh of a ``section.kind = "mesh"`` model, read (``.msh``) or meshed (``.geo``,
    with Gmsh) as the finite-element run does."""
    from .sections.user_mesh import file_mesh     # the gmsh side, only when a file must be read
    return file_mesh(model)


def mesh_section(model, mesh: Mesh) -> SectionColumns:
    """The hand method's view of a mesh section: columns and lift regions as plain data."""
    lifted = {st.region for st in model.stages if st.kind == "lift" and st.region}
    lifts = {}
    for region in sorted(lifted):
        x0, x1 = region_x_range(mesh, region)
        xs = np.linspace(x0, x1, LIFT_SAMPLES)
        lifts[region] = (xs, region_thickness(mesh, region, xs))
    xs = mesh.points[:, 0]
    source = Path(mesh.source or model.section.mesh_file or "mesh").name
    return SectionColumns(column=lambda x: vertical_column(mesh, x, exclude=lifted), lifts=lifts,
                          x_span=(float(xs.min()), float(xs.max())), source=source)


def estimate(model, mesh: Mesh | None = None, **kwargs) -> HandEstimate:
    """:func:`solver.hand.estimate.hand_estimate` of any model; for a mesh section the columns
    come from ``mesh`` (read from the model's mesh file when not given)."""
    if model.section.kind != "mesh":
        return hand_estimate(model, **kwargs)
    mesh = section_mesh(model) if mesh is None else mesh
    return hand_estimate(model, section=mesh_section(model, mesh), **kwargs)
