"""The pore water at the start: piezometric levels with steady seepage between them, and an
initial excess pore pressure, in the finite elements and the hand method."""

import numpy as np
import pytest

from solver.errors import InputError
from solver.fem.biot import State
from solver.hand.estimate import hand_estimate
from solver.model import (Drainage, Layer, Material, Model, PointProbe, Section, Stage,
                          TimeSteps, Water, check_model, dump_toml, model_from_toml)
from solver.pore_water import MeshWater
from solver.runner import run
from solver.simulation import Simulation

GW = 9.81


def artesian_model(**water) -> Model:
    """Two clays between a water table 1 m deep and a sand whose head stands 2 m above the
    ground (an invented site)."""
    clay_a = Material("clay_a", constrained_modulus=2000.0, poisson_ratio=0.3,
                      permeability_x=2e-4, unit_weight=17.0, saturated_unit_weight=17.5)
    clay_b = Material("clay_b", constrained_modulus=1500.0, poisson_ratio=0.3,
                      permeability_x=5e-5, unit_weight=16.5, saturated_unit_weight=16.5,
                      oedometer=_oed())
    sand = Material("sand", constrained_modulus=40000.0, poisson_ratio=0.3, permeability_x=1.0,
                    unit_weight=19.0, saturated_unit_weight=20.0)
    clay_a.oedometer = _oed()
    return Model(
        title="artesian sand (invented)",
        materials={"clay_a": clay_a, "clay_b": clay_b, "sand": sand},
        layers=[Layer("clay_a", "clay_a", 3.0), Layer("clay_b", "clay_b", 3.0),
                Layer("sand", "sand", 1.0)],
        section=Section(kind="ground", width=2.0, mesh_size=0.5),
        water=Water(table_depth=1.0, **water),
        drainage=Drainage(top=True, base=True),
        stages=[Stage("wait", "consolidate", 2000.0)],
        time_steps=TimeSteps(first_step=1.0, growth=2.0, steps_per_level=2),
        probes=[PointProbe("a", 0.0, -2.0), PointProbe("b", 0.0, -4.5),
                PointProbe("sand", 0.0, -6.5), PointProbe("top", 0.0, 0.0)])


def _oed():
    from solver.model import OedometerParameters
    return OedometerParameters(volume_compressibility=1 / 1800.0)


def seepage_by_hand(depth: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(pore pressure, vertical effective stress) in kPa at depths (m) of artesian_model,
    worked by hand: steady vertical flow from the water table (head -1 m at 1 m depth) to the
    sand (head +2 m from 6 m depth), the same flow q through both clays (Darcy 1856; layers
    in series, the head lost in each in proportion to thickness / permeability)."""
    r_a, r_b = 2.0 / 2e-4, 3.0 / 5e-5          # resistances of the wet clays, day
    q = (2.0 - (-1.0)) / (r_a + r_b)           # m/day, upward
    z = np.asarray(depth, float)
    head = np.where(z <= 3.0, -1.0 + q * (z - 1.0) / 2e-4,
                    np.where(z <= 6.0, -1.0 + q * r_a + q * (z - 3.0) / 5e-5, 2.0))
    u = np.where(z <= 1.0, 0.0, GW * (head + z))
    sv = (17.0 * np.minimum(z, 1.0) + 17.5 * np.clip(z - 1.0, 0.0, 2.0)
          + 16.5 * np.clip(z - 3.0, 0.0, 3.0) + 20.0 * np.clip(z - 6.0, 0.0, 1.0))
    return u, sv - u


def test_effective_stress_between_a_water_table_and_an_artesian_sand_follows_steady_seepage():
    model = artesian_model(piezometric_depths={"sand": -2.0})
    sim = Simulation(model)
    z = np.array([0.5, 1.0, 2.0, 3.0, 4.5, 6.0, 6.5, 7.0])
    u_hand, s_hand = seepage_by_hand(z)
    g = sim._geostatic(np.zeros_like(z), -z)
    assert np.allclose(g["steady_pore_pressure_kPa"], u_hand, atol=1e-9)
    assert np.allclose(g["vertical_effective_kPa"], s_hand, atol=1e-9)
    # the probes read the same start (recovered from the quadrature points, hence 0.5 kPa)
    pb = sim.problem
    v = sim.probe_values(State(0.0, pb.initial_unknowns(), pb.disc.n_u))
    u_p, s_p = seepage_by_hand(np.array([2.0, 4.5, 6.5, 0.0]))
    assert np.allclose(v["total_pore_pressure_kPa"], u_p, atol=1e-9)
    assert np.allclose(v["vertical_effective_stress_kPa"], s_p, atol=0.5)
    # the hand method starts from the same effective stress at its sublayer mid-depths
    est = hand_estimate(model)
    p = est.probe("top")
    _, s_mid = seepage_by_hand(p.depth_m)
    assert np.allclose(p.initial_effective_stress_kPa, s_mid, atol=1e-9)


def test_the_start_with_steady_seepage_is_at_rest():
    # Steady seepage satisfies the flow equation and the geostatic stress the force balance:
    # with no load nothing moves and no excess pore pressure arises (Biot 1941).
    result = run(artesian_model(piezometric_depths={"sand": -2.0}))
    for name in ("a", "b", "sand", "top"):
        pr = result.probe(name)
        assert np.abs(pr["settlement_m"]).max() < 1e-12
        assert np.abs(pr["excess_pore_pressure_kPa"]).max() < 1e-9


def terzaghi_linear_start(tv: np.ndarray, n_terms: int = 400) -> np.ndarray:
    """Average degree of consolidation of a layer drained at the top only whose initial excess
    grows linearly from zero at the drained top to its largest at the impermeable base: the
    Fourier series of the one-dimensional consolidation equation (Terzaghi 1943, *Theoretical
    Soil Mechanics*, ch. XIV; the coefficients of this start worked in the test):
    u0 = a z/H gives b_m = 2 a (-1)^m / M^2, M = (2m + 1) pi / 2, and
    1 - U = sum 4 (-1)^m / M^3 exp(-M^2 T)."""
    m = np.arange(n_terms)[:, None]
    big_m = (2 * m + 1) * np.pi / 2
    return 1.0 - np.sum(4.0 * (-1.0) ** m / big_m ** 3 * np.exp(-big_m ** 2 * tv[None]), axis=0)


def excess_model(excess) -> Model:
    e, k, h = 2000.0, 1e-4, 10.0
    clay = Material("clay", constrained_modulus=e, poisson_ratio=0.3, permeability_x=k,
                    unit_weight=18.0, saturated_unit_weight=18.0)
    cv = k * e / GW
    return Model(title="a clay still consolidating (invented)", materials={"clay": clay},
                 layers=[Layer("clay", "clay", h)],
                 section=Section(kind="ground", width=1.0, mesh_size=0.5),
                 water=Water(table_depth=0.0, initial_excess_pore_pressures={"clay": excess}),
                 drainage=Drainage(top=True, base=False),
                 stages=[Stage("wait", "consolidate", 2.0 * h ** 2 / cv)],
                 time_steps=TimeSteps(first_step=0.2, growth=1.25, steps_per_level=8),
                 probes=[PointProbe("top", 0.0, 0.0), PointProbe("base", 0.0, -h)])


def test_an_initial_excess_dissipates_as_terzaghis_series_for_that_start():
    model = excess_model([0.0, 60.0])
    e, h, cv = 2000.0, 10.0, 1e-4 * 2000.0 / GW
    s_final = 0.5 * 60.0 * h / e                  # the excess taken up by the soil, m_v int u0
    result = run(model)
    top = result.probe("top")
    tv = top["time_days"] * cv / h ** 2
    u_fe = top["settlement_m"] / s_final
    # backward Euler with this growth: within 0.005 in U (measured 0.0038), as the Terzaghi
    # check of the validation suite
    assert np.abs(u_fe - terzaghi_linear_start(tv)).max() < 0.005
    base = result.probe("base")
    # at the start the base carries its excess, and its effective stress is reduced by it
    assert base["excess_pore_pressure_kPa"][0] == pytest.approx(60.0, abs=1.0)
    assert base["vertical_effective_stress_kPa"][-1] == pytest.approx(
        (18.0 - GW) * h, rel=0.01)
    # the hand method follows the same start: the settlement it gives and its time rate
    est = hand_estimate(model).probe("top")
    assert est.final_settlement_m == pytest.approx(s_final, rel=1e-9)
    tv_h = est.time_days * cv / h ** 2
    ok = tv_h > 0.01
    assert np.abs(est.settlement_m[ok] / s_final - terzaghi_linear_start(tv_h[ok])).max() < 0.01


def test_the_raster_water_of_a_user_mesh_matches_the_layered_one():
    # The same ground read as regions of a mesh: the seepage down raster columns agrees with
    # the exact layered profile within gamma_w times the raster's cell height.
    model = artesian_model(piezometric_depths={"sand": -2.0})
    sim = Simulation(model)
    mesh = sim.mesh
    starting = {r: sim.region_material[r] for r in mesh.region_names}
    water = MeshWater(mesh, model, starting, rows=240)
    x, y = mesh.points.T
    u_raster, _ = water(x, y)
    u_layer = sim.initial["steady_pore_pressure_kPa"]
    cell = np.ptp(y) / 240
    assert np.abs(u_raster - u_layer).max() < GW * cell


def test_water_tables_round_trip_through_the_model_copy():
    model = artesian_model(piezometric_depths={"sand": -2.0},
                           initial_excess_pore_pressures={"clay_b": [5.0, 10.0]})
    back = model_from_toml(dump_toml(model))
    assert back.water.piezometric_depths == {"sand": -2.0}
    assert back.water.initial_excess_pore_pressures == {"clay_b": [5.0, 10.0]}
    text = dump_toml(model).replace("clay_b = [5.0, 10.0]", 'clay_b = "8 kPa"')
    assert model_from_toml(text).water.initial_excess_pore_pressures == {"clay_b": [8.0]}


@pytest.mark.parametrize("water, field", [
    ({"piezometric_depths": {"sandy": -2.0}}, "water.piezometric_depths.sandy"),
    ({"initial_excess_pore_pressures": {"clay_a": [1.0, 2.0, 3.0]}},
     "water.initial_excess_pore_pressures.clay_a"),
    ({"piezometric_depths": {"sand": float("nan")}}, "water.piezometric_depths.sand"),
])
def test_bad_water_tables_name_their_field(water, field):
    with pytest.raises(InputError) as exc:
        check_model(artesian_model(**water))
    assert exc.value.field == field


def test_a_head_that_lifts_the_ground_is_refused_naming_the_level():
    # 12 m of head above the ground under 7 m of soil: the pore pressure in the sand exceeds
    # the weight above it (hydraulic uplift; common practice).
    with pytest.raises(InputError) as exc:
        Simulation(artesian_model(piezometric_depths={"sand": -12.0}))
    assert exc.value.field == "water.piezometric_depths.sand"
    assert "lift off" in str(exc.value)


def test_bad_water_table_in_a_file_is_one_message_and_exit_2(tmp_path, capsys):
    from solver.cli import main
    text = dump_toml(artesian_model()).replace(
        "[water]", '[water.piezometric_depths]\nsand = "two metres"\n\n[water]')
    path = tmp_path / "bad.toml"
    path.write_text(text)
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert "water.piezometric_depths.sand" in err and "Traceback" not in err
