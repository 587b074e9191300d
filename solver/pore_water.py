"""The pore water at the start of a run: the water table, piezometric levels with steady
seepage between them, and initial excess pore pressures.

The run starts from a state in equilibrium, in both balances of the Biot problem:

- **Flow.** The steady pore pressure ``u_s`` is hydrostatic below the water table unless a
  layer (or a region of a user mesh) is given a piezometric level
  (``[water.piezometric_depths]``: an artesian sand, or a sand drawn down by pumping). Such a
  layer is taken as permeable and fed from outside the section: its head is its level
  throughout. Between two levels (the water table is one, at its own elevation) the water
  seeps steadily and vertically through the layers in between: the head falls linearly
  through each, the fall shared in proportion to thickness over vertical permeability
  (Darcy's law with the same flow through every layer: layers in series, e.g. Harr 1962,
  *Groundwater and Seepage*, ch. 1, from memory). Below the lowest level the head stays at
  that level (no flow through the impermeable base). For horizontal layers this head
  satisfies ``div(k grad h) = 0`` exactly, so the finite elements, which solve for the excess
  over ``u_s``, start from rest: a drained boundary holds its initial head, and every other
  boundary passes the initial steady flow unchanged. The pore pressure is never below zero
  (no suction: where a head lies below a point, the point is taken as dry).
- **Force.** The total stress is the weight of the ground, so the effective stress at the
  start uses the real pore pressure (Terzaghi's principle): ``sigma'_v0 = sigma_v - u_s -
  u_e0``, where ``u_e0`` is the initial excess pore pressure of a layer still consolidating
  (``[water.initial_excess_pore_pressures]``: one value, or the values at the top and the
  base of the layer, linear between). The solver carries ``u_e0`` as its starting excess
  pore pressure, held in equilibrium by the effective stress it takes away.

Elevations y in m (the original ground surface is y = 0, up positive); pressures in kPa,
compression positive; permeability in m/day.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .model import Model

__all__ = ["SegmentHeads", "segment_heads", "column_pore_pressure", "LayerWater",
           "layer_water", "MeshWater"]


@dataclass
class SegmentHeads:
    """Heads of a column of segments (see :func:`segment_heads`), each (n, ns):
    ``wet_top`` elevation of the top of the saturated part, ``head_top`` and ``head_bot``
    (m of elevation) at it and at the segment's base, ``fixed`` the segments of given head,
    ``dry`` the segments with no saturated part."""
    wet_top: np.ndarray
    head_top: np.ndarray
    head_bot: np.ndarray
    fixed: np.ndarray
    dry: np.ndarray


def segment_heads(faces: np.ndarray, k: np.ndarray, head: np.ndarray,
                  y_table: float) -> SegmentHeads:
    """Steady heads in columns of segments between piezometric levels.

    Parameters
    ----------
    faces : (n, ns + 1) elevations of the segment faces of n columns, from the top down.
    k : (n, ns) or (ns,) vertical permeability of each segment (inf: no resistance).
    head : (n, ns) or (ns,) given head (elevation of the piezometric level, m); NaN where
        the head follows the seepage.
    y_table : elevation of the water table, m.
    """
    faces = np.asarray(faces, float)
    n, ns = faces.shape[0], faces.shape[1] - 1
    k = np.broadcast_to(np.asarray(k, float), (n, ns))
    head = np.broadcast_to(np.asarray(head, float), (n, ns))
    top, bot = faces[:, :-1], faces[:, 1:]
    fixed = np.isfinite(head)
    wet_top = np.minimum(top, y_table)
    wet_len = np.maximum(wet_top - bot, 0.0)
    with np.errstate(divide="ignore", invalid="ignore"):
        res = np.where(fixed | ~(wet_len > 0), 0.0, wet_len / k)
    res = np.nan_to_num(res, nan=0.0, posinf=0.0)
    r_top = np.cumsum(res, axis=1) - res          # resistance from the table to the wet top
    r_bot = r_top + res
    # The water table anchors the head where it lies in a segment of free head (or above
    # the top); inside a segment of given head that head governs.
    inside = (y_table >= bot) & (y_table < top)
    in_fixed = (inside & fixed).any(axis=1)
    table = (y_table >= faces[:, -1]) & ~in_fixed
    up_r, up_h = np.full((n, ns), np.nan), np.full((n, ns), np.nan)
    cur_r, cur_h = np.full(n, np.nan), np.full(n, np.nan)
    passed = np.zeros(n, bool)
    for j in range(ns):                           # the nearest level above each segment
        hit = table & ~passed & (y_table >= bot[:, j])
        cur_r, cur_h = np.where(hit, 0.0, cur_r), np.where(hit, y_table, cur_h)
        passed |= hit
        up_r[:, j], up_h[:, j] = cur_r, cur_h
        cur_r = np.where(fixed[:, j], r_top[:, j], cur_r)
        cur_h = np.where(fixed[:, j], head[:, j], cur_h)
    lo_r, lo_h = np.full((n, ns), np.nan), np.full((n, ns), np.nan)
    cur_r, cur_h = np.full(n, np.nan), np.full(n, np.nan)
    for j in range(ns - 1, -1, -1):               # the nearest level below
        lo_r[:, j], lo_h[:, j] = cur_r, cur_h
        cur_r = np.where(fixed[:, j], r_top[:, j], cur_r)
        cur_h = np.where(fixed[:, j], head[:, j], cur_h)

    def at(r):
        span = lo_r - up_r
        with np.errstate(invalid="ignore", divide="ignore"):
            frac = np.where(np.isfinite(span) & (span > 0), (r - up_r) / span, 0.0)
        h = np.where(np.isfinite(lo_h), up_h + (lo_h - up_h) * frac, up_h)
        h = np.where(np.isfinite(up_h), h, lo_h)
        return np.where(fixed, head, h)

    dry = ~fixed & ~(wet_len > 0)
    return SegmentHeads(wet_top, at(r_top), at(r_bot), fixed, dry)


def column_pore_pressure(faces: np.ndarray, k, head, y_table: float, gamma_w: float,
                         y: np.ndarray) -> np.ndarray:
    """Steady pore pressure (kPa) at elevation ``y[i]`` of column i (see
    :func:`segment_heads` for the other arguments); zero above the water table in segments
    of free head, and never below zero."""
    faces = np.asarray(faces, float)
    y = np.asarray(y, float)
    sh = segment_heads(faces, k, head, y_table)
    ns = faces.shape[1] - 1
    j = np.minimum((y[:, None] < faces[:, 1:-1] + 1e-12).sum(axis=1), ns - 1)
    rows = np.arange(len(y))
    wt, ht, hb = sh.wet_top[rows, j], sh.head_top[rows, j], sh.head_bot[rows, j]
    bot = faces[rows, j + 1]
    with np.errstate(invalid="ignore", divide="ignore"):
        frac = np.where(wt - bot > 0, (wt - y) / (wt - bot), 0.0)
    h = np.where(sh.fixed[rows, j], ht, ht + (hb - ht) * np.clip(frac, 0.0, 1.0))
    wet = sh.fixed[rows, j] | ((y <= wt) & ~sh.dry[rows, j])
    return np.where(wet & np.isfinite(h), gamma_w * np.maximum(h - y, 0.0), 0.0)


def _vertical_k(m) -> float:
    return float(m.permeability_y if m.permeability_y is not None else m.permeability_x)


@dataclass
class LayerWater:
    """The initial pore water of a layered model (see the module docstring).

    ``faces(x)`` gives the layer faces, (n, nl + 1) elevations from the top down; ``k``
    (nl,) vertical permeabilities; ``head`` (nl,) given heads (NaN: free); ``excess`` (nl,
    2) initial excess at the top and base of each layer, kPa.
    """
    faces: object
    k: np.ndarray
    head: np.ndarray
    excess: np.ndarray
    y_table: float
    gamma_w: float

    @property
    def hydrostatic(self) -> bool:
        """No piezometric level and no initial excess: hydrostatic below the table."""
        return not np.isfinite(self.head).any() and not self.excess.any()

    def __call__(self, x, y) -> tuple[np.ndarray, np.ndarray]:
        """(steady pore pressure, initial excess pore pressure), kPa, at points (x, y)."""
        x = np.atleast_1d(np.asarray(x, float))
        y = np.atleast_1d(np.asarray(y, float))
        if not np.isfinite(self.head).any():
            u = self.gamma_w * np.maximum(self.y_table - y, 0.0)
        else:
            u = column_pore_pressure(self.faces(x), self.k, self.head, self.y_table,
                                     self.gamma_w, y)
        e = np.zeros_like(y)
        if self.excess.any():
            f = self.faces(x)
            nl = f.shape[1] - 1
            j = np.minimum((y[:, None] < f[:, 1:-1] + 1e-12).sum(axis=1), nl - 1)
            rows = np.arange(len(y))
            top, bot = f[rows, j], f[rows, j + 1]
            with np.errstate(invalid="ignore", divide="ignore"):
                s = np.where(top - bot > 0, np.clip((top - y) / (top - bot), 0.0, 1.0), 0.0)
            a, b = self.excess[j, 0], self.excess[j, 1]
            e = np.where(y <= 1e-12, a + (b - a) * s, 0.0)
        return u, e


def _excess_pair(values) -> tuple[float, float]:
    v = [float(a) for a in values]
    return (v[0], v[0]) if len(v) == 1 else (v[0], v[1])


def layer_water(model: Model, faces) -> LayerWater:
    """The initial water of a layered model; ``faces(x) -> (n, nl + 1)`` elevations of the
    layer faces at x, from the top down (e.g. :meth:`solver.initial.LayerColumn.tops`)."""
    w = model.water
    levels = w.piezometric_depths or {}
    excess = w.initial_excess_pore_pressures or {}
    mats = [model.materials[ly.material] for ly in model.layers]
    k = np.array([_vertical_k(m) for m in mats])
    head = np.array([-levels[ly.name] if ly.name in levels else np.nan
                     for ly in model.layers])
    ex = np.array([_excess_pair(excess[ly.name]) if ly.name in excess else (0.0, 0.0)
                   for ly in model.layers]).reshape(-1, 2)
    return LayerWater(faces, k, head, ex, -w.table_depth, w.unit_weight)


class MeshWater:
    """The initial pore water on a user mesh, by region (see the module docstring).

    Without piezometric levels the steady pore pressure is hydrostatic below the table,
    exactly. With levels, the seepage is followed down vertical columns of a raster of
    ``columns`` x ``rows`` cells over the mesh's bounding box (each cell takes the region at
    its centre; cells outside the regions present at the start offer no resistance), and
    the pore pressure is interpolated linearly from the raster: an approximation of the
    order of the cell height times gamma_w, as for the overburden
    (:class:`solver.initial.MeshOverburden`). The initial excess of a region runs linearly
    from its value at the region's highest point to that at its lowest.

    ``starting``: region name -> material of the regions present at the start.
    """

    def __init__(self, mesh, model: Model, starting: dict, columns: int = 120,
                 rows: int = 240):
        w = model.water
        self.mesh, self.y_table, self.gamma_w = mesh, -w.table_depth, w.unit_weight
        names = list(mesh.region_names)
        levels = w.piezometric_depths or {}
        excess = w.initial_excess_pore_pressures or {}
        self.raster = None
        if any(r in levels for r in starting):
            lo, hi = mesh.points.min(axis=0), mesh.points.max(axis=0)
            self.xs = np.linspace(lo[0], hi[0], columns)
            self.top, self.dy = hi[1], (hi[1] - lo[1]) / rows
            ys = hi[1] - self.dy * (np.arange(rows) + 0.5)
            gx, gy = np.meshgrid(self.xs, ys, indexing="ij")
            elem, _ = mesh.locate(np.column_stack([gx.ravel(), gy.ravel()]))
            reg = np.where(elem >= 0, mesh.region[np.maximum(elem, 0)], len(names))
            k = np.array([_vertical_k(starting[n]) if n in starting else np.inf
                          for n in names] + [np.inf])
            h = np.array([-levels[n] if n in levels and n in starting else np.nan
                          for n in names] + [np.nan])
            reg = reg.reshape(gx.shape)
            faces = hi[1] - self.dy * np.arange(rows + 1)
            faces = np.broadcast_to(faces, (columns, rows + 1))
            sh = segment_heads(faces, k[reg], h[reg], self.y_table)
            # pore pressure at the faces: the top of the first cell, then each cell's base
            hf = np.concatenate([sh.head_top[:, :1], sh.head_bot], axis=1)
            wet = np.concatenate([(sh.fixed | ~sh.dry)[:, :1] & (faces[:, :1] <= sh.wet_top[:, :1]),
                                  sh.fixed | ~sh.dry], axis=1)
            self.raster = np.where(wet & np.isfinite(hf),
                                   self.gamma_w * np.maximum(hf - faces, 0.0), 0.0)
        self.excess = np.zeros((len(names) + 1, 2))
        self.y_range = np.zeros((len(names) + 1, 2))
        for i, n in enumerate(names):
            el = mesh.region == i
            if n in excess and n in starting and el.any():
                y = mesh.points[np.unique(mesh.triangles[el]), 1]
                self.excess[i] = _excess_pair(excess[n])
                self.y_range[i] = (y.max(), y.min())

    def __call__(self, x, y, elem: np.ndarray | None = None):
        """(steady pore pressure, initial excess), kPa, at points (x, y); ``elem``: the
        element holding each point (located when not given)."""
        x = np.atleast_1d(np.asarray(x, float))
        y = np.atleast_1d(np.asarray(y, float))
        if self.raster is None:
            u = self.gamma_w * np.maximum(self.y_table - y, 0.0)
        else:
            u = _bilinear(self.xs, self.top, self.dy, self.raster, x, y)
        e = np.zeros_like(y)
        if self.excess.any():
            mesh = self.mesh
            if elem is None:
                elem, _ = mesh.locate(np.column_stack([x, y]))
            r = np.where(elem >= 0, mesh.region[np.maximum(elem, 0)], len(mesh.region_names))
            (a, b), (top, bot) = self.excess[r].T, self.y_range[r].T
            with np.errstate(invalid="ignore", divide="ignore"):
                s = np.where(top - bot > 0, np.clip((top - y) / (top - bot), 0.0, 1.0), 0.0)
            e = a + (b - a) * s
        return u, e


def _bilinear(xs: np.ndarray, top: float, dy: float, arr: np.ndarray, x: np.ndarray,
              y: np.ndarray) -> np.ndarray:
    """Values of ``arr`` (columns at ``xs``, rows at depths k dy below ``top``) at points,
    linear in x and y between raster nodes."""
    columns, rows = arr.shape[0], arr.shape[1] - 1
    fx = np.clip(np.interp(x, xs, np.arange(columns)), 0, columns - 1)
    fy = np.clip((top - y) / dy, 0, rows)
    i0 = np.minimum(np.floor(fx).astype(int), max(columns - 2, 0))
    j0 = np.minimum(np.floor(fy).astype(int), rows - 1)
    ax, ay = fx - i0, fy - j0
    i1 = np.minimum(i0 + 1, columns - 1)
    return ((1 - ax) * ((1 - ay) * arr[i0, j0] + ay * arr[i0, j0 + 1])
            + ax * ((1 - ay) * arr[i1, j0] + ay * arr[i1, j0 + 1]))
