"""The engineer's hand method, beside the finite-element solution.

Modules (pure functions over numpy arrays; numpy/scipy and :mod:`solver.analytic` only):

- :mod:`solver.hand.stress` - stress increase under strips, embankments (any piecewise-linear
  section), rectangles and circles in an elastic half-space; 2:1 spread.
- :mod:`solver.hand.load_objects` - the same loads as objects, and their superposition.
- :mod:`solver.hand.settlement` - layers, sublayers, initial effective stress, primary
  (Cc/Cr/sigma'_p or mv) and secondary settlement.
- :mod:`solver.hand.elastic` - immediate (undrained elastic) settlement of circles, discs and
  strips on a half-space or a layer.
- :mod:`solver.hand.terzaghi` - Terzaghi and Olson rates of one layer; the time a sampled
  curve reaches a level.
- :mod:`solver.hand.rate` - a finite-difference model of a stack of unlike layers.
- :mod:`solver.hand.history` - the settlement of a column through a staged load history.
- :mod:`solver.hand.differential` - differential settlement, angular distortion, limits.
- :mod:`solver.hand.parameters` - mv, cv, Cc, Cr from other parameters.
- :mod:`solver.hand.radial` - radial consolidation towards vertical drains: the unit cell,
  smear, well resistance, free strain, Carrillo's combination, the plane-strain match, the
  spacing that reaches a target degree.

The whole-model estimate reads :mod:`solver.model` (never the FE code):
:mod:`solver.hand.estimate` (:func:`~solver.hand.estimate.hand_estimate`) puts together
:mod:`solver.hand.loads` (the model's loads as parts), :mod:`solver.hand.ground` (the layers
and the column under a probe), :mod:`solver.hand.stages` (the load history) and
:mod:`solver.hand.immediate` (the immediate settlement of a load on the column).

Conventions: kN, m, kPa, kN/m3, days, permeability m/day; stresses compression positive,
depth z positive downward from the ground surface, settlement positive downward.

Results inform design: they need review by a qualified engineer; local codes and licensed
practice govern.
"""
