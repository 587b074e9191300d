"""Time rate of primary consolidation by the hand method.

Single layers use Terzaghi's (1925) solution and Olson's (1977) ramp from
:mod:`solver.analytic` (:mod:`solver.hand.terzaghi`, importable from here too); a stack of
unlike layers is solved by a one-dimensional
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
from scipy.linalg import get_lapack_funcs

from solver import CAUTION
from solver.errors import InputError

from .settlement import GAMMA_W, Layer, ProbeSettlement
from .terzaghi import (degree_of_consolidation, drainage_length,  # noqa: F401 (re-exported)
                       first_time_reaching, ramp_degree_of_consolidation, time_for_degree)

__all__ = [
    "drainage_length",
    "degree_of_consolidation",
    "ramp_degree_of_consolidation",
    "time_for_degree",
    "LoadPiece",
    "LayeredConsolidation",
    "first_time_reaching",
    "layer_permeability",
    "layered_consolidation",
    "probe_consolidation",
]

_GTSV = get_lapack_funcs(("gtsv",), (np.zeros(1),))[0]


def _tridiagonal_solve(lower: NDArray[np.float64], diag: NDArray[np.float64], upper: NDArray[np.float64],
                       rhs: NDArray[np.float64]) -> NDArray[np.float64]:
    """Solve a tridiagonal system (LAPACK gtsv, partial pivoting); one call per time step."""
    *_, x, info = _GTSV(lower, diag, upper, rhs)
    if info != 0:
        raise InputError("the consolidation column gives a singular system", field="layers",
                         fix="check that every layer has mv > 0 or is free-draining")
    return x


STOP_DEGREE = 0.99
"""The layered model keeps stepping past the last output time until U reaches this value."""


# ------------------------------------------------------------------ layered column


@dataclass(frozen=True)
class LoadPiece:
    """One change of the vertical total stress in a staged loading history.

    The increase ``increase`` (kPa; a float for a uniform change, or ``f(z)`` of the depth
    array in m) ramps on linearly from ``start_days`` over ``duration_days``; a duration of 0
    applies it at once (felt undrained: the excess pore pressure jumps by the same amount,
    one-dimensional loading). A negative increase is an unloading.
    """

    start_days: float
    duration_days: float
    increase: float | Callable[[NDArray[np.float64]], ArrayLike]


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
    depths_m : ndarray, (nd,)
        The depths asked for with ``depths`` (empty if none).
    average_degree_below : ndarray, (nt, nd)
        U of the part of the column below each depth, at the output times.
    history_degree_below : ndarray, (ns, nd)
        The same at every internal time step.
    history_excess_pore_pressure_kPa : ndarray, (ns, nd)
        Excess pore pressure at each depth at every internal time step.
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
    depths_m: NDArray[np.float64] = field(default_factory=lambda: np.zeros(0))
    average_degree_below: NDArray[np.float64] = field(default_factory=lambda: np.zeros((0, 0)))
    history_degree_below: NDArray[np.float64] = field(default_factory=lambda: np.zeros((0, 0)))
    history_excess_pore_pressure_kPa: NDArray[np.float64] = field(
        default_factory=lambda: np.zeros((0, 0)))
    caution: str = field(default=CAUTION)

    def time_for_degree(self, degree: float, below: int | None = None) -> float:
        """First time (days) at which U reaches ``degree``, linear between steps; NaN if never.

        ``below``: index into ``depths_m`` to use the degree of the part of the column below
        that depth instead of the whole column.
        """
        u = self.history_degree if below is None else self.history_degree_below[:, below]
        return first_time_reaching(self.history_days, u, degree)

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
                          gamma_w: float = GAMMA_W, load_history: Sequence[LoadPiece] | None = None,
                          depths: ArrayLike | None = None, any_sign: bool = False
                          ) -> LayeredConsolidation:
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

    A staged history (``load_history``: lifts placed one after another, waiting periods,
    loads ramped on or off) is a list of :class:`LoadPiece`; the column is linear, so the
    pieces simply add. Every piece start and end is a time the stepping lands on; after a
    piece starts the step length restarts from the first step (two backward-Euler steps, then
    Crank-Nicolson), and a sudden piece raises the excess pore pressure by its increase at
    once. ``U`` is then relative to the final load (the sum of all pieces).

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
    load_history : sequence of LoadPiece, optional
        A staged loading history; replaces ``load_increase`` and ``construction_days``.
    depths : array_like, (nd,), optional
        Depths (m) at which the excess pore pressure is recorded at every step, and below
        which the degree of consolidation of the rest of the column is recorded
        (``history_degree_below``; a depth at a layer interface splits it exactly).
    any_sign : bool
        Accept a load of any sign (an unloading, or one whose ``sum mv * load * dz`` is zero):
        the degrees are then relative to ``sum mv |load| dz``, the stepping ends at the
        last output time and the histories hold the output times only (for the excess pore
        pressure of one increment of a history).

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

    def profile(value: float | Callable[[NDArray[np.float64]], ArrayLike]) -> NDArray[np.float64]:
        if callable(value):
            return np.broadcast_to(np.asarray(value(z), dtype=float), (nn,)).copy()
        return np.full(nn, float(value))

    if load_history is None:
        pieces = [LoadPiece(0.0, float(construction_days), load_increase)]
    else:
        pieces = list(load_history)
        if not pieces:
            raise InputError("the load history is empty", field="load_history",
                             fix="give at least one load piece")
    starts = np.array([float(pc.start_days) for pc in pieces])
    durs = np.array([float(pc.duration_days) for pc in pieces])
    if np.any(~np.isfinite(starts)) or np.any(starts < 0.0) or np.any(~np.isfinite(durs)) or np.any(durs < 0.0):
        raise InputError("load pieces need start >= 0 and duration >= 0 days", field="load_history",
                         fix="give start and duration of each piece in days")
    incs = np.array([profile(pc.increase) for pc in pieces])          # (n_pieces, nn)
    sigma_full = incs.sum(axis=0)
    final = float(np.sum(cap * sigma_full))
    if any_sign and not final > 0.0:
        final = float(np.sum(cap * np.abs(sigma_full))) or 1.0
    if not final > 0.0:
        raise InputError("the load gives no consolidation settlement (sum of mv * load * dz is not > 0)",
                         field="load_increase", fix="give a positive load increase and mv > 0")
    ends = starts + durs
    sudden = durs == 0.0

    t_loaded = float(ends.max())

    def sigma_at(t: float, after: bool) -> NDArray[np.float64]:
        """Total stress increase at time t; ``after``: include sudden pieces starting at t."""
        if t > t_loaded:
            return sigma_full
        with np.errstate(divide="ignore", invalid="ignore"):
            ramp = np.where(sudden, 0.0, np.clip((t - starts) / np.where(sudden, 1.0, durs), 0.0, 1.0))
        on = np.where(sudden, (t > starts) | (after & (t >= starts)), ramp)
        return on @ incs

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
    dt0 = min(1e-6 * t_char, 0.5 / lam_max) if lam_max > 0.0 else 1e-6 * t_char
    dt = dt0

    knots = np.unique(np.r_[starts, ends])
    restarts = set(np.unique(starts[starts > 0.0]).tolist())
    targets = np.unique(np.r_[t_out, knots])
    targets = targets[targets > 0.0]
    outputs_at: dict[int, list[int]] = {}
    for j, tj in enumerate(t_out):
        if tj > 0.0:
            i = int(np.argmin(np.abs(targets - tj)))
            outputs_at.setdefault(i, []).append(j)
    t_stop_min = max(float(t_out.max()), float(knots.max()))
    t_limit = max(t_stop_min, float(knots.max()) + 1e3 * t_char)

    # depths: pressure by linear interpolation between nodes; storage of the part below
    dep = np.zeros(0) if depths is None else np.asarray(depths, dtype=float).ravel()
    if np.any(~np.isfinite(dep)) or np.any(dep < 0.0) or np.any(dep > total * (1.0 + 1e-12)):
        raise InputError(f"depths must lie in the column, 0 to {total:g} m", field="depths")
    j_hi = np.clip(np.searchsorted(z, dep, side="right"), 1, nn - 1)
    w_hi = np.clip((dep - z[j_hi - 1]) / (z[j_hi] - z[j_hi - 1]), 0.0, 1.0)
    tol = 1e-9 * max(total, 1.0)
    below_e = (z[:-1][None, :] >= dep[:, None] - tol)                   # (nd, ne)
    cap_below = np.zeros((dep.size, nn))
    cap_below[:, :-1] += 0.5 * mv_e * dz * below_e
    cap_below[:, 1:] += 0.5 * mv_e * dz * below_e
    final_below = cap_below @ sigma_full
    with np.errstate(divide="ignore", invalid="ignore"):
        inv_below = np.where(final_below > 0.0, 1.0 / np.where(final_below > 0.0, final_below, 1.0), np.nan)

    def at_depths(u_now: NDArray[np.float64]) -> NDArray[np.float64]:
        return (1.0 - w_hi) * u_now[j_hi - 1] + w_hi * u_now[j_hi]

    def degree(u_now: NDArray[np.float64], sig: NDArray[np.float64]) -> float:
        return float(np.sum(cap * (sig - np.where(free, u_now, 0.0))) / final)

    def degree_below(u_now: NDArray[np.float64], sig: NDArray[np.float64]) -> NDArray[np.float64]:
        return (cap_below @ (sig - np.where(free, u_now, 0.0))) * inv_below

    t = 0.0
    sig_now = sigma_at(0.0, True)
    u = np.where(free, sig_now, 0.0)         # sudden pieces at t = 0 are felt undrained
    # At t = 0 no water has left: U(0) = 0 (the lumped storage of a drained node would
    # otherwise count as consolidated at once; it is by the first step).
    hist_t, hist_u = [0.0], [0.0]
    hist_ub, hist_p = [np.where(np.isfinite(inv_below), 0.0, np.nan)], [at_depths(u)]
    out_u = np.empty((t_out.size, nn))
    out_deg = np.empty(t_out.size)
    out_below = np.empty((t_out.size, dep.size))
    for j in np.flatnonzero(t_out == 0.0):
        out_u[j] = u
        out_deg[j] = hist_u[0]
        out_below[j] = hist_ub[0]

    ti = 0  # next target index
    step = 0
    while True:
        done_outputs = t >= t_stop_min * (1.0 - 1e-12)
        if done_outputs and (any_sign or hist_u[-1] >= STOP_DEGREE or t >= t_limit
                             or n_drained == 0 and not fd.any()):
            break
        step_dt = dt
        hit = None
        if ti < targets.size and t + step_dt >= targets[ti] * (1.0 - 1e-12):
            step_dt = targets[ti] - t
            hit = ti
        theta = 1.0 if step < 2 else 0.5
        t_new = t + step_dt
        sig_new = sigma_at(t_new, False)
        rhs = cap * u - (1.0 - theta) * step_dt * kmul(u) + cap * (sig_new - sig_now)
        diag = cap + theta * step_dt * kdiag
        off = -theta * step_dt * g_e
        # drained nodes: identity rows (u = 0); their columns multiply zero
        diag[fixed] = 1.0
        upper = np.where(fixed[:-1], 0.0, off)
        lower = np.where(fixed[1:], 0.0, off)
        rhs[fixed] = 0.0
        u = _tridiagonal_solve(lower, diag, upper, rhs)
        t, sig_now = t_new, sig_new
        step += 1
        if hit is not None:
            jump = sigma_at(t, True) - sig_now
            if np.any(jump != 0.0):           # sudden pieces starting now: undrained rise
                u = u + np.where(free, jump, 0.0)
                sig_now = sig_now + jump
        if hit is not None or not any_sign:     # any_sign: the outputs only (one increment)
            hist_t.append(t)
            hist_u.append(degree(u, sig_now))
            hist_ub.append(degree_below(u, sig_now))
            hist_p.append(at_depths(u))
        if hit is not None:
            for j in outputs_at.get(hit, ()):
                out_u[j] = u
                out_deg[j] = hist_u[-1]
                out_below[j] = hist_ub[-1]
            if any(abs(t - s) <= 1e-12 * max(1.0, s) for s in restarts):
                dt, step = dt0, 0             # a new piece starts: small steps again
            ti += 1
        else:
            dt *= growth
    return LayeredConsolidation(times_days=t_out, average_degree=out_deg, settlement_m=out_deg * final,
                                final_settlement_m=final, node_depth_m=z, excess_pore_pressure_kPa=out_u,
                                history_days=np.asarray(hist_t), history_degree=np.asarray(hist_u),
                                depths_m=dep, average_degree_below=out_below,
                                history_degree_below=np.asarray(hist_ub).reshape(len(hist_t), dep.size),
                                history_excess_pore_pressure_kPa=np.asarray(hist_p).reshape(len(hist_t),
                                                                                            dep.size))


def layer_permeability(layer: Layer, mv: ArrayLike, gamma_w: float = GAMMA_W,
                       required: bool = True) -> NDArray[np.float64]:
    """Vertical permeability (m/day) of sublayers of ``layer`` with compressibility ``mv``
    (1/kPa): the layer's ``permeability``, or ``cv mv gamma_w`` from its ``cv``; zeros when it
    gives neither and is not ``required`` (a free-draining layer)."""
    mv = np.asarray(mv, dtype=float)
    if layer.permeability is not None:
        return np.full(mv.shape, float(layer.permeability))
    if layer.cv is not None:
        return layer.cv * mv * gamma_w
    if required:
        raise InputError(f"layer '{layer.name}': permeability (or cv) is missing for the time rate",
                         field=f"layers.{layer.name}.permeability",
                         fix=f"give permeability (m/day) or cv (m2/day) for layer '{layer.name}'")
    return np.zeros(mv.shape)


def probe_consolidation(layers: Sequence[Layer], probe: ProbeSettlement, times: ArrayLike, *,
                        drained_top: bool = True, drained_bottom: bool = True, construction_days: float = 0.0,
                        gamma_w: float = GAMMA_W, load_history: Sequence[LoadPiece] | None = None,
                        free_draining_layers: Sequence[bool] | None = None,
                        **grid: float) -> LayeredConsolidation:
    """Time rate of the settlement computed under a probe (:func:`settlement_under_probe`).

    Each sublayer becomes a layer of the column with the secant
    ``mv = s / (H delta_sigma)`` from its own final settlement (so U weights the sublayers
    by their settlement; common practice), the layer's ``permeability``, or
    ``k = cv mv gamma_w`` when the layer gives ``cv``. Incompressible layers are free
    draining, and so are the layers flagged in ``free_draining_layers`` (one bool per layer:
    their settlement follows the load at once). Where the stress increase is ~0 the tangent
    mv at sigma'_v0 is used.
    ``result.settlement_m`` is U times the probe's total primary settlement (the column's
    own ``sum mv sigma dz`` differs from it only by the interpolation of the load to nodes).

    ``load_history``: a staged history whose pieces give their ``increase`` as an array of
    the stress change at the sublayer mid-depths, shape (n_sublayers,) (or a float); it should
    add up to ``probe.delta_sigma_kPa``, the final stress the secant mv belongs to. Without it
    the final stress ramps on over ``construction_days`` (0: at once).
    Extra keywords (``depths``, grid controls) go to :func:`layered_consolidation`.
    """
    idx = probe.layer_index
    hs = probe.thickness
    ds = probe.delta_sigma_kPa
    n_sub = hs.size
    mv = np.zeros(n_sub)
    k = np.zeros(n_sub)
    fd = np.zeros(n_sub, dtype=bool)
    flagged = (np.zeros(len(layers), dtype=bool) if free_draining_layers is None
               else np.asarray(free_draining_layers, dtype=bool).ravel())
    if flagged.size != len(layers):
        raise InputError(f"free_draining_layers has {flagged.size} values for {len(layers)} layers",
                         field="free_draining_layers", fix="give one value per layer")
    small = np.abs(ds) <= 1e-9 * max(float(np.max(np.abs(ds))), 1e-300)
    for i, layer in enumerate(layers):
        sel = idx == i
        if layer.compressibility == "none":
            fd[sel] = True
            continue
        fd[sel] = flagged[i]
        if layer.compressibility == "mv":
            mv[sel] = layer.mv
        else:
            s0 = probe.sigma_v0_kPa[sel]
            index = np.where(probe.sigma_p_kPa[sel] > s0, layer.recompression_index, layer.compression_index)
            tangent = index / ((1.0 + layer.void_ratio) * np.log(10.0) * s0)
            with np.errstate(divide="ignore", invalid="ignore"):
                secant = probe.settlement_m[sel] / (hs[sel] * ds[sel])
            mv[sel] = np.where(small[sel] | ~(secant > 0.0), tangent, secant)
        k[sel] = layer_permeability(layer, mv[sel], gamma_w, required=not flagged[i])
    zm = probe.mid

    def at_nodes(values: ArrayLike) -> float | Callable[[NDArray[np.float64]], NDArray[np.float64]]:
        a = np.asarray(values, dtype=float)
        if a.ndim == 0:
            return float(a)
        a = np.broadcast_to(a.ravel(), zm.shape)
        return lambda z: np.interp(z, zm, a)  # node values from sublayer mid-depths

    history = None if load_history is None else [
        LoadPiece(pc.start_days, pc.duration_days, at_nodes(pc.increase)) for pc in load_history]
    names = [layers[i].name for i in idx]
    result = layered_consolidation(hs, mv, k, times, drained_top=drained_top, drained_bottom=drained_bottom,
                                   load_increase=at_nodes(ds), construction_days=construction_days,
                                   free_draining=fd, names=names,
                                   min_elements_per_layer=int(grid.pop("min_elements_per_layer", 2)),
                                   gamma_w=gamma_w, load_history=history, **grid)
    total = probe.total_settlement_m
    return replace(result, settlement_m=result.average_degree * total, final_settlement_m=total)
