"""Gmsh builders for parametric sections, returning a :class:`~solver.mesh.Mesh`, and the
reading of a user's mesh or geometry file (a ``.geo`` is meshed here, by Gmsh).

Coordinates: x horizontal (or radius), y elevation, up positive, in m. Every builder names its
regions (physical surfaces) and edges (physical curves); second-order (6-node) triangles.
"""

from __future__ import annotations

import contextlib
from pathlib import Path
from typing import Callable, Sequence

import numpy as np

from .errors import MeshError
from .mesh import Mesh, assemble_mesh, read_mesh_file

SizeFunction = Callable[[float, float], float]


@contextlib.contextmanager
def gmsh_session(name: str = "poroplane"):
    """An initialised, quiet gmsh with one model; always finalised."""
    import gmsh
    started = not gmsh.isInitialized()
    if started:
        gmsh.initialize(interruptible=False)
    gmsh.option.setNumber("General.Terminal", 0)
    gmsh.model.add(name)
    try:
        yield gmsh
    finally:
        gmsh.model.remove()
        if started:
            gmsh.finalize()


def extract_mesh(gmsh, source: str | None = None) -> Mesh:
    """Read the current gmsh model's second-order mesh and its named physical groups."""
    tags, coords, _ = gmsh.model.mesh.getNodes()
    pts = coords.reshape(-1, 3)[:, :2]
    index = np.full(int(tags.max()) + 1, -1, dtype=np.int64)
    index[tags.astype(np.int64)] = np.arange(tags.size)
    region_names, tri_blocks, reg_blocks = [], [], []
    edges: dict[str, list] = {}
    for dim, ptag in gmsh.model.getPhysicalGroups():
        name = gmsh.model.getPhysicalName(dim, ptag)
        if not name:
            raise MeshError(f"physical group ({dim}, {ptag}) has no name", source=source,
                            fix="name every physical group.")
        for ent in gmsh.model.getEntitiesForPhysicalGroup(dim, ptag):
            types, _, node_tags = gmsh.model.mesh.getElements(dim, ent)
            for ty, nt in zip(types, node_tags):
                nt = index[nt.astype(np.int64)]
                if dim == 2 and ty == 9:
                    if name not in region_names:
                        region_names.append(name)
                    blk = nt.reshape(-1, 6)
                    tri_blocks.append(blk)
                    reg_blocks.append(np.full(len(blk), region_names.index(name)))
                elif dim == 1 and ty == 8:
                    edges.setdefault(name, []).append(nt.reshape(-1, 3))
                elif dim == 2 or dim == 1:
                    raise MeshError(f"group {name!r} holds gmsh element type {ty}, expected "
                                    "second-order triangles/lines", source=source,
                                    fix="mesh with triangles of order 2.")
    if not tri_blocks:
        raise MeshError("no named surface was meshed", source=source,
                        fix="add a physical surface with a name.")
    return assemble_mesh(pts, tri_blocks, reg_blocks, region_names, edges, source)


def _generate(gmsh, size: SizeFunction | float, source=None, algorithm: int = 6) -> Mesh:
    gmsh.model.occ.synchronize() if gmsh.model.occ.getEntities(2) else None
    if callable(size):
        gmsh.option.setNumber("Mesh.MeshSizeExtendFromBoundary", 0)
        gmsh.option.setNumber("Mesh.MeshSizeFromPoints", 0)
        gmsh.option.setNumber("Mesh.MeshSizeFromCurvature", 0)
        gmsh.model.mesh.setSizeCallback(lambda dim, tag, x, y, z, lc: float(size(x, y)))
    else:
        gmsh.option.setNumber("Mesh.MeshSizeMax", float(size))
        gmsh.option.setNumber("Mesh.MeshSizeMin", float(size))
    gmsh.option.setNumber("Mesh.Algorithm", algorithm)
    gmsh.option.setNumber("Mesh.ElementOrder", 2)
    gmsh.option.setNumber("Mesh.SecondOrderLinear", 1)  # straight-sided: mid-nodes at mid-sides
    gmsh.model.mesh.generate(2)
    return extract_mesh(gmsh, source)


def _name_boxes(gmsh, groups: dict[str, list[tuple[float, float, float, float]]], eps=1e-7):
    """Physical curves from bounding boxes (xmin, ymin, xmax, ymax) of the curves they hold."""
    for name, boxes in groups.items():
        tags = []
        for (x0, y0, x1, y1) in boxes:
            ents = gmsh.model.getEntitiesInBoundingBox(x0 - eps, y0 - eps, -eps,
                                                       x1 + eps, y1 + eps, eps, 1)
            tags += [t for _, t in ents]
        if tags:
            gmsh.model.addPhysicalGroup(1, sorted(set(tags)), name=name)


def layered_rectangle(width: float, layers: Sequence[tuple[str, float]], size,
                      x0: float = 0.0, top: float = 0.0,
                      surface_breaks: Sequence[float] = (),
                      transfinite: tuple[int, Sequence[int]] | None = None) -> Mesh:
    """A rectangle [x0, x0 + width] x [top - sum(thickness), top] in horizontal layers.

    Parameters
    ----------
    layers : (region name, thickness m) from the top down; equal names share a region.
    size : element size, m, or a function (x, y) -> size.
    surface_breaks : x positions where the top edge is split; each piece between breaks is named
        ``surface_0``, ``surface_1``, ... and the whole top is ``top``.
    transfinite : (nx, [ny per layer]) for a structured mesh (used for 1D columns).

    Edges: ``top``, ``bottom``, ``left``, ``right``, ``surface_i``; interfaces ``interface_i``.
    """
    y = top - np.concatenate([[0.0], np.cumsum([t for _, t in layers])])
    xs = np.unique(np.concatenate([[x0, x0 + width], np.asarray(surface_breaks, float)]))
    with gmsh_session() as gmsh:
        geo = gmsh.model.geo
        # Points on every horizontal line; the top line alone carries the breaks.
        pts = {}
        for j, yj in enumerate(y):
            for xi in (xs if j == 0 else [x0, x0 + width]):
                pts[(round(xi, 9), j)] = geo.addPoint(xi, yj, 0)
        hlines = []
        for j in range(len(y)):
            row = xs if j == 0 else np.array([x0, x0 + width])
            hlines.append([geo.addLine(pts[(round(a, 9), j)], pts[(round(b, 9), j)])
                           for a, b in zip(row[:-1], row[1:])])
        left = [geo.addLine(pts[(round(x0, 9), j + 1)], pts[(round(x0, 9), j)])
                for j in range(len(layers))]
        right = [geo.addLine(pts[(round(x0 + width, 9), j)], pts[(round(x0 + width, 9), j + 1)])
                 for j in range(len(layers))]
        surfaces: dict[str, list[int]] = {}
        for j, (name, _) in enumerate(layers):
            loop = [-c for c in reversed(hlines[j])]  # top edge, right to left... built below
            # counter-clockwise: bottom (left->right), right (up), top (right->left), left (down)
            loop = hlines[j + 1] + [-right[j]] + [-c for c in reversed(hlines[j])] + [-left[j]]
            cl = geo.addCurveLoop(loop)
            s = geo.addPlaneSurface([cl])
            surfaces.setdefault(name, []).append(s)
            if transfinite is not None:
                nx, nys = transfinite
                geo.synchronize()
                for c in hlines[j] + hlines[j + 1]:
                    geo.mesh.setTransfiniteCurve(c, nx + 1)
                for c in (left[j], right[j]):
                    geo.mesh.setTransfiniteCurve(c, nys[j] + 1)
                geo.mesh.setTransfiniteSurface(s)
        geo.synchronize()
        for name, ss in surfaces.items():
            gmsh.model.addPhysicalGroup(2, ss, name=name)
        gmsh.model.addPhysicalGroup(1, hlines[0], name="top")
        gmsh.model.addPhysicalGroup(1, hlines[-1], name="bottom")
        gmsh.model.addPhysicalGroup(1, left, name="left")
        gmsh.model.addPhysicalGroup(1, right, name="right")
        if len(xs) > 2:
            for i, c in enumerate(hlines[0]):
                gmsh.model.addPhysicalGroup(1, [c], name=f"surface_{i}")
        for j in range(1, len(layers)):
            gmsh.model.addPhysicalGroup(1, hlines[j], name=f"interface_{j}")
        if transfinite is not None:
            gmsh.option.setNumber("Mesh.MeshSizeMax", 1e22)
            gmsh.option.setNumber("Mesh.ElementOrder", 2)
            gmsh.option.setNumber("Mesh.SecondOrderLinear", 1)
            gmsh.model.mesh.generate(2)
            return extract_mesh(gmsh, "layered rectangle")
        return _generate(gmsh, size, "layered rectangle")


def column(height: float, n_elements: int = 20, width: float | None = None,
           layers: Sequence[tuple[str, float]] | None = None, x0: float = 0.0) -> Mesh:
    """A one-dimensional soil column of structured triangles, top at y = 0.

    ``n_elements`` rows over the height (2 triangles each). Edges top, bottom, left, right.
    """
    layers = list(layers) if layers else [("soil", height)]
    total = sum(t for _, t in layers)
    if width is None:
        width = total / n_elements
    nys = [max(1, int(round(n_elements * t / total))) for _, t in layers]
    return layered_rectangle(width, layers, size=width, x0=x0, transfinite=(1, nys))


def strip_load_section(half_width: float, depth: float, load_half_width: float,
                       size_near: float, size_far: float | None = None,
                       layers: Sequence[tuple[str, float]] | None = None) -> Mesh:
    """Half of a section under a strip load, symmetric about x = 0: [0, half_width] x [-depth, 0].

    Edges: ``load`` (0 <= x <= load_half_width on the surface), ``surface_free`` (rest of the
    top), ``top``, ``bottom``, ``left`` (the centre line), ``right``. The mesh grades from
    ``size_near`` at the loaded edge's corner to ``size_far`` far away.
    """
    layers = list(layers) if layers else [("soil", depth)]
    size_far = size_far or 10 * size_near
    b = load_half_width

    def size(x, y):
        d = np.hypot(max(x - b, 0.0), y)
        return min(size_far, size_near * (1 + 0.5 * d / b)) if b > 0 else size_far

    m = layered_rectangle(half_width, layers, size, surface_breaks=[b])
    m.edges["load"] = m.edges.pop("surface_0")
    m.edges["surface_free"] = m.edges.pop("surface_1")
    return m


def mesh_geo_file(path: Path, before_meshing: Callable | None = None) -> Mesh:
    """Mesh a Gmsh ``.geo`` file with second-order triangles and read its named groups.

    ``before_meshing(gmsh)``, when given, runs once the file is open (to add size fields).
    """
    with gmsh_session() as gmsh:
        try:
            gmsh.open(str(path))
        except Exception as exc:
            raise MeshError(f"gmsh cannot read it: {exc}", source=str(path),
                            fix="open the file in Gmsh and fix the reported line.") from None
        if before_meshing is not None:
            before_meshing(gmsh)
        gmsh.option.setNumber("Mesh.ElementOrder", 2)
        gmsh.option.setNumber("Mesh.SecondOrderLinear", 1)
        gmsh.model.mesh.generate(2)
        return extract_mesh(gmsh, str(path))


def read_mesh(path: str | Path, trust_geo: bool = False) -> Mesh:
    """A user's mesh file: a Gmsh ``.msh`` read as it is (:func:`solver.mesh.read_mesh_file`),
    or a ``.geo`` meshed on the fly with Gmsh (second order, :func:`mesh_geo_file`).

    Surfaces' physical groups become regions and curves' physical groups become named edges.
    A ``.geo`` that runs programs, writes files or reads other files is refused unless
    ``trust_geo`` (see :mod:`solver.geo_script`).
    """
    path = Path(path)
    if path.suffix.lower() == ".geo" and path.exists():
        if not trust_geo:
            from .geo_script import check_geo_file
            check_geo_file(path)
        return mesh_geo_file(path)
    return read_mesh_file(path)
