"""Fill-reducing orderings: METIS nested dissection on the node graph (or the dof graph)."""

from __future__ import annotations

import functools
import time
import warnings

import numpy as np
import scipy.sparse as sp

from solver.errors import InputError


class Ordering:
    """A fill-reducing symmetric permutation, computed once per sparsity pattern.

    Parameters
    ----------
    perm : (n,) int array, new position -> old dof: the permuted matrix is ``A[perm][:, perm]``.
    kind : how it was made (``"groups"``, ``"matrix"`` or ``"given"``).
    seconds : wall time spent computing it.
    """

    def __init__(self, perm: np.ndarray, kind: str = "given", seconds: float = 0.0):
        perm = np.asarray(perm, dtype=np.int64)
        if perm.ndim != 1 or not _is_permutation(perm):
            raise InputError("ordering.perm is not a permutation of 0..n-1.", field="ordering.perm")
        self.perm = perm
        self.kind = kind
        self.seconds = float(seconds)

    @property
    def n(self) -> int:
        """Number of dofs."""
        return self.perm.size

    @functools.cached_property
    def iperm(self) -> np.ndarray:
        """(n,) old dof -> new position."""
        iperm = np.empty_like(self.perm)
        iperm[self.perm] = np.arange(self.perm.size)
        return iperm

    def __repr__(self) -> str:
        return f"Ordering(n={self.n}, kind={self.kind!r}, seconds={self.seconds:.3f})"

    @classmethod
    def from_groups(cls, group_of_dof: np.ndarray,
                    group_adjacency: sp.spmatrix | sp.sparray,
                    node_rank: np.ndarray | None = None) -> "Ordering":
        """Nested dissection on the node graph, expanded to dofs.

        Parameters
        ----------
        group_of_dof : (n,) int, the node (group) of each dof.
        group_adjacency : (n_nodes, n_nodes) sparse, nonzero where two nodes share an element
            (values ignored; the pattern is symmetrised, the diagonal ignored).
        node_rank : (n_nodes,) position of each node in a nested-dissection order made before
            (``Ordering.node_rank`` of another constraint set on the same nodes): reused
            instead of computing a new one (the dissection is the expensive part).

        Returns
        -------
        Ordering whose ``perm`` lists nodes in nested-dissection order and, within a node, its
        dofs in ascending dof index. Nodes without dofs are dropped from the graph; each node is
        weighted by its number of dofs so separators balance dofs, not nodes. Its
        ``node_rank`` (n_nodes,) gives each node's place (-1: no dofs).

        Notes
        -----
        For the undrained instant number each node's displacement dofs before its pressure dof
        (block numbering ``[u; p]`` does), so a pressure dof is eliminated after its own node's
        displacements. The node graph is several times smaller than the dof graph, so this is
        several times cheaper than :meth:`from_matrix` and orders about as well.
        """
        t0 = time.perf_counter()
        group_of_dof = np.asarray(group_of_dof)
        if group_of_dof.ndim != 1 or not np.issubdtype(group_of_dof.dtype, np.integer):
            raise InputError("group_of_dof must be a 1-D integer array (node id of each dof), "
                             f"got shape {group_of_dof.shape} dtype {group_of_dof.dtype}.",
                             field="group_of_dof")
        if not sp.issparse(group_adjacency) or group_adjacency.shape[0] != group_adjacency.shape[1]:
            raise InputError("group_adjacency must be a square sparse matrix (node-node graph).",
                             field="group_adjacency")
        n_groups = group_adjacency.shape[0]
        if group_of_dof.size and (group_of_dof.min() < 0 or group_of_dof.max() >= n_groups):
            raise InputError(f"group_of_dof holds node ids in [{group_of_dof.min()}, "
                             f"{group_of_dof.max()}] but group_adjacency has {n_groups} nodes.",
                             field="group_of_dof")
        if node_rank is None:
            counts = np.bincount(group_of_dof, minlength=n_groups)
            active = np.flatnonzero(counts)
            graph = _symmetric_graph(group_adjacency)
            if active.size < n_groups:                  # nodes whose dofs were all eliminated
                graph = graph[active][:, active]
            node_perm = _nested_dissection(graph, counts[active])    # new -> old (active index)
            rank = np.full(n_groups, -1, dtype=np.int64)
            rank[active[node_perm]] = np.arange(active.size)
        else:
            rank = np.asarray(node_rank, dtype=np.int64)
            if rank.shape != (n_groups,) or (group_of_dof.size and rank[group_of_dof].min() < 0):
                raise InputError("node_rank must give a place to every node that has dofs.",
                                 field="node_rank")
        # Stable sort: within a node, dofs keep ascending dof index (u before p, see Notes).
        perm = np.argsort(rank[group_of_dof], kind="stable")
        ordering = cls(perm, kind="groups", seconds=time.perf_counter() - t0)
        ordering.node_rank = rank
        return ordering

    @classmethod
    def from_matrix(cls, A: sp.spmatrix | sp.sparray) -> "Ordering":
        """Nested dissection on the dof graph of ``A`` (the fallback when no node groups exist).

        Parameters
        ----------
        A : (n, n) sparse; only its pattern is used (symmetrised, diagonal ignored).
        """
        t0 = time.perf_counter()
        if not sp.issparse(A) or A.shape[0] != A.shape[1]:
            raise InputError("A must be a square sparse matrix.", field="A")
        perm = _nested_dissection(_symmetric_graph(A), None)
        return cls(perm, kind="matrix", seconds=time.perf_counter() - t0)


def _is_permutation(perm: np.ndarray) -> bool:
    seen = np.zeros(perm.size, dtype=bool)
    if perm.size and (perm.min() < 0 or perm.max() >= perm.size):
        return False
    seen[perm] = True
    return bool(seen.all())


def _symmetric_graph(pattern) -> sp.csr_matrix:
    """Pattern of ``P + P^T`` without the diagonal, as CSR with int64 indices (what METIS wants)."""
    coo = sp.coo_matrix(pattern)
    off = coo.row != coo.col                            # values ignored: explicit zeros count
    r, c = coo.row[off], coo.col[off]
    n = pattern.shape[0]
    # duplicates are summed into the int8 data; only the pattern is read, so overflow is harmless
    return sp.csr_matrix((np.ones(2 * r.size, dtype=np.int8),
                          (np.concatenate([r, c]), np.concatenate([c, r]))), shape=(n, n))


def _nested_dissection(graph: sp.csr_matrix, vweights: np.ndarray | None) -> np.ndarray:
    """METIS_NodeND through pymetis; returns perm (new position -> old vertex)."""
    import pymetis

    n = graph.shape[0]
    if n == 0:
        return np.zeros(0, dtype=np.int64)
    xadj = graph.indptr.astype(np.int64)
    adjncy = graph.indices.astype(np.int64)
    kwargs = {}
    if vweights is not None and np.any(vweights != 1):
        kwargs["vweights"] = np.ascontiguousarray(vweights, dtype=np.int64)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", DeprecationWarning)
        if hasattr(pymetis, "CSRAdjacency"):
            graph_arg = dict(adjacency=pymetis.CSRAdjacency(xadj, adjncy))
        else:                                           # pymetis < 2025.2
            graph_arg = dict(xadj=xadj, adjncy=adjncy)
        try:
            perm, _iperm = pymetis.nested_dissection(**graph_arg, **kwargs)
        except TypeError:                               # pymetis without vweights
            perm, _iperm = pymetis.nested_dissection(**graph_arg)
    # METIS: row i of the permuted matrix is row perm[i] of the original.
    return np.asarray(perm, dtype=np.int64)

