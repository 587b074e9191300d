"""Checking a model (read from a file or built in Python): every rule that spans fields,
each message naming the TOML path, the file and a fix; and the warnings worth a second look."""

from __future__ import annotations

import math
import numbers
from pathlib import Path
from typing import Any

from ..errors import InputError
from ..units import KINDS, describe_value
from .bounds import check_bounds, check_physical
from .domain import _is_half, _outside, domain_extent, domain_warnings
from .fields import _join, _key, _Reader, _suggest
from .limits import check_limits
from .rules import (_BERM_RULES, _DRAINAGE_RULES, _EMBANKMENT_RULES, _FOOTING_RULES,
                    _LAYER_RULES, _LINE_RULES, _LOAD_RULES, _MATERIAL_RULES, _MODEL_RULES,
                    _OEDOMETER_RULES, _OUTPUT_RULES, _POSITIVE_DURATION, _PROBE_RULES,
                    _SECTION_RULES, _STABILITY_RULES, _STAGE_RULES, _TIME_STEP_RULES,
                    _WATER_RULES, _Rule,
                    _GRADING_RULES, _UNDRAINED_RULES, _LIMIT_RULES, _STRUCTURE_RULES,
                    _EXCESS_RULE, _PIEZOMETRIC_RULE)
from .plausible import plausibility_warnings
from .schema import _REL_TOL, Embankment, Grading, Layer, Material, Model
from .strength import check_strength

def _fail(model: Model, message: str, path: str | None, fix: str) -> None:
    raise InputError(message, field=path, source=model.source, fix=fix)


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
    check_limits(model)
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
    _check_water(model)
    _check_fields(model, model.time_steps, "time_steps", _TIME_STEP_RULES)
    ts = model.time_steps
    if ts.max_step is not None and ts.max_step < ts.first_step:
        _fail(model, f"max_step ({ts.max_step:g} days) is shorter than first_step "
                     f"({ts.first_step:g} days)", "time_steps.max_step",
              "make max_step at least first_step, or leave it out (no cap).")
    _check_fields(model, model.output, "output", _OUTPUT_RULES)
    end = sum(s.duration for s in model.stages)
    day = model.output.residual_after
    if day is not None and day > end * (1 + 1e-12):
        _fail(model, f"residual_after ({day:g} days) is after the last stage ends ({end:g} "
                     "days)", "output.residual_after",
              "give a day within the stages, or add a stage of kind \"consolidate\" that "
              "runs past it.")
    if model.stability is not None:
        _check_fields(model, model.stability, "stability", _STABILITY_RULES)
    check_strength(model)
    # Values that can only be slips, and what is physically impossible (solver.model.bounds):
    # before the probes, whose place a slip in the geometry would make look wrong.
    check_bounds(model)
    check_physical(model)
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
        _check_undrained(model, m, _join(path, "undrained"))
        if m.stiffness_from_oedometer:
            _check_oedometer_stiffness(model, m, path)
        elif m.model == "linear elastic":
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


def _check_undrained(model: Model, m: Material, path: str) -> None:
    """The undrained modulus given one way: E_u, or s_u with E_u / s_u."""
    u = m.undrained
    _check_fields(model, u, path, _UNDRAINED_RULES)
    if u.modulus is not None and (u.strength is not None or u.modulus_ratio is not None):
        other = "strength" if u.strength is not None else "modulus_ratio"
        _fail(model, "the undrained modulus is given twice: as modulus and through "
                     f"{other}", _join(path, other),
              "give modulus (E_u), or strength (s_u) with modulus_ratio (E_u / s_u), not both.")
    if (u.strength is None) != (u.modulus_ratio is None):
        missing = "modulus_ratio" if u.modulus_ratio is None else "strength"
        _fail(model, f"{'strength' if missing == 'modulus_ratio' else 'modulus_ratio'} is "
                     f"given without {missing}", _join(path, missing),
              "give both strength (s_u) and modulus_ratio (E_u / s_u), or modulus (E_u) alone.")


def _check_oedometer_stiffness(model: Model, m: Material, path: str) -> None:
    """A linear elastic layer whose modulus comes from its oedometer data needs those data,
    no modulus of its own, and layers for the hand method to read."""
    flag = _join(path, "stiffness_from_oedometer")
    if m.model != "linear elastic":
        _fail(model, "stiffness_from_oedometer is for a linear elastic material", flag,
              "remove it: a Modified Cam Clay layer follows its own lambda and kappa.")
    for key in ("youngs_modulus", "constrained_modulus"):
        if getattr(m, key) is not None:
            _fail(model, f"{key} is given beside stiffness_from_oedometer", _join(path, key),
                  "give one: the modulus, or stiffness_from_oedometer = true to take it from "
                  "the oedometer data over the stress range of the load.")
    o = m.oedometer
    if o.volume_compressibility is None and o.compression_index is None:
        _fail(model, "stiffness_from_oedometer needs the oedometer data",
              _join(_join(path, "oedometer"), "compression_index"),
              "give compression_index, recompression_index, void_ratio and the "
              "preconsolidation (or volume_compressibility) under [materials."
              f"{_key(m.name)}.oedometer].")
    if model.section.kind == "mesh":
        _fail(model, "stiffness_from_oedometer needs [[layers]] (the hand method's column); a "
                     "user mesh has regions", flag,
              "give the region a constrained_modulus (from the oedometer by hand), or model "
              "the ground as layers.")


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



def _check_section(model: Model) -> None:
    sec = model.section
    _check_fields(model, sec, "section", _SECTION_RULES)
    kind = sec.kind
    _check_mesh_sizes(model)
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


def _check_mesh_sizes(model: Model) -> None:
    """section.grading, section.region_mesh_size (a .geo user mesh only)."""
    sec = model.section
    if not isinstance(sec.grading, Grading):
        _fail(model, f"expected a grading table, got {describe_value(sec.grading)}",
              "section.grading", "write [section.grading] with enabled = true (in Python: a "
                                 "solver.model.Grading).")
    _check_fields(model, sec.grading, "section.grading", _GRADING_RULES)
    if not sec.region_mesh_size:
        return
    path = "section.region_mesh_size"
    if sec.kind != "mesh" or not str(sec.mesh_file or "").lower().endswith(".geo"):
        _fail(model, "region_mesh_size sets element sizes of the regions of a .geo file",
              path, "use it with section.kind = \"mesh\" and a .geo mesh_file (a .msh is "
                    "meshed already); a layer of a parametric section takes its own "
                    "mesh_size in its [[layers]] table.")
    rule = _Rule("length", "region_name = 0.5", low=0.0)
    for name, size in sec.region_mesh_size.items():
        _check_value(model, size, _join(path, name), rule)
        if sec.regions:
            _name_check(model, name, list(sec.regions), _join(path, name), "region",
                        "name a region of the mesh listed in [section.regions]")


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
        e = f.eccentricity
        if e != 0.0:
            if model.analysis == "axisymmetric" or sec.half:
                _fail(model, f"footing {f.name!r} has an eccentric load ({e:g} m), which "
                             "breaks the symmetry of "
                             + ("an axisymmetric" if model.analysis == "axisymmetric"
                                else "a half") + " model", f"{p}.eccentricity",
                      "model the full plane strain section (half = false), or set "
                      "eccentricity = 0.")
            if f.rigid and abs(e) >= f.width / 2:
                _fail(model, f"the load on footing {f.name!r} acts {e:g} m from the centre, "
                             f"outside its base (half width {f.width / 2:g} m)",
                      f"{p}.eccentricity", "give an eccentricity within the base, "
                                           "|eccentricity| < width / 2.")
            if not f.rigid and abs(e) > f.width / 6 * (1 + 1e-12):
                _fail(model, f"flexible footing {f.name!r}: an eccentricity of {e:g} m lies "
                             f"outside the middle third of the base (|e| <= {f.width / 6:g} "
                             "m), where the linearly varying pressure would pull on the "
                             "ground", f"{p}.eccentricity",
                      "make the footing rigid (rigid = true), or keep |eccentricity| <= "
                      "width / 6.")
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
    removed: set[int] = set()
    for i, st in enumerate(model.stages):
        p = f"stages[{i + 1}]"
        _check_fields(model, st, p, _STAGE_RULES)
        if st.kind not in ("load", "remove"):
            _check_value(model, st.duration, f"{p}.duration", _POSITIVE_DURATION)
        if st.kind not in ("lift", "remove") and st.lift is not None:
            _fail(model, f"lift is given for a stage of kind {st.kind!r}", f"{p}.lift",
                  "set kind = \"lift\" to place a lift (\"remove\" to take it away), or "
                  "remove lift.")
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
        if st.kind not in ("lift", "remove") and st.region is not None:
            _fail(model, f"region is given for a stage of kind {st.kind!r}", f"{p}.region",
                  "set kind = \"lift\" to place a region of the mesh (\"remove\" to take it "
                  "away), or remove region.")
        if st.kind == "remove":
            placed = _check_removal(model, i, st, placed, removed)
            continue
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
            if st.lift - 1 in removed:
                _fail(model, f"lift {st.lift} would rest on lift {st.lift - 1}, which an earlier "
                             "stage removed", f"{p}.lift",
                      "place the lifts from the bottom up on lifts still in place.")
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



def _check_water(model: Model) -> None:
    """The water table, and the piezometric levels and initial excess pore pressures named
    by layer (or by region of a user mesh present at the start)."""
    w = model.water
    _check_fields(model, w, "water", _WATER_RULES)
    mesh = model.section.kind == "mesh"
    placed = {st.region for st in model.stages if st.kind == "lift"}
    names = ([r for r in model.section.regions if r not in placed] if mesh
             else list(dict.fromkeys(ly.name for ly in model.layers)))
    what = "region of the mesh present at the start" if mesh else "layer"
    define = ("name a region listed in [section.regions] (not one placed by a stage)" if mesh
              else "name a layer (its name, or its material's when it has none)")
    for key, rule in (("piezometric_depths", _PIEZOMETRIC_RULE),
                      ("initial_excess_pore_pressures", _EXCESS_RULE)):
        table = getattr(w, key)
        path = f"water.{key}"
        if not isinstance(table, dict):
            _fail(model, f"{key} must be a table of names", path,
                  f"write [{path}] with lines such as {rule.example}.")
        for name, v in table.items():
            p = _join(path, name)
            _name_check(model, name, names, p, what, define)
            _check_value(model, v, p, rule)
            if key == "initial_excess_pore_pressures" and not 1 <= len(v) <= 2:
                _fail(model, f"expected one value (uniform) or two (top and base), got "
                             f"{len(v)}", p, f"write {rule.example}, or one value.")


def _check_removal(model: Model, i: int, st, placed: int, removed: set[int]) -> int:
    """A stage of kind "remove" takes away what is in place: on a user mesh a region placed
    by an earlier stage, on an embankment the top lift in place. Returns ``placed``."""
    p = f"stages[{i + 1}]"
    if model.section.kind == "mesh":
        if st.region is None or st.lift is not None:
            _fail(model, "on a user mesh a stage of kind 'remove' takes away a named region",
                  f"{p}.region", "give region = \"NAME\", a region placed by an earlier stage "
                                 "of kind \"lift\", instead of lift.")
        earlier = model.stages[:i]
        in_place = [s.region for s in earlier if s.kind == "lift"
                    and s.region not in {r.region for r in earlier if r.kind == "remove"}]
        if st.region not in in_place:
            _fail(model, f"region {st.region!r} is not in place when this stage starts",
                  f"{p}.region", "remove a region placed by an earlier stage of kind \"lift\" "
                                 "and not removed since (in place: "
                                 + (", ".join(map(repr, in_place)) or "none") + ").")
        return placed
    if st.region is not None:
        _fail(model, "region takes away part of a user mesh; an embankment's lifts are removed "
                     "by number", f"{p}.region", "use lift = N instead.")
    in_place = sorted(set(range(1, placed + 1)) - removed)
    if st.lift is None:
        _fail(model, "a stage of kind 'remove' needs the lift it takes away", f"{p}.lift",
              f"add lift = {in_place[-1]} (the top lift in place)." if in_place else
              "place a lift first with a stage of kind \"lift\".")
    if st.lift not in in_place:
        _fail(model, f"lift {st.lift} is not in place when this stage starts", f"{p}.lift",
              f"remove a lift placed by an earlier stage (in place: "
              f"{', '.join(map(str, in_place)) or 'none'}).")
    if st.lift != in_place[-1]:
        _fail(model, f"lift {st.lift} lies under lift {in_place[-1]}, which is still in place",
              f"{p}.lift", f"remove the lifts from the top down: lift {in_place[-1]} first.")
    removed.add(st.lift)
    return placed


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
    _check_fields(model, model.limits, "limits", _LIMIT_RULES)
    names = {pr.name for pr in model.probes}
    for i, st in enumerate(model.structures):
        p = f"structures[{i + 1}]"
        _check_fields(model, st, p, _STRUCTURE_RULES)
        if len(st.probes) < 2:
            _fail(model, f"structure {st.name!r} names {len(st.probes)} probe(s)", f"{p}.probes",
                  "name two or more point probes on the surface, e.g. probes = [\"west\", "
                  "\"east\"].")
        for j, name in enumerate(st.probes):
            if name not in names:
                _fail(model, f"structure {st.name!r} names probe {name!r}, which the model "
                             "does not have", f"{p}.probes[{j + 1}]",
                      f"use one of {sorted(names)}.")
    _unique(model, [st.name for st in model.structures], "structures", "structures")


def model_warnings(model: Model) -> list[str]:
    """Everything worth a second look that is not an error: :func:`domain_warnings`, lifts
    never placed, loads never applied, the water table below the base, output times after
    the last stage, and values outside the range of real soils
    (:func:`~solver.model.plausible.plausibility_warnings`)."""
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
    for f in sec.footings:
        if f.rigid and abs(f.eccentricity) > f.width / 6 * (1 + 1e-12):
            out.append(f"the load on footing {f.name!r} acts outside the middle third of its "
                       f"base (eccentricity {f.eccentricity:g} m > {f.width / 6:g} m): the "
                       "base would lift off the ground at its heel, which the elastic model "
                       "does not allow (it takes tension there) (common practice).")
    ext = domain_extent(model)
    if ext is not None and model.water.table_depth > ext[2]:
        out.append(f"the water table ({model.water.table_depth:g} m deep) is below the base of "
                   f"the model ({ext[2]:g} m): all the ground is above it.")
    end = sum(s.duration for s in model.stages)
    late = [t for t in model.output.times if t > end]
    if late:
        out.append(f"output times after the last stage ends ({end:g} days) are never "
                   f"reached: {', '.join(f'{t:g}' for t in late)} days.")
    return out + plausibility_warnings(model)


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

