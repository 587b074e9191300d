"""The Modified Cam Clay embankment example, end to end (slow: about a minute)."""

import numpy as np
import pytest

from solver.model import load_model
from solver.runner import run
from solver.simulation import Simulation


@pytest.mark.slow
def test_cam_clay_embankment_yields_and_settles_more_than_its_elastic_twin():
    # Loaded past sigma'_p, the clays follow the compression index: more settlement than the
    # linear example whose moduli were matched to the same oedometer values at mid-range
    # (common practice: a linear modulus under-predicts the settlement of a yielding clay).
    cc = load_model("examples/embankment_cam_clay.toml")
    sim = Simulation(cc)
    r = run(sim)
    its = sim.stepper.iteration_counts()
    assert np.median(its) <= 4          # the performance target of the Newton path
    lin = run(load_model("examples/embankment.toml"))
    s_cc = r.probe("centre_ground")["settlement_m"][-1]
    s_lin = lin.probe("centre_ground")["settlement_m"][-1]
    assert s_cc > s_lin > 0
