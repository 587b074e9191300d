"""Time rate of primary consolidation by the hand method.

Single layers use Terzaghi's (1925) solution and Olson's (1977) ramp from
:mod:`solver.analytic`; a stack of unlike layers is solved by a one-dimensional
finite-difference (lumped linear-element, i.e. finite-volume) model of Terzaghi's equation
``mv du/dt = d/dz (k/gamma_w du/dz) + mv d(sigma)/dt`` with layer interfaces as nodes.

Units: days, m, kPa, permeability m/day, mv 1/kPa, cv m2/day. Depth z positive downward
from the top of the column; excess pore pressure positive in compression.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from typing import Callable, Sequence

import numpy as np
from numpy.typing import ArrayLike, NDArray
from scipy.linalg import solve_banded

from solver import CAUTION
from solver.analytic import olson_ramp_average_degree, terzaghi_average_degree, terzaghi_time_factor
from solver.errors import InputError

from .settlement import GAMMA_W, Layer, ProbeSettlement

__all__ = [
    "drainage_length",
    "degree_of_consolidation",
    "ramp_degree_of_consolidation",
    "time_for_degree",
    "LayeredConsolidation",
    "layered_consolidation",
    "probe_consolidation",
]

STOP_DEGREE = 0.99
"""The layered model keeps stepping past the last output time until U reaches this value."""


# ----------------------------------------------------------------- single layer


def drainage_length(thickness: float, drained_top: bool = True, drained_bottom: bool = False) -> float:
    """Longest drainage path (m): the thickness for one drained face, half for two.

    (Terzaghi 1925, *Erdbaumechanik*.) Raises :class:`InputError` if neither face drains.
    """
    if not (np.isfinite(thickness) and thickness > 0.0):
        raise InputError(f"layer thickness must be > 0 m, got {thickness!r}", field="thickness")
    if drained_top and drained_bottom:
        return 0.5 * float(thickness)
    if drained_top or drained_bottom:
        return float(thickness)
    raise InputError("a layer with neither face drained never consolidates", field="drained_top",
                     fix="drain the top, the bottom or both")


def _check_rate(cv: float, h_dr: float) -> tuple[float, float]:
    cv = float(cv)
    h_dr = float(h_dr)
    if not (np.isfinite(cv) and cv > 0.0):
        raise InputError(f"coefficient of consolidation must be > 0 m2/day, got {cv!r}", field="cv")
    if not (np.isfinite(h_dr) and h_dr > 0.0):
        raise InputError(f"drainage length must be > 0 m, got {h_dr!r}", field="drainage_length")
    return cv, h_dr


def degree_of_consolidation(t: ArrayLike, cv: float, drainage_length: float) -> NDArray[np.float64]:
    """Average degree of consolidation U(t) of one layer under a sudden load (-).

    ``Tv = cv t / H_dr^2`` into Terzaghi's (1925) ``U(Tv)`` (:func:`solver.analytic.terzaghi_average_degree`).
    ``t`` in days (>= 0, any shape), ``cv`` m2/day, ``drainage_length`` m.
    """
    cv, h = _check_rate(cv, drainage_length)
    return np.asarray(terzaghi_average_degree(cv * np.asarray(t, dtype=float) / h**2), dtype=float)


def ramp_degree_of_consolidation(t: ArrayLike, cv: float, drainage_length: float,
                                 construction_days: float) -> NDArray[np.float64]:
    """U(t) of one layer under a load ramped linearly over ``construction_days`` (-).

    Olson (1977), *Consolidation under time dependent loading*, J. Geotech. Eng. Div.
    ASCE 103 (:func:`solver.analytic.olson_ramp_average_degree`); U relative to the
    settlement under the full load.
    """
    cv, h = _check_rate(cv, drainage_length)
    if not (np.isfinite(construction_days) and construction_days >= 0.0):
        raise InputError("construction time must be >= 0 days", field="construction_days")
    tv = cv * np.asarray(t, dtype=float) / h**2
    return np.asarray(olson_ramp_average_degree(tv, cv * construction_days / h**2), dtype=float)


def time_for_degree(degree: ArrayLike, cv: float, drainage_length: float) -> NDArray[np.float64]:
    """Time (days) for one layer to reach average degree ``degree`` under a sudden load.

    ``t = Tv(U) H_dr^2 / cv`` with Terzaghi's (1925) ``Tv(U)`` (0.197 at 50 %, 0.848 at
    90 %). Used also for the end of primary ``t_p`` before secondary compression, commonly
    ``t95`` (common practice).
    """
    cv, h = _check_rate(cv, drainage_length)
    return np.asarray(terzaghi_time_factor(degree), dtype=float) * h**2 / cv


# ------------------------------------------------------------------ layered column


@dataclass(frozen=True)
class LayeredConsolidation:
    """Result of :func:`layered_consolidation`.

    Attributes
    ----------
    times_days : ndarray, (nt,)
        The requested output times.
    average_degree : ndarray, (nt,)
        Settlement-weighted average degree of consolidation U = s(t) / s_final (-).
    settlement_m : ndarray, (nt,)
        Consolidation settlement of the column (m) = U * ``final_settlement_m``.
    final_settlement_m : float
        ``sum mv * delta_sigma * dz`` under the full load (m).
    node_depth_m : ndarray, (nn,)
        Depth of the grid nodes (m); layer interfaces are nodes.
    excess_pore_pressure_kPa : ndarray, (nt, nn)
        Excess pore pressure at the output times.
    history_days, history_degree : ndarray, (ns,)
        Every internal time step and its U, for interpolation.
    t50_days, t90_days : float
        Times to 50 % and 90 % (NaN if not reached while stepping).
    """

    times_days: NDArray[np.float64]
    average_degree: NDArray[np.float64]
    settlement_m: NDArray[np.float64]
    final_settlement_m: float
    node_depth_m: NDArray[np.float64]
    excess_pore_pressure_kPa: NDArray[np.float64]
    history_days: NDArray[np.float64]
    history_degree: NDArray[np.float64]
    caution: str = field(default=CAUTION)

    def time_for_degree(self, degree: float) -> float:
        """First time (days) at which U reaches ``degree``, linear between steps; NaN if never."""
        u = self.history_degree
        idx = np.flatnonzero(u >= degree)
        if idx.size == 0:
            return float("nan")
        i = int(idx[0])
        if i == 0:
            return float(self.history_days[0])
        t0, t1, u0, u1 = self.history_days[i - 1], self.history_days[i], u[i - 1], u[i]
        return float(t0 + (degree - u0) * (t1 - t0) / (u1 - u0))

    @property
    def t50_days(self) -> float:
        """Time to U = 50 % (days)."""
        return self.time_for_degree(0.5)

    @property
    def t90_days(self) -> float:
        """Time to U = 90 % (days)."""
        return self.time_for_degree(0.9)


def _layer_array(values: ArrayLike, n: int, name: str, names: Sequence[str], allow_zero: NDArray[np.bool_]
                 ) -> NDArray[np.float64]:
    a = np.asarray(values, dtype=float)
    a = np.broadcast_to(a, (n,)).astype(float) if a.ndim == 0 else a.ravel()
    if a.size != n:
        raise InputError(f"{name} has {a.size} values for {n} layers", field=f"layers.{name}",
                         fix="give one value per layer")
    for i in range(n):
        ok = np.isfinite(a[i]) and (a[i] > 0.0 or (allow_zero[i] and a[i] >= 0.0))
        if not ok:
            raise InputError(f"layer '{names[i]}': {name} must be > 0, got {a[i]!r}",
                             field=f"layers.{names[i]}.{name}", fix=f"give {name} for layer '{names[i]}'")
    return a


def _grid(thickness: NDArray[np.float64], n_el: NDArray[np.int64], clustering: float
          ) -> tuple[NDArray[np.float64], NDArray[np.int64]]:
    """Nodes (nn,) and element -> layer map (ne,); nodes cluster at each layer's faces."""
    zs = [np.zeros(1)]
    layer_of = []
    top = 0.0
    for i, (h, n) in enumerate(zip(thickness, n_el)):
        xi = np.linspace(0.0, 1.0, n + 1)[1:]
        s = (1.0 - clustering) * xi + clustering * 0.5 * (1.0 - np.cos(np.pi * xi))
        zs.append(top + h * s)
        layer_of.append(np.full(n, i))
        top += h
    z = np.concatenate(zs)
    z[-1] = top
    return z, np.concatenate(layer_of)


def layered_consolidation(thickness: ArrayLike, mv: ArrayLike, permeability: ArrayLike, times: ArrayLike, *,
                          drained_top: bool = True, drained_bottom: bool = False,
                          load_increase: float | Callable[[NDArray[np.float64]], ArrayLike] = 1.0,
                          construction_days: float = 0.0, free_draining: ArrayLike | None = None,
                          names: Sequence[str] | None = None, element_size: float | None = None,
                          min_elements_per_layer: int = 24, growth: float = 1.02,
                          gamma_w: float = GAMMA_W) -> LayeredConsolidation:
    """One-dimensional consolidation of a stack of unlike layers (finite differences).

    Solves ``mv du/dt = d/dz (k/gamma_w du/dz) + mv d sigma/dt`` (Terzaghi 1925,
    *Erdbaumechanik*; for unlike layers Gray 1945, *Simultaneous consolidation of contiguous
    layers of unlike compressible soils*, Trans. ASCE 110) on a non-uniform grid whose nodes
    include every layer interface. Each element carries its layer's mv and k; the nodal
    storage ``C_i`` is half of ``mv h`` from each neighbour (lumped) and the flux between
    nodes is ``k/(gamma_w h) (u_i - u_j)``, so the flux ``k/gamma_w du/dz`` is continuous
    across interfaces and water volume is conserved exactly (finite-volume form;
    Patankar 1980, *Numerical Heat Transfer and Fluid Flow*); because interfaces are nodes,
    every element has a single k and no averaging of k across an interface is needed.
    Nodes cluster towards every layer face.

    Time stepping is Crank-Nicolson (Crank & Nicolson 1947, Proc. Cambridge Phil. Soc.
    43) after two backward-Euler steps, with steps growing geometrically by ``growth`` from
    a first step below the stiffest mode's time constant, and landing exactly on the
    output times and the end of construction. Each step is one tridiagonal solve.

    The load is applied at t = 0 (``construction_days = 0``; initial excess pore pressure
    equals ``load_increase``, one-dimensional loading) or ramped linearly to full value
    over ``construction_days``. The average degree of consolidation is settlement
    weighted, ``U = sum C_i (sigma_i(t) - u_i) / sum C_i sigma_i,final``.

    Parameters
    ----------
    thickness : array_like, (n_layers,)
        Layer thicknesses top to bottom (m).
    mv : array_like, (n_layers,)
        Coefficient of volume compressibility per layer (1/kPa).
    permeability : array_like, (n_layers,)
        Vertical permeability per layer (m/day).
    times : array_like, (nt,)
        Output times (days), >= 0.
    drained_top, drained_bottom : bool
        Free drainage (u = 0) at the top / bottom of the column.
    load_increase : float or callable
        Vertical total stress increase (kPa) under the full load, uniform or ``f(z)``.
    construction_days : float
        Duration of a linear load ramp (days); 0 for a sudden load.
    free_draining : array_like of bool, (n_layers,), optional
        Layers that drain freely (sand): u = 0 on their nodes; their mv and k may be 0.
    names : sequence of str, optional
        Layer names for messages.
    element_size : float, optional
        Target element size (m); default total thickness / 200.
    min_elements_per_layer : int
        Lower bound of elements in each layer.
    growth : float
        Ratio of successive time steps (> 1).
    gamma_w : float
        Unit weight of water (kN/m3).

    Returns
    -------
    LayeredConsolidation
    """
    h = np.asarray(thickness, dtype=float).ravel()
    n = h.size
    if n == 0:
        raise InputError("no layers given", field="layers", fix="give at least one layer")
    names = list(names) if names is not None else [f"layer {i + 1}" for i in range(n)]
    fd = (np.zeros(n, dtype=bool) if free_draining is None
          else np.broadcast_to(np.asarray(free_draining, dtype=bool), (n,)).copy())
    h = _layer_array(h, n, "thickness", names, np.zeros(n, dtype=bool))
    mv = _layer_array(mv, n, "mv", names, fd)
    k = _layer_array(permeability, n, "permeability", names, fd)
    t_out = np.asarray(times, dtype=float).ravel()
    if t_out.size == 0 or np.any(~np.isfinite(t_out)) or np.any(t_out < 0.0):
        raise InputError("output times must be finite and >= 0 days", field="times")
    if not growth > 1.0:
        raise InputError("time-step growth must be > 1", field="growth")
    if not (np.isfinite(construction_days) and construction_days >= 0.0):
        raise InputError("construction time must be >= 0 days", field="construction_days")

    total = float(h.sum())
    size = total / 200.0 if element_size is None else float(element_size)
    n_el = np.maximum(int(min_elements_per_layer), np.ceil(h / size - 1e-9).astype(int))
    z, lay = _grid(h, n_el, clustering=0.5)
    nn = z.size
    dz = np.diff(z)
    mv_e, g_e = mv[lay], k[lay] / (gamma_w * dz)     # (ne,)
    cap = np.zeros(nn)
    cap[:-1] += 0.5 * mv_e * dz
    cap[1:] += 0.5 * mv_e * dz
    kdiag = np.zeros(nn)
    kdiag[:-1] += g_e
    kdiag[1:] += g_e

    fixed = np.zeros(nn, dtype=bool)
    fixed[0] = drained_top
    fixed[-1] = drained_bottom
    if fd.any():
        fixed |= np.isin(np.arange(nn), np.r_[np.flatnonzero(fd[lay]), np.flatnonzero(fd[lay]) + 1])
    free = ~fixed

    sigma_full = (np.full(nn, float(load_increase)) if not callable(load_increase)
                  else np.broadcast_to(np.asarray(load_increase(z), dtype=float), (nn,)).copy())
    final = float(np.sum(cap * sigma_full))
    if not final > 0.0:
        raise InputError("the load gives no consolidation settlement (sum of mv * load * dz is not > 0)",
                         field="load_increase", fix="give a positive load increase and mv > 0")

    tc = float(construction_days)

    def fraction(t: float) -> float:
        return 1.0 if tc == 0.0 else min(t / tc, 1.0)

    def kmul(u: NDArray[np.float64]) -> NDArray[np.float64]:
        out = kdiag * u
        out[:-1] -= g_e * u[1:]
        out[1:] -= g_e * u[:-1]
        return out

    # time scale: (sum H_i / sqrt(cv_i))^2 over the consolidating layers
    cv = np.where(fd, np.inf, k / (np.where(mv > 0.0, mv, 1.0) * gamma_w))
    t_char = float(np.sum(np.where(fd, 0.0, h / np.sqrt(cv))) ** 2)
    n_drained = int(drained_top) + int(drained_bottom)
    t_char = t_char / max(n_drained, 1) ** 2 if t_char > 0.0 else 1.0
    with np.errstate(divide="ignore"):
        rates = 2.0 * kdiag / np.where(cap > 0.0, cap, 1.0)   # Gershgorin bound per node
        lam_max = float(np.max(np.where(free & (cap > 0.0), rates, 0.0)))
    dt = min(1e-6 * t_char, 0.5 / lam_max) if lam_max > 0.0 else 1e-6 * t_char

    targets = np.unique(np.r_[t_out, [tc] if tc > 0.0 else []])
    targets = targets[targets > 0.0]
    t_stop_min = float(t_out.max())
    t_limit = max(t_stop_min, tc + 1e3 * t_char)

    u = np.where(free, sigma_full * fraction(0.0), 0.0) if tc == 0.0 else np.zeros(nn)
    t = 0.0
    sig_now = sigma_full * fraction(0.0)

    def degree(u_now: NDArray[np.float64], sig: NDArray[np.float64]) -> float:
        return float(np.sum(cap * (sig - np.where(free, u_now, 0.0))) / final)

    hist_t, hist_u = [0.0], [degree(u, sig_now)]
    out_u = np.empty((t_out.size, nn))
    out_deg = np.empty(t_out.size)
    for j in np.flatnonzero(t_out == 0.0):
        out_u[j] = u
        out_deg[j] = hist_u[0]

    ab = np.zeros((3, nn))
    ti = 0  # next target index
    step = 0
    while True:
        done_outputs = t >= t_stop_min * (1.0 - 1e-12)
        if done_outputs and (hist_u[-1] >= STOP_DEGREE or t >= t_limit or n_drained == 0 and not fd.any()):
            break
        step_dt = dt
        hit = None
        if ti < targets.size and t + step_dt >= targets[ti] * (1.0 - 1e-12):
            step_dt = targets[ti] - t
            hit = ti
        theta = 1.0 if step < 2 else 0.5
        t_new = t + step_dt
        sig_new = sigma_full * fraction(t_new)
        rhs = cap * u - (1.0 - theta) * step_dt * kmul(u) + cap * (sig_new - sig_now)
        ab[1] = cap + theta * step_dt * kdiag
        ab[0, 1:] = -theta * step_dt * g_e
        ab[2, :-1] = -theta * step_dt * g_e
        # drained nodes: identity rows (u = 0); their columns multiply zero
        ab[1, fixed] = 1.0
        ab[0, 1:][fixed[:-1]] = 0.0
        ab[2, :-1][fixed[1:]] = 0.0
        rhs[fixed] = 0.0
        u = solve_banded((1, 1), ab, rhs, check_finite=False)
        t, sig_now = t_new, sig_new
        step += 1
        hist_t.append(t)
        hist_u.append(degree(u, sig_now))
        if hit is not None:
            for j in np.flatnonzero(np.isclose(t_out, targets[hit], rtol=1e-12, atol=0.0)):
                out_u[j] = u
                out_deg[j] = hist_u[-1]
            ti += 1
        else:
            dt *= growth
    return LayeredConsolidation(times_days=t_out, average_degree=out_deg, settlement_m=out_deg * final,
                                final_settlement_m=final, node_depth_m=z, excess_pore_pressure_kPa=out_u,
                                history_days=np.asarray(hist_t), history_degree=np.asarray(hist_u))


def probe_consolidation(layers: Sequence[Layer], probe: ProbeSettlement, times: ArrayLike, *,
                        drained_top: bool = True, drained_bottom: bool = True, construction_days: float = 0.0,
                        gamma_w: float = GAMMA_W, **grid: float) -> LayeredConsolidation:
    """Time rate of the settlement computed under a probe (:func:`settlement_under_probe`).

    Each sublayer becomes a layer of the column with the secant
    ``mv = s / (H delta_sigma)`` from its own final settlement (so U weights the sublayers
    by their settlement; common practice), the layer's ``permeability``, or
    ``k = cv mv gamma_w`` when the layer gives ``cv``. Incompressible layers are free
    draining. Where the stress increase is ~0 the tangent mv at sigma'_v0 is used.
    ``result.settlement_m`` is U times the probe's total primary settlement (the column's
    own ``sum mv sigma dz`` differs from it only by the interpolation of the load to nodes).
    Extra keywords go to :func:`layered_consolidation`.
    """
    idx = probe.layer_index
    hs = probe.thickness_m
    ds = probe.delta_sigma_kPa
    n_sub = hs.size
    mv = np.zeros(n_sub)
    k = np.zeros(n_sub)
    fd = np.zeros(n_sub, dtype=bool)
    small = np.abs(ds) <= 1e-9 * max(float(np.max(np.abs(ds))), 1e-300)
    for i, layer in enumerate(layers):
        sel = idx == i
        if layer.compressibility == "none":
            fd[sel] = True
            continue
        if layer.compressibility == "mv":
            mv[sel] = layer.mv
        else:
            s0 = probe.sigma_v0_kPa[sel]
            index = np.where(probe.sigma_p_kPa[sel] > s0, layer.recompression_index, layer.compression_index)
            tangent = index / ((1.0 + layer.void_ratio) * np.log(10.0) * s0)
            with np.errstate(divide="ignore", invalid="ignore"):
                secant = probe.settlement_m[sel] / (hs[sel] * ds[sel])
            mv[sel] = np.where(small[sel] | ~(secant > 0.0), tangent, secant)
        if layer.permeability is not None:
            k[sel] = layer.permeability
        elif layer.cv is not None:
            k[sel] = layer.cv * mv[sel] * gamma_w
        else:
            raise InputError(f"layer '{layer.name}': permeability (or cv) is missing for the time rate",
                             field=f"layers.{layer.name}.permeability",
                             fix=f"give permeability (m/day) or cv (m2/day) for layer '{layer.name}'")
    zm = probe.z_mid_m
    load = lambda z: np.interp(z, zm, ds)  # noqa: E731 - node values from sublayer mid-depths
    names = [layers[i].name for i in idx]
    result = layered_consolidation(hs, mv, k, times, drained_top=drained_top, drained_bottom=drained_bottom,
                                   load_increase=load, construction_days=construction_days, free_draining=fd,
                                   names=names,
                                   min_elements_per_layer=int(grid.pop("min_elements_per_layer", 2)),
                                   gamma_w=gamma_w, **grid)
    total = probe.total_settlement_m
    return replace(result, settlement_m=result.average_degree * total, final_settlement_m=total)
