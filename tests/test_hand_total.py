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
from solver.model import (Footing, Layer, Material, Model, OedometerParameters,
                          PointProbe, Section, Stage, UndrainedParameters, Water)

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


# ----------------------------------------------------------------------------- a preload

PRELOAD = """
# AN INVENTED preload: a fill 3 m high and 40 m wide at its base on 2 m of crust, 8 m of soft
# clay, 1 m of sand and 5 m of firm clay; moduli matched to the oedometer values.
title = "Preload on soft clay (invented)"
[section]
kind = "embankment"
half = true
mesh_size = 1.0
[section.embankment]
crest_width = 28.0
height = 3.0
side_slope = 2.0
lifts = [1.5, 1.5]
material = "fill"
[[layers]]
name = "crust"
material = "crust"
thickness = 2.0
[[layers]]
name = "soft_clay"
material = "soft_clay"
thickness = 8.0
[[layers]]
name = "sand"
material = "sand"
thickness = 1.0
[[layers]]
name = "firm_clay"
material = "firm_clay"
thickness = 5.0
[water]
table_depth = 1.0
[drainage]
top = true
base = false
[materials.fill]
youngs_modulus = "20 MPa"
unit_weight = "20 kN/m3"
permeability = "1e-5 m/s"
[materials.crust]
youngs_modulus = "4 MPa"
unit_weight = "18 kN/m3"
saturated_unit_weight = "18.5 kN/m3"
permeability = "1e-8 m/s"
[materials.crust.oedometer]
compression_index = 0.2
recompression_index = 0.03
void_ratio = 0.9
overconsolidation_ratio = 3.0
[materials.crust.undrained]
strength = "40 kPa"
modulus_ratio = 300
[materials.soft_clay]
youngs_modulus = "0.65 MPa"
unit_weight = "16 kN/m3"
permeability = "1e-9 m/s"
[materials.soft_clay.oedometer]
compression_index = 0.8
recompression_index = 0.08
void_ratio = 1.9
preconsolidation_margin = "15 kPa"
[materials.soft_clay.undrained]
strength = "15 kPa"
modulus_ratio = 300
[materials.sand]
youngs_modulus = "30 MPa"
unit_weight = "19 kN/m3"
saturated_unit_weight = "20 kN/m3"
permeability = "1e-4 m/s"
[materials.sand.oedometer]
volume_compressibility = "3e-5 1/kPa"
[materials.firm_clay]
youngs_modulus = "3 MPa"
unit_weight = "18 kN/m3"
permeability = "5e-10 m/s"
[materials.firm_clay.oedometer]
compression_index = 0.35
recompression_index = 0.04
void_ratio = 1.0
overconsolidation_ratio = 1.5
[materials.firm_clay.undrained]
strength = "40 kPa"
modulus_ratio = 400
[[stages]]
name = "lift 1"
kind = "lift"
lift = 1
duration = "30 days"
[[stages]]
name = "lift 2"
kind = "lift"
lift = 2
duration = "30 days"
[[stages]]
name = "long term"
kind = "consolidate"
duration = "30 years"
[[probes]]
name = "centre"
x = 0.0
y = 0.0
"""


def test_preload_total_is_not_double_counted():
    # The centre of an invented preload, worked by hand here: Osterberg's (1957) centre-line
    # stress (test_hand_estimate.osterberg_centre), the 1D settlement of each sublayer
    # (Terzaghi & Peck 1948; sigma'_v0 from the unit weights and the water table 1 m deep),
    # summed. The total adds only the undrained distortion with the E_u given (s_u x E_u/s_u),
    # a small part of a load 40 m wide on 16 m of ground (nothing derived from the drained E').
    from solver.model import model_from_toml
    from test_hand_estimate import osterberg_centre
    m = model_from_toml(PRELOAD)
    p = hand_estimate(m, max_sublayer_thickness=0.25).probes["centre"]
    z = p.depth_m
    dz = p.sublayer_bottom_m - p.sublayer_top_m
    gam = {"crust": (18.0, 18.5), "soft_clay": (16.0, 16.0), "sand": (19.0, 20.0),
           "firm_clay": (18.0, 18.0)}
    faces = {"crust": (0, 2), "soft_clay": (2, 10), "sand": (10, 11), "firm_clay": (11, 16)}
    sig = np.zeros_like(z)
    for name, (a, b) in faces.items():        # total stress, then minus the water below 1 m
        dry, sat = gam[name]
        above = np.clip(np.minimum(z, 1.0), a, b) - a
        sig += dry * above + sat * (np.clip(z, a, b) - a - above)
    s0 = sig - GW * np.maximum(z - 1.0, 0.0)
    ds = osterberg_centre(z, 28.0, 6.0, 60.0)
    ref = 0.0
    for i, name in enumerate(p.sublayer_layer):
        if name == "sand":
            ref += 3e-5 * ds[i] * dz[i]
            continue
        cc, cr, e0 = {"crust": (0.2, 0.03, 0.9), "soft_clay": (0.8, 0.08, 1.9),
                      "firm_clay": (0.35, 0.04, 1.0)}[name]
        sp = {"crust": 3.0 * s0[i], "soft_clay": s0[i] + 15.0, "firm_clay": 1.5 * s0[i]}[name]
        sf = s0[i] + ds[i]
        ref += dz[i] / (1 + e0) * (cr * np.log10(min(sf, sp) / s0[i])
                                   + cc * np.log10(max(sf, sp) / sp))
    assert p.consolidation_settlement_m == pytest.approx(ref, rel=1e-6)
    assert 0.58 < p.consolidation_settlement_m < 0.65          # the range of a hand calculation
    assert 0.0 < p.immediate_settlement_m < 0.1 * p.consolidation_settlement_m
    assert p.final_settlement_m == pytest.approx(
        p.immediate_settlement_m + p.consolidation_settlement_m + p.secondary_settlement_m)
    assert "E_u of crust, soft_clay, firm_clay" in p.how_found["immediate"]
