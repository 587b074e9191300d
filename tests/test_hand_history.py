"""The hand estimate through a load history: surcharges placed and removed, stages that cross
sigma'_p, free-draining layers decided by their own consolidation time.

Every reference is computed here, independently of the module: the one-dimensional
settlement of Terzaghi & Peck (1948) (Cc above sigma'_p, Cr below it and on unloading), the
local degree of consolidation from Terzaghi's (1925) isochrone series with Olson's (1977)
ramp, and a two-layer solution by Laplace transform (Gray 1945 set the two-layer problem;
the transform solution here is derived in the test and inverted by the fixed Talbot method,
Abate & Valko 2004, Int. J. Numer. Meth. Eng. 60). All sites are invented.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.optimize import brentq

from solver.hand.estimate import hand_estimate
from solver.model import (Drainage, Layer, Material, Model, OedometerParameters, PointProbe,
                          Section, Stage, SurfaceLoad, Water)

GW = 9.81


# ----------------------------------------------------------------------------- references


def local_degree(z, h_dr, cv, t, ramp_days, n_terms=400):
    """Local degree of consolidation U_z = 1 - u / q of a layer drained at z = 0 and closed at
    z = h_dr (or the half of a layer drained on both faces), under a load ramped on over
    ``ramp_days`` (Terzaghi 1925 series with the ramp as a source, Olson 1977):
    dA_m/dT = -M^2 A_m + (2 / M) dq/dT for u = sum A_m sin(M Z), M = (2m + 1) pi / 2."""
    z = np.atleast_1d(np.asarray(z, float))[:, None]
    m = np.arange(n_terms)[None, :]
    M = (2 * m + 1) * np.pi / 2
    T = cv * t / h_dr ** 2
    Tc = cv * ramp_days / h_dr ** 2
    if T <= 0.0:
        return np.zeros(z.shape[0])
    if T <= Tc:
        A = 2.0 / (M ** 3 * Tc) * (1.0 - np.exp(-M ** 2 * T))
        applied = T / Tc
    else:
        A = 2.0 / (M ** 3 * Tc) * (np.exp(-M ** 2 * (T - Tc)) - np.exp(-M ** 2 * T))
        applied = 1.0
    return applied - np.sum(A * np.sin(M * z / h_dr), axis=1)


def strain_1d(s0, sp, s, memory, cc, cr, e0):
    """Vertical strain at effective stress s with the largest stress so far ``memory``
    (>= s, >= sp): Cr up to sigma'_p, Cc beyond, Cr back down (Terzaghi & Peck 1948)."""
    loaded = (cr * np.log10(np.minimum(memory, sp) / s0)
              + cc * np.log10(np.maximum(memory, sp) / sp))
    return (loaded - cr * np.log10(memory / s)) / (1.0 + e0)


def talbot(F, t, M=32):
    """Fixed Talbot inversion of a Laplace transform F(s) at t > 0 (Abate & Valko 2004)."""
    r = 2.0 * M / (5.0 * t)
    theta = np.arange(1, M) * np.pi / M
    cot = 1.0 / np.tan(theta)
    s = r * theta * (cot + 1j)
    sigma = theta + (theta * cot - 1.0) * cot
    total = 0.5 * F(np.array([r + 0j]))[0].real * np.exp(r * t)
    total += np.sum((np.exp(t * s) * F(s) * (1.0 + 1j * sigma)).real)
    return r / M * total


def two_layer_settlement(t, q, h1, m1, k1, h2, m2, k2):
    """Settlement of two layers under a sudden uniform load q, drained at the top, closed at
    the base. In the Laplace domain each layer has u = q/s + a cosh + b sinh with
    lambda_i = sqrt(s m_i gamma_w / k_i); with V the transform of u - q/s at the interface,
    continuity of u and of the flux k du/dz give
    V = -k1 l1 (q/s) csch(l1 h1) / (k1 l1 coth(l1 h1) + k2 l2 tanh(l2 h2)), and the settlement
    S = m1 (q/s - V) tanh(l1 h1 / 2) / l1 - m2 V tanh(l2 h2) / l2 (derived here)."""
    def F(s):
        l1 = np.sqrt(s * m1 * GW / k1)
        l2 = np.sqrt(s * m2 * GW / k2)
        e1, e2 = np.exp(-2 * l1 * h1), np.exp(-2 * l2 * h2)
        coth1 = (1 + e1) / (1 - e1)
        csch1 = 2 * np.exp(-l1 * h1) / (1 - e1)
        tanh2 = (1 - e2) / (1 + e2)
        tanh1h = (1 - np.exp(-l1 * h1)) / (1 + np.exp(-l1 * h1))
        V = -k1 * l1 * (q / s) * csch1 / (k1 * l1 * coth1 + k2 * l2 * tanh2)
        return m1 * (q / s - V) * tanh1h / l1 - m2 * V * tanh2 / l2
    return talbot(F, t)


# ----------------------------------------------------------------------------- models

CLAY = dict(cc=0.6, cr=0.06, e0=1.5, margin=30.0, gamma=17.0, cv=0.01, h=4.0)


def clay_model(stages, loads=(("surcharge", 60.0),), probes=None) -> Model:
    """4 m of lightly overconsolidated clay (sigma'_p - sigma'_v0 = 30 kPa), water table at the
    surface, drained top and base, c_v given; loads over the whole width (1D)."""
    c = CLAY
    clay = Material("clay", youngs_modulus=2000.0, poisson_ratio=0.3, unit_weight=c["gamma"],
                    permeability_x=1e-4,
                    oedometer=OedometerParameters(compression_index=c["cc"], recompression_index=c["cr"],
                                                  void_ratio=c["e0"], preconsolidation_margin=c["margin"],
                                                  consolidation_coefficient=c["cv"]))
    return Model("surcharge on a lightly overconsolidated clay (invented)", materials={"clay": clay},
                 layers=[Layer("clay", "clay", c["h"])],
                 section=Section(kind="ground", width=2.0, mesh_size=0.5),
                 water=Water(table_depth=0.0, unit_weight=GW), drainage=Drainage(top=True, base=True),
                 loads=[SurfaceLoad(n, -1.0, 1.0, q) for n, q in loads], stages=stages,
                 probes=probes or [PointProbe("top", 0.0, 0.0)])


def sublayer_mids(h, dz):
    n = int(round(h / dz))
    return (np.arange(n) + 0.5) * h / n, h / n


# ----------------------------------------------------------------------------- surcharge


def _surcharge_reference(factor_after: float):
    """The surcharge placed over 1 day, held until U = 90 %, then reduced to ``factor_after``
    over 1 day: t_r, settlement at t_r and the ultimate after the reduction."""
    c = CLAY
    z, dz = sublayer_mids(c["h"], 0.1)
    s0 = (c["gamma"] - GW) * z
    sp = s0 + c["margin"]
    h_dr = c["h"] / 2
    zz = np.where(z <= h_dr, z, c["h"] - z)         # both faces drain: distance to the nearer
    s60 = dz * strain_1d(s0, sp, s0 + 60.0, np.maximum(sp, s0 + 60.0), c["cc"], c["cr"], c["e0"])

    def mean_degree(t):
        return float(np.sum(s60 * local_degree(zz, h_dr, c["cv"], t, 1.0)) / np.sum(s60))
    t_r = brentq(lambda t: mean_degree(t) - 0.9, 2.0, 1e5, xtol=1e-9)
    reached = s0 + 60.0 * local_degree(zz, h_dr, c["cv"], t_r, 1.0)
    memory = np.maximum(sp, reached)
    final = s0 + 60.0 * factor_after
    ult = dz * strain_1d(s0, sp, final, np.maximum(memory, final), c["cc"], c["cr"], c["e0"])
    return t_r, z, zz, s60, ult


@pytest.mark.parametrize("factor_after", [0.0, 0.5])
def test_surcharge_held_to_90_percent_then_removed_or_halved(factor_after):
    c = CLAY
    t_r, z, zz, s60, ult = _surcharge_reference(factor_after)
    wait = t_r - 1.0
    m = clay_model([Stage("place", "load", 1.0, loads=["surcharge"]),
                    Stage("hold", "consolidate", wait),
                    Stage("reduce", "load", 1.0, loads=["surcharge"], factor=factor_after),
                    Stage("after", "consolidate", 20000.0)])
    times = [10.0, 100.0, t_r, t_r + 30.0, t_r + 300.0, t_r + 20001.0]
    p = hand_estimate(m, times=times, max_sublayer_thickness=0.1).probes["top"]
    # under the surcharge: the 1D settlement at 60 kPa (Terzaghi & Peck 1948)
    held = p.stages[1]
    assert held.ultimate_m == pytest.approx(float(np.sum(s60)), rel=1e-9)
    assert held.degree == pytest.approx(0.90, abs=2e-3)
    # the ultimate after the change: rebound on Cr from the effective stress reached at U = 90 %
    assert p.consolidation_settlement_m == pytest.approx(float(np.sum(ult)), rel=2e-3)
    assert p.stages[-1].settlement_m == pytest.approx(float(np.sum(ult)), rel=2e-3)
    if factor_after == 0.0:
        assert p.consolidation_settlement_m > 0.0                 # the load is gone, not the settlement
        rebound = 0.9 * np.sum(s60) - np.sum(ult)
        assert rebound > 0.0
        assert any("reduces the load after a degree of consolidation of 90%" in n for n in p.notes)
    # the curve, increment by increment with the local degrees (superposition)
    change = ult - s60
    for t, s in zip(times, p.settlement_m):
        ref = np.sum(s60 * local_degree(zz, 2.0, c["cv"], t, 1.0)
                     + change * local_degree(zz, 2.0, c["cv"], t - t_r, 1.0))
        assert s == pytest.approx(ref, rel=5e-3, abs=2e-4), t


def test_two_stages_crossing_the_preconsolidation_pressure():
    # 30 kPa then another 30 kPa, each held long enough to consolidate (T_v = 10): after the
    # first, the Cr settlement of 30 kPa (sigma'_p - sigma'_v0 = 30 kPa); after the second the
    # Cr part and the Cc part beyond sigma'_p (Terzaghi & Peck 1948).
    c = CLAY
    hold = 10.0 * (c["h"] / 2) ** 2 / c["cv"]
    m = clay_model([Stage("first", "load", 1.0, loads=["a"]), Stage("wait 1", "consolidate", hold),
                    Stage("second", "load", 1.0, loads=["b"]), Stage("wait 2", "consolidate", hold)],
                   loads=(("a", 30.0), ("b", 30.0)))
    p = hand_estimate(m, max_sublayer_thickness=0.1).probes["top"]
    z, dz = sublayer_mids(c["h"], 0.1)
    s0 = (c["gamma"] - GW) * z
    sp = s0 + c["margin"]
    s30 = np.sum(dz * strain_1d(s0, sp, s0 + 30.0, sp, c["cc"], c["cr"], c["e0"]))
    s60 = np.sum(dz * strain_1d(s0, sp, s0 + 60.0, s0 + 60.0, c["cc"], c["cr"], c["e0"]))
    first, second = p.stages[1], p.stages[3]
    assert first.ultimate_m == pytest.approx(s30, rel=1e-9)
    assert first.settlement_m == pytest.approx(s30, rel=1e-4)
    assert second.ultimate_m == pytest.approx(s60, rel=1e-9)
    assert second.settlement_m == pytest.approx(s60, rel=1e-4)
    assert s60 > 3.0 * s30                     # crossing sigma'_p shows in the second stage


# ----------------------------------------------------------------------------- free-draining


def two_layer_model(first_output=1.0):
    """6 m of clay (c_v = 0.05 m2/day) over 4 m of a clay 2,000 times less permeable, same m_v,
    drained at the top only; 50 kPa over the whole width, applied over 0.01 day."""
    mv, cv1 = 1e-3, 0.05
    k1 = cv1 * mv * GW
    mats = {n: Material(n, constrained_modulus=1.0 / mv, poisson_ratio=0.3, unit_weight=18.0,
                        permeability_x=k, oedometer=OedometerParameters(volume_compressibility=mv))
            for n, k in (("upper", k1), ("lower", k1 / 2000.0))}
    return Model("permeable but compressible clay over a tight clay (invented)", materials=mats,
                 layers=[Layer("upper", "upper", 6.0), Layer("lower", "lower", 4.0)],
                 section=Section(kind="ground", width=2.0, mesh_size=0.5),
                 water=Water(table_depth=0.0, unit_weight=GW), drainage=Drainage(top=True, base=False),
                 loads=[SurfaceLoad("q", -1.0, 1.0, 50.0)],
                 stages=[Stage("load", "load", 0.01, loads=["q"]), Stage("wait", "consolidate", 3000.0)],
                 probes=[PointProbe("top", 0.0, 0.0)]), (mv, k1)


def test_a_compressible_layer_over_a_tight_one_is_not_free_draining():
    m, (mv, k1) = two_layer_model()
    times = np.array([0.0, 1.0, 10.0, 142.0, 1000.0])
    h = hand_estimate(m, times=times)
    assert not any("free-draining" in n for n in h.notes)     # its own t99 is ~1,300 days
    p = h.probes["top"]
    assert p.settlement_m[0] == 0.0
    for t, s in zip(times[2:], p.settlement_m[2:]):
        ref = two_layer_settlement(t - 0.005, 50.0, 6.0, mv, k1, 4.0, mv, k1 / 2000.0)
        assert s == pytest.approx(ref, rel=0.01), t
    # the figures of the case: 0.040 m at 10 days and 0.150 m at 142 days (the upper layer's
    # Terzaghi curve, U = 2 sqrt(T / pi) and U(T = 0.197) = 50 %)
    assert p.settlement_m[2] == pytest.approx(0.040, abs=2e-3)
    assert p.settlement_m[3] == pytest.approx(0.150, abs=3e-3)
    assert p.t50_days > 142.0                  # 50 % of the whole 0.50 m comes later


def test_a_sand_open_to_the_drain_is_free_draining_and_says_why():
    m, _ = two_layer_model()
    m.materials["sand"] = Material("sand", constrained_modulus=40000.0, unit_weight=19.0,
                                   permeability_x=5.0)
    m.layers.insert(0, Layer("sand", "sand", 2.0))
    h = hand_estimate(m, times=[0.0, 1.0, 10.0, 142.0])
    note = next(n for n in h.notes if "'sand': free-draining" in n)
    assert "before the first time of the estimate, 1 days" in note
    assert not any("'upper': free-draining" in n for n in h.notes)
    # enclosed (no drained face reachable through quick layers): stays in the column
    m.drainage = Drainage(top=False, base=True)
    assert not any("free-draining" in n for n in hand_estimate(m, times=[0.0, 1.0]).notes)
    # a first time shorter than the sand's own consolidation: not free-draining
    m.drainage = Drainage(top=True, base=False)
    t99 = 1.781 * 2.0 ** 2 / (5.0 * 40000.0 / GW)          # Terzaghi 1925: T_v(99 %) = 1.78
    assert not any("free-draining" in n for n in hand_estimate(m, times=[0.0, 0.1 * t99]).notes)


def test_first_time_reaching_follows_a_coarsely_sampled_consolidation_curve():
    # Terzaghi (1925): T_v = 0.1967 at U = 50 %, 0.8481 at 90 % (series, 400 terms here);
    # sampled at 48 times over six decades (ratio 1.34), the time to reach them is within 0.2 %.
    from solver.hand.rate import first_time_reaching as time_to_reach
    tv = np.geomspace(1e-6, 7.0, 48)
    m = (2 * np.arange(400) + 1) * np.pi / 2
    u = 1.0 - np.sum(2.0 / m ** 2 * np.exp(-np.outer(tv, m ** 2)), axis=1)
    for level, ref in ((0.5, 0.19674), (0.9, 0.84805)):
        assert time_to_reach(tv, u, level) == pytest.approx(ref, rel=2e-3)
    assert math.isnan(time_to_reach(tv, u, 1.5))
