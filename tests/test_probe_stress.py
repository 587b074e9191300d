"""How a probe's stress is found: quadrature-point stresses recovered to the point, the same
on the linear and the Newton path, and right on the axis of an axisymmetric model."""

import numpy as np

from solver.fem.biot import State
from solver.model import (Layer, Material, Model, PointProbe, Section, Stage, SurfaceLoad,
                          TimeSteps, load_model)
from solver.results import read_fields
from solver.runner import Runner
from solver.simulation import Simulation

STRESSES = ("vertical_effective_stress_kPa", "horizontal_effective_stress_kPa",
            "out_of_plane_effective_stress_kPa", "shear_stress_kPa")


def test_an_elastic_model_gives_the_same_probe_stresses_on_the_linear_and_newton_paths(
        tmp_path):
    # The same equations solved two ways (factor-once linear steps; Newton iterations on
    # the material states, which converge at once for a linear material) give the same
    # unknowns (common practice), so they must report the same stresses. Before the fix the
    # Newton path reported element means: 9.5 kPa apart at the toe of this model.
    model = load_model("examples/embankment.toml")
    model.section.mesh_size = 2.0
    for st in model.stages:
        st.duration, st.until_degree = min(st.duration, 30.0), None
    model.time_steps = TimeSteps(first_step=5.0, growth=2.0, steps_per_level=2)
    runs, fields = {}, {}
    for newton in (False, True):
        sim = Simulation(model)
        sim.nonlinear = newton                 # an elastic model through the Newton solver
        runs[newton] = Runner(sim, tmp_path / str(newton)).run()
        assert (type(sim.stepper).__name__ == "NewtonStepSolver") == newton
        fields[newton] = read_fields(tmp_path / str(newton), ["effective_stress_kPa"])
    for name in runs[False].probes:
        a, b = runs[False].probe(name), runs[True].probe(name)
        assert np.abs(a["settlement_m"] - b["settlement_m"]).max() < 1e-9
        for c in STRESSES:
            assert np.abs(a[c] - b[c]).max() < 1e-6, (name, c)
    # ... and the same nodal fields at every output step.
    fa, fb = (fields[k].fields["effective_stress_kPa"] for k in (False, True))
    assert fa.shape == fb.shape and np.abs(fa - fb).max() < 1e-6


A, Q, NU = 1.0, 100.0, 0.3      # circle radius (m), pressure (kPa), Poisson's ratio


def boussinesq_circle_centre(z):
    """Vertical and radial (= hoop) stress increase under the centre of a uniformly loaded
    circle of radius A on an elastic half-space at depth z, compression positive:
    sigma_z = q (1 - z^3 / (a^2 + z^2)^(3/2)),
    sigma_r = q / 2 ((1 + 2 nu) - 2 (1 + nu) z / (a^2 + z^2)^(1/2) + z^3 / (a^2 + z^2)^(3/2))
    (Boussinesq 1885, integrated over the circle; as given in Poulos and Davis 1974, Elastic
    Solutions for Soil and Rock Mechanics, ch. 3, from memory)."""
    s = np.sqrt(A * A + z * z)
    return (Q * (1 - z ** 3 / s ** 3),
            Q / 2 * ((1 + 2 * NU) - 2 * (1 + NU) * z / s + z ** 3 / s ** 3))


def test_stresses_on_the_axis_under_a_loaded_circle_follow_boussinesq():
    # A uniform pressure on a circle of radius a on a layer 15 a deep and 15 a wide (fixed
    # base, smooth side), drained. Discretisation and the finite domain leave 0.9 % of q at
    # this mesh (0.5 % with the size halved and the domain doubled, measured); 1.5 % allowed.
    # On the axis the hoop strain u_r / r has the limit d u_r / d r; before the fix it was
    # taken as zero at probes there, 8 % of q too much vertical stress and 20 % hoop stress.
    depths = np.array([0.25, 0.5, 1.0, 2.0, 3.0]) * A
    soil = Material("soil", youngs_modulus=10_000.0, poisson_ratio=NU, permeability_x=1.0)
    model = Model(title="loaded circle (invented)", analysis="axisymmetric",
                  materials={"soil": soil}, layers=[Layer("soil", "soil", 15 * A)],
                  section=Section(kind="ground", width=15 * A, mesh_size=0.1 * A),
                  loads=[SurfaceLoad("tank", 0.0, A, Q)],
                  stages=[Stage("fill", "load", 0.0, loads=["tank"])],
                  probes=[PointProbe(f"axis_{z:g}", 0.0, -z) for z in depths])
    sim = Simulation(model)
    sim.ramps["tank"].set(0.0, 0.0, 1.0)
    st = sim.problem.drained_state(1.0)
    rest = State(0.0, np.zeros_like(st.x), st.n_u)
    v, v0 = sim.probe_values(st), sim.probe_values(rest)
    sz, sr = boussinesq_circle_centre(depths)
    for col, exact in (("vertical_effective_stress_kPa", sz),
                       ("horizontal_effective_stress_kPa", sr),
                       ("out_of_plane_effective_stress_kPa", sr)):
        assert np.abs(v[col] - v0[col] - exact).max() < 0.015 * Q, col
    # The nodal fields of a run, read on the axis, too.
    f, f0 = sim.fields(st), sim.fields(rest)
    ds = f["effective_stress_kPa"] - f0["effective_stress_kPa"]
    on_axis = sim.mesh.interpolate(ds, np.column_stack([np.zeros_like(depths), -depths]))
    assert np.abs(on_axis[:, 1] - sz).max() < 0.015 * Q
    assert np.abs(on_axis[:, 0] - sr).max() < 0.015 * Q
    assert np.abs(on_axis[:, 2] - sr).max() < 0.015 * Q
