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
    # The performance target of the Newton path. Measured: a median of 4 on the example's
    # ungraded mesh (1,300 triangles), 5 once the mesh is graded toward the draining
    # boundaries (1,800 to 3,400 triangles alike), whose thin yielding layers it now resolves.
    assert np.median(its) <= 5
    lin = run(load_model("examples/embankment.toml"))
    s_cc = r.probe("centre_ground")["settlement_m"][-1]
    s_lin = lin.probe("centre_ground")["settlement_m"][-1]
    assert s_cc > s_lin > 0
