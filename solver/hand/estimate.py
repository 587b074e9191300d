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
   :mod:`solver.hand.elastic` summed layer by layer (:mod:`solver.hand.immediate`), each layer with its own undrained
   modulus (Steinbrenner 1934, *Tafeln zur Setzungsberechnung*, Die Strasse 1: the half-space
   strain integrated between the layer's faces). The undrained modulus is
   ``E_u = 1.5 E' / (1 + nu')``, i.e. the same shear modulus with ``nu_u = 0.5`` (common
   practice). Free-draining layers (below) have no undrained stage: their settlement is all in
   the consolidation part. The embankment is a stack of uniform strips for this. Under a rigid
   footing (a probe at its base, inside its width) the immediate settlement is the mean of the
   flexible profile across the width (strip) or ``pi/4`` of the centre value (disc), as in
   :mod:`solver.hand.elastic`, and the stress increase of that footing is taken at the
   characteristic point, 0.37 B from the centre of a strip and 0.845 R from that of a circle
   (Grasshoff 1955, *Setzungsberechnungen starrer Fundamente mit Hilfe des kennzeichnenden
   Punktes*, Der Bauingenieur 30; values from memory), where the flexible settlement equals
   the rigid one.

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

6. **Differential settlement** and angular distortion between consecutive probes on the
   ground surface (or on a footing base, or in the fill above the ground) sorted by x,
   checked against Bjerrum (1963) limits
   (:mod:`solver.hand.differential`).

The final settlement is ``immediate + consolidation (U = 100 %) + secondary to the end of
the last stage``. The settlement history is ``immediate(t) + consolidation(t) +
secondary(t)``; the immediate part follows the load factors.

Units: kN, m, kPa, kN/m3, days; depth z positive downward from the original ground surface.
The steps live in modules of one job: :mod:`solver.hand.loads` (the model's loads as
elementary parts), :mod:`solver.hand.ground` (layers, parameters, the column under a probe),
:mod:`solver.hand.stages` (the stages as load pieces), :mod:`solver.hand.history` (the
settlement through the history), :mod:`solver.hand.immediate` (the immediate settlement of a
load on the column); this module puts them together.
They read :mod:`solver.model` and :mod:`solver.initial` and never the FE code.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from numpy.typing import NDArray

from solver import CAUTION
from solver.errors import InputError
from solver.model import Model, domain_extent

from . import differential, history, rate, settlement
from .elastic import disc_displacement
from .ground import FREE_DRAINING_DEGREE, build_column, free_draining, layer_data
from .immediate import load_immediate_settlement
from .loads import (STAIRCASE_STEPS, model_loads, on_rigid_base, part_spread, part_stress,
                    within_footing)
from .stages import default_times, ramp, schedule

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

END_OF_PRIMARY_DEGREE = 0.95
"""Degree of consolidation taken as the end of primary consolidation (t95; common practice)."""

RIGID_STRIP_CHARACTERISTIC = 0.37
"""Characteristic point of a rigid strip: this fraction of B from its centre (Grasshoff 1955;
from memory)."""

RIGID_CIRCLE_CHARACTERISTIC = 0.845
"""Characteristic point of a rigid circle: this fraction of R from its centre (Grasshoff 1955;
from memory)."""

_TOL = 1e-9


# ============================================================================ results


@dataclass
class StageEstimate:
    """One stage seen from a probe: ``settlement_m`` the consolidation settlement of the soil
    below it at the stage's end, ``ultimate_m`` the settlement the load in place then would
    give held for ever (the 1D settlement along the stress path), ``degree`` their ratio (the
    degree of consolidation reached); times in days on the estimate's clock."""
    name: str
    kind: str
    start_days: float
    end_days: float
    settlement_m: float
    ultimate_m: float
    degree: float


@dataclass
class ProbeEstimate:
    """The hand estimate at one point probe.

    Scalars: ``probe_depth_m`` (depth of the probe below the original ground; 0 on the
    surface or in the fill), ``final_settlement_m`` = immediate + consolidation + secondary,
    ``immediate_settlement_m``, ``consolidation_settlement_m`` (primary, U = 100 % under the
    final load, along the stress path of the stages),
    ``secondary_settlement_m`` (to the end of the last stage), ``t50_days``, ``t90_days``,
    ``end_of_primary_days`` (t95), ``max_excess_pore_pressure_kPa`` (NaN on a drained surface).

    Profile arrays, one value per sublayer below the probe (n_sub,): ``depth_m`` (mid-depth
    below the original ground), ``stress_increase_kPa`` (half-space, used),
    ``stress_increase_2to1_kPa`` (quick check), ``initial_effective_stress_kPa``,
    ``preconsolidation_pressure_kPa`` (NaN for m_v layers), ``sublayer_settlement_m``
    (ultimate, under the final load along the stress path), ``sublayer_layer`` (names).

    History arrays (nt,): ``time_days``, ``settlement_m`` (immediate + consolidation +
    secondary), ``consolidation_degree`` (U of the soil below the probe: its consolidation
    settlement over the settlement the load in place would give held for ever),
    ``excess_pore_pressure_kPa`` (at the probe depth).

    ``where``: "ground surface", "in the fill", "footing base" or "inside the ground";
    ``stages``: one :class:`StageEstimate` per stage (the degree reached before each change).
    """
    name: str
    x_m: float
    y_m: float
    probe_depth_m: float
    final_settlement_m: float
    immediate_settlement_m: float
    consolidation_settlement_m: float
    secondary_settlement_m: float
    t50_days: float
    t90_days: float
    end_of_primary_days: float
    max_excess_pore_pressure_kPa: float
    depth_m: NDArray[np.float64]
    stress_increase_kPa: NDArray[np.float64]
    stress_increase_2to1_kPa: NDArray[np.float64]
    initial_effective_stress_kPa: NDArray[np.float64]
    preconsolidation_pressure_kPa: NDArray[np.float64]
    sublayer_settlement_m: NDArray[np.float64]
    sublayer_layer: list[str]
    layer_settlement_m: dict[str, float]
    time_days: NDArray[np.float64]
    settlement_m: NDArray[np.float64]
    consolidation_degree: NDArray[np.float64]
    excess_pore_pressure_kPa: NDArray[np.float64]
    notes: list[str] = field(default_factory=list)
    where: str = "ground surface"
    stages: list[StageEstimate] = field(default_factory=list)

    @property
    def on_surface(self) -> bool:
        """True for a probe on the ground surface, in the fill above it or on a footing base
        (the probes the differential settlement is taken between)."""
        return self.where != "inside the ground"

    def settlement_at(self, times) -> NDArray[np.float64]:
        """Settlement (m) at ``times`` (days), linear between the history's times (held after)."""
        return np.interp(np.asarray(times, dtype=float), self.time_days, self.settlement_m)

    def stress_at(self, depth: float) -> tuple[float, float]:
        """(half-space, 2:1) stress increase (kPa) at ``depth`` (m), linear between sublayers."""
        if self.depth_m.size == 0:
            return float("nan"), float("nan")
        return (float(np.interp(depth, self.depth_m, self.stress_increase_kPa)),
                float(np.interp(depth, self.depth_m, self.stress_increase_2to1_kPa)))


@dataclass
class DifferentialEstimate:
    """Differential settlement of two neighbouring surface probes through time.

    ``differential_settlement_m`` = settlement of ``probe_a`` minus that of ``probe_b``;
    ``angular_distortion`` = its absolute value over ``distance_m``; ``checks`` against the
    Bjerrum (1963) limits of :data:`solver.hand.differential.DEFAULT_DISTORTION_LIMITS`.
    """
    probe_a: str
    probe_b: str
    distance_m: float
    time_days: NDArray[np.float64]
    differential_settlement_m: NDArray[np.float64]
    angular_distortion: NDArray[np.float64]
    checks: list[differential.LimitCheck]

    @property
    def final_differential_settlement_m(self) -> float:
        return float(self.differential_settlement_m[-1])

    @property
    def max_angular_distortion(self) -> float:
        return float(np.max(self.angular_distortion))


@dataclass
class HandEstimate:
    """The hand estimate of a model: one :class:`ProbeEstimate` per point probe (model order),
    the differential settlement of neighbouring surface probes, and notes on the model as a
    whole (parameter conversions, assumptions)."""
    title: str
    analysis: str
    end_days: float
    probes: dict[str, ProbeEstimate]
    differential: list[DifferentialEstimate]
    notes: list[str]
    caution: str = CAUTION

    def probe(self, name: str) -> ProbeEstimate:
        if name not in self.probes:
            raise InputError(f"no probe named {name!r}; the hand estimate has {list(self.probes)}",
                             field="probes")
        return self.probes[name]


# ============================================================================ the estimate


def hand_estimate(model: Model, times=None, max_sublayer_thickness: float | None = None
                  ) -> HandEstimate:
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

    Returns
    -------
    HandEstimate

    Raises
    ------
    InputError
        A layer without the parameters the hand method needs (naming the field), no layers.
    """
    if not model.layers:
        raise InputError("the hand method needs [[layers]] (the ground as horizontal or sloping "
                         "layers)", field="layers", source=model.source,
                         fix="give [[layers]] with name, material and thickness.")
    notes: list[str] = []
    axi = model.analysis == "axisymmetric"
    data = [layer_data(model, j, notes) for j in range(len(model.layers))]
    ext = domain_extent(model)
    loads = model_loads(model, None if ext is None else (ext[0], ext[1]), notes)
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
    probe_depths = {pr.name: max(0.0, -float(pr.y)) for pr in model.probes}
    groups: dict[float, list] = {}
    for pr in model.probes:
        groups.setdefault(round(float(pr.x), 9), []).append(pr)

    results: dict[str, ProbeEstimate] = {}
    for prs in groups.values():
        x = float(prs[0].x)
        depths = sorted({probe_depths[p.name] for p in prs})
        col = build_column(model, data, x, depths)
        total_depth = float(col.tops[-1])
        subs = settlement.split_layers(col.layers, max_sub)
        zm = subs.mid
        gw = model.water.unit_weight
        s0_layers = settlement.vertical_effective_stress(0.5 * (col.tops[:-1] + col.tops[1:]),
                                                         col.layers, model.water.table_depth, gw)
        col.free, free_notes = free_draining(col, s0_layers, first_time, model.drainage, gw)
        notes.extend(n for n in free_notes if n not in notes)
        unit = {n: sum(part_stress(p, x, zm, axi) for p in loads[n].stress_parts) for n in active}
        unit_spread = {n: sum(part_spread(p, x, zm) for p in loads[n].spread_parts) for n in active}
        final_2to1 = sum((final_factor[n] * unit_spread[n] for n in active), np.zeros_like(zm))

        depth_of = {pr.name: min(probe_depths[pr.name], total_depth) for pr in prs}
        rigid_at = {pr.name: [n for n in active if on_rigid_base(loads[n], x, depth_of[pr.name])]
                    for pr in prs}
        shared_depths = sorted({depth_of[pr.name] for pr in prs if not rigid_at[pr.name]})
        shared = (_column_solution(model, col, subs, max_sub, unit, active, pieces, final_factor,
                                   t_out, shared_depths) if shared_depths else None)
        for pr in prs:
            d = depth_of[pr.name]
            pnotes: list[str] = []
            if pr.y > _TOL:
                pnotes.append(f"the probe is {pr.y:g} m above the original ground (in the fill); "
                              "the estimate is the settlement of the original ground below it, "
                              "without the fill's own compression.")
            if rigid_at[pr.name]:
                # a rigid footing at whose base the probe sits: its stress at the characteristic point
                unit_p = dict(unit)
                for n in rigid_at[pr.name]:
                    ld = loads[n]
                    frac = RIGID_CIRCLE_CHARACTERISTIC if axi else RIGID_STRIP_CHARACTERISTIC
                    off = frac * (0.5 if axi else 1.0) * ld.rigid_width
                    unit_p[n] = sum(part_stress(p, ld.center + off, zm, axi) for p in ld.stress_parts)
                    pnotes.append(f"rigid footing {n!r}: its stress increase taken at the "
                                  f"characteristic point {off:.3g} m from its centre (Grasshoff "
                                  "1955; from memory), its immediate settlement as the rigid "
                                  "value.")
                sol, j = _column_solution(model, col, subs, max_sub, unit_p, active, pieces,
                                          final_factor, t_out, [d]), 0
            else:
                sol, j = shared, shared_depths.index(d)
            est = _probe_estimate(model, pr, d, col, sol, j, final_2to1, loads, active, pieces,
                                  spans, final_factor, x, t_out, end, pnotes, axi)
            on_base = any(within_footing(loads[n], x, d)
                          for n in active if n in footing_names)
            est.where = ("in the fill" if pr.y > _TOL else "ground surface" if d <= _TOL else
                         "footing base" if on_base else "inside the ground")
            results[pr.name] = est
    ordered = {pr.name: results[pr.name] for pr in model.probes}
    diffs = _differential(ordered, model, notes)
    return HandEstimate(model.title, model.analysis, end, ordered, diffs, notes)


FD_GROWTH = 1.05
"""Ratio of successive time steps of the hand method's consolidation column (its U(t) stays
within 1e-4 of Terzaghi's; see the tests)."""


@dataclass
class _Solution:
    """Primary settlement and time rate of one column under one stress field: ``ps`` the
    profile under the final load (stresses; its settlements are the formula's under the final
    stress), ``staged`` the settlement through the history."""
    ps: settlement.ProbeSettlement
    staged: history.StagedConsolidation
    depths: list[float]


def _increments(pieces, unit, n_sub: int) -> list[history.Increment]:
    """One increment per stage that changes the load: the stress changes of its pieces summed."""
    by_stage: dict[int, list] = {}
    for p in pieces:
        by_stage.setdefault(p.stage, []).append(p)
    out = []
    for k in sorted(by_stage):
        ps = by_stage[k]
        change = sum((p.change * unit[p.load] for p in ps), np.zeros(n_sub))
        out.append(history.Increment(ps[0].start, ps[0].duration, change, str(k)))
    return out


def _column_solution(model, col, subs, max_sub, unit, active, pieces, final_factor, t_out, depths
                     ) -> _Solution:
    """Settlement of the whole column through the staged history (the FD needs all of it; the
    settlement of the soil below each depth is read off afterwards)."""
    gw = model.water.unit_weight
    zm = subs.mid
    stress_final = sum((final_factor[n] * unit[n] for n in active), np.zeros_like(zm))
    ps = settlement.settlement_under_probe(col.layers, lambda z: stress_final, model.water.table_depth,
                                           max_sublayer_thickness=max_sub, gamma_w=gw)
    if ps.mid.size != zm.size or not np.allclose(ps.mid, zm):
        raise AssertionError("sublayers differ")       # the same split_layers call
    staged = history.staged_consolidation(
        col.layers, ps, ps.sigma_v0_kPa, ps.sigma_p_kPa, _increments(pieces, unit, zm.size), t_out,
        drained_top=bool(model.drainage.top), drained_bottom=bool(model.drainage.base),
        free_draining_layers=col.free, rate_group=[d.model_index for d in col.data],
        depths=depths, gamma_w=gw, growth=FD_GROWTH)
    return _Solution(ps, staged, list(depths))


def _probe_estimate(model, pr, d, col, sol, j, final_2to1, loads, active, pieces, spans,
                    final_factor, x, t_out, end, pnotes, axi) -> ProbeEstimate:
    """Everything for one probe at depth d; ``sol`` is its column's solution, ``j`` the index
    of d in ``sol.depths``."""
    ps, st = sol.ps, sol.staged
    below = ps.top >= d - 1e-9
    ultimate = st.final_ultimate_m
    cons_final = float(np.sum(ultimate[below]))
    first_layer = int(ps.layer_index[int(np.argmax(below))]) if below.any() else len(col.layers)
    tf = st.times_days
    s_fine = st.settlement_below(below)
    cons_t = np.interp(t_out, tf, s_fine)
    level = st.ultimate_at(t_out, below)
    with np.errstate(divide="ignore", invalid="ignore"):
        degree = np.where(np.abs(level) > 0.0, cons_t / np.where(level != 0.0, level, 1.0), 0.0)
    t50 = t90 = t95 = float("nan")
    if cons_final > 0.0:
        t50, t90, t95 = (rate.first_time_reaching(tf, s_fine / cons_final, f)
                         for f in (0.5, 0.9, END_OF_PRIMARY_DEGREE))
    elif cons_final != 0.0:
        pnotes.append("no consolidation time rate: the load gives no net consolidation below "
                      "the probe.")
    u_fine = st.excess_pore_pressure_kPa[:, j]
    u_probe = np.interp(t_out, tf, u_fine)
    in_free = (col.tops[:-1] - 1e-9 <= d) & (d <= col.tops[1:] + 1e-9) & col.free
    drained_here = (d <= 1e-9 and bool(model.drainage.top)) or bool(in_free.any())
    u_max = float("nan") if drained_here or not st.increments else float(np.max(u_fine))
    stage_rows = _stage_rows(st, spans, below, tf, s_fine)
    _history_notes(st, spans, below, stage_rows, pnotes)

    # immediate settlement: each load at factor 1, then the history of factors
    imm_unit = {n: load_immediate_settlement(loads[n], col, x, d, axi) for n in active}
    imm_final = float(sum(final_factor[n] * imm_unit[n] for n in active))
    imm_t = np.zeros(t_out.size)
    for p in pieces:
        imm_t += p.change * imm_unit[p.load] * ramp(t_out, p.start, p.duration)

    # secondary compression below d from t95 to the end of the stages, in the sublayers left
    # normally consolidated by the final load (not those an unloading left overconsolidated;
    # m_v layers: wherever the load increases)
    layers_below = col.layers[first_layer:]
    sec_t = np.zeros(t_out.size)
    sec_final = 0.0
    final_eff = ps.sigma_v0_kPa + ps.delta_sigma_kPa
    loaded = np.where(np.isnan(ps.sigma_p_kPa), ps.delta_sigma_kPa > 0.0,
                      (final_eff > ps.sigma_p_kPa) & (final_eff >= st.final_memory_kPa * (1.0 - 1e-9)))
    has_c_alpha = np.array([col.layers[i].secondary_compression_index is not None
                            for i in ps.layer_index])
    creeping = below & loaded & has_c_alpha
    first_memory = np.fmax(ps.sigma_p_kPa, ps.sigma_v0_kPa)
    preloaded = (st.final_memory_kPa > first_memory * (1.0 + 1e-9)) & \
        (st.final_memory_kPa > final_eff * (1.0 + 1e-9))
    if np.any(below & has_c_alpha & preloaded):
        pnotes.append("no secondary compression where an unloading (a surcharge removed or "
                      "reduced) has left the soil overconsolidated under the final load "
                      "(common practice).")
    if creeping.any() and np.isfinite(t95) and t95 > 0.0:
        sub_ps = settlement.ProbeSettlement(ps.top[creeping], ps.bottom[creeping],
                                            ps.layer_index[creeping] - first_layer,
                                            ps.sigma_v0_kPa[creeping], ps.delta_sigma_kPa[creeping],
                                            ps.sigma_p_kPa[creeping], ultimate[creeping])
        sec_t = settlement.secondary_settlement_under_probe(layers_below, sub_ps, t_out, t95)
        sec_final = float(settlement.secondary_settlement_under_probe(layers_below, sub_ps,
                                                                      np.array([end]), t95)[0])
        if t95 >= end:
            pnotes.append(f"primary consolidation reaches 95 % after the last stage ends "
                          f"(t95 = {t95:.4g} days): no secondary compression by then.")
    elif creeping.any():
        pnotes.append("secondary compression not estimated: the end of primary (t95) is not reached.")

    layer_settlement: dict[str, float] = {}
    for i, ly in enumerate(col.layers):
        sel = (ps.layer_index == i) & below
        if sel.any():
            layer_settlement[ly.name] = layer_settlement.get(ly.name, 0.0) + float(np.sum(ultimate[sel]))
    return ProbeEstimate(
        name=pr.name, x_m=float(pr.x), y_m=float(pr.y), probe_depth_m=float(d),
        final_settlement_m=imm_final + cons_final + sec_final, immediate_settlement_m=imm_final,
        consolidation_settlement_m=cons_final, secondary_settlement_m=sec_final,
        t50_days=t50, t90_days=t90, end_of_primary_days=t95, max_excess_pore_pressure_kPa=u_max,
        depth_m=ps.mid[below], stress_increase_kPa=ps.delta_sigma_kPa[below],
        stress_increase_2to1_kPa=np.asarray(final_2to1)[below],
        initial_effective_stress_kPa=ps.sigma_v0_kPa[below],
        preconsolidation_pressure_kPa=ps.sigma_p_kPa[below], sublayer_settlement_m=ultimate[below],
        sublayer_layer=[col.layers[i].name for i in ps.layer_index[below]],
        layer_settlement_m=layer_settlement, time_days=t_out, settlement_m=imm_t + cons_t + sec_t,
        consolidation_degree=degree, excess_pore_pressure_kPa=u_probe, notes=pnotes,
        stages=stage_rows)


def _stage_rows(st: history.StagedConsolidation, spans, below, tf, s_fine) -> list[StageEstimate]:
    """The consolidation settlement below the probe at the end of each stage, the settlement
    its load would give held for ever, and the degree reached."""
    rows = []
    for i, sp in enumerate(spans):
        s_end = float(np.interp(sp.end, tf, s_fine))
        ult = st.ultimate_after(i, below)
        rows.append(StageEstimate(sp.name, sp.kind, sp.start, sp.end, s_end, ult,
                                  s_end / ult if ult != 0.0 else float("nan")))
    return rows


def _history_notes(st, spans, below, rows, pnotes) -> None:
    """Say where the load is reduced: the degree reached before it and the rebound."""
    for k, inc in enumerate(st.increments):
        i = int(inc.stage)
        if k == 0 or not np.sum(inc.stress_change_kPa[below]) < 0.0:
            continue
        prev = rows[i - 1] if i > 0 else None
        if prev is None or prev.ultimate_m == 0.0:
            continue
        after = float(np.sum(st.ultimate_m[k][below]))
        pnotes.append(f"stage {spans[i].name!r} reduces the load after a degree of consolidation "
                      f"of {prev.degree:.0%} ({prev.settlement_m:.4f} m of {prev.ultimate_m:.4f} m): "
                      f"the ultimate becomes {after:.4f} m, the soil rebounding on the "
                      "recompression line (Cr) from the effective stress it had reached.")


def _differential(probes: dict[str, ProbeEstimate], model: Model, notes: list[str]
                  ) -> list[DifferentialEstimate]:
    """Consecutive probes on the ground surface or on footing bases, sorted by x (Bjerrum
    1963 limits)."""
    surf = sorted((p for p in probes.values() if p.on_surface), key=lambda p: p.x_m)
    out = []
    for a, b in zip(surf, surf[1:]):
        dist = abs(b.x_m - a.x_m)
        if dist <= 1e-9:
            notes.append(f"surface probes {a.name!r} and {b.name!r} share x = {a.x_m:g} m: no "
                         "angular distortion between them.")
            continue
        t = a.time_days
        keep = np.concatenate([[True], np.diff(t) > 0.0])
        h = differential.differential_between_probes(t[keep], a.settlement_m[keep], b.settlement_m[keep], dist)
        out.append(DifferentialEstimate(a.name, b.name, dist, h.times_days, h.differential_settlement_m,
                                        h.angular_distortion, h.checks))
    return out
