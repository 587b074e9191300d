"""The hand estimate at one probe, from the staged solution of its column.

:func:`column_solution` runs the consolidation of a column through the load history
(:mod:`solver.hand.history`); :func:`probe_estimate` reads off, for the soil below one probe,
the consolidation settlement and its time curve, t50, t90, t95, the stages, the immediate and
the secondary settlement, and says how each part was found. See :mod:`solver.hand.estimate`
for the method as a whole.

Units: kN, m, kPa, days; depth positive downward from the original ground surface.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from . import history, rate, settlement
from .immediate import load_immediate_settlement
from .records import ProbeEstimate, StageEstimate
from .stages import ramp

__all__ = ["END_OF_PRIMARY_DEGREE", "FD_GROWTH", "ColumnSolution", "column_solution",
           "probe_estimate"]

END_OF_PRIMARY_DEGREE = 0.95
"""Degree of consolidation taken as the end of primary consolidation (t95; common practice)."""


FD_GROWTH = 1.05
"""Ratio of successive time steps of the hand method's consolidation column (its U(t) stays
within 1e-4 of Terzaghi's; see the tests)."""


@dataclass
class ColumnSolution:
    """One column under one stress field: ``ps`` the profile under the final load (stresses;
    its settlements are the formula's under the final stress), ``sigma_x_kPa`` (n_sub,) the
    final horizontal stress increase in the undrained state (NaN where not available),
    ``staged`` the settlement through the history, ``depths`` those its pore pressures are at."""
    ps: settlement.ProbeSettlement
    sigma_x_kPa: np.ndarray
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


def column_solution(model, col, subs, max_sub, unit, unit_h, active, pieces, final_factor, t_out,
                    depths) -> ColumnSolution:
    """Settlement of the whole column through the staged history (the FD needs all of it; the
    settlement of the soil below each depth is read off afterwards). ``unit`` and ``unit_h``:
    per load at factor 1 the vertical and the horizontal stress increase at the sublayers."""
    gw = model.water.unit_weight
    zm = subs.mid
    stress_final = sum((final_factor[n] * unit[n] for n in active), np.zeros_like(zm))
    sx_final = sum((final_factor[n] * unit_h[n] for n in active), np.zeros_like(zm))
    ps = settlement.settlement_under_probe(col.layers, lambda z: stress_final, col.water_depth,
                                           max_sublayer_thickness=max_sub, gamma_w=gw,
                                           pore_pressure=col.pore_pressure)
    if ps.mid.size != zm.size or not np.allclose(ps.mid, zm):
        raise AssertionError("sublayers differ")       # the same split_layers call
    increments = _increments(pieces, unit, zm.size)
    if col.initial_excess is not None and np.any(col.initial_excess(zm) != 0.0):
        # The initial excess dissipates from the start as a sudden change of effective stress
        # (one-dimensionally the same as a sudden load of that size); it is in place before
        # every stage (stage index -1).
        increments.insert(0, history.Increment(0.0, 0.0, col.initial_excess(zm), "-1"))
    staged = history.staged_consolidation(
        col.layers, ps, ps.sigma_v0_kPa, ps.sigma_p_kPa, increments, t_out,
        drained_top=bool(model.drainage.top), drained_bottom=bool(model.drainage.base),
        free_draining_layers=col.free, rate_group=[d.model_index for d in col.data],
        depths=depths, gamma_w=gw, growth=FD_GROWTH)
    return ColumnSolution(ps, np.asarray(sx_final, dtype=float), staged, list(depths))


def _skempton_bjerrum(col, sol, below, pnotes) -> tuple[np.ndarray, dict[str, float]]:
    """Per sublayer the Skempton-Bjerrum (1957) factor (1 where the layer gives no A, or the
    stresses are not available) and per layer below the probe its settlement-weighted factor."""
    ps = sol.ps
    a = np.array([col.data[i].material.undrained.pore_pressure_parameter
                  if col.data[i].material.undrained.pore_pressure_parameter is not None else np.nan
                  for i in ps.layer_index], dtype=float)
    mu = settlement.skempton_bjerrum_factor(a, ps.delta_sigma_kPa, sol.sigma_x_kPa)
    usable = np.isfinite(a) & np.isfinite(mu)
    factors: dict[str, float] = {}
    skipped = set()
    s_oed = sol.staged.final_ultimate_m
    for name in dict.fromkeys(col.data[i].name for i in ps.layer_index[below]):
        sel = below & np.array([col.data[i].name == name for i in ps.layer_index])
        if not np.isfinite(a[sel]).any():
            continue
        ok = sel & usable
        if not ok.any() or float(np.sum(s_oed[ok])) == 0.0:
            skipped.add(name)
            continue
        factors[name] = float(np.sum(s_oed[ok] * mu[ok]) / np.sum(s_oed[ok]))
    if factors:
        pnotes.append("consolidation settlement of " + ", ".join(
            f"{n!r} x {f:.3g}" for n, f in factors.items()) + ": the Skempton-Bjerrum (1957) "
            "factor mu = [ds3 + A (ds1 - ds3)] / ds_z for the width of the load (A = "
            "undrained.pore_pressure_parameter, elastic stresses under the final load, "
            "sublayer by sublayer); applied to the whole history.")
    if skipped:
        pnotes.append(f"no Skempton-Bjerrum correction for {sorted(skipped)}: the horizontal "
                      "stress increase is known only under strips, embankments and on the axis "
                      "of a circular load.")
    return np.where(usable, mu, 1.0), factors


def probe_estimate(model, pr, d, col, sol, j, final_2to1, loads, active, pieces, spans,
                   final_factor, x, t_out, end, pnotes, axi) -> ProbeEstimate:
    """Everything for one probe at depth d; ``sol`` is its column's solution, ``j`` the index
    of d in ``sol.depths``."""
    ps, st = sol.ps, sol.staged
    below = ps.top >= d - 1e-9
    mu, mu_layers = _skempton_bjerrum(col, sol, below, pnotes)
    w = below * mu                                   # weights of the sublayers below the probe
    ultimate = st.final_ultimate_m * mu
    cons_final = float(np.sum(ultimate[below]))
    first_layer = int(ps.layer_index[int(np.argmax(below))]) if below.any() else len(col.layers)
    tf = st.times_days
    s_fine = st.settlement_below(w)
    cons_t = np.interp(t_out, tf, s_fine)
    level = st.ultimate_at(t_out, w)
    with np.errstate(divide="ignore", invalid="ignore"):
        degree = np.where(np.abs(level) > 0.0, cons_t / np.where(level != 0.0, level, 1.0), 0.0)
    t95 = float("nan")
    if cons_final > 0.0:
        t95 = rate.first_time_reaching(tf, s_fine / cons_final, END_OF_PRIMARY_DEGREE)
    elif cons_final != 0.0:
        pnotes.append("no consolidation time rate: the load gives no net consolidation below "
                      "the probe.")
    u_fine = st.excess_pore_pressure_kPa[:, j]
    u_probe = np.interp(t_out, tf, u_fine)
    in_free = (col.tops[:-1] - 1e-9 <= d) & (d <= col.tops[1:] + 1e-9) & col.free
    drained_here = (d <= 1e-9 and bool(model.drainage.top)) or bool(in_free.any())
    u_max = float("nan") if drained_here or not st.increments else float(np.max(u_fine))
    stage_rows = _stage_rows(st, spans, w, tf, s_fine)
    _history_notes(st, spans, below, w, stage_rows, pnotes)

    # immediate settlement: each load at factor 1, then the history of factors
    imm_unit = {n: load_immediate_settlement(loads[n], col, x, d, axi) for n in active}
    imm_final = float(sum(final_factor[n] * imm_unit[n] for n in active))
    imm_t = np.zeros(t_out.size)
    imm_fine = np.zeros(tf.size)
    for p in pieces:
        imm_t += p.change * imm_unit[p.load] * ramp(t_out, p.start, p.duration)
        imm_fine += p.change * imm_unit[p.load] * ramp(tf, p.start, p.duration)
    how_imm = _immediate_notes(col, d, loads, active, imm_final, pnotes)
    # t50, t90: to 50 % / 90 % of the primary settlement (immediate + consolidation)
    t50, t90, t_notes = _primary_times(tf, imm_fine + s_fine, imm_final + cons_final, end)

    # secondary compression below d from t95 to the end of the stages, in the sublayers left
    # normally consolidated by the final load (not those an unloading left overconsolidated;
    # m_v layers: wherever the load increases)
    layers_below = col.layers[first_layer:]
    sec_t = np.zeros(t_out.size)
    sec_final = 0.0
    final_eff = ps.sigma_v0_kPa + ps.delta_sigma_kPa
    if col.initial_excess is not None:            # it has dissipated by the end
        final_eff = final_eff + col.initial_excess(ps.mid)
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
    how = {
        "immediate": how_imm,
        "consolidation": "one-dimensional (oedometer) settlement along the stress path of the "
                         "stages, Terzaghi & Peck 1948" + (
                             "; x the Skempton-Bjerrum (1957) factor in " + ", ".join(mu_layers)
                             if mu_layers else ""),
        "secondary": ("C_alpha from t95 to the end of the stages (Buisman 1936)"
                      if sec_final else "none (no C_alpha, or primary not over by the end)"),
    }

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
        stages=stage_rows, how_found=how, skempton_bjerrum=mu_layers, t50_note=t_notes[0],
        t90_note=t_notes[1], primary_settlement_m=imm_final + cons_final,
        sublayer_top_m=ps.top[below], sublayer_bottom_m=ps.bottom[below])


def _primary_times(tf, s_primary, primary, end) -> tuple[float, float, tuple]:
    """t50 and t90 of the primary settlement curve (days from the start of the first stage)
    and a note for each: None, "after the stages end" (the final load held) or why missing."""
    if not primary > 0.0:
        why = "no primary settlement to measure it against (none, or a heave)"
        return float("nan"), float("nan"), (why, why)
    out, notes = [], []
    for f in (0.5, 0.9):
        t = rate.first_time_reaching(tf, s_primary / primary, f)
        out.append(t)
        notes.append("not reached (the consolidation of the final load is too slow)"
                     if not np.isfinite(t) else
                     f"after the stages end ({end:,.0f} days), the final load held"
                     if t > end * (1.0 + 1e-9) else None)
    return out[0], out[1], tuple(notes)


def _immediate_notes(col, d, loads, active, imm_final, pnotes) -> str:
    """How the immediate settlement was found; notes on layers without E_u and on a heave."""
    finite_width = any(p.shape != "uniform" for n in active for p in loads[n].spread_parts)
    if not finite_width:
        return "none: the loads cover the whole width (one-dimensional, no lateral strain)"
    below = [i for i in range(len(col.layers)) if col.tops[i] >= d - 1e-9 and not col.free[i]]
    missing = list(dict.fromkeys(col.data[i].name for i in below if not np.isfinite(col.eu[i])))
    given = list(dict.fromkeys(col.data[i].name for i in below if np.isfinite(col.eu[i])))
    if missing:
        pnotes.append(f"no immediate settlement counted in {missing}: no undrained modulus "
                      "(materials.NAME.undrained: modulus, or strength with modulus_ratio); it "
                      "is not derived from the drained modulus.")
    if imm_final < 0.0:
        pnotes.append(f"the immediate part, {imm_final:.4f} m, is a heave: the undrained "
                      "distortion lifts the ground beside the load. It is carried into the final "
                      "settlement as it stands at the end of loading; the one-dimensional "
                      "consolidation does not take it back, so the final value here is a rough "
                      "bound, not a prediction.")
    if not given:
        return "none counted: no layer below gives an undrained modulus"
    return ("undrained elastic settlement with E_u of " + ", ".join(given) +
            " (layer by layer, Steinbrenner 1934)")


def _stage_rows(st: history.StagedConsolidation, spans, w, tf, s_fine) -> list[StageEstimate]:
    """The consolidation settlement below the probe at the end of each stage, the settlement
    its load would give held for ever, and the degree reached."""
    rows = []
    for i, sp in enumerate(spans):
        s_end = float(np.interp(sp.end, tf, s_fine))
        ult = st.ultimate_after(i, w)
        rows.append(StageEstimate(sp.name, sp.kind, sp.start, sp.end, s_end, ult,
                                  s_end / ult if ult != 0.0 else float("nan")))
    return rows


def _history_notes(st, spans, below, w, rows, pnotes) -> None:
    """Say where the load is reduced: the degree reached before it and the rebound."""
    for k, inc in enumerate(st.increments):
        i = int(inc.stage)
        if k == 0 or not np.sum(inc.stress_change_kPa[below]) < 0.0:
            continue
        prev = rows[i - 1] if i > 0 else None
        if prev is None or prev.ultimate_m == 0.0:
            continue
        after = float(st.ultimate_m[k] @ w)
        pnotes.append(f"stage {spans[i].name!r} reduces the load after a degree of consolidation "
                      f"of {prev.degree:.0%} ({prev.settlement_m:.4f} m of {prev.ultimate_m:.4f} m): "
                      f"the ultimate becomes {after:.4f} m, the soil rebounding on the "
                      "recompression line (Cr) from the effective stress it had reached.")
