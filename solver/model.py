"""The model: plain dataclasses, the Python face of a model file.

A model file (TOML) and a script build the same objects; the loader (``load_model``) converts
quantities with units once, checks every field where it enters, and names the field (its TOML
path) in every message.

Coordinates: x horizontal (radius in axisymmetry), y elevation, up positive; the original
ground surface is y = 0. Units: kN, m, kPa, kN/m3, days; permeability in m/day.
"""

from __future__ import annotations

import difflib
import math
import numbers
import re
import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Callable, Literal

from .errors import InputError
from .units import KINDS, describe_value, to_value

# ----------------------------------------------------------------------------- materials


@dataclass
class OedometerParameters:
    """Hand-method (one-dimensional) parameters of a layer; every field optional.

    compression_index, recompression_index : Cc, Cr (per log10 cycle).
    void_ratio : initial void ratio e0.
    preconsolidation_pressure : sigma'_p, kPa (one of the three ways to give it).
    overconsolidation_ratio : OCR = sigma'_p / sigma'_v0.
    preconsolidation_margin : sigma'_p - sigma'_v0, kPa (constant with depth).
    volume_compressibility : m_v, 1/kPa (instead of Cc, Cr, e0).
    consolidation_coefficient : c_v, m2/day (else from k / (m_v gamma_w)).
    secondary_compression_index : C_alpha (per log10 cycle of time).
    """
    compression_index: float | None = None
    recompression_index: float | None = None
    void_ratio: float | None = None
    preconsolidation_pressure: float | None = None
    overconsolidation_ratio: float | None = None
    preconsolidation_margin: float | None = None
    volume_compressibility: float | None = None
    consolidation_coefficient: float | None = None
    secondary_compression_index: float | None = None


@dataclass
class Material:
    """A soil (or fill) as both the FE and the hand method see it.

    model : "linear elastic" or "modified cam clay".
    Linear elastic: youngs_modulus (kPa) and poisson_ratio, or constrained_modulus (kPa)
    and poisson_ratio.
    Modified Cam Clay: lambda_, kappa, M or friction_angle (degrees), poisson_ratio,
    void_ratio (initial), and preconsolidation from ``oedometer`` (OCR or margin or sigma'_p),
    permeability_change_index (Taylor 1948 C_k; None keeps k constant).
    Both: permeability_x, permeability_y (m/day), unit_weight (above the water table) and
    saturated_unit_weight (below it), kN/m3; at-rest coefficient k0 or friction_angle
    (K0 = 1 - sin phi', Jaky 1944); biot_coefficient; storage (1/kPa).
    """
    name: str
    model: Literal["linear elastic", "modified cam clay"] = "linear elastic"
    youngs_modulus: float | None = None
    poisson_ratio: float = 0.3
    constrained_modulus: float | None = None
    permeability_x: float = 1e-4
    permeability_y: float | None = None
    unit_weight: float = 18.0
    saturated_unit_weight: float | None = None
    k0: float | None = None
    friction_angle: float | None = None
    biot_coefficient: float = 1.0
    storage: float = 0.0
    # Modified Cam Clay
    lambda_: float | None = None
    kappa: float | None = None
    M: float | None = None
    void_ratio: float | None = None
    permeability_change_index: float | None = None
    oedometer: OedometerParameters = field(default_factory=OedometerParameters)


# ----------------------------------------------------------------------------- ground


@dataclass
class Layer:
    """A soil layer, from the top down. ``thickness`` in m at the left of the section;
    ``thickness_right`` (optional) at the right edge makes the layer's base slope linearly."""
    name: str
    material: str
    thickness: float
    thickness_right: float | None = None


@dataclass
class Berm:
    """A stabilising berm at each toe: ``width`` (m) at ``height`` (m) above the ground."""
    width: float
    height: float


@dataclass
class Embankment:
    """A trapezoidal embankment on the surface, symmetric about x = 0.

    crest_width : m; height : m; side_slope : horizontal run per unit rise (e.g. 2 for 1V:2H);
    lifts : thickness of each construction lift from the bottom up (sum = height); the lift
    regions are named ``lift_1``, ``lift_2``, ...; material : fill material name;
    berms : optional berms at both toes.
    """
    crest_width: float
    height: float
    side_slope: float
    lifts: list[float]
    material: str
    berms: list[Berm] = field(default_factory=list)


@dataclass
class Footing:
    """A strip footing (plane strain) or the one circular footing (axisymmetric, at x = 0).

    center : x of the centre, m; width : m (the diameter in axisymmetry); embedment : depth of
    the base below the ground, m; load : vertical pressure on the base, kPa (``force`` in kN/m,
    or kN in axisymmetry, instead); rigid : the base moves as one (a rigid plate) or carries a
    uniform pressure (flexible).
    """
    name: str
    center: float
    width: float
    load: float | None = None
    force: float | None = None
    embedment: float = 0.0
    rigid: bool = True


@dataclass
class SurfaceLoad:
    """A uniform vertical pressure on the ground surface from x_left to x_right, kPa."""
    name: str
    x_left: float
    x_right: float
    pressure: float


@dataclass
class Section:
    """What is meshed. kind: "embankment", "footings", "ground" (layers only, surface loads)
    or "mesh" (a user .msh/.geo file whose named groups carry materials and boundaries).

    width, depth : domain extent, m (None: chosen from the loaded width, see docs/model.md);
    half : model only x >= 0 with a symmetry line at x = 0 (embankment, one centred footing);
    mesh_size : element size near the load, m (None: from the loaded width);
    mesh_file : for kind "mesh"; regions : for kind "mesh", region name -> material name.
    """
    kind: Literal["embankment", "footings", "ground", "mesh"] = "ground"
    width: float | None = None
    depth: float | None = None
    half: bool = False
    mesh_size: float | None = None
    embankment: Embankment | None = None
    footings: list[Footing] = field(default_factory=list)
    mesh_file: str | None = None
    regions: dict[str, str] = field(default_factory=dict)


# ----------------------------------------------------------------------------- water, bounds


@dataclass
class Water:
    """table_depth : depth of the water table below the ground surface, m (negative: above);
    unit_weight : kN/m3."""
    table_depth: float = 0.0
    unit_weight: float = 9.81


@dataclass
class Drainage:
    """Which boundaries drain (excess pore pressure zero): top (ground surface and the
    embankment surface), base, sides. Mechanical conditions are fixed by the section:
    base fixed, sides on rollers, symmetry line on rollers. For kind "mesh": the names of the
    mesh edges that drain, and ``fixed`` / ``rollers`` edge names."""
    top: bool = True
    base: bool = False
    sides: bool = False
    drained_edges: list[str] = field(default_factory=list)
    fixed_edges: list[str] = field(default_factory=list)
    roller_edges: list[str] = field(default_factory=list)


# ----------------------------------------------------------------------------- stages


@dataclass
class Stage:
    """One construction or waiting period.

    kind : "lift" (place ``lift`` number n of the embankment, or on a user mesh the named
    ``region``: its elements become active, stress-free, and their weight ramps on over the
    duration), "load" (ramp the named loads/footings by ``factor`` over the duration: 1
    applies, 0 removes, 0.5 halves), or "consolidate" (nothing changes).
    duration : days (for "consolidate" with ``until_degree``: the longest it may last).
    until_degree : stop a "consolidate" stage once the average degree of consolidation
    reaches this fraction (0.9 = 90 %).
    """
    name: str
    kind: Literal["lift", "load", "consolidate"]
    duration: float
    lift: int | None = None
    loads: list[str] = field(default_factory=list)
    factor: float = 1.0
    until_degree: float | None = None
    region: str | None = None


@dataclass
class TimeSteps:
    """Geometric growth of the step within each stage: ``first_step`` (days), multiplied by
    ``growth`` after every ``steps_per_level`` steps (repeated lengths reuse the
    factorization); ``max_step`` caps it (days, None = no cap)."""
    first_step: float = 0.1
    growth: float = 2.0
    steps_per_level: int = 4
    max_step: float | None = None


# ----------------------------------------------------------------------------- probes


@dataclass
class PointProbe:
    name: str
    x: float
    y: float


@dataclass
class LineProbe:
    """Values along a line at output times: from (x0, y0) to (x1, y1) with ``points``
    samples. kind "surface": the ground line (settlement trough), "vertical": an isochrone."""
    name: str
    x0: float
    y0: float
    x1: float
    y1: float
    points: int = 41
    kind: Literal["surface", "vertical", "line"] = "line"


@dataclass
class Output:
    """times : days at which fields and line probes are written (besides every stage end);
    every_step : write fields at every step (large files)."""
    times: list[float] = field(default_factory=list)
    every_step: bool = False


@dataclass
class Model:
    title: str
    analysis: Literal["plane strain", "axisymmetric"] = "plane strain"
    materials: dict[str, Material] = field(default_factory=dict)
    layers: list[Layer] = field(default_factory=list)
    section: Section = field(default_factory=Section)
    water: Water = field(default_factory=Water)
    drainage: Drainage = field(default_factory=Drainage)
    loads: list[SurfaceLoad] = field(default_factory=list)
    stages: list[Stage] = field(default_factory=list)
    time_steps: TimeSteps = field(default_factory=TimeSteps)
    probes: list[PointProbe] = field(default_factory=list)
    lines: list[LineProbe] = field(default_factory=list)
    output: Output = field(default_factory=Output)
    source: str | None = None   # file it was read from, for messages


# ============================================================================= reading
# Everything below turns a TOML table (or a dict) into the dataclasses above, converting
# quantities with units once and checking each field where it enters. Field paths in messages
# are TOML paths; indices into arrays of tables count from 1 in the order the tables appear in
# the file (``stages[2]`` is the second ``[[stages]]`` table).


ANALYSES = ("plane strain", "axisymmetric")
SECTION_KINDS = ("embankment", "footings", "ground", "mesh")
MATERIAL_MODELS = ("linear elastic", "modified cam clay")
STAGE_KINDS = ("lift", "load", "consolidate")
LINE_KINDS = ("surface", "vertical", "line")
MAX_LIFTS = 100          # more lifts than this is a typo, not a construction sequence
_REL_TOL = 1e-6          # lifts must sum to the height within this relative tolerance


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
}

_LAYER_RULES: dict[str, _Rule] = {
    "name": _r("text", 'name = "upper_clay"'),
    "material": _r("text", 'material = "soft_clay"'),
    "thickness": _r("length", "thickness = 4.0", **_POS),
    "thickness_right": _r("length", "thickness_right = 5.0", **_POS),
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
}

_WATER_RULES: dict[str, _Rule] = {
    "table_depth": _r("length", "table_depth = 1.0"),
    "unit_weight": _r("unit_weight", 'unit_weight = "9.81 kN/m3"', **_POS),
}

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
    "duration": _r("time", 'duration = "60 days"', **_POS),
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
}

_MODEL_RULES: dict[str, _Rule] = {
    "title": _r("text", 'title = "Road embankment (invented site)"'),
    "analysis": _r("choice", 'analysis = "plane strain"', choices=ANALYSES),
}
_MODEL_TABLES = ("materials", "layers", "section", "water", "drainage", "loads", "stages",
                 "time_steps", "probes", "lines", "output")

_BARE_KEY = re.compile(r"[A-Za-z0-9_-]+")


def _key(name: str) -> str:
    """A TOML key as written in a file: bare when it can be, else quoted."""
    return name if _BARE_KEY.fullmatch(name) else '"' + name.replace('"', '\\"') + '"'


def _join(path: str, key: str) -> str:
    return f"{path}.{_key(key)}" if path else _key(key)


def _suggest(word: str, choices) -> str | None:
    close = difflib.get_close_matches(str(word), list(choices), n=1, cutoff=0.6)
    return close[0] if close else None


def _where(path: str) -> str:
    """How a table is named in a fix: [water], this [[layers]] table, the top level."""
    if not path:
        return "the top level"
    if path.endswith("]"):
        return f"this [[{path.rsplit('[', 1)[0]}]] table"
    return f"[{path}]"


def _canonical(value: Any, choices: tuple[str, ...]) -> Any:
    """Accept a choice whatever its case and separators: "Plane_Strain" -> "plane strain"."""
    if isinstance(value, str):
        plain = " ".join(value.replace("_", " ").replace("-", " ").lower().split())
        if plain in choices:
            return plain
    return value


def _kind_of(rule: _Rule) -> str:
    return rule.kind.split(":", 1)[1] if rule.kind.startswith("list:") else rule.kind


class _Reader:
    """Reads tables into field values; every failure is an InputError naming ``source``."""

    def __init__(self, source: str | None):
        self.source = source

    def fail(self, message: str, path: str | None, fix: str) -> None:
        raise InputError(message, field=path or None, source=self.source, fix=fix)

    # ------------------------------------------------------------ structure
    def table(self, value: Any, path: str, example: str) -> dict:
        if not isinstance(value, dict):
            self.fail(f"expected a table, got {describe_value(value)}", path,
                      f"write it as a table: [{path}] followed by lines such as {example}.")
        return value

    def tables(self, value: Any, path: str, example: str) -> list[dict]:
        if isinstance(value, dict):
            self.fail("expected an array of tables, got a single table", path,
                      f"write each entry under its own [[{path}]] header (double brackets).")
        if not isinstance(value, list):
            self.fail(f"expected an array of tables, got {describe_value(value)}", path,
                      f"write each entry as [[{path}]] followed by lines such as {example}.")
        for i, item in enumerate(value):
            if not isinstance(item, dict):
                self.fail(f"expected a table, got {describe_value(item)}", f"{path}[{i + 1}]",
                          f"write each entry as [[{path}]] followed by lines such as "
                          f"{example}.")
        return value

    def read(self, data: dict, path: str, rules: dict[str, _Rule], nested: tuple = (),
             kinds: dict[str, str] | None = None) -> dict[str, Any]:
        """Convert the known keys of ``data``; an unknown key is an error naming the nearest."""
        known = list(rules) + list(nested)
        for key in data:
            if key not in known:
                best = _suggest(key, known)
                fix = (f"did you mean {best!r}? Rename it." if best else
                       f"remove it; the fields of {_where(path)} are: {', '.join(known)}.")
                self.fail(f"unknown field {key!r}", _join(path, key), fix)
        out = {}
        for key, rule in rules.items():
            if key in data:
                kind = (kinds or {}).get(key)
                out[rule.attr or key] = self.value(data[key], _join(path, key), rule, kind)
        return out

    def require(self, data: dict, path: str, rules: dict[str, _Rule], keys) -> None:
        for key in keys:
            if key not in data:
                self.fail(f"missing required field {key!r}", _join(path, key),
                          f"add {rules[key].example} to {_where(path)}.")

    # ------------------------------------------------------------ values
    def value(self, value: Any, path: str, rule: _Rule, kind: str | None = None) -> Any:
        kind = kind or rule.kind
        if kind == "text":
            if not isinstance(value, str) or not value.strip():
                self.fail(f"expected a non-empty text, got {describe_value(value)}", path,
                          f"write {rule.example} (in quotes).")
            return value
        if kind == "bool":
            if not isinstance(value, bool):
                self.fail(f"expected true or false, got {describe_value(value)}", path,
                          f"write {rule.example} (no quotes).")
            return value
        if kind == "choice":
            value = _canonical(value, rule.choices)
            if not isinstance(value, str) or value not in rule.choices:
                best = _suggest(value, rule.choices) if isinstance(value, str) else None
                hint = f"did you mean {best!r}? " if best else ""
                self.fail(f"expected one of {', '.join(map(repr, rule.choices))}, got "
                          f"{describe_value(value)}", path, f"{hint}write {rule.example}.")
            return value
        if kind == "texts":
            items = [value] if isinstance(value, str) else value
            if not isinstance(items, list) or not all(isinstance(s, str) and s.strip()
                                                      for s in items):
                self.fail(f"expected a list of names, got {describe_value(value)}", path,
                          f"write {rule.example}.")
            return list(items)
        if kind == "int":
            ok = isinstance(value, int) and not isinstance(value, bool)
            if isinstance(value, float) and math.isfinite(value) and value == int(value):
                value, ok = int(value), True
            if not ok:
                self.fail(f"expected a whole number, got {describe_value(value)}", path,
                          f"write {rule.example}.")
            self.check_range(value, path, rule)
            return value
        if kind.startswith("list:"):
            if not isinstance(value, list):
                self.fail(f"expected a list, got {describe_value(value)}", path,
                          f"write {rule.example}.")
            unit_kind = kind.split(":", 1)[1]
            out = []
            for i, item in enumerate(value):
                p = f"{path}[{i + 1}]"
                out.append(to_value(item, unit_kind, field=p, source=self.source))
                self.check_range(out[-1], p, rule)
            return out
        v = to_value(value, kind, field=path, source=self.source, example=rule.example)
        self.check_range(v, path, rule)
        return v

    def check_range(self, v: float, path: str, rule: _Rule) -> None:
        if rule.violates(v):
            unit = KINDS[_kind_of(rule)].shown if _kind_of(rule) in KINDS else ""
            unit = "" if unit in ("", "-") else f" {unit}"
            self.fail(f"{path.rsplit('.', 1)[-1]} {rule.bounds_text()}, got {v:g}{unit}", path,
                      (rule.fix or f"write, e.g., {rule.example}") + ".")


# ------------------------------------------------------------------------ readers per table

def _read_material(r: _Reader, name: str, value: Any) -> Material:
    path = _join("materials", name)
    d = r.table(value, path, 'model = "linear elastic"')
    vals = r.read(d, path, _MATERIAL_RULES, nested=("oedometer",))
    if "permeability" in vals:
        k = vals.pop("permeability")
        for both in ("permeability_x", "permeability_y"):
            if both in d:
                r.fail("permeability is given twice: as 'permeability' (both directions) and "
                       f"as {both!r}", _join(path, both),
                       "give either permeability (the same in both directions) or "
                       "permeability_x and permeability_y, not both.")
        vals["permeability_x"] = vals["permeability_y"] = k
    oed_path = _join(path, "oedometer")
    oed = r.table(d.get("oedometer", {}), oed_path, "compression_index = 0.9")
    vals["oedometer"] = OedometerParameters(**r.read(oed, oed_path, _OEDOMETER_RULES))
    return Material(name=name, **vals)


def _read_list(r: _Reader, data: dict, key: str, rules: dict[str, _Rule], required: tuple,
               defaults: Callable[[int, dict], str] | None, cls, path_prefix: str = "",
               kinds: dict[str, str] | None = None, fill: dict | None = None) -> list:
    """An array of tables ``data[key]``, each read by ``rules`` into ``cls``; ``defaults(i,
    values)`` names an entry that has no name; ``fill`` holds file defaults of fields the
    dataclass requires."""
    path = f"{path_prefix}{key}"
    items = r.tables(data.get(key, []), path, rules[required[0]].example if required
                     else next(iter(rules.values())).example)
    out = []
    for i, item in enumerate(items):
        p = f"{path}[{i + 1}]"
        vals = r.read(item, p, rules, kinds=kinds)
        r.require(item, p, rules, required)
        vals = {**(fill or {}), **vals}
        if defaults and "name" not in vals:
            vals["name"] = defaults(i, vals)
        out.append(cls(**vals))
    return out


def _read_lifts(r: _Reader, value: Any, path: str, height: float) -> list[float]:
    """``lifts`` is a list of thicknesses from the bottom up, or a count of equal lifts."""
    if isinstance(value, int) and not isinstance(value, bool):
        if not 1 <= value <= MAX_LIFTS:
            r.fail(f"the number of lifts must lie in [1, {MAX_LIFTS}], got {value}", path,
                   "write lifts = 3 for three equal lifts, or lifts = [1.5, 1.5, 1.5].")
        return [height / value] * value
    lifts = r.value(value, path, _EMBANKMENT_RULES["lifts"])
    if not lifts:
        r.fail("lifts is empty", path, "write lifts = [1.5, 1.5, 1.5] (bottom up) or "
                                       "lifts = 3 for equal lifts, or leave it out for one lift.")
    if len(lifts) > MAX_LIFTS:
        r.fail(f"more than {MAX_LIFTS} lifts ({len(lifts)})", path,
               "give the construction lifts, typically 1 to 10.")
    return lifts


def _read_embankment(r: _Reader, value: Any) -> Embankment:
    path = "section.embankment"
    d = r.table(value, path, "crest_width = 12.0")
    rules = {k: v for k, v in _EMBANKMENT_RULES.items() if k != "lifts"}
    vals = r.read(d, path, rules, nested=("lifts", "berms"))
    r.require(d, path, _EMBANKMENT_RULES, ("crest_width", "height", "side_slope", "material"))
    vals["lifts"] = (_read_lifts(r, d["lifts"], f"{path}.lifts", vals["height"])
                     if "lifts" in d else [vals["height"]])
    vals["berms"] = _read_list(r, d, "berms", _BERM_RULES, ("width", "height"), None, Berm,
                               path_prefix=f"{path}.")
    return Embankment(**vals)


def _read_section(r: _Reader, value: Any, analysis: str) -> Section:
    path = "section"
    d = r.table(value, path, 'kind = "embankment"')
    vals = r.read(d, path, _SECTION_RULES, nested=("embankment", "footings", "regions"))
    if "embankment" in d:
        vals["embankment"] = _read_embankment(r, d["embankment"])
    if "footings" in d:
        force = "force" if analysis == "axisymmetric" else "line_force"
        vals["footings"] = _read_list(r, d, "footings", _FOOTING_RULES, ("width",),
                                      lambda i, v: f"footing_{i + 1}", Footing,
                                      path_prefix="section.", kinds={"force": force},
                                      fill={"center": 0.0})
    if "regions" in d:
        regions = r.table(d["regions"], "section.regions", 'soft_clay = "soft_clay"')
        text = _Rule("text", 'region_name = "material_name"')
        vals["regions"] = {name: r.value(mat, _join("section.regions", name), text)
                           for name, mat in regions.items()}
    if "kind" not in vals:      # inferred from what is given
        vals["kind"] = ("embankment" if "embankment" in d else "footings" if "footings" in d
                        else "mesh" if "mesh_file" in d else "ground")
    if "mesh_file" in vals:
        mesh = Path(vals["mesh_file"]).expanduser()
        if not mesh.is_absolute():
            base = Path(r.source).parent if r.source else Path.cwd()
            mesh = base / mesh
        try:
            vals["mesh_file"] = str(mesh.resolve())
        except (OSError, ValueError, RuntimeError):
            r.fail(f"cannot use the mesh file path {vals['mesh_file']!r}", "section.mesh_file",
                   "give the path of a .msh or .geo file, relative to the model file's folder.")
    return Section(**vals)


def model_from_dict(data: dict, source: str | None = None) -> Model:
    """Build and check a :class:`Model` from the tables of a model file.

    Parameters
    ----------
    data : the parsed TOML (nested dicts and lists); quantities may be bare numbers in the
        default units (kN, m, kPa, kN/m3, days, m/day) or strings with units ("1e-9 m/s").
    source : the file it came from, named in messages; relative mesh paths are resolved
        against its folder (the working folder if None).

    Returns
    -------
    Model with every quantity a float in the default unit, ``source`` set.

    Raises
    ------
    InputError : the first problem found, naming the field (its TOML path), the file and a fix.
    """
    r = _Reader(source)
    if not isinstance(data, dict):
        r.fail("a model is a table of fields", None, "start the file with title = \"...\".")
    top = r.read(data, "", _MODEL_RULES, nested=_MODEL_TABLES)
    r.require(data, "", _MODEL_RULES, ("title",))
    analysis = top.get("analysis", "plane strain")

    materials_table = r.table(data.get("materials", {}), "materials",
                              '[materials.soft_clay] with youngs_modulus = "2 MPa"')
    materials = {name: _read_material(r, name, value)
                 for name, value in materials_table.items()}

    layers = _read_list(r, data, "layers", _LAYER_RULES, ("material", "thickness"),
                        lambda i, v: v["material"], Layer)
    # Default layer names are the material names; a repeated one gets a number.
    seen: dict[str, int] = {}
    for i, (layer, item) in enumerate(zip(layers, data.get("layers", []))):
        if "name" not in item:
            seen[layer.name] = seen.get(layer.name, 0) + 1
            if seen[layer.name] > 1:
                layer.name = f"{layer.name}_{seen[layer.name]}"

    section = _read_section(r, data.get("section", {}), analysis)
    water = Water(**r.read(r.table(data.get("water", {}), "water", "table_depth = 1.0"),
                           "water", _WATER_RULES))
    drainage = Drainage(**r.read(r.table(data.get("drainage", {}), "drainage", "top = true"),
                                 "drainage", _DRAINAGE_RULES))
    loads = _read_list(r, data, "loads", _LOAD_RULES, ("x_left", "x_right", "pressure"),
                       lambda i, v: f"load_{i + 1}", SurfaceLoad)
    stages = _read_list(r, data, "stages", _STAGE_RULES, ("kind", "duration"),
                        lambda i, v: f"stage_{i + 1}", Stage)
    time_steps = TimeSteps(**r.read(r.table(data.get("time_steps", {}), "time_steps",
                                            'first_step = "0.5 days"'),
                                    "time_steps", _TIME_STEP_RULES))
    probes = _read_list(r, data, "probes", _PROBE_RULES, ("x", "y"),
                        lambda i, v: f"probe_{i + 1}", PointProbe)
    lines = _read_list(r, data, "lines", _LINE_RULES, ("x0", "y0", "x1", "y1"),
                       lambda i, v: f"line_{i + 1}", LineProbe)
    output = Output(**r.read(r.table(data.get("output", {}), "output", "every_step = false"),
                             "output", _OUTPUT_RULES))
    model = Model(**top, materials=materials, layers=layers, section=section, water=water,
                  drainage=drainage, loads=loads, stages=stages, time_steps=time_steps,
                  probes=probes, lines=lines, output=output, source=source)
    check_model(model)
    return model


def model_from_toml(text: str, source: str | None = None) -> Model:
    """Parse TOML text and build the checked :class:`Model` (see :func:`model_from_dict`)."""
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"the file is not valid TOML: {exc}", source=source,
                         fix="correct the line named (common slips: a missing quote around a "
                             "value with units such as \"18 kN/m3\", a key given twice, a "
                             "table header given twice).") from None
    return model_from_dict(data, source=source)


def load_model(path: str | Path) -> Model:
    """Read a model file (TOML) and return the checked :class:`Model`.

    Quantities are converted once here (see :mod:`solver.units`); any problem is an
    :class:`~solver.errors.InputError` naming the file, the field's TOML path and the fix.
    """
    path = Path(path)
    try:
        text = path.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise InputError("the model file does not exist", source=str(path),
                         fix="check the path and the working folder.") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise InputError(f"cannot read the model file: {exc}", source=str(path),
                         fix="give a readable UTF-8 text file in TOML.") from None
    return model_from_toml(text, source=str(path))


# ============================================================================= checks

def _fail(model: Model, message: str, path: str | None, fix: str) -> None:
    raise InputError(message, field=path, source=model.source, fix=fix)


def _is_half(model: Model) -> bool:
    """Only x >= 0 is modelled: a half model, or any axisymmetric one (r >= 0)."""
    return model.section.half or model.analysis == "axisymmetric"


def _check_value(model: Model, value: Any, path: str, rule: _Rule, kind: str | None = None):
    """Check a field of a built model (no conversion: quantities must already be numbers)."""
    kind = kind or rule.kind
    if value is None:
        return
    r = _Reader(model.source)
    if kind == "choice" and value not in rule.choices:
        best = _suggest(value, rule.choices) if isinstance(value, str) else None
        _fail(model, f"expected one of {', '.join(map(repr, rule.choices))}, got "
                     f"{describe_value(value)}", path,
              (f"did you mean {best!r}? " if best else "") + f"write {rule.example}.")
    if kind == "int" and (isinstance(value, bool) or not isinstance(value, numbers.Integral)):
        _fail(model, f"expected a whole number (int), got {describe_value(value)}", path,
              f"write {rule.example}.")
    if kind == "texts" and not isinstance(value, list):
        _fail(model, f"expected a list of names, got {describe_value(value)}", path,
              f"write {rule.example}.")
    if kind in ("text", "bool", "choice", "texts", "int"):
        r.value(int(value) if kind == "int" else value, path, rule, kind)
        return
    if kind.startswith("list:"):
        if not isinstance(value, (list, tuple)):
            _fail(model, f"expected a list, got {describe_value(value)}", path,
                  f"write {rule.example}.")
        for i, v in enumerate(value):
            _check_value(model, v, f"{path}[{i + 1}]", rule, kind.split(":", 1)[1])
        return
    if isinstance(value, bool) or not isinstance(value, numbers.Real) or \
            not math.isfinite(value):
        unit = "" if KINDS[kind].shown == "-" else f" in {KINDS[kind].shown}"
        _fail(model, f"expected a finite number{unit}, got {describe_value(value)}", path,
              "give a plain number in the default unit; convert a string with units by "
              "solver.units.to_value(text, kind).")
    r.check_range(float(value), path, rule)


def _check_fields(model: Model, obj: Any, path: str, rules: dict[str, _Rule],
                  kinds: dict[str, str] | None = None) -> None:
    for key, rule in rules.items():
        attr = rule.attr or key
        if hasattr(obj, attr):
            _check_value(model, getattr(obj, attr), _join(path, key), rule,
                         (kinds or {}).get(key))


def _name_check(model: Model, name: str, known, path: str, what: str, define: str) -> None:
    if name not in known:
        best = _suggest(name, known)
        listed = ", ".join(map(repr, known)) if known else "none defined"
        _fail(model, f"unknown {what} {name!r}", path,
              (f"did you mean {best!r}? " if best else "") +
              f"{define} (defined: {listed}).")


def _unique(model: Model, names: list[str], path: str, what: str) -> None:
    seen = set()
    for i, n in enumerate(names):
        if n in seen:
            _fail(model, f"two {what} are named {n!r}", f"{path}[{i + 1}].name",
                  f"give each of the {what} its own name.")
        seen.add(n)


def check_model(model: Model) -> None:
    """Check a model (read from a file or built in Python) before anything is meshed.

    Raises :class:`~solver.errors.InputError` for the first problem, naming the field by its
    TOML path (``stages[2].lift``; indices count from 1), the file (``model.source``) and a
    fix. Quantities must be plain numbers in the default units.
    """
    _check_fields(model, model, "", _MODEL_RULES)
    if not model.stages:
        _fail(model, "the model has no stages", "stages",
              "add at least one [[stages]] table, e.g. kind = \"load\", loads = [...], "
              "duration = \"10 days\".")
    _check_materials(model)
    _check_layers(model)
    _check_section(model)
    _check_loads(model)
    _check_drainage(model)
    _check_stages(model)
    _check_fields(model, model.water, "water", _WATER_RULES)
    _check_fields(model, model.time_steps, "time_steps", _TIME_STEP_RULES)
    ts = model.time_steps
    if ts.max_step is not None and ts.max_step < ts.first_step:
        _fail(model, f"max_step ({ts.max_step:g} days) is shorter than first_step "
                     f"({ts.first_step:g} days)", "time_steps.max_step",
              "make max_step at least first_step, or leave it out (no cap).")
    _check_fields(model, model.output, "output", _OUTPUT_RULES)
    _check_probes(model)


def _check_materials(model: Model) -> None:
    if not isinstance(model.materials, dict):
        _fail(model, "materials must be a table of named materials", "materials",
              "write [materials.NAME] tables (in Python: a dict name -> Material).")
    for key, m in model.materials.items():
        path = _join("materials", key)
        if not isinstance(m, Material):
            _fail(model, "expected a material", path, "give a Material.")
        if m.name != key:
            _fail(model, f"the material stored under {key!r} is named {m.name!r}",
                  _join(path, "name"), "store each material under its own name.")
        _check_fields(model, m, path, _MATERIAL_RULES)
        oed = _join(path, "oedometer")
        _check_fields(model, m.oedometer, oed, _OEDOMETER_RULES)
        if m.model == "linear elastic":
            if m.youngs_modulus is None and m.constrained_modulus is None:
                _fail(model, "a linear elastic material needs a stiffness",
                      _join(path, "youngs_modulus"),
                      "give youngs_modulus (drained E') or constrained_modulus (E_oed), e.g. "
                      "youngs_modulus = \"2 MPa\".")
            if m.youngs_modulus is not None and m.constrained_modulus is not None:
                _fail(model, "both youngs_modulus and constrained_modulus are given",
                      _join(path, "constrained_modulus"),
                      "give one of them; with poisson_ratio it fixes the other.")
        else:
            missing = [k for k, a in (("lambda", "lambda_"), ("kappa", "kappa"),
                                      ("void_ratio", "void_ratio"))
                       if getattr(m, a) is None]
            if m.M is None and m.friction_angle is None:
                missing.append("M")
            if missing:
                _fail(model, f"modified cam clay needs {', '.join(missing)}",
                      _join(path, missing[0]),
                      "give lambda (slope of the normal compression line in e - ln p'), "
                      "kappa (slope of unloading-reloading), void_ratio (initial) and M "
                      "(critical state stress ratio) or friction_angle, e.g. lambda = 0.3, "
                      "kappa = 0.03, void_ratio = 2.0, M = 1.1.")
            if m.kappa >= m.lambda_:
                _fail(model, f"kappa ({m.kappa:g}) must be smaller than lambda "
                             f"({m.lambda_:g})", _join(path, "kappa"),
                      "kappa (unloading-reloading) is typically lambda/10 to lambda/5.")
        o = m.oedometer
        if (o.compression_index is not None and o.recompression_index is not None
                and o.recompression_index >= o.compression_index):
            _fail(model, f"recompression_index ({o.recompression_index:g}) must be smaller "
                         f"than compression_index ({o.compression_index:g})",
                  _join(oed, "recompression_index"),
                  "Cr is typically Cc/10 to Cc/5; check that the two are not swapped.")
        ways = [k for k in ("preconsolidation_pressure", "overconsolidation_ratio",
                            "preconsolidation_margin") if getattr(o, k) is not None]
        if len(ways) > 1:
            _fail(model, f"the preconsolidation pressure is given {len(ways)} ways "
                         f"({', '.join(ways)})", _join(oed, ways[1]),
                  "give one of preconsolidation_pressure, overconsolidation_ratio or "
                  "preconsolidation_margin.")


def _check_layers(model: Model) -> None:
    sec = model.section
    if not model.layers and sec.kind != "mesh":
        _fail(model, "the model has no layers", "layers",
              "add [[layers]] tables from the top down, each with material = \"...\" and "
              "thickness = 4.0.")
    for i, layer in enumerate(model.layers):
        path = f"layers[{i + 1}]"
        _check_fields(model, layer, path, _LAYER_RULES)
        _name_check(model, layer.material, list(model.materials), f"{path}.material",
                    "material", "define it under [materials.NAME]")
    # Layers of one name share a region, so they must share a material too.
    first: dict[str, Layer] = {}
    for i, layer in enumerate(model.layers):
        other = first.setdefault(layer.name, layer)
        if other.material != layer.material:
            _fail(model, f"two layers are named {layer.name!r} but have different materials "
                         f"({other.material!r}, {layer.material!r})", f"layers[{i + 1}].name",
                  "layers of one name form one region; give this layer its own name.")
    if model.layers and sec.depth is not None:
        left = sum(la.thickness for la in model.layers)
        if abs(sec.depth - left) > _REL_TOL * max(left, 1.0):
            _fail(model, f"section.depth ({sec.depth:g} m) differs from the total thickness "
                         f"of the layers ({left:g} m)", "section.depth",
                  "leave section.depth out: the layers define the depth (add or thicken the "
                  "bottom layer to go deeper).")


def embankment_profile(emb: Embankment) -> list[tuple[float, float]]:
    """The embankment surface from the centre line outward: [(x, height above ground), ...].

    Starts at (0, height), runs along the crest to crest_width/2, down the side slope; each
    berm (listed from the embankment outward, each lower than the last) adds a flat of its
    width at its height; ends at the toe (x_toe, 0).
    """
    pts = [(0.0, emb.height), (emb.crest_width / 2, emb.height)]
    x, h = pts[-1]
    for b in emb.berms:
        x += (h - b.height) * emb.side_slope
        pts.append((x, b.height))
        x += b.width
        pts.append((x, b.height))
        h = b.height
    pts.append((x + h * emb.side_slope, 0.0))
    return pts


def _check_section(model: Model) -> None:
    sec = model.section
    _check_fields(model, sec, "section", _SECTION_RULES)
    kind = sec.kind
    if kind == "embankment":
        if sec.embankment is None:
            _fail(model, "section kind 'embankment' needs an embankment",
                  "section.embankment", "add [section.embankment] with crest_width, height, "
                                        "side_slope, lifts and material.")
        _check_embankment(model, sec.embankment)
    elif sec.embankment is not None:
        _fail(model, f"[section.embankment] is given but section.kind is {kind!r}",
              "section.embankment", "set section.kind = \"embankment\" or remove the "
                                    "embankment.")
    if kind == "footings":
        if not sec.footings:
            _fail(model, "section kind 'footings' needs at least one footing",
                  "section.footings", "add [[section.footings]] with center, width and load.")
        _check_footings(model)
    elif sec.footings:
        _fail(model, f"[[section.footings]] are given but section.kind is {kind!r}",
              "section.footings", "set section.kind = \"footings\" or remove the footings.")
    if kind == "mesh":
        if not sec.mesh_file:
            _fail(model, "section kind 'mesh' needs a mesh file", "section.mesh_file",
                  "add mesh_file = \"site.msh\" (a Gmsh .msh or .geo file with named physical "
                  "groups), relative to the model file's folder.")
        mesh = Path(sec.mesh_file)
        if not mesh.is_absolute() and model.source:
            mesh = Path(model.source).parent / mesh
        try:
            exists = mesh.is_file()
        except (OSError, ValueError):
            exists = False
        if not exists:
            _fail(model, f"the mesh file {str(mesh)!r} does not exist", "section.mesh_file",
                  "check the path; a relative path is read from the model file's folder.")
        if mesh.suffix.lower() not in (".msh", ".geo"):
            _fail(model, f"the mesh file {mesh.name!r} is neither .msh nor .geo",
                  "section.mesh_file", "give a Gmsh mesh (.msh) or geometry (.geo) file.")
        if not sec.regions:
            _fail(model, "section kind 'mesh' needs the material of each mesh region",
                  "section.regions", "add [section.regions] with lines region_name = "
                                     "\"material_name\", one per named surface of the mesh.")
        for region, mat in sec.regions.items():
            _name_check(model, mat, list(model.materials), _join("section.regions", region),
                        "material", "define it under [materials.NAME]")
    else:
        if sec.mesh_file is not None:
            _fail(model, f"mesh_file is given but section.kind is {kind!r}",
                  "section.mesh_file", "set section.kind = \"mesh\" or remove mesh_file.")
        if sec.regions:
            _fail(model, f"[section.regions] is given but section.kind is {kind!r}",
                  "section.regions", "regions name the materials of a user mesh: set "
                                     "section.kind = \"mesh\" or remove them; layers carry "
                                     "the materials of a parametric section.")


def _check_embankment(model: Model, emb: Embankment) -> None:
    path = "section.embankment"
    _check_fields(model, emb, path, _EMBANKMENT_RULES)
    _name_check(model, emb.material, list(model.materials), f"{path}.material", "material",
                "define it under [materials.NAME]")
    if not emb.lifts:
        _fail(model, "the embankment has no lifts", f"{path}.lifts",
              "write lifts = [1.5, 1.5, 1.5] (bottom up), or one lift: lifts = [height].")
    for i, t in enumerate(emb.lifts):
        if t > emb.height * (1 + _REL_TOL):
            _fail(model, f"lift {i + 1} ({t:g} m) is thicker than the embankment "
                         f"({emb.height:g} m)", f"{path}.lifts[{i + 1}]",
                  "give each lift's own thickness from the bottom up (not the level of its "
                  "top); they add up to the height.")
    total = sum(emb.lifts)
    if abs(total - emb.height) > _REL_TOL * emb.height:
        _fail(model, f"the lifts add up to {total:g} m but the embankment is {emb.height:g} m "
                     "high", f"{path}.lifts",
              f"make the lift thicknesses sum to height, e.g. lifts = "
              f"[{', '.join(f'{emb.height / 3:g}' for _ in range(3))}], or write lifts = 3 "
              "for equal lifts.")
    last = emb.height
    for i, b in enumerate(emb.berms):
        bp = f"{path}.berms[{i + 1}]"
        _check_fields(model, b, bp, _BERM_RULES)
        if b.height >= emb.height:
            _fail(model, f"the berm ({b.height:g} m) is not lower than the embankment "
                         f"({emb.height:g} m)", f"{bp}.height",
                  "a berm is a lower step at the toe: give a height below the embankment's.")
        if b.height >= last:
            _fail(model, f"berm {i + 1} ({b.height:g} m) is not lower than the berm inside it "
                         f"({last:g} m)", f"{bp}.height",
                  "list berms from the embankment outward, each lower than the one before.")
        last = b.height


def _check_footings(model: Model) -> None:
    sec = model.section
    force_kind = "force" if model.analysis == "axisymmetric" else "line_force"
    total_depth = sum(la.thickness for la in model.layers)
    for i, f in enumerate(sec.footings):
        p = f"section.footings[{i + 1}]"
        _check_fields(model, f, p, _FOOTING_RULES, kinds={"force": force_kind})
        if (f.load is None) == (f.force is None):
            _fail(model, "a footing needs exactly one of load and force"
                  + (" (both are given)" if f.load is not None else ""), f"{p}.load",
                  "give load = \"150 kPa\" (pressure on the base) or force = "
                  + ("\"500 kN\"" if force_kind == "force" else "\"300 kN/m\"")
                  + " (total), not both.")
        if model.layers and f.embedment >= total_depth:
            _fail(model, f"the footing base ({f.embedment:g} m deep) is at or below the base "
                         f"of the layers ({total_depth:g} m)", f"{p}.embedment",
                  "give the depth of the footing base below the ground, less than the depth "
                  "of the layers.")
    _unique(model, [f.name for f in sec.footings], "section.footings", "footings")
    one_centred = model.analysis == "axisymmetric" or sec.half
    if one_centred:
        why = ("in axisymmetry the footing is circular, on the axis"
               if model.analysis == "axisymmetric" else
               "a half model is symmetric about x = 0")
        if len(sec.footings) > 1:
            _fail(model, f"{len(sec.footings)} footings are given; {why}, so there is one",
                  "section.footings[2]",
                  "keep one footing at center = 0, or use a full plane strain model "
                  "(half = false) for a group of strip footings.")
        f = sec.footings[0]
        if abs(f.center) > 1e-9:
            _fail(model, f"the footing is at center = {f.center:g} m; {why}",
                  "section.footings[1].center", "set center = 0.")
    order = sorted(range(len(sec.footings)), key=lambda i: sec.footings[i].center)
    for a, b in zip(order, order[1:]):
        fa, fb = sec.footings[a], sec.footings[b]
        if fa.center + fa.width / 2 > fb.center - fb.width / 2 + 1e-9:
            _fail(model, f"footings {fa.name!r} and {fb.name!r} overlap",
                  f"section.footings[{b + 1}].center",
                  "move them apart so that each edge lies outside the other footing "
                  "(centres at least half the sum of the widths apart).")
    if sec.width is not None:
        x_min, x_max = (0.0, sec.width) if _is_half(model) else (-sec.width / 2, sec.width / 2)
        for i, f in enumerate(sec.footings):
            lo, hi = f.center - f.width / 2, f.center + f.width / 2
            if _is_half(model):
                lo = 0.0
            if lo < x_min - 1e-9 or hi > x_max + 1e-9:
                _fail(model, f"footing {f.name!r} ({lo:g} to {hi:g} m) reaches outside the "
                             f"domain ({x_min:g} to {x_max:g} m)",
                      f"section.footings[{i + 1}].center",
                      "move the footing inside, or widen section.width (or leave it out to "
                      "use the rule in docs/model.md).")


def _check_loads(model: Model) -> None:
    half = _is_half(model)
    for i, load in enumerate(model.loads):
        p = f"loads[{i + 1}]"
        _check_fields(model, load, p, _LOAD_RULES)
        if load.x_right <= load.x_left:
            _fail(model, f"x_right ({load.x_right:g} m) is not to the right of x_left "
                         f"({load.x_left:g} m)", f"{p}.x_right",
                  "give x_left < x_right (m).")
        if half and load.x_left < -1e-9:
            _fail(model, f"x_left = {load.x_left:g} m is left of the symmetry line x = 0",
                  f"{p}.x_left", "in a half or axisymmetric model give loads on x >= 0; the "
                                 "mirror image is implied (a centred load starts at 0).")
        if model.section.width is not None:
            x_max = model.section.width if half else model.section.width / 2
            x_min = 0.0 if half else -x_max
            if load.x_left < x_min - 1e-9 or load.x_right > x_max + 1e-9:
                _fail(model, f"the load ({load.x_left:g} to {load.x_right:g} m) reaches "
                             f"outside the domain ({x_min:g} to {x_max:g} m)", f"{p}.x_right",
                      "move it inside, or widen section.width.")
    names = [lo.name for lo in model.loads]
    _unique(model, names, "loads", "loads")
    footing_names = {f.name for f in model.section.footings}
    for i, n in enumerate(names):
        if n in footing_names:
            _fail(model, f"load {n!r} has the name of a footing", f"loads[{i + 1}].name",
                  "stages name loads and footings alike: give each its own name.")


def _check_drainage(model: Model) -> None:
    d = model.drainage
    _check_fields(model, d, "drainage", _DRAINAGE_RULES)
    if model.section.kind != "mesh":
        for key in ("drained_edges", "fixed_edges", "roller_edges"):
            if getattr(d, key):
                _fail(model, f"{key} is given but section.kind is {model.section.kind!r}",
                      f"drainage.{key}", "edge names are for a user mesh (kind \"mesh\"); for "
                                         "a parametric section use top, base and sides.")


def _check_stages(model: Model) -> None:
    emb = model.section.embankment if model.section.kind == "embankment" else None
    n_lifts = len(emb.lifts) if emb else 0
    loadable = [lo.name for lo in model.loads] + [f.name for f in model.section.footings]
    placed = 0
    for i, st in enumerate(model.stages):
        p = f"stages[{i + 1}]"
        _check_fields(model, st, p, _STAGE_RULES)
        if st.kind != "lift" and st.lift is not None:
            _fail(model, f"lift is given for a stage of kind {st.kind!r}", f"{p}.lift",
                  "set kind = \"lift\" to place a lift, or remove lift.")
        if st.kind != "load" and st.loads:
            _fail(model, f"loads are given for a stage of kind {st.kind!r}", f"{p}.loads",
                  "set kind = \"load\" to apply or remove loads, or remove loads.")
        if st.kind != "load" and st.factor != 1.0:
            _fail(model, f"factor is given for a stage of kind {st.kind!r}", f"{p}.factor",
                  "factor applies to stages of kind \"load\"; remove it.")
        if st.kind != "consolidate" and st.until_degree is not None:
            _fail(model, f"until_degree is given for a stage of kind {st.kind!r}",
                  f"{p}.until_degree", "until_degree ends a stage of kind \"consolidate\"; "
                                       "add such a stage after this one.")
        if st.kind != "lift" and st.region is not None:
            _fail(model, f"region is given for a stage of kind {st.kind!r}", f"{p}.region",
                  "set kind = \"lift\" to place a region of the mesh, or remove region.")
        if st.kind == "lift" and model.section.kind == "mesh":
            if st.region is None or st.lift is not None:
                _fail(model, "on a user mesh a stage of kind 'lift' places a named region",
                      f"{p}.region", "give region = \"NAME\", a region of the mesh listed in "
                                     "[section.regions], instead of lift.")
            _name_check(model, st.region, list(model.section.regions), f"{p}.region",
                        "region", "list it in [section.regions] with its material")
            earlier = [s.region for s in model.stages[:i] if s.kind == "lift"]
            if st.region in earlier:
                _fail(model, f"region {st.region!r} is placed twice", f"{p}.region",
                      "place each region once.")
            continue
        if st.kind == "lift":
            if st.region is not None:
                _fail(model, "region places part of a user mesh; an embankment is placed by "
                             "lift number", f"{p}.region", "use lift = N instead.")
            if st.lift is None:
                _fail(model, "a stage of kind 'lift' needs the lift it places", f"{p}.lift",
                      f"add lift = {placed + 1} (lifts are numbered 1, 2, ... from the bottom).")
            if emb is None:
                _fail(model, "a stage of kind 'lift' needs an embankment to place",
                      f"{p}.kind", "use section.kind = \"embankment\" with "
                                   "[section.embankment], or use a stage of kind \"load\".")
            if st.lift > n_lifts:
                _fail(model, f"lift {st.lift} is not defined; the embankment has {n_lifts} "
                             f"lift{'s' if n_lifts != 1 else ''}", f"{p}.lift",
                      f"give a lift number from 1 to {n_lifts}, or add lifts to "
                      "section.embankment.lifts.")
            if st.lift <= placed:
                _fail(model, f"lift {st.lift} is placed twice", f"{p}.lift",
                      f"place each lift once; the next one to place is lift {placed + 1}"
                      if placed < n_lifts else "every lift is already placed; remove this "
                                               "stage.")
            if st.lift != placed + 1:
                _fail(model, f"lift {st.lift} is placed before lift {placed + 1}", f"{p}.lift",
                      f"place the lifts in order from the bottom: lift {placed + 1} next.")
            placed = st.lift
        if st.kind == "load":
            if not st.loads:
                _fail(model, "a stage of kind 'load' needs the loads it changes", f"{p}.loads",
                      "add loads = [\"name\", ...] naming [[loads]] or [[section.footings]]"
                      + (f" (defined: {', '.join(map(repr, loadable))})" if loadable else
                         "; none are defined yet") + ".")
            for j, name in enumerate(st.loads):
                _name_check(model, name, loadable, f"{p}.loads[{j + 1}]", "load or footing",
                            "define it as a [[loads]] or [[section.footings]] table with "
                            "this name")
    _unique(model, [s.name for s in model.stages], "stages", "stages")


# ----------------------------------------------------------------------------- domain

def _layer_depths(model: Model) -> tuple[float, float] | None:
    """Total thickness of the layers at the left and right edges of the section, m."""
    if not model.layers:
        return None
    left = sum(la.thickness for la in model.layers)
    right = sum(la.thickness if la.thickness_right is None else la.thickness_right
                for la in model.layers)
    return left, right


def loaded_spans(model: Model) -> list[tuple[float, float]]:
    """x ranges of everything that loads the ground: the embankment footprint (toe to toe,
    berms included), the footings and the surface loads."""
    sec = model.section
    spans = []
    if sec.kind == "embankment" and sec.embankment is not None:
        toe = embankment_profile(sec.embankment)[-1][0]
        spans.append((-toe, toe))
    if sec.kind == "footings":
        spans += [(f.center - f.width / 2, f.center + f.width / 2) for f in sec.footings]
    spans += [tuple(sorted((float(ld.x_left), float(ld.x_right)))) for ld in model.loads]
    return spans


def loaded_extent(model: Model) -> tuple[float, float] | None:
    """(x_left, x_right) of everything loading the ground, m, mirror images included.

    The embankment footprint (toe to toe, berms included), the footings and the surface
    loads; in a half or axisymmetric model the span is mirrored about x = 0. None if nothing
    loads the ground.
    """
    spans = loaded_spans(model)
    if not spans:
        return None
    lo, hi = min(s[0] for s in spans), max(s[1] for s in spans)
    if _is_half(model):
        m = max(abs(lo), abs(hi))
        lo, hi = -m, m
    return lo, hi


def domain_extent(model: Model) -> tuple[float, float, float] | None:
    """(x_min, x_max, depth) of the modelled domain, m.

    Full plane strain: x in [-width/2, width/2]; half and axisymmetric: x (r) in [0, width].
    depth: the layers' total thickness (at the deeper edge where the base slopes), else
    section.depth (a user mesh). When width is not given (common practice, see docs/model.md): each
    side boundary lies max(2 B, 2 D) beyond the load edge, rounded up to a whole metre, where
    B is the loaded width (toe to toe, mirror images included) and D the depth. None for a
    user mesh whose width or depth is not given, or without layers or depth.
    """
    sec = model.section
    depths = _layer_depths(model)
    depth = max(depths) if depths else sec.depth
    if depth is None:
        return None
    half = _is_half(model)
    if sec.width is not None:
        return (0.0, sec.width, depth) if half else (-sec.width / 2, sec.width / 2, depth)
    if sec.kind == "mesh":
        return None
    ext = loaded_extent(model)
    b = ext[1] - ext[0] if ext else 0.0
    edge = max(abs(ext[0]), abs(ext[1])) if ext else 0.0
    reach = float(math.ceil(edge + max(2 * b, 2 * depth) - 1e-9))
    return (0.0, reach, depth) if half else (-reach, reach, depth)


def ground_surface(model: Model, x: float) -> float:
    """Elevation of the top of the model at x, m: the embankment surface where there is one,
    else the original ground (y = 0)."""
    sec = model.section
    if sec.kind != "embankment" or sec.embankment is None:
        return 0.0
    pts = embankment_profile(sec.embankment)
    s = abs(x)
    for (xa, ya), (xb, yb) in zip(pts, pts[1:]):
        if xa <= s <= xb:
            return ya if xb == xa else ya + (yb - ya) * (s - xa) / (xb - xa)
    return 0.0


def base_elevation(model: Model, x: float) -> float | None:
    """Elevation of the base of the model at x, m (negative), linear between the edges."""
    ext = domain_extent(model)
    if ext is None:
        return None
    x_min, x_max, depth = ext
    depths = _layer_depths(model)
    if depths is None:
        return -depth
    left, right = depths
    t = 0.0 if x_max == x_min else (x - x_min) / (x_max - x_min)
    return -(left + (right - left) * min(max(t, 0.0), 1.0))


def _outside(model: Model, x: float, y: float) -> str | None:
    """Why (x, y) lies outside the domain, or None (also when the extent is unknown)."""
    ext = domain_extent(model)
    if ext is None:
        return None
    x_min, x_max, depth = ext
    tol = 1e-9 * max(1.0, x_max - x_min, depth)
    if not x_min - tol <= x <= x_max + tol:
        return f"x = {x:g} m is outside [{x_min:g}, {x_max:g}] m"
    base = base_elevation(model, x)
    if y < base - tol:
        return f"y = {y:g} m is below the base of the model (y = {base:g} m)"
    top = ground_surface(model, x)
    if y > top + tol:
        what = "the embankment surface" if top > 0 else "the ground surface"
        return f"y = {y:g} m is above {what} (y = {top:g} m)"
    return None


def _check_probes(model: Model) -> None:
    fix = ("move it inside the domain (y = 0 is the original ground, up positive; x within "
           "the section), or widen it with section.width; docs/model.md gives the rule for "
           "the extent.")
    for i, pr in enumerate(model.probes):
        p = f"probes[{i + 1}]"
        _check_fields(model, pr, p, _PROBE_RULES)
        why = _outside(model, pr.x, pr.y)
        if why:
            _fail(model, f"probe {pr.name!r} lies outside the domain: {why}", f"{p}.x"
                  if why.startswith("x") else f"{p}.y", fix)
    _unique(model, [pr.name for pr in model.probes], "probes", "probes")
    for i, ln in enumerate(model.lines):
        p = f"lines[{i + 1}]"
        _check_fields(model, ln, p, _LINE_RULES)
        if ln.x0 == ln.x1 and ln.y0 == ln.y1:
            _fail(model, "the line starts and ends at the same point", f"{p}.x1",
                  "give two different end points (x0, y0) and (x1, y1).")
        for end in ("0", "1"):
            why = _outside(model, getattr(ln, "x" + end), getattr(ln, "y" + end))
            if why:
                _fail(model, f"end {end} of line {ln.name!r} lies outside the domain: {why}",
                      f"{p}.{'x' if why.startswith('x') else 'y'}{end}", fix)
    _unique(model, [ln.name for ln in model.lines], "lines", "lines")


def domain_warnings(model: Model) -> list[str]:
    """Warnings (common practice) when the boundaries are close enough to change the answer.

    A side boundary closer than 2 loaded widths to the load edge, or a base shallower than
    the loaded width (a rigid base within about one loaded width reduces the settlement
    noticeably).
    """
    ext, load = domain_extent(model), loaded_extent(model)
    if ext is None or load is None:
        return []
    x_min, x_max, _ = ext
    b = load[1] - load[0]
    out = []
    gap = x_max - load[1] if _is_half(model) else min(x_max - load[1], load[0] - x_min)
    if gap < 2 * b:
        out.append(f"the side boundary is {gap:.3g} m from the load edge, less than 2 loaded "
                   f"widths (B = {b:.3g} m); the fixed side holds the ground near it and "
                   "reduces the settlement (common practice: at least 2 B). Widen "
                   "section.width or leave it out to use the rule in docs/model.md.")
    depths = _layer_depths(model) if model.section.depth is None else None
    shallow = min(depths) if depths else ext[2]
    where = " at its shallowest" if depths and depths[0] != depths[1] else ""
    if shallow < b:
        out.append(f"the base of the model is {shallow:.3g} m deep{where}, less than the "
                   f"loaded width "
                   f"(B = {b:.3g} m); a rigid base within about one loaded width reduces the "
                   "settlement noticeably (common practice). That is intended when the ground "
                   "below is far stiffer (rock, dense sand or gravel); otherwise add a deeper "
                   "layer.")
    return out


def model_warnings(model: Model) -> list[str]:
    """Everything worth a second look that is not an error: :func:`domain_warnings`, lifts
    never placed, loads never applied, output times after the last stage."""
    out = domain_warnings(model)
    sec = model.section
    if sec.kind == "embankment" and sec.embankment is not None:
        placed = {s.lift for s in model.stages if s.kind == "lift"}
        left = [n for n in range(1, len(sec.embankment.lifts) + 1) if n not in placed]
        if left:
            out.append(f"lift{'s' if len(left) > 1 else ''} {', '.join(map(str, left))} "
                       "never placed by any stage.")
    used = {n for s in model.stages if s.kind == "load" for n in s.loads}
    for n in [lo.name for lo in model.loads] + [f.name for f in sec.footings]:
        if n not in used:
            out.append(f"load {n!r} is never applied by any stage (kind \"load\").")
    ext = domain_extent(model)
    if ext is not None and model.water.table_depth > ext[2]:
        out.append(f"the water table ({model.water.table_depth:g} m deep) is below the base of "
                   f"the model ({ext[2]:g} m): all the ground is above it.")
    end = sum(s.duration for s in model.stages)
    late = [t for t in model.output.times if t > end]
    if late:
        out.append(f"output times after the last stage ends ({end:g} days) are never "
                   f"reached: {', '.join(f'{t:g}' for t in late)} days.")
    return out


def check_mesh_names(model: Model, mesh) -> None:
    """Check that a user mesh has every region and edge the model names, and that every region
    of the mesh has a material.

    ``mesh`` has ``region_names`` (list of str) and ``edges`` (dict name -> segments).
    Raises InputError naming the missing name and listing the ones the mesh has.
    """
    have = list(mesh.region_names)
    edges = list(mesh.edges)
    src = model.source or getattr(mesh, "source", None)
    if model.section.kind == "mesh":
        for name in model.section.regions:
            if name not in have:
                best = _suggest(name, have)
                raise InputError(f"the mesh has no region {name!r}",
                                 field=_join("section.regions", name), source=src,
                                 fix=(f"did you mean {best!r}? " if best else "") +
                                 f"the mesh's regions are: {', '.join(have) or 'none'}.")
        for name in have:
            if name not in model.section.regions:
                raise InputError(f"the mesh region {name!r} has no material",
                                 field="section.regions", source=src,
                                 fix=f"add {_key(name)} = \"material_name\" under "
                                     "[section.regions].")
    for key in ("drained_edges", "fixed_edges", "roller_edges"):
        for i, name in enumerate(getattr(model.drainage, key)):
            if name not in edges:
                best = _suggest(name, edges)
                raise InputError(f"the mesh has no edge {name!r}",
                                 field=f"drainage.{key}[{i + 1}]", source=src,
                                 fix=(f"did you mean {best!r}? " if best else "") +
                                 f"the mesh's named edges are: {', '.join(edges) or 'none'}.")


# ============================================================================= writing

def _plain(obj: Any, rules: dict[str, _Rule]) -> dict[str, Any]:
    """The fields of ``obj`` under their TOML keys; None and empty lists left out."""
    out = {}
    for key, rule in rules.items():
        attr = rule.attr or key
        if not hasattr(obj, attr):
            continue
        v = getattr(obj, attr)
        if v is None or (isinstance(v, list) and not v and key != "times"):
            continue
        out[key] = list(v) if isinstance(v, list) else v
    return out


def model_to_dict(model: Model) -> dict[str, Any]:
    """The model as the tables of a model file: plain numbers in the default units (kN, m,
    kPa, kN/m3, days, m/day), None fields left out. ``model_from_dict`` reads it back."""
    d = _plain(model, _MODEL_RULES)
    mats = {}
    for name, m in model.materials.items():
        md = _plain(m, _MATERIAL_RULES)
        oed = _plain(m.oedometer, _OEDOMETER_RULES)
        if oed:
            md["oedometer"] = oed
        mats[name] = md
    d["materials"] = mats
    d["layers"] = [_plain(la, _LAYER_RULES) for la in model.layers]
    sec = model.section
    sd = _plain(sec, _SECTION_RULES)
    if sec.embankment is not None:
        ed = _plain(sec.embankment, _EMBANKMENT_RULES)
        if sec.embankment.berms:
            ed["berms"] = [_plain(b, _BERM_RULES) for b in sec.embankment.berms]
        sd["embankment"] = ed
    if sec.footings:
        sd["footings"] = [_plain(f, _FOOTING_RULES) for f in sec.footings]
    if sec.regions:
        sd["regions"] = dict(sec.regions)
    d["section"] = sd
    d["water"] = _plain(model.water, _WATER_RULES)
    d["drainage"] = _plain(model.drainage, _DRAINAGE_RULES)
    d["loads"] = [_plain(lo, _LOAD_RULES) for lo in model.loads]
    d["stages"] = [_plain(st, _STAGE_RULES) for st in model.stages]
    d["time_steps"] = _plain(model.time_steps, _TIME_STEP_RULES)
    d["probes"] = [_plain(pr, _PROBE_RULES) for pr in model.probes]
    d["lines"] = [_plain(ln, _LINE_RULES) for ln in model.lines]
    d["output"] = _plain(model.output, _OUTPUT_RULES)
    return {k: v for k, v in d.items() if v != []}


def _toml_scalar(v: Any) -> str:
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, int):
        return str(v)
    if isinstance(v, float):
        if math.isnan(v):
            return "nan"
        if math.isinf(v):
            return "inf" if v > 0 else "-inf"
        return repr(v)
    if isinstance(v, str):
        out = ['"']
        for ch in v:
            if ch in '"\\':
                out.append("\\" + ch)
            elif ch in "\b\t\n\f\r":
                out.append({"\b": "\\b", "\t": "\\t", "\n": "\\n", "\f": "\\f",
                            "\r": "\\r"}[ch])
            elif ord(ch) < 0x20 or ord(ch) == 0x7F:
                out.append(f"\\u{ord(ch):04X}")
            else:
                out.append(ch)
        return "".join(out) + '"'
    if isinstance(v, (list, tuple)):
        return "[" + ", ".join(_toml_scalar(x) for x in v) + "]"
    raise TypeError(f"cannot write {type(v).__name__} to TOML")


def _is_table_array(v: Any) -> bool:
    return isinstance(v, list) and bool(v) and all(isinstance(x, dict) for x in v)


def toml_dumps(data: dict[str, Any]) -> str:
    """Write nested dicts, lists and scalars (str, int, float, bool) as TOML text."""
    lines: list[str] = []

    def table(d: dict, prefix: str) -> None:
        for k, v in d.items():
            if not isinstance(v, dict) and not _is_table_array(v):
                lines.append(f"{_key(k)} = {_toml_scalar(v)}")
        for k, v in d.items():
            name = prefix + _key(k)
            if isinstance(v, dict):
                has_scalars = any(not isinstance(x, dict) and not _is_table_array(x)
                                  for x in v.values())
                if has_scalars or not v:
                    lines.extend(["", f"[{name}]"])
                table(v, name + ".")
            elif _is_table_array(v):
                for item in v:
                    lines.extend(["", f"[[{name}]]"])
                    table(item, name + ".")

    table(data, "")
    return "\n".join(lines).lstrip("\n") + "\n"


def dump_toml(model: Model) -> str:
    """The model as a model file (TOML text), every value a plain number in the default unit.

    ``run`` saves this beside the results: a copy of the model as it was read, defaults
    filled in, that :func:`load_model` reads back to the same model.
    """
    head = [f"# {' '.join(str(model.title).split())}",
            "# The model as it was read, every value in the default unit: kN, m, kPa, kN/m3,",
            "# days; permeability in m/day. Written by poroplane; load it with load_model.",
            ""]
    return "\n".join(head) + toml_dumps(model_to_dict(model))
