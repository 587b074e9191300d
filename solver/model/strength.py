"""The strength fields of materials and the [stability] table: how a material's strength is
chosen, and the checks that span fields (a strength for every material a slip can cross, a
search region inside the section)."""

from __future__ import annotations

from ..errors import InputError
from .domain import _is_half, base_elevation, domain_extent, ground_surface
from .fields import _join
from .schema import Material, Model


def strength_kind(m: Material) -> str | None:
    """"drained", "undrained" or None (no strength given) for a material."""
    if m.strength is not None:
        return m.strength
    if m.undrained_strength_ratio is not None or m.undrained_strength is not None:
        return "undrained"
    if m.cohesion is not None or m.friction_angle is not None:
        return "drained"
    return None


def stability_materials(model: Model) -> list[tuple[str, str]]:
    """(material name, where it is used) of everything a slip can cross: the fill and every
    layer whose top lies above the lowest tangent elevation."""
    out = []
    emb = model.section.embankment
    if model.section.kind == "embankment" and emb is not None:
        out.append((emb.material, "section.embankment.material"))
    lowest = model.stability.lowest_tangent if model.stability else None
    top = 0.0
    for i, la in enumerate(model.layers):
        if lowest is None or top > lowest:
            out.append((la.material, f"layers[{i + 1}].material"))
        top -= la.thickness
    for name, mat in model.section.regions.items():
        out.append((mat, _join("section.regions", name)))
    return out


def _fail(model: Model, message: str, path: str, fix: str) -> None:
    raise InputError(message, field=path, source=model.source, fix=fix)


def check_strength(model: Model) -> None:
    """Cross-field checks of strengths and of the [stability] table (None: nothing to check)."""
    for name, m in model.materials.items():
        path = _join("materials", name)
        if m.undrained_strength_ratio is not None and m.undrained_strength is not None:
            _fail(model, "the undrained strength is given two ways (undrained_strength_ratio "
                         "and undrained_strength)", _join(path, "undrained_strength"),
                  "give undrained_strength_ratio (s_u from the effective stress and OCR, so "
                  "it grows with consolidation) or an undrained_strength profile, not both.")
        if m.strength == "undrained" and m.undrained_strength_ratio is None and \
                m.undrained_strength is None:
            _fail(model, "an undrained material needs its undrained strength",
                  _join(path, "undrained_strength_ratio"),
                  "give undrained_strength_ratio = 0.22 (with strength_exponent) or "
                  "undrained_strength = \"15 kPa\" (with undrained_strength_gradient).")
        if m.strength == "drained" and m.cohesion is None and m.friction_angle is None:
            _fail(model, "a drained material needs cohesion or friction_angle",
                  _join(path, "friction_angle"),
                  "give friction_angle = \"30 deg\" and cohesion = \"0 kPa\" (c', phi').")
    st = model.stability
    if st is None:
        return
    for mat, where in stability_materials(model):
        m = model.materials.get(mat)
        if m is not None and strength_kind(m) is None:
            _fail(model, f"material {mat!r} (used by {where}) has no strength, and a slip "
                         "surface can cross it", _join(_join("materials", mat), "strength"),
                  "give it friction_angle and cohesion (drained: c', phi') or "
                  "undrained_strength_ratio (undrained: s_u = S OCR^m sigma'_v); or raise "
                  "stability.lowest_tangent above it.")
    ext = domain_extent(model)
    if ext is None:
        return
    x_min, x_max, _ = ext
    left = -x_max if _is_half(model) else x_min
    if st.x_limits:
        if len(st.x_limits) != 2 or not st.x_limits[0] < st.x_limits[1]:
            _fail(model, "x_limits must be two values [left, right] with left < right",
                  "stability.x_limits", "write, e.g., x_limits = [0.0, 40.0].")
        lo, hi = st.x_limits
        if lo < left - 1e-9 or hi > x_max + 1e-9:
            _fail(model, f"the search region x_limits = [{lo:g}, {hi:g}] m reaches outside the "
                         f"section ({left:g} to {x_max:g} m)", "stability.x_limits",
                  f"keep x_limits within [{left:g}, {x_max:g}].")
    if st.lowest_tangent is not None:
        base = min(base_elevation(model, x_min), base_elevation(model, x_max))
        top = ground_surface(model, 0.0)
        if not base - 1e-9 <= st.lowest_tangent < top - st.min_depth:
            _fail(model, f"lowest_tangent = {st.lowest_tangent:g} m lies outside the section "
                         f"(its base is at {base:g} m, its top at {top:g} m, less the least "
                         f"depth {st.min_depth:g} m)", "stability.lowest_tangent",
                  "give an elevation between the base of the model and the surface, e.g. the "
                  "top of the firm layer.")
