"""The model: plain dataclasses, the Python face of a model file.

A model file (TOML) and a script build the same objects; the loader (``load_model``) converts
quantities with units once, checks every field where it enters, and names the field (its TOML
path) in every message.

Coordinates: x horizontal (radius in axisymmetry), y elevation, up positive; the original
ground surface is y = 0. Units: kN, m, kPa, kN/m3, days; permeability in m/day.

The package by role, each module importing only those before it:
:mod:`.schema` (dataclasses, fixed choices) -> :mod:`.rules` (how each field is read and
checked) -> :mod:`.fields` (TOML paths, the value reader) -> :mod:`.domain` (extent, ground
surface, base, loaded spans) -> :mod:`.limits` (bounds on names and counts) -> :mod:`.checks`
(check_model, warnings) -> :mod:`.read`
(load_model) and :mod:`.write` (model_to_dict, dump_toml).
"""

from .checks import check_mesh_names, check_model, model_warnings
from .domain import (base_elevation, domain_extent, domain_warnings, embankment_profile,
                     ground_surface, loaded_extent, loaded_spans)
from .read import load_model, model_from_dict, model_from_toml
from .schema import (ANALYSES, LINE_KINDS, MATERIAL_MODELS, MAX_ELEMENTS, MAX_LIFTS,
                     SECTION_KINDS, STAGE_KINDS, Berm, Drainage, Embankment, Footing, Grading,
                     Layer, Limits, LineProbe, Material, Model, OedometerParameters, Output,
                     PointProbe, Section, Stability, Stage, Structure, SurfaceLoad, TimeSteps,
                     UndrainedParameters, Water)
from .write import dump_toml, model_to_dict, toml_dumps

__all__ = [
    "ANALYSES", "LINE_KINDS", "MATERIAL_MODELS", "MAX_ELEMENTS", "MAX_LIFTS", "SECTION_KINDS",
    "STAGE_KINDS", "Berm", "Drainage", "Embankment", "Footing", "Grading", "Layer", "LineProbe",
    "Material", "Model",
    "OedometerParameters", "Output", "PointProbe", "Section", "Stability", "Stage", "SurfaceLoad",
    "TimeSteps", "UndrainedParameters", "Water", "Limits", "Structure",
    "base_elevation", "check_mesh_names", "check_model", "domain_extent", "domain_warnings",
    "dump_toml", "embankment_profile", "ground_surface", "load_model", "loaded_extent",
    "loaded_spans", "model_from_dict", "model_from_toml", "model_to_dict", "model_warnings",
    "toml_dumps",
]
