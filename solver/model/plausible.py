"""Plausibility warnings: values outside the range of real soils, echoed with their unit.

:func:`plausibility_warnings` warns (in ``check`` and at the start of ``run``, through
:func:`~solver.model.model_warnings`) about values outside the ranges met in practice
(common practice; :data:`RANGES`, listed in docs/model.md), each echoed with its unit and in
the other common unit ("1e-9 m/day = 1.2e-14 m/s"), with the likely slip when one conversion
of unit brings it into range; and about a consolidation coefficient far from
k / (m_v gamma_w). :func:`out_of_range` gives the same as (path, text), furthest out first.
"""

from __future__ import annotations

import math
from dataclasses import dataclass


def _g(v: float) -> str:
    """A number as a user reads it: 3 significant digits in plain notation from 1e-3 to 1e5
    (1600, 0.012), else 2 in e-notation written 'e-9' rather than 'e-09' (1.2e-14, 1e5)."""
    if v == 0 or not math.isfinite(v):
        return f"{v:g}"
    if 1e-3 <= abs(v) < 1e5:
        return f"{float(f'{v:.3g}'):.10g}"
    mant, exp = f"{v:.1e}".split("e")
    mant = mant.rstrip("0").rstrip(".")
    return f"{mant}e{int(exp)}"


@dataclass(frozen=True)
class Range:
    """The range of real soils for a field (common practice), and how its unit is echoed."""
    low: float
    high: float
    kind: str            # "pressure", "permeability", "unit_weight", "compressibility",
    # "consolidation_coefficient", "time", "angle", "number"
    what: str            # the soils or situations the range covers


# Ranges met in practice (common practice; they are wide on purpose: a value outside is far
# from any soil, which is what a slip of unit or magnitude gives).
RANGES: dict[str, Range] = {
    "youngs_modulus": Range(100.0, 1e6, "pressure", "0.1 MPa (peat) to 1000 MPa (dense gravel)"),
    "constrained_modulus": Range(100.0, 2e6, "pressure",
                                 "0.1 MPa (peat) to 2000 MPa (dense gravel)"),
    "poisson_ratio": Range(0.0, 0.45, "number", "drained soils: 0.1 to 0.4"),
    "permeability_x": Range(1e-12 * 86400, 86400.0, "permeability",
                            "1e-12 m/s (intact clay) to 1 m/s (clean gravel)"),
    "permeability_y": Range(1e-12 * 86400, 86400.0, "permeability",
                            "1e-12 m/s (intact clay) to 1 m/s (clean gravel)"),
    "unit_weight": Range(10.0, 25.0, "unit_weight",
                         "10 kN/m3 (peat) to 25 kN/m3 (dense rockfill); lightweight fills "
                         "(geofoam, expanded clay) are lighter"),
    "saturated_unit_weight": Range(10.0, 25.0, "unit_weight",
                                   "10 kN/m3 (peat) to 25 kN/m3 (dense rockfill)"),
    "k0": Range(0.3, 3.0, "number", "0.3 (dense sand) to 3 (heavily overconsolidated clay)"),
    "friction_angle": Range(15.0, 50.0, "angle", "15 deg (plastic clay) to 50 deg (rockfill)"),
    "lambda_": Range(0.002, 5.0, "number", "0.002 (sand) to 5 (fibrous peat)"),
    "kappa": Range(5e-4, 1.0, "number", "5e-4 (sand) to 1 (peat)"),
    "M": Range(0.6, 1.8, "number", "0.6 to 1.8 (phi' of 16 to 44 deg)"),
    "void_ratio": Range(0.15, 15.0, "number", "0.15 (well-graded gravel) to 15 (fibrous peat)"),
    "oedometer.compression_index": Range(0.005, 15.0, "number",
                                         "0.005 (sand) to 15 (fibrous peat)"),
    "oedometer.recompression_index": Range(5e-4, 2.0, "number", "5e-4 (sand) to 2 (peat)"),
    "oedometer.void_ratio": Range(0.15, 15.0, "number",
                                  "0.15 (well-graded gravel) to 15 (fibrous peat)"),
    "oedometer.overconsolidation_ratio": Range(1.0, 50.0, "number",
                                               "1 to 50 (a desiccated crust near the surface)"),
    "oedometer.preconsolidation_pressure": Range(1.0, 1e4, "pressure", "1 kPa to 10 MPa"),
    "oedometer.preconsolidation_margin": Range(0.0, 2000.0, "pressure", "0 to 2 MPa"),
    "oedometer.volume_compressibility": Range(1e-6, 1e-2, "compressibility",
                                              "1e-6 1/kPa (dense gravel) to 1e-2 1/kPa (peat)"),
    "oedometer.consolidation_coefficient": Range(0.01 / 365.25, 1e5 / 365.25,
                                                 "consolidation_coefficient",
                                                 "0.01 m2/year (plastic clay) to 1e5 m2/year "
                                                 "(sand)"),
    "oedometer.secondary_compression_index": Range(0.0, 1.0, "number", "0 to 1 (peat)"),
}
WATER_RANGE = Range(9.5, 10.5, "unit_weight", "9.81 kN/m3 (fresh water) to 10.1 kN/m3 "
                                              "(sea water)")
PRESSURE_RANGE = Range(1.0, 5000.0, "pressure", "1 kPa to 5 MPa (loads on the ground)")
DURATION_RANGE = Range(0.0, 1000 * 365.25, "time", "up to 1000 years")
CV_FACTOR = 10.0      # c_v given this many times off k / (m_v gamma_w) is a slip


# Conversions that a slip of unit would need: (factor to multiply the value by, what the
# user probably meant). A hint is given when exactly this brings the value into range.
_SLIPS = {
    "pressure": ((1e3, "the value in MPa ({v} MPa = {c} kPa): write \"{v} MPa\""),
                 (1e-3, "the value in Pa ({v} Pa = {c} kPa): write \"{v} Pa\"")),
    "permeability": ((86400.0, "m/s ({v} m/s = {c} m/day): write \"{v} m/s\""),
                     (864.0, "cm/s ({v} cm/s = {c} m/day): write \"{v} cm/s\"")),
    "unit_weight": ((9.81e-3, "a density in kg/m3 ({v} kg/m3 weighs {c} kN/m3)"),
                    (9.81, "a density in t/m3 ({v} t/m3 weighs {c} kN/m3)")),
    "compressibility": ((1e-3, "the value in 1/MPa ({v} 1/MPa = {c} 1/kPa): write "
                               "\"{v} 1/MPa\""),),
    "consolidation_coefficient": ((1 / 365.25, "m2/year ({v} m2/year = {c} m2/day): write "
                                               "\"{v} m2/year\""),
                                  (8.64, "cm2/s ({v} cm2/s = {c} m2/day): write "
                                         "\"{v} cm2/s\"")),
    "time": ((1.0 / 24, "hours"),),
}


def echo(value: float, kind: str) -> str:
    """A value with its unit and in the other common unit: "1e-9 m/day = 1.2e-14 m/s"."""
    v = value
    if kind == "permeability":
        return f"{_g(v)} m/day = {_g(v / 86400)} m/s"
    if kind == "pressure":
        return f"{_g(v)} kPa = {_g(v / 1000)} MPa"
    if kind == "unit_weight":
        return unit_weight_text(v)
    if kind == "compressibility":
        return f"{_g(v)} 1/kPa = {_g(v * 1000)} 1/MPa"
    if kind == "consolidation_coefficient":
        return f"{_g(v)} m2/day = {_g(v * 365.25)} m2/year"
    if kind == "time":
        return f"{_g(v)} days = {_g(v / 365.25)} years"
    if kind == "angle":
        return f"{_g(v)} deg"
    return _g(v)


def unit_weight_text(v: float) -> str:
    """A unit weight and the density it stands for: "1.6 kN/m3 (a density of 0.163 t/m3)"."""
    return f"{_g(v)} kN/m3 (a density of {_g(v / 9.81)} t/m3)"


def _density_hint(v: float) -> str:
    for f, words in _SLIPS["unit_weight"]:
        c = v * f
        if 10.0 <= c <= 25.0:
            return "; if " + _g(v) + " is " + words.format(v=_g(v), c=_g(c)) + \
                f", write unit_weight = \"{_g(c)} kN/m3\""
    return ""


def _slip_hint(v: float, r: Range) -> str:
    for f, words in _SLIPS.get(r.kind, ()):
        c = v * f
        if r.low <= c <= r.high:
            return f"; perhaps {words.format(v=_g(v), c=_g(c))}"
    return ""


def _material_values(model):
    for name, m in model.materials.items():
        for attr, r in RANGES.items():
            obj, key = (m.oedometer, attr.split(".", 1)[1]) if attr.startswith("oedometer.") \
                else (m, attr)
            v = getattr(obj, key, None)
            if v is None or isinstance(v, bool) or not isinstance(v, (int, float)):
                continue
            same = m.permeability_y is None or m.permeability_y == m.permeability_x
            if key == "permeability_y" and same:
                continue    # one value for both directions: warn once, as "permeability"
            toml = "lambda" if key == "lambda_" else key
            if key == "permeability_x" and same:
                toml = "permeability"
            path = f"materials.{name}." + ("oedometer." if obj is m.oedometer else "") + toml
            yield path, float(v), r


def _other_values(model):
    yield "water.unit_weight", model.water.unit_weight, WATER_RANGE
    for i, f in enumerate(model.section.footings if model.section.kind == "footings" else []):
        if f.load is not None:
            yield f"section.footings[{i + 1}].load", f.load, PRESSURE_RANGE
    for i, ld in enumerate(model.loads):
        yield f"loads[{i + 1}].pressure", ld.pressure, PRESSURE_RANGE
    for i, st in enumerate(model.stages):
        yield f"stages[{i + 1}].duration", st.duration, DURATION_RANGE


def out_of_range(model) -> list[tuple[str, str]]:
    """(path, warning) for each value outside the range of real soils, the furthest out
    (by the factor it is off) first."""
    rows = []
    for path, v, r in list(_material_values(model)) + list(_other_values(model)):
        if not math.isfinite(v) or r.low <= v <= r.high:
            continue
        if v == 0 and r.low == 0:
            continue
        if r.kind == "number" and r.low <= 0:
            off = abs(v - r.high) if v > r.high else abs(v - r.low)
        else:
            edge = r.high if v > r.high else r.low
            off = abs(math.log10(abs(v) / edge)) if v > 0 and edge > 0 else math.inf
        side = "above" if v > r.high else "below"
        text = (f"{path.rsplit('.', 1)[-1]} = {echo(v, r.kind)} is {side} the range of "
                f"{r.what} (common practice){_slip_hint(v, r)}")
        if path.endswith(".void_ratio") and v > r.high:
            text += (f"; a void ratio of {_g(v)} is a porosity of {_g(v / (1 + v))}; a water "
                     f"content of {_g(v)} % gives e = w Gs, about {_g(v / 100 * 2.65)}")
        rows.append((off, path, text))
    rows.sort(key=lambda t: -t[0])
    return [(p, t) for _, p, t in rows]


def consolidation_warnings(model) -> list[tuple[str, str]]:
    """(path, warning) for each c_v given more than :data:`CV_FACTOR` times off
    k / (m_v gamma_w) (Terzaghi 1925): the hand method would use the one, the finite elements
    the other. m_v is ``volume_compressibility``, else from Cc (and Cr when the layer is
    overconsolidated) at the initial effective stress in the middle of the layer, else
    1 / constrained modulus of the elastic parameters."""
    gw = model.water.unit_weight
    out = []
    mids = _mid_layer_stress(model)
    for name, m in model.materials.items():
        o = m.oedometer
        cv = o.consolidation_coefficient
        if cv is None or not m.permeability_y or m.permeability_y <= 0:
            continue
        mvs = _mv_range(m, mids.get(name))
        if not mvs:
            continue
        implied = sorted(m.permeability_y / (mv * gw) for mv, _ in mvs)
        lo, hi = implied[0], implied[-1]
        if lo / CV_FACTOR <= cv <= hi * CV_FACTOR:
            continue
        ref = lo if cv < lo else hi
        basis = "; ".join(f"{how}" for _, how in mvs)
        path = f"materials.{name}.oedometer.consolidation_coefficient"
        out.append((path, f"consolidation_coefficient = {echo(cv, 'consolidation_coefficient')} "
                          f"is {_g(cv / ref if cv > ref else ref / cv)} times "
                          f"{'more' if cv > ref else 'less'} than k / (m_v gamma_w) = "
                          f"{echo(ref, 'consolidation_coefficient')} ({basis}; k = "
                          f"{echo(m.permeability_y, 'permeability')}): the hand method uses "
                          f"c_v, the finite elements k, so their times will differ by that "
                          f"factor; check the units of both"))
    return out


def _mid_layer_stress(model) -> dict[str, float]:
    """Initial vertical effective stress in the middle of the first layer of each material,
    at the left edge of the section, kPa (hydrostatic water below the table)."""
    gw, table = model.water.unit_weight, model.water.table_depth
    out: dict[str, float] = {}
    top, sv = 0.0, 0.0
    for la in model.layers:
        m = model.materials.get(la.material)
        if m is None:
            break
        sat = m.saturated_unit_weight if m.saturated_unit_weight is not None else m.unit_weight
        for z0, z1, store in ((top, top + la.thickness / 2, True),
                              (top + la.thickness / 2, top + la.thickness, False)):
            dry = max(0.0, min(z1, table) - z0) if table > z0 else 0.0
            sv += m.unit_weight * dry + sat * ((z1 - z0) - dry)
            if store and la.material not in out:
                out[la.material] = sv - gw * max(0.0, z1 - table)
        top += la.thickness
    return out


def _mv_range(m, s0: float | None) -> list[tuple[float, str]]:
    o = m.oedometer
    if o.volume_compressibility:
        return [(o.volume_compressibility,
                 f"m_v = {echo(o.volume_compressibility, 'compressibility')}")]
    if o.compression_index and o.void_ratio and s0 and s0 > 0:
        e0 = o.void_ratio
        out = [(0.434 * o.compression_index / ((1 + e0) * s0),
                f"m_v from Cc = {_g(o.compression_index)} at sigma'_v0 = {_g(s0)} kPa")]
        oc = (o.overconsolidation_ratio not in (None, 1.0) or bool(o.preconsolidation_margin)
              or (o.preconsolidation_pressure is not None and o.preconsolidation_pressure > s0))
        if oc and o.recompression_index:
            out.append((0.434 * o.recompression_index / ((1 + e0) * s0),
                        f"from Cr = {_g(o.recompression_index)}"))
        return out
    e_oed = m.constrained_modulus
    if e_oed is None and m.youngs_modulus is not None and -1 < m.poisson_ratio < 0.5:
        nu = m.poisson_ratio
        e_oed = m.youngs_modulus * (1 - nu) / ((1 + nu) * (1 - 2 * nu))
    if e_oed:
        return [(1.0 / e_oed, f"m_v = 1 / E_oed, E_oed = {echo(e_oed, 'pressure')}")]
    return []


def plausibility_warnings(model) -> list[str]:
    """Warnings (not errors) about values outside the range of real soils and about a c_v
    far from k / (m_v gamma_w), each naming its field: "path: text"."""
    rows = out_of_range(model) + consolidation_warnings(model)
    return [f"{path}: {text}." for path, text in rows]
