"""Stability through staged construction on the fields of a run (solver.stability.from_run,
solver.stability.checks, ``poroplane stability``)."""

import copy
import json
import time
import tomllib
from pathlib import Path

import numpy as np
import pytest

from solver.cli import main
from solver.errors import InputError
from solver.initial import LayerColumn, geostatic_stress
from solver.model import (Embankment, Layer, Material, Model, PointProbe, Section, Stability,
                          Stage, TimeSteps, Water, domain_extent, embankment_profile,
                          model_from_dict, model_to_dict)
from solver.runner import run
from solver.sections import build_mesh
from solver.stability import SlopeSoil, default_box, search_circles
from solver.stability.checks import stability_checks
from solver.stability.from_run import RunGround, slope_soil

EXAMPLE = Path(__file__).resolve().parents[1] / "examples" / "embankment.toml"
G_W = 9.81


def drained_model(half: bool, table_depth: float = 1.0) -> Model:
    """An invented embankment on two drained layers (c', phi')."""
    fill = Material("fill", youngs_modulus=2e4, unit_weight=20.0, friction_angle=30.0,
                    cohesion=5.0)
    clay = Material("clay", youngs_modulus=5e3, unit_weight=17.0, saturated_unit_weight=18.0,
                    friction_angle=24.0, cohesion=4.0, permeability_x=1e-3)
    sand = Material("sand", youngs_modulus=4e4, unit_weight=19.0, saturated_unit_weight=20.0,
                    friction_angle=34.0, cohesion=0.0, permeability_x=1.0)
    emb = Embankment(crest_width=8.0, height=3.0, side_slope=1.5, lifts=[3.0], material="fill")
    return Model(title="drained embankment (invented)",
                 materials={"fill": fill, "clay": clay, "sand": sand},
                 layers=[Layer("clay", "clay", 6.0), Layer("sand", "sand", 4.0)],
                 section=Section(kind="embankment", half=half, width=40.0 if half else 80.0,
                                 mesh_size=0.6, embankment=emb),
                 water=Water(table_depth=table_depth, unit_weight=G_W),
                 stages=[Stage("place", "lift", 10.0, lift=1)],
                 stability=Stability(min_depth=0.5, lowest_tangent=-6.0))


def hydrostatic_ground(model: Model) -> RunGround:
    """The run's fields with no excess pore pressure: total = hydrostatic, at-rest stress."""
    mesh = build_mesh(model)
    x_min, x_max, _ = domain_extent(model)
    x, y = mesh.points[:, 0], mesh.points[:, 1]
    g = geostatic_stress(LayerColumn.from_model(model, x_min, x_max), -model.water.table_depth,
                         G_W, x, np.minimum(y, 0.0))
    u = G_W * np.maximum(-model.water.table_depth - y, 0.0)
    return RunGround(model, mesh.points, mesh.triangles, mesh.region, list(mesh.region_names),
                     np.array([10.0]), ["place"], u[None], g["vertical_effective_kPa"][None])


def hand_soil(model: Model) -> SlopeSoil:
    """The same section drawn by hand: the trapezoid, layers by elevation, u hydrostatic."""
    prof = np.array(embankment_profile(model.section.embankment))
    half_w = model.section.width if model.section.half else model.section.width / 2
    xs = np.concatenate([prof[:, 0], [half_w]])
    ys = np.concatenate([prof[:, 1], [0.0]])
    sx = np.concatenate([-xs[::-1], xs[1:]])
    sy = np.concatenate([ys[::-1], ys[1:]])
    wt = -model.water.table_depth
    m = model.materials

    def which(y):
        return np.where(y > 0, 0, np.where(y > -6.0, 1, 2))
    mats = [m["fill"], m["clay"], m["sand"]]
    g_dry = np.array([a.unit_weight for a in mats])
    g_sat = np.array([a.saturated_unit_weight or a.unit_weight for a in mats])
    c = np.array([a.cohesion for a in mats])
    tphi = np.tan(np.radians([a.friction_angle for a in mats]))

    def unit_weight(x, y):
        return np.where(y < wt, g_sat[which(y)], g_dry[which(y)])

    def strength(x, y):
        k = which(y)
        return c[k], tphi[k], np.ones(k.shape, bool)
    return SlopeSoil(sx, sy, unit_weight, strength,
                     lambda x, y: G_W * np.maximum(wt - y, 0.0))


def test_zero_excess_pore_pressure_gives_the_hydrostatic_effective_stress_factor():
    # Consistency (Bishop 1955 with u hydrostatic): with no excess pore pressure the factor of
    # safety from the run's fields equals the one of the section analysed by hand with
    # hydrostatic pore pressure. What differs is only the raster the fields are read from
    # (0.1 m: material boundaries blurred by 0.05 m against a slip about 4 m deep) and the
    # linear interpolation of u inside the P2 triangles (exact for a linear u): 0.5 %.
    model = drained_model(half=True)
    soil, base, _ = slope_soil(hydrostatic_ground(model), 0)
    ref = hand_soil(model)
    box = default_box(ref, -6.0, min_depth=0.5)
    F_run = search_circles(soil, box).factor_of_safety
    F_hand = search_circles(ref, box).factor_of_safety
    assert 0.8 < F_hand < 3.0          # a real slope, not an empty search
    assert abs(F_run - F_hand) < 5e-3 * F_hand


def test_a_symmetric_embankment_gives_the_same_factor_on_the_full_and_the_half_section():
    # The half section is mirrored about x = 0; a slip on either side of the full section
    # sees the same ground (symmetry). The meshes differ (two Gmsh meshes), hence the raster
    # of 0.1 m and the triangle edges on the surface: 0.5 %.
    F = {}
    for half in (True, False):
        model = drained_model(half=half)
        F[half] = min(c["factor_of_safety"] for c in
                      stability_checks(model, hydrostatic_ground(model)))
    assert abs(F[True] - F[False]) < 5e-3 * F[False]


def staged_model() -> Model:
    """An invented staged embankment on a clay of undrained strength s_u = S OCR^m sigma'_v."""
    fill = Material("fill", youngs_modulus=2e4, unit_weight=20.0, friction_angle=32.0,
                    cohesion=2.0)
    clay = Material("clay", youngs_modulus=1.5e3, unit_weight=16.0, saturated_unit_weight=16.0,
                    friction_angle=25.0, permeability_x=2e-3, undrained_strength_ratio=0.25,
                    strength_exponent=0.8)
    clay.oedometer.overconsolidation_ratio = 1.2
    emb = Embankment(crest_width=8.0, height=2.5, side_slope=2.0, lifts=[2.5], material="fill")
    return Model(title="staged embankment (invented)", materials={"fill": fill, "clay": clay},
                 layers=[Layer("clay", "clay", 6.0)],
                 section=Section(kind="embankment", half=True, width=30.0, mesh_size=0.8,
                                 embankment=emb),
                 water=Water(table_depth=0.0, unit_weight=G_W),
                 stages=[Stage("lift", "lift", 2.0, lift=1),
                         Stage("wait", "consolidate", 2000.0)],
                 time_steps=TimeSteps(first_step=0.5, growth=2.0, steps_per_level=2),
                 probes=[PointProbe("centre", 0.0, -3.0)],
                 stability=Stability(min_depth=0.5))


@pytest.fixture(scope="module")
def staged_run(tmp_path_factory):
    out = tmp_path_factory.mktemp("staged")
    model = staged_model()
    from solver.model import dump_toml
    run(model, out, model_text=dump_toml(model))
    return out


def test_the_factor_rises_as_consolidation_gains_undrained_strength(staged_run, capsys):
    # Ladd and Foott (1974): s_u / sigma'_v = S OCR^m; the excess pore pressure of the quick
    # lift dissipates in the wait, sigma'_v under the fill grows and with it s_u, so the
    # factor of safety at the end of the wait exceeds the one at the end of the lift (the
    # reason embankments on soft clay are built in stages; Ladd 1991, from memory).
    assert main(["stability", str(staged_run)]) == 0
    doc = json.loads((staged_run / "stability.json").read_text())
    bishop = {c["stage"]: c for c in doc["checks"] if c["method"] == "Bishop simplified"}
    assert set(bishop) == {"lift", "wait"}
    for c in doc["checks"]:
        assert {"time_days", "stage", "method", "factor_of_safety"} <= set(c)
    F_lift, F_wait = bishop["lift"]["factor_of_safety"], bishop["wait"]["factor_of_safety"]
    assert F_wait > 1.1 * F_lift
    assert bishop["lift"]["surface"]["circle"]["radius_m"] > 0
    summary = json.loads((staged_run / "summary.json").read_text())
    assert set(summary["stability"]["minimum_per_stage"]) == {"lift", "wait"}
    assert "Factor of safety" in capsys.readouterr().out


def test_the_search_on_the_demo_section_takes_under_two_seconds():
    # Performance target: one time of the demo embankment (examples/embankment.toml, its
    # invented strengths) searched in under 2 s; here on a hydrostatic state of its mesh.
    # Processor time: the test machine is shared, and its wall clock counts the others' work.
    model = model_from_dict(tomllib.loads(EXAMPLE.read_text()))
    ground = hydrostatic_ground(model)
    t0 = time.process_time()
    checks = stability_checks(model, ground)
    seconds = time.process_time() - t0
    assert checks[0]["factor_of_safety"] > 0
    assert seconds < 2.0, seconds


def _example_dict():
    return tomllib.loads(EXAMPLE.read_text())


@pytest.mark.parametrize("edit, field", [
    (lambda d: d["materials"]["upper_clay"].pop("undrained_strength_ratio")
     and d["materials"]["upper_clay"].pop("friction_angle"), "materials.upper_clay.strength"),
    (lambda d: d["stability"].update(x_limits=[-100.0, 40.0]), "stability.x_limits"),
    (lambda d: d["stability"].update(lowest_tangent=-40.0), "stability.lowest_tangent"),
    (lambda d: d["stability"].update(required_factor_of_safety=0.9),
     "stability.required_factor_of_safety"),
    (lambda d: d["materials"]["crust"].update(undrained_strength="20 kPa"),
     "materials.crust.undrained_strength"),
])
def test_bad_stability_input_is_one_message_naming_the_field(edit, field):
    d = _example_dict()
    edit(d)
    with pytest.raises(InputError) as err:
        model_from_dict(d)
    assert err.value.field == field


def test_the_stability_table_survives_writing_and_reading():
    m = model_from_dict(_example_dict())
    again = model_from_dict(copy.deepcopy(model_to_dict(m)))
    assert again.stability == m.stability
    assert again.materials["upper_clay"].undrained_strength_ratio == 0.22
