"""Mesh grading toward draining boundaries, a layer's own element size, the element-count
estimate and the refusal of sections too large to mesh.

The column below is a clay layer on a free-draining sand, drained at the ground and at the
base, under a load as wide as the section: one-dimensional consolidation of the clay with
double drainage, whose isochrones are Terzaghi's (1925).
"""

from __future__ import annotations

import math
import tracemalloc
from pathlib import Path

import numpy as np
import pytest

from solver.analytic import terzaghi_excess_pressure
from solver.errors import InputError
from solver.model import load_model, model_from_dict
from solver.runner import run
from solver.sections import (build_mesh, check_element_count, estimate_element_count,
                             layer_cv, section_plan)
from solver.sections.sizes import SizeField
from solver.simulation import Simulation

EXAMPLES = Path(__file__).resolve().parents[1] / "examples"

CLAY, SAND, LOAD, CV = 8.0, 2.0, 100.0, 0.1       # m, m, kPa, m2/day
E, NU = 1000.0, 0.3                                  # kPa, -
M = E * (1 - NU) / ((1 + NU) * (1 - 2 * NU))         # constrained modulus, kPa
GAMMA_W = 9.81
FIRST_STEP = 0.1                                     # days
RAMP = 1e-4                                          # days: the load goes on in a moment
T_EARLY = 3.2                                        # days of consolidation: Tv = 0.02


def column(width: float = 8.0, **grading) -> dict:
    """The layered column as model tables: k of the clay chosen so c_v = k M / gamma_w = CV."""
    return {
        "title": "layered column (invented)",
        "section": {"kind": "ground", "width": width, "grading": grading},
        "materials": {
            "clay": {"youngs_modulus": E, "poisson_ratio": NU, "unit_weight": 18.0,
                     "permeability": CV * GAMMA_W / M},
            "sand": {"youngs_modulus": 40e3, "poisson_ratio": NU, "unit_weight": 20.0,
                     "permeability": 8.64}},                  # 1e-4 m/s: free-draining
        "layers": [{"name": "clay", "material": "clay", "thickness": CLAY},
                   {"name": "sand", "material": "sand", "thickness": SAND}],
        "water": {"table_depth": 0.0, "unit_weight": GAMMA_W},
        "drainage": {"top": True, "base": True},
        "loads": [{"name": "fill", "x_left": -width / 2, "x_right": width / 2,
                   "pressure": LOAD}],
        # A load applied in a moment (1e-4 days), then consolidation; short steps growing
        # gently keep the time error of backward Euler well below the 2 % checked here.
        "stages": [{"name": "load", "kind": "load", "loads": ["fill"], "duration": RAMP},
                   {"name": "wait", "kind": "consolidate", "duration": T_EARLY}],
        "time_steps": {"first_step": FIRST_STEP, "growth": 1.5, "steps_per_level": 8},
        "lines": [{"name": "centre", "kind": "vertical", "x0": 0.0, "y0": 0.0, "x1": 0.0,
                   "y1": -CLAY - SAND, "points": 201}],
    }


def early_isochrone(model):
    sim = Simulation(model)
    t, _, line = run(sim).lines["centre"][-1]
    return sim, t, -line["y_m"], line["excess_pore_pressure_kPa"]


def terzaghi(z: np.ndarray, t: float) -> np.ndarray:
    """Double drainage of the clay, drainage path half its thickness (Terzaghi 1925); the
    load acts from the middle of its short ramp."""
    h = CLAY / 2
    return LOAD * terzaghi_excess_pressure(np.minimum(z, CLAY - z), h,
                                           CV * (t - RAMP / 2) / h**2)


def test_layer_cv_is_k_over_mv_gamma_w():
    # c_v = k / (m_v gamma_w) with m_v = 1 / M for one-dimensional compression (Terzaghi 1925)
    m = model_from_dict(column())
    assert layer_cv(m, 0) == pytest.approx(CV, rel=1e-12)
    assert layer_cv(m, 1) > 1e3 * CV


def test_isochrone_of_a_layered_column_with_a_draining_base_is_terzaghis_on_the_default_mesh():
    sim, t, z, p = early_isochrone(model_from_dict(column()))
    assert t == pytest.approx(RAMP + T_EARLY)
    clay = z <= CLAY
    err = np.abs(p[clay] - terzaghi(z[clay], t)).max() / LOAD
    assert err < 0.02, err                        # 2 % of the load at every point
    assert np.abs(p[~clay]).max() < 0.02 * LOAD   # the free-draining sand carries none
    # The check can fail: without grading the same mesh misses the boundary layers.
    _, _, zu, pu = early_isochrone(model_from_dict(column(enabled=False)))
    clay = zu <= CLAY
    assert np.abs(pu[clay] - terzaghi(zu[clay], t)).max() / LOAD > 0.04


def boundary_edge_lengths(mesh, name):
    seg = mesh.edges[name]
    return np.linalg.norm(mesh.points[seg[:, 0]] - mesh.points[seg[:, 1]], axis=1)


def test_boundary_size_is_the_first_step_boundary_layer_and_can_be_set_or_turned_off():
    model = model_from_dict(column())
    pieces = {p.where: p for p in section_plan(model).graded}
    # The ground and the clay-sand interface (permeability ratio 1e5) drain; the sand's own
    # base is drained too, but its boundary layer is far thicker than the mesh there.
    assert set(pieces) == {"ground", "interface_1"}
    h = math.sqrt(CV * FIRST_STEP)
    assert all(p.asked == pytest.approx(h) and p.size == pytest.approx(h)
               for p in pieces.values())
    mesh = build_mesh(model)
    for edge in ("ground", "interface_1"):
        assert np.median(boundary_edge_lengths(mesh, edge)) == pytest.approx(h, rel=0.25)
    given = build_mesh(model_from_dict(column(boundary_size=0.4)))
    assert np.median(boundary_edge_lengths(given, "interface_1")) == pytest.approx(0.4,
                                                                                   rel=0.25)
    off = build_mesh(model_from_dict(column(enabled=False)))
    assert np.median(boundary_edge_lengths(off, "interface_1")) > 5 * h
    assert off.n_elements < given.n_elements < mesh.n_elements


def test_element_budget_enlarges_every_boundary_size_by_one_factor():
    model = model_from_dict(column(element_budget=700))
    plan = section_plan(model)
    ratios = {p.size / p.asked for p in plan.graded}
    assert len({round(r, 9) for r in ratios}) == 1 and ratios.pop() > 1.5
    n = build_mesh(model).n_elements
    assert 0.8 * 700 < n < 1.1 * 700


def test_a_layer_sets_its_own_element_size():
    model = load_model(EXAMPLES / "embankment.toml")
    model.section.grading.enabled = False
    coarse = build_mesh(model)
    model.layers[2].mesh_size = 0.5                    # the lower clay
    mesh = build_mesh(model)
    sides = triangle_sides(mesh, "lower_clay")
    assert sides.max() < 0.5 * 1.5 and np.median(sides) < 0.5
    assert mesh.n_elements > 3 * coarse.n_elements


@pytest.mark.parametrize("name", ["embankment.toml", "two_footings.toml"])
def test_estimate_is_close_to_the_count_gmsh_makes(name):
    model = load_model(EXAMPLES / name)
    count, drivers = estimate_element_count(model)
    assert drivers and all(isinstance(d, str) and d for d in drivers)
    assert count == pytest.approx(build_mesh(model).n_elements, rel=0.15)


def test_a_section_above_the_limit_is_refused_before_meshing_naming_the_fields():
    model = load_model(EXAMPLES / "embankment.toml")
    model.section.max_elements = 1000
    count, drivers = estimate_element_count(model)
    with pytest.raises(InputError) as exc:
        build_mesh(model)
    e = exc.value
    assert e.field == drivers[0]
    text = str(e)
    assert f"{count:.3g}" in text and "1,000" in text and "max_elements" in text
    check_element_count(model, limit=10 * count)        # a limit given beats the model's


@pytest.mark.parametrize("field, value", [("side_slope", 2e12), ("crest_width", 1e300)])
def test_a_slip_of_magnitude_is_refused_without_large_arrays(field, value):
    model = load_model(EXAMPLES / "embankment.toml")
    setattr(model.section.embankment, field, value)     # past the loader's checks
    tracemalloc.start()
    try:
        with pytest.raises(InputError) as exc:
            build_mesh(model)
        peak = tracemalloc.get_traced_memory()[1]
    finally:
        tracemalloc.stop()
    assert peak < 300e6, peak
    assert exc.value.field == f"section.embankment.{field}"


def test_the_size_table_stays_small_for_any_box():
    field = SizeField()
    field.add_segment(0.0, 0.0, 1.0, 0.0, 0.01)
    field.far = 10.0
    for lx, ly in ((1e13, 20.0), (20.0, 1e13), (1e6, 1e6)):
        size = field.sampled(0.0, lx, -ly, 0.0, max_nodes=10_000)
        assert size.grid_nodes <= 10_000
        assert 0.01 <= size(0.5, 0.0) <= 10.0
    with pytest.raises(ValueError):
        field.sampled(0.0, math.inf, -1.0, 0.0)


def triangle_sides(mesh, region):
    tri = mesh.points[mesh.triangles[mesh.region == mesh.region_id(region)][:, :3]]
    return np.linalg.norm(tri - np.roll(tri, 1, axis=1), axis=2)


def test_a_region_of_a_geo_mesh_sets_its_own_element_size():
    model = load_model(EXAMPLES / "irregular_section.toml")
    model.section.mesh_file = model.section.mesh_file.replace(".msh", ".geo")
    before = build_mesh(model)
    model.section.region_mesh_size = {"soft_lens": 0.3}
    mesh = build_mesh(model)
    sides = triangle_sides(mesh, "soft_lens")
    assert np.median(triangle_sides(before, "soft_lens")) > 0.9     # the file's own sizes
    assert np.median(sides) < 0.3 and sides.max() < 0.3 * 1.5
    # the rest of the section keeps the file's sizes
    assert np.median(triangle_sides(mesh, "sand")) == pytest.approx(
        np.median(triangle_sides(before, "sand")), rel=0.2)


def test_region_sizes_need_a_geo_file_and_a_region_of_it():
    import tomllib
    data = tomllib.loads((EXAMPLES / "irregular_section.toml").read_text())
    data["section"]["region_mesh_size"] = {"soft_lens": 0.3}
    with pytest.raises(InputError) as exc:                  # a .msh is meshed already
        model_from_dict(data, source=str(EXAMPLES / "irregular_section.toml"))
    assert exc.value.field == "section.region_mesh_size"
    data["section"]["mesh_file"] = data["section"]["mesh_file"].replace(".msh", ".geo")
    data["section"]["region_mesh_size"] = {"soft_lenz": 0.3}
    with pytest.raises(InputError) as exc:
        model_from_dict(data, source=str(EXAMPLES / "irregular_section.toml"))
    assert exc.value.field == "section.region_mesh_size.soft_lenz"
    assert "soft_lens" in str(exc.value)
