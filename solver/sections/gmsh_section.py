"""A section plan meshed with gmsh: surfaces, fragments, and the names of regions and edges.

The names are the contract of :mod:`solver.sections` (its docstring lists them).
"""

from __future__ import annotations

from ..errors import InputError, MeshError
from ..geometry import _generate, gmsh_session
from ..mesh import Mesh
from .polygons import Point, dedupe


def build(plan, source: str) -> Mesh:
    """Mesh a finished plan with gmsh (OpenCASCADE): surfaces, fragments, named groups."""
    lifts = [_with_crest_breaks(plan, p) if i == len(plan.lifts) - 1 else p
             for i, p in enumerate(plan.lifts)]
    with gmsh_session("section") as gmsh:
        occ = gmsh.model.occ

        def surface(poly):
            pts = [occ.addPoint(x, y, 0.0) for x, y in poly]
            curves = [occ.addLine(pts[i], pts[(i + 1) % len(pts)])
                      for i in range(len(pts))]
            return occ.addPlaneSurface([occ.addCurveLoop(curves)])

        soil = [(surface(p), name) for p, name in
                zip(plan.layer_polygons(), plan.layer_names)]
        if plan.notches:
            tools = [(2, occ.addRectangle(a, -d, 0.0, b - a, d))
                     for _, a, b, d in plan.notches]
            _, pieces = occ.cut([(2, s) for s, _ in soil], tools)
            soil = [(t, name) for (_, name), out in zip(soil, pieces)
                    for d, t in out if d == 2]
        items = soil + [(surface(p), f"lift_{i + 1}") for i, p in enumerate(lifts)]
        if len(items) > 1:
            dimtags = [(2, s) for s, _ in items]
            _, pieces = occ.fragment(dimtags[:1], dimtags[1:])
            items = [(t, name) for (_, name), out in zip(items, pieces)
                     for d, t in out if d == 2]
        occ.synchronize()
        region_of = {}
        for s, name in items:
            if s in region_of and region_of[s] != name:
                raise MeshError(f"regions {region_of[s]!r} and {name!r} overlap",
                                source=source, fix="check the section's dimensions.")
            region_of[s] = name
        by_region: dict[str, list[int]] = {}
        for s, name in items:
            by_region.setdefault(name, [])
            if s not in by_region[name]:
                by_region[name].append(s)
        for name, ss in by_region.items():
            gmsh.model.addPhysicalGroup(2, ss, name=name)
        for name, cs in _classify_curves(plan, gmsh, region_of).items():
            if cs:
                gmsh.model.addPhysicalGroup(1, sorted(cs), name=name)
        top = max([0.0] + [y for p in plan.lifts for _, y in p])
        size = plan.size.sampled(plan.x_min, plan.x_max, -plan.depth, top)
        mesh = _generate(gmsh, size, source)
    clash = set(mesh.region_names) & set(mesh.edges)
    if clash:
        raise InputError(f"layer name(s) {sorted(clash)} are also edge names",
                         field="layers", source=plan.model.source,
                         fix="rename the layer(s).")
    return mesh


def _with_crest_breaks(plan, poly: list[Point]) -> list[Point]:
    if not plan.crest_breaks:
        return poly
    top = max(y for _, y in poly)
    out = []
    n = len(poly)
    for i in range(n):
        p, q = poly[i], poly[(i + 1) % n]
        out.append(p)
        if abs(p[1] - top) <= plan.tol and abs(q[1] - top) <= plan.tol:
            lo, hi = sorted((p[0], q[0]))
            inner = [x for x in plan.crest_breaks if lo + plan.tol < x < hi - plan.tol]
            out += [(x, top) for x in sorted(set(inner), reverse=p[0] > q[0])]
    return dedupe(out, closed=True)

def _classify_curves(plan, gmsh, region_of: dict[int, str]) -> dict[str, set[int]]:
    tol = 1e-7 * max(plan.x_max - plan.x_min, plan.depth, 1.0)
    lift_index = {s: int(n.split("_")[1]) for s, n in region_of.items()
                  if n.startswith("lift_")}      # layer names never start so
    soil = {s for s in region_of if s not in lift_index}
    names: dict[str, set[int]] = {}

    def put(name, c):
        names.setdefault(name, set()).add(c)

    side = "symmetry" if plan.symmetric else "left"
    for order in ("base", side, "right", "ground", "ground_free"):
        names[order] = set()
    for _, c in gmsh.model.getEntities(1):
        up, down = gmsh.model.getAdjacencies(1, c)
        up = [int(s) for s in up]
        ends = [gmsh.model.getValue(0, int(p), [])[:2] for p in down]
        if len(ends) != 2:
            continue
        (xa, ya), (xb, yb) = ends
        lo, hi = min(xa, xb), max(xa, xb)

        def horizontal(y0):
            return abs(ya - y0) <= tol and abs(yb - y0) <= tol

        def vertical(x0):
            return abs(xa - x0) <= tol and abs(xb - x0) <= tol

        def within(a, b):
            return lo >= a - tol and hi <= b + tol

        def on_line(k):
            return all(abs(y - plan.y_line(k, x)) <= tol for x, y in ends)

        n_soil = sum(s in soil for s in up)
        lifts_here = [lift_index[s] for s in up if s in lift_index]
        exposed = len(up) == 1
        on_axis = plan.symmetric and vertical(0.0)
        if on_line(len(plan.lines) - 1):
            put("base", c)
        if vertical(plan.x_min):
            put(side, c)
        if vertical(plan.x_max):
            put("right", c)
        if horizontal(0.0) and n_soil:
            put("ground", c)
            under_footing = any(within(a, b) for _, a, b in plan.surface_footings)
            if not lifts_here and not under_footing:
                put("ground_free", c)
        for name, a, b in plan.surface_footings:
            if horizontal(0.0) and n_soil and within(a, b):
                put(f"footing_{name}", c)
        for name, a, b, d in plan.notches:
            if horizontal(-d) and exposed and n_soil and within(a, b):
                put(f"footing_{name}", c)
            for xw in (a, b):
                if (vertical(xw) and exposed and not on_axis
                        and min(ya, yb) >= -d - tol and max(ya, yb) <= tol):
                    put("excavation_walls", c)
        for k in range(1, len(plan.layer_names)):
            if n_soil == 2 and on_line(k):
                put(f"interface_{k}", c)
        if lifts_here and not n_soil and not on_axis:
            # Exposed when its lowest bordering lift is placed (not that lift's bottom).
            put(f"lift_{min(lifts_here)}_top", c)
            if exposed:
                put("embankment_surface", c)
        for ld in plan.loads:
            if horizontal(ld.y) and exposed and within(ld.x0, ld.x1):
                put(f"load_{ld.name}", c)
    return names
