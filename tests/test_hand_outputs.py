"""What the outputs say a number means: until_degree reached or not, t50/t90 in one meaning,
largest excess pore pressure on a draining surface, the hand estimate as JSON. The runs use
the invented 1D column of tests/test_hand_estimate.py (Terzaghi 1925 consolidation)."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest

from solver import CAUTION, runner
from solver.cli import main, until_degree_text
from solver.model import Stage, dump_toml
from solver.results import T50_T90, probe_summary

from test_hand_estimate import column_model


def test_until_degree_is_recorded_whether_and_when_reached(tmp_path):
    m = column_model(wait=400.0)
    m.stages[1] = Stage("wait", "consolidate", 400.0, until_degree=0.5)
    res = runner.run(m, tmp_path / "run", model_text=dump_toml(m))
    wait = res.info["stages"][1]
    assert wait["reached"] and wait["degree_at_end"] >= 0.5
    # the stage ended where the degree reached 50 %: about Terzaghi's t50 after the ramp,
    # T_v = 0.197 (H = 10 m, c_v = 1 m2/day), the degree counted from the stage's start
    assert wait["end_days"] == pytest.approx(wait["reached_at_days"])
    assert 10.0 < wait["reached_at_days"] < 40.0
    assert "reached at" in until_degree_text(wait)
    summary = json.loads((tmp_path / "run" / "summary.json").read_text())
    assert summary["run"]["stages"][1]["reached"] is True
    assert "excess pore pressure over the soil" in summary["run"]["average_degree_definition"]
    not_reached = dict(wait, reached=False, degree_at_end=0.31, reached_at_days=None)
    assert "not reached in its" in until_degree_text(not_reached) and "31%" in until_degree_text(not_reached)


def test_summary_t50_t90_not_reached_and_draining_surface():
    t = np.linspace(0.0, 100.0, 101)
    s = 0.5 * (1.0 - np.exp(-t / 100.0))            # U = 63 % at the end (Terzaghi-like)
    probes = {"top": {"time_days": t, "settlement_m": s, "excess_pore_pressure_kPa": 0.0 * t},
              "mid": {"time_days": t, "settlement_m": s,
                      "excess_pore_pressure_kPa": 40.0 * np.exp(-t / 100.0)}}
    r = probe_summary(probes, degree_at_end=1.0 - math.exp(-1.0), peak_time=0.0)
    top, mid = r["top"], r["mid"]
    assert top["primary_settlement_m"] == pytest.approx(0.5, rel=1e-9)
    assert top["time_to_50_percent_settlement_days"] == pytest.approx(100.0 * math.log(2), rel=1e-3)
    assert top["time_to_90_percent_settlement_days"] is None
    assert top["t90_note"].startswith("not reached by the end of the run")
    assert top["largest_excess_pore_pressure_kPa"] is None
    assert "draining boundary" in top["largest_excess_pore_pressure_note"]
    assert mid["largest_excess_pore_pressure_kPa"] == pytest.approx(40.0)
    assert "t50, t90" in T50_T90


def test_hand_json_is_machine_readable(capsys):
    assert main(["hand", "--json", "examples/two_footings.toml"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["caution"] == CAUTION and "t50_t90" in data["definitions"]
    p = data["probes"]["footing_a"]
    assert p["where"] == "footing base"
    assert p["final_settlement_m"] == pytest.approx(
        p["immediate_settlement_m"] + p["consolidation_settlement_m"] + p["secondary_settlement_m"])
    assert len(p["history"]["time_days"]) == len(p["history"]["settlement_m"])
    assert p["largest_excess_pore_pressure_kPa"] is None and "not applicable" in p["largest_excess_pore_pressure_note"]
    kinds = {(d["probe_a"], d["probe_b"]): d["kind"] for d in data["differential"]}
    assert kinds[("footing_a", "footing_b")] == "structure"


def test_hand_text_depth_is_the_middle_of_the_sublayer_shown(capsys):
    assert main(["hand", "examples/embankment.toml"]) == 0
    text = capsys.readouterr().out
    # the crust (0-1.5 m, three 0.5 m sublayers): the middle one, 0.50-1.00 m, at 0.75 m
    row = next(line for line in text.splitlines() if line.strip().startswith("0.50-1.00"))
    assert row.split()[1] == "0.75" and row.split()[-1] == "crust"
    assert "through the stages" in text and "not applicable" in text
