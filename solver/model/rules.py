"""The field tables: for every table of a model file, how each field is read and checked
(its unit kind, an example as a user writes it, its bounds and the advice when it is out of
them). Reading (:mod:`.read`), checking (:mod:`.checks`) and writing (:mod:`.write`) all walk
these tables.
"""

from __future__ import annotations

from dataclasses import dataclass

from .schema import (ANALYSES, LINE_KINDS, MATERIAL_MODELS, SECTION_KINDS, STAGE_KINDS,
                     STRENGTH_KINDS)


@dataclass(frozen=True)
class _Rule:
    """How one field is read and checked.

    kind : a unit kind of :mod:`solver.units` ("length", "pressure", ...), or "int", "text",
        "bool", "choice", "texts" (list of names), "list:<unit kind>" (list of quantities).
    example : the field as a user would write it, quoted in fixes.
    low, high : open (default) or closed bounds on the value; None = unbounded.
    fix : replaces the default advice for a value out of bounds.
    attr : dataclass attribute when it differs from the TOML key (None: same).
    """
    kind: str
    example: str
    low: float | None = None
    high: float | None = None
    low_open: bool = True
    high_open: bool = True
    choices: tuple[str, ...] = ()
    fix: str | None = None
    attr: str | None = None

    def bounds_text(self) -> str:
        if self.low is not None and self.high is not None:
            lo = "(" if self.low_open else "["
            hi = ")" if self.high_open else "]"
            return f"must lie in {lo}{self.low:g}, {self.high:g}{hi}"
        if self.low is not None:
            if self.low == 0:
                return "must be positive" if self.low_open else "must not be negative"
            return f"must be {'greater than' if self.low_open else 'at least'} {self.low:g}"
        if self.high is not None:
            return f"must be {'less than' if self.high_open else 'at most'} {self.high:g}"
        return ""

    def violates(self, v: float) -> bool:
        if self.low is not None and (v <= self.low if self.low_open else v < self.low):
            return True
        if self.high is not None and (v >= self.high if self.high_open else v > self.high):
            return True
        return False


def _r(kind: str, example: str, **kw) -> _Rule:
    return _Rule(kind, example, **kw)


_POS = {"low": 0.0}
_NONNEG = {"low": 0.0, "low_open": False}

_OEDOMETER_RULES: dict[str, _Rule] = {
    "compression_index": _r("number", "compression_index = 0.9", **_POS),
    "recompression_index": _r("number", "recompression_index = 0.09", **_POS),
    "void_ratio": _r("number", "void_ratio = 2.0", **_POS),
    "preconsolidation_pressure": _r("pressure", 'preconsolidation_pressure = "60 kPa"', **_POS),
    "overconsolidation_ratio": _r(
        "number", "overconsolidation_ratio = 1.5", low=1.0, low_open=False,
        fix="OCR = sigma'_p / sigma'_v0 is at least 1; a layer with OCR below 1 is still "
            "consolidating under its own weight, a state the model does not start from; "
            "write overconsolidation_ratio = 1.0 for a normally consolidated layer"),
    "preconsolidation_margin": _r("pressure", 'preconsolidation_margin = "20 kPa"', **_NONNEG),
    "volume_compressibility": _r("compressibility", 'volume_compressibility = "2e-4 1/kPa"',
                                 **_POS),
    "consolidation_coefficient": _r("consolidation_coefficient",
                                    'consolidation_coefficient = "3 m2/year"', **_POS),
    "secondary_compression_index": _r("number", "secondary_compression_index = 0.02",
                                      **_NONNEG),
}

_UNDRAINED_RULES: dict[str, _Rule] = {
    "modulus": _r("pressure", 'modulus = "4 MPa"', **_POS),
    "strength": _r("pressure", 'strength = "15 kPa"', **_POS),
    "modulus_ratio": _r("number", "modulus_ratio = 300", **_POS,
                        fix="E_u / s_u is positive, commonly some hundreds for soft clays "
                            "(common practice); e.g. modulus_ratio = 300"),
    "pore_pressure_parameter": _r(
        "number", "pore_pressure_parameter = 0.7", low=-0.5, high=1.5, low_open=False,
        high_open=False,
        fix="Skempton's A lies between about -0.5 (heavily overconsolidated clay) and 1.5 "
            "(sensitive clay); e.g. pore_pressure_parameter = 0.7"),
}

_K_FIX = ("give the permeability (hydraulic conductivity) in m/day or with units, e.g. "
          "permeability = \"1e-9 m/s\"; use a very small value for a nearly impermeable layer")
_MATERIAL_RULES: dict[str, _Rule] = {
    "model": _r("choice", 'model = "linear elastic"', choices=MATERIAL_MODELS),
    "youngs_modulus": _r("pressure", 'youngs_modulus = "2 MPa"', **_POS),
    "poisson_ratio": _r(
        "number", "poisson_ratio = 0.3", low=-1.0, high=0.5,
        fix="give the drained Poisson's ratio, e.g. poisson_ratio = 0.3; the undrained "
            "response at first loading comes from the pore water in the coupled analysis, "
            "so do not use a value near 0.5 to imitate it"),
    "constrained_modulus": _r("pressure", 'constrained_modulus = "3 MPa"', **_POS),
    # Shorthand for both directions; not an attribute of Material.
    "permeability": _r("permeability", 'permeability = "1e-9 m/s"', **_POS, fix=_K_FIX),
    "permeability_x": _r("permeability", 'permeability_x = "2e-9 m/s"', **_POS, fix=_K_FIX),
    "permeability_y": _r("permeability", 'permeability_y = "1e-9 m/s"', **_POS, fix=_K_FIX),
    "unit_weight": _r("unit_weight", 'unit_weight = "18 kN/m3"', **_POS),
    "saturated_unit_weight": _r("unit_weight", 'saturated_unit_weight = "19 kN/m3"', **_POS),
    "k0": _r("number", "k0 = 0.6", **_POS,
             fix="K0 = sigma'_h / sigma'_v is positive, typically 0.4 to 1 (e.g. k0 = 0.6); "
                 "or leave it out and give friction_angle (K0 = 1 - sin phi')"),
    "friction_angle": _r("angle", 'friction_angle = "28 deg"', low=0.0, high=60.0,
                         fix="give the effective friction angle phi' in degrees, between 0 "
                             "and 60, e.g. friction_angle = \"28 deg\""),
    "biot_coefficient": _r("number", "biot_coefficient = 1.0", low=0.0, high=1.0,
                           high_open=False, fix="use biot_coefficient = 1.0 for soils"),
    "storage": _r("compressibility", 'storage = "0 1/kPa"', **_NONNEG,
                  fix="use storage = 0 for incompressible water and grains"),
    "lambda": _r("number", "lambda = 0.3", **_POS, attr="lambda_"),
    "kappa": _r("number", "kappa = 0.03", **_POS),
    "M": _r("number", "M = 1.1", **_POS),
    "void_ratio": _r("number", "void_ratio = 2.0", **_POS),
    "permeability_change_index": _r("number", "permeability_change_index = 0.5", **_POS),
    # strength, for the stability checks
    "strength": _r("choice", 'strength = "undrained"', choices=STRENGTH_KINDS),
    "cohesion": _r("pressure", 'cohesion = "5 kPa"', **_NONNEG,
                   fix="give the effective cohesion c' in kPa, 0 or more, e.g. "
                       "cohesion = \"5 kPa\""),
    "undrained_strength_ratio": _r(
        "number", "undrained_strength_ratio = 0.22", low=0.0, high=2.0,
        fix="S = s_u / sigma'_v of the normally consolidated clay, typically 0.2 to 0.3, e.g. "
            "undrained_strength_ratio = 0.22"),
    "strength_exponent": _r("number", "strength_exponent = 0.8", low=0.0, high=1.0,
                            low_open=False, high_open=False,
                            fix="the exponent m of OCR is typically 0.75 to 0.85, e.g. "
                                "strength_exponent = 0.8"),
    "undrained_strength": _r("pressure", 'undrained_strength = "15 kPa"', **_POS),
    "undrained_strength_gradient": _r("unit_weight", 'undrained_strength_gradient = "1.5 kPa/m"',
                                      **_NONNEG),
    "stiffness_from_oedometer": _r("bool", "stiffness_from_oedometer = true"),
}

_LAYER_RULES: dict[str, _Rule] = {
    "name": _r("text", 'name = "upper_clay"'),
    "material": _r("text", 'material = "soft_clay"'),
    "thickness": _r("length", "thickness = 4.0", **_POS),
    "thickness_right": _r("length", "thickness_right = 5.0", **_POS),
    "mesh_size": _r("length", "mesh_size = 0.5", **_POS,
                    fix="give the layer's element size in m, e.g. mesh_size = 0.5, or leave "
                        "it out to use the section's sizes"),
}

_BERM_RULES: dict[str, _Rule] = {
    "width": _r("length", "width = 8.0", **_POS),
    "height": _r("length", "height = 1.5", **_POS),
}

_EMBANKMENT_RULES: dict[str, _Rule] = {
    "crest_width": _r("length", "crest_width = 12.0", **_POS),
    "height": _r("length", "height = 4.5", **_POS),
    "side_slope": _r("number", "side_slope = 2.0", **_POS,
                     fix="give the horizontal run per unit rise, e.g. side_slope = 2.0 for "
                         "1V:2H"),
    "lifts": _r("list:length", "lifts = [1.5, 1.5, 1.5]", **_POS),
    "material": _r("text", 'material = "fill"'),
}

_FOOTING_RULES: dict[str, _Rule] = {
    "name": _r("text", 'name = "footing_1"'),
    "center": _r("length", "center = 0.0"),
    "width": _r("length", "width = 2.0", **_POS),
    "load": _r("pressure", 'load = "150 kPa"', **_POS,
               fix="give the vertical pressure on the base, positive downward, e.g. "
                   "load = \"150 kPa\"; to remove a load use a stage of kind \"load\" with "
                   "factor = 0"),
    "force": _r("line_force", 'force = "300 kN/m"', **_POS,
                fix="give the vertical force on the footing, positive downward"),
    "embedment": _r("length", "embedment = 1.0", **_NONNEG),
    "rigid": _r("bool", "rigid = true"),
    "eccentricity": _r("length", "eccentricity = 0.25"),
}

_LOAD_RULES: dict[str, _Rule] = {
    "name": _r("text", 'name = "traffic"'),
    "x_left": _r("length", "x_left = -6.0"),
    "x_right": _r("length", "x_right = 6.0"),
    "pressure": _r("pressure", 'pressure = "20 kPa"', **_POS,
                   fix="give the pressure positive downward, e.g. pressure = \"20 kPa\"; to "
                       "remove a load use a stage of kind \"load\" with factor = 0"),
}

_SECTION_RULES: dict[str, _Rule] = {
    "kind": _r("choice", 'kind = "embankment"', choices=SECTION_KINDS),
    "width": _r("length", "width = 80.0", **_POS),
    "depth": _r("length", "depth = 20.0", **_POS),
    "half": _r("bool", "half = true"),
    "mesh_size": _r("length", "mesh_size = 1.0", **_POS),
    "mesh_file": _r("text", 'mesh_file = "site.msh"'),
    "max_elements": _r("int", "max_elements = 3000000", low=1.0, low_open=False,
                       fix="give the most triangles the mesh may have, e.g. "
                           "max_elements = 3000000, or leave it out (3 million)"),
}

_GRADING_RULES: dict[str, _Rule] = {
    "enabled": _r("bool", "enabled = true"),
    "boundary_size": _r("length", "boundary_size = 0.1", **_POS,
                        fix="give the element size at draining boundaries in m, e.g. "
                            "boundary_size = 0.1, or leave it out to take it from c_v and "
                            "time_steps.first_step"),
    "min_size": _r("length", "min_size = 0.02", **_POS,
                   fix="give the finest element size the grading may use in m, e.g. "
                       "min_size = 0.02"),
    "element_budget": _r("int", "element_budget = 10000", low=1.0, low_open=False,
                         fix="give the most triangles the graded mesh may have, e.g. "
                             "element_budget = 10000, or leave it out (four times the mesh "
                             "without grading, at least 2500)"),
}

_WATER_RULES: dict[str, _Rule] = {
    "table_depth": _r("length", "table_depth = 1.0"),
    "unit_weight": _r("unit_weight", 'unit_weight = "9.81 kN/m3"', **_POS),
}
# The entries of [water.piezometric_depths] and [water.initial_excess_pore_pressures].
_PIEZOMETRIC_RULE = _r("length", 'sand = "-2 m"  (depth of the level; negative: above the '
                                 'ground)')
_EXCESS_RULE = _r("list:pressure", 'clay = ["0 kPa", "30 kPa"]  (top and base of the layer)')
_WATER_TABLES = ("piezometric_depths", "initial_excess_pore_pressures")

_DRAINAGE_RULES: dict[str, _Rule] = {
    "top": _r("bool", "top = true"),
    "base": _r("bool", "base = false"),
    "sides": _r("bool", "sides = false"),
    "drained_edges": _r("texts", 'drained_edges = ["top", "sand_base"]'),
    "fixed_edges": _r("texts", 'fixed_edges = ["bottom"]'),
    "roller_edges": _r("texts", 'roller_edges = ["left", "right"]'),
}

_STAGE_RULES: dict[str, _Rule] = {
    "name": _r("text", 'name = "lift 1"'),
    "kind": _r("choice", 'kind = "consolidate"', choices=STAGE_KINDS),
    # Zero only for a "load" or "remove" stage (made at once); the other kinds are checked
    # against _POSITIVE_DURATION in checks.py.
    "duration": _r("time", 'duration = "60 days"', **_NONNEG),
    "lift": _r("int", "lift = 1", low=1.0, low_open=False),
    "region": _r("text", 'region = "fill"'),
    "loads": _r("texts", 'loads = ["footing_1"]'),
    "factor": _r("number", "factor = 1.0", **_NONNEG,
                 fix="factor is the fraction of each named load present at the end of the "
                     "stage: 1 applies it, 0 removes it, 0.5 halves it"),
    "until_degree": _r("number", 'until_degree = "90 %"', low=0.0, high=1.0,
                       fix="give the average degree of consolidation as a fraction between 0 "
                           "and 1 or a percentage, e.g. until_degree = 0.9 or \"90 %\""),
}

_POSITIVE_DURATION = _r("time", 'duration = "60 days"', **_POS,
                        fix='give the stage a duration, e.g. duration = "60 days"; only a stage '
                            'of kind "load" or "remove" may last 0 days (the change made at '
                            'once, felt undrained)')

_TIME_STEP_RULES: dict[str, _Rule] = {
    "first_step": _r("time", 'first_step = "0.5 days"', **_POS),
    "growth": _r("number", "growth = 2.0", low=1.0, low_open=False),
    "steps_per_level": _r("int", "steps_per_level = 4", low=1.0, low_open=False),
    "max_step": _r("time", 'max_step = "1 year"', **_POS),
}

_PROBE_RULES: dict[str, _Rule] = {
    "name": _r("text", 'name = "centre"'),
    "x": _r("length", "x = 0.0"),
    "y": _r("length", "y = -3.5"),
}

_LINE_RULES: dict[str, _Rule] = {
    "name": _r("text", 'name = "surface"'),
    "x0": _r("length", "x0 = 0.0"),
    "y0": _r("length", "y0 = 0.0"),
    "x1": _r("length", "x1 = 40.0"),
    "y1": _r("length", "y1 = 0.0"),
    "points": _r("int", "points = 41", low=2.0, low_open=False,
                 fix="a line needs at least 2 sample points, e.g. points = 41"),
    "kind": _r("choice", 'kind = "surface"', choices=LINE_KINDS),
}

_OUTPUT_RULES: dict[str, _Rule] = {
    "times": _r("list:time", 'times = ["30 days", "1 year", "5 years"]', **_NONNEG),
    "every_step": _r("bool", "every_step = false"),
    "residual_after": _r("time", 'residual_after = "400 days"', **_NONNEG,
                         fix="give the day (from the start of the first stage) after which the "
                             "settlement still to come matters, e.g. residual_after = "
                             "\"400 days\" for paving on day 400"),
}

_LIMIT_RULES: dict[str, _Rule] = {
    "differential_settlement": _r("length", 'differential_settlement = "0.1 m"', **_POS),
    "change_of_gradient": _r("number", "change_of_gradient = 0.005", **_POS,
                             fix="give the largest change of the surface slope from one pair of "
                                 "probes to the next, e.g. change_of_gradient = 0.005 (0.5 %)"),
}

_STRUCTURE_RULES: dict[str, _Rule] = {
    "name": _r("text", 'name = "pump house"'),
    "probes": _r("texts", 'probes = ["house_west", "house_east"]'),
}

_STABILITY_RULES: dict[str, _Rule] = {
    "times": _r("list:time", 'times = ["20 days", "100 days"]', **_NONNEG),
    "required_factor_of_safety": _r(
        "number", "required_factor_of_safety = 1.3", low=1.0, low_open=False,
        fix="a required factor of safety is at least 1 (1.3 during construction is common "
            "practice for some authorities; local codes govern), e.g. "
            "required_factor_of_safety = 1.3"),
    "min_depth": _r("length", "min_depth = 0.5", **_POS),
    "x_limits": _r("list:length", "x_limits = [0.0, 40.0]"),
    "lowest_tangent": _r("length", "lowest_tangent = -11.5"),
    "noncircular": _r("bool", "noncircular = false"),
}

_MODEL_RULES: dict[str, _Rule] = {
    "title": _r("text", 'title = "Road embankment (invented site)"'),
    "analysis": _r("choice", 'analysis = "plane strain"', choices=ANALYSES),
}
_MODEL_TABLES = ("materials", "layers", "section", "water", "drainage", "loads", "stages",
                 "time_steps", "probes", "lines", "output", "limits", "structures",
                 "stability")
