"""Bad model input is refused where it enters, with the field's TOML path, the file and a fix.

Each case starts from the example file (an invented site) or a small footing model, breaks one
thing, and checks the InputError. A property test then mutates the example at random and
checks that the only outcomes are a Model or a clean InputError.
"""

from __future__ import annotations

import copy
import tomllib
from pathlib import Path
from types import SimpleNamespace

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from solver.errors import InputError
from solver.model import (Model, check_mesh_names, load_model, model_from_dict,
                          model_from_toml)

EXAMPLE = Path(__file__).resolve().parents[1] / "examples" / "embankment.toml"
SOURCE = "site.toml"
BASE = tomllib.loads(EXAMPLE.read_text())

FOOTINGS = {
    "title": "Two strip footings (invented)",
    "materials": {"clay": {"youngs_modulus": "3 MPa", "permeability": "1e-9 m/s"}},
    "layers": [{"material": "clay", "thickness": 12.0}],
    "section": {"kind": "footings", "footings": [
        {"name": "west", "center": -4.0, "width": 2.0, "load": "150 kPa"},
        {"name": "east", "center": 4.0, "width": 2.0, "load": "150 kPa"}]},
    "stages": [{"kind": "load", "loads": ["west", "east"], "duration": "10 days"},
               {"kind": "consolidate", "duration": "5 years"}],
}


def example() -> dict:
    return copy.deepcopy(BASE)


def footings() -> dict:
    return copy.deepcopy(FOOTINGS)


def set_path(d: dict, path: tuple, value) -> dict:
    node = d
    for key in path[:-1]:
        node = node[key]
    if value is DELETE:
        del node[path[-1]]
    else:
        node[path[-1]] = value
    return d


DELETE = object()


def edit(path: tuple, value) -> dict:
    """The example with the field at ``path`` set to ``value`` (or removed: DELETE)."""
    return set_path(example(), path, value)

MAT = ("materials", "upper_clay")
EMB = ("section", "embankment")


def mcc(**changes) -> dict:
    d = example()
    m = {"model": "modified cam clay", "lambda": 0.3, "kappa": 0.03, "void_ratio": 2.0,
         "M": 1.1, "permeability": "1e-9 m/s", "unit_weight": 16.0}
    m.update(changes)
    d["materials"]["upper_clay"] = {k: v for k, v in m.items() if v is not DELETE}
    return d


def axisym(*footing_list) -> dict:
    d = footings()
    d["analysis"] = "axisymmetric"
    d["section"]["footings"] = list(footing_list)
    d["stages"][0]["loads"] = [f["name"] for f in footing_list]
    return d


# (id, model dict, expected field path, words expected in the message or fix)
CASES = [
    ("missing title", edit(("title",), DELETE), "title", "missing"),
    ("unknown top-level table", (lambda d: d.update(stage=d.pop("stages")) or d)(example()),
     "stage", "stages"),
    ("unknown material field", edit(MAT + ("youngs_modulos",), 1.0),
     "materials.upper_clay.youngs_modulos", "youngs_modulus"),
    ("unknown oedometer field", edit(MAT + ("oedometer", "compresion_index"), 0.5),
     "materials.upper_clay.oedometer.compresion_index", "compression_index"),
    ("unit weight in metres", edit(MAT + ("unit_weight",), "18 m"),
     "materials.upper_clay.unit_weight", "length"),
    ("density for a unit weight", edit(MAT + ("unit_weight",), "1.6 t/m3"),
     "materials.upper_clay.unit_weight", "9.81"),
    ("permeability in kPa", edit(MAT + ("permeability",), "1e-9 kPa"),
     "materials.upper_clay.permeability", "velocity"),
    ("unreadable modulus", edit(MAT + ("youngs_modulus",), "soft"),
     "materials.upper_clay.youngs_modulus", "number"),
    ("unknown unit", edit(MAT + ("youngs_modulus",), "2 MegaPascal"),
     "materials.upper_clay.youngs_modulus", "unit"),
    ("bool for a thickness", edit(("layers", 0, "thickness"), True),
     "layers[1].thickness", "true"),
    ("list where a table is needed", edit(("water",), [1, 2]), "water", "table"),
    ("table where tables are needed", edit(("layers",), {"a": 1}), "layers", "[[layers]]"),
    ("text for a whole number", edit(("stages", 0, "lift"), "one"),
     "stages[1].lift", "whole number"),
    ("negative modulus", edit(MAT + ("youngs_modulus",), -5.0),
     "materials.upper_clay.youngs_modulus", "positive"),
    ("zero permeability", edit(MAT + ("permeability",), 0.0),
     "materials.upper_clay.permeability", "positive"),
    ("permeability twice", edit(MAT + ("permeability_x",), 1e-4),
     "materials.upper_clay.permeability_x", "either"),
    ("undrained poisson ratio", edit(MAT + ("poisson_ratio",), 0.5),
     "materials.upper_clay.poisson_ratio", "pore water"),
    ("k0 zero", edit(MAT + ("k0",), 0.0), "materials.upper_clay.k0", "positive"),
    ("friction angle too high", edit(MAT + ("friction_angle",), "70 deg"),
     "materials.upper_clay.friction_angle", "60"),
    ("friction angle given as a percentage", edit(MAT + ("friction_angle",), "30 %"),
     "materials.upper_clay.friction_angle", "angle"),
    ("zero unit weight", edit(MAT + ("unit_weight",), 0),
     "materials.upper_clay.unit_weight", "positive"),
    ("ocr below one", edit(MAT + ("oedometer", "overconsolidation_ratio"), 0.8),
     "materials.upper_clay.oedometer.overconsolidation_ratio", "consolidating"),
    ("recompression above compression", edit(MAT + ("oedometer", "recompression_index"), 1.2),
     "materials.upper_clay.oedometer.recompression_index", "smaller"),
    ("two preconsolidation ways", edit(MAT + ("oedometer", "overconsolidation_ratio"), 1.5),
     "materials.upper_clay.oedometer.preconsolidation_margin", "one of"),
    ("linear elastic without stiffness", edit(MAT + ("youngs_modulus",), DELETE),
     "materials.upper_clay.youngs_modulus", "constrained_modulus"),
    ("unknown material model", edit(MAT + ("model",), "linear elastik"),
     "materials.upper_clay.model", "linear elastic"),
    ("cam clay without kappa", mcc(kappa=DELETE), "materials.upper_clay.kappa", "kappa"),
    ("cam clay without M or friction angle", mcc(M=DELETE),
     "materials.upper_clay.M", "friction_angle"),
    ("cam clay kappa above lambda", mcc(kappa=0.5), "materials.upper_clay.kappa", "lambda"),
    ("unknown analysis", edit(("analysis",), "plane stress"), "analysis", "plane strain"),
    ("unknown section kind", edit(("section", "kind"), "embankments"),
     "section.kind", "embankment"),
    ("zero thickness", edit(("layers", 1, "thickness"), 0.0), "layers[2].thickness", "positive"),
    ("layer without thickness", edit(("layers", 1, "thickness"), DELETE),
     "layers[2].thickness", "thickness ="),
    ("one layer name, two materials", edit(("layers", 1, "name"), "crust"),
     "layers[2].name", "own name"),
    ("unknown layer material", edit(("layers", 1, "material"), "upper_clai"),
     "layers[2].material", "upper_clay"),
    ("unknown fill material", edit(EMB + ("material",), "rockfill"),
     "section.embankment.material", "define"),
    ("lifts do not sum to height", edit(EMB + ("lifts",), [1.5, 1.5, 1.0]),
     "section.embankment.lifts", "sum"),
    ("lift thicker than embankment", edit(EMB + ("lifts",), [5.0, -0.5]),
     "section.embankment.lifts[2]", "positive"),
    ("lift thicker than the embankment height", edit(EMB + ("lifts",), [6.0]),
     "section.embankment.lifts[1]", "thicker"),
    ("zero crest width", edit(EMB + ("crest_width",), 0.0),
     "section.embankment.crest_width", "positive"),
    ("negative side slope", edit(EMB + ("side_slope",), -2.0),
     "section.embankment.side_slope", "1V:2H"),
    ("berm higher than embankment", edit(EMB + ("berms",), [{"width": 5.0, "height": 5.0}]),
     "section.embankment.berms[1].height", "lower"),
    ("embankment missing height", edit(EMB + ("height",), DELETE),
     "section.embankment.height", "height ="),
    ("depth conflicts with layers", edit(("section", "depth"), 30.0),
     "section.depth", "layers define"),
    ("footings overlap", set_path(footings(), ("section", "footings", 1, "center"), -3.0),
     "section.footings[2].center", "overlap"),
    ("footing outside the given width", set_path(footings(), ("section", "width"), 8.0),
     "section.footings[1].center", "outside"),
    ("footing with load and force",
     set_path(footings(), ("section", "footings", 0, "force"), "300 kN/m"),
     "section.footings[1].load", "exactly one"),
    ("footing without center is at 0, overlapping",
     set_path(set_path(footings(), ("section", "footings", 0, "center"), DELETE),
              ("section", "footings", 1, "center"), 1.0),
     "section.footings[2].center", "overlap"),
    ("footing with neither load nor force",
     set_path(footings(), ("section", "footings", 0, "load"), DELETE),
     "section.footings[1].load", "exactly one"),
    ("force in kN in plane strain",
     set_path(set_path(footings(), ("section", "footings", 0, "load"), DELETE),
              ("section", "footings", 0, "force"), "300 kN"),
     "section.footings[1].force", "force per metre"),
    ("two footings in axisymmetry",
     axisym({"name": "a", "center": 0.0, "width": 2.0, "load": 100.0},
            {"name": "b", "center": 5.0, "width": 2.0, "load": 100.0}),
     "section.footings[2]", "axisymmetry"),
    ("axisymmetric footing off the axis",
     axisym({"name": "a", "center": 3.0, "width": 2.0, "load": 100.0}),
     "section.footings[1].center", "center = 0"),
    ("half model footing off the centre",
     set_path(set_path(footings(), ("section", "half"), True), ("section", "footings"),
              [{"name": "west", "center": 2.0, "width": 2.0, "load": 100.0}]),
     "section.footings[1].center", "center = 0"),
    ("embankment table with footings kind", set_path(footings(), ("section", "embankment"),
                                                     BASE["section"]["embankment"]),
     "section.embankment", "kind"),
    ("probe outside the domain", edit(("probes", 2, "x"), 200.0), "probes[3].x", "outside"),
    ("probe below the base", edit(("probes", 3, "y"), -25.0), "probes[4].y", "below the base"),
    ("probe above the embankment", edit(("probes", 0, "y"), 6.0),
     "probes[1].y", "above the embankment"),
    ("probe left of the symmetry line", edit(("probes", 0, "x"), -1.0), "probes[1].x", "outside"),
    ("line with one point", edit(("lines", 0, "points"), 1), "lines[1].points", "at least 2"),
    ("line end outside", edit(("lines", 1, "y1"), -40.0), "lines[2].y1", "below the base"),
    ("stage places an undefined lift", edit(("stages", 4, "lift"), 4),
     "stages[5].lift", "not defined"),
    ("lift placed twice", edit(("stages", 2, "lift"), 1), "stages[3].lift", "twice"),
    ("lift out of order", edit(("stages", 0, "lift"), 2), "stages[1].lift", "before lift 1"),
    ("lift stage without lift", edit(("stages", 0, "lift"), DELETE), "stages[1].lift", "lift = 1"),
    ("until degree above one", edit(("stages", 5, "until_degree"), 1.5),
     "stages[6].until_degree", "fraction"),
    ("until degree in percent above 100", edit(("stages", 5, "until_degree"), "120 %"),
     "stages[6].until_degree", "(0, 1)"),
    ("zero duration", edit(("stages", 1, "duration"), "0 days"), "stages[2].duration", "positive"),
    ("duration in metres", edit(("stages", 1, "duration"), "60 m"), "stages[2].duration", "time"),
    ("unknown stage kind", edit(("stages", 1, "kind"), "consolidation"),
     "stages[2].kind", "consolidate"),
    ("load stage without loads", set_path(footings(), ("stages", 0, "loads"), DELETE),
     "stages[1].loads", "west"),
    ("load stage naming an unknown load",
     set_path(footings(), ("stages", 0, "loads"), ["west", "eats"]),
     "stages[1].loads[2]", "east"),
    ("no stages", edit(("stages",), []), "stages", "[[stages]]"),
    ("lift stage on footings", set_path(footings(), ("stages", 1),
                                        {"kind": "lift", "lift": 1, "duration": 5}),
     "stages[2].kind", "embankment"),
    ("mesh without mesh file", edit(("section",), {"kind": "mesh"}),
     "section.mesh_file", "mesh_file ="),
    ("mesh file missing",
     set_path(set_path(edit(("section",), {"mesh_file": "nowhere.msh"}),
                       ("stages",), [{"kind": "consolidate", "duration": 1}]),
              ("probes",), []),
     "section.mesh_file", "model file's folder"),
    ("negative output time", edit(("output", "times"), ["-1 day"]), "output.times[1]", "negative"),
    ("growth below one", edit(("time_steps", "growth"), 0.5), "time_steps.growth", "at least 1"),
    ("drainage as text", edit(("drainage", "base"), "yes"), "drainage.base", "no quotes"),
]


@pytest.mark.parametrize("data, field, words", [c[1:] for c in CASES],
                         ids=[c[0] for c in CASES])
def test_bad_input_names_field_file_and_fix(data, field, words):
    with pytest.raises(InputError) as info:
        model_from_dict(data, source=SOURCE)
    err = info.value
    assert err.field == field, str(err)
    assert err.source == SOURCE
    assert err.fix, str(err)
    text = str(err)
    assert text.startswith(f"{SOURCE}: {field}: "), text
    assert words.lower() in text.lower(), text


def test_there_are_at_least_thirty_distinct_cases():
    assert len({c[0] for c in CASES}) == len(CASES) >= 30


def test_unknown_field_suggests_the_nearest_name():
    d = example()
    d["time_steps"]["frist_step"] = d["time_steps"].pop("first_step")
    with pytest.raises(InputError) as info:
        model_from_dict(d, source=SOURCE)
    assert info.value.field == "time_steps.frist_step"
    assert "'first_step'" in info.value.fix


def test_unknown_field_without_a_near_name_lists_the_valid_ones():
    d = example()
    d["water"]["xyzzy"] = 1
    with pytest.raises(InputError) as info:
        model_from_dict(d, source=SOURCE)
    assert "table_depth" in info.value.fix and "unit_weight" in info.value.fix


def test_malformed_toml_names_line_and_file():
    text = EXAMPLE.read_text().replace('height = 4.5', 'height = 4.5 m', 1)
    with pytest.raises(InputError) as info:
        model_from_toml(text, source=SOURCE)
    assert info.value.source == SOURCE
    assert "line" in str(info.value) and info.value.fix


def test_missing_file_is_an_input_error(tmp_path):
    with pytest.raises(InputError) as info:
        load_model(tmp_path / "absent.toml")
    assert "absent.toml" in str(info.value)


def test_errors_from_a_file_name_that_file(tmp_path):
    path = tmp_path / "bad.toml"
    path.write_text(EXAMPLE.read_text().replace('lift = 3', 'lift = 4'))
    with pytest.raises(InputError) as info:
        load_model(path)
    assert info.value.source == str(path) and info.value.field == "stages[5].lift"


def _mesh_model(tmp_path, regions):
    (tmp_path / "site.msh").write_text("not parsed here\n")
    d = example()
    d["section"] = {"kind": "mesh", "mesh_file": "site.msh", "regions": regions}
    d["drainage"] = {"drained_edges": ["top"]}
    d["stages"] = [{"kind": "consolidate", "duration": 1.0}]
    d["probes"], d["lines"] = [], []
    return d


def test_mesh_region_with_unknown_material(tmp_path):
    d = _mesh_model(tmp_path, {"clay": "no_such_material"})
    with pytest.raises(InputError) as info:
        model_from_dict(d, source=str(tmp_path / "m.toml"))
    assert info.value.field == "section.regions.clay"


def test_mesh_names_are_checked_against_the_mesh(tmp_path):
    d = _mesh_model(tmp_path, {"clay": "upper_clay", "sand": "dense_sand"})
    model = model_from_dict(d, source=str(tmp_path / "m.toml"))
    good = SimpleNamespace(region_names=["clay", "sand"], edges={"top": None, "bottom": None})
    check_mesh_names(model, good)
    missing_region = SimpleNamespace(region_names=["clay", "sands"], edges={"top": None})
    with pytest.raises(InputError) as info:
        check_mesh_names(model, missing_region)
    assert info.value.field == "section.regions.sand" and "sands" in info.value.fix
    missing_edge = SimpleNamespace(region_names=["clay", "sand"], edges={"surface": None})
    with pytest.raises(InputError) as info:
        check_mesh_names(model, missing_edge)
    assert info.value.field == "drainage.drained_edges[1]" and "surface" in info.value.fix
    extra_region = SimpleNamespace(region_names=["clay", "sand", "peat"], edges={"top": None})
    with pytest.raises(InputError) as info:
        check_mesh_names(model, extra_region)
    assert "peat" in str(info.value)


def test_python_built_model_is_checked_with_paths():
    from solver.model import Layer, Material, Stage, check_model
    m = Model("t", materials={"clay": Material("clay", youngs_modulus="2 MPa")},
              layers=[Layer("clay", "clay", 5.0)],
              stages=[Stage("s", "consolidate", 10.0)])
    with pytest.raises(InputError) as info:
        check_model(m)
    assert info.value.field == "materials.clay.youngs_modulus"
    assert "to_value" in info.value.fix


# ------------------------------------------------------------------ property: no other errors

_VALUES = st.one_of(
    st.integers(-10**6, 10**6), st.floats(allow_nan=True, allow_infinity=True),
    st.booleans(), st.text(max_size=12),
    st.sampled_from(["18 m", "2 years", "90 %", "-1 kPa", "1e-9 m/s", "0.5 MPa", "28 deg",
                     "abc", "", "1,5", "1 m/0", "9**9**9", "3 m2/day", "embankment",
                     "consolidate", "lift", "load", "upper_clay", "plane strain",
                     "axisymmetric", "mesh", "nan", "1e400 kPa"]),
    st.lists(st.integers(-3, 5), max_size=3), st.just({}), st.just([{}]),
    st.dictionaries(st.sampled_from(["a", "name", "x", "width"]), st.integers(-2, 2),
                    max_size=2),
)


def _paths(node, prefix=()):
    """Every (container path, key) in the nested data."""
    out = []
    items = node.items() if isinstance(node, dict) else enumerate(node)
    for k, v in items:
        out.append(prefix + (k,))
        if isinstance(v, (dict, list)):
            out += _paths(v, prefix + (k,))
    return out


_BASE_PATHS = set(_paths(BASE))
_ALL_PATHS = sorted(_BASE_PATHS | set(_paths(FOOTINGS)), key=repr)


@st.composite
def _mutated(draw):
    data = copy.deepcopy(draw(st.sampled_from([BASE, BASE, FOOTINGS])))
    for _ in range(draw(st.integers(1, 3))):
        paths = _paths(data)
        if not paths:
            break
        path = draw(st.sampled_from(paths))
        parent = data
        for k in path[:-1]:
            parent = parent[k]
        key = path[-1]
        op = draw(st.sampled_from(["replace", "replace", "delete", "rename", "add", "copy"]))
        if op == "replace":
            parent[key] = draw(_VALUES)
        elif op == "delete":
            del parent[key]
        elif op == "rename" and isinstance(parent, dict):
            parent[key + draw(st.sampled_from(["s", "_", "x"]))] = parent.pop(key)
        elif op == "add" and isinstance(parent[key], dict):
            parent[key][draw(st.sampled_from(["extra", "name", "kind", "lift", "width"]))] = \
                draw(_VALUES)
        elif op == "copy":
            other = draw(st.sampled_from(_ALL_PATHS))
            node = BASE if other in _BASE_PATHS else FOOTINGS
            try:
                for k in other:
                    node = node[k]
                parent[key] = copy.deepcopy(node)
            except (KeyError, IndexError, TypeError):
                pass
    return data


@settings(max_examples=400, deadline=None, derandomize=True,
          suppress_health_check=[HealthCheck.too_slow])
@given(_mutated())
def test_mutated_model_is_a_model_or_a_clean_input_error(data):
    try:
        model = model_from_dict(data, source=SOURCE)
    except InputError as err:
        assert err.source == SOURCE
        assert err.fix
        return
    assert isinstance(model, Model)


@settings(max_examples=150, deadline=None, derandomize=True)
@given(st.integers(0, len(EXAMPLE.read_text()) - 1),
       st.sampled_from(["", "=", "[", "]", '"', "\n", "x", "0", "#", "-", " m"]),
       st.integers(0, 3))
def test_mutated_text_is_a_model_or_a_clean_input_error(pos, insert, cut):
    text = EXAMPLE.read_text()
    text = text[:pos] + insert + text[pos + cut:]
    try:
        model_from_toml(text, source=SOURCE)
    except InputError as err:
        assert err.source == SOURCE
