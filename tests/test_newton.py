"""Newton iterations on the coupled system with Modified Cam Clay layers."""

import numpy as np
import pytest

from solver.errors import SolverError
from solver.fem.biot import BiotProblem, Fixity, State, StepSolver, Traction
from solver.fem.newton import NewtonStepSolver
from solver.geometry import column
from solver.materials.camclay import CamClayMaterial
from solver.materials.elastic import ElasticMaterial

H, Q = 5.0, 50.0
TIMES = np.concatenate([[0.0], np.geomspace(1.0, 1e4, 30)])


def _problem(mat, history=None):
    tr = Traction("top", vertical=Q) if history is None else \
        Traction("top", vertical=Q, history=history)
    return BiotProblem(column(H, 10), {"soil": mat},
                       fixities=[Fixity("bottom", x=0, y=0), Fixity("left", x=0),
                                 Fixity("right", x=0)],
                       drained=["top"], tractions=[tr])


def _run(stepper, pb, times=TIMES):
    st = State(0.0, np.zeros(pb.disc.n_dofs), pb.disc.n_u)
    out = []
    for t in times:
        st = stepper.step(st, t)
        out.append(st)
    return out


def _cam_clay_column(sv0=100.0, ocr=1.0, history=None, **kw):
    cc = CamClayMaterial(lambda_=0.2, kappa=0.03, e0=1.5, M=1.0, poisson_ratio=0.25,
                         permeability_x=1e-3, name="soil")
    proxy = ElasticMaterial(1000.0, 0.25, permeability_x=1e-3, name="soil")
    pb = _problem(proxy, history)
    ne, nq = pb.disc.detJ.shape
    k0 = cc.k0_normally_consolidated()
    stress0 = np.zeros((ne, nq, 4))                  # weightless column, uniform state
    stress0[..., 1] = -sv0
    stress0[..., [0, 2]] = -k0 * sv0
    s0 = stress0.reshape(-1, 4)
    state = cc.initial_state(s0, cc.preconsolidation_from_ocr(s0, ocr))
    return cc, pb, NewtonStepSolver(pb, {"soil": cc}, {"soil": state}, stress0, **kw)


def test_newton_on_a_linear_material_reproduces_the_linear_path_in_one_iteration():
    mat = ElasticMaterial.from_constrained_modulus(2000.0, 0.3, permeability_x=1e-3,
                                                   name="soil")
    pb_lin = _problem(mat)
    lin = _run(StepSolver(pb_lin), pb_lin)
    pb = _problem(mat)
    ne, nq = pb.disc.detJ.shape
    newton = NewtonStepSolver(pb, {"soil": mat}, {"soil": np.zeros((ne * nq, 4))},
                              np.zeros((ne, nq, 4)))
    out = _run(newton, pb)
    scale = np.abs(lin[-1].u).max()
    assert max(np.abs(a.u - b.u).max() for a, b in zip(lin, out)) < 1e-7 * scale
    assert newton.iteration_counts().max() == 1


def test_normally_consolidated_column_settles_as_the_compression_index_says():
    # One-dimensional NC loading from 100 to 150 kPa: settlement = Cc H / (1 + e0)
    # log10(sigma'_f / sigma'_0) with Cc = lambda ln 10 (common practice link; the Cam Clay
    # void ratio follows e = N - lambda ln p' on the K0 line, Wood 1990 ch. 4).
    cc, pb, newton = _cam_clay_column()
    st = _run(newton, pb)[-1]
    top = pb.mesh.edge_nodes("top")
    s = -st.displacement()[top, 1].mean()
    expected = cc.compression_index * H / (1 + 1.5) * np.log10(150.0 / 100.0)
    assert abs(s - expected) < 0.02 * expected
    assert np.abs(st.p).max() < 1e-3 * Q                # fully consolidated at 1e4 days


def test_newton_converges_quadratically_near_the_solution():
    # Consistent tangent (Borja and Lee 1990): the error squares from one iteration to the
    # next once it is small: log r_{k+1} / log r_k close to 2.
    _, pb, newton = _cam_clay_column()
    _run(newton, pb, TIMES[:6])
    rates = []
    for rec in newton.records:
        r = np.array(rec.residuals, float)
        r = r[(r > 1e-11) & (r < 1e-1)]
        rates += [np.log(b) / np.log(a) for a, b in zip(r[:-1], r[1:])]
    assert rates, "some step needed several iterations"
    assert np.median(rates) > 1.8


def test_a_step_that_does_not_converge_is_cut_and_still_reaches_the_same_answer():
    # The whole load ramped on in one long step: too much plastic flow for 3 iterations.
    ramp = lambda t: min(t / 1000.0, 1.0)
    times = [0.0, 1000.0, 1e4]
    _, pb_a, full = _cam_clay_column(history=ramp)
    _, pb_b, cut = _cam_clay_column(history=ramp, max_iter=3)
    a = _run(full, pb_a, times)[-1]
    b = _run(cut, pb_b, times)[-1]
    assert len(full.records) == 3
    assert len(cut.records) > len(full.records)       # the long step was cut
    # Cutting changes the time integration a little, not the settlement it leads to.
    assert np.abs(a.u - b.u).max() < 0.02 * np.abs(a.u).max()


def test_a_step_that_cannot_converge_stops_with_a_clear_message():
    _, pb, newton = _cam_clay_column(max_iter=1, max_cuts=1)
    st = State(0.0, np.zeros(pb.disc.n_dofs), pb.disc.n_u)
    st = newton.step(st, 0.0)                          # undrained: converges
    with pytest.raises(SolverError, match="did not converge after 1 step cuts.*kept"):
        newton.step(st, 1e4)
