"""Staged runs of models built in Python, against outside results."""

import numpy as np

from solver.analytic import olson_ramp_average_degree
from solver.model import (Drainage, Footing, Layer, Material, Model, PointProbe, Section, Stage,
                          SurfaceLoad, TimeSteps, Water)
from solver.runner import run
from solver.simulation import Simulation

E_OED, K, H, Q = 2000.0, 1e-4, 10.0, 50.0


def column_model(stages, width=1.0, water_depth=0.0):
    clay = Material("clay", constrained_modulus=E_OED, poisson_ratio=0.3, permeability_x=K,
                    unit_weight=18.0, saturated_unit_weight=18.0)
    return Model(
        title="column (invented)",
        materials={"clay": clay},
        layers=[Layer("clay", "clay", H)],
        section=Section(kind="ground", width=width, mesh_size=0.5),
        water=Water(table_depth=water_depth),
        drainage=Drainage(top=True, base=False),
        loads=[SurfaceLoad("fill", -width / 2, width / 2, Q)],
        stages=stages,
        time_steps=TimeSteps(first_step=0.2, growth=1.25, steps_per_level=8),
        probes=[PointProbe("top", 0.0, 0.0), PointProbe("mid", 0.0, -H / 2)])


def test_ramp_loading_of_a_column_follows_olson_1977():
    # Olson (1977) J. Geotech. Eng. Div. ASCE 103(GT1): average degree of consolidation under a
    # load ramped on over Tc, relative to the final load; settlement-based U from the FE.
    cv = K * E_OED / 9.81
    t_c = 0.5 * H ** 2 / cv                       # ramp to Tv = 0.5
    model = column_model([Stage("ramp", "load", t_c, loads=["fill"]),
                          Stage("wait", "consolidate", 1.5 * H ** 2 / cv)])
    result = run(model)
    top = result.probe("top")
    s_final = Q * H / E_OED
    Tv = top["time_days"] * cv / H ** 2
    U_fe = top["settlement_m"] / s_final
    U_olson = olson_ramp_average_degree(Tv, 0.5)
    # Backward Euler with the growth above: time error below 0.005 in U (measured); the
    # tolerance is that of the validation suite's Terzaghi check.
    assert np.abs(U_fe - U_olson).max() < 0.01
    assert abs(U_fe[np.argmin(np.abs(Tv - 0.5))] - olson_ramp_average_degree(0.5, 0.5)) < 0.005


def test_at_rest_initial_state_is_in_equilibrium_under_self_weight():
    # The K0 state with hydrostatic pore water balances the self-weight exactly: the
    # consistent nodal forces of gravity equal the internal forces of the initial total
    # stress at every free node (Jaky 1944 for K0; common practice for the geostatic state).
    crust = Material("crust", youngs_modulus=8000.0, poisson_ratio=0.3, unit_weight=19.0,
                     saturated_unit_weight=20.0, friction_angle=30.0)
    clay = Material("clay", youngs_modulus=2000.0, poisson_ratio=0.35, unit_weight=16.0,
                    saturated_unit_weight=16.5, k0=0.65)
    model = Model(title="geostatic (invented)", materials={"crust": crust, "clay": clay},
                  layers=[Layer("crust", "crust", 2.0), Layer("clay", "clay", 8.0)],
                  section=Section(kind="ground", width=20.0, mesh_size=1.0),
                  water=Water(table_depth=2.0),
                  stages=[Stage("rest", "consolidate", 10.0)],
                  probes=[PointProbe("deep", 3.0, -7.5)])
    sim = Simulation(model)
    d, mesh = sim.problem.disc, sim.mesh
    x, y = d.xq[..., 0].ravel(), d.xq[..., 1].ravel()
    g = sim._geostatic(x, y)
    ne, nq = d.xq.shape[:2]
    sig = np.zeros((ne, nq, 4))                       # total stress, tension positive
    sig[..., 0] = -(g["horizontal_effective_kPa"] + g["steady_pore_pressure_kPa"]).reshape(ne, nq)
    sig[..., 1] = -(g["vertical_effective_kPa"] + g["steady_pore_pressure_kPa"]).reshape(ne, nq)
    sig[..., 2] = sig[..., 0]
    f_int = d.stress_to_nodal_forces(sig)
    gamma = np.where(d.xq[..., 1] > -2.0,
                     np.where(mesh.region == mesh.region_id("crust"), 19.0, 16.0)[:, None],
                     np.where(mesh.region == mesh.region_id("crust"), 20.0, 16.5)[:, None])
    # consistent gravity forces with the unit weight at each quadrature point
    fe = np.einsum("qa,eq->ea", d.N2, -gamma * d.dV)
    f_grav = np.bincount(d.u_dofs[:, 1::2].ravel(), weights=fe.ravel(), minlength=d.n_u)
    c = sim.problem.constraints(1.0)
    free = np.flatnonzero(c.red[:d.n_u] >= 0)
    resid = (f_grav - f_int)[free]
    assert np.abs(resid).max() < 1e-9 * np.abs(f_grav).max()
    # ... so a run with nothing applied stays at rest, with hydrostatic total pore pressure.
    r = run(sim)
    deep = r.probe("deep")
    assert np.abs(deep["settlement_m"]).max() == 0.0
    assert np.abs(deep["excess_pore_pressure_kPa"]).max() == 0.0
    np.testing.assert_allclose(deep["total_pore_pressure_kPa"], 9.81 * 5.5, rtol=1e-12)
    sv = 2.0 * 19.0 + 5.5 * 16.5 - 9.81 * 5.5   # dry crust above the table, wet clay below
    np.testing.assert_allclose(deep["vertical_effective_stress_kPa"], sv, rtol=1e-12)
    np.testing.assert_allclose(deep["horizontal_effective_stress_kPa"], 0.65 * sv, rtol=1e-12)


def footing_model(footings, width=120.0):
    clay = Material("clay", youngs_modulus=5000.0, poisson_ratio=0.3, permeability_x=1e-3)
    stages = [Stage("load", "load", 0.0, loads=[f.name for f in footings]),
              Stage("wait", "consolidate", 2000.0)]
    return Model(title="footings (invented)", materials={"clay": clay},
                 layers=[Layer("clay", "clay", 20.0)],
                 section=Section(kind="footings", width=width, mesh_size=0.4, footings=footings),
                 stages=stages, time_steps=TimeSteps(first_step=1.0, growth=2.0, steps_per_level=3),
                 probes=[PointProbe(f.name, f.center, 0.0) for f in footings])


def test_two_footings_far_apart_settle_like_one_alone_and_a_rigid_base_stays_straight():
    # Superposition sanity (linear elasticity, common practice): a second footing 40 m away
    # (20 footing widths) barely changes the first one's settlement.
    a = Footing("A", center=-20.0, width=2.0, load=150.0)
    b = Footing("B", center=20.0, width=2.0, load=100.0)
    alone = run(footing_model([a]))
    both_sim = Simulation(footing_model([a, b]))
    both = run(both_sim)
    s_alone = alone.probe("A")["settlement_m"][-1]
    s_both = both.probe("A")["settlement_m"][-1]
    assert abs(s_both - s_alone) < 0.02 * s_alone
    # The heavier footing settles more; a rigid base stays straight (it may tilt: the tie).
    assert both.probe("A")["settlement_m"][-1] > both.probe("B")["settlement_m"][-1]
    nodes = both_sim.mesh.edge_nodes("footing_A")
    st = both_sim.problem.drained_state(1e9)
    uy = st.displacement()[nodes, 1]
    x = both_sim.mesh.points[nodes, 0]
    assert np.abs(np.polyval(np.polyfit(x, uy, 1), x) - uy).max() < 1e-12 * np.abs(uy).max()


def test_a_region_of_a_user_mesh_is_placed_by_a_stage_and_its_weight_settles_the_ground():
    # The fill of the shipped section placed in 20 days instead of being there from the start:
    # before placement it carries no stress; its weight then settles the ground below it.
    from pathlib import Path
    from solver.model import load_model
    import pytest
    from solver.errors import InputError
    here = Path(__file__).resolve().parents[1]
    m = load_model(here / "examples" / "irregular_section.toml")
    m.loads = []
    m.stages = [Stage("place fill", "lift", 20.0, region="fill"),
                Stage("wait", "consolidate", 365.0)]
    sim = Simulation(m)
    fill = sim.mesh.region == sim.mesh.region_id("fill")
    assert not sim.active0[fill].any() and sim.active0[~fill].all()
    inside = np.unique(sim.mesh.triangles[fill])
    only_fill = np.setdiff1d(inside, sim.mesh.triangles[~fill])
    assert np.all(sim.initial["vertical_effective_kPa"][only_fill] == 0.0)
    r = run(sim)
    assert r.probe("under_fill")["settlement_m"][-1] > 0.0
    bad = load_model(here / "examples" / "irregular_section.toml")
    bad.stages = [Stage("place", "lift", 20.0, region="fil")]
    from solver.model import check_model
    with pytest.raises(InputError, match="fil") as err:
        check_model(bad)
    assert err.value.field == "stages[1].region"
