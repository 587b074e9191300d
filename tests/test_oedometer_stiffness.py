"""A linear elastic layer whose constrained modulus comes from its oedometer data over the
stress range the load imposes: the finite elements and the hand method on the same soil."""

import json

import numpy as np
import pytest

from solver.errors import InputError
from solver.hand.estimate import hand_estimate
from solver.model import (Drainage, Layer, Material, Model, OedometerParameters, PointProbe,
                          Section, Stage, SurfaceLoad, TimeSteps, Water, check_model,
                          dump_toml, model_from_toml)
from solver.oedometer_stiffness import oedometer_moduli
from solver.runner import run
from solver.simulation import Simulation

CC, CR, E0, OCR, GAMMA = 0.6, 0.06, 1.8, 1.5, 16.5


def wide_load(q: float = 40.0, **oed) -> Model:
    """6 m of lightly overconsolidated clay on sand under a load over the whole width (one-
    dimensional: the sides are on rollers); an invented case."""
    o = oed or dict(compression_index=CC, recompression_index=CR, void_ratio=E0,
                    overconsolidation_ratio=OCR)
    clay = Material("clay", poisson_ratio=0.3, permeability_x=1e-3, unit_weight=GAMMA,
                    saturated_unit_weight=GAMMA, stiffness_from_oedometer=True,
                    oedometer=OedometerParameters(**o))
    sand = Material("sand", constrained_modulus=50000.0, poisson_ratio=0.3, permeability_x=1.0,
                    unit_weight=19.0, saturated_unit_weight=20.0)
    width = 4.0
    return Model(title="a wide load on clay (invented)", materials={"clay": clay, "sand": sand},
                 layers=[Layer("clay", "clay", 6.0), Layer("sand", "sand", 2.0)],
                 section=Section(kind="ground", width=width, mesh_size=0.25),
                 water=Water(table_depth=0.0), drainage=Drainage(top=True, base=True),
                 loads=[SurfaceLoad("fill", -width / 2, width / 2, q)],
                 stages=[Stage("load", "load", 0.0, loads=["fill"]),
                         Stage("wait", "consolidate", 20000.0)],
                 time_steps=TimeSteps(first_step=1.0, growth=2.0, steps_per_level=2),
                 probes=[PointProbe("top", 0.0, 0.0)])


def test_each_sublayer_takes_the_secant_of_its_oedometer_curve():
    # By hand: one-dimensional strain from sigma'_v0 past sigma'_p = OCR sigma'_v0 to
    # sigma'_v0 + q, eps = [Cr log(sigma'_p / sigma'_v0) + Cc log(sigma'_f / sigma'_p)] / (1 + e0)
    # (Terzaghi & Peck 1948), E_oed = q / eps, at each sublayer's mid-depth.
    rows = [r for r in oedometer_moduli(wide_load()) if r.layer == "clay"]
    assert rows[0].top_m == 0.0 and rows[-1].bottom_m == pytest.approx(6.0)
    mid = np.array([0.5 * (r.top_m + r.bottom_m) for r in rows])
    s0 = (GAMMA - 9.81) * mid
    sp, sf = OCR * s0, s0 + 40.0
    eps = (CR * np.log10(sp / s0) + CC * np.log10(sf / sp)) / (1 + E0)
    assert np.allclose([r.constrained_modulus_kPa for r in rows], 40.0 / eps, rtol=1e-9)
    assert all(r.line == "recompression and compression" for r in rows)


def test_a_load_within_the_preconsolidation_takes_the_recompression_line_and_none_the_tangent():
    rows = oedometer_moduli(wide_load(q=1.0))
    r = rows[-1]
    assert r.line == "recompression"
    eps = CR * np.log10(r.sigma_v_final_kPa / r.sigma_v0_kPa) / (1 + E0)
    assert r.constrained_modulus_kPa == pytest.approx(1.0 / eps, rel=1e-9)
    model = wide_load()
    model.loads[0].pressure = 1e-6              # a load of nothing: the tangent at sigma'_v0
    r = oedometer_moduli(model)[-1]
    assert "tangent" in r.line
    assert r.constrained_modulus_kPa == pytest.approx(np.log(10) * (1 + E0) * r.sigma_v0_kPa
                                                      / CR, rel=1e-9)
    mv = oedometer_moduli(wide_load(volume_compressibility=2.5e-4))
    assert [r.constrained_modulus_kPa for r in mv] == pytest.approx([4000.0] * len(mv))


def test_on_a_wide_load_the_finite_elements_settle_as_the_hand_method(tmp_path):
    model = wide_load()
    text = dump_toml(model)
    result = run(model_from_toml(text), tmp_path / "run", model_text=text)
    fe = result.probe("top")["settlement_m"][-1]
    hand = hand_estimate(model).probe("top")
    # one-dimensional and drained at the end: the same soil gives the same settlement; the
    # elements' moduli are their depth ranges' mean compliance (measured 0.06 %)
    assert fe == pytest.approx(hand.final_settlement_m, rel=0.005)
    summary = json.loads((tmp_path / "run" / "summary.json").read_text())
    assert len(summary["oedometer_moduli"]) == 12
    csv = (tmp_path / "run" / "oedometer_moduli.csv").read_text().splitlines()
    assert csv[0].startswith("layer,top_m,bottom_m") and len(csv) == 13


def test_the_newton_path_takes_the_same_moduli():
    linear = Simulation(wide_load())
    newton = Simulation(wide_load())
    newton.nonlinear = True                     # step it through the incremental path
    a = run(linear).probe("top")["settlement_m"]
    b = run(newton).probe("top")["settlement_m"]
    assert np.allclose(a, b, rtol=1e-6, atol=1e-9)


@pytest.mark.parametrize("change, field", [
    (dict(youngs_modulus=2000.0), "materials.clay.youngs_modulus"),
    (dict(oedometer=OedometerParameters(void_ratio=1.8)),
     "materials.clay.oedometer.compression_index"),
    (dict(model="modified cam clay", lambda_=0.2, kappa=0.03, void_ratio=1.5, M=1.0),
     "materials.clay.stiffness_from_oedometer"),
])
def test_bad_oedometer_stiffness_inputs_name_their_field(change, field):
    model = wide_load()
    for k, v in change.items():
        setattr(model.materials["clay"], k, v)
    with pytest.raises(InputError) as exc:
        check_model(model)
    assert exc.value.field == field


def test_check_prints_the_moduli(tmp_path, capsys):
    from solver.cli import main
    path = tmp_path / "wide.toml"
    path.write_text(dump_toml(wide_load()))
    assert main(["check", str(path)]) == 0
    out = capsys.readouterr().out
    assert "constrained modulus from the oedometer" in out
    assert "recompression and compression" in out
