"""Bounds that refuse a value which can only be a slip, and what is physically impossible.

- :func:`check_bounds`: a length beyond 100 km or below 1 mm; a layer, lift, berm, footing or
  load thinner than a hundredth of the element size near the load; a side slope flatter than
  1V:100H; a line sampled at more than 10,000 points; more than 1000 steps per level or a
  million time steps in all; more than 10,000 output times. Each would make meshing or
  stepping run away (a size field of many GiB, a geometry the meshing library cannot build,
  a step schedule without end).
- :func:`check_physical`: a saturated unit weight below the unit weight of water for ground
  below the water table, where the effective stress at the start would fall with depth and
  turn negative.

Both raise :class:`~solver.errors.InputError` naming the field; :func:`check_model` calls them
after the checks of each field. The bounds are listed in docs/model.md.
"""

from __future__ import annotations

import math

from ..errors import InputError
from .domain import _is_half, loaded_spans
from .plausible import _density_hint, _g, unit_weight_text

MAX_LENGTH = 1e5            # m: no section of the ground is 100 km across or deep
MIN_LENGTH = 1e-3           # m: nothing in a section is thinner than 1 mm
THIN_FRACTION = 0.01        # a feature thinner than this times the near element size
MAX_SIDE_SLOPE = 100.0      # 1V:100H is flatter than 0.6 degrees: a surface load, not a slope
MAX_LINE_POINTS = 10_000
MAX_STEPS_PER_LEVEL = 1000
MAX_STEPS = 1_000_000       # time steps of all stages together
MAX_OUTPUT_TIMES = 10_000


def _fail(model, message: str, path: str, fix: str) -> None:
    raise InputError(message, field=path, source=model.source, fix=fix)


def near_element_size(model) -> float | None:
    """The element size near the load, m: ``section.mesh_size``, else the narrowest loaded
    width / 10 (the meshing rule, docs/model.md; a load from x = 0 of a half or axisymmetric
    model is as wide as it and its mirror image); None when nothing is loaded."""
    if model.section.mesh_size is not None:
        return float(model.section.mesh_size)
    half = _is_half(model)
    widths = [2 * b if half and abs(a) < 1e-12 else b - a for a, b in loaded_spans(model)
              if b > a]
    return min(widths) / 10 if widths else None


def section_lengths(model) -> list[tuple[str, float, str, str]]:
    """(path, value in m, role, label) of the lengths of the model. Role "feature": the size
    of something meshed (a thickness, a width); "size": the element size; "coordinate": a
    position. The label names the value in messages."""
    out = []
    sec = model.section

    def add(path, v, role="feature", label=None):
        if v is not None and isinstance(v, (int, float)) and not isinstance(v, bool):
            out.append((path, float(v), role, label or path.rsplit(".", 1)[-1]))

    add("section.width", sec.width)
    add("section.depth", sec.depth)
    add("section.mesh_size", sec.mesh_size, "size")
    grading = getattr(sec, "grading", None)
    if grading is not None:
        add("section.grading.boundary_size", grading.boundary_size, "size")
        add("section.grading.min_size", grading.min_size, "size")
    for name, h in (getattr(sec, "region_mesh_size", None) or {}).items():
        add(f"section.region_mesh_size.{name}", h, "size")
    for i, la in enumerate(model.layers):
        add(f"layers[{i + 1}].thickness", la.thickness)
        add(f"layers[{i + 1}].thickness_right", la.thickness_right)
        add(f"layers[{i + 1}].mesh_size", getattr(la, "mesh_size", None), "size")
    emb = sec.embankment if sec.kind == "embankment" else None
    if emb is not None:
        p = "section.embankment"
        add(f"{p}.crest_width", emb.crest_width)
        add(f"{p}.height", emb.height)
        for i, t in enumerate(emb.lifts):
            add(f"{p}.lifts[{i + 1}]", t)
        for i, b in enumerate(emb.berms):
            add(f"{p}.berms[{i + 1}].width", b.width)
            add(f"{p}.berms[{i + 1}].height", b.height)
    if sec.kind == "footings":
        for i, f in enumerate(sec.footings):
            p = f"section.footings[{i + 1}]"
            add(f"{p}.width", f.width)
            add(f"{p}.center", f.center, "coordinate")
            if f.embedment:
                add(f"{p}.embedment", f.embedment)
    for i, ld in enumerate(model.loads):
        add(f"loads[{i + 1}].x_left", ld.x_left, "coordinate")
        add(f"loads[{i + 1}].x_right", ld.x_right, "coordinate")
        add(f"loads[{i + 1}].x_right", ld.x_right - ld.x_left, "feature",
            "the width x_right - x_left")
    add("water.table_depth", model.water.table_depth, "coordinate")
    for i, pr in enumerate(model.probes):
        add(f"probes[{i + 1}].x", pr.x, "coordinate")
        add(f"probes[{i + 1}].y", pr.y, "coordinate")
    for i, ln in enumerate(model.lines):
        for key in ("x0", "y0", "x1", "y1"):
            add(f"lines[{i + 1}].{key}", getattr(ln, key), "coordinate")
    return out


def check_bounds(model) -> None:
    """Refuse a value that can only be a slip (see the module docstring); InputError naming
    the field, its value and the bound."""
    big = _g(MAX_LENGTH)
    lengths = section_lengths(model)
    for path, v, role, label in lengths:
        if abs(v) > MAX_LENGTH:
            _fail(model, f"{label} = {_g(v)} m is beyond {big} m (100 km)",
                  path, "a section of the ground is metres to a few hundred metres across: "
                        "check the unit (a length in mm is written \"4500 mm\") and the "
                        "power of ten.")
        if role in ("feature", "size") and 0 < v < MIN_LENGTH:
            _fail(model, f"{label} = {_g(v)} m is less than 1 mm", path,
                  "check the unit and the power of ten (a length in km is written "
                  "\"0.5 km\"); leave out what is not there.")
    emb = model.section.embankment if model.section.kind == "embankment" else None
    if emb is not None and emb.side_slope > MAX_SIDE_SLOPE:
        _fail(model, f"side_slope = {_g(emb.side_slope)} (1V:{_g(emb.side_slope)}H) is flatter "
                     f"than 1V:{_g(MAX_SIDE_SLOPE)}H", "section.embankment.side_slope",
              "side_slope is the horizontal run per unit rise, 1.5 to 4 for most "
              "embankments (side_slope = 2.0 for 1V:2H); a flat surcharge is a [[loads]] "
              "pressure.")
    if emb is not None:
        run = emb.side_slope * emb.height
        if emb.crest_width / 2 + run + sum(b.width for b in emb.berms) > MAX_LENGTH:
            _fail(model, f"the embankment's toe lies {_g(emb.crest_width / 2 + run)} m from "
                         f"its centre, beyond {big} m (100 km): side_slope x height = "
                         f"{_g(emb.side_slope)} x {_g(emb.height)} m",
                  "section.embankment.side_slope",
                  "check side_slope (the horizontal run per unit rise, e.g. 2.0) and height.")
    h0 = near_element_size(model)
    if h0 is not None and h0 > 0:
        least = THIN_FRACTION * h0
        what = ("section.mesh_size" if model.section.mesh_size is not None else
                "the narrowest loaded width / 10")
        for path, v, role, label in lengths:
            if role == "feature" and 0 < v < least:
                _fail(model, f"{label} = {_g(v)} m is less than "
                             f"{THIN_FRACTION:g} of the element size near the load "
                             f"({_g(h0)} m, {what})", path,
                      f"check the unit and the power of ten; a feature this thin cannot be "
                      f"meshed sensibly: make it at least {_g(least)} m, merge it with its "
                      f"neighbour, or give a smaller section.mesh_size.")
    for i, ln in enumerate(model.lines):
        if isinstance(ln.points, int) and ln.points > MAX_LINE_POINTS:
            _fail(model, f"points = {_g(float(ln.points))} is more than {MAX_LINE_POINTS:,}",
                  f"lines[{i + 1}].points", "a line sampled at 41 to a few hundred points "
                                             "shows every detail the mesh holds, e.g. "
                                             "points = 101.")
    ts = model.time_steps
    if isinstance(ts.steps_per_level, int) and ts.steps_per_level > MAX_STEPS_PER_LEVEL:
        _fail(model, f"steps_per_level = {_g(float(ts.steps_per_level))} is more than "
                     f"{MAX_STEPS_PER_LEVEL}", "time_steps.steps_per_level",
              "a few steps of one length before it grows is enough, e.g. steps_per_level "
              "= 4; use max_step to cap the step.")
    if len(model.output.times) > MAX_OUTPUT_TIMES:
        _fail(model, f"{len(model.output.times):,} output times are more than "
                     f"{MAX_OUTPUT_TIMES:,}", "output.times",
              "give the times you will look at (tens), or every_step = true.")
    n, k = step_count(model)
    if n > MAX_STEPS:
        _fail(model, f"the time steps come to about {_g(n)} steps, more than "
                     f"{MAX_STEPS:,} (stage {k + 1}, {model.stages[k].name!r}, has the most)",
              "time_steps.first_step",
              "let the step grow: growth = 2.0 with steps_per_level = 4 covers years in "
              "tens of steps; check first_step, max_step and the stage durations for a "
              "unit typed wrong.")


def step_count(model) -> tuple[float, int]:
    """About how many time steps the stages take (the schedule of :mod:`solver.stepping`
    without output stops), and the index of the stage that takes the most."""
    ts = model.time_steps
    total, worst, most = 0.0, 0, -1.0
    for k, st in enumerate(model.stages):
        n = _stage_steps(st.duration, ts.first_step, ts.growth, ts.steps_per_level,
                         ts.max_step)
        total += n
        if n > most:
            worst, most = k, n
    return total, worst


def _stage_steps(duration, dt, growth, per_level, cap) -> float:
    if not duration or duration <= 0 or not dt or dt <= 0:
        return 0.0
    if growth <= 1.0 + 1e-12:
        return duration / dt if cap is None or cap >= dt else duration / cap
    # levels of per_level steps growing by `growth` until the step reaches the cap
    levels_to_cap = math.inf if cap is None else max(0.0, math.log(cap / dt, growth))
    span = per_level * dt / (growth - 1.0)           # time of L levels: span (g^L - 1)
    levels = math.log(duration / span + 1.0, growth)
    if levels <= levels_to_cap:
        return per_level * math.ceil(levels)
    covered = span * (growth ** levels_to_cap - 1.0)
    return per_level * levels_to_cap + (duration - covered) / cap


# ----------------------------------------------------------------------------- impossible

def check_physical(model) -> None:
    """Refuse a saturated unit weight below the unit weight of water for a material that lies
    below the water table at the start: the solids of a soil are denser than water (specific
    gravity about 2.65, common practice), so a saturated soil is heavier than water, and a
    lighter one would make the effective stress fall with depth and turn negative."""
    gw = model.water.unit_weight
    table = model.water.table_depth
    below = _materials_below_water(model)
    for name, m in model.materials.items():
        sat = m.saturated_unit_weight if m.saturated_unit_weight is not None else m.unit_weight
        if sat is None or sat >= gw:
            continue
        given = m.saturated_unit_weight is not None
        if name not in below and not given:
            continue
        key = "saturated_unit_weight" if given else "unit_weight"
        path = f"materials.{name}.{key}"
        stress = _effective_stress_note(model, name, sat, gw)
        role = "" if given else (" (it stands for the saturated unit weight below the water "
                                 "table, as saturated_unit_weight is not given)")
        hint = _density_hint(sat)
        water = ("" if 9.5 <= gw <= 10.5 else
                 f" Check water.unit_weight too: {_g(gw)} kN/m3 is not water's 9.81 kN/m3.")
        _fail(model, f"{key} = {unit_weight_text(sat)} is below the unit weight of water "
                     f"({_g(gw)} kN/m3){role}; a saturated soil is heavier than water, and "
                     f"below the water table ({_g(table)} m deep) {stress}", path,
              f"give the total unit weight in kN/m3 (soils: 12 to 23 kN/m3){hint}.{water}")


def _materials_below_water(model) -> set[str]:
    """Materials of the ground that lie at least partly below the water table at the start.

    Layers reach from the ground down; a user mesh's regions are taken as below the table
    except those placed by a lift stage (fill above the ground), and fill (embankment or
    placed region) is below it under standing water (a negative table depth), where it
    loads the ground with its buoyant weight."""
    table = model.water.table_depth
    out = set()
    depth = 0.0
    for la in model.layers:
        bottom = depth + max(la.thickness, la.thickness_right or la.thickness)
        if bottom > table:
            out.add(la.material)
        depth = bottom
    emb = model.section.embankment if model.section.kind == "embankment" else None
    if emb is not None and table < 0:
        out.add(emb.material)
    if model.section.kind == "mesh":
        placed = {st.region for st in model.stages if st.kind == "lift"}
        out |= {mat for region, mat in model.section.regions.items()
                if region not in placed or table < 0}
    return out


def _effective_stress_note(model, name: str, sat: float, gw: float) -> str:
    """Where the effective stress turns negative in the layers of this material (at the left
    edge of the section), or that it falls with depth."""
    table = model.water.table_depth
    sv = u = 0.0
    top = 0.0
    if table < 0:
        sv = u = gw * -table
    for la in model.layers:
        m = model.materials.get(la.material)
        if m is None:
            return "the effective stress at the start would fall with depth"
        bot = top + la.thickness
        g_sat = m.saturated_unit_weight if m.saturated_unit_weight is not None else m.unit_weight
        dry = max(0.0, min(bot, table) - top)
        wet = (bot - top) - dry
        sv += m.unit_weight * dry + g_sat * wet
        u = gw * max(0.0, bot - table)
        if la.material == name and sv - u < 0:
            return (f"the effective stress at the start turns negative: "
                    f"{_g(sv - u)} kPa at the base of layers[{model.layers.index(la) + 1}] "
                    f"({_g(bot)} m deep)")
        top = bot
    return "the effective stress at the start would fall with depth"


