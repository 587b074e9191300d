"""The domain a model describes: the loaded spans, the extent of the section, the ground
surface and the base, and the warnings when the boundaries are close enough to change the
answer."""

from __future__ import annotations

import math

from .schema import Embankment, Model


def _is_half(model: Model) -> bool:
    """Only x >= 0 is modelled: a half model, or any axisymmetric one (r >= 0)."""
    return model.section.half or model.analysis == "axisymmetric"


def _layer_depths(model: Model) -> tuple[float, float] | None:
    """Total thickness of the layers at the left and right edges of the section, m."""
    if not model.layers:
        return None
    left = sum(la.thickness for la in model.layers)
    right = sum(la.thickness if la.thickness_right is None else la.thickness_right
                for la in model.layers)
    return left, right


def loaded_spans(model: Model) -> list[tuple[float, float]]:
    """x ranges of everything that loads the ground: the embankment footprint (toe to toe,
    berms included), the footings and the surface loads."""
    sec = model.section
    spans = []
    if sec.kind == "embankment" and sec.embankment is not None:
        toe = embankment_profile(sec.embankment)[-1][0]
        spans.append((-toe, toe))
    if sec.kind == "footings":
        spans += [(f.center - f.width / 2, f.center + f.width / 2) for f in sec.footings]
    spans += [tuple(sorted((float(ld.x_left), float(ld.x_right)))) for ld in model.loads]
    return spans


def loaded_extent(model: Model) -> tuple[float, float] | None:
    """(x_left, x_right) of everything loading the ground, m, mirror images included.

    The embankment footprint (toe to toe, berms included), the footings and the surface
    loads; in a half or axisymmetric model the span is mirrored about x = 0. None if nothing
    loads the ground.
    """
    spans = loaded_spans(model)
    if not spans:
        return None
    lo, hi = min(s[0] for s in spans), max(s[1] for s in spans)
    if _is_half(model):
        m = max(abs(lo), abs(hi))
        lo, hi = -m, m
    return lo, hi


def domain_extent(model: Model) -> tuple[float, float, float] | None:
    """(x_min, x_max, depth) of the modelled domain, m.

    Full plane strain: x in [-width/2, width/2]; half and axisymmetric: x (r) in [0, width].
    depth: the layers' total thickness (at the deeper edge where the base slopes), else
    section.depth (a user mesh). When width is not given (common practice, see docs/model.md): each
    side boundary lies max(2 B, 2 D) beyond the load edge, rounded up to a whole metre, where
    B is the loaded width (toe to toe, mirror images included) and D the depth. None for a
    user mesh whose width or depth is not given, or without layers or depth.
    """
    sec = model.section
    depths = _layer_depths(model)
    depth = max(depths) if depths else sec.depth
    if depth is None:
        return None
    half = _is_half(model)
    if sec.width is not None:
        return (0.0, sec.width, depth) if half else (-sec.width / 2, sec.width / 2, depth)
    if sec.kind == "mesh":
        return None
    ext = loaded_extent(model)
    b = ext[1] - ext[0] if ext else 0.0
    edge = max(abs(ext[0]), abs(ext[1])) if ext else 0.0
    reach = float(math.ceil(edge + max(2 * b, 2 * depth) - 1e-9))
    return (0.0, reach, depth) if half else (-reach, reach, depth)


def ground_surface(model: Model, x: float) -> float:
    """Elevation of the top of the model at x, m: the embankment surface where there is one,
    else the original ground (y = 0)."""
    sec = model.section
    if sec.kind != "embankment" or sec.embankment is None:
        return 0.0
    pts = embankment_profile(sec.embankment)
    s = abs(x)
    for (xa, ya), (xb, yb) in zip(pts, pts[1:]):
        if xa <= s <= xb:
            return ya if xb == xa else ya + (yb - ya) * (s - xa) / (xb - xa)
    return 0.0


def base_elevation(model: Model, x: float) -> float | None:
    """Elevation of the base of the model at x, m (negative), linear between the edges."""
    ext = domain_extent(model)
    if ext is None:
        return None
    x_min, x_max, depth = ext
    depths = _layer_depths(model)
    if depths is None:
        return -depth
    left, right = depths
    t = 0.0 if x_max == x_min else (x - x_min) / (x_max - x_min)
    return -(left + (right - left) * min(max(t, 0.0), 1.0))


def _outside(model: Model, x: float, y: float) -> str | None:
    """Why (x, y) lies outside the domain, or None (also when the extent is unknown)."""
    ext = domain_extent(model)
    if ext is None:
        return None
    x_min, x_max, depth = ext
    tol = 1e-9 * max(1.0, x_max - x_min, depth)
    if not x_min - tol <= x <= x_max + tol:
        return f"x = {x:g} m is outside [{x_min:g}, {x_max:g}] m"
    base = base_elevation(model, x)
    if y < base - tol:
        return f"y = {y:g} m is below the base of the model (y = {base:g} m)"
    top = ground_surface(model, x)
    if y > top + tol:
        what = "the embankment surface" if top > 0 else "the ground surface"
        return f"y = {y:g} m is above {what} (y = {top:g} m)"
    return None



def embankment_profile(emb: Embankment) -> list[tuple[float, float]]:
    """The embankment surface from the centre line outward: [(x, height above ground), ...].

    Starts at (0, height), runs along the crest to crest_width/2, down the side slope; each
    berm (listed from the embankment outward, each lower than the last) adds a flat of its
    width at its height; ends at the toe (x_toe, 0).
    """
    pts = [(0.0, emb.height), (emb.crest_width / 2, emb.height)]
    x, h = pts[-1]
    for b in emb.berms:
        x += (h - b.height) * emb.side_slope
        pts.append((x, b.height))
        x += b.width
        pts.append((x, b.height))
        h = b.height
    pts.append((x + h * emb.side_slope, 0.0))
    return pts



def domain_warnings(model: Model) -> list[str]:
    """Warnings (common practice) when the boundaries are close enough to change the answer.

    A side boundary closer than 2 loaded widths to the load edge, or a base shallower than
    the loaded width (a rigid base within about one loaded width reduces the settlement
    noticeably).
    """
    ext, load = domain_extent(model), loaded_extent(model)
    if ext is None or load is None:
        return []
    x_min, x_max, _ = ext
    b = load[1] - load[0]
    out = []
    gap = x_max - load[1] if _is_half(model) else min(x_max - load[1], load[0] - x_min)
    if gap < 2 * b:
        out.append(f"the side boundary is {gap:.3g} m from the load edge, less than 2 loaded "
                   f"widths (B = {b:.3g} m); the fixed side holds the ground near it and "
                   "reduces the settlement (common practice: at least 2 B). Widen "
                   "section.width or leave it out to use the rule in docs/model.md.")
    depths = _layer_depths(model) if model.section.depth is None else None
    shallow = min(depths) if depths else ext[2]
    where = " at its shallowest" if depths and depths[0] != depths[1] else ""
    if shallow < b:
        out.append(f"the base of the model is {shallow:.3g} m deep{where}, less than the "
                   f"loaded width "
                   f"(B = {b:.3g} m); a rigid base within about one loaded width reduces the "
                   "settlement noticeably (common practice). That is intended when the ground "
                   "below is far stiffer (rock, dense sand or gravel); otherwise add a deeper "
                   "layer.")
    return out
