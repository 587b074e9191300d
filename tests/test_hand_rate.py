"""Time rate of consolidation (solver.hand.rate).

References: Terzaghi (1925) single layer, U(Tv) table Tv = 0.197 at 50 %, 0.848 at 90 %
(common textbook table, e.g. Holtz & Kovacs 1981); Olson (1977) ramp; Gray (1945) series
for two contiguous unlike layers, built here independently from its eigenfunctions.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.optimize import brentq

from solver.analytic import olson_ramp_average_degree, terzaghi_average_degree
from solver.errors import InputError
from solver.hand import rate
from solver.hand.settlement import Layer, settlement_under_probe

GW = 9.81


def gray_two_layer_degree(t, h1, h2, k1, k2, mv1, mv2, n_terms=400):
    """U(t) of two layers (top drained, base sealed), uniform initial excess pressure.

    Gray (1945), Trans. ASCE 110: in layer i, u = sum a_n phi_n exp(-w_n^2 t), with
    phi_1 = sin(b1 z), phi_2 = A cos(b2 (h1 + h2 - z)), b_i = w/sqrt(c_i). Continuity of u
    (sin(b1 h1) = A cos(b2 h2)) and of the flux k du/dz (k1 b1 cos(b1 h1) = A k2 b2 sin(b2 h2))
    give F(w) = k1 b1 cos(b1 h1) cos(b2 h2) - k2 b2 sin(b1 h1) sin(b2 h2) = 0; A is taken from
    whichever condition is well conditioned. Modes are orthogonal with weight mv
    (Sturm-Liouville).
    """
    c1, c2 = k1 / (mv1 * GW), k2 / (mv2 * GW)

    def parts(w):
        b1, b2 = w / np.sqrt(c1), w / np.sqrt(c2)
        return b1, b2, np.sin(b1 * h1), np.cos(b1 * h1), np.sin(b2 * h2), np.cos(b2 * h2)

    def f(w):
        b1, b2, s1, co1, s2, co2 = parts(w)
        return k1 * b1 * co1 * co2 - k2 * b2 * s1 * s2

    spacing = np.pi / (h1 / np.sqrt(c1) + h2 / np.sqrt(c2))
    grid = np.linspace(1e-9, spacing * (n_terms + 5), 200 * (n_terms + 5))
    vals = f(grid)
    change = np.flatnonzero(np.sign(vals[:-1]) != np.sign(vals[1:]))
    roots = [brentq(f, grid[i], grid[i + 1], xtol=1e-14) for i in change]
    roots = np.array(roots[:n_terms])
    b1, b2, s1, co1, s2, co2 = parts(roots)
    amp = np.where(np.abs(co2) > np.abs(s2), s1 / np.where(np.abs(co2) > np.abs(s2), co2, 1.0),
                   k1 * b1 * co1 / (k2 * b2 * np.where(np.abs(co2) > np.abs(s2), 1.0, s2)))
    # integrals of phi and phi^2 over each layer
    int1 = (1 - co1) / b1
    int2 = amp * s2 / b2
    sq1 = h1 / 2 - np.sin(2 * b1 * h1) / (4 * b1)
    sq2 = amp**2 * (h2 / 2 + np.sin(2 * b2 * h2) / (4 * b2))
    weight_int = mv1 * int1 + mv2 * int2
    norm = mv1 * sq1 + mv2 * sq2
    total = mv1 * h1 + mv2 * h2
    a = weight_int / norm   # expansion of u0 = 1
    t = np.asarray(t, dtype=float)
    return 1.0 - np.exp(-np.outer(t, roots**2)) @ (a * weight_int) / total


# ------------------------------------------------------------------ single layer


def test_terzaghi_table_time_factors():
    # Terzaghi (1925); common textbook table: Tv = 0.197 at U = 50 %, 0.848 at U = 90 %.
    tv = rate.time_for_degree([0.5, 0.9], cv=1.0, drainage_length=1.0)
    assert tv == pytest.approx([0.197, 0.848], abs=5e-4)


def test_single_layer_degree_uses_drainage_length():
    # Terzaghi (1925): t = Tv H_dr^2 / cv; double drainage halves the path.
    assert rate.drainage_length(8.0, True, True) == 4.0
    assert rate.drainage_length(8.0, False, True) == 8.0
    u = rate.degree_of_consolidation(0.197 * 16.0 / 0.1, cv=0.1, drainage_length=4.0)
    assert u == pytest.approx(0.5, abs=5e-4)
    with pytest.raises(InputError):
        rate.drainage_length(8.0, False, False)


def test_layered_model_reduces_to_terzaghi_for_one_layer():
    # Terzaghi (1925): a uniform layer drained at the top; U within 0.5 % of U and the
    # times to 50 % and 90 % within 0.5 % of Tv = 0.197 and 0.848 (table), exactly
    # 0.19674 and 0.84805 from the series.
    h, mv, k = 10.0, 1e-3, 1e-3 * GW          # cv = 1 m2/day, so t = 100 Tv days
    tv = np.geomspace(5e-3, 2.0, 30)
    res = rate.layered_consolidation([h], [mv], [k], tv * h * h, drained_top=True)
    u = terzaghi_average_degree(tv)
    assert np.max(np.abs(res.average_degree - u) / u) < 5e-3
    assert res.t50_days / 100.0 == pytest.approx(0.197, rel=5e-3)
    assert res.t90_days / 100.0 == pytest.approx(0.848, rel=5e-3)
    assert res.t50_days / 100.0 == pytest.approx(0.19674, rel=1e-3)
    assert res.final_settlement_m == pytest.approx(mv * 1.0 * h)


def test_double_drainage_matches_terzaghi_with_half_thickness():
    # Terzaghi (1925): double drainage of 2H behaves as single drainage of H.
    tv = np.array([0.02, 0.1, 0.3, 0.8])
    res = rate.layered_consolidation([8.0], [2e-3], [2e-3 * GW * 0.05], tv * 16.0 / 0.05,
                                     drained_top=True, drained_bottom=True)
    np.testing.assert_allclose(res.average_degree, terzaghi_average_degree(tv), atol=1e-3)


def test_ramp_loading_matches_olson():
    # Olson (1977), J. Geotech. Eng. Div. ASCE 103: load ramped to full value at Tvc = 0.4.
    tv = np.array([0.05, 0.2, 0.4, 0.6, 1.0, 1.5])
    res = rate.layered_consolidation([5.0], [1e-3], [1e-3 * GW], tv * 25.0, construction_days=0.4 * 25.0)
    np.testing.assert_allclose(res.average_degree, olson_ramp_average_degree(tv, 0.4), atol=1e-3)
    ramp = rate.ramp_degree_of_consolidation(tv * 25.0, 1.0, 5.0, 10.0)
    np.testing.assert_allclose(ramp, olson_ramp_average_degree(tv, 0.4))


# -------------------------------------------------------------------- two layers

TWO = dict(h1=4.0, h2=6.0, k1=1e-3, k2=1e-4, mv1=1e-3, mv2=0.5e-3)   # c1 = 0.1019, c2 = 0.0204 m2/day


def test_gray_series_of_two_equal_layers_is_terzaghi():
    # The reference itself: two identical layers are one layer (Terzaghi 1925).
    t = np.array([10.0, 100.0, 1000.0])
    u = gray_two_layer_degree(t, 4.0, 6.0, 1e-3, 1e-3, 1e-3, 1e-3)
    np.testing.assert_allclose(u, terzaghi_average_degree(t * (1e-3 / (1e-3 * GW)) / 100.0), atol=1e-10)


def test_two_layers_match_gray_series():
    # Gray (1945) series (built above) for a stiff-pervious layer over a soft-tight one.
    times = np.array([5.0, 30.0, 100.0, 300.0, 1000.0, 3000.0])
    ref = gray_two_layer_degree(times, **TWO)
    res = rate.layered_consolidation([4.0, 6.0], [1e-3, 0.5e-3], [1e-3, 1e-4], times)
    np.testing.assert_allclose(res.average_degree, ref, atol=5e-4)


def test_two_layers_are_bounded_by_the_single_layer_cases():
    # Sensible result (common practice): the stack consolidates between a 10 m layer with
    # the faster and one with the slower cv (same mv, so k sets cv).
    times = np.geomspace(1.0, 1e4, 25)
    both = rate.layered_consolidation([4.0, 6.0], [1e-3, 1e-3], [1e-3, 1e-4], times).average_degree
    fast = rate.degree_of_consolidation(times, 1e-3 / (1e-3 * GW), 10.0)
    slow = rate.degree_of_consolidation(times, 1e-4 / (1e-3 * GW), 10.0)
    assert np.all(both <= fast + 1e-4) and np.all(both >= slow - 1e-4)
    assert np.all(np.diff(both) >= 0.0)


def test_two_layer_error_falls_with_mesh_refinement():
    # Gray (1945) series as reference; the lumped linear-element scheme is second order in
    # the element size (fitted on log h vs log error).
    times = np.array([20.0, 200.0, 2000.0])
    ref = gray_two_layer_degree(times, **TWO)
    sizes = np.array([1.0, 0.5, 0.25])
    errs = []
    for size in sizes:
        res = rate.layered_consolidation([4.0, 6.0], [1e-3, 0.5e-3], [1e-3, 1e-4], times, element_size=size,
                                         min_elements_per_layer=1, growth=1.005)
        errs.append(np.max(np.abs(res.average_degree - ref)))
    order = np.polyfit(np.log(sizes), np.log(errs), 1)[0]
    assert order > 1.6
    assert errs[-1] < 2e-3


def test_sealed_column_keeps_its_pore_water():
    # Conservation (mass balance; common practice): with no drained face nothing leaves,
    # U stays 0 and the excess pore pressure stays at the load.
    res = rate.layered_consolidation([3.0, 2.0], [1e-3, 2e-3], [1e-3, 1e-5], [10.0, 100.0],
                                     drained_top=False, drained_bottom=False, load_increase=25.0)
    np.testing.assert_allclose(res.average_degree, 0.0, atol=1e-12)
    np.testing.assert_allclose(res.excess_pore_pressure_kPa, 25.0, rtol=1e-12)
    assert np.isnan(res.t50_days)


def test_sand_layer_drains_the_clay_on_either_side():
    # A free-draining sand layer between two 5 m clay layers drained top and bottom makes
    # two layers each drained on both faces, H_dr = 2.5 m (Terzaghi 1925).
    tv = np.array([0.05, 0.2, 0.5])
    cv = 0.02
    times = tv * 2.5**2 / cv
    k = cv * 1e-3 * GW
    res = rate.layered_consolidation([5.0, 1.0, 5.0], [1e-3, 0.0, 1e-3], [k, 0.0, k],
                                     times, drained_top=True, drained_bottom=True,
                                     free_draining=[False, True, False])
    np.testing.assert_allclose(res.average_degree, terzaghi_average_degree(tv), atol=1e-3)


def test_probe_consolidation_of_mv_clay_is_terzaghi():
    # An mv clay under a uniform load is Terzaghi's problem (cv = k/(mv gamma_w)); the sand
    # above drains the top.
    layers = [Layer("sand", 2.0, 19.0), Layer("clay", 8.0, 17.0, mv=1e-3, permeability=0.5e-3 * GW)]
    probe = settlement_under_probe(layers, 30.0, 1.0, max_sublayer_thickness=0.5)
    tv = np.array([0.05, 0.3, 1.0])
    res = rate.probe_consolidation(layers, probe, tv * 64.0 / 0.5, drained_top=True, drained_bottom=False)
    np.testing.assert_allclose(res.average_degree, terzaghi_average_degree(tv), atol=1.5e-3)
    np.testing.assert_allclose(res.settlement_m, res.average_degree * 1e-3 * 30.0 * 8.0)


def test_probe_consolidation_needs_permeability():
    layers = [Layer("clay", 8.0, 17.0, mv=1e-3)]
    probe = settlement_under_probe(layers, 30.0, 0.0)
    with pytest.raises(InputError) as err:
        rate.probe_consolidation(layers, probe, [10.0])
    assert err.value.field == "layers.clay.permeability"


def test_finite_difference_degree_starts_at_zero_and_follows_terzaghi_at_once():
    # Terzaghi (1925): U(0) = 0 and U = 2 sqrt(Tv / pi) at small Tv; the drained node's lumped
    # storage must not show as consolidation before any time has passed.
    h, mv, cv = 5.0, 1e-3, 0.5
    tv = np.array([0.0, 1e-4, 1e-3, 5e-3])
    res = rate.layered_consolidation([h], [mv], [cv * mv * GW], tv * h * h / cv, depths=[0.0])
    assert res.average_degree[0] == 0.0 and res.history_degree[0] == 0.0
    assert res.average_degree_below[0, 0] == 0.0
    np.testing.assert_allclose(res.average_degree[1:], 2.0 * np.sqrt(tv[1:] / np.pi), rtol=0.01)
