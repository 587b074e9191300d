"""Stress increase under surface loads (solver.hand.stress).

Each check names its source. The strong checks integrate the Boussinesq (1885) point-load
solution sigma_z = 3 P z^3 / (2 pi R^5) numerically with scipy.integrate over the loaded
area, independently of the closed forms under test.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy import integrate

from solver.errors import InputError
from solver.hand import load_objects as lo
from solver.hand import stress as st


def boussinesq_sz(xi, eta, x, y, z):
    """sigma_z per unit point load at (xi, eta) on the surface (Boussinesq 1885)."""
    r2 = (x - xi) ** 2 + (y - eta) ** 2 + z * z
    return 3.0 * z**3 / (2.0 * np.pi * r2**2.5)


def strip_by_boussinesq(x, z, x1, x2, p=lambda xi: 1.0):
    """sigma_z under a strip x1..x2 (infinite in y) of pressure p(xi), by double quadrature."""
    val, _ = integrate.dblquad(lambda eta, xi: p(xi) * boussinesq_sz(xi, eta, x, 0.0, z), x1, x2,
                               -np.inf, np.inf, epsabs=1e-10, epsrel=1e-10)
    return val


def flamant_sx(x, z, x1, x2, p=lambda xi: 1.0):
    """sigma_x under a strip from the Flamant (1892) line load 2 P (x-xi)^2 z / (pi r^4)."""
    f = lambda xi: p(xi) * 2.0 * (x - xi) ** 2 * z / (np.pi * ((x - xi) ** 2 + z * z) ** 2)  # noqa: E731
    return integrate.quad(f, x1, x2, epsabs=1e-12, epsrel=1e-12, limit=200)[0]


# ------------------------------------------------------------------------- strips


def test_strip_centre_influence_matches_published_table():
    # Poulos & Davis (1974), Elastic Solutions for Soil and Rock Mechanics, uniform strip,
    # sigma_z/q under the centre at z/b = 1 -> 0.818 and z/b = 2 -> 0.550, and under the
    # edge at z/b = 1 -> 0.480 (b = half-width; table values from memory).
    sz, _ = st.uniform_strip_stress(0.0, [1.0, 2.0], width=2.0, q=1.0)
    assert sz == pytest.approx([0.818, 0.550], abs=5e-4)
    assert st.uniform_strip_stress(1.0, 1.0, 2.0, 1.0)[0] == pytest.approx(0.480, abs=5e-4)


def test_strip_surface_stress_equals_applied_pressure():
    # Boundary condition of the half-space (common practice): at z = 0 the vertical stress is
    # the surface pressure, half of it at the edge.
    sz, _ = st.uniform_strip_stress([-0.5, 1.0, 3.0], 0.0, width=2.0, q=50.0)
    assert sz == pytest.approx([50.0, 25.0, 0.0], abs=1e-12)


@pytest.mark.parametrize("x, z", [(0.0, 1.0), (1.0, 0.5), (2.5, 2.0), (-4.0, 3.0)])
def test_strip_vertical_stress_equals_integrated_boussinesq(x, z):
    # Boussinesq (1885) point load integrated over the strip and its infinite length.
    ref = strip_by_boussinesq(x, z, -1, 1)
    assert st.uniform_strip_stress(x, z, 2.0, 1.0)[0] == pytest.approx(ref, abs=1e-6)


def test_strip_horizontal_stress_equals_integrated_flamant():
    # Flamant (1892) line-load horizontal stress integrated over the width.
    for x, z in [(0.0, 1.0), (1.0, 0.5), (3.0, 2.0)]:
        assert st.uniform_strip_stress(x, z, 2.0, 1.0)[1] == pytest.approx(flamant_sx(x, z, -1, 1), abs=1e-9)


def test_strip_agrees_with_analytic_module():
    # Carothers (1920) / Poulos & Davis (1974) in the angle form, written independently in
    # solver.analytic.strip_load_stresses.
    from solver.analytic import strip_load_stresses

    x, z = np.meshgrid(np.linspace(-5, 5, 11), np.linspace(0.0, 6.0, 7))
    mine = st.uniform_strip_stress(x + 2.0, z, width=3.0, q=80.0, x_center=2.0)
    other = strip_load_stresses(x, z, 1.5, 80.0)
    np.testing.assert_allclose(mine[0], other.sigma_z, atol=1e-10)
    np.testing.assert_allclose(mine[1], other.sigma_x, atol=1e-10)


@pytest.mark.parametrize("x, z", [(0.5, 1.0), (3.0, 0.7), (-2.0, 2.0), (6.0, 4.0)])
def test_linearly_varying_strip_equals_integrated_boussinesq(x, z):
    # Triangular + uniform strip (Poulos & Davis 1974) against the Boussinesq (1885) point
    # load integrated over the linearly varying pressure 10 -> 30 kPa on 0..4 m, and sigma_x
    # against the Flamant (1892) line load integrated the same way.
    p = lambda xi: 10.0 + 5.0 * xi  # noqa: E731
    sz, sx = st.linear_strip_stress(x, z, 0.0, 4.0, 10.0, 30.0)
    assert sz == pytest.approx(strip_by_boussinesq(x, z, 0.0, 4.0, p), abs=2e-5)
    assert sx == pytest.approx(flamant_sx(x, z, 0.0, 4.0, p), abs=1e-8)


def test_embankment_centreline_matches_osterberg_formula():
    # Osterberg (1957), Proc. 4th ICSMFE: half embankment of crest half-width b and slope
    # run a, at depth z under the crest end: I = [(a+b)/a (alpha1+alpha2) - b/a alpha2]/pi,
    # alpha2 = atan(b/z), alpha1 = atan((a+b)/z) - alpha2 (formula from memory). The full
    # symmetric embankment is twice that on the centre line.
    a, b, h, gamma = 6.0, 4.0, 3.0, 20.0   # 2H:1V slopes, 8 m crest, 3 m of fill
    z = np.array([0.5, 2.0, 5.0, 15.0])
    a2 = np.arctan(b / z)
    a1 = np.arctan((a + b) / z) - a2
    expected = 2.0 * gamma * h * ((a + b) / a * (a1 + a2) - b / a * a2) / np.pi
    load = lo.EmbankmentLoad(x_center=0.0, crest_width=2 * b, side_slope=a / h, height=h, unit_weight=gamma)
    np.testing.assert_allclose(load.vertical_stress(0.0, z), expected, rtol=1e-12)


def test_embankment_under_slope_equals_integrated_boussinesq():
    # Boussinesq (1885) integrated over the trapezoidal pressure.
    load = lo.EmbankmentLoad(x_center=0.0, crest_width=8.0, side_slope=2.0, height=3.0, unit_weight=20.0)
    xn, qn = load.profile().x_nodes, load.profile().q_nodes
    p = lambda xi: np.interp(xi, xn, qn)  # noqa: E731
    for x, z in [(7.0, 2.0), (12.0, 3.0)]:
        # split the quadrature at the kinks of the pressure
        ref = sum(strip_by_boussinesq(x, z, xn[i], xn[i + 1], p) for i in range(3))
        assert load.vertical_stress(x, z) == pytest.approx(ref, abs=1e-4)


def test_berm_profile_is_the_sum_of_its_trapezoids():
    # Superposition (linear elasticity; common practice): an embankment with berms equals
    # the main embankment plus the berm strips.
    x = np.linspace(-30, 30, 13)
    z = np.array([[1.0], [5.0], [12.0]])
    main = lo.EmbankmentLoad(0.0, 10.0, 2.0, 4.0, 19.0)
    # berms 2 m thick (38 kPa) from the toe of the upper slope outward, 6 m wide, 2H:1V ends
    left = lo.ProfileLoad((-25.0, -21.0, -15.0, -13.0), (0.0, 38.0, 38.0, 0.0), "left berm")
    right = lo.ProfileLoad((13.0, 15.0, 21.0, 25.0), (0.0, 38.0, 38.0, 0.0), "right berm")
    # the same ground surface written as one fill surface (heights in m)
    xs = [-25.0, -21.0, -15.0, -13.0, -5.0, 5.0, 13.0, 15.0, 21.0, 25.0]
    hs = [0.0, 2.0, 2.0, 0.0, 4.0, 4.0, 0.0, 2.0, 2.0, 0.0]
    whole = lo.ProfileLoad.from_fill_surface(xs, hs, 19.0)
    parts = lo.superpose([main, left, right], x, z)
    np.testing.assert_allclose(whole.vertical_stress(x, z), parts, rtol=1e-12, atol=1e-12)


def test_profile_load_surface_stress_equals_fill_pressure():
    # Half-space boundary condition (common practice).
    load = lo.EmbankmentLoad(0.0, 10.0, 2.0, 4.0, 19.0)
    x = np.array([-12.0, -9.0, -5.0, 0.0, 7.0, 20.0])
    np.testing.assert_allclose(load.vertical_stress(x, 0.0),
                               np.interp(x, load.profile().x_nodes, load.profile().q_nodes), atol=1e-9)


def test_strip_far_field_tends_to_line_load():
    # Flamant (1892): far from the strip the load acts as a line load P = q B.
    x, z = 40.0, 30.0
    r2 = x * x + z * z
    line = 2 * 10.0 * z**3 / (np.pi * r2**2)
    assert st.uniform_strip_stress(x, z, 1.0, 10.0)[0] == pytest.approx(line, rel=1e-3)


# --------------------------------------------------------------------- rectangles


def test_rectangle_corner_influence_matches_fadum_chart():
    # Fadum (1948), Proc. 2nd ICSMFE / Newmark (1935) influence values (from memory):
    # m = n = 1 -> 0.1752, m = n = 0.5 -> 0.0840, m = n = 2 -> 0.2325 (here V < m^2 n^2, the
    # arctan branch that needs + pi), m = n = inf -> 0.25.
    i = st.rectangle_corner_influence([1.0, 0.5, 2.0, np.inf], [1.0, 0.5, 2.0, np.inf])
    np.testing.assert_allclose(i, [0.1752, 0.0840, 0.2325, 0.25], atol=6e-5)


def test_rectangle_corner_of_long_rectangle_is_half_the_strip_edge_value():
    # Symmetry (common practice): a rectangle infinitely long one way gives at its corner
    # half of the stress under the edge of an infinite strip of the same width; Fadum chart
    # m = 1, n = inf -> 0.2046 (from memory).
    edge = st.uniform_strip_stress(0.0, 1.0, width=1.0, q=1.0, x_center=0.5)[0]
    assert st.rectangle_corner_influence(1.0, 1e7) == pytest.approx(0.5 * edge, abs=1e-7)
    assert 0.5 * edge == pytest.approx(0.2046, abs=1e-4)


def test_rectangle_corner_influence_with_one_infinite_side_is_the_limit_of_the_closed_form():
    # Newmark (1935) corner formula, the side n taken to infinity numerically: the finite
    # values converge (as 1/n^4) to the value returned for n = inf, for either side infinite;
    # the limits are Fadum's (1948) chart values 0.2046 for (1, inf) and 0.1374 for
    # (0.5, inf) (chart values from memory, confirmed here by the limit itself).
    for m, fadum in ((1.0, 0.2046), (0.5, 0.1374), (2.0, None), (0.1, None)):
        n = np.array([1e2, 1e3, 1e4, 1e5, 1e6])
        finite = st.rectangle_corner_influence(m, n)
        limit = float(st.rectangle_corner_influence(m, np.inf))
        err = np.abs(finite - limit)
        assert 0.0 < err[0] < 1e-8 and err[1] < 2e-3 * err[0]   # converging as 1/n^4 ...
        assert np.all(err[2:] < 1e-15)                          # ... to round-off
        assert float(st.rectangle_corner_influence(np.inf, m)) == limit     # symmetric in m, n
        if fadum is not None:
            assert limit == pytest.approx(fadum, abs=1e-4)          # the chart's last digit
    assert float(st.rectangle_corner_influence(0.0, np.inf)) == 0.0
    assert float(st.rectangle_corner_influence(np.inf, np.inf)) == 0.25


def test_rectangle_corner_influence_is_continuous_where_the_arctan_branch_changes():
    # Newmark (1935): the arctan argument changes sign at m^2 n^2 = m^2 + n^2 + 1; the
    # influence itself is smooth there (here m = 2, n = sqrt(5/3)).
    n0 = np.sqrt(5.0 / 3.0)
    n = n0 + np.array([-1e-7, 0.0, 1e-7])
    i = st.rectangle_corner_influence(2.0, n)
    assert abs(i[2] - i[0]) < 1e-7
    assert np.all(np.diff(st.rectangle_corner_influence(2.0, np.linspace(1.0, 1.6, 61))) > 0.0)


@pytest.mark.parametrize("x, y, z", [(0.0, 0.0, 1.0), (0.9, 0.4, 0.6), (3.0, 0.5, 1.5), (4.0, -3.0, 2.5)])
def test_rectangle_vertical_stress_equals_integrated_boussinesq(x, y, z):
    # Boussinesq (1885) over a 3 m x 2 m rectangle, centre (0.5, 0), points inside and outside.
    ref, _ = integrate.dblquad(lambda eta, xi: boussinesq_sz(xi, eta, x, y, z), -1.0, 2.0, -1.0, 1.0,
                               epsabs=1e-11, epsrel=1e-11)
    got = st.rectangle_vertical_stress(x, y, z, 3.0, 2.0, 1.0, x_center=0.5)
    assert got == pytest.approx(ref, abs=1e-8)


def test_rectangle_surface_and_load_object():
    # Half-space boundary condition (common practice); RectangleLoad is the same function.
    load = lo.RectangleLoad(0.0, 0.0, 4.0, 2.0, 100.0)
    got = load.vertical_stress(np.array([0.0, 2.0, 2.0, 3.0]), 0.0, np.array([0.0, 0.0, 1.0, 0.0]))
    np.testing.assert_allclose(got, [100.0, 50.0, 25.0, 0.0], atol=1e-12)


# ------------------------------------------------------------------------ circles


def test_circle_centre_closed_form_matches_table():
    # Boussinesq integration on the axis (Poulos & Davis 1974): z = a -> 1 - 2^-1.5 = 0.6464.
    sz, _ = st.circle_centre_stress([0.0, 1.0], 1.0, 1.0)
    assert sz == pytest.approx([1.0, 0.6464], abs=1e-4)


@pytest.mark.parametrize("r, z", [(0.5, 0.3), (1.0, 1.0), (0.98, 0.05), (1.02, 0.05), (1.5, 0.8), (3.0, 2.0)])
def test_circle_off_axis_equals_integrated_boussinesq(r, z):
    # Boussinesq (1885) integrated over the disc in polar coordinates about its centre,
    # required to 1e-3 q; obtained ~1e-6 q.
    def polar(rho, phi):
        return rho * boussinesq_sz(rho * np.cos(phi), rho * np.sin(phi), r, 0.0, z)
    ref, _ = integrate.dblquad(polar,
                               0.0, np.pi, 0.0, 1.0, epsabs=1e-10, epsrel=1e-10)
    got = st.circle_vertical_stress(r, 0.0, z, radius=1.0, q=1.0)
    assert got == pytest.approx(2.0 * ref, abs=1e-5)


def test_circle_edge_value_matches_published_chart():
    # Foster & Ahlvin (1954) chart for a circular load: under the edge at z = a,
    # sigma_z / q ~ 0.332 (from memory).
    assert st.circle_vertical_stress(1.0, 0.0, 1.0, 1.0, 1.0) == pytest.approx(0.332, abs=1e-3)


def test_circle_off_axis_is_continuous_with_the_axis_closed_form():
    # The numerical integral near the axis tends to the closed form (Poulos & Davis 1974).
    z = np.array([0.2, 1.0, 4.0])
    near = st.circle_vertical_stress(1e-6, 0.0, z, 2.0, 1.0)
    np.testing.assert_allclose(near, st.circle_centre_stress(z, 2.0, 1.0)[0], atol=1e-6)


def test_circle_centre_horizontal_stress_equals_integrated_boussinesq():
    # Boussinesq (1885) point load: sigma_r = P/(2 pi) [3 r^2 z / R^5 - (1-2nu)/(R(R+z))],
    # sigma_theta = P(1-2nu)/(2 pi) [1/(R(R+z)) - z/R^3]; on the axis a ring gives the mean
    # (sigma_r + sigma_theta)/2 in every horizontal direction.
    nu, a = 0.3, 1.5
    for z in (0.4, 1.0, 3.0):
        def ring(rho):
            big_r = np.hypot(rho, z)
            sr = (3 * rho**2 * z / big_r**5 - (1 - 2 * nu) / (big_r * (big_r + z))) / (2 * np.pi)
            stt = (1 - 2 * nu) * (1 / (big_r * (big_r + z)) - z / big_r**3) / (2 * np.pi)
            return 2 * np.pi * rho * 0.5 * (sr + stt)
        ref = integrate.quad(ring, 0.0, a, epsabs=1e-12)[0]
        assert st.circle_centre_stress(z, a, 1.0, nu)[1] == pytest.approx(ref, abs=1e-9)


# --------------------------------------------------------------- 2:1 and objects


def test_two_to_one_spread_keeps_the_total_load():
    # 2:1 method (common practice): stress times spread area equals the applied force.
    z = np.array([0.0, 1.0, 5.0])
    np.testing.assert_allclose(st.spread_2to1_strip(z, 2.0, 100.0) * (2.0 + z), 200.0)
    np.testing.assert_allclose(st.spread_2to1_rectangle(z, 3.0, 2.0, 100.0) * (3 + z) * (2 + z), 600.0)
    np.testing.assert_allclose(st.spread_2to1_circle(z, 2.0, 100.0) * (2 + z) ** 2, 400.0)


def test_two_to_one_spread_is_near_the_elastic_average_at_depth():
    # The 2:1 value is a rough average; at z = 2B under a square it lies within 25 % of the
    # centre value of elasticity (Holtz & Kovacs 1981 compare the two; common practice).
    centre = st.rectangle_vertical_stress(0.0, 0.0, 4.0, 2.0, 2.0, 1.0)
    assert st.spread_2to1_rectangle(4.0, 2.0, 2.0, 1.0) == pytest.approx(centre, rel=0.25)


def test_superpose_adds_loads_of_all_kinds():
    # Superposition (linear elasticity; common practice).
    loads = [lo.StripLoad(0.0, 2.0, 10.0), lo.RectangleLoad(1.0, 0.0, 2.0, 2.0, 20.0),
             lo.CircleLoad(-1.0, 0.0, 1.0, 30.0)]
    x, z = np.array([0.0, 1.0, 2.0]), np.array([1.0, 2.0, 3.0])
    expected = sum(load.vertical_stress(x, z, 0.0) for load in loads)
    np.testing.assert_allclose(lo.superpose(loads, x, z), expected)


def test_invalid_load_names_the_field():
    with pytest.raises(InputError) as err:
        lo.StripLoad(0.0, -2.0, 10.0, name="footing A")
    assert err.value.field == "loads.footing A.width"
    with pytest.raises(InputError):
        st.uniform_strip_stress(0.0, -1.0, 2.0, 1.0)
    with pytest.raises(InputError):
        lo.ProfileLoad((0.0, 2.0, 1.0), (0.0, 1.0, 0.0))
