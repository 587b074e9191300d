"""Search for the slip surface of least factor of safety.

Circles are tried on a grid of centres and tangent elevations (the elevation of a circle's
lowest point: the radius follows from it), then the best is refined by scipy's Nelder-Mead in
(x_c, y_c, y_t). Spencer's method is then applied to the critical circle and, optionally, to
non-circular surfaces found by moving the points of a polyline started on that circle.

Controls a user sets: the box of centres, the range of tangent elevations (down to a firm
base, say), the least depth a slide must reach below the surface (shallow skin slips of a
cohesionless fill are usually of no interest, common practice) and the range of x in which
a slide must lie.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from numpy.typing import NDArray
from scipy import optimize

from solver.errors import InputError, PoroplaneError

from .slices import Slices, SlopeSoil, bishop, circle_slices, polyline_slices, spencer

__all__ = ["SearchBox", "CriticalSurface", "default_box", "search_circles", "search_noncircular"]

Array = NDArray[np.float64]


@dataclass(frozen=True)
class SearchBox:
    """Where slip circles are sought.

    centre_x, centre_y : (low, high) ranges of the centres (m).
    tangent_y : (low, high) range of the elevation of each circle's lowest point (m).
    min_depth : a slide must reach at least this far below the surface (m).
    x_limits : the slide must lie within (left, right) (m); None: anywhere on the surface.
    grid : centres per direction and tangent elevations tried on the grid.
    """

    centre_x: tuple[float, float]
    centre_y: tuple[float, float]
    tangent_y: tuple[float, float]
    min_depth: float = 0.5
    x_limits: tuple[float, float] | None = None
    grid: tuple[int, int, int] = (12, 10, 10)

    def __post_init__(self):
        for name in ("centre_x", "centre_y", "tangent_y"):
            lo, hi = getattr(self, name)
            if not hi > lo:
                raise InputError(f"the search range {name} must have its low end below its high end",
                                 field=f"stability.{name}", fix="give [low, high] with low < high")
        if self.tangent_y[1] >= self.centre_y[0]:
            raise InputError("circle centres must lie above the tangent elevations",
                             field="stability.centre_y", fix="raise the centres or lower the tangents")


@dataclass
class CriticalSurface:
    """The surface of least factor of safety found, and how it was found."""

    method: str                       # "Bishop simplified" or "Spencer"
    factor_of_safety: float
    slices: Slices
    circle: tuple[float, float, float] | None = None     # (x_c, y_c, radius)
    points: Array | None = None                           # (n, 2) polyline of the surface
    theta_deg: float | None = None                        # Spencer's interslice angle
    surfaces_tried: int = 0
    history: list = field(default_factory=list)


def default_box(soil: SlopeSoil, base_y: float, x_limits: tuple[float, float] | None = None,
                min_depth: float = 0.5) -> SearchBox:
    """A search box fitted to the slope: centres over the sloping part, tangents to the base."""
    x0, x1 = (soil.surface_x[0], soil.surface_x[-1]) if x_limits is None else x_limits
    xs = np.linspace(x0, x1, 200)
    ys = soil.surface(xs)
    top, bottom = float(ys.max()), float(ys.min())
    height = max(top - bottom, 1.0)
    slope = np.abs(np.gradient(ys, xs))
    sloping = xs[slope > 0.05 * slope.max()] if slope.max() > 0 else xs
    xa, xb = float(sloping.min()), float(sloping.max())
    width = max(xb - xa, height)
    return SearchBox(centre_x=(xa - 0.5 * width, xb + 0.5 * width),
                     centre_y=(top + 0.2 * height, top + 2.0 * height + 0.5 * width),
                     tangent_y=(base_y + 1e-3, top - min_depth - 1e-3),
                     min_depth=min_depth, x_limits=x_limits)


def _circle_factor(soil: SlopeSoil, box: SearchBox, xc: float, yc: float, yt: float,
                   n_slices: int) -> tuple[float, Slices | None]:
    radius = yc - yt
    if radius <= 0:
        return float("inf"), None
    s = circle_slices(soil, xc, yc, radius, n_slices)
    if s is None or np.max(s.top - s.y) < box.min_depth:
        return float("inf"), None
    if box.x_limits is not None:
        left, right = s.x[0] - s.width[0] / 2, s.x[-1] + s.width[-1] / 2
        if left < box.x_limits[0] - 1e-9 or right > box.x_limits[1] + 1e-9:
            return float("inf"), None
    if np.any(s.weight < 0):
        return float("inf"), None
    return bishop(s), s


def search_circles(soil: SlopeSoil, box: SearchBox, n_slices: int = 40, refine: bool = True
                   ) -> CriticalSurface:
    """The circle of least Bishop factor of safety (Bishop 1955), then Spencer on it."""
    nx, ny, nt = box.grid
    best = (float("inf"), None, None)
    tried = 0
    for xc in np.linspace(*box.centre_x, nx):
        for yc in np.linspace(*box.centre_y, ny):
            for yt in np.linspace(*box.tangent_y, nt):
                tried += 1
                F, s = _circle_factor(soil, box, xc, yc, yt, n_slices)
                if F < best[0]:
                    best = (F, s, (xc, yc, yt))
    if best[1] is None:
        raise InputError("no slip circle in the search box cuts the ground deeper than the least "
                         "depth", field="stability", fix="move or widen the search box")
    F, s, (xc, yc, yt) = best
    if refine:
        def objective(v):
            return _circle_factor(soil, box, v[0], v[1], v[2], n_slices)[0]
        scale = np.array([np.ptp(box.centre_x) / nx, np.ptp(box.centre_y) / ny, np.ptp(box.tangent_y) / nt])
        start = np.array([xc, yc, yt])
        simplex = np.vstack([start, start + np.diag(scale)])
        res = optimize.minimize(objective, start, method="Nelder-Mead",
                                options={"initial_simplex": simplex, "xatol": 1e-3, "fatol": 1e-5,
                                         "maxfev": 600})
        tried += res.nfev
        if res.fun < F:
            xc, yc, yt = res.x
            F, s = _circle_factor(soil, box, xc, yc, yt, n_slices)
    return CriticalSurface("Bishop simplified", F, s, circle=(xc, yc, yc - yt), surfaces_tried=tried)


def spencer_on(surface: CriticalSurface) -> CriticalSurface:
    """Spencer's factor (Spencer 1967) on the same slices as a critical circle."""
    F, theta = spencer(surface.slices, F0=surface.factor_of_safety)
    return CriticalSurface("Spencer", F, surface.slices, circle=surface.circle,
                           theta_deg=float(np.degrees(theta)), surfaces_tried=1)


def search_noncircular(soil: SlopeSoil, start: CriticalSurface, box: SearchBox, n_points: int = 7,
                       n_slices: int = 40, max_evaluations: int = 400) -> CriticalSurface:
    """A non-circular surface of least Spencer factor, started on the critical circle.

    The circle's slide is cut into ``n_points`` points whose elevations (not their x) move freely
    above the lowest tangent elevation; Nelder-Mead minimises Spencer's factor (Spencer 1967,
    1973). Surfaces that fold back (a base steeper than 80 degrees inside) are refused.
    """
    if start.circle is None:
        raise PoroplaneError("the non-circular search starts on a critical circle")
    xc, yc, r = start.circle
    s = start.slices
    left, right = s.x[0] - s.width[0] / 2, s.x[-1] + s.width[-1] / 2
    # points a little outside the slide so that its ends can move
    px = np.linspace(left - 0.02 * (right - left), right + 0.02 * (right - left), n_points)
    py0 = yc - np.sqrt(np.maximum(r * r - (px - xc) ** 2, 0.0))
    py0[[0, -1]] = soil.surface(px[[0, -1]]) + 0.01

    def evaluate(dy):
        py = py0.copy()
        py[1:-1] += dy
        if np.any(py[1:-1] < box.tangent_y[0]):
            return float("inf"), None
        steep = np.abs(np.diff(py) / np.diff(px))
        if np.any(steep[1:-1] > np.tan(np.radians(80.0))):
            return float("inf"), None
        sl = polyline_slices(soil, px, py, n_slices)
        if sl is None or np.max(sl.top - sl.y) < box.min_depth:
            return float("inf"), None
        try:
            F = spencer(sl, F0=last[0])[0]
        except PoroplaneError:
            return float("inf"), None
        last[0] = F
        return F, sl

    last = [start.factor_of_safety]
    F_start, _ = evaluate(np.zeros(n_points - 2))
    step = 0.05 * (right - left)
    res = optimize.minimize(lambda v: evaluate(v)[0], np.zeros(n_points - 2), method="Nelder-Mead",
                            options={"initial_simplex": np.vstack([np.zeros(n_points - 2),
                                                                   -step * np.eye(n_points - 2)]),
                                     "xatol": 1e-3, "fatol": 1e-4, "maxfev": max_evaluations})
    dy = res.x if res.fun < F_start else np.zeros(n_points - 2)
    F, sl = evaluate(dy)
    if sl is None:
        raise InputError("no non-circular surface was found near the critical circle",
                         field="stability", fix="search circles only")
    pts = np.column_stack([px, np.concatenate([[py0[0]], py0[1:-1] + dy, [py0[-1]]])])
    theta = spencer(sl)[1]
    return CriticalSurface("Spencer", F, sl, points=pts, theta_deg=float(np.degrees(theta)),
                           surfaces_tried=res.nfev)
