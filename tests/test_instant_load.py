"""A load applied at once (a "load" stage of zero duration), as a user writes it."""

import numpy as np
import pytest

from solver.analytic import terzaghi_average_degree
from solver.errors import InputError
from solver.model import model_from_toml
from solver.runner import run

E_OED, K, H, Q = 2000.0, 1e-4, 10.0, 50.0

TERZAGHI = f"""
title = "Terzaghi's column (invented)"
[section]
kind = "ground"
width = 1.0
mesh_size = 0.5
[[layers]]
material = "clay"
thickness = {H}
[materials.clay]
constrained_modulus = {E_OED}
poisson_ratio = 0.3
permeability = {K}
[water]
table_depth = 0.0
[drainage]
top = true
base = false
[[loads]]
name = "fill"
x_left = -0.5
x_right = 0.5
pressure = {Q}
[[stages]]
name = "load"
kind = "load"
loads = ["fill"]
duration = 0
[[stages]]
name = "consolidate"
kind = "consolidate"
duration = "15 years"
[time_steps]
first_step = 1.0
growth = 1.25
steps_per_level = 8
[[probes]]
name = "top"
x = 0.0
y = 0.0
[[probes]]
name = "mid"
x = 0.0
y = {-H / 2}
"""


def test_a_load_stage_of_zero_duration_is_felt_undrained_then_consolidates_as_terzaghi():
    # Terzaghi (1925): a load applied at once on a saturated layer of incompressible
    # constituents is first carried wholly by the pore water (no settlement, excess pore
    # pressure q everywhere), then U(Tv) follows the series solution.
    model = model_from_toml(TERZAGHI)
    assert model.stages[0].duration == 0.0
    r = run(model)
    top, mid = r.probe("top"), r.probe("mid")
    first = np.flatnonzero(np.asarray(top["stage"]) == "load")
    assert first.size and np.all(top["time_days"][first] == 0.0)
    k = first[-1]                                  # just after the load went on
    assert abs(top["settlement_m"][k]) < 1e-9
    assert abs(mid["excess_pore_pressure_kPa"][k] - Q) < 1e-6 * Q
    cv = K * E_OED / 9.81
    later = top["time_days"] > 0
    Tv = top["time_days"][later] * cv / H ** 2
    U_fe = top["settlement_m"][later] / (Q * H / E_OED)
    # Backward Euler with this step growth: the tolerance of the validation suite's Terzaghi
    # check (0.01 in U).
    assert np.abs(U_fe - terzaghi_average_degree(Tv)).max() < 0.01


@pytest.mark.parametrize("kind, extra", [("consolidate", ""),
                                         ("lift", "lift = 1\n")])
def test_zero_duration_is_refused_for_stages_that_are_not_loads(kind, extra):
    text = TERZAGHI.replace('kind = "consolidate"\nduration = "15 years"',
                            f'kind = "{kind}"\n{extra}duration = "0 days"')
    with pytest.raises(InputError, match="duration must be positive") as err:
        model_from_toml(text)
    assert err.value.field == "stages[2].duration"
    assert '"load"' in err.value.fix


def test_a_negative_duration_is_refused_for_a_load_stage():
    text = TERZAGHI.replace("duration = 0\n", "duration = -1\n")
    with pytest.raises(InputError, match="must not be negative") as err:
        model_from_toml(text)
    assert err.value.field == "stages[1].duration"
