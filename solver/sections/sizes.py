"""The element size field of a parametric section: refined places, growth away from them.

Sizes in m. gmsh asks for the size one point at a time; :meth:`SizeField.sampled` tabulates
the field once (vectorised) and hands gmsh a cheap interpolating function.
"""

from __future__ import annotations

import math

import numpy as np

from .polygons import Point, inside

GROWTH = 0.3        # increase of element size per unit distance from a refined place, m/m
SHAPE_GROWTH = 0.6  # the same away from a thin layer far from the load (only against slivers)
FAR_FACTOR = 8.0    # far-field size / size near the load
EDGE_FACTOR = 0.5   # size at load edges / size near the load


class SizeField:
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
            best[inside(poly, x, y) & (best > h)] = h
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
