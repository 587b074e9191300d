"""FE against hand rows (solver.comparison): ratios, hints, CSV, summary section, texts.

Synthetic curves: a settlement history s(t) = s_f (1 - exp(-t / tau)) stands for either
method; scaling it in size or in time gives known ratios. The run-folder check solves the
invented 1D column of tests/test_hand_estimate.py.
"""

from __future__ import annotations

import csv
import json
import math
from types import SimpleNamespace

import numpy as np
import pytest

from solver import CAUTION, runner
from solver.comparison import (COLUMNS, REASONS, RATIO_TOLERANCE, add_comparison, compare,
                               comparison_finisher, comparison_outputs,
                               compare_run_dir, comparison_section, format_table, hand_report,
                               write_comparison_csv)
from solver.hand.estimate import hand_estimate
from solver.model import dump_toml

from test_hand_estimate import column_model, embankment_model

T = np.linspace(0.0, 1000.0, 2001)


def curve(final=0.5, tau=100.0, t=T):
    return final * (1.0 - np.exp(-t / tau))


def fake_hand(**probes):
    """A stand-in HandEstimate: probes name -> (final settlement, tau, largest u); t50 and t90
    of s_f (1 - exp(-t / tau)) are tau ln 2 and tau ln 10; the applied stress at the probe is
    60 kPa."""
    ps = {}
    for name, (final, tau, umax) in probes.items():
        ps[name] = SimpleNamespace(name=name, x_m=0.0, y_m=-1.0, probe_depth_m=1.0, time_days=T,
                                   settlement_m=curve(final, tau), final_settlement_m=final,
                                   max_excess_pore_pressure_kPa=umax,
                                   t50_days=tau * math.log(2), t90_days=tau * math.log(10),
                                   t50_note=None, t90_note=None,
                                   stress_at=lambda depth: (60.0, 55.0))
    return SimpleNamespace(probes=ps, end_days=float(T[-1]))


def fe_record(final, tau, umax):
    t = T[1:]
    return {"time_days": t, "settlement_m": curve(final, tau, t),
            "excess_pore_pressure_kPa": umax * np.exp(-t / tau)}


def test_ratios_and_hints_on_synthetic_curves():
    hand = fake_hand(a=(0.5, 100.0, 40.0), b=(0.5, 100.0, 40.0))
    fe = {"a": fe_record(0.75, 40.0, 30.0),      # 1.5 x settlement, 2.5 x faster, 0.75 x u
          "b": fe_record(0.55, 110.0, 44.0)}     # all within 20 %
    rows = {r["probe"]: r for r in compare(hand, fe, None)}
    a = rows["a"]
    end = T[-1]
    assert a["fe_final_time_days"] == pytest.approx(end)
    assert a["settlement_ratio_fe_to_hand"] == pytest.approx(curve(0.75, 40.0, end) / curve(0.5, 100.0, end))
    # t50 of s_f (1 - exp(-t/tau)): tau ln 2, the FE record complete (its end is its primary value)
    assert a["hand_t50_days"] == pytest.approx(100.0 * math.log(2), rel=1e-12)
    assert a["t50_ratio_fe_to_hand"] == pytest.approx(0.4, rel=5e-3)
    assert a["t90_ratio_fe_to_hand"] == pytest.approx(0.4, rel=5e-3)
    assert a["pore_pressure_ratio_fe_to_hand"] == pytest.approx(30.0 * math.exp(-T[1] / 40.0) / 40.0)
    assert "settlement: FE settles more" in a["hints"]
    assert "t90: FE faster: lateral drainage" in a["hints"]
    assert "pore pressure: FE lower" in a["hints"]
    b = rows["b"]
    assert abs(b["settlement_ratio_fe_to_hand"] - 1) <= RATIO_TOLERANCE
    assert b["hints"] == ""


def test_slower_fe_and_missing_values():
    hand = fake_hand(a=(0.5, 100.0, float("nan")))
    rows = compare(hand, {"a": fe_record(0.3, 300.0, 10.0)}, None)
    r = rows[0]
    assert "t90: FE slower" in r["hints"] and "settlement: FE settles less" in r["hints"]
    assert r["hand_max_excess_pore_pressure_kPa"] is None          # drained surface: no hand value
    assert r["pore_pressure_ratio_fe_to_hand"] is None
    # a probe the run does not have: FE columns empty, hand columns filled
    r = compare(fake_hand(c=(0.5, 100.0, 1.0)), {}, None)[0]
    assert r["fe_final_settlement_m"] is None and r["settlement_ratio_fe_to_hand"] is None
    assert r["hand_final_settlement_m"] == pytest.approx(curve(0.5, 100.0, T[-1]))


def test_summary_values_stand_in_for_missing_arrays():
    hand = fake_hand(a=(0.5, 100.0, 40.0))
    summary = {"probes": {"a": {"final_time_days": 500.0, "final_settlement_m": 0.5,
                                "time_to_50_percent_settlement_days": 50.0,
                                "time_to_90_percent_settlement_days": 200.0,
                                "largest_excess_pore_pressure_kPa": 40.0}}}
    r = compare(hand, None, summary)[0]
    assert r["fe_final_time_days"] == 500.0
    assert r["hand_final_settlement_m"] == pytest.approx(curve(0.5, 100.0, 500.0), rel=1e-6)
    assert r["pore_pressure_ratio_fe_to_hand"] == pytest.approx(1.0)


def test_csv_has_unit_columns_and_reads_back(tmp_path):
    rows = compare(fake_hand(a=(0.5, 100.0, 40.0)), {"a": fe_record(0.75, 40.0, 30.0)}, None)
    path = write_comparison_csv(rows, tmp_path / "comparison.csv")
    with open(path, newline="") as fh:
        got = list(csv.reader(fh))
    assert tuple(got[0]) == COLUMNS
    for c in COLUMNS:
        assert c in ("probe", "hints", "notes") or c.endswith(("_m", "_days", "_kPa", "_to_hand")), c
    assert float(got[1][COLUMNS.index("settlement_ratio_fe_to_hand")]) == pytest.approx(
        rows[0]["settlement_ratio_fe_to_hand"], rel=1e-5)


def test_summary_section_is_json_with_reasons_and_caution():
    rows = compare(fake_hand(a=(0.5, 100.0, float("nan"))), {"a": fe_record(0.75, 40.0, 30.0)}, None)
    sec = comparison_section(rows)
    text = json.dumps(sec, allow_nan=False)
    assert "a" in sec["probes"] and sec["reasons"] == REASONS and sec["caution"] == CAUTION
    assert "probe" not in sec["probes"]["a"]
    assert json.loads(text)["probes"]["a"]["hand_max_excess_pore_pressure_kPa"] is None
    table = format_table(rows)
    assert REASONS in table and CAUTION in table and "FE faster: lateral drainage" in table


def test_hand_report_lists_every_probe_the_split_and_the_caution():
    h = hand_estimate(embankment_model())
    text = hand_report(h)
    for name in h.probes:
        assert f"probe {name}" in text
    assert "immediate" in text and "consolidation" in text and "secondary" in text
    assert "t50" in text and "t90" in text and "stress increase used" in text
    assert "Differential settlement along the ground surface" in text
    assert "through the stages" in text and "how" not in text.split("immediate:")[0][-5:]
    assert text.rstrip().endswith(CAUTION)


def test_run_folder_comparison(tmp_path):
    # the invented 1D column, written as a run folder, compared again from the folder
    m = column_model(wait=100.0)
    out = tmp_path / "run"
    result = runner.run(m, out, model_text=dump_toml(m), finish=comparison_finisher(m))
    table = compare_run_dir(out)
    assert "top" in table and "mid" in table and CAUTION in table
    rows, message, _ = comparison_outputs(m, result.probes, summary_of(out))
    assert message is None
    top = {r["probe"]: r for r in rows}["top"]
    assert top["settlement_ratio_fe_to_hand"] == pytest.approx(1.0, abs=0.01)
    # the settlement agrees within 1 %; near U = 90 % a difference dU in degree is a relative
    # difference dU / (T dU/dT) = dU / (0.848 x 0.247) ~ 4.8 dU in time (Terzaghi 1925)
    assert top["t90_ratio_fe_to_hand"] == pytest.approx(1.0, abs=0.048)
    assert top["t50_ratio_fe_to_hand"] == pytest.approx(1.0, abs=0.02)
    assert "not applicable on a draining surface" in top["notes"]
    assert (out / "hand.json").exists()
    data = json.loads((out / "hand.json").read_text())
    assert data["probes"]["top"]["t90_days"] == pytest.approx(top["hand_t90_days"])
    assert summary_of(out)["run"]["average_degree_of_consolidation_at_end"] > 0.9
    assert (out / "comparison.csv").exists()
    assert "top" in summary_of(out)["comparison"]["probes"]


def summary_of(out):
    return json.loads((out / "summary.json").read_text())


def test_ratios_that_mean_nothing_are_left_out_with_the_reason():
    # near zero (under 5 % of the largest at any probe) and opposite signs give "-"
    hand = fake_hand(centre=(0.5, 100.0, 40.0), toe=(-0.06, 100.0, 40.0), far=(0.01, 100.0, 40.0))
    fe = {"centre": fe_record(0.55, 100.0, 44.0), "toe": fe_record(0.06, 100.0, 1.0),
          "far": fe_record(0.2, 100.0, 40.0)}
    rows = {r["probe"]: r for r in compare(hand, fe, None)}
    assert rows["centre"]["settlement_ratio_fe_to_hand"] == pytest.approx(1.1, rel=1e-3)
    toe, far = rows["toe"], rows["far"]
    assert toe["settlement_ratio_fe_to_hand"] is None and "signs differ" in toe["notes"]
    assert toe["t50_ratio_fe_to_hand"] is None and toe["t90_ratio_fe_to_hand"] is None
    assert far["settlement_ratio_fe_to_hand"] is None and "near zero" in far["notes"]
    assert "excess pore pressure: near zero" in toe["notes"]       # FE u 1 kPa of 44
    table = format_table(list(rows.values()))
    assert "What '-' and some values mean" in table and "toe: settlement: the signs differ" in table


def test_fe_pore_pressure_above_the_applied_stress_is_named_the_mandel_cryer_effect():
    hand = fake_hand(mid=(0.5, 100.0, 58.0))                     # 60 kPa applied at the probe
    r = compare(hand, {"mid": fe_record(0.5, 100.0, 63.5)}, None)[0]
    assert "Mandel (1953) and Cryer (1963)" in r["notes"] and "not an error" in r["notes"]
    r = compare(hand, {"mid": fe_record(0.5, 100.0, 59.0)}, None)[0]
    assert "Mandel" not in r["notes"]


def test_fe_t90_not_reached_by_the_end_of_the_run():
    # a run stopped at U = 1 - 1/e = 63 % of a sudden load's consolidation (1D: settlement and
    # pore water alike, Terzaghi 1925): the primary value is the settlement at the end plus
    # (1 - U)/U times the settlement since the largest excess pore water (here since t = 0),
    # i.e. s_f; t50 = tau ln 2 is reached, t90 is not.
    hand = fake_hand(a=(0.5, 100.0, 40.0))
    t = np.linspace(0.0, 100.0, 400)
    s = 0.5 * (1.0 - np.exp(-t / 100.0))
    summary = {"run": {"average_degree_of_consolidation_at_end": 1.0 - math.exp(-1.0),
                       "largest_excess_pore_water_days": 0.0}, "probes": {}}
    r = compare(hand, {"a": {"time_days": t, "settlement_m": s}}, summary)[0]
    assert r["fe_t50_days"] == pytest.approx(100.0 * math.log(2), rel=1e-4)
    assert r["fe_t90_days"] is None and "t90 FE: not reached by the end of the run" in r["notes"]
    assert r["t90_ratio_fe_to_hand"] is None
