"""The model's layers as the hand method sees them: compressibility, permeability, columns.

:func:`layer_data` reads one model layer's material (oedometer Cc, Cr, e0, sigma'_p or m_v;
Modified Cam Clay lambda and kappa; elastic moduli as the last resort) into the keyword
arguments of :class:`solver.hand.settlement.Layer`, with a note for every conversion;
:func:`build_column` gives the hand layers under one x (sloping layers at their local
thickness), split at the probe depths, with each one's undrained modulus (as given in
``materials.NAME.undrained``); :func:`free_draining`
decides which of them drain freely in the time rate. See :mod:`solver.hand.estimate` for the method as a whole.

Units: kN, m, kPa, kN/m3, days, permeability m/day; depth positive downward.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Callable, Sequence

import numpy as np
from numpy.typing import NDArray

from solver.analytic import terzaghi_time_factor
from solver.errors import InputError
from solver.initial import LayerColumn
from solver.model import Material, Model, base_elevation, domain_extent
from solver.pore_water import layer_water

from . import parameters, settlement

__all__ = ["FREE_DRAINING_DEGREE", "LayerData", "layer_data", "material_data", "free_draining",
           "Column", "SectionColumns", "layer_faces", "start_water", "build_column", "mesh_column",
           "column_of", "elastic_youngs", "undrained_modulus"]

FREE_DRAINING_DEGREE = 0.99
"""A layer open to a drained boundary is free-draining in the time rate when its own degree
of consolidation reaches this by the first time of the estimate (see :func:`free_draining`)."""

_TOL = 1e-9


@dataclass
class LayerData:
    """Hand-method view of one model layer (thickness filled in per column)."""
    model_index: int
    name: str
    material: Material
    kwargs: dict              # settlement.Layer keyword arguments except thickness
    permeability_v: float


def _oed_path(m: Material, key: str) -> str:
    return f"materials.{m.name}.oedometer.{key}"


def _vertical_k(m: Material) -> float:
    return float(m.permeability_y if m.permeability_y is not None else m.permeability_x)


def elastic_youngs(m: Material) -> float | None:
    if m.youngs_modulus is not None:
        return float(m.youngs_modulus)
    if m.constrained_modulus is not None:
        nu = m.poisson_ratio
        return float(m.constrained_modulus) * (1 + nu) * (1 - 2 * nu) / (1 - nu)
    return None


def layer_data(model: Model, j: int, notes: list[str]) -> LayerData:
    """Compressibility, permeability and unit weights of layer j for the hand method."""
    ly = model.layers[j]
    return material_data(model, j, ly.name, ly.material, f"layers[{j + 1}].material", notes)


def material_data(model: Model, index: int, name: str, material: str, path: str,
                  notes: list[str], what: str = "layer") -> LayerData:
    """The hand method's view of ground named ``name`` (a layer, or a region of a mesh) made of
    ``material``; ``path`` is the field that names the material, for messages."""
    src = model.source
    if material not in model.materials:
        raise InputError(f"{what} {name!r}: unknown material {material!r}", field=path, source=src,
                         fix=f"use one of {sorted(model.materials)}.")
    m = model.materials[material]
    o = m.oedometer
    who = f"{what} {name!r} (material {m.name!r})"
    gamma_w = model.water.unit_weight

    def fail(key: str, message: str, fix: str, path: str | None = None) -> None:
        raise InputError(f"{who}: {message} (the FE run does not need it; the hand method does)",
                         field=path or _oed_path(m, key), source=src, fix=fix)

    sat = m.saturated_unit_weight if m.saturated_unit_weight is not None else m.unit_weight
    kw: dict = {"name": name, "unit_weight": float(sat), "unit_weight_above_water": float(m.unit_weight)}
    e0 = o.void_ratio if o.void_ratio is not None else m.void_ratio
    precon = {"preconsolidation_pressure": o.preconsolidation_pressure,
              "overconsolidation_ratio": o.overconsolidation_ratio,
              "preconsolidation_margin": o.preconsolidation_margin}
    given = [k for k, v in precon.items() if v is not None]
    mcc = m.model == "modified cam clay"
    k_v = _vertical_k(m)

    def preconsolidation() -> None:
        if not given:
            fail("overconsolidation_ratio", "the preconsolidation pressure is missing",
                 f"give one of overconsolidation_ratio (1.0 for a normally consolidated layer), "
                 f"preconsolidation_margin or preconsolidation_pressure under "
                 f"[materials.{m.name}.oedometer].")
        if len(given) > 1:
            fail(given[1], f"the preconsolidation pressure is given twice ({', '.join(given)})",
                 "give one of overconsolidation_ratio, preconsolidation_margin, "
                 "preconsolidation_pressure.")
        kw["preconsolidation_pressure"] = o.preconsolidation_pressure
        kw["ocr"] = o.overconsolidation_ratio
        kw["pre_overburden_pressure"] = o.preconsolidation_margin

    if o.compression_index is not None:
        if o.volume_compressibility is not None:
            fail("volume_compressibility", "both compression_index and volume_compressibility are given",
                 "give Cc, Cr, e0 and the preconsolidation, or m_v, not both.")
        if o.recompression_index is None:
            fail("recompression_index", "recompression_index (Cr) is missing beside compression_index",
                 f"add recompression_index = ... (typically Cc/10 to Cc/5) under "
                 f"[materials.{m.name}.oedometer].")
        if e0 is None:
            fail("void_ratio", "void_ratio (e0) is missing beside compression_index",
                 f"add void_ratio = ... under [materials.{m.name}.oedometer].")
        kw.update(compression_index=float(o.compression_index),
                  recompression_index=float(o.recompression_index), void_ratio=float(e0))
        preconsolidation()
    elif o.volume_compressibility is not None:
        kw["mv"] = float(o.volume_compressibility)
        if e0 is not None:
            kw["void_ratio"] = float(e0)
    elif mcc:
        if m.lambda_ is None or m.kappa is None:
            fail("compression_index", "Modified Cam Clay needs lambda and kappa (or oedometer "
                 "compression_index)", "give lambda and kappa, or the oedometer parameters.",
                 path=f"materials.{m.name}.{'lambda' if m.lambda_ is None else 'kappa'}")
        if e0 is None:
            fail("void_ratio", "void_ratio is missing", f"give void_ratio for material {m.name!r}.",
                 path=f"materials.{m.name}.void_ratio")
        cc = float(parameters.cc_from_lambda(m.lambda_))
        cr = float(parameters.cr_from_kappa(m.kappa))
        kw.update(compression_index=cc, recompression_index=cr, void_ratio=float(e0))
        preconsolidation()
        notes.append(f"{who}: Cc = lambda ln 10 = {cc:.4g}, Cr = kappa ln 10 = {cr:.4g}, "
                     f"e0 = {e0:g} from the Modified Cam Clay parameters (Schofield & Wroth 1968).")
    else:
        partial = [k for k in ("recompression_index", *precon) if getattr(o, k) is not None]
        if partial:
            fail("compression_index", f"the oedometer data are incomplete: {', '.join(partial)} "
                 "given without compression_index", f"add compression_index (Cc) under "
                 f"[materials.{m.name}.oedometer], or give volume_compressibility instead.")
        e = elastic_youngs(m)
        if e is None:
            fail("compression_index", "no compressibility for the hand method: no oedometer "
                 "parameters and no elastic stiffness",
                 f"give compression_index, recompression_index, void_ratio and "
                 f"overconsolidation_ratio (or volume_compressibility) under "
                 f"[materials.{m.name}.oedometer], or youngs_modulus.")
        mv = float(parameters.mv_from_elastic(e, m.poisson_ratio))
        kw["mv"] = mv
        if e0 is not None:
            kw["void_ratio"] = float(e0)
        given_e = (f"youngs_modulus = {m.youngs_modulus:g} kPa" if m.youngs_modulus is not None
                   else f"constrained_modulus = {m.constrained_modulus:g} kPa")
        cv_txt = ("" if o.consolidation_coefficient is not None else
                  f", c_v = k/(m_v gamma_w) = {k_v / (mv * gamma_w):.4g} m2/day (Terzaghi 1925)")
        notes.append(f"{who}: no oedometer compressibility given; m_v = 1/E_oed = {mv:.4g} 1/kPa "
                     f"from {given_e}, poisson_ratio = {m.poisson_ratio:g} (E_oed = E (1 - nu)/"
                     f"((1 + nu)(1 - 2 nu)), Timoshenko & Goodier 1951){cv_txt}.")
    if o.consolidation_coefficient is not None:
        kw["cv"] = float(o.consolidation_coefficient)
    else:
        kw["permeability"] = k_v
    if o.secondary_compression_index is not None:
        if "void_ratio" not in kw:
            fail("void_ratio", "void_ratio (e0) is needed with secondary_compression_index",
                 f"add void_ratio under [materials.{m.name}.oedometer].")
        kw["secondary_compression_index"] = float(o.secondary_compression_index)
    # check once, naming the model's fields (settlement.Layer names its own)
    try:
        settlement.Layer(thickness=1.0, **kw)
    except InputError as exc:
        raise InputError(f"{who}: {exc.message}", field=f"materials.{m.name}.oedometer",
                         source=src, fix=exc.fix) from None
    return LayerData(index, name, m, kw, k_v)


def free_draining(col: "Column", sigma_v0: NDArray[np.float64], first_time: float,
                  drainage, gamma_w: float) -> tuple[NDArray[np.bool_], list[str]]:
    """Which layers of a column the time rate treats as free-draining, and why (notes).

    A layer is free-draining (its pore pressure stays zero, its settlement follows the load)
    when its own consolidation is over before the first time of the estimate and it reaches a
    drained boundary directly or through other such layers: its own degree of consolidation
    reaches :data:`FREE_DRAINING_DEGREE` by ``first_time``, i.e. ``T_v = c_v t / H^2`` at the
    first time is at least Terzaghi's (1925) ``T_v`` for that degree, with the whole thickness
    H at x as the drainage path and the slowest c_v of the layer (k / (m_v gamma_w) with the
    largest m_v it can have, the compression line at sigma'_v0, or its c_v). A layer that is
    not open to a drained boundary stays in the column with its own k and m_v, whatever its c_v.

    ``sigma_v0``: (n,) initial effective stress at the middle of each hand layer of ``col``.
    Returns per hand layer of ``col`` the flag, and one note per model layer treated so.
    """
    n = len(col.layers)
    free = np.zeros(n, dtype=bool)
    if not first_time > 0.0 or n < 2:
        return free, []
    tv_needed = float(terzaghi_time_factor(FREE_DRAINING_DEGREE))
    key = [d.model_index for d in col.data]
    thick: dict[int, float] = {}
    cv: dict[int, float] = {}
    for i, (ly, j) in enumerate(zip(col.layers, key)):
        thick[j] = thick.get(j, 0.0) + ly.thickness
        if ly.cv is not None:
            c = float(ly.cv)
        else:
            if ly.compressibility == "mv":
                mv = float(ly.mv)
            elif ly.compressibility == "log":
                mv = ly.compression_index / ((1.0 + ly.void_ratio) * math.log(10.0)
                                             * max(float(sigma_v0[i]), 1e-9))
            else:
                mv = 0.0
            c = math.inf if mv <= 0.0 else float(ly.permeability) / (mv * gamma_w)
        cv[j] = min(cv.get(j, math.inf), c)
    tv = {j: (math.inf if math.isinf(cv[j]) else cv[j] * first_time / thick[j] ** 2) for j in thick}
    quick = np.array([tv[j] >= tv_needed for j in key])
    if drainage.sides:
        free |= quick
    if drainage.top:
        for i in range(n):
            if not quick[i]:
                break
            free[i] = True
    if drainage.base:
        for i in range(n - 1, -1, -1):
            if not quick[i]:
                break
            free[i] = True
    notes = []
    for j in dict.fromkeys(key):
        sel = [i for i in range(n) if key[i] == j]
        if free[sel].any():
            name = col.data[sel[0]].name
            t_own = tv_needed * thick[j] ** 2 / cv[j] if not math.isinf(cv[j]) else 0.0
            notes.append(f"layer {name!r}: free-draining in the time rate: its own consolidation "
                         f"reaches {FREE_DRAINING_DEGREE:.0%} in {t_own:.3g} days (c_v = "
                         f"{cv[j]:.3g} m2/day over its {thick[j]:.3g} m; Terzaghi 1925), before "
                         f"the first time of the estimate, {first_time:.3g} days, and it is open "
                         "to a drained boundary.")
    return free, notes


# ============================================================================ column


@dataclass
class Column:
    """The layers under one x, split at the probe depths: hand layers top to bottom."""
    x: float
    layers: list[settlement.Layer]
    data: list[LayerData]          # per hand layer
    tops: NDArray[np.float64]       # (n + 1,) depths of the layer faces, m
    free: NDArray[np.bool_]         # (n,) free-draining in the time rate (see free_draining)
    eu: NDArray[np.float64]         # (n,) undrained modulus E_u, kPa (NaN: not given)
    pore_pressure: object = None    # u(z) at the start, kPa (None: hydrostatic)
    initial_excess: object = None   # u_e0(z), kPa (None: none)
    top_elevation: float = 0.0      # elevation of depth 0 (the original ground, or a mesh column's top)
    water_depth: float = 0.0        # depth of the water table below the column's top, m
    source: str = ""                # where the column came from, when not the model's layers


def layer_faces(model: Model, x: float, n_layers: int) -> NDArray[np.float64]:
    """Depths (m) of the top of each model layer and of the base of the model at x."""
    ext = domain_extent(model)
    if ext is None:
        faces = np.concatenate([[0.0], np.cumsum([ly.thickness for ly in model.layers])])
    else:
        col = LayerColumn(ext[0], ext[1], np.array([ly.thickness for ly in model.layers], float),
                          np.array([ly.thickness if ly.thickness_right is None else ly.thickness_right
                                    for ly in model.layers], float), [])
        faces = -col.tops(np.array([float(x)]))[0]
        base = base_elevation(model, x)
        if base is not None:
            faces[-1] = -base
    faces = np.minimum(faces, faces[-1])
    return faces


def start_water(model: Model, x: float):
    """The pore pressure at the start under x as functions of depth z (m): ``(u(z), u_e0(z))``
    in kPa, the whole pore pressure (steady seepage between piezometric levels plus the
    initial excess) and the initial excess alone, as the FE run starts from them
    (:mod:`solver.pore_water`); ``(None, None)`` when it is hydrostatic below the table."""
    w = model.water
    if not (w.piezometric_depths or w.initial_excess_pore_pressures):
        return None, None
    n = len(model.layers)
    elev = -layer_faces(model, x, n)[None, :]
    water = layer_water(model, lambda xs: np.broadcast_to(elev, (len(xs), n + 1)))

    def parts(z):
        z = np.asarray(z, dtype=float)
        us, ue = water(np.full(z.size, float(x)), -z.ravel())
        return us.reshape(z.shape), ue.reshape(z.shape)

    return (lambda z: sum(parts(z))), (lambda z: parts(z)[1])


@dataclass
class SectionColumns:
    """The ground of a section given as a mesh, as plain data for the hand method (read from
    the mesh by :mod:`solver.hand_section`; the hand method never imports the mesh).

    ``column(x)``: the regions the vertical at x crosses, top down, as (region name, y top,
    y bottom) in m (elevation, up positive), the regions placed by lift stages left out;
    ``lifts``: region placed by a lift stage -> (x, thickness) in m along the section;
    ``x_span``: the section's x range; ``source``: the mesh file, named in the notes.
    """
    column: Callable[[float], list[tuple[str, float, float]]]
    lifts: dict[str, tuple[NDArray[np.float64], NDArray[np.float64]]]
    x_span: tuple[float, float]
    source: str


def build_column(model: Model, data: list[LayerData], x: float, split: Sequence[float]
                 ) -> Column:
    """The model's layers under x (sloping layers at their local thickness), split at the
    depths ``split``; depths from the original ground surface."""
    faces = layer_faces(model, x, len(data))
    segments = [(d, float(faces[j]), float(faces[j + 1])) for j, d in enumerate(data)]
    return column_of(model, segments, x, split, top=0.0, water=start_water(model, x))


def mesh_column(model: Model, section: SectionColumns, data: dict[str, LayerData], x: float,
                split: Sequence[float]) -> Column:
    """The regions of a mesh section under x, read from the mesh, split at the depths
    ``split`` below the top of the column there (the highest region at x)."""
    pieces = section.column(float(x))
    if not pieces:
        raise InputError(f"the vertical at x = {x:g} m meets no region of the mesh "
                         f"({section.source})", field="probes", source=model.source,
                         fix="place the probe over the section.")
    top = float(pieces[0][1])
    segments = []
    for name, a, b in pieces:
        if name not in data:
            raise InputError(f"mesh region {name!r} has no material", field="section.regions",
                             source=model.source, fix=f"add {name} = \"MATERIAL\" to [section.regions].")
        segments.append((data[name], top - a, top - b))
    col = column_of(model, segments, x, split, top=top)
    w = model.water
    if w.piezometric_depths or w.initial_excess_pore_pressures:
        raise InputError("the hand method on a section given as a mesh takes the pore water "
                         "hydrostatic below the water table; piezometric levels and initial "
                         "excess pore pressures are read for [[layers]] only",
                         field="water", source=model.source,
                         fix="give the section as [[layers]] for the hand method, or compare "
                             "the finite elements alone.")
    col.source = (f"the column under x = {x:g} m read from the mesh ({section.source}): " +
                  ", ".join(f"{n} {top - a:.2f}-{top - b:.2f} m" for n, a, b in pieces) +
                  f" below its top at y = {top:g} m")
    return col


def column_of(model: Model, segments, x: float, split: Sequence[float], top: float,
              water=(None, None)) -> Column:
    """Hand layers from (LayerData, depth of top, depth of bottom) segments, top down, split
    at the depths ``split``; ``top``: the elevation of the column's top (depth 0); ``water``:
    (u(z), u_e0(z)) at the start (:func:`start_water`), or hydrostatic (None, None)."""
    layers, datas, tops = [], [], [0.0]
    cuts = sorted(float(d) for d in split)
    for d, a, b in segments:
        if b - a <= _TOL:
            continue
        edges = [a] + [c for c in cuts if a + _TOL < c < b - _TOL] + [b]
        for lo, hi in zip(edges, edges[1:]):
            layers.append(settlement.Layer(thickness=hi - lo, **d.kwargs))
            datas.append(d)
            tops.append(hi)
    if not layers:
        raise InputError("the hand method needs layers with thickness under the probes",
                         field="layers", source=model.source, fix="give [[layers]] with thickness.")
    tops_a = np.array(tops)
    eu = np.array([undrained_modulus(d.material) for d in datas])
    return Column(float(x), layers, datas, tops_a, np.zeros(len(layers), dtype=bool), eu,
                  water[0], water[1], top_elevation=float(top),
                  water_depth=float(model.water.table_depth) + top)


def undrained_modulus(m: Material) -> float:
    """E_u (kPa) from ``materials.NAME.undrained``: ``modulus``, or ``strength`` times
    ``modulus_ratio``; NaN when not given (it is not derived from the drained modulus)."""
    u = m.undrained
    if u.modulus is not None:
        return float(u.modulus)
    if u.strength is not None and u.modulus_ratio is not None:
        return float(u.strength) * float(u.modulus_ratio)
    return float("nan")


# ------------------------------------------------------------------ immediate settlement
