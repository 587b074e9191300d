"""The mesh study compares the whole solution on a uniformly refined mesh: the excess pore
pressure field (relative to the applied load) and the settlement along every line at every
output time, naming where and when the largest change is; its verdict uses them."""

from __future__ import annotations

from pathlib import Path

import pytest

from solver.mesh_study import PRESSURE_LIMIT, applied_pressure, study
from solver.model import load_model, model_from_dict
from solver.runner import run
from solver.simulation import Simulation

from test_grading import CLAY, LOAD, column

EXAMPLES = Path(__file__).resolve().parents[1] / "examples"


def test_applied_pressure_follows_the_lifts_as_they_are_placed():
    # The demo: three 1.5 m lifts of 20 kN/m3 fill, each ramped on over its 20-day stage and
    # followed by a wait; the pressure under the crest is gamma times the height placed.
    model = load_model(EXAMPLES / "embankment.toml")
    starts = [0.0, 20.0, 80.0, 100.0, 160.0, 180.0]
    for t, height in ((0.0, 0.0), (10.0, 0.75), (20.0, 1.5), (50.0, 1.5), (90.0, 2.25),
                      (170.0, 3.75), (180.0, 4.5), (5000.0, 4.5)):
        assert applied_pressure(model, t, starts) == pytest.approx(20.0 * height)


def test_applied_pressure_follows_the_load_factors():
    d = column()
    d["stages"] = [{"name": "half", "kind": "load", "loads": ["fill"], "factor": 0.5,
                    "duration": 10.0},
                   {"name": "off", "kind": "load", "loads": ["fill"], "factor": 0.0,
                    "duration": 10.0}]
    model = model_from_dict(d)
    starts = [0.0, 10.0]
    assert applied_pressure(model, 5.0, starts) == pytest.approx(0.25 * LOAD)
    assert applied_pressure(model, 10.0, starts) == pytest.approx(0.5 * LOAD)
    assert applied_pressure(model, 15.0, starts) == pytest.approx(0.25 * LOAD)


def column_study(graded: bool):
    d = column(enabled=graded)
    d["stages"][0]["duration"] = 1.0          # the load ramps on over a day
    model = model_from_dict(d)
    sim = Simulation(model)
    return study(model, sim, run(sim))


def test_a_coarse_column_is_sent_back_for_refinement_at_its_drained_boundary():
    s = column_study(graded=False)
    # No probe at all: the verdict comes from the field and the line.
    assert not s.probes and s.pressure and s.settlement
    assert s.fine_elements == 4 * s.coarse_elements
    assert [round(r.time_days, 6) for r in s.pressure] == [1.0, 4.2]
    worst = s.worst(s.pressure)
    assert worst.relative > PRESSURE_LIMIT and worst.scale == pytest.approx(LOAD)
    # where the excess pore pressure drops to zero: the ground or the drained clay base
    assert min(abs(worst.y), abs(worst.y + CLAY)) < 1.5
    assert worst.time_days == pytest.approx(1.0)
    assert not s.fine_enough
    text = s.format()
    assert "REFINE THE MESH" in text
    assert f"y = {worst.y:.2f} m at 1.0 days (load)" in text


@pytest.mark.slow
def test_the_graded_column_is_fine_enough():
    s = column_study(graded=True)
    assert s.fine_enough, s.format()
    assert s.worst(s.pressure).relative < 0.03


def test_a_study_of_a_run_kept_in_memory_sets_the_coarse_mesh_up_again():
    # A Simulation runs once (lifts placed, fill submerged); the study of an in-memory run
    # repeats it on a fresh set-up of the same mesh. Coarse on purpose: the first lift only.
    model = load_model(EXAMPLES / "embankment.toml")
    model.section.mesh_size = 3.0
    model.section.grading.enabled = False
    model.stages = model.stages[:1]
    model.output.times = []
    sim = Simulation(model)
    s = study(model, sim, run(sim))
    assert [r.time_days for r in s.pressure] == [20.0]
    assert s.pressure[0].scale == pytest.approx(30.0)      # 1.5 m of 20 kN/m3 fill
    assert {r.line for r in s.settlement} == {ln.name for ln in model.lines}
