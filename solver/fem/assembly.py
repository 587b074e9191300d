"""Vectorised assembly over elements x quadrature points, into a sparsity pattern built once.

Array convention (written once, used throughout):
    (element, quad point, ...)   e.g.  B: (ne, nq, 4, 12),  dN: (ne, nq, 6, 2)
Strain and stress vectors have four components in both analysis types,
    [xx, yy, zz, xy]   (plane strain: zz is the out-of-plane strain, identically 0;
                        axisymmetric: x = r, y = z, zz = hoop component theta-theta),
with engineering shear strain. Tension is positive.

Displacement dofs of node i are 2i (x) and 2i + 1 (y); pressure dofs follow all
displacement dofs, numbered by ``Mesh.pressure_index``.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property

import numpy as np
import scipy.sparse as sp

from ..mesh import Mesh
from . import element

PLANE_STRAIN = "plane strain"
AXISYMMETRIC = "axisymmetric"
ANALYSIS_TYPES = (PLANE_STRAIN, AXISYMMETRIC)

# m: the volumetric selector, m . eps = volumetric strain, in both analysis types.
M_VOL = np.array([1.0, 1.0, 1.0, 0.0])


class SparsityPattern:
    """CSR pattern of element blocks, with the map from each element entry to its CSR slot.

    Built once per set of element dof maps; ``assemble`` then costs one ``bincount``.

    Parameters
    ----------
    rows : (ne, nr) int, global row of each local row.
    cols : (ne, nc) int, global column of each local column.
    shape : global matrix shape.
    """

    def __init__(self, rows: np.ndarray, cols: np.ndarray, shape: tuple[int, int]):
        self.shape = shape
        ne, nr = rows.shape
        nc = cols.shape[1]
        r = np.broadcast_to(rows[:, :, None], (ne, nr, nc)).ravel()
        c = np.broadcast_to(cols[:, None, :], (ne, nr, nc)).ravel()
        keys = r.astype(np.int64) * shape[1] + c
        uniq, self.slot = np.unique(keys, return_inverse=True)
        self.slot = self.slot.ravel()
        row_of = uniq // shape[1]
        self.indices = (uniq - row_of * shape[1]).astype(np.int32)
        self.indptr = np.zeros(shape[0] + 1, dtype=np.int32)
        np.cumsum(np.bincount(row_of, minlength=shape[0]), out=self.indptr[1:])
        self.nnz = uniq.size

    def assemble(self, values: np.ndarray) -> sp.csr_matrix:
        """Sum element blocks (ne, nr, nc) into a CSR matrix with this pattern."""
        data = np.bincount(self.slot, weights=values.ravel(), minlength=self.nnz)
        return sp.csr_matrix((data, self.indices, self.indptr), shape=self.shape)


@dataclass
class Discretisation:
    """P2 displacement / P1 pressure fields on a mesh, with quadrature-point geometry."""

    mesh: Mesh
    analysis: str = PLANE_STRAIN

    def __post_init__(self):
        if self.analysis not in ANALYSIS_TYPES:
            raise ValueError(f"analysis must be one of {ANALYSIS_TYPES}, got {self.analysis!r}")
        # Axisymmetric integrands carry r and u_r / r: a higher-degree rule.
        self.degree = 4 if self.axisymmetric else 2
        self.xi, self.w = element.triangle_rule(self.degree)
        self.N2, dN2_ref = element.p2(self.xi)      # (nq, 6), (nq, 6, 2)
        self.N1, dN1_ref = element.p1(self.xi)      # (nq, 3), (nq, 3, 2)
        x = self.mesh.points[self.mesh.triangles]   # (ne, 6, 2)
        # Isoparametric P2 map: J[e, q] = sum_a x[e, a] (x) dN_ref[q, a]
        J = np.einsum("eai,qaj->eqij", x, dN2_ref)  # (ne, nq, 2, 2)
        self.detJ = J[..., 0, 0] * J[..., 1, 1] - J[..., 0, 1] * J[..., 1, 0]
        if (self.detJ <= 0).any():
            from ..errors import MeshError
            bad = np.flatnonzero((self.detJ <= 0).any(axis=1))
            raise MeshError(f"{bad.size} triangle(s) are inverted or degenerate inside "
                            f"(first: element {bad[0]})", field="triangles",
                            source=self.mesh.source,
                            fix="remesh; mid-side nodes must lie near the middle of their sides.")
        Jinv = np.empty_like(J)
        Jinv[..., 0, 0] = J[..., 1, 1]
        Jinv[..., 1, 1] = J[..., 0, 0]
        Jinv[..., 0, 1] = -J[..., 0, 1]
        Jinv[..., 1, 0] = -J[..., 1, 0]
        Jinv /= self.detJ[..., None, None]
        self.dN2 = np.einsum("qaj,eqji->eqai", dN2_ref, Jinv)  # (ne, nq, 6, 2)
        self.dN1 = np.einsum("qaj,eqji->eqai", dN1_ref, Jinv)  # (ne, nq, 3, 2)
        self.xq = np.einsum("qa,eai->eqi", self.N2, x)         # (ne, nq, 2)
        wdet = self.w * self.detJ
        if self.axisymmetric:
            wdet = wdet * self.xq[..., 0]   # per radian
        self.dV = wdet                       # (ne, nq): integration weight incl. r

    # --------------------------------------------------------------- dofs
    @property
    def axisymmetric(self) -> bool:
        return self.analysis == AXISYMMETRIC

    @property
    def n_u(self) -> int:
        return 2 * self.mesh.n_nodes

    @property
    def n_p(self) -> int:
        return self.mesh.corner_nodes.size

    @property
    def n_dofs(self) -> int:
        return self.n_u + self.n_p

    @cached_property
    def u_dofs(self) -> np.ndarray:
        """(ne, 12) displacement dofs per element: x0, y0, x1, y1, ..."""
        t = self.mesh.triangles
        return np.stack([2 * t, 2 * t + 1], axis=2).reshape(len(t), 12)

    @cached_property
    def p_dofs(self) -> np.ndarray:
        """(ne, 3) global pressure dofs per element (offset by n_u)."""
        return self.n_u + self.mesh.pressure_index[self.mesh.triangles[:, :3]]

    @cached_property
    def dofs(self) -> np.ndarray:
        """(ne, 15) all dofs of an element: 12 displacement then 3 pressure."""
        return np.concatenate([self.u_dofs, self.p_dofs], axis=1)

    @cached_property
    def pattern(self) -> SparsityPattern:
        """Pattern of the coupled matrix (both fields), built once."""
        return SparsityPattern(self.dofs, self.dofs, (self.n_dofs, self.n_dofs))

    @cached_property
    def u_pattern(self) -> SparsityPattern:
        """Pattern of the displacement-only stiffness."""
        return SparsityPattern(self.u_dofs, self.u_dofs, (self.n_u, self.n_u))

    @cached_property
    def node_of_dof(self) -> np.ndarray:
        """(n_dofs,) the node each dof lives on (for node-graph orderings)."""
        return np.concatenate([np.repeat(np.arange(self.mesh.n_nodes), 2),
                               self.mesh.corner_nodes])

    @cached_property
    def node_graph(self) -> sp.csr_matrix:
        """Node-node adjacency of the mesh (nodes sharing a triangle)."""
        t = self.mesh.triangles
        return SparsityPattern(t, t, (self.mesh.n_nodes,) * 2).assemble(
            np.ones((len(t), 6, 6)))

    # ------------------------------------------------------ B and friends
    @cached_property
    def B(self) -> np.ndarray:
        """Strain-displacement matrices (ne, nq, 4, 12), rows [xx, yy, zz, xy]."""
        ne, nq = self.detJ.shape
        B = np.zeros((ne, nq, 4, 12))
        dx, dy = self.dN2[..., 0], self.dN2[..., 1]
        B[:, :, 0, 0::2] = dx
        B[:, :, 1, 1::2] = dy
        B[:, :, 3, 0::2] = dy
        B[:, :, 3, 1::2] = dx
        if self.axisymmetric:
            B[:, :, 2, 0::2] = self.N2[None] / self.xq[..., 0, None]
        return B

    def strain(self, u: np.ndarray) -> np.ndarray:
        """Strain (ne, nq, 4) at quadrature points from the displacement vector (n_u,)."""
        return np.einsum("eqij,ej->eqi", self.B, u[self.u_dofs])

    # ------------------------------------------------------ element blocks
    def stiffness_blocks(self, D: np.ndarray) -> np.ndarray:
        """K_e = sum_q dV B^T D B, (ne, 12, 12); D (ne, 4, 4) or (ne, nq, 4, 4)."""
        B = self.B
        if D.ndim == 3:
            DB = np.matmul(D[:, None], B)                     # (ne, nq, 4, 12)
        else:
            DB = np.matmul(D, B)
        BtDB = np.matmul((B * self.dV[..., None, None]).transpose(0, 1, 3, 2), DB)
        return BtDB.sum(axis=1)

    def coupling_blocks(self, alpha: np.ndarray) -> np.ndarray:
        """Q_e = sum_q dV alpha (B^T m) N_p, (ne, 12, 3); alpha per element (ne,)."""
        div = np.einsum("eqij,i->eqj", self.B, M_VOL)        # (ne, nq, 12)
        return np.einsum("eqj,qk,eq->ejk", div, self.N1, self.dV * alpha[:, None])

    def mass_blocks(self, coeff: np.ndarray) -> np.ndarray:
        """M_e = sum_q dV c N_p^T N_p, (ne, 3, 3); coeff per element (ne,)."""
        return np.einsum("qa,qb,eq->eab", self.N1, self.N1, self.dV * coeff[:, None])

    def flow_blocks(self, kx: np.ndarray, ky: np.ndarray) -> np.ndarray:
        """H_e = sum_q dV grad N_p^T diag(kx, ky) grad N_p, (ne, 3, 3); k / gamma_w per element."""
        g = self.dN1                                           # (ne, nq, 3, 2)
        kg = g * np.stack([kx, ky], axis=1)[:, None, None, :]
        return np.einsum("eqai,eqbi,eq->eab", kg, g, self.dV)

    def body_force_vector(self, bx: np.ndarray, by: np.ndarray,
                          active: np.ndarray | None = None) -> np.ndarray:
        """Consistent nodal forces of a body force (kN/m3) per element, (n_u,)."""
        fe = np.zeros((self.mesh.n_elements, 6, 2))
        w = self.dV if active is None else self.dV * active[:, None]
        fe[..., 0] = np.einsum("qa,eq->ea", self.N2, w * bx[:, None])
        fe[..., 1] = np.einsum("qa,eq->ea", self.N2, w * by[:, None])
        return np.bincount(self.u_dofs.ravel(), weights=fe.reshape(-1), minlength=self.n_u)

    def stress_to_nodal_forces(self, stress: np.ndarray, active: np.ndarray | None = None):
        """Internal force vector sum_q dV B^T sigma, (n_u,), from stress (ne, nq, 4)."""
        w = self.dV if active is None else self.dV * active[:, None]
        fe = np.einsum("eqij,eqi,eq->ej", self.B, stress, w)
        return np.bincount(self.u_dofs.ravel(), weights=fe.ravel(), minlength=self.n_u)

    # ------------------------------------------------------------ edges
    def edge_traction_vector(self, segments: np.ndarray, traction) -> np.ndarray:
        """Nodal forces (n_u,) of a traction on edge segments (ns, 3).

        ``traction`` is a callable (x (ns, nq, 2), normal (ns, nq, 2)) -> t (ns, nq, 2) in kPa,
        the force per area acting on the body. Axisymmetric integrals carry r (per radian).
        """
        s, ws = element.LINE_RULE
        N, dN = element.line3(s)                               # (nq, 3)
        x = self.mesh.points[segments]                          # (ns, 3, 2)
        xq = np.einsum("qa,sai->sqi", N, x)
        tq = np.einsum("qa,sai->sqi", dN, x)                    # tangent (ns, nq, 2)
        jac = np.linalg.norm(tq, axis=2)
        normal = np.stack([tq[..., 1], -tq[..., 0]], axis=2) / jac[..., None]
        t = traction(xq, normal)
        w = ws * jac
        if self.axisymmetric:
            w = w * xq[..., 0]
        fe = np.einsum("qa,sqi,sq->sai", N, t, w)               # (ns, 3, 2)
        dofs = np.stack([2 * segments, 2 * segments + 1], axis=2)
        return np.bincount(dofs.ravel(), weights=fe.ravel(), minlength=self.n_u)

    def edge_measure(self, segments: np.ndarray) -> float:
        """Length (plane strain, m) or area per radian (axisymmetric, m2) of edge segments."""
        s, ws = element.LINE_RULE
        N, dN = element.line3(s)
        x = self.mesh.points[segments]
        jac = np.linalg.norm(np.einsum("qa,sai->sqi", dN, x), axis=2)
        w = ws * jac
        if self.axisymmetric:
            w = w * np.einsum("qa,sa->sq", N, x[..., 0])
        return float(w.sum())

    # ----------------------------------------------------- nodal output
    def pressure_at_nodes(self, p: np.ndarray) -> np.ndarray:
        """Pressure (n_nodes,) on all P2 nodes: corners as solved, mid-sides linear."""
        t = self.mesh.triangles
        pi = self.mesh.pressure_index
        out = np.empty(self.mesh.n_nodes)
        out[self.mesh.corner_nodes] = p
        for k, (i, j) in enumerate([(0, 1), (1, 2), (2, 0)]):
            out[t[:, 3 + k]] = 0.5 * (p[pi[t[:, i]]] + p[pi[t[:, j]]])
        return out
