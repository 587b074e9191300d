"""Times of the profiles and pictures (defaults, the times a user asks for), the inclinometer
plot, the picture cropped to the loaded zone and its exaggeration."""

from pathlib import Path

import numpy as np
import pytest

from solver.cli import main
from solver.errors import InputError
from solver.plot_times import (default_profile_times, describe_matches, match_times,
                               parse_times)

from test_plots import ROOT, assert_picture, small_embankment_run


def test_default_times_keep_stage_ends_and_the_peak_and_merge_near_duplicates():
    # outputs of a staged run: stage ends at 20, 80, 100, 160, 180 and 3180 days, outputs
    # asked for at 182.6 (half a year), 365.25, 730.5 and 1826 days
    t = [20, 80, 100, 160, 180, 182.6, 365.25, 730.5, 1826, 3180]
    idx = default_profile_times(t, stage_ends=[20, 80, 100, 160, 180, 3180], peak=4,
                                extra=[182.6, 365.25, 730.5, 1826])
    kept = [t[i] for i in idx]
    assert {20, 80, 100, 160, 180, 3180} <= set(kept)     # every stage end and the peak
    assert 182.6 not in kept                               # 1.4 % from 180: one curve
    assert len(kept) <= 8
    assert 1826 not in kept              # the most crowded of the rest (on a log clock)
    # the peak is kept even when it is no stage end, and it wins a merge
    idx = default_profile_times([10, 50, 51, 100], stage_ends=[10, 50, 100], peak=2)
    assert [10, 50, 51, 100][idx[1]] == 51 and len(idx) == 3


def test_times_are_read_with_units_and_matched_to_the_stored_outputs():
    assert parse_times(["60", "2 years", "30 days, 6 months"]) == pytest.approx(
        [60.0, 730.5, 30.0, 182.625])
    with pytest.raises(InputError) as exc:
        parse_times(["soon"])
    assert exc.value.field == "--times"
    m = match_times([60.0, 100.0, 95.0], stored=[20.0, 80.0, 100.0], end=910.0)
    assert [(x.stored, x.exact) for x in m] == [(80.0, False), (100.0, True), (100.0, False)]
    lines = describe_matches(m, "store it with --times")
    assert "drawn at 80 days" in lines[0] and "stored, drawn as it is" in lines[1]
    assert "the same output as 100 days" in lines[2]
    for bad in (-5.0, 5000.0):
        with pytest.raises(InputError, match="outside the run"):
            match_times([bad], stored=[20.0, 80.0], end=910.0)


@pytest.fixture(scope="module")
def run_dir(tmp_path_factory) -> Path:
    return small_embankment_run(tmp_path_factory.mktemp("times") / "run")


def test_plot_says_which_stored_time_each_request_became(run_dir, capsys, monkeypatch):
    from solver import plots
    got = {}
    monkeypatch.setattr(plots, "plot_command", lambda d, times=None: got.setdefault(
        "times", times) and [])
    assert main(["plot", str(run_dir), "--times", "60", "100 days", "2 years"]) == 0
    assert got["times"] == [80.0, 100.0, 910.0]       # the stored outputs, drawn exactly
    out = capsys.readouterr().out
    assert "time 60 days: not stored; drawn at 80 days" in out
    assert "time 100 days: stored, drawn as it is" in out
    assert "730.5 days" in out and "drawn at 910 days" in out
    assert main(["plot", str(run_dir), "--times", "5000"]) == 2
    err = capsys.readouterr().err
    assert "--times" in err and "outside the run" in err and "Traceback" not in err


def test_report_takes_the_times(run_dir, monkeypatch, capsys):
    from solver import report
    got = {}
    monkeypatch.setattr(report, "write_report",
                        lambda d, times=None: got.setdefault("times", times) and Path(d)
                        / "report.html")
    main(["report", str(run_dir), "--times", "6 months"])
    assert got["times"] == [180.0]
    assert "drawn at 180 days" in capsys.readouterr().out


def test_the_inclinometer_reads_the_displacement_field_at_the_toe(run_dir):
    from solver.plot_data import load_run
    from solver.plot_inclinometer import plot_inclinometer, sample_vertical
    paths = plot_inclinometer(load_run(run_dir, hand=False), run_dir / "plots")
    assert [p.name for p in paths] == ["inclinometer.png"]
    assert_picture(paths[0])
    # the sampling is linear in each split triangle: a linear field comes back exactly
    from solver.results import read_fields
    fs = read_fields(run_dir, [])
    y, nodes, w = sample_vertical(fs.points, fs.cells, 15.0, 0.0, -19.0)
    field = 2.0 + 0.5 * fs.points[:, 0] - 0.25 * fs.points[:, 1]
    assert np.allclose((field[nodes] * w).sum(axis=1), 2.0 + 0.5 * 15.0 - 0.25 * y)
    assert y.size > 100


def test_run_stores_requested_times_exactly(tmp_path):
    from solver.model import dump_toml, load_model
    from solver.results import read_lines
    m = load_model(ROOT / "examples" / "embankment.toml")
    m.section.mesh_size, m.stages = 4.0, m.stages[:2]         # lift 1 and its wait, coarse
    src = tmp_path / "embankment.toml"
    src.write_text(dump_toml(m))
    out = tmp_path / "run"
    assert main(["run", str(src), "-o", str(out), "--quiet", "--no-plots",
                 "--times", "37 days"]) == 0
    times = {p["time_days"] for profs in read_lines(out).values() for p in profs}
    assert 37.0 in times
    assert load_model(out / "model.toml").output.times[0] == 37.0
    assert main(["run", str(src), "-o", str(out), "--quiet", "--resume",
                 "--times", "40"]) == 2
    assert main(["run", str(src), "-o", str(tmp_path / "r2"), "--quiet",
                 "--times", "9 years"]) == 2


def test_the_loaded_zone_window_and_the_exaggeration():
    from solver.model import load_model
    from solver.picture_view import exaggeration_words, loaded_window
    from solver.pictures import exaggeration_factor
    m = load_model(ROOT / "examples" / "embankment.toml")
    pts = np.array([[0.0, -19.5], [75.0, -18.5], [0.0, 4.5]])
    # the toe lies 15 m from the centre line: B = 30 m, one B beyond it
    assert loaded_window(m, pts) == (0.0, 45.0, -19.5, 4.5)
    assert loaded_window(m, np.array([[0.0, -19.5], [40.0, 4.5]])) is None   # most of it
    disp = np.array([[0.0, -0.8], [0.0, 0.0]])
    assert exaggeration_factor(disp, 24.0, fraction=0.08) == 2.0    # 1.92 m / 0.8 m: 2.4
    assert "true scale" in exaggeration_words(1.0)
    assert "exaggerated 5 times" in exaggeration_words(5.0)
