"""Closed forms of Modified Cam Clay at a point (solver/analytic/critical_state.py): each
formula against the relations it is derived from.

Roscoe & Burland 1968 = the model (ellipse f = q^2/M^2 + p'(p' - p'_c)); Wood 1990 = Soil
Behaviour and Critical State Soil Mechanics (chapters from memory).
"""

import numpy as np
import pytest

from solver.analytic import (AnalyticArgumentError, critical_state_void_ratio,
                             drained_triaxial_critical_state, one_dimensional_compression,
                             undrained_critical_state, undrained_mean_stress,
                             void_ratio_on_line, volumetric_strain_on_ellipse, yield_function)

LAM, KAP, M, E0 = 0.2, 0.04, 1.2, 1.5


def test_compression_line_drops_by_its_slope_per_natural_log_cycle():
    # e = e_ref - slope ln(p'/p_ref) (Wood 1990, ch. 4).
    e = void_ratio_on_line([100.0, 100.0 * np.e, 100.0 * np.e ** 2], 100.0, 1.5, LAM)
    np.testing.assert_allclose(e, [1.5, 1.5 - LAM, 1.5 - 2 * LAM], rtol=1e-14)


def test_critical_state_line_is_where_the_unloading_line_from_the_ncl_meets_p_c_over_two():
    # The ellipse through p'_c on the NCL meets the CSL at p'_c / 2; between them the point
    # is elastic, on the unloading line of slope kappa (Roscoe & Burland 1968; Wood 1990,
    # ch. 6).
    pc = np.array([50.0, 200.0, 800.0])
    e_pc = void_ratio_on_line(pc, 100.0, E0, LAM)
    e_cs = critical_state_void_ratio(pc / 2, 100.0, E0, LAM, KAP)
    np.testing.assert_allclose(e_cs, e_pc + KAP * np.log(2.0), rtol=1e-14)
    # Parallel to the NCL.
    np.testing.assert_allclose(np.diff(e_cs) / np.diff(np.log(pc)), -LAM, rtol=1e-12)


def test_yield_function_vanishes_on_the_ellipse_and_is_negative_inside():
    pc = 100.0
    p = np.linspace(0.0, pc, 11)
    q = M * np.sqrt(p * (pc - p))
    np.testing.assert_allclose(yield_function(p, q, pc, M), 0.0, atol=1e-10)
    assert yield_function(pc / 2, M * pc / 2, pc, M) == pytest.approx(0.0, abs=1e-10)
    assert yield_function(50.0, 10.0, pc, M) < 0 < yield_function(50.0, 70.0, pc, M)


def test_drained_critical_state_lies_on_the_slope_three_path_and_the_csl():
    cs = drained_triaxial_critical_state(100.0, M)
    assert cs.q == pytest.approx(M * cs.p, rel=1e-14)
    assert cs.q == pytest.approx(3.0 * (cs.p - 100.0), rel=1e-14)
    with pytest.raises(AnalyticArgumentError):
        drained_triaxial_critical_state(100.0, 3.0)


@pytest.mark.parametrize("ocr", [1.0, 1.3, 2.0, 3.0])
def test_undrained_path_keeps_volume_on_the_ellipse(ocr):
    # Constant volume: kappa ln p' + (lambda - kappa) ln p'_c = const (Wood 1990, ch. 6),
    # with p'_c from the ellipse through (p', q).
    p0, pc0 = 100.0 / ocr, 100.0
    eta_y = M * np.sqrt(ocr - 1.0)
    eta = np.linspace(min(eta_y, M), M, 20)
    p = undrained_mean_stress(eta, p0, ocr, M, LAM, KAP)
    q = eta * p
    pc = p + q ** 2 / (M ** 2 * p)
    np.testing.assert_allclose(KAP * np.log(p) + (LAM - KAP) * np.log(pc),
                               KAP * np.log(p0) + (LAM - KAP) * np.log(pc0), rtol=1e-13)
    if ocr <= 2.0:                       # the path starts where p' = p'_0 meets the ellipse
        np.testing.assert_allclose(p[0], p0, rtol=1e-13)
    np.testing.assert_allclose(yield_function(p, q, pc, M), 0.0, atol=1e-9)


def test_undrained_critical_state_and_its_special_cases():
    lam_ratio = (LAM - KAP) / LAM
    cs = undrained_critical_state(100.0, 1.0, M, LAM, KAP)
    np.testing.assert_allclose(cs.p, 100.0 * 0.5 ** lam_ratio, rtol=1e-14)
    assert cs.q == pytest.approx(M * cs.p, rel=1e-14)
    # R0 = 2: the elastic path meets the ellipse at its top, on the CSL: p'_f = p'_0.
    assert undrained_critical_state(50.0, 2.0, M, LAM, KAP).p == pytest.approx(50.0, rel=1e-14)
    with pytest.raises(AnalyticArgumentError):
        undrained_mean_stress(0.5, 100.0, 0.8, M, LAM, KAP)


def test_volumetric_strain_on_the_ncl_is_lambda_over_one_plus_e0_per_log_cycle():
    p = np.array([100.0, 200.0, 400.0])
    ev = volumetric_strain_on_ellipse(p, p, 100.0, 100.0, LAM, KAP, E0)
    np.testing.assert_allclose(ev, LAM * np.log(p / 100.0) / (1 + E0), rtol=1e-14)
    # Elastic unloading at constant p'_c: kappa.
    ev = volumetric_strain_on_ellipse(50.0, 100.0, 100.0, 100.0, LAM, KAP, E0)
    assert ev == pytest.approx(KAP * np.log(0.5) / (1 + E0), rel=1e-14)


def test_one_dimensional_compression_drops_cc_per_log10_cycle():
    # e - log sigma'_v rule (common practice).
    e, strain = one_dimensional_compression([100.0, 1000.0, 10000.0], 100.0, 1.2, 0.5)
    np.testing.assert_allclose(e, [1.2, 0.7, 0.2], rtol=1e-14)
    np.testing.assert_allclose(strain, (1.2 - e) / 2.2, rtol=1e-14)


@pytest.mark.parametrize("call", [
    lambda: critical_state_void_ratio(100.0, 100.0, E0, 0.04, 0.2),      # kappa > lambda
    lambda: void_ratio_on_line(-1.0, 100.0, E0, LAM),
    lambda: one_dimensional_compression(100.0, 0.0, E0, 0.5),
    lambda: yield_function(1.0, 1.0, 1.0, -1.0),
])
def test_closed_forms_refuse_nonsense(call):
    with pytest.raises(AnalyticArgumentError):
        call()
