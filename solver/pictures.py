"""Pictures of the section (pyvista, off screen): the mesh, excess pore pressure, settlement.

    paths = make_pictures("runs/embankment")               # PNGs into runs/embankment/pictures/
    paths = make_pictures(run_dir, times=[180, 1626])      # fields at the nearest output times
    ok, why = rendering_available()                        # can this machine render at all?

The section is rendered by VTK through pyvista with no window: contour bands of the field at
fixed levels, the level lines in black, the region boundaries (layers, lifts) and the
embankment outline as lines, optionally on the deformed mesh (displacements multiplied by a
stated factor). The rendered image covers an exactly known window of the section (parallel
projection, one pixel the same size in x and y), so matplotlib frames it: axes in m, a colour
bar with the quantity and its unit, the legend of regions, the probes, the caution.

Off-screen rendering without a display. The VTK wheels pick their OpenGL window at run time.
With no X display this module asks for an EGL window (Mesa's software rasteriser through
libEGL: Debian packages ``libegl1 libegl-mesa0 libgl1-mesa-dri``), and falls back to OSMesa
(``libosmesa6``). Whether rendering works is tried once per process in a child process
(:func:`rendering_available`), so a broken OpenGL stack gives a message, never a crash; the
pictures are then skipped with a :class:`RenderingUnavailable` warning.

Colour maps: sequential ``viridis`` for a quantity of one sign, the diverging ``coolwarm``
(grey at zero) for a quantity with both signs, on one scale each side of zero so that colours
compare honestly. Limits are shared by all the times of one quantity.
"""

from __future__ import annotations

import functools
import math
import os
import subprocess
import sys
import warnings
from dataclasses import dataclass
from pathlib import Path
from typing import Sequence

import numpy as np

from .plot_style import finish, pick_times

__all__ = ["make_pictures", "picture_command", "rendering_available", "RenderingUnavailable",
           "mesh_picture", "field_picture", "exaggeration_factor"]

PICTURES_DIR = "pictures"
MAX_DEFAULT_TIMES = 4
RENDER_WIDTH = 1800         # pixels across the rendered section (downsampled by matplotlib)
_REGION_COLOURS = ("#8fa9c4", "#a9c79b", "#c4a3c4", "#8cc2bd", "#c9a3a3", "#a3a3d1",
                   "#b5b5b5", "#9cb08a")          # soil regions: muted, distinct, no tan
_LIFT_COLOURS = ("#f3ecd8", "#e8dcbc", "#dccda2", "#cfbe8a")   # lifts: shades of fill
_BOUNDARY = (0.10, 0.10, 0.10)
_OUTLINE = (0.0, 0.0, 0.0)
_WINDOW_CLASSES = ("vtkEGLRenderWindow", "vtkOSOpenGLRenderWindow")


class RenderingUnavailable(UserWarning):
    """Off-screen rendering does not work here: the pictures were skipped (plots still are)."""


# ================================================================== off-screen rendering
_PROBE = r"""
from vtkmodules.vtkFiltersSources import vtkSphereSource
from vtkmodules.vtkRenderingCore import (vtkActor, vtkPolyDataMapper, vtkRenderer,
                                         vtkRenderWindow, vtkWindowToImageFilter)
import vtkmodules.vtkRenderingOpenGL2  # registers the OpenGL classes
from vtkmodules.util.numpy_support import vtk_to_numpy
src = vtkSphereSource()
mapper = vtkPolyDataMapper()
mapper.SetInputConnection(src.GetOutputPort())
actor = vtkActor()
actor.SetMapper(mapper)
ren = vtkRenderer()
ren.AddActor(actor)
ren.SetBackground(1, 1, 1)
win = vtkRenderWindow()
win.SetOffScreenRendering(1)
win.AddRenderer(ren)
win.SetSize(64, 48)
win.Render()
grab = vtkWindowToImageFilter()
grab.SetInput(win)
grab.Update()
img = vtk_to_numpy(grab.GetOutput().GetPointData().GetScalars())
print("RENDER_OK" if img.std() > 1.0 else "RENDER_BLANK", win.GetClassName())
"""


def _has_display() -> bool:
    return bool(os.environ.get("DISPLAY") or os.environ.get("WAYLAND_DISPLAY"))


def _try_render(window_class: str | None, timeout: float) -> tuple[bool, str]:
    env = dict(os.environ)
    if window_class:
        env["VTK_DEFAULT_OPENGL_WINDOW"] = window_class
    try:
        r = subprocess.run([sys.executable, "-c", _PROBE], env=env, capture_output=True,
                           text=True, timeout=timeout)
    except (OSError, subprocess.TimeoutExpired) as exc:
        return False, f"the rendering test did not finish ({exc})"
    if "RENDER_OK" in r.stdout:
        return True, ""
    tail = (r.stderr or r.stdout).strip().splitlines()[-3:]
    return False, " | ".join(tail) or f"exit status {r.returncode}"


@functools.lru_cache(maxsize=1)
def rendering_available(timeout: float = 120.0) -> tuple[bool, str]:
    """Whether pyvista can render off screen here, and how (or why not).

    Tried once per process in a child process, first with the OpenGL window VTK would pick
    (or that ``VTK_DEFAULT_OPENGL_WINDOW`` names), then, without a display, with EGL and
    OSMesa. The working choice is kept in ``VTK_DEFAULT_OPENGL_WINDOW`` for this process.
    Returns ``(True, description)`` or ``(False, reason with what to install)``.
    """
    try:
        import pyvista  # noqa: F401
    except ImportError as exc:
        return False, f"pyvista is not installed ({exc}); pip install pyvista"
    tried = []
    chosen = os.environ.get("VTK_DEFAULT_OPENGL_WINDOW")
    candidates: list[str | None] = []
    if chosen or _has_display():
        candidates.append(chosen)
    candidates += [w for w in _WINDOW_CLASSES if w != chosen]
    for wc in candidates:
        ok, why = _try_render(wc, timeout)
        if ok:
            if wc:
                os.environ["VTK_DEFAULT_OPENGL_WINDOW"] = wc
            return True, f"off-screen rendering with {wc or 'the default OpenGL window'}"
        tried.append(f"{wc or 'default window'}: {why}")
    return False, ("off-screen rendering does not work on this machine; install Mesa's EGL "
                   "(Debian: apt-get install libegl1 libegl-mesa0 libgl1-mesa-dri) or OSMesa "
                   "(libosmesa6). Tried " + "; ".join(tried))


# =============================================================================== geometry
@dataclass
class Section:
    """The mesh of a run as read from ``fields/mesh.h5``: (n_nodes, 2) points, 6-node cells."""
    points: np.ndarray
    cells: np.ndarray
    region: np.ndarray
    region_names: list[str]

    @property
    def lift_ids(self) -> list[int]:
        return [i for i, n in enumerate(self.region_names) if n.startswith("lift_")]


def _split_p2(cells: np.ndarray) -> np.ndarray:
    """Four straight 3-node triangles per 6-node triangle (Gmsh order: corners, then mid
    nodes of edges 0-1, 1-2, 2-0): exact at every node, (4 n, 3)."""
    c = cells
    return np.concatenate([c[:, [0, 3, 5]], c[:, [3, 1, 4]], c[:, [5, 4, 2]], c[:, [3, 4, 5]]])


def _edges(cells: np.ndarray):
    """Element edges as (corner a, mid, corner b) rows and the element of each, (3 ne, 3)."""
    c = cells
    e = np.concatenate([c[:, [0, 3, 1]], c[:, [1, 4, 2]], c[:, [2, 5, 0]]])
    owner = np.tile(np.arange(len(c)), 3)
    return e, owner


def _boundary_edges(cells: np.ndarray, region: np.ndarray, keep: np.ndarray,
                    group: np.ndarray | None = None) -> np.ndarray:
    """Edges of the kept elements where the group changes or the kept set ends, (n, 3).

    ``group`` per element (the region by default): an edge between two kept elements of
    different groups is a boundary; an edge with one kept side is the outline.
    """
    group = region if group is None else group
    e, owner = _edges(cells)
    sel = keep[owner]
    e, owner = e[sel], owner[sel]
    key = np.sort(e[:, [0, 2]], axis=1)
    _, inv, counts = np.unique(key, axis=0, return_inverse=True, return_counts=True)
    inv = inv.ravel()
    g = group[owner]
    gmin = np.full(counts.size, np.iinfo(np.int64).max, dtype=np.int64)
    gmax = np.full(counts.size, np.iinfo(np.int64).min, dtype=np.int64)
    np.minimum.at(gmin, inv, g)
    np.maximum.at(gmax, inv, g)
    differ = gmin != gmax
    out = (counts[inv] == 1) | differ[inv]
    e = e[out]
    # shared boundary edges appear twice: keep one
    _, idx = np.unique(np.sort(e[:, [0, 2]], axis=1), axis=0, return_index=True)
    return e[np.sort(idx)]


def _lines_polydata(xy: np.ndarray, edges: np.ndarray, z: float):
    """Edges (a, mid, b) as 2-segment polylines at height z (drawn above the surface)."""
    import pyvista as pv
    pts = np.c_[xy, np.full(len(xy), z)]
    lines = np.c_[np.full(len(edges), 3), edges].ravel()
    return pv.PolyData(pts, lines=lines)


def _surface_polydata(xy: np.ndarray, tris: np.ndarray):
    import pyvista as pv
    pts = np.c_[xy, np.zeros(len(xy))]
    return pv.PolyData(pts, np.c_[np.full(len(tris), 3), tris].ravel())


def read_section(run_dir: Path) -> Section:
    from .results import read_mesh_file
    points, cells, region, names = read_mesh_file(run_dir)     # checked against the record
    return Section(points.astype(float), cells.astype(np.int64), region.astype(np.int64),
                   list(names))


# ========================================================================= colours, levels
def _levels(vmin: float, vmax: float, n: int = 12) -> np.ndarray:
    """Nice, equally spaced contour levels covering [vmin, vmax] (0 among them if crossed)."""
    from matplotlib.ticker import MaxNLocator
    if not (math.isfinite(vmin) and math.isfinite(vmax)) or vmax - vmin <= 0:
        c = vmin if math.isfinite(vmin) else 0.0
        d = max(abs(c) * 0.05, 1e-6)
        vmin, vmax = c - d, c + d
    lv = MaxNLocator(n, steps=[1, 2, 2.5, 5, 10]).tick_values(vmin, vmax)
    lv = lv[(lv >= vmin - 1e-12 * abs(vmax - vmin)) | (np.arange(lv.size) == 0)]
    while lv[0] > vmin:
        lv = np.r_[lv[0] - (lv[1] - lv[0]), lv]
    while lv[-1] < vmax:
        lv = np.r_[lv, lv[-1] + (lv[1] - lv[0])]
    lo = np.searchsorted(lv, vmin, side="right") - 1
    hi = np.searchsorted(lv, vmax, side="left")
    return lv[max(lo, 0):hi + 1]


def _band_colours(levels: np.ndarray, signed: bool):
    """One colour per band between levels; diverging about zero on one scale, or viridis."""
    from matplotlib import colormaps
    from matplotlib.colors import ListedColormap
    mid = 0.5 * (levels[1:] + levels[:-1])
    if signed:
        m = max(abs(levels[0]), abs(levels[-1]))
        cols = colormaps["coolwarm"](0.5 + 0.5 * mid / m)
    else:
        cols = colormaps["viridis"]((mid - levels[0]) / (levels[-1] - levels[0]))
    return ListedColormap(cols)


@dataclass
class Scale:
    """Contour levels and colours of one quantity, shared by all its pictures."""
    levels: np.ndarray
    cmap: object
    signed: bool


def field_scale(values: np.ndarray, n: int = 12) -> Scale:
    """Levels over all given values; signed (diverging) when both signs matter (> 2 %)."""
    v = np.asarray(values, float)
    v = v[np.isfinite(v)]
    if v.size == 0:
        v = np.zeros(1)
    lo, hi = float(v.min()), float(v.max())
    big = max(abs(lo), abs(hi), 1e-12)
    signed = lo < -0.02 * big and hi > 0.02 * big
    if not signed:          # one sign: the scale starts at zero (a sliver of the other clips)
        lo, hi = (0.0, max(hi, 0.0)) if hi >= -lo else (min(lo, 0.0), 0.0)
    lv = _levels(lo, hi, n)
    if signed:   # band edges at odd multiples of half a step: one neutral band holds zero
        step = float(lv[1] - lv[0])
        k0 = math.floor(lo / step - 0.5)
        k1 = math.ceil(hi / step - 0.5)
        lv = step * (np.arange(k0, k1 + 1) + 0.5)
        lv = np.round(lv, 12)
    return Scale(lv, _band_colours(lv, signed), signed)


def exaggeration_factor(disp: np.ndarray, height: float, fraction: float = 0.05) -> float:
    """A round factor (1, 2, 5 x 10^k, never below 1) that makes the largest displacement
    at most about ``fraction`` of ``height`` (the section's, or the picture window's smaller
    side)."""
    d = float(np.nanmax(np.hypot(disp[..., 0], disp[..., 1]))) if disp.size else 0.0
    if not d > 0:
        return 1.0
    raw = fraction * height / d
    if raw <= 1.0:
        return 1.0
    p = 10.0 ** math.floor(math.log10(raw))
    return max(m * p for m in (1, 2, 5) if m * p <= raw * (1 + 1e-9))


# ================================================================================ drawing
@dataclass
class _View:
    """The world window a rendered image covers (x0, x1, y0, y1), m."""
    x0: float
    x1: float
    y0: float
    y1: float


def _render(meshes: list[tuple], bounds: tuple[float, float, float, float],
            width: int = RENDER_WIDTH) -> tuple[np.ndarray, _View]:
    """Render [(polydata, add_mesh kwargs)] in a flat x-y view; return the image and window.

    Parallel projection centred on the bounds, pixel aspect 1: the image covers exactly the
    returned window, so a caller can place it with ``imshow(extent=...)``.
    """
    import pyvista as pv
    pv.OFF_SCREEN = True
    x0, x1, y0, y1 = bounds
    w = int(width)
    h = max(int(round(w * (y1 - y0) / (x1 - x0))), 32)
    p = pv.Plotter(off_screen=True, window_size=(w, h))
    try:
        p.set_background("white")
        for mesh, kw in meshes:
            p.add_mesh(mesh, **kw)
        cx, cy = 0.5 * (x0 + x1), 0.5 * (y0 + y1)
        cam = p.camera
        cam.SetParallelProjection(True)
        cam.SetFocalPoint(cx, cy, 0.0)
        cam.SetPosition(cx, cy, 100.0 * max(x1 - x0, y1 - y0))
        cam.SetViewUp(0.0, 1.0, 0.0)
        half_h = 0.5 * (y1 - y0)
        cam.SetParallelScale(half_h)
        p.renderer.ResetCameraClippingRange()
        img = p.screenshot(return_img=True)
    finally:
        p.close()
    half_w = half_h * img.shape[1] / img.shape[0]
    return img, _View(cx - half_w, cx + half_w, cy - half_h, cy + half_h)


def _padded(xy: np.ndarray, pad: float = 0.03) -> tuple[float, float, float, float]:
    x0, y0 = xy.min(axis=0)
    x1, y1 = xy.max(axis=0)
    d = pad * max(x1 - x0, y1 - y0)
    return x0 - d, x1 + d, y0 - d, y1 + d


def _frame(img: np.ndarray, view: _View, title: str, xlabel: str, extra_h: float = 0.0,
           extra_w: float = 0.0):
    """A matplotlib figure holding the rendered image on axes in m (pixel size 1:1 in x, y).

    ``extra_h``, ``extra_w``: inches for what the caller adds below (a colour bar) or to the
    right (a legend); the figure is sized so the section fills the axes.
    """
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure
    aspect = (view.y1 - view.y0) / (view.x1 - view.x0)
    w = 11.0
    ax_w = w - 1.0 - extra_w
    h = ax_w * aspect + 1.25 + 0.22 * title.count("\n") + extra_h + 0.55
    h = min(max(h, 3.2), 13.0)
    fig = Figure(figsize=(w, h), layout="constrained")
    FigureCanvasAgg(fig)
    ax = fig.subplots()
    ax.imshow(img, extent=(view.x0, view.x1, view.y0, view.y1), origin="upper",
              interpolation="antialiased", zorder=0)
    ax.set_xlim(view.x0, view.x1)
    ax.set_ylim(view.y0, view.y1)
    ax.set_aspect("equal")
    ax.set_xlabel(xlabel)
    ax.set_ylabel("y, elevation (m)")
    ax.set_title(title, fontsize=11)
    return fig, ax


def _finish(fig, path: Path, note: str = "") -> Path:
    return finish(fig, path, note, tight=True)


def _xlabel(model) -> str:
    if model is not None and getattr(model, "analysis", "") == "axisymmetric":
        return "r, distance from the axis (m)"
    return "x, horizontal (m)"


def _active_elements(sec: Section, stage: str, model, disp: np.ndarray | None,
                     stage_over: bool = True) -> np.ndarray:
    """Elements present at an output of ``stage``: the ground, and the lifts (or regions of a
    user mesh) placed by then and not removed; what ``stage`` removes is gone at its end
    (``stage_over``: the output is the stage's last)."""
    keep = np.ones(len(sec.cells), dtype=bool)
    names = [st.name for st in model.stages] if model is not None else []
    if stage in names:
        k = names.index(stage)
        present = {sec.region_names[rid]: False for rid in sec.lift_ids}
        for j, st in enumerate(model.stages):
            if st.kind in ("lift", "remove"):
                reg = st.region or f"lift_{st.lift}"
                present.setdefault(reg, False)
                if j <= k and st.kind == "lift":
                    present[reg] = True
                elif st.kind == "remove" and (j < k or (j == k and stage_over)):
                    present[reg] = False
        for reg, on in present.items():
            if reg in sec.region_names:
                keep[sec.region == sec.region_names.index(reg)] = on
        return keep
    for rid in sec.lift_ids:        # no model: a lift not (or no longer) placed does not move
        el = sec.region == rid
        if disp is not None:
            keep[el] = bool(np.abs(disp[np.unique(sec.cells[el])]).max() > 0)
    return keep


def _outline_meshes(sec: Section, xy: np.ndarray, keep: np.ndarray, z: float = 0.02):
    """Region boundaries (thin) and the embankment outline (thick) as line meshes."""
    out = []
    b = _boundary_edges(sec.cells, sec.region, keep)
    if len(b):
        out.append((_lines_polydata(xy, b, z), dict(color=_BOUNDARY, line_width=2.2)))
    lift = np.isin(sec.region, sec.lift_ids) & keep
    if lift.any():
        e = _boundary_edges(sec.cells, sec.region, lift,
                            group=np.zeros(len(sec.cells), dtype=np.int64))
        out.append((_lines_polydata(xy, e, 2 * z), dict(color=_OUTLINE, line_width=5.0)))
    return out


def _draw_loads(ax, sec: Section, xy: np.ndarray, keep: np.ndarray, model) -> list:
    """Footing bases (dark bars) and surface loads (blue bars) along the section's outline,
    following the (deformed) nodes; returns legend handles."""
    from matplotlib.lines import Line2D
    if model is None:
        return []
    items = [(f.center - f.width / 2, f.center + f.width / 2, -f.embedment, f.name, "footing")
             for f in (model.section.footings or [])]
    items += [(lo.x_left, lo.x_right, 0.0, f"{lo.name}: {lo.pressure:g} kPa", "load")
              for lo in model.loads]
    if not items:
        return []
    edges = _boundary_edges(sec.cells, sec.region, keep,
                            group=np.zeros(len(sec.cells), dtype=np.int64))
    nodes = np.unique(edges)
    p0 = sec.points
    drawn = set()
    for lo, hi, y, label, kind in items:
        tol = 1e-6 * max(1.0, hi - lo)
        sel = nodes[(np.abs(p0[nodes, 1] - y) < tol) & (p0[nodes, 0] >= lo - tol)
                    & (p0[nodes, 0] <= hi + tol)]
        if sel.size >= 2:
            sel = sel[np.argsort(p0[sel, 0])]
            xs, ys = xy[sel, 0], xy[sel, 1]
        else:
            xs, ys = np.array([lo, hi]), np.array([y, y])
        colour = "#2b2b2b" if kind == "footing" else "#1f5fa8"
        ax.plot(xs, ys, color=colour, lw=4.5 if kind == "footing" else 3.5,
                solid_capstyle="butt", zorder=4)
        ax.annotate(label, (0.5 * (xs[0] + xs[-1]), float(np.max(ys))), xytext=(0, 5),
                    textcoords="offset points", ha="center", va="bottom", fontsize=7.5,
                    color=colour, zorder=5,
                    bbox=dict(boxstyle="square,pad=0.1", fc="white", ec="none", alpha=0.75))
        drawn.add(kind)
    handles = []
    if "footing" in drawn:
        handles.append(Line2D([], [], color="#2b2b2b", lw=4.5, label="footing base"))
    if "load" in drawn:
        handles.append(Line2D([], [], color="#1f5fa8", lw=3.5, label="surface load"))
    return handles


def _outline_note(sec: Section, keep: np.ndarray, model) -> str:
    parts = ["dark lines: region boundaries"]
    if np.isin(sec.region, sec.lift_ids).any():
        parts.append("thick black line: the embankment outline")
    if model is not None and model.section.footings:
        parts.append("dark bars: footing bases")
    if model is not None and model.loads:
        parts.append("blue bars: surface loads")
    return "; ".join(parts)


def mesh_picture(sec: Section, out: Path, model=None, probes=None, lines=None,
                 window: tuple[float, float, float, float] | None = None,
                 file_stem: str = "mesh") -> Path:
    """The mesh: elements (their 6-node edges), regions coloured, a legend of region names;
    ``window`` (x0, x1, y0, y1, m) crops it (:func:`solver.picture_view.loaded_window`)."""
    from matplotlib.patches import Patch
    tris = _split_p2(sec.cells)
    reg4 = np.tile(sec.region, 4)
    colours = {}
    soil_k = lift_k = 0
    for rid, name in enumerate(sec.region_names):
        if name.startswith("lift_"):
            colours[rid] = _LIFT_COLOURS[lift_k % len(_LIFT_COLOURS)]
            lift_k += 1
        else:
            colours[rid] = _REGION_COLOURS[soil_k % len(_REGION_COLOURS)]
            soil_k += 1
    meshes = []
    for rid in np.unique(sec.region):
        meshes.append((_surface_polydata(sec.points, tris[reg4 == rid]),
                       dict(color=colours[rid], lighting=False)))
    e, _ = _edges(sec.cells)
    _, idx = np.unique(np.sort(e[:, [0, 2]], axis=1), axis=0, return_index=True)
    meshes.append((_lines_polydata(sec.points, e[np.sort(idx)], 0.01),
                   dict(color=(0.25, 0.25, 0.25), line_width=1.0)))
    meshes += _outline_meshes(sec, sec.points, np.ones(len(sec.cells), bool), 0.02)
    img, view = _render(meshes, _padded(sec.points) if window is None else _padded_window(window))
    n_nodes = len(sec.points)
    title = (f"Mesh: {len(sec.cells):,} triangles (6-node), {n_nodes:,} nodes, "
             f"{len(sec.region_names)} regions")
    if window is not None:
        title += f"\nthe loaded zone, x = {window[0]:g} to {window[1]:g} m"
        inside = lambda x, y: view.x0 <= x <= view.x1 and view.y0 <= y <= view.y1  # noqa: E731
        probes = {n: xy for n, xy in (probes or {}).items() if inside(*xy)}
    fig, ax = _frame(img, view, title, _xlabel(model), extra_w=1.9)
    for pname, (x, y) in (probes or {}).items():
        ax.plot([x], [y], marker="o", ms=5, mfc="white", mec="black", zorder=3)
        up = y >= -1e-9          # on the surface: slanted up, so neighbours do not collide
        ax.annotate(pname, (x, y), xytext=(3, 4) if up else (5, -3), textcoords="offset points",
                    fontsize=7.5, rotation=35 if up else 0, rotation_mode="anchor",
                    ha="left", va="bottom" if up else "top",
                    bbox=dict(boxstyle="square,pad=0.1", fc="white", ec="none", alpha=0.8))
    for lname, (xs, ys) in (lines or {}).items():
        ax.plot(xs, ys, color="#b0202a", lw=1.4, ls="--", zorder=3)
        if window is not None and not (view.x0 <= xs[-1] <= view.x1):
            continue                     # the line leaves the window: its name stays out
        ax.annotate(lname, (xs[-1], ys[-1]), xytext=(4, -11), textcoords="offset points",
                    fontsize=7.5, color="#b0202a",
                    bbox=dict(boxstyle="square,pad=0.1", fc="white", ec="none", alpha=0.8))
    load_handles = _draw_loads(ax, sec, sec.points, np.ones(len(sec.cells), bool), model)
    handles = [Patch(fc=colours[rid], ec="#333333", label=name)
               for rid, name in enumerate(sec.region_names) if (sec.region == rid).any()]
    handles += load_handles
    from matplotlib.lines import Line2D
    if probes:
        handles.append(Line2D([], [], marker="o", ls="none", mfc="white", mec="black",
                              label="point probe"))
    if lines:
        handles.append(Line2D([], [], color="#b0202a", ls="--", label="line probe"))
    ax.legend(handles=handles, title="region", loc="upper left", bbox_to_anchor=(1.01, 1.0),
              fontsize=8.5, title_fontsize=9, borderaxespad=0)
    allk = np.ones(len(sec.cells), bool)
    note = "Thin lines: element edges; " + _outline_note(sec, allk, model) + "."
    if sec.lift_ids:
        note += " Each lift is a region, placed by its stage."
    if window is not None:
        note += " Cropped to the loaded zone; mesh.png shows the whole section."
    return _finish(fig, out / f"{file_stem}.png", note)


def _padded_window(window: tuple[float, float, float, float], pad: float = 0.02):
    x0, x1, y0, y1 = window
    d = pad * max(x1 - x0, y1 - y0)
    return x0 - d, x1 + d, y0 - d, y1 + d


def field_picture(sec: Section, out: Path, *, values: np.ndarray, scale: Scale, quantity: str,
                  unit: str, file_stem: str, time_days: float, stage: str, keep: np.ndarray,
                  disp: np.ndarray | None = None, factor: float = 0.0, model=None,
                  note: str = "", window: tuple[float, float, float, float] | None = None
                  ) -> Path:
    """Contour bands of one nodal field over the section at one time (over ``window``, x0,
    x1, y0, y1 in m, when given: the loaded zone)."""
    from matplotlib.cm import ScalarMappable
    from matplotlib.colors import BoundaryNorm
    xy = sec.points if disp is None or factor == 0 else sec.points + factor * disp
    tris = _split_p2(sec.cells[keep])
    used = np.unique(tris)
    surf = _surface_polydata(xy, tris)
    lv = scale.levels
    vals = np.clip(np.nan_to_num(values, nan=lv[0]), lv[0], lv[-1])
    surf.point_data["v"] = vals
    meshes = [(surf, dict(scalars="v", cmap=scale.cmap, clim=(lv[0], lv[-1]),
                          n_colors=len(lv) - 1, show_scalar_bar=False, lighting=False,
                          interpolate_before_map=True))]
    inner = lv[1:-1]
    if inner.size:
        cont = surf.contour(isosurfaces=list(inner), scalars="v")
        if cont.n_points:
            cont.points[:, 2] = 0.005
            meshes.append((cont, dict(color=(0.15, 0.15, 0.15), line_width=1.2)))
    if disp is not None and factor:
        ref = _boundary_edges(sec.cells, sec.region, keep,
                              group=np.zeros(len(sec.cells), dtype=np.int64))
        meshes.append((_lines_polydata(sec.points, ref, 0.015),
                       dict(color=(0.55, 0.55, 0.55), line_width=1.5)))
    meshes += _outline_meshes(sec, xy, keep, 0.02)
    both = np.vstack([xy[used], sec.points[used]])
    if window is not None:     # the window, and the deformed fill above it
        window = (window[0], window[1], window[2], max(window[3], float(both[:, 1].max())))
    img, view = _render(meshes, _padded(both) if window is None else _padded_window(window))
    when = f"t = {time_days:,.4g} days" + (f" ({time_days / 365.25:.1f} years)"
                                          if time_days >= 730 else "")
    title = f"{quantity.capitalize()} at {when}, stage '{stage}'"
    if disp is not None and factor:
        from .picture_view import exaggeration_words
        title += "\n" + exaggeration_words(factor)
    fig, ax = _frame(img, view, title, _xlabel(model), extra_h=1.0)
    _draw_loads(ax, sec, xy, keep, model)
    sm = ScalarMappable(norm=BoundaryNorm(lv, scale.cmap.N), cmap=scale.cmap)
    cb = fig.colorbar(sm, ax=ax, location="bottom", shrink=0.6, aspect=45, pad=0.02,
                      ticks=lv if lv.size <= 16 else None)
    cb.set_label(f"{quantity} ({unit})")
    cb.ax.tick_params(labelsize=8)
    text = "Bands between the level lines; " + _outline_note(sec, keep, model) + "."
    if disp is not None and factor:
        text += " Grey line: the outline before deformation."
    if window is not None:
        text += (f" Cropped to the loaded zone (x = {window[0]:g} to {window[1]:g} m); "
                 "mesh.png shows the whole section.")
    if note:
        text += " " + note
    return _finish(fig, out / f"{file_stem}.png", text)


# ============================================================================= entry point
def _default_times(times: np.ndarray, stages: list[str], model, peak: np.ndarray) -> list[int]:
    """Output steps worth a picture: end of construction, largest pore pressure, a middle
    time, the end (at most four)."""
    n = len(times)
    if n == 0:
        return []
    build = set()
    if model is not None:
        build = {st.name for st in model.stages if st.kind in ("lift", "load")}
    built = [i for i in range(n) if stages[i] in build]
    pick = [int(np.nanargmax(peak))] if np.isfinite(peak).any() else []
    if built:
        pick.append(built[-1])
    pick.append(n - 1)
    first = min(pick)
    if n - 1 > first + 1:       # a time between, spread on a logarithmic clock
        t0, t1 = max(times[first], 1e-9), times[n - 1]
        mid = math.sqrt(t0 * t1)
        pick.append(int(np.argmin(np.abs(np.log(np.maximum(times, 1e-9)) - math.log(mid)))))
    pick = sorted(set(pick), key=lambda i: times[i])
    return pick[:MAX_DEFAULT_TIMES]


def make_pictures(run_dir: str | Path, out_dir: str | Path | None = None,
                  times: Sequence[float] | None = None, deformed: bool | float = True
                  ) -> list[Path]:
    """The mesh picture and field pictures of a run; returns the PNG paths.

    Parameters
    ----------
    run_dir : folder written by a run.
    out_dir : where the PNGs go; ``run_dir/pictures`` by default.
    times : days; the nearest output time to each. None: up to four telling times (end of
        construction, largest excess pore pressure, a middle time, the end).
    deformed : draw settlement on the deformed mesh: True picks a round exaggeration factor
        (stated in the title), a number gives it, False draws the undeformed mesh.

    Without working off-screen rendering nothing is drawn: a :class:`RenderingUnavailable`
    warning says why and what to install, and the list is empty.
    """
    from .results import read_fields
    d = Path(run_dir)
    out = Path(out_dir) if out_dir is not None else d / PICTURES_DIR
    ok, why = rendering_available()
    if not ok:
        warnings.warn(why, RenderingUnavailable, stacklevel=2)
        return []
    from .results.files import make_folder
    make_folder(out)
    model = None
    if (d / "model.toml").exists():
        try:
            from .model import load_model
            model = load_model(d / "model.toml")
        except Exception:
            model = None
    sec = read_section(d)
    probes, lines = {}, {}
    if model is not None:
        probes = {p.name: (p.x, p.y) for p in model.probes}
        lines = {ln.name: ([ln.x0, ln.x1], [ln.y0, ln.y1]) for ln in model.lines}
    from .picture_view import loaded_window
    window = loaded_window(model, sec.points)
    paths = [mesh_picture(sec, out, model, probes, lines)]
    if window is not None:
        paths.append(mesh_picture(sec, out, model, probes, lines, window, "mesh_loaded_zone"))
    fs = read_fields(d, ["excess_pore_pressure_kPa", "settlement_m", "displacement_m"])
    if len(fs.times) == 0:
        return paths
    u = fs.fields.get("excess_pore_pressure_kPa")
    s = fs.fields.get("settlement_m")
    disp = fs.fields.get("displacement_m")
    peak = np.nanmax(np.abs(u), axis=1) if u is not None else np.full(len(fs.times), np.nan)
    idx = (pick_times(fs.times, times) if times is not None and len(times)
           else _default_times(fs.times, fs.stages, model, peak))
    last_of_stage = {fs.stages[i]: i for i in range(len(fs.times))}
    keeps = {i: _active_elements(sec, fs.stages[i], model, None if disp is None else disp[i],
                                 stage_over=last_of_stage[fs.stages[i]] == i) for i in idx}

    def used_values(a):
        return np.concatenate([a[i][np.unique(sec.cells[keeps[i]])] for i in idx])

    # The exaggeration shows the largest displacement drawn as about 8 % of the smaller side
    # of the picture's window (the loaded zone when cropped): visible, never a caricature.
    (x0, y0), (x1, y1) = sec.points.min(axis=0), sec.points.max(axis=0)
    if window is not None:
        x0, x1, y0, y1 = window
    factor = 0.0
    if disp is not None and deformed is not False:
        factor = (float(deformed) if not isinstance(deformed, bool) else exaggeration_factor(
            np.concatenate([disp[i] for i in idx]), min(x1 - x0, y1 - y0), fraction=0.08))
    if u is not None:       # a scale per time: late, small pressures stay readable
        for i in idx:
            sc = field_scale(u[i][np.unique(sec.cells[keeps[i]])])
            paths.append(field_picture(
                sec, out, values=u[i], scale=sc, quantity="excess pore pressure", unit="kPa",
                file_stem=f"excess_pore_pressure_{_stem_time(fs.times[i])}",
                time_days=float(fs.times[i]), stage=fs.stages[i], keep=keeps[i], model=model,
                window=window, note="Excess pore pressure: above the steady pore pressure at the start "
                     "(hydrostatic unless piezometric levels are given), positive in compression"
                     + ("; zero in the free-draining fill" if sec.lift_ids else "")
                     + ". The colour scale is this picture's own."))
    if s is not None:       # one scale for all times: the growth of settlement reads at once
        sc = field_scale(used_values(s))
        for i in idx:
            paths.append(field_picture(
                sec, out, values=s[i], scale=sc, quantity="settlement", unit="m",
                file_stem=f"settlement_{_stem_time(fs.times[i])}",
                time_days=float(fs.times[i]), stage=fs.stages[i], keep=keeps[i],
                disp=None if disp is None else disp[i], factor=factor, model=model,
                window=window, note="Settlement: vertical displacement, positive downward (negative: heave). "
                     "One colour scale for all settlement pictures of this run; the grey band "
                     "holds zero."))
    return paths


def _stem_time(t: float) -> str:
    return f"{t:09.2f}d".replace(".", "_")


def picture_command(run_dir: str | Path, times: Sequence[float] | None = None) -> list[Path]:
    """Pictures into ``DIR/pictures/`` (what ``poroplane plot`` adds when rendering works)."""
    return make_pictures(run_dir, None, times)
