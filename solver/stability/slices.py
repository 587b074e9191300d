"""Limit equilibrium of a slip surface by the method of slices.

A sliding mass is cut into vertical slices between the points where the slip surface leaves
the ground. Each slice carries its weight ``W``, the pore pressure ``u`` on its base, and the
strength there: effective-stress ``c', phi'`` (drained points, with ``u``) or an undrained
strength ``s_u`` (undrained points, total stress, ``u`` not used).

- Bishop's simplified method (Bishop 1955) for circles: moment equilibrium about the centre
  with horizontal interslice forces, ``F = sum[(c b + (W - u b) tan phi) / m_a] / sum W sin a``,
  ``m_a = cos a (1 + tan a tan phi / F)``.
- Spencer's method (Spencer 1967; non-circular surfaces as in Spencer 1973) for any surface:
  parallel interslice forces at an angle ``theta``; ``F`` and ``theta`` satisfy force and moment
  equilibrium together.

Frame: x to the right, y up. A slide is analysed in the frame where it moves towards +x (the
x axis is mirrored for one that moves to the left), so a base angle ``a > 0`` descends in the
direction of motion. Units: kN, m, kPa, kN/m3; angles in radians inside, degrees at the edges.

Results inform design: they need review by a qualified engineer; local codes and licensed
practice govern.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable, Protocol

import numpy as np
from numpy.typing import NDArray
from scipy import optimize

from solver.errors import InputError

__all__ = ["SlopeSoil", "Slices", "circle_slices", "polyline_slices", "bishop", "spencer",
           "M_ALPHA_FLOOR"]

Array = NDArray[np.float64]

M_ALPHA_FLOOR = 0.2
"""Bishop's m_alpha is kept at or above this value where the base rises against the motion (the
toe of deep circles), where it tends to zero and the factor of safety is meaningless (common
practice)."""


class StrengthFunction(Protocol):
    def __call__(self, x: Array, y: Array) -> tuple[Array, Array, NDArray[np.bool_]]:
        """(c or s_u in kPa, tan phi, drained) at points."""


@dataclass
class SlopeSoil:
    """What a slip surface needs of the ground at one time.

    surface_x, surface_y : the ground (and fill) surface, a polyline ordered by x (m).
    unit_weight : ``f(x, y) -> gamma`` (kN/m3), total unit weight at points (vectorised).
    strength : ``f(x, y) -> (c, tan_phi, drained)``; for undrained points ``c`` is s_u and
        ``tan_phi`` is 0.
    pore_pressure : ``f(x, y) -> u`` (kPa), total pore water pressure (hydrostatic plus excess);
        used on drained points only.
    """

    surface_x: Array
    surface_y: Array
    unit_weight: Callable[[Array, Array], Array]
    strength: StrengthFunction
    pore_pressure: Callable[[Array, Array], Array]

    def __post_init__(self):
        self.surface_x = np.asarray(self.surface_x, dtype=float)
        self.surface_y = np.asarray(self.surface_y, dtype=float)
        if self.surface_x.ndim != 1 or self.surface_x.size < 2 or np.any(np.diff(self.surface_x) <= 0):
            raise InputError("the ground surface must be a polyline with increasing x",
                             field="surface", fix="order the surface points from left to right")

    def surface(self, x: Array) -> Array:
        return np.interp(x, self.surface_x, self.surface_y)


@dataclass
class Slices:
    """Slices of one slip surface (all arrays over slices, in the frame of motion +x)."""

    x: Array            # base mid-point x (m), in the section's own frame
    y: Array            # base mid-point elevation (m)
    width: Array        # b (m)
    alpha: Array        # base angle (rad), positive descending in the direction of motion
    weight: Array       # W (kN/m)
    c: Array            # c' or s_u on the base (kPa)
    tan_phi: Array      # tan phi' on the base (0 for undrained points)
    u: Array            # pore pressure on the base used in the strength (kPa; 0 when undrained)
    direction: int      # +1: the slide moves towards +x; -1 towards -x
    top: Array          # surface elevation above each slice (m)
    length: Array | None = None   # base length l (m); None: b / cos(alpha)

    def __post_init__(self):
        if self.length is None:
            self.length = self.width / np.cos(self.alpha)

    @property
    def base_length(self) -> Array:
        return self.length

    @property
    def secant(self) -> Array:
        """l / b, the secant of the base angle averaged over each slice (exact on circles)."""
        return self.length / self.width


_GAUSS_X, _GAUSS_W = np.polynomial.legendre.leggauss(12)


def _slices(soil: SlopeSoil, x_left: float, x_right: float, base: Callable[[Array], Array],
            slope: Callable[[Array], Array], n: int,
            arc: Callable[[Array], Array] | None = None) -> Slices | None:
    edges = np.linspace(x_left, x_right, n + 1)
    xm = 0.5 * (edges[1:] + edges[:-1])
    b = np.diff(edges)
    yb, ys = base(xm), soil.surface(xm)
    h = np.maximum(ys - yb, 0.0)
    # weight: Gauss-Legendre through the column above the base (12 points; exact for layers
    # of constant weight up to the interface error, which shrinks with the slice height)
    yq = yb[:, None] + 0.5 * h[:, None] * (_GAUSS_X[None, :] + 1.0)
    gam = soil.unit_weight(np.broadcast_to(xm[:, None], yq.shape).ravel(), yq.ravel()).reshape(yq.shape)
    W = b * 0.5 * h * (gam @ _GAUSS_W)
    c, tphi, drained = soil.strength(xm, yb)
    u = np.where(drained, soil.pore_pressure(xm, yb), 0.0)
    dydx = slope(xm)
    driving = np.sum(W * np.sin(np.arctan(-dydx)))
    direction = 1 if driving >= 0 else -1
    alpha = np.arctan(-direction * dydx)
    length = None if arc is None else arc(edges)
    return Slices(xm, yb, b, alpha, W, np.asarray(c, float), np.asarray(tphi, float),
                  np.asarray(u, float), direction, ys, length)


def _inside_segment(xs: Array, depth: Array) -> tuple[float, float] | None:
    """The longest run where ``depth > 0`` on the sampled xs, ends found by linear interpolation.

    None when there is none, or when the run reaches either end of the samples: the surface
    then does not come back up to the ground there (a circle whose centre lies below the
    ground, a polyline that stops underground).
    """
    inside = depth > 0
    if not inside.any():
        return None
    d = np.diff(np.concatenate([[0], inside.astype(np.int8), [0]]))
    starts, ends = np.flatnonzero(d == 1), np.flatnonzero(d == -1) - 1
    k = int(np.argmax(xs[ends] - xs[starts]))
    i0, i1 = starts[k], ends[k]

    if i0 == 0 or i1 == xs.size - 1:
        return None

    def cross(i, j):        # zero of depth between samples i (outside) and j (inside)
        return xs[i] + (xs[j] - xs[i]) * depth[i] / (depth[i] - depth[j])
    x0, x1 = cross(i0 - 1, i0), cross(i1 + 1, i1)
    return (x0, x1) if x1 > x0 else None


def circle_slices(soil: SlopeSoil, xc: float, yc: float, radius: float, n: int = 40,
                  samples: int = 400) -> Slices | None:
    """Slices of the circle centred at (xc, yc); None when it does not cut the ground."""
    xs = np.linspace(xc - radius, xc + radius, samples)
    yb = yc - np.sqrt(np.maximum(radius * radius - (xs - xc) ** 2, 0.0))
    seg = _inside_segment(xs, soil.surface(xs) - yb)
    if seg is None:
        return None

    def base(x):
        return yc - np.sqrt(np.maximum(radius * radius - (x - xc) ** 2, 0.0))

    def slope(x):
        return (x - xc) / np.sqrt(np.maximum(radius * radius - (x - xc) ** 2, 1e-300))

    def arc(edges):         # exact arc length of each slice's base: R (angle difference)
        return radius * np.diff(np.arcsin(np.clip((edges - xc) / radius, -1.0, 1.0)))
    return _slices(soil, seg[0], seg[1], base, slope, n, arc)


def polyline_slices(soil: SlopeSoil, px: Array, py: Array, n: int = 40) -> Slices | None:
    """Slices of a non-circular slip surface through the points (px, py), ordered by x.

    The surface is extended by the ground where it does not reach it: the slide runs between
    the first and last points where the polyline lies below the ground.
    """
    px, py = np.asarray(px, float), np.asarray(py, float)
    if np.any(np.diff(px) <= 0):
        raise InputError("a slip surface's points must have increasing x", field="surface",
                         fix="order the points from left to right")
    xs = np.linspace(px[0], px[-1], 400)
    seg = _inside_segment(xs, soil.surface(xs) - np.interp(xs, px, py))
    if seg is None:
        return None
    seg_slope = np.diff(py) / np.diff(px)

    def slope(x):
        i = np.clip(np.searchsorted(px, x) - 1, 0, px.size - 2)
        return seg_slope[i]
    # slices never straddle a vertex: their edges include the vertices inside the slide
    inner = px[(px > seg[0]) & (px < seg[1])]
    bounds = np.concatenate([[seg[0]], inner, [seg[1]]])
    pieces = np.maximum(1, np.round(n * np.diff(bounds) / (seg[1] - seg[0])).astype(int))
    parts = [_slices(soil, a, b, lambda x: np.interp(x, px, py), slope, int(k))
             for a, b, k in zip(bounds[:-1], bounds[1:], pieces)]
    cat = {f: np.concatenate([getattr(p, f) for p in parts])
           for f in ("x", "y", "width", "weight", "c", "tan_phi", "u", "top")}
    dydx = slope(cat["x"])
    driving = np.sum(cat["weight"] * np.sin(np.arctan(-dydx)))
    direction = 1 if driving >= 0 else -1
    return Slices(cat["x"], cat["y"], cat["width"], np.arctan(-direction * dydx), cat["weight"],
                  cat["c"], cat["tan_phi"], cat["u"], direction, cat["top"])


def _driving(s: Slices) -> float:
    return float(np.sum(s.weight * np.sin(s.alpha)))


def bishop(s: Slices, tol: float = 1e-6, max_iter: int = 200) -> float:
    """Factor of safety by Bishop's simplified method (Bishop 1955), circular surfaces.

    Returns ``inf`` when nothing drives the slide (no weight moves it downhill).
    """
    drive = _driving(s)
    if drive <= 0:
        return float("inf")
    resist_num = s.c * s.width + (s.weight - s.u * s.width) * s.tan_phi
    cos_a = 1.0 / s.secant
    toe = s.alpha < 0
    F = 1.0
    for _ in range(max_iter):
        m = cos_a * (1.0 + np.tan(s.alpha) * s.tan_phi / F)
        m = np.where(toe, np.maximum(m, M_ALPHA_FLOOR), m)
        F_new = float(np.sum(resist_num / m) / drive)
        if abs(F_new - F) < tol * F_new:
            return F_new
        F = F_new
    return F


def _spencer_q(s: Slices, F: float, theta: float) -> Array:
    """Interslice resultant change Q of each slice (Spencer 1967)."""
    ca, sa, sec = np.cos(s.alpha), np.sin(s.alpha), s.secant
    num = (s.c * s.width * sec / F + s.tan_phi / F * (s.weight * ca - s.u * s.width * sec)
           - s.weight * sa)
    den = np.cos(s.alpha - theta) * (1.0 + np.tan(s.alpha - theta) * s.tan_phi / F)
    return num / den


def spencer(s: Slices, F0: float | None = None) -> tuple[float, float]:
    """Factor of safety and interslice force angle (rad) by Spencer's method (Spencer 1967).

    Solves force equilibrium ``sum Q = 0`` and moment equilibrium
    ``sum Q (x' sin theta + y cos theta) = 0`` (Q acting through each base mid-point, ``x'`` in the
    frame of motion) for ``F`` and ``theta``. Returns ``(inf, 0)`` when nothing drives the slide.
    """
    if _driving(s) <= 0:
        return float("inf"), 0.0
    xm = s.direction * s.x
    xm = xm - xm.mean()
    ym = s.y - s.y.mean()

    def eqs(v):
        F, theta = v
        F = max(F, 1e-3)
        q = _spencer_q(s, F, theta)
        scale = np.sum(s.weight)
        return [np.sum(q) / scale, np.sum(q * (xm * np.sin(theta) + ym * np.cos(theta))) / scale]

    start = F0 if F0 is not None else bishop(s) if np.isfinite(bishop(s)) else 1.0
    for guess in ([start, 0.1], [start, 0.3], [start, -0.1], [start, 0.0]):
        sol = optimize.root(eqs, guess, method="hybr")
        F, theta = sol.x
        if sol.success and F > 0 and abs(theta) < np.pi / 2 and max(map(abs, eqs(sol.x))) < 1e-8:
            return float(F), float(theta)
    raise InputError("Spencer's method found no factor of safety for this slip surface",
                     field="stability", fix="check the surface: it may be too steep at its ends")
