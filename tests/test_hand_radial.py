"""Radial consolidation towards vertical drains (solver/hand/radial.py).

Each closed form is checked against its published statement and against an independent
numerical solution written here (quadrature of the equal-strain head, a finite-difference
solution of the free-strain equation).
"""

from math import log, pi

import numpy as np
import pytest
from scipy import integrate

from solver.errors import InputError
from solver.hand import radial


def test_band_drain_equivalent_diameter():
    # Hansbo (1979): d_w = 2 (a + b) / pi; a 100 x 4 mm band drain gives 66.2 mm.
    assert radial.band_drain_diameter(0.100, 0.004) == pytest.approx(0.0662, abs=5e-5)


def test_unit_cell_has_the_area_one_drain_serves():
    # Barron (1948): d_e = 1.05 s (triangular), 1.128 s (square): the circle of equal area.
    s = 1.5
    tri = radial.cell_diameter(s, "triangular")
    sq = radial.cell_diameter(s, "square")
    assert pi * tri ** 2 / 4 == pytest.approx(np.sqrt(3) / 2 * s * s, rel=1e-12)   # hexagon
    assert pi * sq ** 2 / 4 == pytest.approx(s * s, rel=1e-12)
    assert tri / s == pytest.approx(1.05, abs=0.001)
    assert sq / s == pytest.approx(1.128, abs=0.001)


@pytest.mark.parametrize("n", [5.0, 10.0, 20.0, 60.0])
def test_ideal_cell_factor_is_barrons(n):
    # Barron (1948), equal strain: F(n) = n^2/(n^2-1) ln n - (3 n^2 - 1)/(4 n^2).
    cell = radial.DrainCell(cell_diameter=n * 0.05, drain_diameter=0.05)
    expected = n * n / (n * n - 1) * log(n) - (3 * n * n - 1) / (4 * n * n)
    assert radial.cell_factor(cell) == pytest.approx(expected, rel=1e-12)


def _quadrature_factor(re, rw, rs, kappa):
    """mu by direct quadrature of the equal-strain head (independent of the module's algebra)."""
    def grad(r):                                   # k_h/k(r) * (re^2/r - r)
        return (kappa if r < rs else 1.0) * (re * re / r - r)

    def head(r):
        pts = [rs] if rw < rs < r else None
        return integrate.quad(grad, rw, r, points=pts, limit=200)[0]
    pts = [rs] if rw < rs < re else None
    mean = integrate.quad(lambda r: head(r) * 2 * r, rw, re, points=pts, limit=200)[0] / (re * re - rw * rw)
    return mean / (re * re)


@pytest.mark.parametrize("n,s,kappa", [(20.0, 2.0, 3.0), (15.0, 3.0, 5.0), (40.0, 1.0, 1.0)])
def test_cell_factor_with_smear_matches_quadrature(n, s, kappa):
    dw = 0.066
    cell = radial.DrainCell(n * dw, dw, smear_ratio=s, smear_permeability_ratio=kappa)
    expected = _quadrature_factor(n * dw / 2, dw / 2, s * dw / 2, kappa)
    assert radial.cell_factor(cell) == pytest.approx(expected, rel=1e-8)


def test_cell_factor_tends_to_hansbos_simplified_form():
    # Hansbo (1981): mu = ln(n/s) + (k_h/k_s) ln s - 3/4 for n >> s; the neglected terms are of
    # order kappa s^2 / n^2 (here below 0.2 %).
    n, s, kappa = 200.0, 3.0, 4.0
    cell = radial.DrainCell(n * 0.05, 0.05, smear_ratio=s, smear_permeability_ratio=kappa)
    simplified = log(n / s) + kappa * log(s) - 0.75
    assert radial.cell_factor(cell) == pytest.approx(simplified, rel=2e-3)


def test_well_resistance_term_is_hansbos():
    # Hansbo (1981): mu_w = pi z (2 l - z) k_h / q_w; its mean over the drained length is
    # 2 pi l^2 k_h / (3 q_w).
    kh, qw, length = 2e-4, 80.0 / 365.0, 10.0        # m/day, m3/day (80 m3/year), m
    base = radial.DrainCell(1.6, 0.066, 2.0, 3.0)
    cell = radial.DrainCell(1.6, 0.066, 2.0, 3.0, permeability_h=kh, discharge_capacity=qw,
                            drain_length=length)
    for z in (0.0, 2.5, 10.0):
        assert radial.cell_factor(cell, z) - radial.cell_factor(base) == pytest.approx(
            pi * z * (2 * length - z) * kh / qw, rel=1e-12)
    zs = np.linspace(0, length, 2001)
    mean = np.trapezoid([radial.cell_factor(cell, z) for z in zs], zs) / length
    assert radial.cell_factor(cell) == pytest.approx(mean, rel=1e-6)


def test_equal_strain_degree_and_time_are_inverse():
    cell = radial.DrainCell(1.575, 0.066, 2.0, 3.0)
    ch = 0.03
    t90 = radial.radial_time_for_degree(0.9, ch, cell)
    assert float(radial.radial_degree(t90, ch, cell)) == pytest.approx(0.9, abs=1e-12)
    # U_h = 1 - exp(-8 T_h / mu) (Barron 1948; Hansbo 1981)
    th = ch * t90 / cell.cell_diameter ** 2
    assert th == pytest.approx(-log(0.1) * radial.cell_factor(cell) / 8, rel=1e-12)


def _free_strain_fd(t_end, ch, re, rw, n_nodes=600, n_steps=800):
    """Crank-Nicolson finite differences of du/dt = c_h (u_rr + u_r/r), u(rw) = 0, u_r(re) = 0,
    on a grid graded towards the drain; returns the area-average excess pore pressure."""
    import scipy.sparse as sp
    import scipy.sparse.linalg as spla
    x = np.linspace(0.0, 1.0, n_nodes)
    r = rw * (re / rw) ** x                          # geometric grid
    # finite-volume: faces halfway, volumes r dr
    face = np.concatenate([[r[0]], 0.5 * (r[1:] + r[:-1]), [r[-1]]])
    vol = 0.5 * (face[1:] ** 2 - face[:-1] ** 2)
    cond = 0.5 * (r[1:] + r[:-1]) / np.diff(r)        # r_face / dr
    n = n_nodes
    main = np.zeros(n)
    main[:-1] += cond
    main[1:] += cond
    K = sp.diags([main, -cond, -cond], [0, 1, -1], format="csr") * ch
    M = sp.diags(vol)
    dt = t_end / n_steps
    A = (M + 0.5 * dt * K).tolil()
    B = (M - 0.5 * dt * K).tocsr()
    A[0, :] = 0
    A[0, 0] = 1.0
    solve = spla.factorized(A.tocsc())
    u = np.ones(n)
    u[0] = 0.0
    for _ in range(n_steps):
        rhs = B @ u
        rhs[0] = 0.0
        u = solve(rhs)
    return float(np.sum(vol * u) / np.sum(vol))


def test_free_strain_series_against_finite_differences():
    # Barron (1948), free strain, ideal drain: the series solution against an independent
    # Crank-Nicolson finite-difference solution of the same equation.
    re, rw, ch = 0.8, 0.033, 0.05
    for t in (2.0, 10.0, 30.0):
        u_series = 1.0 - float(radial.free_strain_degree(t, ch, 2 * re, 2 * rw))
        assert u_series == pytest.approx(_free_strain_fd(t, ch, re, rw), abs=2e-3)


def test_free_and_equal_strain_nearly_agree():
    # Barron (1948): for n > 5 the free- and equal-strain average degrees differ little
    # (a few per cent of U at most).
    d_e, d_w, ch = 1.6, 0.066, 0.05
    cell = radial.DrainCell(d_e, d_w)
    t = np.array([5.0, 20.0, 60.0, 150.0])
    assert np.allclose(radial.free_strain_degree(t, ch, d_e, d_w), radial.radial_degree(t, ch, cell),
                       atol=0.03)


def test_carrillo_combination():
    # Carrillo (1942): 1 - U = (1 - U_v)(1 - U_h)
    assert radial.combined_degree(0.3, 0.6) == pytest.approx(1 - 0.7 * 0.4)


def test_plane_strain_factor_limit():
    # The plane-strain equal-strain cell with a line drain: mu_p -> 1/3 (Hird et al. 1992).
    assert radial.plane_strain_factor(1.0, 1e-9, 1e-9, 1.0) == pytest.approx(1 / 3, rel=1e-6)


def test_plane_strain_match_ideal_drain():
    # Indraratna and Redana (1997), B = R, ideal drain: k_hp / k_h = 0.67 / (ln n - 0.75)
    # (the 0.67 is 2/3); exact for n >> 1.
    n = 300.0
    cell = radial.DrainCell(n * 0.01, 0.01)
    m = radial.plane_strain_match(cell, drain_half_width=1e-9)
    assert m.permeability_ratio == pytest.approx((2 / 3) / (log(n) - 0.75), rel=5e-3)


def test_plane_strain_match_gives_the_same_degree_at_every_time_and_depth():
    # Hird, Pyrah and Russell (1992): the matched plane-strain cell has the same average
    # degree of consolidation at all times; with well resistance at every depth.
    kh, ch, length = 1e-4, 0.04, 12.0
    cell = radial.DrainCell(1.6, 0.066, 2.5, 4.0, permeability_h=kh, discharge_capacity=0.2,
                            drain_length=length)
    m = radial.plane_strain_match(cell)
    mu_p = radial.plane_strain_factor(m.half_width, m.drain_half_width, m.smear_half_width,
                                      m.smear_permeability_ratio)
    khp = m.permeability_ratio * kh
    for z in (0.0, 4.0, 12.0):
        # u_bar / eps_dot (times 1/gamma_w) in both cells; equal means equal rate at all times
        axi = cell.cell_diameter ** 2 / 4 * radial.cell_factor(cell, z) / (2 * kh)
        ps = m.half_width ** 2 * mu_p / khp + m.half_width * z * (2 * length - z) / m.discharge_capacity
        assert ps == pytest.approx(axi, rel=1e-10)
    # Hird et al. (1992), B = R: q_wp = 2 q_w / (pi B)
    assert m.discharge_capacity == pytest.approx(2 * 0.2 / (pi * m.half_width), rel=1e-12)


def test_equivalent_vertical_permeability():
    # Chai, Shen, Miura and Bergado (2001): k_ve = (1 + 2.5 l^2 k_h / (mu d_e^2 k_v)) k_v
    cell = radial.DrainCell(1.6, 0.066, 2.0, 3.0)
    mu = radial.cell_factor(cell)
    kv, kh, length = 1e-4, 2e-4, 10.0
    assert radial.equivalent_vertical_permeability(kv, kh, cell, length) == pytest.approx(
        kv * (1 + 2.5 * length ** 2 * kh / (mu * 1.6 ** 2 * kv)))


def test_spacing_for_degree_reaches_the_target():
    # Carrillo (1942) with Barron/Hansbo: at the spacing found, U = target by the time asked.
    from solver.hand.rate import degree_of_consolidation     # Terzaghi (1925)
    ch, cv, h_dr, t = 0.01, 0.005, 8.0, 270.0           # m2/day, m, days
    s = radial.spacing_for_degree(0.9, t, ch, cv, h_dr, "triangular", 0.066, 2.0, 3.0)
    cell = radial.DrainCell(radial.cell_diameter(s, "triangular"), 0.066, 2.0, 3.0)
    uv = float(degree_of_consolidation(t, cv, h_dr))
    u = radial.combined_degree(uv, radial.radial_degree(t, ch, cell))
    assert float(u) == pytest.approx(0.9, abs=1e-5)
    assert 1.0 < s < 3.0        # band drains are usually 1 to 3 m apart (common practice)


@pytest.mark.parametrize("kw,field", [
    (dict(cell_diameter=0.05, drain_diameter=0.066), "drains.spacing"),
    (dict(cell_diameter=1.0, drain_diameter=0.066, smear_ratio=20.0), "drains.smear_ratio"),
    (dict(cell_diameter=1.0, drain_diameter=0.066, smear_permeability_ratio=0.0),
     "drains.smear_permeability_ratio"),
    (dict(cell_diameter=1.0, drain_diameter=0.066, discharge_capacity=0.1),
     "drains.discharge_capacity"),
])
def test_bad_cells_are_refused_naming_the_field(kw, field):
    with pytest.raises(InputError) as err:
        radial.DrainCell(**kw)
    assert err.value.field == field
