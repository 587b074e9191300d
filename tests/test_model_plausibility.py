"""Slips of unit and magnitude: refused when impossible or when they can only be slips, warned
about when outside the range of real soils, each value echoed with its unit and in the other
common unit.

The cases start from the road embankment example (an invented site) and change one value.
The ranges of real soils are common practice (solver/model/plausible.py, docs/model.md).
"""

from __future__ import annotations

import copy
import tomllib
from pathlib import Path

import numpy as np
import pytest

from solver.errors import InputError
from solver.model import load_model, model_from_dict, model_warnings
from solver.model.bounds import (MAX_LENGTH, MAX_STEPS, near_element_size, section_lengths,
                                 step_count)
from solver.model.plausible import echo, out_of_range, plausibility_warnings
from solver.stepping import level_schedule

ROOT = Path(__file__).resolve().parents[1]
EXAMPLES = sorted((ROOT / "examples").glob("*.toml"))
BASE = tomllib.loads((ROOT / "examples" / "embankment.toml").read_text())
SOURCE = "site.toml"


def changed(*edits) -> dict:
    """The example with (path tuple, value) edits; value None deletes the key."""
    d = copy.deepcopy(BASE)
    for path, value in edits:
        node = d
        for k in path[:-1]:
            node = node[k]
        if value is None:
            node.pop(path[-1], None)
        else:
            node[path[-1]] = value
    return d


def warnings_of(*edits) -> list[str]:
    return model_warnings(model_from_dict(changed(*edits), source=SOURCE))


def refusal(*edits) -> InputError:
    with pytest.raises(InputError) as info:
        model_from_dict(changed(*edits), source=SOURCE)
    assert info.value.source == SOURCE and info.value.fix
    return info.value


UPPER = ("materials", "upper_clay")


# ----------------------------------------------------------------------------- the cases

def test_a_modulus_meant_in_mpa_is_echoed_in_both_units_with_the_slip():
    w = warnings_of((UPPER + ("youngs_modulus",), None),
                    (UPPER + ("constrained_modulus",), 0.9))
    [text] = [t for t in w if t.startswith("materials.upper_clay.constrained_modulus:")]
    assert "constrained_modulus = 0.9 kPa = 9e-4 MPa is below the range" in text
    assert "0.9 MPa = 900 kPa" in text and "common practice" in text


def test_a_density_in_kg_per_m3_for_a_unit_weight_is_named():
    w = warnings_of((UPPER + ("unit_weight",), 1600))
    [text] = [t for t in w if t.startswith("materials.upper_clay.unit_weight:")]
    assert "1600 kN/m3 (a density of 163 t/m3) is above the range" in text
    assert "1600 kg/m3 weighs 15.7 kN/m3" in text


def test_a_density_in_t_per_m3_below_the_water_table_is_refused_for_negative_stress():
    # Upper clay from 1.5 to 5.5 m, water table at 1 m: sigma'_v at its base is
    # 18 x 1 + 18.5 x 0.5 + 1.6 x 4 - 9.81 x 4.5 = -10.5 kPa.
    err = refusal((UPPER + ("unit_weight",), 1.6))
    assert err.field == "materials.upper_clay.unit_weight"
    assert "below the unit weight of water (9.81 kN/m3)" in str(err)
    assert "turns negative: -10.5 kPa at the base of layers[2] (5.5 m deep)" in str(err)
    assert "1.6 t/m3 weighs 15.7 kN/m3" in str(err) and '"15.7 kN/m3"' in str(err)


def test_a_light_unit_weight_above_the_water_table_is_only_warned_about():
    # The crust (0 to 1.5 m) lies above a water table at 2 m; its saturated weight is given.
    w = warnings_of(("water", "table_depth"), 2.0) if False else warnings_of(
        (("water", "table_depth"), 2.0), (("materials", "crust", "unit_weight"), 1.6))
    assert any(t.startswith("materials.crust.unit_weight: unit_weight = 1.6 kN/m3 (a density "
                            "of 0.163 t/m3) is below the range") for t in w)


def test_a_saturated_unit_weight_below_water_is_refused_wherever_it_is():
    err = refusal((("materials", "crust", "saturated_unit_weight"), 9.0))
    assert err.field == "materials.crust.saturated_unit_weight"
    assert "a saturated soil is heavier than water" in str(err)


def test_a_fill_lighter_than_water_is_refused_only_under_standing_water():
    # Under standing water a lift loads the ground with its buoyant weight (docs/model.md):
    # a fill lighter than water would pull the ground up.
    light = (("materials", "fill", "unit_weight"), 8.0)
    err = refusal(light, (("water", "table_depth"), -1.0))
    assert err.field == "materials.fill.unit_weight"
    w = warnings_of(light)        # above the water table: a lightweight fill, only warned
    assert any(t.startswith("materials.fill.unit_weight: unit_weight = 8 kN/m3") for t in w)


def test_a_unit_weight_of_water_typed_ten_times_too_large_is_named_in_the_fix():
    err = refusal((("water", "unit_weight"), 98.1))
    assert "water.unit_weight" in str(err) and "98.1 kN/m3" in str(err)


def test_a_bare_permeability_is_echoed_in_m_per_s():
    w = warnings_of((UPPER + ("permeability",), 1e-9))
    [text] = [t for t in w if t.startswith("materials.upper_clay.permeability:")]
    assert "permeability = 1e-9 m/day = 1.2e-14 m/s is below the range" in text
    assert '1e-9 m/s = 8.6e-5 m/day): write "1e-9 m/s"' in text


def test_a_void_ratio_of_nineteen_is_warned_about_with_its_porosity():
    w = warnings_of((UPPER + ("oedometer", "void_ratio"), 19))
    [text] = [t for t in w if t.startswith("materials.upper_clay.oedometer.void_ratio:")]
    assert "void_ratio = 19 is above the range" in text
    assert "porosity of 0.95" in text


def test_a_consolidation_coefficient_twenty_times_k_over_mv_gamma_w_is_warned_about():
    # Terzaghi (1925): c_v = k / (m_v gamma_w). Dense sand: k = 1e-4 m/s = 8.64 m/day,
    # m_v = 1.9e-5 1/kPa, so k / (m_v gamma_w) = 8.64 / (1.9e-5 x 9.81) = 4.64e4 m2/day.
    sand = ("materials", "dense_sand", "oedometer", "consolidation_coefficient")
    implied = 8.64 / (1.9e-5 * 9.81)
    w = warnings_of((sand, 20 * implied))
    [text] = [t for t in w if "k / (m_v gamma_w)" in t]
    assert text.startswith("materials.dense_sand.oedometer.consolidation_coefficient: ")
    assert "is 20 times more than k / (m_v gamma_w) = 46400 m2/day" in text
    assert not any("k / (m_v gamma_w)" in t for t in warnings_of((sand, 3 * implied)))


def test_a_consolidation_coefficient_in_m2_per_year_read_as_m2_per_day_is_warned_about():
    # Upper clay: Cc = 0.9, e0 = 2, k = 1e-9 m/s; at mid-layer sigma'_v0 is about 33 kPa, so
    # m_v = 0.434 Cc / ((1 + e0) sigma'_v0) is about 3.9e-3 1/kPa and c_v about 2.2e-3 m2/day
    # on the compression line, ten times that on the recompression line (Cr = 0.09).
    # 3 m2/year typed as a bare 3 (m2/day) is 365 times too large.
    w = warnings_of((UPPER + ("oedometer", "consolidation_coefficient"), 3.0))
    assert any(t.startswith("materials.upper_clay.oedometer.consolidation_coefficient: ")
               and "times more than k / (m_v gamma_w)" in t for t in w)
    ok = warnings_of((UPPER + ("oedometer", "consolidation_coefficient"), "3 m2/year"))
    assert not any("consolidation_coefficient" in t for t in ok)


def test_a_water_table_below_the_base_is_warned_about():
    w = warnings_of((("water", "table_depth"), 50.0))
    assert any("water table (50 m deep) is below the base of the model" in t for t in w)


# ----------------------------------------------------------------------------- ranges, echo

def test_the_examples_raise_no_plausibility_warning():
    for path in EXAMPLES:
        assert plausibility_warnings(load_model(path)) == [], path.name


def test_the_common_unit_slips_of_the_examples_values_are_flagged():
    model = load_model(ROOT / "examples" / "embankment.toml")
    slips = {"youngs_modulus": 1e-3,            # a modulus in MPa written as a bare number
             "unit_weight": 1000 / 9.81}        # a density in kg/m3 for a unit weight
    for name in model.materials:
        for attr, factor in slips.items():
            slip = copy.deepcopy(model)
            setattr(slip.materials[name], attr, getattr(slip.materials[name], attr) * factor)
            assert any(p == f"materials.{name}.{attr}" for p, _ in out_of_range(slip)), \
                (name, attr)
    # A permeability in m/s written bare (read as m/day, 86400 times smaller): flagged for
    # the clays; for the sand and the fill the slip lands among silts, where no range can
    # tell it from a real value.
    for name in ("crust", "upper_clay", "lower_clay"):
        slip = copy.deepcopy(model)
        m = slip.materials[name]
        m.permeability_x, m.permeability_y = m.permeability_x / 86400, m.permeability_y / 86400
        assert any(p.startswith(f"materials.{name}.permeability") for p, _ in
                   out_of_range(slip)), name


@pytest.mark.parametrize("value, kind, text", [
    (1e-9, "permeability", "1e-9 m/day = 1.2e-14 m/s"),
    (600.0, "pressure", "600 kPa = 0.6 MPa"),
    (2e-4, "compressibility", "2e-4 1/kPa = 0.2 1/MPa"),
    (0.01, "consolidation_coefficient", "0.01 m2/day = 3.65 m2/year"),
    (730.5, "time", "730 days = 2 years"),
    (18.0, "unit_weight", "18 kN/m3 (a density of 1.83 t/m3)"),
])
def test_echo_gives_the_value_in_both_common_units(value, kind, text):
    assert echo(value, kind) == text


# ----------------------------------------------------------------------------- bounds

@pytest.mark.parametrize("edits, field, words", [
    ([(("section", "width"), 2e5)], "section.width", "beyond 1e5 m (100 km)"),
    ([(("layers", 1, "thickness"), 4e6)], "layers[2].thickness", "beyond 1e5 m"),
    ([(("section", "embankment", "crest_width"), 1e300)], "section.embankment.crest_width",
     "beyond 1e5 m"),
    ([(("layers", 0, "thickness"), 6e-12)], "layers[1].thickness", "less than 1 mm"),
    ([(("section", "mesh_size"), 1e-4)], "section.mesh_size", "less than 1 mm"),
    ([(("layers", 0, "thickness"), 0.005)], "layers[1].thickness",
     "less than 0.01 of the element size near the load (1 m, section.mesh_size)"),
    ([(("section", "embankment", "lifts"), [1.5, 1.5, 1.495, 0.005])],
     "section.embankment.lifts[4]", "less than 0.01 of the element size"),
    ([(("section", "embankment", "side_slope"), 2000.0)], "section.embankment.side_slope",
     "flatter than 1V:100H"),
    ([(("section", "embankment", "side_slope"), 90.0), (("section", "embankment", "height"),
                                                        2000.0),
      (("section", "embankment", "lifts"), 3)], "section.embankment.side_slope",
     "toe lies 1.8e5 m from its centre"),
    ([(("lines", 0, "points"), 1e30)], "lines[1].points", "points = 1e30 is more than 10,000"),
    ([(("time_steps", "steps_per_level"), 5000)], "time_steps.steps_per_level",
     "more than 1000"),
    ([(("time_steps", "growth"), 1.0), (("time_steps", "max_step"), None),
      (("time_steps", "first_step"), 1e-3)], "time_steps.first_step",
     "more than 1,000,000"),
])
def test_a_value_that_can_only_be_a_slip_is_refused_naming_the_field(edits, field, words):
    err = refusal(*edits)
    assert err.field == field and words in str(err), str(err)


def test_a_footing_wider_than_the_domain_is_refused():
    d = {"title": "A footing (invented)",
         "materials": {"clay": {"youngs_modulus": "3 MPa", "permeability": "1e-9 m/s"}},
         "layers": [{"material": "clay", "thickness": 10.0}],
         "section": {"kind": "footings", "width": 20.0,
                     "footings": [{"name": "raft", "width": 30.0, "load": 50.0}]},
         "stages": [{"kind": "load", "loads": ["raft"], "duration": 10.0}]}
    with pytest.raises(InputError) as info:
        model_from_dict(d, source=SOURCE)
    assert info.value.field == "section.footings[1].center"
    assert "reaches outside the domain" in str(info.value)


def test_the_near_element_size_follows_the_meshing_rule():
    model = load_model(ROOT / "examples" / "embankment.toml")
    assert near_element_size(model) == 1.0                 # section.mesh_size
    model.section.mesh_size = None
    assert near_element_size(model) == pytest.approx(3.0)  # toe to toe 30 m / 10
    paths = [p for p, *_ in section_lengths(model)]
    assert "layers[3].thickness_right" in paths and "section.embankment.lifts[3]" in paths


@pytest.mark.parametrize("duration, first, growth, per_level, cap", [
    (7305.0, 0.5, 2.0, 4, None), (7305.0, 0.5, 2.0, 4, 365.25), (60.0, 0.1, 1.0, 1, None),
    (1e5, 0.01, 1.5, 3, 50.0), (20.0, 0.5, 2.0, 4, None)])
def test_the_step_count_matches_the_schedule_it_estimates(duration, first, growth,
                                                          per_level, cap):
    model = load_model(ROOT / "examples" / "tank_footing.toml")
    st = model.stages[0]
    st.duration = duration
    model.stages = [st]
    ts = model.time_steps
    ts.first_step, ts.growth, ts.steps_per_level, ts.max_step = first, growth, per_level, cap
    times = level_schedule(duration, first, growth, per_level)
    if cap:
        steps = np.diff(times)
        n = int(np.ceil(steps / cap - 1e-9).sum())
    else:
        n = len(times) - 1
    est, _ = step_count(model)
    # the estimate rounds to whole levels, leaves out the shortened last step and counts
    # the capped steps as duration / cap (the split steps are a little more numerous)
    assert abs(est - n) <= max(per_level + 1, 0.05 * n), (est, n)


def test_the_bounds_are_far_beyond_any_example():
    for path in EXAMPLES:
        model = load_model(path)
        assert max(abs(v) for _, v, *_ in section_lengths(model)) < MAX_LENGTH / 100
        assert step_count(model)[0] < MAX_STEPS / 1000
