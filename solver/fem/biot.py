"""The coupled Biot system: blocks, boundary conditions, rigid-plate ties and one time step.

Unknowns: displacement u (P2, tension-positive mechanics) and EXCESS pore pressure p (P1,
positive in compression). Balance of momentum and of fluid mass (Biot 1941), backward Euler:

    [ K     -Q          ] [u]       [ f(t+dt)                  ]
    [ -Q^T  -(S M + dt H)] [p]    =  [ -Q^T u_n - S M p_n       ]

with K = int B^T D B, Q = int alpha B^T m N_p, M = int N_p^T N_p, H = int grad N_p^T (k/gamma_w)
grad N_p. The matrix is symmetric quasi-definite for dt > 0; dt = 0 gives the undrained response
at the instant a load is applied (Q^T du + S M dp = 0).

Constraints enter through one map T from reduced to full unknowns, x = T y + x_D: fixed values
leave the system, and the nodes of a rigid plate share its vertical displacement w and, when
the plate may rotate, its rotation theta: u_y = w + theta (x - x_c) (two columns of T), on
which the plate's total force and the moment about x_c act. A_red = T^T A T, formed by
selecting CSR entries (see :class:`Constraints`), never by sparse products.
"""

from __future__ import annotations

import time
from dataclasses import dataclass, field
from typing import Callable, Iterator

import numpy as np
import scipy.sparse as sp

from ..errors import InputError
from ..materials.elastic import GAMMA_W, ElasticMaterial
from ..mesh import Mesh
from .assembly import PLANE_STRAIN, Discretisation

History = Callable[[float], float]
_FLOW_PROPERTIES = ("biot_coefficient", "storage", "permeability_x", "permeability_y")


def constant(t: float) -> float:
    """Load history: applied in full at t = 0 and held."""
    return 1.0 if t >= 0 else 0.0


@dataclass
class Fixity:
    """Prescribed displacement on a named edge: ``x`` and/or ``y`` in m (None leaves it free)."""
    edge: str
    x: float | None = None
    y: float | None = None


@dataclass
class Traction:
    """Surface load on a named edge, kPa: ``normal`` pressure pushing into the ground (positive)
    and/or a ``vertical`` load (positive downward), scaled in time by ``history``. The
    vertical load may vary linearly along x: ``vertical + vertical_gradient (x - x_ref)``
    (kPa/m, e.g. the pressure under an eccentric load)."""
    edge: str
    normal: float = 0.0
    vertical: float = 0.0
    history: History = constant
    vertical_gradient: float = 0.0
    x_ref: float = 0.0


@dataclass
class RigidPlate:
    """The nodes of a named (horizontal) edge move vertically as one rigid body.

    ``force`` is compressive (downward) positive: kN per m run in plane strain, kN in total
    over the full circle in axisymmetry. With ``rotation`` (plane strain only) the plate may
    also tilt about x = ``center`` (None: the middle of the edge): u_y = w + theta (x - x_c),
    theta counterclockwise; ``moment`` (kNm per m run, counterclockwise positive, about x_c)
    is the moment it carries, so a downward force P at x_c + e is ``force`` P with
    ``moment`` -P e. Without ``rotation`` the plate cannot tilt and carries whatever moment
    that takes (the right condition on a symmetry line). ``history`` scales force and moment.
    The horizontal displacements of the nodes stay free (a smooth base).
    """
    edge: str
    force: float = 0.0
    history: History = constant
    rotation: bool = False
    center: float | None = None
    moment: float = 0.0


@dataclass
class BodyForce:
    """Self-weight of a region (a construction lift): ``unit_weight`` kN/m3 acting downward,
    scaled in time by ``history``.

    With ``water_level`` (an elevation, m) the part of the region below it weighs
    ``submerged_unit_weight`` instead: its buoyant weight gamma_sat - gamma_w, since the
    solver's pore pressure is the excess over the hydrostatic one, whose gradient carries
    gamma_w of the saturated weight (Archimedes; common practice for fill under water).
    Which part is below follows the displacement (:meth:`BiotProblem.submergence_force`).
    """
    region: str
    unit_weight: float
    history: History = constant
    submerged_unit_weight: float | None = None
    water_level: float | None = None


@dataclass
class BiotProblem:
    """A linear Biot consolidation problem on a mesh.

    Parameters
    ----------
    mesh : the mesh.
    materials : region name -> ElasticMaterial (every region needs one).
    analysis : "plane strain" or "axisymmetric".
    fixities, tractions, plates : boundary conditions on named edges.
    drained : names of edges where the excess pore pressure is zero (all other boundaries are
        impermeable).
    drained_regions : regions that carry no excess pore pressure at all (free-draining fill).
    body_forces : self-weight of regions (lifts), ramped in time.
    active : (n_elements,) bool, the elements present now (None: all). Change it with
        :meth:`activate`; nodes that belong to no active element are held fixed.
    gamma_w : unit weight of water, kN/m3.
    stiffness_scale : (n_elements,) factor on each element's elasticity matrix (a modulus
        per element, e.g. from the oedometer); None: the materials' own.
    """

    mesh: Mesh
    materials: dict[str, ElasticMaterial]
    analysis: str = PLANE_STRAIN
    fixities: list[Fixity] = field(default_factory=list)
    drained: list[str] = field(default_factory=list)
    tractions: list[Traction] = field(default_factory=list)
    plates: list[RigidPlate] = field(default_factory=list)
    drained_regions: list[str] = field(default_factory=list)
    body_forces: list[BodyForce] = field(default_factory=list)
    active: np.ndarray | None = None
    gamma_w: float = GAMMA_W
    stiffness_scale: np.ndarray | None = None

    def __post_init__(self):
        self.disc = Discretisation(self.mesh, self.analysis)
        ne = self.mesh.n_elements
        self.active = (np.ones(ne, dtype=bool) if self.active is None
                       else np.asarray(self.active, dtype=bool).copy())
        self._check_names()
        # Strain each element had when it was placed (stress-free then), at its quadrature
        # points, and the force that keeps it stress-free: sum B^T D eps_placed.
        self.placed_strain_q = np.zeros(self.disc.B.shape[:3])
        self.f_placed = np.zeros(self.disc.n_u)
        # An excess pore pressure at the start and the force that holds it in equilibrium.
        self.p_initial = np.zeros(self.disc.n_p)
        self.f_initial = np.zeros(self.disc.n_u)
        self._body = [(bf, self._body_force_vector(bf)) for bf in self.body_forces]
        self._plate_slots()
        self._assemble()
        self._constrain()
        self.version = 0   # bumped whenever the matrix changes (activation)

    # ----------------------------------------------------------- checks
    def _check_names(self):
        names = self.mesh.region_names
        missing = [r for r in names if r not in self.materials]
        if missing:
            raise InputError(f"regions {missing} have no material", field="materials",
                             source=self.mesh.source,
                             fix=f"give a material for every region: {names}.")
        for kind, items in (("fixities", self.fixities), ("tractions", self.tractions),
                            ("plates", self.plates)):
            for item in items:
                self._edge(item.edge, kind)
        for name in self.drained:
            self._edge(name, "drained")
        for r in self.drained_regions:
            self.mesh.region_id(r)

    def _plate_slots(self):
        """Reduced unknowns of the plates, in order: w of plate 0, theta of plate 0 (when it
        rotates), w of plate 1, ... (``plate_w``, ``plate_theta``: slot of each plate, -1 for
        none), the rotation centres ``plate_center`` (x, m) and ``plate_lever``, the largest
        distance of a plate node from its centre (m)."""
        self.plate_w = np.zeros(len(self.plates), dtype=int)
        self.plate_theta = np.full(len(self.plates), -1)
        self.plate_center = np.zeros(len(self.plates))
        self.plate_lever = np.ones(len(self.plates))
        k = 0
        for i, pl in enumerate(self.plates):
            x = self.mesh.points[np.unique(self._edge(pl.edge, "plates")), 0]
            self.plate_center[i] = 0.5 * (x.min() + x.max()) if pl.center is None else pl.center
            self.plate_lever[i] = max(np.abs(x - self.plate_center[i]).max(), 1e-300)
            self.plate_w[i] = k
            k += 1
            if pl.rotation:
                if self.analysis != PLANE_STRAIN:
                    raise InputError(f"rigid plate on {pl.edge!r}: a rotation unknown needs "
                                     "plane strain (an axisymmetric plate cannot tilt)",
                                     field="plates", fix="set rotation = False.")
                self.plate_theta[i] = k
                k += 1
        self.n_plate_unknowns = k

    def _submerging(self) -> list:
        """(body force, its elements, int N below the level as drawn) of each weight that
        changes when its region sinks below a water level."""
        if not hasattr(self, "_sub"):
            self._sub = []
            mesh = self.mesh
            for bf in self.body_forces:
                if bf.water_level is None or bf.submerged_unit_weight is None or \
                        bf.submerged_unit_weight == bf.unit_weight:
                    continue
                e = np.flatnonzero(mesh.region == mesh.region_id(bf.region))
                z = mesh.points[mesh.triangles[e, :3], 1]
                self._sub.append((bf, e, self.disc.below_level_integrals(e, z, bf.water_level)))
        return self._sub

    @property
    def follows_submergence(self) -> bool:
        """Whether some weight depends on the displacement (a lift near a water level)."""
        return bool(self._submerging())

    def submergence_force(self, t: float, u: np.ndarray) -> np.ndarray:
        """The change of the lifts' weight (n_u,) at time t when their points sit where the
        displacement u (n_u,) has taken them instead of where the section draws them: the
        part that has sunk below the water level weighs its buoyant weight (upward
        positive). Corner elevations y + u_y, linear over each element
        (:meth:`Discretisation.below_level_integrals`)."""
        mesh = self.mesh
        f = np.zeros(self.disc.n_u)
        for bf, e, below0 in self._submerging():
            s = bf.history(t)
            if not s:
                continue
            tri = mesh.triangles[e, :3]
            z = mesh.points[tri, 1] + u[2 * tri + 1]
            below = self.disc.below_level_integrals(e, z, bf.water_level)
            d = s * (bf.unit_weight - bf.submerged_unit_weight) * (below - below0)
            f[1::2] += np.bincount(mesh.triangles[e].ravel(), weights=d.ravel(),
                                   minlength=mesh.n_nodes)
        return f

    def _body_force_vector(self, bf: BodyForce) -> np.ndarray:
        """Consistent nodal forces (n_u,) of a region's weight at its full value, with the
        region where the section draws it (see :meth:`submergence_force`)."""
        d, mesh = self.disc, self.mesh
        inside = mesh.region == mesh.region_id(bf.region)
        f = d.body_force_vector(np.zeros(mesh.n_elements), -bf.unit_weight * inside)
        if bf.water_level is not None and bf.submerged_unit_weight is not None:
            e = np.flatnonzero(inside)
            z = mesh.points[mesh.triangles[e, :3], 1]
            lost = (bf.unit_weight - bf.submerged_unit_weight) * \
                d.below_level_integrals(e, z, bf.water_level)            # (n, 6), upward
            f[1::2] += np.bincount(mesh.triangles[e].ravel(), weights=lost.ravel(),
                                   minlength=mesh.n_nodes)
        return f

    def _edge(self, name: str, kind: str) -> np.ndarray:
        if name not in self.mesh.edges:
            raise InputError(f"unknown boundary {name!r}", field=kind, source=self.mesh.source,
                             fix=f"use one of the mesh's named edges: {sorted(self.mesh.edges)}.")
        return self.mesh.edges[name]

    # --------------------------------------------------------- assembly
    def _per_element(self, attr: str) -> np.ndarray:
        """A material property per element (ne,). The flow properties (Biot coefficient,
        storage, permeabilities) are zero in free-draining regions: their pore water is at
        the hydrostatic pressure throughout and takes no part in the flow problem, so where
        such a region meets the ground only the ground's elements make the pressure
        equations (what matters at the undrained instant, when those nodes are free)."""
        vals = np.array([getattr(self.materials[n], attr) for n in self.mesh.region_names])
        out = vals[self.mesh.region]
        if attr in _FLOW_PROPERTIES and self.drained_regions:
            out = np.where(np.isin(self.mesh.region, [self.mesh.region_id(r)
                                                      for r in self.drained_regions]),
                           0.0, out)
        return out

    def _assemble(self):
        d = self.disc
        ne = self.mesh.n_elements
        Ds = np.stack([self.materials[n].elasticity_matrix() for n in self.mesh.region_names])
        self.D = Ds[self.mesh.region]      # (ne, 4, 4)
        if self.stiffness_scale is not None:       # a modulus per element
            self.D = self.D * np.asarray(self.stiffness_scale, float)[:, None, None]
        on = self.active.astype(float)
        Ke = d.stiffness_blocks(self.D * on[:, None, None])
        Qe = d.coupling_blocks(self._per_element("biot_coefficient") * on)
        SMe = d.mass_blocks(self._per_element("storage") * on)
        He = d.flow_blocks(self._per_element("permeability_x") / self.gamma_w * on,
                           self._per_element("permeability_y") / self.gamma_w * on)
        A0 = np.zeros((ne, 15, 15))
        A0[:, :12, :12] = Ke
        A0[:, :12, 12:] = -Qe
        A0[:, 12:, :12] = -Qe.transpose(0, 2, 1)
        A0[:, 12:, 12:] = -SMe
        A1 = np.zeros((ne, 15, 15))
        A1[:, 12:, 12:] = -He
        self.A0 = d.pattern.assemble(A0)   # the dt-independent part
        self.A1 = d.pattern.assemble(A1)   # times dt (same pattern)
        self._A0_p = self.A0[d.n_u:]       # pressure rows: -Q^T u - S M p

    def _constrain(self):
        self._sets: dict[str, Constraints] = {}
        self.constraints(1.0)  # check the boundary conditions now, where the input enters

    def activate(self, regions: list[str], x: np.ndarray) -> None:
        """Place the elements of ``regions`` now, stress-free, given the current unknowns x.

        Their nodes that were held (belonging to no active element) start from their held
        value; the strain the new elements see from the displacement already reached is
        recorded as their placed strain, so they carry no stress at placement.
        """
        d = self.disc
        new = np.isin(self.mesh.region, [self.mesh.region_id(r) for r in regions]) & ~self.active
        if not new.any():
            return
        ue = x[:d.n_u][d.u_dofs[new]]
        eps_q = np.einsum("eqij,ej->eqi", d.B[new], ue)                 # (nn, nq, 4)
        sig_q = np.einsum("eij,eqj->eqi", self.D[new], eps_q)
        fe = np.einsum("eqij,eqi,eq->ej", d.B[new], sig_q, d.dV[new])
        self.f_placed += np.bincount(d.u_dofs[new].ravel(), weights=fe.ravel(),
                                     minlength=d.n_u)
        self.placed_strain_q[new] = eps_q
        self.active |= new
        self._assemble()
        self._constrain()
        self.version += 1

    def deactivate(self, regions: list[str]) -> None:
        """Take the elements of ``regions`` away now (fill removed): from here on they carry
        nothing, so the forces their stresses exerted on the elements around them are
        released and the rest of the ground answers (unloads) in the next solve. Their nodes
        that belong to no active element are held (at zero) like those not yet placed."""
        d = self.disc
        gone = np.isin(self.mesh.region, [self.mesh.region_id(r) for r in regions]) & self.active
        if not gone.any():
            return
        sig_q = np.einsum("eij,eqj->eqi", self.D[gone], self.placed_strain_q[gone])
        fe = np.einsum("eqij,eqi,eq->ej", d.B[gone], sig_q, d.dV[gone])
        self.f_placed -= np.bincount(d.u_dofs[gone].ravel(), weights=fe.ravel(),
                                     minlength=d.n_u)
        self.placed_strain_q[gone] = 0.0
        self.active &= ~gone
        self._assemble()
        self._constrain()
        self.version += 1

    def set_initial_excess(self, p0: np.ndarray) -> None:
        """Start from the excess pore pressure ``p0`` (n_p,), kPa, in equilibrium.

        The effective stress at the start is smaller by ``p0`` than it would be without it
        (the total stress is the weight), so the displacement rows carry the constant force
        ``-Q p0``: K u - Q (p - p0) = f, at rest for u = 0, p = p0. As ``p0`` dissipates the
        effective stress grows and the ground settles.
        """
        d = self.disc
        on = self.active.astype(float)
        Qe = d.coupling_blocks(self._per_element("biot_coefficient") * on)   # (ne, 12, 3)
        fe = np.einsum("eij,ej->ei", Qe, np.asarray(p0, float)[d.p_dofs - d.n_u])
        self.f_initial = -np.bincount(d.u_dofs.ravel(), weights=fe.ravel(), minlength=d.n_u)
        self.p_initial = np.asarray(p0, float).copy()

    def initial_unknowns(self) -> np.ndarray:
        """All unknowns at the start: no displacement, the initial excess pore pressure."""
        x = np.zeros(self.disc.n_dofs)
        x[self.disc.n_u:] = self.p_initial
        return x

    def constraints(self, dt: float) -> "Constraints":
        """The constraint set for a step: drained edges act only over a step of positive length
        (``dt = inf`` asks for the fully drained state, excess pressure zero everywhere).

        At the instant a load is applied (dt = 0) no water has left, anywhere: the excess pore
        pressure on a drainage boundary jumps to zero only once time runs. Fixing it at the
        instant would drop the no-volume-change condition of the boundary nodes and let the
        elements next to the boundary compress.
        """
        mode = "drained" if np.isinf(dt) else ("consolidating" if dt > 0 else "undrained")
        if mode not in self._sets:
            self._sets[mode] = Constraints.build(self, mode)
        return self._sets[mode]

    def drained_state(self, t: float = 0.0) -> "State":
        """The long-term (drained) elastic response to the loads at time t: p = 0, K u = f."""
        b = self.right_hand_side(np.zeros(self.disc.n_dofs), t, np.inf)
        from .. import linalg
        y = linalg.factor(self.matrix(np.inf), backend="superlu").solve(b)
        return State(t, self.expand(y, np.inf), self.disc.n_u)

    # ----------------------------------------------------------- loads
    def external_force(self, t: float, placed: bool = True) -> np.ndarray:
        """Full-size force vector at time t (pressure rows zero) and the generalised forces of
        the plate unknowns (n_plate_unknowns,): each plate's vertical force (upward positive)
        and, for a plate that rotates, its counterclockwise moment.

        ``placed`` adds the force that keeps placed elements stress-free (the linear path;
        the incremental Newton path needs none).
        """
        d = self.disc
        f = np.zeros(d.n_dofs)
        f[:d.n_u] += self.f_initial
        if placed:
            f[:d.n_u] += self.f_placed
        for bf, vec in self._body:
            s = bf.history(t)
            if s:
                f[:d.n_u] += s * vec
        for tr in self.tractions:
            s = tr.history(t)
            if s == 0.0:
                continue
            seg = self._edge(tr.edge, "tractions")

            def traction(x, nrm, tr=tr, s=s):
                t_ = -s * tr.normal * nrm
                t_[..., 1] -= s * (tr.vertical + tr.vertical_gradient * (x[..., 0] - tr.x_ref))
                return t_
            f[:d.n_u] += d.edge_traction_vector(seg, traction)
        per = 1.0 / (2 * np.pi) if d.axisymmetric else 1.0
        plate = np.zeros(self.n_plate_unknowns)
        for i, pl in enumerate(self.plates):
            s = pl.history(t)
            plate[self.plate_w[i]] = -pl.force * s * per
            if self.plate_theta[i] >= 0:
                plate[self.plate_theta[i]] = pl.moment * s
        return f, plate

    # ---------------------------------------------------------- output
    def stress_change_q(self, state: "State", elem: np.ndarray | None = None) -> np.ndarray:
        """Change of effective stress at the quadrature points of all elements (or of
        ``elem``), (ne, nq, 4), kPa, tension positive: D (B u - eps_placed)."""
        d = self.disc
        e = slice(None) if elem is None else elem
        eps = np.einsum("eqij,ej->eqi", d.B[e], state.u[d.u_dofs[e]]) - self.placed_strain_q[e]
        return np.einsum("eij,eqj->eqi", self.D[e], eps)

    def effective_stress_at_nodes(self, state: "State") -> np.ndarray:
        """Change of effective stress (n_nodes, 4) [xx, yy, zz, xy], kPa, tension positive:
        the quadrature-point stresses recovered to the nodes (``Discretisation.recover_at_nodes``),
        averaged over the active elements."""
        return self.disc.recover_at_nodes(self.stress_change_q(state), weights=self.active)

    def total_stress_at_nodes(self, state: "State") -> np.ndarray:
        """Change of total stress (n_nodes, 4), kPa, tension positive: sigma' - alpha p m."""
        sig = self.effective_stress_at_nodes(state)
        alpha = np.array([self.materials[n].biot_coefficient
                          for n in self.mesh.region_names])[self.mesh.region]
        a_node = self.disc.nodal_average(np.repeat(alpha[:, None, None], 6, axis=1))[:, 0]
        p = self.disc.pressure_at_nodes(state.p)
        sig[:, :3] -= (a_node * p)[:, None]
        return sig

    # ----------------------------------------------------------- solve
    def full_matrix(self, dt: float) -> sp.csr_matrix:
        """The unconstrained coupled matrix for a step of length dt."""
        if not np.isfinite(dt) or dt == 0:
            return self.A0
        return sp.csr_matrix((self.A0.data + dt * self.A1.data, self.A0.indices,
                              self.A0.indptr), shape=self.A0.shape)

    def matrix(self, dt: float) -> sp.csr_matrix:
        """Reduced coupled matrix for a step of length dt (days)."""
        return self.constraints(dt).reduce(self.full_matrix(dt).data)

    def right_hand_side(self, x_old: np.ndarray, t_new: float, dt: float,
                        u: np.ndarray | None = None) -> np.ndarray:
        """T^T (f(t_new) - A x_fixed) with the storage terms of x_old; with ``u`` the
        weights of the lifts as submerged at that displacement (:meth:`submergence_force`)."""
        c = self.constraints(dt)
        f, plate = self.external_force(t_new)
        if u is not None and self.follows_submergence:
            f[:self.disc.n_u] += self.submergence_force(t_new, u)
        f[self.disc.n_u:] = self._A0_p @ x_old
        if c.has_prescribed:
            f -= self.full_matrix(dt) @ c.x_fixed
        b = c.restrict(f)
        b[c.plate_dof] += plate
        return b

    def expand(self, y: np.ndarray, dt: float) -> np.ndarray:
        return self.constraints(dt).expand(y)

    def ordering(self, dt: float):
        """Fill-reducing ordering of the reduced unknowns, once per constraint set."""
        c = self.constraints(dt)
        if c.ordering is None:
            from ..linalg import Ordering
            # Constraint sets on the same nodes (the undrained instant and the consolidating
            # steps differ in a few pressure dofs only) share one nested dissection: that of
            # the consolidating set, whichever comes first, so the order (and the last digits
            # of the results) never depend on the history (a resumed run repeats its bytes).
            def node_key(cs):
                nodes = np.zeros(self.mesh.n_nodes, dtype=bool)
                nodes[cs.node_of_reduced] = True
                return np.packbits(nodes).tobytes()
            key = node_key(c)
            ranks = self.__dict__.setdefault("_node_ranks", {})
            if key not in ranks:
                ref = self.constraints(1.0)
                if ref is not c and node_key(ref) == key:
                    ref_rank = Ordering.from_groups(ref.node_of_reduced,
                                                    self.disc.node_graph).node_rank
                else:
                    ref_rank = None
                ranks.clear()
                ranks[key] = ref_rank
            c.ordering = Ordering.from_groups(c.node_of_reduced, self.disc.node_graph,
                                              node_rank=ranks[key])
            ranks[key] = c.ordering.node_rank
        return c.ordering


@dataclass
class Constraints:
    """The map between all unknowns x and the reduced unknowns y of the solved system.

    ``red[i]`` is the reduced index of unknown i, -1 where its value is prescribed
    (``x_fixed``). The vertical unknowns of a rigid plate share its w (``red``, coefficient 1)
    and, for a plate that rotates, its theta (``red2``, coefficient ``coef2`` = x - x_c; -1
    elsewhere); the plate unknowns are numbered after all others (``plate_dof``). Reducing the
    matrix keeps, in order, the entries of the CSR data whose row and column are both plain
    unknowns (no sorting: ``red`` is increasing on them), and sums the few entries that touch
    a plate, times their coefficients, into the plate's rows and columns.
    """
    red: np.ndarray
    n_reduced: int
    x_fixed: np.ndarray
    plate_dof: np.ndarray
    node_of_reduced: np.ndarray
    keep: np.ndarray          # CSR data positions of plain-plain entries
    keep_indptr: np.ndarray
    keep_indices: np.ndarray
    tie: np.ndarray           # CSR data positions of entries touching a plate (repeated)
    tie_rows: np.ndarray
    tie_cols: np.ndarray
    tie_scale: np.ndarray     # product of the row and column coefficients
    red2: np.ndarray
    coef2: np.ndarray
    ordering: object = None

    @property
    def has_prescribed(self) -> bool:
        return bool(np.any(self.x_fixed != 0))

    def reduce(self, data: np.ndarray) -> sp.csr_matrix:
        """Reduced CSR matrix T^T A T from the full matrix's CSR data (same pattern as A0)."""
        n = self.n_reduced
        R = sp.csr_matrix((data[self.keep], self.keep_indices, self.keep_indptr), shape=(n, n))
        if self.tie.size:
            R = (R + sp.coo_matrix((data[self.tie] * self.tie_scale,
                                    (self.tie_rows, self.tie_cols)), shape=(n, n)).tocsr()).tocsr()
        return R

    def restrict(self, f: np.ndarray) -> np.ndarray:
        """T^T f: sum full-size forces into the reduced unknowns."""
        ok = self.red >= 0
        out = np.bincount(self.red[ok], weights=f[ok], minlength=self.n_reduced)
        rot = self.red2 >= 0
        if rot.any():
            out += np.bincount(self.red2[rot], weights=f[rot] * self.coef2[rot],
                               minlength=self.n_reduced)
        return out

    def apply(self, y: np.ndarray) -> np.ndarray:
        """T y: full-size unknowns from reduced ones (prescribed values not added)."""
        x = np.zeros(self.red.size)
        ok = self.red >= 0
        x[ok] = y[self.red[ok]]
        rot = self.red2 >= 0
        x[rot] += self.coef2[rot] * y[self.red2[rot]]
        return x

    def expand(self, y: np.ndarray) -> np.ndarray:
        """T y + x_fixed."""
        x = self.apply(y)
        fixed = self.red < 0
        x[fixed] = self.x_fixed[fixed]
        return x

    @classmethod
    def build(cls, pb: "BiotProblem", mode: str) -> "Constraints":
        d = pb.disc
        n = d.n_dofs
        fixed = np.zeros(n, dtype=bool)
        x_fixed = np.zeros(n)
        for fx in pb.fixities:
            nodes = np.unique(pb._edge(fx.edge, "fixities"))
            for comp, val in ((0, fx.x), (1, fx.y)):
                if val is not None:
                    fixed[2 * nodes + comp] = True
                    x_fixed[2 * nodes + comp] = val
        # Nodes of no active element are held where they are; free-draining regions and
        # inactive nodes carry no excess pore pressure. Where a free-draining region meets
        # the rest, its boundary drains the ground like a drained edge: only over a step of
        # positive length (see BiotProblem.constraints), so at the undrained instant those
        # nodes keep their pressure unknowns and the no-volume-change condition.
        mesh = pb.mesh
        idle = np.ones(mesh.n_nodes, dtype=bool)
        idle[mesh.triangles[pb.active].ravel()] = False
        fixed[2 * np.flatnonzero(idle)] = True
        fixed[2 * np.flatnonzero(idle) + 1] = True
        no_p = idle.copy()
        in_fill = np.isin(mesh.region, [mesh.region_id(r) for r in pb.drained_regions])
        no_p[mesh.triangles[in_fill].ravel()] = True
        if mode == "undrained":
            ground = np.zeros(mesh.n_nodes, dtype=bool)
            ground[mesh.triangles[pb.active & ~in_fill].ravel()] = True
            no_p &= ~ground
        pdofs = d.n_u + pb.mesh.pressure_index[np.flatnonzero(no_p)]
        fixed[pdofs[pdofs >= d.n_u]] = True
        if mode == "drained":
            fixed[d.n_u:] = True
        elif mode == "consolidating":
            for name in pb.drained:
                nodes = np.unique(pb._edge(name, "drained"))
                pdofs = d.n_u + pb.mesh.pressure_index[nodes]
                fixed[pdofs[pdofs >= d.n_u]] = True
        master = np.full(n, -1)          # plate slot of w for tied unknowns
        slot2 = np.full(n, -1)           # plate slot of theta
        coef2 = np.zeros(n)
        for i, pl in enumerate(pb.plates):
            nodes = np.unique(pb._edge(pl.edge, "plates"))
            dofs = 2 * nodes + 1
            if fixed[dofs].any():
                raise InputError(f"rigid plate on {pl.edge!r} has vertically fixed nodes",
                                 field="plates", fix="do not fix the plate edge vertically.")
            if (master[dofs] >= 0).any():
                raise InputError(f"rigid plate on {pl.edge!r} overlaps another plate",
                                 field="plates", fix="give each plate its own edge.")
            master[dofs] = pb.plate_w[i]
            if pb.plate_theta[i] >= 0:
                slot2[dofs] = pb.plate_theta[i]
                coef2[dofs] = pb.mesh.points[nodes, 0] - pb.plate_center[i]
        plain = ~fixed & (master < 0)
        n_free = int(plain.sum())
        red = np.full(n, -1)
        red[plain] = np.arange(n_free)
        tied = master >= 0
        red[tied] = n_free + master[tied]
        red2 = np.where(slot2 >= 0, n_free + slot2, -1)
        n_slots = pb.n_plate_unknowns
        n_red = n_free + n_slots
        # The node each reduced unknown lives on (a plate's unknowns: a node of the plate),
        # for orderings computed on the node graph.
        node = np.empty(n_red, dtype=np.int64)
        node[red[red >= 0]] = d.node_of_dof[red >= 0]
        node[red2[red2 >= 0]] = d.node_of_dof[red2 >= 0]
        # Classify the CSR entries of the full pattern.
        A = pb.A0
        rows = np.repeat(np.arange(n), np.diff(A.indptr))
        cols = A.indices
        both_plain = plain[rows] & plain[cols]
        keep = np.flatnonzero(both_plain)
        keep_indptr = np.concatenate([[0], np.cumsum(np.bincount(red[rows[keep]],
                                                                 minlength=n_red))])
        touch = ~both_plain & (red[rows] >= 0) & (red[cols] >= 0)
        tie = np.flatnonzero(touch)
        # Each entry touching a plate goes to (row index, column index) for each of the (at
        # most two) reduced unknowns of its row and of its column, times both coefficients.
        tr, tc = rows[tie], cols[tie]
        parts = [(tie, red[tr], red[tc], np.ones(tie.size))]
        r2, c2 = red2[tr] >= 0, red2[tc] >= 0
        parts.append((tie[r2], red2[tr[r2]], red[tc[r2]], coef2[tr[r2]]))
        parts.append((tie[c2], red[tr[c2]], red2[tc[c2]], coef2[tc[c2]]))
        b2 = r2 & c2
        parts.append((tie[b2], red2[tr[b2]], red2[tc[b2]], coef2[tr[b2]] * coef2[tc[b2]]))
        tie_pos, tie_rows, tie_cols, tie_scale = (np.concatenate(z) for z in zip(*parts))
        return cls(red, n_red, x_fixed, n_free + np.arange(n_slots), node,
                   keep, keep_indptr, red[cols[keep]].astype(np.int32), tie_pos, tie_rows,
                   tie_cols, tie_scale, red2, coef2)


@dataclass
class State:
    """Solution at one time: ``t`` days, ``x`` all unknowns; views ``u`` (n_u,) and ``p`` (n_p,)."""
    t: float
    x: np.ndarray
    n_u: int

    @property
    def u(self) -> np.ndarray:
        return self.x[:self.n_u]

    @property
    def p(self) -> np.ndarray:
        return self.x[self.n_u:]

    def displacement(self) -> np.ndarray:
        """(n_nodes, 2) displacement, m."""
        return self.u.reshape(-1, 2)


class StepSolver:
    """Steps a BiotProblem through times, factoring once per distinct step length.

    Factorizations are kept in a :class:`~solver.linalg.FactorCache` under a memory budget:
    the undrained instant (a step of zero length) is solved once and released at once; those
    of a matrix that has changed (elements placed) are released before the next is made; the
    others are kept while they fit, least recently used released first. A problem whose one
    factorization cannot fit in the memory available is refused here, before any step, with
    :class:`~solver.errors.TooLargeError`.

    Parameters
    ----------
    problem : the BiotProblem.
    backend : linear solver (default: the fastest installed for the size).
    memory_budget : bytes the factorizations may hold (default 90% of the memory available).
    """

    def __init__(self, problem: BiotProblem, backend: str | None = None,
                 memory_budget: float | None = None):
        from .. import linalg
        self.problem = problem
        n = problem.constraints(1.0).n_reduced
        self.backend = backend or linalg.default_backend(problem.disc.n_dofs)
        self.cache = linalg.FactorCache(memory_budget)
        self.memory_estimate = linalg.estimate_factor_bytes(n, self.backend)
        linalg.check_fits(n, self.backend, needed=self.memory_estimate,
                          budget=self.cache.budget, what="one factorization of the step matrix")
        self._fill: int | None = None       # stored values of the last factorization made
        self.factor_seconds = 0.0
        self.n_factorizations = 0
        self.solve_seconds: list[float] = []

    def factor_for(self, dt: float):
        """The factorization of the step matrix for a step of length dt (made if needed)."""
        from .. import linalg
        # Step lengths equal to 7 digits share a factorization.
        version = self.problem.version
        key = (version, float(np.float32(dt)))
        fac = self.cache.get(key)
        if fac is None:
            A = self.problem.matrix(dt)
            need = linalg.estimate_factor_bytes(A.shape[0], self.backend, fill=self._fill)
            # Factors of a matrix that changed (elements placed) are never used again.
            self.cache.make_room(need, useless=lambda k: k[0] != version or k[1] == 0.0)
            order = self.problem.ordering(dt) if self.backend == "superlu-nd" else None
            fac = linalg.factor(A, backend=self.backend, ordering=order, copy=False)
            del A
            self._fill = fac.factor_nnz
            self.factor_seconds += fac.factor_seconds
            self.n_factorizations += 1
            self.cache.put(key, fac)
        return fac

    def step(self, state: State, t_new: float) -> State:
        dt = t_new - state.t
        if dt < 0:
            raise ValueError("time must not decrease")
        pb = self.problem
        follow = pb.follows_submergence
        b = pb.right_hand_side(state.x, t_new, dt, u=state.u if follow else None)
        fac = self.factor_for(dt)
        t0 = time.perf_counter()
        y = fac.solve(b)
        self.solve_seconds.append(time.perf_counter() - t0)
        x = pb.expand(y, dt)
        if follow:
            x = self._submerge(state, t_new, dt, b, x, fac)
        if dt == 0:
            # The undrained instant is solved once (the next load brings its own): release
            # it before the first consolidating step is factored.
            self.cache.release((pb.version, 0.0))
        return State(t_new, x, pb.disc.n_u)

    def _submerge(self, state, t_new, dt, b, x, fac, tol=1e-9, max_iter=50):
        """Weights that follow the settlement (fill sinking below the water level): the step
        is solved again with the weights at the new displacement, on the same
        factorization, until they no longer change (a fixed point: the change of weight
        per unit settlement, about gamma_w times the loaded width, is small against the
        stiffness of the ground, so each pass shrinks the change by that ratio)."""
        from ..errors import SolverError
        pb = self.problem
        n_u = pb.disc.n_u
        c = pb.constraints(dt)
        g_used = pb.submergence_force(t_new, state.u)
        scale = max(sum(np.abs(v).sum() for _, v in pb._body), 1e-300)
        for _ in range(max_iter):
            g = pb.submergence_force(t_new, x[:n_u])
            change = g - g_used
            if np.abs(change).sum() <= tol * scale:
                return x
            full = np.zeros(pb.disc.n_dofs)
            full[:n_u] = change
            b = b + c.restrict(full)
            g_used = g
            x = pb.expand(fac.solve(b), dt)
        raise SolverError(f"the weight of fill sinking below the water level did not settle "
                          f"in {max_iter} passes at t = {t_new:.6g} days")

    def release(self) -> None:
        """Free every factorization held (later steps factor again as needed)."""
        self.cache.clear()

    def run(self, times) -> Iterator[State]:
        """Yield the state at each time. The first step starts from rest just before times[0];
        a load present at times[0] is felt undrained (a step of zero length)."""
        pb = self.problem
        state = State(float(times[0]), np.zeros(pb.disc.n_dofs), pb.disc.n_u)
        for t in times:
            state = self.step(state, float(t))
            yield state
