"""Slope stability of a section through construction: limit equilibrium by slices.

- :mod:`solver.stability.slices` - slices of a circular or non-circular slip surface; Bishop's
  simplified method (Bishop 1955) and Spencer's method (Spencer 1967).
- :mod:`solver.stability.search` - the search for the least factor of safety over circles and
  non-circular surfaces.

Results inform design: they need review by a qualified engineer; local codes and licensed
practice govern.
"""

from .search import CriticalSurface, SearchBox, default_box, search_circles, search_noncircular, spencer_on
from .slices import Slices, SlopeSoil, bishop, circle_slices, polyline_slices, spencer

__all__ = ["CriticalSurface", "SearchBox", "Slices", "SlopeSoil", "bishop", "circle_slices",
           "default_box", "polyline_slices", "search_circles", "search_noncircular", "spencer",
           "spencer_on"]
