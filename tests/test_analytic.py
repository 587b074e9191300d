"""Tests of the closed-form solutions in ``solver.analytic``.

Each check names its source beside it. Independent checks are preferred to stored numbers:
limits, the governing equations by finite differences, equilibrium by quadrature, and
separate series written out here from the published formulas.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.integrate import quad
from scipy.optimize import brentq
from scipy.special import roots_legendre

from solver import analytic as an
from solver.errors import InputError

# ----------------------------------------------------------------------------- helpers


def fourier_m(n: int) -> np.ndarray:
    return 0.5 * np.pi * (2.0 * np.arange(n) + 1.0)


def terzaghi_fourier(Z: np.ndarray, T: float, n: int) -> np.ndarray:
    """Terzaghi (1925) series written out directly: sum 2/M sin(MZ) exp(-M^2 T)."""
    M = fourier_m(n)
    return (2.0 / M * np.exp(-M * M * T)) @ np.sin(np.outer(M, Z))


def olson_after(M: np.ndarray, Tv: float, Tvc: float) -> np.ndarray:
    """(exp(M^2 Tvc) - 1) exp(-M^2 Tv), multiplied out so that large M cannot overflow."""
    return np.exp(-M * M * (Tv - Tvc)) - np.exp(-M * M * Tv)


def olson_literal(Tv: float, Tvc: float, n: int = 20000) -> float:
    """Olson (1977), J. Geotech. Eng. Div. ASCE 103(GT1): the two branches as published."""
    M = fourier_m(n)
    if Tv <= Tvc:
        return Tv / Tvc * (1.0 - 2.0 / Tv * np.sum((1.0 - np.exp(-M * M * Tv)) / M**4))
    return 1.0 - 2.0 / Tvc * np.sum(olson_after(M, Tv, Tvc) / M**4)


def simpson_mean(values: np.ndarray, Z: np.ndarray) -> np.ndarray:
    """Mean over 0..1 by composite Simpson on an odd number of equal intervals' nodes."""
    h = Z[1] - Z[0]
    w = np.ones(Z.size)
    w[1:-1:2] = 4.0
    w[2:-1:2] = 2.0
    return values @ w * h / 3.0


# ============================================================================= Terzaghi


def test_terzaghi_pressure_satisfies_one_dimensional_diffusion_equation():
    # du/dT = d2u/dZ2 (Terzaghi 1925), central differences in both variables
    Z = np.linspace(0.1, 1.9, 19)
    hz, ht = 1e-3, 1e-6
    for T in (0.005, 0.02, 0.049, 0.2, 0.8):
        u_t = (an.terzaghi_excess_pressure(Z, 1.0, T + ht)
               - an.terzaghi_excess_pressure(Z, 1.0, T - ht)) / (2 * ht)
        u_zz = (an.terzaghi_excess_pressure(Z + hz, 1.0, T)
                - 2 * an.terzaghi_excess_pressure(Z, 1.0, T)
                + an.terzaghi_excess_pressure(Z - hz, 1.0, T)) / hz**2
        # finite-difference truncation ~ h^2 |u''''| / 12 with |u''''| ~ |u_zz| / T
        scale = np.abs(u_zz).max()
        assert np.abs(u_t - u_zz).max() <= 1e-5 * scale / min(T, 1.0)


def test_terzaghi_pressure_equals_load_at_loading_and_zero_on_drained_face():
    z = np.array([0.0, 0.3, 1.0, 1.7, 2.0])
    u = an.terzaghi_excess_pressure(z, 1.0, [0.0, 0.1], u0=50.0)
    assert u.shape == (2, 5)
    # initial condition u = u0 inside, boundary condition u = 0 on drained faces (Terzaghi 1925)
    np.testing.assert_allclose(u[0], [0.0, 50.0, 50.0, 50.0, 0.0], atol=0.0)
    np.testing.assert_allclose(u[1, [0, -1]], 0.0, atol=1e-12)


def test_terzaghi_early_time_pressure_matches_fourier_series_to_1e6():
    # Terzaghi (1925) series summed with enough terms that exp(-M^2 T) underflows: the
    # module's erfc form (Carslaw & Jaeger 1959, section 3.3) must agree to 1e-6 u0 down
    # to Tv = 1e-4
    Z = np.linspace(0.0, 1.0, 41)
    for T in (1e-4, 1e-3, 0.01, 0.049, 0.051, 0.3):
        n = int(np.sqrt(800.0 / T) / np.pi) + 10
        ref = terzaghi_fourier(Z, T, n)
        np.testing.assert_allclose(an.terzaghi_excess_pressure(Z, 1.0, T), ref, atol=1e-10)


def test_terzaghi_double_drainage_profile_is_symmetric_about_mid_depth():
    # a layer 2H thick drained at both faces is two mirror single-drainage problems
    # (Terzaghi 1943, Theoretical Soil Mechanics; common practice)
    z = np.linspace(0.0, 4.0, 33)
    u = an.terzaghi_excess_pressure(z, 2.0, [0.01, 0.2, 1.0])
    np.testing.assert_allclose(u, u[:, ::-1], atol=1e-14)
    u = an.olson_ramp_excess_pressure(z, 2.0, [0.01, 0.2, 1.0], Tvc=0.3)
    np.testing.assert_allclose(u, u[:, ::-1], atol=1e-14)


def test_average_degree_equals_one_minus_depth_mean_of_pressure():
    # U = 1 - (1/H) int_0^H u dz / u0 (Terzaghi 1925), Simpson quadrature of the profile
    Z = np.linspace(0.0, 1.0, 2001)
    T = np.array([0.002, 0.02, 0.1, 0.197, 0.5, 1.2])
    u = an.terzaghi_excess_pressure(Z, 1.0, T)
    np.testing.assert_allclose(an.terzaghi_average_degree(T), 1.0 - simpson_mean(u, Z),
                               atol=1e-7)  # Simpson error ~ h^4 u'''' near the drained face


def test_average_degree_follows_square_root_law_at_early_times():
    # U = 2 sqrt(Tv/pi), exact to exp(-1/Tv) for small Tv (Terzaghi 1943; Carslaw & Jaeger
    # 1959, section 3.3)
    T = np.array([1e-6, 1e-4, 1e-3, 0.01])
    np.testing.assert_allclose(an.terzaghi_average_degree(T), 2.0 * np.sqrt(T / np.pi),
                               rtol=1e-12)


def test_average_degree_matches_fourier_series_across_the_switch():
    # Terzaghi (1925) series 1 - sum 2/M^2 exp(-M^2 T) written out with many terms
    M = fourier_m(20000)
    for T in (0.01, 0.0499, 0.05, 0.0501, 0.3, 2.0):
        ref = 1.0 - np.sum(2.0 / M**2 * np.exp(-M * M * T))
        assert an.terzaghi_average_degree(T) == pytest.approx(ref, abs=1e-12)


def test_time_factor_table_values():
    # U = 50 % at Tv = 0.197 and U = 90 % at Tv = 0.848 (Terzaghi 1943, Theoretical Soil
    # Mechanics; values from memory, given to 3 decimals)
    tv = an.terzaghi_time_factor([0.5, 0.9])
    np.testing.assert_allclose(tv, [0.197, 0.848], atol=5e-4)
    # one-term series, exact here: Tv = -(4/pi^2) ln(pi^2 (1 - U) / 8) (Terzaghi 1925)
    assert tv[1] == pytest.approx(-4 / np.pi**2 * np.log(np.pi**2 * 0.1 / 8), rel=1e-8)


def test_time_factor_inverts_average_degree():
    U = np.array([0.0, 1e-4, 0.1, 0.5, 0.6, 0.95, 0.999999])
    np.testing.assert_allclose(an.terzaghi_average_degree(an.terzaghi_time_factor(U)), U,
                               atol=1e-13)


def test_consolidation_helpers():
    # cv = k / (mv gamma_w) and Tv = cv t / H^2 (Terzaghi 1925)
    cv = an.consolidation_coefficient(k=8.64e-5, mv=1e-3, gamma_w=10.0)   # 1e-9 m/s
    assert cv == pytest.approx(8.64e-3)
    np.testing.assert_allclose(an.time_factor([0.0, 100.0], cv, 2.0), [0.0, 0.216])


def test_terzaghi_functions_refuse_nonsense():
    with pytest.raises(ValueError):
        an.terzaghi_excess_pressure([0.5], H=-1.0, Tv=0.1)
    with pytest.raises(ValueError):
        an.terzaghi_excess_pressure([2.5], H=1.0, Tv=0.1)     # deeper than 2H
    with pytest.raises(ValueError):
        an.terzaghi_excess_pressure([0.5], H=1.0, Tv=-0.1)
    with pytest.raises(ValueError):
        an.terzaghi_excess_pressure([0.5], H=1.0, Tv=0.1, n_terms=0)
    with pytest.raises(ValueError):
        an.terzaghi_time_factor(1.0)
    with pytest.raises(InputError):                           # also the package's own class
        an.consolidation_coefficient(k=1e-4, mv=0.0)


# ============================================================================= Olson ramp


def test_olson_degree_matches_published_series():
    # Olson (1977), J. Geotech. Eng. Div. ASCE 103(GT1): both branches, written out here
    for Tvc in (0.05, 0.3, 2.0):
        for Tv in (0.001, 0.01, 0.04, 0.2, 0.3, 0.7, 2.0, 3.5):
            assert an.olson_ramp_average_degree(Tv, Tvc) == pytest.approx(
                olson_literal(Tv, Tvc), abs=1e-10)


def test_olson_degree_is_continuous_at_end_of_construction():
    # both published branches give the same U at Tv = Tvc (Olson 1977)
    for Tvc in (0.01, 0.2, 1.0):
        M = fourier_m(20000)
        after = 1.0 - 2.0 / Tvc * np.sum(olson_after(M, Tvc, Tvc) / M**4)
        assert olson_literal(Tvc, Tvc) == pytest.approx(after, abs=1e-12)
        eps = 1e-9
        below, at, above = an.olson_ramp_average_degree([Tvc - eps, Tvc, Tvc + eps], Tvc)
        # no jump: the change over 2 eps is bounded by the largest slope, 1/Tvc
        assert abs(above - below) <= 2 * eps / Tvc
        assert at == pytest.approx(after, abs=1e-10)


def test_olson_ramp_tends_to_terzaghi_as_construction_time_vanishes():
    # Tvc -> 0 is the sudden load of Terzaghi (1925); the difference is O(Tvc |dU/dT|)
    T = np.array([0.01, 0.1, 0.5])
    Tvc = 1e-7
    U_ramp = an.olson_ramp_average_degree(T, Tvc)
    assert np.abs(U_ramp - an.terzaghi_average_degree(T)).max() < 10 * Tvc / np.sqrt(T.min())
    z = np.linspace(0.0, 1.0, 11)
    u = an.olson_ramp_excess_pressure(z, 1.0, T, Tvc, q=1.0)
    assert np.abs(u - an.terzaghi_excess_pressure(z, 1.0, T)).max() < 10 * Tvc / T.min()
    np.testing.assert_array_equal(an.olson_ramp_average_degree(T, 0.0),
                                  an.terzaghi_average_degree(T))


def test_olson_pressure_mean_gives_degree_relative_to_final_load():
    # settlement = (load applied so far - mean excess pressure) / final load (Olson 1977)
    Z = np.linspace(0.0, 1.0, 2001)
    Tvc, q = 0.4, 80.0
    T = np.array([0.01, 0.1, 0.4, 0.6, 1.5])
    u = an.olson_ramp_excess_pressure(Z, 1.0, T, Tvc, q=q)
    U_from_profile = np.minimum(T / Tvc, 1.0) - simpson_mean(u, Z) / q
    np.testing.assert_allclose(an.olson_ramp_average_degree(T, Tvc), U_from_profile,
                               atol=1e-9)


def test_olson_pressure_satisfies_diffusion_with_loading_source():
    # du/dT = d2u/dZ2 + (1/Tvc) while loading, + 0 afterwards (Terzaghi 1925 with a
    # time-dependent load, Olson 1977)
    Z = np.linspace(0.1, 0.95, 18)
    Tvc, hz, ht = 0.3, 1e-3, 1e-6
    for T, source in ((0.01, 1 / Tvc), (0.2, 1 / Tvc), (0.5, 0.0), (1.0, 0.0)):
        f = lambda z, t: an.olson_ramp_excess_pressure(z, 1.0, t, Tvc)  # noqa: E731
        u_t = (f(Z, T + ht) - f(Z, T - ht)) / (2 * ht)
        u_zz = (f(Z + hz, T) - 2 * f(Z, T) + f(Z - hz, T)) / hz**2
        np.testing.assert_allclose(u_t - u_zz, source, atol=2e-5 / Tvc)


def test_olson_pressure_matches_published_profile_series():
    # Olson (1977) profile series with 1/M^3 coefficients, written out with many terms;
    # truncation error of the reference ~ 0.1 / (N^2 Tvc)
    Z = np.linspace(0.0, 1.0, 9)
    Tvc, N = 0.25, 20000
    M = fourier_m(N)
    for T in (0.05, 0.25, 0.6):
        if T <= Tvc:
            coef = 2.0 / M**3 * -np.expm1(-M * M * T)
        else:
            coef = 2.0 / M**3 * olson_after(M, T, Tvc)
        ref = coef @ np.sin(np.outer(M, Z)) / Tvc
        np.testing.assert_allclose(an.olson_ramp_excess_pressure(Z, 1.0, T, Tvc), ref,
                                   atol=1e-8)


def test_olson_refuses_negative_construction_time():
    with pytest.raises(ValueError):
        an.olson_ramp_average_degree(0.1, -1.0)


# ============================================================================= Mandel

A, B_HALF, FORCE = 2.0, 1.0, 100.0     # half-width m, half-height m, total force kN/m


@pytest.fixture(params=["incompressible", "compressible"])
def params(request) -> an.MandelParameters:
    if request.param == "incompressible":
        return an.MandelParameters(shear_modulus=1000.0, poisson_ratio=0.2,
                                   permeability=1e-3)
    return an.MandelParameters(shear_modulus=1500.0, poisson_ratio=0.25, permeability=2e-3,
                               biot_alpha=0.8, storage=3e-4)


def to_time(params: an.MandelParameters, T: np.ndarray | float) -> np.ndarray:
    """Days for dimensionless times T = c t / a^2."""
    return np.asarray(T) * A**2 / params.consolidation_coefficient


def elastic_constants(p: an.MandelParameters) -> tuple[float, float, float]:
    """lambda, lambda + 2G and plane-strain E' = 4G(lambda+G)/(lambda+2G) (drained)."""
    G, nu = p.shear_modulus, p.poisson_ratio
    lam = 2.0 * G * nu / (1.0 - 2.0 * nu)
    L = lam + 2.0 * G
    return lam, L, 4.0 * G * (lam + G) / L


def test_mandel_parameters_for_incompressible_constituents():
    # Biot (1941) with incompressible grains and fluid: B = 1, nu_u = 1/2, c = k (lambda+2G)
    # / gamma_w (Detournay & Cheng 1993, Fundamentals of poroelasticity)
    p = an.MandelParameters(shear_modulus=1000.0, poisson_ratio=0.3, permeability=1e-3,
                            gamma_w=10.0)
    lam = 2 * 1000.0 * 0.3 / 0.4
    assert p.skempton_b == 1.0 and p.undrained_poisson_ratio == 0.5
    assert p.consolidation_coefficient == pytest.approx(1e-3 * (lam + 2000.0) / 10.0)
    assert p.constrained_modulus == pytest.approx(an.oedometer_modulus(p.young_modulus, 0.3))


def test_mandel_parameters_obey_rice_cleary_identities(params):
    # Rice & Cleary (1976), Rev. Geophys. Space Phys. 14(2) (relations from memory):
    #   nu_u - nu = alpha B (1 - 2nu)(1 + nu_u) / 3
    #   c = 2 (k/gamma_w) B^2 G (1 - nu)(1 + nu_u)^2 / (9 (1 - nu_u)(nu_u - nu))
    p = params
    nu, nu_u, B, G = p.poisson_ratio, p.undrained_poisson_ratio, p.skempton_b, p.shear_modulus
    assert nu_u - nu == pytest.approx(p.biot_alpha * B * (1 - 2 * nu) * (1 + nu_u) / 3,
                                      rel=1e-12)
    c = (2 * p.permeability / p.gamma_w * B**2 * G * (1 - nu) * (1 + nu_u) ** 2
         / (9 * (1 - nu_u) * (nu_u - nu)))
    assert p.consolidation_coefficient == pytest.approx(c, rel=1e-12)


def test_mandel_roots_solve_characteristic_equation_in_their_brackets():
    # tan x = (1 - nu)/(nu_u - nu) x (Mandel 1953; Abousleiman et al. 1996)
    nu, nu_u = 0.2, 0.45
    x = an.mandel_roots(nu, nu_u, 300)
    i = np.arange(1, 301)
    assert np.all(x > (i - 1) * np.pi) and np.all(x < (i - 0.5) * np.pi)
    residual = (nu_u - nu) * np.sin(x) - (1 - nu) * x * np.cos(x)
    assert np.abs(residual).max() < 1e-13 * x.max()
    # nu = 0, nu_u = 1/2: tan x = 2x, solved here independently by Brent's method on tan
    ref = [brentq(lambda s: np.tan(s) - 2 * s, lo, hi, xtol=1e-15)
           for lo, hi in ((0.5, 1.5), (np.pi + 0.1, 1.5 * np.pi - 1e-9))]
    np.testing.assert_allclose(an.mandel_roots(0.0, 0.5, 2), ref, rtol=1e-13)
    # nu_u = nu (no coupling): the roots are (i - 1/2) pi
    np.testing.assert_allclose(an.mandel_roots(0.3, 0.3, 5), (np.arange(1, 6) - 0.5) * np.pi,
                               rtol=1e-14)


def test_mandel_initial_pressure_is_skempton_b_times_mean_undrained_stress(params):
    # p0 = -B sigma_mean with sigma_yy = -force/(2a), sigma_xx = 0, sigma_zz = nu_u sigma_yy
    # (Skempton 1954; Abousleiman et al. 1996 give F B (1 + nu_u) / (3a) for force 2F)
    s_yy = -FORCE / (2 * A)
    mean = (s_yy + 0.0 + params.undrained_poisson_ratio * s_yy) / 3.0
    assert an.mandel_initial_pressure(params, A, FORCE) == pytest.approx(
        -params.skempton_b * mean, rel=1e-14)


def test_mandel_state_just_after_loading_is_undrained_elastic(params):
    # at t -> 0+ the block responds as an undrained elastic solid (Mandel 1953): pressure p0
    # inside, settlement force (1 - nu_u) b / (4 G a), u_x = force nu_u x / (4 G a). Away
    # from the drained faces the departure grows like sqrt(c t / a^2): allowed 10 sqrt(T).
    T = 1e-8
    t = to_time(params, T)
    G, nu_u = params.shear_modulus, params.undrained_poisson_ratio
    p0 = an.mandel_initial_pressure(params, A, FORCE)
    x = np.array([0.0, 0.5, 1.0, 1.8])
    p = an.mandel_pressure(x, t, params, A, FORCE, n_terms=20000)
    np.testing.assert_allclose(p / p0, 1.0, atol=10 * np.sqrt(T))
    w = an.mandel_vertical_displacement(t, params, A, B_HALF, FORCE, n_terms=20000)
    assert w == pytest.approx(FORCE * (1 - nu_u) * B_HALF / (4 * G * A), rel=10 * np.sqrt(T))
    ux = an.mandel_horizontal_displacement(x, t, params, A, FORCE, n_terms=20000)
    np.testing.assert_allclose(ux, FORCE * nu_u * x / (4 * G * A),
                               atol=10 * np.sqrt(T) * FORCE / (4 * G))
    # t = 0 itself returns the same undrained state in closed form
    assert an.mandel_pressure(0.5, 0.0, params, A, FORCE) == p0
    assert an.mandel_vertical_displacement(0.0, params, A, B_HALF, FORCE) == pytest.approx(
        FORCE * (1 - nu_u) * B_HALF / (4 * G * A), rel=1e-15)


def test_mandel_state_long_after_loading_is_drained_elastic(params):
    # t -> inf: no excess pressure, drained elastic plane strain with nu (Mandel 1953)
    t = to_time(params, 30.0)
    G, nu = params.shear_modulus, params.poisson_ratio
    x = np.linspace(-A, A, 7)
    p0 = an.mandel_initial_pressure(params, A, FORCE)
    assert np.abs(an.mandel_pressure(x, t, params, A, FORCE)).max() < 1e-12 * p0
    assert an.mandel_vertical_displacement(t, params, A, B_HALF, FORCE) == pytest.approx(
        FORCE * (1 - nu) * B_HALF / (4 * G * A), rel=1e-12)
    np.testing.assert_allclose(an.mandel_horizontal_displacement(x, t, params, A, FORCE),
                               FORCE * nu * x / (4 * G * A), rtol=1e-12, atol=1e-18)
    np.testing.assert_allclose(an.mandel_vertical_stress(x, t, params, A, FORCE),
                               -FORCE / (2 * A), rtol=1e-12)


def test_mandel_cryer_effect_centre_pressure_first_rises_above_initial(params):
    # Mandel (1953), Cryer (1963): the centre pressure exceeds p0 before it dissipates
    T = np.geomspace(1e-3, 3.0, 60)
    p0 = an.mandel_initial_pressure(params, A, FORCE)
    ratio = an.mandel_pressure(0.0, to_time(params, T), params, A, FORCE) / p0
    assert ratio.max() > 1.01      # a few per cent for these soils; rounding is ~1e-15
    assert T[np.argmax(ratio)] < 0.3 and ratio[-1] < 0.01
    # the rise starts at once and grows monotonically at first
    assert np.all(np.diff(ratio[:10]) > 0)


def test_mandel_vertical_stress_integrates_to_applied_force(params):
    # equilibrium of the plate: int_{-a}^{a} sigma_yy dx = -force at all times
    # (Abousleiman et al. 1996); Gauss-Legendre with 500 points resolves every mode that
    # has not decayed below rounding (cos(x_i x / a) with x_i up to ~ 6 / sqrt(c t / a^2))
    xg, wg = roots_legendre(500)
    t = to_time(params, np.array([0.0, 1e-3, 0.01, 0.1, 0.5, 2.0]))
    s = an.mandel_vertical_stress(A * xg, t, params, A, FORCE)
    np.testing.assert_allclose(s @ wg * A, -FORCE, rtol=1e-11)


def test_mandel_stress_follows_from_pressure_and_plate_strain(params):
    # Biot (1941) with sigma_xx = 0 and eps_yy uniform (Mandel 1953):
    #   sigma_yy = E' eps_yy - (2 G alpha / (lambda + 2G)) p,  E' = 4G(lambda+G)/(lambda+2G)
    # ties the stress series to the pressure and settlement series
    lam, L, Ep = elastic_constants(params)
    G, alpha = params.shear_modulus, params.biot_alpha
    x = np.linspace(-A, A, 13)
    t = to_time(params, np.array([1e-3, 0.03, 0.3, 1.0]))
    eps_yy = -an.mandel_vertical_displacement(t, params, A, B_HALF, FORCE) / B_HALF
    p = an.mandel_pressure(x, t, params, A, FORCE)
    s = an.mandel_vertical_stress(x, t, params, A, FORCE)
    np.testing.assert_allclose(s, Ep * eps_yy[:, None] - 2 * G * alpha / L * p,
                               atol=1e-11 * FORCE / A)


def test_mandel_horizontal_strain_follows_from_constitutive_law(params):
    # Biot (1941) with sigma_xx = 0: eps_xx = (alpha p - lambda eps_yy) / (lambda + 2G);
    # du_x/dx by central differences (error ~ h^2 |u_x'''| / 6)
    lam, L, _ = elastic_constants(params)
    alpha = params.biot_alpha
    h = 1e-4 * A
    x = np.linspace(-A + 2 * h, A - 2 * h, 11)
    t = to_time(params, np.array([1e-3, 0.05, 0.5]))
    eps_xx = (an.mandel_horizontal_displacement(x + h, t, params, A, FORCE)
              - an.mandel_horizontal_displacement(x - h, t, params, A, FORCE)) / (2 * h)
    eps_yy = -an.mandel_vertical_displacement(t, params, A, B_HALF, FORCE) / B_HALF
    p = an.mandel_pressure(x, t, params, A, FORCE)
    expected = (alpha * p - lam * eps_yy[:, None]) / L
    np.testing.assert_allclose(eps_xx, expected, atol=1e-6 * np.abs(expected).max())


def test_mandel_pressure_satisfies_diffusion_with_plate_strain_source(params):
    # fluid mass balance (Biot 1941) under Mandel's kinematics, derived here:
    #   (S + alpha^2/(lambda+2G)) dp/dt = (k/gamma_w) d2p/dx2 - (2 G alpha/(lambda+2G)) deps_yy/dt
    # checked by central differences in x and t
    _, L, _ = elastic_constants(params)
    G, alpha, S = params.shear_modulus, params.biot_alpha, params.storage
    kw = params.permeability / params.gamma_w
    s_store = S + alpha**2 / L
    # finite-difference error ~ (hx / l)^2 / 12 relative, l = a sqrt(T) the diffusion length
    x = np.linspace(-0.9 * A, 0.9 * A, 11)
    hx = 2e-4 * A
    for T in (0.01, 0.1, 0.6):
        t = float(to_time(params, T))
        ht = 1e-5 * t

        def p(xx, tt):
            return an.mandel_pressure(xx, tt, params, A, FORCE)

        def eps(tt):
            return -an.mandel_vertical_displacement(tt, params, A, B_HALF, FORCE) / B_HALF

        p_t = (p(x, t + ht) - p(x, t - ht)) / (2 * ht)
        p_xx = (p(x + hx, t) - 2 * p(x, t) + p(x - hx, t)) / hx**2
        e_t = (eps(t + ht) - eps(t - ht)) / (2 * ht)
        residual = s_store * p_t - kw * p_xx + 2 * G * alpha / L * e_t
        assert np.abs(residual).max() <= 1e-5 * np.abs(kw * p_xx).max()


def test_mandel_series_converged_with_default_terms(params):
    # truncation: the first neglected term decays as exp(-(n pi)^2 c t / a^2)
    x = np.linspace(-A, A, 9)
    t = to_time(params, np.array([1e-4, 1e-2, 1.0]))
    for f in (an.mandel_pressure, an.mandel_vertical_stress, an.mandel_horizontal_displacement):
        lo, hi = f(x, t, params, A, FORCE), f(x, t, params, A, FORCE, n_terms=400)
        np.testing.assert_allclose(lo, hi, atol=1e-12 * np.abs(hi).max())


def test_mandel_fields_are_symmetric_and_pressure_vanishes_on_drained_faces(params):
    x = np.linspace(0.0, A, 6)
    t = to_time(params, np.array([0.0, 0.01, 0.2]))
    p = an.mandel_pressure(np.concatenate([-x, x]), t, params, A, FORCE)
    np.testing.assert_allclose(p[:, :6], p[:, 6:], rtol=1e-13)           # even in x
    np.testing.assert_allclose(p[:, [5, 11]], 0.0, atol=1e-12 * p.max())   # drained faces
    ux = an.mandel_horizontal_displacement(np.concatenate([-x, x]), t, params, A, FORCE)
    np.testing.assert_allclose(ux[:, :6], -ux[:, 6:], rtol=1e-13, atol=1e-20)  # odd in x
    assert p.shape == (3, 12)
    assert an.mandel_vertical_displacement(t, params, A, B_HALF, FORCE).shape == (3,)


def test_mandel_functions_refuse_nonsense():
    p = an.MandelParameters(1000.0, 0.2, 1e-3)
    with pytest.raises(ValueError):
        an.MandelParameters(1000.0, 0.5, 1e-3)
    with pytest.raises(ValueError):
        an.MandelParameters(1000.0, 0.2, 1e-3, biot_alpha=1.5)
    with pytest.raises(ValueError):
        an.mandel_pressure([2.5], 1.0, p, a=2.0, force=100.0)         # outside the block
    with pytest.raises(ValueError):
        an.mandel_pressure([0.0], -1.0, p, a=2.0, force=100.0)
    with pytest.raises(ValueError):
        an.mandel_roots(0.3, 0.2, 5)                                  # nu_u < nu


# ============================================================================= half-space


def test_strip_load_centre_line_stress_table_value():
    # under the centre at z = b: sigma_z / q = 0.818, sigma_x / q = 0.182 (Poulos & Davis
    # 1974, Elastic Solutions for Soil and Rock Mechanics, table of strip-load influence
    # values; from memory) and exactly 1/2 +- 1/pi (alpha = pi/2, delta = -pi/4)
    s = an.strip_load_stresses(0.0, 1.5, b=1.5, q=1.0)
    assert s.sigma_z == pytest.approx(0.818, abs=5e-4)
    assert s.sigma_x == pytest.approx(0.182, abs=5e-4)
    assert s.sigma_z == pytest.approx(0.5 + 1 / np.pi, rel=1e-14)
    assert s.tau_xz == pytest.approx(0.0, abs=1e-15)


def test_strip_load_equals_integral_of_flamant_line_loads():
    # superposition of Flamant (1892) line loads q dx0 over the strip (Carothers 1920)
    b, q = 2.0, 50.0
    for x, z in ((0.0, 0.5), (1.0, 1.0), (2.0, 0.3), (3.5, 2.0), (-1.2, 4.0)):
        num = [quad(lambda x0, k=k: an.flamant_line_load_stresses(x - x0, z, q)[k], -b, b,
                    epsabs=1e-12, epsrel=1e-12, limit=200)[0] for k in range(3)]
        closed = an.strip_load_stresses(x, z, b, q)
        np.testing.assert_allclose(closed, num, rtol=1e-9, atol=1e-9 * q)


def test_strip_load_surface_values():
    # boundary conditions at z = 0: sigma_z = q under the strip, 0 outside (Poulos & Davis 1974)
    s = an.strip_load_stresses(np.array([0.0, 0.9, 1.1, 3.0]), 0.0, b=1.0, q=10.0)
    np.testing.assert_allclose(s.sigma_z, [10.0, 10.0, 0.0, 0.0], atol=1e-12)
    np.testing.assert_allclose(s.tau_xz, 0.0, atol=1e-12)
    deep = an.strip_load_stresses(np.array([0.0, 0.9, 1.1]), 1e-9, b=1.0, q=10.0)
    np.testing.assert_allclose(deep.sigma_z, [10.0, 10.0, 0.0], atol=1e-6)


def test_strip_load_far_below_acts_like_line_load():
    # at depth z >> b the strip acts as a line load P = 2bq (Flamant 1892); the relative
    # difference is O((b/z)^2)
    b, q = 1.0, 20.0
    x = np.array([0.0, 10.0, 40.0])
    z = 50.0
    s = an.strip_load_stresses(x, z, b, q)
    f = an.flamant_line_load_stresses(x, z, 2 * b * q)
    np.testing.assert_allclose(s.sigma_z, f.sigma_z, rtol=5 * (b / z) ** 2)


def test_flamant_stresses_carry_the_line_load():
    # vertical equilibrium of the half-space above depth z: int sigma_z dx = P, int tau dx = 0
    # (Flamant 1892)
    P, z = 30.0, 2.0
    sz = quad(lambda x: an.flamant_line_load_stresses(x, z, P).sigma_z, -np.inf, np.inf)[0]
    tau = quad(lambda x: an.flamant_line_load_stresses(x, z, P).tau_xz, -np.inf, np.inf)[0]
    assert sz == pytest.approx(P, rel=1e-10) and tau == pytest.approx(0.0, abs=1e-10)
    with pytest.raises(ValueError):
        an.flamant_line_load_stresses(0.0, 0.0, P)
    with pytest.raises(ValueError):
        an.strip_load_stresses(0.0, -1.0, 1.0, P)


# ============================================================================= cylinder


def test_lame_cylinder_meets_boundary_pressures():
    # sigma_rr(a) = -p_i, sigma_rr(b) = -p_o, tension positive (Lame 1852)
    s = an.lame_cylinder(np.array([0.5, 2.0]), 0.5, 2.0, 300.0, 100.0, E=2e4, nu=0.3)
    np.testing.assert_allclose(s.sigma_rr, [-300.0, -100.0], rtol=1e-14)


def test_lame_cylinder_is_in_equilibrium_and_obeys_plane_strain_hooke_law():
    # d(sigma_rr)/dr + (sigma_rr - sigma_tt)/r = 0 and sigma = lambda tr(eps) + 2G eps with
    # eps_rr = du/dr, eps_tt = u/r, eps_zz = 0 (Timoshenko & Goodier 1970)
    a, b, E, nu = 0.5, 2.0, 2e4, 0.3
    r = np.linspace(0.6, 1.9, 14)
    h = 1e-5
    f = lambda rr: an.lame_cylinder(rr, a, b, 300.0, 100.0, E, nu)  # noqa: E731
    s = f(r)
    dsrr = (f(r + h).sigma_rr - f(r - h).sigma_rr) / (2 * h)
    np.testing.assert_allclose(dsrr + (s.sigma_rr - s.sigma_tt) / r, 0.0, atol=1e-6)
    err = (f(r + h).u_r - f(r - h).u_r) / (2 * h)
    ett = s.u_r / r
    lam, G = E * nu / ((1 + nu) * (1 - 2 * nu)), E / (2 * (1 + nu))
    np.testing.assert_allclose(lam * (err + ett) + 2 * G * err, s.sigma_rr, rtol=1e-7)
    np.testing.assert_allclose(lam * (err + ett) + 2 * G * ett, s.sigma_tt, rtol=1e-7)
    np.testing.assert_allclose(lam * (err + ett), s.sigma_zz, rtol=1e-7)


def test_lame_cylinder_thin_wall_and_equal_pressure_limits():
    # thin wall: hoop stress p a / t (Barlow's formula, common practice); error O(t/a)
    a, t = 1.0, 1e-3
    s = an.lame_cylinder(a + t / 2, a, a + t, 10.0, 0.0, E=2e5, nu=0.25)
    assert s.sigma_tt == pytest.approx(10.0 * a / t, rel=2 * t / a)
    # equal inner and outer pressure: uniform stress -p, u_r = -(1+nu)(1-2nu) p r / E
    r = np.array([1.0, 1.5, 2.0])
    s = an.lame_cylinder(r, 1.0, 2.0, 40.0, 40.0, E=1e4, nu=0.25)
    np.testing.assert_allclose(s.sigma_rr, -40.0, rtol=1e-14)
    np.testing.assert_allclose(s.sigma_tt, -40.0, rtol=1e-14)
    np.testing.assert_allclose(s.u_r, -(1.25 * 0.5) * 40.0 * r / 1e4, rtol=1e-14)
    with pytest.raises(ValueError):
        an.lame_cylinder(0.5, 1.0, 2.0, 1.0, 0.0, E=1e4, nu=0.25)


def test_oedometer_modulus_is_lambda_plus_two_g():
    # E (1-nu)/((1+nu)(1-2nu)) = lambda + 2G (Timoshenko & Goodier 1970); = E when nu = 0
    E, nu = 5000.0, 0.35
    lam, G = E * nu / ((1 + nu) * (1 - 2 * nu)), E / (2 * (1 + nu))
    assert an.oedometer_modulus(E, nu) == pytest.approx(lam + 2 * G, rel=1e-14)
    assert an.oedometer_modulus(E, 0.0) == E
    with pytest.raises(ValueError):
        an.oedometer_modulus(E, 0.5)
