"""Reading a model file (TOML) or its tables (a dict) into a checked :class:`Model`."""

from __future__ import annotations

import tomllib
from pathlib import Path
from typing import Any, Callable

from ..errors import InputError
from .checks import check_model
from .fields import _join, _Reader
from .rules import (_BERM_RULES, _DRAINAGE_RULES, _EMBANKMENT_RULES, _FOOTING_RULES,
                    _LAYER_RULES, _LINE_RULES, _LOAD_RULES, _MATERIAL_RULES, _MODEL_RULES,
                    _MODEL_TABLES, _OEDOMETER_RULES, _OUTPUT_RULES, _PROBE_RULES,
                    _SECTION_RULES, _STABILITY_RULES, _STAGE_RULES, _TIME_STEP_RULES,
                    _WATER_RULES, _Rule,
                    _GRADING_RULES, _UNDRAINED_RULES, _LIMIT_RULES, _STRUCTURE_RULES,
                    _WATER_TABLES, _EXCESS_RULE, _PIEZOMETRIC_RULE)
from .schema import (MAX_LIFTS, Berm, Drainage, Embankment, Footing, Grading, Layer,
                     LineProbe,
                     Material, Model, OedometerParameters, Output, PointProbe, Section, Stage,
                     UndrainedParameters, Limits, Structure, Stability,
                     SurfaceLoad, TimeSteps, Water)

# A TOML table (or a dict) becomes the dataclasses of :mod:`.schema`, quantities with units
# converted once and each field checked where it enters. Field paths in messages are TOML
# paths; indices into arrays of tables count from 1 in the order the tables appear in the file
# (``stages[2]`` is the second ``[[stages]]`` table).


# ------------------------------------------------------------------------ readers per table

def _read_material(r: _Reader, name: str, value: Any) -> Material:
    path = _join("materials", name)
    d = r.table(value, path, 'model = "linear elastic"')
    vals = r.read(d, path, _MATERIAL_RULES, nested=("oedometer", "undrained"))
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
    und_path = _join(path, "undrained")
    und = r.table(d.get("undrained", {}), und_path, 'modulus = "4 MPa"')
    vals["undrained"] = UndrainedParameters(**r.read(und, und_path, _UNDRAINED_RULES))
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


def _read_water(r: _Reader, value: Any) -> Water:
    d = r.table(value, "water", "table_depth = 1.0")
    vals = r.read(d, "water", _WATER_RULES, nested=_WATER_TABLES)
    if "piezometric_depths" in d:
        path = "water.piezometric_depths"
        t = r.table(d["piezometric_depths"], path, _PIEZOMETRIC_RULE.example)
        vals["piezometric_depths"] = {name: r.value(v, _join(path, name), _PIEZOMETRIC_RULE)
                                      for name, v in t.items()}
    if "initial_excess_pore_pressures" in d:
        path = "water.initial_excess_pore_pressures"
        t = r.table(d["initial_excess_pore_pressures"], path, _EXCESS_RULE.example)
        # one value (uniform) or [top, base]
        vals["initial_excess_pore_pressures"] = {
            name: r.value(v if isinstance(v, list) else [v], _join(path, name), _EXCESS_RULE)
            for name, v in t.items()}
    return Water(**vals)


def _read_section(r: _Reader, value: Any, analysis: str) -> Section:
    path = "section"
    d = r.table(value, path, 'kind = "embankment"')
    vals = r.read(d, path, _SECTION_RULES,
                  nested=("embankment", "footings", "regions", "grading", "region_mesh_size"))
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
    if "grading" in d:
        g = r.table(d["grading"], "section.grading", "enabled = true")
        vals["grading"] = Grading(**r.read(g, "section.grading", _GRADING_RULES))
    if "region_mesh_size" in d:
        sizes = r.table(d["region_mesh_size"], "section.region_mesh_size", "soft_clay = 0.5")
        length = _Rule("length", "region_name = 0.5", low=0.0)
        vals["region_mesh_size"] = {
            name: r.value(v, _join("section.region_mesh_size", name), length)
            for name, v in sizes.items()}
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
    water = _read_water(r, data.get("water", {}))
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
    limits = Limits(**r.read(r.table(data.get("limits", {}), "limits",
                                     'differential_settlement = "0.1 m"'), "limits", _LIMIT_RULES))
    structures = _read_list(r, data, "structures", _STRUCTURE_RULES, ("probes",),
                            lambda i, v: f"structure_{i + 1}", Structure)
    stability = None
    if "stability" in data:
        stab = r.table(data["stability"], "stability", "required_factor_of_safety = 1.3")
        stability = Stability(**r.read(stab, "stability", _STABILITY_RULES))
    model = Model(**top, materials=materials, layers=layers, section=section, water=water,
                  drainage=drainage, loads=loads, stages=stages, time_steps=time_steps,
                  probes=probes, lines=lines, output=output, limits=limits,
                  structures=structures, stability=stability, source=source)
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
    except RecursionError:
        raise InputError("the file nests arrays or tables too deeply to read", source=source,
                         fix="a model file needs tables at most a few levels deep; remove the "
                             "nesting.") from None
    try:
        return model_from_dict(data, source=source)
    except RecursionError:
        raise InputError("the file nests arrays or tables too deeply to read", source=source,
                         fix="a model file needs tables at most a few levels deep; remove the "
                             "nesting.") from None


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
