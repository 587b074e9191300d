"""The finite-element run of the hand method's stage cases beside it, in the comparison (the
invented columns of tests/test_hand_history.py).

In one dimension the two answer the same problem: a linear column (m_v = 1 / E_oed, Terzaghi
1925; two layers: Gray 1945) must agree to the discretisation; a Modified Cam Clay column
(lambda = Cc / ln 10, kappa = Cr / ln 10, Schofield & Wroth 1968) follows the compression line
on loading and the swelling line on unloading as the hand method's Cc and Cr do, so the
settlement under a surcharge and the rebound after its removal agree to what separates the
two laws (the critical-state K0 and the elastic swelling on p', against the hand method's
one-dimensional Cc and Cr on sigma'_v).
"""

from __future__ import annotations

import numpy as np
import pytest

from solver import runner
from solver.comparison import compare
from solver.hand.estimate import hand_estimate
from solver.model import Material, OedometerParameters, Stage, TimeSteps

from test_hand_history import CLAY, clay_model, two_layer_model


def test_two_layer_column_fe_beside_the_hand_method():
    m, _ = two_layer_model()
    m.time_steps = TimeSteps(first_step=0.005, growth=1.5, steps_per_level=2)
    fe = runner.run(m)
    t = fe.probes["top"]["time_days"]
    hand = hand_estimate(m, times=t)
    rows = compare(hand, fe.probes, None)
    p = hand.probes["top"]
    s_fe = fe.probes["top"]["settlement_m"]
    for tt in (10.0, 142.0, 1000.0, 3000.0):
        i = int(np.argmin(np.abs(t - tt)))
        # the same one-dimensional problem: within the time discretisation of the two
        assert s_fe[i] == pytest.approx(p.settlement_m[i], rel=0.02), tt
    assert rows[0]["settlement_ratio_fe_to_hand"] == pytest.approx(1.0, abs=0.02)


def mcc_clay():
    c = CLAY
    ln10 = np.log(10.0)
    return Material("clay", model="modified cam clay", lambda_=c["cc"] / ln10, kappa=c["cr"] / ln10,
                    void_ratio=c["e0"], friction_angle=25.0, poisson_ratio=0.25,
                    unit_weight=c["gamma"], permeability_x=c["cv"] * 9.81 * 0.06 / (2.5 * ln10 * 20.0),
                    oedometer=OedometerParameters(preconsolidation_margin=c["margin"]))


@pytest.mark.slow
def test_surcharge_removed_fe_cam_clay_beside_the_hand_method():
    # 60 kPa held until consolidated (20,000 days), removed over a day, then 20,000 days more:
    # the magnitudes of the stress path, whatever the rates. Loading past sigma'_p: MCC's
    # compression line is the hand method's Cc line (constant K0), its elastic part below
    # sigma'_p stiffer than Cr: within 15 %. Unloading: MCC swells elastically with the
    # constrained modulus 3 (1 - nu) / (1 + nu) times K = (1 + e) p' / kappa, p' < sigma'_v,
    # so it rebounds less than the hand method's Cr on sigma'_v (by about (1 + nu) / (3 (1 -
    # nu)) x sigma'_v / p' ~ 0.4-0.8 as K0 grows on unloading): both rebound, the FE less.
    stages = [Stage("place", "load", 1.0, loads=["surcharge"]),
              Stage("hold", "consolidate", 20000.0),
              Stage("remove", "load", 1.0, loads=["surcharge"], factor=0.0),
              Stage("after", "consolidate", 20000.0)]
    m = clay_model(stages)
    m.materials["clay"] = mcc_clay()
    m.time_steps = TimeSteps(first_step=0.05, growth=2.0, steps_per_level=4, max_step=2000.0)
    fe = runner.run(m)
    t = fe.probes["top"]["time_days"]
    s_fe = fe.probes["top"]["settlement_m"]
    hand = hand_estimate(m, times=t)
    p = hand.probes["top"]
    i_held = int(np.argmin(np.abs(t - 20001.0)))
    peak_fe, peak_hand = s_fe[i_held], p.settlement_m[i_held]
    rebound_fe, rebound_hand = peak_fe - s_fe[-1], peak_hand - p.settlement_m[-1]
    assert peak_fe == pytest.approx(peak_hand, rel=0.15)
    assert rebound_hand > 0.0 and 0.3 * rebound_hand < rebound_fe < rebound_hand
    row = compare(hand, fe.probes, None)[0]
    assert row["settlement_ratio_fe_to_hand"] == pytest.approx(s_fe[-1] / p.settlement_m[-1])
