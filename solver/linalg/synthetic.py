"""A synthetic Biot step matrix with the structure of the real one (tests and benchmarks only)."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp


@dataclass
class SyntheticBiot:
    """A Biot step matrix on a structured P2/P1 triangle mesh (for tests and benchmarks only).

    Attributes
    ----------
    A : (n, n) CSR, ``[[K, -Q], [-Q^T, -(S M + dt H)]]``, dofs numbered ``[u; p]``.
    n_u, n_p : block sizes.
    group_of_dof : (n,) node of each dof.
    node_adjacency : (n_nodes, n_nodes) CSR node graph (nodes sharing an element).
    """

    A: sp.csr_matrix
    n_u: int
    n_p: int
    group_of_dof: np.ndarray
    node_adjacency: sp.csr_matrix


def synthetic_biot_matrix(nx: int, ny: int | None = None, dt: float = 1.0,
                          storage: float = 0.0, seed: int = 0, jitter: float = 0.2,
                          keep_pattern: bool = True) -> SyntheticBiot:
    """Assemble a plane-strain Biot step on a ``nx`` x ``ny`` grid of squares, two triangles each.

    Not a model of any site: a matrix with the structure, scaling and pattern of the real one.
    Six-node (P2) displacement, three-node (P1) pressure, width ``nx`` m, depth ``ny`` m;
    bottom fixed, sides on rollers, top drained (p = 0). Young's modulus (kPa) and permeability
    over unit weight of water (m/day / (kN/m3)) vary at random per element over one and two
    decades (about 5 MPa and 1e-5). Interior vertices are moved at random by up to ``jitter``
    times the spacing; ``jitter = 0`` gives centrally symmetric patches, on which the coupling
    of a vertex's pressure to its own displacements vanishes (up to rounding).

    Parameters
    ----------
    nx, ny : squares across and down (``ny`` defaults to ``nx``); about ``9 nx ny`` dofs.
    dt : time step (days); 0 with ``storage = 0`` gives the undrained saddle point.
    storage : storage coefficient S (1/kPa).
    seed : random seed.
    jitter : vertex displacement as a fraction of the spacing.
    keep_pattern : keep explicit zeros so the pattern is the same for every ``dt``.
    """
    ny = nx if ny is None else ny
    rng = np.random.default_rng(seed)
    mx, my = 2 * nx + 1, 2 * ny + 1                     # fine grid: every P2 node is on it
    fid = lambda I, J: J * mx + I                       # noqa: E731
    # vertex coordinates, jittered inside
    vx, vy = np.meshgrid(np.arange(nx + 1, dtype=float), np.arange(ny + 1, dtype=float),
                         indexing="ij")
    inner = (slice(1, nx), slice(1, ny))
    vx[inner] += jitter * rng.uniform(-0.5, 0.5, vx[inner].shape)
    vy[inner] += jitter * rng.uniform(-0.5, 0.5, vy[inner].shape)
    X = np.zeros((mx, my))
    Y = np.zeros((mx, my))
    X[::2, ::2], Y[::2, ::2] = vx, vy
    X[1::2, ::2], Y[1::2, ::2] = (vx[:-1] + vx[1:]) / 2, (vy[:-1] + vy[1:]) / 2
    X[::2, 1::2], Y[::2, 1::2] = (vx[:, :-1] + vx[:, 1:]) / 2, (vy[:, :-1] + vy[:, 1:]) / 2
    X[1::2, 1::2] = (vx[1:, :-1] + vx[:-1, 1:]) / 2     # midpoint of the diagonal b-c
    Y[1::2, 1::2] = (vy[1:, :-1] + vy[:-1, 1:]) / 2
    # triangles: (a, b, c) and (d, c, b) per square, then midpoints (01, 12, 20)
    i, j = np.meshgrid(np.arange(nx), np.arange(ny), indexing="ij")
    I, J = 2 * i.ravel(), 2 * j.ravel()
    t1 = [(I, J), (I + 2, J), (I, J + 2), (I + 1, J), (I + 1, J + 1), (I, J + 1)]
    t2 = [(I + 2, J + 2), (I, J + 2), (I + 2, J), (I + 1, J + 2), (I + 1, J + 1), (I + 2, J + 1)]
    gi = np.concatenate([np.stack([a for a, _ in t1], 1), np.stack([a for a, _ in t2], 1)])
    gj = np.concatenate([np.stack([b for _, b in t1], 1), np.stack([b for _, b in t2], 1)])
    nodes = fid(gi, gj)                                  # (ne, 6)
    xe = np.stack([X[gi, gj], Y[gi, gj]], -1)            # (ne, 6, 2)
    ne = nodes.shape[0]

    # reference P2/P1 on the unit triangle, 3-point rule (exact for the quadratic integrands)
    qp = np.array([[1 / 6, 1 / 6], [2 / 3, 1 / 6], [1 / 6, 2 / 3]])
    qw = np.full(3, 1 / 6)
    L = np.stack([1 - qp.sum(1), qp[:, 0], qp[:, 1]], 1)             # (nq, 3)
    dL = np.array([[-1.0, -1.0], [1.0, 0.0], [0.0, 1.0]])            # (3, 2)
    pairs = [(0, 1), (1, 2), (2, 0)]
    dN = np.zeros((3, 6, 2))                                         # (nq, 6, 2) d/dxi
    for k in range(3):
        dN[:, k] = (4 * L[:, k] - 1)[:, None] * dL[k]
    for m, (a, c) in enumerate(pairs):
        dN[:, 3 + m] = 4 * (L[:, a, None] * dL[c] + L[:, c, None] * dL[a])
    Jm = np.einsum("eka,kb->eab", xe[:, :3], dL)                     # (ne, 2, 2) dx_a/dxi_b
    det = Jm[:, 0, 0] * Jm[:, 1, 1] - Jm[:, 0, 1] * Jm[:, 1, 0]
    Jinv = np.linalg.inv(Jm)                                         # dxi_b/dx_a = Jinv[b, a]
    g = np.einsum("qkb,eba->eqka", dN, Jinv)                         # (ne, nq, 6, 2) d/dx
    gp = np.einsum("kb,eba->eka", dL, Jinv)                          # (ne, 3, 2) P1 grads
    wdet = qw[None, :] * det[:, None]                                # (ne, nq)

    B = np.zeros((ne, 3, 3, 12))                                     # (ne, nq, voigt, 12)
    B[..., 0, 0::2] = g[..., 0]
    B[..., 1, 1::2] = g[..., 1]
    B[..., 2, 0::2] = g[..., 1]
    B[..., 2, 1::2] = g[..., 0]
    E = 5000.0 * 10 ** rng.uniform(-0.5, 0.5, ne)
    nu = 0.3
    D0 = np.array([[1 - nu, nu, 0], [nu, 1 - nu, 0], [0, 0, (1 - 2 * nu) / 2]]) \
        / ((1 + nu) * (1 - 2 * nu))
    Ke = np.einsum("eq,eqsi,st,eqtj->eij", wdet, B, D0, B) * E[:, None, None]
    div = B[..., 0, :] + B[..., 1, :]                                # (ne, nq, 12) m^T B
    Qe = np.einsum("eq,eqi,qj->eij", wdet, div, L)                   # (ne, 12, 3), Biot alpha 1
    kw = 1e-4 / 9.81 * 10 ** rng.uniform(-1, 1, ne)
    He = np.einsum("e,eia,eja->eij", det / 2 * kw, gp, gp)           # area = det / 2
    Me = np.einsum("eq,qi,qj->eij", wdet, L, L)

    # dofs: u of free components in node order, then p at undrained-free vertices
    n_nodes = mx * my
    node_I, node_J = np.arange(n_nodes) % mx, np.arange(n_nodes) // mx
    free = np.ones((n_nodes, 2), dtype=bool)
    free[node_J == 0] = False                                        # bottom fixed
    free[(node_I == 0) | (node_I == mx - 1), 0] = False              # side rollers
    u_id = np.full(2 * n_nodes, -1)
    u_id[free.ravel()] = np.arange(free.sum())
    n_u = int(free.sum())
    is_vertex = (node_I % 2 == 0) & (node_J % 2 == 0)
    has_p = is_vertex & (node_J != my - 1)                           # top drained
    p_id = np.full(n_nodes, -1)
    p_id[has_p] = n_u + np.arange(has_p.sum())
    n_p = int(has_p.sum())
    n = n_u + n_p

    edof_u = u_id[(2 * nodes[:, :, None] + np.arange(2)).reshape(ne, 12)]   # (ne, 12)
    edof_p = p_id[nodes[:, :3]]                                              # (ne, 3)

    def scatter(rows, cols, vals):
        r = np.broadcast_to(rows[:, :, None], vals.shape).ravel()
        c = np.broadcast_to(cols[:, None, :], vals.shape).ravel()
        ok = (r >= 0) & (c >= 0)
        return r[ok], c[ok], vals.ravel()[ok]

    C = storage * Me + dt * He
    parts = [scatter(edof_u, edof_u, Ke), scatter(edof_u, edof_p, -Qe),
             scatter(edof_p, edof_u, -np.transpose(Qe, (0, 2, 1))), scatter(edof_p, edof_p, -C)]
    r, c, v = (np.concatenate(z) for z in zip(*parts))
    A = sp.csr_matrix((v, (r, c)), shape=(n, n))
    if not keep_pattern:
        A.eliminate_zeros()
    A.sort_indices()

    group = np.empty(n, dtype=np.int64)
    group[u_id[u_id >= 0]] = np.flatnonzero(u_id >= 0) // 2
    group[p_id[has_p]] = np.flatnonzero(has_p)
    nr = np.repeat(nodes, 6, axis=1).ravel()
    nc = np.tile(nodes, (1, 6)).ravel()
    adjacency = sp.csr_matrix((np.ones(nr.size, dtype=np.int8), (nr, nc)),
                              shape=(n_nodes, n_nodes))
    adjacency.data[:] = 1
    return SyntheticBiot(A=A, n_u=n_u, n_p=n_p, group_of_dof=group, node_adjacency=adjacency)
