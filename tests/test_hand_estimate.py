"""The hand estimate of a whole model (solver.hand.estimate), against closed forms and the FE run.

Sources beside each check: Terzaghi (1925) one-layer consolidation; Olson (1977) ramp
loading; Osterberg (1957) embankment influence (formula from memory, re-derived from the
Flamant line load); Terzaghi & Peck (1948) Cc/Cr settlement; Timoshenko & Goodier (1951)
constrained modulus and the flexible circle; Steinbrenner (1934) layer summation; Bjerrum
(1963) limits. All sites are invented.
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pytest

from solver import CAUTION, runner, simulation
from solver.analytic import olson_ramp_average_degree, terzaghi_average_degree
from solver.errors import InputError
from solver.hand import load_objects, rate, settlement, stress
from solver.hand.estimate import disc_displacement, hand_estimate
from solver.model import (Drainage, Embankment, Footing, Layer, Limits, Material, Model,
                          OedometerParameters, Structure,
                          PointProbe, Section, Stage, SurfaceLoad, TimeSteps, UndrainedParameters, Water,
                          load_model)

GW = 9.81


# ----------------------------------------------------------------------------- models


def column_model(E=2000.0, nu=0.3, H=10.0, q=50.0, cv=1.0, ramp=1.0, wait=400.0) -> Model:
    """A 1D column: narrow "ground" section, a surface load over its whole top, sides on
    rollers, one linear elastic layer drained at the top (an oedometer test in the field)."""
    e_oed = E * (1 - nu) / ((1 + nu) * (1 - 2 * nu))
    k = cv * GW / e_oed                                  # cv = k E_oed / gamma_w (Terzaghi 1925)
    clay = Material("clay", youngs_modulus=E, poisson_ratio=nu, permeability_x=k,
                    unit_weight=18.0)
    return Model("1D column (invented)", materials={"clay": clay},
                 layers=[Layer("clay", "clay", H)],
                 section=Section(kind="ground", width=1.0, mesh_size=0.5),
                 water=Water(table_depth=0.0, unit_weight=GW),
                 loads=[SurfaceLoad("q", -0.5, 0.5, q)],
                 stages=[Stage("load", "load", ramp, loads=["q"]), Stage("wait", "consolidate", wait)],
                 time_steps=TimeSteps(first_step=0.02, growth=1.25, steps_per_level=4),
                 probes=[PointProbe("top", 0.0, 0.0), PointProbe("mid", 0.0, -H / 2)])


def embankment_model(**drainage) -> Model:
    """An invented embankment (crest 10 m, 3 m high, 1V:2H, two lifts) on two clays."""
    mats = {
        "fill": Material("fill", youngs_modulus=20000.0, unit_weight=20.0, permeability_x=1.0),
        "soft": Material("soft", youngs_modulus=1500.0, poisson_ratio=0.3, unit_weight=16.0,
                         permeability_x=1e-4,
                         oedometer=OedometerParameters(compression_index=0.8, recompression_index=0.08,
                                                       void_ratio=2.0, preconsolidation_margin=15.0,
                                                       secondary_compression_index=0.02)),
        "firm": Material("firm", youngs_modulus=3000.0, poisson_ratio=0.3, unit_weight=17.5,
                         permeability_x=5e-5,
                         oedometer=OedometerParameters(compression_index=0.5, recompression_index=0.05,
                                                       void_ratio=1.4, overconsolidation_ratio=1.5)),
    }
    return Model("embankment on two clays (invented)", materials=mats,
                 layers=[Layer("soft", "soft", 4.0), Layer("firm", "firm", 6.0)],
                 section=Section(kind="embankment", half=True,
                                 embankment=Embankment(crest_width=10.0, height=3.0, side_slope=2.0,
                                                       lifts=[1.5, 1.5], material="fill")),
                 water=Water(table_depth=0.0, unit_weight=GW),
                 drainage=Drainage(**({"top": True, "base": True} | drainage)),
                 stages=[Stage("lift 1", "lift", 10.0, lift=1), Stage("wait", "consolidate", 50.0),
                         Stage("lift 2", "lift", 10.0, lift=2), Stage("long", "consolidate", 10000.0)],
                 probes=[PointProbe("centre", 0.0, 0.0), PointProbe("crest_edge", 5.0, 0.0),
                         PointProbe("toe", 11.0, 0.0), PointProbe("mid_soft", 0.0, -2.0)])


def osterberg_centre(z, crest_width, slope_run, q):
    """Vertical stress on the centre line of a symmetric embankment (Osterberg 1957; from
    memory): twice the half-embankment influence (q/pi)[((a+b)/a)(a1+a2) - (b/a) a2],
    a = horizontal run of the slope, b = half crest, a2 = arctan(b/z) the angle of the half
    crest and a1 = arctan((a+b)/z) - a2 that of the slope, seen from the point."""
    a, b = slope_run, crest_width / 2
    a2 = np.arctan(b / z)
    a12 = np.arctan((a + b) / z)
    return 2 * q / np.pi * ((a + b) / a * a12 - b / a * a2)


# ----------------------------------------------------------------------------- Terzaghi


def test_staged_finite_differences_reduce_to_terzaghi_for_one_layer():
    # A sudden load applied at t0 = 30 days: U(t) = U_Terzaghi(cv (t - t0) / H^2) (Terzaghi 1925),
    # and two halves at 0 and 30 days superpose (linear column).
    h, mv, cv = 5.0, 1e-3, 0.5
    tv = np.array([0.02, 0.05, 0.1, 0.2, 0.4, 0.8, 1.2])
    t = 30.0 + tv * h * h / cv
    one = rate.layered_consolidation([h], [mv], [cv * mv * GW], t,
                                     load_history=[rate.LoadPiece(30.0, 0.0, 1.0)])
    np.testing.assert_allclose(one.average_degree, terzaghi_average_degree(tv), atol=5e-4)
    halves = rate.layered_consolidation([h], [mv], [cv * mv * GW], t, load_history=[
        rate.LoadPiece(0.0, 0.0, 0.5), rate.LoadPiece(30.0, 0.0, 0.5)])
    expect = 0.5 * terzaghi_average_degree(cv * t / h**2) + 0.5 * terzaghi_average_degree(tv)
    np.testing.assert_allclose(halves.average_degree, expect, atol=5e-4)


def test_hand_estimate_of_a_column_is_terzaghi_with_olson_ramp():
    # One layer, load ramped over 1 day: U(t) of Olson (1977); t50, t90 of Terzaghi (1925):
    # Tv = 0.197 and 0.848 (common textbook table), shifted by about half the ramp.
    m = column_model(H=10.0, cv=1.0, ramp=1.0)
    times = np.array([2.0, 5.0, 10.0, 20.0, 50.0, 100.0, 200.0])
    h = hand_estimate(m, times=times)
    p = h.probes["top"]
    u_ref = olson_ramp_average_degree(times / 100.0, 1.0 / 100.0)
    np.testing.assert_allclose(p.consolidation_degree, u_ref, atol=1e-3)
    assert p.t50_days == pytest.approx(0.197 * 100 + 0.5, rel=0.01)
    assert p.t90_days == pytest.approx(0.848 * 100 + 0.5, rel=0.01)


# ----------------------------------------------------------------------------- FE column


def test_hand_column_equals_fe_column_within_one_percent():
    # The key consistency check: a 1D column run by the FE solver (Biot, P2/P1, sides on
    # rollers) and by the hand method (m_v = 1/E_oed, c_v = k/(m_v gamma_w); Terzaghi 1925).
    E, nu, H, q = 2000.0, 0.3, 10.0, 50.0
    m = column_model(E=E, nu=nu, H=H, q=q)
    fe = runner.run(m)
    t = fe.probes["top"]["time_days"]
    hand = hand_estimate(m, times=t)
    p = hand.probes["top"]
    e_oed = E * (1 - nu) / ((1 + nu) * (1 - 2 * nu))     # Timoshenko & Goodier 1951
    assert p.final_settlement_m == pytest.approx(q * H / e_oed, rel=1e-9)
    assert p.immediate_settlement_m == 0.0               # a 1D load: no lateral deformation
    assert any("m_v = 1/E_oed" in n for n in hand.notes)
    s_fe = fe.probes["top"]["settlement_m"]
    assert s_fe[-1] == pytest.approx(p.final_settlement_m, rel=0.01)
    assert s_fe[-1] == pytest.approx(p.settlement_m[-1], rel=0.01)
    for tt in (5.0, 10.0, 20.0, 50.0, 100.0, 200.0):
        i = int(np.argmin(np.abs(t - tt)))
        assert s_fe[i] == pytest.approx(p.settlement_m[i], rel=0.01), tt
        assert s_fe[i] / s_fe[-1] == pytest.approx(p.consolidation_degree[i], abs=0.01), tt
    # excess pore pressure at mid-depth within 1 % of the load
    u_fe = fe.probes["mid"]["excess_pore_pressure_kPa"]
    u_hand = hand.probes["mid"].excess_pore_pressure_kPa
    assert np.max(np.abs(u_fe - u_hand)) < 0.01 * q
    assert hand.probes["mid"].max_excess_pore_pressure_kPa == pytest.approx(np.max(u_fe), rel=0.01)


# ----------------------------------------------------------------------------- embankment


def test_embankment_centre_stress_is_the_osterberg_influence():
    m = embankment_model()
    h = hand_estimate(m)
    p = h.probes["centre"]
    q = 20.0 * 3.0
    ref = osterberg_centre(p.depth_m, 10.0, 2.0 * 3.0, q)
    np.testing.assert_allclose(p.stress_increase_kPa, ref, rtol=1e-9)
    np.testing.assert_allclose(p.stress_increase_kPa,
                               load_objects.EmbankmentLoad(0.0, 10.0, 2.0, 3.0, 20.0).vertical_stress(0.0, p.depth_m),
                               rtol=1e-12)
    # 2:1 quick check: below the crest the spread of the stacked strips stays under q
    assert np.all(p.stress_increase_2to1_kPa <= q + 1e-9)
    assert p.stress_increase_2to1_kPa[0] == pytest.approx(q, rel=0.05)


def test_embankment_sublayer_settlement_arithmetic():
    m = embankment_model()
    p = hand_estimate(m).probes["centre"]
    i = 3   # sublayer 1.5 to 2.0 m in the soft clay (sublayers of 0.5 m)
    # sigma'_v0 = (16 - 9.81) x 1.75 = 10.83 kPa; sigma'_p = 10.83 + 15 = 25.83 kPa (margin);
    # delta sigma = 59.67 kPa (Osterberg), sigma'_f = 70.50 kPa;
    # s = 0.5 / (1 + 2.0) x [0.08 log10(25.83/10.83) + 0.8 log10(70.50/25.83)]
    #   = 0.1667 x [0.08 x 0.3775 + 0.8 x 0.4360] = 0.1667 x 0.3790 = 0.0632 m
    # (Terzaghi & Peck 1948; Holtz & Kovacs 1981)
    assert p.depth_m[i] == pytest.approx(1.75)
    s0 = (16.0 - GW) * 1.75
    assert p.initial_effective_stress_kPa[i] == pytest.approx(s0)
    sp = s0 + 15.0
    sf = s0 + osterberg_centre(1.75, 10.0, 6.0, 60.0)
    hand_s = 0.5 / 3.0 * (0.08 * math.log10(sp / s0) + 0.8 * math.log10(sf / sp))
    assert p.sublayer_settlement_m[i] == pytest.approx(hand_s, rel=1e-9)
    assert hand_s == pytest.approx(0.0632, abs=2e-4)
    # the parts add up
    assert p.consolidation_settlement_m == pytest.approx(np.sum(p.sublayer_settlement_m))
    assert p.final_settlement_m == pytest.approx(p.immediate_settlement_m + p.consolidation_settlement_m
                                                 + p.secondary_settlement_m)
    assert sum(p.layer_settlement_m.values()) == pytest.approx(p.consolidation_settlement_m)


def test_probe_inside_the_ground_settles_with_the_soil_below_it():
    h = hand_estimate(embankment_model())
    top, mid = h.probes["centre"], h.probes["mid_soft"]
    # mid_soft (2 m deep) counts the sublayers below 2 m of the same column
    below = top.depth_m > 2.0
    assert mid.consolidation_settlement_m == pytest.approx(np.sum(top.sublayer_settlement_m[below]))
    assert mid.final_settlement_m < top.final_settlement_m
    # its excess pore pressure peaks below the full fill load (60 kPa) and a surface probe has none
    assert 0.0 < mid.max_excess_pore_pressure_kPa < 60.0
    assert math.isnan(top.max_excess_pore_pressure_kPa)
    # staged: the history rises, ends below the ultimate value, t50 < t90
    assert np.all(np.diff(top.settlement_m) >= -1e-6)
    assert top.settlement_m[-1] <= top.final_settlement_m + 1e-9
    assert 0.0 < top.t50_days < top.t90_days


def test_lift_history_moves_the_curve():
    # the second lift placed 60 days later: settlement at 30 days is that of lift 1 only
    m = embankment_model()
    h = hand_estimate(m, times=[30.0, 60.0, 70.0, 10070.0])
    s = h.probes["centre"].settlement_m
    one_lift = replace(m, stages=[Stage("lift 1", "lift", 10.0, lift=1), Stage("wait", "consolidate", 10060.0)])
    s1 = hand_estimate(one_lift, times=[30.0, 60.0]).probes["centre"].settlement_m
    assert s[0] == pytest.approx(s1[0], rel=0.2)    # not equal: secant m_v of the final stress
    assert s[2] > s[1] > s[0]


def test_differential_settlement_of_neighbouring_surface_probes():
    # Along an embankment: differential settlement and change of gradient, with the user's
    # limits; building limits (Bjerrum 1963, from memory) only for a structure the user names.
    m = embankment_model()
    h = hand_estimate(m)
    pairs = [(d.probe_a, d.probe_b, d.kind) for d in h.differential]
    assert pairs == [("centre", "crest_edge", "ground"), ("crest_edge", "toe", "ground")]
    assert all(d.checks == [] for d in h.differential)          # no limits given
    d = h.differential[1]
    a, b = h.probes["crest_edge"], h.probes["toe"]
    np.testing.assert_allclose(d.angular_distortion, np.abs(a.settlement_m - b.settlement_m) / 6.0)
    # change of gradient at crest_edge: slope crest_edge-toe minus slope centre-crest_edge
    g = h.gradient_changes[0]
    c = h.probes["centre"]
    ref = (b.settlement_m - a.settlement_m) / 6.0 - (a.settlement_m - c.settlement_m) / 5.0
    np.testing.assert_allclose(g.change, ref, atol=1e-12)
    m.limits = Limits(differential_settlement=0.05, change_of_gradient=0.01)
    m.structures = [Structure("culvert", ["crest_edge", "toe"])]
    h = hand_estimate(m)
    ground = [d for d in h.differential if d.kind == "ground"]
    assert [c.limit for c in ground[1].checks] == [0.05] and ground[1].checks[0].exceeded
    assert h.gradient_changes[0].checks[0].limit == 0.01
    culvert = [d for d in h.differential if d.kind == "structure"]
    assert [(d.probe_a, d.probe_b, d.structure) for d in culvert] == [("crest_edge", "toe", "culvert")]
    assert [round(1 / c.limit) for c in culvert[0].checks] == [500, 300, 150]


def test_secondary_compression_after_t95_only():
    h = hand_estimate(embankment_model())
    p = h.probes["centre"]
    assert p.end_of_primary_days < h.end_days
    assert p.secondary_settlement_m > 0.0
    short = embankment_model()
    short.stages[-1] = Stage("long", "consolidate", 100.0)
    q = hand_estimate(short).probes["centre"]
    assert q.secondary_settlement_m == 0.0
    assert any("t95" in n for n in q.notes)


# ----------------------------------------------------------------------------- parameters


def test_missing_oedometer_field_names_the_layer_and_the_fe_still_builds():
    m = column_model()
    m.materials["clay"].oedometer = OedometerParameters(compression_index=0.6, recompression_index=0.06,
                                                        overconsolidation_ratio=1.0)   # no e0
    with pytest.raises(InputError) as err:
        hand_estimate(m)
    assert err.value.field == "materials.clay.oedometer.void_ratio"
    assert "layer 'clay'" in str(err.value)
    sim = simulation.Simulation(m)             # only the hand path needs e0
    assert sim.mesh.n_elements > 0


@pytest.mark.parametrize("oed, field", [
    (OedometerParameters(compression_index=0.6, void_ratio=1.5, overconsolidation_ratio=1.0),
     "recompression_index"),
    (OedometerParameters(compression_index=0.6, recompression_index=0.06, void_ratio=1.5),
     "overconsolidation_ratio"),
    (OedometerParameters(recompression_index=0.06, overconsolidation_ratio=1.2), "compression_index"),
])
def test_incomplete_oedometer_data_name_the_field(oed, field):
    m = column_model()
    m.materials["clay"].oedometer = oed
    with pytest.raises(InputError) as err:
        hand_estimate(m)
    assert err.value.field == f"materials.clay.oedometer.{field}"


def test_no_compressibility_at_all_is_an_input_error():
    m = column_model()
    m.materials["clay"].youngs_modulus = None
    with pytest.raises(InputError) as err:
        hand_estimate(m)
    assert err.value.field == "materials.clay.oedometer.compression_index"


def test_cam_clay_layer_uses_lambda_and_kappa():
    # Cc = lambda ln 10, Cr = kappa ln 10 (Schofield & Wroth 1968)
    m = column_model()
    m.materials["clay"] = Material("clay", model="modified cam clay", lambda_=0.2, kappa=0.02, M=1.0,
                                   void_ratio=1.8, poisson_ratio=0.3, unit_weight=17.0,
                                   permeability_x=1e-4,
                                   oedometer=OedometerParameters(overconsolidation_ratio=1.0))
    h = hand_estimate(m)
    p = h.probes["top"]
    z, ds = p.depth_m, p.stress_increase_kPa
    s0 = (17.0 - GW) * z
    cc = 0.2 * math.log(10)
    ref = np.sum(0.5 / 2.8 * cc * np.log10((s0 + ds) / s0))
    assert p.consolidation_settlement_m == pytest.approx(ref, rel=1e-9)
    assert any("lambda ln 10" in n for n in h.notes)


# ----------------------------------------------------------------------------- footings


EU = 6500.0   # the footing clay's undrained modulus (kPa), given as the user would


def footing_model(axisymmetric=False, rigid=False, width=2.0, load=100.0, embedment=0.0) -> Model:
    clay = Material("clay", youngs_modulus=6000.0, poisson_ratio=0.3, unit_weight=18.0, permeability_x=1e-4,
                    undrained=UndrainedParameters(modulus=EU))
    return Model("footing (invented)", analysis="axisymmetric" if axisymmetric else "plane strain",
                 materials={"clay": clay}, layers=[Layer("clay", "clay", 8.0)],
                 section=Section(kind="footings", half=not axisymmetric,
                                 footings=[Footing("f", 0.0, width, load=load, embedment=embedment,
                                                   rigid=rigid)]),
                 water=Water(table_depth=1.0, unit_weight=GW),
                 stages=[Stage("load", "load", 1.0, loads=["f"]), Stage("wait", "consolidate", 100.0)],
                 probes=[PointProbe("centre", 0.0, -embedment), PointProbe("edge", width / 2, -embedment)])


def test_strip_footing_stress_2to1_and_immediate_settlement():
    m = footing_model(width=2.0, load=100.0)
    p = hand_estimate(m).probes["centre"]
    z = p.depth_m
    np.testing.assert_allclose(p.stress_increase_kPa, stress.uniform_strip_stress(0.0, z, 2.0, 100.0)[0])
    np.testing.assert_allclose(p.stress_increase_2to1_kPa, 100.0 * 2.0 / (2.0 + z))   # 2:1 (common practice)
    eu = EU                                        # the undrained modulus given
    ref = settlement.strip_immediate_settlement(0.0, 100.0, 2.0, 8.0, eu, 0.5)   # Steinbrenner 1934
    assert p.immediate_settlement_m == pytest.approx(float(ref), rel=1e-9)


def test_embedded_strip_footing_loads_the_soil_below_its_base():
    m = footing_model(width=2.0, load=100.0, embedment=1.0)
    h = hand_estimate(m)
    p = h.probes["centre"]
    assert p.probe_depth_m == 1.0 and p.depth_m[0] > 1.0
    np.testing.assert_allclose(p.stress_increase_kPa,
                               stress.uniform_strip_stress(0.0, p.depth_m - 1.0, 2.0, 100.0)[0])
    assert any("gross pressure" in n for n in h.notes)


def test_circular_footing_on_axis_and_off_axis():
    m = footing_model(axisymmetric=True, width=3.0, load=120.0)
    h = hand_estimate(m)
    c, e = h.probes["centre"], h.probes["edge"]
    np.testing.assert_allclose(c.stress_increase_kPa, stress.circle_centre_stress(c.depth_m, 1.5, 120.0)[0],
                               rtol=1e-9)
    eu = EU
    ref = settlement.circle_immediate_settlement(120.0, 1.5, eu, 0.5, layer_thickness=8.0)
    assert c.immediate_settlement_m == pytest.approx(ref, rel=1e-9)
    assert 0.0 < e.immediate_settlement_m < c.immediate_settlement_m
    assert np.all(e.stress_increase_kPa < c.stress_increase_kPa + 1e-9)


def test_disc_displacement_matches_the_closed_forms():
    # axis: Poulos & Davis (1974); surface at the edge: 4 q a (1 - nu^2) / (pi E)
    # (Timoshenko & Goodier 1951)
    z = np.array([0.0, 0.5, 2.0, 6.0])
    np.testing.assert_allclose(disc_displacement(0.0, z, 1.5, 100.0, 5000.0, 0.5),
                               settlement.circle_axis_displacement(z, 100.0, 1.5, 5000.0, 0.5), rtol=1e-10)
    edge = disc_displacement(1.5, np.array([0.0]), 1.5, 100.0, 5000.0, 0.5)[0]
    assert edge == pytest.approx(4 * 100.0 * 1.5 * 0.75 / (math.pi * 5000.0), rel=1e-3)
    inside = disc_displacement(0.7, np.array([1.0]), 1.5, 100.0, 5000.0, 0.3)[0]
    outside = disc_displacement(4.0, np.array([1.0]), 1.5, 100.0, 5000.0, 0.3)[0]
    assert outside < inside


def test_rigid_strip_uses_the_characteristic_point():
    flexible = hand_estimate(footing_model(rigid=False)).probes["centre"]
    rigid = hand_estimate(footing_model(rigid=True)).probes["centre"]
    # Grasshoff (1955; from memory): 0.37 B from the centre
    np.testing.assert_allclose(rigid.stress_increase_kPa,
                               stress.uniform_strip_stress(0.37 * 2.0, rigid.depth_m, 2.0, 100.0)[0])
    assert rigid.consolidation_settlement_m < flexible.consolidation_settlement_m
    assert rigid.immediate_settlement_m < flexible.immediate_settlement_m
    assert any("characteristic point" in n for n in rigid.notes)


# ----------------------------------------------------------------------------- drainage


def test_sand_open_to_a_drain_is_free_draining_an_enclosed_lens_is_not():
    m = embankment_model()
    m.materials["sand"] = Material("sand", youngs_modulus=40000.0, unit_weight=19.0, permeability_x=5.0)
    m.layers.append(Layer("sand", "sand", 3.0))
    assert any("'sand': free-draining" in n for n in hand_estimate(m).notes)
    m.drainage = Drainage(top=True, base=False, sides=False)
    assert not any("free-draining" in n for n in hand_estimate(m).notes)


# ----------------------------------------------------------------------------- example, speed


def test_example_model_estimate_is_complete_and_settles_under_the_embankment():
    # (speed is measured by running `poroplane hand`, not asserted here)
    m = load_model("examples/embankment.toml")
    h = hand_estimate(m)
    assert list(h.probes) == [p.name for p in m.probes]
    assert h.caution == CAUTION
    for p in h.probes.values():
        assert np.all(np.isfinite(p.settlement_m))
    # Under the embankment the ground settles; at the toe the undrained shear may lift it
    # (the immediate part is negative outside a strip load; Poulos and Davis 1974, ch. 2).
    for name in ("centre_ground", "crest_edge_ground", "upper_clay_centre"):
        assert h.probes[name].final_settlement_m > 0.0
    assert h.probes["toe"].consolidation_settlement_m > 0.0


def test_footing_bases_count_as_surface_probes_for_the_differential():
    h = hand_estimate(load_model("examples/two_footings.toml"))
    pairs = [(d.probe_a, d.probe_b, d.kind) for d in h.differential]
    assert pairs == [("footing_a", "between", "ground"), ("between", "footing_b", "ground"),
                     ("footing_a", "footing_b", "structure")]       # the two footings' building
    assert h.probes["footing_b"].where == "footing base"
    assert h.probes["soft_clay_under_b"].where == "inside the ground"


def test_the_hand_method_never_imports_the_fe_code():
    import subprocess
    import sys
    code = ("import sys; import solver.hand.estimate, solver.comparison; "
            "bad = [m for m in sys.modules if m.startswith(('solver.fem', 'solver.simulation', "
            "'solver.sections', 'solver.runner', 'gmsh'))]; print(bad); sys.exit(1 if bad else 0)")
    run = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    assert run.returncode == 0, run.stdout + run.stderr
