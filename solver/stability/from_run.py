"""The ground a slip surface sees at a stored time of a run: a :class:`SlopeSoil` built from
the run folder's fields.

- The surface is the top of the elements placed by then (lifts of later stages left out).
- Unit weights by region (the material's unit weight above the water table, its saturated
  unit weight below).
- Pore pressure: the stored total pore pressure (hydrostatic plus the finite-element excess),
  negative values (suction) taken as zero (common practice).
- Undrained strength s_u = S OCR^m sigma'_v (Ladd and Foott 1974) from the stored vertical
  effective stress, with OCR = sigma'_p / sigma'_v; sigma'_p is the larger of the initial
  preconsolidation (the oedometer table on the at-rest state) and the largest vertical
  effective stress stored so far (the output steps up to that time: a peak between two output
  steps is missed, which can only lower sigma'_p).

The fields are located once per time on a raster of points over the section (one vectorised
point location for all of them, linear interpolation inside each triangle); every slice of a
search then reads the raster (bilinear for the pore pressure, the nearest node for the
material and its strength), so no point is located again; raster nodes just outside the
placed mesh take the values of the nearest node inside. The raster spacing (``spacing``, 0.1 m by default)
bounds the blurring of material boundaries.

A half section (or axisymmetric) is mirrored about x = 0: a slip may cross the centre line.

Results inform design: they need review by a qualified engineer; local codes and licensed
practice govern.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from matplotlib.tri import Triangulation
from scipy import ndimage

from solver.errors import InputError
from solver.initial import LayerColumn, geostatic_stress, vertical_preconsolidation
from solver.model import Model
from solver.model.domain import base_elevation, domain_extent
from solver.model.strength import strength_kind

from .slices import SlopeSoil

__all__ = ["RunGround", "slope_soil", "unplaced_regions", "region_materials"]


def region_materials(model: Model, region_names: list[str]) -> dict[str, str]:
    """Region name -> material name: layers by their names, lifts by the fill."""
    out = {la.name: la.material for la in model.layers}
    emb = model.section.embankment
    for name in region_names:
        if name.startswith("lift_") and emb is not None:
            out[name] = emb.material
    out.update(model.section.regions)
    return out


def unplaced_regions(model: Model, stage_index: int) -> set[str]:
    """Regions absent at the stored times of stage ``stage_index`` (counted from 0): those of
    lift stages after it (not yet placed) and those removed by a stage up to it (a stage that
    removes a region stores its end, when the region is gone)."""
    out = set()
    for st in model.stages[stage_index + 1:]:
        if st.kind == "lift":
            out.add(st.region if st.region is not None else f"lift_{st.lift}")
    for st in model.stages[:stage_index + 1]:
        if st.kind == "remove":
            out.add(st.region if st.region is not None else f"lift_{st.lift}")
    return out


@dataclass
class RunGround:
    """A run's mesh and the fields a stability check needs, over the stored times."""
    model: Model
    points: np.ndarray          # (n_nodes, 2)
    cells: np.ndarray           # (n_elements, 6)
    region: np.ndarray          # (n_elements,)
    region_names: list[str]
    times: np.ndarray           # (nt,)
    stages: list[str]           # (nt,)
    pore_pressure: np.ndarray   # (nt, n_nodes) total, kPa
    vertical_effective: np.ndarray  # (nt, n_nodes) compression positive, kPa

    @classmethod
    def from_fields(cls, model: Model, fs) -> "RunGround":
        need = ("total_pore_pressure_kPa", "effective_stress_kPa")
        missing = [k for k in need if k not in fs.fields]
        if missing or not len(fs.times):
            raise InputError(f"the run folder holds no {missing[0] if missing else 'fields'}",
                             field="fields", fix="run the model again with this version.")
        return cls(model, fs.points, fs.cells, fs.region, list(fs.region_names), fs.times,
                   list(fs.stages), fs.fields["total_pore_pressure_kPa"],
                   fs.fields["effective_stress_kPa"][:, :, 1])

    def stage_index(self, k: int) -> int:
        names = [s.name for s in self.model.stages]
        return names.index(self.stages[k]) if self.stages[k] in names else len(names) - 1

    def stage_ends(self) -> list[int]:
        """Stored steps that end each stage (the last stored step of each stage name)."""
        last: dict[str, int] = {}
        for k, s in enumerate(self.stages):
            last[s] = k
        return sorted(last.values())

    def step_at(self, t: float) -> int:
        k = int(np.argmin(np.abs(self.times - t)))
        if abs(self.times[k] - t) > 1e-6 * max(1.0, abs(t)):
            raise InputError(f"no fields were stored at t = {t:g} days (stored: "
                             + ", ".join(f"{v:g}" for v in self.times) + ")",
                             field="stability.times",
                             fix="use a stored time, or add it to output.times and run again.")
        return k


def _top_envelope(points, tri, xs):
    """Highest elevation of the triangles ``tri`` (corner indices) on the verticals xs."""
    e = np.concatenate([tri[:, [0, 1]], tri[:, [1, 2]], tri[:, [2, 0]]])
    xa, ya = points[e[:, 0], 0], points[e[:, 0], 1]
    xb, yb = points[e[:, 1], 0], points[e[:, 1], 1]
    lo, hi = np.minimum(xa, xb), np.maximum(xa, xb)
    top = np.full(len(xs), -np.inf)
    for s in range(0, len(xs), 200):     # blocks of verticals bound the memory (edges x 200)
        x = xs[s:s + 200]
        on = (x[None, :] >= lo[:, None] - 1e-9) & (x[None, :] <= hi[:, None] + 1e-9)
        t = np.clip((x[None, :] - xa[:, None]) / np.where(xb == xa, 1.0, xb - xa)[:, None], 0, 1)
        y = np.where(xb[:, None] == xa[:, None], np.maximum(ya, yb)[:, None],
                     ya[:, None] + t * (yb - ya)[:, None])
        top[s:s + 200] = np.where(on, y, -np.inf).max(axis=0)
    return top


def slope_soil(ground: RunGround, k: int, spacing: float = 0.15) -> tuple[SlopeSoil, float, dict]:
    """The SlopeSoil at stored step ``k``, the base elevation and facts for the output.

    Raises InputError naming ``materials.NAME.strength`` for a region without a strength.
    """
    model = ground.model
    stage = ground.stage_index(k)
    off = unplaced_regions(model, stage)
    names = ground.region_names
    placed = ~np.isin(ground.region, [names.index(n) for n in off if n in names])
    tri = ground.cells[placed][:, :3]
    pts = ground.points
    mats_of = region_materials(model, names)
    mats = [model.materials[mats_of[n]] for n in names]
    for n, m in zip(names, mats):
        if strength_kind(m) is None:
            raise InputError(f"material {m.name!r} (region {n!r}) has no strength",
                             field=f"materials.{m.name}.strength",
                             fix="give friction_angle and cohesion (drained) or "
                                 "undrained_strength_ratio (undrained).")
    wt = -model.water.table_depth
    half = model.section.half or model.analysis == "axisymmetric"

    # the raster over the placed mesh, located once
    x0, y0 = pts[:, 0].min(), pts[:, 1].min()
    x1, y1 = pts[:, 0].max(), pts[:, 1].max()
    h = max(spacing, np.sqrt((x1 - x0) * (y1 - y0) / 400_000))
    xs = np.arange(x0, x1 + h / 2, h)
    ys = np.arange(y0, y1 + h / 2, h)
    gx, gy = np.meshgrid(xs, ys, indexing="ij")
    triang = Triangulation(pts[:, 0], pts[:, 1], tri)
    el = triang.get_trifinder()(gx.ravel(), gy.ravel())
    inside = el >= 0
    c = tri[np.maximum(el, 0)]
    p0, p1, p2 = pts[c[:, 0]], pts[c[:, 1]], pts[c[:, 2]]
    d1, d2 = p1 - p0, p2 - p0
    q = np.column_stack([gx.ravel(), gy.ravel()]) - p0
    det = d1[:, 0] * d2[:, 1] - d1[:, 1] * d2[:, 0]
    xi = (q[:, 0] * d2[:, 1] - q[:, 1] * d2[:, 0]) / det
    eta = (d1[:, 0] * q[:, 1] - d1[:, 1] * q[:, 0]) / det
    bary = np.column_stack([1 - xi - eta, xi, eta])

    def at_raster(nodal):
        return np.where(inside, np.einsum("nk,nk->n", bary, nodal[c]), 0.0)

    region_of = np.flatnonzero(placed)
    reg = np.where(inside, ground.region[region_of[np.maximum(el, 0)]], -1)
    u = np.maximum(at_raster(ground.pore_pressure[k]), 0.0)
    # the at-rest vertical effective stress at the nodes (layered sections; else the first
    # stored step) and the largest one stored up to this time
    ext = domain_extent(model)
    if model.layers and ext is not None:
        col = LayerColumn.from_model(model, ext[0], ext[1])
        sv0_nodes = geostatic_stress(col, wt, model.water.unit_weight, pts[:, 0],
                                     np.minimum(pts[:, 1], 0.0))["vertical_effective_kPa"]
    else:
        sv0_nodes = np.maximum(ground.vertical_effective[0], 0.0)
    upto = [j for j in range(len(ground.times)) if ground.times[j] <= ground.times[k] + 1e-9]
    sv_hist = np.max(ground.vertical_effective[upto], axis=0)
    g_dry = np.array([m.unit_weight for m in mats] + [0.0])
    g_sat = np.array([m.saturated_unit_weight or m.unit_weight for m in mats] + [0.0])
    # strength parameters by region: kind 0 drained (c', phi'), 1 S OCR^m, 2 s_u profile
    kind = np.array([0 if strength_kind(m) == "drained" else
                     1 if m.undrained_strength_ratio is not None else 2 for m in mats])
    c_d = np.array([m.cohesion or 0.0 for m in mats])
    t_d = np.tan(np.radians([m.friction_angle or 0.0 for m in mats]))
    S = np.array([m.undrained_strength_ratio or 0.0 for m in mats])
    m_exp = np.array([m.strength_exponent for m in mats])
    su0 = np.array([m.undrained_strength or 0.0 for m in mats])
    grad = np.array([m.undrained_strength_gradient for m in mats])
    # sigma'_p at the corners of each placed triangle, by its material (OCR on sigma'_v0)
    corner_sv0 = sv0_nodes[tri]
    treg = ground.region[region_of]
    corner_sp0 = np.zeros(tri.shape)
    for r, m in enumerate(mats):
        here = treg == r
        if here.any() and kind[r] == 1:
            corner_sp0[here] = vertical_preconsolidation(m, corner_sv0[here])
    corner_sp = np.maximum(corner_sp0, sv_hist[tri])
    corner_sv = np.maximum(ground.vertical_effective[k][tri], 0.0)

    def strength_in(e, b, y):
        """(c, tan phi, drained) at points in placed triangles e with barycentrics b."""
        r = treg[e]
        svp = np.maximum(np.einsum("nk,nk->n", b, corner_sv[e]), 1e-6)
        spp = np.maximum(np.einsum("nk,nk->n", b, corner_sp[e]), svp)
        su_ratio = S[r] * (spp / svp) ** m_exp[r] * svp
        su_prof = su0[r] + grad[r] * np.maximum(-y, 0.0)
        kr = kind[r]
        c = np.where(kr == 0, c_d[r], np.where(kr == 1, su_ratio, su_prof))
        return c, np.where(kr == 0, t_d[r], 0.0), kr == 0

    c_r, tphi, drained = strength_in(np.maximum(el, 0), bary, gy.ravel())
    shape = gx.shape
    # raster nodes outside the placed mesh take the values of the nearest node inside: a
    # slice's column reaching the surface between two rows reads the ground, not the air
    near = ndimage.distance_transform_edt(~inside.reshape(shape), return_distances=False,
                                          return_indices=True)
    fill = tuple(near)
    U, C, T = u.reshape(shape)[fill], c_r.reshape(shape)[fill], tphi.reshape(shape)[fill]
    D, R = drained.reshape(shape)[fill], reg.reshape(shape)[fill]
    nx, ny = shape

    def fx(x, y):
        x = np.abs(x) if half else x
        return (np.clip((x - x0) / h, 0, nx - 1), np.clip((y - y0) / h, 0, ny - 1))

    def bilinear(A, x, y):
        a, b = fx(x, y)
        i = np.minimum(a.astype(int), nx - 2)
        j = np.minimum(b.astype(int), ny - 2)
        s, t = a - i, b - j
        return ((1 - s) * ((1 - t) * A[i, j] + t * A[i, j + 1])
                + s * ((1 - t) * A[i + 1, j] + t * A[i + 1, j + 1]))

    def nearest(A, x, y):
        a, b = fx(x, y)
        return A[np.rint(a).astype(int), np.rint(b).astype(int)]

    def unit_weight(x, y):
        r = nearest(R, x, y)
        return np.where(y < wt, g_sat[r], g_dry[r])

    finder = triang.get_trifinder()

    # per triangle the affine map (x, y, 1) -> reference coordinates (xi, eta), once
    t0_, t1_, t2_ = pts[tri[:, 0]], pts[tri[:, 1]], pts[tri[:, 2]]
    e1, e2 = t1_ - t0_, t2_ - t0_
    dt = e1[:, 0] * e2[:, 1] - e1[:, 1] * e2[:, 0]
    inv = np.stack([np.column_stack([e2[:, 1], -e2[:, 0]]),
                    np.column_stack([-e1[:, 1], e1[:, 0]])], axis=1) / dt[:, None, None]
    affine = np.concatenate([inv, -np.einsum("nij,nj->ni", inv, t0_)[:, :, None]], axis=2)

    def locate(x, y):
        x = np.abs(x) if half else x
        e = finder(x, y)
        A = affine[np.maximum(e, 0)]
        ab = A[:, :, 0] * x[:, None] + A[:, :, 1] * y[:, None] + A[:, :, 2]
        return e, np.column_stack([1 - ab[:, 0] - ab[:, 1], ab])

    def strength(x, y):
        """Exact material and interpolated stress at the slice bases (located each call, in
        one vectorised call); the raster's nearest node where a point falls outside."""
        e, b = locate(x, y)
        c, t, d = strength_in(np.maximum(e, 0), b, y)
        out = e < 0
        if out.any():
            c[out], t[out], d[out] = (nearest(C, x[out], y[out]), nearest(T, x[out], y[out]),
                                      nearest(D, x[out], y[out]))
        return c, t, d

    def pore_pressure(x, y):
        return bilinear(U, x, y)

    sx = np.arange(x0, x1 + 0.05, 0.1)
    sy = _top_envelope(pts, tri, sx)
    keep = np.isfinite(sy)
    sx, sy = sx[keep], sy[keep]
    if half:
        sx = np.concatenate([-sx[::-1], sx[1:]]) if sx[0] == 0 else np.concatenate([-sx[::-1], sx])
        sy = np.concatenate([sy[::-1], sy[1:]]) if len(sy) * 2 - 1 == len(sx) else \
            np.concatenate([sy[::-1], sy])
    base = min(base_elevation(model, e) for e in (ext[0], ext[1])) if ext else float(y0)
    info = {"raster_spacing_m": float(h), "unplaced_regions": sorted(off),
            "preconsolidation": "max(initial sigma'_p, largest stored sigma'_v so far)"}
    return SlopeSoil(sx, sy, unit_weight, strength, pore_pressure), base, info
