"""How many triangles a section will have, known before anything is meshed.

The count is the integral of the size field over the domain (see
:meth:`solver.sections.sizes.SizeField.element_count`): the domain's extent, the sizes near
the loads, the layers' sizes, the grading toward draining boundaries and the growth away from
them. A section whose estimate exceeds ``section.max_elements`` (default
:data:`solver.model.MAX_ELEMENTS`) is refused with one message naming the fields that drive
the count, before gmsh or any large array is touched (:mod:`.limits`).
"""

from __future__ import annotations

from .embankment import embankment_plan
from .footings import footings_plan
from .ground import ground_plan
from .limits import as_int, drivers

PLANNERS = {"embankment": embankment_plan, "footings": footings_plan, "ground": ground_plan}


def section_plan(model, limit: float | None = None, refuse: bool = True):
    """The finished plan (sizes complete, grading included) of a parametric section, or None
    for a user mesh (``section.kind = "mesh"``: the file sets its own mesh). ``limit`` and
    ``refuse`` as in :meth:`solver.sections.plan.Plan.finish`."""
    planner = PLANNERS.get(model.section.kind)
    if planner is None:
        return None
    plan = planner(model)
    plan.finish(limit, refuse)
    return plan


def estimate_element_count(model) -> tuple[int, list[str]]:
    """About how many triangles :func:`solver.sections.build_mesh` makes, and why.

    Nothing is meshed and no large array is made, whatever the model's dimensions.

    Returns
    -------
    (count, drivers) : count, the estimated number of triangles (within some per cent for the
        shipped examples; rougher for domains far too large to mesh); drivers, the TOML paths
        of the fields that drive it, the largest share first (e.g. ``["section.mesh_size",
        "layers[3].thickness"]``). A user mesh (``section.kind = "mesh"``) returns (0, []):
        its file sets the mesh.
    """
    plan = section_plan(model, refuse=False)
    if plan is None:
        return 0, []
    count, by_source = plan.count
    return as_int(count), drivers(plan, by_source)


def check_element_count(model, limit: int | None = None) -> None:
    """Refuse a section whose estimated triangle count exceeds the limit, before meshing.

    limit : the most triangles allowed (None: ``section.max_elements``, else
        :data:`solver.model.MAX_ELEMENTS`).

    Raises
    ------
    InputError naming the first driving field, the estimate, the limit and the fix.
    """
    section_plan(model, limit)
