"""Fill placed below the water table loads the ground with its buoyant weight."""

import numpy as np
import pytest

from solver.fem.biot import State
from solver.model import (Embankment, Layer, Material, Model, PointProbe, Section, Stage,
                          SurfaceLoad, TimeSteps, Water)
from solver.runner import run
from solver.simulation import Simulation

G_W = 9.81
CREST, HEIGHT, SLOPE = 6.0, 2.0, 2.0       # a half section: crest 3 m, toe at 7 m


def fill_model(table_depth: float, unit_weight: float, saturated: float) -> Model:
    clay = Material("clay", youngs_modulus=3000.0, poisson_ratio=0.3, unit_weight=17.0,
                    saturated_unit_weight=17.0, permeability_x=1e-3)
    fill = Material("fill", youngs_modulus=20000.0, poisson_ratio=0.3, unit_weight=unit_weight,
                    saturated_unit_weight=saturated)
    emb = Embankment(crest_width=CREST, height=HEIGHT, side_slope=SLOPE, lifts=[HEIGHT],
                     material="fill")
    return Model(title="fill under water (invented)", materials={"clay": clay, "fill": fill},
                 layers=[Layer("clay", "clay", 10.0)],
                 section=Section(kind="embankment", half=True, mesh_size=0.5, embankment=emb),
                 water=Water(table_depth=table_depth, unit_weight=G_W),
                 stages=[Stage("place", "lift", 10.0, lift=1),
                         Stage("wait", "consolidate", 3000.0)],
                 time_steps=TimeSteps(first_step=2.0, growth=2.0, steps_per_level=2),
                 probes=[PointProbe("centre", 0.0, 0.0), PointProbe("toe", 7.0, 0.0)])


def test_a_fill_wholly_under_water_settles_as_a_dry_fill_of_its_buoyant_unit_weight():
    # Archimedes: under 3 m of standing water (table_depth = -3 m) a 2 m fill of saturated
    # unit weight 20 kN/m3 loads the ground by (20 - 9.81) kN/m3 over its area, exactly as
    # a fill of that unit weight placed in the dry. The two models solve the same equations
    # (the solver's pore pressure is the excess over the hydrostatic), so they agree to
    # rounding. Before the fix the fill under water weighed its dry 18 kN/m3: 77 % too much.
    wet = run(fill_model(-3.0, 18.0, 20.0))
    dry = run(fill_model(0.0, 20.0 - G_W, 20.0))
    for probe in ("centre", "toe"):
        a, b = wet.probe(probe)["settlement_m"], dry.probe(probe)["settlement_m"]
        assert np.abs(a - b).max() < 1e-9 * np.abs(b).max()
    assert dry.probe("centre")["settlement_m"][-1] > 0.01


@pytest.mark.parametrize("table_depth", [-1.0, -0.37, 0.0, -3.0])
def test_the_weight_of_a_fill_partly_under_water_splits_at_the_water_level(table_depth):
    # The part above the level weighs the (moist) unit weight, the part below the buoyant
    # one: the total vertical force is the areas of the trapezoid above and below the level
    # times those weights (common practice), exact however the mesh cuts the level.
    g, gs = 18.0, 20.0
    sim = Simulation(fill_model(table_depth, g, gs))
    sim.ramps["lift_1"].set(0.0, 0.0, 1.0)
    f, _ = sim.problem.external_force(1.0, placed=False)
    level = min(max(-table_depth, 0.0), HEIGHT)

    def area_below(y):              # half trapezoid: width 7 - 2 y at height y
        return (2 * (CREST / 2 + SLOPE * HEIGHT) - SLOPE * y) * y / 2

    below = area_below(level)
    above = area_below(HEIGHT) - below
    assert f[1:sim.problem.disc.n_u:2].sum() == pytest.approx(-(g * above + (gs - G_W) * below),
                                                              rel=1e-12)


def test_at_the_undrained_instant_the_ground_under_a_free_draining_fill_keeps_its_volume():
    # A load applied at once on a placed (free-draining) fill: no water has left the ground
    # yet, under the fill as anywhere (the reasoning of BiotProblem.constraints for drained
    # boundaries at dt = 0; Terzaghi 1925 for the undrained start). The mass balance of the
    # ground must hold at every pressure node, also where the fill meets it: zero volume
    # change there (incompressible constituents). Before the fix those nodes were held at
    # zero excess pressure at the instant and the ground next to the fill drained at once
    # (under a 60 m wide fill loaded over its crest the centre settled 2.0 mm at the instant,
    # 0.5 mm after the fix, from the spreading of the fill; 50 mm in the long term).
    model = fill_model(0.0, 18.0, 20.0)
    model.section.embankment.crest_width = 30.0
    model.loads = [SurfaceLoad("traffic", 0.0, 15.0, 50.0)]
    sim = Simulation(model)
    pb = sim.problem
    pb.activate(["lift_1"], np.zeros(pb.disc.n_dofs))
    sim.ramps["lift_1"].set(0.0, 0.0, 1.0)
    before = State(1.0, pb.drained_state(1.0).x, pb.disc.n_u)
    sim.ramps["traffic"].set(1.0, 0.0, 1.0)
    after = sim.make_stepper().step(before, 1.0)            # a step of zero length
    du = (after.x - before.x)[:pb.disc.n_u]
    mesh, d = sim.mesh, pb.disc
    ground = mesh.region != mesh.region_id("lift_1")
    Qe = d.coupling_blocks(ground.astype(float))             # (ne, 12, 3)
    vol = np.einsum("eij,ei->ej", Qe, du[d.u_dofs])          # int N_p div(du) per element
    size = np.einsum("eij,ei->ej", np.abs(Qe), np.abs(du[d.u_dofs]))
    pdof = (d.p_dofs - d.n_u).ravel()
    per_node = np.bincount(pdof, weights=vol.ravel(), minlength=d.n_p)
    scale = np.bincount(pdof, weights=size.ravel(), minlength=d.n_p)
    free = pb.constraints(0.0).red[d.n_u:] >= 0
    under_fill = np.zeros(mesh.n_nodes, bool)
    under_fill[mesh.triangles[~ground].ravel()] = True
    under_fill &= np.isin(np.arange(mesh.n_nodes), mesh.triangles[ground].ravel())
    interface = mesh.pressure_index[np.flatnonzero(under_fill)]
    interface = interface[interface >= 0]
    assert interface.size > 5 and free[interface].all()
    assert np.abs(per_node[free]).max() < 1e-9 * scale.max()


@pytest.mark.parametrize("newton", [False, True])
def test_fill_that_sinks_below_the_water_table_loses_the_weight_of_the_water_it_displaces(newton):
    # A fill of height h_f on a layer of thickness H in one dimension, the water table at the
    # original ground: the ground settles s, so the lowest s of the fill is under water and
    # weighs gamma_sat - gamma_w instead of gamma. Equilibrium of the settled state:
    # s = H (gamma h_f - (gamma - gamma_sat + gamma_w) s) / E_oed, so
    # s = H gamma h_f / (E_oed + H (gamma - gamma_sat + gamma_w)) (common practice: the
    # submergence correction of embankment settlement, here exact for a linear layer).
    # Without following the submergence s = H gamma h_f / E_oed, 3.9 % more here.
    from solver.geometry import layered_rectangle
    from solver.model import Drainage
    H, h_f, E_oed, g, g_sat = 5.0, 2.0, 1000.0, 18.0, 20.0
    mesh = layered_rectangle(1.0, [("fill", h_f), ("clay", H)], 0.25, top=h_f)
    clay = Material("clay", constrained_modulus=E_oed, poisson_ratio=0.3, unit_weight=17.0,
                    permeability_x=0.1)
    fill = Material("fill", constrained_modulus=1e6, poisson_ratio=0.3, unit_weight=g,
                    saturated_unit_weight=g_sat)
    model = Model(title="fill sinking into the water table (invented)",
                  materials={"clay": clay, "fill": fill},
                  section=Section(kind="mesh", regions={"fill": "fill", "clay": "clay"},
                                  width=1.0, depth=H + h_f),
                  water=Water(table_depth=0.0, unit_weight=G_W),
                  drainage=Drainage(drained_edges=["top", "interface_1"],
                                    fixed_edges=["bottom"], roller_edges=["left", "right"]),
                  stages=[Stage("place", "lift", 1.0, region="fill"),
                          Stage("wait", "consolidate", 20000.0)],
                  time_steps=TimeSteps(first_step=0.5, growth=2.0, steps_per_level=2),
                  probes=[PointProbe("ground", 0.5, 0.0)])
    sim = Simulation(model, mesh=mesh)
    sim.nonlinear = newton               # the Newton path follows it too
    s = run(sim).probe("ground")["settlement_m"][-1]
    exact = H * g * h_f / (E_oed + H * (g - g_sat + G_W))
    # the fill's own compression (stiff, 4e-5 of strain) shifts the submerged depth slightly
    assert abs(s / exact - 1) < 1e-5
