"""The hand estimate of a whole model: what the engineer would work out beside the FE run.

:func:`hand_estimate` reads the same :class:`solver.model.Model` the finite-element run reads
and, for every point probe, puts together the pure functions of this package:

1. **Stress increase** under the probe from every load the stages apply, per unit factor, so
   that each stage's change of the load factors gives its stress change (elastic half-space,
   superposition; :mod:`solver.hand.stress`):

   - the embankment as the full symmetric section (a half model is the right half of it),
     lift by lift: the pressure of lift n is the fill unit weight times the part of the fill
     height between the base and top of that lift, a piecewise-linear strip pressure done in
     closed form (:func:`~solver.hand.stress.profile_load_stress`; Osterberg 1957 style
     superposition). In axisymmetry the embankment is a circular mound, taken as a stack of
     uniform discs (:data:`STAIRCASE_STEPS` per embankment height);
   - strip footings (plane strain) as uniform strips of ``load`` (or ``force / width``) acting
     at the footing base, ``embedment`` below the ground; the stress below the base is the
     half-space stress with the base as its surface, nothing above it (common practice). The
     pressure is the gross pressure, as in the FE run (the soil dug out for the footing is not
     counted as an unloading there either);
   - the circular footing (axisymmetry) as a uniform disc on or off its axis
     (:func:`~solver.hand.stress.circle_vertical_stress`);
   - surface loads as strips (plane strain; mirrored about x = 0 in a half model) or discs and
     rings (axisymmetry);
   - a load that covers the whole width of the section is a one-dimensional load: the sides
     of the section are on rollers, planes of symmetry, so the load is in effect infinitely
     wide: the stress increase equals the pressure at every depth and there is no immediate
     settlement (no lateral deformation).

   The 2:1 spread (:func:`~solver.hand.stress.spread_2to1_strip` and kin) is given beside it as
   a quick check: each strip (or disc) spreads at 2 vertical to 1 horizontal, and counts at
   the probe where the spread base reaches it; the embankment is spread as its stack of
   strips.

2. **Settlement per layer** below the probe in sublayers (:mod:`solver.hand.settlement`):
   Cc, Cr, e0 and sigma'_p (given directly, as OCR, or as a margin) from
   ``materials.<name>.oedometer``, or m_v; for Modified Cam Clay ``Cc = lambda ln 10``,
   ``Cr = kappa ln 10``, ``e0 = void_ratio`` (:mod:`solver.hand.parameters`); where only
   elastic parameters exist, ``m_v = 1 / E_oed`` and ``c_v = k / (m_v gamma_w)``, and a note
   says so. A layer with none of these raises :class:`~solver.errors.InputError` naming the
   layer and the missing field. The initial effective stress comes from the water table and
   the unit weights (``unit_weight`` above the water table, ``saturated_unit_weight`` below,
   as in :mod:`solver.initial`), via :func:`~solver.hand.settlement.vertical_effective_stress`.

   A probe on the ground surface (or in the embankment fill above it) gives the settlement of
   the ground at its x; a probe inside the ground gives the settlement of the soil *below its
   depth* (which is what a point at that depth moves down by). The fill's own compression is
   not included.

3. **Immediate (undrained elastic) settlement** of strips and discs on the layered ground down
   to the base of the model (a rigid base): the influence functions of
   :mod:`solver.hand.elastic` summed layer by layer (:mod:`solver.hand.immediate`), each layer
   with its own undrained modulus (Steinbrenner 1934, *Tafeln zur Setzungsberechnung*, Die
   Strasse 1: the half-space strain integrated between the layer's faces). The undrained
   modulus is the one the user gives in ``materials.NAME.undrained`` (``modulus``, or
   ``strength`` times ``modulus_ratio``); a layer without it adds no immediate settlement and
   the notes say so: it is not derived from the drained modulus, since the oedometer
   settlement already holds the whole drained volume change and an undrained distortion
   worked out from drained stiffness would overstate the total. Free-draining layers (below)
   have no undrained stage: their settlement is all in the consolidation part. The
   embankment is a stack of uniform strips for this. Under a rigid footing (a probe at its
   base, inside its width) the immediate settlement is the mean of the flexible profile
   across the width (strip) or ``pi/4`` of the centre value (disc), as in
   :mod:`solver.hand.elastic`, and the stress increase of that footing is taken at the
   characteristic point, 0.37 B from the centre of a strip and 0.845 R from that of a circle
   (Grasshoff 1955, *Setzungsberechnungen starrer Fundamente mit Hilfe des kennzeichnenden
   Punktes*, Der Bauingenieur 30; values from memory), where the flexible settlement equals
   the rigid one. Beside the loaded area the immediate part is a heave; it is carried into
   the final value with a note saying so.

   Where a layer gives Skempton's A (``undrained.pore_pressure_parameter``) its oedometer
   settlement is multiplied, sublayer by sublayer, by the Skempton-Bjerrum (1957) factor
   ``[ds3 + A (ds1 - ds3)] / ds_z`` of the elastic stresses under the final load
   (:func:`~solver.hand.settlement.skempton_bjerrum_factor`), shown per layer.

4. **Secondary compression** with C_alpha from the end of primary consolidation ``t_p`` (the
   time the soil below the probe reaches U = 95 %, :data:`END_OF_PRIMARY_DEGREE`; common
   practice, see :func:`~solver.hand.settlement.secondary_compression_settlement`) to the end
   of the last stage, times counted from the start of the first stage.

5. **Through the stages** (:mod:`solver.hand.history`): the stages become a load history (a
   lift's weight ramps on over its stage, a load stage ramps the named loads to their new
   factor, a consolidate stage waits), one stress increment per stage that changes the load.
   Each sublayer follows its stress path: the settlement under each load level is the 1D
   settlement at that stress, on the compression line above sigma'_p and on the
   recompression line (Cr) on unloading and reloading below the largest effective stress
   reached, which the degree of consolidation reached before each change sets (a surcharge
   removed at U = 90 % rebounds from the stress reached then). The time curve is built stage
   by stage by superposing each increment's consolidation (Terzaghi 1925; Olson 1977 for a
   ramp), from the layered one-dimensional finite-difference column
   (:func:`~solver.hand.rate.layered_consolidation`) with, in each layer, the m_v of that
   increment and the layer's c_v (or k), drained at the top if ``drainage.top`` and at the
   base if ``drainage.base``. A layer is free-draining (u = 0 in it) when its own
   consolidation is over (U = :data:`FREE_DRAINING_DEGREE`) before the first time of the
   estimate and it reaches a drained boundary (the top, the base, or drained sides) directly
   or through other such layers (:func:`~solver.hand.ground.free_draining`; the notes say
   which and why); any other layer stays in the column with its own k and m_v. A stage with
   ``until_degree`` runs its full duration here (the FE run may end it earlier).
   From the solution: settlement(t); per stage the settlement at its end, the settlement its
   load would give held for ever and the degree reached (``ProbeEstimate.stages``); t50 and
   t90 (times to 50 % and 90 % of the final consolidation settlement of the soil below the
   probe, from the start of the first stage); the largest excess pore pressure at the probe's
   depth (probes inside the ground; NaN on a drained surface or in a free-draining layer).

6. **Differential settlement** between neighbouring probes on the ground surface (or on a
   footing base, or in the fill above the ground) sorted by x, with the limits that fit
   (:func:`solver.hand.differential.surface_pairs`): along the ground (an embankment) the
   differential settlement and the change of gradient, checked against the user's
   ``[limits]``; between neighbouring footing bases and the probes of a named
   ``[[structures]]`` the angular distortion, checked against the building limits of Bjerrum
   (1963; values from memory).

The final settlement is ``immediate + consolidation (U = 100 %) + secondary to the end of
the last stage``, and ``ProbeEstimate.how_found`` says how each part was found. The
settlement history is ``immediate(t) + consolidation(t) + secondary(t)``; the immediate part
follows the load factors.

Units: kN, m, kPa, kN/m3, days; depth z positive downward from the original ground surface.
The steps live in modules of one job: :mod:`solver.hand.loads` (the model's loads as
elementary parts), :mod:`solver.hand.ground` (layers, parameters, the column under a probe),
:mod:`solver.hand.stages` (the stages as load pieces), :mod:`solver.hand.history` (the
settlement through the history), :mod:`solver.hand.immediate` (the immediate settlement of a
load on the column); this module puts them together.
They read :mod:`solver.model` and :mod:`solver.initial` and never the FE code.
"""

from __future__ import annotations

import numpy as np

from solver.errors import InputError
from solver.model import Model, domain_extent

from . import differential, settlement
from .elastic import disc_displacement
from .ground import (FREE_DRAINING_DEGREE, LayerData, SectionColumns, build_column, free_draining,
                     layer_data, material_data, mesh_column)
from .loads import (STAIRCASE_STEPS, model_loads, on_rigid_base, part_horizontal_stress,
                    part_spread, part_stress, within_footing)
from .probe import END_OF_PRIMARY_DEGREE, column_solution, probe_estimate
from .records import (DifferentialEstimate, GradientChange, HandEstimate, ProbeEstimate,
                      StageEstimate)
from .stages import default_times, schedule

__all__ = [
    "FREE_DRAINING_DEGREE",
    "END_OF_PRIMARY_DEGREE",
    "STAIRCASE_STEPS",
    "ProbeEstimate",
    "StageEstimate",
    "DifferentialEstimate",
    "HandEstimate",
    "hand_estimate",
    "disc_displacement",
]

RIGID_STRIP_CHARACTERISTIC = 0.37
"""Characteristic point of a rigid strip: this fraction of B from its centre (Grasshoff 1955;
from memory)."""

RIGID_CIRCLE_CHARACTERISTIC = 0.845
"""Characteristic point of a rigid circle: this fraction of R from its centre (Grasshoff 1955;
from memory)."""

_TOL = 1e-9


# ============================================================================ the estimate


def hand_estimate(model: Model, times=None, max_sublayer_thickness: float | None = None,
                  section: SectionColumns | None = None) -> HandEstimate:
    """The hand estimate of every point probe of ``model`` (see the module docstring).

    Parameters
    ----------
    model : Model
        The model as the FE run reads it.
    times : array_like, optional
        Times (days, from the start of the first stage) of the settlement histories; default:
        0, a logarithmic and a linear grid to the end of the last stage, the output times and
        every stage start and end.
    max_sublayer_thickness : float, optional
        Sublayer thickness (m); default ``min(0.5, B/4)`` (at least 0.02 m), B the narrowest
        loaded width.
    section : SectionColumns, optional
        For a section given as a mesh (``section.kind = "mesh"``): the soil column under each
        probe read from the mesh, and the regions placed by lift stages
        (:func:`solver.hand_section.mesh_section` builds it; :func:`solver.hand_section.estimate`
        does both). Depths are then from the top of the column at the probe's x.

    Returns
    -------
    HandEstimate

    Raises
    ------
    InputError
        A layer without the parameters the hand method needs (naming the field), no layers.
    """
    notes: list[str] = []
    axi = model.analysis == "axisymmetric"
    by_region: dict[str, LayerData] = {}
    if model.section.kind == "mesh":
        if section is None:
            raise InputError("the hand method on a section given as a mesh reads the soil column "
                             "under each probe from the mesh", field="section.mesh_file",
                             source=model.source, fix="call solver.hand_section.estimate(model) "
                             "(poroplane hand and run do).")
        by_region = {r: material_data(model, i, r, m, f"section.regions.{r}", notes, "region")
                     for i, (r, m) in enumerate(model.section.regions.items())}
        notes.append(f"the soil columns under the probes were read from the mesh "
                     f"({section.source}): the regions each vertical crosses, at their "
                     "thickness there; depths are from the top of each column.")
        ext = section.x_span
    elif not model.layers:
        raise InputError("the hand method needs [[layers]] (the ground as horizontal or sloping "
                         "layers)", field="layers", source=model.source,
                         fix="give [[layers]] with name, material and thickness.")
    else:
        data = [layer_data(model, j, notes) for j in range(len(model.layers))]
        ext = domain_extent(model)
    loads = model_loads(model, None if ext is None else (ext[0], ext[1]), notes,
                        None if section is None else section.lifts)
    pieces, final_factor, end, spans = schedule(model, loads, notes)
    active = [n for n in loads if final_factor.get(n, 0.0) != 0.0 or any(p.load == n for p in pieces)]
    knots = sorted({p.start for p in pieces} | {p.start + p.duration for p in pieces})
    t_out = (default_times(model, end, knots) if times is None
             else np.unique(np.asarray(times, dtype=float).ravel()))
    if t_out.size == 0 or np.any(t_out < 0.0):
        raise InputError("times must be >= 0 days", field="times")
    # each load's footprint width (a lift: its base; a ring: its outer diameter)
    widths = [max(p.width for p in loads[n].spread_parts) for n in active
              if any(p.shape in ("strip", "disc") for p in loads[n].spread_parts)]
    if max_sublayer_thickness is None:
        max_sub = max(min(0.5, min(widths) / 4.0) if widths else 0.5, 0.02)
    else:
        max_sub = float(max_sublayer_thickness)
    positive = t_out[t_out > 0.0]
    first_time = float(positive[0]) if positive.size else 0.0

    footing_names = {f.name for f in model.section.footings} if model.section.kind == "footings" else set()
    # probes grouped by x: one column (split at every probe depth there) and one staged solution
    groups: dict[float, list] = {}
    for pr in model.probes:
        groups.setdefault(round(float(pr.x), 9), []).append(pr)

    results: dict[str, ProbeEstimate] = {}
    for prs in groups.values():
        x = float(prs[0].x)
        top = float(section.column(x)[0][1]) if section is not None and section.column(x) else 0.0
        probe_depths = {pr.name: max(0.0, top - float(pr.y)) for pr in prs}
        depths = sorted(set(probe_depths.values()))
        col = (mesh_column(model, section, by_region, x, depths) if section is not None
               else build_column(model, data, x, depths))
        total_depth = float(col.tops[-1])
        subs = settlement.split_layers(col.layers, max_sub)
        zm = subs.mid
        gw = model.water.unit_weight
        s0_layers = settlement.vertical_effective_stress(0.5 * (col.tops[:-1] + col.tops[1:]),
                                                         col.layers, col.water_depth, gw,
                                                         col.pore_pressure)
        col.free, free_notes = free_draining(col, s0_layers, first_time, model.drainage, gw)
        notes.extend(n for n in free_notes if n not in notes)
        unit = {n: sum(part_stress(p, x, zm, axi) for p in loads[n].stress_parts) for n in active}
        unit_h = {n: sum(part_horizontal_stress(p, x, zm, axi) for p in loads[n].stress_parts)
                  for n in active}
        unit_spread = {n: sum(part_spread(p, x, zm) for p in loads[n].spread_parts) for n in active}
        final_2to1 = sum((final_factor[n] * unit_spread[n] for n in active), np.zeros_like(zm))

        depth_of = {pr.name: min(probe_depths[pr.name], total_depth) for pr in prs}
        rigid_at = {pr.name: [n for n in active if on_rigid_base(loads[n], x, depth_of[pr.name])]
                    for pr in prs}
        shared_depths = sorted({depth_of[pr.name] for pr in prs if not rigid_at[pr.name]})
        shared = (column_solution(model, col, subs, max_sub, unit, unit_h, active, pieces,
                                  final_factor, t_out, shared_depths) if shared_depths else None)
        for pr in prs:
            d = depth_of[pr.name]
            pnotes: list[str] = [col.source] if col.source else []
            if pr.y > col.top_elevation + _TOL:
                pnotes.append(f"the probe is {pr.y - col.top_elevation:g} m above the ground "
                              "(in the fill); the estimate is the settlement of the ground below "
                              "it, without the fill's own compression.")
            if rigid_at[pr.name]:
                # a rigid footing at whose base the probe sits: its stress at the characteristic point
                unit_p, unit_hp = dict(unit), dict(unit_h)
                for n in rigid_at[pr.name]:
                    ld = loads[n]
                    frac = RIGID_CIRCLE_CHARACTERISTIC if axi else RIGID_STRIP_CHARACTERISTIC
                    off = frac * (0.5 if axi else 1.0) * ld.rigid_width
                    unit_p[n] = sum(part_stress(p, ld.center + off, zm, axi) for p in ld.stress_parts)
                    unit_hp[n] = sum(part_horizontal_stress(p, ld.center + off, zm, axi)
                                     for p in ld.stress_parts)
                    pnotes.append(f"rigid footing {n!r}: its stress increase taken at the "
                                  f"characteristic point {off:.3g} m from its centre (Grasshoff "
                                  "1955; from memory), its immediate settlement as the rigid "
                                  "value.")
                sol, j = column_solution(model, col, subs, max_sub, unit_p, unit_hp, active,
                                         pieces, final_factor, t_out, [d]), 0
            else:
                sol, j = shared, shared_depths.index(d)
            est = probe_estimate(model, pr, d, col, sol, j, final_2to1, loads, active, pieces,
                                  spans, final_factor, x, t_out, end, pnotes, axi)
            on_base = any(within_footing(loads[n], x, d)
                          for n in active if n in footing_names)
            est.where = ("in the fill" if pr.y > col.top_elevation + _TOL else
                         "footing base" if on_base else
                         "ground surface" if d <= _TOL else "inside the ground")
            results[pr.name] = est
    ordered = {pr.name: results[pr.name] for pr in model.probes}
    diffs, changes = _differential(ordered, model, notes)
    return HandEstimate(model.title, model.analysis, end, ordered, diffs, notes,
                        gradient_changes=changes)


def _differential(probes: dict[str, ProbeEstimate], model: Model, notes: list[str]
                  ) -> tuple[list[DifferentialEstimate], list[GradientChange]]:
    """Neighbouring probes on the ground surface or on footing bases, sorted by x: ground
    pairs (differential settlement, change of gradient, the user's ``[limits]``) and structure
    pairs (neighbouring footing bases and ``[[structures]]``: Bjerrum 1963 limits)."""
    surf = [p for p in probes.values() if p.on_surface]
    xs = sorted(p.x_m for p in surf)
    for a, b in zip(xs, xs[1:]):
        if b - a <= 1e-9:
            names = [p.name for p in surf if abs(p.x_m - a) <= 1e-9]
            notes.append(f"surface probes {names} share x = {a:g} m: no differential settlement "
                         "between them.")
    pts = [(p.name, p.x_m, p.where == "footing base") for p in surf]
    pairs = differential.surface_pairs(pts, {s.name: s.probes for s in model.structures})
    lim = model.limits
    ground_limit = ({} if lim.differential_settlement is None else
                    {"differential settlement over the limit given": lim.differential_settlement})
    out = []
    for pr in pairs:
        a, b = probes[pr.a], probes[pr.b]
        t = a.time_days
        keep = np.concatenate([[True], np.diff(t) > 0.0])
        h = differential.differential_between_probes(
            t[keep], a.settlement_m[keep], b.settlement_m[keep], pr.distance_m,
            None if pr.kind == "structure" else {})
        checks = h.checks
        if pr.kind == "ground":
            checks = differential.check_distortion_limits(
                h.times_days, np.abs(h.differential_settlement_m), ground_limit) if ground_limit else []
        out.append(DifferentialEstimate(pr.a, pr.b, pr.distance_m, h.times_days,
                                        h.differential_settlement_m, h.angular_distortion, checks,
                                        pr.kind, pr.structure))
    grad_limit = ({} if lim.change_of_gradient is None else
                  {"change of gradient over the limit given": lim.change_of_gradient})
    ground = [d for d in out if d.kind == "ground"]
    changes = []
    for left, right in zip(ground, ground[1:]):
        if left.probe_b != right.probe_a:
            continue
        pa, pb, pc = probes[left.probe_a], probes[left.probe_b], probes[right.probe_b]
        t = left.time_days
        sb = np.interp(t, pb.time_days, pb.settlement_m)
        sa = np.interp(t, pa.time_days, pa.settlement_m)
        sc = np.interp(t, pc.time_days, pc.settlement_m)
        ch = differential.gradient_change(sa, sb, sc, pa.x_m, pb.x_m, pc.x_m)
        checks = (differential.check_distortion_limits(t, np.abs(ch), grad_limit)
                  if grad_limit else [])
        changes.append(GradientChange(pa.name, pb.name, pc.name, t, ch, checks))
    return out, changes
