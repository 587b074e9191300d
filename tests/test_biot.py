"""The coupled system: undrained and drained limits, ties, and input refused with a reason."""

import numpy as np
import pytest

from solver.errors import InputError, MeshError
from solver.fem.biot import BiotProblem, Fixity, RigidPlate, State, StepSolver, Traction
from solver.geometry import column, layered_rectangle
from solver.materials.elastic import ElasticMaterial
from solver.mesh import Mesh

ROLLERS = [Fixity("bottom", x=0.0, y=0.0), Fixity("left", x=0.0), Fixity("right", x=0.0)]


def _column_problem(material, **kw):
    return BiotProblem(column(5.0, 10), {"soil": material}, fixities=ROLLERS, drained=["top"],
                       tractions=[Traction("top", vertical=50.0)], **kw)


def test_undrained_column_does_not_settle_and_carries_the_load_in_the_water():
    # Incompressible constituents: at the instant of loading no volume change, p = q
    # (Terzaghi 1925; common practice for the initial condition of 1D consolidation).
    pb = _column_problem(ElasticMaterial(2000.0, 0.3, name="soil"))
    st = next(StepSolver(pb).run([0.0]))
    assert np.abs(st.displacement()).max() < 1e-12
    np.testing.assert_allclose(st.p, 50.0, rtol=1e-10)


def test_compressible_water_takes_skempton_b_times_the_oedometric_load():
    # One-dimensional undrained loading with storage S = 1/M: the pore pressure is
    # q * alpha M / (E_oed + alpha^2 M) (Biot 1941; Wang 2000, Theory of Linear
    # Poroelasticity, sec. 3.6, loading efficiency, from memory).
    S = 1e-4
    mat = ElasticMaterial.from_constrained_modulus(2000.0, 0.3, storage=S, name="soil")
    st = next(StepSolver(_column_problem(mat)).run([0.0]))
    M = 1 / S
    np.testing.assert_allclose(st.p, 50.0 * M / (2000.0 + M), rtol=1e-9)


def test_drained_column_settles_by_q_h_over_the_constrained_modulus():
    # Uniaxial strain: settlement = q H / E_oed (common practice, exact for 1D elasticity).
    mat = ElasticMaterial.from_constrained_modulus(2000.0, 0.3, name="soil")
    pb = _column_problem(mat)
    st = pb.drained_state()
    top = pb.mesh.edge_nodes("top")
    np.testing.assert_allclose(-st.displacement()[top, 1], 50.0 * 5.0 / 2000.0, rtol=1e-10)
    assert np.abs(st.p).max() == 0.0


def test_long_consolidation_reaches_the_drained_state():
    mat = ElasticMaterial.from_constrained_modulus(2000.0, 0.3, permeability_x=1e-2, name="soil")
    pb = _column_problem(mat)
    states = list(StepSolver(pb).run(np.concatenate([[0.0], np.geomspace(0.01, 1e5, 40)])))
    np.testing.assert_allclose(states[-1].u, pb.drained_state().u, rtol=1e-6, atol=1e-12)


def test_rigid_plate_moves_as_one_and_carries_its_force():
    mesh = layered_rectangle(2.0, [("soil", 1.0)], 0.25)
    mat = ElasticMaterial(5000.0, 0.25, name="soil")
    pb = BiotProblem(mesh, {"soil": mat}, fixities=[Fixity("bottom", x=0.0, y=0.0)],
                     plates=[RigidPlate("top", force=30.0)])
    st = pb.drained_state()
    top = mesh.edge_nodes("top")
    uy = st.displacement()[top, 1]
    assert np.ptp(uy) < 1e-14
    # The reactions at the fixed base balance the plate force (equilibrium).
    f_int = pb.full_matrix(np.inf)[:pb.disc.n_u][:, :pb.disc.n_u] @ st.u
    base = mesh.edge_nodes("bottom")
    assert abs(f_int[2 * base + 1].sum() - 30.0) < 1e-9 * 30.0


def test_prescribed_displacement_is_met_and_the_rest_follows():
    mesh = column(2.0, 4)
    mat = ElasticMaterial.from_constrained_modulus(1000.0, 0.3, name="soil")
    pb = BiotProblem(mesh, {"soil": mat}, fixities=ROLLERS + [Fixity("top", y=-0.01)])
    st = pb.drained_state()
    np.testing.assert_allclose(st.displacement()[:, 1], -0.01 * (mesh.points[:, 1] + 2.0) / 2.0,
                               atol=1e-14)


@pytest.mark.parametrize("kw, field", [
    (dict(youngs_modulus=-1.0), "youngs_modulus"),
    (dict(youngs_modulus=0.0), "youngs_modulus"),
    (dict(poisson_ratio=0.5), "poisson_ratio"),
    (dict(poisson_ratio=0.7), "poisson_ratio"),
    (dict(permeability_x=0.0), "permeability_x"),
    (dict(permeability_y=-1e-5), "permeability_y"),
    (dict(biot_coefficient=1.5), "biot_coefficient"),
    (dict(storage=-1.0), "storage"),
])
def test_bad_material_is_refused_naming_the_quantity(kw, field):
    args = dict(youngs_modulus=1000.0, poisson_ratio=0.3, name="clay") | kw
    with pytest.raises(InputError) as err:
        ElasticMaterial(**args)
    assert err.value.field == f"materials.clay.{field}"
    assert "Fix:" in str(err.value)


def test_unknown_boundary_name_is_refused_listing_the_known_ones():
    with pytest.raises(InputError, match="unknown boundary 'base'.*bottom"):
        BiotProblem(column(1.0, 2), {"soil": ElasticMaterial(1000.0, 0.3)},
                    fixities=[Fixity("base", y=0.0)])


def test_region_without_material_is_refused():
    with pytest.raises(InputError, match="no material"):
        BiotProblem(column(1.0, 2), {"clay": ElasticMaterial(1000.0, 0.3)})


def test_inverted_and_zero_area_triangles_are_refused():
    pts = np.array([[0, 0], [1, 0], [0, 1], [0.5, 0], [0.5, 0.5], [0, 0.5]], float)
    tri = np.array([[0, 2, 1, 5, 4, 3]])
    with pytest.raises(MeshError, match="inverted"):
        Mesh(pts, tri, np.zeros(1), ["soil"])
    flat = pts.copy()
    flat[2] = [2, 0]
    flat[4:] = [[1.5, 0], [1.0, 0]]
    with pytest.raises(MeshError, match="zero-area"):
        Mesh(flat, np.array([[0, 1, 2, 3, 4, 5]]), np.zeros(1), ["soil"])


def test_state_views_share_the_solution_vector():
    st = State(1.0, np.arange(8.0), 6)
    assert st.u.shape == (6,) and st.p.shape == (2,)
    assert st.displacement().shape == (3, 2)
