"""The initial (geostatic) state: the pore pressure at the start and at-rest effective stresses.

The solver works in changes from this state; it enters the outputs (total pore pressure,
effective stresses), the hand method and stress-dependent materials.

sigma'_v0 = the total vertical stress (the unit weight above the water table, the saturated
unit weight below it, integrated from the ground surface down) minus the pore pressure at the
start: hydrostatic below the water table, or steady seepage between piezometric levels, plus
any initial excess (:mod:`solver.pore_water`); sigma'_h0 =
K0 sigma'_v0 with K0 = 1 - sin(phi') (Jaky 1944) when a friction angle is given, else the
elastic at-rest value nu / (1 - nu) (common practice), unless K0 is given.

A Modified Cam Clay layer without ``k0`` starts where one-dimensional compression to its
preconsolidation sigma'_p and unloading to sigma'_v0 leave it in the model itself: on the
normal compression line at the model's own K0 of normal consolidation (K0nc,
``CamClayMaterial.k0_normally_consolidated``) when normally consolidated, and on the elastic
unloading line from there otherwise, sigma'_h0 = K0nc sigma'_p - nu / (1 - nu)
(sigma'_p - sigma'_v0) (the elastic part of the model has a constant Poisson's ratio, so
one-dimensional unloading changes sigma'_h by nu / (1 - nu) of the change of sigma'_v;
Wood 1990, Soil Behaviour and Critical State Soil Mechanics, ch. 7, from memory). A
normally consolidated layer then starts on its yield surface and compresses along the
normal compression line at once.

Stresses here are compression positive.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .model import Material, Model


def cam_clay(m: Material):
    """The Modified Cam Clay skeleton of a model material."""
    from .materials.camclay import CamClayMaterial
    return CamClayMaterial(lambda_=m.lambda_, kappa=m.kappa, e0=m.void_ratio, M=m.M,
                           phi_cs=m.friction_angle if m.M is None else None,
                           poisson_ratio=m.poisson_ratio,
                           permeability_x=m.permeability_x, permeability_y=m.permeability_y,
                           permeability_change_index=m.permeability_change_index,
                           biot_coefficient=m.biot_coefficient, storage=m.storage,
                           unit_weight=m.unit_weight, name=m.name)


def at_rest_coefficient(m: Material) -> float:
    """K0 of a material in normal consolidation: given, else the model's own for Modified
    Cam Clay, else Jaky (1944) from phi', else nu / (1 - nu)."""
    if m.k0 is not None:
        return float(m.k0)
    if m.model == "modified cam clay":
        return float(cam_clay(m).k0_normally_consolidated())
    if m.friction_angle is not None:
        return 1.0 - np.sin(np.radians(m.friction_angle))
    return m.poisson_ratio / (1.0 - m.poisson_ratio)


def vertical_preconsolidation(m: Material, sv: np.ndarray) -> np.ndarray:
    """sigma'_p (kPa) from a material's oedometer table at points of sigma'_v0 = ``sv``: the
    given pressure, sigma'_v0 + margin or OCR sigma'_v0; never below sigma'_v0 (none given:
    normally consolidated)."""
    oed = m.oedometer
    sv = np.asarray(sv, float)
    if oed.preconsolidation_pressure is not None:
        sp = np.full(sv.shape, float(oed.preconsolidation_pressure))
    elif oed.preconsolidation_margin is not None:
        sp = sv + oed.preconsolidation_margin
    else:
        sp = sv * (oed.overconsolidation_ratio or 1.0)
    return np.maximum(sp, sv)


def at_rest_horizontal(m: Material, sv: np.ndarray) -> np.ndarray:
    """sigma'_h0 (kPa, compression positive) at points of sigma'_v0 = ``sv`` (kPa): K0 sigma'_v0
    (:func:`at_rest_coefficient`), or for a Modified Cam Clay material without ``k0`` its
    own one-dimensional loading to sigma'_p and unloading (module notes)."""
    sv = np.asarray(sv, float)
    if m.k0 is not None or m.model != "modified cam clay":
        return at_rest_coefficient(m) * sv
    sp = vertical_preconsolidation(m, sv)
    nu = m.poisson_ratio
    return at_rest_coefficient(m) * sp - nu / (1.0 - nu) * (sp - sv)


def _saturated(m: Material) -> float:
    return m.saturated_unit_weight if m.saturated_unit_weight is not None else m.unit_weight


@dataclass
class LayerColumn:
    """The layers of the original ground as straight boundaries across [x_min, x_max]."""
    x_min: float
    x_max: float
    thickness_left: np.ndarray   # (nl,)
    thickness_right: np.ndarray  # (nl,)
    materials: list[Material]

    @classmethod
    def from_model(cls, model: Model, x_min: float, x_max: float) -> "LayerColumn":
        tl = np.array([ly.thickness for ly in model.layers], float)
        tr = np.array([ly.thickness if ly.thickness_right is None else ly.thickness_right
                       for ly in model.layers], float)
        mats = [model.materials[ly.material] for ly in model.layers]
        return cls(x_min, x_max, tl, tr, mats)

    def tops(self, x: np.ndarray) -> np.ndarray:
        """Elevation of the top of each layer and of the last base, (n, nl + 1)."""
        s = np.clip((x - self.x_min) / max(self.x_max - self.x_min, 1e-300), 0.0, 1.0)
        th = self.thickness_left[None] + s[:, None] * (self.thickness_right - self.thickness_left)[None]
        return -np.concatenate([np.zeros((len(x), 1)), np.cumsum(th, axis=1)], axis=1)

    def layer_index(self, x: np.ndarray, y: np.ndarray) -> np.ndarray:
        tops = self.tops(x)
        idx = (y[:, None] < tops[:, 1:-1] + 1e-9).sum(axis=1)
        return np.minimum(idx, len(self.materials) - 1)


def geostatic_stress(column: LayerColumn, water_table: float, gamma_w: float,
                     x: np.ndarray, y: np.ndarray, water=None) -> dict[str, np.ndarray]:
    """Initial state at points (x, y) below the ground surface y = 0.

    Parameters
    ----------
    water_table : elevation of the water table, m (y = -depth of the table).
    water : the initial pore water, ``water(x, y) -> (steady, excess)`` kPa
        (:class:`solver.pore_water.LayerWater`); None: hydrostatic below the table.

    Returns
    -------
    dict with ``steady_pore_pressure_kPa`` (hydrostatic, or steady seepage between
    piezometric levels), ``initial_excess_kPa``, ``vertical_effective_kPa`` and
    ``horizontal_effective_kPa`` (in-plane and out-of-plane, equal at rest; both from the
    real pore pressure), compression positive, each (n,).
    """
    x = np.asarray(x, float)
    y = np.asarray(y, float)
    tops = column.tops(x)                                    # (n, nl + 1)
    sv = np.zeros(len(x))                                    # total vertical stress
    for j, m in enumerate(column.materials):
        top = np.minimum(tops[:, j], 0.0)
        bot = np.maximum(tops[:, j + 1], y)
        # split the part of layer j above y at the water table
        dry = np.clip(top, water_table, None) - np.clip(bot, water_table, None)
        wet = np.clip(top, None, water_table) - np.clip(bot, None, water_table)
        sv += np.where(top > bot, m.unit_weight * np.maximum(dry, 0.0)
                       + _saturated(m) * np.maximum(wet, 0.0), 0.0)
    sv += gamma_w * max(water_table, 0.0)                    # free water above the ground
    if water is None:
        u0, ue = gamma_w * np.maximum(water_table - y, 0.0), np.zeros_like(y)
    else:
        u0, ue = water(x, y)
    sv_eff = sv - u0 - ue
    layer = column.layer_index(x, y)
    sh_eff = np.zeros_like(sv_eff)
    for j, m in enumerate(column.materials):
        here = layer == j
        sh_eff[here] = at_rest_horizontal(m, sv_eff[here])
    return {"steady_pore_pressure_kPa": u0, "initial_excess_kPa": ue,
            "vertical_effective_kPa": sv_eff, "horizontal_effective_kPa": sh_eff}


class MeshOverburden:
    """Initial state on a user mesh: the overburden integrated down vertical columns.

    ``unit_weights`` maps the regions present at the start to (unit weight, saturated unit
    weight, K0 or the Material, whose :func:`at_rest_horizontal` is then used); other regions (placed later) weigh nothing. The ground at a column is the
    highest point of a starting region there. The integral is taken once on a raster of
    ``columns`` x ``rows`` samples over the mesh's bounding box (midpoint rule); calling the
    object interpolates it linearly to points: an approximation of the order of the raster
    spacing times the unit weight, stated in docs/model.md.
    """

    def __init__(self, mesh, unit_weights: dict[str, tuple[float, float, object]],
                 water_table: float, gamma_w: float, columns: int = 120, rows: int = 240,
                 water=None):
        self.mesh, self.water_table, self.gamma_w = mesh, water_table, gamma_w
        self.water = water    # (x, y, elem) -> (steady, excess) kPa; None: hydrostatic
        lo, hi = mesh.points.min(axis=0), mesh.points.max(axis=0)
        self.xs = np.linspace(lo[0], hi[0], columns)
        self.top, self.dy = hi[1], (hi[1] - lo[1]) / rows
        ys = hi[1] - self.dy * (np.arange(rows) + 0.5)            # cell midpoints, top down
        gx, gy = np.meshgrid(self.xs, ys, indexing="ij")            # (columns, rows)
        elem, _ = mesh.locate(np.column_stack([gx.ravel(), gy.ravel()]))
        names = mesh.region_names
        g_dry = np.array([unit_weights.get(n, (0.0, 0.0, 0.0))[0] for n in names] + [0.0])
        g_sat = np.array([unit_weights.get(n, (0.0, 0.0, 0.0))[1] for n in names] + [0.0])
        # sigma'_h0 from sigma'_v0 per region: a K0, or a material (at_rest_horizontal)
        self.horizontal = []
        for n in names + [None]:
            k = unit_weights[n][2] if n in unit_weights else 0.5
            self.horizontal.append((lambda sv, k=k: k * sv) if np.isscalar(k) else
                                   (lambda sv, m=k: at_rest_horizontal(m, sv)))
        starting = np.array([n in unit_weights for n in names] + [False])
        reg = np.where(elem >= 0, mesh.region[np.maximum(elem, 0)], len(names)).reshape(gx.shape)
        inside = starting[reg]
        gamma = np.where(gy < water_table, g_sat[reg], g_dry[reg]) * inside
        # total vertical stress at the bottom of each cell, free water above the ground
        sv_cells = np.cumsum(gamma * self.dy, axis=1)
        ground = np.where(inside.any(axis=1), hi[1] - self.dy * inside.argmax(axis=1), lo[1])
        sv_cells += gamma_w * np.maximum(water_table - ground, 0.0)[:, None]
        # sv at depth k * dy below the box top, k = 0..rows; linear between raster nodes
        self.svk = np.concatenate([np.zeros((columns, 1)), sv_cells], axis=1)

    def __call__(self, x: np.ndarray, y: np.ndarray) -> dict[str, np.ndarray]:
        """As :func:`geostatic_stress`, at points (x, y)."""
        columns, rows = self.svk.shape[0], self.svk.shape[1] - 1
        x = np.asarray(x, float)
        y = np.asarray(y, float)
        fx = np.clip(np.interp(x, self.xs, np.arange(columns)), 0, columns - 1)
        fy = np.clip((self.top - y) / self.dy, 0, rows)
        i0 = np.minimum(np.floor(fx).astype(int), max(columns - 2, 0))
        j0 = np.minimum(np.floor(fy).astype(int), rows - 1)
        ax, ay = fx - i0, fy - j0
        svk = self.svk
        i1 = np.minimum(i0 + 1, columns - 1)
        sv = ((1 - ax) * ((1 - ay) * svk[i0, j0] + ay * svk[i0, j0 + 1])
              + ax * ((1 - ay) * svk[i1, j0] + ay * svk[i1, j0 + 1]))
        mesh = self.mesh
        elem_p, _ = mesh.locate(np.column_stack([x, y]))
        reg = np.where(elem_p >= 0, mesh.region[np.maximum(elem_p, 0)], len(mesh.region_names))
        if self.water is None:
            u0, ue = self.gamma_w * np.maximum(self.water_table - y, 0.0), np.zeros_like(y)
        else:
            u0, ue = self.water(x, y, elem_p)
        sv_eff = sv - u0 - ue
        sh_eff = np.zeros_like(sv_eff)
        for r in np.unique(reg):
            here = reg == r
            sh_eff[here] = self.horizontal[r](sv_eff[here])
        return {"steady_pore_pressure_kPa": u0, "initial_excess_kPa": ue,
                "vertical_effective_kPa": sv_eff, "horizontal_effective_kPa": sh_eff}
