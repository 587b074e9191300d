"""Parametric sections: names of the contract, exact areas, edges where they belong, grading.

Areas are sums of straight-sided element corner areas against the analytic area of each
polygon, so a misplaced vertex or a missing piece cannot pass.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from solver.errors import InputError
from solver.geometry import read_mesh
from solver.model import (Berm, Embankment, Footing, Layer, Model, Section, SurfaceLoad,
                          domain_extent)
from solver.sections import build_mesh, resolve_extent

MESHES = Path(__file__).resolve().parents[1] / "meshes"
TOL = 1e-9


def layers_sloping():
    return [Layer("crust", "crust", 2.0),
            Layer("soft_clay", "clay", 10.0, thickness_right=12.0),
            Layer("sand", "sand", 5.0)]


def region_area(mesh, name):
    return float(mesh.corner_areas[mesh.region == mesh.region_id(name)].sum())


def nodes(mesh, edge):
    return mesh.points[mesh.edge_nodes(edge)]


def close(a, b, rel=TOL):
    return abs(a - b) <= rel * max(abs(b), 1.0)


def layer_line(x, x_min, x_max, left, right):
    """Depth rule: a layer base runs straight from its left to its right elevation."""
    return left + (right - left) * (x - x_min) / (x_max - x_min)


def embankment_half_width(emb, y):
    """Half-width of the embankment at elevation y: the slope, plus every bench above y."""
    return (emb.crest_width / 2 + emb.side_slope * (emb.height - y)
            + sum(b.width for b in emb.berms if b.height > y))


def band_area(emb, y0, y1, full=True):
    """Area of the embankment between two elevations, by integrating its width exactly
    (linear between berm heights: the trapezoid rule on each piece is exact)."""
    cuts = sorted({y0, y1} | {b.height for b in emb.berms if y0 < b.height < y1})
    area = 0.0
    for a, b in zip(cuts[:-1], cuts[1:]):
        eps = 1e-12 * emb.height
        wa = embankment_half_width(emb, a + eps)   # just above a bench, just below one
        wb = embankment_half_width(emb, b - eps)
        area += 0.5 * (wa + wb) * (b - a)
    return 2 * area if full else area


def layer_areas(layers, x_min, x_max, depth=None):
    """Exact areas of the layers of a section without notches: trapezoids. With a given
    depth the bottom layer reaches down to it."""
    out = {}
    yl = yr = 0.0
    for j, lay in enumerate(layers):
        tl = lay.thickness
        tr = lay.thickness if lay.thickness_right is None else lay.thickness_right
        if j == len(layers) - 1 and depth is not None:
            tl, tr = depth + yl, depth + yr
        out[lay.name] = out.get(lay.name, 0.0) + 0.5 * (tl + tr) * (x_max - x_min)
        yl, yr = yl - tl, yr - tr
    return out


# ----------------------------------------------------------------------------- embankment

EMB = Embankment(crest_width=20.0, height=4.0, side_slope=2.0, lifts=[1.0, 1.0, 1.0, 1.0],
                 material="fill", berms=[Berm(width=5.0, height=1.5)])


@pytest.fixture(scope="module")
def full_embankment():
    model = Model("full embankment", layers=layers_sloping(),
                  section=Section(kind="embankment", embankment=EMB))
    return model, build_mesh(model)


@pytest.fixture(scope="module")
def half_embankment():
    model = Model("half embankment", layers=layers_sloping(),
                  section=Section(kind="embankment", half=True, embankment=EMB))
    return model, build_mesh(model)


def test_embankment_has_every_contract_name(full_embankment, half_embankment):
    regions = {"crust", "soft_clay", "sand", "lift_1", "lift_2", "lift_3", "lift_4"}
    edges = {"base", "right", "ground", "ground_free", "interface_1", "interface_2",
             "embankment_surface", "lift_1_top", "lift_2_top", "lift_3_top", "lift_4_top"}
    _, full = full_embankment
    _, half = half_embankment
    assert set(full.region_names) == regions
    assert set(half.region_names) == regions
    assert edges | {"left"} <= set(full.edges) and "symmetry" not in full.edges
    assert edges | {"symmetry"} <= set(half.edges) and "left" not in half.edges


def test_mesh_fills_the_model_extent(full_embankment, half_embankment):
    for model, m in (full_embankment, half_embankment):
        x_min, x_max, depth = resolve_extent(model)
        assert (x_min, x_max, depth) == domain_extent(model)     # one rule for everyone
        assert depth == 19.0                                      # the deeper edge
        assert np.isclose(m.points[:, 0].min(), x_min)
        assert np.isclose(m.points[:, 0].max(), x_max)
        assert np.isclose(m.points[:, 1].min(), -depth)
        assert np.isclose(m.points[:, 1].max(), EMB.height)
    assert resolve_extent(half_embankment[0])[0] == 0.0


@pytest.mark.parametrize("which", ["full", "half"])
def test_embankment_region_areas_are_exact(which, full_embankment, half_embankment):
    model, mesh = full_embankment if which == "full" else half_embankment
    x_min, x_max, depth = resolve_extent(model)
    for name, area in layer_areas(model.layers, x_min, x_max).items():
        assert close(region_area(mesh, name), area), name
    levels = np.concatenate([[0.0], np.cumsum(EMB.lifts)])
    for i in range(len(EMB.lifts)):
        exact = band_area(EMB, levels[i], levels[i + 1], full=(which == "full"))
        assert close(region_area(mesh, f"lift_{i + 1}"), exact), i + 1


def test_lifts_stack_in_their_elevation_bands(full_embankment):
    _, mesh = full_embankment
    levels = np.concatenate([[0.0], np.cumsum(EMB.lifts)])
    y = mesh.points[mesh.triangles[:, :3], 1]
    for i in range(len(EMB.lifts)):
        sel = mesh.region == mesh.region_id(f"lift_{i + 1}")
        assert y[sel].min() >= levels[i] - 1e-9 and y[sel].max() <= levels[i + 1] + 1e-9
        top = nodes(mesh, f"lift_{i + 1}_top")
        assert top[:, 1].min() >= levels[i] - 1e-9 and top[:, 1].max() <= levels[i + 1] + 1e-9
        # its crest part reaches the top of the lift across the whole width there
        w = embankment_half_width(EMB, levels[i + 1])
        crest = top[np.isclose(top[:, 1], levels[i + 1])]
        assert np.isclose(crest[:, 0].min(), -w) and np.isclose(crest[:, 0].max(), w)
    soil = np.isin(mesh.region, [mesh.region_id(n) for n in ("crust", "soft_clay", "sand")])
    assert y[soil].max() <= 1e-9


def test_edges_lie_where_they_belong(full_embankment):
    model, mesh = full_embankment
    x_min, x_max, depth = resolve_extent(model)
    toe = 23.0
    b = nodes(mesh, "base")           # the base slopes with the bottom layer: 17 m to 19 m
    assert np.allclose(b[:, 1], layer_line(b[:, 0], x_min, x_max, -17.0, -19.0), atol=1e-9)
    assert np.isclose(b[:, 0].min(), x_min) and np.isclose(b[:, 0].max(), x_max)
    assert np.allclose(nodes(mesh, "left")[:, 0], x_min)
    assert np.allclose(nodes(mesh, "right")[:, 0], x_max)
    g = nodes(mesh, "ground")
    assert np.allclose(g[:, 1], 0.0)
    assert np.isclose(g[:, 0].min(), x_min) and np.isclose(g[:, 0].max(), x_max)
    free = nodes(mesh, "ground_free")
    assert np.allclose(free[:, 1], 0.0) and np.all(np.abs(free[:, 0]) >= toe - 1e-9)
    # every ground segment is either free or under the embankment, not both
    x_ends = np.abs(mesh.points[mesh.edge("ground")[:, :2], 0])
    under = np.all(x_ends <= toe + 1e-9, axis=1)
    assert len(mesh.edge("ground")) == len(mesh.edge("ground_free")) + under.sum()
    # the surface of the embankment lies on its outline
    s = nodes(mesh, "embankment_surface")
    assert np.all(s[:, 1] > -1e-9)
    w = np.array([embankment_half_width(EMB, y) for y in s[:, 1]])
    on_slope = np.isclose(np.abs(s[:, 0]), w, atol=1e-7)
    on_flat = np.isclose(s[:, 1], 4.0) | np.isclose(s[:, 1], 1.5)
    assert np.all(on_slope | on_flat)


def test_lift_tops_together_cover_the_final_surface(half_embankment):
    _, mesh = half_embankment
    key = lambda seg: {tuple(sorted(s[:2])) for s in seg}   # noqa: E731
    final = key(mesh.edge("embankment_surface"))
    tops = set().union(*(key(mesh.edge(f"lift_{i}_top")) for i in range(1, 5)))
    assert final <= tops
    # what the lift tops hold beyond the final surface is covered by the next lift
    for i in range(1, 4):
        hidden = key(mesh.edge(f"lift_{i}_top")) - final
        y = mesh.points[np.array(sorted(hidden)).ravel(), 1] if hidden else np.array([])
        assert np.allclose(y, sum(EMB.lifts[:i]))
    for i in range(1, 5):                      # the symmetry line is no lift's top
        x = mesh.points[mesh.edge(f"lift_{i}_top")[:, :2], 0]
        assert not np.any(np.all(np.abs(x) < 1e-9, axis=1))
    assert np.allclose(nodes(mesh, "symmetry")[:, 0], 0.0)
    assert nodes(mesh, "symmetry")[:, 1].max() == pytest.approx(4.0)   # up through the fill


def test_sloping_interface_follows_the_thickness_rule(full_embankment):
    model, mesh = full_embankment
    x_min, x_max, _ = resolve_extent(model)
    p1 = nodes(mesh, "interface_1")
    assert np.allclose(p1[:, 1], -2.0)
    p2 = nodes(mesh, "interface_2")
    assert np.allclose(p2[:, 1], layer_line(p2[:, 0], x_min, x_max, -12.0, -14.0), atol=1e-9)
    assert np.isclose(p2[:, 0].min(), x_min) and np.isclose(p2[:, 0].max(), x_max)


def test_elements_are_finer_near_the_load_than_far_away(full_embankment):
    model, mesh = full_embankment
    _, x_max, _ = resolve_extent(model)
    size = np.sqrt(2 * mesh.corner_areas)
    c = mesh.points[mesh.triangles[:, :3]].mean(axis=1)
    near_toe = np.hypot(c[:, 0] - 23.0, c[:, 1]) < 3.0
    far = c[:, 0] > x_max - 40.0
    assert size[near_toe].mean() * 4 < size[far].mean()
    assert 1000 < mesh.n_elements < 6000    # a few thousand by default


# ----------------------------------------------------------------------------- footings


@pytest.fixture(scope="module")
def footings():
    model = Model("footings", layers=layers_sloping(),
                  section=Section(kind="footings", footings=[
                      Footing("A", center=0.0, width=2.0, embedment=2.5),   # through the crust
                      Footing("B", center=6.0, width=2.0)]))
    return model, build_mesh(model)


def test_footings_have_their_names_and_exact_areas(footings):
    model, mesh = footings
    assert {"footing_A", "footing_B", "excavation_walls", "ground", "ground_free", "base",
            "left", "right", "interface_1", "interface_2"} <= set(mesh.edges)
    x_min, x_max, depth = resolve_extent(model)
    exact = layer_areas(model.layers, x_min, x_max)
    exact["crust"] -= 2.0 * 2.0         # the notch, 2 m wide, through the 2 m crust ...
    exact["soft_clay"] -= 2.0 * 0.5     # ... and 0.5 m into the clay
    for name, area in exact.items():
        assert close(region_area(mesh, name), area), name


def test_footing_bases_lie_at_their_embedment(footings):
    _, mesh = footings
    a = nodes(mesh, "footing_A")
    assert np.allclose(a[:, 1], -2.5)
    assert np.isclose(a[:, 0].min(), -1.0) and np.isclose(a[:, 0].max(), 1.0)
    b = nodes(mesh, "footing_B")
    assert np.allclose(b[:, 1], 0.0)
    assert np.isclose(b[:, 0].min(), 5.0) and np.isclose(b[:, 0].max(), 7.0)
    walls = nodes(mesh, "excavation_walls")
    assert np.allclose(np.abs(walls[:, 0]), 1.0)
    assert walls[:, 1].min() == pytest.approx(-2.5) and walls[:, 1].max() == pytest.approx(0.0)
    g = nodes(mesh, "ground")
    assert np.allclose(g[:, 1], 0.0) and not np.any(np.abs(g[:, 0]) < 1.0 - 1e-9)
    free = nodes(mesh, "ground_free")
    assert not np.any((free[:, 0] > 5.0 + 1e-9) & (free[:, 0] < 7.0 - 1e-9))
    assert len(mesh.edge("ground")) == len(mesh.edge("ground_free")) + len(mesh.edge("footing_B"))


def test_elements_are_finer_at_footing_corners(footings):
    _, mesh = footings
    size = np.sqrt(2 * mesh.corner_areas)
    c = mesh.points[mesh.triangles[:, :3]].mean(axis=1)
    corner = np.hypot(c[:, 0] - 1.0, c[:, 1] + 2.5) < 0.5
    far = np.abs(c[:, 0]) > 30.0
    assert size[corner].mean() < 0.2 and size[far].mean() > 1.0


def test_axisymmetric_footing_is_a_disc_on_the_axis():
    model = Model("plate", analysis="axisymmetric", layers=layers_sloping(),
                  section=Section(kind="footings",
                                  footings=[Footing("A", center=0.0, width=3.0, embedment=1.0)]))
    mesh = build_mesh(model)
    assert "symmetry" in mesh.edges and "left" not in mesh.edges
    assert np.allclose(nodes(mesh, "symmetry")[:, 0], 0.0)
    a = nodes(mesh, "footing_A")
    assert np.allclose(a[:, 1], -1.0)
    assert np.isclose(a[:, 0].min(), 0.0) and np.isclose(a[:, 0].max(), 1.5)
    assert np.all(mesh.points[:, 0] >= -1e-12)
    x_min, x_max, depth = resolve_extent(model)
    assert x_min == 0.0 and x_max > 1.5
    exact = layer_areas(model.layers, x_min, x_max)
    exact["crust"] -= 1.5 * 1.0
    for name, area in exact.items():
        assert close(region_area(mesh, name), area), name


def test_axisymmetric_section_refuses_off_axis_footings():
    model = Model("two plates", analysis="axisymmetric", layers=layers_sloping(),
                  section=Section(kind="footings", footings=[Footing("A", 0.0, 2.0),
                                                             Footing("B", 5.0, 2.0)]))
    with pytest.raises(InputError, match="section.footings"):
        build_mesh(model)


# ----------------------------------------------------------------------------- ground


def test_ground_surface_is_split_at_the_ends_of_each_load():
    layers = [Layer("crust", "c", 1.5, thickness_right=0.0),      # pinches out to the right
              Layer("clay", "k", 8.0), Layer("clay", "k", 4.0, thickness_right=6.0)]
    model = Model("loads", layers=layers,
                  loads=[SurfaceLoad("q", -5.0, 5.0, 50.0), SurfaceLoad("r", 9.0, 11.0, 20.0)],
                  section=Section(kind="ground", width=60.0))
    mesh = build_mesh(model)
    assert set(mesh.region_names) == {"crust", "clay"}    # equal names share a region
    assert {"load_q", "load_r", "ground", "ground_free", "interface_1", "interface_2"} \
        <= set(mesh.edges)
    x_min, x_max, depth = resolve_extent(model)
    assert (x_min, x_max, depth) == (-30.0, 30.0, 14.0)
    p = nodes(mesh, "base")                                  # 13.5 m left, 14 m right
    assert np.allclose(p[:, 1], layer_line(p[:, 0], x_min, x_max, -13.5, -14.0), atol=1e-9)
    for name, (a, b) in {"load_q": (-5.0, 5.0), "load_r": (9.0, 11.0)}.items():
        p = nodes(mesh, name)
        assert np.allclose(p[:, 1], 0.0)
        assert np.isclose(p[:, 0].min(), a) and np.isclose(p[:, 0].max(), b)
    assert len(mesh.edge("ground_free")) == len(mesh.edge("ground"))
    # the crust is a triangle 1.5 m thick at the left; its base is interface_1
    assert close(region_area(mesh, "crust"), 0.5 * 1.5 * 60.0)
    assert close(region_area(mesh, "clay"), 60.0 * (13.5 + 14.0) / 2 - 0.5 * 1.5 * 60.0)
    p = nodes(mesh, "interface_1")
    assert np.allclose(p[:, 1], layer_line(p[:, 0], x_min, x_max, -1.5, 0.0), atol=1e-9)
    p = nodes(mesh, "interface_2")
    assert np.allclose(p[:, 1], layer_line(p[:, 0], x_min, x_max, -9.5, -8.0), atol=1e-9)


def test_crest_load_is_named_on_the_crest():
    model = Model("traffic", layers=[Layer("clay", "k", 10.0)],
                  loads=[SurfaceLoad("traffic", -3.0, 3.0, 10.0)],
                  section=Section(kind="embankment", embankment=Embankment(
                      crest_width=10.0, height=2.0, side_slope=1.5, lifts=[2.0],
                      material="fill")))
    mesh = build_mesh(model)
    assert np.allclose(nodes(mesh, "base")[:, 1], -10.0)      # flat layers: base at -depth
    p = nodes(mesh, "load_traffic")
    assert np.allclose(p[:, 1], 2.0) and np.isclose(p[:, 0].min(), -3.0)
    assert np.isclose(p[:, 0].max(), 3.0)


def test_bad_sections_are_refused_naming_the_field():
    emb = Embankment(crest_width=10.0, height=3.0, side_slope=2.0, lifts=[1.0, 1.0],
                     material="fill")
    with pytest.raises(InputError, match="lifts"):
        build_mesh(Model("m", layers=[Layer("clay", "k", 10.0)],
                         section=Section(kind="embankment", embankment=emb)))
    with pytest.raises(InputError, match="section.kind"):
        build_mesh(Model("m", layers=[Layer("clay", "k", 10.0)], section=Section(kind="dam")))
    with pytest.raises(InputError, match=r"layers\[2\]"):
        build_mesh(Model("m", layers=[Layer("a", "k", 5.0), Layer("b", "k", 0.0)],
                         section=Section(kind="ground")))


# ----------------------------------------------------------------------------- shipped mesh

GROUPS_REGIONS = {"crust", "soft_clay", "soft_lens", "sand", "fill"}
GROUPS_EDGES = {"base", "left", "right", "ground", "ground_free", "ditch", "fill_top",
                "interface_1", "interface_2", "lens_edge"}


def shoelace(pts):
    x, y = np.asarray(pts, float).T
    return 0.5 * abs(np.dot(x, np.roll(y, -1)) - np.dot(y, np.roll(x, -1)))


def test_shipped_mesh_reads_with_its_names_and_matches_its_geo():
    msh = MESHES / "ditch_and_fill.msh"
    assert msh.stat().st_size < 300_000
    shipped = read_mesh(msh)
    assert set(shipped.region_names) == GROUPS_REGIONS
    assert set(shipped.edges) == GROUPS_EDGES
    model = Model("file", section=Section(kind="mesh",
                                          mesh_file=str(MESHES / "ditch_and_fill.geo")))
    fresh = build_mesh(model)
    assert set(fresh.region_names) == GROUPS_REGIONS and set(fresh.edges) == GROUPS_EDGES
    lens = shoelace([(32, -7.0), (35, -5.8), (41, -5.6), (45, -6.8), (42, -8.2), (35, -8.3)])
    exact = {"crust": 60 * (1.5 + 2.5) / 2 - (4 + 1.5) / 2 * 1,
             "soft_clay": 60 * (9.5 + 11.5) / 2 - lens, "soft_lens": lens,
             "sand": 60 * (9 + 6) / 2, "fill": (16 + 8) / 2 * 2}
    for name in GROUPS_REGIONS:
        assert close(region_area(shipped, name), region_area(fresh, name)), name
        assert close(region_area(shipped, name), exact[name]), name
    assert np.allclose(nodes(shipped, "base")[:, 1], -20.0)
    assert np.allclose(nodes(shipped, "ground")[:, 1], 0.0)
    d = nodes(shipped, "ditch")
    assert d[:, 0].min() == pytest.approx(12.0) and d[:, 1].min() == pytest.approx(-1.0)
