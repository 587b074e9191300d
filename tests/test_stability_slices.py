"""Limit equilibrium by slices (solver/stability): closed forms, published charts, a hand table."""

from math import atan, cos, radians, sin, tan

import numpy as np
import pytest

from solver.stability import (SearchBox, Slices, SlopeSoil, bishop, circle_slices, polyline_slices,
                              search_circles, search_noncircular, spencer, spencer_on)

GAMMA_W = 9.81


def uniform_soil(sx, sy, gamma, c, phi_deg, u=None, drained=True):
    def unit_weight(x, y):
        return np.full(np.shape(x), gamma)

    def strength(x, y):
        n = np.shape(x)
        return (np.full(n, c), np.full(n, tan(radians(phi_deg))), np.full(n, drained))

    def pore(x, y):
        return np.zeros(np.shape(x)) if u is None else u(x, y)
    return SlopeSoil(np.asarray(sx, float), np.asarray(sy, float), unit_weight, strength, pore)


def long_slope(beta_deg, length):
    top = length * tan(radians(beta_deg))
    return [-50.0, 0.0, length, length + 50.0], [top, top, 0.0, 0.0], top


def planar_surface(beta_deg, length, z, top):
    """A slip plane at vertical depth z parallel to the slope, with steep ends to the surface."""
    t60 = tan(radians(70.0))
    return ([-z / t60 - 0.01, 0.0, length, length + z / t60 + 0.01],
            [top + 0.01, top - z, -z, 0.01])


@pytest.mark.parametrize("c,phi,seepage", [(0.0, 30.0, False), (5.0, 25.0, False), (5.0, 30.0, True)])
def test_infinite_slope(c, phi, seepage):
    # Infinite slope, vertical depth z to a slip plane parallel to the surface, water table at
    # the surface with seepage parallel to the slope (u = gamma_w z cos^2 beta):
    # F = [c' + (gamma z cos^2 b - u) tan phi'] / (gamma z sin b cos b) (e.g. Taylor 1948,
    # Fundamentals of Soil Mechanics; Skempton and DeLory 1957). A finite slope's ends change F
    # by O(z / L): slopes 200 z and 400 z long, extrapolated to infinite length (Richardson),
    # must give the closed form.
    beta, z, gamma = 20.0, 2.0, 19.0
    b = radians(beta)
    u = GAMMA_W * z * cos(b) ** 2 if seepage else 0.0
    expected = (c + (gamma * z * cos(b) ** 2 - u) * tan(radians(phi))) / (gamma * z * sin(b) * cos(b))
    factors = []
    for length in (400.0, 800.0):
        sx, sy, top = long_slope(beta, length)
        u_fun = None
        if seepage:
            def u_fun(x, y, sx=sx, sy=sy):
                return GAMMA_W * np.maximum(np.interp(x, sx, sy) - y, 0.0) * cos(b) ** 2
        soil = uniform_soil(sx, sy, gamma, c, phi, u_fun)
        F, theta = spencer(polyline_slices(soil, *planar_surface(beta, length, z, top), n=800))
        factors.append(F)
    assert factors[1] == pytest.approx(expected, rel=1e-2)
    assert 2 * factors[1] - factors[0] == pytest.approx(expected, rel=1e-3)
    # the interslice forces of an infinite slope are parallel to it
    assert np.degrees(theta) == pytest.approx(beta, abs=1.0)


def test_bishop_hand_table():
    # An invented four-slice circle (c' = 10 kPa, phi' = 30 deg), Bishop (1955):
    #   slice  b (m)  alpha (deg)  W (kN/m)  u (kPa)
    #     1    2.0      -10          40        5
    #     2    2.0       10         120       15
    #     3    2.0       30         150       12
    #     4    2.0       50          80        0
    # F = sum[(c b + (W - u b) tan phi) / m_a] / sum W sin a, m_a = cos a (1 + tan a tan phi / F).
    # Iterated by hand from F = 1.5:
    #   sum W sin a = -6.946 + 20.838 + 75.000 + 61.284 = 150.175 kN/m
    #   numerators c b + (W - u b) tan phi: 37.321, 71.962, 92.746, 66.188
    #   F = 1.5   : m_a = 0.9180, 1.0516, 1.0585, 0.9376 -> F = 1.7799
    #   F = 1.7799: m_a = 0.9285, 1.0411, 1.0282, 0.8913 -> F = 1.8231
    #   ... converges to F = 1.8297 (four figures)
    alpha = np.radians([-10.0, 10.0, 30.0, 50.0])
    s = Slices(x=np.array([1.0, 3.0, 5.0, 7.0]), y=np.zeros(4), width=np.full(4, 2.0), alpha=alpha,
               weight=np.array([40.0, 120.0, 150.0, 80.0]), c=np.full(4, 10.0),
               tan_phi=np.full(4, tan(radians(30.0))), u=np.array([5.0, 15.0, 12.0, 0.0]),
               direction=1, top=np.ones(4))
    assert float(np.sum(s.weight * np.sin(alpha))) == pytest.approx(150.175, abs=1e-3)
    assert bishop(s) == pytest.approx(1.8297, abs=1e-4)


def test_bishop_hand_table_iterates_as_shown():
    # The hand iteration above, step by step (same numbers), so the table itself is checked.
    alpha = np.radians([-10.0, 10.0, 30.0, 50.0])
    num = 10 * 2.0 + (np.array([40.0, 120.0, 150.0, 80.0]) - 2.0 * np.array([5.0, 15.0, 12.0, 0.0])) \
        * tan(radians(30.0))
    assert num == pytest.approx([37.321, 71.962, 92.746, 66.188], abs=1e-3)
    m = np.cos(alpha) * (1 + np.tan(alpha) * tan(radians(30.0)) / 1.5)
    assert m == pytest.approx([0.9180, 1.0516, 1.0585, 0.9376], abs=1e-4)
    assert np.sum(num / m) / 150.175 == pytest.approx(1.7799, abs=1e-4)


def slope_section(beta_deg, height, depth_below_toe, extent=60.0):
    run = height / tan(radians(beta_deg))
    return [-extent, 0.0, run, run + extent], [height, height, 0.0, 0.0], run


@pytest.mark.parametrize("beta,N_taylor,depth", [(75.0, 0.219, 0.0), (60.0, 0.191, 0.0),
                                                  (45.0, 0.170, 0.0), (30.0, 0.181, 40.0)])
def test_cohesive_slope_against_taylor(beta, N_taylor, depth):
    # Taylor (1937), phi = 0: stability number N = c / (F gamma H); toe circles 0.219 (75 deg),
    # 0.191 (60 deg), 0.170 (45 deg, firm base at the toe), and 0.181 for slopes under 53 deg on
    # deep clay (midpoint circle, large depth factor). Values from Taylor's table, from memory.
    # For phi = 0 Bishop's method is exact moment equilibrium of the circle (with exact arc
    # lengths), so the three-figure values limit the tolerance (1 %).
    H, gamma, c = 10.0, 18.0, 30.0
    sx, sy, run = slope_section(beta, H, depth, extent=150.0 if depth else 60.0)
    soil = uniform_soil(sx, sy, gamma, c, 0.0, drained=False)
    base = -depth
    box = SearchBox(centre_x=(-20.0, run + 20.0), centre_y=(H + 1.0, H + 60.0),
                    tangent_y=(base + 1e-3, H - 1.0), min_depth=1.0, grid=(10, 8, 8))
    crit = search_circles(soil, box)
    N = c / (crit.factor_of_safety * gamma * H)
    assert N == pytest.approx(N_taylor, rel=0.01)


def test_spencer_equals_bishop_for_undrained_circles():
    # phi = 0: both methods reduce to moment equilibrium about the centre, F = sum s_u l R /
    # sum W x (Fellenius 1936); the same number to solver precision. (Spencer's two equations
    # have no common root on some circles with a steep entry; this one has.)
    sx, sy, run = slope_section(45.0, 8.0, 0.0)
    soil = uniform_soil(sx, sy, 18.0, 25.0, 0.0, drained=False)
    s = circle_slices(soil, 4.0, 16.0, 15.0, n=60)
    F_b = bishop(s)
    F_s, _ = spencer(s, F0=F_b)
    assert F_s == pytest.approx(F_b, rel=1e-6)
    # and Fellenius' direct moment ratio
    x_arm = np.sum(s.weight * np.sin(s.alpha))
    assert F_b == pytest.approx(np.sum(s.c * s.base_length) / x_arm, rel=1e-9)


def test_spencer_close_to_bishop_for_circles():
    # Spencer (1967): on circles his factor is within about 1 % of Bishop's simplified one.
    sx, sy, run = slope_section(30.0, 8.0, 0.0)
    soil = uniform_soil(sx, sy, 19.0, 8.0, 28.0)
    box = SearchBox(centre_x=(-10.0, run + 5.0), centre_y=(9.0, 40.0), tangent_y=(-5.0, 6.0),
                    min_depth=1.0, grid=(8, 6, 6))
    crit = search_circles(soil, box)
    sp = spencer_on(crit)
    assert sp.factor_of_safety == pytest.approx(crit.factor_of_safety, rel=0.02)


def test_noncircular_search_finds_the_weak_seam():
    # A thin weak seam at depth: the non-circular search must find a surface along it with a
    # smaller Spencer factor than the best circle (Spencer 1973: non-circular surfaces).
    sx, sy, run = slope_section(26.57, 8.0, 0.0)        # 1 vertical : 2 horizontal

    def strength(x, y):
        weak = (y < -1.5) & (y > -2.5)
        return (np.where(weak, 5.0, 20.0), np.where(weak, 0.0, tan(radians(30.0))),
                np.ones(np.shape(x), bool))
    soil = SlopeSoil(np.array(sx), np.array(sy), lambda x, y: np.full(np.shape(x), 19.0), strength,
                     lambda x, y: np.zeros(np.shape(x)))
    box = SearchBox(centre_x=(-10.0, run + 10.0), centre_y=(9.0, 45.0), tangent_y=(-2.4, 6.0),
                    min_depth=1.0, grid=(8, 6, 8))
    circ = search_circles(soil, box)
    non = search_noncircular(soil, circ, box)
    assert non.factor_of_safety < spencer_on(circ).factor_of_safety
    assert non.points is not None and non.points.shape[1] == 2


def test_slices_weigh_the_sliding_mass():
    # The slices' weights add up to gamma x the area between the circle and the ground (shoelace).
    sx, sy, run = slope_section(45.0, 6.0, 0.0)
    soil = uniform_soil(sx, sy, 20.0, 10.0, 30.0)
    xc, yc, r = 3.0, 10.0, 11.0
    s = circle_slices(soil, xc, yc, r, n=400)
    x = np.linspace(s.x[0] - s.width[0] / 2, s.x[-1] + s.width[-1] / 2, 20001)
    depth = np.interp(x, sx, sy) - (yc - np.sqrt(r * r - (x - xc) ** 2))
    assert s.weight.sum() == pytest.approx(20.0 * np.trapezoid(depth, x), rel=1e-4)
