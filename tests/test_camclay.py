"""Modified Cam Clay at material points: laboratory paths against closed forms, the consistent
tangent against finite differences, batches against single points, and bad input.

Sources beside each check. Wood 1990 = D. M. Wood, Soil Behaviour and Critical State Soil
Mechanics, Cambridge University Press (chapter numbers from memory).
"""

import numpy as np
import pytest

from solver.errors import InputError, SolverError
from solver.materials import driver
from solver.materials.camclay import CamClayMaterial, CamClayState, invariants, k0_stress

LAM, KAP, M, E0 = 0.2, 0.04, 1.2, 1.5


def clay(**kw):
    args = dict(lambda_=LAM, kappa=KAP, e0=E0, M=M, poisson_ratio=0.25, name="clay")
    args.update(kw)
    return CamClayMaterial(**args)


def isotropic_state(mat, p0, pc0, e0=E0):
    return mat.initial_state(k0_stress(p0, 1.0), pc0, e0)


# ------------------------------------------------------------------ laboratory paths
def test_isotropic_compression_follows_ncl_and_unloading_follows_kappa_line():
    # Wood 1990, ch. 4 (from memory): NCL e = N - lambda ln p', unloading-reloading
    # e = e_k - kappa ln p'. With the exponential update both hold exactly for any step size,
    # so a coarse path (a few large steps) is as exact as a fine one.
    mat = clay()
    st = isotropic_state(mat, 100.0, 100.0)
    N = E0 + LAM * np.log(100.0)
    for n in (3, 30):
        path = np.concatenate([np.linspace(100, 400, n + 1)[1:],     # NCL
                               np.linspace(400, 50, n + 1)[1:],      # unload
                               np.linspace(50, 400, n + 1)[1:],      # reload, elastic
                               np.linspace(400, 800, n + 1)[1:]])    # NCL again
        h = driver.isotropic(mat, st, path)
        p, e = h.p[:, 0], h.void_ratio[:, 0]
        np.testing.assert_allclose(p[1:], path, rtol=1e-9)
        ncl1, swell, ncl2 = slice(0, n + 1), slice(n, 3 * n + 1), slice(3 * n, 4 * n + 1)
        np.testing.assert_allclose(e[ncl1], N - LAM * np.log(p[ncl1]), atol=1e-10)
        e_k = N - LAM * np.log(400.0) + KAP * np.log(400.0)
        np.testing.assert_allclose(e[swell], e_k - KAP * np.log(p[swell]), atol=1e-10)
        np.testing.assert_allclose(e[ncl2], N - LAM * np.log(p[ncl2]), atol=1e-10)
        # The ellipse stays at its largest past size while unloading and reloading.
        np.testing.assert_allclose(h.pc[swell, 0], 400.0, rtol=1e-10)
        # Small-strain mass balance: e = e0 - (1 + e0) eps_v.
        np.testing.assert_allclose(e, E0 - (1 + E0) * h.volumetric_strain[:, 0], atol=1e-12)


def test_drained_triaxial_path_has_slope_three_and_ends_at_critical_state():
    # Wood 1990, ch. 4 and 7 (from memory): constant radial stress gives dq/dp' = 3;
    # the NC sample hardens to the critical state q = M p' with no further volume change, at
    # p'_cs = 3 p'_0 / (3 - M). Volume change on the ellipse follows the two e - ln lines.
    mat = clay()
    p0 = 100.0
    h = driver.drained_triaxial(mat, isotropic_state(mat, p0, p0), axial_strain=0.5, steps=100)
    p, q, pc = h.p[:, 0], h.q[:, 0], h.pc[:, 0]
    ev, ea = h.volumetric_strain[:, 0], h.axial_strain[:, 0]
    np.testing.assert_allclose(np.diff(q) / np.diff(p), 3.0, rtol=1e-5)
    np.testing.assert_allclose(h.radial_stress[:, 0], p0, rtol=1e-10)
    assert abs(q[-1] / p[-1] / M - 1) < 5e-3
    assert abs(p[-1] / (3 * p0 / (3 - M)) - 1) < 5e-3
    rate = np.diff(ev) / np.diff(ea)
    assert rate[0] > 0.5 and 0 <= rate[-1] < 5e-3          # contracts, then stops
    # Stress point on the ellipse, volume from the lines: eps_v (1+e0) = (l-k) ln pc + k ln p.
    np.testing.assert_allclose(q ** 2 / M ** 2 + p * (p - pc), 0.0, atol=1e-9 * pc.max() ** 2)
    ev_lines = ((LAM - KAP) * np.log(pc / p0) + KAP * np.log(p / p0)) / (1 + E0)
    np.testing.assert_allclose(ev, ev_lines, atol=1e-12)
    # Consistent tangent: the mixed-control Newton needs only a few iterations a step.
    assert h.iterations.max() <= 5


@pytest.mark.parametrize("ocr", [1.0, 1.5, 2.0])
def test_undrained_path_matches_the_constant_volume_closed_form(ocr):
    # Constant volume: the elastic and plastic volume changes cancel,
    # kappa ln p' + (lambda - kappa) ln p'_c = const (Wood 1990, ch. 6 and 7, from memory).
    # With the stress point on the ellipse, p'_c = p' (M^2 + eta^2) / M^2, this gives
    #     p' / p'_0 = [R0 M^2 / (M^2 + eta^2)]^Lambda,   Lambda = (lambda - kappa) / lambda,
    # R0 = p'_c0 / p'_0 (isotropic OCR); for R0 = 1 it is Wood's p'_0 / p' = ((M^2+eta^2)/M^2)^
    # Lambda. Before first yield the elastic path is vertical: p' = p'_0 (no elastic volume
    # change, isotropic elasticity).
    mat = clay()
    pc0 = 100.0
    p0 = pc0 / ocr
    h = driver.undrained_triaxial(mat, isotropic_state(mat, p0, pc0), axial_strain=0.15,
                                  steps=150)
    p, q = h.p[:, 0], h.q[:, 0]
    eta = q / p
    Lam = (LAM - KAP) / LAM
    np.testing.assert_allclose(h.volumetric_strain, 0.0, atol=1e-15)
    np.testing.assert_allclose(h.void_ratio, E0, atol=1e-14)
    q_yield = M * np.sqrt(p0 * (pc0 - p0))
    elastic = q < q_yield * (1 - 1e-9)
    np.testing.assert_allclose(p[elastic], p0, rtol=1e-12)
    plastic = ~elastic
    assert plastic.sum() > 100
    p_closed = p0 * (ocr * M ** 2 / (M ** 2 + eta[plastic] ** 2)) ** Lam
    np.testing.assert_allclose(p[plastic], p_closed, rtol=1e-2)       # required: 1 %
    np.testing.assert_allclose(p[plastic], p_closed, rtol=1e-9)       # observed: exact
    # Approach the critical state, p'_cs = p'_0 (R0 / 2)^Lambda (reached asymptotically).
    np.testing.assert_allclose(eta[-1], M, rtol=1e-5)
    np.testing.assert_allclose(p[-1], p0 * (ocr / 2) ** Lam, rtol=1e-5)
    if ocr == 1.0:
        # Excess pore pressure of the NC test at failure: total p constant + q/3 rise.
        u = h.excess_pore_pressure[-1, 0]
        np.testing.assert_allclose(u, p0 + q[-1] / 3 - p[-1], rtol=1e-9)


def test_oedometer_normal_compression_settles_by_cc_log_rule():
    # Common practice (Terzaghi's e - log sigma'_v rule): settlement per unit thickness
    # Cc / (1 + e0) log10(sigma'_f / sigma'_0) with Cc = lambda ln 10, once on the NCL under
    # K0. The start is on the model's own K0nc line, so the path is at constant eta throughout.
    mat = clay()
    k0 = mat.k0_normally_consolidated()
    sv0, svf = 100.0, 400.0
    st = mat.initial_state(k0_stress(sv0, k0), mat.preconsolidation_from_vertical(sv0))
    h = driver.oedometer(mat, st, vertical_stress=np.geomspace(sv0, svf, 41)[1:])
    hand = mat.compression_index / (1 + E0) * np.log10(svf / sv0)
    by_void_ratio = -(h.void_ratio[-1, 0] - E0) / (1 + E0)
    by_strain = h.volumetric_strain[-1, 0]
    assert abs(by_void_ratio / hand - 1) < 0.02                       # required: 2 %
    assert abs(by_strain / hand - 1) < 0.02
    assert abs(by_strain / hand - 1) < 1e-4                           # observed
    np.testing.assert_allclose(h.strain[:, 0, [0, 2, 3]], 0.0, atol=0)
    # Lateral stress stays on the K0nc line of the model.
    np.testing.assert_allclose(h.radial_stress[:, 0] / h.axial_stress[:, 0], k0, rtol=2e-3)
    assert h.iterations.max() <= 5


def test_model_k0nc_lies_between_jaky_and_one():
    # Modified Cam Clay with constant nu overpredicts K0nc compared with Jaky's 1 - sin phi
    # (Jaky 1944; Wood 1990, ch. 10, from memory, for the comparison), but stays below 1.
    mat = clay()
    jaky = 1 - np.sin(np.radians(mat.critical_state_friction_angle))
    assert jaky < mat.k0_normally_consolidated() < 1.0


def test_preconsolidation_from_ocr_puts_the_vertical_preconsolidation_on_the_yield_surface():
    # The state of 1D normal compression to sigma'_v = sigma'_p (sigma'_h = K0nc sigma'_p)
    # lies on the ellipse (the relation documented in preconsolidation_from_vertical).
    mat = clay()
    k0nc = 0.55
    stress0 = k0_stress(np.array([20.0, 50.0, 80.0]), 0.8)
    pc = mat.preconsolidation_from_ocr(stress0, 2.0, k0_nc=k0nc)
    at_p = CamClayState(k0_stress(2 * np.array([20.0, 50.0, 80.0]), k0nc), pc, E0)
    np.testing.assert_allclose(mat.yield_function(at_p), 0.0, atol=1e-9 * pc.max() ** 2)
    # A constant margin of 30 kPa is the same as OCR = (sigma'_v0 + 30) / sigma'_v0.
    pc_m = mat.preconsolidation_from_margin(stress0, 30.0, k0_nc=k0nc)
    sv0 = -stress0[:, 1]
    np.testing.assert_allclose(pc_m, mat.preconsolidation_from_ocr(stress0, (sv0 + 30) / sv0,
                                                                   k0_nc=k0nc), rtol=1e-12)
    # The initial state itself is inside.
    assert np.all(mat.yield_function(mat.initial_state(stress0, pc)) < 0)


# ------------------------------------------------------------ numerics of the update
def _random_states(mat, n, rng):
    p0 = rng.uniform(10, 200, n)
    st = -p0[:, None] * (1 + 0.4 * rng.uniform(-1, 1, (n, 4)))
    st[:, 3] = rng.uniform(-0.3, 0.3, n) * p0
    p, q, _ = invariants(st)
    pc = (p + q ** 2 / (M ** 2 * p)) * rng.choice([1.0, 1.05, 1.5, 3.0, 8.0], n)
    return mat.initial_state(st, pc)


def _random_step(n, seed, size):
    """The clay at n random states (inside or on the ellipse) and random strain increments of
    about ``size``: (material, states, increments)."""
    mat = clay()
    rng = np.random.default_rng(seed)
    st = _random_states(mat, n, rng)
    return mat, st, rng.normal(size=(n, 4)) * size


@pytest.mark.parametrize("elastic_law", ["poisson_ratio", "shear_modulus"])
def test_consistent_tangent_equals_finite_difference_derivative(elastic_law):
    # Borja & Lee 1990 (CMAME 78, 49-72): the algorithmic tangent is the exact derivative of
    # the backward-Euler update; checked by central differences, relative error < 1e-5.
    mat = clay() if elastic_law == "poisson_ratio" else clay(poisson_ratio=None,
                                                               shear_modulus=3000.0)
    rng = np.random.default_rng(42)
    n = 300
    st = _random_states(mat, n, rng)
    de = rng.normal(size=(n, 4)) * rng.choice([1e-5, 1e-3, 1e-2], n)[:, None]
    # Add an isotropic NC point loaded isotropically (q_trial = 0 exactly) and one at the
    # critical state (2 p' = p'_c) sheared.
    iso = CamClayState(k0_stress([100.0], 1.0), [100.0], E0)
    cs = CamClayState(np.array([[-50 - 20, -50 + 40, -50 - 20, 0.0]]), [100.0], E0)
    assert abs(mat.yield_function(cs)[0]) < 1e-9    # p' = 50, q = 60 = M p': top of ellipse
    st = CamClayState(np.vstack([st.stress, iso.stress, cs.stress]),
                      np.concatenate([st.pc, iso.pc, cs.pc]), E0)
    de = np.vstack([de, [[-1e-3, -1e-3, -1e-3, 0.0]], [[1e-3, -2e-3, 1e-3, 0.0]]])
    _, D, new = mat.update(st, de)
    plastic = new.pc != st.pc
    assert 50 < plastic.sum() < len(plastic) - 50          # both kinds are checked
    h = 1e-7
    Dfd = np.empty_like(D)
    for j in range(4):
        d = np.zeros(4)
        d[j] = h
        Dfd[:, :, j] = (mat.update(st, de + d)[0] - mat.update(st, de - d)[0]) / (2 * h)
    err = np.linalg.norm(D - Dfd, axis=(1, 2)) / np.linalg.norm(D, axis=(1, 2))
    assert err.max() < 1e-5, err.max()


def test_return_mapping_lands_on_the_yield_surface():
    # Backward Euler (Borja & Lee 1990): plastic points end on f = 0, no point outside.
    mat, st, de = _random_step(2000, seed=7, size=2e-2)
    _, _, new = mat.update(st, de)
    f = mat.yield_function(new) / new.pc ** 2
    assert f.max() < 1e-10
    plastic = new.pc != st.pc
    np.testing.assert_allclose(f[plastic], 0.0, atol=1e-10)


def test_elastic_tangent_is_the_update_tangent_inside_the_yield_surface():
    # K = (1 + e) p' / kappa, G from constant nu (Wood 1990, ch. 3, from memory).
    mat = clay()
    st = isotropic_state(mat, 50.0, 100.0)
    _, D, _ = mat.update(st, np.zeros((1, 4)))
    np.testing.assert_allclose(mat.elastic_tangent(st), D, rtol=1e-12)
    K = (1 + E0) * 50.0 / KAP
    nu = 0.25
    np.testing.assert_allclose(D[0, 3, 3], 3 * K * (1 - 2 * nu) / (2 * (1 + nu)), rtol=1e-12)
    np.testing.assert_allclose(D[0, :3, :3].sum() / 9, K, rtol=1e-12)


def test_batch_of_points_gives_same_results_as_each_alone():
    # Vectorisation must not couple points (masked local Newton).
    mat, st, de = _random_step(40, seed=3, size=5e-3)
    s_all, D_all, new_all = mat.update(st, de)
    for i in range(40):
        s, D, new = mat.update(st.take([i]), de[[i]])
        np.testing.assert_allclose(s[0], s_all[i], rtol=1e-13, atol=1e-12)
        np.testing.assert_allclose(D[0], D_all[i], rtol=1e-13, atol=1e-9)
        np.testing.assert_allclose(new.pc[0], new_all.pc[i], rtol=1e-14)
    # The driver too: three undrained tests at once equal three single runs.
    sts = mat.initial_state(k0_stress([100.0, 70.0, 40.0], 1.0), 100.0)
    h = driver.undrained_triaxial(mat, sts, 0.05, steps=20)
    for i in range(3):
        hi = driver.undrained_triaxial(mat, sts.take([i]), 0.05, steps=20)
        np.testing.assert_allclose(hi.stress[:, 0], h.stress[:, i], rtol=1e-13, atol=1e-12)


def test_impossible_increment_raises_solver_error():
    # Compressing past zero void ratio cannot be integrated; the caller must cut the step.
    mat = clay()
    with pytest.raises(SolverError, match="void ratio"):
        mat.update(isotropic_state(mat, 100.0, 100.0), np.full((1, 4), -0.5) * [1, 1, 1, 0])


# ------------------------------------------------------------------ properties, input
def test_permeability_follows_taylor_void_ratio_rule():
    # Taylor 1948, Fundamentals of Soil Mechanics: log10 k = log10 k0 - (e0 - e) / Ck.
    mat = clay(permeability_x=2e-4, permeability_y=1e-4, permeability_change_index=0.5)
    st = CamClayState(k0_stress([100.0, 100.0], 1.0), 100.0, [E0, E0 - 0.5])
    kx, ky = mat.permeability(st)
    np.testing.assert_allclose(kx, [2e-4, 2e-5], rtol=1e-12)
    np.testing.assert_allclose(ky, [1e-4, 1e-5], rtol=1e-12)
    kx, _ = clay(permeability_x=2e-4).permeability(st)
    np.testing.assert_allclose(kx, 2e-4)
    assert np.all(mat.consolidation_coefficient(st) > 0)


def test_hand_method_indices_and_friction_angle():
    # Cc = lambda ln 10, Cr = kappa ln 10 (common practice link); triaxial compression
    # M = 6 sin phi / (3 - sin phi): phi = 30 deg gives M = 1.2 exactly (Wood 1990, ch. 7).
    mat = clay(M=None, phi_cs=30.0)
    np.testing.assert_allclose(mat.M, 1.2, rtol=1e-14)
    np.testing.assert_allclose(mat.critical_state_friction_angle, 30.0, rtol=1e-12)
    np.testing.assert_allclose(mat.compression_index, LAM * np.log(10))
    np.testing.assert_allclose(mat.recompression_index, KAP * np.log(10))


@pytest.mark.parametrize("kw, key", [
    (dict(kappa=0.2), "kappa"),
    (dict(kappa=0.3), "kappa"),
    (dict(lambda_=-0.1), "lambda_"),
    (dict(kappa=0.0), "kappa"),
    (dict(e0=0.0), "e0"),
    (dict(M=-1.0), "M"),
    (dict(M=None), "M"),
    (dict(M=1.0, phi_cs=30.0), "M"),
    (dict(M=None, phi_cs=95.0), "phi_cs"),
    (dict(poisson_ratio=0.5), "poisson_ratio"),
    (dict(poisson_ratio=0.0), "poisson_ratio"),
    (dict(poisson_ratio=None), "poisson_ratio"),
    (dict(shear_modulus=1000.0), "shear_modulus"),
    (dict(poisson_ratio=None, shear_modulus=-5.0), "shear_modulus"),
    (dict(permeability_x=0.0), "permeability_x"),
    (dict(permeability_y=-1.0), "permeability_y"),
    (dict(permeability_change_index=0.0), "permeability_change_index"),
    (dict(biot_coefficient=1.5), "biot_coefficient"),
    (dict(storage=-1e-6), "storage"),
])
def test_bad_parameters_raise_input_error_naming_the_field(kw, key):
    with pytest.raises(InputError) as err:
        clay(**kw)
    assert err.value.field == f"materials.clay.{key}"
    assert err.value.fix


def test_bad_initial_state_raises_input_error_naming_the_field():
    mat = clay()
    with pytest.raises(InputError) as err:
        mat.initial_state(k0_stress([100.0], 0.5), 60.0)        # outside the ellipse
    assert err.value.field == "materials.clay.pc"
    with pytest.raises(InputError) as err:
        mat.initial_state(np.array([[10.0, 10.0, 10.0, 0.0]]), 60.0)   # tension
    assert err.value.field == "materials.clay.initial_stress"
    # With a floor the tensile point is lifted to p' = 1 kPa and p'_c kept around it.
    st = mat.initial_state(np.array([[10.0, 10.0, 10.0, 0.0]]), 60.0, min_mean_stress=1.0)
    np.testing.assert_allclose(st.p, 1.0)
    with pytest.raises(InputError) as err:
        mat.preconsolidation_from_ocr(k0_stress([100.0], 0.5), 0.8)
    assert err.value.field == "materials.clay.ocr"
