"""Meshes of the model's section: embankment with lifts and berms, footings, layered ground.

:func:`build_mesh` turns ``model.section`` into a :class:`~solver.mesh.Mesh` of second-order,
straight-sided triangles, built with the gmsh OpenCASCADE kernel (every polygon made on its
own, then fragmented so that layers, lifts and notches share conforming boundaries).

Geometry
--------
x horizontal (radius in axisymmetry), y elevation, up positive, m. The original ground surface
is y = 0 and the layers go down from it in ``model.layers`` order. Layer j's base lies at
``-sum(thickness[:j+1])`` at the left side x_min and at ``-sum(thickness_right[:j+1])`` at the
right side x_max (``thickness_right`` None: same as ``thickness``), straight in between. The
bottom layer reaches the base of the model, :func:`solver.model.base_elevation` (the bottom
layer's own base: sloping when the left and right sums differ). The extent (x_min, x_max,
depth) is :func:`solver.model.domain_extent`.

Names (the solver attaches materials and boundary conditions by them)
---------------------------------------------------------------------
Regions: each layer's ``name`` (equal names share a region); ``lift_1``, ``lift_2``, ... the
embankment (berms included) cut at the lift elevations, numbered from the bottom.

Edges: ``base`` (the bottom, y = -depth when flat); ``left``, ``right`` (sides; the side at
x = 0 of a half or axisymmetric model is ``symmetry``, and it runs up through the embankment);
``ground`` (all of the original surface y = 0 that remains, under the embankment too);
``ground_free`` (the part of ``ground`` under neither the embankment nor a footing);
``footing_<name>`` (each footing's base); ``excavation_walls`` (the vertical walls of the
notches of embedded footings); ``lift_<i>_top`` (the surface of lift i exposed when it is
placed: its crest part and its slopes and benches, not the symmetry line);
``embankment_surface`` (the final exposed surface of the embankment); ``interface_<j>``
(between layer j and j + 1, from 1; only where both layers meet); ``load_<name>`` (the loaded
part of the surface of each ``SurfaceLoad``: on the ground, or on the embankment crest when
the load lies on it).

Mesh size
---------
Each load has its near size h0 = ``section.mesh_size``, by default its own width / 10 (an
embankment: its base width, toe to toe; a footing: its width; a surface load: its width, the
mirror image included). h0 holds along the loaded surface and half of it at load edges (toes,
crest edges, bench corners, footing corners, load ends). Inside each lift the size is at most
half the lift's thickness. Under the load every layer is at most a third of its thickness and
every interface at h0; both relax with depth below a narrow load. The size grows linearly
with distance from these places (``GROWTH`` m per m) up to ``FAR_FACTOR`` times the largest
h0, and no element is much longer than its layer is thick.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from pathlib import Path
from typing import Sequence

import numpy as np

from .errors import InputError, MeshError
from .geometry import _generate, gmsh_session
from .mesh import Mesh, read_mesh
from .model import base_elevation, domain_extent, embankment_profile, loaded_spans

GROWTH = 0.3        # increase of element size per unit distance from a refined place, m/m
SHAPE_GROWTH = 0.6  # the same away from a thin layer far from the load (only against slivers)
FAR_FACTOR = 8.0    # far-field size / size near the load
EDGE_FACTOR = 0.5   # size at load edges / size near the load

Point = tuple[float, float]


# ============================================================================ public face


def build_mesh(model) -> Mesh:
    """Mesh the model's section, choosing the builder by ``model.section.kind``.

    Parameters
    ----------
    model : :class:`solver.model.Model`.

    Returns
    -------
    Mesh with the regions and edges named as in this module's docstring.
    """
    kind = model.section.kind
    builders = {"embankment": embankment_mesh, "footings": footings_mesh,
                "ground": ground_mesh, "mesh": file_mesh}
    if kind not in builders:
        raise InputError(f"unknown section kind {kind!r}", field="section.kind",
                         source=model.source,
                         fix=f"use one of {sorted(builders)}.")
    return builders[kind](model)


def embankment_mesh(model) -> Mesh:
    """Layered ground under a trapezoidal embankment (berms optional) built in lifts.

    The embankment is symmetric about x = 0 with toes at +-(crest/2 + side_slope * height);
    each berm adds a bench of its width at its height, so the outer toe moves out by the sum
    of the berm widths. Half and axisymmetric models keep x >= 0.
    """
    sec = model.section
    emb = sec.embankment
    if emb is None:
        raise InputError("section kind 'embankment' needs an embankment",
                         field="section.embankment", source=model.source,
                         fix="give [section.embankment] with crest_width, height, "
                             "side_slope and lifts.")
    plan = _Plan.start(model)
    outline = embankment_outline(emb, half=plan.symmetric, source=model.source)
    levels = lift_levels(emb, source=model.source)
    toe = max(x for x, _ in outline)
    plan.check_inside(-toe if not plan.symmetric else 0.0, toe, "section.embankment")
    for i in range(len(levels) - 1):
        poly = clip_band(outline, levels[i], levels[i + 1])
        plan.lifts.append(poly)
    # The crest carries loads that lie on it; the rest of the loads go on the free ground.
    half_crest = emb.crest_width / 2
    lo = 0.0 if plan.symmetric else -half_crest
    for ld in plan.loads:
        if ld.x0 >= lo - plan.tol and ld.x1 <= half_crest + plan.tol:
            ld.y = emb.height
        elif ld.x1 <= -toe + plan.tol or ld.x0 >= toe - plan.tol:
            pass
        else:
            raise InputError(f"surface load {ld.name!r} ({ld.x0:g} to {ld.x1:g} m) lies "
                             "partly on the embankment", field=ld.where,
                             source=model.source,
                             fix="put it on the crest or on the ground beside the toes.")
    plan.crest_breaks = [x for ld in plan.loads if ld.y > 0 for x in (ld.x0, ld.x1)]
    # Size: the loaded width is the base width, toe to toe; lifts at most half their
    # thickness; load edges (toes, bench corners, crest edges) finer.
    h0 = plan.near(2 * toe)
    plan.footprints.append((-toe if not plan.symmetric else 0.0, toe, h0, 0.0))
    for i, poly in enumerate(plan.lifts):
        t = levels[i + 1] - levels[i]
        plan.size.add_polygon(poly, min(h0, t / 2))
    for x, y in outline:
        if not (plan.symmetric and abs(x) <= plan.tol):
            plan.size.add_point(x, y, EDGE_FACTOR * h0)
    plan.size.add_segment(plan.footprints[0][0], 0.0, toe, 0.0, h0)
    return plan.mesh(f"embankment section '{model.title}'")


def footings_mesh(model) -> Mesh:
    """Layered ground under strip footings (plane strain) or one circular footing (axisymmetry).

    A footing with embedment D > 0 sits at y = -D at the bottom of a rectangular notch of its
    own width (the soil above its base is removed); D = 0 is a loaded segment of the surface.
    """
    sec = model.section
    if not sec.footings:
        raise InputError("section kind 'footings' needs at least one footing",
                         field="section.footings", source=model.source,
                         fix="add a [[section.footings]] entry with name, center and width.")
    plan = _Plan.start(model)
    if plan.axisymmetric and (len(sec.footings) != 1 or abs(sec.footings[0].center) > 0):
        raise InputError("an axisymmetric section holds one circular footing centred at r = 0",
                         field="section.footings", source=model.source,
                         fix="give one footing with center = 0 (its width is the diameter).")
    spans = []
    for i, f in enumerate(sec.footings):
        where = f"section.footings[{i + 1}]"
        if f.width <= 0:
            raise InputError(f"footing {f.name!r} has width {f.width:g} m", field=where,
                             source=model.source, fix="give a positive width.")
        if f.embedment < 0:
            raise InputError(f"footing {f.name!r} has embedment {f.embedment:g} m",
                             field=where, source=model.source,
                             fix="give the depth of the base below the ground (>= 0).")
        x0, x1 = f.center - f.width / 2, f.center + f.width / 2
        if plan.symmetric:
            if abs(f.center) <= plan.tol:
                x0 = 0.0
            elif x0 < -plan.tol:
                raise InputError(f"footing {f.name!r} crosses the symmetry line x = 0 off "
                                 "centre", field=where, source=model.source,
                                 fix="centre it at x = 0, move it to x >= 0, or model the "
                                     "full section (half = false).")
        plan.check_inside(x0, x1, where)
        for (a, b, other) in spans:
            if x0 < b - plan.tol and x1 > a + plan.tol:
                raise InputError(f"footings {other!r} and {f.name!r} overlap", field=where,
                                 source=model.source, fix="move them apart.")
        spans.append((x0, x1, f.name))
        if f.embedment > 0:
            base = -max(plan.y_line(len(plan.lines) - 1, x) for x in (x0, x1))
            if f.embedment >= base - plan.tol:
                raise InputError(f"footing {f.name!r} is embedded {f.embedment:g} m, not "
                                 f"above the base of the model ({base:g} m deep there)",
                                 field=where, source=model.source,
                                 fix="make the model deeper or the embedment smaller.")
            plan.notches.append((f.name, x0, x1, f.embedment))
        else:
            plan.surface_footings.append((f.name, x0, x1))
        d = f.embedment
        h0 = plan.near(f.width)
        plan.footprints.append((x0, x1, h0, -d))
        plan.size.add_segment(x0, -d, x1, -d, h0)
        for x in (x0, x1):
            if not (plan.symmetric and abs(x) <= plan.tol):
                plan.size.add_point(x, -d, EDGE_FACTOR * h0)
                if d > 0:
                    plan.size.add_point(x, 0.0, EDGE_FACTOR * h0)
    for ld in plan.loads:
        for (a, b, name) in spans:
            if ld.x0 < b - plan.tol and ld.x1 > a + plan.tol:
                raise InputError(f"surface load {ld.name!r} overlaps footing {name!r}",
                                 field=ld.where, source=model.source,
                                 fix="load the footing itself (its load or force).")
    return plan.mesh(f"footings section '{model.title}'")


def ground_mesh(model) -> Mesh:
    """Layered ground alone; the surface is split at the ends of each surface load."""
    plan = _Plan.start(model)
    return plan.mesh(f"ground section '{model.title}'")


def file_mesh(model) -> Mesh:
    """The user's mesh file (``.msh`` or ``.geo``), names kept as they are.

    A relative path is looked up beside the model file first, then from the working folder.
    """
    name = model.section.mesh_file
    if not name:
        raise InputError("section kind 'mesh' needs a mesh_file", field="section.mesh_file",
                         source=model.source, fix="give the path of a .msh or .geo file.")
    path = Path(name)
    if not path.is_absolute() and model.source:
        beside = Path(model.source).parent / path
        if beside.exists():
            path = beside
    return read_mesh(path)


# ============================================================================ extent, sizes


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


# ============================================================================ embankment shape


def embankment_outline(emb, half: bool = False, source: str | None = None) -> list[Point]:
    """The embankment's outline (berms included), counter-clockwise, from the right toe.

    The surface is :func:`solver.model.embankment_profile` (crest, side slopes, a bench of
    each berm's width at its height); mirrored about x = 0, or closed along x = 0 when half.
    """
    _check_embankment(emb, source)
    right = _dedupe([(float(x), float(y)) for x, y in embankment_profile(emb)[1:]])
    up = list(reversed(right))                   # toe -> crest edge
    if half:
        pts = up + [(0.0, float(emb.height)), (0.0, 0.0)]
    else:
        pts = up + [(-px, py) for px, py in right]
    return _dedupe(pts, closed=True)


def lift_levels(emb, source: str | None = None) -> list[float]:
    """Elevations bounding the lifts, from 0 to the height (len = number of lifts + 1), m."""
    _check_embankment(emb, source)
    levels = [0.0]
    for t in (emb.lifts or [emb.height]):
        levels.append(levels[-1] + float(t))
    levels[-1] = float(emb.height)   # exact top, whatever the rounding of the sum
    return levels


def clip_band(poly: Sequence[Point], y0: float, y1: float) -> list[Point]:
    """Part of a polygon between two elevations y0 < y1 (Sutherland-Hodgman, two half-planes).

    Exact for polygons whose horizontal sections are single intervals (the embankment).
    """
    def clip(pts, keep, cross):
        out = []
        n = len(pts)
        for i in range(n):
            p, q = pts[i], pts[(i + 1) % n]
            kp, kq = keep(p), keep(q)
            if kp:
                out.append(p)
            if kp != kq:
                out.append(cross(p, q))
        return out

    def at(yc):
        def cross(p, q):
            t = (yc - p[1]) / (q[1] - p[1])
            return (p[0] + t * (q[0] - p[0]), yc)
        return cross

    pts = clip(list(poly), lambda p: p[1] >= y0, at(y0))
    pts = clip(pts, lambda p: p[1] <= y1, at(y1))
    return _dedupe(pts, closed=True)


# ============================================================================ the plan


@dataclass
class _Load:
    name: str
    x0: float
    x1: float
    y: float = 0.0      # elevation of the loaded surface (the crest for a load on it)
    h: float = 1.0      # size near it, m
    where: str = "loads"


class _SizeField:
    """min over refined places of (target + GROWTH * distance), capped at the far size.

    Places: points, segments and polygons (size ``h`` inside and on them). gmsh asks for the
    size one point at a time, tens of thousands of times; :meth:`sampled` tabulates the field
    (vectorised) on a grid as fine as the finest target and interpolates it bilinearly, which
    errs by at most ``GROWTH`` * grid spacing.
    """

    def __init__(self):
        self.far = 0.0
        self.points: list[tuple[float, float, float]] = []
        self.segments: list[tuple[float, float, float, float, float]] = []
        self.polygons: list[tuple[list[Point], float]] = []

    def add_point(self, x, y, h, growth=GROWTH):
        self.points.append((float(x), float(y), float(h), float(growth)))

    def add_segment(self, x0, y0, x1, y1, h, growth=GROWTH):
        self.segments.append((float(x0), float(y0), float(x1), float(y1), float(h),
                              float(growth)))

    def add_polygon(self, poly, h, growth=GROWTH):
        self.polygons.append(([(float(x), float(y)) for x, y in poly], float(h)))
        for (ax, ay), (bx, by) in zip(poly, list(poly[1:]) + [poly[0]]):
            self.add_segment(ax, ay, bx, by, h, growth)

    @property
    def finest(self) -> float:
        hs = [p[2] for p in self.points] + [s[4] for s in self.segments] + [self.far]
        return min(hs)

    def evaluate(self, x: np.ndarray, y: np.ndarray) -> np.ndarray:
        """Size at points x, y (any equal shapes), m."""
        x, y = np.broadcast_arrays(np.asarray(x, float), np.asarray(y, float))
        best = np.full(x.shape, self.far)
        for px, py, h, g in self.points:
            np.minimum(best, h + g * np.hypot(x - px, y - py), out=best)
        for x0, y0, x1, y1, h, g in self.segments:
            dx, dy = x1 - x0, y1 - y0
            ll = dx * dx + dy * dy
            t = 0.0 if ll == 0 else np.clip(((x - x0) * dx + (y - y0) * dy) / ll, 0.0, 1.0)
            np.minimum(best, h + g * np.hypot(x - x0 - t * dx, y - y0 - t * dy), out=best)
        for poly, h in self.polygons:
            best[_inside(poly, x, y) & (best > h)] = h
        return best

    def sampled(self, x_min, x_max, y_min, y_max, max_nodes: int = 400_000):
        """A fast scalar function (x, y) -> size interpolated from a grid over the box."""
        s = self.finest
        lx, ly = max(x_max - x_min, s), max(y_max - y_min, s)
        s = max(s, math.sqrt(lx * ly / max_nodes))
        nx, ny = int(math.ceil(lx / s)) + 1, int(math.ceil(ly / s)) + 1
        xs = np.linspace(x_min, x_min + lx, nx)
        ys = np.linspace(y_min, y_min + ly, ny)
        table = self.evaluate(xs[None, :], ys[:, None]).tolist()   # rows: y, columns: x
        dx, dy = xs[1] - xs[0], ys[1] - ys[0]

        def size(x: float, y: float) -> float:
            u = min(max((x - x_min) / dx, 0.0), nx - 1.000001)
            v = min(max((y - y_min) / dy, 0.0), ny - 1.000001)
            i, j = int(u), int(v)
            u -= i
            v -= j
            r0, r1 = table[j], table[j + 1]
            return ((1 - v) * ((1 - u) * r0[i] + u * r0[i + 1])
                    + v * ((1 - u) * r1[i] + u * r1[i + 1]))

        return size


def _inside(poly: Sequence[Point], x: np.ndarray, y: np.ndarray) -> np.ndarray:
    """Even-odd point-in-polygon test, vectorised over the points."""
    inside = np.zeros(np.shape(x), dtype=bool)
    n = len(poly)
    for i in range(n):
        x0, y0 = poly[i]
        x1, y1 = poly[(i + 1) % n]
        if y0 == y1:
            continue
        crosses = (y0 > y) != (y1 > y)
        inside ^= crosses & (x < x0 + (y - y0) * (x1 - x0) / (y1 - y0))
    return inside


@dataclass
class _Plan:
    """Everything a section needs before gmsh: extent, layer lines, lifts, notches, loads."""
    model: object
    x_min: float
    x_max: float
    depth: float
    symmetric: bool
    axisymmetric: bool
    lines: list[tuple[float, float]]        # y at (x_min, x_max) of the top, interfaces, base
    layer_names: list[str]
    size: _SizeField
    loads: list[_Load] = field(default_factory=list)
    lifts: list[list[Point]] = field(default_factory=list)
    notches: list[tuple[str, float, float, float]] = field(default_factory=list)
    surface_footings: list[tuple[str, float, float]] = field(default_factory=list)
    # loaded spans: x from, x to, size near, elevation of the loaded surface
    footprints: list[tuple[float, float, float, float]] = field(default_factory=list)
    crest_breaks: list[float] = field(default_factory=list)

    @property
    def tol(self) -> float:
        return 1e-9 * max(self.x_max - self.x_min, self.depth, 1.0)

    # --------------------------------------------------------------- set-up
    @classmethod
    def start(cls, model) -> "_Plan":
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
        plan = cls(model, x_min, x_max, depth, _is_symmetric(model),
                   model.analysis == "axisymmetric", lines, names, _SizeField())
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
            plan.loads.append(_Load(ld.name, x0, x1, h=plan.near(width), where=where))
        return plan

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
    def _finish_sizes(self) -> None:
        spans = list(self.footprints)
        for ld in self.loads:
            h0 = ld.h
            if ld.y == 0.0:
                spans.append((ld.x0, ld.x1, h0, 0.0))
            self.size.add_segment(ld.x0, ld.y, ld.x1, ld.y, h0)
            for x in (ld.x0, ld.x1):
                if not (self.symmetric and abs(x) <= self.tol):
                    self.size.add_point(x, ld.y, EDGE_FACTOR * h0)
        # Under each loaded span: every layer at most a third of its (mean) thickness, every
        # interface at the load's size; both relax to half the growth rate times their depth
        # below the loaded surface, so that deep lines under a narrow load stay coarse.
        n = len(self.layer_names)
        for a, b, h0, y_load in spans:
            for j in range(n):
                top = (self.y_line(j, a), self.y_line(j, b))
                bot = (self.y_line(j + 1, a), self.y_line(j + 1, b))
                t = 0.5 * ((top[0] - bot[0]) + (top[1] - bot[1]))
                relax = 0.5 * GROWTH * (y_load - max(top))
                cap = max(t / 3, relax, h0 / 10)
                if cap < h0:
                    poly = _dedupe([(a, bot[0]), (b, bot[1]), (b, top[1]), (a, top[0])],
                                   closed=True)
                    if len(poly) >= 3:
                        self.size.add_polygon(poly, cap)
                if 0 < j:
                    self.size.add_segment(a, top[0], b, top[1], max(h0, relax))
        # Everywhere: no element much longer than its layer is thick (no slivers far away).
        for j in range(n):
            (tl, tr), (bl, br) = self.lines[j], self.lines[j + 1]
            poly = _dedupe([(self.x_min, bl), (self.x_max, br), (self.x_max, tr),
                            (self.x_min, tl)], closed=True)
            self.size.add_polygon(poly, 0.5 * ((tl - bl) + (tr - br)), SHAPE_GROWTH)
        if spans:
            self.size.far = FAR_FACTOR * max(sp[2] for sp in spans)
        else:
            self.size.far = default_mesh_size(self.model)   # nothing loaded: uniform

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
            polys.append(_dedupe(pts, closed=True))
        return polys

    def mesh(self, source: str) -> Mesh:
        self._finish_sizes()
        lifts = [self._with_crest_breaks(p) if i == len(self.lifts) - 1 else p
                 for i, p in enumerate(self.lifts)]
        with gmsh_session("section") as gmsh:
            occ = gmsh.model.occ

            def surface(poly):
                pts = [occ.addPoint(x, y, 0.0) for x, y in poly]
                curves = [occ.addLine(pts[i], pts[(i + 1) % len(pts)])
                          for i in range(len(pts))]
                return occ.addPlaneSurface([occ.addCurveLoop(curves)])

            soil = [(surface(p), name) for p, name in
                    zip(self.layer_polygons(), self.layer_names)]
            if self.notches:
                tools = [(2, occ.addRectangle(a, -d, 0.0, b - a, d))
                         for _, a, b, d in self.notches]
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
            for name, cs in self._classify_curves(gmsh, region_of).items():
                if cs:
                    gmsh.model.addPhysicalGroup(1, sorted(cs), name=name)
            top = max([0.0] + [y for p in self.lifts for _, y in p])
            size = self.size.sampled(self.x_min, self.x_max, -self.depth, top)
            mesh = _generate(gmsh, size, source)
        clash = set(mesh.region_names) & set(mesh.edges)
        if clash:
            raise InputError(f"layer name(s) {sorted(clash)} are also edge names",
                             field="layers", source=self.model.source,
                             fix="rename the layer(s).")
        return mesh

    def _with_crest_breaks(self, poly: list[Point]) -> list[Point]:
        if not self.crest_breaks:
            return poly
        top = max(y for _, y in poly)
        out = []
        n = len(poly)
        for i in range(n):
            p, q = poly[i], poly[(i + 1) % n]
            out.append(p)
            if abs(p[1] - top) <= self.tol and abs(q[1] - top) <= self.tol:
                lo, hi = sorted((p[0], q[0]))
                inner = [x for x in self.crest_breaks if lo + self.tol < x < hi - self.tol]
                out += [(x, top) for x in sorted(set(inner), reverse=p[0] > q[0])]
        return _dedupe(out, closed=True)

    def _classify_curves(self, gmsh, region_of: dict[int, str]) -> dict[str, set[int]]:
        tol = 1e-7 * max(self.x_max - self.x_min, self.depth, 1.0)
        lift_index = {s: int(n.split("_")[1]) for s, n in region_of.items()
                      if n.startswith("lift_")}      # layer names never start so
        soil = {s for s in region_of if s not in lift_index}
        names: dict[str, set[int]] = {}

        def put(name, c):
            names.setdefault(name, set()).add(c)

        side = "symmetry" if self.symmetric else "left"
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
                return all(abs(y - self.y_line(k, x)) <= tol for x, y in ends)

            n_soil = sum(s in soil for s in up)
            lifts_here = [lift_index[s] for s in up if s in lift_index]
            exposed = len(up) == 1
            on_axis = self.symmetric and vertical(0.0)
            if on_line(len(self.lines) - 1):
                put("base", c)
            if vertical(self.x_min):
                put(side, c)
            if vertical(self.x_max):
                put("right", c)
            if horizontal(0.0) and n_soil:
                put("ground", c)
                under_footing = any(within(a, b) for _, a, b in self.surface_footings)
                if not lifts_here and not under_footing:
                    put("ground_free", c)
            for name, a, b in self.surface_footings:
                if horizontal(0.0) and n_soil and within(a, b):
                    put(f"footing_{name}", c)
            for name, a, b, d in self.notches:
                if horizontal(-d) and exposed and n_soil and within(a, b):
                    put(f"footing_{name}", c)
                for xw in (a, b):
                    if (vertical(xw) and exposed and not on_axis
                            and min(ya, yb) >= -d - tol and max(ya, yb) <= tol):
                        put("excavation_walls", c)
            for k in range(1, len(self.layer_names)):
                if n_soil == 2 and on_line(k):
                    put(f"interface_{k}", c)
            if lifts_here and not n_soil and not on_axis:
                # Exposed when its lowest bordering lift is placed (not that lift's bottom).
                put(f"lift_{min(lifts_here)}_top", c)
                if exposed:
                    put("embankment_surface", c)
            for ld in self.loads:
                if horizontal(ld.y) and exposed and within(ld.x0, ld.x1):
                    put(f"load_{ld.name}", c)
        return names


# ============================================================================ small helpers


def _check_embankment(emb, source) -> None:
    f = "section.embankment"
    if emb.height <= 0:
        raise InputError(f"height {emb.height:g} m", field=f"{f}.height", source=source,
                         fix="give a positive height.")
    if emb.crest_width < 0 or emb.side_slope < 0:
        raise InputError("crest_width and side_slope cannot be negative", field=f,
                         source=source, fix="give crest_width >= 0 and side_slope >= 0.")
    if emb.crest_width == 0 and emb.side_slope == 0:
        raise InputError("an embankment with no crest and vertical sides has no area",
                         field=f, source=source, fix="give a crest width or a side slope.")
    lifts = list(emb.lifts) or [emb.height]
    if any(t <= 0 for t in lifts):
        raise InputError(f"lift thicknesses {lifts} must all be positive", field=f"{f}.lifts",
                         source=source, fix="give each lift's thickness in m, bottom up.")
    if abs(sum(lifts) - emb.height) > 1e-6 * emb.height:
        raise InputError(f"the lifts add up to {sum(lifts):g} m, the height is "
                         f"{emb.height:g} m", field=f"{f}.lifts", source=source,
                         fix="make the lift thicknesses sum to the height.")
    last = emb.height
    for i, b in enumerate(emb.berms):
        if not (0 < b.height < last) or b.width <= 0:
            raise InputError(f"berm {i + 1}: width {b.width:g} m at height {b.height:g} m",
                             field=f"{f}.berms[{i + 1}]", source=source,
                             fix="list berms from the embankment outward, each lower than the "
                                 "one inside it, with a positive width.")
        last = b.height


def _is_symmetric(model) -> bool:
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
    symmetric = _is_symmetric(model)
    out = []
    for a, b in loaded_spans(model):
        if symmetric and a <= 0 < b:
            out.append(2 * max(-a, b))     # the mirror image makes it one load
        else:
            out.append(b - a)
    return out


def _dedupe(pts: Sequence[Point], closed: bool = False, tol: float = 1e-12) -> list[Point]:
    out: list[Point] = []
    for p in pts:
        p = (float(p[0]), float(p[1]))
        if not out or abs(p[0] - out[-1][0]) > tol or abs(p[1] - out[-1][1]) > tol:
            out.append(p)
    if closed and len(out) > 1 and abs(out[0][0] - out[-1][0]) <= tol \
            and abs(out[0][1] - out[-1][1]) <= tol:
        out.pop()
    return out
