"""Immediate (undrained elastic) settlement of a model load on the layered column.

:func:`load_immediate_settlement` sums, layer by layer below a depth, the half-space
displacement between the layer's faces (Steinbrenner 1934 summation) of each spread part of a
load: strips by :func:`solver.hand.elastic.strip_immediate_settlement`, discs on the axis by
:func:`solver.hand.elastic.circle_axis_displacement` and off it by
:func:`solver.hand.elastic.disc_displacement`. Free-draining layers and layers without an
undrained modulus add nothing.

Units: kN, m, kPa; depth positive downward.
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import NDArray

from . import elastic
from .ground import Column
from .loads import Load, on_rigid_base

__all__ = ["load_immediate_settlement"]


def load_immediate_settlement(load: Load, col: Column, x: float, depth: float, axi: bool) -> float:
    """Immediate settlement (m) of the soil below ``depth`` at x under one load at factor 1."""
    rigid = on_rigid_base(load, x, depth)
    total = 0.0
    for p in load.spread_parts:
        if p.shape == "uniform":
            continue
        for i in range(len(col.layers)):
            a_, b_ = col.tops[i], col.tops[i + 1]
            if a_ < depth - 1e-9 or col.free[i] or not np.isfinite(col.eu[i]):
                continue
            a, b = max(a_ - p.level, 0.0), b_ - p.level
            if b <= 0.0:
                continue
            if p.shape == "strip":
                xs = (p.center + 0.5 * p.width * np.polynomial.legendre.leggauss(32)[0]
                      if rigid else np.array([x]))
                wts = (0.5 * np.polynomial.legendre.leggauss(32)[1] if rigid else np.ones(1))

                def f(h: float) -> NDArray[np.float64]:
                    if h <= 0.0:
                        return np.zeros(xs.shape)
                    return elastic.strip_immediate_settlement(xs, p.q, p.width, h, col.eu[i], 0.5,
                                                              p.center)
                total += float(np.sum(wts * (f(b) - f(a))))
            else:
                r = 0.0 if rigid else abs(x)
                zz = np.array([a, b])
                if r <= 1e-9:
                    w = elastic.circle_axis_displacement(zz, p.q, 0.5 * p.width, col.eu[i], 0.5)
                else:
                    w = elastic.disc_displacement(r, zz, 0.5 * p.width, p.q, col.eu[i], 0.5)
                total += float(w[0] - w[1]) * (math.pi / 4.0 if rigid else 1.0)
    return total

