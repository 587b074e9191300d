"""Reading model files: the example loads, quantities convert once, models round-trip."""

from __future__ import annotations

import math
import subprocess
import sys
import tomllib
from pathlib import Path

import pytest

from solver.errors import InputError
from solver.model import (Berm, Drainage, Embankment, Footing, Layer, LineProbe, Material,
                          Model, OedometerParameters, Output, PointProbe, Section, Stage,
                          SurfaceLoad, TimeSteps, Water, domain_extent, domain_warnings,
                          dump_toml, embankment_profile, ground_surface, load_model,
                          loaded_extent, model_from_dict, model_from_toml, model_to_dict,
                          model_warnings)
from solver.units import to_value

EXAMPLE = Path(__file__).resolve().parents[1] / "examples" / "embankment.toml"
SECONDS_PER_DAY = 86400.0


@pytest.fixture(scope="module")
def example() -> Model:
    return load_model(EXAMPLE)


# ----------------------------------------------------------------------------- units

@pytest.mark.parametrize("text, kind, value", [
    ("1e-9 m/s", "permeability", 1e-9 * SECONDS_PER_DAY),
    ("2 years", "time", 730.5),                   # pint's year is 365.25 days
    ("1 month", "time", 365.25 / 12),
    ("18 kN/m3", "unit_weight", 18.0),
    ("18 kN/m^3", "unit_weight", 18.0),
    ("0.5 MPa", "pressure", 500.0),
    ("150 kPa", "pressure", 150.0),
    ("20 psi", "pressure", 20 * 6.894757),
    ("28 deg", "angle", 28.0),
    ("90 %", "number", 0.9),
    ("3 m2/year", "consolidation_coefficient", 3 / 365.25),
    ("2e-4 1/kPa", "compressibility", 2e-4),
    ("300 kN/m", "line_force", 300.0),
    ("45 cm", "length", 0.45),
    ("150", "pressure", 150.0),                   # a number as text: the default unit
    (4.5, "length", 4.5),                         # bare numbers: the default unit
    (7, "time", 7.0),
])
def test_units_convert_to_the_default_unit(text, kind, value):
    assert to_value(text, kind) == pytest.approx(value, rel=1e-6)


def test_wrong_dimension_names_both():
    with pytest.raises(InputError) as info:
        to_value("18 m", "unit_weight", field="materials.clay.unit_weight", source="f.toml")
    text = str(info.value)
    assert "unit weight" in text and "length" in text and "18 kN/m3" in info.value.fix


def test_import_solver_does_not_import_pint():
    code = "import solver.model, solver.units, sys; assert 'pint' not in sys.modules"
    subprocess.run([sys.executable, "-c", code], check=True)


# ----------------------------------------------------------------------------- the example

def test_example_loads_with_units_converted(example):
    m = example
    assert m.source == str(EXAMPLE)
    assert m.section.kind == "embankment" and m.section.half
    assert m.section.embankment.lifts == [1.5, 1.5, 1.5]
    assert [la.name for la in m.layers] == ["crust", "upper_clay", "lower_clay", "sand"]
    clay = m.materials["upper_clay"]
    assert clay.permeability_x == clay.permeability_y == pytest.approx(8.64e-5)
    assert clay.youngs_modulus == 600.0 and clay.unit_weight == 16.0     # "0.6 MPa"
    assert clay.oedometer.preconsolidation_margin == 20.0
    assert m.materials["crust"].permeability_x == pytest.approx(2 * m.materials[
        "crust"].permeability_y)
    assert m.materials["dense_sand"].oedometer.volume_compressibility == pytest.approx(1.9e-5)
    long_term = m.stages[-1]
    assert long_term.duration == pytest.approx(20 * 365.25)
    assert long_term.until_degree == pytest.approx(0.9)
    assert m.time_steps.max_step == pytest.approx(365.25)
    assert m.output.times == pytest.approx([365.25, 730.5, 5 * 365.25, 3652.5])
    assert [s.kind for s in m.stages] == ["lift", "consolidate"] * 2 + ["lift", "consolidate"]


def test_example_extent_follows_the_rule(example):
    # B = 12 + 2 * 2 * 4.5 = 30 m toe to toe; D = 19.5 m; reach = 15 + max(2 B, 2 D) = 75 m.
    assert loaded_extent(example) == (-15.0, 15.0)
    assert domain_extent(example) == (0.0, 75.0, 19.5)
    warnings = domain_warnings(example)
    assert len(warnings) == 1 and "rigid base" in warnings[0]
    assert model_warnings(example) == warnings


def test_embankment_profile_with_a_berm():
    emb = Embankment(crest_width=10.0, height=4.0, side_slope=2.0, lifts=[2.0, 2.0],
                     material="fill", berms=[Berm(width=6.0, height=1.5)])
    assert embankment_profile(emb) == [(0.0, 4.0), (5.0, 4.0), (10.0, 1.5), (16.0, 1.5),
                                       (19.0, 0.0)]


def test_ground_surface_follows_the_embankment(example):
    assert ground_surface(example, 0.0) == 4.5
    assert ground_surface(example, -10.5) == pytest.approx(2.25)
    assert ground_surface(example, 20.0) == 0.0


# ----------------------------------------------------------------------------- round trips

def python_model() -> Model:
    """A model built in Python, as a script would: two strip footings and a surface load."""
    clay = Material("clay", youngs_modulus=2500.0, poisson_ratio=0.3, permeability_x=8.64e-5,
                    unit_weight=16.5, friction_angle=26.0,
                    oedometer=OedometerParameters(compression_index=0.7,
                                                  recompression_index=0.07, void_ratio=1.6,
                                                  overconsolidation_ratio=1.3))
    sand = Material("sand", constrained_modulus=60000.0, permeability_x=8.64,
                    permeability_y=4.32, unit_weight=19.0, saturated_unit_weight=20.0)
    mcc = Material("mcc clay", model="modified cam clay", lambda_=0.3, kappa=0.03,
                   void_ratio=2.0, M=1.1, permeability_x=1e-4, permeability_change_index=0.5)
    return Model(
        title='Strip footings "A" and "B" (invented)',
        materials={"clay": clay, "sand": sand, "mcc clay": mcc},
        layers=[Layer("clay", "clay", 6.0, thickness_right=7.0), Layer("deep", "mcc clay", 4.0),
                Layer("sand", "sand", 10.0)],
        section=Section(kind="footings", width=60.0, mesh_size=0.5, footings=[
            Footing("A", center=-5.0, width=2.0, load=150.0, embedment=1.0),
            Footing("B", center=5.0, width=3.0, force=450.0, rigid=False)]),
        water=Water(table_depth=-0.5),
        drainage=Drainage(top=True, base=True, sides=True),
        loads=[SurfaceLoad("yard", x_left=10.0, x_right=20.0, pressure=20.0)],
        stages=[Stage("footings", "load", 5.0, loads=["A", "B"]),
                Stage("yard", "load", 2.0, loads=["yard"], factor=0.5),
                Stage("rest", "consolidate", 3650.0, until_degree=0.95)],
        time_steps=TimeSteps(first_step=0.01, growth=1.5, steps_per_level=3, max_step=100.0),
        probes=[PointProbe("under A", -5.0, -1.0)],
        lines=[LineProbe("surface", -30.0, 0.0, 30.0, 0.0, points=121, kind="surface")],
        output=Output(times=[1.0, 10.0, 100.0], every_step=True),
    )


def test_python_model_round_trips_through_toml():
    m = python_model()
    text = dump_toml(m)
    back = model_from_toml(text, source="copy.toml")
    back.source = None
    assert back == m


def test_example_round_trips_through_a_saved_copy(example, tmp_path):
    path = tmp_path / "copy.toml"
    path.write_text(dump_toml(example))
    back = load_model(path)
    back.source = example.source
    assert back == example


def test_model_to_dict_holds_plain_numbers_in_default_units(example):
    d = model_to_dict(example)
    assert d["materials"]["upper_clay"]["permeability_x"] == pytest.approx(8.64e-5)
    assert d["stages"][-1]["duration"] == pytest.approx(7305.0)
    assert d["section"]["embankment"]["lifts"] == [1.5, 1.5, 1.5]
    assert "source" not in d

    def leaves(node):
        if isinstance(node, dict):
            for v in node.values():
                yield from leaves(v)
        elif isinstance(node, list):
            for v in node:
                yield from leaves(v)
        else:
            yield node

    for v in leaves(d):
        assert isinstance(v, (bool, int, float, str)) and v is not None
        if isinstance(v, float):
            assert math.isfinite(v)
    # What model_to_dict gives, model_from_dict takes back.
    again = model_from_dict(d, source=example.source)
    assert again == example


def test_dump_toml_is_valid_toml_with_quoted_keys():
    text = dump_toml(python_model())
    data = tomllib.loads(text)
    assert '[materials."mcc clay"]' in text
    assert data["materials"]["mcc clay"]["lambda"] == 0.3
    assert data["title"] == 'Strip footings "A" and "B" (invented)'


# ----------------------------------------------------------------------------- conveniences

def minimal(**section) -> dict:
    return {"title": "t", "materials": {"clay": {"youngs_modulus": 2000}},
            "layers": [{"material": "clay", "thickness": 10}],
            "section": section,
            "stages": [{"kind": "consolidate", "duration": 1}]}


def test_section_kind_is_inferred_and_lifts_may_be_a_count():
    d = minimal(embankment={"crest_width": 10, "height": 3, "side_slope": 2, "lifts": 3,
                            "material": "clay"})
    m = model_from_dict(d)
    assert m.section.kind == "embankment"
    assert m.section.embankment.lifts == pytest.approx([1.0, 1.0, 1.0])
    assert any(w.startswith("lifts 1, 2, 3 never placed") for w in model_warnings(m))


def test_one_lift_when_lifts_are_left_out():
    d = minimal(embankment={"crest_width": 10, "height": 3, "side_slope": 2,
                            "material": "clay"})
    assert model_from_dict(d).section.embankment.lifts == [3.0]


def test_layer_names_default_to_the_material():
    d = minimal()
    d["layers"] = [{"material": "clay", "thickness": 3}, {"material": "clay", "thickness": 4}]
    assert [la.name for la in model_from_dict(d).layers] == ["clay", "clay_2"]


def test_choices_ignore_case_and_separators():
    d = minimal()
    d["analysis"] = "Plane_Strain"
    assert model_from_dict(d).analysis == "plane strain"


def test_ground_extent_without_loads_is_twice_the_depth():
    assert domain_extent(model_from_dict(minimal())) == (-20.0, 20.0, 10.0)


def test_narrow_domain_warns():
    d = minimal(width=30.0)
    d["loads"] = [{"x_left": -5, "x_right": 5, "pressure": 50}]
    d["stages"] = [{"kind": "load", "loads": ["load_1"], "duration": 1}]
    warnings = domain_warnings(model_from_dict(d))
    assert any("side boundary" in w for w in warnings)
    assert not any("base" in w for w in warnings)


def test_mesh_file_is_resolved_against_the_model_folder(tmp_path):
    (tmp_path / "meshes").mkdir()
    (tmp_path / "meshes" / "site.msh").write_text("placeholder\n")
    model_file = tmp_path / "site.toml"
    model_file.write_text(
        'title = "user mesh (invented)"\n'
        '[materials.clay]\nyoungs_modulus = "2 MPa"\n'
        '[section]\nkind = "mesh"\nmesh_file = "meshes/site.msh"\n'
        '[section.regions]\nclay = "clay"\n'
        '[drainage]\ndrained_edges = ["top"]\n'
        '[[stages]]\nkind = "consolidate"\nduration = "1 year"\n')
    m = load_model(model_file)
    assert Path(m.section.mesh_file) == (tmp_path / "meshes" / "site.msh").resolve()
    assert domain_extent(m) is None
    back = model_from_toml(dump_toml(m))
    assert back.section.mesh_file == m.section.mesh_file
