"""The error a closed form raises for arguments outside its range, and the argument checks
the closed forms share."""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from ..errors import InputError


class AnalyticArgumentError(InputError, ValueError):
    """A closed-form solution was asked for with arguments outside its range.

    It is both the package's ``InputError`` and a ``ValueError``; ``field`` names the argument.
    """


# ----------------------------------------------------------------------------- helpers
def _check_positive(value: float, name: str) -> float:
    value = float(value)
    if not np.isfinite(value) or value <= 0.0:
        raise AnalyticArgumentError(f"must be a positive finite number, got {value!r}",
                                    field=name)
    return value


def _check_finite(value: float, name: str) -> float:
    value = float(value)
    if not np.isfinite(value):
        raise AnalyticArgumentError(f"must be a finite number, got {value!r}", field=name)
    return value


def _check_poisson(nu: float, name: str) -> float:
    nu = float(nu)
    if not (-1.0 < nu < 0.5):
        raise AnalyticArgumentError(f"drained Poisson's ratio must lie in (-1, 0.5), got {nu!r}",
                                    field=name)
    return nu


def _as_array(values: ArrayLike, name: str, minimum: float | None = None) -> np.ndarray:
    arr = np.asarray(values, dtype=float)
    if not np.all(np.isfinite(arr)):
        raise AnalyticArgumentError("must be finite (no nan or inf)", field=name)
    if minimum is not None and arr.size and arr.min() < minimum:
        raise AnalyticArgumentError(f"must be >= {minimum:g}, smallest value is {arr.min():g}",
                                    field=name)
    return arr


def _check_terms(n_terms: int) -> int:
    if isinstance(n_terms, bool) or int(n_terms) != n_terms or n_terms < 1:
        raise AnalyticArgumentError(f"must be a positive integer, got {n_terms!r}",
                                    field="n_terms")
    return int(n_terms)


def _scalar_if_0d(arr: np.ndarray) -> np.ndarray:
    # a 0-d array becomes a numpy scalar; other shapes are returned unchanged
    return arr[()] if arr.ndim == 0 else arr

