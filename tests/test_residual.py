"""The settlement still to come after a chosen day (e.g. paving), at every probe."""

import json

import numpy as np
import pytest

from solver.analytic import terzaghi_average_degree
from solver.errors import InputError
from solver.model import check_model, dump_toml, model_from_toml
from solver.results import probe_summary
from solver.results.summary import residual_table
from solver.runner import run

from test_simulation import E_OED, H, K, Q, column_model
from solver.model import Stage


def test_the_residual_is_the_final_settlement_less_the_settlement_on_the_day():
    t = np.array([0.0, 10.0, 100.0, 1000.0])
    s = np.array([0.0, 0.02, 0.08, 0.10])
    out = probe_summary({"p": {"time_days": t, "settlement_m": s, "stage": ["a"] * 4}},
                        residual_after=55.0)["p"]
    on_day = 0.02 + (0.08 - 0.02) * (55.0 - 10.0) / 90.0      # linear between the records
    assert out["settlement_at_residual_start_m"] == pytest.approx(on_day)
    assert out["residual_settlement_m"] == pytest.approx(0.10 - on_day)
    assert out["residual_after_days"] == 55.0
    late = probe_summary({"p": {"time_days": t, "settlement_m": s, "stage": ["a"] * 4}},
                         residual_after=2000.0)["p"]
    assert late["residual_settlement_m"] is None       # the record ends before the day
    assert "55" in residual_table({"p": out}) and "20.0" not in residual_table({"p": out})


def test_the_residual_after_a_day_follows_terzaghi(tmp_path):
    # A load applied at once on a column drained at the top: after day D the settlement
    # still to come is s_final (U(T_end) - U(T_D)) (Terzaghi 1925); the run writes it into
    # summary.json and the report shows it beside the final settlement.
    cv = K * E_OED / 9.81
    model = column_model([Stage("load", "load", 0.0, loads=["fill"]),
                          Stage("wait", "consolidate", 1.0 * H ** 2 / cv)])
    day = 0.2 * H ** 2 / cv
    model.output.residual_after = day
    text = dump_toml(model)
    out = tmp_path / "run"
    result = run(model_from_toml(text), out, model_text=text)
    s_final = Q * H / E_OED
    end = result.time_days[-1]
    expected = s_final * (terzaghi_average_degree(end * cv / H ** 2)
                          - terzaghi_average_degree(0.2))
    summary = json.loads((out / "summary.json").read_text())["probes"]["top"]
    # the time error of backward Euler on this schedule, as the Olson check beside it
    assert summary["residual_settlement_m"] == pytest.approx(float(expected), abs=0.01 * s_final)
    assert summary["residual_settlement_m"] == pytest.approx(
        summary["final_settlement_m"] - summary["settlement_at_residual_start_m"], rel=1e-12)
    # the report's table beside the final settlement, with the hand method's residual
    from types import SimpleNamespace
    from solver.report import _residual_html
    t = np.array([0.0, day, end])
    hand = {"top": {"time_days": t, "settlement_m": np.array([0.0, 0.05, 0.125])}}
    html = _residual_html(SimpleNamespace(hand=hand), {"top": summary})
    assert f"residual settlement after day {day:.4g}" in html
    assert "0.075" in html                    # by hand: 0.125 - 0.05


@pytest.mark.parametrize("value, words", [
    (1e9, "after the last stage ends"), (-3.0, "must not be negative")])
def test_a_residual_day_outside_the_stages_is_refused(value, words):
    model = column_model([Stage("load", "load", 10.0, loads=["fill"])])
    model.output.residual_after = value
    with pytest.raises(InputError) as exc:
        check_model(model)
    assert exc.value.field == "output.residual_after" and words in str(exc.value)


def test_a_residual_day_is_read_with_units():
    model = column_model([Stage("load", "load", 800.0, loads=["fill"])])
    text = dump_toml(model).replace("[output]", '[output]\nresidual_after = "2 years"')
    assert model_from_toml(text).output.residual_after == pytest.approx(730.5)
    with pytest.raises(InputError) as exc:
        model_from_toml(text.replace('"2 years"', '"paving day"'))
    assert exc.value.field == "output.residual_after"
