"""The ground along a vertical line through a mesh: which regions it crosses, and how thick.

The hand method reads a section given as a mesh through these plain descriptions (it never
imports the mesh): :func:`vertical_column` gives, top down, the regions the vertical at x
crosses with the elevations where it enters and leaves each (sloping interfaces at their
local thickness); :func:`region_thickness` the thickness of one region along many verticals
(the weight of a region placed as a lift). Both work on the corner nodes of the 6-node
triangles (straight-sided elements).

Units: m; y is the elevation, up positive.
"""

from __future__ import annotations

import numpy as np

from .mesh import Mesh

__all__ = ["vertical_column", "region_thickness", "region_x_range"]

_TOL = 1e-9


def _crossings(mesh: Mesh, x: float) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Elements the vertical at x passes through, with the lowest and highest y of the
    vertical inside each: (element index (k,), y_low (k,), y_high (k,))."""
    c = mesh.points[mesh.triangles[:, :3]]                 # (ne, 3, 2) corners
    xa, ya = c[:, :, 0], c[:, :, 1]
    xb, yb = np.roll(xa, -1, axis=1), np.roll(ya, -1, axis=1)   # edges 0-1, 1-2, 2-0
    lo, hi = np.minimum(xa, xb), np.maximum(xa, xb)
    span = max(float(np.ptp(mesh.points[:, 0])), 1.0)
    tol = _TOL * span
    hit = (lo - tol <= x) & (x <= hi + tol)                 # (ne, 3)
    with np.errstate(divide="ignore", invalid="ignore"):
        s = np.where(hi - lo > tol, (x - xa) / np.where(xb != xa, xb - xa, 1.0), 0.0)
    s = np.clip(s, 0.0, 1.0)
    y_at = ya + s * (yb - ya)
    vertical = hit & (hi - lo <= tol)                       # an edge along the vertical itself
    y_low = np.where(vertical, np.minimum(ya, yb), y_at)
    y_high = np.where(vertical, np.maximum(ya, yb), y_at)
    y_low = np.where(hit, y_low, np.inf).min(axis=1)
    y_high = np.where(hit, y_high, -np.inf).max(axis=1)
    e = np.flatnonzero(np.isfinite(y_low) & (y_high - y_low > tol))
    return e, y_low[e], y_high[e]


def _merge(lo: np.ndarray, hi: np.ndarray, tol: float) -> list[tuple[float, float]]:
    """Union of intervals [lo, hi] (touching ones joined), from the top down."""
    order = np.argsort(-hi)
    out: list[list[float]] = []
    for a, b in zip(lo[order], hi[order]):
        if out and b >= out[-1][0] - tol:
            out[-1][0] = min(out[-1][0], float(a))
        else:
            out.append([float(a), float(b)])
    return [(b, a) for a, b in out]              # (top, bottom)


def vertical_column(mesh: Mesh, x: float, exclude=()) -> list[tuple[str, float, float]]:
    """The regions the vertical at x crosses, top down: (region name, y top, y bottom).

    ``exclude``: region names left out (e.g. fill placed later by a lift stage). Consecutive
    pieces of one region are joined; a region met twice (a lens) appears twice.
    """
    e, lo, hi = _crossings(mesh, float(x))
    tol = _TOL * max(float(np.ptp(mesh.points[:, 1])), 1.0)
    pieces = []
    for r, name in enumerate(mesh.region_names):
        if name in exclude:
            continue
        sel = mesh.region[e] == r
        if sel.any():
            pieces += [(name, top, bottom) for top, bottom in _merge(lo[sel], hi[sel], tol)]
    pieces.sort(key=lambda p: -p[1])
    merged: list[tuple[str, float, float]] = []
    for name, top, bottom in pieces:
        if merged and merged[-1][0] == name and abs(merged[-1][2] - top) <= tol:
            merged[-1] = (name, merged[-1][1], bottom)
        else:
            merged.append((name, top, bottom))
    return merged


def region_x_range(mesh: Mesh, region: str) -> tuple[float, float]:
    """The x range (m) a region of the mesh covers."""
    nodes = np.unique(mesh.triangles[mesh.region == mesh.region_id(region), :3])
    xs = mesh.points[nodes, 0]
    return float(xs.min()), float(xs.max())


def region_thickness(mesh: Mesh, region: str, xs) -> np.ndarray:
    """Thickness (m) of ``region`` along the verticals at ``xs`` (the sum of its pieces)."""
    out = []
    for x in np.asarray(xs, dtype=float).ravel():        # a few hundred verticals at most
        out.append(sum(top - bottom for name, top, bottom in vertical_column(mesh, x)
                       if name == region))
    return np.array(out)
