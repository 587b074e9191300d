"""Assembly: the pattern, and the physical properties of the assembled blocks."""

import numpy as np
import pytest

from solver.fem.assembly import Discretisation, NodalPattern, SparsityPattern
from solver.geometry import layered_rectangle
from solver.materials.elastic import ElasticMaterial


@pytest.fixture(scope="module")
def mesh():
    return layered_rectangle(3.0, [("a", 1.0), ("b", 1.5)], 0.4, x0=0.5)


def test_nodal_pattern_equals_the_pattern_found_by_sorting_all_entries(mesh):
    d = Discretisation(mesh)
    vals = np.random.default_rng(0).random((mesh.n_elements, 15, 15))
    fast = NodalPattern(mesh.triangles, mesh.n_nodes, mesh.pressure_index).assemble(vals)
    ref = SparsityPattern(d.dofs, d.dofs, (d.n_dofs, d.n_dofs)).assemble(vals)
    assert fast.has_sorted_indices
    np.testing.assert_array_equal(fast.indptr, ref.indptr)
    np.testing.assert_array_equal(fast.indices, ref.indices)
    np.testing.assert_allclose(fast.data, ref.data, rtol=1e-15)


def _stiffness(mesh, analysis):
    d = Discretisation(mesh, analysis)
    D = np.broadcast_to(ElasticMaterial(1000.0, 0.3).elasticity_matrix(), (mesh.n_elements, 4, 4))
    return d, d.u_pattern.assemble(d.stiffness_blocks(D))


def test_plane_strain_rigid_body_modes_carry_no_strain_energy(mesh):
    d, K = _stiffness(mesh, "plane strain")
    x, y = mesh.points.T
    for mode in (np.column_stack([np.ones_like(x), 0 * x]),
                 np.column_stack([0 * x, np.ones_like(x)]),
                 np.column_stack([-y, x])):
        u = mode.ravel()
        assert abs(u @ K @ u) < 1e-10 * abs(K).sum()


def test_axisymmetric_vertical_translation_is_free_and_a_radial_shift_strains_the_hoop(mesh):
    d, K = _stiffness(mesh, "axisymmetric")
    uz = np.column_stack([np.zeros(mesh.n_nodes), np.ones(mesh.n_nodes)]).ravel()
    ur = np.column_stack([np.ones(mesh.n_nodes), np.zeros(mesh.n_nodes)]).ravel()
    assert abs(uz @ K @ uz) < 1e-10 * abs(K).sum()
    # u_r = 1: only eps_tt = 1/r; energy per radian = (lambda + 2G) * height * ln(r1 / r0)
    m = ElasticMaterial(1000.0, 0.3)
    exact = m.constrained_modulus * 2.5 * np.log(3.5 / 0.5)
    assert abs(ur @ K @ ur - exact) < 1e-4 * exact


def test_stiffness_is_symmetric(mesh):
    for analysis in ("plane strain", "axisymmetric"):
        _, K = _stiffness(mesh, analysis)
        assert abs(K - K.T).max() < 1e-10 * abs(K).max()


def test_p1_mass_matrix_sums_to_the_area_and_axisymmetric_to_the_first_moment(mesh):
    area = 3.0 * 2.5
    d = Discretisation(mesh)
    Me = d.mass_blocks(np.ones(mesh.n_elements))
    assert abs(Me.sum() - area) < 1e-12
    # int r dA over 0.5 <= r <= 3.5: 2.5 * (3.5^2 - 0.5^2) / 2
    d = Discretisation(mesh, "axisymmetric")
    Me = d.mass_blocks(np.ones(mesh.n_elements))
    assert abs(Me.sum() - 2.5 * (3.5 ** 2 - 0.5 ** 2) / 2) < 1e-10


def test_patch_test_uniform_strain_is_reproduced_exactly(mesh):
    # Any linear displacement field lies in the P2 space: the strain is exact everywhere.
    d = Discretisation(mesh)
    x, y = mesh.points.T
    u = np.column_stack([1e-3 * x + 2e-3 * y, -3e-3 * y + 0.5e-3 * x]).ravel()
    eps = d.strain(u)
    np.testing.assert_allclose(eps[..., 0], 1e-3, atol=1e-15)
    np.testing.assert_allclose(eps[..., 1], -3e-3, atol=1e-15)
    np.testing.assert_allclose(eps[..., 2], 0.0, atol=1e-15)
    np.testing.assert_allclose(eps[..., 3], 2.5e-3, atol=1e-15)
    np.testing.assert_allclose(d.strain_at_nodes(u)[:, 3], 2.5e-3, atol=1e-14)


def test_flow_matrix_annihilates_constants_and_gives_the_dirichlet_energy(mesh):
    d = Discretisation(mesh)
    He = d.flow_blocks(np.full(mesh.n_elements, 2.0), np.full(mesh.n_elements, 0.5))
    from solver.fem.assembly import SparsityPattern as SP
    H = SP(d.p_dofs - d.n_u, d.p_dofs - d.n_u, (d.n_p, d.n_p)).assemble(He)
    xc, yc = mesh.points[mesh.corner_nodes].T
    assert abs(H @ np.ones(d.n_p)).max() < 1e-12
    # p = x + y: int (kx + ky) dA = 2.5 * area
    p = xc + yc
    assert abs(p @ H @ p - 2.5 * 7.5) < 1e-10


def test_traction_on_an_edge_sums_to_the_load_times_its_length(mesh):
    d = Discretisation(mesh)
    seg = mesh.edge("top")
    f = d.edge_traction_vector(seg, lambda x, n: np.broadcast_to([0.0, -10.0], x.shape).copy())
    assert abs(f[1::2].sum() + 10.0 * 3.0) < 1e-12
    assert abs(f[0::2].sum()) < 1e-12


def test_top_edge_outward_normal_points_up(mesh):
    d = Discretisation(mesh)
    seg = mesh.edge("top")
    f = d.edge_traction_vector(seg, lambda x, n: -5.0 * n)  # pressure 5 kPa on the top
    assert abs(f[1::2].sum() + 15.0) < 1e-12
