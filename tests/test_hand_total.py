"""The hand method's total: the immediate settlement from the undrained modulus the user gives,
the oedometer settlement with the optional Skempton-Bjerrum (1957) factor, and how each part
was found. References are computed here: the centre-line integrals of the elastic stresses
under a strip (Carothers 1920) and on the axis of a circle (Boussinesq 1885, as given by
Poulos & Davis 1974) in closed form, and the one-dimensional settlement m_v q H (Terzaghi
1925). All sites are invented.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from solver.hand import settlement
from solver.hand.estimate import hand_estimate
from solver.model import (Drainage, Footing, Layer, Material, Model, OedometerParameters,
                          PointProbe, Section, Stage, SurfaceLoad, UndrainedParameters, Water)

GW = 9.81


def strip_alpha(h_over_b: float) -> float:
    """int_0^H ds_x dz / int_0^H ds_z dz on the centre line of a uniform strip of width B on a
    layer H thick: with a = 2 arctan(b / z), b = B/2, ds_z + ds_x = 2 q a / pi and
    ds_z - ds_x = 2 q sin(a) / pi = (2 q / pi) 2 b z / (b^2 + z^2) (Carothers 1920), so
    int a dz = 2 [H arctan(b/H) + (b/2) ln(1 + H^2/b^2)] and
    int sin(a) dz = b ln(1 + H^2 / b^2)."""
    b, H = 0.5, h_over_b
    ia = 2.0 * (H * math.atan(b / H) + 0.5 * b * math.log1p(H * H / (b * b)))
    isin = b * math.log1p(H * H / (b * b))
    return (ia - isin) / (ia + isin)


def circle_alpha(h_over_b: float) -> float:
    """The same on the axis of a uniform circle of diameter B, nu = 0.5: with c = z / R,
    R = sqrt(a^2 + z^2), ds_z = q (1 - c^3) and ds_r = (q/2)(2 - 3 c + c^3) (Boussinesq
    1885; Poulos & Davis 1974), and int c^3 dz = R + a^2/R - 2a, int c dz = R - a."""
    a, H = 0.5, h_over_b
    R = math.hypot(a, H)
    ic3 = R + a * a / R - 2 * a
    ic = R - a
    return 0.5 * (2 * H - 3 * ic + ic3) / (H - ic3)


def footing_model(width, depth, a_param, axisymmetric=False, load=100.0, eu=None):
    clay = Material("clay", youngs_modulus=3000.0, poisson_ratio=0.3, unit_weight=18.0,
                    permeability_x=1e-4,
                    oedometer=OedometerParameters(volume_compressibility=3e-4),
                    undrained=UndrainedParameters(modulus=eu, pore_pressure_parameter=a_param))
    return Model("footing on clay (invented)", analysis="axisymmetric" if axisymmetric else "plane strain",
                 materials={"clay": clay}, layers=[Layer("clay", "clay", depth)],
                 section=Section(kind="footings", half=not axisymmetric,
                                 footings=[Footing("f", 0.0, width, load=load, rigid=False)]),
                 water=Water(table_depth=0.0, unit_weight=GW),
                 stages=[Stage("load", "load", 1.0, loads=["f"]), Stage("wait", "consolidate", 1000.0)],
                 probes=[PointProbe("centre", 0.0, 0.0)])


@pytest.mark.parametrize("h_over_b", [1.0, 2.0, 4.0])
@pytest.mark.parametrize("axisymmetric", [False, True])
def test_skempton_bjerrum_factor_of_a_footing_on_a_clay_layer(h_over_b, axisymmetric):
    # mu = A + (1 - A) alpha with alpha from the elastic stresses (Skempton & Bjerrum 1957; the
    # geometric factors of their table are these centre-line integrals, here in closed form)
    a_param, width = 0.6, 2.0
    m = footing_model(width, h_over_b * width, a_param, axisymmetric)
    p = hand_estimate(m, max_sublayer_thickness=0.02).probes["centre"]
    alpha = circle_alpha(h_over_b) if axisymmetric else strip_alpha(h_over_b)
    assert p.skempton_bjerrum["clay"] == pytest.approx(a_param + (1 - a_param) * alpha, rel=2e-3)
    oed = float(np.sum(p.sublayer_settlement_m)) / p.skempton_bjerrum["clay"]
    assert p.consolidation_settlement_m == pytest.approx(p.skempton_bjerrum["clay"] * oed, rel=1e-9)
    assert any("Skempton-Bjerrum (1957)" in n for n in p.notes)
    assert "Skempton-Bjerrum" in p.how_found["consolidation"]


def test_skempton_bjerrum_limits():
    # A thin layer: alpha -> 1 (one-dimensional); a circle on a deep layer: alpha -> 1/4
    # (the closed form above as H/B -> inf); a strip on a deep layer: alpha -> 0 (ds_x decays
    # as z^-3, ds_z as 1/z under a line load, Flamant 1892).
    assert circle_alpha(1e-4) == pytest.approx(1.0, abs=1e-3)
    assert strip_alpha(1e-4) == pytest.approx(1.0, abs=1e-3)
    assert circle_alpha(1e6) == pytest.approx(0.25, abs=1e-5)
    assert strip_alpha(1e6) < 0.1
    mu = settlement.skempton_bjerrum_factor(0.5, np.array([10.0, 10.0, 0.0]), np.array([10.0, 2.0, 1.0]))
    np.testing.assert_allclose(mu[:2], [1.0, 0.6])
    assert math.isnan(mu[2])


def test_a_wide_load_gives_no_immediate_settlement_and_the_oedometer_total():
    # A strip 100 times as wide as the layer is thick: one-dimensional conditions under its
    # centre, immediate settlement near zero, total = m_v q H (Terzaghi 1925); with A given the
    # Skempton-Bjerrum factor tends to 1 (here A + (1 - A) alpha(H/B = 0.01) = 0.995).
    q, H, mv = 50.0, 4.0, 3e-4
    p = hand_estimate(footing_model(400.0, H, None, load=q, eu=5000.0)).probes["centre"]
    assert abs(p.immediate_settlement_m) < 0.01 * mv * q * H
    assert p.consolidation_settlement_m == pytest.approx(mv * q * H, rel=1e-4)
    assert p.final_settlement_m == pytest.approx(mv * q * H, rel=1e-2)
    assert p.skempton_bjerrum == {}
    corrected = hand_estimate(footing_model(400.0, H, 0.6, load=q, eu=5000.0)).probes["centre"]
    mu = 0.6 + 0.4 * strip_alpha(H / 400.0)
    assert corrected.skempton_bjerrum["clay"] == pytest.approx(mu, rel=1e-3)
    assert corrected.consolidation_settlement_m == pytest.approx(mu * mv * q * H, rel=1e-3)
    assert 0.99 < mu < 1.0


def test_immediate_settlement_needs_the_undrained_modulus_given():
    no_eu = hand_estimate(footing_model(2.0, 6.0, None)).probes["centre"]
    assert no_eu.immediate_settlement_m == 0.0
    assert any("no immediate settlement counted in ['clay']" in n for n in no_eu.notes)
    assert no_eu.how_found["immediate"].startswith("none counted")
    # E_u = s_u x (E_u / s_u)
    m = footing_model(2.0, 6.0, None)
    m.materials["clay"].undrained = UndrainedParameters(strength=20.0, modulus_ratio=250.0)
    by_ratio = hand_estimate(m).probes["centre"]
    by_modulus = hand_estimate(footing_model(2.0, 6.0, None, eu=5000.0)).probes["centre"]
    assert by_ratio.immediate_settlement_m == pytest.approx(by_modulus.immediate_settlement_m, rel=1e-12)
    assert by_modulus.immediate_settlement_m > 0.0
    assert "E_u of clay" in by_modulus.how_found["immediate"]
    assert by_modulus.final_settlement_m == pytest.approx(
        by_modulus.immediate_settlement_m + by_modulus.consolidation_settlement_m
        + by_modulus.secondary_settlement_m)


# ----------------------------------------------------------------------------- beside a load


def test_immediate_settlement_beside_a_circle_has_the_elastic_sign_and_size():
    # Half-space surface outside a uniform circle (Timoshenko & Goodier 1951; Poulos & Davis
    # 1974, values of the closed form from memory):
    #   w(r) = 4 q r (1 - nu^2) / (pi E) [E(k) - (1 - k^2) K(k)],  k = a / r, for r >= a,
    # settling everywhere and decaying with r. On a layer over a rigid base (the hand method's
    # Steinbrenner 1934 layer summation) the surface beside the load is w(r, 0) - w(r, h), with
    # w(r, h) the half-space displacement at depth h: here integrated over the disc in the test
    # from the Boussinesq (1885) point load, w = P (1 + nu) / (2 pi E R) [2 (1 - nu) + z^2 / R^2].
    from scipy import integrate
    from scipy.special import ellipe, ellipk
    from solver.hand.elastic import disc_displacement
    q, a, E, nu = 100.0, 1.5, 5000.0, 0.5
    for r in (1.5, 2.0, 3.0, 6.0, 15.0):
        k2 = (a / r) ** 2                         # at the edge E(1) = 1 and (1 - k^2) K -> 0
        ref = 4 * q * r * (1 - nu ** 2) / (np.pi * E) * (
            1.0 if k2 == 1.0 else ellipe(k2) - (1 - k2) * ellipk(k2))
        got = disc_displacement(r, np.array([0.0]), a, q, E, nu)[0]
        assert got == pytest.approx(ref, rel=2e-4) and got > 0.0
    h, r = 3.0, 6.0

    def point(rho, th):
        R = np.sqrt(rho ** 2 + r ** 2 - 2 * rho * r * np.cos(th) + h ** 2)
        return q * rho * (1 + nu) / (2 * np.pi * E * R) * (2 * (1 - nu) + h * h / R ** 2)
    w_h = 2 * integrate.dblquad(lambda rho, th: point(rho, th), 0.0, np.pi, 0.0, a,
                                epsabs=1e-12, epsrel=1e-10)[0]
    k2 = (a / r) ** 2
    w_0 = 4 * q * r * (1 - nu ** 2) / (np.pi * E) * (ellipe(k2) - (1 - k2) * ellipk(k2))
    layer = w_0 - w_h
    assert layer < 0.0                            # an undrained heave beside the load
    m = footing_model(2 * a, h, None, axisymmetric=True, load=q, eu=E)
    m.probes.append(type(m.probes[0])("beside", r, 0.0))
    p = hand_estimate(m).probes["beside"]
    assert p.immediate_settlement_m == pytest.approx(layer, rel=1e-3)
    assert any("is a heave" in n for n in p.notes)


def test_immediate_settlement_beside_a_strip_is_the_integrated_elastic_strain():
    # Plane strain beside a uniform strip (width B = 2b) on a layer h thick: the vertical strain
    # eps_z = (1 + nu)/E [(1 - nu) s_z - nu s_x] of the half-space stresses (Carothers 1920;
    # Poulos & Davis 1974: s_z, s_x = q/pi [alpha +- sin(alpha) cos(alpha + 2 delta)])
    # integrated over depth, here by quadrature in the test (Steinbrenner 1934 approximation).
    from scipy import integrate
    from solver.hand.elastic import strip_immediate_settlement
    q, b, h, E, nu = 80.0, 1.0, 4.0, 6000.0, 0.5

    def strain(z, x):
        t1, t2 = np.arctan2(x + b, z), np.arctan2(x - b, z)
        alpha, half = t1 - t2, 0.5 * (np.sin(2 * t1) - np.sin(2 * t2))
        sz, sx = q / np.pi * (alpha + half), q / np.pi * (alpha - half)
        return (1 + nu) / E * ((1 - nu) * sz - nu * sx)
    for x, sign in ((0.0, 1.0), (0.5, 1.0), (3.0, -1.0), (6.0, -1.0)):
        ref = integrate.quad(strain, 0.0, h, args=(x,), epsabs=1e-14, limit=200)[0]
        got = float(strip_immediate_settlement(x, q, 2 * b, h, E, nu))
        assert got == pytest.approx(ref, rel=1e-6, abs=1e-12)
        assert np.sign(got) == sign               # settling under it, heaving beside it
