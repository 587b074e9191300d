"""Consolidation settlement through a load history, stage by stage (the stress path).

A staged history (lifts placed one after another, waiting periods, a surcharge placed and
removed or reduced) is a list of :class:`Increment`: a change of the vertical total stress of
every sublayer, ramped on over a duration. The estimate follows the history as an engineer
does by hand:

1. **The stress path** of each sublayer. Just before increment k starts (time ``t_k``) the
   effective stress each sublayer has reached is ``sigma'_v0 + sum_j<k dsigma_j U_j(t_k)``,
   with ``U_j`` the sublayer's own degree of consolidation under increment j; the largest
   effective stress reached so far (at least sigma'_p) is the sublayer's memory ``m_k``.
2. **The settlement under each load level**: held for ever, the load after increment k would
   give the one-dimensional settlement ``S_k = H eps(sigma'_k; max(m_k, sigma'_k))`` with
   ``sigma'_k = sigma'_v0 + sum_j<=k dsigma_j`` and, for Cc/Cr layers (Terzaghi & Peck 1948;
   the elastoplastic log-stress law with memory)::

       eps(s; m) = [Cr log10(min(m, p)/s0) + Cc log10(max(m, p)/p) - Cr log10(m/s)] / (1 + e0)

   (``p = max(sigma'_p, sigma'_v0)``): the compression line above the preconsolidation
   pressure, the recompression line (Cr) on unloading and reloading below the memory. So the
   degree reached before a change sets the rebound: a surcharge removed at U = 90 % rebounds
   on Cr from the stress reached then, not from the full surcharge; two stages that cross
   sigma'_p give the Cr settlement after the first and the Cc part after the second. Layers
   with m_v: ``eps = m_v (s - s0)``.
3. **The time curve by superposition**: ``s_i(t) = sum_k (S_k,i - S_k-1,i) U_k,i(t - t_k)``,
   each increment consolidating with its own degree, Terzaghi (1925) for a sudden increment
   and Olson (1977) for one ramped over its stage (both given by the layered finite-difference
   column of :func:`solver.hand.rate.layered_consolidation`, which reduces to them for one
   layer). The column for increment k takes in each layer the m_v of that increment (the
   settlement change over the stress change: Cr on unloading, the secant along the path on
   loading), so c_v = k / (m_v gamma_w) follows the path (or the layer's c_v when given).

The excess pore pressure at given depths superposes the increments' columns the same way.

Units: kN, m, kPa, days, permeability m/day, c_v m2/day; depth positive downward from the top
of the column; settlement positive downward; excess pore pressure positive in compression.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Sequence

import numpy as np
from numpy.typing import ArrayLike, NDArray

from solver.errors import InputError

from . import rate
from .settlement import GAMMA_W, Layer, Sublayers, consolidation_settlement

__all__ = ["Increment", "StagedConsolidation", "path_strain", "staged_consolidation",
           "fine_times"]

_LN10 = math.log(10.0)


@dataclass(frozen=True)
class Increment:
    """One change of the vertical total stress: ``stress_change_kPa`` (n_sub,) at the sublayer
    mid-depths, ramped on linearly from ``start_days`` over ``duration_days`` (0: at once);
    ``stage``: the stage that makes it (its index, as text, for
    :meth:`StagedConsolidation.ultimate_after`)."""
    start_days: float
    duration_days: float
    stress_change_kPa: NDArray[np.float64]
    stage: str = ""


@dataclass
class StagedConsolidation:
    """Result of :func:`staged_consolidation`.

    ``times_days`` (nt,): the time grid of the histories (the requested times and a fine grid
    around every increment, to the time the last increment has consolidated);
    ``settlement_m`` (nt, n_sub): consolidation settlement of each sublayer;
    ``ultimate_m`` (n_inc, n_sub): the settlement of each sublayer under the load after each
    increment, held for ever (``S_k``); ``memory_kPa`` (n_inc, n_sub): the largest effective
    stress reached before each increment (at least sigma'_p); ``reached_kPa`` (n_inc, n_sub):
    the effective stress reached just before each increment; ``final_ultimate_m`` (n_sub,):
    ``S`` of the last increment (zeros when there is none); ``final_memory_kPa`` (n_sub,):
    the memory at the end of the history under the final load; ``depths_m`` (nd,) and
    ``excess_pore_pressure_kPa`` (nt, nd) at those depths; ``mv_per_increment`` (n_inc, n_sub)
    the m_v each increment's column used (1/kPa).
    """
    times_days: NDArray[np.float64]
    settlement_m: NDArray[np.float64]
    ultimate_m: NDArray[np.float64]
    memory_kPa: NDArray[np.float64]
    reached_kPa: NDArray[np.float64]
    final_ultimate_m: NDArray[np.float64]
    final_memory_kPa: NDArray[np.float64]
    depths_m: NDArray[np.float64]
    excess_pore_pressure_kPa: NDArray[np.float64]
    mv_per_increment: NDArray[np.float64]
    increments: list[Increment]

    def settlement_below(self, weights: ArrayLike) -> NDArray[np.float64]:
        """Consolidation settlement (nt,) of the sublayers weighted by ``weights`` (n_sub,):
        a selection (bool), or factors applied to each sublayer."""
        return self.settlement_m @ np.asarray(weights, dtype=float)

    def ultimate_at(self, t: ArrayLike, weights: ArrayLike) -> NDArray[np.float64]:
        """Settlement under the load level in place at times t (the increments started by then:
        a ramp once it has begun, a sudden one from its start), held for ever, of the weighted
        sublayers (nt,); 0 before any increment."""
        t = np.asarray(t, dtype=float)
        tot = np.concatenate([[0.0], self.ultimate_m @ np.asarray(weights, dtype=float)])
        started = np.zeros(t.shape, dtype=int)
        for inc in self.increments:
            started += (t > inc.start_days) | ((inc.duration_days <= 0.0) & (t >= inc.start_days))
        return tot[started]

    def ultimate_after(self, stage: int, weights: ArrayLike) -> float:
        """Settlement under the load in place after stage ``stage`` (its index; the increments
        name their stage by index), held for ever, of the weighted sublayers."""
        k = sum(1 for inc in self.increments if int(inc.stage) <= stage)
        return float(self.ultimate_m[k - 1] @ np.asarray(weights, dtype=float)) if k else 0.0


def path_strain(layer: Layer, sigma_v0: NDArray[np.float64], sigma_p: NDArray[np.float64],
                stress: NDArray[np.float64], memory: NDArray[np.float64]) -> NDArray[np.float64]:
    """Vertical strain (-) of sublayers of ``layer`` at effective stress ``stress`` with the
    largest effective stress so far ``memory`` (>= stress), from ``sigma_v0`` (see the module
    docstring; Terzaghi & Peck 1948 for the compression and recompression lines)."""
    s0 = np.asarray(sigma_v0, dtype=float)
    s = np.asarray(stress, dtype=float)
    if layer.compressibility == "mv":
        return float(layer.mv) * (s - s0)
    if layer.compressibility == "none":
        return np.zeros_like(s)
    if np.any(s <= 0.0):
        raise InputError(f"layer '{layer.name}': the load takes the effective stress to zero or "
                         "below (the log-stress law needs it positive)",
                         field=f"layers.{layer.name}", fix="check the unloading and the water table")
    m = np.maximum(np.asarray(memory, dtype=float), s)
    loaded = consolidation_settlement(1.0, layer.void_ratio, layer.compression_index,
                                      layer.recompression_index, s0, m - s0, sigma_p)
    return loaded - layer.recompression_index / (1.0 + layer.void_ratio) * np.log10(m / s)


def _tangent_mv(layer: Layer, stress: NDArray[np.float64], memory: NDArray[np.float64]
                ) -> NDArray[np.float64]:
    """Tangent m_v (1/kPa) at ``stress``: Cr below the memory, Cc at it (loading)."""
    s = np.asarray(stress, dtype=float)
    if layer.compressibility == "mv":
        return np.full(s.shape, float(layer.mv))
    if layer.compressibility == "none":
        return np.zeros(s.shape)
    index = np.where(s < memory * (1.0 - 1e-9), layer.recompression_index, layer.compression_index)
    return index / ((1.0 + layer.void_ratio) * _LN10 * np.maximum(s, 1e-9))


def fine_times(times: ArrayLike, starts: Sequence[float], ends: Sequence[float], t_last: float,
               n_per_piece: int = 48) -> NDArray[np.float64]:
    """The requested times, every start and end, and a logarithmic grid after each start up to
    ``t_last`` (for t50, t90 and the largest pore pressure between the requested times)."""
    t = [np.asarray(times, dtype=float).ravel(), np.asarray(starts, float), np.asarray(ends, float),
         [0.0, t_last]]
    for t0 in starts:
        span = t_last - t0
        if span > 0.0:
            t.append(t0 + np.geomspace(span * 1e-6, span, n_per_piece))
    grid = np.unique(np.concatenate([np.asarray(a, dtype=float).ravel() for a in t]))
    grid = grid[(grid >= 0.0) & (grid <= t_last * (1.0 + 1e-12))]
    distinct = np.concatenate([[True], np.diff(grid) > 1e-12 * np.maximum(grid[1:], 1.0)])
    return grid[distinct]


def _averaging(z: NDArray[np.float64], top: NDArray[np.float64], bottom: NDArray[np.float64]
               ) -> NDArray[np.float64]:
    """(n_sub, nn) matrix giving the mean of a nodal field (linear between nodes) over each
    sublayer, whose faces are nodes of ``z``."""
    a = np.zeros((top.size, z.size))
    dz = np.diff(z)
    mid = 0.5 * (z[:-1] + z[1:])
    for i in range(top.size):             # a few hundred sublayers at most, once per column
        e = np.flatnonzero((mid > top[i]) & (mid < bottom[i]))
        np.add.at(a[i], e, 0.5 * dz[e])
        np.add.at(a[i], e + 1, 0.5 * dz[e])
        a[i] /= max(bottom[i] - top[i], 1e-300)
    return a


def staged_consolidation(layers: Sequence[Layer], sublayers: Sublayers, sigma_v0: ArrayLike,
                         sigma_p: ArrayLike, increments: Sequence[Increment], times: ArrayLike, *,
                         drained_top: bool = True, drained_bottom: bool = False,
                         free_draining_layers: Sequence[bool] | None = None,
                         rate_group: Sequence[int] | None = None, depths: ArrayLike = (),
                         gamma_w: float = GAMMA_W, growth: float = 1.05) -> StagedConsolidation:
    """The consolidation settlement of a column of sublayers through a staged load history.

    Parameters
    ----------
    layers : sequence of Layer
        The column's layers top to bottom (``sublayers.layer_index`` points into it).
    sublayers : Sublayers
        The sublayers (:func:`solver.hand.settlement.split_layers`).
    sigma_v0, sigma_p : array_like, (n_sub,)
        Initial vertical effective stress and preconsolidation pressure (NaN for m_v layers) at
        the sublayer mid-depths (kPa).
    increments : sequence of Increment
        The history, in order of start.
    times : array_like
        Times (days) that must be on the grid (the output times).
    drained_top, drained_bottom : bool
        Drainage of the column's faces.
    free_draining_layers : sequence of bool, optional
        Layers whose pore pressure stays zero (their settlement follows the load at once).
    rate_group : sequence of int, optional
        Per layer, the group (e.g. the model layer) whose sublayers share one m_v in the time
        rate; default: each layer its own group.
    depths : array_like
        Depths (m) at which the excess pore pressure is returned.

    Returns
    -------
    StagedConsolidation
    """
    idx = np.asarray(sublayers.layer_index)
    h = np.asarray(sublayers.thickness, dtype=float)
    n = h.size
    s0 = np.asarray(sigma_v0, dtype=float).reshape(n)
    sp = np.asarray(sigma_p, dtype=float).reshape(n)
    nl = len(layers)
    flagged = (np.zeros(nl, bool) if free_draining_layers is None
               else np.asarray(free_draining_layers, bool).reshape(nl))
    groups = np.arange(nl) if rate_group is None else np.asarray(rate_group).reshape(nl)
    fd = flagged[idx] | np.array([layers[i].compressibility == "none" for i in idx])
    incs = [inc for inc in increments if np.any(np.asarray(inc.stress_change_kPa) != 0.0)]
    dep = np.asarray(depths, dtype=float).ravel()
    t_req = np.asarray(times, dtype=float).ravel()
    if not incs:
        z = np.zeros(0)
        t = np.unique(np.r_[0.0, t_req])
        return StagedConsolidation(t, np.zeros((t.size, n)), np.zeros((0, n)), z.reshape(0, n),
                                   z.reshape(0, n), np.zeros(n), np.maximum(sp, s0), dep,
                                   np.zeros((t.size, dep.size)), z.reshape(0, n), [])
    dsig = np.array([np.broadcast_to(np.asarray(inc.stress_change_kPa, float), (n,)) for inc in incs])
    starts = np.array([float(inc.start_days) for inc in incs])
    durs = np.array([float(inc.duration_days) for inc in incs])
    if np.any(np.diff(starts) < 0.0):
        raise InputError("load increments must be in order of start", field="increments")

    # the time grid: to the end of the history and the consolidation of the last increment
    mem0 = np.where(np.isnan(sp), s0, np.maximum(sp, s0))
    tangent0 = np.zeros(n)
    for i in np.unique(idx):
        sel = idx == i
        tangent0[sel] = _tangent_mv(layers[i], s0[sel], mem0[sel])
    k_of = _permeability(layers, idx, tangent0, fd, gamma_w)
    cv = np.where(fd, np.inf, k_of / (np.maximum(tangent0, 1e-300) * gamma_w))
    n_dr = int(drained_top) + int(drained_bottom)
    t_char = (float(np.sum(np.where(fd, 0.0, h / np.sqrt(cv)))) ** 2 / max(n_dr, 1) ** 2
              if n_dr or fd.any() else 0.0)
    t_last = max(float(t_req.max(initial=0.0)), float((starts + durs).max()))
    t_last = max(t_last, float((starts + durs).max()) + 3.0 * t_char)
    grid = fine_times(t_req, starts, starts + durs, t_last)
    nt = grid.size

    def applied(k: int, t: NDArray[np.float64]) -> NDArray[np.float64]:
        if durs[k] <= 0.0:
            return (t >= starts[k]).astype(float)
        return np.clip((t - starts[k]) / durs[k], 0.0, 1.0)

    degree = np.zeros((len(incs), nt, n))            # U_k,i(t): local degree of each increment
    u_dep = np.zeros((len(incs), nt, dep.size))
    ult = np.zeros((len(incs), n))
    memory = np.zeros((len(incs), n))
    reached = np.zeros((len(incs), n))
    mv_used = np.zeros((len(incs), n))
    mem = mem0.copy()
    level = np.zeros(n)
    s_prev = np.zeros(n)
    avg = None
    for k in range(len(incs)):
        before = grid <= starts[k] * (1.0 + 1e-12)
        eff = s0[None, :] + np.einsum("kti,ki->ti", degree[:k][:, before], dsig[:k]) if k else \
            np.broadcast_to(s0, (int(before.sum()), n))
        mem = np.maximum(mem, eff.max(axis=0))
        reached[k] = eff[-1]
        memory[k] = mem
        level = level + dsig[k]
        target = s0 + level
        ult[k] = h * _strain(layers, idx, s0, sp, target, np.maximum(mem, target))
        change = ult[k] - s_prev
        mv_used[k] = _increment_mv(layers, idx, groups, h, change, dsig[k], reached[k], mem)
        s_prev = ult[k]
        # the increment's own column: the degree of each sublayer after its start
        after = ~before | (grid == starts[k])
        tau = grid[after] - starts[k]
        k_col = _permeability(layers, idx, mv_used[k], fd, gamma_w)
        res = _column(h, mv_used[k], k_col, fd, tau, durs[k], dsig[k], drained_top, drained_bottom,
                      gamma_w, growth)
        if avg is None:
            zn = res.node_depth_m
            avg = _averaging(zn, sublayers.top, sublayers.bottom)
            at_dep = np.array([np.interp(dep, zn, np.eye(zn.size)[j]) for j in range(zn.size)]).T
        u_sub = res.excess_pore_pressure_kPa @ avg.T                         # (n_tau, n_sub)
        frac = applied(k, grid[after])[:, None]
        with np.errstate(divide="ignore", invalid="ignore"):
            d = np.where(np.abs(dsig[k]) > 0.0, (frac * dsig[k] - u_sub) / dsig[k], frac)
        d[tau <= 0.0] = 0.0
        degree[k][after] = d
        u_dep[k][after] = res.excess_pore_pressure_kPa @ at_dep.T
    changes = np.diff(np.vstack([np.zeros((1, n)), ult]), axis=0)          # (n_inc, n_sub)
    settle = np.einsum("kti,ki->ti", degree, changes)
    final_eff = s0 + level
    return StagedConsolidation(grid, settle, ult, memory, reached, ult[-1],
                               np.maximum(mem, final_eff), dep, u_dep.sum(axis=0), mv_used, incs)


def _strain(layers, idx, s0, sp, stress, memory) -> NDArray[np.float64]:
    out = np.zeros(s0.shape)
    for i in np.unique(idx):          # a few layers
        sel = idx == i
        out[sel] = path_strain(layers[i], s0[sel], sp[sel], stress[sel], memory[sel])
    return out


def _increment_mv(layers, idx, groups, h, change, dsig, reached, memory) -> NDArray[np.float64]:
    """m_v of one increment's column, shared by the sublayers of a rate group: the settlement
    change over the stress change (the secant along the path), or the tangent where the
    change is negligible."""
    tangent = np.zeros(h.shape)
    for i in np.unique(idx):
        sel = idx == i            # unloading: Cr (the memory counts as never reached)
        tangent[sel] = _tangent_mv(layers[i], reached[sel], np.where(dsig[sel] < 0.0, np.inf,
                                                                     memory[sel]))
    mv = np.zeros(h.shape)
    g_of = np.asarray(groups)[idx]
    for g in np.unique(g_of):
        sel = g_of == g
        num = float(np.sum(np.abs(change[sel])))
        den = float(np.sum(h[sel] * np.abs(dsig[sel])))
        tan = float(np.sum(h[sel] * tangent[sel]) / np.sum(h[sel]))
        mv[sel] = num / den if num > 0.0 and den > 0.0 else tan
    floor = 1e-6 * max(float(mv.max()), 1e-300)
    return np.maximum(mv, floor)


def _permeability(layers, idx, mv, fd, gamma_w) -> NDArray[np.float64]:
    """Vertical permeability (m/day) of each sublayer (:func:`solver.hand.rate.layer_permeability`)."""
    k = np.zeros(idx.shape)
    for i in np.unique(idx):
        sel = idx == i
        k[sel] = rate.layer_permeability(layers[i], mv[sel], gamma_w, required=not fd[sel].all())
    return k


def _column(h, mv, k, fd, tau, duration, dsig, drained_top, drained_bottom, gamma_w, growth
            ) -> rate.LayeredConsolidation:
    """One increment's linear column (sublayers as the column's layers, two elements each)."""
    mid = np.cumsum(h) - 0.5 * h
    piece = rate.LoadPiece(0.0, float(duration), lambda z: np.interp(z, mid, dsig))
    return rate.layered_consolidation(h, np.where(fd, 0.0, mv), np.where(fd, 0.0, k), tau,
                                      drained_top=drained_top, drained_bottom=drained_bottom,
                                      free_draining=fd, min_elements_per_layer=2, gamma_w=gamma_w,
                                      load_history=[piece], growth=growth, any_sign=True)
