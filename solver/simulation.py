"""From a model to results: mesh, boundary conditions, stages, time steps, probes, output.

    sim = Simulation(model)          # meshes and sets up; checks names
    result = run(sim, out_dir=None)  # solver.runner: steps through the stages, returns
                                     # the probe histories (and writes the run folder)

Stages run in order. A ``lift`` stage places its lift stress-free at the stage start and ramps
its weight on over the stage; a ``remove`` stage ramps a placed lift's weight off and takes
its elements away for the stage's last step (``BiotProblem.deactivate``); a ``load`` stage ramps the named loads to ``factor`` (a stage of
zero duration applies it at once, felt undrained); a ``consolidate`` stage changes nothing
and may stop early at an average degree of consolidation. The embankment fill is treated as
free-draining (no excess pore pressure in it; common practice for granular fill), so the
ground under it drains through it.
"""

from __future__ import annotations

import numpy as np

from .errors import InputError
from .initial import cam_clay
from .fem.biot import (BiotProblem, BodyForce, Fixity, RigidPlate, State, StepSolver,
                       Traction)
from .fem import element
from .materials.elastic import ElasticMaterial
from .mesh import Mesh
from .model import Material, Model, check_mesh_names
from .stepping import level_schedule


class Ramp:
    """A load multiplier through time: piecewise linear between knots, held after the last.

    Knots are added as the stages start (a stage ending early moves the later ones), so the
    history is built while the run goes. A knot pair at one time is a jump; the value at that
    time is the one after the jump.
    """

    def __init__(self, value: float = 0.0):
        self.t: list[float] = [-np.inf]
        self.v: list[float] = [value]

    def set(self, t0: float, duration: float, target: float) -> None:
        now = self(t0)
        self.t += [t0, t0 + duration]
        self.v += [now, target]

    def __call__(self, t: float) -> float:
        k = len(self.t) - 1
        while k > 0 and self.t[k] > t:
            k -= 1
        if k == len(self.t) - 1:
            return self.v[k]
        t0, t1 = self.t[k], self.t[k + 1]
        if t1 <= t0:
            return self.v[k + 1]
        return self.v[k] + (self.v[k + 1] - self.v[k]) * (t - t0) / (t1 - t0)


def fe_material(m: Material, gamma_w: float,
                constrained_modulus: float | None = None) -> ElasticMaterial:
    """The linear skeleton of a model material. For a Modified Cam Clay material it is a
    stand-in carrying the hydraulic properties (the Newton path uses the real tangent).
    ``constrained_modulus`` (kPa) stands in for the material's own where its stiffness comes
    from the oedometer (the reference each element's factor multiplies)."""
    kw = dict(permeability_x=m.permeability_x, permeability_y=m.permeability_y,
              biot_coefficient=m.biot_coefficient, storage=m.storage,
              unit_weight=m.unit_weight, name=m.name)
    if m.model == "modified cam clay":
        return ElasticMaterial(1000.0, m.poisson_ratio, **kw)
    if constrained_modulus is not None:
        return ElasticMaterial.from_constrained_modulus(constrained_modulus, m.poisson_ratio,
                                                        **kw)
    if m.youngs_modulus is not None:
        return ElasticMaterial(m.youngs_modulus, m.poisson_ratio, **kw)
    if m.constrained_modulus is not None:
        return ElasticMaterial.from_constrained_modulus(m.constrained_modulus, m.poisson_ratio,
                                                        **kw)
    raise InputError("a linear elastic material needs youngs_modulus or constrained_modulus",
                     field=f"materials.{m.name}", fix="give youngs_modulus in kPa.")


FOOTING_COLUMNS = ("settlement_m", "tilt_rad")

PROBE_COLUMNS = ("settlement_m", "horizontal_displacement_m", "excess_pore_pressure_kPa",
                 "total_pore_pressure_kPa", "vertical_effective_stress_kPa",
                 "horizontal_effective_stress_kPa", "out_of_plane_effective_stress_kPa",
                 "shear_stress_kPa")


class Simulation:
    """A model set up for solving: mesh, materials per region, conditions, probes."""

    def __init__(self, model: Model, mesh: Mesh | None = None, backend: str | None = None):
        from . import sections
        self.model = model
        self.mesh = mesh if mesh is not None else sections.build_mesh(model)
        check_mesh_names(model, self.mesh)   # a user mesh has every region and edge named
        self.backend = backend
        self._region_materials()
        self._conditions()
        self.problem = BiotProblem(self.mesh, self.fe_materials, analysis=model.analysis,
                                   fixities=self.fixities, drained=self.drained_edges,
                                   tractions=self.tractions, plates=self.plates,
                                   drained_regions=self.fill_regions,
                                   body_forces=self.body_forces, active=self.active0,
                                   gamma_w=model.water.unit_weight,
                                   stiffness_scale=self.stiffness_scale)
        self._initial_state()
        self._probes()
        self.nonlinear = any(mat.model != "linear elastic"
                             for mat in self.region_material.values())
        self.stepper = None

    def make_stepper(self):
        """The step solver: factor-once linear path, or Newton for materials with state."""
        if self.stepper is not None:
            return self.stepper
        if not self.nonlinear:
            self.stepper = StepSolver(self.problem, backend=self.backend)
            return self.stepper
        from .fem.newton import NewtonStepSolver
        pb, d, mesh = self.problem, self.problem.disc, self.mesh
        ne, nq = d.detJ.shape
        x, y = d.xq[..., 0].ravel(), d.xq[..., 1].ravel()
        g = self._geostatic(x, y)
        stress0 = np.zeros((ne, nq, 4))
        stress0[..., 0] = -g["horizontal_effective_kPa"].reshape(ne, nq)
        stress0[..., 1] = -g["vertical_effective_kPa"].reshape(ne, nq)
        stress0[..., 2] = stress0[..., 0]
        stress0[~self.active0] = 0.0
        mats, states = {}, {}
        for r, m in self.region_material.items():
            e = np.flatnonzero(mesh.region == mesh.region_id(r))
            s0 = stress0[e].reshape(-1, 4)
            if m.model == "modified cam clay":
                if r in self.lift_regions:
                    raise InputError("a construction lift cannot be Modified Cam Clay (it is "
                                     "placed stress-free, where Cam Clay has no stiffness)",
                                     field=f"materials.{m.name}.model", source=self.model.source,
                                     fix='give the fill model = "linear elastic".')
                cc = cam_clay(m)
                # p' floor of 1 kPa at the ground surface, where Cam Clay has no stiffness.
                s0 = s0.copy()
                p = -(s0[:, 0] + s0[:, 1] + s0[:, 2]) / 3
                s0[p < 1.0, :3] -= (1.0 - p[p < 1.0])[:, None]
                stress0[e] = s0.reshape(len(e), nq, 4)
                oed = m.oedometer
                if oed.preconsolidation_pressure is not None:
                    pc = cc._pc_at_least_current(s0, cc.preconsolidation_from_vertical(
                        np.full(len(s0), oed.preconsolidation_pressure)))
                elif oed.preconsolidation_margin is not None:
                    pc = cc.preconsolidation_from_margin(s0, oed.preconsolidation_margin)
                else:
                    pc = cc.preconsolidation_from_ocr(s0, oed.overconsolidation_ratio or 1.0)
                mats[r] = cc
                states[r] = cc.initial_state(s0, pc)
            else:
                mats[r] = self.fe_materials[r]
                if self.stiffness_scale is not None:     # a modulus per element
                    from .materials.elastic import ScaledElastic
                    mats[r] = ScaledElastic(mats[r], np.repeat(self.stiffness_scale[e], nq))
                states[r] = s0.copy()
        self.stepper = NewtonStepSolver(pb, mats, states, stress0, backend=self.backend)
        return self.stepper

    def _stress_change_q(self, state: State, elem: np.ndarray | None = None) -> np.ndarray:
        """Change of effective stress at the quadrature points of all elements (or of
        ``elem``, the probes' elements), (n, nq, 4), tension positive: from the material
        states on the Newton path, D (B u - eps_placed) on the linear one."""
        if self.nonlinear and self.stepper is not None:
            st = self.stepper
            e = slice(None) if elem is None else elem
            return st.stress[e] - st.stress0[e]
        return self.problem.stress_change_q(state, elem)

    # ------------------------------------------------------------ set-up
    def _region_materials(self):
        m, mesh = self.model, self.mesh
        region_mat: dict[str, str] = {}
        for ly in m.layers:
            region_mat[ly.name] = ly.material
        emb = m.section.embankment
        if emb is not None:
            for i in range(len(emb.lifts)):
                region_mat[f"lift_{i + 1}"] = emb.material
        region_mat.update(m.section.regions)
        missing = [r for r in mesh.region_names if r not in region_mat]
        if missing:
            raise InputError(f"mesh regions {missing} have no material",
                             field="section.regions", source=m.source,
                             fix="map every mesh region to a material in [section.regions].")
        for r, name in region_mat.items():
            if name not in m.materials:
                raise InputError(f"unknown material {name!r} for region {r!r}",
                                 field="section.regions", source=m.source,
                                 fix=f"use one of {sorted(m.materials)}.")
        self.region_material = {r: m.materials[region_mat[r]] for r in mesh.region_names}
        # Layers whose stiffness comes from the oedometer: a modulus per element
        # (solver.oedometer_stiffness), as a reference material times a factor.
        from .oedometer_stiffness import element_moduli, oedometer_moduli
        self.oedometer_moduli = oedometer_moduli(m)
        self.stiffness_scale, reference = (element_moduli(m, mesh, self.oedometer_moduli)
                                           if self.oedometer_moduli else (None, {}))
        self.fe_materials = {r: fe_material(mat, m.water.unit_weight, reference.get(r))
                             for r, mat in self.region_material.items()}
        if m.section.kind == "mesh":
            self.lift_regions = [st.region for st in m.stages if st.kind == "lift"]
        else:
            self.lift_regions = [r for r in mesh.region_names if r.startswith("lift_")]
        self.fill_regions = list(self.lift_regions)
        self.active0 = ~np.isin(mesh.region, [mesh.region_id(r) for r in self.lift_regions])

    def _conditions(self):
        m, mesh = self.model, self.mesh
        edges = mesh.edges
        self.fixities, self.drained_edges = [], []
        self.tractions, self.plates, self.body_forces = [], [], []
        self.ramps: dict[str, Ramp] = {}
        if m.section.kind == "mesh":
            dr = m.drainage
            self.fixities += [Fixity(e, x=0.0, y=0.0) for e in dr.fixed_edges]
            self.fixities += [self._roller(e) for e in dr.roller_edges]
            self.drained_edges += list(dr.drained_edges)
        else:
            self.fixities.append(Fixity("base", x=0.0, y=0.0))
            for side in ("left", "right", "symmetry"):
                if side in edges:
                    self.fixities.append(Fixity(side, x=0.0))
            if m.drainage.top:
                # The ground surface drains, also under surface loads (a preload drains
                # upward); footing bases do not (concrete; common practice).
                self.drained_edges += [e for e in edges if e in ("ground_free", "excavation_walls")
                                       or e.startswith("load_")]
                if "ground_free" not in edges and not m.section.footings and "ground" in edges:
                    self.drained_edges.append("ground")
            if m.drainage.base:
                self.drained_edges.append("base")
            if m.drainage.sides:
                self.drained_edges += [e for e in ("left", "right") if e in edges]
        axi = m.analysis == "axisymmetric"
        for load in m.loads:
            ramp = self.ramps[load.name] = Ramp()
            edge = f"load_{load.name}"
            if m.section.kind == "mesh" and edge not in edges:
                edge = load.name             # a user mesh: the edge named like the load
            self.tractions.append(Traction(edge, vertical=load.pressure, history=ramp))
        x_min = float(mesh.points[:, 0].min())
        for ft in m.section.footings:
            ramp = self.ramps[ft.name] = Ramp()
            edge = f"footing_{ft.name}"
            area = np.pi * (ft.width / 2) ** 2 if axi else ft.width
            # A footing cut by the symmetry line of a half section is modelled by its half
            # at x >= 0, which carries half the force (a plate of the axisymmetric model
            # carries the whole, see RigidPlate); it cannot tilt (symmetry).
            x0, x1 = ft.center - ft.width / 2, ft.center + ft.width / 2
            cut = not axi and x0 < x_min - 1e-9 * ft.width
            share = 1.0 if axi else (x1 - max(x0, x_min)) / ft.width
            # An eccentric load (full plane strain sections only, checked with the model):
            # the rigid plate carries its moment about the centre, -P e (counterclockwise
            # positive); a flexible base the linear pressure with the same resultant and
            # moment, q (1 + 12 e (x - x_c) / B^2) (common practice).
            e = getattr(ft, "eccentricity", 0.0) or 0.0
            if ft.rigid:
                force = ft.force if ft.force is not None else ft.load * area
                self.plates.append(RigidPlate(edge, force=force * share, history=ramp,
                                              rotation=not (axi or cut), center=ft.center,
                                              moment=-force * e))
            else:
                pressure = ft.load if ft.load is not None else ft.force / area
                self.tractions.append(Traction(edge, vertical=pressure, history=ramp,
                                               vertical_gradient=12 * pressure * e / ft.width ** 2,
                                               x_ref=ft.center))
        # Fill below the water table weighs its buoyant weight (BodyForce), also fill that
        # sinks below it as the ground settles (BiotProblem.submergence_force).
        gw, level = m.water.unit_weight, -m.water.table_depth
        for r in self.lift_regions:
            ramp = self.ramps[r] = Ramp()
            mat = self.region_material[r]
            sat = mat.saturated_unit_weight if mat.saturated_unit_weight is not None \
                else mat.unit_weight
            self.body_forces.append(BodyForce(r, mat.unit_weight, ramp,
                                              submerged_unit_weight=sat - gw,
                                              water_level=level))

    def _roller(self, name: str) -> Fixity:
        """A roller on a straight vertical or horizontal mesh edge: the normal component is
        held. A sloping roller edge is refused (it would need a skew constraint)."""
        pts = self.mesh.points[self.mesh.edge_nodes(name)]
        dx, dy = np.ptp(pts[:, 0]), np.ptp(pts[:, 1])
        if dx <= 1e-9 * max(dy, 1e-300):
            return Fixity(name, x=0.0)
        if dy <= 1e-9 * max(dx, 1e-300):
            return Fixity(name, y=0.0)
        raise InputError(f"roller edge {name!r} is neither vertical nor horizontal",
                         field="drainage.roller_edges", source=self.model.source,
                         fix="put rollers on straight vertical or horizontal edges only, or "
                             "list the edge in fixed_edges.")

    def _initial_state(self):
        """Geostatic state at the nodes and at the probes (compression positive), from the
        pore pressure at the start (:mod:`solver.pore_water`); the initial excess pore
        pressure becomes the solver's starting excess."""
        from .initial import LayerColumn, MeshOverburden, geostatic_stress
        from .pore_water import MeshWater, layer_water
        m, mesh = self.model, self.mesh
        wt = -m.water.table_depth
        gw = m.water.unit_weight
        given = bool(m.water.piezometric_depths or m.water.initial_excess_pore_pressures)
        if m.section.kind == "mesh":
            starting = {r: mat for r, mat in self.region_material.items()
                        if r not in self.lift_regions}
            weights = {r: (mat.unit_weight, mat.saturated_unit_weight or mat.unit_weight, mat)
                       for r, mat in starting.items()}
            water = MeshWater(mesh, m, starting) if given else None
            self._geostatic = MeshOverburden(mesh, weights, wt, gw, water=water)
        else:
            col = LayerColumn.from_model(m, mesh.points[:, 0].min(), mesh.points[:, 0].max())
            water = layer_water(m, col.tops) if given else None
            # Points above the original ground belong to lifts, placed later and stress-free;
            # their pore water is hydrostatic below the water table all the same.
            def geostatic(x, y):
                y = np.asarray(y, float)
                g = geostatic_stress(col, wt, gw, x, np.minimum(y, 0.0), water)
                g["steady_pore_pressure_kPa"] = np.where(
                    y > 0.0, gw * np.maximum(wt - y, 0.0), g["steady_pore_pressure_kPa"])
                return g
            self._geostatic = geostatic
        x, y = mesh.points.T
        g = self._geostatic(x, y)
        ground = ~np.isin(mesh.region, [mesh.region_id(r) for r in self.lift_regions])
        on_ground = np.zeros(mesh.n_nodes, bool)
        on_ground[mesh.triangles[ground].ravel()] = True
        for k in g:
            if k != "steady_pore_pressure_kPa":
                g[k] = np.where(on_ground, g[k], 0.0)
        self.initial = g
        if given:
            self._check_uplift(g)
            corner = mesh.pressure_index >= 0
            p0 = np.zeros(self.problem.disc.n_p)
            p0[mesh.pressure_index[corner]] = g["initial_excess_kPa"][corner]
            self.problem.set_initial_excess(p0)

    def _check_uplift(self, g: dict) -> None:
        """The pore pressure at the start may not exceed the total vertical stress (the
        ground would lift off: negative effective stress)."""
        m = self.model
        sv = g["vertical_effective_kPa"]
        scale = max(float(np.abs(sv).max(initial=0.0)), 1.0)
        bad = np.flatnonzero(sv < -1e-9 * scale)
        if not bad.size:
            return
        i = bad[np.argmin(sv[bad])]
        x, y = self.mesh.points[i]
        w = m.water
        by_excess = g["initial_excess_kPa"][i] > 0 and w.initial_excess_pore_pressures
        key = "initial_excess_pore_pressures" if by_excess else "piezometric_depths"
        names = list(getattr(w, key))
        raise InputError(
            f"the pore pressure at the start exceeds the total vertical stress at "
            f"({x:g}, {y:g}) m by {-sv[i]:.3g} kPa: the ground would lift off (hydraulic "
            f"uplift)", field=f"water.{key}.{names[0]}" if names else f"water.{key}",
            source=m.source,
            fix="lower the piezometric level (a larger depth) or the initial excess, or check "
                "the unit weights: the effective stress at the start must not be negative.")

    def _probes(self):
        m, mesh = self.model, self.mesh
        pts = np.array([[p.x, p.y] for p in m.probes], float).reshape(-1, 2)
        self.probe_names = [p.name for p in m.probes]
        if len(pts):
            elem, ref = mesh.locate(pts, tol=1e-7)
            bad = np.flatnonzero(elem < 0)
            if bad.size:
                p = m.probes[bad[0]]
                raise InputError(f"probe {p.name!r} at ({p.x:g}, {p.y:g}) m lies outside the mesh",
                                 field=f"probes[{bad[0]}]", source=m.source,
                                 fix="move the probe inside the section (the ground surface "
                                     "is y = 0, depth is negative y).")
        else:
            elem, ref = np.zeros(0, int), np.zeros((0, 2))
        self._probe_elem, self._probe_pts = elem, pts
        self._probe_N = element.p2(ref)[0]                  # (np, 6)
        self._probe_R = self.problem.disc.recovery_weights(ref)   # (np, nq)
        self._probe_init = self._geostatic(pts[:, 0], pts[:, 1]) if len(pts) \
            else None
        # Footings: the two ends and the centre of each base (clipped to the mesh in a half
        # section), for their settlement and tilt.
        fts = m.section.footings
        self.footing_names = [f.name for f in fts]
        x_min = float(mesh.points[:, 0].min())
        fpts = np.array([[max(x, x_min), -f.embedment] for f in fts
                         for x in (f.center - f.width / 2, f.center, f.center + f.width / 2)],
                        float).reshape(-1, 2)
        fe, fr = mesh.locate(fpts, tol=1e-7) if len(fpts) else (np.zeros(0, int),
                                                                 np.zeros((0, 2)))
        self._footing_elem, self._footing_N = fe, element.p2(fr)[0]
        self._footing_width = np.array([f.width for f in fts], float)
        self._footing_share = np.array([
            1.0 if m.analysis == "axisymmetric" else
            (f.center + f.width / 2 - max(f.center - f.width / 2, x_min)) / f.width
            for f in fts], float)
        self.lines = []
        for ln in m.lines:
            s = np.linspace(0.0, 1.0, ln.points)
            xy = np.column_stack([ln.x0 + s * (ln.x1 - ln.x0), ln.y0 + s * (ln.y1 - ln.y0)])
            e, r = mesh.locate(xy, tol=1e-7)
            keep = e >= 0
            self.lines.append((ln, xy[keep], np.hypot(*(xy[keep] - xy[0]).T), e[keep],
                               element.p2(r[keep])[0]))

    # ---------------------------------------------------------- outputs
    def probe_values(self, state: State) -> dict[str, np.ndarray]:
        """Probe quantities (user signs: settlement down, pressures and stresses in
        compression positive), each (n_probes,)."""
        pb, mesh = self.problem, self.mesh
        e = self._probe_elem
        if not len(e):
            return {c: np.zeros(0) for c in PROBE_COLUMNS}
        t = mesh.triangles[e]
        u = state.displacement()[t]                          # (np, 6, 2)
        uv = np.einsum("na,nai->ni", self._probe_N, u)
        p_nodes = pb.disc.pressure_at_nodes(state.p)
        p = np.einsum("na,na->n", self._probe_N, p_nodes[t])
        # Quadrature-point stresses recovered to the point, on both paths (change, tension
        # positive).
        dsig = np.einsum("nq,nqi->ni", self._probe_R, self._stress_change_q(state, e))
        g = self._probe_init
        return {
            "settlement_m": -uv[:, 1],
            "horizontal_displacement_m": uv[:, 0],
            "excess_pore_pressure_kPa": p,
            "total_pore_pressure_kPa": g["steady_pore_pressure_kPa"] + p,
            "vertical_effective_stress_kPa": g["vertical_effective_kPa"] - dsig[:, 1],
            "horizontal_effective_stress_kPa": g["horizontal_effective_kPa"] - dsig[:, 0],
            "out_of_plane_effective_stress_kPa": g["horizontal_effective_kPa"] - dsig[:, 2],
            "shear_stress_kPa": dsig[:, 3],
        }

    def footing_values(self, state: State) -> dict[str, np.ndarray]:
        """Each footing's settlement at the centre of its base (m, downward positive) and its
        tilt (rad): (settlement of the edge at larger x - that of the other edge) / width,
        positive when the footing leans towards +x. A rigid footing's base stays straight, so
        its tilt is its rotation; a footing cut by a symmetry line does not tilt. Arrays
        (n_footings,) in the order of ``footing_names``."""
        if not self.footing_names:
            return {c: np.zeros(0) for c in FOOTING_COLUMNS}
        e, N, share = self._footing_elem, self._footing_N, self._footing_share
        uy = np.einsum("na,na->n", N, state.displacement()[self.mesh.triangles[e], 1])
        uy = uy.reshape(-1, 3)                               # (nf, [left, centre, right])
        s = -uy
        tilt = np.where(share < 1.0, 0.0, (s[:, 2] - s[:, 0]) / self._footing_width)
        return {"settlement_m": s[:, 1], "tilt_rad": tilt}

    def line_values(self, state: State) -> dict[str, dict[str, np.ndarray]]:
        pb, mesh = self.problem, self.mesh
        out = {}
        p_nodes = pb.disc.pressure_at_nodes(state.p)
        disp = state.displacement()
        for ln, xy, dist, e, N in self.lines:
            t = mesh.triangles[e]
            uv = np.einsum("na,nai->ni", N, disp[t])
            out[ln.name] = {"distance_m": dist, "x_m": xy[:, 0], "y_m": xy[:, 1],
                            "settlement_m": -uv[:, 1], "horizontal_displacement_m": uv[:, 0],
                            "excess_pore_pressure_kPa": np.einsum("na,na->n", N, p_nodes[t])}
        return out

    def fields(self, state: State) -> dict[str, np.ndarray]:
        """Nodal fields for the field output (user signs)."""
        pb = self.problem
        p = pb.disc.pressure_at_nodes(state.p)
        dsig = pb.disc.recover_at_nodes(self._stress_change_q(state), weights=pb.active)
        g = self.initial
        eff = np.column_stack([g["horizontal_effective_kPa"] - dsig[:, 0],
                               g["vertical_effective_kPa"] - dsig[:, 1],
                               g["horizontal_effective_kPa"] - dsig[:, 2], dsig[:, 3]])
        disp = state.displacement()
        return {"displacement_m": disp, "settlement_m": -disp[:, 1],
                "excess_pore_pressure_kPa": p,
                "total_pore_pressure_kPa": g["steady_pore_pressure_kPa"] + p,
                "effective_stress_kPa": eff}

    # -------------------------------------------------------- stepping
    @property
    def _pressure_weights(self) -> np.ndarray:
        """Integral weight of each pressure unknown over the soil (for averages)."""
        if not hasattr(self, "_pw"):
            d = self.problem.disc
            soil = ~np.isin(self.mesh.region,
                            [self.mesh.region_id(r) for r in self.fill_regions])
            Me = d.mass_blocks(soil.astype(float))
            self._pw = np.bincount((d.p_dofs - d.n_u).ravel(), weights=Me.sum(axis=2).ravel(),
                                   minlength=d.n_p)
        return self._pw

    def stage_times(self, t0: float, stage) -> np.ndarray:
        """Step end times of a stage starting at t0 (the stage start itself excluded)."""
        ts = self.model.time_steps
        if stage.duration == 0:
            return np.array([t0])
        stops = [t for t in self.model.output.times if t0 < t < t0 + stage.duration]
        times = level_schedule(t0 + stage.duration, ts.first_step, ts.growth,
                               ts.steps_per_level, stops=stops, t_start=t0)[1:]
        if ts.max_step:
            # split steps longer than the cap into equal parts (lengths still repeat)
            out, prev = [], t0
            for t in times:
                n = int(np.ceil((t - prev) / ts.max_step - 1e-9))
                out += list(prev + (t - prev) * np.arange(1, n + 1) / n)
                prev = t
            times = np.array(out)
        return times
