"""Profiles of a run at chosen output times: isochrones of excess pore pressure along the
vertical lines (regions of the mesh marked) and settlement troughs along the surface lines
(loads sketched above), at the times :func:`profile_indices` picks.

Lengths in m, pressures in kPa; settlement positive downward and drawn downward. The output
times drawn are chosen by :func:`profile_indices`.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from . import plot_style as style
from .plot_data import RunData, surface_probes
from .plot_times import default_profile_times
from .results.files import safe_name

__all__ = ["plot_isochrones", "plot_troughs", "profile_indices"]


def _mesh_arrays(run_dir: Path):
    from .results import read_mesh_file
    return read_mesh_file(run_dir)


def _regions_along(run: RunData, x: np.ndarray, y: np.ndarray):
    """Regions a straight line passes through: [(from m, to m, region name)] by distance."""
    try:
        from matplotlib.tri import Triangulation
        pts, cells, region, names = _mesh_arrays(run.dir)
    except Exception:
        return []
    find = Triangulation(pts[:, 0], pts[:, 1], cells[:, :3]).get_trifinder()
    s = np.linspace(0.0, 1.0, 1601)
    xs, ys = x[0] + s * (x[-1] - x[0]), y[0] + s * (y[-1] - y[0])
    e = find(xs + 1e-9 * max(1.0, np.ptp(pts[:, 0])), ys)
    reg = np.where(e >= 0, region[np.maximum(e, 0)], -1)
    found = np.flatnonzero(reg >= 0)
    if found.size == 0:
        return []
    # a sample that falls between triangles (round-off on an edge) takes its neighbour's region
    reg = reg[found[np.clip(np.searchsorted(found, np.arange(reg.size)), 0, found.size - 1)]]
    d = np.hypot(xs - xs[0], ys - ys[0])
    out, i0 = [], 0
    for i in range(1, len(reg) + 1):
        if i == len(reg) or reg[i] != reg[i0]:
            if reg[i0] >= 0 and d[i - 1] - d[i0] > 1e-2 * d[-1]:   # a graze is no crossing
                if out and out[-1][2] == names[reg[i0]]:
                    out[-1] = (out[-1][0], float(d[i - 1]), out[-1][2])
                else:
                    out.append((float(d[i0]), float(d[i - 1]), names[reg[i0]]))
            i0 = i
    return out


def _peak_time(run: RunData) -> float | None:
    """The output time of the largest excess pore pressure along any line (else at any probe,
    from the summary)."""
    best, when = -np.inf, None
    for profs in run.lines.values():
        for p in profs:
            u = np.asarray(p["excess_pore_pressure_kPa"], float)
            if u.size and np.isfinite(u).any() and np.nanmax(u) > best:
                best, when = float(np.nanmax(u)), float(p["time_days"])
    if when is None or best <= 0.0:
        probes = (run.summary or {}).get("probes") or {}
        peaks = [(p.get("largest_excess_pore_pressure_kPa"),
                  p.get("time_of_largest_excess_pore_pressure_days")) for p in probes.values()]
        peaks = [pk for pk in peaks if pk[0] is not None and pk[1] is not None]
        if peaks:
            when = float(max(peaks)[1])
    return when


def profile_indices(run: RunData, profs: list[dict], times=None) -> list[int]:
    """The profiles to draw: at the output times nearest ``times``, else by default the stage
    ends, the largest excess pore pressure and the last output, near-duplicates merged
    (:func:`solver.plot_times.default_profile_times`)."""
    t = [p["time_days"] for p in profs]
    if times is not None and len(times):
        return style.pick_times(t, times)
    peak = _peak_time(run)
    extra = run.model.output.times if run.model is not None else ()
    return default_profile_times(t, [st.end_days for st in run.stages],
                                 None if peak is None else int(np.argmin(np.abs(
                                     np.asarray(t) - peak))), extra)


def _at_times(run: RunData, profs: list[dict], times) -> list[tuple[object, dict, str]]:
    """The profiles to draw (:func:`profile_indices`): (colour, profile, label)."""
    idx = profile_indices(run, profs, times)
    return [(c, profs[i], f"{style.fmt_days(profs[i]['time_days'])}  ({profs[i]['stage']})")
            for c, i in zip(style.time_colours(len(idx)), idx)]


def plot_isochrones(run: RunData, out: Path, times=None) -> list[Path]:
    """Excess pore pressure along each vertical line at chosen output times."""
    paths = []
    for name, profs in run.lines_of("vertical"):
        fig = style.figure(9.6, 7.6)
        ax = fig.subplots()
        for c, p, label in _at_times(run, profs, times):
            ax.plot(p["excess_pore_pressure_kPa"], p["y_m"], color=c, lw=1.7, marker="o",
                    ms=2.5, label=label)
        p0 = profs[0]
        spans = _regions_along(run, p0["x_m"], p0["y_m"])
        right = ax.twinx()
        right.set_ylim(ax.get_ylim())
        mids, names = [], []
        for k, (a, b, reg) in enumerate(spans):
            ya, yb = (float(np.interp(v, p0["distance_m"], p0["y_m"])) for v in (a, b))
            if k:       # the boundary lies between the last sample of one and the next
                yk = float(np.interp(0.5 * (spans[k - 1][1] + a), p0["distance_m"], p0["y_m"]))
                ax.axhline(yk, color="#999999", lw=0.8, ls="--", zorder=1)
            mids.append(0.5 * (ya + yb))
            names.append(reg)
        right.set_yticks(mids, names, fontsize=8)
        right.tick_params(length=0)
        right.set_ylabel("region of the mesh along the line", fontsize=8.5)
        ax.axvline(0.0, color="#555555", lw=0.8)
        ax.set_xlabel("excess pore pressure (kPa)")
        ax.set_ylabel("elevation y (m; original ground surface at 0)")
        ax.grid(True, color="#e2e2e2", lw=0.6)
        h, l = ax.get_legend_handles_labels()
        style.legend(ax, h, l, "time (stage)")
        x0 = float(p0["x_m"][0])
        fig.suptitle(f"Isochrones of excess pore pressure along '{name}' (x = {x0:g} m)",
                     fontsize=11.5)
        paths.append(style.finish(fig, out / f"isochrones_{safe_name(name)}.png",
                                  "Dashed lines: boundaries between regions of the mesh. Excess "
                                  "pore pressure: above the steady pore pressure at the start "
                                  "(hydrostatic unless piezometric levels are given), positive "
                                  "in compression."))
    return paths


def _has_sketch(run: RunData) -> bool:
    m = run.model
    return m is not None and bool((m.section.kind == "embankment" and m.section.embankment)
                                  or m.section.footings or m.loads)


def _load_sketch(ax, run: RunData, x_lo: float, x_hi: float) -> bool:
    """The embankment, footings and surface loads above the trough, to scale in x."""
    m = run.model
    if m is None:
        return False
    drawn, top = False, 0.0
    sec = m.section
    if sec.kind == "embankment" and sec.embankment is not None:
        from .model import embankment_profile
        prof = np.array(embankment_profile(sec.embankment), float)
        xs = np.concatenate([-prof[::-1, 0], prof[:, 0]])
        ys = np.concatenate([prof[::-1, 1], prof[:, 1]])
        ax.fill_between(xs, 0.0, ys, color="#d8d2bd", ec="#6b6350", lw=1.0)
        ax.set_ylabel("height (m)", fontsize=8)
        top = max(top, float(sec.embankment.height))
        drawn = True
    embankment = drawn
    for ft in getattr(sec, "footings", []) or []:
        x0 = ft.center - ft.width / 2
        if m.analysis == "axisymmetric":
            x0, w = 0.0, ft.width / 2               # the radius, from the axis
        else:
            w = ft.width
        ax.add_patch(_rect(x0, 0.0, w, 0.5, "#9a9a9a"))
        load = f"{ft.load:g} kPa" if ft.load is not None else f"{ft.force:g} kN"
        ax.text(x0 + 0.5 * w, 0.52, f"{ft.name}: {load}", ha="center", va="bottom",
                fontsize=7.5)
        top = max(top, 0.5)
        drawn = True
    for lo in m.loads:
        ax.add_patch(_rect(lo.x_left, 0.0, lo.x_right - lo.x_left, 0.3, "#b9c8d6"))
        ax.text(0.5 * (lo.x_left + lo.x_right), 0.32, f"{lo.name}: {lo.pressure:g} kPa",
                ha="center", va="bottom", fontsize=7.5)
        top = max(top, 0.3)
        drawn = True
    if drawn:
        ax.axhline(0.0, color="#333333", lw=0.8)
        ax.set_xlim(x_lo, x_hi)
        ax.set_ylim(0.0, 1.5 * top)
        # Heights are to scale for an embankment only; footings and loads are symbols.
        ax.set_yticks([0.0, top] if embankment else [])
        ax.tick_params(labelsize=8)
        ax.tick_params(axis="x", labelbottom=False)
    return drawn


def _rect(x, y, w, h, colour):
    from matplotlib.patches import Rectangle
    return Rectangle((x, y), w, h, fc=colour, ec="#333333", lw=0.8)


def plot_troughs(run: RunData, out: Path, times=None) -> list[Path]:
    """Settlement along each surface line at chosen output times, the loads sketched above."""
    paths = []
    for name, profs in run.lines_of("surface"):
        fig = style.figure(10.5, 7.0)
        p0 = profs[0]
        x_lo, x_hi = float(np.min(p0["x_m"])), float(np.max(p0["x_m"]))
        sketched = _has_sketch(run)
        if sketched:
            top, ax = fig.subplots(2, 1, sharex=True, height_ratios=(1, 4))
            _load_sketch(top, run, x_lo, x_hi)
        else:
            top, ax = None, fig.subplots()
        for c, p, label in _at_times(run, profs, times):
            ax.plot(p["x_m"], p["settlement_m"], color=c, lw=1.7, label=label)
        surf = [(n, x) for n, x in surface_probes(run) if x_lo - 1e-9 <= x <= x_hi + 1e-9]
        for k, (n, xp) in enumerate(surf):
            ax.axvline(xp, color="#9a9a9a", lw=0.7, ls=":", zorder=1)
            if sketched:     # names level, staggered in height so neighbours do not collide
                top.plot([xp], [0.0], marker="v", ms=6, color="#222222", clip_on=False,
                         zorder=5)
                top.text(xp, (0.1 + 0.3 * (k % 3)) * top.get_ylim()[1], f" {n}", ha="left",
                         va="bottom", fontsize=7.5, color="#222222", zorder=5,
                         bbox=dict(boxstyle="square,pad=0.05", fc="white", ec="none",
                                   alpha=0.6))
        ax.set_xlim(x_lo, x_hi)
        ax.set_ylim(bottom=min(0.0, ax.get_ylim()[0]))
        ax.invert_yaxis()
        ax.axhline(0.0, color="#555555", lw=0.8)
        axi = run.model is not None and run.model.analysis == "axisymmetric"
        ax.set_xlabel("r, distance from the axis (m)" if axi else "x, horizontal (m)")
        ax.set_ylabel("settlement (m, downward)")
        ax.grid(True, color="#e2e2e2", lw=0.6)
        h, l = ax.get_legend_handles_labels()
        style.legend(ax, h, l, "time (stage)")
        fig.suptitle(f"Settlement trough along '{name}': {run.title}", fontsize=11.5)
        note = ("Negative settlement is heave. Triangles and dotted lines: probes on the "
                "ground surface or on a footing base.")
        paths.append(style.finish(fig, out / f"trough_{safe_name(name)}.png", note))
    return paths
