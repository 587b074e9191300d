"""The shared look of the plots: figures on the Agg canvas, the caution and notes under each,
colours, the legend under the axes, time axes with the stages marked, and the choice of
output times to draw.

Used by the time-history plots (:mod:`solver.plot_histories`), the profiles
(:mod:`solver.plot_profiles`) and the frames of the section pictures
(:mod:`solver.pictures`). Imports nothing of the solver but the caution.

Every figure uses its own :class:`~matplotlib.figure.Figure` on the Agg canvas: no pyplot
state, no window, safe in a script, a test or a server.
"""

from __future__ import annotations

import io

import math
import textwrap
from pathlib import Path
from typing import Sequence

import numpy as np

from . import CAUTION

__all__ = ["DEFAULT_DPI", "MAX_PROFILES", "EPS_TIME", "pick_times", "fmt_days", "figure",
           "finish", "colour", "time_colours", "legend", "style_key", "time_axes",
           "with_origin", "mark_stages", "stage_key"]

DEFAULT_DPI = 130
MAX_PROFILES = 8            # profiles on one figure before the legend gets unreadable
_PROBE_COLOURS = ("#1f5fa8", "#d1731b", "#2b8a3e", "#b8323a", "#6a4c9c", "#8c6239",
                  "#c2509b", "#5a5a5a", "#9a9a1f", "#1b9aaa")  # dark enough on white
_STAGE_LINE = "#8a8a8a"
_BUILD_SHADE = "#ececec"    # construction stages (lifts placed or removed, loads)
EPS_TIME = 1e-9


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


def fmt_days(t: float) -> str:
    if t >= 730:
        return f"{t:,.0f} days ({t / 365.25:.1f} years)"
    return f"{t:,.4g} days"


def figure(w: float, h: float):
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


def finish(fig, path: Path, note: str = "", tight: bool = False) -> Path:
    """Notes and the caution under the figure (space kept for them), stage names, save."""
    fs = 7.5
    lines = _note_text(fig, note, fs)
    frac = (len(lines) * fs * 1.32 + 8) / 72 / fig.get_figheight()
    fig.text(0.006, 0.004, "\n".join(lines), fontsize=fs, color="#444444", ha="left",
             va="bottom", linespacing=1.32)
    fig.get_layout_engine().set(h_pad=0.05, w_pad=0.05, rect=(0, frac, 1, 1 - frac))
    _place_stage_labels(fig)
    from .results.files import make_folder, write_file_atomic
    make_folder(path.parent)
    buf = io.BytesIO()   # written whole through a new file, never through a planted link
    if tight:        # crop the blank margins a fixed-aspect picture leaves
        fig.savefig(buf, format="png", dpi=DEFAULT_DPI, facecolor="white",
                    bbox_inches="tight", pad_inches=0.12)
    else:
        fig.savefig(buf, format="png", dpi=DEFAULT_DPI, facecolor="white")
    write_file_atomic(path, buf.getvalue())
    return path


def colour(i: int) -> str:
    return _PROBE_COLOURS[i % len(_PROBE_COLOURS)]


def time_colours(n: int):
    from matplotlib import colormaps
    cmap = colormaps["viridis"]
    return [cmap(v) for v in np.linspace(0.0, 0.88, max(n, 1))]  # the yellow end is too pale


def legend(ax, handles, labels, title=None, ncol: int | None = None) -> None:
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


def style_key(fe: bool = True, hand: bool = False):
    """A small legend saying what solid and dashed lines are."""
    from matplotlib.lines import Line2D
    h = []
    if fe:
        h.append(Line2D([], [], color="#222222", lw=1.6, label="finite elements"))
    if hand:
        h.append(Line2D([], [], color="#222222", lw=1.4, ls="--", label="hand method"))
    return h


def time_axes(ax, t_all: np.ndarray, log: bool) -> None:
    t_pos = t_all[t_all > EPS_TIME]
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


def with_origin(t, v):
    """Prepend t = 0, value 0 (before the first stage nothing has moved)."""
    if t.size and t[0] > 0:
        return np.concatenate([[0.0], t]), np.concatenate([[0.0], v])
    return t, v


def mark_stages(ax, stages: Sequence, log: bool) -> None:
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
        if st.kind in ("lift", "remove", "load") and b > a:
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


def stage_key(stages: Sequence) -> str:
    if not stages:
        return ""
    return "Stages: " + "; ".join(f"{st.number} {st.name} ({st.start_days:,.4g} to "
                                  f"{st.end_days:,.4g} days)" for st in stages) + "."
