"""Settlement by the hand method (solver.hand.settlement, solver.hand.parameters).

The worked examples are invented; every number is worked by hand in the comments with the
formulas of Terzaghi & Peck (1948) / Holtz & Kovacs (1981):
    s = H/(1+e0) [Cr log10(min(sf, sp)/s0) + Cc log10(max(sf, sp)/sp)].
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy import integrate

from solver.errors import InputError
from solver.hand import parameters as par
from solver.hand import settlement as se
from solver.hand.load_objects import StripLoad
from solver.hand.stress import uniform_strip_stress

# One sublayer: H = 4 m, e0 = 1.2, Cc = 0.45, Cr = 0.05, sigma'_v0 = 50 kPa, delta = 50 kPa,
# so sigma'_f = 100 kPa and H/(1+e0) = 4/2.2 = 1.818182 m.
H, E0, CC, CR, S0, DS = 4.0, 1.2, 0.45, 0.05, 50.0, 50.0


def test_normally_consolidated_worked_example():
    # NC, sigma'_p = 50 = sigma'_v0:  s = 1.818182 * 0.45 * log10(100/50)
    #                                   = 1.818182 * 0.45 * 0.301030 = 0.246297 m
    s = se.consolidation_settlement(H, E0, CC, CR, S0, DS, sigma_p=50.0)
    assert s == pytest.approx(0.246297, abs=1e-6)


def test_overconsolidated_worked_example():
    # OC, sigma'_p = 120 > sigma'_f = 100: s = 1.818182 * 0.05 * log10(2)
    #                                        = 1.818182 * 0.0150515 = 0.027366 m
    s = se.consolidation_settlement(H, E0, CC, CR, S0, DS, sigma_p=120.0)
    assert s == pytest.approx(0.027366, abs=1e-6)


def test_crossing_preconsolidation_worked_example():
    # sigma'_p = 80 between 50 and 100:
    #   s = 1.818182 [0.05 log10(80/50) + 0.45 log10(100/80)]
    #     = 1.818182 [0.05 * 0.204120 + 0.45 * 0.096910]
    #     = 1.818182 [0.010206 + 0.043610] = 1.818182 * 0.053816 = 0.097846 m
    s = se.consolidation_settlement(H, E0, CC, CR, S0, DS, sigma_p=80.0)
    assert s == pytest.approx(0.097846, abs=1e-6)


def test_preconsolidation_given_as_ocr_or_margin_agree():
    # sigma'_p = 80 kPa is OCR = 80/50 = 1.6, or a margin (pre-overburden pressure) of 30 kPa.
    a = se.preconsolidation_pressure(S0, sigma_p=80.0)
    b = se.preconsolidation_pressure(S0, ocr=1.6)
    c = se.preconsolidation_pressure(S0, pre_overburden_pressure=30.0)
    np.testing.assert_allclose([a, b, c], 80.0)
    with pytest.raises(InputError):
        se.preconsolidation_pressure(S0, ocr=1.6, sigma_p=80.0)


def test_mv_worked_example():
    # s = mv * dsigma * H = 0.5e-3 1/kPa * 50 kPa * 4 m = 0.100 m
    assert se.mv_settlement(4.0, 0.5e-3, 50.0) == pytest.approx(0.100, abs=1e-12)


def test_unloading_heaves_on_the_recompression_line():
    # sigma'_f = 25 < sigma'_v0: s = 1.818182 * 0.05 * log10(25/50) = -0.027366 m (heave)
    assert se.consolidation_settlement(H, E0, CC, CR, S0, -25.0, 80.0) == pytest.approx(-0.027366, abs=1e-6)


# ----------------------------------------------------------- profile under a probe


def two_layers(**clay):
    sand = se.Layer("sand", thickness=2.0, unit_weight=20.0, unit_weight_above_water=18.0, permeability=10.0)
    params = dict(thickness=6.0, unit_weight=16.0, void_ratio=1.0, compression_index=0.3,
                  recompression_index=0.03, pre_overburden_pressure=20.0, cv=0.05)
    params.update(clay)
    return [sand, se.Layer("clay", **params)]


def test_effective_stress_worked_example():
    # Water table at 2 m (sand dry above, 18 kN/m3); clay 16 kN/m3, gamma_w = 9.81:
    #   z = 3.5: 18*2 + (16 - 9.81)*1.5 = 36 + 9.285 = 45.285 kPa
    #   z = 6.5: 36 + 6.19*4.5 = 36 + 27.855 = 63.855 kPa
    #   z = 1.0: 18*1 = 18 kPa
    s0 = se.vertical_effective_stress([1.0, 3.5, 6.5], two_layers(), water_table_depth=2.0)
    np.testing.assert_allclose(s0, [18.0, 45.285, 63.855], atol=1e-9)


def test_water_table_inside_a_layer_and_ponded_water():
    # Water table at 1 m inside the sand: z = 2: 18*1 + (20 - 9.81)*1 = 28.19 kPa.
    # Free water 3 m deep over the ground: effective stress is as with the table at 0.
    layers = two_layers()
    assert se.vertical_effective_stress(2.0, layers, 1.0) == pytest.approx(28.19)
    np.testing.assert_allclose(se.vertical_effective_stress([1.0, 5.0], layers, -3.0),
                               se.vertical_effective_stress([1.0, 5.0], layers, 0.0))


def test_probe_settlement_worked_example_with_margin():
    # Uniform 40 kPa load, clay in two 3 m sublayers (mid 3.5 and 6.5 m), POP = 20 kPa,
    # Cc = 0.3, Cr = 0.03, e0 = 1.0, so H/(1+e0) = 1.5 m:
    #   top: s0 = 45.285, sp = 65.285, sf = 85.285
    #        s = 1.5 [0.03 log10(1.441647) + 0.3 log10(1.306349)]
    #          = 1.5 [0.03 * 0.158859 + 0.3 * 0.116059] = 1.5 * 0.039583 = 0.059375 m
    #   bottom: s0 = 63.855, sp = 83.855, sf = 103.855
    #        s = 1.5 [0.03 log10(1.313210) + 0.3 log10(1.238507)]
    #          = 1.5 [0.03 * 0.118334 + 0.3 * 0.092898] = 1.5 * 0.031419 = 0.047129 m
    #   sand: incompressible, 0.  total = 0.106505 m
    layers = two_layers()
    probe = se.settlement_under_probe(layers, 40.0, water_table_depth=2.0, max_sublayer_thickness=3.0)
    clay = probe.layer_index == 1
    np.testing.assert_allclose(probe.settlement_m[clay], [0.059375, 0.047129], atol=1e-6)
    assert probe.total_settlement_m == pytest.approx(0.106505, abs=2e-6)
    assert probe.layer_settlement_m(2)[0] == 0.0
    assert "qualified engineer" in probe.caution


def test_probe_settlement_converges_with_thinner_sublayers():
    # Mid-sublayer stresses (common practice) converge to the depth integral as the
    # sublayers get thinner; reference by scipy quadrature of the strain over the clay.
    layers = two_layers(ocr=1.0, pre_overburden_pressure=None)
    load = StripLoad(0.0, 6.0, 60.0)
    f = lambda z: load.vertical_stress(0.0, z)  # noqa: E731

    def strain(z):
        s0 = se.vertical_effective_stress(z, layers, 2.0)
        return 0.3 / 2.0 * np.log10((s0 + f(z)) / s0)
    ref = integrate.quad(strain, 2.0, 8.0, epsabs=1e-12)[0]
    errs = [abs(se.settlement_under_probe(layers, f, 2.0, h).total_settlement_m - ref)
            for h in (1.0, 0.5, 0.25)]
    assert errs[2] < 1e-4 * ref
    rate = np.polyfit(np.log([1.0, 0.5, 0.25]), np.log(errs), 1)[0]
    assert rate == pytest.approx(2.0, abs=0.3)   # midpoint rule is second order


def test_split_layers_keeps_layer_boundaries():
    subs = se.split_layers(two_layers(), max_thickness=0.7)
    assert subs.layer_index.tolist() == [0] * 3 + [1] * 9
    assert np.isclose(subs.bottom[2], 2.0) and np.all(subs.thickness <= 0.7)


def test_missing_parameters_name_the_layer_and_field():
    with pytest.raises(InputError) as err:
        se.Layer("clay", 5.0, 16.0, void_ratio=1.0, compression_index=0.3, recompression_index=0.03)
    assert err.value.field == "layers.clay.preconsolidation_pressure"
    with pytest.raises(InputError) as err:
        se.Layer("silt", 5.0, 16.0, compression_index=0.3, recompression_index=0.03, ocr=1.0)
    assert err.value.field == "layers.silt.void_ratio" and "silt" in str(err.value)
    with pytest.raises(InputError):
        se.Layer("clay", 5.0, 16.0, mv=1e-3, compression_index=0.3)
    with pytest.raises(InputError) as err:
        se.Layer("peat", -1.0, 11.0)
    assert err.value.field == "layers.peat.thickness"


# ----------------------------------------------------------------------- secondary


def test_secondary_compression_worked_example():
    # C_alpha = 0.02, e_p = 1.1, H = 4 m: at t = 10 t_p, s = 0.02/2.1 * 4 * log10(10) = 0.038095 m;
    # nothing before t_p.
    s = se.secondary_compression_settlement(4.0, 0.02, 1.1, [50.0, 100.0, 1000.0], 100.0)
    np.testing.assert_allclose(s, [0.0, 0.0, 0.038095], atol=1e-6)


def test_secondary_under_probe_uses_void_ratio_at_end_of_primary():
    # e_p = e0 - (1+e0) s/H per sublayer (definition of strain; common practice).
    layers = [se.Layer("clay", 4.0, 16.0, void_ratio=1.2, mv=1e-3, secondary_compression_index=0.02)]
    probe = se.settlement_under_probe(layers, 50.0, 0.0, max_sublayer_thickness=4.0)
    # s = 1e-3 * 50 * 4 = 0.2 m, e_p = 1.2 - 2.2 * 0.05 = 1.09; at 10 t_p: 0.02/2.09*4 = 0.038278 m
    s = se.secondary_settlement_under_probe(layers, probe, 1000.0, 100.0)
    assert s == pytest.approx(0.038278, abs=1e-6)


# ----------------------------------------------------------------------- immediate


def test_circle_immediate_half_space_factors():
    # Timoshenko & Goodier (1951); Poulos & Davis (1974): flexible centre 2 q a (1-nu^2)/E,
    # edge 4/pi, mean 16/(3 pi), rigid pi/2 (times q a (1-nu^2)/E).
    k = 100.0 * 2.0 * 0.75 / 5000.0
    got = [se.circle_immediate_settlement(100.0, 2.0, 5000.0, 0.5, position=p)
           for p in ("centre", "edge", "average", "rigid")]
    np.testing.assert_allclose(got, np.array([2.0, 4 / np.pi, 16 / (3 * np.pi), np.pi / 2]) * k)


def test_circle_axis_displacement_equals_integrated_boussinesq():
    # Boussinesq (1885) point-load displacement w = P (1+nu)/(2 pi E R) [2(1-nu) + z^2/R^2]
    # integrated over the disc (ring by ring).
    q, a, e, nu = 80.0, 1.5, 8000.0, 0.3
    for z in (0.0, 0.7, 3.0):
        def ring(rho):
            big_r = np.hypot(rho, z)
            point = q * (1 + nu) / (2 * np.pi * e * big_r) * (2 * (1 - nu) + z * z / big_r**2)
            return 2 * np.pi * rho * point
        ref = integrate.quad(ring, 0.0, a, epsabs=1e-14)[0]
        assert se.circle_axis_displacement(z, q, a, e, nu) == pytest.approx(ref, rel=1e-9)


def test_circle_finite_layer_tends_to_half_space():
    # Steinbrenner (1934) approximation: a thicker layer tends to the half-space value, and
    # a thin one settles less.
    half = se.circle_immediate_settlement(100.0, 2.0, 5000.0)
    thick = se.circle_immediate_settlement(100.0, 2.0, 5000.0, layer_thickness=2e4)
    thin = se.circle_immediate_settlement(100.0, 2.0, 5000.0, layer_thickness=2.0)
    assert thick == pytest.approx(half, rel=1e-3) and thin < 0.6 * half


def test_strip_immediate_closed_form_equals_integrated_strain():
    # eps_z = (1+nu)/E [(1-nu) sigma_z - nu sigma_x] (plane strain), integrated numerically
    # over depth with the Carothers (1920) stresses; at the centre and nu = 0.5 the closed
    # form is 3 q b ln(1 + h^2/b^2) / (2 pi E).
    q, b, h, e = 100.0, 1.5, 6.0, 6000.0
    for nu in (0.5, 0.3):
        for x in (0.0, 1.0, 1.5, 4.0):
            def eps(z):
                sz, sx = uniform_strip_stress(x, z, 2 * b, q)
                return (1 + nu) / e * ((1 - nu) * sz - nu * sx)
            ref = integrate.quad(eps, 0.0, h, epsabs=1e-13, limit=200)[0]
            assert se.strip_immediate_settlement(x, q, 2 * b, h, e, nu) == pytest.approx(ref, abs=1e-9)
    centre = 3 * q * b * np.log(1 + h * h / (b * b)) / (2 * np.pi * e)
    assert se.strip_immediate_settlement(0.0, q, 2 * b, h, e) == pytest.approx(centre, rel=1e-12)


def test_rigid_strip_lies_between_flexible_edge_and_centre():
    # Common practice: a rigid strip settles about the flexible mean.
    q, w, h, e = 100.0, 3.0, 6.0, 6000.0
    rigid = se.rigid_strip_immediate_settlement(q, w, h, e)
    edge, centre = se.strip_immediate_settlement([1.5, 0.0], q, w, h, e)
    assert edge < rigid < centre
    assert se.chart_immediate_settlement(100.0, 3.0, 6000.0, 0.9, 0.5) == pytest.approx(0.0225)


# ---------------------------------------------------------------------- parameters


def test_parameter_conversions():
    # E_oed = E(1-nu)/((1+nu)(1-2nu)): 3000*0.7/(1.3*0.4) = 4038.46 kPa, mv = 2.4762e-4 1/kPa
    # (Timoshenko & Goodier 1951); cv = k/(mv gamma_w) (Terzaghi 1925):
    # 1e-4/(2.4762e-4*9.81) = 0.041167 m2/day; Cc = 2.302585 lambda (Schofield & Wroth 1968).
    assert par.constrained_modulus(3000.0, 0.3) == pytest.approx(4038.46, abs=0.01)
    mv = par.mv_from_elastic(3000.0, 0.3)
    assert mv == pytest.approx(2.4762e-4, rel=1e-4)
    cv = par.cv_from_permeability(1e-4, mv)
    assert cv == pytest.approx(0.041167, rel=1e-4)
    assert par.permeability_from_cv(cv, mv) == pytest.approx(1e-4)
    assert par.cc_from_lambda(0.2) == pytest.approx(0.460517, abs=1e-6)
    assert par.cr_from_kappa(0.02) == pytest.approx(0.0460517, abs=1e-7)
    with pytest.raises(InputError):
        par.constrained_modulus(3000.0, 0.5)


def test_secant_mv_from_cc_reproduces_the_log_settlement():
    # Definition of mv and Cc (Terzaghi & Peck 1948): mv dsigma H equals the NC settlement.
    mv = par.mv_from_compression_index(CC, E0, S0, DS)
    nc = se.consolidation_settlement(H, E0, CC, CR, S0, DS, S0)
    assert se.mv_settlement(H, mv, DS) == pytest.approx(nc)
