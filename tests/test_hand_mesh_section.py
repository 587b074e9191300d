"""The hand method on a section given as a mesh: the soil column under each probe read from
the mesh (examples/irregular_section.toml on meshes/ditch_and_fill.msh, an invented site).

References: the section's geometry as meshes/README.md states it (straight interfaces, so the
local thickness is linear in x), and Osterberg's (1957) embankment influence on the centre
line (formula as in tests/test_hand_estimate.py, re-derived from the Flamant line load)."""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest

from solver.hand.estimate import hand_estimate
from solver.hand_section import estimate, mesh_section, section_mesh
from solver.mesh_column import region_thickness, vertical_column
from solver.model import Layer, PointProbe, Section, Stage, load_model

from test_hand_estimate import osterberg_centre

EXAMPLE = "examples/irregular_section.toml"


@pytest.fixture(scope="module")
def model():
    return load_model(EXAMPLE)


@pytest.fixture(scope="module")
def mesh(model):
    return section_mesh(model)


def test_the_vertical_crosses_the_regions_at_their_local_thickness(mesh):
    # meshes/README.md: the crust base runs straight from y = -1.5 (x = 0) to -2.5 (x = 60),
    # the soft clay base from -11 to -14, the base at -20; the fill is 2 m high on x = 24..40
    # with 1V:2H slopes; the ditch bottom (x = 12.75..14.25 m) at y = -1.
    for x in (5.0, 32.0, 50.0):
        col = {name: (top, bottom) for name, top, bottom in vertical_column(mesh, x)}
        assert col["crust"][1] == pytest.approx(-1.5 - x / 60.0, abs=1e-9)
        assert col["soft_clay"][1] == pytest.approx(-11.0 - 3.0 * x / 60.0, abs=1e-9)
        assert col["sand"][1] == pytest.approx(-20.0, abs=1e-9)
    top = vertical_column(mesh, 14.0)[0]
    assert top[0] == "crust" and top[1] == pytest.approx(-1.0, abs=1e-9)
    np.testing.assert_allclose(region_thickness(mesh, "fill", [20.0, 25.0, 26.0, 30.0, 39.0]),
                               [0.0, 0.5, 1.0, 2.0, 0.5], atol=1e-9)
    names = [n for n, _, _ in vertical_column(mesh, 38.0)]
    assert names == ["fill", "crust", "soft_clay", "soft_lens", "soft_clay", "sand"]


def test_hand_estimate_reads_the_column_from_the_mesh_and_says_so(model, mesh):
    h = estimate(model, mesh=mesh)
    assert any("read from the mesh (ditch_and_fill.msh)" in n for n in h.notes)
    p = h.probes["under_fill"]
    assert any("the column under x = 32 m read from the mesh" in n for n in p.notes)
    assert p.probe_depth_m == pytest.approx(2.0)        # below the fill's top at y = 2 m
    assert p.where == "inside the ground"
    assert list(p.layer_settlement_m) == ["crust", "soft_clay", "sand"]
    # the same column given as horizontal [[layers]] (the crust 2.033 m thick, ...), its top
    # the original ground, the water table 1 + 2 m below it: the same estimate, so the mesh
    # path is the layered path with the local thicknesses
    col = vertical_column(mesh, 32.0)
    assert [n for n, _, _ in col] == ["fill", "crust", "soft_clay", "sand"]
    layered = replace(model, section=Section(kind="ground", width=200.0),
                      layers=[Layer(n, model.section.regions[n], a - b) for n, a, b in col],
                      water=replace(model.water, table_depth=model.water.table_depth + 2.0),
                      probes=[PointProbe("under_fill", 32.0, -2.0)], lines=[])
    same = hand_estimate(layered).probes["under_fill"]
    assert same.consolidation_settlement_m == pytest.approx(p.consolidation_settlement_m, rel=1e-9)
    np.testing.assert_allclose(same.settlement_m, p.settlement_m, rtol=1e-9, atol=1e-12)
    # a ditch-bottom probe is on the surface of its own column
    assert h.probes["ditch_bottom"].where == "ground surface"


def test_a_region_placed_by_a_lift_stage_is_a_load_on_the_ground_below(model, mesh):
    # the fill placed as a lift instead of being there from the start: its weight, 20 kN/m3
    # times its thickness, loads the ground below; on the centre line of its trapezoid
    # (base 24..40 m, crest 8 m, 2 m high) the stress is Osterberg's (1957)
    lifted = replace(model, stages=[Stage("place fill", "lift", 15.0, region="fill"),
                                    Stage("wait", "consolidate", 3650.0)], loads=[])
    sec = mesh_section(lifted, mesh)
    assert "fill" in sec.lifts
    h = hand_estimate(lifted, section=sec)
    p = h.probes["under_fill"]
    assert p.probe_depth_m == pytest.approx(0.0) and p.where == "ground surface"
    ref = osterberg_centre(p.depth_m, 8.0, 4.0, 20.0 * 2.0)
    # the profile is read on 121 verticals: its corners within (16 m / 120) of the true ones
    np.testing.assert_allclose(p.stress_increase_kPa, ref, rtol=0.01)
    assert any("region 'fill' placed by a lift stage" in n for n in h.notes)


def test_a_mesh_section_without_its_columns_is_an_input_error(model):
    from solver.errors import InputError
    with pytest.raises(InputError) as err:
        hand_estimate(model)
    assert err.value.field == "section.mesh_file"
