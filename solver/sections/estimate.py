"""How many triangles a section will have, known before anything is meshed.

The count is the integral of the size field over the domain (see
:meth:`solver.sections.sizes.SizeField.element_count`): the domain's extent, the sizes near
the loads, the layers' sizes, the grading toward draining boundaries and the growth away from
them. A section whose estimate exceeds ``section.max_elements`` (default
:data:`solver.model.MAX_ELEMENTS`) is refused with one message naming the fields that drive
the count, before gmsh or any large array is touched.
"""

from __future__ import annotations

import math

from ..errors import InputError

IMPLAUSIBLE_EXTENT = 1e5   # m: no section is this wide or deep (common practice)


def plan_element_count(plan) -> tuple[float, dict[str, float]]:
    """(count, {source field: count}) of a plan's size field over its domain."""
    top = max([0.0] + [y for p in plan.lifts for _, y in p])
    return plan.size.element_count(plan.x_min, plan.x_max, -plan.depth, top,
                                   plan.inside_domain)


def _planners():
    from .embankment import embankment_plan
    from .footings import footings_plan
    from .ground import ground_plan
    return {"embankment": embankment_plan, "footings": footings_plan, "ground": ground_plan}


def section_plan(model, limit: float | None = None, refuse: bool = True):
    """The finished plan (sizes complete, grading included) of a parametric section, or None
    for a user mesh (``section.kind = "mesh"``: the file sets its own mesh). ``limit`` and
    ``refuse`` as in :meth:`solver.sections.plan.Plan.finish`."""
    planner = _planners().get(model.section.kind)
    if planner is None:
        return None
    plan = planner(model)
    plan.finish(limit, refuse)
    return plan


def _drivers(plan, by_source: dict[str, float]) -> list[str]:
    """The fields behind most of the count, the largest share first. Counts set by the far
    size or by the layers' thickness grow with the extent, so the field that sets the extent
    is named with them."""
    total = sum(by_source.values())
    if total <= 0:
        return []
    share: dict[str, float] = {}
    extent = plan.size.far_source
    for src, n in by_source.items():
        src = src or extent
        share[src] = share.get(src, 0.0) + n
        if src != extent and (src.endswith(".thickness") or src.endswith(".lifts")):
            share[extent] = share.get(extent, 0.0) + n
    ranked = sorted(share.items(), key=lambda kv: -kv[1])
    out = [s for s, n in ranked if n >= 0.1 * total] or [ranked[0][0]]
    # A domain beyond any site (common practice: 100 km) comes from a slip in what sets it.
    if plan.x_max - plan.x_min > IMPLAUSIBLE_EXTENT:
        out = [extent] + [s for s in out if s != extent]
    if plan.depth > IMPLAUSIBLE_EXTENT and "layers" not in out[0]:
        out = ["layers"] + out
    return out


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
    return _as_int(count), _drivers(plan, by_source)


def _as_int(count: float) -> int:
    return int(min(count, 1e18)) if not math.isnan(count) else int(1e18)


def check_element_count(model, limit: int | None = None) -> None:
    """Refuse a section whose estimated triangle count exceeds the limit, before meshing.

    limit : the most triangles allowed (None: ``section.max_elements``, else
        :data:`solver.model.MAX_ELEMENTS`).

    Raises
    ------
    InputError naming the first driving field, the estimate, the limit and the fix.
    """
    section_plan(model, limit)


def refuse_count(plan, count: float, by_source: dict[str, float], limit: float) -> None:
    """Raise the InputError of a plan whose estimated count exceeds ``limit``."""
    drivers = _drivers(plan, by_source)
    width, depth = plan.x_max - plan.x_min, plan.depth
    raise InputError(
        f"the mesh would have about {count:.3g} triangles, more than the limit of "
        f"{int(limit):,} (the domain is {width:.4g} m wide and {depth:.4g} m deep; the count "
        f"is driven by {', '.join(drivers)})", field=drivers[0] if drivers else "section",
        source=plan.model.source,
        fix=f"check {' and '.join(drivers[:2]) or 'the section'} for a slip of unit or "
            "magnitude; for a coarser mesh give a larger section.mesh_size (or the layers' "
            "mesh_size); if a mesh this large is meant, raise section.max_elements.")
