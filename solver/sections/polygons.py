"""Small polygon helpers of the section builders (points as (x, y) tuples, m)."""

from __future__ import annotations

from typing import Sequence

import numpy as np

Point = tuple[float, float]


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
    return dedupe(pts, closed=True)


def inside(poly: Sequence[Point], x: np.ndarray, y: np.ndarray) -> np.ndarray:
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



def dedupe(pts: Sequence[Point], closed: bool = False, tol: float = 1e-12) -> list[Point]:
    out: list[Point] = []
    for p in pts:
        p = (float(p[0]), float(p[1]))
        if not out or abs(p[0] - out[-1][0]) > tol or abs(p[1] - out[-1][1]) > tol:
            out.append(p)
    if closed and len(out) > 1 and abs(out[0][0] - out[-1][0]) <= tol \
            and abs(out[0][1] - out[-1][1]) <= tol:
        out.pop()
    return out
