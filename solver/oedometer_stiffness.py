"""Stiffness from the oedometer: the constrained modulus of a linear elastic layer taken from
its oedometer data over the stress range the load imposes.

A layer whose material sets ``stiffness_from_oedometer = true`` has no modulus of its own.
Under the centre of the loaded zone (x = 0 in a half model) the hand method
(:func:`solver.hand.estimate.hand_estimate`) gives each of its sublayers the effective
stress at the start sigma'_v0, the final one sigma'_vf (the loads in place at the end of the
stages, spread by the half-space solution, and any initial excess pore pressure dissipated)
and the one-dimensional strain between them along the stress path of the stages (Cc above
sigma'_p, Cr below it and on unloading, or m_v; Terzaghi & Peck 1948). Its constrained
modulus is the secant ``E_oed = (sigma'_vf - sigma'_v0) / strain``; where the load changes
the effective stress by less than :data:`TANGENT_BELOW` of sigma'_v0, it is the tangent at
sigma'_v0 (``ln 10 (1 + e0) sigma'_v0 / Cr`` below sigma'_p, with Cc on it; ``1 / m_v``).

The finite elements give each element of the layer the modulus of the sublayers its depth
range covers, in series (the mean of 1 / E_oed over the range: the compliance a vertical line
through the element sees), at the same relative position in the layer, so that a sloping
layer keeps the profile of the column; Poisson's ratio is the material's. Then the finite
elements and the hand method start from the same soil: under a load covering the whole width
(one-dimensional) they give the same final settlement, to the discretisation.

The values are part of the run's output (``summary.json`` and ``oedometer_moduli.csv``,
printed by ``run``, tabled in the report). Units: kPa, m.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

import numpy as np

from .errors import InputError
from .model import Model, PointProbe, loaded_extent

__all__ = ["TANGENT_BELOW", "SublayerModulus", "oedometer_moduli", "element_moduli",
           "moduli_rows", "moduli_csv", "moduli_table", "MODULI_COLUMNS"]

TANGENT_BELOW = 0.01
"""Relative change of effective stress below which the tangent modulus is used (a secant over
a vanishing range is the tangent; the cut-off only avoids dividing round-off by round-off)."""


@dataclass(frozen=True)
class SublayerModulus:
    """The constrained modulus of one sublayer of a layer under the reference column:
    ``top_m``, ``bottom_m`` depths below the ground there, stresses in kPa, ``line`` the
    part of the oedometer curve used."""
    layer: str
    top_m: float
    bottom_m: float
    sigma_v0_kPa: float
    sigma_v_final_kPa: float
    preconsolidation_kPa: float
    line: str
    constrained_modulus_kPa: float


MODULI_COLUMNS = ("layer", "top_m", "bottom_m", "sigma_v0_kPa", "sigma_v_final_kPa",
                  "preconsolidation_kPa", "line", "constrained_modulus_kPa")


def _flagged(model: Model) -> list[int]:
    return [j for j, ly in enumerate(model.layers)
            if getattr(model.materials.get(ly.material), "stiffness_from_oedometer", False)]


def reference_x(model: Model) -> float:
    """The column the moduli are taken under: the centre of the loaded zone (0 without
    loads, and in a half or axisymmetric model)."""
    ext = loaded_extent(model)
    if ext is None or model.section.half or model.analysis == "axisymmetric":
        return 0.0
    return 0.5 * (ext[0] + ext[1])


def oedometer_moduli(model: Model) -> list[SublayerModulus]:
    """The moduli of every sublayer of the layers whose material takes its stiffness from the
    oedometer (empty when none does); see the module docstring."""
    flagged = _flagged(model)
    if not flagged:
        return []
    from .hand.estimate import hand_estimate
    from .hand.ground import layer_faces, start_water
    x = reference_x(model)
    column = dataclasses.replace(model, probes=[PointProbe("oedometer column", x, 0.0)],
                                 lines=[])
    est = hand_estimate(column).probe("oedometer column")
    faces = layer_faces(model, x, len(model.layers))
    _, excess = start_water(model, x)
    names = list(est.sublayer_layer)
    s0 = np.asarray(est.initial_effective_stress_kPa, float)
    sf = s0 + np.asarray(est.stress_increase_kPa, float)
    if excess is not None:
        sf = sf + excess(np.asarray(est.depth_m, float))
    sp = np.asarray(est.preconsolidation_pressure_kPa, float)
    strain_of = np.asarray(est.sublayer_settlement_m, float)
    out: list[SublayerModulus] = []
    k = 0
    for j, ly in enumerate(model.layers):
        a, b = float(faces[j]), float(faces[j + 1])
        if b - a <= 1e-9:
            continue
        n = 0
        while k + n < len(names) and names[k + n] == ly.name and \
                est.depth_m[k + n] < b + 1e-9:
            n += 1
        if j in flagged:
            mat = model.materials[ly.material]
            edges = np.linspace(a, b, n + 1)
            for i in range(n):
                h = edges[i + 1] - edges[i]
                out.append(_modulus(ly.name, mat, edges[i], edges[i + 1], s0[k + i],
                                    sf[k + i], sp[k + i], strain_of[k + i] / h))
        k += n
    return out


def _modulus(layer, mat, top, bottom, s0, sf, sp, strain) -> SublayerModulus:
    o = mat.oedometer
    e0 = o.void_ratio if o.void_ratio is not None else mat.void_ratio
    ds = sf - s0
    if o.volume_compressibility is not None:
        line, e = "m_v", 1.0 / o.volume_compressibility
    elif abs(ds) > TANGENT_BELOW * max(s0, 1e-9) and strain != 0.0:
        e = ds / strain
        lo, hi = min(s0, sf), max(s0, sf)
        line = ("recompression" if hi <= sp * (1 + 1e-9) else "compression"
                if lo >= sp * (1 - 1e-9) else "recompression and compression")
    else:
        on_line = s0 >= sp * (1 - 1e-9)
        c = o.compression_index if on_line else o.recompression_index
        line = "compression (tangent)" if on_line else "recompression (tangent)"
        e = np.log(10.0) * (1.0 + e0) * max(s0, 1e-6) / c
    if not (np.isfinite(e) and e > 0):
        raise InputError(f"layer {layer!r}: no positive constrained modulus from the "
                         f"oedometer over {s0:.3g} to {sf:.3g} kPa",
                         field=f"materials.{mat.name}.stiffness_from_oedometer",
                         fix="check the oedometer parameters, or give constrained_modulus.")
    return SublayerModulus(layer, float(top), float(bottom), float(s0), float(sf),
                           float(sp), line, float(e))


def element_moduli(model: Model, mesh, moduli: list[SublayerModulus]
                   ) -> tuple[np.ndarray, dict[str, float]]:
    """(modulus factor per element (ne,), reference constrained modulus per layer region):
    an element of a flagged layer gets E_oed = reference x factor, the mean compliance of the
    sublayers over its depth range at its relative position in the layer."""
    from .initial import LayerColumn
    scale = np.ones(mesh.n_elements)
    ref: dict[str, float] = {}
    col = LayerColumn.from_model(model, mesh.points[:, 0].min(), mesh.points[:, 0].max())
    corners = mesh.points[mesh.triangles[:, :3]]                     # (ne, 3, 2)
    xc = corners[..., 0].mean(axis=1)
    tops = col.tops(xc)                                              # (ne, nl + 1)
    for j, ly in enumerate(model.layers):
        rows = [m for m in moduli if m.layer == ly.name]
        if not rows or ly.name not in mesh.region_names:
            continue
        e = np.flatnonzero(mesh.region == mesh.region_id(ly.name))
        # the reference column's sublayers in relative depth through the layer
        t0, t1 = rows[0].top_m, rows[-1].bottom_m
        r_edges = (np.array([r.top_m for r in rows] + [t1]) - t0) / (t1 - t0)
        comp = np.concatenate([[0.0], np.cumsum(np.diff(r_edges) / np.array(
            [r.constrained_modulus_kPa for r in rows]))])               # int 1/E dr
        # an element's relative depth range in its own layer at its x
        top, bot = tops[e, j], tops[e, j + 1]
        thick = np.maximum(top - bot, 1e-12)
        ra = np.clip((top - corners[e, :, 1].max(axis=1)) / thick, 0.0, 1.0)
        rb = np.clip((top - corners[e, :, 1].min(axis=1)) / thick, 0.0, 1.0)
        span = np.maximum(rb - ra, 1e-12)
        mean_c = (np.interp(rb, r_edges, comp) - np.interp(ra, r_edges, comp)) / span
        e_ref = float(np.median([r.constrained_modulus_kPa for r in rows]))
        ref[ly.name] = e_ref
        scale[e] = 1.0 / (mean_c * e_ref)
    return scale, ref


def moduli_rows(moduli: list[SublayerModulus]) -> list[dict]:
    """The moduli as rows of plain values (for summary.json and the CSV)."""
    return [dataclasses.asdict(m) for m in moduli]


def moduli_csv(moduli: list[SublayerModulus]) -> str:
    """The moduli as CSV text, one row per sublayer, units in the column names."""
    lines = [",".join(MODULI_COLUMNS)]
    for m in moduli:
        vals = dataclasses.astuple(m)
        lines.append(",".join(v if isinstance(v, str) else f"{v:.6g}" for v in vals))
    return "\n".join(lines) + "\n"


def moduli_table(moduli: list[SublayerModulus]) -> str:
    """The moduli as text lines for the terminal."""
    out = ["constrained modulus from the oedometer (stiffness_from_oedometer), by sublayer "
           "under the centre of the load:",
           f"  {'layer':14s} {'depth (m)':>13s} {'sigma_v0':>9s} {'sigma_vf':>9s} "
           f"{'E_oed (kPa)':>12s}  line"]
    for m in moduli:
        out.append(f"  {m.layer:14s} {m.top_m:6.2f}-{m.bottom_m:<6.2f} {m.sigma_v0_kPa:9.1f} "
                   f"{m.sigma_v_final_kPa:9.1f} {m.constrained_modulus_kPa:12,.0f}  {m.line}")
    return "\n".join(out)
