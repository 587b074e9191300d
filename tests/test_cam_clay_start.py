"""Where a Modified Cam Clay layer starts: on its normal compression line when normally
consolidated, on its own unloading line when overconsolidated."""

import numpy as np
import pytest

from solver.initial import at_rest_horizontal, cam_clay
from solver.model import (Drainage, Layer, Material, Model, OedometerParameters, PointProbe,
                          Section, Stage, SurfaceLoad, TimeSteps, Water)
from solver.runner import run

LAM, KAP, E0, NU, Q = 0.2, 0.04, 1.5, 0.25, 100.0
G_CRUST, G_CLAY, G_W = 20.0, 17.0, 9.81       # saturated unit weights, water (kN/m3)
H_CRUST, H_CLAY = 2.0, 4.0


def clay(how: str, ocr: float | None) -> Material:
    kw = {"M": 1.0} if how == "M" else {"friction_angle": 25.0}
    return Material("clay", model="modified cam clay", lambda_=LAM, kappa=KAP, void_ratio=E0,
                    poisson_ratio=NU, unit_weight=G_CLAY, saturated_unit_weight=G_CLAY,
                    permeability_x=1.0,
                    oedometer=OedometerParameters(overconsolidation_ratio=ocr), **kw)


def column(how: str, ocr: float | None) -> Model:
    """A drained oedometric column: a stiff crust (its weight gives the clay a starting
    stress) on 4 m of Cam Clay, loaded by q over the whole width; sides on rollers."""
    crust = Material("crust", youngs_modulus=1e7, poisson_ratio=0.3, unit_weight=G_CRUST,
                     saturated_unit_weight=G_CRUST, permeability_x=1.0)
    return Model(title="oedometric Cam Clay column (invented)",
                 materials={"crust": crust, "clay": clay(how, ocr)},
                 layers=[Layer("crust", "crust", H_CRUST), Layer("clay", "clay", H_CLAY)],
                 section=Section(kind="ground", width=1.0, mesh_size=0.5),
                 water=Water(table_depth=0.0), drainage=Drainage(top=True, base=True),
                 loads=[SurfaceLoad("q", -0.5, 0.5, Q)],
                 stages=[Stage("load", "load", 5.0, loads=["q"]),
                         Stage("wait", "consolidate", 50.0)],
                 time_steps=TimeSteps(first_step=0.5, growth=2.0, steps_per_level=2),
                 probes=[PointProbe("clay_top", 0.0, -H_CRUST)])


@pytest.mark.parametrize("how", ["M", "friction_angle"])
@pytest.mark.parametrize("ocr", [None, 2.0])
def test_an_oedometric_cam_clay_layer_compresses_by_lambda_ln_of_the_stress_ratio(how, ocr):
    # Wood (1990), Soil Behaviour and Critical State Soil Mechanics, ch. 7 (from memory): in
    # one-dimensional normal compression the stress ratio stays at the model's K0nc and the
    # void ratio falls by lambda ln(sigma'_f / sigma'_0); an overconsolidated clay reloads
    # along its unloading line, kappa ln(p'_p / p'_0), to sigma'_p and then follows the
    # normal compression line, lambda ln(sigma'_f / sigma'_p). The layer's compression is the
    # integral of de / (1 + e0) over its depth (the model's strain measure, see camclay.py).
    # Before the fix the layer started off its compression line: 18 % less compression with
    # M given, 2 % less with the friction angle, 17 % and 10 % too much when overconsolidated.
    model = column(how, ocr)
    z = np.linspace(H_CRUST, H_CRUST + H_CLAY, 4001)
    sv0 = (G_CRUST - G_W) * H_CRUST + (G_CLAY - G_W) * (z - H_CRUST)
    svf = sv0 + Q
    if ocr is None:
        de = LAM * np.log(svf / sv0)
    else:
        m = model.materials["clay"]
        k0 = cam_clay(m).k0_normally_consolidated()
        sp = ocr * sv0
        assert np.all(svf > sp)
        p0 = (sv0 + 2 * at_rest_horizontal(m, sv0)) / 3
        # the unloading line from (sigma'_p, K0nc sigma'_p): d sigma'_h = nu / (1 - nu) d sigma'_v
        np.testing.assert_allclose(p0, (sv0 + 2 * (k0 * sp - NU / (1 - NU) * (sp - sv0))) / 3)
        de = KAP * np.log(sp * (1 + 2 * k0) / 3 / p0) + LAM * np.log(svf / sp)
    expected = np.trapezoid(de / (1 + E0), z)
    got = run(model).probe("clay_top")["settlement_m"][-1]
    assert abs(got / expected - 1) < 0.01


def test_the_normally_consolidated_start_is_on_the_yield_surface_at_the_models_k0():
    # A normally consolidated point starts at q/p' = eta_K0 < M (wet side) with p'_c from the
    # same point: f = 0 (Roscoe and Burland 1968).
    m = clay("M", None)
    cc = cam_clay(m)
    k0 = cc.k0_normally_consolidated()
    sv = np.array([20.0, 50.0, 80.0])
    sh = at_rest_horizontal(m, sv)
    np.testing.assert_allclose(sh, k0 * sv)
    p, q = (sv + 2 * sh) / 3, sv - sh
    assert np.all(q / p < cc.M)
    pc = cc.preconsolidation_from_vertical(sv)
    np.testing.assert_allclose(q ** 2 / cc.M ** 2 + p * (p - pc), 0.0, atol=1e-9 * sv.max() ** 2)
