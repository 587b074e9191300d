"""Refusing a section whose estimated element count is too large: the fields behind it.

The count and its share by model field come from
:meth:`solver.sections.sizes.SizeField.element_count`; the refusal names the fields that drive
it, the estimate and the limit.
"""

from __future__ import annotations

import math

from ..errors import InputError

IMPLAUSIBLE_EXTENT = 1e5   # m: no section is this wide or deep (common practice)


def drivers(plan, by_source: dict[str, float]) -> list[str]:
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


def as_int(count: float) -> int:
    """A count as a whole number (an overflow or NaN of a far too large domain: 1e18)."""
    return int(min(count, 1e18)) if not math.isnan(count) else int(1e18)


def refuse_count(plan, count: float, by_source: dict[str, float], limit: float) -> None:
    """Raise the InputError of a plan whose estimated count exceeds ``limit``."""
    names = drivers(plan, by_source)
    width, depth = plan.x_max - plan.x_min, plan.depth
    raise InputError(
        f"the mesh would have about {count:.3g} triangles, more than the limit of "
        f"{int(limit):,} (the domain is {width:.4g} m wide and {depth:.4g} m deep; the count "
        f"is driven by {', '.join(names)})", field=names[0] if names else "section",
        source=plan.model.source,
        fix=f"check {' and '.join(names[:2]) or 'the section'} for a slip of unit or "
            "magnitude; for a coarser mesh give a larger section.mesh_size (or the layers' "
            "mesh_size); if a mesh this large is meant, raise section.max_elements.")
