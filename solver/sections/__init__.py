"""Meshes of the model's section: embankment with lifts and berms, footings, layered ground.

:func:`build_mesh` turns ``model.section`` into a :class:`~solver.mesh.Mesh` of second-order,
straight-sided triangles, built with the gmsh OpenCASCADE kernel (every polygon made on its
own, then fragmented so that layers, lifts and notches share conforming boundaries).

Geometry
--------
x horizontal (radius in axisymmetry), y elevation, up positive, m. The original ground surface
is y = 0 and the layers go down from it in ``model.layers`` order. Layer j's base lies at
``-sum(thickness[:j+1])`` at the left side x_min and at ``-sum(thickness_right[:j+1])`` at the
right side x_max (``thickness_right`` None: same as ``thickness``), straight in between. The
bottom layer reaches the base of the model, :func:`solver.model.base_elevation` (the bottom
layer's own base: sloping when the left and right sums differ). The extent (x_min, x_max,
depth) is :func:`solver.model.domain_extent`.

Names (the solver attaches materials and boundary conditions by them)
---------------------------------------------------------------------
Regions: each layer's ``name`` (equal names share a region); ``lift_1``, ``lift_2``, ... the
embankment (berms included) cut at the lift elevations, numbered from the bottom.

Edges: ``base`` (the bottom, y = -depth when flat); ``left``, ``right`` (sides; the side at
x = 0 of a half or axisymmetric model is ``symmetry``, and it runs up through the embankment);
``ground`` (all of the original surface y = 0 that remains, under the embankment too);
``ground_free`` (the part of ``ground`` under neither the embankment nor a footing);
``footing_<name>`` (each footing's base); ``excavation_walls`` (the vertical walls of the
notches of embedded footings); ``lift_<i>_top`` (the surface of lift i exposed when it is
placed: its crest part and its slopes and benches, not the symmetry line);
``embankment_surface`` (the final exposed surface of the embankment); ``interface_<j>``
(between layer j and j + 1, from 1; only where both layers meet); ``load_<name>`` (the loaded
part of the surface of each ``SurfaceLoad``: on the ground, or on the embankment crest when
the load lies on it).

Mesh size
---------
Each load has its near size h0 = ``section.mesh_size``, by default its own width / 10 (an
embankment: its base width, toe to toe; a footing: its width; a surface load: its width, the
mirror image included). h0 holds along the loaded surface and half of it at load edges (toes,
crest edges, bench corners, footing corners, load ends). Inside each lift the size is at most
half the lift's thickness. Under the load every layer is at most a third of its thickness and
every interface at h0; both relax with depth below a narrow load. The size grows linearly
with distance from these places (``GROWTH`` m per m) up to ``FAR_FACTOR`` times the largest
h0, and no element is much longer than its layer is thick. A layer's ``mesh_size`` holds in
it throughout. Draining boundaries and permeability-contrast interfaces are graded to the
boundary layer of the first time step (:mod:`.grading`), within an element budget. The
number of triangles is estimated before gmsh is called (:mod:`.estimate`) and a section above
``section.max_elements`` is refused.

Modules
-------
:mod:`.plan` (extent, layer lines, loads, sizes before gmsh), :mod:`.sizes` (the size field,
its table for gmsh and its integral), :mod:`.grading` (sizes at draining boundaries),
:mod:`.estimate` (the element count and the refusal), :mod:`.gmsh_section` (the plan meshed
and its groups named), :mod:`.polygons`, and one module per section kind:
:mod:`.embankment`, :mod:`.footings`, :mod:`.ground`, :mod:`.user_mesh`.
"""

from __future__ import annotations

from ..errors import InputError
from ..mesh import Mesh
from ..model import MAX_ELEMENTS as DEFAULT_MAX_ELEMENTS
from .embankment import clip_band, embankment_mesh, embankment_outline, lift_levels
from .estimate import check_element_count, estimate_element_count, section_plan
from .footings import footings_mesh
from .grading import CONTRAST, layer_cv
from .ground import ground_mesh
from .plan import default_mesh_size, resolve_extent
from .sizes import EDGE_FACTOR, FAR_FACTOR, GROWTH, SHAPE_GROWTH
from .user_mesh import file_mesh

__all__ = ["build_mesh", "embankment_mesh", "footings_mesh", "ground_mesh", "file_mesh",
           "resolve_extent", "default_mesh_size", "embankment_outline", "lift_levels",
           "clip_band", "estimate_element_count", "check_element_count", "section_plan",
           "layer_cv", "DEFAULT_MAX_ELEMENTS", "CONTRAST", "GROWTH", "SHAPE_GROWTH",
           "FAR_FACTOR", "EDGE_FACTOR"]


def build_mesh(model, max_elements: int | None = None, trust_geo: bool = False) -> Mesh:
    """Mesh the model's section, choosing the builder by ``model.section.kind``.

    Parameters
    ----------
    model : :class:`solver.model.Model`.
    max_elements : the most triangles allowed (None: ``section.max_elements``, else
        :data:`DEFAULT_MAX_ELEMENTS`); a parametric section estimated above it is refused
        before meshing (:func:`check_element_count`), and the grading never takes it there.
    trust_geo : mesh a user's ``.geo`` file even when it runs programs or writes files
        (:func:`solver.geometry.read_mesh`).

    Returns
    -------
    Mesh with the regions and edges named as in this module's docstring.
    """
    kind = model.section.kind
    kinds = ("embankment", "footings", "ground", "mesh")
    if kind not in kinds:
        raise InputError(f"unknown section kind {kind!r}", field="section.kind",
                         source=model.source,
                         fix=f"use one of {sorted(kinds)}.")
    if kind == "mesh":
        return file_mesh(model, trust_geo=trust_geo)
    plan = section_plan(model, max_elements)
    return plan.mesh(f"{kind} section '{model.title}'")
