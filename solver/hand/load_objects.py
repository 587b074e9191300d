"""Surface loads as small objects that give the vertical stress below them (hand method).

:class:`StripLoad`, :class:`ProfileLoad` (any piecewise-linear strip pressure, e.g. an
embankment with berms), :class:`EmbankmentLoad`, :class:`RectangleLoad` and
:class:`CircleLoad` wrap the closed forms of :mod:`solver.hand.stress` with their parameters
checked once; :func:`superpose` adds any of them (linear elasticity).

Conventions as in :mod:`solver.hand.stress`: compression positive, depth ``z`` positive
downward from the ground surface, metres, kPa.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Iterable, Protocol

import numpy as np
from numpy.typing import ArrayLike, NDArray

from solver.errors import InputError

from .stress import (circle_vertical_stress, embankment_profile, profile_load_stress,
                     rectangle_vertical_stress, uniform_strip_stress)

__all__ = ["Load", "StripLoad", "ProfileLoad", "EmbankmentLoad", "RectangleLoad", "CircleLoad",
           "superpose"]



class Load(Protocol):
    """Anything with a vertical stress increase at points (x, z[, y])."""

    def vertical_stress(self, x: ArrayLike, z: ArrayLike, y: ArrayLike = 0.0) -> NDArray[np.float64]:
        ...


def _check(load_name: str, value: float, attr: str, what: str, positive: bool = True) -> None:
    value = float(value)
    bad = (not np.isfinite(value)) or (positive and value <= 0.0)
    if bad:
        raise InputError(f"load '{load_name}': {what} must be {'> 0' if positive else 'finite'}, "
                         f"got {value!r}",
                         field=f"loads.{load_name}.{attr}", fix=f"give {what}" + (" > 0" if positive else ""))


def _check_fields(load, *specs: tuple[str, str, bool]) -> None:
    """:func:`_check` each ``(attribute, what it is, must be > 0)`` of a load object."""
    for attr, what, positive in specs:
        _check(load.name, getattr(load, attr), attr, what, positive=positive)


_CENTRE_XY = (("x_center", "the centre x", False), ("y_center", "the centre y", False))
_PRESSURE = ("q", "the pressure", False)


@dataclass(frozen=True)
class StripLoad:
    """Uniform strip load (plane strain), infinitely long in y.

    Attributes: ``x_center`` (m), ``width`` (m), ``q`` (kPa), ``name``.
    """

    x_center: float
    width: float
    q: float
    name: str = "strip"

    def __post_init__(self) -> None:
        _check_fields(self, ("x_center", "the centre line", False), ("width", "the width", True),
                      _PRESSURE)

    def stresses(self, x: ArrayLike, z: ArrayLike) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
        """(sigma_z, sigma_x) in kPa, see :func:`uniform_strip_stress`."""
        return uniform_strip_stress(x, z, self.width, self.q, self.x_center)

    def vertical_stress(self, x: ArrayLike, z: ArrayLike, y: ArrayLike = 0.0) -> NDArray[np.float64]:
        """Vertical stress increase (kPa); ``y`` is ignored (plane strain)."""
        return self.stresses(x, z)[0]


@dataclass(frozen=True)
class ProfileLoad:
    """Piecewise-linear strip pressure (plane strain): any embankment section with berms.

    Attributes: ``x_nodes`` (m, non-decreasing), ``q_nodes`` (kPa), ``name``.
    """

    x_nodes: tuple[float, ...]
    q_nodes: tuple[float, ...]
    name: str = "profile"

    def __post_init__(self) -> None:
        xn = np.asarray(self.x_nodes, dtype=float).ravel()
        qn = np.asarray(self.q_nodes, dtype=float).ravel()
        if xn.size < 2 or xn.size != qn.size:
            raise InputError(f"load '{self.name}': x_nodes and q_nodes need the same length >= 2, "
                             f"got {xn.size} and {qn.size}", field=f"loads.{self.name}.x_nodes",
                             fix="give one surface pressure per node")
        if np.any(np.diff(xn) < 0.0) or not np.all(np.isfinite(np.r_[xn, qn])):
            raise InputError(f"load '{self.name}': x_nodes must be finite and non-decreasing",
                             field=f"loads.{self.name}.x_nodes", fix="order the nodes left to right")
        object.__setattr__(self, "x_nodes", tuple(xn.tolist()))
        object.__setattr__(self, "q_nodes", tuple(qn.tolist()))

    @classmethod
    def from_fill_surface(cls, x: ArrayLike, fill_height: ArrayLike, unit_weight: float,
                          name: str = "fill") -> "ProfileLoad":
        """Fill of ``unit_weight`` (kN/m3) whose thickness above ground is ``fill_height(x)`` (m)."""
        _check(name, unit_weight, "unit_weight", "the fill unit weight")
        h = np.asarray(fill_height, dtype=float)
        if np.any(h < 0.0):
            raise InputError(f"load '{name}': fill height must be >= 0", field=f"loads.{name}.fill_height")
        return cls(tuple(np.asarray(x, dtype=float).ravel()), tuple((unit_weight * h).ravel()), name)

    def stresses(self, x: ArrayLike, z: ArrayLike) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
        """(sigma_z, sigma_x) in kPa, see :func:`profile_load_stress`."""
        return profile_load_stress(x, z, self.x_nodes, self.q_nodes)

    def vertical_stress(self, x: ArrayLike, z: ArrayLike, y: ArrayLike = 0.0) -> NDArray[np.float64]:
        """Vertical stress increase (kPa); ``y`` is ignored (plane strain)."""
        return self.stresses(x, z)[0]


@dataclass(frozen=True)
class EmbankmentLoad:
    """Symmetric trapezoidal embankment (plane strain).

    Attributes: ``x_center`` (m), ``crest_width`` (m), ``side_slope`` (horizontal per unit
    vertical, e.g. 2 for 2H:1V), ``height`` (m), ``unit_weight`` (kN/m3), ``name``.
    """

    x_center: float
    crest_width: float
    side_slope: float
    height: float
    unit_weight: float
    name: str = "embankment"
    _profile: ProfileLoad | None = field(default=None, init=False, repr=False, compare=False)

    def __post_init__(self) -> None:
        _check_fields(self, ("x_center", "the centre line", False), ("height", "the fill height", True),
                      ("unit_weight", "the fill unit weight", True))
        for attr in ("crest_width", "side_slope"):
            v = float(getattr(self, attr))
            if not np.isfinite(v) or v < 0.0:
                raise InputError(f"load '{self.name}': {attr} must be >= 0, got {v!r}",
                                 field=f"loads.{self.name}.{attr}", fix=f"give {attr} >= 0")
        if self.crest_width == 0.0 and self.side_slope == 0.0:
            raise InputError(f"load '{self.name}': no crest and vertical sides give no width",
                             field=f"loads.{self.name}.crest_width", fix="give crest_width > 0")
        xn, qn = embankment_profile(self.x_center, self.crest_width, self.side_slope, self.height,
                                    self.unit_weight)
        object.__setattr__(self, "_profile", ProfileLoad(tuple(xn), tuple(qn), self.name))

    def profile(self) -> ProfileLoad:
        """The same load as a :class:`ProfileLoad` (toe, crest edges, toe)."""
        assert self._profile is not None
        return self._profile

    def stresses(self, x: ArrayLike, z: ArrayLike) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
        """(sigma_z, sigma_x) in kPa."""
        return self.profile().stresses(x, z)

    def vertical_stress(self, x: ArrayLike, z: ArrayLike, y: ArrayLike = 0.0) -> NDArray[np.float64]:
        """Vertical stress increase (kPa); ``y`` is ignored (plane strain)."""
        return self.stresses(x, z)[0]


@dataclass(frozen=True)
class _PlanLoad:
    """A load placed in plan by its centre ``x_center``, ``y_center`` (m)."""

    x_center: float
    y_center: float


@dataclass(frozen=True)
class RectangleLoad(_PlanLoad):
    """Uniform pressure on a rectangle in plan.

    Attributes: ``x_center``, ``y_center`` (m), ``length_x``, ``width_y`` (m), ``q`` (kPa), ``name``.
    """

    length_x: float
    width_y: float
    q: float
    name: str = "rectangle"

    def __post_init__(self) -> None:
        _check_fields(self, *_CENTRE_XY, ("length_x", "the length along x", True),
                      ("width_y", "the width along y", True), _PRESSURE)

    def vertical_stress(self, x: ArrayLike, z: ArrayLike, y: ArrayLike = 0.0) -> NDArray[np.float64]:
        """Vertical stress increase (kPa), see :func:`rectangle_vertical_stress`."""
        return rectangle_vertical_stress(x, y, z, self.length_x, self.width_y, self.q,
                                         self.x_center, self.y_center)


@dataclass(frozen=True)
class CircleLoad(_PlanLoad):
    """Uniform pressure on a circle in plan.

    Attributes: ``x_center``, ``y_center`` (m), ``radius`` (m), ``q`` (kPa), ``name``.
    """

    radius: float
    q: float
    name: str = "circle"

    def __post_init__(self) -> None:
        _check_fields(self, *_CENTRE_XY, ("radius", "the radius", True), _PRESSURE)

    def vertical_stress(self, x: ArrayLike, z: ArrayLike, y: ArrayLike = 0.0) -> NDArray[np.float64]:
        """Vertical stress increase (kPa), see :func:`circle_vertical_stress`."""
        return circle_vertical_stress(x, y, z, self.radius, self.q, self.x_center, self.y_center)


def superpose(loads: Iterable[Load], x: ArrayLike, z: ArrayLike, y: ArrayLike = 0.0) -> NDArray[np.float64]:
    """Sum of the vertical stress increases (kPa) of several loads at points (x, z, y).

    Linear elasticity makes the stresses additive (superposition; common practice).
    Plane-strain loads ignore ``y``. Returns shape ``broadcast(x, z, y)``.
    """
    shape = np.broadcast_shapes(np.shape(x), np.shape(z), np.shape(y))
    total = np.zeros(shape)
    for load in loads:
        total = total + np.broadcast_to(load.vertical_stress(x, z, y), shape)
    return total
