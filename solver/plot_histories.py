"""Time-history plots of a run: settlement, excess pore pressure and degree of consolidation
at the probes, differential settlement and angular distortion between surface probes.

Times are in days, settlement in m (positive downward and drawn downward), pressures in kPa;
the hand method's curves are drawn dashed beside the finite-element ones. Each figure marks
the stages on its time axis (:func:`solver.plot_style.mark_stages`).
"""

from __future__ import annotations

import math
from dataclasses import replace
from pathlib import Path

import numpy as np

from . import plot_style as style
from .plot_data import RunData, surface_probes

__all__ = ["plot_settlement_time", "plot_pore_pressure_time", "plot_degree_time",
           "degree_of_consolidation", "differential_histories", "plot_differential"]


def _hand_note(run: RunData) -> str:
    return (run.hand_note[0].upper() + run.hand_note[1:] + ".") if run.hand_note else ""


def _finish(run: RunData, fig, path: Path, note: str, more: str = "") -> list[Path]:
    """Save a time-history figure: its note, why the hand method is missing (if it is),
    ``more``, then the key to the stages."""
    note = " ".join(x for x in (note, _hand_note(run)) if x) + more
    return [style.finish(fig, path, note + "\n" + style.stage_key(run.stages))]


def _time_history_figure(run: RunData, names: list[str], column: str, hand_column: str,
                         ylabel: str, down: bool):
    """Two panels (linear and logarithmic time) of one probe column; hand curves dashed."""
    fig = style.figure(10.5, 8.4)
    axes = fig.subplots(2, 1)
    t_all = np.concatenate([run.probes[n]["time_days"] for n in names])
    colour_of = {n: style.colour(i) for i, n in enumerate(run.probes)}
    drawn_hand = False
    for log, ax in zip((False, True), axes):
        for n in names:
            c = run.probes[n]
            t, v = c["time_days"], c[column]
            if not log:
                t, v = style.with_origin(t, v)
            ax.plot(t, v, color=colour_of[n], lw=1.6, label=n, zorder=3)
            h = run.hand.get(n)
            if h is not None and hand_column in h and np.isfinite(h[hand_column]).any():
                keep = h["time_days"] > (style.EPS_TIME if log else -1.0)
                ax.plot(h["time_days"][keep], h[hand_column][keep], color=colour_of[n],
                        lw=1.4, ls="--", zorder=3)
                drawn_hand = True
        style.time_axes(ax, t_all, log)
        ax.set_ylabel(ylabel)
        if down:
            ax.set_ylim(bottom=min(0.0, ax.get_ylim()[0]))
            ax.invert_yaxis()
        else:
            ax.axhline(0.0, color="#555555", lw=0.8)
        style.mark_stages(ax, run.stages, log)
    h, l = axes[0].get_legend_handles_labels()
    key = style.style_key(hand=drawn_hand) if drawn_hand else []
    style.legend(axes[-1], h + key, l + [k.get_label() for k in key], "probe")
    return fig, drawn_hand


def plot_settlement_time(run: RunData, out: Path) -> list[Path]:
    """Settlement at every probe against time, linear and logarithmic time, hand dashed."""
    names = [n for n, c in run.probes.items() if np.isfinite(c["settlement_m"]).any()]
    if not names:
        return []
    fig, _ = _time_history_figure(run, names, "settlement_m", "settlement_m",
                                  "settlement (m, downward)", down=True)
    fig.suptitle(f"Settlement at the probes: {run.title}", fontsize=11.5)
    return _finish(run, fig, out / "settlement_time.png",
                   "Shaded: construction stages (lifts placed or removed, loads); dotted lines: "
                   "stage starts. A probe inside the ground moves with the soil at its depth.")


def plot_pore_pressure_time(run: RunData, out: Path) -> list[Path]:
    """Excess pore pressure at the probes where it is not zero throughout (drained points)."""
    names, flat = [], []
    for n, c in run.probes.items():
        u = c["excess_pore_pressure_kPa"]
        (names if np.isfinite(u).any() and np.nanmax(np.abs(u)) > 1e-6 else flat).append(n)
    if not names:
        return []
    fig, _ = _time_history_figure(run, names, "excess_pore_pressure_kPa",
                                  "excess_pore_pressure_kPa", "excess pore pressure (kPa)",
                                  down=False)
    fig.suptitle(f"Dissipation of excess pore pressure: {run.title}", fontsize=11.5)
    note = ("Excess pore pressure: pore pressure above the steady pore pressure at the start "
            "(hydrostatic unless piezometric levels are given), positive in compression.")
    if flat:
        note += (" Not drawn (zero throughout: on a drained boundary or in free-draining "
                 f"ground): {', '.join(flat)}.")
    return _finish(run, fig, out / "pore_pressure_time.png", note)


def degree_of_consolidation(t: np.ndarray, s: np.ndarray,
                            final: float | None = None) -> np.ndarray | None:
    """U(t) = s(t) / s_ref: s_ref is ``final`` or else the last finite settlement; None if 0."""
    ok = np.isfinite(s)
    if not ok.any():
        return None
    ref = float(final) if final is not None else float(s[ok][-1])
    if not math.isfinite(ref) or abs(ref) < 1e-12:
        return None
    return s / ref


def _primary(run: RunData, name: str, last: float) -> float:
    """The FE primary settlement of a probe (summary.json, the meaning of t50 and t90),
    else its last settlement."""
    rec = (run.summary.get("probes") or {}).get(name) or {}
    v = rec.get("primary_settlement_m")
    return float(v) if isinstance(v, (int, float)) and math.isfinite(v) else last


def plot_degree_time(run: RunData, out: Path) -> list[Path]:
    """Degree of consolidation from settlement, s(t) over the primary settlement, per probe
    (log time): the curves cross 50 % and 90 % at t50 and t90 (:data:`solver.results.T50_T90`)."""
    finals = {n: _primary(run, n, float(c["settlement_m"][np.isfinite(c["settlement_m"])][-1]))
              for n, c in run.probes.items() if np.isfinite(c["settlement_m"]).any()}
    biggest = max((abs(v) for v in finals.values()), default=0.0)
    names, skipped = [], []
    for n, fin in finals.items():
        s = run.probes[n]["settlement_m"]
        # U means little where the end value is tiny or was passed earlier (heave, rebound)
        if abs(fin) < 0.05 * biggest or np.nanmax(np.abs(s)) > 1.5 * abs(fin) or fin <= 0:
            skipped.append(n)
        else:
            names.append(n)
    if not names:
        return []
    fig = style.figure(10.5, 6.2)
    ax = fig.subplots()
    t_end = max(float(np.nanmax(run.probes[n]["time_days"])) for n in names)
    drawn_hand = False
    colour_of = {n: style.colour(i) for i, n in enumerate(run.probes)}
    t_all, lowest = [], 0.0
    for n in names:
        c = run.probes[n]
        t, s = c["time_days"], c["settlement_m"]
        u = 100 * degree_of_consolidation(t, s, finals[n])
        lowest = min(lowest, float(np.nanmin(u)))
        ax.plot(t, u, color=colour_of[n], lw=1.6, label=n, zorder=3)
        t_all.append(t)
        h = run.hand.get(n)
        primary = float(h.get("primary_settlement_m", np.nan)) if h is not None else np.nan
        if h is not None and math.isfinite(primary) and primary > 0.0:
            keep = h["time_days"] > style.EPS_TIME
            ax.plot(h["time_days"][keep], 100 * h["settlement_m"][keep] / primary,
                    color=colour_of[n], lw=1.4, ls="--", zorder=3)
            drawn_hand = True
    style.time_axes(ax, np.concatenate(t_all), log=True)
    ax.set_ylim(max(lowest - 5.0, -100.0), 105)
    ax.set_ylabel("degree of consolidation U (%)")
    for lev in (50, 90):
        ax.axhline(lev, color="#777777", lw=0.7, ls="-.", zorder=1)
        ax.text(0.004, lev, f"{lev} %", transform=ax.get_yaxis_transform(), va="bottom",
                ha="left", fontsize=8, color="#444444")
    if lowest < 0:
        ax.axhline(0.0, color="#555555", lw=0.8)
    style.mark_stages(ax, run.stages, log=True)
    h, l = ax.get_legend_handles_labels()
    key = style.style_key(hand=drawn_hand) if drawn_hand else []
    style.legend(ax, h + key, l + [k.get_label() for k in key], "probe")
    fig.suptitle(f"Degree of consolidation from settlement: {run.title}", fontsize=11.5)
    note = (f"U = s(t) / s_primary, the settlement at time t over its primary value (immediate "
            f"plus primary consolidation under the final load); the curves cross 50 % and 90 % "
            f"at t50 and t90. Finite elements: s_primary from the settlement at the end of the "
            f"run, {style.fmt_days(t_end)}, and the excess pore water still in the soil then "
            f"(summary.json); with staged loading U mixes the growth of the load with "
            f"consolidation, and is negative while a point heaves.")
    if drawn_hand:
        note += (" Hand method (dashed): its settlement over its own primary settlement.")
    if skipped:
        note += (" Not drawn (end settlement small, negative or exceeded earlier in the record, "
                 f"so U says little): {', '.join(skipped)}.")
    return _finish(run, fig, out / "degree_of_consolidation.png", note)


def differential_histories(run: RunData, limits=None) -> list[dict]:
    """For each pair of neighbouring surface probes (:func:`solver.hand.differential.
    surface_pairs`): times, differential settlement, angular distortion and the checks that
    fit the pair: building limits (``limits``, default Bjerrum 1963) between neighbouring
    footing bases and the probes of a named structure, the model's
    ``limits.differential_settlement`` along the ground."""
    from .hand.differential import (check_distortion_limits, differential_between_probes,
                                    surface_pairs)
    surf = surface_probes(run)
    footing = set()
    structures = {}
    ground_limit = {}
    if run.model is not None:
        bases = [(f.center - f.width / 2, f.center + f.width / 2, -f.embedment)
                 for f in (run.model.section.footings or [])]
        for n, x in surf:
            y = float(run.probes[n]["y_m"][0])
            if any(lo - 1e-9 <= x <= hi + 1e-9 and abs(y - yb) < 1e-9 for lo, hi, yb in bases):
                footing.add(n)
        structures = {st.name: st.probes for st in getattr(run.model, "structures", [])}
        lim = getattr(getattr(run.model, "limits", None), "differential_settlement", None)
        if lim is not None:
            ground_limit = {"differential settlement over the limit given": lim}
    out = []
    for pr in surface_pairs([(n, x, n in footing) for n, x in surf], structures):
        ca, cb = run.probes[pr.a], run.probes[pr.b]
        t = ca["time_days"]
        keep = np.concatenate([[True], np.diff(t) > 0])      # zero-length stages repeat t
        hist = differential_between_probes(t[keep], ca["settlement_m"][keep],
                                           cb["settlement_m"][keep], pr.distance_m,
                                           limits if pr.kind == "structure" else {})
        if pr.kind == "ground" and ground_limit:
            hist = replace(hist, checks=check_distortion_limits(
                hist.times_days, np.abs(hist.differential_settlement_m), ground_limit))
        out.append({"a": pr.a, "b": pr.b, "distance_m": pr.distance_m, "history": hist,
                    "kind": pr.kind, "structure": pr.structure})
    return out


def plot_differential(run: RunData, out: Path, limits=None) -> list[Path]:
    """Differential settlement and angular distortion of neighbouring surface probes."""
    from .hand.differential import DEFAULT_DISTORTION_LIMITS, distortion_along_line
    pairs = differential_histories(run, limits)
    if not pairs:
        return []
    limits = DEFAULT_DISTORTION_LIMITS if limits is None else limits
    if not any(p["kind"] == "structure" for p in pairs):
        limits = {}          # building limits only where a structure is (footings, [[structures]])
    fig = style.figure(10.5, 8.6)
    ax1, ax2 = fig.subplots(2, 1, sharex=True)
    t_all = np.concatenate([p["history"].times_days for p in pairs])
    drawn_hand = False
    seen = [p["history"].angular_distortion for p in pairs]
    for i, p in enumerate(pairs):
        h = p["history"]
        lab = f"{p['a']} to {p['b']} ({p['distance_m']:g} m apart)" + (
            f", structure {p['structure']}" if p["kind"] == "structure" else "")
        t, ds = style.with_origin(h.times_days, h.differential_settlement_m)
        ax1.plot(t, ds, color=style.colour(i), lw=1.6, label=lab)
        ax2.plot(h.times_days, h.angular_distortion, color=style.colour(i), lw=1.6)
        ha, hb = run.hand.get(p["a"]), run.hand.get(p["b"])
        if ha is not None and hb is not None:
            th = ha["time_days"]
            sb = np.interp(th, hb["time_days"], hb["settlement_m"])
            ax1.plot(th, ha["settlement_m"] - sb, color=style.colour(i), lw=1.3, ls="--")
            dh = np.abs(ha["settlement_m"] - sb) / p["distance_m"]
            ax2.plot(th, dh, color=style.colour(i), lw=1.3, ls="--")
            seen.append(dh[th <= 1.02 * t_all.max()])
            drawn_hand = True
    for name, profs in run.lines_of("surface"):     # the largest distortion along the line
        if len(profs[0]["x_m"]) < 2:
            continue
        xs = profs[0]["x_m"]
        order = np.argsort(xs)
        s = np.array([pr["settlement_m"][order] for pr in profs])
        try:
            dmax = distortion_along_line(xs[order], s).max(axis=1)
        except Exception:
            continue
        seen.append(dmax)
        ax2.plot([pr["time_days"] for pr in profs], dmax, ls="none", marker="D", ms=4.5,
                 mfc="white", mec="#222222", label=f"largest between neighbouring points "
                                                   f"of line '{name}' (output times)")
    for ax in (ax1, ax2):
        style.time_axes(ax, t_all, log=False)
        ax.set_xlim(right=1.02 * t_all.max())
        style.mark_stages(ax, run.stages, log=False)
    ax1.set_xlabel("")
    ax1.axhline(0.0, color="#555555", lw=0.8)
    ax1.set_ylabel("differential settlement (m)")
    ax2.set_ylabel("angular distortion, slope (-, logarithmic scale)")
    ax2.set_yscale("log")
    seen = np.concatenate(seen)
    seen = seen[np.isfinite(seen) & (seen > 0)]
    top = float(seen.max()) if seen.size else 1e-3
    hi = max(top, max(limits.values(), default=0.0)) * 2.0
    ax2.set_ylim(min(list(limits.values()) + [top]) / 20.0, hi)
    ax2.grid(True, which="minor", axis="y", color="#f0f0f0", lw=0.4)
    for desc, lim in sorted(limits.items(), key=lambda kv: kv[1]):
        ax2.axhline(lim, color="#b03030", lw=0.9, ls=(0, (5, 3)), zorder=2)
        ax2.text(0.995, lim, f"1/{1 / lim:.0f}: {desc}", transform=ax2.get_yaxis_transform(),
                 ha="right", va="bottom", fontsize=7.5, color="#7a1f1f",
                 bbox=dict(boxstyle="square,pad=0.1", fc="white", ec="none", alpha=0.75))
    h1, l1 = ax1.get_legend_handles_labels()
    h2, l2 = ax2.get_legend_handles_labels()
    key = style.style_key(hand=drawn_hand) if drawn_hand else []
    style.legend(ax2, h1 + h2 + key, l1 + l2 + [k.get_label() for k in key],
                 "surface probes (first minus second)")
    fig.suptitle(f"Differential settlement and angular distortion: {run.title}",
                 fontsize=11.5)
    firsts = []
    for p in pairs:
        for chk in p["history"].checks:
            if chk.exceeded:
                what = (f"1/{1 / chk.limit:.0f}" if p["kind"] == "structure"
                        else f"{chk.limit:g} m of differential settlement")
                firsts.append(f"{p['a']} to {p['b']} passes {what} at "
                              f"{chk.first_exceeded_days:,.0f} days")
    note = ("Angular distortion = |difference in settlement| / horizontal distance, rigid tilt "
            "included." + (" Red dashed lines: building limits after Bjerrum (1963), values as "
                           "recalled, to be checked against the paper; they apply to the "
                           "structure pairs only (neighbouring footing bases, [[structures]])."
                           if limits else " No structure (footings or [[structures]]): no "
                           "building limits; along the ground the model's [limits] apply."))
    more = ("\nFinite elements: " + "; ".join(firsts) + ".") if firsts else ""
    return _finish(run, fig, out / "differential_settlement.png", note, more)
