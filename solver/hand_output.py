"""The hand estimate as text (``poroplane hand MODEL``) and as JSON (``poroplane hand --json``
and ``hand.json`` in a run folder).

Both say what each number means: the final settlement split into its parts with how each was
found, t50 and t90 in the one meaning of :data:`solver.results.T50_T90`, the stages (the degree
of consolidation reached before each change of load), the stress increase used at the middle
of one sublayer of each layer, the differential settlement with the limits that fit the pair,
and the notes. Units: m, kPa, days; settlement positive downward.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from .hand.records import T50_T90, HandEstimate, ProbeEstimate

__all__ = ["hand_report", "hand_json", "days_text"]

_WHERE = {"in the fill": "in the fill: the estimate is for the ground below it"}
BJERRUM = "Bjerrum 1963; values from memory, to be checked against the paper"


def days_text(t: float, note: str | None = None) -> str:
    """``1,234 days (3.4 years)``, ``"not reached"`` for NaN, with a note in brackets."""
    if t is None or not math.isfinite(t):
        return note or "not reached"
    text = f"{t:,.0f} days ({t / 365.25:.2g} years)" if t >= 365.25 else f"{t:,.3g} days"
    return f"{text}, {note}" if note else text


def _where(p: ProbeEstimate) -> str:
    if p.where == "footing base":
        return f"footing base {p.probe_depth_m:g} m deep: settlement of the soil below it"
    if p.where == "inside the ground":
        return f"{p.probe_depth_m:g} m deep: settlement of the soil below it"
    return _WHERE.get(p.where, p.where)


def _profile_rows(p: ProbeEstimate) -> list[str]:
    """One row per layer: the sublayer at the middle of the layer's part below the probe, with
    its top and bottom (the depth is that sublayer's middle, where its stresses are taken)."""
    if not p.depth_m.size:
        return []
    lines = ["  stress increase used, at the middle of one sublayer of each layer:",
             "    sublayer m       middle m   half-space kPa   2:1 kPa   sigma'_v0 kPa   layer"]
    names = p.sublayer_layer
    for name in dict.fromkeys(names):
        idx = [i for i, n in enumerate(names) if n == name]
        i = idx[len(idx) // 2]
        span = f"{p.sublayer_top_m[i]:.2f}-{p.sublayer_bottom_m[i]:.2f}"
        lines.append(f"    {span:14s} {p.depth_m[i]:9.2f}   {p.stress_increase_kPa[i]:14.4g}   "
                     f"{p.stress_increase_2to1_kPa[i]:7.4g}   {p.initial_effective_stress_kPa[i]:13.4g}"
                     f"   {name}")
    return lines


def _stage_rows(p: ProbeEstimate) -> list[str]:
    if not p.stages:
        return []
    w = max(len(s.name) for s in p.stages)
    lines = ["  through the stages (consolidation settlement of the soil below the probe):",
             f"    {'stage':{w}s}   end days   settlement m   its load held for ever m   degree"]
    for s in p.stages:
        deg = ("-" if not math.isfinite(s.degree) else
               "0%" if abs(s.degree) < 0.005 else f"{s.degree:.0%}")
        lines.append(f"    {s.name:{w}s} {s.end_days:10,.1f} {(s.settlement_m if abs(s.settlement_m) >= 5e-5 else 0.0):14.4f} "
                     f"{s.ultimate_m:26.4f}   {deg}")
    return lines


def _differential_lines(hand: HandEstimate) -> list[str]:
    lines: list[str] = []
    ground = [d for d in hand.differential if d.kind == "ground"]
    struct = [d for d in hand.differential if d.kind != "ground"]
    if ground:
        lines += ["", "Differential settlement along the ground surface (neighbouring surface "
                      "probes; limits of [limits] in the model)"]
        for d in ground:
            lines.append(f"  {d.probe_a} - {d.probe_b} ({d.distance_m:g} m): final "
                         f"{d.final_differential_settlement_m:+.4f} m, largest "
                         f"{d.max_differential_settlement_m:.4f} m, largest slope "
                         f"{d.max_angular_distortion:.3g}")
            lines += [f"    {c.description} ({c.limit:g} m): "
                      + (f"exceeded from {days_text(c.first_exceeded_days)}" if c.exceeded
                         else "not exceeded") for c in d.checks]
            if not d.checks:
                lines.append("    no limit given (limits.differential_settlement)")
        for g in hand.gradient_changes:
            text = (f"  change of gradient at {g.probe_b} ({g.probe_a} - {g.probe_b} - "
                    f"{g.probe_c}): largest {g.max_change:.3g}")
            if g.checks:
                c = g.checks[0]
                text += (f"; limit {c.limit:g} " + (f"exceeded from {days_text(c.first_exceeded_days)}"
                                                    if c.exceeded else "not exceeded"))
            else:
                text += "; no limit given (limits.change_of_gradient)"
            lines.append(text)
    if struct:
        lines += ["", f"Angular distortion of structures (neighbouring footing bases and "
                      f"[[structures]]; building limits: {BJERRUM})"]
        for d in struct:
            worst = d.max_angular_distortion
            ratio = f"1/{1 / worst:,.0f}" if worst > 0 else "0"
            lines.append(f"  {d.structure}: {d.probe_a} - {d.probe_b} ({d.distance_m:g} m): final "
                         f"{d.final_differential_settlement_m:+.4f} m, largest angular distortion "
                         f"{worst:.3g} ({ratio})")
            for c in d.checks:
                state = (f"exceeded from {days_text(c.first_exceeded_days)}" if c.exceeded
                         else "not exceeded")
                lines.append(f"    1/{1 / c.limit:,.0f} {c.description}: {state}")
    return lines


def hand_report(hand: HandEstimate) -> str:
    """The text ``poroplane hand MODEL`` prints: per probe the final settlement split into
    immediate, consolidation and secondary with how each was found, t50 and t90, the stages,
    the stress increase used at one sublayer of each layer, the notes; the differential
    settlements; the caution line."""
    lines = [f"Hand estimate: {hand.title} ({hand.analysis})",
             f"stages end at {days_text(hand.end_days)}; settlement positive downward; "
             "times from the start of the first stage"]
    for p in hand.probes.values():
        lines += ["", f"probe {p.name} (x = {p.x_m:g} m, y = {p.y_m:g} m; {_where(p)})"]
        lines.append(f"  final settlement   {p.final_settlement_m:8.4f} m = immediate "
                     f"{p.immediate_settlement_m:.4f} + consolidation {p.consolidation_settlement_m:.4f} "
                     f"+ secondary {p.secondary_settlement_m:.4f} (to {hand.end_days:,.0f} days)")
        for part in ("immediate", "consolidation", "secondary"):
            if part in p.how_found:
                lines.append(f"    {part}: {p.how_found[part]}")
        if p.layer_settlement_m:
            lines.append("  consolidation by layer: " + ", ".join(
                f"{k} {v:.4f} m" for k, v in p.layer_settlement_m.items()))
        lines.append(f"  t50 {days_text(p.t50_days, p.t50_note)}; t90 "
                     f"{days_text(p.t90_days, p.t90_note)} (of the primary settlement "
                     f"{p.primary_settlement_m:.4f} m); end of primary consolidation t95 "
                     f"{days_text(p.end_of_primary_days)}")
        u = p.max_excess_pore_pressure_kPa
        lines.append("  largest excess pore pressure at the probe: " +
                     (f"{u:.4g} kPa" if math.isfinite(u) else
                      "not applicable (a draining surface or a free-draining layer: u = 0)"))
        lines += _stage_rows(p)
        lines += _profile_rows(p)
        for n in p.notes:
            lines.append(f"  note: {n}")
    lines += _differential_lines(hand)
    lines += ["", T50_T90 + "."]
    if hand.notes:
        lines += ["", "Notes"]
        lines += [f"  - {n}" for n in hand.notes]
    lines += ["", hand.caution]
    return "\n".join(lines)


def _num(v: Any) -> float | None:
    try:
        f = float(v)
    except (TypeError, ValueError):
        return None
    return f if math.isfinite(f) else None


def _array(a) -> list:
    return [_num(v) for v in np.asarray(a, dtype=float).ravel()]


def hand_json(hand: HandEstimate) -> dict[str, Any]:
    """The estimate as JSON-ready data (numbers or None, lists for histories and profiles)."""
    probes = {}
    for p in hand.probes.values():
        probes[p.name] = {
            "x_m": p.x_m, "y_m": p.y_m, "where": p.where, "probe_depth_m": p.probe_depth_m,
            "final_settlement_m": _num(p.final_settlement_m),
            "immediate_settlement_m": _num(p.immediate_settlement_m),
            "consolidation_settlement_m": _num(p.consolidation_settlement_m),
            "secondary_settlement_m": _num(p.secondary_settlement_m),
            "primary_settlement_m": _num(p.primary_settlement_m),
            "how_found": dict(p.how_found),
            "skempton_bjerrum_factor": dict(p.skempton_bjerrum),
            "t50_days": _num(p.t50_days), "t50_note": p.t50_note,
            "t90_days": _num(p.t90_days), "t90_note": p.t90_note,
            "end_of_primary_days": _num(p.end_of_primary_days),
            "largest_excess_pore_pressure_kPa": _num(p.max_excess_pore_pressure_kPa),
            "largest_excess_pore_pressure_note": (
                None if _num(p.max_excess_pore_pressure_kPa) is not None else
                "not applicable: a draining surface or a free-draining layer"),
            "layer_settlement_m": {k: _num(v) for k, v in p.layer_settlement_m.items()},
            "stages": [{"name": s.name, "kind": s.kind, "start_days": s.start_days,
                        "end_days": s.end_days, "settlement_m": _num(s.settlement_m),
                        "ultimate_m": _num(s.ultimate_m), "degree": _num(s.degree)}
                       for s in p.stages],
            "profile": {"depth_m": _array(p.depth_m), "top_m": _array(p.sublayer_top_m),
                        "bottom_m": _array(p.sublayer_bottom_m), "layer": list(p.sublayer_layer),
                        "stress_increase_kPa": _array(p.stress_increase_kPa),
                        "stress_increase_2to1_kPa": _array(p.stress_increase_2to1_kPa),
                        "initial_effective_stress_kPa": _array(p.initial_effective_stress_kPa),
                        "preconsolidation_pressure_kPa": _array(p.preconsolidation_pressure_kPa),
                        "sublayer_settlement_m": _array(p.sublayer_settlement_m)},
            "history": {"time_days": _array(p.time_days), "settlement_m": _array(p.settlement_m),
                        "consolidation_degree": _array(p.consolidation_degree),
                        "excess_pore_pressure_kPa": _array(p.excess_pore_pressure_kPa)},
            "notes": list(p.notes),
        }
    diff = [{"probe_a": d.probe_a, "probe_b": d.probe_b, "distance_m": d.distance_m,
             "kind": d.kind, "structure": d.structure,
             "final_differential_settlement_m": _num(d.final_differential_settlement_m),
             "largest_differential_settlement_m": _num(d.max_differential_settlement_m),
             "largest_angular_distortion": _num(d.max_angular_distortion),
             "checks": [{"description": c.description, "limit": c.limit,
                         "first_exceeded_days": c.first_exceeded_days} for c in d.checks]}
            for d in hand.differential]
    grad = [{"probes": [g.probe_a, g.probe_b, g.probe_c], "largest_change": _num(g.max_change),
             "checks": [{"description": c.description, "limit": c.limit,
                         "first_exceeded_days": c.first_exceeded_days} for c in g.checks]}
            for g in hand.gradient_changes]
    return {"title": hand.title, "analysis": hand.analysis, "end_days": hand.end_days,
            "definitions": {"t50_t90": T50_T90, "building_limits": BJERRUM,
                            "units": "m, kPa, days; settlement positive downward"},
            "probes": probes, "differential": diff, "gradient_changes": grad,
            "notes": list(hand.notes), "caution": hand.caution}
