"""The shipped examples: every model file checks and meshes, and coarse runs give the
physical facts each example is there to show."""

from __future__ import annotations

import importlib.util
import re
from pathlib import Path

import numpy as np
import pytest

from solver.model import load_model
from solver.results import probe_summary
from solver.runner import run
from solver.simulation import Simulation

EXAMPLES = Path(__file__).resolve().parents[1] / "examples"
MODEL_FILES = sorted(EXAMPLES.glob("*.toml"))


def coarse(name: str, mesh_size: float | None = None):
    """An example on a coarse mesh on purpose: these tests check the facts of the whole
    record, not the pore pressure at draining boundaries, so the grading toward them (checked
    in tests/test_grading.py) is left off to keep the suite fast."""
    model = load_model(EXAMPLES / name)
    if mesh_size is not None:
        model.section.mesh_size = mesh_size
    model.section.grading.enabled = False
    return model


def parameter_study():
    spec = importlib.util.spec_from_file_location("parameter_study",
                                                  EXAMPLES / "parameter_study.py")
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


def test_the_examples_are_there():
    names = {p.name for p in MODEL_FILES}
    assert {"embankment.toml", "two_footings.toml", "tank_footing.toml",
            "irregular_section.toml"} <= names


@pytest.mark.parametrize("path", MODEL_FILES, ids=lambda p: p.name)
def test_every_example_loads_checks_and_meshes(path):
    # What `poroplane check` does: read, check, mesh and set up; solve nothing.
    model = load_model(path)
    sim = Simulation(model)
    assert sim.mesh.n_elements > 0 and sim.problem.disc.n_dofs > 0
    assert sim.probe_names == [p.name for p in model.probes]
    assert model.stages


@pytest.mark.parametrize("path", MODEL_FILES + [EXAMPLES / "parameter_study.py"],
                         ids=lambda p: p.name)
def test_every_example_says_it_is_invented_and_carries_the_caution(path):
    text = re.sub(r"[\s#]+", " ", path.read_text().lower())      # comment lines joined
    assert "invented" in text[:400]
    assert "qualified engineer" in text and "licensed practice" in text


def test_parameter_study_imports_without_running(capsys):
    mod = parameter_study()
    assert callable(mod.study) and callable(mod.main)
    assert capsys.readouterr().out == ""


def test_settlement_of_the_embankment_decreases_as_the_soft_clay_stiffens():
    # A stiffer skeleton compresses less under the same fill (elasticity; common practice).
    rows = parameter_study().study([400.0, 1000.0], mesh_size=3.0, grading=False)
    s = [r["final_settlement_m"] for r in rows]
    assert all(v > 0 for v in s)
    assert s[1] < 0.9 * s[0]
    assert all(r["time_to_90_percent_days"] > 0 for r in rows)


def test_a_more_permeable_clay_consolidates_faster():
    # c_v = k / (m_v gamma_w) (Terzaghi 1925): ten times the permeability of the upper clay
    # (both directions, as "permeability" in a model file) consolidates it ten times faster;
    # the lower clay keeps its own, so the whole record speeds up less (measured: 2.7 times).
    slow, fast = parameter_study().study([8.64e-5, 8.64e-4], parameter="permeability",
                                         mesh_size=3.0, grading=False)
    assert fast["time_to_90_percent_days"] < 0.6 * slow["time_to_90_percent_days"]


def test_embankment_of_make_demo_runs_through_every_stage_on_a_coarse_mesh():
    model = coarse("embankment.toml", mesh_size=3.0)
    result = run(model)
    assert result.stage[-1] == model.stages[-1].name
    assert set(result.stage) == {s.name for s in model.stages} | {"initial state"}
    assert result.stage[0] == "initial state" and result.time_days[0] == 0.0
    total = sum(s.duration for s in model.stages)
    assert result.time_days[-1] <= total + 1e-9
    s = probe_summary(result.probes)
    centre, toe = s["centre_ground"], s["toe"]
    assert 0.1 < centre["final_settlement_m"] < 1.0          # m, a soft clay site
    assert toe["final_settlement_m"] < centre["final_settlement_m"]
    assert centre["time_to_90_percent_settlement_days"] < result.time_days[-1]
    # the fill is applied partly undrained: excess pore pressure in the clay
    assert s["upper_clay_centre"]["largest_excess_pore_pressure_kPa"] > 10.0


def test_heavier_footing_settles_more_and_the_two_settle_unevenly():
    model = coarse("two_footings.toml", mesh_size=1.0)
    result = run(model)
    a = result.probe("footing_a")["settlement_m"][-1]
    b = result.probe("footing_b")["settlement_m"][-1]
    assert a > 0 and b > a
    assert b - a > 0.01                                       # m, a differential settlement
    # the footing bases do not drain: loading them raises the pore pressure beneath
    assert result.probe("footing_b")["excess_pore_pressure_kPa"].max() > 5.0


def test_flexible_tank_floor_dishes():
    result = run(coarse("tank_footing.toml", mesh_size=1.5))
    centre = result.probe("centre")["settlement_m"][-1]
    edge = result.probe("edge")["settlement_m"][-1]
    assert centre > 1.5 * edge > 0


def test_stockpile_on_the_user_mesh_settles_the_ground_under_the_fill():
    result = run(coarse("irregular_section.toml"))
    under = result.probe("under_fill")["settlement_m"]
    ditch = result.probe("ditch_bottom")["settlement_m"]
    assert under[-1] > 0.02
    assert abs(ditch[-1]) < 0.2 * under[-1]
    stored = np.array(result.stage) == "stored"
    assert np.all(np.diff(under[stored]) > -1e-6)             # consolidation settles it further
