"""Plots of a run folder (matplotlib, no display needed): settlement, pore pressure, profiles.

    paths = make_plots("runs/embankment")             # PNGs into runs/embankment/plots/
    paths = make_plots(run_dir, times=[180, 3650])    # profiles at the output times nearest these

Figures drawn from the files a run writes (:mod:`solver.results`): ``probes.csv`` (every
step), ``lines.csv`` (output times), ``summary.json`` and the copy of the model
(``model.toml``), which names the stages, the line kinds and the layers. Where the hand
method is available (:mod:`solver.hand.estimate`, read from the same model) its curves are
drawn dashed beside the finite-element ones.

Every figure uses its own :class:`~matplotlib.figure.Figure` on the Agg canvas: no pyplot
state, no window, safe in a script, a test or a server. Times are in days, lengths in m,
pressures in kPa; settlement is positive downward and drawn downward.
"""

from __future__ import annotations

import json
import math
import textwrap
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Sequence

import numpy as np

from . import CAUTION

__all__ = ["RunData", "load_run", "make_plots", "plots_of", "plot_command", "pick_times",
           "hand_curves", "differential_histories", "surface_probes", "DEFAULT_DPI"]

DEFAULT_DPI = 130
PLOTS_DIR = "plots"
MAX_PROFILES = 8            # profiles on one figure before the legend gets unreadable
_PROBE_COLOURS = ("#1f5fa8", "#d1731b", "#2b8a3e", "#b8323a", "#6a4c9c", "#8c6239",
                  "#c2509b", "#5a5a5a", "#9a9a1f", "#1b9aaa")  # dark enough on white
_STAGE_LINE = "#8a8a8a"
_BUILD_SHADE = "#ececec"    # construction stages (lifts and loads)
_EPS_TIME = 1e-9


# ====================================================================== the run's data
@dataclass
class StageSpan:
    """One stage on the run's clock: ``start_days`` to ``end_days``."""
    number: int
    name: str
    kind: str | None
    start_days: float
    end_days: float


@dataclass
class RunData:
    """What the plots read from a run folder (all optional parts may be empty or None)."""
    dir: Path
    probes: dict[str, dict[str, np.ndarray]]
    lines: dict[str, list[dict[str, Any]]]
    summary: dict
    model: Any = None                    # solver.model.Model, when model.toml is there
    model_note: str = ""
    stages: list[StageSpan] = field(default_factory=list)
    hand: dict[str, dict[str, np.ndarray]] = field(default_factory=dict)
    hand_note: str = ""
    hand_estimate: Any = None            # solver.hand.estimate.HandEstimate, when computed

    @property
    def title(self) -> str:
        if self.model is not None:
            return self.model.title
        return (self.summary.get("run") or {}).get("title", self.dir.name)

    def line_kind(self, name: str) -> str:
        """"vertical", "surface" or "line": from the model, else from the line's shape."""
        if self.model is not None:
            for ln in self.model.lines:
                if ln.name == name and ln.kind in ("vertical", "surface"):
                    return ln.kind
        prof = (self.lines.get(name) or [None])[0]
        if prof is not None and len(prof["x_m"]) > 1:
            x, y = prof["x_m"], prof["y_m"]
            if np.ptp(x) < 1e-9 * max(1.0, np.ptp(y)):
                return "vertical"
            if np.ptp(y) < 1e-9 * max(1.0, np.ptp(x)) and abs(y[0]) < 1e-9:
                return "surface"
        return "line"


def _read_json(path: Path) -> dict:
    try:
        return json.loads(path.read_text())
    except (OSError, ValueError):
        return {}


def _stage_spans(probes: dict, model) -> list[StageSpan]:
    """Stage start and end times from the stage column of probes.csv (model order first)."""
    ends: dict[str, float] = {}
    order: list[str] = []
    for cols in probes.values():
        for t, s in zip(cols["time_days"], cols["stage"]):
            s = str(s)
            if s not in ends:
                order.append(s)
                ends[s] = float(t)
            else:
                ends[s] = max(ends[s], float(t))
        break                                    # every probe has the same rows
    kinds = {}
    if model is not None:
        names = [st.name for st in model.stages]
        kinds = {st.name: st.kind for st in model.stages}
        order = [n for n in names if n in ends] + [n for n in order if n not in names]
    spans, start = [], 0.0
    for i, name in enumerate(order):
        spans.append(StageSpan(i + 1, name, kinds.get(name), start, ends[name]))
        start = ends[name]
    return spans


def load_run(run_dir: str | Path, hand: bool = True) -> RunData:
    """Read a run folder for plotting; the model copy and the hand method when available."""
    from .results import read_lines, read_probes
    d = Path(run_dir)
    if not (d / "probes.csv").exists():
        from .results import ResultsError
        raise ResultsError(f"{d} holds no run results (probes.csv is missing); "
                           f"make one with 'poroplane run MODEL -o {d}'")
    probes = read_probes(d)
    lines = read_lines(d) if (d / "lines.csv").exists() else {}
    summary = _read_json(d / "summary.json")
    model, note = None, ""
    if (d / "model.toml").exists():
        try:
            from .model import load_model
            model = load_model(d / "model.toml")
        except Exception as exc:        # a model copy that no longer loads: plot without it
            note = f"the model copy could not be read ({exc})"
    else:
        note = "no model copy (model.toml) in the run folder"
    data = RunData(d, probes, lines, summary, model, note, _stage_spans(probes, model))
    if hand:
        data.hand, data.hand_note, data.hand_estimate = _hand(model)
    return data


# ======================================================================== hand method
def _as_dict(obj) -> dict:
    if obj is None:
        return {}
    if isinstance(obj, dict):
        return obj
    if hasattr(obj, "__dataclass_fields__"):
        return {k: getattr(obj, k) for k in obj.__dataclass_fields__}
    return {k: getattr(obj, k) for k in dir(obj) if not k.startswith("_")}


def _curve(rec: dict) -> dict[str, np.ndarray] | None:
    """Time history of one probe from a hand-method record of any reasonable shape."""
    rec = _as_dict(rec)
    t = next((rec[k] for k in ("time_days", "times_days", "history_days", "t_days", "times")
              if k in rec and rec[k] is not None), None)
    s = next((rec[k] for k in ("settlement_m", "settlement_history_m", "primary_settlement_m")
              if k in rec and rec[k] is not None and np.ndim(rec[k]) == 1), None)
    if t is None or s is None:
        return None
    t, s = np.asarray(t, float).ravel(), np.asarray(s, float).ravel()
    if t.size != s.size or t.size < 2:
        return None
    out = {"time_days": t, "settlement_m": s}
    for key in ("final_settlement_m", "total_settlement_m", "ultimate_settlement_m"):
        v = rec.get(key)
        if v is not None and np.ndim(v) == 0 and math.isfinite(float(v)):
            out["final_settlement_m"] = np.asarray(float(v))
            break
    for key in ("consolidation_degree", "average_degree"):
        v = rec.get(key)
        if v is not None and np.ndim(v) == 1 and np.size(v) == t.size:
            out["consolidation_degree"] = np.asarray(v, float)
            break
    u = rec.get("excess_pore_pressure_kPa")
    if u is not None and np.ndim(u) == 1 and np.size(u) == t.size:
        out["excess_pore_pressure_kPa"] = np.asarray(u, float)
    return out


def _hand(model):
    """(curves per probe, note, estimate object or None)."""
    if model is None:
        return {}, "hand method not drawn: the model copy is not available", None
    try:
        from .hand.estimate import hand_estimate
    except ImportError:
        return {}, "hand method not drawn: solver.hand.estimate is not installed", None
    try:
        est = hand_estimate(model)
    except Exception as exc:     # the hand method needs inputs the FE run does not
        return {}, f"hand method not drawn: it could not be computed ({exc})", None
    d = _as_dict(est)
    recs = d.get("probes", d)
    if isinstance(recs, (list, tuple)):
        recs = {getattr(r, "name", None) or _as_dict(r).get("probe") or _as_dict(r).get("name"): r
                for r in recs}
    out = {}
    for name, rec in _as_dict(recs).items():
        c = _curve(rec)
        if c is not None and name is not None:
            out[str(name)] = c
    if not out:
        return {}, "hand method not drawn: its estimate holds no settlement histories", est
    return out, "", est


def hand_curves(model) -> tuple[dict[str, dict[str, np.ndarray]], str]:
    """Settlement histories of the hand method per probe, and a note on what happened.

    Uses :func:`solver.hand.estimate.hand_estimate` (optional). Returns ``({}, reason)``
    when it is not installed, fails, or gives no time histories.
    """
    curves, note, _ = _hand(model)
    return curves, note


# ============================================================================ helpers
def pick_times(available: Sequence[float], wanted: Sequence[float] | None = None,
               max_n: int = MAX_PROFILES) -> list[int]:
    """Indices into ``available`` (output times, days) to draw profiles at.

    ``wanted``: the output time nearest each is taken (duplicates dropped). None: all of
    them up to ``max_n``, otherwise ``max_n`` spread evenly, the first and last included.
    """
    t = np.asarray(available, float)
    if t.size == 0:
        return []
    if wanted is not None and len(wanted):
        idx = []
        for w in wanted:
            i = int(np.argmin(np.abs(t - float(w))))
            if i not in idx:
                idx.append(i)
        return sorted(idx, key=lambda i: t[i])
    if t.size <= max_n:
        return list(range(t.size))
    return sorted(set(np.round(np.linspace(0, t.size - 1, max_n)).astype(int).tolist()))


def _fmt_days(t: float) -> str:
    if t >= 730:
        return f"{t:,.0f} days ({t / 365.25:.1f} years)"
    return f"{t:,.4g} days"


def _figure(w: float, h: float):
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure
    fig = Figure(figsize=(w, h), layout="constrained")
    FigureCanvasAgg(fig)
    return fig


def _note_text(fig, note: str, fontsize: float) -> list[str]:
    width = int(0.98 * fig.get_figwidth() * 72 / (fontsize * 0.56))   # characters a line
    lines: list[str] = []
    for para in [p for p in note.split("\n") if p] + [CAUTION]:
        lines += textwrap.wrap(para, width) or [""]
    return lines


def _finish(fig, path: Path, note: str = "", tight: bool = False) -> Path:
    """Notes and the caution under the figure (space kept for them), stage names, save."""
    fs = 7.5
    lines = _note_text(fig, note, fs)
    frac = (len(lines) * fs * 1.32 + 8) / 72 / fig.get_figheight()
    fig.text(0.006, 0.004, "\n".join(lines), fontsize=fs, color="#444444", ha="left",
             va="bottom", linespacing=1.32)
    fig.get_layout_engine().set(h_pad=0.05, w_pad=0.05, rect=(0, frac, 1, 1 - frac))
    _place_stage_labels(fig)
    path.parent.mkdir(parents=True, exist_ok=True)
    if tight:        # crop the blank margins a fixed-aspect picture leaves
        fig.savefig(path, dpi=DEFAULT_DPI, facecolor="white", bbox_inches="tight",
                    pad_inches=0.12)
    else:
        fig.savefig(path, dpi=DEFAULT_DPI, facecolor="white")
    return path


def _colour(i: int) -> str:
    return _PROBE_COLOURS[i % len(_PROBE_COLOURS)]


def _mark_stages(ax, stages: Sequence[StageSpan], log: bool) -> None:
    """Stage starts as dotted lines, construction stages shaded, stage names above the axes.

    A name goes over the middle of its stage where it fits, else the stage number (the
    figure note lists them); see :func:`_place_stage_labels`.
    """
    from matplotlib.transforms import blended_transform_factory
    lo, hi = ax.get_xlim()
    tr = blended_transform_factory(ax.transData, ax.transAxes)
    labels = []
    for st in stages:
        a, b = st.start_days, st.end_days
        if st.kind in ("lift", "load") and b > a:
            a_ = max(a, lo) if log else a
            if b > a_:
                ax.axvspan(a_, b, color=_BUILD_SHADE, zorder=0, lw=0)
        if a > lo * (1 + 1e-9) or (not log and a > lo):
            ax.axvline(a, color=_STAGE_LINE, lw=0.8, ls=":", zorder=1)
        a, b = max(a, lo), min(b, hi)
        if b < a:
            continue
        mid = math.sqrt(a * b) if log and a > 0 else 0.5 * (a + b)
        txt = ax.text(mid, 1.006, st.name, transform=tr, ha="center", va="bottom",
                      fontsize=7.5, color="#333333", clip_on=False)
        txt.set_in_layout(False)
        labels.append((txt, st, a, b))
    ax.set_xlim(lo, hi)
    ax.set_title(" ", fontsize=9, pad=2)     # keeps a line free above the axes for the names
    fig = ax.get_figure()
    if not hasattr(fig, "_stage_labels"):
        fig._stage_labels = []
    fig._stage_labels.append((ax, labels))


def _place_stage_labels(fig) -> None:
    """Keep a stage name where it fits its stage, else its number, else nothing."""
    groups = getattr(fig, "_stage_labels", [])
    if not groups:
        return
    fig.get_layout_engine().execute(fig)     # positions without drawing the whole figure
    r = fig.canvas.get_renderer()
    for ax, labels in groups:
        right = -math.inf
        for txt, st, a, b in labels:
            xa, xb = ax.transData.transform([(a, 0), (b, 0)])[:, 0]
            bb = txt.get_window_extent(r)
            if bb.width > (xb - xa) + 6 or bb.x0 < right + 4:
                txt.set_text(str(st.number))
                bb = txt.get_window_extent(r)
                if bb.x0 < right + 3:
                    txt.set_visible(False)
                    continue
            right = bb.x1


def _stage_key(stages: Sequence[StageSpan]) -> str:
    if not stages:
        return ""
    return "Stages: " + "; ".join(f"{st.number} {st.name} ({st.start_days:,.4g} to "
                                  f"{st.end_days:,.4g} days)" for st in stages) + "."


def _time_axes(ax, t_all: np.ndarray, log: bool) -> None:
    t_pos = t_all[t_all > _EPS_TIME]
    if log:
        ax.set_xscale("log")
        lo = t_pos.min() if t_pos.size else 0.1
        ax.set_xlim(lo / 1.5, t_all.max() * 1.5)
        ax.set_xlabel("time since the start of the first stage (days, logarithmic scale)")
        from matplotlib.ticker import FuncFormatter
        ax.xaxis.set_major_formatter(FuncFormatter(lambda v, _: f"{v:,g}"))
    else:
        ax.set_xlim(0.0, t_all.max() * 1.02)
        ax.set_xlabel("time since the start of the first stage (days)")
    ax.grid(True, which="major", color="#dddddd", lw=0.6)
    if log:
        ax.grid(True, which="minor", axis="x", color="#f0f0f0", lw=0.4)


def _with_origin(t, v):
    """Prepend t = 0, value 0 (before the first stage nothing has moved)."""
    if t.size and t[0] > 0:
        return np.concatenate([[0.0], t]), np.concatenate([[0.0], v])
    return t, v


def _style_key(fe: bool = True, hand: bool = False):
    """A small legend saying what solid and dashed lines are."""
    from matplotlib.lines import Line2D
    h = []
    if fe:
        h.append(Line2D([], [], color="#222222", lw=1.6, label="finite elements"))
    if hand:
        h.append(Line2D([], [], color="#222222", lw=1.4, ls="--", label="hand method"))
    return h


# ============================================================================= figures
def _legend(ax, handles, labels, title=None, ncol: int | None = None) -> None:
    """One legend under the x label of ``ax`` (the lowest axes), never over title or data.

    Anchored a fixed distance below the axes, so the constrained layout makes room for it.
    """
    from matplotlib.transforms import ScaledTranslation
    fig = ax.get_figure()
    if ncol is None:
        longest = max((len(x) for x in labels), default=10)
        ncol = max(1, min(len(labels), int(fig.get_figwidth() * 72 * 0.9
                                           / (8.5 * 0.6 * (longest + 5)))))
    tr = ax.transAxes + ScaledTranslation(0.0, -0.50, fig.dpi_scale_trans)
    ax.legend(handles, labels, title=title, loc="upper center", bbox_to_anchor=(0.5, 0.0),
              bbox_transform=tr, fontsize=8.5, title_fontsize=9, frameon=True, ncol=ncol)


def _hand_note(run: RunData) -> str:
    return (run.hand_note[0].upper() + run.hand_note[1:] + ".") if run.hand_note else ""


def _time_history_figure(run: RunData, names: list[str], column: str, hand_column: str,
                         ylabel: str, down: bool):
    """Two panels (linear and logarithmic time) of one probe column; hand curves dashed."""
    fig = _figure(10.5, 8.4)
    axes = fig.subplots(2, 1)
    t_all = np.concatenate([run.probes[n]["time_days"] for n in names])
    colour_of = {n: _colour(i) for i, n in enumerate(run.probes)}
    drawn_hand = False
    for log, ax in zip((False, True), axes):
        for n in names:
            c = run.probes[n]
            t, v = c["time_days"], c[column]
            if not log:
                t, v = _with_origin(t, v)
            ax.plot(t, v, color=colour_of[n], lw=1.6, label=n, zorder=3)
            h = run.hand.get(n)
            if h is not None and hand_column in h and np.isfinite(h[hand_column]).any():
                keep = h["time_days"] > (_EPS_TIME if log else -1.0)
                ax.plot(h["time_days"][keep], h[hand_column][keep], color=colour_of[n],
                        lw=1.4, ls="--", zorder=3)
                drawn_hand = True
        _time_axes(ax, t_all, log)
        ax.set_ylabel(ylabel)
        if down:
            ax.set_ylim(bottom=min(0.0, ax.get_ylim()[0]))
            ax.invert_yaxis()
        else:
            ax.axhline(0.0, color="#555555", lw=0.8)
        _mark_stages(ax, run.stages, log)
    h, l = axes[0].get_legend_handles_labels()
    key = _style_key(hand=drawn_hand) if drawn_hand else []
    _legend(axes[-1], h + key, l + [k.get_label() for k in key], "probe")
    return fig, drawn_hand


def plot_settlement_time(run: RunData, out: Path) -> list[Path]:
    """Settlement at every probe against time, linear and logarithmic time, hand dashed."""
    names = [n for n, c in run.probes.items() if np.isfinite(c["settlement_m"]).any()]
    if not names:
        return []
    fig, _ = _time_history_figure(run, names, "settlement_m", "settlement_m",
                                  "settlement (m, downward)", down=True)
    fig.suptitle(f"Settlement at the probes: {run.title}", fontsize=11.5)
    note = " ".join(x for x in (
        "Shaded: construction stages (lifts, loads); dotted lines: stage starts. A probe "
        "inside the ground moves with the soil at its depth.", _hand_note(run)) if x)
    return [_finish(fig, out / "settlement_time.png", note + "\n" + _stage_key(run.stages))]


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
    note = "Excess pore pressure: pore pressure above hydrostatic, positive in compression."
    if flat:
        note += (" Not drawn (zero throughout: on a drained boundary or in free-draining "
                 f"ground): {', '.join(flat)}.")
    note = " ".join(x for x in (note, _hand_note(run)) if x)
    return [_finish(fig, out / "pore_pressure_time.png", note + "\n" + _stage_key(run.stages))]


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


def plot_degree_time(run: RunData, out: Path) -> list[Path]:
    """Degree of consolidation from settlement, s(t)/s(end), per probe (log time)."""
    finals = {n: float(c["settlement_m"][np.isfinite(c["settlement_m"])][-1])
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
    fig = _figure(10.5, 6.2)
    ax = fig.subplots()
    t_end = max(float(np.nanmax(run.probes[n]["time_days"])) for n in names)
    drawn_hand = False
    colour_of = {n: _colour(i) for i, n in enumerate(run.probes)}
    t_all, lowest = [], 0.0
    for n in names:
        c = run.probes[n]
        t, s = c["time_days"], c["settlement_m"]
        u = 100 * degree_of_consolidation(t, s)
        lowest = min(lowest, float(np.nanmin(u)))
        ax.plot(t, u, color=colour_of[n], lw=1.6, label=n, zorder=3)
        t_all.append(t)
        h = run.hand.get(n)
        if h is not None and "consolidation_degree" in h:
            keep = h["time_days"] > _EPS_TIME
            ax.plot(h["time_days"][keep], 100 * h["consolidation_degree"][keep],
                    color=colour_of[n], lw=1.4, ls="--", zorder=3)
            drawn_hand = True
    _time_axes(ax, np.concatenate(t_all), log=True)
    ax.set_ylim(max(lowest - 5.0, -100.0), 105)
    ax.set_ylabel("degree of consolidation U (%)")
    for lev in (50, 90):
        ax.axhline(lev, color="#777777", lw=0.7, ls="-.", zorder=1)
        ax.text(0.004, lev, f"{lev} %", transform=ax.get_yaxis_transform(), va="bottom",
                ha="left", fontsize=8, color="#444444")
    if lowest < 0:
        ax.axhline(0.0, color="#555555", lw=0.8)
    _mark_stages(ax, run.stages, log=True)
    h, l = ax.get_legend_handles_labels()
    key = _style_key(hand=drawn_hand) if drawn_hand else []
    _legend(ax, h + key, l + [k.get_label() for k in key], "probe")
    fig.suptitle(f"Degree of consolidation from settlement: {run.title}", fontsize=11.5)
    note = (f"Finite elements: U = s(t) / s(end), the settlement at time t over the settlement "
            f"at the end of the run, {_fmt_days(t_end)}, per probe; with staged loading it "
            f"mixes the growth of the load with consolidation, and is negative while a point "
            f"heaves.")
    if drawn_hand:
        note += (" Hand method (dashed): the degree of consolidation of the soil below the "
                 "probe under the staged load.")
    if skipped:
        note += (" Not drawn (end settlement small, negative or exceeded earlier in the record, "
                 f"so U says little): {', '.join(skipped)}.")
    note = " ".join(x for x in (note, _hand_note(run)) if x)
    return [_finish(fig, out / "degree_of_consolidation.png",
                    note + "\n" + _stage_key(run.stages))]


def _mesh_arrays(run_dir: Path):
    import h5py
    with h5py.File(run_dir / "fields" / "mesh.h5", "r") as f:
        return (f["points"][:, :2], f["cells"][()], f["region_id"][()],
                json.loads(f.attrs["region_names"]))


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


def _time_colours(n: int):
    from matplotlib import colormaps
    cmap = colormaps["viridis"]
    return [cmap(v) for v in np.linspace(0.0, 0.88, max(n, 1))]  # the yellow end is too pale


def plot_isochrones(run: RunData, out: Path, times=None) -> list[Path]:
    """Excess pore pressure along each vertical line at chosen output times."""
    paths = []
    for name, profs in run.lines.items():
        if run.line_kind(name) != "vertical" or not profs:
            continue
        idx = pick_times([p["time_days"] for p in profs], times)
        fig = _figure(9.6, 7.6)
        ax = fig.subplots()
        for c, i in zip(_time_colours(len(idx)), idx):
            p = profs[i]
            ax.plot(p["excess_pore_pressure_kPa"], p["y_m"], color=c, lw=1.7, marker="o",
                    ms=2.5, label=f"{_fmt_days(p['time_days'])}  ({p['stage']})")
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
        _legend(ax, h, l, "time (stage)")
        x0 = float(p0["x_m"][0])
        fig.suptitle(f"Isochrones of excess pore pressure along '{name}' (x = {x0:g} m)",
                     fontsize=11.5)
        paths.append(_finish(fig, out / f"isochrones_{name}.png",
                             "Dashed lines: boundaries between regions of the mesh. Excess pore "
                             "pressure: above hydrostatic, positive in compression."))
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
    for name, profs in run.lines.items():
        if run.line_kind(name) != "surface" or not profs:
            continue
        idx = pick_times([p["time_days"] for p in profs], times)
        fig = _figure(10.5, 7.0)
        p0 = profs[0]
        x_lo, x_hi = float(np.min(p0["x_m"])), float(np.max(p0["x_m"]))
        sketched = _has_sketch(run)
        if sketched:
            top, ax = fig.subplots(2, 1, sharex=True, height_ratios=(1, 4))
            _load_sketch(top, run, x_lo, x_hi)
        else:
            top, ax = None, fig.subplots()
        for c, i in zip(_time_colours(len(idx)), idx):
            p = profs[i]
            ax.plot(p["x_m"], p["settlement_m"], color=c, lw=1.7,
                    label=f"{_fmt_days(p['time_days'])}  ({p['stage']})")
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
        _legend(ax, h, l, "time (stage)")
        fig.suptitle(f"Settlement trough along '{name}': {run.title}", fontsize=11.5)
        note = ("Negative settlement is heave. Triangles and dotted lines: probes on the "
                "ground surface or on a footing base.")
        paths.append(_finish(fig, out / f"trough_{name}.png", note))
    return paths


def surface_probes(run: RunData) -> list[tuple[str, float]]:
    """Probes on the original ground surface (y = 0) or on a footing base, by increasing x:
    [(name, x m)]."""
    bases = []
    if run.model is not None:
        bases = [(f.center - f.width / 2, f.center + f.width / 2, -f.embedment)
                 for f in (run.model.section.footings or [])]
    got = []
    for n, c in run.probes.items():
        if not len(c["y_m"]):
            continue
        x, y = float(c["x_m"][0]), float(c["y_m"][0])
        if abs(y) < 1e-9 or any(lo - 1e-9 <= x <= hi + 1e-9 and abs(y - yb) < 1e-9
                                for lo, hi, yb in bases):
            got.append((n, x))
    return sorted(got, key=lambda p: p[1])


def differential_histories(run: RunData, limits=None) -> list[dict]:
    """For each pair of neighbouring surface probes: times, differential settlement,
    angular distortion and the limit checks (:mod:`solver.hand.differential`)."""
    from .hand.differential import differential_between_probes
    surf = surface_probes(run)
    out = []
    for (na, xa), (nb, xb) in zip(surf, surf[1:]):
        if xb - xa <= 1e-9:
            continue
        ca, cb = run.probes[na], run.probes[nb]
        t = ca["time_days"]
        keep = np.concatenate([[True], np.diff(t) > 0])      # zero-length stages repeat t
        hist = differential_between_probes(t[keep], ca["settlement_m"][keep],
                                           cb["settlement_m"][keep], xb - xa, limits)
        out.append({"a": na, "b": nb, "distance_m": xb - xa, "history": hist})
    return out


def plot_differential(run: RunData, out: Path, limits=None) -> list[Path]:
    """Differential settlement and angular distortion of neighbouring surface probes."""
    from .hand.differential import DEFAULT_DISTORTION_LIMITS, distortion_along_line
    pairs = differential_histories(run, limits)
    if not pairs:
        return []
    limits = DEFAULT_DISTORTION_LIMITS if limits is None else limits
    fig = _figure(10.5, 8.6)
    ax1, ax2 = fig.subplots(2, 1, sharex=True)
    t_all = np.concatenate([p["history"].times_days for p in pairs])
    drawn_hand = False
    seen = [p["history"].angular_distortion for p in pairs]
    for i, p in enumerate(pairs):
        h = p["history"]
        lab = f"{p['a']} to {p['b']} ({p['distance_m']:g} m apart)"
        t, ds = _with_origin(h.times_days, h.differential_settlement_m)
        ax1.plot(t, ds, color=_colour(i), lw=1.6, label=lab)
        ax2.plot(h.times_days, h.angular_distortion, color=_colour(i), lw=1.6)
        ha, hb = run.hand.get(p["a"]), run.hand.get(p["b"])
        if ha is not None and hb is not None:
            th = ha["time_days"]
            sb = np.interp(th, hb["time_days"], hb["settlement_m"])
            ax1.plot(th, ha["settlement_m"] - sb, color=_colour(i), lw=1.3, ls="--")
            dh = np.abs(ha["settlement_m"] - sb) / p["distance_m"]
            ax2.plot(th, dh, color=_colour(i), lw=1.3, ls="--")
            seen.append(dh[th <= 1.02 * t_all.max()])
            drawn_hand = True
    for name, profs in run.lines.items():       # the largest distortion along a surface line
        if run.line_kind(name) != "surface" or not profs or len(profs[0]["x_m"]) < 2:
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
        _time_axes(ax, t_all, log=False)
        ax.set_xlim(right=1.02 * t_all.max())
        _mark_stages(ax, run.stages, log=False)
    ax1.set_xlabel("")
    ax1.axhline(0.0, color="#555555", lw=0.8)
    ax1.set_ylabel("differential settlement (m)")
    ax2.set_ylabel("angular distortion (-, logarithmic scale)")
    ax2.set_yscale("log")
    seen = np.concatenate(seen)
    seen = seen[np.isfinite(seen) & (seen > 0)]
    hi = max(float(seen.max()) if seen.size else 0.0, max(limits.values())) * 2.0
    ax2.set_ylim(min(limits.values()) / 20.0, hi)
    ax2.grid(True, which="minor", axis="y", color="#f0f0f0", lw=0.4)
    for desc, lim in sorted(limits.items(), key=lambda kv: kv[1]):
        ax2.axhline(lim, color="#b03030", lw=0.9, ls=(0, (5, 3)), zorder=2)
        ax2.text(0.995, lim, f"1/{1 / lim:.0f}: {desc}", transform=ax2.get_yaxis_transform(),
                 ha="right", va="bottom", fontsize=7.5, color="#7a1f1f",
                 bbox=dict(boxstyle="square,pad=0.1", fc="white", ec="none", alpha=0.75))
    h1, l1 = ax1.get_legend_handles_labels()
    h2, l2 = ax2.get_legend_handles_labels()
    key = _style_key(hand=drawn_hand) if drawn_hand else []
    _legend(ax2, h1 + h2 + key, l1 + l2 + [k.get_label() for k in key],
            "surface probes (first minus second)")
    fig.suptitle(f"Differential settlement and angular distortion: {run.title}",
                 fontsize=11.5)
    firsts = []
    for p in pairs:
        for chk in p["history"].checks:
            if chk.exceeded:
                firsts.append(f"{p['a']} to {p['b']} passes 1/{1 / chk.limit:.0f} at "
                              f"{chk.first_exceeded_days:,.0f} days")
    note = ("Angular distortion = |difference in settlement| / horizontal distance, rigid tilt "
            "included. Red dashed lines: limits after Bjerrum (1963), values as recalled, to be "
            "checked against the paper.")
    note = " ".join(x for x in (note, _hand_note(run)) if x)
    if firsts:
        note += "\nFinite elements: " + "; ".join(firsts) + "."
    return [_finish(fig, out / "differential_settlement.png",
                    note + "\n" + _stage_key(run.stages))]


# ============================================================================ entry points
def make_plots(run_dir: str | Path, out_dir: str | Path | None = None,
               times: Sequence[float] | None = None) -> list[Path]:
    """Write every plot the run folder supports; returns the PNG paths.

    Parameters
    ----------
    run_dir : folder written by a run (``poroplane run MODEL -o DIR``).
    out_dir : where the PNGs go; ``run_dir/plots`` by default.
    times : days at which to draw the profiles (isochrones, troughs): the nearest output time
        to each. None: every output time (at most eight, spread evenly).
    """
    return plots_of(load_run(run_dir), out_dir, times)


def plots_of(run: RunData, out_dir: str | Path | None = None,
             times: Sequence[float] | None = None) -> list[Path]:
    """:func:`make_plots` for run data already read (:func:`load_run`)."""
    out = Path(out_dir) if out_dir is not None else run.dir / PLOTS_DIR
    out.mkdir(parents=True, exist_ok=True)
    paths: list[Path] = []
    paths += plot_settlement_time(run, out)
    paths += plot_pore_pressure_time(run, out)
    paths += plot_degree_time(run, out)
    paths += plot_isochrones(run, out, times)
    paths += plot_troughs(run, out, times)
    paths += plot_differential(run, out)
    return paths


def plot_command(run_dir: str | Path, times: Sequence[float] | None = None) -> list[Path]:
    """What ``poroplane plot DIR [--times ...]`` does: the plots and the section pictures,
    all as PNGs in ``DIR/plots/``. Without off-screen rendering the pictures are left out
    with a :class:`solver.pictures.RenderingUnavailable` warning; the plots are made anyway.
    """
    from .pictures import make_pictures
    run = load_run(run_dir)
    out = run.dir / PLOTS_DIR
    paths = plots_of(run, out, times)
    paths += make_pictures(run.dir, out, times)
    return paths
