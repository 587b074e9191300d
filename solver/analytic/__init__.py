"""Closed-form solutions the finite-element results are checked against.

Each function cites the published work its formula comes from. Equation numbers or details
quoted from memory say so. The module depends on numpy and scipy only and never imports
the finite-element code.

Units: kN, m, kPa, days; permeability k in m/day, unit weight of water gamma_w in kN/m3, so
k / gamma_w is in m2/(kPa day) and consolidation coefficients are in m2/day.

Signs
-----
- Excess pore pressure: positive in compression (everywhere in this module).
- Settlement: positive downward.
- Mandel stresses and the Lame cylinder: tension positive (mechanics convention, as in the
  finite-element core).
- Strip and line loads on a half-space: compression positive (soil mechanics convention, as in
  Poulos & Davis 1974), z is depth, positive downward.
- Modified Cam Clay (critical state): stresses and strains compression positive, p' and q
  in kPa, as in Wood (1990).

Array convention
----------------
Functions of time and position return shape ``time.shape + position.shape``: a time array
(nt,) and a position array (nx,) give (nt, nx); a scalar time gives (nx,); scalars give a numpy
scalar.

Modules, one family of closed forms each (all import only :mod:`.arguments`):
:mod:`.consolidation` (Terzaghi, Olson ramp), :mod:`.mandel` (Mandel's block),
:mod:`.elastic` (line and strip loads on a half-space, Lame cylinder, oedometer modulus),
:mod:`.critical_state` (Modified Cam Clay at a point: compression lines, yield ellipse,
drained and undrained triaxial paths, the e - log sigma'_v rule; compression positive).
"""

from .arguments import AnalyticArgumentError
from .consolidation import (consolidation_coefficient, olson_ramp_average_degree,
                            olson_ramp_excess_pressure, terzaghi_average_degree,
                            terzaghi_excess_pressure, terzaghi_time_factor, time_factor)
from .critical_state import (CriticalState, critical_state_void_ratio,
                             drained_triaxial_critical_state, one_dimensional_compression,
                             undrained_critical_state, undrained_mean_stress,
                             void_ratio_on_line, volumetric_strain_on_ellipse, yield_function)
from .elastic import (CylinderSolution, PlaneStresses, flamant_line_load_stresses,
                      lame_cylinder, oedometer_modulus, strip_load_stresses)
from .mandel import (MandelParameters, mandel_horizontal_displacement, mandel_initial_pressure,
                     mandel_pressure, mandel_roots, mandel_vertical_displacement,
                     mandel_vertical_stress)

__all__ = [
    "AnalyticArgumentError",
    "terzaghi_excess_pressure", "terzaghi_average_degree", "terzaghi_time_factor",
    "time_factor", "consolidation_coefficient",
    "olson_ramp_average_degree", "olson_ramp_excess_pressure",
    "MandelParameters", "mandel_roots", "mandel_initial_pressure", "mandel_pressure",
    "mandel_vertical_stress", "mandel_vertical_displacement", "mandel_horizontal_displacement",
    "PlaneStresses", "strip_load_stresses", "flamant_line_load_stresses",
    "CylinderSolution", "lame_cylinder", "oedometer_modulus",
    "CriticalState", "void_ratio_on_line", "critical_state_void_ratio", "yield_function",
    "volumetric_strain_on_ellipse", "drained_triaxial_critical_state", "undrained_mean_stress",
    "undrained_critical_state", "one_dimensional_compression",
]

