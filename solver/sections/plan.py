"""The plan of a parametric section: extent, layer lines, lifts, notches, loads and sizes.

Everything a section needs before gmsh; :meth:`Plan.mesh` hands it to
:func:`solver.sections.gmsh_section.build`.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ..errors import InputError
from ..mesh import Mesh
from ..model import MAX_ELEMENTS, base_elevation, domain_extent, loaded_spans
from . import gmsh_section
from .grading import add_grading
from .limits import refuse_count
from .polygons import Point, dedupe, inside
from .sizes import EDGE_FACTOR, FAR_FACTOR, GROWTH, SHAPE_GROWTH, SizeField


def resolve_extent(model) -> tuple[float, float, float]:
    """(x_min, x_max, depth) of the meshed domain, m: ``solver.model.domain_extent``.

    One rule (see that function and docs/model.md) serves the mesh, the probes and the
    warnings alike; this only refuses an extent that cannot be meshed.
    """
    ext = domain_extent(model)
    if ext is None:
        raise InputError("the extent of the section is unknown", field="section.depth",
                         source=model.source,
                         fix="give layers (their thicknesses set the depth) or section.depth.")
    x_min, x_max, depth = (float(v) for v in ext)
    if not x_max > x_min:
        raise InputError(f"the domain runs from x = {x_min:g} to {x_max:g} m",
                         field="section.width", source=model.source,
                         fix="give a positive width.")
    if not depth > 0:
        raise InputError(f"depth {depth:g} m", field="section.depth", source=model.source,
                         fix="give a positive depth.")
    return x_min, x_max, depth


def default_mesh_size(model) -> float:
    """The finest near-load size, m: ``section.mesh_size``, else the narrowest loaded width
    / 10; without any load (a uniform mesh) the total layer thickness / 10."""
    sec = model.section
    if sec.mesh_size is not None:
        if sec.mesh_size <= 0:
            raise InputError(f"mesh_size {sec.mesh_size:g} m", field="section.mesh_size",
                             source=model.source, fix="give a positive size or leave it out.")
        return float(sec.mesh_size)
    widths = [w for w in _loaded_widths(model) if w > 0]
    if widths:
        return min(widths) / 10
    return _total_thickness(model) / 10


@dataclass
class LoadPlace:
    name: str
    x0: float
    x1: float
    y: float = 0.0      # elevation of the loaded surface (the crest for a load on it)
    h: float = 1.0      # size near it, m
    where: str = "loads"
    h_source: str = "section.mesh_size"   # the field that sets h


@dataclass
class Plan:
    """Everything a section needs before gmsh: extent, layer lines, lifts, notches, loads."""
    model: object
    x_min: float
    x_max: float
    depth: float
    symmetric: bool
    axisymmetric: bool
    lines: list[tuple[float, float]]        # y at (x_min, x_max) of the top, interfaces, base
    layer_names: list[str]
    size: SizeField
    loads: list[LoadPlace] = field(default_factory=list)
    lifts: list[list[Point]] = field(default_factory=list)
    notches: list[tuple[str, float, float, float]] = field(default_factory=list)
    surface_footings: list[tuple[str, float, float]] = field(default_factory=list)
    # loaded spans: x from, x to, size near, elevation of the loaded surface
    footprints: list[tuple[float, float, float, float]] = field(default_factory=list)
    crest_breaks: list[float] = field(default_factory=list)
    near_source: str = "section.mesh_size"   # the field that sets the size near the loads
    finished: bool = False
    graded: list = field(default_factory=list)   # the graded boundary pieces (grading.py)
    count: tuple = (0.0, {})                     # estimated triangles, by field (finish)

    @property
    def tol(self) -> float:
        return 1e-9 * max(self.x_max - self.x_min, self.depth, 1.0)

    # --------------------------------------------------------------- set-up
    @classmethod
    def start(cls, model) -> "Plan":
        src = model.source
        if not model.layers:
            raise InputError("the section has no layers", field="layers", source=src,
                             fix="give at least one [[layers]] entry (name, material, "
                                 "thickness).")
        x_min, x_max, depth = resolve_extent(model)
        base = (base_elevation(model, x_min), base_elevation(model, x_max))
        if base[0] is None or base[1] is None:
            base = (-depth, -depth)
        lines = _layer_lines(model, base)
        depth = -min(base)
        names = [lay.name for lay in model.layers]
        for n in names:
            if n.startswith("lift_"):
                raise InputError(f"layer name {n!r} is kept for embankment lifts",
                                 field="layers", source=src, fix="rename the layer.")
        plan = cls(model, x_min, x_max, depth, is_symmetric(model),
                   model.analysis == "axisymmetric", lines, names, SizeField())
        for i, ld in enumerate(model.loads):
            x0, x1 = sorted((float(ld.x_left), float(ld.x_right)))
            where = f"loads[{i + 1}]"
            if x1 - x0 <= plan.tol:
                raise InputError(f"surface load {ld.name!r} has no width", field=where,
                                 source=src, fix="give x_right > x_left.")
            if plan.symmetric:
                if x1 <= plan.tol:
                    raise InputError(f"surface load {ld.name!r} lies at x < 0 of a half "
                                     "or axisymmetric model", field=where, source=src,
                                     fix="give x >= 0 (the model mirrors about x = 0).")
                width = 2 * x1 if x0 <= plan.tol else x1 - x0   # with its mirror image
                x0 = max(x0, 0.0)
            else:
                width = x1 - x0
            plan.check_inside(x0, x1, where)
            plan.loads.append(LoadPlace(ld.name, x0, x1, h=plan.near(width), where=where,
                                        h_source=plan.near_field(where)))
        return plan

    def near_field(self, width_field: str) -> str:
        """The field that sets the near size of a load whose width is ``width_field``."""
        return "section.mesh_size" if self.model.section.mesh_size is not None else width_field

    def near(self, width: float) -> float:
        """Element size near a load of this (physical) width, m."""
        given = self.model.section.mesh_size
        if given is not None:
            if given <= 0:
                raise InputError(f"mesh_size {given:g} m", field="section.mesh_size",
                                 source=self.model.source,
                                 fix="give a positive size or leave it out.")
            return float(given)
        return width / 10

    def check_inside(self, x0: float, x1: float, where: str) -> None:
        if x0 < self.x_min - self.tol or x1 > self.x_max + self.tol:
            raise InputError(f"{x0:g} to {x1:g} m lies outside the model, x = {self.x_min:g} "
                             f"to {self.x_max:g} m", field=where, source=self.model.source,
                             fix="make section.width larger or leave it out.")

    def y_line(self, k: int, x: float) -> float:
        yl, yr = self.lines[k]
        return yl + (yr - yl) * (x - self.x_min) / (self.x_max - self.x_min)

    # --------------------------------------------------------------- sizes
    def loaded_spans(self) -> list[tuple[float, float, float, float]]:
        """(x from, x to, size near, elevation of the loaded surface) of each loaded span:
        the footprints (embankment, footings) and the surface loads on the ground."""
        return list(self.footprints) + [(ld.x0, ld.x1, ld.h, 0.0) for ld in self.loads
                                        if ld.y == 0.0]

    def finish(self, limit: float | None = None, refuse: bool = True) -> None:
        """Complete the size field (once): loads, layers, the far size; then, unless the
        estimated count exceeds ``limit`` (None: ``section.max_elements``, else
        :data:`solver.model.MAX_ELEMENTS`), the grading toward draining boundaries within its
        budget and the limit. Over the limit: :class:`InputError` when ``refuse``, else the
        plan stays ungraded. ``self.count`` is the estimate, (count, {field: count})."""
        if self.finished:
            return
        self.finished = True
        self._finish_sizes()
        if limit is None:
            limit = self.model.section.max_elements or MAX_ELEMENTS
        self.count = self.element_count()
        if self.count[0] > limit:
            if refuse:
                refuse_count(self, *self.count, limit)
            return
        self.graded = add_grading(self, lambda _: self.element_count()[0],
                                  base=self.count[0], cap=limit)
        if self.graded:
            self.count = self.element_count()

    def element_count(self) -> tuple[float, dict[str, float]]:
        """(count, {source field: count}): the size field integrated over the section."""
        top = max([0.0] + [y for p in self.lifts for _, y in p])
        return self.size.element_count(self.x_min, self.x_max, -self.depth, top,
                                       self.inside_domain)

    def _finish_sizes(self) -> None:
        spans = self.loaded_spans()
        for ld in self.loads:
            h0 = ld.h
            self.size.add_segment(ld.x0, ld.y, ld.x1, ld.y, h0, source=ld.h_source)
            for x in (ld.x0, ld.x1):
                if not (self.symmetric and abs(x) <= self.tol):
                    self.size.add_point(x, ld.y, EDGE_FACTOR * h0, source=ld.h_source)
        # Under each loaded span: every layer at most a third of its (mean) thickness, every
        # interface at the load's size; both relax to half the growth rate times their depth
        # below the loaded surface, so that deep lines under a narrow load stay coarse.
        n = len(self.layer_names)
        near_source = self.near_source
        for a, b, h0, y_load in spans:
            for j in range(n):
                top = (self.y_line(j, a), self.y_line(j, b))
                bot = (self.y_line(j + 1, a), self.y_line(j + 1, b))
                t = 0.5 * ((top[0] - bot[0]) + (top[1] - bot[1]))
                relax = 0.5 * GROWTH * (y_load - max(top))
                cap = max(t / 3, relax, h0 / 10)
                if cap < h0:
                    poly = dedupe([(a, bot[0]), (b, bot[1]), (b, top[1]), (a, top[0])],
                                  closed=True)
                    if len(poly) >= 3:
                        self.size.add_polygon(poly, cap, source=f"layers[{j + 1}].thickness")
                if 0 < j:
                    self.size.add_segment(a, top[0], b, top[1], max(h0, relax),
                                          source=near_source)
        # Everywhere: no element much longer than its layer is thick (no slivers far away);
        # a layer with its own mesh_size keeps it throughout.
        for j in range(n):
            (tl, tr), (bl, br) = self.lines[j], self.lines[j + 1]
            poly = dedupe([(self.x_min, bl), (self.x_max, br), (self.x_max, tr),
                           (self.x_min, tl)], closed=True)
            self.size.add_polygon(poly, 0.5 * ((tl - bl) + (tr - br)), SHAPE_GROWTH,
                                  source=f"layers[{j + 1}].thickness")
            own = self.model.layers[j].mesh_size
            if own is not None and len(poly) >= 3:
                self.size.add_polygon(poly, float(own), source=f"layers[{j + 1}].mesh_size")
        if spans:
            self.size.far = FAR_FACTOR * max(sp[2] for sp in spans)
        else:
            self.size.far = default_mesh_size(self.model)   # nothing loaded: uniform
        self.size.far_source = extent_source(self.model)

    # --------------------------------------------------------------- gmsh
    def layer_polygons(self) -> list[list[Point]]:
        breaks = sorted({x for ld in self.loads if ld.y == 0.0 for x in (ld.x0, ld.x1)}
                        | {x for _, a, b in self.surface_footings for x in (a, b)})
        breaks = [x for x in breaks if self.x_min + self.tol < x < self.x_max - self.tol]
        polys = []
        for j in range(len(self.layer_names)):
            (tl, tr), (bl, br) = self.lines[j], self.lines[j + 1]
            pts = [(self.x_min, bl), (self.x_max, br), (self.x_max, tr)]
            if j == 0:
                pts += [(x, 0.0) for x in reversed(breaks)]
            pts.append((self.x_min, tl))
            polys.append(dedupe(pts, closed=True))
        return polys

    def inside_domain(self, x: np.ndarray, y: np.ndarray) -> np.ndarray:
        """Which points (arrays) lie in the section: ground above the base, out of the
        notches, or in a lift."""
        base = self.lines[-1]
        s = (x - self.x_min) / (self.x_max - self.x_min)
        ok = (y <= 0.0) & (y >= base[0] + (base[1] - base[0]) * s) & \
            (x >= self.x_min) & (x <= self.x_max)
        for _, a, b, d in self.notches:
            ok &= ~((x > a) & (x < b) & (y > -d))
        for poly in self.lifts:
            ok |= inside(poly, x, y)
        return ok

    def mesh(self, source: str) -> Mesh:
        self.finish()
        return gmsh_section.build(self, source)


def extent_source(model) -> str:
    """The field that sets the width of the domain: section.width, else what is loaded."""
    sec = model.section
    if sec.width is not None:
        return "section.width"
    reach: list[tuple[float, str]] = []       # (how far it reaches from x = 0, m; field)
    emb = sec.embankment if sec.kind == "embankment" else None
    if emb is not None:
        path = "section.embankment"
        reach += [(abs(emb.crest_width) / 2, f"{path}.crest_width"),
                  (abs(emb.side_slope * emb.height), f"{path}.side_slope"),
                  (sum(abs(b.width) for b in emb.berms), f"{path}.berms")]
    if sec.kind == "footings":
        for i, f in enumerate(sec.footings):
            path = f"section.footings[{i + 1}]"
            reach += [(abs(f.center), f"{path}.center"), (abs(f.width) / 2, f"{path}.width")]
    for i, ld in enumerate(model.loads):
        reach += [(abs(ld.x_left), f"loads[{i + 1}].x_left"),
                  (abs(ld.x_right), f"loads[{i + 1}].x_right")]
    reach = [r for r in reach if r[0] == r[0]]      # NaN out
    return max(reach)[1] if reach else "layers"


def is_symmetric(model) -> bool:
    return bool(model.section.half) or model.analysis == "axisymmetric"


def _total_thickness(model) -> float:
    left = sum(float(lay.thickness) for lay in model.layers)
    right = sum(float(lay.thickness if lay.thickness_right is None else lay.thickness_right)
                for lay in model.layers)
    return max(left, right)


def _layer_lines(model, base: tuple[float, float]) -> list[tuple[float, float]]:
    """y at (left, right) of the ground, each interface and the base.

    ``base``: elevations of the model's base at the left and right sides, m (from
    ``solver.model.base_elevation``: the bottom layer's base, sloping when the left and right
    sums differ); the bottom layer reaches down to it.
    """
    for j, lay in enumerate(model.layers):
        tl = float(lay.thickness)
        tr = tl if lay.thickness_right is None else float(lay.thickness_right)
        if tl < 0 or tr < 0 or (tl == 0 and tr == 0):
            raise InputError(f"layer {lay.name!r} has thickness {tl:g} m (left) and {tr:g} m "
                             "(right)", field=f"layers[{j + 1}]", source=model.source,
                             fix="give thicknesses >= 0, not both zero.")
    lines = [(0.0, 0.0)]
    yl = yr = 0.0
    tol = 1e-9 * max(-min(base), 1.0)
    for j, lay in enumerate(model.layers[:-1]):
        tl = float(lay.thickness)
        tr = tl if lay.thickness_right is None else float(lay.thickness_right)
        yl, yr = yl - tl, yr - tr
        if yl < base[0] - tol or yr < base[1] - tol or (yl <= base[0] + tol
                                                        and yr <= base[1] + tol):
            raise InputError(f"the base of layer {lay.name!r} ({-yl:g} m left, {-yr:g} m "
                             f"right) is not above the base of the model ({-base[0]:g} m "
                             f"left, {-base[1]:g} m right)", field=f"layers[{j + 1}]",
                             source=model.source,
                             fix="check the layer thicknesses (and section.depth).")
        lines.append((yl, yr))
    lines.append((float(base[0]), float(base[1])))
    return lines




def _loaded_widths(model) -> list[float]:
    """Physical widths of the loads (a load cut by the symmetry line counts whole)."""
    symmetric = is_symmetric(model)
    out = []
    for a, b in loaded_spans(model):
        if symmetric and a <= 0 < b:
            out.append(2 * max(-a, b))     # the mirror image makes it one load
        else:
            out.append(b - a)
    return out
