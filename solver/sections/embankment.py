"""The embankment section: its outline (berms included), lifts and the mesh under it."""

from __future__ import annotations


from ..errors import InputError
from ..mesh import Mesh
from ..model import embankment_profile
from .plan import Plan
from .polygons import Point, clip_band, dedupe
from .sizes import EDGE_FACTOR


def embankment_mesh(model) -> Mesh:
    """Layered ground under a trapezoidal embankment (berms optional) built in lifts."""
    return embankment_plan(model).mesh(f"embankment section '{model.title}'")


def embankment_plan(model) -> Plan:
    """The plan of :func:`embankment_mesh` (all but gmsh).

    The embankment is symmetric about x = 0 with toes at +-(crest/2 + side_slope * height);
    each berm adds a bench of its width at its height, so the outer toe moves out by the sum
    of the berm widths. Half and axisymmetric models keep x >= 0.
    """
    sec = model.section
    emb = sec.embankment
    if emb is None:
        raise InputError("section kind 'embankment' needs an embankment",
                         field="section.embankment", source=model.source,
                         fix="give [section.embankment] with crest_width, height, "
                             "side_slope and lifts.")
    plan = Plan.start(model)
    outline = embankment_outline(emb, half=plan.symmetric, source=model.source)
    levels = lift_levels(emb, source=model.source)
    toe = max(x for x, _ in outline)
    plan.check_inside(-toe if not plan.symmetric else 0.0, toe, "section.embankment")
    for i in range(len(levels) - 1):
        poly = clip_band(outline, levels[i], levels[i + 1])
        plan.lifts.append(poly)
    # The crest carries loads that lie on it; the rest of the loads go on the free ground.
    half_crest = emb.crest_width / 2
    lo = 0.0 if plan.symmetric else -half_crest
    for ld in plan.loads:
        if ld.x0 >= lo - plan.tol and ld.x1 <= half_crest + plan.tol:
            ld.y = emb.height
        elif ld.x1 <= -toe + plan.tol or ld.x0 >= toe - plan.tol:
            pass
        else:
            raise InputError(f"surface load {ld.name!r} ({ld.x0:g} to {ld.x1:g} m) lies "
                             "partly on the embankment", field=ld.where,
                             source=model.source,
                             fix="put it on the crest or on the ground beside the toes.")
    plan.crest_breaks = [x for ld in plan.loads if ld.y > 0 for x in (ld.x0, ld.x1)]
    # Size: the loaded width is the base width, toe to toe; lifts at most half their
    # thickness; load edges (toes, bench corners, crest edges) finer.
    h0 = plan.near(2 * toe)
    src = plan.near_source = plan.near_field("section.embankment")
    plan.footprints.append((-toe if not plan.symmetric else 0.0, toe, h0, 0.0))
    for i, poly in enumerate(plan.lifts):
        t = levels[i + 1] - levels[i]
        plan.size.add_polygon(poly, min(h0, t / 2),
                              source=src if h0 <= t / 2 else "section.embankment.lifts")
    for x, y in outline:
        if not (plan.symmetric and abs(x) <= plan.tol):
            plan.size.add_point(x, y, EDGE_FACTOR * h0, source=src)
    plan.size.add_segment(plan.footprints[0][0], 0.0, toe, 0.0, h0, source=src)
    return plan


def embankment_outline(emb, half: bool = False, source: str | None = None) -> list[Point]:
    """The embankment's outline (berms included), counter-clockwise, from the right toe.

    The surface is :func:`solver.model.embankment_profile` (crest, side slopes, a bench of
    each berm's width at its height); mirrored about x = 0, or closed along x = 0 when half.
    """
    _check_embankment(emb, source)
    right = dedupe([(float(x), float(y)) for x, y in embankment_profile(emb)[1:]])
    up = list(reversed(right))                   # toe -> crest edge
    if half:
        pts = up + [(0.0, float(emb.height)), (0.0, 0.0)]
    else:
        pts = up + [(-px, py) for px, py in right]
    return dedupe(pts, closed=True)


def lift_levels(emb, source: str | None = None) -> list[float]:
    """Elevations bounding the lifts, from 0 to the height (len = number of lifts + 1), m."""
    _check_embankment(emb, source)
    levels = [0.0]
    for t in (emb.lifts or [emb.height]):
        levels.append(levels[-1] + float(t))
    levels[-1] = float(emb.height)   # exact top, whatever the rounding of the sum
    return levels


def _check_embankment(emb, source) -> None:
    f = "section.embankment"
    if emb.height <= 0:
        raise InputError(f"height {emb.height:g} m", field=f"{f}.height", source=source,
                         fix="give a positive height.")
    if emb.crest_width < 0 or emb.side_slope < 0:
        raise InputError("crest_width and side_slope cannot be negative", field=f,
                         source=source, fix="give crest_width >= 0 and side_slope >= 0.")
    if emb.crest_width == 0 and emb.side_slope == 0:
        raise InputError("an embankment with no crest and vertical sides has no area",
                         field=f, source=source, fix="give a crest width or a side slope.")
    lifts = list(emb.lifts) or [emb.height]
    if any(t <= 0 for t in lifts):
        raise InputError(f"lift thicknesses {lifts} must all be positive", field=f"{f}.lifts",
                         source=source, fix="give each lift's thickness in m, bottom up.")
    if abs(sum(lifts) - emb.height) > 1e-6 * emb.height:
        raise InputError(f"the lifts add up to {sum(lifts):g} m, the height is "
                         f"{emb.height:g} m", field=f"{f}.lifts", source=source,
                         fix="make the lift thicknesses sum to the height.")
    last = emb.height
    for i, b in enumerate(emb.berms):
        if not (0 < b.height < last) or b.width <= 0:
            raise InputError(f"berm {i + 1}: width {b.width:g} m at height {b.height:g} m",
                             field=f"{f}.berms[{i + 1}]", source=source,
                             fix="list berms from the embankment outward, each lower than the "
                                 "one inside it, with a positive width.")
        last = b.height
