"""One-dimensional settlement by the hand method: consolidation and secondary compression.

The immediate (undrained elastic) settlement closed forms live in :mod:`solver.hand.elastic`
and are importable from here as well.

Conventions: kN, m, kPa, kN/m3, days. Stresses compression positive, depth ``z``
positive downward from the ground surface (top of the first layer), settlement positive
downward. Functions of sublayer quantities broadcast their array arguments.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Callable, Sequence

import numpy as np
from numpy.typing import ArrayLike, NDArray

from solver import CAUTION
from solver.errors import InputError

from .elastic import (chart_immediate_settlement, circle_axis_displacement,  # noqa: F401 (re-exported)
                      circle_immediate_settlement, rigid_strip_immediate_settlement,
                      strip_immediate_settlement)

__all__ = [
    "GAMMA_W",
    "Layer",
    "Sublayers",
    "ProbeSettlement",
    "preconsolidation_pressure",
    "consolidation_settlement",
    "mv_settlement",
    "secondary_compression_settlement",
    "skempton_bjerrum_factor",
    "circle_axis_displacement",
    "circle_immediate_settlement",
    "strip_immediate_settlement",
    "rigid_strip_immediate_settlement",
    "chart_immediate_settlement",
    "split_layers",
    "vertical_effective_stress",
    "settlement_under_probe",
    "secondary_settlement_under_probe",
]

GAMMA_W = 9.81
"""Unit weight of water (kN/m3), common practice."""


# ------------------------------------------------------------------ layer description


@dataclass(frozen=True)
class Layer:
    """One soil layer for the hand method, top to bottom in a list.

    Compressibility is given in exactly one way, or not at all (an incompressible,
    free-draining layer such as sand or gravel):

    - log-stress: ``compression_index`` (Cc), ``recompression_index`` (Cr), ``void_ratio``
      (e0) and exactly one of ``preconsolidation_pressure`` (kPa), ``ocr`` (-) or
      ``pre_overburden_pressure`` (the constant margin sigma'_p - sigma'_v0, kPa);
    - linear: ``mv``, coefficient of volume compressibility (1/kPa).

    Attributes
    ----------
    name : str
        Layer name, used in messages.
    thickness : float
        Layer thickness (m), > 0.
    unit_weight : float
        Unit weight below the water table (kN/m3).
    unit_weight_above_water : float or None
        Unit weight above the water table (kN/m3); defaults to ``unit_weight``.
    secondary_compression_index : float or None
        C_alpha = de / dlog10(t) (-); needs ``void_ratio``.
    permeability : float or None
        Vertical permeability (m/day), for the time rate.
    cv : float or None
        Coefficient of consolidation (m2/day), for the time rate (alternative to
        ``permeability``).
    """

    name: str
    thickness: float
    unit_weight: float
    unit_weight_above_water: float | None = None
    void_ratio: float | None = None
    compression_index: float | None = None
    recompression_index: float | None = None
    preconsolidation_pressure: float | None = None
    ocr: float | None = None
    pre_overburden_pressure: float | None = None
    mv: float | None = None
    secondary_compression_index: float | None = None
    permeability: float | None = None
    cv: float | None = None

    def _field(self, attr: str) -> str:
        return f"layers.{self.name}.{attr}"

    def _need(self, attr: str, what: str, minimum: float = 0.0, strict: bool = True) -> None:
        v = getattr(self, attr)
        if v is None:
            raise InputError(f"layer '{self.name}': {what} ({attr}) is missing", field=self._field(attr),
                             fix=f"give {attr} for layer '{self.name}'")
        v = float(v)
        if not np.isfinite(v) or (v <= minimum if strict else v < minimum):
            raise InputError(f"layer '{self.name}': {what} ({attr}) must be {'>' if strict else '>='} "
                             f"{minimum:g}, got {v!r}", field=self._field(attr),
                             fix=f"give a valid {attr} for layer '{self.name}'")

    def __post_init__(self) -> None:
        self._need("thickness", "thickness (m)")
        self._need("unit_weight", "unit weight (kN/m3)")
        if self.unit_weight_above_water is not None:
            self._need("unit_weight_above_water", "unit weight above the water table (kN/m3)")
        log_fields = ("compression_index", "recompression_index", "preconsolidation_pressure", "ocr",
                      "pre_overburden_pressure")
        uses_log = any(getattr(self, a) is not None for a in log_fields)
        if uses_log and self.mv is not None:
            raise InputError(f"layer '{self.name}': give either mv or Cc/Cr/e0, not both",
                             field=self._field("mv"), fix="remove mv or the log-stress parameters")
        if uses_log:
            self._need("compression_index", "compression index Cc")
            self._need("recompression_index", "recompression index Cr", strict=False)
            self._need("void_ratio", "initial void ratio e0")
            given = [a for a in ("preconsolidation_pressure", "ocr", "pre_overburden_pressure")
                     if getattr(self, a) is not None]
            if len(given) != 1:
                raise InputError(
                    f"layer '{self.name}': give exactly one of preconsolidation_pressure, ocr, "
                    f"pre_overburden_pressure (got {', '.join(given) or 'none'})",
                    field=self._field("preconsolidation_pressure"),
                    fix="set ocr = 1 for a normally consolidated layer")
            if self.preconsolidation_pressure is not None:
                self._need("preconsolidation_pressure", "preconsolidation pressure (kPa)")
            if self.ocr is not None:
                self._need("ocr", "over-consolidation ratio", minimum=1.0, strict=False)
            if self.pre_overburden_pressure is not None:
                self._need("pre_overburden_pressure", "pre-overburden pressure (kPa)", strict=False)
        if self.mv is not None:
            self._need("mv", "coefficient of volume compressibility mv (1/kPa)")
        if self.secondary_compression_index is not None:
            self._need("secondary_compression_index", "secondary compression index C_alpha", strict=False)
            self._need("void_ratio", "initial void ratio e0 (needed with C_alpha)")
        if self.void_ratio is not None:
            self._need("void_ratio", "initial void ratio e0")
        if self.permeability is not None and self.cv is not None:
            raise InputError(f"layer '{self.name}': give permeability or cv, not both",
                             field=self._field("cv"), fix="remove one of them")
        if self.permeability is not None:
            self._need("permeability", "permeability (m/day)")
        if self.cv is not None:
            self._need("cv", "coefficient of consolidation cv (m2/day)")

    @property
    def compressibility(self) -> str:
        """``"log"`` (Cc/Cr), ``"mv"`` or ``"none"`` (incompressible, free-draining)."""
        if self.compression_index is not None:
            return "log"
        if self.mv is not None:
            return "mv"
        return "none"

    def sigma_p(self, sigma_v0: ArrayLike) -> NDArray[np.float64]:
        """Preconsolidation pressure (kPa) at points of initial effective stress ``sigma_v0``."""
        return preconsolidation_pressure(sigma_v0, sigma_p=self.preconsolidation_pressure, ocr=self.ocr,
                                         pre_overburden_pressure=self.pre_overburden_pressure,
                                         layer=self.name)


# -------------------------------------------------------------- sublayer formulas


def preconsolidation_pressure(sigma_v0: ArrayLike, *, sigma_p: float | None = None,
                              ocr: float | None = None, pre_overburden_pressure: float | None = None,
                              layer: str = "layer") -> NDArray[np.float64]:
    """Preconsolidation pressure sigma'_p (kPa) from one of three usual descriptions.

    ``sigma_p`` directly (constant), ``ocr``: ``sigma'_p = OCR sigma'_v0``, or the
    pre-overburden pressure ``POP``: ``sigma'_p = sigma'_v0 + POP`` (common practice).
    Exactly one must be given. Shape of ``sigma_v0``.
    """
    s0 = np.asarray(sigma_v0, dtype=float)
    given = [v is not None for v in (sigma_p, ocr, pre_overburden_pressure)]
    if sum(given) != 1:
        raise InputError(f"layer '{layer}': give exactly one of preconsolidation_pressure, ocr, "
                         "pre_overburden_pressure", field=f"layers.{layer}.preconsolidation_pressure",
                         fix="set ocr = 1 for a normally consolidated layer")
    if sigma_p is not None:
        return np.full_like(s0, float(sigma_p))
    if ocr is not None:
        return float(ocr) * s0
    return s0 + float(pre_overburden_pressure)


def consolidation_settlement(thickness: ArrayLike, void_ratio: ArrayLike, compression_index: ArrayLike,
                             recompression_index: ArrayLike, sigma_v0: ArrayLike, delta_sigma: ArrayLike,
                             sigma_p: ArrayLike) -> NDArray[np.float64]:
    """Primary consolidation settlement of sublayers from Cc, Cr, e0 and sigma'_p (m).

    With ``sigma'_f = sigma'_v0 + delta_sigma`` and ``sigma'_p* = max(sigma'_p, sigma'_v0)``
    (Terzaghi & Peck 1948, *Soil Mechanics in Engineering Practice*; Holtz & Kovacs 1981,
    *An Introduction to Geotechnical Engineering*)::

        s = H / (1 + e0) * [Cr log10(min(sigma'_f, sigma'_p*) / sigma'_v0)
                            + Cc log10(max(sigma'_f, sigma'_p*) / sigma'_p*)]

    which is the normally consolidated ``Cc log10(sigma'_f/sigma'_v0)`` when
    ``sigma'_p <= sigma'_v0``, the over-consolidated ``Cr log10(sigma'_f/sigma'_v0)`` when
    ``sigma'_f <= sigma'_p``, and the sum of both parts when the stress crosses
    ``sigma'_p``. An unloading (``delta_sigma < 0``) gives a heave on the Cr line.
    A ``sigma'_p`` below ``sigma'_v0`` (under-consolidation) is treated as normally
    consolidated.

    Parameters
    ----------
    thickness : array_like
        Sublayer thickness H (m).
    void_ratio : array_like
        Initial void ratio e0 (-).
    compression_index, recompression_index : array_like
        Cc and Cr (-).
    sigma_v0 : array_like
        Initial vertical effective stress at mid-sublayer (kPa), > 0.
    delta_sigma : array_like
        Vertical stress increase at mid-sublayer (kPa).
    sigma_p : array_like
        Preconsolidation pressure (kPa).

    Returns
    -------
    ndarray
        Settlement (m), positive downward, broadcast shape of the inputs.
    """
    s0 = np.asarray(sigma_v0, dtype=float)
    sf = s0 + np.asarray(delta_sigma, dtype=float)
    if np.any(s0 <= 0.0) or np.any(sf <= 0.0):
        raise InputError("initial and final vertical effective stress must be > 0 for the log-stress law",
                         field="sigma_v0", fix="check unit weights, water table and the load")
    sp = np.maximum(np.asarray(sigma_p, dtype=float), s0)
    strain = (np.asarray(recompression_index, dtype=float) * np.log10(np.minimum(sf, sp) / s0)
              + np.asarray(compression_index, dtype=float) * np.log10(np.maximum(sf, sp) / sp))
    return np.asarray(thickness, dtype=float) / (1.0 + np.asarray(void_ratio, dtype=float)) * strain


def mv_settlement(thickness: ArrayLike, mv: ArrayLike, delta_sigma: ArrayLike) -> NDArray[np.float64]:
    """Primary settlement with a coefficient of volume compressibility, ``mv * dsigma * H`` (m).

    (Terzaghi 1925, *Erdbaumechanik*; mv is the secant value over the stress range,
    common practice.) ``mv`` in 1/kPa, ``delta_sigma`` in kPa, ``thickness`` in m;
    broadcast shape.
    """
    return (np.asarray(mv, dtype=float) * np.asarray(delta_sigma, dtype=float)
            * np.asarray(thickness, dtype=float))


def secondary_compression_settlement(thickness: ArrayLike, c_alpha: ArrayLike,
                                     void_ratio_end_of_primary: ArrayLike, t: ArrayLike,
                                     t_p: ArrayLike) -> NDArray[np.float64]:
    """Secondary compression after the end of primary consolidation (m).

    ``s = C_alpha / (1 + e_p) * H * log10(t / t_p)`` for ``t > t_p``, zero before
    (Buisman 1936, Proc. 1st ICSMFE; Mesri 1973, *Coefficient of secondary compression*,
    J. Soil Mech. Found. Div. ASCE 99). The end of primary ``t_p`` is in the hand method
    commonly taken at U = 95 % (``t95``), some take ``t90`` (common practice; see
    :func:`solver.hand.rate.time_for_degree`). Times in days; broadcast shape.
    """
    t = np.asarray(t, dtype=float)
    t_p = np.asarray(t_p, dtype=float)
    if np.any(t_p <= 0.0):
        raise InputError("end-of-primary time t_p must be > 0 days", field="t_p",
                         fix="give t_p, e.g. the time to 95 % primary consolidation")
    with np.errstate(divide="ignore"):
        logs = np.where(t > t_p, np.log10(np.where(t > t_p, t, 1.0) / t_p), 0.0)
    return (np.asarray(c_alpha, dtype=float) / (1.0 + np.asarray(void_ratio_end_of_primary, dtype=float))
            * np.asarray(thickness, dtype=float) * logs)


def skempton_bjerrum_factor(pore_pressure_parameter: ArrayLike, sigma_z: ArrayLike,
                            sigma_x: ArrayLike) -> NDArray[np.float64]:
    """Consolidation over oedometer settlement at points under a load of finite width (-).

    The excess pore pressure set up at loading is ``du = ds3 + A (ds1 - ds3)`` (Skempton 1954,
    *The pore-pressure coefficients A and B*, Geotechnique 4) and the consolidation settlement
    ``m_v du dz`` instead of the oedometer's ``m_v ds_z dz``, so each point settles ``du / ds_z``
    times its oedometer settlement (Skempton & Bjerrum 1957, *A contribution to the settlement
    analysis of foundations on clay*, Geotechnique 7); on the centre line of a symmetric load
    ``mu = A + (1 - A) ds_x / ds_z``, and a layer's factor is the oedometer-settlement
    weighted mean, ``A + (1 - A) alpha``. The vertical and horizontal stress increases are
    taken as the principal ones (exact on the centre line). Broadcast shape; NaN where
    ``sigma_z <= 0`` or ``sigma_x`` is NaN.
    """
    a = np.asarray(pore_pressure_parameter, dtype=float)
    sz = np.asarray(sigma_z, dtype=float)
    sx = np.asarray(sigma_x, dtype=float)
    s1, s3 = np.maximum(sz, sx), np.minimum(sz, sx)
    with np.errstate(divide="ignore", invalid="ignore"):
        mu = (s3 + a * (s1 - s3)) / sz
    return np.where(sz > 0.0, mu, np.nan)


# ------------------------------------------------------- profile under a probe


@dataclass(frozen=True)
class Sublayers:
    """Layers split into sublayers; arrays of shape (n_sublayers,), depths in m."""

    top: NDArray[np.float64]
    bottom: NDArray[np.float64]
    layer_index: NDArray[np.int64]

    @property
    def mid(self) -> NDArray[np.float64]:
        """Mid-depth of each sublayer (m)."""
        return 0.5 * (self.top + self.bottom)

    @property
    def thickness(self) -> NDArray[np.float64]:
        """Thickness of each sublayer (m)."""
        return self.bottom - self.top


def split_layers(layers: Sequence[Layer], max_thickness: float = 0.5, min_per_layer: int = 1) -> Sublayers:
    """Split each layer into equal sublayers no thicker than ``max_thickness`` (m).

    Each layer gets ``max(min_per_layer, ceil(thickness / max_thickness))`` sublayers,
    so layer boundaries are sublayer boundaries.
    """
    if not layers:
        raise InputError("no layers given", field="layers", fix="give at least one layer")
    if not (np.isfinite(max_thickness) and max_thickness > 0.0):
        raise InputError("maximum sublayer thickness must be > 0 m", field="max_sublayer_thickness")
    tops, bottoms, index = [], [], []
    z = 0.0
    for i, layer in enumerate(layers):  # loop over a few layers only
        n = max(int(min_per_layer), int(np.ceil(layer.thickness / max_thickness - 1e-9)))
        edges = z + layer.thickness * np.linspace(0.0, 1.0, n + 1)
        tops.append(edges[:-1])
        bottoms.append(edges[1:])
        index.append(np.full(n, i))
        z += layer.thickness
    return Sublayers(np.concatenate(tops), np.concatenate(bottoms), np.concatenate(index))


def vertical_effective_stress(z: ArrayLike, layers: Sequence[Layer], water_table_depth: float,
                              gamma_w: float = GAMMA_W,
                              pore_pressure: Callable[[NDArray[np.float64]], ArrayLike] | None = None
                              ) -> NDArray[np.float64]:
    """Initial vertical effective stress sigma'_v0 (kPa) at depths ``z`` (m).

    ``sigma'_v0 = integral of unit weight - gamma_w max(z - z_w, 0)``, hydrostatic pore
    pressure below the water table at depth ``z_w`` (Terzaghi 1925, *Erdbaumechanik*:
    effective stress). Above the water table ``unit_weight_above_water`` is used and no
    suction is counted. A negative ``water_table_depth`` is free water above the ground;
    it adds equally to total stress and pore pressure. ``pore_pressure(z)`` (kPa), when
    given, is the pore pressure at the start instead of the hydrostatic one (steady seepage
    between piezometric levels, an initial excess: :mod:`solver.pore_water`).
    """
    z = np.asarray(z, dtype=float)
    total_depth = float(sum(layer.thickness for layer in layers))
    if np.any(z < 0.0) or np.any(z > total_depth * (1.0 + 1e-12)):
        raise InputError(f"depths must lie within the layers, 0 to {total_depth:g} m", field="z",
                         fix="add a layer or move the probe")
    zw = float(water_table_depth)
    sigma = np.zeros_like(z)
    top = 0.0
    for layer in layers:  # a few layers
        bottom = top + layer.thickness
        dry = (layer.unit_weight_above_water if layer.unit_weight_above_water is not None
               else layer.unit_weight)
        za = np.clip(z, top, bottom)                     # depth reached within this layer
        zw_c = np.clip(zw, top, bottom)
        above = np.clip(np.minimum(za, zw_c) - top, 0.0, None)
        sigma += dry * above + layer.unit_weight * (za - top - above)
        top = bottom
    if zw < 0.0:
        sigma += gamma_w * (-zw)
    if pore_pressure is not None:
        return sigma - np.broadcast_to(np.asarray(pore_pressure(z), dtype=float), z.shape)
    u0 = gamma_w * np.maximum(z - zw, 0.0)
    return sigma - u0


@dataclass(frozen=True)
class ProbeSettlement(Sublayers):
    """Primary settlement under one probe, sublayer by sublayer.

    The sublayers (``top``, ``bottom``, ``mid``, ``thickness`` in m, ``layer_index`` into the
    layer list) with, per sublayer, arrays of shape (n_sublayers,): ``sigma_v0_kPa``,
    ``delta_sigma_kPa``, ``sigma_p_kPa`` (NaN for layers without a preconsolidation pressure)
    and ``settlement_m``.
    """

    sigma_v0_kPa: NDArray[np.float64]
    delta_sigma_kPa: NDArray[np.float64]
    sigma_p_kPa: NDArray[np.float64]
    settlement_m: NDArray[np.float64]
    caution: str = field(default=CAUTION)

    @property
    def total_settlement_m(self) -> float:
        """Sum over the sublayers (m)."""
        return float(np.sum(self.settlement_m))

    def layer_settlement_m(self, n_layers: int) -> NDArray[np.float64]:
        """Settlement summed per layer (m), shape (n_layers,)."""
        return np.bincount(self.layer_index, weights=self.settlement_m, minlength=n_layers)


def settlement_under_probe(layers: Sequence[Layer],
                           stress_increase: Callable[[NDArray[np.float64]], ArrayLike] | float,
                           water_table_depth: float, max_sublayer_thickness: float = 0.5,
                           gamma_w: float = GAMMA_W,
                           pore_pressure: Callable[[NDArray[np.float64]], ArrayLike] | None = None
                           ) -> ProbeSettlement:
    """Final primary consolidation settlement under a probe (m), sublayer by sublayer.

    The layers are split by :func:`split_layers`; at each sublayer mid-depth the initial
    effective stress (:func:`vertical_effective_stress`) and the stress increase are
    evaluated and the sublayer settlement follows from :func:`consolidation_settlement`
    (Cc/Cr layers) or :func:`mv_settlement` (mv layers); incompressible layers add
    nothing. Mid-sublayer stresses stand for the sublayer (common practice).

    Parameters
    ----------
    layers : sequence of Layer
        Top to bottom; the top of the first layer is the ground surface, z = 0.
    stress_increase : callable or float
        ``f(z) -> delta_sigma`` (kPa) for an array of depths (m), e.g.
        ``lambda z: superpose(loads, x_probe, z)`` (:mod:`solver.hand.load_objects`); a float is a uniform (1D) load.
    water_table_depth : float
        Depth of the water table (m); negative if free water stands above the ground.
    max_sublayer_thickness : float
        Thickness control (m).
    gamma_w : float
        Unit weight of water (kN/m3).
    pore_pressure : callable, optional
        ``u(z)`` (kPa), the pore pressure at the start (see :func:`vertical_effective_stress`).

    Returns
    -------
    ProbeSettlement
    """
    subs = split_layers(layers, max_sublayer_thickness)
    zm = subs.mid
    s0 = vertical_effective_stress(zm, layers, water_table_depth, gamma_w, pore_pressure)
    if callable(stress_increase):
        ds = np.broadcast_to(np.asarray(stress_increase(zm), dtype=float), zm.shape).copy()
    else:
        ds = np.full_like(zm, float(stress_increase))
    sp = np.full_like(zm, np.nan)
    settle = np.zeros_like(zm)
    h = subs.thickness
    for i, layer in enumerate(layers):  # a few layers
        sel = subs.layer_index == i
        if layer.compressibility == "log":
            if np.any(s0[sel] <= 0.0):
                raise InputError(f"layer '{layer.name}': initial effective stress is not > 0",
                                 field=f"layers.{layer.name}.unit_weight",
                                 fix="check unit weights and the water table depth")
            sp[sel] = layer.sigma_p(s0[sel])
            settle[sel] = consolidation_settlement(h[sel], layer.void_ratio, layer.compression_index,
                                                   layer.recompression_index, s0[sel], ds[sel], sp[sel])
        elif layer.compressibility == "mv":
            settle[sel] = mv_settlement(h[sel], layer.mv, ds[sel])
    return ProbeSettlement(subs.top, subs.bottom, subs.layer_index, s0, ds, sp, settle)


def secondary_settlement_under_probe(layers: Sequence[Layer], probe: ProbeSettlement, t: ArrayLike,
                                     end_of_primary_days: ArrayLike) -> NDArray[np.float64]:
    """Secondary compression (m) summed under a probe at times ``t`` (days).

    Each sublayer of a layer with ``secondary_compression_index`` adds
    :func:`secondary_compression_settlement` with the void ratio at the end of primary
    ``e_p = e0 - (1 + e0) s / H`` (from the primary settlement ``s``).
    ``end_of_primary_days`` is one value, or one per layer (shape (n_layers,)).
    Returns shape of ``t``.
    """
    t = np.asarray(t, dtype=float)
    tp = np.broadcast_to(np.asarray(end_of_primary_days, dtype=float), (len(layers),))
    total = np.zeros(t.shape)
    h = probe.thickness
    for i, layer in enumerate(layers):
        if layer.secondary_compression_index is None:
            continue
        sel = probe.layer_index == i
        e0 = float(layer.void_ratio)
        e_p = e0 - (1.0 + e0) * probe.settlement_m[sel] / h[sel]
        s = secondary_compression_settlement(h[sel][:, None], layer.secondary_compression_index,
                                             e_p[:, None], t.reshape(1, -1), tp[i])
        total += s.sum(axis=0).reshape(t.shape)
    return total
