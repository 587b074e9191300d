"""The model's dataclasses (the Python face of a model file) and the fixed choices.

Coordinates: x horizontal (radius in axisymmetry), y elevation, up positive; the original
ground surface is y = 0. Units: kN, m, kPa, kN/m3, days; permeability in m/day.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Literal

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
class UndrainedParameters:
    """Undrained (immediate) behaviour for the hand method; every field optional.

    modulus : undrained Young's modulus E_u, kPa; or strength : undrained shear strength s_u,
    kPa, with modulus_ratio : E_u / s_u (-).
    pore_pressure_parameter : Skempton's (1954) A, for the Skempton-Bjerrum (1957) correction
    of the oedometer settlement under a load of finite width.
    """
    modulus: float | None = None
    strength: float | None = None
    modulus_ratio: float | None = None
    pore_pressure_parameter: float | None = None


@dataclass
class Material:
    """A soil (or fill) as both the FE and the hand method see it.

    model : "linear elastic" or "modified cam clay".
    Linear elastic: youngs_modulus (kPa) and poisson_ratio, or constrained_modulus (kPa)
    and poisson_ratio, or stiffness_from_oedometer (the constrained modulus of each sublayer
    from the oedometer data over the stress range the load imposes, see
    :mod:`solver.oedometer_stiffness`) and poisson_ratio.
    Modified Cam Clay: lambda_, kappa, M or friction_angle (degrees), poisson_ratio,
    void_ratio (initial), and preconsolidation from ``oedometer`` (OCR or margin or sigma'_p),
    permeability_change_index (Taylor 1948 C_k; None keeps k constant).
    Both: permeability_x, permeability_y (m/day), unit_weight (above the water table) and
    saturated_unit_weight (below it), kN/m3; at-rest coefficient k0 or friction_angle
    (K0 = 1 - sin phi', Jaky 1944); biot_coefficient; storage (1/kPa).
    Hand method only: ``oedometer`` (one-dimensional compressibility) and ``undrained``
    (the undrained modulus for the immediate settlement, Skempton's A).
    Strength (stability checks only): strength "drained" uses cohesion c' (kPa) and
    friction_angle phi' with the pore pressure; "undrained" uses s_u = S OCR^m sigma'_v
    (undrained_strength_ratio S, strength_exponent m; Ladd and Foott 1974) or the profile
    undrained_strength + undrained_strength_gradient * depth below the original ground
    (kPa, kPa/m). None: undrained when S or s_u is given, else drained.
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
    stiffness_from_oedometer: bool = False
    oedometer: OedometerParameters = field(default_factory=OedometerParameters)
    undrained: UndrainedParameters = field(default_factory=UndrainedParameters)
    # Strength for the stability checks (docs/model.md, "Strength and [stability]")
    strength: Literal["drained", "undrained"] | None = None
    cohesion: float | None = None
    undrained_strength_ratio: float | None = None
    strength_exponent: float = 0.8
    undrained_strength: float | None = None
    undrained_strength_gradient: float = 0.0


# ----------------------------------------------------------------------------- ground


@dataclass
class Layer:
    """A soil layer, from the top down. ``thickness`` in m at the left of the section;
    ``thickness_right`` (optional) at the right edge makes the layer's base slope linearly."""
    name: str
    material: str
    thickness: float
    thickness_right: float | None = None
    mesh_size: float | None = None   # m, the layer's own element size (None: the section's)


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
    or kN in axisymmetry, instead); rigid : the base stays straight (a rigid plate: it settles
    and tilts) or carries the pressure as given (flexible); eccentricity : m, where the
    resultant acts, from the centre (positive towards +x; full plane strain sections only):
    a rigid base carries its moment, a flexible one a linearly varying pressure with the same
    resultant.
    """
    name: str
    center: float
    width: float
    load: float | None = None
    force: float | None = None
    embedment: float = 0.0
    rigid: bool = True
    eccentricity: float = 0.0


@dataclass
class SurfaceLoad:
    """A uniform vertical pressure on the ground surface from x_left to x_right, kPa."""
    name: str
    x_left: float
    x_right: float
    pressure: float


@dataclass
class Grading:
    """Mesh grading toward draining boundaries and permeability-contrast interfaces
    (docs/model.md, "Mesh grading").

    enabled : grade (true) or not; boundary_size : element size at those boundaries, m (None:
    sqrt(c_v x time_steps.first_step) of the slower side); min_size : the finest boundary size,
    m; element_budget : the most triangles the graded mesh may have (None: four times the
    mesh without grading, at least 2500); the boundary sizes grow until it fits.
    """
    enabled: bool = True
    boundary_size: float | None = None
    min_size: float = 0.02
    element_budget: int | None = None


# The most triangles a section may have before it is refused unmeshed (section.max_elements;
# a few million take minutes to mesh and several GB to solve on a workstation).
MAX_ELEMENTS = 3_000_000


@dataclass
class Section:
    """What is meshed. kind: "embankment", "footings", "ground" (layers only, surface loads)
    or "mesh" (a user .msh/.geo file whose named groups carry materials and boundaries).

    width, depth : domain extent, m (None: chosen from the loaded width, see docs/model.md);
    half : model only x >= 0 with a symmetry line at x = 0 (embankment, one centred footing);
    mesh_size : element size near the load, m (None: from the loaded width);
    mesh_file : for kind "mesh"; regions : for kind "mesh", region name -> material name.
    grading : mesh grading toward draining boundaries (:class:`Grading`).
    max_elements : the most triangles the mesh may have (None: :data:`MAX_ELEMENTS`); a larger
    estimate is refused before meshing.
    region_mesh_size : for kind "mesh" from a .geo file, region name -> element size, m.
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
    grading: Grading = field(default_factory=Grading)
    max_elements: int | None = None
    region_mesh_size: dict[str, float] = field(default_factory=dict)


# ----------------------------------------------------------------------------- water, bounds


@dataclass
class Water:
    """table_depth : depth of the water table below the ground surface, m (negative: above);
    unit_weight : kN/m3.

    piezometric_depths : layer name (or region name of a user mesh) -> depth of its
    piezometric level below the ground surface, m (negative: above the ground, an artesian
    head); the layer has that head throughout and the water seeps steadily through the
    layers between levels (see :mod:`solver.pore_water`).
    initial_excess_pore_pressures : layer (or region) name -> initial excess pore pressure,
    kPa: [value] uniform, or [top, base] linear between the top and the base of the layer.
    """
    table_depth: float = 0.0
    unit_weight: float = 9.81
    piezometric_depths: dict[str, float] = field(default_factory=dict)
    initial_excess_pore_pressures: dict[str, list[float]] = field(default_factory=dict)


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
    duration), "remove" (take away a placed ``lift``, the top one in place, or ``region``:
    its weight ramps off over the duration and its elements go at the end), "load" (ramp
    the named loads/footings by ``factor`` over the duration: 1 applies, 0 removes, 0.5
    halves), or "consolidate" (nothing changes).
    duration : days (for "consolidate" with ``until_degree``: the longest it may last); 0
    only for "load" and "remove": the change is made at once and felt undrained.
    until_degree : stop a "consolidate" stage once the average degree of consolidation
    reaches this fraction (0.9 = 90 %).
    """
    name: str
    kind: Literal["lift", "remove", "load", "consolidate"]
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
class Structure:
    """A structure the user names over surface probes (``probes``, two or more, in any
    order): the building limits of angular distortion (Bjerrum 1963) apply between its
    neighbouring probes."""
    name: str
    probes: list[str] = field(default_factory=list)


@dataclass
class Limits:
    """Limits the user sets for the ground surface between neighbouring surface probes (an
    embankment or the ground beside it): ``differential_settlement`` (m) and
    ``change_of_gradient`` (-, the change of the surface slope from one pair of probes to the
    next). None: reported without a check."""
    differential_settlement: float | None = None
    change_of_gradient: float | None = None


@dataclass
class Output:
    """times : days at which fields and line probes are written (besides every stage end);
    every_step : write fields at every step (large files); residual_after : a day (e.g. of
    paving) after which the settlement still to come is reported at every probe."""
    times: list[float] = field(default_factory=list)
    every_step: bool = False
    residual_after: float | None = None


@dataclass
class Stability:
    """The [stability] table: slip-surface checks through construction.

    times : days at which the factor of safety is found; empty: the end of every stage.
    required_factor_of_safety : a warning is given below it (1.3 during construction is common
        practice for some authorities; local codes govern).
    min_depth : a slip must reach at least this far below the surface, m.
    x_limits : (left, right) m, the slip lies within them; empty: anywhere on the section.
    lowest_tangent : the lowest elevation a slip circle may reach, m (None: the model's base).
    noncircular : also search non-circular surfaces by Spencer's method.
    """
    times: list[float] = field(default_factory=list)
    required_factor_of_safety: float = 1.3
    min_depth: float = 0.5
    x_limits: list[float] = field(default_factory=list)
    lowest_tangent: float | None = None
    noncircular: bool = False


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
    limits: Limits = field(default_factory=Limits)
    structures: list[Structure] = field(default_factory=list)
    stability: Stability | None = None
    source: str | None = None   # file it was read from, for messages



ANALYSES = ("plane strain", "axisymmetric")
SECTION_KINDS = ("embankment", "footings", "ground", "mesh")
MATERIAL_MODELS = ("linear elastic", "modified cam clay")
STAGE_KINDS = ("lift", "remove", "load", "consolidate")
STRENGTH_KINDS = ("drained", "undrained")
LINE_KINDS = ("surface", "vertical", "line")
MAX_LIFTS = 100          # more lifts than this is a typo, not a construction sequence
_REL_TOL = 1e-6          # lifts must sum to the height within this relative tolerance
