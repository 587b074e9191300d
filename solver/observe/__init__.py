"""The observational method: readings in, forecasts out.

- :mod:`solver.observe.readings` - instrument readings from CSV (times or dates), checked line
  by line.
- :mod:`solver.observe.methods` - Asaoka's (1978) construction and the hyperbolic method on
  settlement readings.

Results inform design: they need review by a qualified engineer; local codes and licensed
practice govern.
"""

from .methods import AsaokaFit, HyperbolicFit, asaoka, hyperbolic, resample
from .readings import Readings, parse_readings, read_readings

__all__ = ["AsaokaFit", "HyperbolicFit", "Readings", "asaoka", "hyperbolic", "parse_readings",
           "read_readings", "resample"]
