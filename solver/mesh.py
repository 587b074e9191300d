"""The one mesh object every later step reads: 6-node triangles, regions and named edges.

Array conventions
-----------------
points    : (n_nodes, 2) float, x (or radius r) and y (elevation, up positive), in m.
triangles : (n_elements, 6) int, Gmsh ``triangle6`` order: corners 0, 1, 2 counter-clockwise,
            then the mid-side nodes of edges 0-1, 1-2, 2-0.
region    : (n_elements,) int, index into ``region_names``.
edges     : name -> (n_segments, 3) int, Gmsh ``line3`` order: end, end, middle.

The corner nodes carry pore pressure (P1); all nodes carry displacement (P2).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from functools import cached_property
from pathlib import Path

import numpy as np

from .errors import MeshError


@dataclass
class Mesh:
    points: np.ndarray
    triangles: np.ndarray
    region: np.ndarray
    region_names: list[str]
    edges: dict[str, np.ndarray] = field(default_factory=dict)
    source: str | None = None

    def __post_init__(self):
        self.points = np.ascontiguousarray(self.points[:, :2], dtype=float)
        self.triangles = np.ascontiguousarray(self.triangles, dtype=np.int64)
        self.region = np.ascontiguousarray(self.region, dtype=np.int64)
        self.edges = {k: np.ascontiguousarray(v, dtype=np.int64).reshape(-1, 3)
                      for k, v in self.edges.items()}
        self.check()
        self._orient_edges()

    def _orient_edges(self) -> None:
        """Turn each edge segment so the triangle it borders lies on its left.

        Then (t_y, -t_x) of the tangent t is the outward normal on the boundary. On an interior
        line the first bordering triangle found decides.
        """
        if not self.edges:
            return
        n = self.n_nodes
        t = self.triangles
        # Directed corner edges of every (counter-clockwise) triangle: i -> j has it on the left.
        a = t[:, [0, 1, 2]].ravel()
        b = t[:, [1, 2, 0]].ravel()
        directed = np.sort(a * n + b)
        for name, seg in self.edges.items():
            if not seg.size:
                continue
            forward = np.isin(seg[:, 0] * n + seg[:, 1], directed, assume_unique=False)
            flip = ~forward
            seg[flip] = seg[flip][:, [1, 0, 2]]

    # ---------------------------------------------------------------- checks
    def check(self) -> None:
        """Refuse meshes the solver cannot use, naming the fault."""
        where = self.source or "mesh"
        n = len(self.points)
        if self.triangles.ndim != 2 or self.triangles.shape[1] != 6:
            raise MeshError(f"triangles must have 6 nodes each, got shape {self.triangles.shape}",
                            field="triangles", source=where,
                            fix="mesh with second-order triangles (Gmsh: Mesh.ElementOrder = 2).")
        if len(self.triangles) == 0:
            raise MeshError("the mesh has no triangles", field="triangles", source=where,
                            fix="give at least one named surface (physical group) to mesh.")
        if self.triangles.min() < 0 or self.triangles.max() >= n:
            raise MeshError("a triangle refers to a node that does not exist",
                            field="triangles", source=where, fix="rebuild the mesh file.")
        if self.region.shape != (len(self.triangles),):
            raise MeshError(f"region has {self.region.size} entries for "
                            f"{len(self.triangles)} triangles", field="region", source=where)
        area = self.corner_areas
        scale = max(np.ptp(self.points[:, 0]), np.ptp(self.points[:, 1]), 1e-300) ** 2
        bad = np.flatnonzero(area <= 1e-12 * scale)
        if bad.size:
            kind = "zero-area" if np.all(np.abs(area[bad]) <= 1e-12 * scale) else "inverted"
            raise MeshError(f"{bad.size} {kind} triangle(s), first is element {bad[0]} with "
                            f"area {area[bad[0]]:.3g} m2", field="triangles", source=where,
                            fix="remesh; corners must run counter-clockwise with positive area.")
        for name, seg in self.edges.items():
            if seg.size and (seg.min() < 0 or seg.max() >= n):
                raise MeshError("an edge refers to a node that does not exist",
                                field=f"edges.{name}", source=where, fix="rebuild the mesh file.")

    # ------------------------------------------------------------- derived
    @property
    def n_nodes(self) -> int:
        return len(self.points)

    @property
    def n_elements(self) -> int:
        return len(self.triangles)

    @cached_property
    def corner_areas(self) -> np.ndarray:
        """Signed area of each triangle from its corners, (n_elements,), m2."""
        p = self.points[self.triangles[:, :3]]
        d1, d2 = p[:, 1] - p[:, 0], p[:, 2] - p[:, 0]
        return 0.5 * (d1[:, 0] * d2[:, 1] - d1[:, 1] * d2[:, 0])

    @cached_property
    def corner_nodes(self) -> np.ndarray:
        """Sorted ids of nodes that are a corner of some triangle (the pressure nodes)."""
        return np.unique(self.triangles[:, :3])

    @cached_property
    def pressure_index(self) -> np.ndarray:
        """(n_nodes,) index of each node's pressure unknown, -1 for mid-side nodes."""
        idx = np.full(self.n_nodes, -1, dtype=np.int64)
        idx[self.corner_nodes] = np.arange(self.corner_nodes.size)
        return idx

    def region_id(self, name: str) -> int:
        try:
            return self.region_names.index(name)
        except ValueError:
            raise MeshError(f"no region named {name!r}; the mesh has {self.region_names}",
                            field="region", source=self.source,
                            fix="use one of the mesh's region names.") from None

    def edge(self, name: str) -> np.ndarray:
        """Segments of a named edge, (n_segments, 3)."""
        if name not in self.edges:
            raise MeshError(f"no edge named {name!r}; the mesh has {sorted(self.edges)}",
                            field="edges", source=self.source,
                            fix="use one of the mesh's edge names.")
        return self.edges[name]

    def edge_nodes(self, name: str) -> np.ndarray:
        """Sorted unique node ids on a named edge."""
        return np.unique(self.edge(name))

    def locate(self, xy: np.ndarray, tol: float = 1e-9) -> tuple[np.ndarray, np.ndarray]:
        """Element holding each point and its reference coordinates (xi, eta).

        Parameters
        ----------
        xy : (n, 2) points, m.

        Returns
        -------
        element : (n,) int, -1 for points outside the mesh.
        ref : (n, 2) reference coordinates in that element (straight-sided map).
        """
        xy = np.atleast_2d(np.asarray(xy, float))
        p = self.points[self.triangles[:, :3]]              # (ne, 3, 2)
        d1, d2 = p[:, 1] - p[:, 0], p[:, 2] - p[:, 0]
        det = d1[:, 0] * d2[:, 1] - d1[:, 1] * d2[:, 0]
        elem = np.full(len(xy), -1, dtype=np.int64)
        ref = np.zeros((len(xy), 2))
        chunk = max(1, 2_000_000 // max(1, self.n_elements))
        for s in range(0, len(xy), chunk):
            q = xy[s:s + chunk, None, :] - p[None, :, 0]    # (nc, ne, 2)
            xi = (q[..., 0] * d2[:, 1] - q[..., 1] * d2[:, 0]) / det
            eta = (d1[:, 0] * q[..., 1] - d1[:, 1] * q[..., 0]) / det
            inside = (xi >= -tol) & (eta >= -tol) & (xi + eta <= 1 + tol)
            has = inside.any(axis=1)
            first = inside.argmax(axis=1)
            rows = np.arange(len(q))
            elem[s:s + chunk] = np.where(has, first, -1)
            ref[s:s + chunk] = np.column_stack([xi[rows, first], eta[rows, first]])
        return elem, ref

    def interpolate(self, nodal: np.ndarray, xy: np.ndarray) -> np.ndarray:
        """Quadratic interpolation of nodal values (n_nodes, ...) at points (n, 2).

        Points outside the mesh give NaN.
        """
        from .fem.element import p2
        elem, ref = self.locate(xy)
        N, _ = p2(ref)                                        # (n, 6)
        vals = nodal[self.triangles[np.maximum(elem, 0)]]    # (n, 6, ...)
        out = np.einsum("na,na...->n...", N, vals)
        out[elem < 0] = np.nan
        return out

    @property
    def h(self) -> float:
        """Mesh size: the largest element edge length, m."""
        p = self.points[self.triangles[:, :3]]
        lengths = np.linalg.norm(p - np.roll(p, 1, axis=1), axis=2)
        return float(lengths.max())

    # ------------------------------------------------------------------ I/O
    def to_meshio(self):
        import meshio
        cells = [("triangle6", self.triangles)]
        cell_sets = {}
        tags = [self.region]
        lines = []
        line_tags = []
        for i, (name, seg) in enumerate(self.edges.items()):
            lines.append(seg)
            line_tags.append(np.full(len(seg), i, dtype=np.int64))
        if lines:
            cells.append(("line3", np.concatenate(lines)))
            tags.append(np.concatenate(line_tags))
        n_tri = len(self.triangles)
        for rid, name in enumerate(self.region_names):
            sets = [np.flatnonzero(self.region == rid)]
            if lines:
                sets.append(np.array([], dtype=np.int64))
            cell_sets[name] = sets
        offset = 0
        for i, (name, seg) in enumerate(self.edges.items()):
            sets = [np.array([], dtype=np.int64)]
            sets.append(np.arange(offset, offset + len(seg)))
            offset += len(seg)
            cell_sets[name] = sets
        del n_tri
        pts = np.column_stack([self.points, np.zeros(self.n_nodes)])
        return meshio.Mesh(pts, cells, cell_sets=cell_sets)

    def write(self, path: str | Path) -> None:
        """Write the mesh (``.msh`` as Gmsh 2.2 ASCII with named groups, or any meshio format)."""
        path = Path(path)
        if path.suffix == ".msh":
            write_msh22(self, path)
        else:
            self.to_meshio().write(path)


def refine(mesh: Mesh) -> Mesh:
    """Split every triangle into four at its mid-side nodes (uniform refinement).

    The new mid-side nodes sit at the middle of the new straight sides; named edges are split
    in two. Element size halves everywhere, so a run on the refined mesh shows how much the
    answer still depends on the mesh.
    """
    t = mesh.triangles
    # Corner-level triangles of the refined mesh: (ne, 4, 3) in old node ids.
    c0, c1, c2, m01, m12, m20 = t.T
    sub = np.stack([np.stack([c0, m01, m20], 1), np.stack([m01, c1, m12], 1),
                    np.stack([m20, m12, c2], 1), np.stack([m01, m12, m20], 1)], axis=1)
    sub = sub.reshape(-1, 3)
    pairs = np.sort(np.stack([sub[:, [0, 1]], sub[:, [1, 2]], sub[:, [2, 0]]], axis=1), axis=2)
    keys = pairs[..., 0] * mesh.n_nodes + pairs[..., 1]            # (4 ne, 3)
    uniq, inv = np.unique(keys.ravel(), return_inverse=True)
    a, b = uniq // mesh.n_nodes, uniq % mesh.n_nodes
    new_pts = 0.5 * (mesh.points[a] + mesh.points[b])
    mids = mesh.n_nodes + inv.reshape(-1, 3)
    tri = np.concatenate([sub, mids], axis=1)
    region = np.repeat(mesh.region, 4)
    edges = {}
    for name, seg in mesh.edges.items():
        halves = np.concatenate([seg[:, [0, 2]], seg[:, [2, 1]]])
        k = np.sort(halves, axis=1)
        pos = np.searchsorted(uniq, k[:, 0] * mesh.n_nodes + k[:, 1])
        edges[name] = np.column_stack([halves, mesh.n_nodes + pos])
    return Mesh(np.concatenate([mesh.points, new_pts]), tri, region, list(mesh.region_names),
                edges, source=mesh.source)


def write_msh22(mesh: Mesh, path: Path) -> None:
    """Gmsh 2.2 ASCII with physical names: surfaces are regions, curves are edges."""
    lines = ["$MeshFormat", "2.2 0 8", "$EndMeshFormat", "$PhysicalNames"]
    nreg = len(mesh.region_names)
    edge_names = list(mesh.edges)
    lines.append(str(nreg + len(edge_names)))
    for i, name in enumerate(edge_names):
        lines.append(f'1 {i + 1} "{name}"')
    for i, name in enumerate(mesh.region_names):
        lines.append(f'2 {len(edge_names) + i + 1} "{name}"')
    lines += ["$EndPhysicalNames", "$Nodes", str(mesh.n_nodes)]
    lines += [f"{i + 1} {x:.17g} {y:.17g} 0" for i, (x, y) in enumerate(mesh.points)]
    lines += ["$EndNodes", "$Elements"]
    body = []
    k = 1
    for i, name in enumerate(edge_names):
        for seg in mesh.edges[name] + 1:
            body.append(f"{k} 8 2 {i + 1} {i + 1} {seg[0]} {seg[1]} {seg[2]}")
            k += 1
    for tri, reg in zip(mesh.triangles + 1, mesh.region):
        tag = len(edge_names) + reg + 1
        body.append(f"{k} 9 2 {tag} {tag} " + " ".join(map(str, tri)))
        k += 1
    lines += [str(len(body))] + body + ["$EndElements"]
    path.write_text("\n".join(lines) + "\n")


def read_mesh_file(path: str | Path) -> Mesh:
    """Read a Gmsh ``.msh`` (any version meshio reads) whose physical groups are named.

    Surfaces' physical groups become regions and curves' physical groups become named edges.
    A ``.geo`` file needs Gmsh to mesh it first: :func:`solver.geometry.read_mesh` reads both.
    """
    path = Path(path)
    if not path.exists():
        raise MeshError("file not found", source=str(path), fix="check the path to the mesh file.")
    suffix = path.suffix.lower()
    if suffix == ".geo":
        raise MeshError("a .geo file is a geometry, not a mesh", source=str(path),
                        fix="read it with solver.geometry.read_mesh, which meshes it with Gmsh.")
    import meshio
    try:
        m = meshio.read(path, file_format="gmsh") if suffix == ".msh" else meshio.read(path)
    except (Exception, SystemExit) as exc:  # meshio raises many kinds (and can exit):
        raise MeshError(f"cannot read the mesh: {exc}", source=str(path),  # one message
                        fix="give a Gmsh .msh file (format 2.2 or 4.1).") from None
    return mesh_from_meshio(m, source=str(path))


def mesh_from_meshio(m, source: str | None = None) -> Mesh:
    """Build a Mesh from a meshio mesh with named physical groups (Gmsh files)."""
    where = source or "mesh"
    names = {}  # physical tag -> (name, dim)
    for name, (tag, dim) in (m.field_data or {}).items():
        names[int(tag)] = (name, int(dim))
    phys = m.cell_data.get("gmsh:physical")
    if phys is None or not names:
        raise MeshError("the mesh has no named physical groups", source=where,
                        fix="name the physical groups in Gmsh (Physical Surface(\"clay\") = {...}).")
    tri_blocks, reg_blocks = [], []
    edges: dict[str, list] = {}
    region_names: list[str] = []
    for block, tags in zip(m.cells, phys):
        if block.type == "triangle6":
            for t in np.unique(tags):
                if int(t) not in names:
                    raise MeshError(f"surface physical group {t} has no name", source=where,
                                    fix="give every physical surface a name.")
                nm = names[int(t)][0]
                if nm not in region_names:
                    region_names.append(nm)
                sel = tags == t
                tri_blocks.append(block.data[sel])
                reg_blocks.append(np.full(sel.sum(), region_names.index(nm)))
        elif block.type == "line3":
            for t in np.unique(tags):
                if int(t) in names:
                    edges.setdefault(names[int(t)][0], []).append(block.data[tags == t])
        elif block.type in ("triangle", "line"):
            raise MeshError("the mesh is first order", source=where,
                            fix="mesh with second-order elements (Gmsh: Mesh.ElementOrder = 2).")
    if not tri_blocks:
        raise MeshError("the mesh has no 6-node triangles in a named surface", source=where,
                        fix="mesh the surfaces with second-order triangles and name them.")
    return assemble_mesh(np.asarray(m.points)[:, :2], tri_blocks, reg_blocks, region_names,
                         edges, source)


def assemble_mesh(points: np.ndarray, tri_blocks: list, reg_blocks: list,
                  region_names: list[str], edges: dict[str, list], source: str | None) -> Mesh:
    """A Mesh from blocks of 6-node triangles and named line3 segments read from a file.

    Keeps only the nodes the triangles use, numbered compactly, and turns every triangle
    counter-clockwise (Gmsh keeps the orientation of the surface, which a user's .geo may
    have flipped).
    """
    tri = np.concatenate(tri_blocks)
    reg = np.concatenate(reg_blocks)
    used = np.unique(tri)
    renum = np.full(len(points), -1, dtype=np.int64)
    renum[used] = np.arange(used.size)
    tri = renum[tri]
    edge_arr = {}
    for k, v in edges.items():
        seg = renum[np.concatenate(v)]
        if (seg < 0).any():
            raise MeshError(f"edge {k!r} has nodes that belong to no triangle",
                            source=source or "mesh",
                            fix="put named edges on the boundary of meshed surfaces.")
        edge_arr[k] = seg
    p = points[used][tri[:, :3]]
    d1, d2 = p[:, 1] - p[:, 0], p[:, 2] - p[:, 0]
    cw = (d1[:, 0] * d2[:, 1] - d1[:, 1] * d2[:, 0]) < 0
    tri[cw] = tri[cw][:, [0, 2, 1, 5, 4, 3]]
    return Mesh(points[used], tri, reg, region_names, edge_arr, source=source)
