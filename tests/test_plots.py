"""Plots (solver/plots.py) and section pictures (solver/pictures.py) of a real, small run.

One coarse run of the embankment example per module (about two seconds); every image made
from it must decode and carry a picture (spread of grey levels, many colours), not a blank or
a one-colour page.
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pytest
from PIL import Image

from solver import CAUTION
from solver.model import dump_toml, load_model, model_from_toml
from solver.runner import run

ROOT = Path(__file__).resolve().parents[1]


def small_embankment_run(out: Path) -> Path:
    """The embankment example, coarser and shorter: three lifts, two years of waiting."""
    m = load_model(ROOT / "examples" / "embankment.toml")
    m.section.mesh_size = 3.0
    m.section.grading.enabled = False      # coarse on purpose: pictures, not accuracy
    m.section.width = 40.0
    for st in m.stages:
        if st.until_degree is not None:
            st.duration, st.until_degree = 730.0, None
    m.output.times = [365.0]
    m.time_steps.first_step = 1.0
    for ln in m.lines:
        if ln.kind == "surface":
            ln.x1 = 35.0
    text = dump_toml(m)
    run(model_from_toml(text), out, model_text=text)
    return out


def n_colours(rgb: np.ndarray) -> int:
    """Distinct colours of an (h, w, 3) uint8 image."""
    a = rgb.reshape(-1, 3).astype(np.uint32)
    return int(np.unique((a[:, 0] << 16) | (a[:, 1] << 8) | a[:, 2]).size)


def assert_picture(path: Path, min_std: float = 8.0, min_colours: int = 40) -> np.ndarray:
    """The PNG decodes, is not blank and not a handful of flat colours."""
    assert path.exists() and path.stat().st_size > 5000, path
    with Image.open(path) as im:
        im.load()
        rgb = np.asarray(im.convert("RGB"))
    assert rgb.shape[0] > 200 and rgb.shape[1] > 300, (path.name, rgb.shape)
    assert rgb.std() > min_std, (path.name, rgb.std())
    n = n_colours(rgb)
    assert n > min_colours, (path.name, n)
    return rgb


@pytest.fixture(scope="module")
def run_dir(tmp_path_factory) -> Path:
    return small_embankment_run(tmp_path_factory.mktemp("plots") / "run")


@pytest.fixture(scope="module")
def notes() -> list[str]:
    return []


@pytest.fixture(scope="module")
def plot_paths(run_dir, notes) -> list[Path]:
    """All plots of the run; the text written on each figure is kept in ``notes``."""
    from solver import plot_style, plots
    real = plot_style.finish

    def spy(fig, path, note="", tight=False):
        out = real(fig, path, note, tight)
        notes.append(" ".join(" ".join(t.get_text() for t in fig.texts).split()))
        return out
    plot_style.finish = spy
    try:
        return plots.make_plots(run_dir)
    finally:
        plot_style.finish = real


def test_every_plot_is_made_and_is_a_real_picture(run_dir, plot_paths):
    names = {p.name for p in plot_paths}
    assert names == {"settlement_time.png", "pore_pressure_time.png",
                     "degree_of_consolidation.png", "isochrones_centre_line.png",
                     "trough_ground_surface.png", "inclinometer.png",
                     "differential_settlement.png"}
    for p in plot_paths:
        assert p.parent == run_dir / "plots"
        assert_picture(p)


def test_every_plot_carries_the_caution(plot_paths, notes):
    assert len(notes) == len(plot_paths)
    assert all(" ".join(CAUTION.split()) in n for n in notes)


def test_profiles_at_asked_times_use_the_nearest_output_times(run_dir, tmp_path):
    from solver.plots import load_run, pick_times, plot_isochrones
    run = load_run(run_dir, hand=False)
    times = [p["time_days"] for p in run.lines["centre_line"]]
    assert pick_times(times, [0.1, 179.0, 1e6]) == [0, times.index(180.0), len(times) - 1]
    assert pick_times(list(range(20)), None, max_n=5) == [0, 5, 10, 14, 19]
    paths = plot_isochrones(run, tmp_path, times=[180.0])
    assert [p.name for p in paths] == ["isochrones_centre_line.png"]
    assert_picture(paths[0])


def test_stage_boundaries_come_from_the_probe_records(run_dir):
    from solver.plots import load_run
    run = load_run(run_dir, hand=False)
    spans = [(s.name, s.kind, s.start_days, s.end_days) for s in run.stages]
    assert spans[:3] == [("lift 1", "lift", 0.0, 20.0), ("wait 1", "consolidate", 20.0, 80.0),
                         ("lift 2", "lift", 80.0, 100.0)]
    assert spans[-1][0] == "long term" and spans[-1][3] == pytest.approx(180.0 + 730.0)


def test_degree_of_consolidation_is_settlement_over_its_final_value():
    from solver.plots import degree_of_consolidation
    s = np.array([0.0, 0.1, 0.3, 0.4])
    assert np.allclose(degree_of_consolidation(np.arange(4.0), s), [0, 0.25, 0.75, 1.0])
    assert degree_of_consolidation(np.arange(4.0), np.zeros(4)) is None


def test_hand_method_curves_are_read_when_available(run_dir):
    from solver.plots import load_run
    run = load_run(run_dir)
    if run.hand_estimate is None:
        pytest.skip(f"hand estimate not available here: {run.hand_note}")
    assert set(run.hand) == set(run.probes)
    c = run.hand["centre_ground"]
    assert c["time_days"].shape == c["settlement_m"].shape and c["settlement_m"][-1] > 0


def test_plots_without_the_hand_method_still_come_out(run_dir, tmp_path, monkeypatch):
    from solver.plots import load_run
    monkeypatch.setitem(sys.modules, "solver.hand.estimate", None)   # import fails
    monkeypatch.setitem(sys.modules, "solver.hand_section", None)
    run = load_run(run_dir)
    assert run.hand == {} and "not installed" in run.hand_note
    from solver.plots import plot_degree_time, plot_settlement_time
    paths = plot_settlement_time(run, tmp_path) + plot_degree_time(run, tmp_path)
    assert len(paths) == 2
    for p in paths:
        assert_picture(p)


def test_differential_histories_pair_neighbouring_surface_probes(run_dir):
    from solver.plots import differential_histories, load_run, surface_probes
    run = load_run(run_dir, hand=False)
    assert [n for n, _ in surface_probes(run)] == ["centre_ground", "crest_edge_ground", "toe"]
    pairs = differential_histories(run)
    assert [(p["a"], p["b"], p["distance_m"]) for p in pairs] == [
        ("centre_ground", "crest_edge_ground", 6.0), ("crest_edge_ground", "toe", 9.0)]
    h = pairs[1]["history"]
    s = run.probes
    i = -1
    expect = abs(s["crest_edge_ground"]["settlement_m"][i] - s["toe"]["settlement_m"][i]) / 9.0
    assert h.angular_distortion[-1] == pytest.approx(expect)
    # an embankment: ground pairs, no building limits (Bjerrum 1963 is for structures) and no
    # differential limit given in the example
    assert [p["kind"] for p in pairs] == ["ground", "ground"] and h.checks == []


def test_a_run_folder_without_results_is_an_error(tmp_path):
    from solver.plots import make_plots
    from solver.results import ResultsError
    with pytest.raises(ResultsError, match="probes.csv"):
        make_plots(tmp_path)


# ============================================================================== pictures
@pytest.fixture(scope="module")
def picture_paths(run_dir) -> list[Path]:
    from solver.pictures import make_pictures, rendering_available
    ok, why = rendering_available()
    assert ok, ("off-screen rendering must work for these tests (make test installs Mesa's "
                "EGL, see tools/system-packages.sh): " + why)
    return make_pictures(run_dir, times=[180.0, 910.0])


def test_pictures_of_the_mesh_and_fields_are_real_pictures(run_dir, picture_paths):
    stems = [p.stem for p in picture_paths]
    assert stems[0] == "mesh"
    assert sum(s.startswith("excess_pore_pressure_") for s in stems) == 2
    assert sum(s.startswith("settlement_") for s in stems) == 2
    for p in picture_paths:
        assert p.parent == run_dir / "pictures"
        assert_picture(p)


def test_the_section_fills_its_picture(picture_paths):
    """The rendered section is in the middle of the frame, coloured (not white)."""
    rgb = assert_picture(next(p for p in picture_paths if p.stem.startswith("excess")))
    h, w, _ = rgb.shape
    middle = rgb[int(0.25 * h):int(0.5 * h), int(0.3 * w):int(0.6 * w)].reshape(-1, 3)
    coloured = (np.abs(middle.astype(int) - 255).sum(axis=1) > 60).mean()
    assert coloured > 0.5


def test_without_rendering_the_pictures_give_a_warning_not_a_crash(run_dir, tmp_path,
                                                                    monkeypatch):
    from solver import pictures
    monkeypatch.setattr(pictures, "rendering_available",
                        lambda *a, **k: (False, "no OpenGL here (test)"))
    with pytest.warns(pictures.RenderingUnavailable, match="no OpenGL here"):
        assert pictures.make_pictures(run_dir, tmp_path) == []


def test_plot_command_puts_plots_and_pictures_in_the_plots_folder(run_dir, monkeypatch):
    from solver import pictures, plots
    calls = []

    def fake_plots(run, out, times):
        calls.append(("plots", Path(out), times))
        return [Path(out) / "a.png"]

    def fake_pictures(d, out, times):
        calls.append(("pictures", Path(out), times))
        return [Path(out) / "b.png"]
    monkeypatch.setattr(plots, "plots_of", fake_plots)
    monkeypatch.setattr(pictures, "make_pictures", fake_pictures)
    paths = plots.plot_command(run_dir, times=[180.0])
    assert paths == [run_dir / "plots" / "a.png", run_dir / "plots" / "b.png"]
    assert calls == [("plots", run_dir / "plots", [180.0]),
                     ("pictures", run_dir / "plots", [180.0])]


def test_exaggeration_factor_is_round_and_keeps_displacements_small():
    from solver.pictures import exaggeration_factor
    disp = np.zeros((3, 2))
    disp[1] = (0.0, -0.3)
    f = exaggeration_factor(disp, 20.0)          # 5 % of 20 m is 1 m: 3.3 -> 2
    assert f == 2.0
    assert exaggeration_factor(disp, 2.0) == 1.0   # never shrinks
    assert exaggeration_factor(np.zeros((3, 2)), 20.0) == 1.0


def test_colour_scales_diverge_only_for_quantities_of_both_signs():
    from solver.pictures import field_scale
    one_sign = field_scale(np.array([-0.01, 0.0, 35.0, 70.0]))
    assert not one_sign.signed and one_sign.levels[0] == 0.0 and one_sign.levels[-1] >= 70.0
    both = field_scale(np.array([-0.05, 0.0, 0.33]))
    assert both.signed
    lv = both.levels
    assert lv[0] <= -0.05 and lv[-1] >= 0.33
    k = np.searchsorted(lv, 0.0)
    assert lv[k - 1] == pytest.approx(-lv[k])      # zero sits in the middle of one band
    assert np.allclose(np.diff(lv), lv[1] - lv[0])


def test_region_boundaries_are_the_edges_between_unlike_elements():
    from solver.pictures import _boundary_edges
    # two 6-node triangles sharing the edge 1-2 (mid node 5): corners 0 1 2 and 1 3 2
    cells = np.array([[0, 1, 2, 4, 5, 6], [1, 3, 2, 7, 8, 5]])
    same = _boundary_edges(cells, np.array([0, 0]), np.ones(2, bool))
    assert len(same) == 4                                  # the outline only
    split = _boundary_edges(cells, np.array([0, 1]), np.ones(2, bool))
    assert len(split) == 5 and any(set(e) == {1, 2, 5} for e in split.tolist())
    one = _boundary_edges(cells, np.array([0, 1]), np.array([True, False]))
    assert len(one) == 3
